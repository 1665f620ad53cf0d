"""tinct label -> finetune -> assess end to end on generated data with a learnable
rule (class = the land cover under the site: wet ground has low NIR and SWIR).
Fine-tuning beats chance (macro F1 0.5 for two classes) clearly, with a frozen
encoder (linear probe) and with full fine-tuning; a scratch run and a pretrained run
differ only in their init; assess on a store of the run's own test chips reproduces
the run's test metrics (metrics.json) and predictions, and so does assess on the run's own
store (it scores the test chips only; --all scores all, with a warning); predictions.csv's
lon, lat equal GDAL osr's transform of x, y; the metrics in metrics.json equal scikit-learn's
(Debian python3-sklearn 1.2) on predictions.csv; the label store holds label's log.txt with its per-class
counts; an encoder whose bands differ from the store's is refused. Those runs name their
head (the trained global head); a pretrained run that names none gets the default, the
colour + bands linear probe, says so in run.yaml and log.txt, and beats chance too."""
import csv
import hashlib
import json
import os
import subprocess
import sys
import tempfile
from collections import Counter

import numpy as np
import yaml
from osgeo import osr
from sklearn.metrics import cohen_kappa_score, f1_score

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write, write_profile  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
SIZE, ORIGIN, PIXEL = 384, (500000.0, 5300000.0), 10.0


def tinct(work, *args):
    # One thread: ctest runs two tests at once on two cores.
    run = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=work)
    if run.returncode:
        print(run.stderr)
    return run


def subset_store(source, target, ids):
    """A copy of label store `source` holding only the chips whose source_id is in `ids`,
    written with numpy as data_prep/chips/FORMAT.md lays a store out."""
    manifest = yaml.safe_load(open(os.path.join(source, "manifest.yaml")))
    with open(os.path.join(source, "chips.csv"), newline="") as f:
        reader = csv.DictReader(f)
        fields, chips = reader.fieldnames, list(reader)
    keep = [i for i, chip in enumerate(chips) if chip["source_id"] in ids]
    count, size, nbands = len(chips), manifest["chip_size"], len(manifest["bands"])
    os.makedirs(target)
    dtype = "<u2" if manifest["bands"][0]["storage"] == "uint16" else "<f4"
    for name, shape, kind in (("bands.bin", (nbands, size, size), dtype), ("valid.bin", (size, size), "u1"),
                              ("colour.bin", (3, size, size), "u1")):
        path = os.path.join(source, name)
        if os.path.exists(path):
            values = np.fromfile(path, dtype=kind).reshape((count, *shape))
            values[keep].tofile(os.path.join(target, name))
    with open(os.path.join(target, "chips.csv"), "w", newline="") as f:
        writer = csv.DictWriter(f, fieldnames=fields, lineterminator="\n")
        writer.writeheader()
        for index, i in enumerate(keep):
            writer.writerow({**chips[i], "index": str(index)})
    manifest["chip_count"] = len(keep)
    if "checksums" in manifest:  # FORMAT.md: the SHA-256 of each data file
        manifest["checksums"] = {name: hashlib.sha256(open(os.path.join(target, name), "rb").read()).hexdigest()
                                 for name in manifest["checksums"]}
    with open(os.path.join(target, "manifest.yaml"), "w") as f:
        yaml.safe_dump(manifest, f, sort_keys=False)
    return len(keep)


def finetune_config(work, name, init, freeze="full", stores="sites.labels", head="head: {pool: global, kind: trained}\n"):
    with open(os.path.join(work, f"{name}.yaml"), "w") as f:
        f.write(f"""config: finetune
stores: [{stores}]
output: runs/{name}
init: {init}
{head}freeze: {{policy: {freeze}}}
split: {{method: blocks, block_size: 640, folds: 4, fold: 1, buffer: 0}}
train: {{epochs: 25, batch: 16, lr: 0.003, seed: 3, patience: 8}}
""")
    return f"{name}.yaml"


with tempfile.TemporaryDirectory() as work:
    write_profile(work, "test-five")
    wet = texture(SIZE, SIZE, seed=21, scale=10.0) > 0.5
    detail = texture(SIZE, SIZE, seed=22, scale=2.0)
    base = [600, 700, 800, 3000, 2500]
    drop = [100, 100, 300, 2400, 2200]  # wet ground: much lower NIR and SWIR
    bands = [(b - d * wet + 400 * detail).astype(np.uint16) for b, d in zip(base, drop)]
    write(os.path.join(work, "scene.tif"), bands, origin=ORIGIN, nodata=0)

    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write("""config: pair
sensor: test-five.yaml
output: scene.pairs
inputs: [nir, swir]
colour: {bands: [red, green, blue]}
chips: {size: 16, stride: 8, block_size: 640}
scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]
""")
    with open(os.path.join(work, "pretrain.yaml"), "w") as f:
        f.write("""config: pretrain
stores: [scene.pairs]
output: runs/pre
model: {encoder: compact, width: 0.5}
train: {steps: 40, batch: 16, lr: 0.003, warmup: 4, seed: 2}
validation: {every: 40, chips: 32, previews: 0}
""")
    # Sites on a jittered grid; the class is the cover under the site.
    rng = np.random.default_rng(5)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("site,x,y,cover,visited\n")
        n = 0
        for row in range(12, SIZE - 12, 14):
            for col in range(12, SIZE - 12, 14):
                r, c = row + rng.integers(-3, 4), col + rng.integers(-3, 4)
                window = wet[r - 4:r + 4, c - 4:c + 4]
                if 0.1 < window.mean() < 0.9:
                    continue  # mixed ground: not a clean field label
                x, y = ORIGIN[0] + (c + 0.5) * PIXEL, ORIGIN[1] - (r + 0.5) * PIXEL
                f.write(f"s{n},{x},{y},{'wet' if window.mean() >= 0.9 else 'dry'},2026-05-0{1 + n % 9}\n")
                n += 1
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write("""config: label
sensor: test-five.yaml
output: sites.labels
inputs: [nir, swir]
scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]
labels: {source: sites.csv, class: cover, x: x, y: y, crs: EPSG:32632, date: visited, id: site, classes: [dry, wet]}
match: {max_days: 30}
chips: {size: 16, min_valid: 0.9, block_size: 640}
""")
    with open(os.path.join(work, "label-reversed.yaml"), "w") as f:
        f.write(open(os.path.join(work, "label.yaml")).read().replace("inputs: [nir, swir]", "inputs: [swir, nir]")
                .replace("output: sites.labels", "output: reversed.labels"))
    for args in (["pair", "pair.yaml"], ["pretrain", "pretrain.yaml"], ["label", "label.yaml"],
                 ["label", "label-reversed.yaml"]):
        run = tinct(work, *args)
        checks.check(run.returncode == 0, f"tinct {args[0]} {args[1]}: exit {run.returncode}")
        if run.returncode:
            checks.finish()

    # label's own log.txt inside the store: what it logged, with the per-class counts of chips.csv.
    store_log = open(os.path.join(work, "sites.labels", "log.txt")).read()
    with open(os.path.join(work, "sites.labels", "chips.csv")) as f:
        per_class = Counter(r["label"] for r in csv.DictReader(f))
    for name in ("dry", "wet"):
        checks.check(f"class {name}: {per_class[name]} kept" in store_log,
                     f"the store's log.txt gives {per_class[name]} {name} chips")

    runs = {
        "probe": finetune_config(work, "probe", "{from: pretrain, run: runs/pre}", freeze="frozen"),
        "full": finetune_config(work, "full", "{from: pretrain, run: runs/pre}"),
        "scratch": finetune_config(work, "scratch", "{from: scratch, run: runs/pre}"),
    }
    for name, config in runs.items():
        run = tinct(work, "finetune", config)
        checks.check(run.returncode == 0, f"finetune {name}: exit {run.returncode}")
        if run.returncode:
            continue
        folder = os.path.join(work, "runs", name)
        metrics = json.load(open(os.path.join(folder, "metrics.json")))
        print(f"{name}: test macro F1 {metrics['macro_f1']:.3f}, kappa {metrics['kappa']:.3f}")
        checks.check(metrics["macro_f1"] > 0.75, f"{name}: macro F1 {metrics['macro_f1']:.3f} not clearly above chance")
        with open(os.path.join(folder, "predictions.csv")) as f:
            rows = list(csv.DictReader(f))
        truth = [r["true"] for r in rows]
        predicted = [r["predicted"] for r in rows]
        checks.check(abs(f1_score(truth, predicted, average="macro", labels=["dry", "wet"], zero_division=0) -
                         metrics["macro_f1"]) < 1e-9, f"{name}: macro F1 equals scikit-learn's on predictions.csv")
        checks.check(abs(cohen_kappa_score(truth, predicted, labels=["dry", "wet"]) - metrics["kappa"]) < 1e-9,
                     f"{name}: kappa equals scikit-learn's")
        for file in ("confusion.csv", "metrics.csv", "model.pt", "config.resolved.yaml", "run.yaml"):
            checks.check(os.path.exists(os.path.join(folder, file)), f"{name}: run holds {file}")

    # No head: section: the default for a pretrain run whose decoder predicts Lab.
    run = tinct(work, "finetune", finetune_config(work, "default", "{from: pretrain, run: runs/pre}", head=""))
    checks.check(run.returncode == 0, f"finetune with the default head: exit {run.returncode}")
    if run.returncode == 0:
        folder = os.path.join(work, "runs", "default")
        head = yaml.safe_load(open(os.path.join(folder, "run.yaml")))["head"]
        checks.check(head["pool"] == "colour" and head["kind"] == "linear_probe" and head["input_bands"] is True and
                     head["chosen_by"] == "default" and "predicts Lab" in head["reason"],
                     f"run.yaml records the default head and why: {head}")
        checks.check("head: default {pool: colour, kind: linear_probe, input_bands: true} because" in run.stderr,
                     "the run says which default head it took, and why")
        resolved = yaml.safe_load(open(os.path.join(folder, "config.resolved.yaml")))["head"]
        checks.check(resolved.get("pool") == "colour" and resolved.get("kind") == "linear_probe",
                     f"config.resolved.yaml names the head: {resolved}")
        metrics = json.load(open(os.path.join(folder, "metrics.json")))
        print(f"default head: test macro F1 {metrics['macro_f1']:.3f}")
        checks.check(metrics["macro_f1"] > 0.75, f"default head: macro F1 {metrics['macro_f1']:.3f} not clearly above chance")
    # The default head's run maps (exact: each window read out at its centre pixel, as a chip
    # at its label): the uncalibrated map (aoa: false) at every label chip's place through
    # --points gives tinct assess's probabilities; dense mode is refused, naming the head.
    assessed = tinct(work, "assess", "runs/default", "--on", "sites.labels", "--all", "--out", "assess-default")
    checks.check(assessed.returncode == 0, f"assess of the default head's run: exit {assessed.returncode}")
    with open(os.path.join(work, "map-default.yaml"), "w") as f:
        f.write("config: map\nrun: runs/default\noutput: maps/default\naoa: false\nprobabilities: float32\n"
                "sensor: test-five.yaml\nscenes: [{id: s, path: scene.tif, bands: [blue, green, red, nir, swir], "
                "date: 2026-05-05}]\n")
    if assessed.returncode == 0:
        rows = list(csv.DictReader(open(os.path.join(work, "assess-default", "predictions.csv"))))
        with open(os.path.join(work, "chip-points.csv"), "w") as f:
            f.write("id,x,y\n" + "".join(f"c{i},{r['x']},{r['y']}\n" for i, r in enumerate(rows)))
        mapped = tinct(work, "map", "map-default.yaml", "--points", "chip-points.csv")
        checks.check(mapped.returncode == 0, f"map --points of the default head's run: exit {mapped.returncode}")
        if mapped.returncode == 0:
            points = {r["id"]: r for r in csv.DictReader(open(os.path.join(work, "maps", "default", "points.csv")))}
            worst = max(abs(float(points[f"c{i}"][f"p_{name}"]) - float(r[f"p_{name}"]))
                        for i, r in enumerate(rows) for name in ("dry", "wet"))
            print(f"default head: --points vs tinct assess on {len(rows)} label chips: max |dp| {worst:.2e}")
            checks.check(len(rows) >= 20 and worst < 1e-4, f"the probe run's map differs from assess by {worst:.2e}")
    with open(os.path.join(work, "map-default-aoa.yaml"), "w") as f:  # with the area of applicability
        f.write(open(os.path.join(work, "map-default.yaml")).read().replace("aoa: false\n", "")
                .replace("maps/default", "maps/default-scene"))
    whole = tinct(work, "map", "map-default-aoa.yaml")
    checks.check(whole.returncode == 0 and os.path.exists(os.path.join(work, "maps", "default-scene", "s", "aoa.tif")),
                 f"the default head's run maps a whole scene with its area of applicability: exit {whole.returncode}")
    dense = tinct(work, "map", "map-default.yaml", "--mode", "dense", "--stride", "16", "--out", "maps/dense")
    checks.check(dense.returncode == 2 and "head.pool colour" in dense.stderr and "mode: exact" in dense.stderr,
                 f"dense refused for a centre readout: exit {dense.returncode}, {dense.stderr[-300:]}")
    check = tinct(work, "check", "default.yaml")
    checks.check(check.returncode == 0 and "input_bands: true" in check.stdout and
                 "head: default {pool: colour" in check.stderr, "tinct check prints the resolved default head")

    def without_init(name):
        resolved = yaml.safe_load(open(os.path.join(work, "runs", name, "config.resolved.yaml")))
        resolved.pop("output")
        resolved["init"].pop("from")
        return resolved

    checks.check(without_init("full") == without_init("scratch"), "scratch and pretrained runs differ only in init")

    # assess on the run's own store scores only its test chips (split.csv), reproducing its test
    # figures; --all scores every chip and says loudly that it includes training chips.
    run = tinct(work, "assess", "runs/full", "--on", "sites.labels", "--out", "assessed")
    checks.check(run.returncode == 0, "assess runs")
    assessed = json.load(open(os.path.join(work, "assessed", "metrics.json")))
    own_metrics = json.load(open(os.path.join(work, "runs", "full", "metrics.json")))
    checks.check(assessed["count"] == own_metrics["count"] and abs(assessed["macro_f1"] - own_metrics["macro_f1"]) < 1e-9,
                 f"assess on the run's own store scores its test chips only: {assessed['count']} vs {own_metrics['count']}")
    run = tinct(work, "assess", "runs/full", "--on", "sites.labels", "--out", "assessed-all", "--all")
    checks.check(run.returncode == 0 and "OPTIMISTIC" in run.stderr, "assess --all warns that it scores training chips")
    assessed = json.load(open(os.path.join(work, "assessed-all", "metrics.json")))
    with open(os.path.join(work, "assessed-all", "predictions.csv")) as f:
        rows = list(csv.DictReader(f))
    with open(os.path.join(work, "sites.labels", "chips.csv")) as f:
        store_count = sum(1 for _ in csv.DictReader(f))
    checks.check(len(rows) == assessed["count"] == store_count, "assess --all predicts every chip of the store")
    checks.check(abs(f1_score([r["true"] for r in rows], [r["predicted"] for r in rows], average="macro") -
                     assessed["macro_f1"]) < 1e-9, "assess macro F1 equals scikit-learn's")

    # predictions.csv: x, y in the store's CRS (named) and lon, lat as GDAL's osr transforms them.
    utm, wgs84 = osr.SpatialReference(), osr.SpatialReference()
    utm.ImportFromEPSG(32632)
    wgs84.ImportFromEPSG(4326)
    wgs84.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    utm.SetAxisMappingStrategy(osr.OAMS_TRADITIONAL_GIS_ORDER)
    to_lonlat = osr.CoordinateTransformation(utm, wgs84)
    checks.check(all(r["crs"] == "EPSG:32632" for r in rows), "predictions.csv names the store's CRS")
    worst = max(max(abs(a - float(r[k])) for a, k in zip(to_lonlat.TransformPoint(float(r["x"]), float(r["y"]))[:2],
                                                         ("lon", "lat"))) for r in rows)
    checks.check(worst < 2e-7, f"lon, lat equal osr's transform of x, y (worst {worst:.2e} degrees)")
    checks.check(all("e" not in r["x"] + r["y"] for r in rows), "map coordinates without exponents")

    # assess on exactly the run's test chips reproduces the run's test metrics and predictions.
    run_folder = os.path.join(work, "runs", "full")
    with open(os.path.join(run_folder, "predictions.csv")) as f:
        test_rows = list(csv.DictReader(f))
    kept = subset_store(os.path.join(work, "sites.labels"), os.path.join(work, "test.labels"),
                        {r["id"] for r in test_rows})
    checks.check(kept == len(test_rows), f"the test chips found in the store: {kept} of {len(test_rows)}")
    run = tinct(work, "assess", "runs/full", "--on", "test.labels", "--out", "assessed-test")
    checks.check(run.returncode == 0, "assess on the test chips runs")
    own = json.load(open(os.path.join(run_folder, "metrics.json")))
    again = json.load(open(os.path.join(work, "assessed-test", "metrics.json")))
    # Float metrics from float32 probabilities: a batch of another size sums in another order.
    for key in own:
        close = (again.get(key) == own[key] or
                 (isinstance(own[key], float) and isinstance(again.get(key), float) and abs(own[key] - again[key]) < 1e-6))
        checks.check(close, f"assess reproduces the run's {key}: {again.get(key)} vs {own[key]}")
    with open(os.path.join(work, "assessed-test", "predictions.csv")) as f:
        assessed_rows = {r["id"]: r for r in csv.DictReader(f)}
    checks.check(all(assessed_rows[r["id"]]["predicted"] == r["predicted"] for r in test_rows),
                 "assess predicts every test chip as the run did")

    run = tinct(work, "finetune", finetune_config(work, "wrong", "{from: pretrain, run: runs/pre}",
                                                   stores="reversed.labels"))
    checks.check(run.returncode == 2 and "encoder was trained on [nir, swir]" in run.stderr,
                 f"bands in another order are refused: {run.returncode} {run.stderr[-300:]}")

checks.finish()
