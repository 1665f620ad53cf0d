"""The demo scenario's generator (examples/aldery-marsh, invented data) in its small
size, run through the example configs: `tinct survey` sees the band files at 10, 20
and 60 m in UTM 32N and the orthophoto in EPSG:3035; `tinct pair` keeps exactly the
chips whose valid share (SCL mask and no data, computed here with numpy) reaches
min_valid, with the nine input bands, and measures the orthophoto's known offset;
`tinct label` keeps as many visits and points as an independent count of valid
chips allows and drops the rest, with the class names, dates within max_days,
groups and the scenes' CRS; the pretrain and finetune configs pass `tinct check`.
One thread."""
import csv
import datetime
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
import yaml
from osgeo import gdal, ogr, osr

SOURCE = os.environ["TINCT_SOURCE"]
sys.path.insert(0, os.path.join(SOURCE, "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
EXAMPLE = os.path.join(SOURCE, "examples", "aldery-marsh")
INPUTS = ["B01", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]
DROP = [0, 1, 3, 8, 9, 10, 11]
checks = Checks()


def run(*args, cwd):
    result = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=cwd)
    if result.returncode != 0:
        print(result.stdout, result.stderr)
    checks.check(result.returncode == 0, f"tinct {' '.join(args)}: exit {result.returncode}")
    return result


def valid_masks(folder):
    """Valid pixels on the 10 m grid, as tinct should see them: SCL (20 m, nearest)
    not in DROP and no band at no data. Bands at 20 and 60 m are refined bilinearly,
    which may fill a few pixels along a no-data edge, so two bounds: no data of the
    10 m bands only (most valid) and of every band at its own pixel (least valid)."""
    scl = gdal.Open(os.path.join(folder, "SCL.tif")).ReadAsArray()
    clear = ~np.isin(np.kron(scl, np.ones((2, 2), np.uint8)), DROP)
    most, least = clear.copy(), clear.copy()
    for band in INPUTS:
        dn = gdal.Open(os.path.join(folder, f"{band}.tif")).ReadAsArray()
        factor = clear.shape[0] // dn.shape[0]
        at10 = np.kron(dn, np.ones((factor, factor), dn.dtype)) != 0
        least &= at10
        if factor == 1:
            most &= at10
    return most, least


def expected_pair_chips(masks, size, min_valid):
    counts = []
    for mask in masks:
        n = mask.shape[0] // size
        shares = mask[: n * size, : n * size].reshape(n, size, n, size).mean(axis=(1, 3))
        counts.append(int((shares >= min_valid - 1e-9).sum()))
    return counts


def label_bounds(features, dates, masks, grid, size, min_valid, max_days):
    """Fewest and most labels that can be kept: each takes the nearest scene in date
    (the earlier on a tie) within max_days where its pixel is valid, its chip lies
    inside the grid and holds at least min_valid valid pixels."""
    day = lambda text: datetime.date.fromisoformat(text).toordinal()  # noqa: E731
    x0, pixel = grid
    kept = [0, 0]
    for x, y, date in features:
        col, row = int(np.floor((x - x0[0]) / pixel)), int(np.floor((x0[1] - y) / pixel))
        c0, r0 = col - size // 2, row - size // 2
        order = sorted(range(len(dates)), key=lambda s: (abs(day(dates[s]) - day(date)), s))
        for bound in (0, 1):
            for s in order:
                if abs(day(dates[s]) - day(date)) > max_days:
                    break
                mask = masks[s][bound]
                if c0 < 0 or r0 < 0 or c0 + size > mask.shape[1] or r0 + size > mask.shape[0]:
                    break
                if mask[row, col] and mask[r0:r0 + size, c0:c0 + size].mean() >= min_valid - 1e-9:
                    kept[bound] += 1
                    break
    return min(kept), max(kept)


def read_points(path, fields):
    ds = ogr.Open(path)
    layer = ds.GetLayer(0)
    wgs84, utm = osr.SpatialReference(), osr.SpatialReference()
    wgs84.ImportFromEPSG(4326)
    utm.ImportFromEPSG(32632)
    for ref in (wgs84, utm):
        ref.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    to_utm = osr.CoordinateTransformation(wgs84, utm)
    rows = []
    for feature in layer:
        point = feature.GetGeometryRef()
        x, y, _ = to_utm.TransformPoint(point.GetX(), point.GetY())
        row = {f: feature.GetField(f) for f in fields}
        row["date"] = row["date"].replace("/", "-")  # OGR reads the GeoJSON dates as dates
        rows.append(dict(row, x=x, y=y))
    return rows


with tempfile.TemporaryDirectory() as work:
    configs = os.path.join(work, "examples", "aldery-marsh")
    shutil.copytree(EXAMPLE, configs, ignore=shutil.ignore_patterns("*.py", "aldery", "README.md", "__pycache__"))
    data = os.path.join(work, "demo-out", "aldery")
    gen = subprocess.run(["/usr/bin/python3", os.path.join(EXAMPLE, "make_scenes.py"), data, "--small"],
                         capture_output=True, text=True)
    print(gen.stdout, gen.stderr)
    checks.check(gen.returncode == 0, f"make_scenes.py --small: exit {gen.returncode}")
    if gen.returncode:
        checks.finish()
    summary = json.load(open(os.path.join(data, "generated.json")))
    dates = [s["date"] for s in summary["scenes"]]
    checks.check(dates == ["2026-04-18", "2026-05-23", "2026-06-14", "2026-07-19", "2026-08-23"], f"dates {dates}")
    checks.check(not os.path.exists(data + ".partial"), "no partial folder left")

    # survey: band files at their native resolutions, the orthophoto in another CRS
    scene = os.path.join(data, "2026-06-14")
    files = [os.path.join(scene, f) for f in ("B04.tif", "B05.tif", "B09.tif", "SCL.tif")]
    files.append(os.path.join(data, "ortho-2026-06-14.tif"))
    surveyed = json.loads(run("survey", "--json", *files, cwd=work).stdout)
    expect = [(192, 10.0, "UInt16", 0.0), (96, 20.0, "UInt16", 0.0), (32, 60.0, "UInt16", 0.0), (96, 20.0, "Byte", None)]
    for s, (width, pixel, dtype, nodata) in zip(surveyed, expect):
        name = os.path.basename(s["path"])
        checks.check(s["crs"]["epsg"] == 32632, f"{name}: CRS {s['crs']['epsg']}")
        checks.check((s["width"], s["height"]) == (width, width), f"{name}: size {s['width']} x {s['height']}")
        checks.check(s["pixel_size"] == [pixel, pixel], f"{name}: pixel size {s['pixel_size']}")
        checks.check(s["origin"] == [612000.0, 5041000.0], f"{name}: origin {s['origin']}")
        checks.check(s["bands"][0]["type"] == dtype and s["bands"][0]["nodata"] == nodata, f"{name}: type, nodata")
    # DN = reflectance x 10000 + 1000: the darkest red (water in cloud shadow) lies above 1000.
    checks.check(1000 < surveyed[0]["bands"][0]["min"] < 1300, f"B04 minimum {surveyed[0]['bands'][0]['min']}")
    ortho = surveyed[4]
    checks.check(ortho["crs"]["epsg"] == 3035 and ortho["pixel_size"] == [5.0, 5.0], "orthophoto: EPSG:3035, 5 m")
    checks.check(len(ortho["bands"]) == 3 and ortho["bands"][0]["type"] == "Byte", "orthophoto: three Byte bands")

    # pair: the composite colour over all five dates, chips counted independently
    config = yaml.safe_load(open(os.path.join(configs, "pair.yaml")))
    run("pair", os.path.join(configs, "pair.yaml"), cwd=work)
    store = Store(os.path.join(work, "demo-out", "aldery.pairs"))
    checks.check(store.band_names == INPUTS, f"pair store bands {store.band_names}")
    checks.check(store.size == config["chips"]["size"], "pair chip size")
    masks = [valid_masks(os.path.join(data, d)) for d in dates]
    low = expected_pair_chips([m[1] for m in masks], store.size, config["chips"]["min_valid"])
    high = expected_pair_chips([m[0] for m in masks], store.size, config["chips"]["min_valid"])
    got = [sum(1 for c in store.chips if c["date"] == d) for d in dates]
    print("pair chips per scene: tinct", got, "expected between", low, "and", high)
    checks.check(all(lo <= g <= hi for g, lo, hi in zip(got, low, high)), "pair chips per scene")
    checks.check(low[:3] == high[:3] and got[:3] == low[:3], "exact counts where no band has no data")
    checks.check(sum(got) == store.count and store.count > 60, f"pair chip count {store.count}")
    checks.check("UTM zone 32N" in store.manifest["crs"], "pair store CRS")

    # pair with the orthophoto: one date, its known offset measured
    run("pair", os.path.join(configs, "pair-ortho.yaml"), cwd=work)
    ortho_store = Store(os.path.join(work, "demo-out", "aldery-ortho.pairs"))
    notes = ortho_store.manifest["scenes"][0]["notes"]
    dx, dy = float(notes["colour_shift_dx_px"]), float(notes["colour_shift_dy_px"])
    true_dx, true_dy = summary["ortho"]["shift_px_right_down"]
    print(f"orthophoto shift: measured ({dx:.3f}, {dy:.3f}) px, generated ({true_dx:.3f}, {true_dy:.3f}) px")
    # The small district gives one correlation window, partly outside the orthophoto: 0.25 px
    # (on the demo's district five windows measure 0.47, 0.50).
    checks.check(abs(dx - true_dx) < 0.25 and abs(dy - true_dy) < 0.25, "orthophoto offset measured within 0.25 px")
    checks.check(0 < ortho_store.count < got[2], f"orthophoto pairs {ortho_store.count}: fewer than the scene's")

    # label: both label sets against the same scenes
    for name, fields, cls, classes in (
            ("habitat", ["site", "visit", "date", "habitat"], "habitat", ["breeding", "non_breeding"]),
            ("landcover", ["point", "date", "cover"], "cover",
             ["open_water", "reed_marsh", "rice", "pasture", "cropland", "woodland", "settlement"])):
        config = yaml.safe_load(open(os.path.join(configs, f"label-{name}.yaml")))
        run("label", os.path.join(configs, f"label-{name}.yaml"), cwd=work)
        out = os.path.join(work, "demo-out", f"aldery-{name}.labels")
        labels = Store(out)
        points = read_points(os.path.join(data, f"sites-{name}.geojson"), fields)
        key = config["labels"]["id"]
        by_id = {p[key]: p for p in points}
        with open(os.path.join(out, "dropped.csv"), newline="") as f:
            dropped = list(csv.DictReader(f))
        checks.check(labels.count + len(dropped) == len(points),
                     f"{name}: {labels.count} kept + {len(dropped)} dropped = {len(points)} labels")
        bounds = label_bounds([(p["x"], p["y"], p["date"]) for p in points], dates, masks,
                              ((612000.0, 5041000.0), 10.0), labels.size, config["chips"]["min_valid"],
                              config["match"]["max_days"])
        print(f"{name}: kept {labels.count}, expected between {bounds[0]} and {bounds[1]}")
        checks.check(bounds[0] <= labels.count <= bounds[1], f"{name}: kept count")
        checks.check(labels.manifest["classes"] == classes, f"{name}: classes {labels.manifest['classes']}")
        checks.check(labels.band_names == INPUTS, f"{name}: bands")
        checks.check("UTM zone 32N" in labels.manifest["crs"], f"{name}: the scenes' CRS")
        for chip in labels.chips:
            p = by_id[chip["source_id"]]
            days = abs((datetime.date.fromisoformat(chip["date"]) - datetime.date.fromisoformat(p["date"])).days)
            checks.check(chip["label"] == p[cls] and days <= config["match"]["max_days"],
                         f"{name} {chip['source_id']}: label {chip['label']}, {days} days")
            if name == "habitat":
                checks.check(chip["group"] == p["site"], f"{chip['source_id']}: group is the site")

    # The pretrain and finetune configs read as their commands would; a two-step
    # pretraining gives the finetune configs a run to start from.
    run("pretrain", os.path.join(configs, "pretrain.yaml"), "--stop-after", "2", cwd=work)
    for name in ("habitat", "landcover"):
        run("--quiet", "check", os.path.join(configs, f"finetune-{name}.yaml"), cwd=work)

checks.finish()
