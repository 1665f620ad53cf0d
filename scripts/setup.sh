#!/usr/bin/env bash
# Installs what is missing from Debian and builds tinct into build/.
# Idempotent: on a machine that has everything it only rebuilds what changed.
set -euo pipefail
cd "$(dirname "$0")/.."

packages=(
  cmake g++ make ccache pkg-config git
  libtorch-dev libgloo-dev libopenblas0-pthread
  libgdal-dev gdal-bin libopencv-dev libyaml-cpp-dev libcli11-dev catch2
  nlohmann-json3-dev libssl-dev
  # used by the reference tests (Debian's /usr/bin/python3) and the demo
  python3-numpy python3-gdal python3-sklearn python3-scipy python3-skimage python3-yaml proj-bin
  python3-statsmodels
  # crash tests stop or kill tinct at a chosen system call
  strace
)

source scripts/lib/install_missing.sh
install_missing setup "${packages[@]}"

build_type=${TINCT_BUILD_TYPE:-Release}
if [[ ! -f build/CMakeCache.txt ]]; then
  cmake -S . -B build -DCMAKE_BUILD_TYPE="$build_type" > /dev/null
fi
cmake --build build -j"$(nproc)"
