"""Study throughput: fine-tunes per minute of a 2 arms x 3 seeds x 2 budgets x 2 folds study
(24 fine-tunes, no baselines) on a generated label store, with `parallel: 1` against
`parallel: 2` (threads divided). Print only; the faster setting is the default of
`parallel:` (trainer/study/study_config.hpp, kDefaultParallel)."""
import os
import subprocess
import sys
import time

sys.path.insert(0, os.path.join(os.path.dirname(__file__), "..", "..", "tests", "support"))
from study_inputs import build_study_inputs  # noqa: E402

tinct, work = sys.argv[1], os.path.join(sys.argv[2], "study-bench")
os.makedirs(work, exist_ok=True)
threads = os.cpu_count() or 1
for command, code in build_study_inputs(work, tinct, size=384, epochs=5):
    if code:
        sys.exit(f"study bench: tinct {command} failed")

print(f"\nstudy: 24 fine-tunes (2 arms x 3 seeds x 2 budgets x 2 folds, 16 px chips, compact encoder), {threads} threads")
print(f"{'parallel':>8} {'threads each':>12} {'wall s':>8} {'fine-tunes/min':>15}")
for parallel in (1, 2):
    with open(os.path.join(work, f"study-{parallel}.yaml"), "w") as f:
        f.write(f"""config: study
output: studies/parallel-{parallel}
finetune: ft.yaml
arms:
  - {{name: pretrained, init: {{from: pretrain, run: runs/pre}}}}
  - {{name: scratch, init: {{from: scratch, run: runs/pre}}}}
baselines: []
seeds: [1, 2, 3]
budgets: [5, all]
folds: 2
parallel: {parallel}
""")
    started = time.time()
    run = subprocess.run([tinct, "--threads", str(threads), "study", f"study-{parallel}.yaml", "--force"],
                         cwd=work, capture_output=True, text=True)
    seconds = time.time() - started
    if run.returncode:
        sys.exit(f"study bench: parallel {parallel} failed: {run.stderr[-1000:]}")
    print(f"{parallel:>8} {max(1, threads // parallel):>12} {seconds:>8.1f} {24 * 60 / seconds:>15.1f}")
