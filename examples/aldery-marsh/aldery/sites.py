"""The invented field data of Aldery: trap sites visited one to three times between
April and August and labelled breeding / non_breeding by habitat_rule (then some
labels flipped, as traps fail and larvae turn up in unmapped containers); and land-
cover reference points, each pure over 35 m, dated within a summer campaign, with a
few points misnamed. Written as GeoJSON points in WGS 84 longitude/latitude."""
import datetime

import numpy as np
from osgeo import ogr, osr

from . import habitat_rule, rasters, scenario
from .ground import CLASSES, OPEN_WATER, PASTURE, REED_MARSH, RICE, WOODLAND

MARGIN = 200.0        # metres from the district's edge: a 320 m chip around a site stays inside
SITE_SPACING = 200.0  # metres between trap sites
POINT_SPACING = 120.0
MISSED = 0.10         # breeding recorded as non_breeding (trap failed, larvae missed)
SPURIOUS = 0.04       # non_breeding recorded as breeding (a container nobody mapped)
MISNAMED = 0.04       # land-cover points given a neighbouring class
CONFUSED = {"open_water": "reed_marsh", "reed_marsh": "pasture", "rice": "cropland", "pasture": "cropland",
            "cropland": "pasture", "woodland": "pasture", "settlement": "cropland"}


def _date(day):
    return (datetime.date(scenario.YEAR, 1, 1) + datetime.timedelta(days=int(day) - 1)).isoformat()


def _pick(rng, ground, candidates, count, spacing, taken):
    """Random cells of `candidates` (flat indices), `spacing` apart from each other and from `taken`."""
    chosen = []
    for c in rng.permutation(candidates)[: 200 * count]:
        if len(chosen) == count:
            break
        x, y = float(ground.x.flat[c]), float(ground.y.flat[c])
        if all((x - a) ** 2 + (y - b) ** 2 >= spacing ** 2 for a, b in taken):
            taken.append((x, y))
            jitter = rng.uniform(-scenario.CELL / 2, scenario.CELL / 2, 2)
            chosen.append((x + jitter[0], y + jitter[1], c))
    return chosen


def _inside(ground):
    edge = ground.shape[0] * scenario.CELL - MARGIN
    return (ground.x > MARGIN) & (ground.x < edge) & (-ground.y > MARGIN) & (-ground.y < edge)


def habitat_visits(ground, rng, size):
    """Rows (site, visit, date, habitat, x, y, rule area, true habitat)."""
    cls, e = ground.cls, ground.elevation
    inside = _inside(ground)
    wet = np.isin(cls, (REED_MARSH, RICE)) | ((cls == PASTURE) & (e < 1.0)) | ((cls == WOODLAND) & (e < 0.8))
    land = inside & (cls != OPEN_WATER)
    # The survey puts half its traps in the wetlands and half anywhere else on land.
    taken = []
    half = size.habitat_sites // 2
    sites = _pick(rng, ground, np.flatnonzero((land & wet).ravel()), half, SITE_SPACING, taken)
    sites += _pick(rng, ground, np.flatnonzero((land & ~wet).ravel()), size.habitat_sites - half, SITE_SPACING, taken)
    rows = []
    for number, (x, y, _) in enumerate(sites, 1):
        site = f"AL-{number:03d}"
        visits = rng.choice([1, 2, 3], p=[0.3, 0.45, 0.25])
        while True:
            days = np.sort(rng.integers(*scenario.VISIT_SEASON, visits))
            if visits == 1 or np.diff(days).min() >= 20:
                break
        for day in days:
            area, breeding = habitat_rule.site_state(ground, x, y, day)
            flip = rng.uniform() < (MISSED if breeding else SPURIOUS)
            recorded = breeding != flip
            date = _date(day)
            rows.append({"site": site, "visit": f"{site}/{date}", "date": date,
                         "habitat": "breeding" if recorded else "non_breeding", "x": x, "y": y,
                         "water_m2": round(area, 1), "rule": "breeding" if breeding else "non_breeding"})
    return rows


def landcover_points(ground, rng, size):
    """Rows (point, date, cover, x, y, true cover): `landcover_per_class` pure points per class."""
    cls = ground.cls
    h, w = cls.shape
    r = 3  # 7 x 7 cells, 35 m
    pure = np.ones(cls.shape, bool)
    padded = np.pad(cls, r, mode="edge")
    for dr in range(-r, r + 1):
        for dc in range(-r, r + 1):
            pure &= padded[r + dr:r + dr + h, r + dc:r + dc + w] == cls
    clean = (ground.hedge + ground.ditch + ground.track + ground.road) < 0.1
    ok = pure & clean & _inside(ground)
    rows, taken = [], []
    for k, name in enumerate(CLASSES):
        for x, y, _ in _pick(rng, ground, np.flatnonzero((ok & (cls == k)).ravel()), size.landcover_per_class,
                             POINT_SPACING, taken):
            recorded = CONFUSED[name] if rng.uniform() < MISNAMED else name
            rows.append({"date": _date(rng.integers(*scenario.LANDCOVER_SEASON)), "cover": recorded,
                         "x": x, "y": y, "truth": name})
    order = rng.permutation(len(rows))
    rows = [rows[i] for i in order]
    for number, row in enumerate(rows, 1):
        row["point"] = f"LC-{number:03d}"
    return rows


def write_geojson(path, rows, fields, layer_name):
    """Points in WGS 84 longitude/latitude (RFC 7946), with the named text fields."""
    x0, y0 = scenario.ORIGIN
    to_wgs84 = osr.CoordinateTransformation(rasters.srs(scenario.EPSG), rasters.srs(4326))
    ds = ogr.GetDriverByName("GeoJSON").CreateDataSource(str(path))
    layer = ds.CreateLayer(layer_name, rasters.srs(4326), ogr.wkbPoint,
                           ["RFC7946=YES", "COORDINATE_PRECISION=7"])
    for field in fields:
        layer.CreateField(ogr.FieldDefn(field, ogr.OFTString))
    for row in rows:
        lon, lat, _ = to_wgs84.TransformPoint(x0 + row["x"], y0 + row["y"])
        feature = ogr.Feature(layer.GetLayerDefn())
        for field in fields:
            feature.SetField(field, row[field])
        point = ogr.Geometry(ogr.wkbPoint)
        point.AddPoint_2D(lon, lat)
        feature.SetGeometry(point)
        layer.CreateFeature(feature)
    ds = None


def write_csv(path, rows, fields):
    with open(path, "w") as f:
        f.write(",".join(fields) + "\n")
        for row in rows:
            f.write(",".join(("%.2f" % row[k]) if isinstance(row[k], float) else str(row[k]) for k in fields) + "\n")
