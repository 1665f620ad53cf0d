"""Pixel baselines against scikit-learn on real data: the Landsat 7 ETM+ subset shipped in
Debian's r-cran-stars (L7_ETMs.tif, REFERENCES.md section 6).

Task: sites on a 12-pixel grid, classed at the site by published spectral-index rules on
GDAL's pixels: water where NDWI = (green - NIR) / (green + NIR) > 0 (McFeeters 1996),
vegetation where NDVI = (NIR - red) / (NIR + red) > 0.3 (Rouse et al. 1974; 0.3 a
common-practice threshold), other land otherwise; the classifiers see the infrared bands
B4, B5 and B7 only (not the visible bands of the rules). `tinct label` builds the label store
(chips of 8 px, spatial blocks of 2000 m). Splits: the blocks dealt into 3 folds (one is the
test side), budgets of 5 and 15 training chips per class drawn from the other folds, 2 draws
each, and all the other folds' chips (imbalanced classes): 15 splits.

Compared:
1. Features: baseline_tool's label-pixel and 3 x 3 mean features of every chip equal GDAL's
   pixels at the site (pixel: exactly; mean: numpy's, to float32 rounding), and the chip's
   label pixel (size/2, size/2) is the site's pixel.
2. Per split, the accuracy on the test chips of tinct's random forest (OpenCV RTrees) and of
   scikit-learn's RandomForestClassifier (200 trees, max_features "sqrt", grown out,
   bootstrap, class_weight "balanced") on the very same feature rows; and of tinct's
   logistic regression (OpenCV) and scikit-learn's LogisticRegression(C=1,
   multi_class="ovr", lbfgs) on features standardised with the training rows' mean and sd,
   sample_weight n_max / n_c (what tinct's balanced resampling amounts to). The mean over
   splits of |accuracy difference| must be within 0.02 for each method (scikit-learn's own
   forest with another random_state differs from itself by about 0.011 here). On the budgeted
   splits (5 or 15 rows of every class, so no resampling) the two logistic regressions
   minimise the very same objective: their probabilities must agree within 0.001. On the
   imbalanced splits tinct's resampling repeats some rows once more than others, so there
   only the accuracy is compared.
"""
import csv
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal
from sklearn.ensemble import RandomForestClassifier
from sklearn.linear_model import LogisticRegression
from sklearn.preprocessing import StandardScaler

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
TOOL = sys.argv[1]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
NAMES = ["water", "vegetation", "other"]
CHIP = 8
checks = Checks()

ds = gdal.Open(L7)
gt = ds.GetGeoTransform()
dn = {b: ds.GetRasterBand(b).ReadAsArray().astype(np.float64) for b in range(1, 7)}
green, red, nir = dn[2], dn[3], dn[4]
ndvi = (nir - red) / (nir + red)
ndwi = (green - nir) / (green + nir)
cover = np.where(ndwi > 0, 0, np.where(ndvi > 0.3, 1, 2))
sites = [(col, row) for row in range(10, ds.RasterYSize - 10, 12) for col in range(10, ds.RasterXSize - 10, 12)]
site_class = {s: int(cover[s[1], s[0]]) for s in sites}


def read_csv(path):
    with open(path) as f:
        return list(csv.DictReader(f))


def make_splits(chips):
    """chips: rows of chips.csv. Returns {name: (seed, train indices, test indices)}."""
    rng = np.random.default_rng(3)
    blocks = sorted({c["block"] for c in chips})
    order = rng.permutation(len(blocks))
    fold_of = {blocks[b]: i % 3 for i, b in enumerate(order)}
    classes = np.array([NAMES.index(c["label"]) for c in chips])
    splits = {}
    for fold in range(3):
        test = [i for i, c in enumerate(chips) if fold_of[c["block"]] == fold]
        rest = np.array([i for i, c in enumerate(chips) if fold_of[c["block"]] != fold])
        for budget in (5, 15):
            for draw in range(2):
                seed = 100 * fold + 10 * budget + draw
                pick = np.random.default_rng(seed)
                train = np.concatenate([pick.choice(rest[classes[rest] == k], budget, replace=False)
                                        for k in range(3)])
                splits[f"fold{fold}_budget{budget}_draw{draw}"] = (seed, sorted(train.tolist()), test)
        splits[f"fold{fold}_all"] = (100 * fold, sorted(rest.tolist()), test)
    return splits


with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,x,y,cover\n")
        for i, (col, row) in enumerate(sites):
            x, y = gt[0] + (col + 0.5) * gt[1], gt[3] + (row + 0.5) * gt[5]
            f.write(f"site{i},{x},{y},{NAMES[site_class[(col, row)]]}\n")
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write(f"""config: label
output: l7.labels
sensor: landsat7-etm
inputs: [B4, B5, B7]
grid: {{resolution: 28.5}}
scenes: [{{path: {L7}, date: 2000-02-01}}]
labels: {{source: sites.csv, class: cover, x: x, y: y, crs: EPSG:31985, id: id, classes: [{", ".join(NAMES)}]}}
chips: {{size: {CHIP}, min_valid: 0.9, block_size: 2000}}
""")
    run = subprocess.run([TINCT, "--threads", "1", "label", "label.yaml"], capture_output=True, text=True, cwd=work)
    checks.check(run.returncode == 0, f"tinct label: exit {run.returncode}\n{run.stderr[-1500:]}")
    if run.returncode:
        checks.finish()
    store = os.path.join(work, "l7.labels")
    chips = read_csv(os.path.join(store, "chips.csv"))
    checks.check(len(chips) == len(sites), f"{len(chips)} chips for {len(sites)} sites")
    splits = make_splits(chips)
    with open(os.path.join(work, "splits.csv"), "w") as f:
        f.write("split,seed,role,chip\n")
        for name, (seed, train, test) in splits.items():
            f.writelines(f"{name},{seed},train,{i}\n" for i in train)
            f.writelines(f"{name},{seed},test,{i}\n" for i in test)
    run = subprocess.run([TOOL, store, os.path.join(work, "splits.csv"), work], capture_output=True, text=True)
    checks.check(run.returncode == 0, f"baseline_tool: exit {run.returncode}\n{run.stderr[-1500:]}")
    if run.returncode:
        checks.finish()
    features = read_csv(os.path.join(work, "features.csv"))
    predictions = read_csv(os.path.join(work, "predictions.csv"))

# 1. Features against GDAL's pixels.
columns = ["B4", "B5", "B7", "B4_3x3", "B5_3x3", "B7_3x3"]
X = np.array([[float(r[c]) for c in columns] for r in features])
y = np.array([int(r["class"]) for r in features])
worst_pixel = worst_mean = 0.0
misplaced = 0
for i, chip in enumerate(chips):
    col, row = int(chip["col"]) + CHIP // 2, int(chip["row"]) + CHIP // 2
    site = sites[int(chip["source_id"][4:])]
    misplaced += (col, row) != site
    for b, band in enumerate((4, 5, 6)):  # ETM+ B4, B5, B7 are the file's bands 4, 5, 6
        worst_pixel = max(worst_pixel, abs(X[i, b] - dn[band][row, col]))
        worst_mean = max(worst_mean, abs(X[i, 3 + b] - dn[band][row - 1:row + 2, col - 1:col + 2].mean()))
    checks.check(y[i] == NAMES.index(chip["label"]), f"chip {i}: class {y[i]} but chips.csv says {chip['label']}")
print(f"features of {len(chips)} chips against GDAL: pixel max |diff| {worst_pixel}, "
      f"3x3 mean max |diff| {worst_mean:.2e}; {misplaced} label pixels off their site")
checks.check(misplaced == 0, f"{misplaced} chips' label pixel (size/2, size/2) is not their site's pixel")
checks.check(worst_pixel == 0, f"label-pixel features differ from GDAL's DN by up to {worst_pixel}")
checks.check(worst_mean < 1e-4, f"3 x 3 means differ from numpy's by up to {worst_mean}")
print("class counts (water, vegetation, other):", np.bincount(y, minlength=3).tolist())


# 2. Accuracy per split against scikit-learn.
def sklearn_accuracies(seed, train, test):
    Xtr, ytr, Xte, yte = X[train], y[train], X[test], y[test]
    forest = RandomForestClassifier(n_estimators=200, max_features="sqrt", min_samples_split=2, bootstrap=True,
                                    class_weight="balanced", random_state=seed).fit(Xtr, ytr)
    scaler = StandardScaler().fit(Xtr)
    counts = np.bincount(ytr, minlength=3)
    weight = counts.max() / counts[ytr]
    logistic = LogisticRegression(C=1.0, multi_class="ovr", solver="lbfgs", tol=1e-10, max_iter=10000)
    logistic.fit(scaler.transform(Xtr), ytr, sample_weight=weight)
    return ((forest.predict(Xte) == yte).mean(), (logistic.predict(scaler.transform(Xte)) == yte).mean(),
            logistic.predict_proba(scaler.transform(Xte)))


differences = {"random_forest": [], "logistic_regression": []}
probability_gap = []
print(f"{'split':24} {'n test':>6} {'RF tinct':>9} {'RF sklearn':>10} {'LR tinct':>9} {'LR sklearn':>10}")
for name, (seed, train, test) in splits.items():
    forest_sk, logistic_sk, probabilities_sk = sklearn_accuracies(seed, train, test)
    ours = {}
    for method in differences:
        rows = [r for r in predictions if r["split"] == name and r["method"] == method]
        checks.check([int(r["chip"]) for r in rows] == test, f"{name} {method}: predictions are not for the test chips")
        checks.check(all(int(r["truth"]) == y[int(r["chip"])] for r in rows), f"{name} {method}: truth differs")
        ours[method] = np.mean([r["truth"] == r["predicted"] for r in rows])
        if method == "logistic_regression":
            mine = np.array([[float(r[f"p{k}"]) for k in range(3)] for r in rows])
            if "budget" in name:  # balanced: both minimise the very same objective
                probability_gap.append(np.abs(mine - probabilities_sk).max())
    differences["random_forest"].append(ours["random_forest"] - forest_sk)
    differences["logistic_regression"].append(ours["logistic_regression"] - logistic_sk)
    print(f"{name:24} {len(test):6d} {ours['random_forest']:9.3f} {forest_sk:10.3f} "
          f"{ours['logistic_regression']:9.3f} {logistic_sk:10.3f}")

for method, diff in differences.items():
    diff = np.array(diff)
    print(f"{method}: mean |accuracy difference| {np.abs(diff).mean():.4f}, mean difference {diff.mean():+.4f}, "
          f"largest {np.abs(diff).max():.4f} over {len(diff)} splits")
    checks.check(np.abs(diff).mean() <= 0.02, f"{method}: mean |accuracy difference| {np.abs(diff).mean():.4f} > 0.02")
print(f"logistic regression, budgeted splits: largest |probability difference| {max(probability_gap):.2e}")
checks.check(max(probability_gap) < 1e-3, f"logistic regression probabilities differ by up to {max(probability_gap)}")
checks.finish()
