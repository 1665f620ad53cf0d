"""SIGKILL at chosen points of pair, label, pretrain and finetune, including inside a write
(strace injects the kill when the process enters a chosen system call: the n-th write into
a file, or the rename that commits it; Debian's strace). After each kill the previous good
state survives (no store or the old one, the last checkpoint, the finished run that --force
was replacing), and the next run completes with the outputs of an uninterrupted run: the
same store bytes, the same metrics rows (all but the timing column) and the same encoder.pt
and model.pt bytes. Points are found by tracing an uninterrupted run first, so they do not
depend on how many other calls the run makes."""
import csv
import os
import shutil
import sys
import tempfile

import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from kill_points import STRACE, files_of, kill_point, killed_run, renamed_by, traced_calls  # noqa: E402
from synthetic import Checks  # noqa: E402
from tiny_project import finetune_config, make_stores, pretrain_config, run_tinct  # noqa: E402

checks = Checks()

# A label store's log.txt holds times and paths, so stores are compared without it.
STORE_LOG = ("log.txt",)


def metrics(folder):
    with open(os.path.join(folder, "metrics.csv")) as f:
        return [{k: v for k, v in row.items() if k != "chips_per_s"} for row in csv.DictReader(f)]


def store_points(work, command, config, out):
    """Kills a store build inside its first write to bands.bin, at the rename of its manifest and
    at the rename of the folder; no store is left half-made and a re-run equals an uninterrupted one."""
    reference = os.path.join(work, f"reference.{command}")
    run, calls = traced_calls(work, [command, config, "--out", reference])
    checks.check(run.returncode == 0, f"{command}: traced run: {run.stderr}")
    expected = files_of(reference, STORE_LOG)
    for name, part, nth, what in (("write", "bands.bin", 1, "inside a write to bands.bin"),
                                  ("rename", "manifest.yaml", 1, "committing manifest.yaml"),
                                  ("rename", f"reference.{command}", 1, "renaming the store in")):
        syscall = name if name == "write" else renamed_by(calls, part)
        pid, when = kill_point(calls, syscall, part, nth)
        checks.check(when is not None, f"{command}: found the {what} point")
        if when is None:
            continue
        target = os.path.join(work, out)
        shutil.rmtree(target, ignore_errors=True)
        killed = killed_run(work, [command, config, "--out", target], syscall, when)
        checks.check(killed.returncode != 0, f"{command} killed {what}: it died ({killed.returncode})")
        checks.check(not os.path.exists(os.path.join(target, "manifest.yaml")) or files_of(target, STORE_LOG) == expected,
                     f"{command} killed {what}: no store, or a whole one")
        rerun = run_tinct(work, command, config, "--out", target)
        checks.check(rerun.returncode == 0, f"{command} after the kill {what}: the re-run completes: {rerun.stderr}")
        checks.check(files_of(target, STORE_LOG) == expected, f"{command} after the kill {what}: equals an uninterrupted run")
        leftovers = [n for n in os.listdir(work) if n.startswith(out + ".")]
        checks.check(not leftovers, f"{command} after the kill {what}: nothing left beside it: {leftovers}")


def pretrain_points(work):
    config = pretrain_config(work, "pre", steps=8, every=4)
    run, calls = traced_calls(work, ["pretrain", config])
    checks.check(run.returncode == 0, f"pretrain: traced run: {run.stderr}")
    reference = os.path.join(work, "runs", "pre")
    expected_metrics, expected_encoder = metrics(reference), open(os.path.join(reference, "encoder.pt"), "rb").read()
    rename = renamed_by(calls, "step-00000008.pt")
    points = [("write", "step-00000008.pt.tmp", 3, "inside the write of the step-8 checkpoint"),
              (rename, "step-00000008.pt", 1, "committing the step-8 checkpoint"),
              (rename, "encoder.pt", 1, "committing encoder.pt")]
    for syscall, part, nth, what in points:
        pid, when = kill_point(calls, syscall, part, nth)
        checks.check(when is not None, f"pretrain: found the point {what}")
        if when is None:
            continue
        shutil.rmtree(os.path.join(work, "runs", "killed"), ignore_errors=True)
        killed_config = pretrain_config(work, "killed", steps=8, every=4)
        killed = killed_run(work, ["pretrain", killed_config], syscall, when)
        folder = os.path.join(work, "runs", "killed")
        checks.check(killed.returncode != 0, f"pretrain killed {what}: it died")
        checks.check(os.path.exists(os.path.join(folder, "checkpoints", "step-00000004.pt")),
                     f"pretrain killed {what}: the step-4 checkpoint survives")
        checks.check(not os.path.exists(os.path.join(folder, "encoder.pt")), f"pretrain killed {what}: no encoder.pt yet")
        resumed = run_tinct(work, "pretrain", killed_config, "--resume")
        checks.check(resumed.returncode == 0, f"pretrain killed {what}: --resume completes: {resumed.stderr}")
        checks.check(metrics(folder) == expected_metrics, f"pretrain killed {what}: metrics rows equal an "
                                                          "uninterrupted run's")
        checks.check(open(os.path.join(folder, "encoder.pt"), "rb").read() == expected_encoder,
                     f"pretrain killed {what}: encoder.pt equals an uninterrupted run's")
        temporaries = [n for _, _, names in os.walk(folder) for n in names if ".tmp." in n]
        checks.check(not temporaries, f"pretrain killed {what}: no temporary left after the resume: {temporaries}")

    # --force over a finished run, killed inside its first checkpoint: the old run survives whole.
    # The killed process's lock file stays (the next run takes it over): not part of the run.
    old = files_of(reference, skip=("log.txt", "lock"))
    pid, when = kill_point(calls, "write", "step-00000004.pt.tmp", 2)
    killed = killed_run(work, ["pretrain", config, "--force"], "write", when)
    checks.check(killed.returncode != 0, "pretrain --force killed: it died")
    checks.check(files_of(reference, skip=("log.txt", "lock")) == old,
                 "pretrain --force killed: the finished run is intact")
    checks.check(yaml.safe_load(open(os.path.join(reference, "run.yaml")))["status"] == "done",
                 "pretrain --force killed: run.yaml still says done")
    forced = run_tinct(work, "pretrain", config, "--force")
    checks.check(forced.returncode == 0, f"pretrain --force after the kill completes: {forced.stderr}")
    checks.check(metrics(reference) == expected_metrics and
                 open(os.path.join(reference, "encoder.pt"), "rb").read() == expected_encoder,
                 "pretrain --force after the kill equals an uninterrupted run")
    checks.check(not os.path.exists(reference + ".partial") and not os.path.exists(reference + ".previous"),
                 "pretrain --force: nothing left beside the run")


def finetune_points(work):
    config = finetune_config(work, "fine", epochs=3)
    run, calls = traced_calls(work, ["finetune", config])
    checks.check(run.returncode == 0, f"finetune: traced run: {run.stderr}")
    reference = os.path.join(work, "runs", "fine")
    expected = files_of(reference, skip=("log.txt", "run.yaml"))
    rename = renamed_by(calls, "model.pt")
    commits = sum(1 for _, c, p in calls if c == rename and p.endswith("model.pt"))
    for syscall, part, nth, what in ((rename, "model.pt", 1, "committing the first model.pt"),
                                     (rename, "model.pt", commits, "committing the last model.pt"),
                                     ("write", "step-", 2, "inside the write of the first checkpoint")):
        pid, when = kill_point(calls, syscall, part, nth)
        checks.check(when is not None, f"finetune: found the point {what}")
        if when is None:
            continue
        killed_config = finetune_config(work, "killed-fine", epochs=3)
        folder = os.path.join(work, "runs", "killed-fine")
        shutil.rmtree(folder, ignore_errors=True)
        killed = killed_run(work, ["finetune", killed_config], syscall, when)
        checks.check(killed.returncode != 0, f"finetune killed {what}: it died")
        has_checkpoint = os.path.isdir(os.path.join(folder, "checkpoints")) and any(
            n.startswith("step-") for n in os.listdir(os.path.join(folder, "checkpoints")))
        if not has_checkpoint:
            plain = run_tinct(work, "finetune", killed_config)
            checks.check(plain.returncode == 2 and "no checkpoint to continue from" in plain.stderr and
                         "--resume" not in plain.stderr, f"finetune killed {what}: the refusal suggests what works "
                                                         f"(--force), not --resume:\n{plain.stderr}")
        rerun = run_tinct(work, "finetune", killed_config, "--resume" if has_checkpoint else "--force")
        checks.check(rerun.returncode == 0, f"finetune killed {what}: the re-run completes: {rerun.stderr}")
        found = files_of(folder, skip=("log.txt", "run.yaml"))
        # The resolved config and the checkpoints' config hash hold the run's own output path.
        differing = sorted(n for n in set(found) | set(expected) if found.get(n) != expected.get(n)
                           and n != "config.resolved.yaml" and not n.startswith("checkpoints/"))
        checks.check(not differing, f"finetune killed {what}: the run equals an uninterrupted one ({differing})")


if STRACE is None:
    print("strace is missing: install Debian's strace (scripts/setup.sh does)")
    raise SystemExit(1)

with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    if ok:
        store_points(work, "pair", "pair.yaml", "crash.pairs")
        store_points(work, "label", "label.yaml", "crash.labels")
        pretrain_points(work)
        finetune_points(work)

checks.finish()
