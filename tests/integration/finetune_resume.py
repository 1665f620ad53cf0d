"""tinct finetune stops and continues exactly, on one thread with a fixed seed:
--stop-after N then --resume gives the epoch losses (as text), validation scores and
test metrics of an uninterrupted run; SIGTERM mid-run finishes the step, writes a
checkpoint and marks the run interrupted with the reason, and --resume completes it
with the same losses again; SIGINT then SIGTERM ends the process at once. A run that
fails says why in run.yaml and log.txt. model.pt given where an encoder.pt belongs is
a clear usage error."""
import csv
import json
import os
import signal
import subprocess
import sys
import tempfile
import time

import numpy as np
import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write, write_profile  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
SIZE, ORIGIN, PIXEL = 256, (500000.0, 5300000.0), 10.0


def command(*args):
    return [TINCT, "--threads", "1", *args]


def tinct(work, *args):
    run = subprocess.run(command(*args), capture_output=True, text=True, cwd=work)
    if run.returncode:
        print(" ".join(args), "->", run.returncode, run.stderr[-600:])
    return run


def rows(work, name, file="metrics.csv"):
    with open(os.path.join(work, "runs", name, file)) as f:
        return list(csv.DictReader(f))


def status(work, name):
    return yaml.safe_load(open(os.path.join(work, "runs", name, "run.yaml")))


def config(work, name, epochs=8, extra="", lr="0.003"):
    with open(os.path.join(work, f"{name}.yaml"), "w") as f:
        f.write(f"""config: finetune
stores: [sites.labels]
output: runs/{name}
init: {{from: scratch, model: {{encoder: compact, width: 0.5}}}}
head: {{dropout: 0.3}}
freeze: {{policy: full}}
split: {{method: blocks, block_size: 640, folds: 4, fold: 1}}
train: {{epochs: {epochs}, batch: 16, lr: {lr}, warmup: 5, seed: 3, patience: 100{extra}}}
""")
    return f"{name}.yaml"


def same_run(work, a, b, what):
    ra, rb = rows(work, a), rows(work, b)
    checks.check([r["epoch"] for r in rb] == [r["epoch"] for r in ra], f"{what}: epochs {len(rb)} vs {len(ra)}")
    for column in ("loss", "lr", "val_macro_f1", "val_accuracy"):
        checks.check([r[column] for r in ra] == [r[column] for r in rb],
                     f"{what}: {column} equal as text\n" +
                     "\n".join(f"  {x[column]} vs {y[column]}" for x, y in zip(ra, rb)))
    ma = json.load(open(os.path.join(work, "runs", a, "metrics.json")))
    mb = json.load(open(os.path.join(work, "runs", b, "metrics.json")))
    checks.check(ma == mb, f"{what}: test metrics equal")
    checks.check(rows(work, a, "predictions.csv") == rows(work, b, "predictions.csv"), f"{what}: predictions equal")


def wait_for(path, process, seconds=60):
    end = time.time() + seconds
    while time.time() < end and process.poll() is None:
        if os.path.exists(path) and os.listdir(path):
            return True
        time.sleep(0.005)
    return False


with tempfile.TemporaryDirectory() as work:
    write_profile(work, "test-five")
    wet = texture(SIZE, SIZE, seed=31, scale=10.0) > 0.5
    detail = texture(SIZE, SIZE, seed=32, scale=2.0)
    base = [600, 700, 800, 3000, 2500]
    drop = [100, 100, 300, 2400, 2200]
    bands = [(b - d * wet + 400 * detail).astype(np.uint16) for b, d in zip(base, drop)]
    write(os.path.join(work, "scene.tif"), bands, origin=ORIGIN, nodata=0)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("site,x,y,cover\n")
        n = 0
        for row in range(10, SIZE - 10, 14):
            for col in range(10, SIZE - 10, 14):
                window = wet[row - 3:row + 3, col - 3:col + 3]
                if 0.1 < window.mean() < 0.9:
                    continue
                x, y = ORIGIN[0] + (col + 0.5) * PIXEL, ORIGIN[1] - (row + 0.5) * PIXEL
                f.write(f"s{n},{x},{y},{'wet' if window.mean() >= 0.9 else 'dry'}\n")
                n += 1
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write("""config: label
sensor: test-five.yaml
output: sites.labels
inputs: [nir, swir]
scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]
labels: {source: sites.csv, class: cover, x: x, y: y, crs: EPSG:32632, id: site, classes: [dry, wet]}
chips: {size: 16, min_valid: 0.9}
""")
    run = tinct(work, "label", "label.yaml")
    checks.check(run.returncode == 0, "label store built")
    if run.returncode:
        checks.finish()

    # The uninterrupted run, then the same config stopped after 3 epochs and resumed.
    run = tinct(work, "finetune", config(work, "full"))
    checks.check(run.returncode == 0 and status(work, "full")["status"] == "done", "uninterrupted run done")
    part = config(work, "part")
    run = tinct(work, "finetune", part, "--stop-after", "3")
    checks.check(run.returncode == 0, "--stop-after 3 runs")
    stopped = status(work, "part")
    checks.check(stopped["status"] == "stopped" and "--resume continues" in stopped.get("reason", ""),
                 f"a stopped run says so and why: {stopped}")
    checks.check(len(rows(work, "part")) == 3, "three epochs logged before the stop")
    checks.check(not os.path.exists(os.path.join(work, "runs", "part", "metrics.json")), "no test metrics yet")
    run = tinct(work, "finetune", part)
    checks.check(run.returncode == 2 and "--resume" in run.stderr, "an existing run needs --resume or --force")
    run = tinct(work, "finetune", part, "--resume")
    checks.check(run.returncode == 0 and status(work, "part")["status"] == "done", "the resumed run finishes")
    same_run(work, "full", "part", "stop-after then resume")

    # SIGTERM once the first epoch's checkpoint exists: the step finishes, a checkpoint is written.
    signalled = config(work, "signalled", epochs=16)
    run = tinct(work, "finetune", config(work, "long", epochs=16))
    process = subprocess.Popen(command("finetune", signalled), cwd=work, stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, text=True)
    started = wait_for(os.path.join(work, "runs", "signalled", "checkpoints"), process)
    process.send_signal(signal.SIGTERM)
    _, stderr = process.communicate(timeout=120)
    checks.check(started and process.returncode == 1, f"SIGTERM ends the run with exit 1: {process.returncode}")
    interrupted = status(work, "signalled")
    checks.check(interrupted["status"] == "interrupted" and "SIGTERM" in interrupted.get("reason", "") and
                 "--resume continues" in interrupted["reason"], f"status interrupted with the reason: {interrupted}")
    log = open(os.path.join(work, "runs", "signalled", "log.txt")).read()
    checks.check("interrupted by SIGTERM" in log, "log.txt says the run was interrupted")
    checks.check(len(rows(work, "signalled")) < 16, "the run stopped early")
    run = tinct(work, "finetune", signalled, "--resume")
    checks.check(run.returncode == 0 and status(work, "signalled")["status"] == "done", "--resume completes it")
    same_run(work, "long", "signalled", "SIGTERM then resume")

    # SIGINT, then SIGTERM before the step is done: the process ends at once, by the second
    # signal to arrive (the kernel may deliver the two in either order).
    twice = config(work, "twice", epochs=16)
    process = subprocess.Popen(command("finetune", twice), cwd=work, stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, text=True)
    started = wait_for(os.path.join(work, "runs", "twice", "checkpoints"), process)
    process.send_signal(signal.SIGINT)
    process.send_signal(signal.SIGTERM)
    process.communicate(timeout=120)
    checks.check(started and process.returncode in (-signal.SIGINT, -signal.SIGTERM),
                 f"a second signal exits at once: returncode {process.returncode}")

    # A diverging run fails on the non-finite guard and says why, in run.yaml and log.txt.
    run = tinct(work, "finetune", config(work, "wild", extra=", optimizer: sgd, clip_norm: 0", lr="1.0e+12"))
    failed = status(work, "wild")
    checks.check(run.returncode == 1 and failed["status"] == "failed" and "not finite" in failed.get("reason", ""),
                 f"a failed run records its reason: {failed}")
    log = open(os.path.join(work, "runs", "wild", "log.txt")).read()
    checks.check("finetune failed: " in log and "not finite" in log, f"log.txt holds the reason:\n{log[-400:]}")

    # Artefacts of the wrong kind are named plainly (exit 2), not a LibTorch stack trace.
    run = tinct(work, "export", "runs/full/model.pt", "--out", "x.safetensors")
    checks.check(run.returncode == 2 and "is the model.pt of a finetune run, not the encoder.pt" in run.stderr,
                 f"model.pt given to export: {run.returncode} {run.stderr[-300:]}")
    checks.check("Exception raised from" not in run.stderr, "no stack trace")

checks.finish()
