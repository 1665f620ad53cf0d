"""Two tinct processes writing one store: the first is stopped at a chosen point
inside its write (strace stops it with SIGSTOP at its first rename, a file renamed
into NAME.partial/ after the last chip: pair's manifest, label's drop report); a
second `tinct pair` or `tinct label` into the same store is refused at once, naming
the store and the first one's pid, and leaves the first one's NAME.partial/ alone;
the first then finishes a store equal byte for byte to an uninterrupted run's, and
no lock file stays."""
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time

import numpy as np

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
STRACE = shutil.which("strace")
checks = Checks()


def write_configs(work):
    t = texture(128, 128, seed=3)
    bands = [(500 + 2000 * t * f).astype(np.uint16) for f in (0.8, 0.9, 1.0, 1.4)]
    write(os.path.join(work, "scene.tif"), bands, nodata=0)
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write("config: pair\nsensor: {profile: generic}\noutput: out.pairs\ninputs: [nir]\n"
                "colour: {bands: [red, green, blue]}\nchips: {size: 32, min_valid: 0.9}\n"
                "scenes:\n  - {path: scene.tif, bands: [blue, green, red, nir], date: 2026-07-01}\n")
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,e,n,habitat,visited\n1,500405,5299595,breeding,2026-07-02\n"
                "2,500605,5299395,dry,2026-07-03\n3,500905,5299095,dry,2026-07-03\n")
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write("config: label\nsensor: generic\noutput: out.labels\ninputs: [red, nir]\n"
                "labels: {source: sites.csv, class: habitat, date: visited, x: e, y: n, crs: \"EPSG:32632\"}\n"
                "chips: {size: 16}\n"
                "scenes:\n  - {path: scene.tif, bands: [blue, green, red, nir], date: 2026-07-01}\n")


def tinct(work, command, config, out, *flags):
    return [TINCT, command, os.path.join(work, config), "--out", os.path.join(work, out), *flags]


def wait_until_stopped(lock_file, trace, tracer):
    """The pid in the store's lock file once strace reports that process stopped."""
    deadline = time.monotonic() + 300
    while time.monotonic() < deadline and tracer.poll() is None:
        if os.path.exists(trace) and "--- stopped by SIGSTOP ---" in open(trace).read():
            with open(lock_file) as f:
                return int(f.read())
        time.sleep(0.05)
    return None


def folder_listing(folder):
    return sorted((name, os.path.getsize(os.path.join(folder, name))) for name in os.listdir(folder))


def same_files(a, b):
    names = sorted(os.listdir(a))
    if names != sorted(os.listdir(b)):
        return False
    for name in names:
        if name == "log.txt":
            continue  # a label store's log (times, paths): present in both is enough
        with open(os.path.join(a, name), "rb") as fa, open(os.path.join(b, name), "rb") as fb:
            if fa.read() != fb.read():
                return False
    return True


def two_writers(work, command, config, store):
    reference = subprocess.run(tinct(work, command, config, "reference." + store), capture_output=True, text=True)
    checks.check(reference.returncode == 0, f"{command}: uninterrupted run: {reference.stderr}")

    target = os.path.join(work, store)
    partial, lock_file = target + ".partial", target + ".lock"
    trace = os.path.join(work, command + ".strace")
    first = subprocess.Popen([STRACE, "-f", "-qq", "-o", trace, "-e", "trace=rename",
                              "-e", "inject=rename:signal=STOP:when=1", *tinct(work, command, config, store)],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    pid = wait_until_stopped(lock_file, trace, first)
    checks.check(pid is not None, f"{command}: the first writer stops at its first rename")
    if pid is None:
        first.kill()
        return
    before = folder_listing(partial)
    checks.check(any(name == "bands.bin" for name, _ in before), f"{command}: stopped mid-write: {before}")

    started = time.monotonic()
    second = subprocess.run(tinct(work, command, config, store, "--force"), capture_output=True, text=True)
    checks.check(second.returncode == 1, f"{command}: second writer exits 1, got {second.returncode}: {second.stderr}")
    checks.check(f"{target} is in use by another tinct process (pid {pid}" in second.stderr,
                 f"{command}: the refusal names the store and the first writer's pid:\n{second.stderr}")
    checks.check(time.monotonic() - started < 30, f"{command}: the refusal comes at once")
    checks.check(folder_listing(partial) == before, f"{command}: the first writer's {store}.partial is untouched")

    os.kill(pid, signal.SIGCONT)
    out, err = first.communicate(timeout=300)
    checks.check(first.returncode == 0, f"{command}: the first writer finishes: {err}")
    checks.check(same_files(target, os.path.join(work, "reference." + store)),
                 f"{command}: the first writer's store equals an uninterrupted run's")
    leftovers = [n for n in os.listdir(work) if n.endswith((".partial", ".lock"))]
    checks.check(not leftovers, f"{command}: nothing left behind: {leftovers}")


if STRACE is None:
    print("strace is missing: install Debian's strace (scripts/setup.sh does)")
    raise SystemExit(1)

with tempfile.TemporaryDirectory() as work:
    write_configs(work)
    two_writers(work, "pair", "pair.yaml", "out.pairs")
    two_writers(work, "label", "label.yaml", "out.labels")

checks.finish()
