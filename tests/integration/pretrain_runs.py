"""tinct pretrain end to end on a small generated pair store (real files, real
processes): a run folder with every file DESIGN.md lists; preview PNGs that decode
(GDAL's PNG driver) at the size of their layout; --stop-after then --resume gives
exactly the losses of an uninterrupted run (one thread, fixed seed), and so does
SIGTERM mid-run (status interrupted with its reason) then --resume; a diverging run
stops on the NaN guard with a clear error, keeps its last good checkpoint and says
why in run.yaml and log.txt; tinct export writes safetensors that a numpy-only
reader (tests/support/safetensors_numpy.py) loads."""
import csv
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
from safetensors_numpy import read_safetensors  # noqa: E402
from osgeo import gdal  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()



def tinct(*args, threads=1):
    return subprocess.run([TINCT, "--threads", str(threads), *args], capture_output=True, text=True)


def losses(run):
    with open(os.path.join(run, "metrics.csv")) as f:
        return {int(r["step"]): r["loss"] for r in csv.DictReader(f)}


def pretrain_config(work, name, extra_train="", lr="0.003", steps=12, every=6):
    path = os.path.join(work, f"{name}.yaml")
    with open(path, "w") as f:
        f.write(f"""config: pretrain
stores: [small.pairs]
output: runs/{name}
model: {{encoder: compact, width: 0.5}}
train: {{steps: {steps}, batch: 8, lr: {lr}, warmup: 2, log_every: 1, seed: 5{extra_train}}}
validation: {{every: {every}, chips: 16, previews: 4}}
checkpoints: {{every: 4, keep: 2}}
""")
    return path


def preview_layout(chips, size, gap=4, min_tile=192, header=52):
    """Least width and exact height of a preview PNG as colour_preview.cpp lays it out: a header
    (caption and column labels), then one row per chip (truth | prediction), chips enlarged to
    tiles of >= min_tile px. The width grows with the caption's text, so only its floor is fixed."""
    tile = size * max(1, -(-min_tile // size))
    return 2 * tile + 3 * gap, header + chips * (tile + gap)


with tempfile.TemporaryDirectory() as work:
    write_profile(work, "test-five")
    t = texture(256, 256, seed=11)
    veg = texture(256, 256, seed=12)
    bands = [(800 + 2500 * t * (0.7 + 0.1 * i) + 1500 * veg * (i >= 3)).astype(np.uint16) for i in range(5)]
    write(os.path.join(work, "scene.tif"), bands, nodata=0)
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write("""config: pair
sensor: test-five.yaml
output: small.pairs
inputs: [nir, swir]
colour: {bands: [red, green, blue]}
chips: {size: 32, stride: 16, block_size: 640}
scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]
""")
    run = tinct("pair", os.path.join(work, "pair.yaml"))
    checks.check(run.returncode == 0, f"pair: {run.stderr}")

    full = pretrain_config(work, "full")
    run = tinct("check", full)
    checks.check(run.returncode == 0 and "optimizer: adamw" in run.stdout, f"check pretrain: {run.stderr}")
    run = tinct("pretrain", full)
    checks.check(run.returncode == 0, f"pretrain: exit {run.returncode}\n{run.stderr}")
    folder = os.path.join(work, "runs", "full")
    for name in ("config.resolved.yaml", "run.yaml", "log.txt", "metrics.csv", "encoder.pt"):
        checks.check(os.path.exists(os.path.join(folder, name)), f"run folder holds {name}")
    status = yaml.safe_load(open(os.path.join(folder, "run.yaml")))
    checks.check(status["status"] == "done", f"status {status['status']}")
    checks.check(status["threads"] == 1, "run.yaml records the thread count")
    checkpoints = sorted(os.listdir(os.path.join(folder, "checkpoints")))
    checks.check(checkpoints == ["step-00000008.pt", "step-00000012.pt"], f"last 2 kept: {checkpoints}")
    previews = sorted(os.listdir(os.path.join(folder, "previews")))
    checks.check(previews == ["step-00000006.png", "step-00000012.png"], f"previews {previews}")
    for name in previews:
        png = gdal.Open(os.path.join(folder, "previews", name))
        size = (png.RasterXSize, png.RasterYSize, png.RasterCount) if png else None
        checks.check(png is not None and png.GetDriver().ShortName == "PNG" and
                     size[0] >= preview_layout(4, 32)[0] and size[1:] == (preview_layout(4, 32)[1], 3),
                     f"{name} decodes as a 3-band PNG of the layout's size: {size}")
    with open(os.path.join(folder, "metrics.csv")) as f:
        rows = list(csv.DictReader(f))
    checks.check([int(r["step"]) for r in rows] == list(range(1, 13)), "a metrics row per step")
    checks.check(rows[5]["val_delta_e"] != "" and rows[5]["baseline_delta_e"] != "", "validation at step 6")

    # Stop after 5 steps, resume: steps 6..12 must match the uninterrupted run exactly.
    part = pretrain_config(work, "part")
    run = tinct("pretrain", part, "--stop-after", "5")
    checks.check(run.returncode == 0, f"stop-after: {run.stderr}")
    checks.check(yaml.safe_load(open(os.path.join(work, "runs", "part", "run.yaml")))["status"] == "stopped",
                 "a stopped run says so")
    run = tinct("pretrain", part)
    checks.check(run.returncode == 2 and "--resume" in run.stderr, "an existing run needs --resume or --force")
    run = tinct("pretrain", part, "--resume")
    checks.check(run.returncode == 0, f"resume: {run.stderr}")
    a, b = losses(folder), losses(os.path.join(work, "runs", "part"))
    checks.check(sorted(b) == list(range(1, 13)), f"resumed metrics steps {sorted(b)}")
    same = all(a[s] == b[s] for s in range(1, 13))
    checks.check(same, "losses after resuming equal the uninterrupted run's:\n" +
                 "\n".join(f"{s}: {a[s]} vs {b.get(s)}" for s in range(1, 13)))

    # A diverging run: the NaN guard stops it and keeps the last good checkpoint.
    wild = pretrain_config(work, "wild", extra_train=", optimizer: sgd, clip_norm: 0", lr="1.0e+12")
    run = tinct("pretrain", wild)
    checks.check(run.returncode == 1 and "not finite" in run.stderr, f"NaN guard: {run.returncode} {run.stderr}")
    wild_status = yaml.safe_load(open(os.path.join(work, "runs", "wild", "run.yaml")))
    checks.check(wild_status["status"] == "failed" and "not finite" in wild_status.get("reason", ""),
                 f"diverged run status and reason {wild_status}")
    wild_log = open(os.path.join(work, "runs", "wild", "log.txt")).read()
    checks.check("pretrain failed: " in wild_log and "not finite" in wild_log, "log.txt says why the run failed")

    # SIGTERM once the first checkpoint exists: the step finishes, a checkpoint is written, the
    # run says interrupted and why; --resume then gives the uninterrupted run's losses.
    long = pretrain_config(work, "long", steps=32, every=16)
    run = tinct("pretrain", long)
    checks.check(run.returncode == 0, f"32-step run: {run.stderr[-300:]}")
    signalled = pretrain_config(work, "signalled", steps=32, every=16)
    process = subprocess.Popen([TINCT, "--threads", "1", "pretrain", signalled], stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, text=True)
    checkpoints = os.path.join(work, "runs", "signalled", "checkpoints")
    deadline = time.time() + 120
    while time.time() < deadline and process.poll() is None and not (os.path.isdir(checkpoints) and os.listdir(checkpoints)):
        time.sleep(0.005)
    process.send_signal(signal.SIGTERM)
    _, stderr = process.communicate(timeout=120)
    state = yaml.safe_load(open(os.path.join(work, "runs", "signalled", "run.yaml")))
    checks.check(process.returncode == 1 and state["status"] == "interrupted" and
                 "SIGTERM" in state.get("reason", "") and "--resume continues" in state["reason"],
                 f"SIGTERM: exit {process.returncode}, run.yaml {state}\n{stderr[-300:]}")
    done_steps = max(losses(os.path.join(work, "runs", "signalled")))
    checks.check(done_steps < 32, f"interrupted at step {done_steps}")
    run = tinct("pretrain", signalled, "--resume")
    checks.check(run.returncode == 0, f"resume after SIGTERM: {run.stderr[-300:]}")
    a, b = losses(os.path.join(work, "runs", "long")), losses(os.path.join(work, "runs", "signalled"))
    checks.check(all(a[s] == b.get(s) for s in range(1, 33)), "losses after SIGTERM and --resume equal the "
                 "uninterrupted run's:\n" + "\n".join(f"{s}: {a[s]} vs {b.get(s)}" for s in range(1, 33)))

    # The ab-bin classification loss (Zhang et al. 2016) with rebalancing runs end to end.
    bins = pretrain_config(work, "bins", extra_train="")
    with open(bins) as f:
        text = f.read().replace("model: {encoder: compact, width: 0.5}",
                                "model: {encoder: compact, width: 0.5}\nloss: {kind: ab_bins, ab_bins_per_axis: 8}")
    with open(bins, "w") as f:
        f.write(text)
    run = tinct("pretrain", bins)
    checks.check(run.returncode == 0, f"ab_bins pretrain: {run.stderr[-500:]}")
    bin_rows = list(csv.DictReader(open(os.path.join(work, "runs", "bins", "metrics.csv"))))
    checks.check(bin_rows[-1]["val_delta_e"] != "", "ab_bins validation reports a colour difference")

    # Threads from the config when --threads is not given (the default would be all cores).
    threaded = pretrain_config(work, "threaded", extra_train=", threads: 1")
    with open(threaded) as f:
        text = f.read().replace("steps: 12", "steps: 2")
    with open(threaded, "w") as f:
        f.write(text)
    run = subprocess.run([TINCT, "pretrain", threaded], capture_output=True, text=True)
    threads = yaml.safe_load(open(os.path.join(work, "runs", "threaded", "run.yaml")))["threads"]
    checks.check(run.returncode == 0 and threads == 1, f"train.threads sets the threads: {threads}")

    # Export: every tensor of the encoder, readable with numpy alone.
    out = os.path.join(work, "encoder.safetensors")
    run = tinct("export", folder, "--out", out)
    checks.check(run.returncode == 0, f"export: {run.stderr}")
    tensors, metadata = read_safetensors(out)
    checks.check(metadata.get("bands") == "nir,swir", f"metadata bands {metadata.get('bands')}")
    checks.check(len(tensors) > 10 and all(np.isfinite(v).all() for v in tensors.values() if v.dtype.kind == "f"),
                 f"{len(tensors)} finite tensors")
    checks.check(len(metadata["band_mean"].split(",")) == 2, "two band means")

checks.finish()
