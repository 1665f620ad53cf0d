"""tinct label on bad input: each case exits with the documented code (2 usage or
config, 1 runtime), says what is wrong and where (file, key path, line or
feature), and leaves no store (nor a .partial folder) behind. Also --force,
--out and tinct check on a label config."""
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import ogr

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
GOOD_CSV = "id,e,n,habitat,visited\n1,500405,5299595,breeding,2023-06-02\n2,500605,5299395,dry,2023-06-03\n"


def config_text(labels, output="out.labels", extra=""):
    return f"""config: label
sensor: generic
output: {output}
inputs: [red, nir]
labels: {labels}
chips: {{size: 16}}
{extra}scenes:
  - {{path: scene.tif, bands: [red, nir], date: 2023-06-01}}
"""


CSV_LABELS = '{source: sites.csv, class: habitat, date: visited, x: e, y: n, crs: "EPSG:32632"}'


def run_label(work, text, *flags, name="label.yaml"):
    path = os.path.join(work, name)
    with open(path, "w") as f:
        f.write(text)
    return subprocess.run([TINCT, "label", path, *flags], capture_output=True, text=True, cwd=work)


def expect(work, label, run, code, *phrases, store="out.labels"):
    checks.check(run.returncode == code, f"{label}: exit {run.returncode}, expected {code}\n{run.stderr}")
    for phrase in phrases:
        checks.check(phrase in run.stderr, f"{label}: message lacks '{phrase}':\n{run.stderr}")
    leftovers = [n for n in os.listdir(work) if n.endswith(".partial")]
    checks.check(not leftovers, f"{label}: left {leftovers}")
    if code != 0 and store:
        checks.check(not os.path.exists(os.path.join(work, store)), f"{label}: a store was written")


def write_csv(work, text, name="sites.csv"):
    with open(os.path.join(work, name), "w") as f:
        f.write(text)


with tempfile.TemporaryDirectory() as work:
    t = texture(64, 64, seed=1)
    write(os.path.join(work, "scene.tif"), [(900 + 800 * t).astype(np.uint16), (1600 + 500 * t).astype(np.uint16)],
          nodata=0)

    # A shapefile without a .prj: no CRS.
    ds = ogr.GetDriverByName("ESRI Shapefile").CreateDataSource(os.path.join(work, "nocrs.shp"))
    layer = ds.CreateLayer("nocrs", None, ogr.wkbPoint)
    layer.CreateField(ogr.FieldDefn("habitat", ogr.OFTString))
    f = ogr.Feature(layer.GetLayerDefn())
    f.SetField("habitat", "breeding")
    point = ogr.Geometry(ogr.wkbPoint)
    point.AddPoint_2D(500405, 5299595)
    f.SetGeometry(point)
    layer.CreateFeature(f)
    ds = None
    expect(work, "vector without CRS", run_label(work, config_text("{source: nocrs.shp, class: habitat}")), 2,
           "nocrs.shp: layer nocrs has no CRS", "labels.crs", "ogr2ogr -a_srs")
    run = run_label(work, config_text('{source: nocrs.shp, class: habitat, crs: "EPSG:32632"}'))
    checks.check(run.returncode == 0, f"labels.crs assigns a CRS to a layer without one: {run.stderr}")
    checks.check(Store(os.path.join(work, "out.labels")).count == 1, "the shapefile's point gives one chip")
    shutil.rmtree(os.path.join(work, "out.labels"))

    write_csv(work, GOOD_CSV + "3,500505,5299495,breeding,2023-13-01\n")
    expect(work, "unparseable date", run_label(work, config_text(CSV_LABELS), "--force"), 1,
           "sites.csv line 4: visited holds \"2023-13-01\", not a date")
    write_csv(work, GOOD_CSV + "3,500505,5299495 m,breeding,2023-06-01\n")
    expect(work, "unparseable coordinate", run_label(work, config_text(CSV_LABELS), "--force"), 1,
           "sites.csv line 4: n holds \"5299495 m\", not a coordinate")

    write_csv(work, GOOD_CSV)
    expect(work, "CSV without coordinate keys",
           run_label(work, config_text("{source: sites.csv, class: habitat}"), "--force"), 2,
           "label.yaml: labels.x: required for a CSV source", "x: lon, y: lat, crs: EPSG:4326")
    write_csv(work, "id,habitat,visited\n1,breeding,2023-06-02\n", name="nocoords.csv")
    expect(work, "CSV without coordinate columns",
           run_label(work, config_text(CSV_LABELS.replace("sites.csv", "nocoords.csv")), "--force"), 2,
           "nocoords.csv: no column \"e\" (labels.x); its columns are id, habitat, visited")
    expect(work, "unknown key", run_label(work, config_text(CSV_LABELS, extra="match: {max_day: 30}\n"), "--force"),
           2, "match.max_day: unknown key; did you mean \"max_days\"?")
    expect(work, "raster key with a CSV",
           run_label(work, config_text(CSV_LABELS[:-1] + ", raster_rule: majority}"), "--force"), 2,
           "labels.raster_rule: only for a label raster")
    expect(work, "source and raster",
           run_label(work, config_text("{source: sites.csv, raster: scene.tif, class: habitat}"), "--force"), 2,
           "labels: give either source:")
    expect(work, "missing label file",
           run_label(work, config_text(CSV_LABELS.replace("sites.csv", "nope.csv")), "--force"), 2,
           "labels.source: file not found")

    # Every label dropped: no store, exit 1, the counts per reason, and the drop report.
    write_csv(work, "id,e,n,habitat,visited\n1,400000,5299595,dry,2023-06-02\n"
                    "2,500405,5299595,breeding,2024-06-02\n3,500405,5299595,other,2023-06-02\n")
    labels = '{source: sites.csv, class: habitat, classes: [breeding, dry], date: visited, x: e, y: n, crs: "EPSG:32632"}'
    run = run_label(work, config_text(labels, output="none.labels"))
    expect(work, "all labels dropped", run, 1, "no label gave a chip: of 3 labels", "1 class not in the list",
           "1 outside all scenes", "1 no scene within max_days", "none.labels.dropped.csv", store="none.labels")
    checks.check(os.path.exists(os.path.join(work, "none.labels.dropped.csv")), "the drop report is written anyway")
    write_csv(work, GOOD_CSV)
    run = run_label(work, config_text(CSV_LABELS, output="none.labels"))
    checks.check(run.returncode == 0 and os.path.exists(os.path.join(work, "none.labels", "dropped.csv")) and
                 not os.path.exists(os.path.join(work, "none.labels.dropped.csv")) and
                 "removed " in run.stderr, f"a later store holds its report and the stale one beside goes: {run.stderr}")
    shutil.rmtree(os.path.join(work, "none.labels"))

    # An existing store: refused without --force, untouched; replaced with it; --out elsewhere.
    write_csv(work, GOOD_CSV)
    text = config_text(CSV_LABELS)
    run = run_label(work, text, "--force")
    checks.check(run.returncode == 0, f"good labels: exit {run.returncode}: {run.stderr}")
    manifest = os.path.join(work, "out.labels", "manifest.yaml")
    before = os.path.getmtime(manifest)
    expect(work, "existing output", run_label(work, text), 2, "out.labels already exists", "--force", store=None)
    checks.check(os.path.getmtime(manifest) == before, "the existing store is untouched")
    checks.check(run_label(work, text, "--force").returncode == 0, "--force replaces the store")
    run = run_label(work, text, "--out", os.path.join(work, "elsewhere.labels"))
    checks.check(run.returncode == 0 and os.path.isdir(os.path.join(work, "elsewhere.labels")) and
                 os.path.exists(os.path.join(work, "elsewhere.labels", "dropped.csv")), "--out writes elsewhere, the drop report inside")

    check = subprocess.run([TINCT, "--quiet", "check", os.path.join(work, "label.yaml")], capture_output=True, text=True)
    checks.check(check.returncode == 0 and "min_valid: 0.9" in check.stdout and "max_days: 30" in check.stdout
                 and "polygon_chips: 4" in check.stdout,
                 f"tinct check prints the resolved label config:\n{check.stdout}{check.stderr}")

checks.finish()
