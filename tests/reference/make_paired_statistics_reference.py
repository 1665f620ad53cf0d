"""Reference values for tinct's paired statistics, written into $TINCT_TEST_DATA.

distributions_reference.csv: "function,a,b,c,value" rows of SciPy 1.10's special.betainc,
stats.t.sf/cdf/ppf (and ppf polished by Newton steps on cdf), stats.norm.sf, stats.chi2.sf (df 1) and stats.binom.cdf (p = 1/2) over
grids and random arguments. paired_statistics_reference.csv: "case,field,values..." rows for
240 random paired samples (numpy default_rng, seed 4): ties, zeros, n from 2 to 90, with
SciPy's wilcoxon (exact and approx, continuity on and off, three alternatives), ttest_rel and
its confidence_interval, stats.bootstrap (percentile, every third case), the corrected resampled t test computed
from its formula in numpy, binomtest and chi2 for McNemar counts up to 4000, and statsmodels'
multipletests(method="holm"). Run with Debian's /usr/bin/python3 (SciPy 1.10, statsmodels 0.13)."""
import gc
import os
import warnings

import numpy as np
import scipy
import statsmodels
from scipy import special, stats
from statsmodels.stats.multitest import multipletests

CASES = 240
ALTERNATIVES = ("two-sided", "greater", "less")
EXACT_LIMIT = 50  # tinct's automatic rule: exact when non-zero n <= 50 and no tied |d|


def r(v):
    return repr(float(v))


def polished_t_ppf(q, df):
    """SciPy 1.10's t.ppf is good to only about 2e-9 relative (t.sf at t.ppf(0.1, 3) is
    0.0999999996); two Newton steps on SciPy's accurate t.cdf / t.sf bring it to rounding."""
    t = stats.t.ppf(q, df)
    for _ in range(2):
        if t == 0:
            break
        error = stats.t.cdf(t, df) - q if t < 0 else (1 - q) - stats.t.sf(t, df)
        t -= error / stats.t.pdf(t, df)
    return t


def distribution_rows(rng):
    rows = []
    for _ in range(400):
        a, b = np.exp(rng.uniform(np.log(0.1), np.log(300), 2))
        x = rng.random() if rng.random() < 0.8 else rng.choice([0.0, 1.0, 1e-8, 1 - 1e-8, 0.5])
        rows.append(("betainc", a, b, x, special.betainc(a, b, x)))
    dfs = [0.5, 1, 2, 3, 4.5, 9, 10, 29, 100, 1000, 1e5]
    ts = [-40, -7.3, -3, -2.2621571627409915, -1, -0.1, 0, 1e-9, 0.05, 0.7, 1.96, 2.5, 4, 12, 60, 400]
    for df in dfs:
        for t in ts:
            rows.append(("t_sf", t, df, 0, stats.t.sf(t, df)))
            rows.append(("t_cdf", t, df, 0, stats.t.cdf(t, df)))
        for q in [1e-10, 1e-6, 1e-3, 0.01, 0.025, 0.05, 0.1, 0.3, 0.5, 0.7, 0.9, 0.95, 0.975,
                  0.995, 1 - 1e-6]:
            rows.append(("t_ppf", q, df, 0, stats.t.ppf(q, df)))
            rows.append(("t_ppf_newton", q, df, 0, polished_t_ppf(q, df)))
    for z in [-30, -8, -3, -1.5, -0.2, 0, 0.3, 1.96, 3.2, 6, 9, 30]:
        rows.append(("norm_sf", z, 0, 0, stats.norm.sf(z)))
    for x in [0, 1e-6, 0.1, 1, 3.0625, 3.84, 8, 20, 60, 200]:
        rows.append(("chi2_sf", x, 0, 0, stats.chi2.sf(x, 1)))
    for _ in range(150):
        n = int(rng.integers(1, 5000)) if rng.random() < 0.5 else int(rng.integers(1, 60))
        k = int(rng.integers(0, n + 1))
        rows.append(("binom_cdf", k, n, 0, stats.binom.cdf(k, n, 0.5)))
    return rows


def paired_differences(rng, index):
    n = int(rng.integers(2, 91)) if rng.random() < 0.6 else int(rng.integers(2, 16))
    d = rng.normal(rng.uniform(-0.3, 0.8), rng.uniform(0.2, 2), n)
    kind = index % 4
    if kind == 1:
        d = np.round(d, 1)  # ties (and some zeros)
    elif kind == 2:
        d[rng.random(n) < 0.25] = 0.0  # zeros, no ties among the rest
    elif kind == 3 and n <= 10:
        d = np.round(d * 2) / 2  # heavy ties, maybe all zero
    return d


def wilcoxon_rows(d):
    nonzero = d[d != 0]
    if len(nonzero) == 0:
        return [("wilcoxon_none", [])]
    ties = len(np.unique(np.abs(nonzero))) < len(nonzero)
    automatic = "exact" if len(nonzero) <= EXACT_LIMIT and not ties else "normal"
    rows = [("wilcoxon_auto", [automatic])]
    for alternative in ALTERNATIVES:
        for correction in (False, True):
            res = stats.wilcoxon(d, zero_method="wilcox", correction=correction,
                                 alternative=alternative, method="approx")
            rows.append((f"wilcoxon:{alternative}:normal:{int(correction)}",
                         [r(res.statistic), r(res.pvalue), r(res.zstatistic)]))
        if not ties:
            res = stats.wilcoxon(nonzero, alternative=alternative, method="exact")
            rows.append((f"wilcoxon:{alternative}:exact:0", [r(res.statistic), r(res.pvalue)]))
    return rows


def t_rows(rng, d):
    rows = []
    if np.std(d) == 0:
        return [("t_constant", [])]
    zero = np.zeros_like(d)
    for alternative in ALTERNATIVES:
        res = stats.ttest_rel(d, zero, alternative=alternative)
        rows.append((f"ttest:{alternative}", [r(res.statistic), r(res.pvalue)]))
    for level in (0.95, 0.9):
        ci = stats.ttest_rel(d, zero).confidence_interval(level)
        rows.append((f"ttest_ci:{level}", [r(ci.low), r(ci.high)]))
    # Corrected resampled t test (Nadeau and Bengio 2003), straight from its formula.
    ratio = float(rng.choice([0.0, 0.25, 1 / 3, 0.5, rng.uniform(0.05, 2)]))
    j = len(d)
    se = np.sqrt((1 / j + ratio) * np.var(d, ddof=1))
    t = np.mean(d) / se
    half = stats.t.ppf(0.975, j - 1) * se
    rows.append(("corrected", [r(ratio), r(t), r(2 * stats.t.sf(abs(t), j - 1)),
                               r(stats.t.sf(t, j - 1)), r(np.mean(d) - half),
                               r(np.mean(d) + half)]))
    return rows


def bootstrap_rows(d, index):
    if index % 3 != 0 or len(np.unique(d)) < 2:  # every third case: SciPy's resampling is slow
        return []
    res = stats.bootstrap((d,), np.mean, n_resamples=10000, method="percentile",
                          confidence_level=0.95, random_state=index)
    return [("bootstrap", [r(np.mean(d)), r(res.confidence_interval.low),
                           r(res.confidence_interval.high)])]


def mcnemar_rows(rng):
    scale = rng.choice([3, 30, 300, 4000])
    b, c = (int(v) for v in rng.integers(0, scale + 1, 2))
    if rng.random() < 0.1:
        c = b
    if b + c == 0:
        return [("mcnemar", [str(b), str(c)])]
    exact = stats.binomtest(b, b + c, 0.5).pvalue
    plain = (b - c) ** 2 / (b + c)
    corrected = (abs(b - c) - 1) ** 2 / (b + c)
    return [("mcnemar", [str(b), str(c), r(exact), r(plain), r(stats.chi2.sf(plain, 1)),
                         r(corrected), r(stats.chi2.sf(corrected, 1))])]


def holm_rows(rng):
    m = int(rng.integers(1, 11))
    p = rng.random(m) ** rng.uniform(1, 6)  # many small p values
    if m > 2 and rng.random() < 0.3:
        p[1] = p[0]  # equal p values
    return [("holm_p", [r(v) for v in p]),
            ("holm_adjusted", [r(v) for v in multipletests(p, method="holm")[1]])]


def case_rows(rng, index):
    d = paired_differences(rng, index)
    rows = [("differences", [r(v) for v in d])]
    rows += wilcoxon_rows(d) + t_rows(rng, d) + bootstrap_rows(d, index)
    return rows + mcnemar_rows(rng) + holm_rows(rng)


def write_atomic(path, lines):
    with open(path + ".part", "w") as out:
        out.write("\n".join(lines) + "\n")
    os.replace(path + ".part", path)


def main():
    warnings.filterwarnings("ignore")  # small-sample and zero warnings we exercise on purpose
    gc.freeze()  # multipletests runs gc.collect() per call: 0.3 s each over pandas' heap
    folder = os.environ["TINCT_TEST_DATA"]
    os.makedirs(folder, exist_ok=True)
    print(f"numpy {np.__version__}, SciPy {scipy.__version__}, statsmodels {statsmodels.__version__}")
    rng = np.random.default_rng(4)
    lines = ["function,a,b,c,value"]
    lines += [",".join([name] + [r(v) for v in values]) for name, *values in distribution_rows(rng)]
    write_atomic(os.path.join(folder, "distributions_reference.csv"), lines)
    lines = ["case,field,values"]
    for index in range(CASES):
        for field, values in case_rows(rng, index):
            lines.append(",".join([str(index), field] + values))
    write_atomic(os.path.join(folder, "paired_statistics_reference.csv"), lines)
    print(f"wrote distributions and {CASES} paired cases into {folder}")


if __name__ == "__main__":
    main()
