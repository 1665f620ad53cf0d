"""tinct pair's co-registration check with a colour raster: a generated scene and a
colour composite of the same texture shifted by a known amount (scipy.ndimage.shift,
cubic spline). A 1.3 px shift must be measured within 0.15 px, an unshifted pair under
0.1 px; a 3 px shift is refused above the default 2 px limit (no store left behind)
unless coregistration.allow_large_shift is set."""
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import ndimage

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import VISIBLE_NIR_SWIR, Checks, texture, write, write_profile  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
SIZE = 512


def make_pair(work, name, shift_x, shift_y):
    base = texture(SIZE + 32, SIZE + 32, seed=7, scale=4.0)
    scene = base[16:16 + SIZE, 16:16 + SIZE]
    bands = [(1000 + 3000 * scene * f).astype(np.uint16) for f in (0.8, 0.9, 1.0, 1.4)]
    write(os.path.join(work, f"{name}-scene.tif"), bands, dtype="uint16", nodata=0)
    # Content moved right by shift_x and down by shift_y.
    moved = ndimage.shift(base, (shift_y, shift_x), order=3, mode="nearest")[16:16 + SIZE, 16:16 + SIZE]
    rgb = [(np.clip(moved * 255 * f, 0, 255)).astype(np.uint8) for f in (1.0, 0.9, 0.8)]
    write(os.path.join(work, f"{name}-colour.tif"), rgb, dtype="uint8")


def pair(work, name, extra=""):
    config = os.path.join(work, f"{name}.yaml")
    with open(config, "w") as f:
        f.write(f"""config: pair
sensor: test-rgbn.yaml
output: {name}.pairs
inputs: [nir]
colour: {{source: raster}}
coregistration: {{window: 128, windows: 9{extra}}}
chips: {{size: 64, min_valid: 0.5}}
scenes:
  - {{path: {name}-scene.tif, bands: [blue, green, red, nir], date: 2026-07-01, colour: {name}-colour.tif}}
""")
    return subprocess.run([TINCT, "pair", config], capture_output=True, text=True)


with tempfile.TemporaryDirectory() as work:
    write_profile(work, "test-rgbn", VISIBLE_NIR_SWIR[:4])
    for name, sx, sy in (("shifted", 1.3, 0.0), ("diagonal", 0.9, -0.9), ("aligned", 0.0, 0.0)):
        make_pair(work, name, sx, sy)
        run = pair(work, name)
        checks.check(run.returncode == 0, f"{name}: exit {run.returncode}: {run.stderr}")
        if run.returncode:
            continue
        notes = Store(os.path.join(work, f"{name}.pairs")).manifest["scenes"][0]["notes"]
        dx, dy = float(notes["colour_shift_dx_px"]), float(notes["colour_shift_dy_px"])
        print(f"{name}: true ({sx}, {sy}) px, measured ({dx:.3f}, {dy:.3f}) px")
        error = np.hypot(dx - sx, dy - sy)
        checks.check(error < (0.1 if name == "aligned" else 0.15), f"{name}: error {error:.3f} px")
        if name == "shifted":
            checks.check("above 0.50 px" in run.stderr and "warning" in run.stderr, "a 1.3 px shift warns")

    make_pair(work, "far", 3.0, 0.0)
    run = pair(work, "far")
    checks.check(run.returncode == 1, f"3 px shift: exit {run.returncode}, expected 1")
    checks.check("exceeds coregistration.limit_px" in run.stderr, f"3 px message: {run.stderr}")
    checks.check(not os.path.exists(os.path.join(work, "far.pairs")) and
                 not os.path.exists(os.path.join(work, "far.pairs.partial")), "no store after refusal")
    run = pair(work, "far", ", allow_large_shift: true")
    checks.check(run.returncode == 0, f"allowed 3 px shift: exit {run.returncode}")

checks.finish()
