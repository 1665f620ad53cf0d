"""Time to quality: seconds of training until the validation delta E first reaches a target,
tinct pretrain against the plain PyTorch peer (scripts/bench/peer_pretrain.py) training the
same model (compact, with tinct's decoder) on the same store with the same schedule (AdamW
lr 2e-3, warm-up then cosine), batch 32, all cores. Each side validates every EVERY steps on
held-out chips (tinct: its held-out blocks; the peer: every fifth chip) with tinct's delta E.
Seconds are training time up to the validation, earlier validations included, startup not.

The target is a level both sides reach: 1.05 x the larger of the two final delta E values of
the first round, kept for every round. Rounds interleaved (the order flips each round), best
and median of each side and their ratio. TINCT_BENCH_QUALITY_STEPS (default 120) sets the
steps of one run.

usage: quality_bench.py TINCT WORK"""
import csv
import os
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from bench_common import ROUNDS, best_median, machine_line, make_store, print_table  # noqa: E402

PEER = os.path.join(os.path.dirname(__file__), "peer_pretrain.py")
STEPS = int(os.environ.get("TINCT_BENCH_QUALITY_STEPS", "120"))
BATCH, WARMUP, EVERY, VAL_CHIPS = 32, 10, 10, 128
THREADS = os.cpu_count()
WORKERS = int(os.environ.get("TINCT_BENCH_PEER_WORKERS", "2"))


def tinct_curve(tinct, work, store):
    """[(step, seconds, delta_e)] of one tinct pretrain run, from its metrics.csv."""
    config = os.path.join(work, "quality.yaml")
    with open(config, "w") as f:
        f.write(f"""config: pretrain
stores: [{store}]
output: runs/quality
model: {{encoder: compact}}
train: {{steps: {STEPS}, batch: {BATCH}, warmup: {WARMUP}, log_every: {EVERY}}}
validation: {{every: {EVERY}, chips: {VAL_CHIPS}, previews: 0}}
checkpoints: {{every: 100000, keep: 1}}
""")
    subprocess.run([tinct, "--quiet", "pretrain", config, "--force"], check=True, cwd=work, capture_output=True)
    curve, seconds, last = [], 0.0, 0
    with open(os.path.join(work, "runs", "quality", "metrics.csv")) as f:
        for row in csv.DictReader(f):
            step = int(row["step"])
            seconds += BATCH * (step - last) / float(row["chips_per_s"])
            last = step
            if row.get("val_delta_e"):
                curve.append((step, seconds, float(row["val_delta_e"])))
    return curve


def peer_curve(store):
    out = subprocess.run(["/usr/bin/python3", PEER, "quality", store, "compact", str(BATCH), str(STEPS),
                          str(THREADS), str(WORKERS), str(WARMUP), str(EVERY), str(VAL_CHIPS)],
                         check=True, capture_output=True, text=True).stdout
    return [(int(a), float(b), float(c)) for a, b, c in (line.split() for line in out.splitlines())]


def time_to(curve, target):
    return next(((step, seconds) for step, seconds, value in curve if value <= target), None)


def main(tinct, work):
    store = make_store(tinct, work, 2, "bench2.pairs")
    curves = {"tinct": [], "peer": []}
    measure = {"tinct": lambda: tinct_curve(tinct, work, store), "peer": lambda: peer_curve(store)}
    for r in range(ROUNDS):
        for side in (("tinct", "peer") if r % 2 == 0 else ("peer", "tinct")):
            curves[side].append(measure[side]())
    target = 1.05 * max(curves["tinct"][0][-1][2], curves["peer"][0][-1][2])
    rows = [("machine", machine_line(), ""),
            ("setting", f"compact, batch {BATCH}, {STEPS} steps, warm-up {WARMUP}, validation every {EVERY} steps "
                        f"on {VAL_CHIPS} chips, {ROUNDS} interleaved rounds", ""),
            ("target delta E", f"{target:.2f} (final: tinct {curves['tinct'][0][-1][2]:.2f}, "
                               f"peer {curves['peer'][0][-1][2]:.2f}, first round)", "")]
    seconds = {}
    for side in ("tinct", "peer"):
        reached = [time_to(c, target) for c in curves[side]]
        seconds[side] = [s for _, s in filter(None, reached)]
        steps = sorted(step for step, _ in filter(None, reached))
        if not seconds[side]:
            rows.append((f"{side} time to target", "not reached", ""))
            continue
        best, med = best_median(seconds[side], higher_is_better=False)
        rows.append((f"{side} time to target", f"best {best:.1f} s, median {med:.1f} s "
                     f"(at step {steps[0]}-{steps[-1]}; reached in {len(seconds[side])} of {ROUNDS} runs)", ""))
    if seconds["tinct"] and seconds["peer"]:
        tb, tm = best_median(seconds["tinct"], higher_is_better=False)
        pb, pm = best_median(seconds["peer"], higher_is_better=False)
        rows.append(("  peer / tinct time", f"{pb / tb:.2f}x of bests, {pm / tm:.2f}x of medians", "goal >= 1.50x"))
    print_table("time to quality: tinct pretrain vs plain PyTorch peer", rows)


if __name__ == "__main__":
    main(*sys.argv[1:3])
