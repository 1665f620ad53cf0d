"""Every artefact carries a checksum that is checked on load: flipped bytes in a store's
bands.bin, colour.bin, valid.bin or chips.csv, in a checkpoint, in encoder.pt or model.pt
each end the command that reads them with exit 1 and a message naming the damaged file,
never with a backtrace or a silent result. The checksums are checked against Python's own
hashlib and zipfile: a store's manifest lists the SHA-256 of each file, a LibTorch archive
stays a valid zip whose comment is the SHA-256 of the bytes before it (comment length 0,
PKWARE APPNOTE 4.3.16), and an exported safetensors file's data_sha256 is the SHA-256 of
its data section. An archive of the wrong kind is named as such (exit 2)."""
import hashlib
import os
import shutil
import struct
import sys
import tempfile
import zipfile

import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402
from tiny_project import (finetune_config, flip_bytes, make_stores, pretrain_config,  # noqa: E402
                          run_tinct, write_text)

checks = Checks()


def sha256(path, end=None):
    with open(path, "rb") as f:
        data = f.read()
    return hashlib.sha256(data if end is None else data[:end]).hexdigest()


def clean_failure(run, code, phrase, what):
    text = run.stderr
    checks.check(run.returncode == code, f"{what}: exit {code}, got {run.returncode}: {text[-800:]}")
    checks.check(phrase in text, f"{what}: the message says '{phrase}':\n{text[-800:]}")
    for noise in ("Exception raised from", "frame #", "terminate called", "unexpected failure"):
        checks.check(noise not in text, f"{what}: no '{noise}' in the message:\n{text[-800:]}")


def store_checksums(work):
    manifest = yaml.safe_load(open(os.path.join(work, "small.pairs", "manifest.yaml")))
    recorded = manifest.get("checksums", {})
    for name in ("bands.bin", "colour.bin", "valid.bin", "chips.csv"):
        checks.check(recorded.get(name) == sha256(os.path.join(work, "small.pairs", name)),
                     f"manifest checksum of {name} equals hashlib's SHA-256")
    for name, offset in (("bands.bin", 5000), ("colour.bin", 3000), ("valid.bin", 1000), ("chips.csv", 60)):
        damaged = os.path.join(work, "damaged.pairs")
        shutil.rmtree(damaged, ignore_errors=True)
        shutil.copytree(os.path.join(work, "small.pairs"), damaged)
        flip_bytes(os.path.join(damaged, name), offset, 1 if name == "chips.csv" else 8)
        config = pretrain_config(work, "on-damaged", steps=2, every=2).replace(".yaml", "")
        text = open(os.path.join(work, config + ".yaml")).read().replace("small.pairs", "damaged.pairs")
        write_text(work, config + ".yaml", text)
        run = run_tinct(work, "pretrain", config + ".yaml", "--force")
        # A flipped byte in chips.csv may break a row first: that message names the line.
        said = "line" if name == "chips.csv" and "is damaged:" not in run.stderr else "is damaged"
        clean_failure(run, 1, f"damaged.pairs/{name} {said}", f"store {name} flipped")


def archive_checksum(path, what):
    with open(path, "rb") as f:
        data = f.read()
    comment_length = struct.unpack("<H", data[-79:-77])[0]
    checks.check(data[-99:-95] == b"PK\x05\x06" and comment_length == 77, f"{what}: ends in a zip end record "
                                                                           "with a 77-byte comment")
    with zipfile.ZipFile(path) as z:
        checks.check(z.testzip() is None, f"{what}: Python's zipfile reads it and every CRC matches")
        comment = z.comment.decode()
    original = data[:-79] + b"\x00\x00"
    checks.check(comment == "tinct-sha256:" + hashlib.sha256(original).hexdigest(),
                 f"{what}: the comment is the SHA-256 of the bytes before it")


def damaged_copy(source, target, where):
    shutil.copyfile(source, target)
    size = os.path.getsize(target)
    flip_bytes(target, int(size * where), 8)


def archives(work):
    run = run_tinct(work, "pretrain", pretrain_config(work, "pre", steps=8, every=4))
    checks.check(run.returncode == 0, f"pretrain: {run.stderr}")
    encoder = os.path.join(work, "runs", "pre", "encoder.pt")
    archive_checksum(encoder, "encoder.pt")
    checkpoint = os.path.join(work, "runs", "pre", "checkpoints", "step-00000008.pt")
    archive_checksum(checkpoint, "checkpoint")
    run = run_tinct(work, "finetune", finetune_config(work, "fine", epochs=2, init="{from: pretrain, run: runs/pre}"))
    checks.check(run.returncode == 0, f"finetune: {run.stderr}")
    model = os.path.join(work, "runs", "fine", "model.pt")
    archive_checksum(model, "model.pt")

    run = run_tinct(work, "export", "runs/pre", "--out", "pre.safetensors")
    checks.check(run.returncode == 0, f"export: {run.stderr}")
    with open(os.path.join(work, "pre.safetensors"), "rb") as f:
        data = f.read()
    header_size = struct.unpack("<Q", data[:8])[0]
    import json
    metadata = json.loads(data[8:8 + header_size])["__metadata__"]
    checks.check(metadata.get("data_sha256") == hashlib.sha256(data[8 + header_size:]).hexdigest(),
                 "export: data_sha256 is the SHA-256 of the data section")

    for where in (0.3, 0.8):
        # encoder.pt: finetune from it, and export it.
        shutil.rmtree(os.path.join(work, "runs", "bad-pre"), ignore_errors=True)
        os.makedirs(os.path.join(work, "runs", "bad-pre"))
        for name in ("run.yaml", "config.resolved.yaml"):
            shutil.copy(os.path.join(work, "runs", "pre", name), os.path.join(work, "runs", "bad-pre", name))
        damaged_copy(encoder, os.path.join(work, "runs", "bad-pre", "encoder.pt"), where)
        run = run_tinct(work, "finetune", finetune_config(work, "from-bad", epochs=1,
                                                          init="{from: pretrain, run: runs/bad-pre}"), "--force")
        clean_failure(run, 1, "runs/bad-pre/encoder.pt is damaged", f"encoder.pt flipped at {where}")
        run = run_tinct(work, "export", "runs/bad-pre", "--out", "bad.safetensors")
        clean_failure(run, 1, "runs/bad-pre/encoder.pt is damaged", f"export of encoder.pt flipped at {where}")
        checks.check(not os.path.exists(os.path.join(work, "bad.safetensors")), "no export of a damaged encoder")

        # model.pt: assess with it.
        shutil.rmtree(os.path.join(work, "runs", "bad-fine"), ignore_errors=True)
        shutil.copytree(os.path.join(work, "runs", "fine"), os.path.join(work, "runs", "bad-fine"))
        damaged_copy(model, os.path.join(work, "runs", "bad-fine", "model.pt"), where)
        run = run_tinct(work, "assess", "runs/bad-fine", "--on", "sites.labels", "--out", "bad-assess")
        clean_failure(run, 1, "runs/bad-fine/model.pt is damaged", f"model.pt flipped at {where}")
        checks.check(not os.path.exists(os.path.join(work, "bad-assess", "metrics.json")), "no metrics from a damaged model")

        # A checkpoint: resume from it.
        shutil.rmtree(os.path.join(work, "runs", "bad-resume"), ignore_errors=True)
        shutil.copytree(os.path.join(work, "runs", "pre"), os.path.join(work, "runs", "bad-resume"))
        text = open(os.path.join(work, "pre.yaml")).read().replace("runs/pre", "runs/bad-resume")
        resolved = os.path.join(work, "runs", "bad-resume", "config.resolved.yaml")
        write_text(work, "bad-resume.yaml", text.replace("steps: 8", "steps: 12"))
        # Resuming needs the run's own config: continue the stopped copy at its last checkpoint.
        os.remove(resolved)
        damaged_copy(checkpoint, os.path.join(work, "runs", "bad-resume", "checkpoints", "step-00000008.pt"), where)
        run = run_tinct(work, "pretrain", "bad-resume.yaml", "--resume")
        clean_failure(run, 1, "checkpoints/step-00000008.pt is damaged", f"checkpoint flipped at {where}")

    # The wrong kind of archive where an encoder belongs.
    shutil.rmtree(os.path.join(work, "runs", "bad-pre"), ignore_errors=True)
    os.makedirs(os.path.join(work, "runs", "bad-pre"))
    shutil.copy(model, os.path.join(work, "runs", "bad-pre", "encoder.pt"))
    run = run_tinct(work, "export", "runs/bad-pre", "--out", "bad.safetensors")
    clean_failure(run, 2, "is the model.pt of a finetune run, not the encoder.pt", "model.pt given as encoder.pt")


with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    if ok:
        store_checksums(work)
        archives(work)

checks.finish()
