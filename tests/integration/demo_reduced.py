"""The demo (scripts/demo.sh) reduced to a few minutes: the Aldery generator in its small
size, then survey, pair, pretrain (a few steps), label, finetune, and study and map when
this build has them, all with the example configs (examples/aldery-marsh) cut down
(fewer steps, epochs, seeds and budgets). Each stage's outputs must exist and agree
with the stage before: chip counts with manifests and chips.csv, the scenes' CRS as
GDAL reads it, class names from the label config to the run, the study and the map,
report sections, the map's georeferencing against GDAL's own `gdalinfo -json`; and
scripts/demo_summary.py prints what the demo prints at its end. A command the build
lacks is skipped with its reason printed."""
import csv
import json
import os
import shutil
import subprocess
import sys
import tempfile

import yaml
from osgeo import osr

SOURCE = os.environ["TINCT_SOURCE"]
sys.path.insert(0, os.path.join(SOURCE, "tests", "support"))
from store import Store, grid_problems  # noqa: E402
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
EXAMPLE = os.path.join(SOURCE, "examples", "aldery-marsh")
HABITAT = ["breeding", "non_breeding"]
LANDCOVER = ["open_water", "reed_marsh", "rice", "pasture", "cropland", "woodland", "settlement"]
checks = Checks()


def run(work, *args, threads="2"):
    result = subprocess.run([TINCT, "--threads", threads, *args], capture_output=True, text=True, cwd=work)
    if result.returncode != 0:
        print(result.stdout[-3000:], result.stderr[-3000:])
    checks.check(result.returncode == 0, f"tinct {' '.join(args)}: exit {result.returncode}")
    return result


def has_command(name):
    """As demo.sh decides: a command this build lacks exits 2 on --help."""
    return subprocess.run([TINCT, name, "--help"], capture_output=True).returncode == 0


def patch(path, changes):
    """Rewrites a config with some of its sections changed (a reduced demo)."""
    config = yaml.safe_load(open(path))
    for key, value in changes.items():
        if isinstance(value, dict) and isinstance(config.get(key), dict):
            config[key].update(value)
        else:
            config[key] = value
    with open(path, "w") as f:
        yaml.safe_dump(config, f, sort_keys=False)
    return config


def gdalinfo(path):
    result = subprocess.run(["gdalinfo", "-json", path], capture_output=True, text=True)
    checks.check(result.returncode == 0, f"gdalinfo opens {path}")
    return json.loads(result.stdout) if result.returncode == 0 else None


def same_crs(wkt_a, wkt_b):
    a, b = osr.SpatialReference(), osr.SpatialReference()
    return a.ImportFromWkt(wkt_a) == 0 and b.ImportFromWkt(wkt_b) == 0 and a.IsSame(b) == 1


def check_pairs(work, data):
    config = yaml.safe_load(open(os.path.join(work, "examples", "aldery-marsh", "pair.yaml")))
    store = Store(os.path.join(work, "demo-out", "aldery.pairs"))
    checks.check(store.count == len(store.chips) > 0, f"pairs: manifest {store.count} chips, chips.csv {len(store.chips)}")
    checks.check(os.path.getsize(os.path.join(store.path, "bands.bin")) ==
                 store.count * len(store.band_names) * store.size ** 2 * 2, "pairs: bands.bin holds every chip")
    checks.check(store.band_names == config["inputs"], f"pairs: bands {store.band_names}")
    checks.check(store.colour is not None, "pairs: the store holds colour")
    problems = grid_problems(store, os.path.join(data, "2026-06-14", "B04.tif"))
    checks.check(not problems, f"pairs: the scenes' CRS and 10 m pixels {problems}")
    return store


def check_labels(work, name, classes, pairs):
    store = Store(os.path.join(work, "demo-out", f"aldery-{name}.labels"))
    with open(os.path.join(store.path, "dropped.csv"), newline="") as f:
        dropped = len(list(csv.DictReader(f)))
    features = json.load(open(os.path.join(work, "demo-out", "aldery", f"sites-{name}.geojson")))["features"]
    checks.check(store.count == len(store.chips) and store.count + dropped == len(features),
                 f"{name}: {store.count} chips + {dropped} dropped = {len(features)} labels")
    checks.check(store.manifest["classes"] == classes, f"{name}: classes {store.manifest['classes']}")
    checks.check({c["label"] for c in store.chips} <= set(classes), f"{name}: chip labels are listed classes")
    checks.check(store.band_names == pairs.band_names and store.size == pairs.size,
                 f"{name}: bands and chip size of the pretraining's store")
    checks.check(same_crs(store.manifest["crs"], pairs.manifest["crs"]), f"{name}: the pair store's CRS")
    return store


def check_finetune(work, name, labels, classes):
    folder = os.path.join(work, "demo-out", "runs", f"aldery-{name}-pretrained")
    metrics = json.load(open(os.path.join(folder, "metrics.json")))
    with open(os.path.join(folder, "predictions.csv"), newline="") as f:
        rows = list(csv.DictReader(f))
    checks.check(len(rows) == metrics["count"] > 0, f"finetune {name}: {len(rows)} predictions, count {metrics['count']}")
    ids = {c["source_id"] for c in labels.chips}
    checks.check(all(r["id"] in ids for r in rows), f"finetune {name}: every test chip is in the label store")
    checks.check({r["true"] for r in rows} | {r["predicted"] for r in rows} <= set(classes),
                 f"finetune {name}: predicted and true classes are the store's")
    status = yaml.safe_load(open(os.path.join(folder, "run.yaml")))["status"]
    checks.check(status == "done", f"finetune {name}: run status {status}")


def check_study(work, config):
    study = os.path.join(work, "demo-out", "studies", "aldery-habitat")
    for name in ("summary.csv", "summary.json", "report.html"):
        checks.check(os.path.exists(os.path.join(study, name)), f"study writes {name}")
    if not os.path.exists(os.path.join(study, "report.html")):
        return
    arms = [a["name"] for a in config["arms"]] + list(config["baselines"])
    with open(os.path.join(study, "summary.csv"), newline="") as f:
        text = f.read()
    for arm in arms:
        checks.check(arm in text, f"summary.csv names arm {arm}")
    json.load(open(os.path.join(study, "summary.json")))
    report = open(os.path.join(study, "report.html"), encoding="utf-8").read()
    for section in ("findings", "efficiency", "comparisons", "confusion", "design"):
        checks.check(f'<section id="{section}">' in report, f"report.html has its {section} section")
    for word in HABITAT + arms + ["public-health authority"]:
        checks.check(word in report, f"report.html names {word}")
    checks.check("<script" not in report.lower(), "report.html needs no script")


def check_map(work, config, scene_files):
    root = os.path.join(work, "demo-out", "maps", "aldery-habitat")
    store = Store(os.path.join(work, "demo-out", "aldery-habitat.labels"))
    for scene in config["scenes"]:
        folder = os.path.join(root, scene["id"])
        for name in ("probabilities.tif", "classes.tif", "uncertainty.tif", "aoa.tif", "quicklook.png"):
            checks.check(os.path.exists(os.path.join(folder, name)), f"map {scene['id']}: {name}")
        ground = gdalinfo(scene_files(scene)["B04"])
        probabilities = gdalinfo(os.path.join(folder, "probabilities.tif"))
        classes = gdalinfo(os.path.join(folder, "classes.tif"))
        if not (ground and probabilities and classes):
            continue
        pixel = ground["geoTransform"][1]
        stride = config["stride"]
        for name, info in (("probabilities", probabilities), ("classes", classes)):
            gt = info["geoTransform"]
            checks.check(same_crs(info["coordinateSystem"]["wkt"], ground["coordinateSystem"]["wkt"]),
                         f"map {name}: the scene's CRS")
            checks.check(abs(gt[1] - pixel * stride) < 1e-6 and abs(gt[5] + pixel * stride) < 1e-6,
                         f"map {name}: cells of stride x pixel = {pixel * stride} m, got {gt[1]}, {gt[5]}")
            # The first window's cell lies inside the scene, on its pixel grid, within one chip of its corner.
            dx, dy = gt[0] - ground["geoTransform"][0], ground["geoTransform"][3] - gt[3]
            chip = store.size * pixel
            checks.check(0 <= dx < chip and 0 <= dy < chip and abs(dx / pixel - round(dx / pixel)) < 1e-6 and
                         abs(dy / pixel - round(dy / pixel)) < 1e-6,
                         f"map {name}: origin {gt[0]}, {gt[3]} on the scene's grid within a chip of its corner")
            width, height = info["size"]
            checks.check(gt[0] + width * gt[1] <= ground["geoTransform"][0] + ground["size"][0] * pixel + 1e-6 and
                         gt[3] + height * gt[5] >= ground["geoTransform"][3] - ground["size"][1] * pixel - 1e-6,
                         f"map {name}: {width} x {height} cells within the scene")
        names = [b.get("description", "") for b in probabilities["bands"]]
        checks.check(names == HABITAT, f"probabilities: one band per class, named {names}")
        checks.check(classes["size"] == probabilities["size"], "classes and probabilities share their grid")
        checks.check("colorTable" in classes["bands"][0], "classes: a colour table")
        metadata = json.dumps(probabilities.get("metadata", {})).lower()
        checks.check("surveillance" in metadata, "probabilities: the caution in the GeoTIFF metadata")
        with open(os.path.join(folder, "quicklook.png"), "rb") as f:
            checks.check(f.read(8) == b"\x89PNG\r\n\x1a\n", "quicklook.png is a PNG")


with tempfile.TemporaryDirectory() as work:
    configs = os.path.join(work, "examples", "aldery-marsh")
    shutil.copytree(EXAMPLE, configs, ignore=shutil.ignore_patterns("*.py", "aldery", "*.md", "pictures", "__pycache__"))
    data = os.path.join(work, "demo-out", "aldery")
    config_path = lambda name: os.path.join(configs, name)  # noqa: E731

    def scene_files(scene):
        return {band: os.path.normpath(os.path.join(configs, path)) for band, path in scene["files"].items()}

    gen = subprocess.run(["/usr/bin/python3", os.path.join(EXAMPLE, "make_scenes.py"), data, "--small"],
                         capture_output=True, text=True)
    print(gen.stdout[-500:], gen.stderr[-2000:])
    checks.check(gen.returncode == 0, f"make_scenes.py --small: exit {gen.returncode}")
    if gen.returncode:
        checks.finish()

    surveyed = json.loads(run(work, "survey", "--json", os.path.join(data, "2026-06-14", "B04.tif")).stdout)
    ground = gdalinfo(os.path.join(data, "2026-06-14", "B04.tif"))
    checks.check(surveyed[0]["crs"]["epsg"] == 32632 and surveyed[0]["width"] == ground["size"][0],
                 "survey: EPSG:32632 and gdalinfo's width")

    run(work, "pair", config_path("pair.yaml"))
    pairs = check_pairs(work, data)

    # A few pretraining steps: enough for a checkpoint, a validation and previews.
    patch(config_path("pretrain.yaml"), {"train": {"steps": 30, "warmup": 5},
                                         "validation": {"every": 15, "chips": 64, "previews": 2},
                                         "checkpoints": {"every": 15}})
    run(work, "pretrain", config_path("pretrain.yaml"))
    pretrain_run = os.path.join(work, "demo-out", "runs", "aldery-pretrain")
    for name in ("encoder.pt", "run.yaml", "previews/step-00000030.png"):
        checks.check(os.path.exists(os.path.join(pretrain_run, name)), f"pretrain: {name}")

    stores = {}
    for name, classes in (("habitat", HABITAT), ("landcover", LANDCOVER)):
        run(work, "label", config_path(f"label-{name}.yaml"))
        stores[name] = check_labels(work, name, classes, pairs)

    # The small district is 1.92 km across: blocks of 480 m give every fold ground.
    patch(config_path("finetune-habitat.yaml"), {"train": {"epochs": 4, "patience": 4},
                                                 "split": {"block_size": 480}})
    run(work, "finetune", config_path("finetune-habitat.yaml"))
    check_finetune(work, "habitat", stores["habitat"], HABITAT)

    if has_command("study"):
        study = patch(config_path("study-habitat.yaml"), {"seeds": [1], "budgets": [5]})
        result = run(work, "study", config_path("study-habitat.yaml"))
        with open(os.path.join(work, "demo-out", "study.log"), "w") as f:
            f.write(result.stdout)  # as demo.sh keeps it, for the summary's findings
        check_study(work, study)
    else:
        print("skipped: tinct study is not in this build; its outputs are not checked")

    if has_command("map"):
        run(work, "map", config_path("map-habitat.yaml"))
        check_map(work, yaml.safe_load(open(config_path("map-habitat.yaml"))), scene_files)
    else:
        print("skipped: tinct map is not in this build; its outputs are not checked")

    # What the demo prints at its end, from the same folders.
    summary = subprocess.run(["/usr/bin/python3", os.path.join(SOURCE, "scripts", "demo_summary.py"),
                              os.path.join(work, "demo-out")], capture_output=True, text=True)
    print(summary.stdout, summary.stderr)
    checks.check(summary.returncode == 0, "demo_summary.py runs")
    checks.check("macro F1" in summary.stdout and "previews/step-00000030.png" in summary.stdout,
                 "the summary gives the fine-tune's metrics and the last preview")
    printed = " ".join(summary.stdout.split())
    checks.check("field confirmation" in printed and "public-health" in printed, "the summary's caution")
    if has_command("study"):
        checks.check("report.html" in summary.stdout, "the summary names the report")
        checks.check("labels per class" in summary.stdout, "the summary gives the study's findings")
    if has_command("map"):
        checks.check("quicklook.png" in summary.stdout, "the summary names the quicklook")

checks.finish()
