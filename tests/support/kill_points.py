"""Killing tinct at chosen system calls with Debian's strace, for the crash tests: trace an
uninterrupted run to find the n-th write into a file or the rename that commits it, then
run again with strace injecting SIGKILL (or SIGSTOP) at that call. Points are found from
the trace, so they do not depend on how many other calls a run makes."""
import os
import re
import shutil
import subprocess

from tiny_project import tinct_command

STRACE = shutil.which("strace")
SYSCALLS = "write,fsync,rename,renameat,renameat2"


def traced_calls(work, args, follow=True):
    """Runs tinct under strace; returns (run, [(pid, syscall, path)]) of the writes and renames of
    every process (follow) or of the first process only (its child processes run untraced)."""
    log = os.path.join(work, "trace.txt")
    run = subprocess.run([STRACE, *(["-f"] if follow else []), "-qq", "-y", "-s", "0", "-o", log,
                          "-e", f"trace={SYSCALLS}", *tinct_command(*args)], capture_output=True, text=True, cwd=work)
    calls = []
    for line in open(log):
        match = re.match(r"(?:(\d+)\s+)?(\w+)\((.*)", line)
        if not match:
            continue
        pid, name, rest = match.groups()
        path = re.findall(r"<([^>]*)>", rest)[:1] if name in ("write", "fsync") else re.findall(r'"([^"]*)"', rest)[-1:]
        calls.append((int(pid or 0), name, path[0] if path else ""))
    return run, calls


def kill_point(calls, name, path_part, nth=1):
    """The `when` count strace needs to kill at the nth `name` call on a path containing
    path_part: injection counts each syscall per traced process (thread)."""
    seen = 0
    for i, (pid, call, path) in enumerate(calls):
        # A rename is matched by its destination, a write by the file it writes into.
        if call == name and (path.endswith(path_part) if call.startswith("rename") else path_part in path):
            seen += 1
            if seen == nth:
                return pid, sum(1 for p, c, _ in calls[:i + 1] if p == pid and c == call)
    return None, None


def count_calls(calls, name, path_part):
    return sum(1 for _, call, path in calls if call == name and path.endswith(path_part))


def renamed_by(calls, part):
    """Which rename system call glibc used for the path (rename, renameat or renameat2)."""
    return next((c for _, c, p in calls if c.startswith("rename") and part in p), "rename")


def killed_run(work, args, name, when, follow=True, signal="KILL"):
    return subprocess.run([STRACE, *(["-f"] if follow else []), "-qq", "-o", "/dev/null", "-e", f"trace={name}",
                           "-e", f"inject={name}:signal={signal}:when={when}", *tinct_command(*args)],
                          capture_output=True, text=True, cwd=work)


def files_of(folder, skip=()):
    """{relative path: bytes} of every file under folder but those named in skip (by path or file name)."""
    out = {}
    for root, _, names in os.walk(folder):
        for n in names:
            rel = os.path.relpath(os.path.join(root, n), folder)
            if rel not in skip and n not in skip:
                out[rel] = open(os.path.join(root, n), "rb").read()
    return out
