#!/usr/bin/python3
"""Heads for point labels on real data: which readout of a colour-pretrained network pays off?

Runs with Debian's /usr/bin/python3 (numpy, scikit-learn, GDAL), on the Landsat 7 ETM+ subset
the tests fetch (tests/fetch_debian_test_data.sh: L7_ETMs.tif from Debian's r-cran-stars).
Inputs are the infrared bands B4, B5, B7; two label sets whose classes depend on the visible
bands the inputs lack, at sites on an 8-pixel grid whose 3 x 3 neighbourhood agrees:
  index    water (NDWI > 0, McFeeters 1996), vegetation (NDVI > 0.3, Rouse et al. 1974), other
  visible  terciles of the mean visible DN (B1, B2, B3): dark, middle, bright
One pretraining on pairs of the scene (colour from B3, B2, B1); then, per task, budget (labels
per class), seed and spatial block fold, every arm on the same training and test chips:
  deep arms   `tinct finetune` with the head of the arm (trained heads also validate on the
              split's validation chips, as finetune does today; probes see only the budget)
  baselines   random forest and logistic regression on the label pixel's bands and 3 x 3 mean
              (tinct_baseline_tool: OpenCV cv::ml, the study's pixel baselines)
Writes RESULTS/runs.csv (one row per arm and split) and prints macro F1 mean, sd and the
paired difference (same task, budget, seed and fold) to the best baseline and to today's
default head (global) with a bootstrap 95% interval of the mean difference.

usage: heads_study.py TINCT BASELINE_TOOL L7_ETMs.tif WORK [--seeds 1 2] [--budgets 5 15]
                      [--tasks index visible] [--arms a b ...] [--pretrain-steps 400] [--threads 1]
                      [--summary-only]
"""
import argparse
import csv
import os
import subprocess
import sys

import numpy as np
from osgeo import gdal
from sklearn.metrics import f1_score

ARMS = {
    # name: (init, head, freeze)
    "global": ("pretrain", "{pool: global}", None),
    "centre": ("pretrain", "{pool: centre}", None),
    "hypercolumn": ("pretrain", "{pool: hypercolumn}", None),
    "colour_probe": ("pretrain", "{pool: colour, kind: linear_probe}", None),
    "colour_knn": ("pretrain", "{pool: colour, kind: knn, k: 5}", None),
    "hypercolumn_probe": ("pretrain", "{pool: hypercolumn, kind: linear_probe}", None),
    "global_probe": ("pretrain", "{pool: global, kind: linear_probe}", None),
    "global_probe_random": ("scratch", "{pool: global, kind: linear_probe}", None),
    "hypercolumn_probe_random": ("scratch", "{pool: hypercolumn, kind: linear_probe}", None),
    "global_scratch": ("scratch", "{pool: global}", None),
}
BASELINES = ["random_forest", "logistic_regression"]
FOLDS = 3


def run(args, cwd, what):
    result = subprocess.run(args, cwd=cwd, capture_output=True, text=True)
    if result.returncode:
        sys.exit(f"{what}: exit {result.returncode}\n{result.stderr[-2000:]}")
    return result


def task_classes(path):
    ds = gdal.Open(path)
    dn = {b: ds.GetRasterBand(b).ReadAsArray().astype(np.float64) for b in (1, 2, 3, 4)}
    ndvi = (dn[4] - dn[3]) / (dn[4] + dn[3])
    ndwi = (dn[2] - dn[4]) / (dn[2] + dn[4])
    index = np.where(ndwi > 0, 0, np.where(ndvi > 0.3, 1, 2))
    brightness = (dn[1] + dn[2] + dn[3]) / 3
    visible = np.digitize(brightness, np.quantile(brightness, [1 / 3, 2 / 3]))
    return ds, {"index": (index, ["water", "vegetation", "other"]),
                "visible": (visible, ["dark", "middle", "bright"])}


def write_inputs(work, l7, tasks, ds, threads, tinct, steps, validation_every=None):
    gt = ds.GetGeoTransform()
    common = (f"sensor: landsat7-etm\ninputs: [B4, B5, B7]\ngrid: {{resolution: 28.5}}\n"
              f"scenes: [{{path: {l7}, date: 2000-02-01}}]\n")
    for task, (cover, names) in tasks.items():
        store = f"{task}.labels"
        if os.path.exists(os.path.join(work, store)):
            continue
        with open(os.path.join(work, f"{task}.csv"), "w") as f:
            f.write("id,x,y,cover\n")
            for row in range(10, ds.RasterYSize - 10, 8):
                for col in range(10, ds.RasterXSize - 10, 8):
                    if (cover[row - 1:row + 2, col - 1:col + 2] == cover[row, col]).all():
                        x, y = gt[0] + (col + 0.5) * gt[1], gt[3] + (row + 0.5) * gt[5]
                        f.write(f"{task}{row}_{col},{x},{y},{names[cover[row, col]]}\n")
        with open(os.path.join(work, f"{task}_label.yaml"), "w") as f:
            f.write(f"config: label\noutput: {store}\n" + common +
                    f"labels: {{source: {task}.csv, class: cover, x: x, y: y, crs: EPSG:31985, id: id, "
                    f"classes: [{', '.join(names)}]}}\nchips: {{size: 16, min_valid: 0.9, block_size: 2000}}\n")
        run([tinct, "--threads", threads, "label", f"{task}_label.yaml"], work, f"label {task}")
    if not os.path.exists(os.path.join(work, "runs", "pre", "encoder.pt")):
        with open(os.path.join(work, "pair.yaml"), "w") as f:
            f.write("config: pair\noutput: l7.pairs\n" + common +
                    "colour: {bands: [B3, B2, B1]}\nchips: {size: 16, stride: 8, block_size: 2000}\n")
        with open(os.path.join(work, "pretrain.yaml"), "w") as f:
            f.write(f"""config: pretrain
stores: [l7.pairs]
output: runs/pre
model: {{encoder: compact, width: 0.5}}
train: {{steps: {steps}, batch: 32, lr: 0.003, warmup: 20, seed: 1}}
validation: {{every: {validation_every or steps}, chips: 64, previews: 0}}
""")
        if not os.path.exists(os.path.join(work, "l7.pairs")):
            run([tinct, "--threads", threads, "pair", "pair.yaml"], work, "pair")
        run([tinct, "--threads", threads, "pretrain", "--force", "pretrain.yaml"], work, "pretrain")


def finetune(work, tinct, threads, task, arm, budget, seed, fold):
    name = f"{task}_{arm}_b{budget}_s{seed}_f{fold}"
    folder = os.path.join(work, "runs", name)
    if not os.path.exists(os.path.join(folder, "predictions.csv")):
        init, head, _ = ARMS[arm]
        init_yaml = "{from: pretrain, run: runs/pre}" if init == "pretrain" else "{from: scratch, run: runs/pre}"
        with open(os.path.join(work, f"{name}.yaml"), "w") as f:
            f.write(f"""config: finetune
stores: [{task}.labels]
output: runs/{name}
init: {init_yaml}
head: {head}
budget: {{per_class: {budget}}}
split: {{method: blocks, block_size: 2000, folds: {FOLDS}, fold: {fold}}}
train: {{epochs: 30, batch: 16, lr: 0.002, seed: {seed}, patience: 10}}
""")
        run([tinct, "--threads", threads, "finetune", "--force", f"{name}.yaml"], work, f"finetune {name}")
    with open(os.path.join(folder, "predictions.csv")) as f:
        rows = list(csv.DictReader(f))
    return [r["true"] for r in rows], [r["predicted"] for r in rows], folder


def chips_of(folder):
    """The probe run's training and test chips (features.csv), in its order."""
    with open(os.path.join(folder, "features.csv")) as f:
        rows = list(csv.DictReader(f))
    return ([int(r["chip"]) for r in rows if r["role"] == "train"],
            [int(r["chip"]) for r in rows if r["role"] == "test"])


def baselines(work, tool, task, names, split_name, seed, train, test):
    folder = os.path.join(work, "baselines", split_name)
    os.makedirs(folder, exist_ok=True)
    with open(os.path.join(folder, "splits.csv"), "w") as f:
        f.write("split,seed,role,chip\n")
        f.writelines(f"{split_name},{seed},train,{i}\n" for i in train)
        f.writelines(f"{split_name},{seed},test,{i}\n" for i in test)
    run([tool, os.path.join(work, f"{task}.labels"), os.path.join(folder, "splits.csv"), folder], work, "baselines")
    with open(os.path.join(folder, "predictions.csv")) as f:
        rows = list(csv.DictReader(f))
    out = {}
    for method in BASELINES:
        mine = [r for r in rows if r["method"] == method]
        out[method] = ([names[int(r["truth"])] for r in mine], [names[int(r["predicted"])] for r in mine])
    return out


def bootstrap_interval(differences, rng):
    means = [rng.choice(differences, len(differences)).mean() for _ in range(4000)]
    return np.percentile(means, [2.5, 97.5])


def main():
    p = argparse.ArgumentParser()
    p.add_argument("tinct"), p.add_argument("tool"), p.add_argument("l7"), p.add_argument("work")
    p.add_argument("--seeds", type=int, nargs="+", default=[1, 2])
    p.add_argument("--budgets", type=int, nargs="+", default=[5, 15])
    p.add_argument("--tasks", nargs="+", default=["index", "visible"])
    p.add_argument("--arms", nargs="+", default=list(ARMS))
    p.add_argument("--pretrain-steps", type=int, default=400)
    p.add_argument("--threads", default="1")
    p.add_argument("--summary-only", action="store_true", help="summarise WORK/runs.csv as it stands")
    a = p.parse_args()
    if a.summary_only:
        with open(os.path.join(a.work, "runs.csv")) as f:
            rows = list(csv.DictReader(f))
        summarise([(r["task"], int(r["budget"]), int(r["seed"]), int(r["fold"]), r["arm"], float(r["macro_f1"]))
                   for r in rows], a)
        return
    a.tinct, a.tool = os.path.abspath(a.tinct), os.path.abspath(a.tool)
    work = os.path.abspath(a.work)
    os.makedirs(work, exist_ok=True)
    ds, tasks = task_classes(os.path.abspath(a.l7))
    tasks = {t: tasks[t] for t in a.tasks}
    write_inputs(work, os.path.abspath(a.l7), tasks, ds, a.threads, os.path.abspath(a.tinct), a.pretrain_steps)
    results = []  # (task, budget, seed, fold, arm, macro F1)
    for task, (_, names) in tasks.items():
        for budget in a.budgets:
            for seed in a.seeds:
                for fold in range(FOLDS):
                    split = f"{task}_b{budget}_s{seed}_f{fold}"
                    # the probe run first: its features.csv names the split's training and test chips
                    _, _, folder = finetune(work, a.tinct, a.threads, task, "colour_probe", budget, seed, fold)
                    train, test = chips_of(folder)
                    for method, (truth, predicted) in baselines(work, os.path.abspath(a.tool), task, names, split,
                                                                seed, train, test).items():
                        results.append((task, budget, seed, fold, method, f1_score(truth, predicted, average="macro")))
                    for arm in a.arms:
                        truth, predicted, _ = finetune(work, a.tinct, a.threads, task, arm, budget, seed, fold)
                        results.append((task, budget, seed, fold, arm, f1_score(truth, predicted, average="macro")))
                    print(f"{split}: " + ", ".join(f"{r[4]} {r[5]:.3f}" for r in results if r[:4] == (task, budget, seed, fold)),
                          flush=True)
                    with open(os.path.join(work, "runs.csv"), "w") as f:
                        f.write("task,budget,seed,fold,arm,macro_f1\n")
                        f.writelines(",".join(map(str, r[:5])) + f",{r[5]:.4f}\n" for r in results)
    summarise(results, a)


def summarise(results, a):
    rng = np.random.default_rng(0)
    arms = BASELINES + a.arms
    print(f"\n{'task':8} {'budget':>6} {'arm':26} {'n':>3} {'macro F1':>9} {'sd':>6}  {'vs best baseline (95% CI)':>28}")
    for task in a.tasks:
        for budget in a.budgets:
            by_arm = {arm: {(r[2], r[3]): r[5] for r in results if r[0] == task and r[1] == budget and r[4] == arm}
                      for arm in arms}
            best = max(BASELINES, key=lambda m: np.mean(list(by_arm[m].values())))
            for arm in arms:
                values = by_arm[arm]
                if not values:
                    continue
                keys = sorted(values)
                line = f"{task:8} {budget:6d} {arm:26} {len(values):3d} {np.mean(list(values.values())):9.3f} " \
                       f"{np.std(list(values.values()), ddof=1) if len(values) > 1 else 0:6.3f}"
                if arm != best:
                    d = np.array([values[k] - by_arm[best][k] for k in keys])
                    low, high = bootstrap_interval(d, rng)
                    line += f"  {d.mean():+.3f} [{low:+.3f}, {high:+.3f}] vs {best}"
                if arm not in BASELINES and arm != "global" and by_arm.get("global"):
                    d = np.array([values[k] - by_arm["global"][k] for k in keys])
                    low, high = bootstrap_interval(d, rng)
                    line += f"  {d.mean():+.3f} [{low:+.3f}, {high:+.3f}] vs global"
                print(line)


if __name__ == "__main__":
    main()
