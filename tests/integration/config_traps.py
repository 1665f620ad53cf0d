"""Config mistakes that used to get a misleading message or pass silently:
a misspelt required key is reported as an unknown key with the nearest valid one
(not as "required"); check prints numbers as written; a class name that matches no
label is refused with the classes found; undated labels warn, and are refused when
the scenes span more than the matching window unless labels.dates_unknown says so;
without grid: the scenes' own pixel size is the grid and every resampling is logged
with both pixel sizes; a Byte colour raster honours colour.stretch and check says
which stretch a run uses; a single undated scene can be paired (labels still need
dates)."""
import os
import subprocess
import sys
import tempfile

import numpy as np
import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()


def run_tinct(work, command, name, text, *flags):
    path = os.path.join(work, name)
    with open(path, "w") as f:
        f.write(text)
    return subprocess.run([TINCT, "--threads", "1", command, path, *flags], capture_output=True, text=True,
                          cwd=work)


def expect(work, label, run, code, *phrases, absent=(), store=None):
    checks.check(run.returncode == code, f"{label}: exit {run.returncode}, expected {code}\n{run.stderr}")
    for phrase in phrases:
        checks.check(phrase in run.stderr + run.stdout, f"{label}: output lacks '{phrase}':\n{run.stderr}")
    for phrase in absent:
        checks.check(phrase not in run.stderr + run.stdout, f"{label}: output holds '{phrase}':\n{run.stderr}")
    leftovers = [n for n in os.listdir(work) if n.endswith(".partial")]
    checks.check(not leftovers, f"{label}: left {leftovers}")
    if store and code != 0:
        checks.check(not os.path.exists(os.path.join(work, store)), f"{label}: a store was written")


def pair_text(scenes, colour="{bands: [red, green, blue]}", extra="", keys=None):
    keys = keys or {}
    lines = [f"{keys.get('config', 'config')}: pair", f"{keys.get('sensor', 'sensor')}: generic",
             f"{keys.get('output', 'output')}: out.pairs", "inputs: [nir]",
             f"{keys.get('colour', 'colour')}: {colour}", "chips: {size: 32, min_valid: 0.9}"]
    return "\n".join(lines) + "\n" + extra + "scenes:\n" + "".join(f"  - {s}\n" for s in scenes)


def stack(work, name, pixel=10.0, size=96, seed=1, dtype="uint16"):
    t = texture(size, size, seed=seed)
    scale = 200 if dtype == "uint8" else 3000
    bands = [(20 + scale * t * f).astype(dtype) for f in (0.8, 0.9, 1.0, 1.2)]
    return write(os.path.join(work, name), bands, pixel=pixel, dtype=dtype, nodata=0)


with tempfile.TemporaryDirectory() as work:
    stack(work, "a.tif")
    one = "{path: a.tif, bands: [blue, green, red, nir], date: 2023-06-01}"

    # Misspelt required keys: the misspelling is named, with the key meant and its line.
    for typo, meant in (("snesor", "sensor"), ("outptu", "output"), ("colur", "colour")):
        expect(work, f"misspelt {meant}", run_tinct(work, "pair", "pair.yaml", pair_text([one], keys={meant: typo})),
               2, f'pair.yaml: {typo}: unknown key; did you mean "{meant}"?', "(line", absent=("required",))
    expect(work, "misspelt scene path",
           run_tinct(work, "pair", "pair.yaml", pair_text(["{pth: a.tif, bands: [blue, green, red, nir]}"])), 2,
           'scenes[0].pth: unknown key; did you mean "path"?')

    # check prints numbers as they were written.
    run = run_tinct(work, "check", "pair.yaml", pair_text([one], extra="coregistration: {warn_px: 0.3}\n"))
    checks.check(run.returncode == 0, f"check: {run.stderr}")
    resolved = run.stdout
    for line in ("min_valid: 0.9\n", "warn_px: 0.3\n", "limit_px: 2\n", "low: 2\n", "block_size: 5000\n"):
        checks.check(line in resolved, f"check prints '{line.strip()}':\n{resolved}")
    checks.check("0.9000" not in resolved and "0.2999" not in resolved, f"no binary noise:\n{resolved}")

    # A single scene without a date pairs (pretraining needs none); chips carry an empty date.
    run = run_tinct(work, "pair", "pair.yaml", pair_text(["{path: a.tif, bands: [blue, green, red, nir]}"]))
    checks.check(run.returncode == 0, f"an undated scene pairs: {run.stderr}")
    if run.returncode == 0:
        store = Store(os.path.join(work, "out.pairs"))
        checks.check(store.count > 0 and all(c["date"] == "" for c in store.chips), "undated chips")
        checks.check(not store.manifest["scenes"][0]["date"], "the manifest's scene has no date")

    # Without grid: the scenes' own 28.5 m pixels (generic's reference is 10 m); nothing aligned.
    stack(work, "fine.tif", pixel=28.5, seed=2)
    stack(work, "coarse.tif", pixel=30.0, seed=3)
    fine = "{path: fine.tif, bands: [blue, green, red, nir], date: 2023-06-01}"
    coarse = "{path: coarse.tif, bands: [blue, green, red, nir], date: 2023-06-02}"
    run = run_tinct(work, "pair", "pair.yaml", pair_text([fine]), "--force")
    expect(work, "own grid", run, 0, "grid.resolution not given: the scenes' own 28.5 m pixels", absent=("aligning",))
    if run.returncode == 0:
        checks.check(Store(os.path.join(work, "out.pairs")).manifest["pixel_size"] == 28.5, "store at 28.5 m")
    # Scenes of different pixel sizes: the profile's 10 m, each resampling logged with both sizes.
    run = run_tinct(work, "pair", "pair.yaml", pair_text([fine, coarse]), "--force")
    expect(work, "mixed grids", run, 0, "pixel sizes differ: the profile generic's 10 m",
           "fine.tif: pixel size 28.5 -> 10 (bilinear)", "coarse.tif: pixel size 30 -> 10 (bilinear)")

    # A Byte colour raster: stretch: none by default (check says so); a given stretch is applied.
    t = texture(96, 96, seed=1)
    write(os.path.join(work, "rgb.tif"), [(100 + 40 * t * f).astype(np.uint8) for f in (1.0, 0.9, 0.8)],
          dtype="uint8")
    write(os.path.join(work, "rgb16.tif"), [(1000 + 400 * t * f).astype(np.uint16) for f in (1.0, 0.9, 0.8)])
    with_colour = "{path: a.tif, bands: [blue, green, red, nir], date: 2023-06-01, colour: rgb.tif}"
    run = run_tinct(work, "check", "pair.yaml", pair_text([with_colour], colour="{source: raster}"))
    checks.check(run.returncode == 0 and "stretch: none" in run.stdout, f"Byte colour: stretch none:\n{run.stdout}")
    ranges = {}
    for label, colour in (("as is", "{source: raster}"), ("stretched", "{source: raster, stretch: {low: 2, high: 98}}")):
        run = run_tinct(work, "pair", "pair.yaml", pair_text([with_colour], colour=colour), "--force")
        checks.check(run.returncode == 0, f"Byte colour {label}: {run.stderr}")
        lightness = Store(os.path.join(work, "out.pairs")).colour[:, 0].astype(float)
        ranges[label] = np.percentile(lightness, 99) - np.percentile(lightness, 1)
    print(f"L* code range of a low-contrast Byte colour raster: as is {ranges['as is']:.0f}, "
          f"stretched {ranges['stretched']:.0f}")
    checks.check(ranges["stretched"] > 2 * ranges["as is"], f"the given stretch is applied: {ranges}")
    run = run_tinct(work, "check", "pair.yaml",
                    pair_text([with_colour], colour="{source: raster, stretch: {low: 2, high: 98}}"))
    checks.check("stretch:\n" in run.stdout and "high: 98" in run.stdout, f"check prints the stretch:\n{run.stdout}")
    expect(work, "stretch none on bands", run_tinct(work, "check", "pair.yaml", pair_text([one], colour="{bands: [red, green, blue], stretch: none}")),
           2, "colour.stretch: none keeps colour values as they are, which suits only 8-bit (Byte) colour rasters")
    expect(work, "stretch none on UInt16 colour",
           run_tinct(work, "check", "pair.yaml", pair_text([with_colour.replace("rgb.tif", "rgb16.tif")],
                                                           colour="{source: raster, stretch: none}")),
           2, "not rgb16.tif (UInt16)")
    # Without any stretch key, a UInt16 colour raster gets the default percentile stretch.
    run = run_tinct(work, "check", "pair.yaml", pair_text([with_colour.replace("rgb.tif", "rgb16.tif")],
                                                          colour="{source: raster}"))
    checks.check(run.returncode == 0 and "high: 98" in run.stdout, f"UInt16 colour: default stretch:\n{run.stdout}")

with tempfile.TemporaryDirectory() as work:
    t = texture(64, 64, seed=1)
    for name in ("june.tif", "september.tif"):
        write(os.path.join(work, name), [(900 + 800 * t).astype(np.uint16), (1600 + 500 * t).astype(np.uint16)],
              nodata=0)
    with open(os.path.join(work, "sites.csv"), "w") as f:
        f.write("id,e,n,habitat\n1,500205,5299795,breeding\n2,500405,5299595,non_breeding\n")

    def label_text(labels, scenes, extra=""):
        items = "".join(f"  - {{path: {p}, bands: [red, nir]{d}}}\n" for p, d in scenes)
        return (f"config: label\nsensor: generic\noutput: out.labels\ninputs: [red, nir]\nlabels: {labels}\n"
                f"chips: {{size: 16}}\n{extra}scenes:\n{items}")

    csv_labels = '{source: sites.csv, class: habitat, x: e, y: n, crs: "EPSG:32632"'
    june = ("june.tif", ", date: 2023-06-01")
    september = ("september.tif", ", date: 2023-09-01")

    # A class name that matches no label: refused with the classes found, nothing written.
    expect(work, "misspelt class", run_tinct(work, "label", "label.yaml",
                                             label_text(csv_labels + ", classes: [breeding, nonbreeding]}", [june])),
           2, 'label.yaml: labels.classes (line 5): class "nonbreeding" matches no label in sites.csv (column habitat)',
           "the classes found there: breeding (1), non_breeding (1)", 'did you mean "non_breeding"?',
           store="out.labels")

    # Undated labels over scenes three months apart: refused unless the config says dates are unknown.
    expect(work, "undated labels, scenes far apart",
           run_tinct(work, "label", "label.yaml", label_text(csv_labels + "}", [june, september])), 2,
           "labels.date: not given, so the labels are undated, but the scenes span 2023-06-01 to 2023-09-01 "
           "(92 days), more than match.max_days 30", "labels.dates_unknown: true", store="out.labels")
    run = run_tinct(work, "check", "label.yaml", label_text(csv_labels + "}", [june, september]))
    checks.check(run.returncode == 2 and "not given, so the labels are undated" in run.stderr,
                 f"check refuses it too:\n{run.stderr}")
    expect(work, "undated labels, dates declared unknown",
           run_tinct(work, "label", "label.yaml", label_text(csv_labels + ", dates_unknown: true}", [june, september])),
           0, "labels.dates_unknown: each label takes the first covering scene", absent=("warning: the labels",))
    expect(work, "undated labels, one scene",
           run_tinct(work, "label", "label.yaml", label_text(csv_labels + "}", [june]), "--force"), 0,
           "warning: the labels are undated (labels.date not given)")
    # Labels are matched by date, so their scenes still need one.
    expect(work, "undated scene for labels",
           run_tinct(work, "label", "label.yaml", label_text(csv_labels + "}", [("june.tif", "")]), "--force"), 2,
           "scenes[0].date: required")

checks.finish()
