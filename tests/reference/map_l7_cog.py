"""tinct map on real data: the Landsat 7 ETM+ subset shipped in Debian's r-cran-stars
(L7_ETMs.tif, REFERENCES.md section 6), labelled by the NDWI/NDVI index rules of
finetune_l7_index_rule.py, a classifier trained from scratch on bands 4, 5 and 7 and
the whole scene mapped. The files must pass GDAL's own COG validator
(osgeo_utils.samples.validate_cloud_optimized_geotiff, shipped in Debian's python3-gdal)
and open in GDAL with the scene's CRS (gdalinfo -json). The short form takes a stack of
the run's bands and refuses the 6-band file, naming what it needs."""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal
from osgeo_utils.samples import validate_cloud_optimized_geotiff

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
checks = Checks()


def tinct(args, cwd, expect=0):
    run = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=cwd)
    checks.check(run.returncode == expect, f"tinct {' '.join(args)}: exit {run.returncode}\n{run.stderr[-2000:]}")
    if run.returncode != expect:
        checks.finish()
    return run


ds = gdal.Open(L7)
gt = ds.GetGeoTransform()
green, red, nir = (ds.GetRasterBand(b).ReadAsArray().astype(np.float64) for b in (2, 3, 4))
ndvi = (nir - red) / (nir + red)
ndwi = (green - nir) / (green + nir)
cover = np.where(ndwi > 0, 0, np.where(ndvi > 0.3, 1, 2))
names = ["water", "vegetation", "other"]
sites = []
for row in range(10, ds.RasterYSize - 10, 4):
    for col in range(10, ds.RasterXSize - 10, 4):
        if (cover[row - 1:row + 2, col - 1:col + 2] == cover[row, col]).all():
            sites.append((col, row, cover[row, col]))

with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,x,y,cover\n")
        for i, (col, row, c) in enumerate(sites):
            f.write(f"site{i},{gt[0] + (col + 0.5) * gt[1]},{gt[3] + (row + 0.5) * gt[5]},{names[c]}\n")
    scene = f"scenes: [{{id: l7, path: {L7}, date: 2000-02-01}}]\n"
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write("config: label\noutput: l7.labels\nsensor: landsat7-etm\ninputs: [B4, B5, B7]\n"
                "grid: {resolution: 28.5}\n" + scene +
                "labels: {source: sites.csv, class: cover, x: x, y: y, crs: EPSG:31985, id: id, "
                "classes: [water, vegetation, other]}\nchips: {size: 16, min_valid: 0.9}\n")
    with open(os.path.join(work, "finetune.yaml"), "w") as f:
        f.write("""config: finetune
stores: [l7.labels]
output: runs/ft
init: {from: scratch, model: {encoder: compact, width: 0.5}}
budget: {per_class: 30}
split: {method: blocks, block_size: 2000, folds: 3, fold: 0}
train: {epochs: 8, batch: 16, lr: 0.002, seed: 4, patience: 8}
""")
    with open(os.path.join(work, "map.yaml"), "w") as f:
        f.write("config: map\nrun: runs/ft\noutput: maps/l7\nstride: 16\nsensor: landsat7-etm\n"
                "grid: {resolution: 28.5}\n" + scene)
    for args in (["label", "label.yaml"], ["finetune", "finetune.yaml"], ["map", "map.yaml"]):
        tinct(args, work)

    scene_wkt = json.loads(subprocess.run(["gdalinfo", "-json", L7], capture_output=True, text=True,
                                          check=True).stdout)["coordinateSystem"]["wkt"]
    def check_products(folder, name, aoa_step):
        for product in ("probabilities", "classes", "uncertainty", "aoa"):
            path = os.path.join(work, "maps", folder, name, product + ".tif")
            warnings, errors, _ = validate_cloud_optimized_geotiff.validate(path, full_check=True)
            checks.check(not errors, f"{folder}: {product}.tif fails GDAL's COG validation: {errors}")
            info = json.loads(subprocess.run(["gdalinfo", "-json", path], capture_output=True, text=True,
                                             check=True).stdout)
            checks.check(info["coordinateSystem"]["wkt"] == scene_wkt,
                         f"{folder}: {product}.tif: CRS differs from the scene's")
            step = aoa_step if product == "aoa" else 1
            checks.check(abs(info["geoTransform"][1] - 28.5 * 16 * step) < 1e-9,
                         f"{folder}: {product}.tif: pixel size is not 28.5 x 16 x {step}")

    # The default mode, exact: the AOA of every window.
    check_products("l7", "l7", 1)

    # Short form: the 6-band file is refused (exit 2, naming the bands); a stack of B4, B5, B7
    # maps, here in dense mode (the AOA from exact windows every 8th window).
    refused = tinct(["map", "runs/ft", L7, "--out", "maps/short"], work, expect=2)
    checks.check("B4, B5, B7" in refused.stderr, f"the refusal does not name the bands: {refused.stderr[-400:]}")
    gdal.Translate(os.path.join(work, "b457.tif"), L7, bandList=[4, 5, 6])
    tinct(["map", "runs/ft", "b457.tif", "--out", "maps/short", "--mode", "dense", "--stride", "16"], work)
    check_products("short", "b457", 8)
    short = gdal.Open(os.path.join(work, "maps", "short", "b457", "classes.tif"))
    full = gdal.Open(os.path.join(work, "maps", "l7", "l7", "classes.tif"))
    checks.check(short is not None and short.RasterXSize == full.RasterXSize, "the short form's map differs in size")

checks.finish()
