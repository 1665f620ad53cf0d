"""Preview PNGs of pretraining are readable: a header (the step, the validation delta
E, and the columns "true colour" and "predicted"), tiles enlarged to at least 192 px,
and chips chosen across the range of colour variety rather than the first validation
chips. The scene's top rows are near-black water, so the first validation chips in
store order are near black; the preview must still show mostly textured ground."""
import os
import subprocess
import sys
import tempfile

import numpy as np
from PIL import Image

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write, write_profile  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
CHIP, TILE, HEADER, GAP, PREVIEWS = 32, 192, 52, 4, 8

with tempfile.TemporaryDirectory() as work:
    write_profile(work, "test-five")
    t = texture(256, 256, seed=21)
    dark = np.zeros((256, 256), bool)
    dark[:96] = True  # three rows of chips of flat dark water
    bands = [np.where(dark, 300, 800 + 2500 * t * (0.6 + 0.15 * i)).astype(np.uint16) for i in range(5)]
    write(os.path.join(work, "scene.tif"), bands, nodata=0)
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write("config: pair\nsensor: test-five.yaml\noutput: s.pairs\ninputs: [nir, swir]\n"
                "colour: {bands: [red, green, blue]}\nchips: {size: 32, block_size: 320}\n"
                "scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]\n")
    with open(os.path.join(work, "pretrain.yaml"), "w") as f:
        f.write("config: pretrain\nstores: [s.pairs]\noutput: run\nmodel: {encoder: compact, width: 0.25}\n"
                "train: {steps: 2, batch: 4, warmup: 0}\n"
                f"validation: {{fraction: 0.5, every: 2, chips: 32, previews: {PREVIEWS}}}\n")
    for command in ("pair", "pretrain"):
        run = subprocess.run([TINCT, "--threads", "1", command, os.path.join(work, f"{command}.yaml")],
                             capture_output=True, text=True, cwd=work)
        checks.check(run.returncode == 0, f"{command}: {run.stderr}")

    png = os.path.join(work, "run", "previews", "step-00000002.png")
    checks.check(os.path.exists(png), "a preview at step 2")
    if os.path.exists(png):
        image = np.asarray(Image.open(png).convert("RGB")).astype(float)
        height, width, _ = image.shape
        print(f"preview {width} x {height} px")
        checks.check(width >= 2 * TILE and height == HEADER + PREVIEWS * (TILE + GAP), f"size {width} x {height}")
        header = image[:HEADER].mean(axis=2)
        caption, labels = header[:HEADER // 2], header[HEADER // 2:]
        left, right = labels[:, :width // 2], labels[:, width // 2:]
        for name, part in (("caption", caption), ("true colour label", left), ("predicted label", right)):
            checks.check((part < 128).sum() > 40, f"the header holds text: {name}")
        x0 = (width - (2 * TILE + GAP)) // 2
        lightness = []
        for n in range(PREVIEWS):
            y0 = HEADER + n * (TILE + GAP)
            truth = image[y0:y0 + TILE, x0:x0 + TILE]
            lightness.append(truth.mean())
        near_black = sum(v < 40 for v in lightness)
        print("mean grey level of the true-colour tiles:", " ".join(f"{v:.0f}" for v in lightness))
        checks.check(near_black <= 2, f"{near_black} of {PREVIEWS} true-colour tiles are near black")

checks.finish()
