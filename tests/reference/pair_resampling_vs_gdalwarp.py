"""Band alignment in tinct pair against GDAL's own gdalwarp (gdal-bin 3.6, Debian).

A scene with 10 m red/green/blue files, a 20 m SWIR file and a 5 m NIR file (float32,
so values are compared without rounding). Paired onto the 10 m grid, every chip's
SWIR plane must equal `gdalwarp -r bilinear` (refining) and NIR `gdalwarp -r average`
(coarsening) with the same target grid; then again with cubic refining."""
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
ORIGIN = (600000.0, 4100000.0)

PROFILE = """config: sensor
name: test-four
reference_resolution: 10
bands:
  - {name: red, centre_nm: 665, width_nm: 30, resolution: 10}
  - {name: green, centre_nm: 560, width_nm: 35, resolution: 10}
  - {name: blue, centre_nm: 490, width_nm: 65, resolution: 10}
  - {name: swir, centre_nm: 1610, width_nm: 90, resolution: 20}
  - {name: nir, centre_nm: 842, width_nm: 115, resolution: 5}
"""


def gdalwarp(source, method, grid, work, name):
    out = os.path.join(work, name)
    x0, y1 = grid[0], grid[3]
    x1, y0 = x0 + grid[6] * grid[1], y1 + grid[7] * grid[5]
    subprocess.run(["gdalwarp", "-q", "-overwrite", "-r", method, "-ot", "Float32", "-dstnodata", "nan",
                    "-te", repr(x0), repr(y0), repr(x1), repr(y1), "-ts", str(grid[6]), str(grid[7]),
                    source, out], check=True)
    return gdal.Open(out).ReadAsArray()


def pair(work, refine, files):
    config = os.path.join(work, f"pair-{refine}.yaml")
    with open(config, "w") as f:
        f.write(f"""config: pair
sensor: test-four.yaml
output: {refine}.pairs
inputs: [swir, nir]
colour: {{bands: [red, green, blue]}}
grid: {{refine: {refine}, coarsen: average}}
chips: {{size: 32, stride: 32, min_valid: 0.0}}
scenes:
  - id: s
    date: 2026-05-02
    files: {{red: {files['red']}, green: {files['green']}, blue: {files['blue']}, swir: {files['swir']}, nir: {files['nir']}}}
""")
    run = subprocess.run([TINCT, "--quiet", "pair", config], capture_output=True, text=True)
    checks.check(run.returncode == 0, f"pair ({refine}) exited {run.returncode}: {run.stderr}")
    return Store(os.path.join(work, f"{refine}.pairs"))


with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "test-four.yaml"), "w") as f:
        f.write(PROFILE)
    base = texture(256, 256, seed=1)
    files = {}
    for i, name in enumerate(["red", "green", "blue"]):
        files[name] = write(os.path.join(work, f"{name}.tif"), [(0.05 + 0.1 * base + 0.01 * i).astype(np.float32)],
                            origin=ORIGIN, pixel=10, dtype="float32")
    files["swir"] = write(os.path.join(work, "swir.tif"), [(0.3 * texture(128, 128, seed=2)).astype(np.float32)],
                          origin=ORIGIN, pixel=20, dtype="float32")
    files["nir"] = write(os.path.join(work, "nir.tif"), [(0.4 * texture(512, 512, seed=3)).astype(np.float32)],
                         origin=ORIGIN, pixel=5, dtype="float32")
    grid = (ORIGIN[0], 10.0, 0.0, ORIGIN[1], 0.0, -10.0, 256, 256)
    for refine in ("bilinear", "cubic"):
        store = pair(work, refine, files)
        swir = gdalwarp(files["swir"], refine, grid, work, f"swir-{refine}.tif")
        nir = gdalwarp(files["nir"], "average", grid, work, "nir-average.tif")
        worst_swir = worst_nir = 0.0
        for i, chip in enumerate(store.chips):
            c, r = int(chip["col"]), int(chip["row"])
            valid = store.valid[i].astype(bool)
            ref_swir = swir[r:r + 32, c:c + 32]
            ref_nir = nir[r:r + 32, c:c + 32]
            both = valid & np.isfinite(ref_swir) & np.isfinite(ref_nir)
            worst_swir = max(worst_swir, float(np.abs(store.bands[i, 0][both] - ref_swir[both]).max()))
            worst_nir = max(worst_nir, float(np.abs(store.bands[i, 1][both] - ref_nir[both]).max()))
            checks.check(np.array_equal(valid, np.isfinite(ref_swir) & np.isfinite(ref_nir)),
                         f"{refine}: chip {i} validity differs from gdalwarp's coverage")
        print(f"{refine}: max |tinct - gdalwarp| swir {worst_swir:.3g}, nir (average) {worst_nir:.3g}")
        checks.check(worst_swir == 0.0, f"{refine} SWIR differs from gdalwarp by {worst_swir}")
        checks.check(worst_nir == 0.0, f"average NIR differs from gdalwarp by {worst_nir}")
        checks.check(store.count == 64, f"{refine}: 8 x 8 chips of 32 px, got {store.count}")

checks.finish()
