"""Training-step options of tinct, measured side by side (run by scripts/bench.sh).

tinct_train_bench (forward + backward + AdamW on preloaded tensors, 12 bands, 64 px,
batch 32, all cores) in interleaved rounds, for the default model and resnet18:
contiguous fp32 (the reference), channels-last fp32 (chips in channels-last layout, as
tinct pretrain feeds them), OpenMP threads pinned to cores (as tinct pretrain pins them
by default; every other variant runs with TINCT_PIN_THREADS=0), and bf16 autocast, contiguous and channels-last, when the processor has
native bf16 (AVX512-BF16 or AMX; said so when it has not). Then the step time over batch
16, 32 and 64 as tinct pretrain runs it (channels-last, precision auto), which should grow
linearly: per chip the same at every batch.

usage: train_options_bench.py TINCT_TRAIN_BENCH [scaling]   (scaling: only the batch sizes)"""
import os
import statistics
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from bench_common import ROUNDS, best_median, has_native_bf16, machine_line, print_table  # noqa: E402

STEPS = {"compact": "10", "resnet18": "4"}
UNPINNED = {"TINCT_PIN_THREADS": "0"}


def rate(bench, encoder, batch=32, channels_last="0", precision="fp32", env=UNPINNED):
    out = subprocess.run([bench, encoder, "12", "64", str(batch), STEPS[encoder], channels_last, precision],
                         check=True, capture_output=True, text=True, env=dict(os.environ, **env))
    return float(out.stdout.split()[1])


def option_rows(figures, variants, bf16):
    rows = [("machine", machine_line(), "")]
    for encoder in ("compact", "resnet18"):
        ref_best, ref_med = best_median(figures[(encoder, "contiguous fp32")])
        for name, _ in variants:
            best, med = best_median(figures[(encoder, name)])
            rows.append((f"{encoder}, {name}", f"best {best:.1f}, median {med:.1f} chips/s "
                         f"({best / ref_best:.2f}x / {med / ref_med:.2f}x of contiguous fp32)", ""))
    if not bf16:
        rows.append(("bf16 autocast", "not available: no avx512_bf16 or amx_bf16 in /proc/cpuinfo", ""))
    return rows


def main(bench, only_scaling=False):
    if not only_scaling:
        options(bench)
    scaling(bench)


def options(bench):
    bf16 = has_native_bf16()
    variants = [("contiguous fp32", {}), ("channels-last fp32", {"channels_last": "1"}),
                ("contiguous fp32, pinned threads", {"env": {}})]
    if bf16:
        variants.append(("contiguous bf16 autocast", {"precision": "bf16"}))
        variants.append(("channels-last bf16 autocast", {"channels_last": "1", "precision": "bf16"}))
    figures = {}
    for r in range(ROUNDS):
        for encoder in ("compact", "resnet18"):
            order = variants if r % 2 == 0 else variants[::-1]
            for name, kw in order:
                figures.setdefault((encoder, name), []).append(rate(bench, encoder, **kw))
        print_table(f"training-step options, after {r + 1} of {ROUNDS} rounds",
                    option_rows(figures, variants, bf16), flush=True)


def scaling(bench):
    rows = [("machine", machine_line(), "")]
    per_batch = {}
    for r in range(ROUNDS):
        for batch in ((16, 32, 64) if r % 2 == 0 else (64, 32, 16)):
            per_batch.setdefault(batch, []).append(batch / rate(bench, "compact", batch=batch, channels_last="1",
                                                                precision="auto", env={}))
    base = min(per_batch[16]) / 16
    for batch in (16, 32, 64):
        best = min(per_batch[batch])
        rows.append((f"compact step, batch {batch}", f"best {1000 * best:.0f} ms, median "
                     f"{1000 * statistics.median(per_batch[batch]):.0f} ms; per chip {1000 * best / batch:.1f} ms "
                     f"({best / batch / base:.2f}x of batch 16's)", "linear: 1.00x"))
    print_table("pretraining step over batch size (channels-last, precision auto)", rows)


if __name__ == "__main__":
    main(sys.argv[1], len(sys.argv) > 2 and sys.argv[2] == "scaling")
