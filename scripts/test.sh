#!/usr/bin/env bash
# Installs what is missing, builds, and runs every test (unit, integration,
# reference). Exits non-zero on any failure.
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/setup.sh
cd build
ctest --output-on-failure -j"$(nproc)" "$@"
