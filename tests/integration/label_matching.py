"""tinct label on generated scenes: each label takes the valid scene nearest in
date within max_days (ties: the earlier scene in the config), falls back to the
next scene when its pixel is masked there, and every label that gives no chip
is in the drop report with its reason: outside all scenes, masked (mask or
nodata), too few valid pixels, no scene within max_days, class not in the list.
Undated labels (labels.dates_unknown: true) take the first covering valid scene. Stored chips equal GDAL's
read of the chosen scene; chips.csv carries label, group and source id."""
import csv
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
SIZE = 16
X0, Y0, PIXEL = 500000.0, 5300000.0, 10.0
checks = Checks()

SCENES = [("a", "2023-06-01"), ("b", "2023-06-20"), ("c", "2023-08-15")]
# id, pixel col, row, class, date, site, expected scene or drop reason
LABELS = [
    ("L1", 30, 30, "breeding", "2023-06-18", "s1", "b"),                 # b 2 days, a 17
    ("L2", 50, 30, "breeding", "2023-06-18", "s1", "a"),                 # masked in b: next nearest, a
    ("L3", 70, 30, "non_breeding", "2023-08-10", "s3", "c"),
    ("L4", 90, 30, "non_breeding", "2023-07-10", "s4", "b"),             # b 20, c 36, a 39
    ("L5", 30, 60, "breeding", "2023-07-18", "s5", "b"),                 # b 28 = c 28: b comes first
    ("L6", -50, 30, "breeding", "2023-06-18", "s6", "outside all scenes"),
    ("L7", 3, 100, "breeding", "2023-06-18", "s7", "outside all scenes"),  # no full chip at the edge
    ("L8", 50, 60, "breeding", "2023-06-18", "s8", "masked"),            # cloud in every scene
    ("L9", 70, 60, "non_breeding", "2024-01-01", "s9", "no scene within max_days"),
    ("L10", 90, 60, "unknown", "2023-06-18", "s10", "class not in the list"),
    ("L11", 30, 90, "breeding", "2023-06-18", "s11", "too few valid pixels"),
    ("L12", 90, 90, "non_breeding", "2023-06-18", "s12", "masked"),     # nodata in every scene
]


def make_scenes(work):
    paths = []
    for n, (name, _) in enumerate(SCENES):
        t = texture(128, 128, seed=n)
        red = (1000 * (n + 1) + 500 * t).astype(np.uint16)
        nir = (1000 * (n + 1) + 300 + 400 * t).astype(np.uint16)
        red[90, 90] = 0  # nodata (L12's pixel)
        mask = np.zeros((128, 128), np.uint8)
        mask[58:63, 48:53] = 9          # L8's pixel, every scene
        mask[82:98, 22:28] = 9          # 96 of L11's 256 chip pixels, not its own
        if name == "b":
            mask[25:36, 45:56] = 9      # L2's pixel in scene b only
        scene = write(os.path.join(work, f"{name}.tif"), [red, nir], nodata=0)
        write(os.path.join(work, f"{name}-mask.tif"), [mask], dtype="uint8")
        paths.append(scene)
    return paths


def map_xy(col, row):
    return X0 + (col + 0.3) * PIXEL, Y0 - (row + 0.6) * PIXEL


def config_text(dated, output):
    scenes = "\n".join(f"  - {{path: {name}.tif, bands: [red, nir], date: {date}, "
                       f"mask: {{path: {name}-mask.tif, drop: [9]}}}}" for name, date in SCENES)
    date_key = ", date: visited" if dated else ", dates_unknown: true"  # scenes span more than max_days
    return f"""config: label
sensor: generic
output: {output}
inputs: [red, nir]
labels: {{source: sites.csv, class: habitat, classes: [breeding, non_breeding], group: site, id: record,
          x: easting, y: northing, crs: "EPSG:32632"{date_key}}}
match: {{max_days: 30}}
chips: {{size: {SIZE}, min_valid: 0.9}}
scenes:
{scenes}
"""


def run_label(work, text, name):
    path = os.path.join(work, name)
    with open(path, "w") as f:
        f.write(text)
    return subprocess.run([TINCT, "label", path], capture_output=True, text=True)


def read_drops(path):
    with open(path, newline="") as f:
        return {row["id"]: row for row in csv.DictReader(f)}


def check_chips(store, work, label):
    """Every chip equals GDAL's read of its scene, valid where no mask or nodata."""
    for i, chip in enumerate(store.chips):
        col, row = int(chip["col"]), int(chip["row"])
        ds = gdal.Open(os.path.join(work, chip["scene"] + ".tif"))
        bands = [ds.GetRasterBand(b).ReadAsArray(col, row, SIZE, SIZE) for b in (1, 2)]
        mask = gdal.Open(os.path.join(work, chip["scene"] + "-mask.tif")).ReadAsArray(col, row, SIZE, SIZE)
        valid = (mask != 9) & (bands[0] != 0) & (bands[1] != 0)
        checks.check(np.array_equal(store.valid[i], valid.astype(np.uint8)), f"{label} chip {i}: valid mask")
        for k in range(2):
            checks.check(np.array_equal(store.bands[i, k][valid], bands[k][valid]),
                         f"{label} chip {i} band {k} differs from GDAL's read of scene {chip['scene']}")


with tempfile.TemporaryDirectory() as work:
    make_scenes(work)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("record,easting,northing,habitat,visited,site\n")
        for lid, col, row, cls, date, site, _ in LABELS:
            x, y = map_xy(col, row)
            f.write(f"{lid},{x},{y},{cls},{date},{site}\n")

    run = run_label(work, config_text(True, "dated.labels"), "dated.yaml")
    print(run.stderr)
    checks.check(run.returncode == 0, f"dated run: exit {run.returncode}")
    if run.returncode != 0:
        checks.finish()
    store = Store(os.path.join(work, "dated.labels"))
    chips = {c["source_id"]: c for c in store.chips}
    drops = read_drops(os.path.join(work, "dated.labels", "dropped.csv"))
    for lid, col, row, cls, date, site, expected in LABELS:
        if len(expected) == 1:
            chip = chips.get(lid)
            checks.check(chip is not None and chip["scene"] == expected,
                         f"{lid} ({date}) should use scene {expected}, got {chip and chip['scene']}")
            if chip:
                checks.check((int(chip["col"]), int(chip["row"])) == (col - SIZE // 2, row - SIZE // 2),
                             f"{lid}: chip centred on its pixel")
                checks.check(chip["label"] == cls and chip["group"] == site, f"{lid}: label and group")
                checks.check(chip["date"] == dict(SCENES)[expected], f"{lid}: the scene's date")
            checks.check(lid not in drops, f"{lid} kept, yet in the drop report")
        else:
            checks.check(lid not in chips, f"{lid} should be dropped ({expected})")
            got = drops.get(lid, {}).get("reason")
            checks.check(got == expected, f"{lid}: drop reason {got!r}, expected {expected!r}")
            checks.check(drops.get(lid, {}).get("class") == cls, f"{lid}: drop report class")
    print("drop report:", *(f"  {d['id']}: {d['reason']}: {d['detail']}" for d in drops.values()), sep="\n")
    checks.check(len(drops) == 7, f"7 labels dropped, report has {len(drops)}")
    checks.check("139 days away" in drops["L9"]["detail"], "L9's detail names the nearest scene's distance")
    checks.check("0.625 valid" in drops["L11"]["detail"], f"L11's detail gives the valid share: {drops['L11']}")
    checks.check(store.manifest["classes"] == ["breeding", "non_breeding"], "the class list, in order")
    checks.check([s["id"] for s in store.manifest["scenes"]] == ["a", "b", "c"], "scenes used")
    checks.check("class breeding: 3 kept, 4 dropped" in run.stderr, "per-class summary: breeding")
    checks.check("class non_breeding: 2 kept, 2 dropped" in run.stderr, "per-class summary: non_breeding")
    checks.check("class unknown: 0 kept, 1 dropped" in run.stderr, "per-class summary: unlisted class")
    check_chips(store, work, "dated")

    # Without a date column (declared unknown) every label takes the first covering valid scene.
    run = run_label(work, config_text(False, "undated.labels"), "undated.yaml")
    checks.check(run.returncode == 0, f"undated run: exit {run.returncode}\n{run.stderr}")
    store = Store(os.path.join(work, "undated.labels"))
    scenes = {c["source_id"]: c["scene"] for c in store.chips}
    expected = {"L1": "a", "L2": "a", "L3": "a", "L4": "a", "L5": "a", "L9": "a"}
    checks.check(scenes == expected, f"undated labels use scene a: {scenes}")
    checks.check([s["id"] for s in store.manifest["scenes"]] == ["a"], "only scene a is listed as used")
    drops = read_drops(os.path.join(work, "undated.labels", "dropped.csv"))
    checks.check(all(d["reason"] != "no scene within max_days" for d in drops.values()), "no date drops")
    check_chips(store, work, "undated")

checks.finish()
