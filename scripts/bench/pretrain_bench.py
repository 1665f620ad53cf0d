"""Benchmark of `tinct pretrain` (run by scripts/bench.sh).

- steady-state chips/s of tinct pretrain (default compact model, 64 px chips, 12
  bands, batch 32) against the same model's forward + backward + AdamW step on
  preloaded tensors in one process (goal: the full loop loses at most 10 %);
- achieved FLOP/s of that step against a 2048 x 2048 float matmul (goal >= 50 %);
- peak resident memory of pretraining on a store larger than 2 GB (goal < 1.5 GB);
- resnet18 with the colour decoder, 12 bands, 64 px, batch 32, 2 threads: chips/s
  against about 25 chips/s of a plain PyTorch script of a similar model on this
  machine (measured 2026-12-01; goal >= 1.25x). Our decoder has five upsampling
  steps (to full resolution), the script's four."""
import csv
import os
import statistics
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from pair_bench import make_scene  # noqa: E402

TINCT, BENCH, WORK = sys.argv[1], sys.argv[2], sys.argv[3]
scene = os.path.join(WORK, "bench-scene.tif")
make_scene(scene)
BANDS = "[B01, B02, B03, B04, B05, B06, B07, B08, B8A, B09, B11, B12]"
SCENES = 6  # 6 x 4096 chips x 12 x 64 x 64 x 2 bytes = 2.4 GB of bands.bin

pair = os.path.join(WORK, "big-pair.yaml")
with open(pair, "w") as f:
    scenes = "\n".join(f"  - {{path: {scene}, id: copy{i}, date: 2026-06-0{i + 1}}}" for i in range(SCENES))
    f.write(f"""config: pair
sensor: sentinel2-l2a
output: big.pairs
inputs: {BANDS}
colour: {{bands: [B04, B03, B02], allow_input_overlap: true}}
chips: {{size: 64, stride: 64, min_valid: 0.5, block_size: 5000}}
scenes:
{scenes}
""")
if not os.path.exists(os.path.join(WORK, "big.pairs")):
    subprocess.run([TINCT, "--quiet", "pair", pair], check=True, cwd=WORK)
store_bytes = os.path.getsize(os.path.join(WORK, "big.pairs", "bands.bin"))

pretrain = os.path.join(WORK, "bench-pretrain.yaml")
with open(pretrain, "w") as f:
    f.write("""config: pretrain
stores: [big.pairs]
output: runs/bench
model: {encoder: compact}
train: {steps: 80, batch: 32, warmup: 5, log_every: 10}
validation: {every: 0, chips: 64, previews: 0}
checkpoints: {every: 1000, keep: 1}
""")
timed = subprocess.run(["/usr/bin/time", "-f", "%M", TINCT, "--quiet", "pretrain", pretrain, "--force"],
                       check=True, cwd=WORK, capture_output=True, text=True)
peak_mb = int(timed.stderr.strip().splitlines()[-1]) / 1024
with open(os.path.join(WORK, "runs", "bench", "metrics.csv")) as f:
    rates = [float(r["chips_per_s"]) for r in csv.DictReader(f)][2:-1]  # past warm-up, before the final validation
loop_rate = statistics.median(rates)


def step_bench(encoder, channels_last="0", steps="15"):
    out = subprocess.run([BENCH, encoder, "12", "64", "32", steps, channels_last], check=True,
                         capture_output=True, text=True).stdout.split()
    return {"chips": float(out[1]), "gflops": float(out[2]), "matmul": float(out[3]), "macs": int(out[4]),
            "threads": int(out[5])}


compact = step_bench("compact")
resnet = step_bench("resnet18", steps="6")
resnet_cl = step_bench("resnet18", channels_last="1", steps="6")
best_resnet = max(resnet["chips"], resnet_cl["chips"])

rows = [
    ("compact, 12 bands, 64 px, batch 32", f"{compact['macs'] / 1e6:.0f} M MACs/chip, {compact['threads']} threads", ""),
    ("tinct pretrain steady state", f"{loop_rate:.1f} chips/s", ""),
    ("step on preloaded tensors", f"{compact['chips']:.1f} chips/s", ""),
    ("loss to data loading", f"{100 * (1 - loop_rate / compact['chips']):.1f} %", "goal <= 10 %"),
    ("achieved in the step", f"{compact['gflops']:.1f} GFLOP/s", ""),
    ("2048 x 2048 matmul", f"{compact['matmul']:.1f} GFLOP/s", ""),
    ("step / matmul", f"{100 * compact['gflops'] / compact['matmul']:.0f} %", "goal >= 50 %"),
    ("store for the memory run", f"{store_bytes / 1e9:.2f} GB bands.bin", "> 2 GB"),
    ("tinct pretrain peak resident memory", f"{peak_mb:.0f} MB", "goal < 1500 MB"),
    ("resnet18 + decoder, batch 32", f"{resnet['chips']:.1f} chips/s (channels-last {resnet_cl['chips']:.1f})", ""),
    ("resnet18 vs plain PyTorch (~25 chips/s)", f"{best_resnet / 25:.2f}x", "goal >= 1.25x"),
]
width = max(len(r[0]) for r in rows)
print(f"\n{'pretrain benchmark':<{width}}  {'figure':<52} goal")
for name, value, goal in rows:
    print(f"{name:<{width}}  {value:<52} {goal}")
