"""tinct label on real data: the Landsat 7 ETM+ subset shipped in Debian's
r-cran-stars (L7_ETMs.tif, EPSG:31985, 28.5 m; bands ETM+ 1,2,3,4,5,7;
REFERENCES.md sections 6 and 7), labelled by a CSV of lon/lat points (EPSG:4326).

Checked against outside references:
- (-34.9, -8) lies in pixel col 63, row 194 and (-34.85, -7.96) in col 256, row 38
  (REFERENCES.md section 7, PROJ 9.1.1 cs2cs), with DN 67 130 110 and 61 131 111 in
  ETM+ bands 4, 5, 7 there (section 7, GDAL 3.6.2);
- every stored 16 x 16 chip equals GDAL's own windowed read of the window whose
  pixel (8, 8) is the label's pixel, for these and for seeded random points placed
  with GDAL's osr (its PROJ);
- chips.csv centres equal the geotransform applied to col/row + 8 (section 6);
- the manifest's CRS (and its scene's) is GDAL's CRS of the file (osr IsSame), and
  its pixel_size GDAL's pixel size;
- a point too close to the edge for a full chip is in the drop report."""
import csv
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal, osr

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store, grid_problems  # noqa: E402
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
SIZE = 16
checks = Checks()

ds = gdal.Open(L7)
gt = ds.GetGeoTransform()
utm = osr.SpatialReference()
utm.ImportFromEPSG(31985)
wgs84 = osr.SpatialReference()
wgs84.ImportFromEPSG(4326)
for srs in (utm, wgs84):
    srs.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
to_lonlat = osr.CoordinateTransformation(utm, wgs84)


def lonlat_of_pixel(col, row, dx=0.5, dy=0.5):
    x = gt[0] + (col + dx) * gt[1]
    y = gt[3] + (row + dy) * gt[5]
    lon, lat, _ = to_lonlat.TransformPoint(x, y)
    return lon, lat


# (id, lon, lat, class, expected (col, row) of the label's pixel or None when dropped)
points = [("olinda-a", -34.9, -8.0, "water", (63, 194)),   # REFERENCES.md section 7
          ("olinda-b", -34.85, -7.96, "urban", (256, 38))]  # REFERENCES.md section 7
rng = np.random.default_rng(7)
for k in range(6):
    col, row = int(rng.integers(SIZE, 349 - SIZE)), int(rng.integers(SIZE, 352 - SIZE))
    dx, dy = rng.uniform(0.1, 0.9, 2)
    lon, lat = lonlat_of_pixel(col, row, dx, dy)
    points.append((f"random-{k}", lon, lat, ["water", "urban"][k % 2], (col, row)))
lon, lat = lonlat_of_pixel(2, 100)
points.append(("edge", lon, lat, "water", None))  # pixel col 2: no full 16-pixel chip

with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("site,lon,lat,cover\n")
        for pid, lon, lat, cls, _ in points:
            f.write(f"{pid},{lon:.12f},{lat:.12f},{cls}\n")
    config = os.path.join(work, "label.yaml")
    with open(config, "w") as f:
        f.write(f"""config: label
sensor: landsat7-etm
output: l7.labels
inputs: [B4, B5, B7]
grid: {{resolution: 28.5}}
labels: {{source: sites.csv, class: cover, id: site, x: lon, y: lat, crs: "EPSG:4326", classes: [water, urban]}}
chips: {{size: {SIZE}, min_valid: 1.0, block_size: 3000}}
scenes:
  - path: {L7}
    date: 2000-02-01
""")
    run = subprocess.run([TINCT, "label", config], capture_output=True, text=True)
    print(run.stderr)
    checks.check(run.returncode == 0, f"tinct label exited {run.returncode}")
    if run.returncode != 0:
        checks.finish()
    store = Store(os.path.join(work, "l7.labels"))
    m = store.manifest
    checks.check(m["kind"] == "labels" and m["colour_encoding"] == "none" and store.colour is None,
                 "a label store without colour")
    checks.check(store.band_names == ["B4", "B5", "B7"], f"bands {store.band_names}")
    checks.check(m["classes"] == ["water", "urban"], f"classes {m['classes']}")
    checks.check([s["id"] for s in m["scenes"]] == ["L7_ETMs"], "the one scene used")
    checks.check("aligning" not in run.stderr, "the native 28.5 m grid is read without warping")
    kept = [p for p in points if p[4] is not None]
    checks.check(store.count == len(kept), f"{store.count} chips, expected {len(kept)}")
    by_id = {c["source_id"]: i for i, c in enumerate(store.chips)}
    file_bands = [4, 5, 6]  # ETM+ 4, 5, 7 are the file's bands 4, 5, 6
    for pid, _, _, cls, (col, row) in kept:
        if pid not in by_id:
            checks.check(False, f"no chip for {pid}")
            continue
        i = by_id[pid]
        chip = store.chips[i]
        checks.check((int(chip["col"]), int(chip["row"])) == (col - SIZE // 2, row - SIZE // 2),
                     f"{pid}: chip at {chip['col']},{chip['row']}, expected {col - SIZE // 2},{row - SIZE // 2}")
        for k, b in enumerate(file_bands):
            window = ds.GetRasterBand(b).ReadAsArray(col - SIZE // 2, row - SIZE // 2, SIZE, SIZE)
            checks.check(np.array_equal(store.bands[i, k], window), f"{pid}: band {store.band_names[k]} "
                         "differs from GDAL's windowed read")
        x = gt[0] + (int(chip["col"]) + SIZE / 2) * gt[1]
        y = gt[3] + (int(chip["row"]) + SIZE / 2) * gt[5]
        checks.check(abs(float(chip["x"]) - x) < 1e-6 and abs(float(chip["y"]) - y) < 1e-6, f"{pid}: centre")
        checks.check(chip["label"] == cls and chip["group"] == pid and chip["date"] == "2000-02-01",
                     f"{pid}: label {chip['label']}, group {chip['group']}, date {chip['date']}")
    centre = store.bands[by_id["olinda-a"], :, SIZE // 2, SIZE // 2].tolist()
    print(f"olinda-a centre pixel DN {centre} (REFERENCES.md: 67 130 110)")
    checks.check(centre == [67, 130, 110], f"(-34.9, -8): DN {centre}, REFERENCES.md section 7 gives 67 130 110")
    centre = store.bands[by_id["olinda-b"], :, SIZE // 2, SIZE // 2].tolist()
    checks.check(centre == [61, 131, 111], f"(-34.85, -7.96): DN {centre}, REFERENCES.md gives 61 131 111")
    checks.check(store.valid.all(), "every pixel of L7 is valid")
    problems = grid_problems(store, L7)
    checks.check(not problems, f"the store's CRS and pixel size are the scene's as GDAL reads it: {problems}")

    with open(os.path.join(work, "l7.labels", "dropped.csv"), newline="") as f:
        dropped = list(csv.DictReader(f))
    checks.check([(d["id"], d["reason"]) for d in dropped] == [("edge", "outside all scenes")],
                 f"drop report {dropped}")
    checks.check("class water: " in run.stderr and "kept, 1 dropped" in run.stderr, "per-class summary in the log")

checks.finish()
