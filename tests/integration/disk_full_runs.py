"""A full disk during a checkpoint or model write: pretrain and finetune write their run
onto a small tmpfs (in a mount namespace of their own; skipped, saying why, where the test
cannot mount one). The write fails, the message names the file, the bytes and the free
space, run.yaml says failed with that reason, no temporary file is left, and the process
ends with exit 1, not an abort."""
import os
import subprocess
import sys
import tempfile

import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402
from tiny_project import finetune_config, make_stores, pretrain_config, tinct_command  # noqa: E402

checks = Checks()

# $1 mount point, $2 size, then the tinct command line; stderr to $1.stderr, exit code to $1.exit.
ON_SMALL_DISK = r"""
set -u
mount -t tmpfs -o size="$2" tmpfs "$1" || exit 77
point="$1"; shift 2
"$@" 2> "$point.stderr"
echo $? > "$point.exit"
find "$point" -type f | sort > "$point.files"
cat "$point"/run/run.yaml > "$point.run.yaml" 2>/dev/null
exit 0
"""


def on_small_disk(work, name, size, *args):
    point = os.path.join(work, name)
    os.makedirs(point)
    run = subprocess.run(["unshare", "--user", "--map-root-user", "--mount", "sh", "-c", ON_SMALL_DISK, "sh",
                          point, size, *tinct_command(*args)], capture_output=True, text=True, cwd=work)
    if run.returncode == 77 or not os.path.exists(point + ".exit"):
        return None
    read = lambda suffix: open(point + suffix).read() if os.path.exists(point + suffix) else ""  # noqa: E731
    return {"exit": int(read(".exit")), "stderr": read(".stderr"), "files": read(".files").split(),
            "run": yaml.safe_load(read(".run.yaml") or "{}") or {}, "point": point}


def full_disk(work, what, result, file):
    text = result["stderr"]
    checks.check(result["exit"] == 1, f"{what}: exit 1, got {result['exit']}:\n{text}")
    target = os.path.join(result["point"], "run", file)
    checks.check(f"cannot write {target}" in text and "No space left on device" in text,
                 f"{what}: the message names {target} and the reason:\n{text}")
    checks.check(" bytes" in text and "free on the file system of" in text,
                 f"{what}: the message gives the bytes and the free space:\n{text}")
    for noise in ("terminate called", "frame #", "Exception raised from", "unexpected failure"):
        checks.check(noise not in text, f"{what}: no '{noise}':\n{text}")
    checks.check(result["run"].get("status") == "failed", f"{what}: run.yaml says failed: {result['run']}")
    checks.check("No space left on device" in result["run"].get("reason", ""),
                 f"{what}: run.yaml gives the reason: {result['run']}")
    leftovers = [f for f in result["files"] if ".tmp." in os.path.basename(f)]
    checks.check(not leftovers, f"{what}: no temporary file is left: {leftovers}")


with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    if ok:
        pretrain = pretrain_config(work, "pre", steps=4, every=4, output="small-pre/run")
        result = on_small_disk(work, "small-pre", "64k", "pretrain", pretrain)
        if result is None:
            print("skipped: this test cannot mount a tmpfs in a user and mount namespace here")
            raise SystemExit(77)
        full_disk(work, "pretrain checkpoint", result, "checkpoints/step-00000004.pt")
        finetune = finetune_config(work, "fine", epochs=1, output="small-fine/run")
        result = on_small_disk(work, "small-fine", "64k", "finetune", finetune)
        full_disk(work, "finetune model", result, "model.pt")

checks.finish()
