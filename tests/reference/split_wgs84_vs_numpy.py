"""Splits and budgets of `tinct finetune`, checked from the outside on a label store in
WGS 84 (EPSG:4326) that straddles Greenwich, so half the longitudes are negative:
- every chip's block in split.csv is numpy.floor(x / block_size), numpy.floor(y / block_size)
  (numpy floors towards minus infinity, where a truncating cast would put -0.01 in block 0);
- the buffer holds between training, validation and test: minimum distances by
  scipy.spatial.distance.cdist are at least split.buffer, and every chip left unused for the
  buffer has a chip of that side closer than it;
- over the folds the test sets partition the chips and no block is on two sides of a fold
  (the semantics of scikit-learn's GroupKFold with the blocks as groups);
- the budget: exactly per_class labels of each class for training plus validation, each
  class on both sides, and the run read no more labelled chips than that (its log);
- split.seed alone sets the test set: another train.seed gives the same split.csv and test chips;
- predictions.csv names the CRS and gives longitude and latitude;
- assess on the run's own store scores its test chips only, --all scores all and says so;
- a split whose training side holds one class is refused (exit 2, naming side and fold).
The store is written with numpy as data_prep/chips/FORMAT.md lays it out (invented data)."""
import csv
import os
import re
import subprocess
import sys
import tempfile
from collections import Counter

import numpy as np
import yaml
from osgeo import osr
from scipy.spatial.distance import cdist

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
SIZE, BLOCK, BUFFER, PER_CLASS, FOLDS = 16, 0.05, 0.012, 6, 3


def tinct(work, *args):
    run = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=work)
    if run.returncode:
        print(run.stderr[-2000:])
    return run


def write_store(path, points, classes):
    """A label store of 16 x 16 chips, 2 uint16 bands whose level follows the class."""
    os.makedirs(path)
    wgs84 = osr.SpatialReference()
    wgs84.ImportFromEPSG(4326)
    wkt = wgs84.ExportToWkt()
    rng = np.random.default_rng(3)
    bands = np.empty((len(points), 2, SIZE, SIZE), dtype="<u2")
    for i, (_, _, label) in enumerate(points):
        level = 1500 + 1200 * classes.index(label)
        bands[i] = (level + rng.normal(0, 150, size=(2, SIZE, SIZE))).clip(1, 60000)
    bands.tofile(os.path.join(path, "bands.bin"))
    np.ones((len(points), SIZE, SIZE), dtype="u1").tofile(os.path.join(path, "valid.bin"))
    with open(os.path.join(path, "chips.csv"), "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(["index", "scene", "col", "row", "x", "y", "date", "valid_fraction", "block", "label", "group",
                    "source_id"])
        for i, (x, y, label) in enumerate(points):
            w.writerow([i, "s", 0, 0, repr(x), repr(y), "2026-05-05", 1, "0_0", label, f"g{i}", f"p{i}"])
    reflectance = bands.astype(np.float64) * 1e-4
    statistics = {}
    for b, name in enumerate(("nir", "swir")):
        v = reflectance[:, b].ravel()
        statistics[name] = {"count": int(v.size), "mean": float(v.mean()), "std": float(v.std()),
                            "p02": float(np.percentile(v, 2)), "p98": float(np.percentile(v, 98))}
    manifest = {"format_version": 1, "kind": "labels", "chip_size": SIZE,
                "bands": [{"name": n, "storage": "uint16", "scale": 1e-4, "offset": 0} for n in ("nir", "swir")],
                "colour_encoding": "none", "crs": wkt, "pixel_size": 0.0001, "chip_count": len(points),
                "statistics": statistics, "classes": classes,
                "scenes": [{"id": "s", "path": "scene.tif", "date": "2026-05-05", "crs": wkt, "notes": {}}],
                "config_hash": "test", "tinct_version": "test"}
    with open(os.path.join(path, "manifest.yaml"), "w") as f:
        yaml.safe_dump(manifest, f, sort_keys=False)


def config(work, name, fold, train_seed=1, store="wgs84.labels", budget=f"{{per_class: {PER_CLASS}}}"):
    with open(os.path.join(work, f"{name}.yaml"), "w") as f:
        f.write(f"""config: finetune
stores: [{store}]
output: runs/{name}
init: {{from: scratch, model: {{encoder: compact, width: 0.5}}}}
budget: {budget}
split: {{method: blocks, block_size: {BLOCK}, folds: {FOLDS}, fold: {fold}, buffer: {BUFFER},
         validation_fraction: 0.25, seed: 5}}
train: {{epochs: 2, batch: 4, lr: 0.003, seed: {train_seed}}}
""")
    return f"{name}.yaml"


def read_rows(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def coords(rows):
    return np.array([[float(r["x"]), float(r["y"])] for r in rows]).reshape(-1, 2)


def min_distance(a, b):
    return cdist(coords(a), coords(b)).min() if a and b else np.inf


with tempfile.TemporaryDirectory() as work:
    # A jittered grid from 0.3 degrees west to 0.1 east of Greenwich; classes in a checker of 0.02 degrees.
    rng = np.random.default_rng(8)
    points = []
    for lat in np.arange(51.405, 51.60, 0.01):
        for lon in np.arange(-0.295, 0.10, 0.01):
            x, y = float(lon + rng.uniform(-0.003, 0.003)), float(lat + rng.uniform(-0.003, 0.003))
            points.append((x, y, "reed" if (np.floor(x / 0.02) + np.floor(y / 0.02)) % 2 else "water"))
    write_store(os.path.join(work, "wgs84.labels"), points, ["reed", "water"])
    checks.check(sum(p[0] < 0 for p in points) > len(points) // 2, "most chips lie west of Greenwich")

    tested = Counter()
    for fold in range(FOLDS):
        run = tinct(work, "finetune", config(work, f"fold{fold}", fold))
        checks.check(run.returncode == 0, f"fold {fold}: finetune exits 0 ({run.returncode})")
        if run.returncode:
            checks.finish()
        rows = read_rows(os.path.join(work, "runs", f"fold{fold}", "split.csv"))
        checks.check(len(rows) == len(points), f"fold {fold}: split.csv lists every chip")
        floored = [f"{int(np.floor(float(r['x']) / BLOCK))}_{int(np.floor(float(r['y']) / BLOCK))}" for r in rows]
        checks.check([r["unit"] for r in rows] == floored, f"fold {fold}: blocks are numpy.floor of x, y / block_size")
        side = {role: [r for r in rows if r["role"] == role] for role in ("train", "validation", "test", "unused")}
        for a, b in (("train", "test"), ("validation", "test"), ("train", "validation")):
            d = min_distance(side[a], side[b])
            checks.check(d >= BUFFER, f"fold {fold}: {a} to {b} at least the buffer apart ({d:.5f})")
        for reason, other in (("near_test", "test"), ("near_validation", "validation")):
            dropped = [r for r in side["unused"] if r["reason"] == reason]
            checks.check(all(min_distance([r], side[other]) < BUFFER for r in dropped),
                         f"fold {fold}: every {reason} chip lies within the buffer of a {other} chip")
        checks.check(any(r["reason"] == "near_test" for r in side["unused"]), f"fold {fold}: the buffer dropped chips")
        units = {role: {r["unit"] for r in side[role]} for role in ("train", "validation", "test")}
        checks.check(not units["test"] & (units["train"] | units["validation"]) and
                     not units["train"] & units["validation"], f"fold {fold}: no block on two sides")
        checks.check({int(r["fold"]) for r in side["test"]} == {fold}, f"fold {fold}: test rows are of fold {fold}")
        # The budget's labels: training, validation, and training chips the buffer then took from them.
        drawn = side["train"] + side["validation"] + [r for r in side["unused"] if r["reason"] == "near_validation"]
        labelled = Counter(r["class"] for r in drawn)
        checks.check(labelled == Counter({"reed": PER_CLASS, "water": PER_CLASS}),
                     f"fold {fold}: {PER_CLASS} labels drawn per class for training plus validation ({dict(labelled)})")
        for role in ("train", "validation"):
            checks.check(len({r["class"] for r in side[role]}) == 2, f"fold {fold}: both classes in {role}")
        log = open(os.path.join(work, "runs", f"fold{fold}", "log.txt")).read()
        read = re.search(r"(\d+) labelled chips read for training and validation", log)
        checks.check(read is not None and int(read.group(1)) <= 2 * PER_CLASS,
                     f"fold {fold}: the run read at most {2 * PER_CLASS} labelled chips ({read and read.group(1)})")
        tested.update(r["source_id"] for r in side["test"])
    checks.check(len(tested) == len(points) and set(tested.values()) == {1},
                 "over the folds every chip is tested exactly once (GroupKFold semantics)")

    # Another training seed: the same split.csv and test chips.
    run = tinct(work, "finetune", config(work, "reseeded", 0, train_seed=2))
    checks.check(run.returncode == 0, "finetune with another train.seed runs")
    first = open(os.path.join(work, "runs", "fold0", "split.csv")).read()
    checks.check(open(os.path.join(work, "runs", "reseeded", "split.csv")).read() == first,
                 "split.csv identical across training seeds")
    predictions = read_rows(os.path.join(work, "runs", "fold0", "predictions.csv"))
    reseeded = read_rows(os.path.join(work, "runs", "reseeded", "predictions.csv"))
    checks.check([r["id"] for r in predictions] == [r["id"] for r in reseeded], "test chips identical across seeds")

    # predictions.csv: the CRS named, longitude and latitude (in WGS 84 they are x and y).
    by_id = {f"p{i}": p for i, p in enumerate(points)}
    checks.check(all(r["crs"] == "EPSG:4326" for r in predictions), "predictions.csv names the CRS EPSG:4326")
    checks.check(all(float(r["x"]) == by_id[r["id"]][0] and float(r["y"]) == by_id[r["id"]][1] for r in predictions),
                 "predictions.csv x, y are the chip centres to the last bit")
    checks.check(all(abs(float(r["lon"]) - float(r["x"])) < 1e-7 and abs(float(r["lat"]) - float(r["y"])) < 1e-7
                     for r in predictions), "lon, lat equal x, y in WGS 84")
    checks.check(all(re.fullmatch(r"\d\.\d{6}", r["p_reed"]) for r in predictions), "probabilities with 6 decimals")

    # assess on the run's own store: its test chips only; --all: everything, said loudly.
    test_count = sum(r["role"] == "test" for r in read_rows(os.path.join(work, "runs", "fold0", "split.csv")))
    run = tinct(work, "assess", "runs/fold0", "--on", "wgs84.labels", "--out", "own")
    checks.check(run.returncode == 0 and len(read_rows(os.path.join(work, "own", "predictions.csv"))) == test_count,
                 f"assess on the run's own store scores its {test_count} test chips only")
    run = tinct(work, "assess", "runs/fold0", "--on", "wgs84.labels", "--out", "everything", "--all")
    checks.check(run.returncode == 0 and len(read_rows(os.path.join(work, "everything", "predictions.csv"))) ==
                 len(points), "assess --all scores every chip")
    checks.check("OPTIMISTIC" in run.stderr and "training" in run.stderr, "assess --all says it includes training chips")

    # One class on the training side: refused, naming the side and the fold.
    # "water" in one block only: in the fold that tests it, training lacks it; in the others,
    # validation cannot have it without taking all of training's.
    lopsided = [(x, y, "water" if x > 0.05 and y > 51.55 else "reed") for x, y, _ in points]
    write_store(os.path.join(work, "lopsided.labels"), lopsided, ["reed", "water"])
    refusals = [tinct(work, "finetune", config(work, f"lop{fold}", fold, store="lopsided.labels", budget="all"))
                for fold in range(FOLDS)]
    refused = [r for r in refusals if r.returncode]
    checks.check(len(refused) == FOLDS, f"every fold is refused ({len(refused)} of {FOLDS})")
    checks.check(all(r.returncode == 2 and re.search(r"the \w+ split of fold \d holds one class only", r.stderr)
                     for r in refused), "refusals exit 2 naming the split and the fold")
    checks.check(all("macro F1 1.000" not in r.stderr for r in refusals), "never a perfect score from one class")

checks.finish()
