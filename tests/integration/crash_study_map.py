"""SIGKILL at chosen points of `tinct study` and `tinct map`, including inside a write
(Debian's strace injects the kill at a system call found by tracing an uninterrupted run:
a write, the fsync of a temporary or the rename that commits it),
and two of them writing one output. A killed study keeps its finished runs and no
half-written summary, and run again writes the summary.csv of an uninterrupted study; a
killed `study --force` leaves the old summary.csv whole. A killed map leaves no map or a
whole one, `map --force` killed leaves the old map whole, and a re-run writes the same
files as an uninterrupted run. A second study into a study folder, or a second map into
an output folder, is refused at once while the first is stopped mid-way (strace SIGSTOP),
and the first then finishes intact. The study kills hit the study process only (its
fine-tunes run untraced and end on SIGTERM when it dies)."""
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from kill_points import STRACE, count_calls, files_of, kill_point, killed_run, renamed_by, traced_calls  # noqa: E402
from synthetic import Checks  # noqa: E402
from tiny_project import (finetune_config, make_stores, run_tinct, tinct_command, write_input_stack,  # noqa: E402
                          write_text)

checks = Checks()

STUDY = """config: study
output: studies/s
finetune: study-base.yaml
arms:
  - {name: scratch, init: {from: scratch, model: {encoder: compact, width: 0.5}}}
baselines: [logistic_regression]
seeds: [1, 2]
budgets: [all]
folds: [2]
parallel: 1
"""
# Run folders hold times and this process's paths in these files; summaries do not.
VARYING = ("log.txt", "run.yaml", "lock")


def temporaries(folder):
    return sorted(os.path.join(r, n) for r, _, names in os.walk(folder) for n in names if ".tmp." in n)


def live_locks(folder):
    """Lock files under folder whose process still runs (a killed study's fine-tunes end on SIGTERM)."""
    alive = []
    for root, _, names in os.walk(folder):
        for n in names:
            if n == "lock" or n.endswith(".lock"):
                try:
                    pid = int(open(os.path.join(root, n)).read().split()[0])
                    os.kill(pid, 0)
                    alive.append(pid)
                except (ValueError, IndexError, OSError):
                    pass
    return alive


def wait_for_orphans(folder, seconds=120):
    deadline = time.monotonic() + seconds
    while live_locks(folder) and time.monotonic() < deadline:
        time.sleep(0.2)
    return not live_locks(folder)


def read(path):
    return open(path, "rb").read() if os.path.exists(path) else None


def study_points(work):
    write_text(work, "study-base.yaml", open(os.path.join(work, finetune_config(work, "base", epochs=1))).read()
               .replace("runs/base", "runs/unused"))
    write_text(work, "s.yaml", STUDY)
    folder = os.path.join(work, "studies", "s")
    run, calls = traced_calls(work, ["study", "s.yaml"], follow=False)
    checks.check(run.returncode == 0, f"study: traced run: {run.stderr[-1500:]}")
    if run.returncode:
        return
    expected = read(os.path.join(folder, "summary.csv"))
    expected_runs = files_of(os.path.join(folder, "runs"), VARYING)
    rename = renamed_by(calls, "summary.csv")
    validations = count_calls(calls, rename, "validation/predictions.csv")
    checks.check(validations >= 2, f"study: the traced run commits validation predictions of each run ({validations})")
    points = [(rename, "validation/predictions.csv", 1, "committing the first run's validation predictions"),
              # Inside the atomic write of summary.csv: its temporary is written, at its fsync. (The
              # study's count of write calls varies with how its children's output arrives.)
              ("fsync", "summary.csv.tmp", 1, "inside the write of summary.csv"),
              (rename, "report.html", 1, "committing report.html")]

    def kill_and_rerun(what, syscall, part, nth, flags, expect_summary):
        pid, when = kill_point(calls, syscall, part, nth)
        checks.check(when is not None, f"study: found the point {what}")
        if when is None:
            return
        killed = killed_run(work, ["study", "s.yaml", *flags], syscall, when, follow=False)
        checks.check(killed.returncode != 0, f"study{' --force' if flags else ''} killed {what}: it died")
        checks.check(wait_for_orphans(folder), f"study killed {what}: its fine-tunes end")
        checks.check(read(os.path.join(folder, "summary.csv")) == expect_summary,
                     f"study{' --force' if flags else ''} killed {what}: summary.csv is "
                     f"{'the old one, whole' if expect_summary else 'not written'}")
        rerun = run_tinct(work, "study", "s.yaml")
        checks.check(rerun.returncode == 0, f"study killed {what}: the re-run completes: {rerun.stderr[-1500:]}")
        checks.check(read(os.path.join(folder, "summary.csv")) == expected,
                     f"study killed {what}: summary.csv equals an uninterrupted study's")
        found = files_of(os.path.join(folder, "runs"), VARYING)
        # Checkpoints are the fine-tunes' own business (crash_points); their results are compared.
        differing = sorted(n for n in set(found) | set(expected_runs) if found.get(n) != expected_runs.get(n)
                           and "/checkpoints/" not in n)
        checks.check(not differing, f"study killed {what}: the run folders equal an uninterrupted study's: {differing}")
        checks.check(os.path.exists(os.path.join(folder, "report.html")), f"study killed {what}: report.html written")
        checks.check(not temporaries(folder), f"study killed {what}: no temporary file left: {temporaries(folder)}")

    for syscall, part, nth, what in points:
        shutil.rmtree(folder)
        kill_and_rerun(what, syscall, part, nth, [], None if "report" not in part else expected)
    # The study is whole now: --force killed mid-way or inside its summary keeps the old summary.
    for syscall, part, nth, what in points[:2]:
        kill_and_rerun(what, syscall, part, nth, ["--force"], expected)


def map_points(work):
    args = ["map", "runs/fine", "inputs.tif", "--out", "maps/m"]
    target = os.path.join(work, "maps", "m")
    run, calls = traced_calls(work, args)
    checks.check(run.returncode == 0, f"map: traced run: {run.stderr[-1500:]}")
    if run.returncode:
        return
    expected = files_of(target)
    checks.check(any(n.endswith(".tif") for n in expected), f"map: GeoTIFFs written: {sorted(expected)}")
    rename = renamed_by(calls, "maps/m")
    points = [("write", "classes.tif", 2, "inside a write of classes.tif"),
              ("write", "probabilities.tif", 1, "inside the first write of probabilities.tif"),
              (rename, "maps/m", 1, "renaming the map folder in")]
    for syscall, part, nth, what in points:
        pid, when = kill_point(calls, syscall, part, nth)
        checks.check(when is not None, f"map: found the point {what}")
        if when is None:
            continue
        shutil.rmtree(target, ignore_errors=True)
        killed = killed_run(work, args, syscall, when)
        checks.check(killed.returncode != 0, f"map killed {what}: it died")
        checks.check(not os.path.exists(target) or files_of(target) == expected, f"map killed {what}: no map, or a whole one")
        rerun = run_tinct(work, *args)
        checks.check(rerun.returncode == 0, f"map killed {what}: the re-run completes: {rerun.stderr[-1500:]}")
        checks.check(files_of(target) == expected, f"map killed {what}: the files equal an uninterrupted run's")
        leftovers = sorted(n for n in os.listdir(os.path.dirname(target)) if n != "m")
        checks.check(not leftovers, f"map killed {what}: nothing left beside the map: {leftovers}")
    # --force over the whole map, killed inside its write: the old map stays whole.
    pid, when = kill_point(calls, "write", "classes.tif", 2)
    if when is not None:
        killed = killed_run(work, [*args, "--force"], "write", when)
        checks.check(killed.returncode != 0, "map --force killed: it died")
        checks.check(files_of(target) == expected, "map --force killed inside a write: the old map is whole")
        forced = run_tinct(work, *args, "--force")
        checks.check(forced.returncode == 0 and files_of(target) == expected,
                     f"map --force after the kill equals an uninterrupted run: {forced.stderr[-800:]}")
        leftovers = sorted(n for n in os.listdir(os.path.dirname(target)) if n != "m")
        checks.check(not leftovers, f"map --force: nothing left beside the map: {leftovers}")
    return expected


def stopped_first(work, args, trace, follow):
    """Starts tinct under strace stopping it (SIGSTOP) at its first rename; returns (process, pid)."""
    first = subprocess.Popen([STRACE, *(["-f"] if follow else []), "-qq", "-o", trace, "-e", "trace=rename,renameat2",
                              "-e", "inject=rename,renameat2:signal=STOP:when=1", *tinct_command(*args)],
                             stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=work)
    deadline = time.monotonic() + 300
    while time.monotonic() < deadline and first.poll() is None:
        if os.path.exists(trace) and "--- stopped by SIGSTOP ---" in open(trace).read():
            return first, first.pid
        time.sleep(0.05)
    return first, None


def second_refused(work, what, args, first_args, target, trace, follow, expected, compare):
    first, tracer = stopped_first(work, first_args, trace, follow)
    checks.check(tracer is not None, f"{what}: the first one stops at its first rename")
    if tracer is None:
        first.kill()
        return
    pid = int(subprocess.run(["pgrep", "-P", str(tracer)], capture_output=True, text=True).stdout.split()[0])
    started = time.monotonic()
    second = run_tinct(work, *args, timeout=120)
    checks.check(second.returncode != 0 and f"in use by another tinct process (pid {pid}" in second.stderr,
                 f"{what}: the second one is refused, naming the first one's pid {pid}: {second.stderr[-800:]}")
    checks.check(time.monotonic() - started < 60, f"{what}: the refusal comes at once")
    os.kill(pid, signal.SIGCONT)
    out, err = first.communicate(timeout=600)
    checks.check(first.returncode == 0, f"{what}: the first one finishes: {err[-1500:]}")
    checks.check(compare() == expected, f"{what}: the first one's output equals an uninterrupted run's")


if STRACE is None:
    print("strace is missing: install Debian's strace (scripts/setup.sh does)")
    raise SystemExit(1)

with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    write_input_stack(work)
    fine = run_tinct(work, "finetune", finetune_config(work, "fine", epochs=1)) if ok else None
    checks.check(ok and fine.returncode == 0, f"finetune for the map: {fine.stderr[-800:] if fine else ''}")
    if ok and fine.returncode == 0:
        map_expected = map_points(work)
        study_points(work)
        target = os.path.join(work, "maps", "m")
        if map_expected:
            second_refused(work, "two maps into one folder", ["map", "runs/fine", "inputs.tif", "--out", "maps/m",
                                                              "--force"],
                           ["map", "runs/fine", "inputs.tif", "--out", "maps/m", "--force"], target,
                           os.path.join(work, "map.strace"), True, map_expected, lambda: files_of(target))
        summary = os.path.join(work, "studies", "s", "summary.csv")
        expected_summary = read(summary)
        if expected_summary:
            second_refused(work, "two studies into one folder", ["study", "s.yaml"], ["study", "s.yaml", "--force"],
                           summary, os.path.join(work, "study.strace"), False, expected_summary,
                           lambda: read(summary))

checks.finish()
