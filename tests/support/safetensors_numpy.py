"""A reader of the safetensors layout with numpy alone, written from the format's
public description: 8-byte little-endian header length N, N bytes of JSON
({name: {dtype, shape, data_offsets}}, optional "__metadata__"), then the data."""
import json
import struct

import numpy as np

DTYPES = {"F64": "<f8", "F32": "<f4", "F16": "<f2", "I64": "<i8", "I32": "<i4", "I16": "<i2",
          "I8": "i1", "U8": "u1", "BOOL": "?"}


def read_safetensors(path):
    with open(path, "rb") as f:
        blob = f.read()
    (length,) = struct.unpack("<Q", blob[:8])
    header = json.loads(blob[8:8 + length])
    metadata = header.pop("__metadata__", {})
    data = memoryview(blob)[8 + length:]
    tensors = {}
    for name, entry in header.items():
        begin, end = entry["data_offsets"]
        values = np.frombuffer(data[begin:end], dtype=np.dtype(DTYPES[entry["dtype"]]))
        tensors[name] = values.reshape(entry["shape"])
    return tensors, metadata
