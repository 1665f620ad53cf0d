"""tinct check knows what a run would refuse, and says where: chip sizes that no
encoder takes (pair and label want multiples of 16; resnet18 wants 32), split.fold
outside 0 .. split.folds - 1, and a label store whose chip size or bands differ from
the pretrain run it fine-tunes (every conflict at once, each with file, key and
line). The commands themselves refuse the same configs with the same messages."""
import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write, write_profile  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()


def tinct(work, *args):
    return subprocess.run([TINCT, "--threads", "1", *args], capture_output=True, text=True, cwd=work)


def write_text(work, name, text):
    with open(os.path.join(work, name), "w") as f:
        f.write(text)
    return os.path.join(work, name)


def expect(label, run, code, *phrases):
    checks.check(run.returncode == code, f"{label}: exit {run.returncode}, expected {code}\n{run.stderr}")
    for phrase in phrases:
        checks.check(phrase in run.stderr, f"{label}: message lacks '{phrase}':\n{run.stderr}")


def pair_text(size, output):
    return (f"config: pair\nsensor: test-five.yaml\noutput: {output}\ninputs: [nir, swir]\n"
            f"colour: {{bands: [red, green, blue]}}\nchips: {{size: {size}, stride: 16, block_size: 320}}\n"
            "scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]\n")


def label_text(size, inputs, output="sites.labels"):
    return (f"config: label\nsensor: test-five.yaml\noutput: {output}\ninputs: {inputs}\n"
            'labels: {source: sites.csv, class: habitat, date: seen, x: e, y: n, crs: "EPSG:32632"}\n'
            f"chips: {{size: {size}}}\n"
            "scenes: [{path: scene.tif, bands: [blue, green, red, nir, swir], date: 2026-05-05}]\n")


def finetune_text(extra="", split="{method: random, folds: 2, fold: 0}"):
    return (f"config: finetune\nstores: [sites.labels]\noutput: runs/tune\n{extra}"
            f"split: {split}\ntrain: {{epochs: 1, batch: 4}}\n")


with tempfile.TemporaryDirectory() as work:
    write_profile(work, "test-five")
    t = texture(160, 160, seed=11)
    write(os.path.join(work, "scene.tif"),
          [(800 + 2500 * t * (0.7 + 0.1 * i)).astype(np.uint16) for i in range(5)], nodata=0)
    rng = np.random.default_rng(0)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,e,n,habitat,seen\n")
        for i in range(12):
            e, n = 500000 + rng.uniform(300, 1300), 5300000 - rng.uniform(300, 1300)
            f.write(f"{i},{e:.1f},{n:.1f},{['wet', 'dry'][i % 2]},2026-05-06\n")

    # Chip sizes no encoder takes: refused by check and by the command, with sizes that would do.
    expect("pair chips of 40 px", tinct(work, "check", write_text(work, "p40.yaml", pair_text(40, "p40.pairs"))), 2,
           "p40.yaml: chips.size: 40 is not a multiple of 16", "use 32 or 48", "(line 6)")
    expect("pair command, chips of 40 px", tinct(work, "pair", os.path.join(work, "p40.yaml")), 2,
           "chips.size: 40 is not a multiple of 16")
    expect("label chips of 8 px", tinct(work, "check", write_text(work, "l8.yaml", label_text(8, "[red, nir]"))), 2,
           "chips.size: expected an integer from 16 to 1024")

    # A 48-px pair store suits the compact encoder (16) but not resnet18 (32).
    run = tinct(work, "pair", write_text(work, "p48.yaml", pair_text(48, "p48.pairs")))
    checks.check(run.returncode == 0, f"pair 48: {run.stderr}")
    pretrain = "config: pretrain\nstores: [p48.pairs]\noutput: runs/pre48\nmodel: {{encoder: {}}}\n"
    run = tinct(work, "check", write_text(work, "compact.yaml", pretrain.format("compact")))
    checks.check(run.returncode == 0, f"compact takes 48-px chips: {run.stderr}")
    expect("resnet18 on 48-px chips", tinct(work, "check", write_text(work, "resnet.yaml", pretrain.format("resnet18"))),
           2, "resnet.yaml: stores[0] (line 2): chips of 48 px, but the resnet18 encoder needs chip sides that are "
           "multiples of 32; make the store with chips.size 32 or 64")
    expect("pretrain command, resnet18 on 48-px chips", tinct(work, "pretrain", os.path.join(work, "resnet.yaml")), 2,
           "multiples of 32")
    checks.check(not os.path.exists(os.path.join(work, "runs", "pre48")), "no run folder for a refused config")

    # A pretrain run on 32-px chips of [nir, swir], and a label store of 16-px chips of [red, nir].
    run = tinct(work, "pair", write_text(work, "p32.yaml", pair_text(32, "p32.pairs")))
    checks.check(run.returncode == 0, f"pair 32: {run.stderr}")
    run = tinct(work, "pretrain", write_text(work, "pre.yaml",
                "config: pretrain\nstores: [p32.pairs]\noutput: runs/pre\nmodel: {encoder: compact, width: 0.25}\n"
                "train: {steps: 2, batch: 4, warmup: 0}\nvalidation: {every: 0, chips: 8, previews: 0}\n"))
    checks.check(run.returncode == 0, f"pretrain: {run.stderr}")
    run = tinct(work, "label", write_text(work, "label.yaml", label_text(16, "[red, nir]")))
    checks.check(run.returncode == 0, f"label: {run.stderr}")

    # split.fold must be below split.folds.
    expect("fold equal to folds", tinct(work, "check", write_text(work, "fold.yaml", finetune_text(
        "init: {from: scratch, model: {encoder: compact}}\n", "{method: random, folds: 5, fold: 5}"))), 2,
        "fold.yaml: split.fold: is 5, but folds are numbered 0 to split.folds - 1 (4) (line")

    # The label store against the pretrain run: both conflicts, each with its line.
    tune = write_text(work, "tune.yaml", finetune_text("init: {from: pretrain, run: runs/pre}\n"))
    for command in ("check", "finetune"):
        expect(f"{command}: label store unlike the pretrain run", tinct(work, command, tune), 2,
               "the stores do not suit the model (2 conflicts)",
               "tune.yaml: stores[0] (line 2): chips of 16 px, but the pretrain run",
               "runs/pre (init.run, line 4): the encoder was trained on 32 px chips; make the label store with chips.size: 32",
               "tune.yaml: stores[0] (line 2): bands [red, nir], but the pretrain run",
               "the encoder was trained on [nir, swir]; make the label store with inputs: [nir, swir], in this order")
    checks.check(not os.path.exists(os.path.join(work, "runs", "tune")), "no run folder for a refused config")

    # Made as the pretrain run says, the label store passes.
    run = tinct(work, "label", write_text(work, "label32.yaml", label_text(32, "[nir, swir]", "sites32.labels")))
    checks.check(run.returncode == 0, f"label 32: {run.stderr}")
    run = tinct(work, "check", write_text(work, "tune32.yaml", finetune_text("init: {from: pretrain, run: runs/pre}\n")
                                          .replace("sites.labels", "sites32.labels")))
    checks.check(run.returncode == 0, f"a matching label store checks: {run.stderr}")

checks.finish()
