"""Benchmark of the GeoTIFF (COG) writer that maps use (run by scripts/bench.sh).

Writes uint8 class maps of 12000 x 12000 and 24000 x 16000 pixels by 256-row blocks
through tests/reference/geotiff_tool (the writer alone) and prints the wall time and
peak resident memory of each. Goal: memory does not grow with the raster (within
GDAL's block cache, 64 MB by default, plus a fixed part); under 256 MB for both."""
import os
import subprocess
import sys
import time

import numpy as np
import yaml
from osgeo import osr

TOOL, WORK = sys.argv[1], sys.argv[2]


def write_values(path, width, height):
    values = np.memmap(path, dtype=np.uint8, mode="w+", shape=(height, width))
    for row in range(0, height, 1000):
        rows, cols = np.mgrid[row:row + 1000, 0:width]
        values[row:row + 1000] = ((rows // 7 + cols // 11) % 5).astype(np.uint8)
    values.flush()


def run(width, height):
    raw = os.path.join(WORK, f"classes-{width}x{height}.raw")
    if not os.path.exists(raw):
        write_values(raw, width, height)
    srs = osr.SpatialReference()
    srs.ImportFromEPSG(32632)
    spec = os.path.join(WORK, f"classes-{width}x{height}.yaml")
    with open(spec, "w") as f:
        yaml.safe_dump({"width": width, "height": height, "type": "uint8", "bands": [{"description": "class"}],
                        "crs_wkt": srs.ExportToWkt(), "geotransform": [500000.0, 10.0, 0.0, 5300000.0, 0.0, -10.0],
                        "nodata": 255.0, "block_size": 512, "rows_per_write": 256, "values": raw,
                        "output": os.path.join(WORK, f"classes-{width}x{height}.tif")}, f)
    start = time.monotonic()
    timed = subprocess.run(["/usr/bin/time", "-f", "%M", TOOL, spec], capture_output=True, text=True, check=True)
    seconds = time.monotonic() - start
    peak_mb = int(timed.stderr.strip().splitlines()[-1]) / 1024
    return seconds, peak_mb


print("\nGeoTIFF writer (uint8 class map, 256-row blocks, COG with overviews)")
print(f"{'raster':>16} {'raw MB':>8} {'seconds':>8} {'peak MB':>8}  goal")
for width, height in ((12000, 12000), (24000, 16000)):
    seconds, peak = run(width, height)
    print(f"{width:>7} x {height:<6} {width * height / 1e6:>8.0f} {seconds:>8.1f} {peak:>8.0f}  < 256 MB, flat in size")
