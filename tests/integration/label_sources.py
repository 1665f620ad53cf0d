"""tinct label from each kind of source on one generated scene: a GeoJSON of
points and a polygon (EPSG:4326), a GeoPackage layer of polygons and a point
with typed dates, a grouping column and an id column (EPSG:32632, picked by
layer name), and a label raster read by the centre and the majority rule.
Polygons give polygon_chips chips, each centred on a pixel inside the polygon,
grouped by the polygon's id (or the group column)."""
import csv
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal, ogr, osr

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
SIZE = 16
X0, Y0, PIXEL, N = 500000.0, 5300000.0, 10.0, 256
checks = Checks()

utm = osr.SpatialReference()
utm.ImportFromEPSG(32632)
wgs84 = osr.SpatialReference()
wgs84.ImportFromEPSG(4326)
for srs in (utm, wgs84):
    srs.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
to_lonlat = osr.CoordinateTransformation(utm, wgs84)


def xy(col, row):
    return X0 + (col + 0.5) * PIXEL, Y0 - (row + 0.5) * PIXEL


def square(col0, row0, col1, row1, srs_to=None):
    ring = ogr.Geometry(ogr.wkbLinearRing)
    for c, r in ((col0, row0), (col1, row0), (col1, row1), (col0, row1), (col0, row0)):
        ring.AddPoint_2D(X0 + c * PIXEL, Y0 - r * PIXEL)
    poly = ogr.Geometry(ogr.wkbPolygon)
    poly.AddGeometry(ring)
    if srs_to:
        poly.Transform(srs_to)
    return poly


def config(source_block, output):
    return f"""config: label
sensor: generic
output: {output}
inputs: [red, nir]
labels: {source_block}
chips: {{size: {SIZE}, min_valid: 0.9}}
scenes:
  - {{path: scene.tif, bands: [red, nir], date: 2023-06-01}}
"""


def run_label(work, text, name):
    path = os.path.join(work, name)
    with open(path, "w") as f:
        f.write(text)
    run = subprocess.run([TINCT, "label", path], capture_output=True, text=True)
    checks.check(run.returncode == 0, f"{name}: exit {run.returncode}\n{run.stderr}")
    return run


def drops_of(work, output):
    with open(os.path.join(work, output, "dropped.csv"), newline="") as f:
        return list(csv.DictReader(f))


def polygon_chips_inside(store, fid_or_id, polygon_utm, label):
    chips = [c for c in store.chips if c["source_id"] == fid_or_id]
    for c in chips:
        # chips.csv's x, y is the chip centre: the top-left corner of the label's pixel.
        centre = ogr.Geometry(ogr.wkbPoint)
        centre.AddPoint_2D(float(c["x"]) + PIXEL / 2, float(c["y"]) - PIXEL / 2)
        checks.check(polygon_utm.Distance(centre) <= PIXEL / 2 * 2 ** 0.5 + 1e-6,
                     f"{label}: chip at {c['col']},{c['row']} is not on a pixel of the polygon")
    return chips


with tempfile.TemporaryDirectory() as work:
    t = texture(N, N, seed=3)
    write(os.path.join(work, "scene.tif"), [(800 + 900 * t).astype(np.uint16), (1500 + 700 * t).astype(np.uint16)],
          origin=(X0, Y0), nodata=0)

    # ---- GeoJSON in EPSG:4326: two points and a polygon, no id or group column
    path = os.path.join(work, "sites.geojson")
    ds = ogr.GetDriverByName("GeoJSON").CreateDataSource(path)
    layer = ds.CreateLayer("sites", wgs84, ogr.wkbUnknown)
    layer.CreateField(ogr.FieldDefn("habitat", ogr.OFTString))
    for col, row, cls in ((40, 40, "breeding"), (200, 60, "non_breeding")):
        f = ogr.Feature(layer.GetLayerDefn())
        f.SetField("habitat", cls)
        lon, lat, _ = to_lonlat.TransformPoint(*xy(col, row))
        point = ogr.Geometry(ogr.wkbPoint)
        point.AddPoint_2D(lon, lat)
        f.SetGeometry(point)
        layer.CreateFeature(f)
    f = ogr.Feature(layer.GetLayerDefn())
    f.SetField("habitat", "breeding")
    f.SetGeometry(square(100, 100, 140, 130, to_lonlat))
    layer.CreateFeature(f)
    ds = None
    reread = ogr.Open(path)  # held while its layer is read (GDAL's Python bindings need that)
    fids = [f.GetFID() for f in reread.GetLayer(0)]
    reread = None

    run_label(work, config("{source: sites.geojson, class: habitat, polygon_chips: 4}", "geojson.labels"),
              "geojson.yaml")
    store = Store(os.path.join(work, "geojson.labels"))
    checks.check(store.count == 2 + 4, f"GeoJSON: 2 points + 4 polygon chips, got {store.count}")
    first = [c for c in store.chips if c["source_id"] == str(fids[0])]
    checks.check(len(first) == 1 and (int(first[0]["col"]), int(first[0]["row"])) == (32, 32),
                 f"GeoJSON point at pixel 40,40 gives the chip at 32,32: {first}")
    chips = polygon_chips_inside(store, str(fids[2]), square(100, 100, 140, 130), "GeoJSON polygon")
    checks.check(len(chips) == 4, f"GeoJSON polygon: 4 chips, got {len(chips)}")
    checks.check(all(c["group"] == str(fids[2]) and c["label"] == "breeding" for c in chips),
                 "polygon chips are grouped by the polygon's id")
    checks.check(store.manifest["classes"] == ["breeding", "non_breeding"], "sorted distinct classes by default")

    # ---- GeoPackage in EPSG:32632: layer "sites" after a decoy layer; typed dates, group and id columns
    path = os.path.join(work, "survey.gpkg")
    ds = ogr.GetDriverByName("GPKG").CreateDataSource(path)
    decoy = ds.CreateLayer("roads", utm, ogr.wkbLineString)
    layer = ds.CreateLayer("sites", utm, ogr.wkbUnknown)
    for name, kind in (("habitat", ogr.OFTString), ("site_id", ogr.OFTString), ("record", ogr.OFTString),
                       ("visited", ogr.OFTDate)):
        layer.CreateField(ogr.FieldDefn(name, kind))
    features = [("r-1", "S1", "breeding", square(20, 150, 60, 190)),
                ("r-2", "S1", "breeding", square(22, 152, 58, 188)),  # a second visit of site S1
                ("r-3", "S2", "non_breeding", None)]
    for record, site, cls, geometry in features:
        f = ogr.Feature(layer.GetLayerDefn())
        f.SetField("habitat", cls)
        f.SetField("site_id", site)
        f.SetField("record", record)
        f.SetField("visited", "2023/06/05")
        if geometry is None:
            geometry = ogr.Geometry(ogr.wkbPoint)
            geometry.AddPoint_2D(*xy(180, 180))
        f.SetGeometry(geometry)
        layer.CreateFeature(f)
    ds = None
    run = run_label(work, config("{source: survey.gpkg, layer: sites, class: habitat, group: site_id, id: record, "
                                 "date: visited, polygon_chips: 3}", "gpkg.labels"), "gpkg.yaml")
    store = Store(os.path.join(work, "gpkg.labels"))
    checks.check(store.count == 3 + 3 + 1, f"GeoPackage: 2 polygons x 3 + 1 point, got {store.count}")
    for record, site, cls, geometry in features:
        chips = [c for c in store.chips if c["source_id"] == record]
        expected = 3 if geometry else 1
        checks.check(len(chips) == expected, f"GeoPackage {record}: {len(chips)} chips, expected {expected}")
        checks.check(all(c["group"] == site and c["label"] == cls for c in chips), f"GeoPackage {record}: group {site}")
        if geometry:
            polygon_chips_inside(store, record, geometry, f"GeoPackage {record}")
    checks.check(not drops_of(work, "gpkg.labels"), "GeoPackage: nothing dropped")

    # ---- a label raster on the scene's grid: 16 x 16 windows, values 1, 2, 3 and nodata 0
    labels = np.zeros((N, N), np.uint8)
    labels[0:64, 0:32] = 1
    labels[0:64, 32:64] = 2
    labels[22:28, 22:28] = 3     # window (16, 16): its centre pixel (24, 24) is 3, 86 % of it is 1
    labels[16:32, 32:38] = 1     # window (32, 16): 1 37.5 %, 2 31.25 %, 3 31.25 %: no majority
    labels[16:32, 38:43] = 2
    labels[16:32, 43:48] = 3
    labels[0:8, 48:64] = 0       # window (48, 0): half nodata, 2 covers exactly 0.5
    write(os.path.join(work, "classes.tif"), [labels], origin=(X0, Y0), dtype="uint8", nodata=0)
    names = {1: "breeding", 2: "non_breeding", 3: "water"}

    def expected_raster_labels(rule):
        kept, dropped = {}, set()
        for wr in range(0, N, SIZE):
            for wc in range(0, N, SIZE):
                window = labels[wr:wr + SIZE, wc:wc + SIZE]
                centre = int(window[SIZE // 2, SIZE // 2])
                if rule == "centre":
                    if centre:
                        kept[(wc, wr)] = names[centre]
                    continue
                values, counts = np.unique(window[window > 0], return_counts=True)
                if values.size == 0:
                    continue
                best = int(values[np.argmax(counts)])  # argmax: the first (smallest) of tied values
                if counts.max() / window.size >= 0.5:
                    kept[(wc, wr)] = names[best]
                else:
                    dropped.add(f"c{wc + SIZE // 2}r{wr + SIZE // 2}")
        return kept, dropped

    for rule in ("centre", "majority"):
        output = f"raster-{rule}.labels"
        run_label(work, config(f"{{raster: classes.tif, raster_rule: {rule}, min_share: 0.5, "
                               "raster_classes: {1: breeding, 2: non_breeding, 3: water}}", output),
                  f"raster-{rule}.yaml")
        store = Store(os.path.join(work, output))
        got = {(int(c["col"]), int(c["row"])): c["label"] for c in store.chips}
        kept, dropped = expected_raster_labels(rule)
        checks.check(got == kept, f"label raster ({rule}): chips {sorted(got.items())} vs {sorted(kept.items())}")
        drops = drops_of(work, output)
        checks.check({d["id"] for d in drops} == dropped and all(d["reason"] == "no majority class" for d in drops),
                     f"label raster ({rule}): drops {drops}, expected {dropped}")
        checks.check(store.manifest["classes"] == ["breeding", "non_breeding", "water"],
                     f"raster_classes give the class list: {store.manifest['classes']}")
        print(f"label raster, {rule}: {store.count} chips, {len(drops)} dropped")
    _, majority_drops = expected_raster_labels("majority")
    checks.check(expected_raster_labels("centre")[0][(16, 16)] == "water" and
                 expected_raster_labels("majority")[0][(16, 16)] == "breeding" and
                 majority_drops == {"c40r24"} and expected_raster_labels("majority")[0][(48, 0)] == "non_breeding",
                 "the fixture exercises centre vs majority, no majority, and a share of exactly min_share")

checks.finish()
