"""Benchmark of `tinct map` (run by scripts/bench.sh).

A generated SIZE x SIZE (default 4096), 12-band uint16 scene; a classifier of the default
model (compact encoder, width 1, 64 px chips) fine-tuned from scratch for one epoch on 200
labels of it; the whole scene mapped at stride 16 in exact and dense mode, the two modes
alternating over TINCT_BENCH_ROUNDS rounds (best and median of each):
- megapixels of scene per second, each mode, for the whole command (model, calibration and
  training features included) and for the scene's own loop, and dense's speed-up (goal: at
  least 8x);
- peak resident memory of each (GNU time's %M; goal: under 500 MB whatever the scene size);
- agreement of the two class maps over cells with data (goal: at least 98 %);
- the scene loop's seconds per stage (reading, model, cells, applicability windows, writing),
  wall-clock and CPU, and dense's speed-up in CPU seconds: on a machine other jobs load, the
  wall clock mostly measures the wait for a core, the CPU time still the work (with
  TINCT_MAP_BENCH_THREADS=1 no thread waits for another).
Usage: map_bench.py TINCT WORKDIR [SIZE]"""
import os
import subprocess
import sys
import time

import numpy as np
from osgeo import gdal, osr

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from bench_common import ROUNDS, best_median, machine_line  # noqa: E402

TINCT, WORK = sys.argv[1], sys.argv[2]
SIZE = int(sys.argv[3]) if len(sys.argv) > 3 else 4096
THREADS = os.environ.get("TINCT_MAP_BENCH_THREADS", "")  # tinct's --threads for the maps (default: all cores)
BANDS, CHIP = 12, 64
NAMES = ["B01", "B02", "B03", "B04", "B05", "B06", "B07", "B08", "B8A", "B09", "B11", "B12"]


def make_scene(path):
    if os.path.exists(path):
        return
    rng = np.random.default_rng(0)
    field = np.kron(rng.random((SIZE // 128, SIZE // 128)) > 0.5, np.ones((128, 128)))
    ds = gdal.GetDriverByName("GTiff").Create(path, SIZE, SIZE, BANDS, gdal.GDT_UInt16,
                                              ["TILED=YES", "COMPRESS=DEFLATE", "BLOCKXSIZE=256", "BLOCKYSIZE=256"])
    ds.SetGeoTransform((400000.0, 10.0, 0.0, 5000000.0, 0.0, -10.0))
    srs = osr.SpatialReference()
    srs.ImportFromEPSG(32632)
    ds.SetProjection(srs.ExportToWkt())
    for b in range(BANDS):
        band = ds.GetRasterBand(b + 1)
        band.SetDescription(NAMES[b])
        band.WriteArray((1000 + 2500 * field * (0.3 + b / 12) + rng.integers(1, 300, (SIZE, SIZE))).astype(np.uint16))
    ds = None
    return field


STAGES = ("reading", "model", "cells", "applicability windows", "writing")


def stage_seconds(lines):
    """The scene loop's wall-clock and CPU seconds per stage, from its log line
    "...: reading 1.0 s, model 2.0 s, ...; CPU: reading 0.50 s, model 1.60 s, ..."."""
    line = next((line for line in lines if "; CPU: reading " in line), "")
    wall, _, cpu = line.partition("; CPU: ")
    figures = []
    for text in (wall.split(": ")[-1], cpu):
        seconds = {}
        for part in text.split(", "):
            name, _, value = part.rpartition(" ")[0].rpartition(" ")
            seconds[name] = float(value)
        figures.append([seconds.get(stage, float("nan")) for stage in STAGES])
    return figures


def timed(args):
    start = time.time()
    threads = ["--threads", THREADS] if THREADS else []
    run = subprocess.run(["/usr/bin/time", "-f", "%M", TINCT, *threads, *args], capture_output=True, text=True, cwd=WORK)
    if run.returncode:
        sys.exit(f"tinct {' '.join(args)} failed:\n{run.stderr[-2000:]}")
    lines = run.stderr.strip().splitlines()
    scene_rate = [line.split("; ")[-1].split()[0] for line in lines if line.endswith("Mpx/s")]
    return (time.time() - start, int(lines[-1]) / 1024, float(scene_rate[0]) if scene_rate else float("nan"),
            stage_seconds(lines))


os.makedirs(WORK, exist_ok=True)
scene = os.path.join(WORK, f"map-scene-{SIZE}.tif")
make_scene(scene)
ds = gdal.Open(scene)
field = ds.GetRasterBand(1).ReadAsArray() > 1000 + 2500 * 0.3 * 0.5
rng = np.random.default_rng(1)
with open(os.path.join(WORK, "map-sites.csv"), "w") as f:
    f.write("id,x,y,cover\n")
    for i in range(200):
        r, c = rng.integers(CHIP, SIZE - CHIP, size=2)
        f.write(f"p{i},{400000 + (c + 0.5) * 10},{5000000 - (r + 0.5) * 10},{'high' if field[r, c] else 'low'}\n")
common = f"inputs: [{', '.join(NAMES)}]\n"
with open(os.path.join(WORK, "map-label.yaml"), "w") as f:
    f.write(f"config: label\nsensor: sentinel2-l2a\noutput: map-bench.labels\n{common}"
            f"scenes: [{{id: bench, path: {scene}, date: 2026-06-01}}]\n"
            "labels: {source: map-sites.csv, class: cover, x: x, y: y, crs: EPSG:32632, id: id}\n"
            f"chips: {{size: {CHIP}, min_valid: 0.9, block_size: 1000}}\n")
with open(os.path.join(WORK, "map-finetune.yaml"), "w") as f:
    f.write("config: finetune\nstores: [map-bench.labels]\noutput: map-bench-run\n"
            "init: {from: scratch, model: {encoder: compact, width: 1}}\n"
            "split: {method: blocks, block_size: 1000, folds: 3, fold: 0}\n"
            "train: {epochs: 1, batch: 16, lr: 0.002, seed: 1}\n")
for args in (["label", "--force", "map-label.yaml"], ["finetune", "--force", "map-finetune.yaml"]):
    run = subprocess.run([TINCT, *args], capture_output=True, text=True, cwd=WORK)
    if run.returncode:
        sys.exit(f"tinct {args[0]} failed:\n{run.stderr[-2000:]}")

megapixels = SIZE * SIZE / 1e6
runs = {"exact": [], "dense": []}
for round_ in range(ROUNDS):
    for mode in ("exact", "dense") if round_ % 2 == 0 else ("dense", "exact"):
        runs[mode].append(timed(["map", "map-bench-run", scene, "--out", f"map-{mode}", "--mode", mode,
                                 "--stride", "16", "--force"]))
classes = {m: gdal.Open(os.path.join(WORK, f"map-{m}", os.path.basename(scene)[:-4], "classes.tif")).ReadAsArray()
           for m in runs}
valid = classes["exact"] != 255
agreement = float(np.mean(classes["exact"][valid] == classes["dense"][valid]))
with open("/proc/loadavg") as f:
    load = f.read().split()[:3]
print(f"\ntinct map, {SIZE} x {SIZE} x {BANDS} scene, 64 px windows at stride 16, compact encoder (width 1)")
print(f"machine: {machine_line()}; load average after the rounds: {' '.join(load)}")
print(f"{ROUNDS} interleaved rounds; whole command: model, calibration and training features included; "
      "scene loop: the scene's own loop")
print(f"{'mode':<7}{'command Mpx/s best':>20}{'median':>9}{'scene loop Mpx/s best':>23}{'median':>9}"
      f"{'peak RSS MB max':>17}{'median':>9}")
figures = {}
for mode, results in runs.items():
    command = best_median([megapixels / seconds for seconds, _, _, _ in results])
    loop = best_median([rate for _, _, rate, _ in results])
    rss = [r for _, r, _, _ in results]
    figures[mode] = (command, loop, max(rss))
    print(f"{mode:<7}{command[0]:>20.3f}{command[1]:>9.3f}{loop[0]:>23.3f}{loop[1]:>9.3f}"
          f"{max(rss):>17.0f}{sorted(rss)[len(rss) // 2]:>9.0f}")
cpu_loop = {}
for clock, index in (("wall-clock", 0), ("CPU", 1)):
    print(f"scene loop {clock} seconds per stage (medians): " + "; ".join(
        mode + ": " + ", ".join(f"{stage} {best_median([r[3][index][i] for r in results])[1]:.2f}"
                                for i, stage in enumerate(STAGES))
        for mode, results in runs.items()))
for mode, results in runs.items():
    cpu_loop[mode] = best_median([sum(r[3][1]) for r in results], higher_is_better=False)
command_ratio = figures["dense"][0][1] / figures["exact"][0][1]
loop_ratio = figures["dense"][1][1] / figures["exact"][1][1]
peak = max(figures[m][2] for m in figures)
print(f"dense speed-up (medians): {command_ratio:.1f}x whole command, {loop_ratio:.1f}x scene loop "
      f"(goal >= 8x: {'met' if loop_ratio >= 8 else 'not met'})")
print(f"dense speed-up in the scene loop's CPU seconds (medians; {THREADS or 'all'} threads): "
      f"{cpu_loop['exact'][1] / cpu_loop['dense'][1]:.1f}x (best {cpu_loop['exact'][0] / cpu_loop['dense'][0]:.1f}x)")
print(f"class agreement {100 * agreement:.2f} % of {int(valid.sum())} cells (goal >= 98 %: "
      f"{'met' if agreement >= 0.98 else 'not met'})")
print(f"peak memory {peak:.0f} MB (goal < 500 MB: {'met' if peak < 500 else 'not met'})")
