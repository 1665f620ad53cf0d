"""What the bench sections share: the machine line, generated stores, rounds and tables."""
import os
import statistics
import subprocess

from pair_bench import make_scene

BANDS = "[B01, B02, B03, B04, B05, B06, B07, B08, B8A, B09, B11, B12]"
ROUNDS = int(os.environ.get("TINCT_BENCH_ROUNDS", "3"))


def machine_line():
    model, flags = "unknown", []
    with open("/proc/cpuinfo") as f:
        for line in f:
            if line.startswith("model name") and model == "unknown":
                model = line.split(":", 1)[1].strip()
            if line.startswith("flags") and not flags:
                flags = [x for x in line.split(":", 1)[1].split()
                         if x.startswith(("avx", "amx", "fma", "sse4_2"))]
    load = " ".join(f"{x:.1f}" for x in os.getloadavg())
    return f"{model}, {os.cpu_count()} cores, load {load}; {' '.join(flags)}"


def has_native_bf16():
    with open("/proc/cpuinfo") as f:
        flags = next((line for line in f if line.startswith("flags")), "").split()
    return "avx512_bf16" in flags or "amx_bf16" in flags


def make_store(tinct, work, scenes, name):
    """A pair store of `scenes` copies of the bench scene (0.4 GB of bands.bin each)."""
    scene = os.path.join(work, "bench-scene.tif")
    make_scene(scene)
    if os.path.exists(os.path.join(work, name)):
        return os.path.join(work, name)
    config = os.path.join(work, name + ".yaml")
    lines = "\n".join(f"  - {{path: {scene}, id: copy{i}, date: 2026-06-{i + 1:02d}}}" for i in range(scenes))
    with open(config, "w") as f:
        f.write(f"""config: pair
sensor: sentinel2-l2a
output: {name}
inputs: {BANDS}
colour: {{bands: [B04, B03, B02], allow_input_overlap: true}}
chips: {{size: 64, stride: 64, min_valid: 0.5, block_size: 5000}}
scenes:
{lines}
""")
    subprocess.run([tinct, "--quiet", "pair", config], check=True, cwd=work)
    return os.path.join(work, name)


def best_median(values, higher_is_better=True):
    best = max(values) if higher_is_better else min(values)
    return best, statistics.median(values)


def print_table(title, rows, flush=False):
    width = max(len(title), *(len(r[0]) for r in rows))
    print(f"\n{title:<{width}}  {'figure':<60} goal")
    for name, value, goal in rows:
        print(f"{name:<{width}}  {value:<60} {goal}", flush=flush)
