"""tinct survey against GDAL's own `gdalinfo -json -stats` (gdal-bin 3.6, Debian).

On the real Landsat 7 ETM+ subset from Debian's r-cran-stars (L7_ETMs.tif) and on a
generated raster with nodata: size, CRS, geotransform and exact band statistics must
agree. The L7 figures are also checked against REFERENCES.md section 6 (computed with
GDAL 3.6.2 and numpy)."""
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal, osr

TINCT = os.environ["TINCT"]
DATA = os.environ["TINCT_TEST_DATA"]
failures = []
checks = [0]


def check(condition, message):
    checks[0] += 1
    if not condition:
        failures.append(message)
        print("FAIL:", message)


def close(a, b, tol):
    return abs(a - b) <= tol * max(1.0, abs(b))


def survey(path):
    out = subprocess.run([TINCT, "--quiet", "survey", "--json", path], check=True,
                         capture_output=True, text=True).stdout
    return json.loads(out)[0]


def gdalinfo(path, work):
    # -stats writes a .aux.xml beside the file: work on a copy so the fixture stays clean.
    copy = os.path.join(work, os.path.basename(path))
    if not os.path.exists(copy):
        shutil.copyfile(path, copy)
    out = subprocess.run(["gdalinfo", "-json", "-stats", copy], check=True,
                         capture_output=True, text=True).stdout
    return json.loads(out)


def compare(path, work):
    ours = survey(path)
    theirs = gdalinfo(path, work)
    check(ours["width"] == theirs["size"][0] and ours["height"] == theirs["size"][1],
          f"{path}: size {ours['width']}x{ours['height']} vs {theirs['size']}")
    for i in range(6):
        check(close(ours["geotransform"][i], theirs["geoTransform"][i], 1e-12),
              f"{path}: geotransform[{i}]")
    srs = osr.SpatialReference()
    srs.ImportFromWkt(theirs["coordinateSystem"]["wkt"])
    check(str(ours["crs"]["epsg"]) == srs.GetAuthorityCode(None), f"{path}: EPSG code")
    for ob, tb in zip(ours["bands"], theirs["bands"]):
        meta = tb["metadata"][""]
        for key, gkey in (("min", "STATISTICS_MINIMUM"), ("max", "STATISTICS_MAXIMUM"),
                          ("mean", "STATISTICS_MEAN"), ("std", "STATISTICS_STDDEV")):
            check(close(ob[key], float(meta[gkey]), 1e-9),
                  f"{path} band {ob['index']} {key}: {ob[key]} vs gdalinfo {meta[gkey]}")
        check(ob["type"] == tb["type"], f"{path} band {ob['index']} type")
        check(ob.get("nodata") == tb.get("noDataValue"), f"{path} band {ob['index']} nodata")
        check(ob["overviews"] == len(tb.get("overviews", [])), f"{path} band {ob['index']} overviews")
    return ours


with tempfile.TemporaryDirectory() as work:
    l7 = compare(os.path.join(DATA, "L7_ETMs.tif"), work)
    # REFERENCES.md section 6 (computed, GDAL 3.6.2 + numpy): mean and population std.
    published = [(79.147719, 14.694064), (67.574645, 16.392784), (64.358858, 21.587103),
                 (59.235413, 23.021180), (83.182665, 38.492125), (59.975205, 33.380013)]
    check(l7["crs"]["epsg"] == 31985, "L7 CRS is EPSG:31985")
    check(l7["width"] == 349 and l7["height"] == 352, "L7 size 349 x 352")
    for band, (mean, std) in zip(l7["bands"], published):
        check(abs(band["mean"] - mean) < 5e-7, f"L7 band {band['index']} mean {band['mean']} vs {mean}")
        check(abs(band["std"] - std) < 5e-7, f"L7 band {band['index']} std {band['std']} vs {std}")
        check(band["overviews"] == 4, "L7 has 4 overviews")

    # A generated raster with nodata holes and a float band.
    holes = os.path.join(work, "holes.tif")
    rng = np.random.default_rng(0)
    ds = gdal.GetDriverByName("GTiff").Create(holes, 301, 207, 2, gdal.GDT_Float32)
    ds.SetGeoTransform((290000.0, 20.0, 0.0, 9120000.0, 0.0, -20.0))
    srs = osr.SpatialReference(); srs.ImportFromEPSG(31985); ds.SetProjection(srs.ExportToWkt())
    for b in (1, 2):
        values = rng.normal(0.2 * b, 0.05, (207, 301)).astype(np.float32)
        values[rng.random((207, 301)) < 0.3] = -9999.0
        band = ds.GetRasterBand(b); band.SetNoDataValue(-9999.0); band.WriteArray(values)
    ds = None
    ours = compare(holes, work)
    reopened = gdal.Open(holes)  # keep the dataset alive while its band is read
    arr = reopened.GetRasterBand(1).ReadAsArray()
    valid = arr != -9999.0
    check(abs(ours["bands"][0]["valid_fraction"] - valid.mean()) < 1e-12, "valid fraction vs numpy")

print(f"{checks[0] - len(failures)} passed, {len(failures)} failed")
sys.exit(1 if failures else 0)
