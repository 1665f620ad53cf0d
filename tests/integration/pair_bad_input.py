"""tinct pair on bad input: each case exits with the documented code (2 usage or
config, 1 runtime), says what is wrong and where, and leaves no store (nor a
.partial folder) behind. Also --shard and --force."""
import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()


def scene(work, name, origin=(500000.0, 5300000.0), nodata_everywhere=False):
    t = texture(128, 128, seed=len(name))
    bands = [(500 + 2000 * t * f).astype(np.uint16) for f in (0.8, 0.9, 1.0, 1.4)]
    if nodata_everywhere:
        bands = [np.where(np.arange(128)[None, :] % 2 == 0, 0, b).astype(np.uint16) for b in bands]
    return write(os.path.join(work, name), bands, origin=origin, nodata=0)


def config_text(scenes, inputs="[nir]", colour="{bands: [red, green, blue]}", output="out.pairs", extra=""):
    items = "\n".join(f"  - {{path: {s}, bands: [blue, green, red, nir], date: 2026-07-0{i + 1}{c}}}"
                      for i, (s, c) in enumerate(scenes))
    return f"""config: pair
sensor: {{profile: generic}}
output: {output}
inputs: {inputs}
colour: {colour}
chips: {{size: 32, min_valid: 0.9}}
{extra}scenes:
{items}
"""


def run_pair(work, text, *flags):
    path = os.path.join(work, "pair.yaml")
    with open(path, "w") as f:
        f.write(text)
    return subprocess.run([TINCT, "pair", path, *flags], capture_output=True, text=True)


def expect(work, label, run, code, *phrases):
    checks.check(run.returncode == code, f"{label}: exit {run.returncode}, expected {code}\n{run.stderr}")
    for phrase in phrases:
        checks.check(phrase in run.stderr, f"{label}: message lacks '{phrase}':\n{run.stderr}")
    leftovers = [n for n in os.listdir(work) if n.endswith(".partial")]
    checks.check(not leftovers, f"{label}: left {leftovers}")


with tempfile.TemporaryDirectory() as work:
    good = scene(work, "a.tif")
    scene(work, "b.tif", origin=(501280.0, 5300000.0))
    scene(work, "c.tif", origin=(502560.0, 5300000.0))

    expect(work, "missing scene file", run_pair(work, config_text([("nope.tif", "")])), 2,
           "pair.yaml: scenes[0].path: file not found", "line")
    expect(work, "band not in profile", run_pair(work, config_text([("a.tif", "")], inputs="[nir, swir]")), 2,
           "inputs: band \"swir\" is not in the sensor profile generic")
    expect(work, "trivial pretext task", run_pair(work, config_text([("a.tif", "")], inputs="[nir, red]")), 2,
           "also a colour band", "allow_input_overlap")
    expect(work, "unknown key", run_pair(work, config_text([("a.tif", "")], extra="chip: {size: 32}\n")), 2,
           "chip: unknown key; did you mean \"chips\"?")

    far = write(os.path.join(work, "far-colour.tif"), [np.full((64, 64), 100, np.uint8)] * 3,
                origin=(700000.0, 5300000.0), dtype="uint8")
    expect(work, "colour raster elsewhere",
           run_pair(work, config_text([("a.tif", ", colour: far-colour.tif")], colour="{source: raster}")), 1,
           "far-colour.tif: the colour raster does not overlap")

    scene(work, "holes.tif", nodata_everywhere=True)
    expect(work, "every chip rejected", run_pair(work, config_text([("holes.tif", "")])), 1,
           "no chip passed: 16 planned", "16 below chips.min_valid 0.90")

    text = config_text([("a.tif", ""), ("b.tif", ""), ("c.tif", "")])
    run = run_pair(work, text)
    checks.check(run.returncode == 0, f"three scenes: exit {run.returncode}: {run.stderr}")
    store = Store(os.path.join(work, "out.pairs"))
    checks.check(store.count == 3 * 16, f"three scenes give 48 chips, got {store.count}")
    before = os.path.getmtime(os.path.join(work, "out.pairs", "manifest.yaml"))
    expect(work, "existing output", run_pair(work, text), 2, "out.pairs already exists", "--force")
    checks.check(os.path.getmtime(os.path.join(work, "out.pairs", "manifest.yaml")) == before,
                 "the existing store is untouched")
    run = run_pair(work, text, "--force")
    checks.check(run.returncode == 0, "--force replaces the store")

    run = run_pair(work, text, "--shard", "1/2")
    checks.check(run.returncode == 0, f"shard 1/2: exit {run.returncode}: {run.stderr}")
    shard = Store(os.path.join(work, "out.pairs.1-of-2"))
    checks.check([s["id"] for s in shard.manifest["scenes"]] == ["b"], "shard 1/2 pairs the second scene only")
    checks.check({c["scene"] for c in shard.chips} == {"b"}, "shard chips come from scene b")
    expect(work, "bad shard", run_pair(work, text, "--shard", "2/2"), 2, "--shard: expected i/n")

    check = subprocess.run([TINCT, "--quiet", "check", os.path.join(work, "pair.yaml")], capture_output=True, text=True)
    checks.check(check.returncode == 0 and "min_valid: 0.9" in check.stdout and "refine: bilinear" in check.stdout,
                 f"tinct check prints the resolved pair config:\n{check.stdout}{check.stderr}")

checks.finish()
