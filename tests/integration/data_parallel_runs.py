"""tinct pretrain --world 2 end to end (real processes on loopback): the job trains and only
rank 0 writes; when rank 1 is killed with SIGKILL mid-run, rank 0 stops within the Gloo
timeout with an error that names the lost rank, the command exits 1 naming the rank that
failed first, run.yaml says failed and why; --resume on one process then continues from
the last checkpoint the two ranks wrote. `tinct check` accepts and fills in the
distributed: section and refuses a misspelt batch_norm choice."""
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

TINCT = os.environ["TINCT"]
TIMEOUT = 20  # distributed.timeout of the job below, seconds
checks = Checks()


def tinct(*args, threads=1):
    return subprocess.run([TINCT, "--threads", str(threads), *args], capture_output=True, text=True)


def children(pid):
    """Process ids whose parent is `pid`, with their RANK variable."""
    found = {}
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            with open(f"/proc/{entry}/stat") as f:
                parent = int(f.read().rsplit(")", 1)[1].split()[1])
            if parent != pid:
                continue
            with open(f"/proc/{entry}/environ", "rb") as f:
                variables = dict(v.split(b"=", 1) for v in f.read().split(b"\0") if b"=" in v)
            found[int(entry)] = variables.get(b"RANK", b"").decode()
        except (FileNotFoundError, ProcessLookupError, IndexError):
            continue
    return found


def steps(run):
    with open(os.path.join(run, "metrics.csv")) as f:
        return [int(r["step"]) for r in csv.DictReader(f)]


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

    config = os.path.join(work, "long.yaml")
    with open(config, "w") as f:
        f.write(f"""config: pretrain
stores: [small.pairs]
output: runs/long
model: {{encoder: compact, width: 0.5}}
train: {{steps: 100000, batch: 8, lr: 0.003, warmup: 2, log_every: 1, seed: 5}}
validation: {{every: 0, chips: 16, previews: 0}}
checkpoints: {{every: 2, keep: 2}}
distributed: {{timeout: {TIMEOUT}}}
""")
    run = tinct("check", config)
    checks.check(run.returncode == 0 and "batch_norm: local" in run.stdout and "port: 29500" in run.stdout,
                 f"check fills in the distributed section: {run.stdout} {run.stderr}")
    bad = os.path.join(work, "bad.yaml")
    with open(bad, "w") as f:
        f.write(open(config).read().replace(f"timeout: {TIMEOUT}", "batch_norm: synced"))
    run = tinct("check", bad)
    checks.check(run.returncode == 2 and "batch_norm" in run.stderr and "sync" in run.stderr,
                 f"check refuses batch_norm: synced naming the choices: {run.stderr}")

    # Two ranks; rank 1 is killed once the job has written a checkpoint.
    folder = os.path.join(work, "runs", "long")
    log = open(os.path.join(work, "job.err"), "w+")
    job = subprocess.Popen([TINCT, "--threads", "2", "pretrain", config, "--world", "2"], stderr=log,
                           stdout=subprocess.DEVNULL)
    deadline = time.monotonic() + 300
    while time.monotonic() < deadline and job.poll() is None and not (
            os.path.isdir(os.path.join(folder, "checkpoints")) and os.listdir(os.path.join(folder, "checkpoints"))):
        time.sleep(0.2)
    ranks = children(job.pid)
    checks.check(sorted(ranks.values()) == ["0", "1"], f"the launcher runs ranks 0 and 1: {ranks}")
    victim = [pid for pid, rank in ranks.items() if rank == "1"]
    killed_at = time.monotonic()
    if victim:
        os.kill(victim[0], signal.SIGKILL)
    try:
        code = job.wait(timeout=TIMEOUT + 60)
    except subprocess.TimeoutExpired:
        job.kill()
        code = None
    waited = time.monotonic() - killed_at
    log.seek(0)
    err = log.read()
    checks.check(code == 1, f"the job exits 1 after rank 1 is killed (exit {code}):\n{err}")
    checks.check(waited < TIMEOUT + 30, f"and stops within the timeout ({waited:.1f} s)")
    checks.check("rank 0 of 2" in err and "rank 1" in err and ("lost contact" in err or "no answer" in err),
                 f"rank 0 says it lost rank 1:\n{err}")
    checks.check("local rank 1 of 2 failed first: it was killed by SIGKILL" in err,
                 f"the launcher names the rank that failed first:\n{err}")
    checks.check("--resume" in err, "and says how to continue")
    status = yaml.safe_load(open(os.path.join(folder, "run.yaml")))
    checks.check(status["status"] == "failed" and "rank 1" in status.get("reason", ""),
                 f"run.yaml: failed, naming rank 1: {status}")

    # One process continues from the last checkpoint the two ranks wrote.
    last = max(int(name[5:13]) for name in os.listdir(os.path.join(folder, "checkpoints")))
    run = tinct("pretrain", config, "--resume", "--stop-after", str(last + 2))
    checks.check(run.returncode == 0, f"--resume on one process: exit {run.returncode}\n{run.stderr}")
    checks.check("resuming from" in run.stderr and f"(step {last})" in run.stderr, f"from step {last}: {run.stderr}")
    checks.check(steps(folder) == list(range(1, last + 3)), f"metrics rows continue to step {last + 2}: {steps(folder)}")
    status = yaml.safe_load(open(os.path.join(folder, "run.yaml")))
    checks.check(status["status"] == "stopped", f"status after --stop-after: {status['status']}")

checks.finish()
