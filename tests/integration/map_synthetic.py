"""tinct map end to end on generated scenes: a classifier trained on bright squares
(class bright) and textured background (class dark) maps a new scene holding one bright
square, a patch of a cover never seen in training and a masked patch. Checked against
GDAL's own gdalinfo -json (CRS, geotransform, size), numpy on GDAL's pixels (probabilities
sum to 1, nodata exactly where the mask leaves too few valid pixels, the square's cells,
the entropy band, the temperature's effect on the log-odds, the uint8 codes, each quicklook
cell's colour and hatching), the run's own --points predictions of the same windows (from a
CSV and a GeoJSON layer), `tinct assess`'s predictions of the label chips, and a direct
numpy computation of the area-of-applicability formula (Meyer and Pebesma 2021, as
documented in assess/area_of_applicability.hpp) on the exported training features."""
import json
import os
import subprocess
import sys
import shutil
import tempfile

import numpy as np
from osgeo import gdal

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write, write_profile  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
PIXEL, SIZE, STRIDE = 10.0, 32, 16
BRIGHT = [4200, 4500, 4800, 5200, 5000]
ODD = [9000, 300, 9000, 300, 9000]  # a spectral shape absent from training


def background(height, width, seed):
    return [(600 + 900 * texture(height, width, seed + b)).astype(np.uint16) for b in range(5)]


def paint(bands, rows, cols, values):
    for band, value in zip(bands, values):
        band[rows, cols] = value


def tinct(args, cwd):
    run = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=cwd)
    checks.check(run.returncode == 0, f"tinct {' '.join(args)}: exit {run.returncode}\n{run.stderr[-2000:]}")
    if run.returncode:
        checks.finish()
    return run


def gdalinfo(path):
    return json.loads(subprocess.run(["gdalinfo", "-json", path], capture_output=True, text=True, check=True).stdout)


def read(path, band=1):
    ds = gdal.Open(path)
    return ds.GetRasterBand(band).ReadAsArray()


with tempfile.TemporaryDirectory(dir=os.environ.get("TINCT_KEEP_DIR")) as work:
    write_profile(work, "maptest")
    # Training scene A: 3 x 3 bright squares of 40 px on textured background.
    a = background(320, 320, 1)
    squares = [(40 + 100 * i, 40 + 100 * j) for i in range(3) for j in range(3)]
    for r, c in squares:
        paint(a, slice(r, r + 40), slice(c, c + 40), BRIGHT)
    origin_a = (500000.0, 5300000.0)
    scene_a = write(os.path.join(work, "a.tif"), a, origin=origin_a, pixel=PIXEL)
    # Map scene B: one bright square, an unseen cover, a masked patch.
    b = background(256, 256, 11)
    paint(b, slice(96, 160), slice(48, 112), BRIGHT)
    paint(b, slice(16, 80), slice(160, 240), ODD)
    origin_b = (504000.0, 5300000.0)
    scene_b = write(os.path.join(work, "b.tif"), b, origin=origin_b, pixel=PIXEL)
    mask = np.zeros((256, 256), np.uint8)
    mask[176:240, 150:240] = 9
    write(os.path.join(work, "b-mask.tif"), [mask], origin=origin_b, pixel=PIXEL, dtype="uint8")

    rng = np.random.default_rng(3)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,x,y,cover\n")
        n = 0
        for r, c in squares:
            for dr, dc in [(0, 0), (-3, 2), (2, -3), (3, 3)]:
                x, y = origin_a[0] + (c + 20 + dc + 0.5) * PIXEL, origin_a[1] - (r + 20 + dr + 0.5) * PIXEL
                f.write(f"s{n},{x},{y},bright\n")
                n += 1
        dark = 0
        while dark < 40:
            r, c = rng.integers(16, 304, size=2)
            if any(r + 16 > sr and r - 16 < sr + 40 and c + 16 > sc and c - 16 < sc + 40 for sr, sc in squares):
                continue
            x, y = origin_a[0] + (c + 0.5) * PIXEL, origin_a[1] - (r + 0.5) * PIXEL
            f.write(f"d{dark},{x},{y},dark\n")
            dark += 1
    profile = os.path.join(work, "maptest.yaml")
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write(f"""config: label
sensor: {profile}
output: a.labels
inputs: [blue, green, red, nir, swir]
scenes: [{{id: a, path: a.tif, date: 2026-06-01}}]
labels: {{source: sites.csv, class: cover, x: x, y: y, crs: EPSG:32632, id: id, classes: [dark, bright]}}
chips: {{size: {SIZE}, min_valid: 0.9, block_size: 800}}
""")
    with open(os.path.join(work, "finetune.yaml"), "w") as f:
        f.write("""config: finetune
stores: [a.labels]
output: runs/ft
init: {from: scratch, model: {encoder: compact, width: 0.5}}
split: {method: blocks, block_size: 800, folds: 3, fold: 0}
train: {epochs: 12, batch: 16, lr: 0.003, seed: 1, patience: 12}
""")
    tinct(["label", "label.yaml"], work)
    tinct(["finetune", "finetune.yaml"], work)

    scenes = f"""scenes:
  - {{id: b, path: b.tif, date: 2026-06-14, mask: {{path: b-mask.tif, drop: [9]}}}}
  - {{id: a, path: a.tif, date: 2026-06-01}}
"""
    with open(os.path.join(work, "map.yaml"), "w") as f:
        f.write(f"config: map\nrun: runs/ft\noutput: maps/exact\nstride: {STRIDE}\nmode: exact\n"
                f"probabilities: float32\nmin_valid: 0.5\nsensor: {profile}\n" + scenes)
    tinct(["check", "map.yaml"], work)
    # Without mode: a map is exact (it agrees with the model as it scores chips); tinct check
    # prints the default filled in.
    with open(os.path.join(work, "map-default.yaml"), "w") as f:
        f.write(open(os.path.join(work, "map.yaml")).read().replace("mode: exact\n", ""))
    resolved = tinct(["check", "map-default.yaml"], work).stdout
    checks.check("\nmode: exact\n" in resolved, f"tinct check does not show mode: exact by default:\n{resolved[:800]}")
    with open(os.path.join(work, "map-missing.yaml"), "w") as f:
        f.write(f"config: map\nrun: runs/ft\noutput: maps/missing\nsensor: {profile}\n"
                "scenes: [{id: b, date: 2026-06-14, files: {blue: b.tif}}]\n")
    refused = subprocess.run([TINCT, "map", "map-missing.yaml"], capture_output=True, text=True, cwd=work)
    checks.check(refused.returncode == 2 and "green, red, nir, swir" in refused.stderr,
                 f"a scene without the run's bands: exit {refused.returncode}, {refused.stderr[-300:]}")
    tinct(["map", "map.yaml"], work)
    tinct(["map", "map.yaml", "--mode", "dense", "--out", "maps/dense"], work)
    exact = os.path.join(work, "maps", "exact")

    # Georeferencing against gdalinfo -json: CRS identical to the scene's, geotransform as defined.
    scene_info = gdalinfo(scene_b)
    offset = SIZE // 2 - STRIDE // 2
    expected_gt = [origin_b[0] + offset * PIXEL, PIXEL * STRIDE, 0.0, origin_b[1] - offset * PIXEL, 0.0,
                   -PIXEL * STRIDE]
    cells = (256 - SIZE) // STRIDE + 1
    for product in ("probabilities", "classes", "uncertainty", "aoa"):
        info = gdalinfo(os.path.join(exact, "b", product + ".tif"))
        checks.check(info["coordinateSystem"]["wkt"] == scene_info["coordinateSystem"]["wkt"],
                     f"{product}: CRS differs from the scene's")
        checks.check(np.allclose(info["geoTransform"], expected_gt, rtol=0, atol=1e-6),
                     f"{product}: geotransform {info['geoTransform']} != {expected_gt}")
        checks.check(info["size"] == [cells, cells], f"{product}: size {info['size']} != {[cells, cells]}")
        checks.check(info["metadata"][""].get("LAYOUT") == "COG" or
                     info["metadata"].get("IMAGE_STRUCTURE", {}).get("LAYOUT") == "COG",
                     f"{product}: gdalinfo does not report LAYOUT=COG")
        checks.check("field confirmation" in info["metadata"][""].get("TINCT_CAUTION", ""),
                     f"{product}: no caution in the metadata")
    prob_info = gdalinfo(os.path.join(exact, "b", "probabilities.tif"))
    checks.check([band.get("description") for band in prob_info["bands"]] == ["dark", "bright"],
                 "probability bands are not described by class name")
    classes_info = gdalinfo(os.path.join(exact, "b", "classes.tif"))
    checks.check("colorTable" in classes_info["bands"][0], "classes.tif has no colour table")

    # Nodata exactly where the mask leaves a window under min_valid (numpy on the mask).
    valid_pixels = (mask != 9).astype(float)
    fraction = np.array([[valid_pixels[r * STRIDE:r * STRIDE + SIZE, c * STRIDE:c * STRIDE + SIZE].mean()
                          for c in range(cells)] for r in range(cells)])
    expected_nodata = fraction < 0.5
    classes = read(os.path.join(exact, "b", "classes.tif"))
    checks.check(((classes == 255) == expected_nodata).all(),
                 f"nodata cells {(classes == 255).sum()} differ from the {expected_nodata.sum()} the mask implies")
    probabilities = np.stack([read(os.path.join(exact, "b", "probabilities.tif"), k) for k in (1, 2)])
    checks.check(np.isnan(probabilities[:, expected_nodata]).all(), "masked cells carry probabilities")
    sums = probabilities[:, ~expected_nodata].sum(axis=0)
    checks.check(np.abs(sums - 1).max() < 1e-5, f"probabilities sum to 1 within {np.abs(sums - 1).max():.2e}")

    # uncertainty.tif: the entropy of each cell's probabilities over ln K (numpy on GDAL's
    # pixels), no data where the probabilities have none.
    uncertainty_band = read(os.path.join(exact, "b", "uncertainty.tif"))
    p = probabilities[:, ~expected_nodata].astype(np.float64)
    entropy = -(np.where(p > 0, p * np.log(np.where(p > 0, p, 1)), 0)).sum(axis=0) / np.log(2)
    checks.check(np.abs(uncertainty_band[~expected_nodata] - entropy).max() < 1e-5,
                 f"uncertainty differs from numpy's normalised entropy by "
                 f"{np.abs(uncertainty_band[~expected_nodata] - entropy).max():.2e}")
    checks.check(np.isnan(uncertainty_band[expected_nodata]).all(), "masked cells carry an uncertainty")

    # Provenance in the metadata: the run, its config hash as run.yaml records it, the version.
    metadata = prob_info["metadata"][""]
    run_hash = next(line.split(":", 1)[1].strip().strip('"') for line in open(os.path.join(work, "runs", "ft", "run.yaml"))
                    if line.startswith("config_hash:"))
    checks.check(metadata.get("TINCT_RUN") == "ft" and metadata.get("TINCT_RUN_CONFIG_HASH") == run_hash and
                 metadata.get("TINCT_VERSION") and metadata.get("TINCT_MAP_CONFIG_HASH"),
                 f"provenance metadata: {[(k, v) for k, v in metadata.items() if k.startswith('TINCT_')]}")

    # Calibration: the run's temperature T (aoa.json) divides the logits, so for two classes
    # the log-odds of the calibrated map are the uncalibrated map's (aoa: false) over T.
    # uint8 probabilities: round(250 p) of the same cells, 255 where there is no data.
    with open(os.path.join(work, "map-raw.yaml"), "w") as f:
        f.write(f"config: map\nrun: runs/ft\noutput: maps/raw\nstride: {STRIDE}\nmode: exact\naoa: false\n"
                f"probabilities: float32\nmin_valid: 0.5\nsensor: {profile}\n" + scenes)
    tinct(["map", "map-raw.yaml"], work)
    with open(os.path.join(work, "map.yaml")) as f:
        byte_config = f.read().replace("probabilities: float32", "probabilities: uint8").replace("maps/exact", "maps/bytes")
    with open(os.path.join(work, "map-bytes.yaml"), "w") as f:
        f.write(byte_config)
    tinct(["map", "map-bytes.yaml", "--force"], work)
    temperature = json.load(open(os.path.join(exact, "aoa.json")))["temperature"]
    raw = np.stack([read(os.path.join(work, "maps", "raw", "b", "probabilities.tif"), k) for k in (1, 2)])
    # (A small T, as here where the validation chips separate, saturates most calibrated
    # cells; the cells whose probabilities are still above float32's smallest normal number
    # carry the log-odds.)
    both = ~expected_nodata & (probabilities.min(axis=0) > 1e-30) & (raw.min(axis=0) > 1e-30)
    log_odds = np.log(probabilities[1, both].astype(np.float64) / probabilities[0, both])
    raw_log_odds = np.log(raw[1, both].astype(np.float64) / raw[0, both])
    steep = np.abs(log_odds) > 0.05
    ratio = raw_log_odds[steep] / log_odds[steep]
    print(f"calibration: temperature {temperature:.4f}; uncalibrated / calibrated log-odds over {steep.sum()} cells: "
          f"{ratio.min() if steep.any() else float('nan'):.5f} to {ratio.max() if steep.any() else float('nan'):.5f}")
    # float32 probabilities near 0.5 leave the small uncalibrated log-odds about 1e-3 exact.
    checks.check(steep.sum() >= 5 and np.abs(ratio / temperature - 1).max() < 1e-2,
                 f"calibrated log-odds are not the uncalibrated ones over T = {temperature}")
    codes = np.stack([read(os.path.join(work, "maps", "bytes", "b", "probabilities.tif"), k) for k in (1, 2)])
    expected_codes = np.rint(probabilities[:, ~expected_nodata].astype(np.float64) * 250)
    checks.check(np.abs(codes[:, ~expected_nodata] - expected_codes).max() <= 1 and
                 (codes[:, expected_nodata] == 255).all() and codes[:, ~expected_nodata].max() <= 250,
                 "uint8 probabilities are not round(250 p) with 255 for no data")

    # The map reads a scene as `tinct label` cut its chips: `tinct assess` scores every chip of
    # the label store (uncalibrated softmax, 6 decimals in predictions.csv); the uncalibrated
    # map (aoa: false) at the same locations through --points gives the same probabilities.
    tinct(["assess", "runs/ft", "--on", "a.labels", "--all", "--out", "assess-all"], work)
    import csv
    assessed = list(csv.DictReader(open(os.path.join(work, "assess-all", "predictions.csv"))))
    with open(os.path.join(work, "assessed-points.csv"), "w") as f:
        f.write("id,x,y\n")
        for i, row in enumerate(assessed):
            f.write(f"chip{i},{row['x']},{row['y']}\n")
    with open(os.path.join(work, "map-raw-a.yaml"), "w") as f:
        f.write(f"config: map\nrun: runs/ft\noutput: maps/raw-a\nmode: exact\naoa: false\nprobabilities: float32\n"
                f"sensor: {profile}\nscenes: [{{id: a, path: a.tif, date: 2026-06-01}}]\n")
    tinct(["map", "map-raw-a.yaml", "--points", "assessed-points.csv"], work)
    mapped = {row["id"]: row for row in csv.DictReader(open(os.path.join(work, "maps", "raw-a", "points.csv")))}
    worst = max(abs(float(mapped[f"chip{i}"][f"p_{name}"]) - float(row[f"p_{name}"]))
                for i, row in enumerate(assessed) for name in ("dark", "bright"))
    print(f"--points vs tinct assess on {len(assessed)} label chips: max |dp| {worst:.2e}")
    checks.check(len(assessed) >= 40 and worst < 1e-4, f"the map's points differ from tinct assess by {worst:.2e}")

    # --points from an OGR layer: the first 12 chips as GeoJSON points in longitude and
    # latitude (transformed by GDAL's osr), the same windows and probabilities as the CSV's.
    # The layer has no id field, so a point's id is its feature id.
    from osgeo import ogr, osr
    utm, wgs84 = osr.SpatialReference(), osr.SpatialReference()
    utm.ImportFromEPSG(32632)
    wgs84.ImportFromEPSG(4326)
    wgs84.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    to_wgs84 = osr.CoordinateTransformation(utm, wgs84)
    vector = ogr.GetDriverByName("GeoJSON").CreateDataSource(os.path.join(work, "assessed.geojson"))
    layer = vector.CreateLayer("chips", wgs84, ogr.wkbPoint)
    layer.CreateField(ogr.FieldDefn("name", ogr.OFTString))
    for i, row in enumerate(assessed[:12]):
        lon, lat, _ = to_wgs84.TransformPoint(float(row["x"]), float(row["y"]))
        feature = ogr.Feature(layer.GetLayerDefn())
        feature.SetField("name", f"chip{i}")
        feature.SetGeometry(ogr.CreateGeometryFromWkt(f"POINT ({lon!r} {lat!r})"))
        layer.CreateFeature(feature)
    vector = None
    tinct(["map", "map-raw-a.yaml", "--points", "assessed.geojson", "--out", "maps/raw-a-vector"], work)
    from_vector = list(csv.DictReader(open(os.path.join(work, "maps", "raw-a-vector", "points.csv"))))
    # (GeoJSON numbers features from 0.)
    checks.check([row["id"] for row in from_vector] == [str(i) for i in range(12)],
                 f"GeoJSON points without an id field: ids {[row['id'] for row in from_vector]}, not the feature ids")
    worst = max(abs(float(row[f"p_{name}"]) - float(mapped[f"chip{row['id']}"][f"p_{name}"]))
                for row in from_vector for name in ("dark", "bright")) if from_vector else float("inf")
    checks.check(len(from_vector) == 12 and worst < 1e-6,
                 f"GeoJSON points: {len(from_vector)} rows, max |dp| against the CSV's {worst:.2e}")

    # A GeoPackage written by GDAL's ogr2ogr from a CSV of chips 12 to 23 in the scene's CRS,
    # with an ID column (upper case) of site names: the points carry those ids, in
    # points.csv and in points.gpkg, and the CSV's probabilities.
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("ID,x,y\n")
        for i, row in enumerate(assessed[12:24]):
            f.write(f"site-{12 + i},{row['x']},{row['y']}\n")
    subprocess.run(["ogr2ogr", "-f", "GPKG", "sites.gpkg", "sites.csv", "-nln", "sites", "-a_srs", "EPSG:32632",
                    "-oo", "X_POSSIBLE_NAMES=x", "-oo", "Y_POSSIBLE_NAMES=y"], cwd=work, check=True)
    tinct(["map", "map-raw-a.yaml", "--points", "sites.gpkg", "--out", "maps/raw-a-gpkg"], work)
    from_gpkg = list(csv.DictReader(open(os.path.join(work, "maps", "raw-a-gpkg", "points.csv"))))
    expected_ids = [f"site-{12 + i}" for i in range(12)]
    checks.check([row["id"] for row in from_gpkg] == expected_ids,
                 f"GeoPackage points: ids {[row['id'] for row in from_gpkg]}, not its ID field {expected_ids}")
    worst = max(abs(float(row[f"p_{name}"]) - float(mapped[f"chip{12 + i}"][f"p_{name}"]))
                for i, row in enumerate(from_gpkg) for name in ("dark", "bright")) if from_gpkg else float("inf")
    checks.check(len(from_gpkg) == 12 and worst < 1e-6,
                 f"GeoPackage points: {len(from_gpkg)} rows, max |dp| against the CSV's {worst:.2e}")
    package = gdal.OpenEx(os.path.join(work, "maps", "raw-a-gpkg", "points.gpkg"))  # held: the layer lives in it
    package_ids = [feature.GetField("id") for feature in package.GetLayer(0)]
    checks.check(package_ids == expected_ids, f"points.gpkg ids {package_ids}, not the input's ID field")

    # The bright square (pixels rows 96-160, cols 48-112): windows inside it are bright,
    # windows touching neither it nor the unseen patch nor the mask are dark.
    def window_overlaps(r, c, rows, cols):
        return r * STRIDE < rows[1] and r * STRIDE + SIZE > rows[0] and c * STRIDE < cols[1] and c * STRIDE + SIZE > cols[0]

    inside = [(r, c) for r in range(cells) for c in range(cells)
              if r * STRIDE >= 96 and r * STRIDE + SIZE <= 160 and c * STRIDE >= 48 and c * STRIDE + SIZE <= 112]
    away = [(r, c) for r in range(cells) for c in range(cells)
            if not window_overlaps(r, c, (96, 160), (48, 112)) and not window_overlaps(r, c, (16, 80), (160, 240))
            and not window_overlaps(r, c, (176, 240), (150, 240))]
    checks.check(len(inside) >= 4 and all(classes[r, c] == 1 for r, c in inside),
                 f"cells inside the square: {[int(classes[r, c]) for r, c in inside]} (1 = bright)")
    dark_share = np.mean([classes[r, c] == 0 for r, c in away])
    checks.check(dark_share >= 0.95, f"only {dark_share:.3f} of the cells away from the square are dark")
    print(f"square cells bright: {len(inside)}; background cells dark: {dark_share:.3f}")

    # Dense against exact: agreement of the class maps over cells with data.
    dense_classes = read(os.path.join(work, "maps", "dense", "b", "classes.tif"))
    with_data = classes != 255
    agreement = np.mean(dense_classes[with_data] == classes[with_data])
    print(f"dense vs exact class agreement: {agreement:.4f} of {with_data.sum()} cells")
    checks.check(agreement >= 0.95, f"dense agrees with exact on {agreement:.3f} of the cells")
    checks.check(((dense_classes == 255) == (classes == 255)).all(), "dense and exact nodata differ")

    # --points at window centres of B and at the training chips of A: the same windows' values.
    features = np.genfromtxt(os.path.join(exact, "training_features.csv"), delimiter=",", names=True)
    picked = [(r, c) for r in range(0, cells, 3) for c in range(0, cells, 2)]
    with open(os.path.join(work, "points.csv"), "w") as f:
        f.write("id,x,y\n")
        for r, c in picked:
            x = origin_b[0] + (c * STRIDE + SIZE // 2 + 0.5) * PIXEL
            y = origin_b[1] - (r * STRIDE + SIZE // 2 + 0.5) * PIXEL
            f.write(f"cell_{r}_{c},{x},{y}\n")
        for i, (x, y) in enumerate(zip(features["x"], features["y"])):
            f.write(f"train_{i},{x},{y}\n")
    tinct(["map", "map.yaml", "--points", "points.csv", "--out", "maps/points"], work)
    points = {row["id"]: row for row in
              __import__("csv").DictReader(open(os.path.join(work, "maps", "points", "points.csv")))}
    aoa_band = read(os.path.join(exact, "b", "aoa.tif"), 1)
    worst_p, worst_aoa, compared = 0.0, 0.0, 0
    for r, c in picked:
        row = points[f"cell_{r}_{c}"]
        if classes[r, c] == 255:
            checks.check(row["predicted"] == "", f"point at masked cell {r},{c} got a class")
            continue
        compared += 1
        worst_p = max(worst_p, abs(float(row["p_bright"]) - probabilities[1, r, c]))
        worst_aoa = max(worst_aoa, abs(float(row["aoa_index"]) - aoa_band[r, c]))
    print(f"--points vs map on {compared} windows: max |dp| {worst_p:.2e}, max |d aoa| {worst_aoa:.2e}")
    # The same windows go through the model in differently sized batches, so float32 sums run
    # in another order: differences of 1e-5 were seen; a wrong window moves p by far more.
    checks.check(compared > 10 and worst_p < 1e-4 and worst_aoa < 1e-4,
                 f"--points and the map differ: |dp| {worst_p:.2e}, |d aoa| {worst_aoa:.2e}")
    train_index = np.array([float(points[f"train_{i}"]["aoa_index"]) for i in range(len(features))])
    checks.check(np.abs(train_index).max() < 1e-3,
                 f"AOA index at training chips is not 0: max {np.abs(train_index).max():.2e}")
    gpkg = gdal.OpenEx(os.path.join(work, "maps", "points", "points.gpkg"))
    layer = gpkg.GetLayer(0)
    checks.check(layer.GetFeatureCount() == len(picked) + len(features), "points.gpkg lacks points")
    checks.check(layer.GetSpatialRef() is not None and layer.GetSpatialRef().GetAuthorityCode(None) == "32632",
                 "points.gpkg is not in the points' CRS (EPSG:32632)")

    # AOA formula in numpy on the exported features (assess/area_of_applicability.hpp).
    names = [n for n in features.dtype.names if n[0] == "f" and n[1:].isdigit()]
    X = np.stack([features[n] for n in names], axis=1).astype(np.float64)
    folds = features["fold"].astype(int)
    sd = X.std(axis=0, ddof=1)
    keep = sd > 0
    Z = (X[:, keep] - X[:, keep].mean(axis=0)) / sd[keep]
    D = np.sqrt(((Z[:, None, :] - Z[None, :, :]) ** 2).sum(axis=2))
    n = len(Z)
    d_bar = D[~np.eye(n, dtype=bool)].mean()
    other = folds[:, None] != folds[None, :]
    training_index = np.where(other, D, np.inf).min(axis=1) / d_bar
    q1, q3 = np.percentile(training_index, [25, 75])
    threshold = training_index[training_index <= q3 + 1.5 * (q3 - q1)].max()
    aoa = json.load(open(os.path.join(exact, "aoa.json")))
    checks.check(abs(aoa["mean_distance"] - d_bar) < 1e-4 * d_bar, f"mean distance {aoa['mean_distance']} != {d_bar}")
    checks.check(abs(aoa["threshold"] - threshold) < 1e-4 * max(threshold, 1e-9),
                 f"threshold {aoa['threshold']} != numpy {threshold}")
    checks.check(np.allclose(features["training_index"], training_index, rtol=1e-4, atol=1e-6),
                 "training indices differ from numpy")
    # The unseen cover lies outside; the index there exceeds the index over the trained covers.
    odd = [(r, c) for r in range(cells) for c in range(cells)
           if r * STRIDE >= 16 and r * STRIDE + SIZE <= 80 and c * STRIDE >= 160 and c * STRIDE + SIZE <= 240]
    mask_band = read(os.path.join(exact, "b", "aoa.tif"), 2)
    odd_index = np.array([aoa_band[r, c] for r, c in odd])
    away_index = np.array([aoa_band[r, c] for r, c in away])
    print(f"AOA index: unseen cover median {np.median(odd_index):.3f}, trained covers median "
          f"{np.median(away_index):.3f}, threshold {aoa['threshold']:.3f}")
    checks.check(np.median(odd_index) > 2 * np.median(away_index), "the unseen cover's index is not larger")
    checks.check(all(mask_band[r, c] == 0 for r, c in odd), "cells of the unseen cover are not marked outside")

    # Dense maps take the AOA from exact windows every aoa_step-th window (the default, 8, in
    # TINCT_AOA_STEP): a grid aoa_step times coarser, same origin, each cell the exact map's
    # value at its middle window.
    dense_aoa_path = os.path.join(work, "maps", "dense", "b", "aoa.tif")
    info = gdalinfo(dense_aoa_path)
    step = int(info["metadata"][""]["TINCT_AOA_STEP"])
    checks.check(step == 8, f"dense maps' default aoa_step is {step}, not 8")
    coarse = -(-cells // step)
    checks.check(np.allclose(info["geoTransform"], [expected_gt[0], expected_gt[1] * step, 0.0, expected_gt[3], 0.0,
                                                    expected_gt[5] * step], rtol=0, atol=1e-6) and
                 info["size"] == [coarse, coarse], f"dense aoa.tif grid {info['geoTransform']} {info['size']}")
    dense_aoa = read(dense_aoa_path, 1)
    worst = 0.0
    for i in range(coarse):
        for j in range(coarse):
            wr, wc = min(step * i + step // 2, cells - 1), min(step * j + step // 2, cells - 1)
            if classes[wr, wc] != 255:
                worst = max(worst, abs(dense_aoa[i, j] - aoa_band[wr, wc]))
    checks.check(worst < 1e-4, f"dense aoa.tif differs from the exact windows' index by {worst:.2e}")

    # Mosaic over the two scenes, quicklook.
    for product in ("probabilities", "classes", "uncertainty", "aoa"):
        vrt = os.path.join(exact, f"mosaic-{product}.vrt")
        checks.check(os.path.exists(vrt) and gdal.Open(vrt) is not None, f"no readable {vrt}")
    quicklook = os.path.join(exact, "b", "quicklook.png")
    image = gdal.Open(quicklook)
    checks.check(image is not None and image.RasterXSize >= 600, "quicklook.png missing or small")
    # Each cell of the quicklook (quicklook.cpp's layout: cells scaled by 600 // cells, the map
    # 16 px from the left and 28 px from the top) in the colour of classes.tif's colour table;
    # cells outside the area of applicability (aoa.tif's mask) hatched in grey (90, 90, 90);
    # no-data cells one colour that is no class's.
    if image is not None:
        rgb = np.stack([image.GetRasterBand(k).ReadAsArray() for k in (1, 2, 3)], axis=2)
        classes_file = gdal.Open(os.path.join(exact, "b", "classes.tif"))  # held: the table lives in it
        table = classes_file.GetRasterBand(1).GetColorTable()
        palette = [tuple(table.GetColorEntry(k)[:3]) for k in range(2)]
        scale = 600 // cells
        wrong = []
        for r in range(cells):
            for c in range(cells):
                block = rgb[28 + r * scale:28 + (r + 1) * scale, 16 + c * scale:16 + (c + 1) * scale].reshape(-1, 3)
                colours = {tuple(int(v) for v in x) for x in np.unique(block, axis=0)}
                if classes[r, c] == 255:
                    ok = len(colours) == 1 and not colours & set(palette) and (90, 90, 90) not in colours
                elif mask_band[r, c] == 0:
                    ok = colours == {palette[classes[r, c]], (90, 90, 90)}
                else:
                    ok = colours == {palette[classes[r, c]]}
                if not ok:
                    wrong.append((r, c, sorted(colours)[:3]))
        checks.check(not wrong, f"quicklook cells not drawn as classes.tif and aoa.tif say: {wrong[:5]}")
        checks.check((mask_band[classes != 255] == 0).any() and (classes == 255).any(),
                     "scene b's quicklook shows no hatched or no no-data cells")
    os.makedirs(os.path.join(os.environ["TINCT_TEST_DATA"], "map_synthetic"), exist_ok=True)
    if image is not None:
        gdal.Translate(os.path.join(os.environ["TINCT_TEST_DATA"], "map_synthetic", "quicklook.png"), image)

    # Study arms and ensembles. A real study (one arm, two seeds, budgets 3 and all, fold 0;
    # a random forest baseline; two epochs, so that the seeds' probabilities are not all 0 or 1): arm "scratch" maps as the ensemble of its two seeds at the
    # largest budget (all) and the lowest fold (0), as map_settings.hpp documents.
    with open(os.path.join(work, "study.yaml"), "w") as f:
        f.write("config: study\noutput: studies/s\nfinetune: finetune.yaml\narms: [{name: scratch, train: {epochs: 2}}]\n"
                "baselines: [random_forest]\nseeds: [1, 2]\nbudgets: [3, all]\nfolds: [0]\nparallel: 1\n")
    tinct(["study", "study.yaml"], work)
    seed_runs = [os.path.join("studies", "s", "runs", "scratch", "budget-all", f"seed-{s}", "fold-0") for s in (1, 2)]
    def map_config(name, source, extra=""):
        with open(os.path.join(work, name + ".yaml"), "w") as f:
            f.write(f"config: map\n{source}\noutput: maps/{name}\nstride: {STRIDE}\nmode: exact\n"
                    f"probabilities: float32\nsensor: {profile}\n{extra}"
                    f"scenes: [{{id: b, path: b.tif, date: 2026-06-14, mask: {{path: b-mask.tif, drop: [9]}}}}]\n")
        return name + ".yaml"

    def probabilities_of(name):
        path = os.path.join(work, "maps", name, "b", "probabilities.tif")
        return np.stack([read(path, k) for k in (1, 2)]).astype(np.float64)

    for i, run in enumerate(seed_runs):
        tinct(["map", map_config(f"seed{i + 1}", f"run: {run}")], work)
    tinct(["map", map_config("arm", "study: studies/s\narm: scratch")], work)
    arm_info = gdalinfo(os.path.join(work, "maps", "arm", "b", "probabilities.tif"))["metadata"][""]
    members = [arm_info.get(f"TINCT_MEMBER_{i}", "").split(";")[0] for i in (1, 2, 3)]
    expected_members = [r.replace(os.sep, "/") for r in seed_runs]
    checks.check(all(m.endswith("/" + e) for m, e in zip(members, expected_members)) and members[2] == "",
                 f"arm scratch resolved to {members}, expected {expected_members}")
    mean = (probabilities_of("seed1") + probabilities_of("seed2")) / 2
    ensemble = probabilities_of("arm")
    data = ~np.isnan(mean[0])
    worst = np.abs(ensemble[:, data] - mean[:, data]).max()
    print(f"ensemble of two seeds vs the mean of their single maps: max |dp| {worst:.2e} over {data.sum()} cells")
    checks.check(data.sum() > 50 and worst < 1e-5, f"the ensemble is not the mean of its members: {worst:.2e}")
    checks.check((np.isnan(ensemble[0]) == ~data).all(), "the ensemble's nodata differs from its members'")
    uncertainty = gdal.Open(os.path.join(work, "maps", "arm", "b", "uncertainty.tif"))
    checks.check(uncertainty.RasterCount == 2 and "disagreement" in uncertainty.GetRasterBand(2).GetDescription(),
                 "an ensemble's uncertainty.tif has no disagreement band")
    disagreement = uncertainty.GetRasterBand(2).ReadAsArray()[data]
    # Mutual information over ln K in numpy from the members' own maps (each member's
    # normalised entropy, the entropy of their mean).
    def entropy(p):
        return -(np.where(p > 0, p * np.log(np.where(p > 0, p, 1)), 0)).sum(axis=0) / np.log(2)
    expected = entropy(mean[:, data]) - (entropy(probabilities_of("seed1")[:, data]) +
                                         entropy(probabilities_of("seed2")[:, data])) / 2
    checks.check(np.abs(disagreement - np.maximum(expected, 0)).max() < 1e-4,
                 f"disagreement differs from numpy's mutual information by {np.abs(disagreement - expected).max():.2e}")
    print(f"two seeds' disagreement: max {disagreement.max():.4f}, mean {disagreement.mean():.4f}")
    checks.check(disagreement.max() > 0 and disagreement.min() >= 0 and disagreement.max() <= 1,
                 "two seeds' disagreement is not in (0, 1] anywhere")

    # Budget and fold chosen, then refusals: an unknown arm lists the arms, a baseline arm
    # holds no model, an absent budget lists the budgets.
    tinct(["map", "studies/s", "b.tif", "--arm", "scratch", "--budget", "3", "--out", "maps/short-arm"], work)
    short_info = gdalinfo(os.path.join(work, "maps", "short-arm", "b", "classes.tif"))["metadata"][""]
    checks.check(short_info.get("TINCT_MEMBER_2", "").split(";")[0].endswith("/studies/s/runs/scratch/budget-3/seed-2/fold-0"),
                 f"the short form's arm at budget 3: {short_info.get('TINCT_MEMBER_2')}")
    tinct(["check", map_config("arm3", "study: studies/s\narm: scratch\nbudget: 3\nfold: 0")], work)
    for source, expected_text in (("study: studies/s\narm: scrach", "its arms: random_forest, scratch"),
                                  ("study: studies/s\narm: random_forest", "holds no fine-tuned model.pt"),
                                  ("study: studies/s\narm: scratch\nbudget: 7", "its budgets: 3, all")):
        refused = subprocess.run([TINCT, "map", map_config("refused", source)], capture_output=True, text=True,
                                 cwd=work)
        checks.check(refused.returncode == 2 and expected_text in refused.stderr,
                     f"{source!r}: exit {refused.returncode}, {refused.stderr[-400:]}")

    # An ensemble of one run with itself (a copy of its folder): the mean is that run's map
    # and the members' disagreement is 0 everywhere.
    shutil.copytree(os.path.join(work, seed_runs[0]), os.path.join(work, "runs", "seed1-copy"))
    tinct(["map", map_config("same", f"runs: [{seed_runs[0]}, runs/seed1-copy]")], work)
    same_file = gdal.Open(os.path.join(work, "maps", "same", "b", "uncertainty.tif"))
    same = same_file.GetRasterBand(2).ReadAsArray()
    checks.check(np.nanmax(np.abs(same)) == 0.0, f"one run twice disagrees by {np.nanmax(np.abs(same))}")
    checks.check(np.abs(probabilities_of("same")[:, data] - probabilities_of("seed1")[:, data]).max() < 1e-6,
                 "one run twice differs from the run alone")

checks.finish()
