#!/usr/bin/env bash
# Builds tinct with AddressSanitizer and UndefinedBehaviorSanitizer into build-asan/ (its own
# folder: every file compiles anew) and runs the unit, integration and reference tests there.
# ASan reports go to log files, not only to stderr: a test that expects tinct to fail
# (bad input, a kill) would otherwise pass over a report. Exits non-zero if a test fails or any
# report was written. Not in CI: on two cores the build alone takes hours.
# Usage: scripts/sanitize.sh [ctest arguments, e.g. -R store]
set -euo pipefail
cd "$(dirname "$0")/.."
source_dir=$(pwd)
build="$source_dir/build-asan"
logs="$build/sanitizer-logs"
jobs=${JOBS:-$(nproc)}

# detect_leaks=0: LibTorch, OpenBLAS and GDAL keep allocations for the life of the process
# (thread pools, registries, caches) that are not ours to chase.
# protect_shadow_gap=0: LibTorch's and OpenBLAS's large mappings clash with the protected gap.
# log_path: each process writes an ASan report to $logs/asan.PID; checked after the run.
# GCC's UBSan beside ASan ignores log_path and reports on stderr, so it ends the process with
# exit 86, which no test expects (tinct's own failures exit 1 or 2).
export ASAN_OPTIONS="detect_leaks=0:protect_shadow_gap=0:log_path=$logs/asan"
export UBSAN_OPTIONS="print_stacktrace=1:halt_on_error=1:exitcode=86:suppressions=$source_dir/tests/sanitizers/ubsan.supp"

rm -rf "$logs"
mkdir -p "$logs"
# -O1 -g1: the usual level for sanitizer builds (readable stacks, line numbers) and quicker to
# compile than RelWithDebInfo's -O2 -g.
cmake -S . -B "$build" -DCMAKE_BUILD_TYPE=RelWithDebInfo -DTINCT_SANITIZE=ON \
  "-DCMAKE_CXX_FLAGS_RELWITHDEBINFO=-O1 -g1 -DNDEBUG" > /dev/null
cmake --build "$build" -j"$jobs"

status=0
(cd "$build" && ctest --output-on-failure -j"$jobs" "$@") || status=$?

reports=$(find "$logs" -type f | sort)
if [[ -n "$reports" ]]; then
  echo "sanitize: $(echo "$reports" | wc -l) AddressSanitizer report(s):"
  for report in $reports; do
    echo "==== $report"
    cat "$report"
  done
  status=1
fi
[[ $status -eq 0 ]] && echo "sanitize: all tests passed, no sanitizer reports"
exit $status
