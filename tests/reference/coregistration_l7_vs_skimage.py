"""Sub-pixel co-registration on real data against scikit-image: the Landsat 7 ETM+
subset from Debian's r-cran-stars (REFERENCES.md section 6), its visible bands'
mean shifted by exact Fourier shifts (scipy.ndimage.fourier_shift) of 0.25, 0.5,
0.75, 1.5 and -0.5 px in both axes. scikit-image's phase_cross_correlation with
upsample_factor 100 (Guizar-Sicairos et al. 2008, REFERENCES.md section 11) recovers
each within 0.01 px; tinct's estimate_shift (through tests/reference/shift_tool.cpp)
must agree with the true shift and with scikit-image within 0.05 px on each axis.
Then end to end: tinct pair with the shifted composite as the colour raster records
the shift in the store's manifest within 0.05 px as well."""
import os
import subprocess
import sys
import tempfile

import numpy as np
from osgeo import gdal
from scipy import ndimage
from skimage.registration import phase_cross_correlation

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from store import Store  # noqa: E402
from synthetic import Checks, write  # noqa: E402

TINCT = os.environ["TINCT"]
TOOL = sys.argv[1]
L7 = os.path.join(os.environ["TINCT_TEST_DATA"], "L7_ETMs.tif")
SHIFTS = (0.25, 0.5, 0.75, 1.5, -0.5)  # px, applied to both axes (content moves right and down)
checks = Checks()

ds = gdal.Open(L7)
gt, wkt = ds.GetGeoTransform(), ds.GetProjection()
dn = ds.ReadAsArray().astype(np.float64)  # (6, 352, 349): ETM+ 1, 2, 3, 4, 5, 7


def fourier_shifted(image, shift):
    """`image` moved by (shift, shift) px, exactly (circularly) in the Fourier domain."""
    return np.fft.ifftn(ndimage.fourier_shift(np.fft.fftn(image), (shift, shift))).real


def write_float(path, planes):
    driver = gdal.GetDriverByName("GTiff")
    out = driver.Create(path, planes[0].shape[1], planes[0].shape[0], len(planes), gdal.GDT_Float32)
    out.SetGeoTransform(gt)
    out.SetProjection(wkt)
    for i, plane in enumerate(planes):
        out.GetRasterBand(i + 1).WriteArray(plane.astype(np.float32))
    out = None
    return path


with tempfile.TemporaryDirectory() as work:
    reference = dn[:3].mean(axis=0)
    write_float(os.path.join(work, "reference.tif"), [reference])
    with open(os.path.join(work, "pair.yaml"), "w") as f:
        f.write("config: pair\nsensor: landsat7-etm\noutput: l7.pairs\ninputs: [B4, B5, B7]\n"
                "colour: {source: raster}\ncoregistration: {window: 128, windows: 9, allow_large_shift: true}\n"
                "chips: {size: 64, min_valid: 0.5}\nscenes:\n")
        for k, s in enumerate(SHIFTS):
            f.write(f"  - {{path: {L7}, id: shift{k}, date: 2000-02-01, colour: colour{k}.tif}}\n")

    for k, s in enumerate(SHIFTS):
        moving = fourier_shifted(reference, s)
        # scikit-image gives the shift that registers `moving` onto `reference`: -s.
        sk_row, sk_col = phase_cross_correlation(reference.astype(np.float32), moving.astype(np.float32),
                                                 upsample_factor=100)[0]
        print(f"shift {s:+.2f} px: scikit-image ({-sk_col:+.3f}, {-sk_row:+.3f})", end="")
        checks.check(abs(-sk_col - s) <= 0.01 and abs(-sk_row - s) <= 0.01,
                     f"scikit-image recovers {s} within 0.01 px (REFERENCES.md section 11): {sk_col}, {sk_row}")
        moving_path = write_float(os.path.join(work, f"moving{k}.tif"), [moving])
        run = subprocess.run([TOOL, os.path.join(work, "reference.tif"), moving_path, "128", "9"],
                             capture_output=True, text=True)
        checks.check(run.returncode == 0, f"shift_tool: {run.stderr}")
        if run.returncode:
            continue
        dx, dy, used = run.stdout.split()
        dx, dy = float(dx), float(dy)
        print(f", tinct ({dx:+.3f}, {dy:+.3f}) from {used} windows")
        for axis, got, sk in (("dx", dx, -sk_col), ("dy", dy, -sk_row)):
            checks.check(abs(got - s) <= 0.05, f"shift {s}: tinct {axis} {got:.3f}, true {s}")
            checks.check(abs(got - sk) <= 0.05, f"shift {s}: tinct {axis} {got:.3f}, scikit-image {sk:.3f}")
        # The colour raster for the end-to-end run: the shifted visible bands as red, green, blue.
        write_float(os.path.join(work, f"colour{k}.tif"), [fourier_shifted(dn[b], s) for b in (2, 1, 0)])

    run = subprocess.run([TINCT, "--threads", "1", "pair", os.path.join(work, "pair.yaml")],
                         capture_output=True, text=True)
    checks.check(run.returncode == 0, f"tinct pair: exit {run.returncode}\n{run.stderr}")
    if run.returncode == 0:
        scenes = Store(os.path.join(work, "l7.pairs")).manifest["scenes"]
        for k, s in enumerate(SHIFTS):
            notes = scenes[k]["notes"]
            dx, dy = float(notes["colour_shift_dx_px"]), float(notes["colour_shift_dy_px"])
            print(f"tinct pair, shift {s:+.2f} px: measured ({dx:+.3f}, {dy:+.3f})")
            checks.check(abs(dx - s) <= 0.05 and abs(dy - s) <= 0.05,
                         f"pair records shift {s} as ({dx:.3f}, {dy:.3f})")

checks.finish()
