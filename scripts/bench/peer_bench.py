"""tinct against its plain PyTorch peer (scripts/bench/peer_pretrain.py), side by side.

Same machine, same run, rounds interleaved (the order flips each round), because other
tenants swing rates by several times between runs. For the default model (compact) and
resnet18, each with the same decoder, 12 bands, 64 px chips, batch 32 and all cores:
- compute-only step: forward + backward + AdamW on preloaded tensors (tinct: as its
  pretrain runs it, channels-last chips and train.precision auto; the peer: fp32 as written);
- full loop: tinct pretrain on a store against the peer's DataLoader over memory maps of
  the same store's files; and tinct's full loop with its compute threads not pinned to
  cores (TINCT_PIN_THREADS=0), to show what pinning (the default) does.
Best and median of each side, ratio of bests and of medians. The share of the machine's
measured peak takes the best of a large torch::mm and numpy's matmul, both in this run.

usage: peer_bench.py TINCT TINCT_TRAIN_BENCH WORK"""
import csv
import os
import subprocess
import sys

sys.path.insert(0, os.path.dirname(__file__))
from bench_common import ROUNDS, best_median, machine_line, make_store, print_table  # noqa: E402

PEER = os.path.join(os.path.dirname(__file__), "peer_pretrain.py")
PYTHON = "/usr/bin/python3"
THREADS = os.cpu_count()
BATCH, CHIP, BANDS = 32, 64, 12
STEPS = {"compact": (10, 30), "resnet18": (4, 12)}  # compute-only, full loop
WORKERS = int(os.environ.get("TINCT_BENCH_PEER_WORKERS", "2"))
ENCODERS = os.environ.get("TINCT_BENCH_PEER_ENCODERS", "compact,resnet18").split(",")  # e.g. only resnet18


def ensure_peer():
    probe = subprocess.run([PYTHON, "-c", "import torch, torchvision"], capture_output=True)
    if probe.returncode != 0:
        print("bench: installing python3-torch and python3-torchvision for the peer")
        subprocess.run(["apt-get", "install", "-y", "-q", "python3-torch", "python3-torchvision"], check=True,
                       stdout=subprocess.DEVNULL, env=dict(os.environ, DEBIAN_FRONTEND="noninteractive"))


def run(command, **kw):
    return subprocess.run(command, check=True, capture_output=True, text=True, **kw).stdout.split()


def tinct_step(bench, encoder):
    """The step as tinct pretrain runs it: channels-last chips, precision auto."""
    out = run([bench, encoder, str(BANDS), str(CHIP), str(BATCH), str(STEPS[encoder][0]), "1", "auto"])
    return {"chips": float(out[1]), "gflops": float(out[2]), "mm": float(out[3]), "params": int(out[6])}


def peer_step(encoder):
    return float(run([PYTHON, PEER, "step", encoder, str(BANDS), str(CHIP), str(BATCH), str(STEPS[encoder][0]),
                      str(THREADS)])[0])


def tinct_loop(tinct, work, store, encoder, pinned=True):
    steps, name = STEPS[encoder][1], f"peer-{encoder}"
    config = os.path.join(work, name + ".yaml")
    with open(config, "w") as f:
        f.write(f"""config: pretrain
stores: [{store}]
output: runs/{name}
model: {{encoder: {encoder}}}
train: {{steps: {steps + 4}, batch: {BATCH}, warmup: 5, log_every: 4}}
validation: {{every: 0, chips: 64, previews: 0}}
checkpoints: {{every: 100000, keep: 1}}
""")
    env = dict(os.environ, **({} if pinned else {"TINCT_PIN_THREADS": "0"}))
    subprocess.run([tinct, "--quiet", "pretrain", config, "--force"], check=True, cwd=work, capture_output=True,
                   env=env)
    with open(os.path.join(work, "runs", name, "metrics.csv")) as f:
        rates = [float(r["chips_per_s"]) for r in csv.DictReader(f) if r.get("chips_per_s")]
    steady = rates[1:] if len(rates) > 1 else rates  # past the first interval (warm-up)
    return len(steady) / sum(1 / r for r in steady)  # chips over time: harmonic mean of equal intervals


def peer_loop(store, encoder):
    return float(run([PYTHON, PEER, "loop", store, encoder, str(BATCH), str(STEPS[encoder][1]), str(THREADS),
                      str(WORKERS)])[0])


def numpy_matmul():
    env = dict(os.environ, OPENBLAS_NUM_THREADS=str(THREADS))
    return float(run([PYTHON, PEER, "matmul", "2048", str(THREADS)], env=env)[0])


def report(figures, steps, rounds):
    best_mm, best_np = max(figures["mm"]), max(figures["numpy"])
    peak = max(best_mm, best_np)
    rows = [("machine", machine_line(), ""),
            ("setting", f"12 bands, 64 px, batch {BATCH}, {THREADS} threads, {rounds} interleaved rounds, "
                        f"peer DataLoader {WORKERS} workers", ""),
            ("2048^2 matmul, best", f"torch::mm {best_mm:.1f}, numpy {best_np:.1f} GFLOP/s: "
                                    f"{'torch::mm' if best_mm >= best_np else 'numpy'} higher", "")]
    for encoder, goal in (("compact", 1.5), ("resnet18", 1.25)):
        if encoder not in ENCODERS:
            continue
        params = steps[encoder][0]["params"]
        for mode in ("step", "loop"):
            tb, tm = best_median(figures[(f"tinct {mode}", encoder)])
            pb, pm = best_median(figures[(f"peer {mode}", encoder)])
            name = f"{encoder} ({params / 1e6:.2f} M par.) {'compute-only' if mode == 'step' else 'full loop'}"
            rows.append((name, f"tinct {tb:.1f} / {tm:.1f}, peer {pb:.1f} / {pm:.1f} chips/s (best / median)", ""))
            rows.append(("  ratio tinct / peer", f"{tb / pb:.2f}x of bests, {tm / pm:.2f}x of medians",
                         f"goal >= {goal:.2f}x" if mode == "loop" else ""))
        ub, um = best_median(figures[("tinct loop unpinned", encoder)])
        lb, lm = best_median(figures[("tinct loop", encoder)])
        rows.append(("  tinct loop, threads not pinned", f"{ub:.1f} / {um:.1f} chips/s; pinned / not: {lb / ub:.2f}x of "
                     f"bests, {lm / um:.2f}x of medians", ""))
        best_step = max(steps[encoder], key=lambda s: s["chips"])
        share = best_step["gflops"] / peak
        rows.append(("  step share of measured peak", f"{100 * share:.0f} % ({best_step['gflops']:.1f} GFLOP/s)", ""))
    print_table(f"tinct vs plain PyTorch peer, after {rounds} of {ROUNDS} rounds", rows, flush=True)


def main(tinct, bench, work):
    ensure_peer()
    store = make_store(tinct, work, 2, "bench2.pairs")
    figures = {}

    def add(key, value):
        figures.setdefault(key, []).append(value)

    steps = {}
    for r in range(ROUNDS):
        for encoder in ENCODERS:
            computes = [("tinct step", lambda: tinct_step(bench, encoder)), ("peer step", lambda: peer_step(encoder))]
            loops = [("tinct loop", lambda: tinct_loop(tinct, work, store, encoder)),
                     ("peer loop", lambda: peer_loop(store, encoder)),
                     ("tinct loop unpinned", lambda: tinct_loop(tinct, work, store, encoder, pinned=False))]
            for group in (computes, loops):
                order = group if r % 2 == 0 else group[::-1]
                for label, measure in order:
                    value = measure()
                    if isinstance(value, dict):
                        steps.setdefault(encoder, []).append(value)
                        add("mm", value["mm"])
                        value = value["chips"]
                    add((label, encoder), value)
        add("numpy", numpy_matmul())
        report(figures, steps, r + 1)  # the figures so far, in case the run is cut short




if __name__ == "__main__":
    main(*sys.argv[1:4])
