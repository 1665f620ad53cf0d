"""Replacing a store with --force never loses it. A real `tinct pair --force` (and
`tinct label --force`) is killed with SIGKILL by strace on entering a chosen system
call: each rename of the replacement (the old store moved aside to NAME.previous,
the new one renamed in) and the first rmdir while the old one is deleted. After
every kill NAME or NAME.previous holds a whole store, the old or the new one,
byte for byte; the next run puts an old store back or deletes a replaced one, says
so in its log, and ends with the store an uninterrupted run writes. A store
written onto a full file system (a small tmpfs in a user and mount namespace of
its own; skipped, saying why, where that is not allowed) fails with the file, the
bytes and the free space, and leaves nothing behind."""
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
STRACE = shutil.which("strace")
checks = Checks()

PAIR = """config: pair
sensor: {{profile: generic}}
output: out.pairs
inputs: [nir]
colour: {{bands: [red, green, blue]}}
chips: {{size: {size}, min_valid: 0.9}}
scenes:
  - {{path: scene.tif, bands: [blue, green, red, nir], date: 2026-07-01}}
"""
LABEL = """config: label
sensor: generic
output: out.labels
inputs: [red, nir]
labels: {{source: sites.csv, class: habitat, date: visited, x: e, y: n, crs: "EPSG:32632"}}
chips: {{size: {size}}}
scenes:
  - {{path: scene.tif, bands: [blue, green, red, nir], date: 2026-07-01}}
"""


def write_inputs(work):
    t = texture(128, 128, seed=5)
    bands = [(500 + 2000 * t * f).astype(np.uint16) for f in (0.8, 0.9, 1.0, 1.4)]
    write(os.path.join(work, "scene.tif"), bands, nodata=0)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,e,n,habitat,visited\n1,500405,5299595,breeding,2026-07-02\n"
                "2,500605,5299395,dry,2026-07-03\n3,400000,5299095,dry,2026-07-03\n")


def config(work, command, size):
    path = os.path.join(work, f"{command}-{size}.yaml")
    with open(path, "w") as f:
        f.write((PAIR if command == "pair" else LABEL).format(size=size))
    return path


def contents(folder):
    """{file name: bytes} of a store folder, None when it does not exist. A label store's
    log.txt (times, paths) is compared by its presence only."""
    if not os.path.isdir(folder):
        return None
    out = {}
    for name in sorted(os.listdir(folder)):
        with open(os.path.join(folder, name), "rb") as f:
            out[name] = b"(a log)" if name == "log.txt" else f.read()
    return out


def tinct(command, config_path, out, *flags, prefix=()):
    return subprocess.run([*prefix, TINCT, command, config_path, "--out", out, *flags],
                          capture_output=True, text=True)


def killed_at(syscall, when):
    return [STRACE, "-f", "-qq", "-o", "/dev/null", "-e", f"trace={syscall}",
            "-e", f"inject={syscall}:signal=KILL:when={when}"]


def replacement_kills(work, command, renames_before):
    """renames_before: renames a run makes before its replacement starts (files inside
    NAME.partial/); the replacement's are the next two."""
    old_config, new_config = config(work, command, 16), config(work, command, 32)
    references = {}
    for label, path in (("old", old_config), ("new", new_config)):
        out = os.path.join(work, f"{label}-reference.{command}")
        run = tinct(command, path, out)
        checks.check(run.returncode == 0, f"{command}: {label} reference run: {run.stderr}")
        references[label] = contents(out)
    checks.check(references["old"] != references["new"], f"{command}: the two configs give different stores")

    points = [("rename", renames_before + 1, "moving the old store aside"),
              ("rename", renames_before + 2, "renaming the new store in"),
              ("rmdir", 1, "deleting the old store")]
    for syscall, when, step in points:
        store = os.path.join(work, f"store.{command}")
        aside = store + ".previous"
        shutil.rmtree(store, ignore_errors=True)
        checks.check(tinct(command, old_config, store).returncode == 0, f"{command}: the old store is written")
        run = tinct(command, new_config, store, "--force", prefix=killed_at(syscall, when))
        checks.check(run.returncode != 0, f"{command}, killed {step}: the run was killed ({run.returncode})")
        found = contents(store)
        whole = [label for label, reference in references.items() if reference in (found, contents(aside))]
        checks.check(len(whole) == 1, f"{command}, killed {step}: {store} or its .previous holds the old or "
                                      f"the new store whole (found {sorted(found or {})}, "
                                      f"aside {sorted(contents(aside) or {})})")
        rerun = tinct(command, new_config, store, "--force")
        checks.check(rerun.returncode == 0, f"{command}, after the kill {step}: the next run completes: {rerun.stderr}")
        checks.check(contents(store) == references["new"], f"{command}, after the kill {step}: the store equals "
                                                           "an uninterrupted run's")
        said = {"moving the old store aside": "left by an interrupted run",
                "renaming the new store in": "where an interrupted replacement had moved it",
                "deleting the old store": "an interrupted replacement had already put the new"}[step]
        checks.check(said in rerun.stderr, f"{command}, after the kill {step}: the log says '{said}':\n{rerun.stderr}")
        leftovers = [n for n in os.listdir(work) if n.startswith(f"store.{command}.")]
        checks.check(not leftovers, f"{command}, after the kill {step}: nothing left: {leftovers}")


FULL_DISK = r"""
set -u
mount -t tmpfs -o size=96k tmpfs "$1" || exit 77
cd "$1"
"$TINCT" pair "$2" --out "$1/out.pairs" 2> "$3"
echo "exit $?" >> "$3"
ls -A "$1" >> "$3"
"""


def full_disk(work):
    mount_point = os.path.join(work, "small")
    os.makedirs(mount_point)
    report = os.path.join(work, "full-disk.txt")
    run = subprocess.run(["unshare", "--user", "--map-root-user", "--mount", "sh", "-c", FULL_DISK, "sh",
                          mount_point, config(work, "pair", 32), report], capture_output=True, text=True)
    if run.returncode == 77 or not os.path.exists(report):
        print(f"skipped the full-disk case: no tmpfs in a user namespace here ({run.stderr.strip()})")
        return
    with open(report) as f:
        lines = f.read().splitlines()
    text = "\n".join(lines)
    checks.check("exit 1" in lines, f"full disk: exit 1:\n{text}")
    checks.check(f"cannot write {mount_point}/out.pairs.partial/" in text and "No space left on device" in text,
                 f"full disk: the message names the file and the reason:\n{text}")
    checks.check("bytes" in text and f"free on the file system of {mount_point}/out.pairs.partial" in text,
                 f"full disk: the message gives the bytes and the free space:\n{text}")
    checks.check(lines[lines.index("exit 1") + 1:] == [] if "exit 1" in lines else False,
                 f"full disk: nothing is left on the full file system: {lines}")


if STRACE is None:
    print("strace is missing: install Debian's strace (scripts/setup.sh does)")
    raise SystemExit(1)

with tempfile.TemporaryDirectory() as work:
    write_inputs(work)
    replacement_kills(work, "pair", renames_before=1)    # manifest.yaml
    replacement_kills(work, "label", renames_before=3)   # dropped.csv, log.txt, manifest.yaml
    full_disk(work)

checks.finish()
