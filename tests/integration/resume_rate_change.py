"""--resume with another learning rate, as the message after a non-finite loss says: a
pretrain run stopped after its step-4 checkpoint and resumed with train.lr 1e30 stops at a
non-finite loss, and its message says to lower train.lr and --resume from that checkpoint;
doing exactly that with the first rate gives the metrics rows and encoder.pt bytes of an
uninterrupted run, and run.yaml lists both changes (old and new values) under
resumed_with_changes. A fine-tune resumed with a third of its rate runs its later epochs at
a third of the uninterrupted run's rates (the cosine schedule with min_lr 0 scales with the
base rate). Any other changed key is still refused (exit 2, naming it), leaving run.yaml as
it was."""
import csv
import os
import sys
import tempfile

import yaml

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from synthetic import Checks  # noqa: E402
from tiny_project import finetune_config, make_stores, pretrain_config, run_tinct  # noqa: E402

checks = Checks()


def rows(work, name):
    with open(os.path.join(work, "runs", name, "metrics.csv")) as f:
        return [{k: v for k, v in row.items() if k != "chips_per_s"} for row in csv.DictReader(f)]


def run_yaml(work, name):
    return yaml.safe_load(open(os.path.join(work, "runs", name, "run.yaml")))


def encoder(work, name):
    return open(os.path.join(work, "runs", name, "encoder.pt"), "rb").read()


def pretrain_rate_change(work):
    run = run_tinct(work, "pretrain", pretrain_config(work, "ref", steps=8, every=4))
    checks.check(run.returncode == 0, f"pretrain: uninterrupted run: {run.stderr[-800:]}")
    config = pretrain_config(work, "wild", steps=8, every=4)
    run = run_tinct(work, "pretrain", config, "--stop-after", "4")
    checks.check(run.returncode == 0 and run_yaml(work, "wild")["status"] == "stopped", "pretrain stopped after step 4")

    wild = pretrain_config(work, "wild", steps=8, every=4, lr="1.0e+30")
    run = run_tinct(work, "pretrain", wild, "--resume")
    checks.check(run.returncode == 1 and "not finite" in run.stderr,
                 f"pretrain resumed with train.lr 1e30 stops at a non-finite loss: {run.stderr[-800:]}")
    checks.check("Lower train.lr in the config and run the same command with --resume" in run.stderr and
                 "step-00000004.pt" in run.stderr, f"the message says what works: {run.stderr[-800:]}")
    checks.check(run_yaml(work, "wild")["status"] == "failed", "the run is marked failed")

    before = open(os.path.join(work, "runs", "wild", "run.yaml")).read()
    text = open(os.path.join(work, config)).read().replace("batch: 8", "batch: 16")
    open(os.path.join(work, "wild-batch.yaml"), "w").write(text)
    run = run_tinct(work, "pretrain", "wild-batch.yaml", "--resume")
    checks.check(run.returncode == 2 and "train.batch (8 -> 16)" in run.stderr and
                 "only the learning rate" in run.stderr, f"a changed batch is refused, naming it: {run.stderr[-600:]}")
    checks.check(open(os.path.join(work, "runs", "wild", "run.yaml")).read() == before,
                 "the refused resume leaves run.yaml as it was")

    run = run_tinct(work, "pretrain", pretrain_config(work, "wild", steps=8, every=4), "--resume")
    checks.check(run.returncode == 0 and run_yaml(work, "wild")["status"] == "done",
                 f"resumed with the lower rate, the run finishes: {run.stderr[-800:]}")
    checks.check(rows(work, "wild") == rows(work, "ref"), "its metrics rows equal the uninterrupted run's")
    checks.check(encoder(work, "wild") == encoder(work, "ref"), "its encoder.pt equals the uninterrupted run's")
    changes = run_yaml(work, "wild").get("resumed_with_changes", [])
    found = [(c["key"], float(c["old"]), float(c["new"])) for c in changes]
    checks.check(found == [("train.lr", 0.002, 1e30), ("train.lr", 1e30, 0.002)] and
                 all(c.get("resumed") for c in changes), f"run.yaml records both changes: {changes}")


def finetune_rate_change(work):
    run = run_tinct(work, "finetune", finetune_config(work, "fine-ref", epochs=3))
    checks.check(run.returncode == 0, f"finetune: uninterrupted run: {run.stderr[-800:]}")
    run = run_tinct(work, "finetune", finetune_config(work, "fine", epochs=3), "--stop-after", "1")
    checks.check(run.returncode == 0, f"finetune stopped after epoch 1: {run.stderr[-800:]}")
    run = run_tinct(work, "finetune", finetune_config(work, "fine", epochs=3, lr="0.001"), "--resume")
    checks.check(run.returncode == 0 and run_yaml(work, "fine")["status"] == "done",
                 f"finetune resumed with train.lr 0.001 finishes: {run.stderr[-800:]}")
    ref, resumed = rows(work, "fine-ref"), rows(work, "fine")
    checks.check(len(ref) == len(resumed) == 3, f"three epochs logged ({len(ref)}, {len(resumed)})")
    if len(ref) == len(resumed) == 3:
        checks.check(resumed[0] == ref[0], "the first epoch is the uninterrupted run's")
        for a, b in zip(ref[1:], resumed[1:]):
            checks.check(abs(float(b["lr"]) - float(a["lr"]) / 3) <= 1e-4 * float(a["lr"]),
                         f"epoch {b['epoch']} runs at a third of the rate: {b['lr']} against {a['lr']}")
    changes = run_yaml(work, "fine").get("resumed_with_changes", [])
    checks.check([(c["key"], float(c["old"]), float(c["new"])) for c in changes] == [("train.lr", 0.003, 0.001)],
                 f"run.yaml records the change: {changes}")
    text = open(os.path.join(work, finetune_config(work, "fine", epochs=3, lr="0.001"))).read().replace("seed: 3", "seed: 4")
    open(os.path.join(work, "fine-seed.yaml"), "w").write(text)
    run = run_tinct(work, "finetune", "fine-seed.yaml", "--resume")
    checks.check(run.returncode == 2 and "train.seed (3 -> 4)" in run.stderr,
                 f"a changed seed is refused, naming it: {run.stderr[-600:]}")


with tempfile.TemporaryDirectory() as work:
    ok, message = make_stores(work)
    checks.check(ok, message)
    if ok:
        pretrain_rate_change(work)
        finetune_rate_change(work)

checks.finish()
