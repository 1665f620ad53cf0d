"""Bad input across every command, table-driven: each malformed input ends with its
expected exit code (2 for usage, 1 for failures, 0 where the input is skipped with a
warning) and a phrase of a message that says what and where, never with a crash (a
signal, an abort, a backtrace, the catch-all "unexpected failure" or a number of 40 and
more digits, such as a range bound of 1e300 printed in full), and leaves no half-written
output (no NAME.partial/, no
temporary file, no run folder that blocks a re-run)."""
import os
import re
import shutil
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, write  # noqa: E402
from tiny_project import (LABEL, PAIR, finetune_config, make_stores, pretrain_config,  # noqa: E402
                          run_tinct, write_input_stack, write_text)

checks = Checks()

PRETRAIN = """config: pretrain
stores: [small.pairs]
output: runs/sweep
model: {encoder: compact, width: 0.5}
train: {steps: 2, batch: 8, lr: 0.002, warmup: 1, seed: 5}
validation: {every: 2, chips: 8, previews: 0}
"""
FINETUNE = """config: finetune
stores: [sites.labels]
output: runs/sweep-fine
init: {from: scratch, model: {encoder: compact, width: 0.5}}
split: {method: blocks, block_size: 640, folds: 4, fold: 2}
train: {epochs: 1, batch: 16, lr: 0.003, seed: 3}
"""
STUDY = """config: study
output: studies/sweep
finetune: study-base.yaml
arms:
  - {name: scratch, init: {from: scratch, model: {encoder: compact, width: 0.5}}}
baselines: []
seeds: [1]
budgets: [all]
folds: 2
"""
ARM = "  - {name: scratch, init: {from: scratch, model: {encoder: compact, width: 0.5}}}\n"
BAND_NAMES = ["blue", "green", "red", "nir", "swir"]


def replaced(text, old, new):
    assert old in text, old
    return text.replace(old, new)


def case(name, args, code, phrase, files=None, prepare=None):
    return {"name": name, "args": args, "code": code, "phrase": phrase, "files": files or {}, "prepare": prepare}


def prepare_small_scene(work):
    write(os.path.join(work, "tiny.tif"), [np.full((10, 10), 900 + 10 * i, np.uint16) for i in range(5)], nodata=0)


def prepare_clouded_scene(work):
    write(os.path.join(work, "clouded.tif"), [np.zeros((64, 64), np.uint16) for _ in range(5)], nodata=0)


def prepare_band_files(work):
    """One single-band file per band; the swir file lies 10 km east of the others."""
    for i, band in enumerate(BAND_NAMES):
        origin = (510000.0 if band == "swir" else 500000.0, 5300000.0)
        write(os.path.join(work, f"f-{band}.tif"), [np.full((64, 64), 900 + 100 * i, np.uint16)], origin=origin, nodata=0)


def prepare_map_output(work):
    os.makedirs(os.path.join(work, "maps", "old"), exist_ok=True)
    write_text(work, "maps/old/classes.tif", "an earlier map")


def prepare_one_band_raster(work):
    write(os.path.join(work, "one.tif"), [np.full((64, 64), 900, np.uint16)], nodata=0)


def prepare_one_class_store(work):
    if os.path.isdir(os.path.join(work, "one.labels")):
        return
    lines = open(os.path.join(work, "sites.csv")).read().splitlines()
    write_text(work, "one.csv", "\n".join([lines[0]] + [line for line in lines[1:] if line.endswith(",wet")]) + "\n")
    label = replaced(replaced(LABEL, "source: sites.csv", "source: one.csv"), "output: sites.labels", "output: one.labels")
    write_text(work, "one-label.yaml", replaced(label, "classes: [dry, wet]", "classes: [wet]"))
    run = run_tinct(work, "label", "one-label.yaml")
    assert run.returncode == 0, run.stderr


def prepare_text_raster(work):
    write_text(work, "fake.tif", "not a raster at all\n")


def prepare_damaged_store(kind):
    def prepare(work):
        target = os.path.join(work, "broken.pairs")
        shutil.rmtree(target, ignore_errors=True)
        shutil.copytree(os.path.join(work, "small.pairs"), target)
        if kind == "truncated":
            with open(os.path.join(target, "bands.bin"), "r+b") as f:
                f.truncate(1000)
        elif kind == "manifest":
            write_text(target, "manifest.yaml", "format_version: 1\nkind: [oops\n")
        elif kind == "no manifest":
            os.remove(os.path.join(target, "manifest.yaml"))
        elif kind == "chips.csv":
            write_text(target, "chips.csv", "index,scene\n0,x\n")
    return prepare


def prepare_run_without_encoder(work):
    os.makedirs(os.path.join(work, "runs", "empty-pre"), exist_ok=True)


def prepare_text_encoder(work):
    os.makedirs(os.path.join(work, "runs", "text-pre"), exist_ok=True)
    write_text(work, "runs/text-pre/encoder.pt", "plain text, not an archive")


def band_files_scene(pair):
    files = ", ".join(f"{band}: f-{band}.tif" for band in BAND_NAMES)
    return replaced(pair, "{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}",
                    "{files: {" + files + "}, date: 2026-05-05}")


def study_cases():
    st = STUDY
    files = {"study-base.yaml": replaced(FINETUNE, "runs/sweep-fine", "runs/unused")}

    def study(name, old, new, code, phrase):
        return case(name, ["study", "s.yaml"], code, phrase, {**files, "s.yaml": replaced(st, old, new)})
    yield study("study base config missing", "finetune: study-base.yaml", "finetune: absent.yaml", 2, "absent.yaml")
    yield study("study without arms", ARM, "", 2, "arms")
    yield study("study ensemble of one arm", ARM, ARM + "  - {name: both, ensemble: [scratch]}\n", 2,
                "an ensemble needs at least two member arms")
    yield study("study arm sets the output", "{name: scratch, ", "{name: scratch, output: elsewhere, ", 2,
                "is set by the study")
    yield study("study arm from a missing pretrain run", "{from: scratch, model: {encoder: compact, width: 0.5}}",
                "{from: pretrain, run: runs/absent}", 2, "runs/absent")
    yield study("study budgets empty", "budgets: [all]", "budgets: []", 2, "budgets")
    yield study("study budget text", "budgets: [all]", "budgets: [many]", 2, "budgets")
    yield study("study folds zero", "folds: 2", "folds: 0", 2, "folds")
    yield study("study compares an unknown arm", "folds: 2", "folds: 2\ncompare: [[scratch, pretrained]]", 2,
                '"pretrained"')
    yield study("study parallel zero", "folds: 2", "folds: 2\nparallel: 0", 2, "parallel")
    yield study("study seeds text", "seeds: [1]", "seeds: [one]", 2, "seeds")
    yield study("study output under a file", "output: studies/sweep", "output: pair.yaml/study", 1, "pair.yaml")


def map_cases():
    yield case("map run missing", ["map", "runs/nothing", "inputs.tif", "--out", "maps/new"], 2, "runs/nothing")
    yield case("map a pretrain run", ["map", "runs/pre", "inputs.tif", "--out", "maps/new"], 2, "model.pt")
    yield case("map raster missing", ["map", "runs/fine", "absent.tif", "--out", "maps/new"], 2, "absent.tif")
    yield case("map raster not a raster", ["map", "runs/fine", "fake.tif", "--out", "maps/new"], 1,
               "fake.tif: not a readable raster", None, prepare_text_raster)
    yield case("map raster of one band", ["map", "runs/fine", "one.tif", "--out", "maps/new"], 2, "one.tif",
               None, prepare_one_band_raster)
    yield case("map without --out", ["map", "runs/fine", "inputs.tif"], 2, "--out")
    yield case("map output exists", ["map", "runs/fine", "inputs.tif", "--out", "maps/old"], 2, "maps/old",
               None, prepare_map_output)
    yield case("map output under a file", ["map", "runs/fine", "inputs.tif", "--out", "pair.yaml/map"], 1,
               "pair.yaml/map")
    yield case("map stride zero", ["map", "runs/fine", "inputs.tif", "--out", "maps/new", "--stride", "0"], 2,
               "--stride")
    yield case("map mode unknown", ["map", "runs/fine", "inputs.tif", "--out", "maps/new", "--mode", "fast"], 2,
               "--mode")
    yield case("map points file missing", ["map", "runs/fine", "inputs.tif", "--out", "maps/new", "--points",
                                           "absent.csv"], 2, "absent.csv")
    yield case("map points x not a number", ["map", "runs/fine", "inputs.tif", "--out", "maps/new", "--points",
                                             "pts.csv"], 2, "pts.csv line 2", {"pts.csv": "x,y\neast,5299900\n"})
    yield case("map config of another kind", ["map", "pair.yaml"], 2, "pair.yaml")


def cases():
    p, f, pair, label = PRETRAIN, FINETUNE, PAIR, LABEL
    yield case("no command", [], 2, "")
    yield case("misspelt command", ["pretrian", "x.yaml"], 2, 'did you mean "pretrain"')
    yield case("threads far too many", ["--threads", "100000", "check", "pair.yaml"], 2, "--threads")
    yield case("threads negative", ["--threads", "-3", "check", "pair.yaml"], 2, "--threads")
    yield case("unknown option", ["pair", "pair.yaml", "--fast"], 2, "--fast")
    yield case("config missing", ["check", "nothing.yaml"], 2, "nothing.yaml: config file not found")
    yield case("config is a folder", ["check", "runs"], 2, "runs is a folder, not a config file")
    yield case("pretrain config is a folder", ["pretrain", "runs"], 2, "is a folder, not a config file")
    yield case("config not YAML", ["check", "bad.yaml"], 2, "bad.yaml: line", {"bad.yaml": "config: pair\nscenes: [a, b\n"})
    yield case("config empty", ["check", "empty.yaml"], 2, "empty.yaml", {"empty.yaml": ""})
    yield case("config a list", ["check", "list.yaml"], 2, "expected a mapping", {"list.yaml": "- a\n- b\n"})
    yield case("config binary", ["check", "binary.yaml"], 2, "binary.yaml", {"binary.yaml": "\x00\x01\x02\xff\xfe"})
    yield case("config kind unknown", ["check", "kind.yaml"], 2, "kind.yaml", {"kind.yaml": "config: banana\n"})
    yield case("lr 1e300", ["pretrain", "c.yaml"], 2, "train.lr",
               {"c.yaml": replaced(p, "lr: 0.002", "lr: 1e300")})
    yield case("lr negative", ["pretrain", "c.yaml"], 2, "train.lr", {"c.yaml": replaced(p, "lr: 0.002", "lr: -1")})
    yield case("lr text", ["pretrain", "c.yaml"], 2, "train.lr", {"c.yaml": replaced(p, "lr: 0.002", "lr: fast")})
    yield case("batch zero", ["pretrain", "c.yaml"], 2, "train.batch", {"c.yaml": replaced(p, "batch: 8", "batch: 0")})
    yield case("threads in config", ["pretrain", "c.yaml"], 2, "train.threads",
               {"c.yaml": replaced(p, "seed: 5", "seed: 5, threads: 5000")})
    yield case("weight decay huge", ["pretrain", "c.yaml"], 2, "train.weight_decay",
               {"c.yaml": replaced(p, "seed: 5", "seed: 5, weight_decay: 1e300")})
    yield case("misspelt section", ["pretrain", "c.yaml"], 2, '"train"', {"c.yaml": replaced(p, "train:", "trian:")})
    yield case("unknown encoder", ["pretrain", "c.yaml"], 2, "encoder",
               {"c.yaml": replaced(p, "encoder: compact", "encoder: transformer")})
    yield case("pretrain store missing", ["pretrain", "c.yaml"], 2, "missing.pairs",
               {"c.yaml": replaced(p, "small.pairs", "missing.pairs")})
    yield case("pretrain on a label store", ["pretrain", "c.yaml"], 2, "sites.labels",
               {"c.yaml": replaced(p, "small.pairs", "sites.labels")})
    yield case("pretrain resume with nothing", ["pretrain", "c.yaml", "--resume"], 2, "runs/sweep", {"c.yaml": p})
    yield case("pretrain resume and force", ["pretrain", "c.yaml", "--resume", "--force"], 2, "--force", {"c.yaml": p})
    yield case("pretrain stop-after negative", ["pretrain", "c.yaml", "--stop-after", "-1"], 2, "--stop-after",
               {"c.yaml": p})
    yield case("pretrain existing run", ["pretrain", "pre.yaml"], 2, "exists (status: done)")
    yield case("pretrain truncated store", ["pretrain", "c.yaml"], 1, "bands.bin is 1000 bytes",
               {"c.yaml": replaced(p, "small.pairs", "broken.pairs")}, prepare_damaged_store("truncated"))
    yield case("pretrain manifest garbage", ["pretrain", "c.yaml"], 1, "broken.pairs/manifest.yaml",
               {"c.yaml": replaced(p, "small.pairs", "broken.pairs")}, prepare_damaged_store("manifest"))
    yield case("pretrain manifest missing", ["pretrain", "c.yaml"], 2, "no chip store at",
               {"c.yaml": replaced(p, "small.pairs", "broken.pairs")}, prepare_damaged_store("no manifest"))
    yield case("pretrain chips.csv cut", ["pretrain", "c.yaml"], 1, "broken.pairs/chips.csv",
               {"c.yaml": replaced(p, "small.pairs", "broken.pairs")}, prepare_damaged_store("chips.csv"))
    yield case("finetune init without encoder", ["finetune", "c.yaml"], 2, "holds no encoder.pt",
               {"c.yaml": replaced(f, "{from: scratch, model: {encoder: compact, width: 0.5}}",
                                   "{from: pretrain, run: runs/empty-pre}")}, prepare_run_without_encoder)
    yield case("finetune init text encoder", ["finetune", "c.yaml"], 1, "runs/text-pre/encoder.pt",
               {"c.yaml": replaced(f, "{from: scratch, model: {encoder: compact, width: 0.5}}",
                                   "{from: pretrain, run: runs/text-pre}")}, prepare_text_encoder)
    yield case("finetune fold beyond folds", ["finetune", "c.yaml"], 2, "split.fold",
               {"c.yaml": replaced(f, "fold: 2", "fold: 4")})
    yield case("finetune on a pair store", ["finetune", "c.yaml"], 2, "small.pairs",
               {"c.yaml": replaced(f, "sites.labels", "small.pairs")})
    yield case("finetune on labels of one class", ["finetune", "c.yaml"], 2, "holds one class only",
               {"c.yaml": replaced(f, "sites.labels", "one.labels")}, prepare_one_class_store)
    yield case("finetune epochs zero", ["finetune", "c.yaml"], 2, "train.epochs",
               {"c.yaml": replaced(f, "epochs: 1", "epochs: 0")})
    yield case("assess missing run", ["assess", "runs/nothing", "--on", "sites.labels"], 2, "runs/nothing")
    yield case("assess a pretrain run", ["assess", "runs/pre", "--on", "sites.labels"], 2, "model.pt")
    yield case("assess missing store", ["assess", "runs/fine", "--on", "gone.labels"], 2, "gone.labels")
    yield case("assess on a pair store", ["assess", "runs/fine", "--on", "small.pairs"], 2, "pair store")
    yield case("export a finetune run", ["export", "runs/fine", "--out", "x.safetensors"], 2, "encoder.pt")
    yield case("export a text encoder", ["export", "runs/text-pre", "--out", "x.safetensors"], 1,
               "not a readable tinct archive", None, prepare_text_encoder)
    yield case("export into a missing folder", ["export", "runs/pre", "--out", "no/such/dir/x.safetensors"], 1,
               "no/such/dir/x.safetensors")
    yield case("survey missing raster", ["survey", "absent.tif"], 2, "absent.tif")
    yield case("survey a text file", ["survey", "fake.tif"], 1, "fake.tif", None, prepare_text_raster)
    yield case("survey a folder", ["survey", "runs"], 1, "runs: not a readable raster")
    yield case("pair scene missing", ["pair", "c.yaml", "--out", "new.pairs"], 2, "absent.tif",
               {"c.yaml": replaced(pair, "path: scene.tif", "path: absent.tif")})
    yield case("pair scene not a raster", ["pair", "c.yaml", "--out", "new.pairs"], 1, "fake.tif: not a readable raster",
               {"c.yaml": replaced(pair, "path: scene.tif", "path: fake.tif")}, prepare_text_raster)
    yield case("pair scene of 10 px", ["pair", "c.yaml", "--out", "new.pairs"], 1, "scene tiny: 10 x 10 px",
               {"c.yaml": replaced(pair, "path: scene.tif", "path: tiny.tif")}, prepare_small_scene)
    yield case("pair scene all nodata", ["pair", "c.yaml", "--out", "new.pairs"], 1, "clouded",
               {"c.yaml": replaced(pair, "path: scene.tif", "path: clouded.tif")}, prepare_clouded_scene)
    yield case("pair band file with a disjoint extent", ["pair", "c.yaml", "--out", "new.pairs"], 1,
               "f-swir.tif: this band file (x 510000 to 510640", {"c.yaml": band_files_scene(pair)}, prepare_band_files)
    yield case("pair one clouded scene of two", ["pair", "c.yaml", "--out", "new.pairs"], 0,
               "skipped 1 of 2 scenes",
               {"c.yaml": replaced(pair, "date: 2026-05-05}]", "date: 2026-05-05},\n"
                                   "         {path: clouded.tif, bands: [blue, green, red, nir, swir], date: 2026-05-06}]")},
               prepare_clouded_scene)
    yield case("pair output under a file", ["pair", "pair.yaml", "--out", "pair.yaml/new.pairs"], 1, "pair.yaml/new.pairs")
    yield case("pair chip size zero", ["pair", "c.yaml", "--out", "new.pairs"], 2, "chips.size",
               {"c.yaml": replaced(pair, "size: 32", "size: 0")})
    yield case("pair input band unknown", ["pair", "c.yaml", "--out", "new.pairs"], 2, "nir2",
               {"c.yaml": replaced(pair, "inputs: [nir, swir]", "inputs: [nir2, swir]")})
    yield case("pair output exists", ["pair", "pair.yaml"], 2, "small.pairs already exists")
    yield case("label source missing", ["label", "c.yaml", "--out", "new.labels"], 2, "absent.csv",
               {"c.yaml": replaced(label, "source: sites.csv", "source: absent.csv")})
    yield case("label column missing", ["label", "c.yaml", "--out", "new.labels"], 2, "cover",
               {"c.yaml": replaced(label, "source: sites.csv", "source: cols.csv"), "cols.csv": "site,x,y\ns1,500100,5299900\n"})
    yield case("label x not a number", ["label", "c.yaml", "--out", "new.labels"], 1, "nan.csv line 2",
               {"c.yaml": replaced(label, "source: sites.csv", "source: nan.csv"),
                "nan.csv": "site,x,y,cover\ns1,east,5299900,wet\n"})
    yield case("label crs unknown", ["label", "c.yaml", "--out", "new.labels"], 2, "EPSG:999999",
               {"c.yaml": replaced(label, "crs: EPSG:32632", "crs: EPSG:999999")})
    yield case("label no label in the scene", ["label", "c.yaml", "--out", "new.labels"], 1, "",
               {"c.yaml": replaced(label, "source: sites.csv", "source: far.csv"),
                "far.csv": "site,x,y,cover\ns1,100000,100000,wet\ns2,100010,100000,dry\n"})
    yield case("label GeoJSON broken", ["label", "c.yaml", "--out", "new.labels"], 1, "broken.geojson",
               {"c.yaml": replaced(replaced(label, "source: sites.csv", "source: broken.geojson"), "x: x, y: y, ", ""),
                "broken.geojson": '{"type": "FeatureCollection", "features": [ {"type": '})
    yield case("label output exists", ["label", "label.yaml"], 2, "sites.labels already exists")
    m = "config: map\noutput: maps/sweep\nscenes: [{id: a, path: tiny.tif}]\n"
    yield case("map run and study both", ["map", "c.yaml"], 2, "give exactly one of run:",
               {"c.yaml": m + "run: runs/fine\nstudy: runs\narm: fine\n"})
    yield case("map study without runs folder", ["map", "c.yaml"], 2, "has no runs/ folder",
               {"c.yaml": m + "study: runs/fine\narm: scratch\n"})
    yield case("map ensemble member missing", ["map", "c.yaml"], 2, "runs/nothing holds no model.pt",
               {"c.yaml": m + "runs: [runs/fine, runs/nothing]\n"})
    yield case("map budget without arm", ["map", "runs/fine", "tiny.tif", "--out", "maps/sweep", "--budget", "3"],
               2, "give --arm ARM too", None, prepare_small_scene)
    yield case("label output under a file", ["label", "label.yaml", "--out", "label.yaml/new.labels"], 1,
               "label.yaml/new.labels")
    yield from study_cases()
    yield from map_cases()


def snapshot(work):
    found = set()
    for root, folders, files in os.walk(work):
        for name in folders + files:
            found.add(os.path.relpath(os.path.join(root, name), work))
    return found


CRASH_SIGNS = ("terminate called", "frame #", "Exception raised from", "unexpected failure", "Segmentation",
               "Aborted", "what():")


with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    write_input_stack(work)
    runs = [("pretrain", pretrain_config(work, "pre", steps=2, every=2)),
            ("finetune", finetune_config(work, "fine", epochs=1))] if ok else []
    for command, config in runs:
        run = run_tinct(work, command, config)
        checks.check(run.returncode == 0, f"{command} for the sweep: {run.stderr[-600:]}")
    count, commands = 0, set()
    for item in (cases() if ok else []):
        count += 1
        commands.add(next((a for a in item["args"] if not a.startswith("-") and not a.isdigit()), ""))
        if item["prepare"]:
            item["prepare"](work)
        for name, text in item["files"].items():
            write_text(work, name, text)
        before = snapshot(work)
        run = run_tinct(work, *item["args"], timeout=120)
        what = f"{item['name']} ({' '.join(item['args'])})"
        text = run.stderr + run.stdout
        checks.check(run.returncode == item["code"], f"{what}: exit {item['code']}, got {run.returncode}:\n{text[-700:]}")
        checks.check(item["phrase"] in text, f"{what}: the message says '{item['phrase']}':\n{text[-700:]}")
        crash = [sign for sign in CRASH_SIGNS if sign in text] + re.findall(r"\d{40,}", text)
        checks.check(not crash, f"{what}: no crash ({crash}):\n{text[-700:]}")
        new = snapshot(work) - before
        half = sorted(n for n in new if ".partial" in n or ".tmp." in n or n.endswith(".previous"))
        checks.check(not half, f"{what}: no half-written output: {half}")
        if item["code"] == 2:
            blocking = sorted(n for n in new if n.startswith("runs/") and n.endswith("run.yaml"))
            checks.check(not blocking, f"{what}: a usage error leaves no run folder behind: {blocking}")
        for gone in ("runs/sweep", "runs/sweep-fine", "runs/unused", "broken.pairs", "new.pairs", "new.labels", "maps",
                     "studies"):
            shutil.rmtree(os.path.join(work, gone), ignore_errors=True)
    checks.check(count >= 40, f"at least 40 malformed inputs ({count})")
    every = {"survey", "pair", "pretrain", "label", "finetune", "assess", "study", "map", "export", "check"}
    checks.check(not ok or every <= commands, f"every command has bad input: missing {sorted(every - commands)}")
    print(f"{count} malformed inputs")

checks.finish()
