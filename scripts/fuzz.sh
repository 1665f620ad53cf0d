#!/usr/bin/env bash
# Builds the libFuzzer targets of tests/fuzz (clang, AddressSanitizer and UBSan, in
# build-fuzz/) if needed, and runs each for SECONDS on a copy of its seed corpus.
#   scripts/fuzz.sh SECONDS [TARGET ...]     (default: every target; TINCT_FUZZ_JOBS=2 runs two at once)
# Prints executions, coverage and findings per target; exits 1 when any target found a crash,
# leak, timeout or out-of-memory input (kept as build-fuzz/fuzz/TARGET/crash-* etc.). Not run in CI.
# Needs the libraries scripts/setup.sh installs; it installs clang itself.
set -euo pipefail
cd "$(dirname "$0")/.."

if [[ $# -lt 1 || ! $1 =~ ^[0-9]+$ ]]; then
  echo "usage: scripts/fuzz.sh SECONDS [TARGET ...]" >&2
  exit 2
fi
seconds=$1
shift
all_targets=(config label_csv label_geojson store_manifest chips_csv archive_checksum safetensors)
targets=("${@:-${all_targets[@]}}")
jobs=${TINCT_FUZZ_JOBS:-1}
for target in "${targets[@]}"; do
  [[ -d tests/fuzz/corpus/$target ]] || { echo "fuzz: no target $target (known: ${all_targets[*]})" >&2; exit 2; }
done

packages=(clang-14 libclang-rt-14-dev llvm-14)
source scripts/lib/install_missing.sh
install_missing fuzz "${packages[@]}"

if [[ ! -f build-fuzz/CMakeCache.txt ]]; then
  cmake -S . -B build-fuzz -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_COMPILER=clang++-14 -DTINCT_FUZZ=ON > /dev/null
fi
nice -n 10 cmake --build build-fuzz -j"$(nproc)" --target "${targets[@]/#/tinct_fuzz_}"

export ASAN_OPTIONS=${ASAN_OPTIONS:-abort_on_error=1:symbolize=1}
export ASAN_SYMBOLIZER_PATH=${ASAN_SYMBOLIZER_PATH:-/usr/bin/llvm-symbolizer-14}
export UBSAN_OPTIONS=${UBSAN_OPTIONS:-print_stacktrace=1}
export TINCT_CONFIG_DIR=${TINCT_CONFIG_DIR:-$PWD/configs}  # sensor profiles for the config target

# One target: a working corpus seeded from tests/fuzz/corpus/TARGET (the seeds stay as they are).
run_target() {
  local target=$1 work=build-fuzz/fuzz/$1
  mkdir -p "$work/corpus"
  nice -n 10 "build-fuzz/tinct_fuzz_$target" -max_total_time="$seconds" -timeout="${TINCT_FUZZ_TIMEOUT:-30}" -rss_limit_mb=2048 \
    -print_final_stats=1 -artifact_prefix="$work/" "$work/corpus" "tests/fuzz/corpus/$target" \
    > "$work/log.txt" 2>&1 || true
}

for target in "${targets[@]}"; do
  rm -f build-fuzz/fuzz/"$target"/{crash,leak,timeout,oom}-*
  while [[ $(jobs -rp | wc -l) -ge $jobs ]]; do sleep 1; done
  echo "fuzz: $target for ${seconds} s"
  run_target "$target" &
done
wait

found=0
printf '%-18s %12s %8s %8s %8s  %s\n' target executions exec/s cov ft findings
for target in "${targets[@]}"; do
  work=build-fuzz/fuzz/$target
  runs=$(grep -o 'stat::number_of_executed_units: *[0-9]*' "$work/log.txt" | grep -o '[0-9]*$' || echo "?")
  rate=$(grep -o 'stat::average_exec_per_sec: *[0-9]*' "$work/log.txt" | grep -o '[0-9]*$' || echo "?")
  last=$(grep -E '^#[0-9]+' "$work/log.txt" | tail -1)
  cov=$(grep -o 'cov: [0-9]*' <<< "$last" | grep -o '[0-9]*' || echo "?")
  ft=$(grep -o 'ft: [0-9]*' <<< "$last" | grep -o '[0-9]*' || echo "?")
  findings=$(find "$work" -maxdepth 1 \( -name 'crash-*' -o -name 'leak-*' -o -name 'timeout-*' -o -name 'oom-*' \) | sort)
  printf '%-18s %12s %8s %8s %8s  %s\n' "$target" "$runs" "$rate" "$cov" "$ft" "$(wc -w <<< "$findings")"
  if [[ -n $findings ]]; then
    found=1
    sed 's/^/    /' <<< "$findings"
    grep -m1 -E 'ERROR: |runtime error|uncaught exception|deadly signal' "$work/log.txt" | sed 's/^/    /' || true
  fi
done
[[ $found -eq 0 ]] || { echo "fuzz: findings above; full reports in build-fuzz/fuzz/TARGET/log.txt"; exit 1; }
