"""Pretraining on real data: pairs from the Landsat 7 ETM+ subset shipped in
Debian's r-cran-stars (L7_ETMs.tif, REFERENCES.md section 6), inputs ETM+ 4, 5, 7,
colour from 3, 2, 1. A short run must bring the mean CIE76 delta E*ab on chips of
held-out spatial blocks at least 20 % below the baseline that predicts the
training set's mean colour (both computed by tinct on the same pixels; delta E is
the CIE 1976 colour difference, a published standard)."""
import csv
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
checks = Checks()

with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write(f"""config: pair
sensor: landsat7-etm
output: l7.pairs
inputs: [B4, B5, B7]
colour: {{bands: [B3, B2, B1]}}
grid: {{resolution: 28.5}}
chips: {{size: 32, stride: 16, min_valid: 0.9, block_size: 2500}}
scenes: [{{path: {L7}, date: 2000-02-01}}]
""")
    with open(os.path.join(work, "pretrain.yaml"), "w") as f:
        f.write("""config: pretrain
stores: [l7.pairs]
output: runs/l7
model: {encoder: compact}
loss: {kind: smooth_l1}
train: {steps: 300, batch: 16, lr: 0.003, warmup: 20, seed: 1}
validation: {fraction: 0.25, every: 100, chips: 128, previews: 6}
checkpoints: {every: 100, keep: 1}
""")
    for args in (["pair", "pair.yaml"], ["pretrain", "pretrain.yaml"]):
        # One thread: ctest runs two tests at once on two cores.
        run = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=work)
        print(run.stderr[-2000:])
        checks.check(run.returncode == 0, f"tinct {args[0]} exited {run.returncode}")
        if run.returncode:
            checks.finish()
    with open(os.path.join(work, "runs", "l7", "metrics.csv")) as f:
        rows = [r for r in csv.DictReader(f) if r["val_delta_e"]]
    first, last = rows[0], rows[-1]
    delta_e, baseline = float(last["val_delta_e"]), float(last["baseline_delta_e"])
    print(f"held-out delta E after {last['step']} steps: {delta_e:.2f} vs mean-colour baseline {baseline:.2f} "
          f"({100 * (1 - delta_e / baseline):.0f} % below); at step {first['step']}: {float(first['val_delta_e']):.2f}")
    checks.check(delta_e <= 0.8 * baseline, f"delta E {delta_e:.2f} is not 20 % below the baseline {baseline:.2f}")
    checks.check(baseline > 3.0, f"the baseline is a real colour difference ({baseline:.2f})")

checks.finish()
