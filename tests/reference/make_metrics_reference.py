"""Reference values for tinct's classification metrics, written into $TINCT_TEST_DATA.

metrics_reference.csv: 320 random cases (numpy default_rng, seed 3), K from 2 to 6, N from 5
to 300, with classes never predicted, classes absent from truth, one-class cases and quantised
probabilities (tied scores, scores on bin edges). Each row is "case,field,values..."; values
are scikit-learn 1.2's (labels=range(K), zero_division=0), ECE is numpy's (REFERENCES.md 3),
an empty field means undefined. Run with Debian's /usr/bin/python3 (sklearn 1.2, numpy 1.24)."""
import os
import warnings

import numpy as np
import sklearn
from sklearn import metrics

CASES = 320
BIN_EDGES = np.arange(1, 11) / 10  # upper edges m/10; bin m = ((m-1)/10, m/10]


def calibration_bins(values):
    return np.minimum(np.searchsorted(BIN_EDGES, values, side="left"), 9)


def ece(values, outcomes):
    bins = calibration_bins(values)
    total = 0.0
    for m in range(10):
        inside = bins == m
        if inside.any():
            total += inside.mean() * abs(outcomes[inside].mean() - values[inside].mean())
    return total


def top_label_ece(truth, probabilities):
    top = probabilities.argmax(axis=1)  # first maximum on ties
    return ece(probabilities.max(axis=1), (top == truth).astype(float))


def positive_class_ece(truth, probabilities):
    return ece(probabilities[:, 1], (truth == 1).astype(float))


def class_subset(rng, classes, drop_chance):
    """All classes, or with drop_chance a random non-empty subset."""
    if rng.random() >= drop_chance:
        return np.arange(classes)
    size = rng.integers(1, classes) if classes > 1 else 1
    return np.sort(rng.choice(classes, size=size, replace=False))


def probabilities_for(rng, truth, classes, quantised):
    strength = rng.uniform(0, 4)
    logits = rng.normal(size=(len(truth), classes))
    logits[np.arange(len(truth)), truth] += strength
    p = np.exp(logits - logits.max(axis=1, keepdims=True))
    p /= p.sum(axis=1, keepdims=True)
    if not quantised:
        return p
    steps = rng.choice([4, 10, 20])  # multiples of 1/steps: ties and bin edges
    counts = np.array([rng.multinomial(steps, row) for row in p])
    return counts / steps


def noisy_predictions(rng, truth, allowed):
    predicted = truth.copy()
    flip = rng.random(len(truth)) < rng.uniform(0.1, 0.9)
    predicted[flip] = rng.choice(allowed, size=flip.sum())
    # A class outside `allowed` is never predicted: move those to allowed classes.
    outside = ~np.isin(predicted, allowed)
    predicted[outside] = rng.choice(allowed, size=outside.sum())
    return predicted


def make_case(rng, index):
    classes = 2 if rng.random() < 0.3 else int(rng.integers(2, 7))  # binary: ranking too
    n = int(rng.integers(5, 301)) if rng.random() < 0.7 else int(rng.integers(5, 20))
    if index % 40 == 0:  # one class everywhere: kappa's p_e = 1
        label = int(rng.integers(classes))
        truth = np.full(n, label)
        return classes, truth, truth.copy(), None
    truth = rng.choice(class_subset(rng, classes, 0.25), size=n)
    probabilities = None
    if rng.random() < 0.7:
        probabilities = probabilities_for(rng, truth, classes, rng.random() < 0.4)
    if probabilities is not None and rng.random() < 0.5:
        predicted = probabilities.argmax(axis=1)
    else:
        predicted = noisy_predictions(rng, truth, class_subset(rng, classes, 0.35))
    return classes, truth, predicted, probabilities


def numbers(values):
    return [repr(float(v)) for v in np.ravel(values)]


def integers(values):
    return [str(int(v)) for v in np.ravel(values)]


def ranking_rows(truth, probabilities):
    if len(np.unique(truth)) < 2:
        return [("roc_auc", []), ("average_precision", [])]
    score = probabilities[:, 1]
    return [("roc_auc", numbers([metrics.roc_auc_score(truth, score)])),
            ("average_precision", numbers([metrics.average_precision_score(truth, score)]))]


def score_rows(classes, truth, probabilities):
    if probabilities is None:
        return [("ece", [])]
    rows = [("probabilities", numbers(probabilities)),
            ("ece", numbers([top_label_ece(truth, probabilities)]))]
    if classes == 2:
        rows += ranking_rows(truth, probabilities)
        rows.append(("positive_class_ece", numbers([positive_class_ece(truth, probabilities)])))
    return rows


def case_rows(classes, truth, predicted, probabilities):
    labels = list(range(classes))
    precision, recall, f1, support = metrics.precision_recall_fscore_support(
        truth, predicted, labels=labels, average=None, zero_division=0)
    f1_average = {average: metrics.f1_score(truth, predicted, labels=labels, average=average,
                                            zero_division=0)
                  for average in ("macro", "weighted", "micro")}
    rows = [("classes", [str(classes)]), ("truth", integers(truth)),
            ("predicted", integers(predicted)),
            ("accuracy", numbers([metrics.accuracy_score(truth, predicted)])),
            ("balanced_accuracy", numbers([metrics.balanced_accuracy_score(truth, predicted)])),
            ("precision", numbers(precision)), ("recall", numbers(recall)), ("f1", numbers(f1)),
            ("support", integers(support)),
            ("macro_f1", numbers([f1_average["macro"]])),
            ("weighted_f1", numbers([f1_average["weighted"]])),
            ("micro_f1", numbers([f1_average["micro"]])),
            ("kappa", numbers([metrics.cohen_kappa_score(truth, predicted, labels=labels)])),
            ("confusion", integers(metrics.confusion_matrix(truth, predicted, labels=labels)))]
    return rows + score_rows(classes, truth, probabilities)


def main():
    warnings.filterwarnings("ignore")  # sklearn warns on every undefined case we exercise
    np.seterr(all="ignore")
    folder = os.environ["TINCT_TEST_DATA"]
    os.makedirs(folder, exist_ok=True)
    print(f"numpy {np.__version__}, scikit-learn {sklearn.__version__}")
    rng = np.random.default_rng(3)
    path = os.path.join(folder, "metrics_reference.csv")
    with open(path + ".part", "w") as out:
        out.write("case,field,values\n")
        for index in range(CASES):
            for field, values in case_rows(*make_case(rng, index)):
                out.write(",".join([str(index), field] + values) + "\n")
    os.replace(path + ".part", path)
    print(f"wrote {CASES} cases into {path}")


if __name__ == "__main__":
    main()
