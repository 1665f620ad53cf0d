#!/usr/bin/env bash
# Speed and memory figures of tinct against their floors, naive baselines and its plain
# PyTorch peer, measured side by side in one run on this machine (interleaved rounds, best
# and median) and printed as tables. Not a test: the goals are printed beside the figures,
# nothing fails on a slow machine. One script per section under scripts/bench/;
# TINCT_BENCH_ROUNDS (default 3) sets the rounds, TINCT_BENCH_DIR keeps the generated data;
# the map section: TINCT_MAP_BENCH_SIZE (default 4096) its scene, TINCT_MAP_BENCH_THREADS
# tinct's threads (default all; 1 on a machine others load, where threads wait on each other).
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/setup.sh > /dev/null
cmake --build build -j"$(nproc)" --target tinct_train_bench tinct_assess_bench tinct_geotiff_tool \
  tinct_allreduce_bench > /dev/null
work=${TINCT_BENCH_DIR:-$(mktemp -d)}
echo "bench: working in $work"
/usr/bin/python3 scripts/bench/pair_bench.py "$PWD/build/tinct" "$work"
/usr/bin/python3 scripts/bench/peer_bench.py "$PWD/build/tinct" "$PWD/build/tinct_train_bench" "$work"
/usr/bin/python3 scripts/bench/quality_bench.py "$PWD/build/tinct" "$work"
/usr/bin/python3 scripts/bench/train_options_bench.py "$PWD/build/tinct_train_bench"
/usr/bin/python3 scripts/bench/pretrain_bench.py "$PWD/build/tinct" "$PWD/build/tinct_train_bench" "$work"
build/tinct_assess_bench 5000 256 20000
/usr/bin/python3 scripts/bench/geotiff_bench.py "$PWD/build/tinct_geotiff_tool" "$work"
build/tinct_allreduce_bench 2 20
/usr/bin/python3 scripts/bench/study_bench.py "$PWD/build/tinct" "$work"
/usr/bin/python3 scripts/bench/data_parallel_bench.py "$PWD/build/tinct" "$PWD/build/tinct_allreduce_bench" "$work"
/usr/bin/python3 scripts/bench/map_bench.py "$PWD/build/tinct" "$work" "${TINCT_MAP_BENCH_SIZE:-4096}"
