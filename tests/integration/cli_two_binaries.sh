#!/usr/bin/env bash
# tinct runs survey, pair and label itself without LibTorch and hands every other
# command to tinct-torch beside it: readelf (binutils) lists no LibTorch library among
# tinct's needs, /proc/PID/maps of a running pair shows none loaded, the handed-over
# commands answer as before, and a tinct without its tinct-torch says what is missing.
set -uo pipefail
tinct=${TINCT:?set TINCT to the tinct binary}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
failures=0
fail() { echo "FAIL: $*"; failures=$((failures + 1)); }

if readelf -d "$tinct" | grep NEEDED | grep -qi "torch\|c10"; then fail "tinct needs a LibTorch library:"; readelf -d "$tinct" | grep NEEDED; fi
readelf -d "$(dirname "$tinct")/tinct-torch" | grep NEEDED | grep -q torch || fail "tinct-torch does not link LibTorch"

# A pair that waits on a FIFO for its config: its maps are read while it runs.
mkfifo "$work/config.yaml"
"$tinct" --quiet pair "$work/config.yaml" 2>"$work/pair.err" &
pid=$!
sleep 1
grep -q "libtorch\|libc10" "/proc/$pid/maps" && fail "a running tinct pair has LibTorch mapped"
grep -q "libgdal" "/proc/$pid/maps" || fail "a running tinct pair has no GDAL mapped (not the process meant)"
echo "config: pair" > "$work/config.yaml"
wait "$pid"
[[ $? -eq 2 ]] || fail "pair on an incomplete config should exit 2"

"$tinct" pretrain --help >"$work/out" 2>&1 || fail "tinct pretrain --help failed"
grep -q "Usage: tinct pretrain" "$work/out" || fail "pretrain's help does not come through: $(head -3 "$work/out")"
"$tinct" --version | grep -q "LibTorch" || fail "--version does not name LibTorch"

cp "$tinct" "$work/tinct"
"$work/tinct" pretrain --help >"$work/out" 2>&1
code=$?
[[ $code -eq 1 ]] || fail "tinct without tinct-torch: exit $code, expected 1"
grep -q "cannot start .*tinct-torch" "$work/out" || fail "tinct without tinct-torch does not say so: $(cat "$work/out")"
"$work/tinct" survey --help >/dev/null || fail "tinct without tinct-torch cannot run survey"

[[ $failures -eq 0 ]] && echo "all passed" || { echo "$failures failed"; exit 1; }
