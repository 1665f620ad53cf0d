"""tinct study spread over the ranks of a job (real processes on loopback, `--world 2`):
a small study (one fine-tuned arm and a pixel baseline over 2 seeds x 2 folds, one thread
per fine-tune) gives a summary.csv byte for byte equal to the same study in one process,
and its log.txt shows that both ranks ran fine-tunes; a rank started by hand with
RANK/WORLD_SIZE set does not pass those variables on to its fine-tunes (they would try
to join the job). When rank 1 is killed with SIGKILL while it runs a fine-tune, rank 0
stops within the configured timeout with an error naming rank 1, no process is left
behind, and the launcher names the rank that failed first."""
import os
import signal
import subprocess
import sys
import tempfile
import time

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from study_inputs import build_study_inputs  # noqa: E402
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
TIMEOUT = 10  # distributed.timeout of the studies below, seconds
checks = Checks()


def study_config(work, name, output, seeds="[1, 2]", epochs=""):
    with open(os.path.join(work, name), "w") as f:
        f.write(f"""config: study
name: ranks
output: {output}
finetune: ft.yaml
arms:
  - {{name: scratch, init: {{from: scratch, run: runs/pre}}{epochs}}}
baselines: [logistic_regression]
seeds: {seeds}
budgets: [all]
folds: 2
parallel: 1
distributed: {{timeout: {TIMEOUT}}}
""")
    return name


def process_table():
    """{pid: (parent pid, RANK variable, command line)} of every process we can read."""
    table = {}
    for entry in os.listdir("/proc"):
        if not entry.isdigit():
            continue
        try:
            with open(f"/proc/{entry}/stat") as f:
                parent = int(f.read().rsplit(")", 1)[1].split()[1])
            with open(f"/proc/{entry}/environ", "rb") as f:
                variables = dict(v.split(b"=", 1) for v in f.read().split(b"\0") if b"=" in v)
            with open(f"/proc/{entry}/cmdline", "rb") as f:
                command = f.read().split(b"\0")
            table[int(entry)] = (parent, variables.get(b"RANK", b"").decode(), command)
        except (FileNotFoundError, ProcessLookupError, PermissionError, IndexError):
            continue
    return table


def descendants(pid, table):
    found, frontier = set(), [pid]
    while frontier:
        parent = frontier.pop()
        for child, (p, _, _) in table.items():
            if p == parent and child not in found:
                found.add(child)
                frontier.append(child)
    return found


with tempfile.TemporaryDirectory() as work:
    for args, code in build_study_inputs(work, TINCT, epochs=2):
        checks.check(code == 0, f"tinct {args}: exit {code}")
    if checks.failed:
        checks.finish()

    # One process, one thread per fine-tune (parallel 1, --threads 1).
    run = subprocess.run([TINCT, "--threads", "1", "study", study_config(work, "one.yaml", "studies/one")],
                         cwd=work, capture_output=True, text=True)
    checks.check(run.returncode == 0, f"study in one process: exit {run.returncode}\n{run.stderr[-2000:]}")

    # Two ranks on loopback: --threads 2 shared, one thread each, one fine-tune at a time each.
    started = time.monotonic()
    run = subprocess.run([TINCT, "--threads", "2", "study", study_config(work, "two.yaml", "studies/two"),
                          "--world", "2"], cwd=work, capture_output=True, text=True)
    print(f"study of 4 fine-tunes on 2 ranks: {time.monotonic() - started:.1f} s")
    checks.check(run.returncode == 0, f"study on two ranks: exit {run.returncode}\n{run.stderr[-3000:]}")
    one, two = (os.path.join(work, "studies", name) for name in ("one", "two"))
    if run.returncode == 0:
        same = open(os.path.join(one, "summary.csv"), "rb").read() == open(os.path.join(two, "summary.csv"), "rb").read()
        checks.check(same, "two ranks write the same summary.csv as one process, byte for byte")
        log = open(os.path.join(two, "log.txt")).read()
        on_rank = {r: log.count(f"done on rank {r}") for r in (0, 1)}
        checks.check(on_rank[0] >= 1 and on_rank[1] >= 1 and on_rank[0] + on_rank[1] == 4,
                     f"both ranks ran fine-tunes, 4 in all: {on_rank}")
        checks.check("4 fine-tunes ran in" in run.stderr, f"rank 0 counts every rank's runs: {run.stderr[-800:]}")
        checks.check(os.path.exists(os.path.join(two, "report.html")), "rank 0 wrote the report")

    # Rank 1 killed mid-run: rank 0 stops within the timeout, naming it.
    study_config(work, "dies.yaml", "studies/dies", seeds="[1, 2, 3, 4]", epochs=", train: {epochs: 40}")
    err = open(os.path.join(work, "dies.err"), "w+")
    job = subprocess.Popen([TINCT, "--threads", "2", "study", "dies.yaml", "--world", "2"], cwd=work, stderr=err,
                           stdout=subprocess.DEVNULL)
    victim, table = None, {}
    deadline = time.monotonic() + 300
    while victim is None and time.monotonic() < deadline and job.poll() is None:
        table = process_table()
        for pid in descendants(job.pid, table):
            parent, rank, command = table[pid]
            children = [c for c in descendants(pid, table) if b"finetune" in table[c][2]]
            if rank == "1" and table[parent][1] == "" and children:
                victim = pid
                checks.check(all(table[c][1] == "" for c in children),
                             "rank 1's fine-tune does not inherit RANK (it is a process of its own)")
        time.sleep(0.2)
    checks.check(victim is not None, "rank 1 started a fine-tune")
    family = descendants(job.pid, table)  # the ranks and their fine-tunes
    killed_at = time.monotonic()
    if victim:
        os.kill(victim, signal.SIGKILL)
    try:
        code = job.wait(timeout=TIMEOUT + 60)
    except subprocess.TimeoutExpired:
        job.kill()
        code = None
    waited = time.monotonic() - killed_at
    err.seek(0)
    text = err.read()
    checks.check(code == 1, f"the study exits 1 after rank 1 is killed (exit {code}):\n{text[-3000:]}")
    checks.check(waited < TIMEOUT + 30, f"and stops within the timeout ({waited:.1f} s)")
    checks.check("rank 0 of 2: no sign of life from rank 1" in text, f"rank 0 names the silent rank:\n{text[-3000:]}")
    checks.check("local rank 1 of 2 failed first: it was killed by SIGKILL" in text,
                 f"the launcher names the rank that failed first:\n{text[-2000:]}")
    time.sleep(2)
    alive = process_table()
    left = {p for p in family if p in alive and p != job.pid}
    checks.check(not left, f"no rank or fine-tune is left running: {left}")

checks.finish()
