"""Sensor profiles: the Landsat 8/9 OLI Collection 2 Level-2 profile turns DN into
surface reflectance as the USGS product guide gives it (DN x 0.0000275 - 0.2, from
memory, REFERENCES.md section 9); Sentinel-2 L2A scenes take the processing
baseline from their metadata where the files carry it (PROCESSING_BASELINE, or a
BOA_ADD_OFFSET item), the profile's baseline_04 key where they do not, and scenes
that disagree with each other or with the config are refused."""
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, texture, write  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
S2_BANDS = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]


def pair(work, sensor, inputs, colour, scenes, name="pair.yaml", *flags):
    with open(os.path.join(work, name), "w") as f:
        f.write(f"config: pair\nsensor: {sensor}\noutput: out.pairs\ninputs: {inputs}\ncolour: {{bands: {colour}}}\n"
                "chips: {size: 32}\nscenes:\n" + "".join(f"  - {{path: {s}, date: 2023-05-0{i + 1}}}\n"
                                                         for i, s in enumerate(scenes)))
    return subprocess.run([TINCT, "--threads", "1", "pair", os.path.join(work, name), "--force", *flags],
                          capture_output=True, text=True, cwd=work)


def expect(label, run, code, *phrases):
    checks.check(run.returncode == code, f"{label}: exit {run.returncode}, expected {code}\n{run.stderr}")
    for phrase in phrases:
        checks.check(phrase in run.stderr, f"{label}: message lacks '{phrase}':\n{run.stderr}")


def s2_scene(work, name, metadata=None, band_offset=None):
    t = texture(64, 64, seed=len(name))
    path = write(os.path.join(work, name), [(1200 + 3000 * t * (1 + 0.05 * b)).astype(np.uint16) for b in range(12)],
                 nodata=0, metadata=metadata)
    if band_offset is not None:
        ds = gdal.Open(path, gdal.GA_Update)
        for b in range(12):
            ds.GetRasterBand(b + 1).SetMetadataItem("BOA_ADD_OFFSET", str(band_offset))
        ds = None
    return name


def offsets(work):
    return {b["offset"] for b in Store(os.path.join(work, "out.pairs")).manifest["bands"]}


with tempfile.TemporaryDirectory() as work:
    # Landsat 8/9 Collection 2 Level-2: seven reflective bands at 30 m.
    t = texture(64, 64, seed=8)
    write(os.path.join(work, "oli.tif"), [(8000 + 20000 * t * (1 + 0.1 * b)).astype(np.uint16) for b in range(7)],
          pixel=30.0, nodata=0)
    run = pair(work, "landsat8-9-oli-l2", "[B5, B6, B7]", "[B4, B3, B2]", ["oli.tif"])
    checks.check(run.returncode == 0, f"pair with landsat8-9-oli-l2: {run.stderr}")
    if run.returncode == 0:
        band = Store(os.path.join(work, "out.pairs")).manifest["bands"][0]
        to_reflectance = lambda dn: (dn + band["offset"]) * band["scale"]  # noqa: E731
        # Worked from DN x 0.0000275 - 0.2 (REFERENCES.md section 9, from memory).
        for dn, reflectance in ((7273, 0.0000075), (43636, 0.99999), (10000, 0.075), (0, -0.2)):
            checks.check(abs(to_reflectance(dn) - reflectance) < 1e-9,
                         f"DN {dn} -> {to_reflectance(dn)}, expected {reflectance}")
    expect("OLI B10 is surface temperature", pair(work, "landsat8-9-oli-l2", "[B5, B10]", "[B4, B3, B2]", ["oli.tif"]),
           2, "the profile leaves it out (thermal infrared: Level-2 delivers it as surface temperature ST_B10")

    # Sentinel-2 L2A: the baseline from the metadata the files carry.
    rgb, nir = "[B04, B03, B02]", "[B08, B11]"
    s2_scene(work, "new.tif", {"PROCESSING_BASELINE": "04.00"})
    s2_scene(work, "old.tif", {"PROCESSING_BASELINE": "03.01"})
    s2_scene(work, "offset.tif", band_offset=-1000)
    s2_scene(work, "plain.tif")
    run = pair(work, "sentinel2-l2a", nir, rgb, ["new.tif"])
    expect("baseline 04.00", run, 0, "processing baseline from the scenes' metadata (PROCESSING_BASELINE=04.00)")
    checks.check(run.returncode or offsets(work) == {-1000}, "baseline 04.00: offset -1000")
    run = pair(work, "sentinel2-l2a", nir, rgb, ["old.tif"])
    checks.check(run.returncode == 0 and offsets(work) == {0}, f"baseline 03.01: no offset {run.stderr}")
    run = pair(work, "sentinel2-l2a", nir, rgb, ["offset.tif", "plain.tif"])
    expect("BOA_ADD_OFFSET on the bands", run, 0, "(BOA_ADD_OFFSET=-1000)")
    checks.check(run.returncode or offsets(work) == {-1000}, "BOA_ADD_OFFSET -1000: offset -1000")
    run = pair(work, "sentinel2-l2a", nir, rgb, ["plain.tif"])
    expect("no metadata", run, 0, "do not give the processing baseline; taking baseline_04: false")
    checks.check(run.returncode or offsets(work) == {0}, "no metadata: the key's default, no offset")
    run = pair(work, "{profile: sentinel2-l2a, baseline_04: true}", nir, rgb, ["plain.tif"])
    checks.check(run.returncode == 0 and offsets(work) == {-1000}, f"no metadata: the key decides {run.stderr}")
    expect("scenes of both baselines", pair(work, "sentinel2-l2a", nir, rgb, ["new.tif", "old.tif"]), 2,
           "scene old (PROCESSING_BASELINE=03.01) is of a baseline before 04.00, scene new "
           "(PROCESSING_BASELINE=04.00) of baseline 04.00 or later", "separate stores")
    expect("metadata against the config", pair(work, "{profile: sentinel2-l2a, baseline_04: false}", nir, rgb,
                                               ["new.tif"]), 2,
           "its metadata (PROCESSING_BASELINE=04.00) says baseline 04.00 or later, but the config sets "
           "baseline_04: false")

checks.finish()
