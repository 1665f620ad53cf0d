"""Fine-tuning on real data: the Landsat 7 ETM+ subset shipped in Debian's
r-cran-stars (L7_ETMs.tif, REFERENCES.md section 6). Sites are labelled by
published spectral-index rules computed with numpy on GDAL's pixels: water where
NDWI = (green - NIR) / (green + NIR) > 0 (McFeeters 1996), vegetation where
NDVI = (NIR - red) / (NIR + red) > 0.3 (Rouse et al. 1974; 0.3 a common-practice
threshold), other land otherwise; only sites whose 3 x 3 neighbourhood agrees are
kept. The classifier sees ETM+ bands 4, 5 and 7 only (not the bands of the rule
other than NIR), pretrained on pairs of the same scene, fine-tuned with 30 labels
per class on spatial block folds: test macro F1 must be well above chance (1/3)."""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
checks = Checks()

ds = gdal.Open(L7)
gt = ds.GetGeoTransform()
green, red, nir = (ds.GetRasterBand(b).ReadAsArray().astype(np.float64) for b in (2, 3, 4))
ndvi = (nir - red) / (nir + red)
ndwi = (green - nir) / (green + nir)
cover = np.where(ndwi > 0, 0, np.where(ndvi > 0.3, 1, 2))  # 0 water, 1 vegetation, 2 other
names = ["water", "vegetation", "other"]
rng = np.random.default_rng(7)
sites = []
for row in range(10, ds.RasterYSize - 10, 4):
    for col in range(10, ds.RasterXSize - 10, 4):
        window = cover[row - 1:row + 2, col - 1:col + 2]
        if (window == cover[row, col]).all():
            sites.append((col, row, cover[row, col]))
counts = np.bincount([s[2] for s in sites], minlength=3)
print("homogeneous sites per class:", dict(zip(names, counts.tolist())))

with tempfile.TemporaryDirectory() as work:
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,x,y,cover\n")
        for i, (col, row, c) in enumerate(sites):
            x, y = gt[0] + (col + 0.5) * gt[1], gt[3] + (row + 0.5) * gt[5]
            f.write(f"site{i},{x},{y},{names[c]}\n")
    common = f"""sensor: landsat7-etm
inputs: [B4, B5, B7]
grid: {{resolution: 28.5}}
scenes: [{{path: {L7}, date: 2000-02-01}}]
"""
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write("config: pair\noutput: l7.pairs\n" + common +
                "colour: {bands: [B3, B2, B1]}\nchips: {size: 16, stride: 8, block_size: 2000}\n")
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write("config: label\noutput: l7.labels\n" + common +
                "labels: {source: sites.csv, class: cover, x: x, y: y, crs: EPSG:31985, id: id, "
                "classes: [water, vegetation, other]}\nchips: {size: 16, min_valid: 0.9}\n")
    with open(os.path.join(work, "pretrain.yaml"), "w") as f:
        f.write("""config: pretrain
stores: [l7.pairs]
output: runs/pre
model: {encoder: compact, width: 0.5}
train: {steps: 150, batch: 32, lr: 0.003, warmup: 10, seed: 1}
validation: {every: 150, chips: 64, previews: 0}
""")
    with open(os.path.join(work, "finetune.yaml"), "w") as f:
        f.write("""config: finetune
stores: [l7.labels]
output: runs/ft
init: {from: pretrain, run: runs/pre}
budget: {per_class: 30}
split: {method: blocks, block_size: 2000, folds: 3, fold: 0}
train: {epochs: 30, batch: 16, lr: 0.002, seed: 4, patience: 10}
""")
    for args in (["pair", "pair.yaml"], ["label", "label.yaml"], ["pretrain", "pretrain.yaml"],
                 ["finetune", "finetune.yaml"]):
        # One thread: ctest runs two tests at once on two cores.
        run = subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=work)
        checks.check(run.returncode == 0, f"tinct {args[0]}: exit {run.returncode}\n{run.stderr[-1500:]}")
        if run.returncode:
            checks.finish()
    metrics = json.load(open(os.path.join(work, "runs", "ft", "metrics.json")))
    print(f"test macro F1 {metrics['macro_f1']:.3f}, accuracy {metrics['accuracy']:.3f}, "
          f"kappa {metrics['kappa']:.3f} on {metrics['count']} held-out chips")
    checks.check(metrics["macro_f1"] > 0.6, f"macro F1 {metrics['macro_f1']:.3f} is not well above chance (0.33)")

checks.finish()
