#!/usr/bin/env bash
# Obtains L7_ETMs.tif, a real Landsat 7 ETM+ subset that Debian ships in the
# r-cran-stars package, by downloading the .deb and unpacking it (R is not needed).
# Nothing is committed; the file lands in the build tree and is verified by SHA-256.
set -euo pipefail
out=${1:?usage: fetch_debian_test_data.sh OUTPUT_FOLDER}
expected=3b722bf4470144b6691bf720bac08f47c99464acff4dd258252891c06312678e  # REFERENCES.md section 6
target="$out/L7_ETMs.tif"

if [[ -f "$target" ]] && echo "$expected  $target" | sha256sum --check --status; then
  exit 0
fi
mkdir -p "$out"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cd "$work"
if ! apt-get download r-cran-stars >/dev/null 2>&1; then
  apt-get update -qq >/dev/null 2>&1 || true
  apt-get download r-cran-stars >/dev/null
fi
dpkg -x r-cran-stars_*.deb unpacked
found=$(find unpacked -name L7_ETMs.tif | head -n1)
[[ -n "$found" ]] || { echo "L7_ETMs.tif not found in r-cran-stars" >&2; exit 1; }
echo "$expected  $found" | sha256sum --check --status || {
  echo "L7_ETMs.tif from r-cran-stars has an unexpected SHA-256 (package changed?)" >&2; exit 1; }
cp "$found" "$target.tmp" && mv "$target.tmp" "$target"
echo "fetched $target"
