"""tinct study end to end on generated data (class = the land cover under the site, as in
finetune_runs.py): two fine-tuned arms, an ensemble and both pixel baselines over 2 seeds x
2 budgets x 2 spatial folds. Checks: summary.csv and summary.json agree with the run
folders' metrics.json (means, sd and t interval against numpy and SciPy's t.interval);
the paired design (every arm of a seed, fold and budget has the same test chips); the
statistics against SciPy 1.10 (Debian python3-scipy: stats.wilcoxon, stats.binomtest for
exact McNemar on predictions.csv, optimize.minimize_scalar for the temperature) and
statsmodels 0.13 (multipletests holm); report.html parses and every <svg> parses as XML;
a second run skips every run and writes the same summary; a study killed mid-way and run
again runs only the missing runs and writes the same summary as the uninterrupted one; a
failing run is reported while the others are summarised; a random split and other bad
configs are refused before anything runs. Neither arm names a head, so each resolves its own
default: the pretrained arm (a Lab pretrain run) the colour + bands linear probe, the scratch
arm of the same base config the trained global head; they are paired all the same."""
import csv
import glob
import json
import os
import signal
import subprocess
import sys
import tempfile
import time
import xml.etree.ElementTree as ElementTree
from html.parser import HTMLParser

import numpy as np
import yaml
from scipy import optimize, stats
from statsmodels.stats.multitest import multipletests

sys.path.insert(0, os.path.join(os.environ["TINCT_SOURCE"], "tests", "support"))
from study_inputs import build_study_inputs  # noqa: E402
from synthetic import Checks  # noqa: E402

TINCT = os.environ["TINCT"]
checks = Checks()
ARMS = ["pretrained", "scratch", "both", "random_forest", "logistic_regression"]
DEEP = ["pretrained", "scratch"]


def tinct(work, *args, threads=1):
    run = subprocess.run([TINCT, "--threads", str(threads), *args], capture_output=True, text=True, cwd=work)
    if run.returncode:
        print(run.stdout[-2000:], run.stderr[-3000:])
    return run


def study_config(work, name, output, extra=""):
    with open(os.path.join(work, name), "w") as f:
        f.write(f"""config: study
name: generated
output: {output}
finetune: ft.yaml
arms:
  - {{name: pretrained, init: {{from: pretrain, run: runs/pre}}}}
  - {{name: scratch, init: {{from: scratch, run: runs/pre}}}}
  - {{name: both, ensemble: [pretrained, scratch]}}
seeds: [1, 2]
budgets: [5, all]
folds: 2
parallel: 2
{extra}""")
    return name


def read_csv(path):
    with open(path, newline="") as f:
        return list(csv.DictReader(f))


def run_statuses(folder):
    found = {}
    for run_yaml in glob.glob(os.path.join(folder, "runs", "*", "*", "*", "*", "run.yaml")):
        found[os.path.dirname(run_yaml)] = open(run_yaml).read()
    return found


def fine_tunes_ran(stderr):
    for line in stderr.splitlines():
        if "fine-tunes ran in" in line:
            return int(line.split("study: ")[1].split(" ")[0])
    return None


def check_summary(study):
    summary = json.load(open(os.path.join(study, "summary.json")))
    runs = summary["runs"]
    checks.check(len(runs) == 5 * 2 * 2 * 2, f"40 runs in summary.json: {len(runs)}")
    checks.check(summary["failed_runs"] == [], f"no failed runs: {summary['failed_runs']}")
    f1 = {}
    for run in runs:
        metrics = json.load(open(os.path.join(study, run["folder"], "metrics.json")))
        f1[(run["arm"], run["budget"], run["seed"], run["fold"])] = metrics["macro_f1"]
        checks.check(abs(metrics["macro_f1"] - run["macro_f1"]) < 1e-12 and
                     abs(metrics["kappa"] - run["kappa"]) < 1e-12,
                     f"{run['folder']}: summary.json scores equal its metrics.json")
        calibration = json.load(open(os.path.join(study, run["folder"], "calibration.json")))
        checks.check(calibration["test_ece_after"] == run["ece_after"], f"{run['folder']}: ECE after calibration")

    # Means, sd and t interval against numpy and SciPy (stats.t.interval) on metrics.json's macro F1.
    for row in read_csv(os.path.join(study, "summary.csv")):
        values = [v for (arm, budget, _, _), v in f1.items() if arm == row["arm"] and budget == row["budget"]]
        mean, sd = np.mean(values), np.std(values, ddof=1)
        low, high = (stats.t.interval(0.95, len(values) - 1, loc=mean, scale=sd / np.sqrt(len(values)))
                     if sd > 0 else (mean, mean))
        checks.check(len(values) == 4 and int(row["runs"]) == 4, f"{row['arm']} {row['budget']}: 4 runs")
        for key, expected in (("mean", mean), ("sd", sd), ("low", low), ("high", high)):
            checks.check(abs(float(row[f"macro_f1_{key}"]) - expected) < 1e-9,
                         f"{row['arm']} {row['budget']}: macro F1 {key} {row[f'macro_f1_{key}']} vs numpy/SciPy {expected}")

    # Paired design: the same test chips in every arm for a budget, seed and fold.
    for budget in ("5", "all"):
        for seed in (1, 2):
            for fold in (0, 1):
                ids = [[r["id"] for r in read_csv(os.path.join(study, "runs", arm, f"budget-{budget}", f"seed-{seed}",
                                                               f"fold-{fold}", "predictions.csv"))] for arm in ARMS]
                checks.check(all(i == ids[0] for i in ids) and ids[0],
                             f"budget {budget} seed {seed} fold {fold}: same test chips in every arm")
    return summary, f1


def check_statistics(study, summary, f1):
    comparisons = summary["comparisons"]
    expected_pairs = {(a, "scratch") for a in ARMS if a != "scratch"}
    checks.check({(c["arm_a"], c["arm_b"]) for c in comparisons} == expected_pairs and len(comparisons) == 8,
                 "default comparisons: every arm against scratch at each budget")
    p_values = []
    for c in comparisons:
        name = f"{c['arm_a']} vs {c['arm_b']} at {c['budget']}"
        d = [f1[(c["arm_a"], c["budget"], s, f)] - f1[(c["arm_b"], c["budget"], s, f)]
             for s, f in zip(c["seeds"], c["folds"])]
        checks.check(np.allclose(d, c["differences"], atol=1e-9), f"{name}: differences from metrics.json")
        checks.check(abs(np.mean(c["differences"]) - c["mean_difference"]) < 1e-12, f"{name}: mean difference")
        checks.check(c["bootstrap_low"] <= c["mean_difference"] <= c["bootstrap_high"] or
                     c["bootstrap_low"] == c["bootstrap_high"], f"{name}: bootstrap interval covers the mean")
        # split.seed is the base config's for every study seed, so all runs share one fold
        # partition: the runs of one test fold share test chips and are resampled together.
        checks.check("whole folds" in c["resampling"] and len(set(c["bootstrap_clusters"])) == len(set(c["folds"])),
                     f"{name}: whole folds resampled (one partition for all seeds): {c['resampling']}")
        nonzero = [x for x in c["differences"] if x != 0]
        if nonzero:
            ties = len(set(abs(x) for x in nonzero)) < len(nonzero)
            reference = stats.wilcoxon(nonzero, method="approx" if ties else "exact").pvalue
            checks.check(abs(c["wilcoxon_p"] - reference) < 1e-9,
                         f"{name}: Wilcoxon p {c['wilcoxon_p']} vs scipy.stats.wilcoxon {reference}")
            p_values.append(c["wilcoxon_p"])
        else:
            checks.check(c["wilcoxon_p"] is None, f"{name}: no Wilcoxon p when every difference is 0")
        # Exact McNemar: discordant chips pooled over the paired runs' predictions.csv.
        b = cc = 0
        for s, f in zip(c["seeds"], c["folds"]):
            rows = [read_csv(os.path.join(study, "runs", arm, f"budget-{c['budget']}", f"seed-{s}", f"fold-{f}",
                                          "predictions.csv")) for arm in (c["arm_a"], c["arm_b"])]
            for ra, rb in zip(*rows):
                b += ra["predicted"] == ra["true"] and rb["predicted"] != rb["true"]
                cc += ra["predicted"] != ra["true"] and rb["predicted"] == rb["true"]
        checks.check((b, cc) == (c["mcnemar_b"], c["mcnemar_c"]), f"{name}: discordant counts {b}, {cc}")
        if b + cc:
            reference = stats.binomtest(b, b + cc, 0.5).pvalue
            checks.check(abs(c["mcnemar_exact_p"] - reference) < 1e-9,
                         f"{name}: McNemar p {c['mcnemar_exact_p']} vs scipy.stats.binomtest {reference}")
    holm = [c["holm_p"] for c in comparisons if c["wilcoxon_p"] is not None]
    if len(p_values) > 1:
        reference = multipletests(p_values, method="holm")[1]
        checks.check(np.allclose(holm, reference, atol=1e-12), f"Holm p {holm} vs statsmodels multipletests {reference}")

    # Temperature: minimises the validation NLL (SciPy minimize_scalar over log T on log p).
    folder = os.path.join(study, "runs", "scratch", "budget-all", "seed-1", "fold-0")
    rows = read_csv(os.path.join(folder, "validation", "predictions.csv"))
    classes = ["dry", "wet"]
    logp = np.log(np.maximum(np.array([[float(r[f"p_{k}"]) for k in classes] for r in rows]), 1e-12))
    truth = np.array([classes.index(r["true"]) for r in rows])

    def nll(u):
        z = logp / np.exp(u)
        z = z - z.max(axis=1, keepdims=True)
        return -np.mean(z[np.arange(len(truth)), truth] - np.log(np.exp(z).sum(axis=1)))

    best = np.exp(optimize.minimize_scalar(nll, bounds=(np.log(0.01), np.log(100)), method="bounded",
                                           options={"xatol": 1e-10}).x)
    temperature = json.load(open(os.path.join(folder, "calibration.json")))["temperature"]
    checks.check(abs(np.log(temperature) - np.log(best)) < 1e-3 or nll(np.log(temperature)) <= nll(np.log(best)) + 1e-9,
                 f"temperature {temperature} vs scipy.optimize.minimize_scalar {best}")

    diversity = summary["ensembles"]
    checks.check(len(diversity) == 2 and all(0 <= e["exactly_one_wrong"] <= 1 for e in diversity),
                 f"ensemble diversity at both budgets: {diversity}")


def check_default_heads(study):
    """Each arm's runs record their own resolved default head in run.yaml and its reason in
    log.txt; the report describes both."""
    for arm, pool, kind in (("pretrained", "colour", "linear_probe"), ("scratch", "global", "trained")):
        run_yamls = glob.glob(os.path.join(study, "runs", arm, "*", "*", "*", "run.yaml"))
        checks.check(len(run_yamls) == 8, f"{arm}: 8 runs")
        for run_yaml in run_yamls:
            head = yaml.safe_load(open(run_yaml))["head"]
            checks.check(head["pool"] == pool and head["kind"] == kind and head["chosen_by"] == "default" and
                         head.get("input_bands", False) == (pool == "colour"),
                         f"{run_yaml}: default head {pool}/{kind}: {head}")
            log = open(os.path.join(os.path.dirname(run_yaml), "log.txt")).read()
            checks.check(f"head: default {{pool: {pool}, kind: {kind}" in log, f"{arm}: log.txt names the default head")
    html = open(os.path.join(study, "report.html"), encoding="utf-8").read()
    checks.check("{pool: colour, kind: linear_probe, input_bands: true} (the default)" in html and
                 "{pool: global, kind: trained} (the default)" in html, "report.html describes each arm's head")


class Svgs(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags = 0

    def handle_starttag(self, tag, attrs):
        self.tags += 1


def check_report(study):
    html = open(os.path.join(study, "report.html"), encoding="utf-8").read()
    parser = Svgs()
    parser.feed(html)
    parser.close()
    checks.check(parser.tags > 50, "report.html parses as HTML")
    svgs, start = [], html.find("<svg")
    while start >= 0:
        end = html.find("</svg>", start) + len("</svg>")
        svgs.append(html[start:end])
        start = html.find("<svg", end)
    checks.check(len(svgs) >= 4, f"report.html holds charts: {len(svgs)}")
    for i, svg in enumerate(svgs):
        try:
            ElementTree.fromstring(svg)
            checks.check(True, "")
        except ElementTree.ParseError as error:
            checks.check(False, f"svg {i} parses as XML: {error}")
    checks.check('src="http' not in html and "<link" not in html and "<script" not in html,
                 "report.html fetches nothing and has no script")


with tempfile.TemporaryDirectory() as work:
    for args, code in build_study_inputs(work, TINCT):
        checks.check(code == 0, f"tinct {args}: exit {code}")
    if checks.failed:
        checks.finish()
    started = time.time()
    run = tinct(work, "study", study_config(work, "study.yaml", "studies/one"), threads=2)
    print(f"study of 16 fine-tunes: {time.time() - started:.1f} s")
    checks.check(run.returncode == 0, f"tinct study: exit {run.returncode}")
    if run.returncode:
        checks.finish()
    one = os.path.join(work, "studies", "one")
    checks.check("macro F1" in run.stdout and "pretrained" in run.stdout, "the terminal table is printed")
    checks.check(fine_tunes_ran(run.stderr) == 16, f"16 fine-tunes ran: {fine_tunes_ran(run.stderr)}")
    summary, f1 = check_summary(one)
    check_statistics(one, summary, f1)
    check_default_heads(one)
    check_report(one)

    # Again: everything is finished with the same config, so nothing runs.
    before = {name: open(os.path.join(one, name)).read() for name in ("summary.csv", "summary.json")}
    statuses = run_statuses(one)
    run = tinct(work, "study", "study.yaml", threads=2)
    checks.check(run.returncode == 0 and "16 fine-tunes finished before, skipped" in run.stderr,
                 f"re-run skips every fine-tune: {run.stderr[-600:]}")
    checks.check(run_statuses(one) == statuses, "re-run leaves every run folder as it was")
    for name, text in before.items():
        checks.check(open(os.path.join(one, name)).read() == text, f"re-run writes the same {name}")

    # Killed mid-way, then run again: only the missing runs run, and the summary is the same.
    study_config(work, "study-two.yaml", "studies/two")
    two = os.path.join(work, "studies", "two")
    process = subprocess.Popen([TINCT, "--threads", "2", "study", "study-two.yaml"], cwd=work,
                               stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    deadline = time.time() + 60
    while time.time() < deadline and process.poll() is None:
        finished = glob.glob(os.path.join(two, "runs", "*", "*", "*", "*", "validation", "predictions.csv"))
        if len([f for f in finished if "/runs/pretrained/" in f or "/runs/scratch/" in f]) >= 5:
            break
        time.sleep(0.1)
    os.killpg(process.pid, signal.SIGKILL)
    process.wait()
    finished = [f for f in glob.glob(os.path.join(two, "runs", "*", "*", "*", "*", "validation", "predictions.csv"))
                if "/runs/pretrained/" in f or "/runs/scratch/" in f]
    checks.check(5 <= len(finished) < 16, f"killed after {len(finished)} of 16 fine-tunes")
    run = tinct(work, "study", "study-two.yaml", threads=2)
    checks.check(run.returncode == 0, "the killed study finishes when run again")
    ran = fine_tunes_ran(run.stderr)
    checks.check(ran is not None and ran <= 16 - len(finished) and ran >= 16 - len(finished) - 2,
                 f"only the missing fine-tunes ran: {ran} after {len(finished)} finished")
    for name, text in before.items():
        checks.check(open(os.path.join(two, name)).read() == text,
                     f"resumed study writes the same {name} as the uninterrupted one")

    # A random split is refused unless the study allows it.
    for allow, code in (("", 2), ("allow_random: true\n", 0)):
        name = study_config(work, "random.yaml", "studies/random", allow)
        text = open(os.path.join(work, name)).read().replace("finetune: ft.yaml", "finetune: ft-random.yaml")
        open(os.path.join(work, name), "w").write(text)
        run = tinct(work, "check", name)
        checks.check(run.returncode == code and (code == 0 or "allow_random" in run.stderr),
                     f"random split with '{allow.strip()}': exit {run.returncode} (expected {code}) {run.stderr[-300:]}")

    # A failing run is reported and the study goes on: the other runs are summarised, exit 1.
    with open(os.path.join(work, "broken.yaml"), "w") as f:
        f.write("""config: study
output: studies/broken
finetune: ft.yaml
arms:
  - {name: scratch, init: {from: scratch, run: runs/pre}}
  - {name: unstable, init: {from: scratch, run: runs/pre}, train: {lr: 1.0e+30}}
baselines: []
seeds: [1]
budgets: [5]
folds: 1
""")
    run = tinct(work, "study", "broken.yaml", threads=2)
    broken = json.load(open(os.path.join(work, "studies", "broken", "summary.json")))
    checks.check(run.returncode == 1 and "1 of 2 runs failed" in run.stderr, f"a failed run: exit {run.returncode}")
    checks.check([r["arm"] for r in broken["runs"]] == ["scratch"] and
                 [f["arm"] for f in broken["failed_runs"]] == ["unstable"] and
                 "not finite" in broken["failed_runs"][0]["message"],
                 f"the failed run is listed with its reason, the other one summarised: {broken['failed_runs']}")

    # Refusals that `tinct check` reports before anything runs (exit 2, naming the key).
    base = open(os.path.join(work, "study.yaml")).read()
    for change, expected in (
            (("{name: scratch, init:", "{name: scratch, budget: {per_class: 3}, init:"), "set by the study"),
            (("ensemble: [pretrained, scratch]", "ensemble: [pretrained, nothing]"), "nothing"),
            (("parallel: 2", "compare: [[pretrained, nothing]]"), "nothing"),
            (("budgets: [5, all]", "budgets: [5, -1]"), "budget"),
            (("folds: 2", "folds: 4"), "fold")):
        open(os.path.join(work, "bad.yaml"), "w").write(base.replace(*change))
        run = tinct(work, "check", "bad.yaml")
        checks.check(run.returncode == 2 and expected in run.stderr,
                     f"{change[1]}: refused with exit 2 mentioning '{expected}': {run.returncode} {run.stderr[-300:]}")

checks.finish()
