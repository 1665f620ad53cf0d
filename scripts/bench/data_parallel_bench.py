"""Benchmark of data-parallel pretraining on this machine (run by scripts/bench.sh).

- chips/s of `tinct pretrain` (default compact model, 64 px chips, 12 bands, global batch
  32) as 1 process x 2 threads against `--world 2` (2 processes x 1 thread on loopback);
- the gradient all-reduce time per step for the default model's parameters
  (tinct_allreduce_bench, 2 ranks): what each step pays for being data-parallel.
Rounds interleave the configurations so that drifts of a shared machine hit both alike;
best and median over the rounds are printed. Print-only: nothing fails on a slow machine.

usage: data_parallel_bench.py TINCT ALLREDUCE_BENCH WORK [ROUNDS [STEPS]]"""
import csv
import os
import re
import statistics
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from pair_bench import make_scene  # noqa: E402

TINCT, ALLREDUCE, WORK = sys.argv[1], sys.argv[2], sys.argv[3]
ROUNDS = int(sys.argv[4]) if len(sys.argv) > 4 else 3
BANDS = "[B01, B02, B03, B04, B05, B06, B07, B08, B8A, B09, B11, B12]"
BATCH = 32
STEPS = int(sys.argv[5]) if len(sys.argv) > 5 else 40
LOG_EVERY = max(1, STEPS // 8)

# The pretrain bench's store when it is there (same chips), else one scene of its own.
STORE = "big.pairs" if os.path.exists(os.path.join(WORK, "big.pairs")) else "dp.pairs"
if not os.path.exists(os.path.join(WORK, STORE)):
    scene = os.path.join(WORK, "dp-scene.tif")
    make_scene(scene)
    with open(os.path.join(WORK, "dp-pair.yaml"), "w") as f:
        f.write(f"""config: pair
sensor: sentinel2-l2a
output: dp.pairs
inputs: {BANDS}
colour: {{bands: [B04, B03, B02], allow_input_overlap: true}}
chips: {{size: 64, stride: 64, min_valid: 0.5, block_size: 5000}}
scenes:
  - {{path: {scene}, id: dp, date: 2026-06-01}}
""")
    subprocess.run([TINCT, "--quiet", "pair", "dp-pair.yaml"], check=True, cwd=WORK)

config = os.path.join(WORK, "dp-pretrain.yaml")
with open(config, "w") as f:
    f.write(f"""config: pretrain
stores: [{STORE}]
output: runs/dp
model: {{encoder: compact}}
train: {{steps: {STEPS}, batch: {BATCH}, warmup: 5, log_every: {LOG_EVERY}}}
validation: {{every: 0, chips: 64, previews: 0}}
checkpoints: {{every: 1000, keep: 1}}
""")


def chips_per_second(world):
    """Median logged chips/s of one run, past the first rows (warm-up) and before the last."""
    extra = ["--world", str(world)] if world > 1 else []
    subprocess.run([TINCT, "--quiet", "--threads", "2", "pretrain", config, "--force", *extra],
                   check=True, cwd=WORK)
    with open(os.path.join(WORK, "runs", "dp", "metrics.csv")) as f:
        rates = [float(r["chips_per_s"]) for r in csv.DictReader(f)]
    return statistics.median(rates[1:-1])


def allreduce_ms():
    """ms per gradient all-reduce of the default model's parameters, 2 ranks on loopback."""
    out = subprocess.run([ALLREDUCE, "2", "20"], check=True, capture_output=True, text=True).stdout
    line = next(l for l in out.splitlines() if l.startswith("compact encoder+decoder"))
    floats, megabytes, ms = line.split()[2:5]
    return float(ms), int(floats), float(megabytes)


one, two, reduce_ms = [], [], []
for _ in range(ROUNDS):
    one.append(chips_per_second(1))
    two.append(chips_per_second(2))
    ms, floats, megabytes = allreduce_ms()
    reduce_ms.append(ms)

print(f"\ndata-parallel pretraining: compact model, 64 px, 12 bands, global batch {BATCH}, {STEPS} steps, "
      f"{ROUNDS} interleaved rounds")
print(f"{'configuration':34s} {'best':>9s} {'median':>9s}")
print(f"{'1 process x 2 threads (chips/s)':34s} {max(one):9.1f} {statistics.median(one):9.1f}")
print(f"{'2 processes x 1 thread (chips/s)':34s} {max(two):9.1f} {statistics.median(two):9.1f}")
print(f"{'gradient all-reduce (ms/step)':34s} {min(reduce_ms):9.2f} {statistics.median(reduce_ms):9.2f}")
step_ms = 1000 * BATCH / statistics.median(two)
print(f"per step: {floats} parameters = {megabytes:.1f} MB all-reduced; "
      f"{statistics.median(reduce_ms):.1f} ms of a {step_ms:.0f} ms step at 2 processes")
