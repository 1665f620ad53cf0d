"""tinct's safetensors files against the format's public description (huggingface/safetensors
README, "Format": u64 little-endian N, N bytes of JSON starting with '{' and maybe padded with
spaces, data_offsets [BEGIN, END) relative to the byte buffer, string-to-string __metadata__,
little-endian C-order data, no holes), with Python's json and numpy only (Debian's
/usr/bin/python3, numpy 1.24):
1. tinct writes a sample of every dtype; this script parses it by the description and compares
   each tensor with tinct's dump and with values computed here.
2. This script writes a file of its own (header keys in another order than the data,
   __metadata__ last, no padding, ensure_ascii escapes with a surrogate pair); tinct reads it.
3. Files that break the description are refused with exit code 1.
usage: safetensors_vs_numpy.py PATH/TO/tinct_safetensors_tool"""
import json
import os
import struct
import subprocess
import sys
import tempfile

import numpy as np

TOOL = sys.argv[1]
NUMPY_DTYPES = {"F64": "<f8", "F32": "<f4", "F16": "<f2", "I64": "<i8", "I32": "<i4",
                "I16": "<i2", "I8": "i1", "U8": "u1", "BOOL": "?"}
TORCH_NAMES = {"F64": "Double", "F32": "Float", "F16": "Half", "BF16": "BFloat16",
               "I64": "Long", "I32": "Int", "I16": "Short", "I8": "Char", "U8": "Byte",
               "BOOL": "Bool"}
passed, failed = 0, 0


def check(condition, message):
    global passed, failed
    if condition:
        passed += 1
    else:
        failed += 1
        print("FAIL:", message)


def no_duplicates(pairs):
    keys = [k for k, _ in pairs]
    check(len(keys) == len(set(keys)), f"duplicate keys in {keys}")
    return dict(pairs)


def decode(dtype, raw, shape):
    if dtype == "BF16":  # numpy has no bfloat16: the upper half of a float32
        bits = np.frombuffer(raw, dtype="<u2").astype("<u4") << 16
        return bits.view("<f4").reshape(shape)
    return np.frombuffer(raw, dtype=NUMPY_DTYPES[dtype]).reshape(shape)


def read_by_description(path):
    """(metadata, [(name, dtype, array)] in header order, N), checking the layout."""
    with open(path, "rb") as f:
        blob = f.read()
    (n,) = struct.unpack("<Q", blob[:8])
    raw_header = blob[8:8 + n]
    check(raw_header[:1] == b"{", "the header must begin with '{'")
    check(raw_header.rstrip(b" ")[-1:] == b"}", "only spaces may follow the header object")
    header = json.loads(raw_header.decode("utf-8"), object_pairs_hook=no_duplicates)
    metadata = header.pop("__metadata__", {})
    check(all(isinstance(v, str) for v in metadata.values()), "metadata values must be strings")
    data = blob[8 + n:]
    tensors, spans = [], []
    for name, entry in header.items():
        begin, end = entry["data_offsets"]
        tensors.append((name, entry["dtype"], decode(entry["dtype"], data[begin:end], entry["shape"])))
        spans.append((begin, end))
    covered = 0
    for begin, end in sorted(spans):
        check(begin == covered, f"hole or overlap at byte {begin} of the data")
        covered = end
    check(covered == len(data), f"data has {len(data)} bytes, tensors cover {covered}")
    return metadata, tensors, n, spans


def run_tool(*args):
    return subprocess.run([TOOL, *args], capture_output=True, text=True)


def compare_with_dump(tensors, metadata, dump, label):
    check(dump["metadata"] == metadata, f"{label}: metadata {dump['metadata']} != {metadata}")
    check([t["name"] for t in dump["tensors"]] == [name for name, _, _ in tensors],
          f"{label}: tensor order differs")
    for entry, (name, dtype, array) in zip(dump["tensors"], tensors):
        check(entry["dtype"] == TORCH_NAMES[dtype], f"{label}: {name} dtype {entry['dtype']} vs {dtype}")
        check(list(array.shape) == entry["shape"], f"{label}: {name} shape {entry['shape']} vs {array.shape}")
        if array.dtype.kind == "f":
            same = np.array_equal(np.asarray(entry["values"], dtype=np.float64),
                                  array.astype(np.float64).ravel())
        else:
            same = [int(v) for v in array.ravel().tolist()] == entry["values"]
        check(same, f"{label}: {name} values differ: {entry['values']} vs {array.ravel().tolist()}")


def tinct_writes(work):
    path, dump_path = os.path.join(work, "sample.safetensors"), os.path.join(work, "sample.json")
    run = run_tool("write", path, dump_path)
    check(run.returncode == 0, f"write exited {run.returncode}: {run.stderr}")
    metadata, tensors, n, spans = read_by_description(path)
    with open(dump_path) as f:
        compare_with_dump(tensors, metadata, json.load(f), "tinct-written")
    # tinct's own promises beyond the description: aligned data, tensors in header order.
    check((8 + n) % 8 == 0, f"data section starts at {8 + n}, not a multiple of 8")
    check(all(spans[i][1] == spans[i + 1][0] for i in range(len(spans) - 1)), "data not in header order")
    # Values computed here, independent of tinct's dump.
    arrays = {name: array for name, _, array in tensors}
    dtypes = {name: dtype for name, dtype, _ in tensors}
    check(np.array_equal(arrays["ramp_f32"], np.arange(12, dtype=np.float32).reshape(3, 4) / 8), "ramp_f32")
    check(np.array_equal(arrays["transposed"], np.arange(6, dtype=np.float32).reshape(2, 3).T), "transposed")
    check(np.array_equal(arrays["f16"], np.array([1.5, -2.0, 0.333, 65504.0], dtype=np.float16)), "f16")
    check(arrays["i64"].tolist() == [-2**62, -1, 2**40], "i64")
    check(arrays["i32"].tolist() == [-2**31, 2**31 - 1], "i32")
    check(arrays["u8"].tolist() == [[0], [1], [127], [128], [255]], "u8")
    check(arrays["bool"].tolist() == [True, False, True], "bool")
    check(arrays["bf16"].tolist()[:2] == [1.0, -3.140625], "bf16")
    check(arrays["scalar"].shape == () and float(arrays["scalar"]) == 2.5, "scalar of shape []")
    check(arrays["empty"].shape == (0, 3), "empty (0, 3)")
    check(dtypes["f64"] == "F64" and dtypes["bool"] == "BOOL" and dtypes["bf16"] == "BF16", "dtype names")
    check(metadata == {"format": "tinct-test", "escapes": "quote \" backslash \\ newline \n tab \t",
                       "unicode": "Lab \u00e9 \u2206"}, f"metadata {metadata}")
    return path


def write_file(path, header, data):
    text = json.dumps(header).encode("utf-8")  # ensure_ascii: \u escapes; ", " and ": "
    if (8 + len(text)) % 8 == 0:
        text += b" "  # keep the data section unaligned
    with open(path, "wb") as f:
        f.write(struct.pack("<Q", len(text)) + text + data)


def numpy_writes(work):
    arrays = {"b_i32": np.array([[1, -2, 3]], dtype="<i4"),
              "a_f32": np.linspace(-1, 1, 5, dtype="<f4").reshape(5, 1, 1),
              "c_bool": np.array(True),
              "d_f16": np.array([0.5, -65504.0], dtype="<f2")}
    data, offsets = b"", {}
    for name in ["a_f32", "d_f16", "b_i32", "c_bool"]:  # data order differs from header order
        offsets[name] = [len(data), len(data) + arrays[name].nbytes]
        data += arrays[name].tobytes()
    dtype_of = {"b_i32": "I32", "a_f32": "F32", "c_bool": "BOOL", "d_f16": "F16"}
    header = {name: {"dtype": dtype_of[name], "shape": list(arrays[name].shape),
                     "data_offsets": offsets[name]} for name in ["c_bool", "b_i32", "d_f16", "a_f32"]}
    metadata = {"made by": "numpy", "emoji": "\U0001F600 and \u00e9", "empty": ""}
    header["__metadata__"] = metadata
    path, dump_path = os.path.join(work, "numpy.safetensors"), os.path.join(work, "numpy.json")
    write_file(path, header, data)
    run = run_tool("dump", path, dump_path)
    check(run.returncode == 0, f"dump of the numpy-written file exited {run.returncode}: {run.stderr}")
    if run.returncode == 0:
        with open(dump_path) as f:
            dump = json.load(f)
        tensors = [(name, dtype_of[name], arrays[name]) for name in ["c_bool", "b_i32", "d_f16", "a_f32"]]
        compare_with_dump(tensors, metadata, dump, "numpy-written")


def refused(work, name, blob, words):
    path = os.path.join(work, name)
    with open(path, "wb") as f:
        f.write(blob)
    run = run_tool("dump", path, os.path.join(work, name + ".json"))
    check(run.returncode == 1, f"{name}: exit {run.returncode}, expected 1")
    check(all(w in run.stderr for w in words), f"{name}: message {run.stderr!r} lacks {words}")


def broken_files(work, good):
    four = np.ones(1, dtype="<f4").tobytes()

    def file_bytes(header, data):
        text = json.dumps(header).encode()
        return struct.pack("<Q", len(text)) + text + data

    with open(good, "rb") as f:
        sample = f.read()
    refused(work, "truncated.safetensors", sample[:-1], ["truncated.safetensors", "data section"])
    refused(work, "hole.safetensors", file_bytes(
        {"a": {"dtype": "F32", "shape": [1], "data_offsets": [0, 4]},
         "b": {"dtype": "F32", "shape": [1], "data_offsets": [8, 12]}}, four * 3), ["hole"])
    refused(work, "size.safetensors", file_bytes(
        {"a": {"dtype": "F32", "shape": [2], "data_offsets": [0, 4]}}, four), ["disagree"])
    refused(work, "dtype.safetensors", file_bytes(
        {"a": {"dtype": "F8_E4M3", "shape": [4], "data_offsets": [0, 4]}}, four), ["F8_E4M3"])
    refused(work, "metadata.safetensors", file_bytes({"__metadata__": {"n": 1}}, b""), ["__metadata__"])
    refused(work, "space.safetensors", struct.pack("<Q", 3) + b" {}", ["'{'"])
    refused(work, "long.safetensors", struct.pack("<Q", 1000) + b"{}", ["header length"])


with tempfile.TemporaryDirectory() as work:
    sample = tinct_writes(work)
    numpy_writes(work)
    broken_files(work, sample)
print(f"{passed} passed, {failed} failed")
sys.exit(1 if failed else 0)
