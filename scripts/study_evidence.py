#!/usr/bin/python3
"""The README's heads evidence from the kept study reports (scripts/l7_study.py --keep DIR):
per task and budget, macro F1 mean and sd of every arm, and each comparison as the study
computed it (mean paired difference, its 95% interval and how it was resampled, Wilcoxon p),
plus a plain bootstrap over the run pairs (2000 resamples of the pairs, seeds and folds alike,
numpy seed 0), which ignores that runs sharing a test fold are correlated: a second, more
optimistic view, never the verdict.

usage: study_evidence.py DIR/index DIR/visible ...
"""
import json
import os
import sys

import numpy as np


def pair_bootstrap(differences):
    rng = np.random.default_rng(0)
    d = np.asarray(differences, dtype=float)
    means = d[rng.integers(0, len(d), (2000, len(d)))].mean(axis=1)
    return np.percentile(means, [2.5, 97.5])


def main():
    for folder in sys.argv[1:]:
        doc = json.load(open(os.path.join(folder, "summary.json")))
        task = os.path.basename(os.path.normpath(folder))
        print(f"## {task}")
        for entry in doc["summaries"]:
            f1 = entry["macro_f1"]
            print(f"{task:8} {entry['budget']:>3} {entry['arm']:20} n {f1['n']:2d} macro F1 {f1['mean']:.3f} "
                  f"sd {f1['sd']:.3f} [{f1['low']:.3f}, {f1['high']:.3f}]")
        for c in doc["comparisons"]:
            low, high = pair_bootstrap(c["differences"])
            p = c["wilcoxon_p"]
            print(f"{task:8} {c['budget']:>3} {c['arm_a']} - {c['arm_b']}: {c['mean_difference']:+.3f} "
                  f"[{c['bootstrap_low']:+.3f}, {c['bootstrap_high']:+.3f}] ({c['resampling']}); "
                  f"Wilcoxon p {p if p is None else format(p, '.4f')}; pairs bootstrap [{low:+.3f}, {high:+.3f}]; "
                  f"{c['pairs']} pairs")
        if doc.get("failed_runs"):
            print(f"{task}: {len(doc['failed_runs'])} failed runs")


if __name__ == "__main__":
    main()
