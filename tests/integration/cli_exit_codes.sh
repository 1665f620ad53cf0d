#!/usr/bin/env bash
# The CLI's contract: exit 0 on success, 1 on a runtime failure, 2 on a usage or
# config error, with a message on stderr that says what went wrong.
set -uo pipefail
tinct=${TINCT:?set TINCT to the tinct binary}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
failures=0

expect() {  # expect CODE PATTERN -- command...
  local want=$1 pattern=$2; shift 3
  "$@" >"$work/out" 2>"$work/err"
  local got=$?
  if [[ $got -ne $want ]]; then
    echo "FAIL: '$*' exited $got, expected $want"; cat "$work/err"; failures=$((failures + 1))
  elif [[ -n "$pattern" ]] && ! grep -q -- "$pattern" "$work/err" "$work/out"; then
    echo "FAIL: '$*' output lacks '$pattern'"; cat "$work/err"; failures=$((failures + 1))
  else
    echo "ok: '$*' -> $got"
  fi
}

/usr/bin/python3 - "$work/ok.tif" <<'PY'
import sys
from osgeo import gdal, osr
ds = gdal.GetDriverByName("GTiff").Create(sys.argv[1], 4, 3, 1, gdal.GDT_Byte)
ds.SetGeoTransform((500000, 10, 0, 5300000, 0, -10))
srs = osr.SpatialReference(); srs.ImportFromEPSG(32632); ds.SetProjection(srs.ExportToWkt())
ds.GetRasterBand(1).Fill(7); ds = None
PY
echo "plain text" > "$work/notes.txt"
printf 'config: sensor\nname: x\nreference_resolution: ten\nbands: [{name: a, resolution: 10}]\n' > "$work/bad.yaml"

expect 0 "Usage" -- "$tinct" --help
expect 0 "GDAL" -- "$tinct" --version
expect 0 "survey" -- "$tinct" survey --help
expect 0 "EPSG:32632" -- "$tinct" survey "$work/ok.tif"
expect 0 '"epsg": 32632' -- "$tinct" survey --json "$work/ok.tif"
expect 2 "" -- "$tinct"
expect 2 "" -- "$tinct" no-such-command
expect 2 "" -- "$tinct" survey
expect 2 "" -- "$tinct" --threads -3 survey "$work/ok.tif"
expect 2 "file not found" -- "$tinct" survey "$work/missing.tif"
expect 1 "not a readable raster" -- "$tinct" survey "$work/notes.txt"
expect 2 "reference_resolution: expected a number" -- "$tinct" check "$work/bad.yaml"
expect 2 "config file not found" -- "$tinct" check "$work/none.yaml"

if [[ $failures -ne 0 ]]; then echo "$failures failed"; exit 1; fi
echo "all CLI exit codes as expected"
