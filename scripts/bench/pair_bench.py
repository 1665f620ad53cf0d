"""Benchmark of `tinct pair` (run by scripts/bench.sh).

On a generated 4096 x 4096, 12-band uint16, tiled and DEFLATE-compressed GeoTIFF cut
into 64 px chips:
- the floor: one full decode of the scene by GDAL (gdal_translate to a raw file);
- tinct pair over the whole scene (goal: within 3x of the floor);
- the naive way: gdal_translate -srcwin per chip (a sample of chips, extrapolated);
- peak resident memory of tinct pair (goal: under 400 MB)."""
import os
import resource
import subprocess
import sys
import time

import numpy as np
from osgeo import gdal, osr

SIZE, CHIP, BANDS = 4096, 64, 12
NAMES = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]


def make_scene(path):
    if os.path.exists(path):
        return
    rng = np.random.default_rng(0)
    coarse = rng.random((SIZE // 32, SIZE // 32))
    field = np.kron(coarse, np.ones((32, 32)))
    ds = gdal.GetDriverByName("GTiff").Create(path, SIZE, SIZE, BANDS, gdal.GDT_UInt16,
                                              ["TILED=YES", "COMPRESS=DEFLATE", "BLOCKXSIZE=256", "BLOCKYSIZE=256"])
    ds.SetGeoTransform((400000.0, 10.0, 0.0, 5000000.0, 0.0, -10.0))
    srs = osr.SpatialReference(); srs.ImportFromEPSG(32632); ds.SetProjection(srs.ExportToWkt())
    for b in range(BANDS):
        noise = rng.integers(0, 200, (SIZE, SIZE))
        band = ds.GetRasterBand(b + 1)
        band.SetNoDataValue(0)
        band.SetDescription(NAMES[b])
        band.WriteArray((1000 + 3000 * field * (0.5 + b / 12) + noise).astype(np.uint16))
    ds = None


def timed(command):
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    start = time.perf_counter()
    subprocess.run(command, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    seconds = time.perf_counter() - start
    peak_kb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return seconds, (peak_kb if peak_kb > before else None)


def peak_rss_mb(command):
    out = subprocess.run(["/usr/bin/time", "-f", "%M"] + command, check=True, stdout=subprocess.DEVNULL,
                         stderr=subprocess.PIPE, text=True).stderr.strip().splitlines()[-1]
    return int(out) / 1024


def main(TINCT, WORK):
    scene = os.path.join(WORK, "bench-scene.tif")
    make_scene(scene)
    config = os.path.join(WORK, "bench-pair.yaml")
    with open(config, "w") as f:
        f.write(f"""config: pair
sensor: sentinel2-l2a
output: bench.pairs
inputs: [B01, B05, B06, B07, B08, B8A, B09, B11, B12]
colour: {{bands: [B04, B03, B02]}}
chips: {{size: {CHIP}, stride: {CHIP}, min_valid: 0.5}}
scenes:
  - {{path: {scene}, date: 2026-06-01}}
""")

    decode, _ = timed(["gdal_translate", "-q", "-of", "ENVI", scene, os.path.join(WORK, "decode.raw")])
    pair_cmd = [TINCT, "--quiet", "pair", config, "--force"]
    pair, _ = timed(pair_cmd)
    pair_peak = peak_rss_mb(pair_cmd)
    chips = (SIZE // CHIP) ** 2
    sample = 24
    start = time.perf_counter()
    for i in range(sample):
        col, row = (i * 7 % (SIZE // CHIP)) * CHIP, (i * 13 % (SIZE // CHIP)) * CHIP
        subprocess.run(["gdal_translate", "-q", "-of", "ENVI", "-srcwin", str(col), str(row), str(CHIP), str(CHIP),
                        scene, os.path.join(WORK, "chip.raw")], check=True)
    naive_rate = sample / (time.perf_counter() - start)

    rows = [
        ("scene", f"{SIZE} x {SIZE} x {BANDS} uint16, tiled, DEFLATE", ""),
        ("GDAL full decode (floor)", f"{decode:.2f} s", ""),
        ("tinct pair, whole scene", f"{pair:.2f} s ({chips / pair:.0f} chips/s)", "goal <= 3x floor"),
        ("tinct pair / decode", f"{pair / decode:.2f}x", "goal <= 3.00x"),
        ("naive gdal_translate -srcwin", f"{naive_rate:.1f} chips/s (~{chips / naive_rate:.0f} s for the scene)", ""),
        ("tinct pair speed-up over naive", f"{(chips / pair) / naive_rate:.0f}x", ""),
        ("tinct pair peak resident memory", f"{pair_peak:.0f} MB", "goal < 400 MB"),
    ]
    width = max(len(r[0]) for r in rows)
    print(f"\n{'pair benchmark':<{width}}  {'figure':<52} goal")
    for name, value, goal in rows:
        print(f"{name:<{width}}  {value:<52} {goal}")


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
