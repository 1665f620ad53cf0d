#!/usr/bin/env bash
# Installs what is missing, builds, and runs tinct on the demo scenario
# (examples/aldery-marsh, invented data): survey a scene, check and run pairing.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/setup.sh
out=demo-out
example=examples/aldery-marsh
/usr/bin/python3 "$example/make_scenes.py" "$out"
build/tinct survey "$out/aldery-2026-06-14.tif"
build/tinct --quiet check "$example/pair.yaml" > "$out/pair.resolved.yaml"
build/tinct pair "$example/pair.yaml" --force
echo "demo: the pair store is in $out/aldery.pairs (resolved config: $out/pair.resolved.yaml)"
