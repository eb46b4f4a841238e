"""ratio_statsmodels.py -- the Farrington & Manning (1990) score statistic on
the ratio scale for every count pair of a few tables, from statsmodels.

Run from this folder:   /usr/bin/python3 ratio_statsmodels.py > ratio_statsmodels.out

Run ratio_make.R first: this script also re-checks its ratio_mle.tsv (see
the end). Writes ratio_score.tsv. One row per count pair (x1, x2) of each table; its
`source` column is the exact call, with the functions imported from
statsmodels.stats.proportion:

* kind = noninferiority: the one-sided score test of H0: p1/p2 = rho0,
  statsmodels.stats.proportion.test_proportions_2indep(x1, n1, x2, n2,
  value=rho0, method='score', compare='ratio', alternative=alt,
  correction=False); alt is 'smaller' for rho0 > 1 (a higher risk is worse)
  and 'larger' for rho0 < 1. `statistic` and `pvalue` are its output,
  `reject` is pvalue < alpha. The same call with the default
  correction=True is only checked (see below), not written.
* kind = equivalence: statsmodels.stats.proportion.tost_proportions_2indep(
  x1, n1, x2, n2, low=1/M, upp=M, method='score', compare='ratio',
  correction=False); `statistic` is results_larger.statistic (the test
  against 1/M), `statistic2` is results_smaller.statistic (against M),
  `pvalue` the larger of the two one-sided p-values
  max(results_larger.pvalue, results_smaller.pvalue), `reject` is
  pvalue < alpha. Not res.pvalue: in statsmodels 0.13.5 that is the
  smaller of the two (statsmodels issue #8213, "BUG: tost uses min pvalue
  instead of max pvalue", fixed by pull request #8333 in 0.14); the script
  checks that it is, and counts the cells where it matters.

Variance convention. statsmodels' score test for the ratio is

    z = (p1hat - rho0 p2hat) / sqrt(p1t q1t / n1 + rho0^2 p2t q2t / n2) * c

with p1t = rho0 p2t the restricted MLE (smaller root of the quadratic of
Miettinen & Nurminen 1985 / Farrington & Manning 1990) and c = 1 when
correction=False. That is exactly the Farrington & Manning (1990)
statistic. With the default correction=True the variance is multiplied by
N/(N - 1), N = n1 + n2 (Miettinen & Nurminen 1985); this script checks that
its statistic is the correction=False statistic times sqrt((N - 1)/N) in
every cell. Only the correction=False statistic is written and compared
with the Go code.

Independent check: the statistic is recomputed with the restricted MLE from
scipy.optimize.minimize_scalar (bounded) on the log-likelihood, polished
with scipy.optimize.brentq on the score; it must agree with statsmodels to
1e-9 (relative, or absolute below 1).

At x1 = x2 = 0 the restricted MLE is p1t = p2t = 0, the variance is 0 and
statsmodels' statistic is nan (0/0): the p-value is nan, which is not below
alpha, so that cell never rejects. No other cell has a zero variance.
"""

import math
import sys
import warnings
from decimal import Decimal, getcontext

import numpy as np
import scipy
import statsmodels
from scipy import optimize
from scipy.stats import norm
from statsmodels.stats.proportion import (test_proportions_2indep,
                                          tost_proportions_2indep)

print("python", sys.version.split()[0])
print("numpy", np.__version__)
print("scipy", scipy.__version__)
print("statsmodels", statsmodels.__version__)
print()

# test_proportions_2indep computes p1/p2 and the odds ratio for its result
# even for the score test; with numpy integers that is inf/nan with a
# warning instead of a ZeroDivisionError at zero counts.
warnings.simplefilter("ignore", RuntimeWarning)

n_checks = 0


def check(label, mine, other, tol):
    global n_checks
    if math.isnan(mine) and math.isnan(other):
        err = 0.0
    else:
        err = abs(mine - other) / max(1.0, abs(other))
    ok = err <= tol
    if not ok:
        print(f"CHECK {label} mine={mine!r} other={other!r} err={err:.3g} FAIL")
        raise SystemExit("cross-check failed: " + label)
    n_checks += 1
    return err


def xlogy(a, y):
    return 0.0 if a == 0 else a * math.log(y)


def restricted_p2(a1, a2, r, rho0):
    """Numerical restricted MLE of p2 under p1 = rho0 p2 (per first-group
    participant), by bounded minimisation and a brentq polish."""
    hi = min(1.0, 1.0 / rho0)
    if a1 == 0 and a2 == 0:
        return 0.0  # L(x) = log(1 - rho0 x) + r log(1 - x) falls from x = 0

    def negll(x):
        return -(xlogy(a1, rho0 * x) + xlogy(1 - a1, 1 - rho0 * x)
                 + r * (xlogy(a2, x) + xlogy(1 - a2, 1 - x)))

    def sc(x):
        s = (a1 + r * a2) / x
        if a1 < 1:
            s -= rho0 * (1 - a1) / (1 - rho0 * x)
        if a2 < 1:
            s -= r * (1 - a2) / (1 - x)
        return s

    res = optimize.minimize_scalar(negll, bounds=(0, hi), method="bounded",
                                   options={"xatol": 1e-12})
    x = res.x
    lo_b, hi_b = max(x - 1e-6, 1e-300), min(x + 1e-6, hi)
    try:
        slo, shi = sc(lo_b), sc(hi_b)
    except ZeroDivisionError:
        slo = shi = float("nan")
    if math.isfinite(slo) and math.isfinite(shi) and slo > 0 and shi < 0:
        x = optimize.brentq(sc, lo_b, hi_b, xtol=1e-16, rtol=1e-15)
    elif abs(x - hi) < 1e-5 and negll(hi) <= negll(x):
        x = hi
    return x


def z_indep(x1, n1, x2, n2, rho0):
    a1, a2 = x1 / n1, x2 / n2
    p2t = restricted_p2(a1, a2, n2 / n1, rho0)
    p1t = rho0 * p2t
    v = p1t * (1 - p1t) / n1 + rho0 ** 2 * p2t * (1 - p2t) / n2
    num = a1 - rho0 * a2
    return num / math.sqrt(v) if v > 0 else float("nan")


def f15(x):
    if isinstance(x, (bool, np.bool_)):
        return "TRUE" if x else "FALSE"
    if isinstance(x, str):
        return x
    x = float(x)
    if math.isnan(x):
        return "NA"
    if math.isinf(x):
        return "Inf" if x > 0 else "-Inf"
    return "%.15g" % x


tables = [
    # (id prefix, kind, n1, n2, bound, alpha)
    ("ni10x10", "noninferiority", 10, 10, 1.5, 0.025),
    ("ni12x20", "noninferiority", 12, 20, 0.8, 0.05),
    ("ni25x15", "noninferiority", 25, 15, 2.0, 0.05),
    ("ni8x14", "noninferiority", 8, 14, 0.6, 0.1),
    ("eq20x35", "equivalence", 20, 35, 1.5, 0.05),
    ("eq15x15", "equivalence", 15, 15, 2.0, 0.1),
]

cols = ["id", "kind", "n1", "n2", "x1", "x2", "bound", "alternative", "alpha",
        "statistic", "statistic2", "pvalue", "reject", "source"]
rows = []
worst_indep = 0.0
worst_mn = 0.0
n_tost_bug = 0
min_gap = math.inf
for prefix, kind, n1, n2, bound, alpha in tables:
    za = norm.isf(alpha)
    count = 0
    for x1 in range(n1 + 1):
        for x2 in range(n2 + 1):
            c1, m1, c2, m2 = np.int64(x1), np.int64(n1), np.int64(x2), np.int64(n2)
            rid = f"{prefix}_{x1}_{x2}"
            if kind == "noninferiority":
                alt = "smaller" if bound > 1 else "larger"
                res = test_proportions_2indep(c1, m1, c2, m2, value=bound, method="score",
                                              compare="ratio", alternative=alt, correction=False)
                mn = test_proportions_2indep(c1, m1, c2, m2, value=bound, method="score",
                                             compare="ratio", alternative=alt)
                z, p, z2 = float(res.statistic), float(res.pvalue), float("nan")
                zmn = float(mn.statistic)
                worst_indep = max(worst_indep, check(rid + " indep", z_indep(x1, n1, x2, n2, bound), z, 1e-9))
                if not math.isnan(z):
                    want = z * math.sqrt((n1 + n2 - 1) / (n1 + n2))
                    worst_mn = max(worst_mn, check(rid + " MN correction", zmn, want, 1e-12))
                    s = -1 if bound > 1 else 1
                    min_gap = min(min_gap, abs(s * z - za))
                call = (f"test_proportions_2indep({x1}, {n1}, {x2}, {n2}, "
                        f"value={bound}, method='score', compare='ratio', alternative='{alt}', correction=False)")
            else:
                alt = "NA"
                res = tost_proportions_2indep(c1, m1, c2, m2, 1 / bound, bound, method="score",
                                              compare="ratio", correction=False)
                z = float(res.results_larger.statistic)
                z2 = float(res.results_smaller.statistic)
                p_lo = float(res.results_larger.pvalue)
                p_up = float(res.results_smaller.pvalue)
                # statsmodels 0.13.5 returns the smaller of the two p-values
                # as res.pvalue (statsmodels issue #8213, fixed by pull
                # request #8333 for 0.14): the TOST p-value is the larger.
                p = max(p_lo, p_up)
                if not math.isnan(p):
                    check(rid + " res.pvalue is the smaller p-value (issue #8213)",
                          float(res.pvalue), min(p_lo, p_up), 0)
                    n_tost_bug += p_lo != p_up
                zmn = float("nan")
                worst_indep = max(worst_indep, check(rid + " indep lower", z_indep(x1, n1, x2, n2, 1 / bound), z, 1e-9))
                worst_indep = max(worst_indep, check(rid + " indep upper", z_indep(x1, n1, x2, n2, bound), z2, 1e-9))
                if not math.isnan(z):
                    min_gap = min(min_gap, abs(z - za), abs(-z2 - za))
                call = (f"tost_proportions_2indep({x1}, {n1}, {x2}, {n2}, "
                        f"1/{bound}, {bound}, method='score', compare='ratio', correction=False)")
            reject = bool(p < alpha)  # nan < alpha is False
            count += reject
            rows.append([rid, kind, n1, n2, x1, x2, bound, alt, alpha, z, z2, p, reject, call])
    print(f"{prefix}: {kind} n {n1}/{n2} bound {bound} alpha {alpha}: "
          f"{(n1 + 1) * (n2 + 1)} cells, {count} reject")

print()
print(f"statsmodels (correction=False) vs scipy optimisation: largest discrepancy {worst_indep:.3g}")
print(f"correction=True vs correction=False * sqrt((N-1)/N): largest discrepancy {worst_mn:.3g}")
print(f"equivalence cells where statsmodels' res.pvalue (the smaller) differs from the TOST p-value: {n_tost_bug}")
print(f"smallest |s z - z_alpha| over cells with a finite statistic: {min_gap:.3g}")
if min_gap < 1e-8:
    raise SystemExit("a decision is a near tie")

# Re-check ratio_mle.tsv (written by ratio_make.R: R's numerical restricted
# MLE where the quadratic's two roots nearly coincide) against the smaller
# root of the quadratic solved in 60-digit decimal arithmetic, from the
# exact binary values of the inputs, clamped to the interval's end.
getcontext().prec = 60
worst_mle = 0.0
with open("ratio_mle.tsv") as f:
    header = f.readline().rstrip("\n").split("\t")
    for line in f:
        row = dict(zip(header, line.rstrip("\n").split("\t")))
        p1, p2, r, rho0 = (Decimal(float(row[k])) for k in ("p1", "p2", "r", "rho0"))
        a = rho0 * (1 + r)
        b = -(rho0 + p1 + r + r * rho0 * p2)
        c = p1 + r * p2
        disc = b * b - 4 * a * c
        x = (-b - (disc.sqrt() if disc > 0 else Decimal(0))) / (2 * a)
        x = min(x, min(Decimal(1), 1 / rho0))
        worst_mle = max(worst_mle, check(row["id"] + " decimal quadratic", float(row["p2_tilde"]), float(x), 1e-13))
print(f"ratio_mle.tsv (R, numerical) vs the quadratic in 60-digit decimals: largest discrepancy {worst_mle:.3g}")

with open("ratio_score.tsv", "w") as f:
    f.write("\t".join(cols) + "\n")
    for row in rows:
        f.write("\t".join(f15(v) for v in row) + "\n")
print(f"wrote ratio_score.tsv ({len(rows)} rows)")
print(f"{n_checks} checks passed")
