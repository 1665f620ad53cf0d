"""Benchmark of `tinct pair` (run by scripts/bench.sh).

On a generated 4096 x 4096, 12-band uint16, tiled (256 px) and DEFLATE-compressed
GeoTIFF cut into 64 px chips, in interleaved rounds (best and median):
- the floor: one single-threaded full decode of the scene by GDAL (gdal_translate to a
  raw file, GDAL_NUM_THREADS=1);
- tinct pair over the whole scene (goal: at most 1.0x the floor: every pixel is decoded
  once, on all cores, and the colour stretch takes its histogram from the same pass);
- peak resident memory of tinct pair (goal: under 400 MB);
- the naive way: gdal_translate -srcwin per chip (a sample of chips, extrapolated);
- scaling: tinct pair over 1, 2 and 4 copies of the scene (should be linear);
- start-up alone, a fixed cost inside every pair time above: `tinct pair --help` (tinct
  runs pair without LibTorch) and `tinct --version` (handed to tinct-torch, which loads
  LibTorch), wall and CPU seconds, interleaved;
- where pair's time goes: one pair with TINCT_STAGE_TIMES=1 (wall and CPU seconds per stage)."""
import os
import resource
import statistics
import subprocess
import sys
import time

import numpy as np
from osgeo import gdal, osr

SIZE, CHIP, BANDS = 4096, 64, 12
NAMES = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]
ROUNDS = int(os.environ.get("TINCT_BENCH_ROUNDS", "3"))


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


CPU = []  # CPU seconds (user + system) of each timed command, in order


def seconds(command, env=None):
    """Wall seconds; the command's CPU seconds go to CPU (steadier on a shared machine)."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    subprocess.run(command, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=env)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    CPU.append(after.ru_utime + after.ru_stime - before.ru_utime - before.ru_stime)
    return wall


def peak_rss_mb(command):
    out = subprocess.run(["/usr/bin/time", "-f", "%M"] + command, check=True, stdout=subprocess.DEVNULL,
                         stderr=subprocess.PIPE, text=True).stderr.strip().splitlines()[-1]
    return int(out) / 1024


def pair_config(work, scene, copies):
    config = os.path.join(work, f"bench-pair-{copies}.yaml")
    scenes = "\n".join(f"  - {{path: {scene}, id: copy{i}, date: 2026-06-{i + 1:02d}}}" for i in range(copies))
    with open(config, "w") as f:
        f.write(f"""config: pair
sensor: sentinel2-l2a
output: bench-{copies}.pairs
inputs: [B01, B05, B06, B07, B08, B8A, B09, B11, B12]
colour: {{bands: [B04, B03, B02]}}
chips: {{size: {CHIP}, stride: {CHIP}, min_valid: 0.5}}
scenes:
{scenes}
""")
    return config


def main(TINCT, WORK):
    scene = os.path.join(WORK, "bench-scene.tif")
    make_scene(scene)
    single = dict(os.environ, GDAL_NUM_THREADS="1")
    decode_cmd = ["gdal_translate", "-q", "-of", "ENVI", scene, os.path.join(WORK, "decode.raw")]
    pair_cmd = [TINCT, "--quiet", "pair", pair_config(WORK, scene, 1), "--force"]
    decodes, pairs, decode_cpu, pair_cpu = [], [], [], []
    for r in range(ROUNDS):
        for which in ((0, 1) if r % 2 == 0 else (1, 0)):
            if which == 0:
                decodes.append(seconds(decode_cmd, single))
                decode_cpu.append(CPU[-1])
            else:
                pairs.append(seconds(pair_cmd))
                pair_cpu.append(CPU[-1])
    pair_peak = peak_rss_mb(pair_cmd)
    startup = {"pair --help": ([], []), "--version": ([], [])}
    for _ in range(5):
        for which, (walls, cpus) in startup.items():
            walls.append(seconds([TINCT] + which.split()))
            cpus.append(CPU[-1])
    staged = subprocess.run(pair_cmd, check=True, capture_output=True, text=True,
                            env=dict(os.environ, TINCT_STAGE_TIMES="1")).stderr
    stages = [line[len("stage "):] for line in staged.splitlines() if line.startswith("stage ")]
    scaling = {}
    for r in range(max(1, ROUNDS - 1)):
        for copies in (1, 2, 4):
            scaling.setdefault(copies, []).append(seconds([TINCT, "--quiet", "pair", pair_config(WORK, scene, copies),
                                                           "--force"]))
    chips = (SIZE // CHIP) ** 2
    sample = 24
    start = time.perf_counter()
    for i in range(sample):
        col, row = (i * 7 % (SIZE // CHIP)) * CHIP, (i * 13 % (SIZE // CHIP)) * CHIP
        subprocess.run(["gdal_translate", "-q", "-of", "ENVI", "-srcwin", str(col), str(row), str(CHIP), str(CHIP),
                        scene, os.path.join(WORK, "chip.raw")], check=True)
    naive_rate = sample / (time.perf_counter() - start)

    d_best, d_med = min(decodes), statistics.median(decodes)
    p_best, p_med = min(pairs), statistics.median(pairs)
    one = min(scaling[1])
    from bench_common import machine_line  # imports this module: not at the top
    rows = [
        ("machine", machine_line(), ""),
        ("scene", f"{SIZE} x {SIZE} x {BANDS} uint16, tiled 256, DEFLATE, {ROUNDS} interleaved rounds", ""),
        ("GDAL decode, 1 thread (floor)", f"best {d_best:.2f} s, median {d_med:.2f} s", ""),
        ("tinct pair, whole scene", f"best {p_best:.2f} s, median {p_med:.2f} s ({chips / p_best:.0f} chips/s)", ""),
        ("tinct pair / decode", f"{p_best / d_best:.2f}x of bests, {p_med / d_med:.2f}x of medians", "goal <= 1.00x"),
        ("CPU seconds, decode and pair", f"best {min(decode_cpu):.2f} s and {min(pair_cpu):.2f} s: "
                                         f"{min(pair_cpu) / min(decode_cpu):.2f}x", ""),
        ("tinct pair peak resident memory", f"{pair_peak:.0f} MB", "goal < 400 MB"),
        ("start-up: tinct pair --help", f"best {min(startup['pair --help'][0]):.2f} s wall, "
                                        f"{min(startup['pair --help'][1]):.2f} s CPU of 5 (no LibTorch)", ""),
        ("start-up: tinct --version", f"best {min(startup['--version'][0]):.2f} s wall, "
                                      f"{min(startup['--version'][1]):.2f} s CPU of 5 (tinct-torch, LibTorch)", ""),
        ("naive gdal_translate -srcwin", f"{naive_rate:.1f} chips/s (~{chips / naive_rate:.0f} s for the scene)", ""),
        ("tinct pair speed-up over naive", f"{(chips / p_best) / naive_rate:.0f}x", ""),
    ]
    rows += [(f"pair stage: {stage.split(':')[0]}", stage.split(": ", 1)[1], "") for stage in stages]
    for copies in (1, 2, 4):
        best = min(scaling[copies])
        rows.append((f"scaling: pair of {copies} scene{'s' if copies > 1 else ''}",
                     f"best {best:.2f} s, {best / copies:.2f} s per scene ({best / one / copies:.2f}x linear)",
                     "linear: 1.00x"))
    width = max(len(r[0]) for r in rows)
    print(f"\n{'pair benchmark':<{width}}  {'figure':<60} goal")
    for name, value, goal in rows:
        print(f"{name:<{width}}  {value:<60} {goal}")


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
