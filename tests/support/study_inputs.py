"""Generated inputs for study tests and benches: a five-band scene whose land cover (wet or
dry ground: much lower NIR and SWIR) is the class of sites on a jittered grid, a short
pretrain run and a label store of 16 px chips, and base finetune configs."""
import os
import subprocess

import numpy as np

from synthetic import texture, write, write_profile

ORIGIN, PIXEL = (500000.0, 5300000.0), 10.0


def build_study_inputs(work, tinct, size=320, epochs=3):
    """Writes the scene, a pretrain run, a label store and finetune configs (ft.yaml, ft-random.yaml)
    into `work`; returns (command, exit code) of each tinct command run."""
    write_profile(work, "test-five")
    wet = texture(size, size, seed=21, scale=10.0) > 0.5
    detail = texture(size, size, seed=22, scale=2.0)
    base = [600, 700, 800, 3000, 2500]
    drop = [100, 100, 300, 2400, 2200]  # wet ground: much lower NIR and SWIR
    bands = [(b - d * wet + 400 * detail).astype(np.uint16) for b, d in zip(base, drop)]
    write(os.path.join(work, "scene.tif"), bands, origin=ORIGIN, nodata=0)
    scene = "scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]"
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write(f"config: pair\nsensor: test-five.yaml\noutput: scene.pairs\ninputs: [nir, swir]\n"
                f"colour: {{bands: [red, green, blue]}}\nchips: {{size: 16, stride: 16, block_size: 640}}\n{scene}\n")
    with open(os.path.join(work, "pretrain.yaml"), "w") as f:
        f.write("config: pretrain\nstores: [scene.pairs]\noutput: runs/pre\nmodel: {encoder: compact, width: 0.5}\n"
                "train: {steps: 20, batch: 16, lr: 0.003, warmup: 2, seed: 2}\n"
                "validation: {every: 20, chips: 16, previews: 4}\n")
    rng = np.random.default_rng(5)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("site,x,y,cover,visited\n")
        n = 0
        for row in range(12, size - 12, 16):
            for col in range(12, size - 12, 16):
                r, c = row + rng.integers(-3, 4), col + rng.integers(-3, 4)
                window = wet[r - 4:r + 4, c - 4:c + 4]
                if 0.1 < window.mean() < 0.9:
                    continue
                x, y = ORIGIN[0] + (c + 0.5) * PIXEL, ORIGIN[1] - (r + 0.5) * PIXEL
                f.write(f"s{n},{x},{y},{'wet' if window.mean() >= 0.9 else 'dry'},2026-05-0{1 + n % 9}\n")
                n += 1
    with open(os.path.join(work, "label.yaml"), "w") as f:
        f.write(f"config: label\nsensor: test-five.yaml\noutput: sites.labels\ninputs: [nir, swir]\n{scene}\n"
                "labels: {source: sites.csv, class: cover, x: x, y: y, crs: EPSG:32632, date: visited, id: site, "
                "classes: [dry, wet]}\nmatch: {max_days: 30}\nchips: {size: 16, min_valid: 0.9, block_size: 640}\n")
    for split in ("blocks", "random"):
        with open(os.path.join(work, "ft.yaml" if split == "blocks" else "ft-random.yaml"), "w") as f:
            f.write(f"""config: finetune
stores: [sites.labels]
output: runs/unused
init: {{from: scratch, run: runs/pre}}
split: {{method: {split}, block_size: 640, folds: 3}}
train: {{epochs: {epochs}, batch: 16, lr: 0.003, patience: 3}}
""")
    results = []
    for args in (["pair", "pair.yaml"], ["pretrain", "pretrain.yaml"], ["label", "label.yaml"]):
        run = subprocess.run([tinct, "--threads", "2", *args], capture_output=True, text=True, cwd=work)
        if run.returncode:
            print(run.stderr[-2000:])
        results.append((" ".join(args), run.returncode))
        if run.returncode:
            break
    return results
