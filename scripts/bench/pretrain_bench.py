"""Benchmark of `tinct pretrain` memory and data loading (run by scripts/bench.sh).

- peak resident memory of tinct pretrain (default compact model, batch 32) on a 0.8 GB
  and a 2.4 GB store, same steps (goal: the same within 10 %, under 600 MB): pretraining
  must not hold pages of the whole store, or a cluster's memory limit kills the job;
- the share lost to data loading: tinct pretrain's steady-state chips/s against the same
  model's step on preloaded tensors, in interleaved rounds (goal <= 10 %).

usage: pretrain_bench.py TINCT TINCT_TRAIN_BENCH WORK"""
import csv
import os
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from bench_common import ROUNDS, best_median, make_store, print_table  # noqa: E402


def pretrain(tinct, work, store, name, steps=30):
    config = os.path.join(work, name + ".yaml")
    with open(config, "w") as f:
        f.write(f"""config: pretrain
stores: [{store}]
output: runs/{name}
model: {{encoder: compact}}
train: {{steps: {steps}, batch: 32, warmup: 5, log_every: 10}}
validation: {{every: 0, chips: 64, previews: 0}}
checkpoints: {{every: 100000, keep: 1}}
""")
    done = subprocess.run(["/usr/bin/time", "-f", "%M", tinct, "--quiet", "pretrain", config, "--force"],
                          check=True, cwd=work, capture_output=True, text=True)
    peak_mb = int(done.stderr.strip().splitlines()[-1]) / 1024
    with open(os.path.join(work, "runs", name, "metrics.csv")) as f:
        rates = [float(r["chips_per_s"]) for r in csv.DictReader(f) if r.get("chips_per_s")][1:]
    return peak_mb, len(rates) / sum(1 / r for r in rates)


def step_rate(bench):
    """The step as tinct pretrain runs it: channels-last chips, precision auto."""
    return float(subprocess.run([bench, "compact", "12", "64", "32", "15", "1", "auto"], check=True,
                                capture_output=True, text=True).stdout.split()[1])


def main(tinct, bench, work):
    small = make_store(tinct, work, 2, "bench2.pairs")
    large = make_store(tinct, work, 6, "bench6.pairs")
    size = {s: os.path.getsize(os.path.join(s, "bands.bin")) / 1e9 for s in (small, large)}
    peaks, loops, steps = {small: [], large: []}, [], []
    for r in range(ROUNDS):
        for store in ((small, large) if r % 2 == 0 else (large, small)):
            subprocess.run(["sync"])
            peak, rate = pretrain(tinct, work, store, "mem")
            peaks[store].append(peak)
            loops.append(rate)
        steps.append(step_rate(bench))
    s_best, s_med = best_median(peaks[small], higher_is_better=False)
    l_best, l_med = best_median(peaks[large], higher_is_better=False)
    loop_best, loop_med = best_median(loops)
    step_best, step_med = best_median(steps)
    rows = [
        ("setting", f"compact, 12 bands, 64 px, batch 32, 30 steps, {ROUNDS} interleaved rounds", ""),
        (f"peak RSS, {size[small]:.1f} GB store", f"best {s_best:.0f} MB, median {s_med:.0f} MB", "goal < 600 MB"),
        (f"peak RSS, {size[large]:.1f} GB store", f"best {l_best:.0f} MB, median {l_med:.0f} MB", "goal < 600 MB"),
        ("growth with the store (medians)", f"{100 * (l_med / s_med - 1):+.1f} %", "goal within 10 %"),
        ("tinct pretrain steady state", f"best {loop_best:.1f}, median {loop_med:.1f} chips/s", ""),
        ("step on preloaded tensors", f"best {step_best:.1f}, median {step_med:.1f} chips/s", ""),
        ("loss to data loading", f"{100 * (1 - loop_best / step_best):.1f} % of bests, "
                                 f"{100 * (1 - loop_med / step_med):.1f} % of medians", "goal <= 10 %"),
    ]
    print_table("pretrain memory and loading", rows)


if __name__ == "__main__":
    main(*sys.argv[1:4])
