#!/usr/bin/env bash
# Installs what is missing, builds, and runs tinct on the demo data.
# For now the smallest end-to-end that exists: surveying a generated demo scene.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/setup.sh
out=demo-out
mkdir -p "$out"
/usr/bin/python3 examples/make_demo_scene.py "$out/scene.tif"
build/tinct survey "$out/scene.tif"
build/tinct check configs/sensors/sentinel2-l2a.yaml > "$out/sentinel2-l2a.resolved.yaml"
echo "demo: outputs in $out/"
