"""tinct pair on real data: the Landsat 7 ETM+ subset shipped in Debian's
r-cran-stars (L7_ETMs.tif; bands ETM+ 1,2,3,4,5,7; REFERENCES.md section 6), with
inputs B4, B5, B7 and colour from B3, B2, B1.

Checked against outside references:
- every chip's band values equal GDAL's own windowed read of the same pixels;
- the manifest's per-band statistics equal numpy (mean, population std, and
  np.percentile 2 / 98, numpy's default linear rule) over the same pixels;
- chips.csv centres equal the geotransform (REFERENCES.md: origin 288776.25,
  9120760.75, 28.5 m pixels) applied to the chip's col/row;
- the manifest's CRS (and each scene's) is GDAL's CRS of the file (osr IsSame), and
  its pixel_size GDAL's pixel size;
- the colour equals scikit-image 0.19 rgb2lab of the 2-98 % stretched composite
  (stretch percentiles by numpy over the whole scene), within 2 codes as
  REFERENCES.md section 2 allows for the 8-bit encoding."""
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal
from skimage.color import rgb2lab

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store, grid_problems  # noqa: E402
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
SIZE = 32
checks = Checks()

with tempfile.TemporaryDirectory() as work:
    config = os.path.join(work, "pair.yaml")
    with open(config, "w") as f:
        f.write(f"""config: pair
sensor: landsat7-etm
output: l7.pairs
inputs: [B4, B5, B7]
colour: {{bands: [B3, B2, B1]}}
grid: {{resolution: 28.5}}
chips: {{size: {SIZE}, stride: {SIZE}, min_valid: 0.5, block_size: 3000}}
scenes:
  - path: {L7}
    date: 2000-02-01
""")
    run = subprocess.run([TINCT, "pair", config], capture_output=True, text=True)
    print(run.stderr)
    checks.check(run.returncode == 0, f"tinct pair exited {run.returncode}")
    if run.returncode != 0:
        checks.finish()
    store = Store(os.path.join(work, "l7.pairs"))
    ds = gdal.Open(L7)
    gt = ds.GetGeoTransform()
    scene = np.stack([ds.GetRasterBand(b).ReadAsArray().astype(np.float64) for b in range(1, 7)])

    expected = (349 // SIZE) * (352 // SIZE)
    checks.check("aligning" not in run.stderr, "the native 28.5 m grid is read without warping")
    checks.check(store.count == expected, f"chip count {store.count}, expected {expected}")
    checks.check(store.band_names == ["B4", "B5", "B7"], f"band names {store.band_names}")
    inputs = [3, 4, 5]  # 0-based positions of ETM+ 4, 5, 7 in the file
    pixels = [[] for _ in inputs]
    for i, chip in enumerate(store.chips):
        col, row = int(chip["col"]), int(chip["row"])
        for k, b in enumerate(inputs):
            window = ds.GetRasterBand(b + 1).ReadAsArray(col, row, SIZE, SIZE)
            if not np.array_equal(store.bands[i, k], window):
                checks.check(False, f"chip {i} band {k} differs from GDAL's windowed read")
            pixels[k].append(window.ravel())
        x = gt[0] + (col + SIZE / 2) * gt[1]
        y = gt[3] + (row + SIZE / 2) * gt[5]
        checks.check(abs(float(chip["x"]) - x) < 1e-6 and abs(float(chip["y"]) - y) < 1e-6,
                     f"chip {i} centre {chip['x']},{chip['y']} vs {x},{y}")
    checks.check(store.valid.all(), "every pixel of L7 is valid (no nodata)")
    for k, name in enumerate(store.band_names):
        stats = store.manifest["statistics"][name]
        values = np.concatenate(pixels[k]).astype(np.float64)
        checks.check(int(stats["count"]) == values.size, f"band {k} count")
        checks.check(abs(float(stats["mean"]) - values.mean()) < 1e-9, f"band {k} mean {stats['mean']} vs {values.mean()}")
        checks.check(abs(float(stats["std"]) - values.std()) < 1e-9, f"band {k} std {stats['std']} vs {values.std()}")
        for key, p in (("p02", 2), ("p98", 98)):
            checks.check(abs(float(stats[key]) - np.percentile(values, p)) < 1e-9,
                         f"band {k} {key} {stats[key]} vs numpy {np.percentile(values, p)}")

    # Colour: per-scene 2-98 % stretch of B3, B2, B1, then skimage's rgb2lab, encoded.
    rgb_bands = [scene[2], scene[1], scene[0]]
    stretched = []
    for band in rgb_bands:
        low, high = np.percentile(band, 2), np.percentile(band, 98)
        stretched.append(np.clip((band - low) / (high - low), 0, 1))
    lab = rgb2lab(np.dstack(stretched))
    codes = np.dstack([lab[..., 0] * 255 / 100, lab[..., 1] + 128, lab[..., 2] + 128])
    worst = 0.0
    for i, chip in enumerate(store.chips):
        col, row = int(chip["col"]), int(chip["row"])
        ref = codes[row:row + SIZE, col:col + SIZE].transpose(2, 0, 1)
        worst = max(worst, float(np.abs(store.colour[i].astype(np.float64) - ref).max()))
    print(f"colour: max |tinct - skimage| = {worst:.3f} codes")
    checks.check(worst <= 2.0, f"colour codes differ from skimage by up to {worst}")

    shift = float(store.manifest["scenes"][0]["notes"]["colour_shift_px"])
    checks.check(shift < 0.1, f"colour from the scene's own bands: shift {shift} px should be ~0")
    problems = grid_problems(store, L7)
    checks.check(not problems, f"the store's CRS and pixel size are the scene's as GDAL reads it: {problems}")
    blocks = {c["block"] for c in store.chips}
    checks.check(len(blocks) > 4, f"3 km blocks over a 10 x 10 km subset: {len(blocks)}")

checks.finish()
