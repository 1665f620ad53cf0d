"""What a new user types wrong on the command line, and what tinct answers: a
misspelt command names the word and the nearest command; global options work
before or after the command; usage lines say "tinct", not the binary's path; a
missing input exits 2 everywhere (survey too); assess on a pair store says a label
store is needed; an unknown sensor profile lists the profiles; a band the profile
leaves out (B6, thermal, in Landsat 7) says so, and band suggestions come only
when a name is close."""
import os
import subprocess
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()


def tinct(*args, cwd=None):
    return subprocess.run([TINCT, *args], capture_output=True, text=True, cwd=cwd)


def expect(label, run, code, *phrases, absent=()):
    checks.check(run.returncode == code, f"{label}: exit {run.returncode}, expected {code}\n{run.stderr}")
    text = run.stderr + run.stdout
    for phrase in phrases:
        checks.check(phrase in text, f"{label}: output lacks '{phrase}':\n{text}")
    for phrase in absent:
        checks.check(phrase not in text, f"{label}: output should not hold '{phrase}':\n{text}")


def pair_config(work, sensor="landsat7-etm", inputs="[B4, B5]", name="pair.yaml"):
    path = os.path.join(work, name)
    with open(path, "w") as f:
        f.write(f"config: pair\nsensor: {sensor}\noutput: out.pairs\ninputs: {inputs}\n"
                "colour: {bands: [B3, B2, B1]}\nchips: {size: 32}\n"
                "scenes:\n  - {path: l7.tif, date: 2001-03-04}\n")
    return path


with tempfile.TemporaryDirectory() as work:
    t = texture(96, 96, seed=3)
    write(os.path.join(work, "l7.tif"), [(40 + 100 * t * (1 + 0.1 * b)).astype(np.uint8) for b in range(6)],
          dtype="uint8", pixel=30.0, epsg=32633)

    # A misspelt command: named, with the nearest command; also for a wrong case.
    expect("misspelt command", tinct("pretrian", "x.yaml"), 2,
           'unknown command "pretrian"; did you mean "pretrain"?', "survey, pair, pretrain")
    expect("command in capitals", tinct("Pair", "x.yaml"), 2, 'unknown command "Pair"; did you mean "pair"?')
    expect("misspelt command after a global option", tinct("--threads", "1", "surevy", "l7.tif"), 2,
           'did you mean "survey"?')

    # Global options before or after the command.
    scene = os.path.join(work, "l7.tif")
    expect("--threads after the command", tinct("survey", "--threads", "1", scene), 0, "EPSG:32633")
    expect("--quiet after the command", tinct("check", "--quiet", pair_config(work)), 0, "config: pair")
    run = tinct("check", "--quiet", pair_config(work))
    checks.check("valid pair config" not in run.stderr,
                 f"--quiet after the command silences info lines:\n{run.stderr}")
    expect("--threads before the command", tinct("--threads", "1", "survey", scene), 0, "EPSG:32633")

    # Usage lines name the program, not the path it was run by.
    for args in (["--help"], ["pair", "--help"], ["pair"]):
        run = tinct(*args)
        text = run.stdout + run.stderr
        checks.check(TINCT not in text, f"tinct {' '.join(args)}: prints the binary's path:\n{text}")
    expect("pair --help", tinct("pair", "--help"), 0, "Usage: tinct pair")

    # One rule for missing inputs: exit 2, as for a missing config.
    expect("survey of a missing raster", tinct("survey", os.path.join(work, "missing.tif")), 2, "file not found")
    expect("check of a missing config", tinct("check", os.path.join(work, "none.yaml")), 2, "config file not found")
    expect("assess on a missing store", tinct("assess", work, "--on", os.path.join(work, "none.labels")), 2,
           "--on: no chip store at")

    # assess on a pair store: says what it is and what is needed.
    run = tinct("--threads", "1", "pair", pair_config(work), cwd=work)
    checks.check(run.returncode == 0, f"pair: {run.stderr}")
    expect("assess on a pair store", tinct("assess", work, "--on", os.path.join(work, "out.pairs")), 2,
           "is a pair store (made by tinct pair)", "needs a label store, made by tinct label",
           absent=("classes differ",))

    # Sensor profiles: an unknown name lists those there are.
    expect("unknown profile", tinct("check", pair_config(work, sensor="landsat7")), 2,
           'no sensor profile named "landsat7"', 'did you mean "landsat7-etm"?',
           "The profiles are generic, landsat7-etm, landsat8-9-oli-l2, sentinel2-l2a")
    # B6 exists on ETM+ but the profile leaves the thermal band out: say so, suggest nothing else.
    expect("left-out band", tinct("check", pair_config(work, inputs="[B4, B6]")), 2,
           'band "B6" is not in the sensor profile landsat7-etm: the sensor has it but the profile leaves it out',
           "thermal", absent=('did you mean "B1"', 'did you mean'))
    expect("band in the wrong case", tinct("check", pair_config(work, inputs="[b4, B5]")), 2,
           'did you mean "B4"?')
    expect("unrelated band name", tinct("check", pair_config(work, inputs="[B4, swir]")), 2,
           'band "swir" is not in the sensor profile landsat7-etm', "its bands: B1, B2, B3, B4, B5, B7",
           absent=("did you mean",))
    expect("Sentinel-2 band without zero padding",
           tinct("check", pair_config(work, sensor="sentinel2-l2a", inputs="[B5, B8A]")), 2,
           'band "B5" is not in the sensor profile sentinel2-l2a; did you mean "B05"?')
    expect("Sentinel-2 L2A has no B10",
           tinct("check", pair_config(work, sensor="sentinel2-l2a", inputs="[B05, B10]")), 2,
           "the profile leaves it out (cirrus")

checks.finish()
