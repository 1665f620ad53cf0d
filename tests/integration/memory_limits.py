"""tinct under an address-space limit (ulimit -v, set in the child before tinct starts):
`check` finishes instead of spinning while OpenBLAS sets up its thread pool, and a pretrain
that cannot allocate its batch ends with "out of memory" and exit 1, without a backtrace,
with run.yaml saying failed. --threads beyond 1024 is refused as train.threads is."""
import os
import resource
import subprocess
import sys
import tempfile

import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402
from tiny_project import make_stores, pretrain_config, tinct_command  # noqa: E402

checks = Checks()


def limited(work, megabytes, *args, timeout=90, threads=2):
    def limit():
        size = megabytes << 20
        resource.setrlimit(resource.RLIMIT_AS, (size, size))
    try:
        return subprocess.run(tinct_command(*args, threads=threads), capture_output=True, text=True, cwd=work,
                              preexec_fn=limit, timeout=timeout)
    except subprocess.TimeoutExpired:
        return None


with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    if ok:
        # --threads 0: all cores, which under a tight limit means one.
        run = limited(work, 580, "check", "pair.yaml", timeout=60, threads=0)
        checks.check(run is not None, "check under ulimit -v 580 MiB finishes within 60 s")
        if run is not None:
            checks.check(run.returncode in (0, 1) and "unexpected failure" not in run.stderr,
                         f"check under 580 MiB: exit {run.returncode}: {run.stderr[-500:]}")
            if run.returncode == 1:
                checks.check("out of memory" in run.stderr, f"check under 580 MiB says out of memory: {run.stderr}")

        config = pretrain_config(work, "big", steps=2, every=2)
        path = os.path.join(work, config)
        text = open(path).read().replace("batch: 8", "batch: 4096").replace("width: 0.5", "width: 4")
        open(path, "w").write(text)
        run = limited(work, 1000, "pretrain", config)
        checks.check(run is not None, "pretrain under ulimit -v 1000 MiB ends within 90 s")
        if run is not None:
            checks.check(run.returncode == 1 and "out of memory" in run.stderr,
                         f"pretrain under 1000 MiB: exit 1 and 'out of memory': {run.returncode} {run.stderr[-600:]}")
            for noise in ("terminate called", "frame #", "Exception raised from", "unexpected failure"):
                checks.check(noise not in run.stderr, f"pretrain under 1000 MiB: no '{noise}'")
            status = yaml.safe_load(open(os.path.join(work, "runs", "big", "run.yaml")))
            checks.check(status["status"] == "failed", f"run.yaml says failed: {status}")

        run = subprocess.run(tinct_command("check", "pair.yaml", threads=100000), capture_output=True, text=True,
                             cwd=work, timeout=60)
        checks.check(run.returncode == 2 and "--threads" in run.stderr and "1024" in run.stderr,
                     f"--threads 100000 is refused naming the bound: {run.returncode} {run.stderr}")

checks.finish()
