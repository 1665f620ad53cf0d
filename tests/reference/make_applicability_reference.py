"""Reference values for tinct's area of applicability, written into $TINCT_TEST_DATA.

applicability_reference.csv: "case,field,values..." rows for 4 random training sets (numpy
default_rng, seed 6) of float32 feature vectors with fold ids and optional weights, and
queries (training vectors, jittered copies, new draws and far outliers). Every value comes
from a direct numpy implementation of the formulas in REFERENCES.md section 10 (Meyer and
Pebesma 2021, from memory), in float64: standardise with the training mean and sd (ddof=1),
multiply by the weight (a feature constant in training is dropped), d_bar = mean distance
over all pairs i != j, training DI = nearest distance to another fold / d_bar, threshold =
the largest training DI <= 75th + 1.5 IQR (np.percentile, "linear"), query DI = nearest
training distance / d_bar. Run with Debian's /usr/bin/python3 (numpy 1.24)."""
import os

import numpy as np

# (training vectors, features, folds, weighted, constant feature, queries)
SHAPES = [(400, 12, 5, False, False, 600), (250, 30, 3, True, True, 300),
          (600, 5, 4, False, False, 1000), (60, 3, 2, True, False, 200)]


def make_case(rng, shape):
    n, features, folds, weighted, constant, count = shape
    centres = rng.normal(0, 3, (folds, features))  # folds as clusters, like spatial blocks
    fold = rng.integers(0, folds, n)
    units = rng.uniform(0.1, 50, features)  # features on very different scales
    train = (centres[fold] + rng.normal(0, rng.uniform(0.5, 2, features), (n, features))) * units
    if constant:
        train[:, 3] = 7.25
    weights = rng.uniform(0, 2, features) if weighted else None
    if weighted:
        weights[1] = 0.0
    picks = rng.integers(0, n, count)
    queries = train[picks].copy()
    kind = np.arange(count) % 4  # 0: a training vector, 1: jittered, 2: new draw, 3: far
    sd = train.std(axis=0) + 1e-9
    queries[kind == 1] += rng.normal(0, 0.05, ((kind == 1).sum(), features)) * sd
    queries[kind == 2] = (centres[rng.integers(0, folds, (kind == 2).sum())] +
                          rng.normal(0, 1.5, ((kind == 2).sum(), features))) * units
    queries[kind == 3] += rng.normal(0, 8, ((kind == 3).sum(), features)) * sd
    return train.astype(np.float32), fold, weights, queries.astype(np.float32)


def applicability(train, fold, weights, queries):
    x = train.astype(np.float64)
    mean, sd = x.mean(axis=0), x.std(axis=0, ddof=1)
    w = np.ones(x.shape[1]) if weights is None else weights
    scale = np.where(sd > 0, w / np.where(sd > 0, sd, 1), 0.0)
    s = (x - mean) * scale
    q = (queries.astype(np.float64) - mean) * scale
    n = len(s)
    total, nearest = 0.0, np.empty(n)
    for i in range(n):
        d = np.sqrt(((s - s[i]) ** 2).sum(axis=1))
        total += d.sum()  # d[i] = 0
        nearest[i] = d[fold != fold[i]].min()
    d_bar = total / (n * (n - 1))
    train_di = nearest / d_bar
    q1, q3 = np.percentile(train_di, [25, 75])
    whisker = q3 + 1.5 * (q3 - q1)
    threshold = train_di[train_di <= whisker].max()
    query_di = np.array([np.sqrt(((s - v) ** 2).sum(axis=1)).min() for v in q]) / d_bar
    return d_bar, train_di, (q1, q3, whisker, threshold), query_di


def r(v):
    return repr(float(v))


def main():
    folder = os.environ["TINCT_TEST_DATA"]
    os.makedirs(folder, exist_ok=True)
    print(f"numpy {np.__version__}")
    rng = np.random.default_rng(6)
    path = os.path.join(folder, "applicability_reference.csv")
    with open(path + ".part", "w") as out:
        out.write("case,field,values\n")
        for index, shape in enumerate(SHAPES):
            train, fold, weights, queries = make_case(rng, shape)
            d_bar, train_di, limits, query_di = applicability(train, fold, weights, queries)
            rows = [("features", [str(train.shape[1])]),
                    ("training", [r(v) for v in train.ravel()]),
                    ("folds", [str(int(v)) for v in fold]),
                    ("weights", [] if weights is None else [r(v) for v in weights]),
                    ("queries", [r(v) for v in queries.ravel()]),
                    ("d_bar", [r(d_bar)]), ("training_index", [r(v) for v in train_di]),
                    ("limits", [r(v) for v in limits]), ("query_index", [r(v) for v in query_di])]
            for field, values in rows:
                out.write(",".join([str(index), field] + values) + "\n")
    os.replace(path + ".part", path)
    print(f"wrote {len(SHAPES)} cases into {path}")


if __name__ == "__main__":
    main()
