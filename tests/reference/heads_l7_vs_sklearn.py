"""Probe heads against scikit-learn on real data: the Landsat 7 ETM+ subset shipped in
Debian's r-cran-stars (L7_ETMs.tif, REFERENCES.md section 6).

Task as in baselines_l7_vs_sklearn.py: sites on a 12-pixel grid classed by published
spectral-index rules on the visible bands and NIR (NDWI > 0 water, McFeeters 1996; NDVI > 0.3
vegetation, Rouse et al. 1974; other land otherwise); inputs B4, B5, B7 only. `tinct finetune`
fits probe heads on the frozen features of a randomly initialised compact network (no
pretraining needed to compare implementations), 15 labels per class, block fold 0 of 3, and
writes the features it fitted on (features.csv) and its test predictions (predictions.csv).

1. head {kind: knn, k: 5, pool: hypercolumn}: scikit-learn's KNeighborsClassifier(5,
   Euclidean, brute force) on the same training features, standardised with the training
   rows' mean and population sd (numpy), must predict the same class for every test chip, and
   give the same vote shares.
2. head {kind: linear_probe, l2: 0.1, pool: centre}: scikit-learn's LogisticRegression(C = 1 /
   l2 = 10, multinomial, lbfgs) on the same standardised features (balanced budget: all
   sample weights 1) must give the same test probabilities within 1e-3.
3. head {kind: linear_probe} (l2 auto): run.yaml records the inner cross-validation (l2
   chosen, folds, each grid value's held-out log loss) and features.csv each training row's
   inner fold. On the same standardised-per-inner-fold features and the same folds,
   scikit-learn (Pipeline(StandardScaler, LogisticRegression(C = 1 / l2)), cross_val_predict
   with PredefinedSplit, log_loss pooled over the held-out rows) gives every grid value's
   loss within 1e-3, and the l2 tinct chose has scikit-learn's lowest loss (ties within 1e-6
   to the stronger l2, as the grid is ordered). Test macro F1 above chance (1/3).
"""
import csv
import json
import os
import re
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal
import yaml
from sklearn.linear_model import LogisticRegression
from sklearn.metrics import log_loss
from sklearn.model_selection import PredefinedSplit, cross_val_predict
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler
from sklearn.neighbors import KNeighborsClassifier

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
NAMES = ["water", "vegetation", "other"]
checks = Checks()

ds = gdal.Open(L7)
gt = ds.GetGeoTransform()
green, red, nir = (ds.GetRasterBand(b).ReadAsArray().astype(np.float64) for b in (2, 3, 4))
ndvi = (nir - red) / (nir + red)
ndwi = (green - nir) / (green + nir)
cover = np.where(ndwi > 0, 0, np.where(ndvi > 0.3, 1, 2))
sites = [(col, row) for row in range(10, ds.RasterYSize - 10, 12) for col in range(10, ds.RasterXSize - 10, 12)]


def read_csv(path):
    with open(path) as f:
        return list(csv.DictReader(f))


def finetune(work, name, head):
    with open(os.path.join(work, f"{name}.yaml"), "w") as f:
        f.write(f"""config: finetune
stores: [l7.labels]
output: runs/{name}
init: {{from: scratch, model: {{encoder: compact, width: 0.5}}}}
head: {head}
budget: {{per_class: 15}}
split: {{method: blocks, block_size: 2000, folds: 3, fold: 0}}
train: {{seed: 2}}
""")
    run = subprocess.run([TINCT, "--threads", "1", "finetune", f"{name}.yaml"], capture_output=True, text=True,
                         cwd=work)
    checks.check(run.returncode == 0, f"tinct finetune {name}: exit {run.returncode}\n{run.stderr[-1500:]}")
    if run.returncode:
        checks.finish()
    folder = os.path.join(work, "runs", name)
    features = read_csv(os.path.join(folder, "features.csv"))
    columns = [c for c in features[0] if re.fullmatch(r"f\d+", c)]
    role = np.array([r["role"] for r in features])
    X = np.array([[float(r[c]) for c in columns] for r in features])
    y = np.array([int(r["class"]) for r in features])
    predictions = read_csv(os.path.join(folder, "predictions.csv"))
    p = np.array([[float(r[f"p_{n}"]) for n in NAMES] for r in predictions])
    predicted = np.array([NAMES.index(r["predicted"]) for r in predictions])
    truth = np.array([NAMES.index(r["true"]) for r in predictions])
    checks.check(len(predictions) == (role == "test").sum(), f"{name}: {len(predictions)} predictions for "
                 f"{(role == 'test').sum()} test rows of features.csv")
    checks.check((truth == y[role == "test"]).all(), f"{name}: features.csv and predictions.csv disagree on classes")
    train, test = X[role == "train"], X[role == "test"]
    mean, sd = train.mean(0), train.std(0)
    sd[sd == 0] = 1
    log = open(os.path.join(folder, "log.txt")).read()
    metrics = json.load(open(os.path.join(folder, "metrics.json")))
    return (train - mean) / sd, y[role == "train"], (test - mean) / sd, p, predicted, log, metrics


def raw_training_rows(folder):
    """The probe's training rows as fitted: raw features, class and inner fold (features.csv)."""
    rows = [r for r in read_csv(os.path.join(folder, "features.csv")) if r["role"] == "train"]
    columns = [c for c in rows[0] if re.fullmatch(r"f\d+", c)]
    X = np.array([[float(r[c]) for c in columns] for r in rows])
    return X, np.array([int(r["class"]) for r in rows]), np.array([int(r["inner_fold"]) for r in rows])


def sklearn_inner_cv(X, y, inner_fold, l2):
    """Pooled held-out log loss of scikit-learn's logistic regression over the given folds,
    standardised with each fold's training rows (population sd, as StandardScaler)."""
    model = make_pipeline(StandardScaler(), LogisticRegression(C=1.0 / l2, multi_class="multinomial",
                                                              solver="lbfgs", tol=1e-10, max_iter=100000))
    held_out = cross_val_predict(model, X, y, cv=PredefinedSplit(inner_fold), method="predict_proba")
    return log_loss(y, held_out, labels=[0, 1, 2])


with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,x,y,cover\n")
        for i, (col, row) in enumerate(sites):
            x, y = gt[0] + (col + 0.5) * gt[1], gt[3] + (row + 0.5) * gt[5]
            f.write(f"site{i},{x},{y},{NAMES[cover[row, col]]}\n")
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write(f"""config: label
output: l7.labels
sensor: landsat7-etm
inputs: [B4, B5, B7]
grid: {{resolution: 28.5}}
scenes: [{{path: {L7}, date: 2000-02-01}}]
labels: {{source: sites.csv, class: cover, x: x, y: y, crs: EPSG:31985, id: id, classes: [{", ".join(NAMES)}]}}
chips: {{size: 16, min_valid: 0.9, block_size: 2000}}
""")
    run = subprocess.run([TINCT, "--threads", "1", "label", "label.yaml"], capture_output=True, text=True, cwd=work)
    checks.check(run.returncode == 0, f"tinct label: exit {run.returncode}\n{run.stderr[-1500:]}")
    if run.returncode:
        checks.finish()

    # 1. kNN
    Xtr, ytr, Xte, p, predicted, _, _ = finetune(work, "knn", "{kind: knn, k: 5, pool: hypercolumn}")
    print(f"knn: {Xtr.shape[0]} training rows, {Xte.shape[0]} test rows, {Xtr.shape[1]} features")
    checks.check(Xtr.shape[0] == 45, f"knn: {Xtr.shape[0]} training rows, expected 15 per class")
    knn = KNeighborsClassifier(n_neighbors=5, algorithm="brute", metric="euclidean").fit(Xtr, ytr)
    agree = (knn.predict(Xte) == predicted).mean()
    share_gap = np.abs(knn.predict_proba(Xte) - p).max()
    print(f"knn: predictions agree with scikit-learn on {agree:.4f} of test chips; largest share gap {share_gap:.2e}")
    checks.check(agree == 1.0, f"knn: predictions agree with scikit-learn on only {agree:.4f}")
    checks.check(share_gap < 1e-6, f"knn: vote shares differ from scikit-learn's by {share_gap}")

    # 2. linear probe with a given l2
    Xtr, ytr, Xte, p, predicted, _, _ = finetune(work, "probe", "{kind: linear_probe, l2: 0.1, pool: centre}")
    logistic = LogisticRegression(C=10.0, multi_class="multinomial", solver="lbfgs", tol=1e-10, max_iter=100000)
    logistic.fit(Xtr, ytr)
    gap = np.abs(logistic.predict_proba(Xte) - p).max()
    agree = (logistic.predict(Xte) == predicted).mean()
    print(f"linear probe (l2 0.1, {Xtr.shape[1]} features): largest |probability difference| {gap:.2e}, "
          f"predictions agree on {agree:.4f}")
    checks.check(gap < 1e-3, f"linear probe: probabilities differ from scikit-learn's by up to {gap}")

    # 3. linear probe, l2 by inner cross-validation
    _, _, _, _, _, log, metrics = finetune(work, "auto", "{kind: linear_probe, pool: hypercolumn}")
    folder = os.path.join(work, "runs", "auto")
    record = yaml.safe_load(open(os.path.join(folder, "run.yaml"))).get("probe", {})
    checks.check(record.get("l2_chosen_by") == "inner_cv", f"run.yaml's probe record: {record}")
    chosen = re.search(r"linear probe on \d+ features, l2 ([0-9.e+-]+) \((\d)-fold inner cross-validation\)", log)
    checks.check(chosen is not None, "linear probe: the log does not name the l2 inner cross-validation chose")
    if record.get("l2_chosen_by") == "inner_cv":
        X, y, inner_fold = raw_training_rows(folder)
        counts = np.bincount(y, minlength=3)
        checks.check((counts == counts[0]).all(), f"budget not balanced ({counts}): sample weights would not be 1")
        checks.check(sorted(set(inner_fold)) == list(range(record["inner_folds"])),
                     f"features.csv names inner folds {sorted(set(inner_fold))}, run.yaml {record['inner_folds']}")
        grid = [row["l2"] for row in record["inner_cv"]]
        tinct_loss = np.array([row["log_loss"] for row in record["inner_cv"]])
        sklearn_loss = np.array([sklearn_inner_cv(X, y, inner_fold, l2) for l2 in grid])
        for l2, ours, theirs in zip(grid, tinct_loss, sklearn_loss):
            print(f"inner CV l2 {l2:g}: tinct {ours:.5f}, scikit-learn {theirs:.5f}")
        gap = np.abs(tinct_loss - sklearn_loss).max()
        checks.check(gap < 1e-3, f"inner-CV log losses differ from scikit-learn's by up to {gap}")
        best = grid[int(np.flatnonzero(sklearn_loss <= sklearn_loss.min() + 1e-6)[0])]
        print(f"linear probe (l2 auto): tinct chose l2 {record['l2']:g} by {record['inner_folds']}-fold inner CV, "
              f"scikit-learn's best {best:g}; test macro F1 {metrics['macro_f1']:.3f}")
        checks.check(record["l2"] == best, f"tinct chose l2 {record['l2']}, scikit-learn's inner CV {best}")
        checks.check(chosen is not None and float(chosen.group(1)) == record["l2"], "log and run.yaml disagree")
    checks.check(metrics["macro_f1"] > 0.4, f"linear probe: test macro F1 {metrics['macro_f1']:.3f} near chance")
checks.finish()
