"""A tiny tinct project for the reliability tests: one textured five-band scene with a wet
and a dry cover, a pair store, a label store of point sites, and pretrain and finetune
configs small enough to run in seconds on one thread."""
import os
import subprocess

import numpy as np

from synthetic import texture, write, write_profile

SIZE, ORIGIN, PIXEL = 160, (500000.0, 5300000.0), 10.0


def tinct_command(*args, threads=1):
    return [os.environ["TINCT"], "--threads", str(threads), *args]


def run_tinct(work, *args, prefix=(), **kwargs):
    return subprocess.run([*prefix, *tinct_command(*args)], capture_output=True, text=True, cwd=work, **kwargs)


def write_scene(work):
    write_profile(work, "test-five")
    wet = texture(SIZE, SIZE, seed=31, scale=8.0) > 0.5
    detail = texture(SIZE, SIZE, seed=32, scale=2.0)
    base, drop = [600, 700, 800, 3000, 2500], [100, 100, 300, 2400, 2200]
    bands = [(b - d * wet + 400 * detail).astype(np.uint16) for b, d in zip(base, drop)]
    write(os.path.join(work, "scene.tif"), bands, origin=ORIGIN, nodata=0)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("site,x,y,cover\n")
        n = 0
        for row in range(10, SIZE - 10, 12):
            for col in range(10, SIZE - 10, 12):
                window = wet[row - 3:row + 3, col - 3:col + 3]
                if 0.1 < window.mean() < 0.9:
                    continue
                x, y = ORIGIN[0] + (col + 0.5) * PIXEL, ORIGIN[1] - (row + 0.5) * PIXEL
                f.write(f"s{n},{x},{y},{'wet' if window.mean() >= 0.9 else 'dry'}\n")
                n += 1


PAIR = """config: pair
sensor: test-five.yaml
output: small.pairs
inputs: [nir, swir]
colour: {bands: [red, green, blue]}
chips: {size: 32, stride: 16, block_size: 640}
scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]
"""

LABEL = """config: label
sensor: test-five.yaml
output: sites.labels
inputs: [nir, swir]
scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]
labels: {source: sites.csv, class: cover, x: x, y: y, crs: EPSG:32632, id: site, classes: [dry, wet]}
chips: {size: 32, min_valid: 0.9}
"""


def write_text(work, name, text):
    with open(os.path.join(work, name), "w") as f:
        f.write(text)
    return name


def pretrain_config(work, name, steps=8, every=4, output=None, lr="0.002"):
    return write_text(work, f"{name}.yaml", f"""config: pretrain
stores: [small.pairs]
output: {output or 'runs/' + name}
model: {{encoder: compact, width: 0.5}}
train: {{steps: {steps}, batch: 8, lr: {lr}, warmup: 2, log_every: 1, seed: 5}}
validation: {{every: {every}, chips: 16, previews: 0}}
checkpoints: {{every: {every}, keep: 2}}
""")


def finetune_config(work, name, epochs=3, init="{from: scratch, model: {encoder: compact, width: 0.5}}",
                    output=None, lr="0.003"):
    return write_text(work, f"{name}.yaml", f"""config: finetune
stores: [sites.labels]
output: {output or 'runs/' + name}
init: {init}
freeze: {{policy: full}}
split: {{method: blocks, block_size: 640, folds: 4, fold: 2}}
train: {{epochs: {epochs}, batch: 16, lr: {lr}, warmup: 2, seed: 3, patience: 100}}
""")


def make_stores(work):
    """Writes the scene, labels and both stores; returns (ok, message)."""
    write_scene(work)
    write_text(work, "pair.yaml", PAIR)
    write_text(work, "label.yaml", LABEL)
    for command, config in (("pair", "pair.yaml"), ("label", "label.yaml")):
        run = run_tinct(work, command, config)
        if run.returncode:
            return False, f"{command}: {run.stderr}"
    return True, ""


def write_input_stack(work, name="inputs.tif"):
    """The scene's nir and swir bands as one raster: what a run on the stores takes, for `tinct map RUN RASTER`."""
    from osgeo import gdal
    scene = gdal.Open(os.path.join(work, "scene.tif"))
    bands = [scene.GetRasterBand(i).ReadAsArray() for i in (4, 5)]
    write(os.path.join(work, name), bands, origin=ORIGIN, nodata=0)
    return name


def flip_bytes(path, offset, count=8):
    with open(path, "r+b") as f:
        f.seek(offset)
        data = bytearray(f.read(count))
        f.seek(offset)
        f.write(bytes(b ^ 0x5A for b in data))
