"""Reference temperatures for tinct's temperature scaling, written into $TINCT_TEST_DATA.

temperature_reference.csv: "case,field,values..." rows for 12 random validation sets (numpy
default_rng, seed 5): logits (N, K) row-major, labels drawn from softmax(z) with the logits
handed over as z x a factor (over-confident above 1, under-confident below), and the
temperature that SciPy 1.10's minimize_scalar (bounded Brent over log T in [log 0.01,
log 100], xatol 1e-10) finds for the mean negative log-likelihood, with the NLL at T = 1 and
at that T. Run with Debian's /usr/bin/python3 (numpy 1.24, SciPy 1.10)."""
import os

import numpy as np
import scipy
from scipy import optimize, special

CASES = 12


def nll(logits, labels, temperature):
    scaled = logits / temperature
    return float(np.mean(special.logsumexp(scaled, axis=1) -
                         scaled[np.arange(len(labels)), labels]))


def make_case(rng, index):
    n = int(rng.integers(30, 601))
    classes = int(rng.integers(2, 7))
    factor = [3.0, 0.5][index] if index < 2 else float(np.exp(rng.uniform(np.log(0.3), np.log(4))))
    z = rng.normal(0, rng.uniform(0.5, 2.5), (n, classes))
    p = special.softmax(z, axis=1)
    labels = np.array([rng.choice(classes, p=row) for row in p])
    return z * factor, labels, factor


def fit(logits, labels):
    res = optimize.minimize_scalar(lambda u: nll(logits, labels, np.exp(u)),
                                   bounds=(np.log(0.01), np.log(100)), method="bounded",
                                   options={"xatol": 1e-10})
    return float(np.exp(res.x))


def r(v):
    return repr(float(v))


def main():
    folder = os.environ["TINCT_TEST_DATA"]
    os.makedirs(folder, exist_ok=True)
    print(f"numpy {np.__version__}, SciPy {scipy.__version__}")
    rng = np.random.default_rng(5)
    path = os.path.join(folder, "temperature_reference.csv")
    with open(path + ".part", "w") as out:
        out.write("case,field,values\n")
        for index in range(CASES):
            logits, labels, factor = make_case(rng, index)
            temperature = fit(logits, labels)
            rows = [("classes", [str(logits.shape[1])]), ("factor", [r(factor)]),
                    ("logits", [r(v) for v in logits.ravel()]),
                    ("labels", [str(int(v)) for v in labels]),
                    ("temperature", [r(temperature)]),
                    ("nll", [r(nll(logits, labels, 1.0)), r(nll(logits, labels, temperature))])]
            for field, values in rows:
                out.write(",".join([str(index), field] + values) + "\n")
    os.replace(path + ".part", path)
    print(f"wrote {CASES} cases into {path}")


if __name__ == "__main__":
    main()
