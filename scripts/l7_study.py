#!/usr/bin/python3
"""The heads evidence with `tinct study`: the Landsat 7 ETM+ tasks of scripts/heads_study.py.

Runs with Debian's /usr/bin/python3 (numpy, GDAL) on the subset the tests fetch
(tests/fetch_debian_test_data.sh: L7_ETMs.tif from Debian's r-cran-stars). Inputs are the
infrared bands B4, B5, B7; two label sets whose classes depend on the visible bands the inputs
lack (heads_study.py builds them: `index` water / vegetation / other by NDWI and NDVI,
`visible` terciles of the mean visible DN), one pretraining on the scene (colour from B3, B2,
B1), then one `tinct study` per task: every arm and the default pixel baselines (random forest,
logistic regression) on the same splits, SEEDS x 3 spatial block folds x budgets 5 and 15
labels per class. Each study's summary.csv, summary.json and report.html land in
WORK/studies/TASK; --keep DIR copies them (and the configs) to DIR/TASK.

usage: l7_study.py TINCT L7_ETMs.tif WORK [--seeds 1 2 3 4 5] [--tasks index visible]
                   [--arms A B ...] [--pretrain-steps 400] [--validation-every N]
                   [--parallel 2] [--keep DIR]
"""
import argparse
import os
import shutil
import subprocess
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from heads_study import task_classes, write_inputs  # noqa: E402

# name: finetune overrides. `colour_probe` and `colour_bands_probe` (the predicted colour with
# the label pixel's own input bands) are the candidate defaults for pretrained runs.
ARMS = [
    ("colour_probe", "{init: {from: pretrain, run: runs/pre}, head: {pool: colour, kind: linear_probe}}"),
    ("colour_bands_probe",
     "{init: {from: pretrain, run: runs/pre}, head: {pool: colour, kind: linear_probe, input_bands: true}}"),
    ("colour_bands_knn",
     "{init: {from: pretrain, run: runs/pre}, head: {pool: colour, kind: knn, k: 5, input_bands: true}}"),
    ("scratch", "{init: {from: scratch, run: runs/pre}, head: {pool: global, kind: trained}}"),
    ("probe", "{init: {from: pretrain, run: runs/pre}, head: {pool: global, kind: linear_probe}}"),
    ("probe_random", "{init: {from: scratch, run: runs/pre}, head: {pool: global, kind: linear_probe}}"),
    ("pretrained", "{init: {from: pretrain, run: runs/pre}, head: {pool: global, kind: trained}}"),
]
COMPARE = [("colour_probe", "random_forest"), ("colour_probe", "logistic_regression"),
           ("colour_bands_probe", "random_forest"), ("colour_bands_probe", "logistic_regression"),
           ("colour_bands_probe", "colour_probe"), ("colour_bands_knn", "random_forest"),
           ("colour_bands_knn", "logistic_regression"), ("colour_bands_probe", "scratch"),
           ("colour_probe", "scratch"), ("pretrained", "scratch"), ("probe", "probe_random"),
           ("colour_probe", "pretrained")]
BASELINES = {"random_forest", "logistic_regression"}
KEPT = ["summary.csv", "summary.json", "report.html", "study.yaml", "finetune.yaml"]


def write_study(work, task, seeds, parallel, arms):
    with open(os.path.join(work, f"{task}_finetune.yaml"), "w") as f:
        f.write(f"""config: finetune
stores: [{task}.labels]
output: runs/{task}_base
init: {{from: pretrain, run: runs/pre}}
split: {{method: blocks, block_size: 2000, folds: 3, fold: 0, seed: 1}}
train: {{epochs: 30, batch: 16, lr: 0.002, patience: 10}}
""")
    with open(os.path.join(work, f"{task}_study.yaml"), "w") as f:
        f.write(f"config: study\noutput: studies/{task}\nfinetune: {task}_finetune.yaml\narms:\n")
        f.writelines(f"  - {{name: {name}, {body[1:]}\n" for name, body in ARMS if name in arms)
        compare = [(a, b) for a, b in COMPARE if {a, b} <= set(arms) | BASELINES]
        f.write(f"""baselines: [random_forest, logistic_regression]
seeds: [{", ".join(map(str, seeds))}]
budgets: [5, 15]
folds: 3
compare: [{", ".join(f"[{a}, {b}]" for a, b in compare)}]
parallel: {parallel}
""")


def main():
    p = argparse.ArgumentParser()
    p.add_argument("tinct"), p.add_argument("l7"), p.add_argument("work")
    p.add_argument("--seeds", type=int, nargs="+", default=[1, 2, 3, 4, 5])
    p.add_argument("--tasks", nargs="+", default=["index", "visible"])
    p.add_argument("--pretrain-steps", type=int, default=400)
    p.add_argument("--validation-every", type=int,
                   help="pretraining validation (delta E) every N steps; default: once, at the end")
    p.add_argument("--parallel", type=int, default=2)
    p.add_argument("--threads", default="2")
    p.add_argument("--arms", nargs="+", default=[name for name, _ in ARMS],
                   help="a subset first; a later call with more arms reuses the finished runs")
    p.add_argument("--keep")
    a = p.parse_args()
    tinct, l7, work = os.path.abspath(a.tinct), os.path.abspath(a.l7), os.path.abspath(a.work)
    os.makedirs(work, exist_ok=True)
    ds, tasks = task_classes(l7)
    tasks = {t: tasks[t] for t in a.tasks}
    write_inputs(work, l7, tasks, ds, a.threads, tinct, a.pretrain_steps, a.validation_every)
    for task in tasks:
        write_study(work, task, a.seeds, a.parallel, a.arms)
        result = subprocess.run([tinct, "--threads", a.threads, "study", f"{task}_study.yaml"], cwd=work)
        if result.returncode:
            sys.exit(f"tinct study {task}: exit {result.returncode}")
        if a.keep:
            out = os.path.join(os.path.abspath(a.keep), task)
            os.makedirs(out, exist_ok=True)
            sources = {"study.yaml": f"{task}_study.yaml", "finetune.yaml": f"{task}_finetune.yaml"}
            for name in KEPT:
                source = os.path.join(work, sources.get(name, os.path.join("studies", task, name)))
                if os.path.exists(source):
                    shutil.copyfile(source, os.path.join(out, name))


if __name__ == "__main__":
    main()
