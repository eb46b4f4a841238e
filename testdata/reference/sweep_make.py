"""sweep_make.py -- checks every row of the sweep reference tables again with
statsmodels and scipy, independently of R.

Run from this folder, after sweep_make.R:

    /usr/bin/python3 sweep_make.py > sweep_make_py.out

It writes nothing but its printed output; it stops with an error if any row
disagrees. Calls (statsmodels 0.13.5, scipy 1.10.1):

* two proportions, n:
  statsmodels.stats.proportion.samplesize_proportions_2indep_onetail(
      diff=p1-p2, prop2=p2, power=power, ratio=r, alpha=alpha,
      alternative='two-sided')
  -- the normal approximation with the pooled variance under the null and
  separate variances under the alternative, one tail of the two-sided test
  (the Fleiss, Levin & Paik 2003 ch. 4 formula; NOT NormalIndPower, which
  works on Cohen's arcsine effect size h and is another formula).
* two proportions, power at sizes m1, m2 (one tail, direction of the effect):
  statsmodels.stats.proportion.power_proportions_2indep(
      diff=p1-p2, prop2=p2, nobs1=m1, ratio=m2/m1, alpha=alpha/2,
      alternative='smaller' if p1 < p2 else 'larger', return_results=False)
* two means, power (both tails of the two-sided t test):
  statsmodels.stats.power.TTestIndPower().power(effect_size=delta/sd,
      nobs1=n, alpha=alpha, ratio=1, alternative='two-sided')
  and n* by scipy.optimize.brentq on that power (xtol=1e-12).
  scipy's noncentral t (Boost) differs from R's pt(ncp) by up to ~3e-10
  here; a quadrature in R (integrate over the chi-square, rel.tol 1e-14)
  sides with R to 4e-13 (sweep_README.md), so these rows are checked to 1e-9.
"""

import warnings

import csv
import math
import sys
from fractions import Fraction

import scipy
import statsmodels
from scipy.optimize import brentq
from statsmodels.stats.power import TTestIndPower
from statsmodels.stats.proportion import (power_proportions_2indep,
                                          samplesize_proportions_2indep_onetail)

checks = 0
warnings.simplefilter("ignore", RuntimeWarning)  # scipy nct: harmless divide-by-zero inside Boost


def check(what, got, want, tol, rel=True):
    global checks
    scale = max(1.0, abs(want)) if rel else 1.0
    err = abs(got - want) / scale
    if not err <= tol:
        sys.exit(f"CHECK {what} FAILED: {got!r} vs {want!r} (err {err:.3g})")
    checks += 1
    print(f"CHECK {what} OK (err {err:.2g})")


def same(what, got, want):
    global checks
    if got != want:
        sys.exit(f"CHECK {what} FAILED: {got} vs {want}")
    checks += 1
    print(f"CHECK {what} OK ({got})")


def params(row):
    v = {}
    for part in (row["point"] + ";" + row["fixed"]).split(";"):
        k, x = part.split("=")
        v.setdefault(k, x)  # the point first: it overrides nothing, keys are distinct
    return v


def load(name):
    with open(name, newline="") as f:
        return list(csv.DictReader(f, delimiter="\t", quoting=csv.QUOTE_NONE))


def ceil_noisefree(x, what):
    if abs(x - round(x)) < 1e-6:
        sys.exit(f"{what} = {x!r} is within 1e-6 of a whole number")
    return math.ceil(x)


def prop_power(p1, p2, m1, m2, alpha):
    return power_proportions_2indep(
        diff=p1 - p2, prop2=p2, nobs1=m1, ratio=m2 / m1, alpha=alpha / 2,
        alternative="smaller" if p1 < p2 else "larger", return_results=False)


def prop_rows(name):
    for row in load(name):
        v = params(row)
        tag = f"{row['grid']}[{row['index']}]"
        p2 = float(v["control_risk"])
        p1 = float(v["risk_ratio"]) * p2
        alpha, pw = float(v["alpha"]), float(v["power"])
        r = float(v.get("ratio", "1"))
        de = Fraction(v.get("design_effect", "1"))
        att = Fraction(v.get("attrition", "0"))
        if p1 >= 1:
            same(f"{tag} infeasible (p1 = {p1} >= 1)", row["n1"], "NA")
            continue
        nstar = samplesize_proportions_2indep_onetail(
            diff=p1 - p2, prop2=p2, power=pw, ratio=r, alpha=alpha,
            alternative="two-sided")
        check(f"{tag} n* samplesize_proportions_2indep_onetail(diff={p1 - p2!r}, prop2={p2}, "
              f"power={pw}, ratio={r:g}, alpha={alpha})", nstar, float(row["n_star"]), 1e-9)
        a1 = ceil_noisefree(nstar * float(de), f"{tag} n* x de")
        a2 = ceil_noisefree(r * nstar * float(de), f"{tag} r n* x de")
        same(f"{tag} n1", str(a1), row["n1"])
        same(f"{tag} n2", str(a2), row["n2"])
        # enrolment: exact rational ceiling of a / (1 - attrition)
        e1 = math.ceil(Fraction(a1) / (1 - att))
        e2 = math.ceil(Fraction(a2) / (1 - att))
        same(f"{tag} enrol1", str(e1), row["enrol1"])
        same(f"{tag} enrol2", str(e2), row["enrol2"])
        m1, m2 = a1 / float(de), a2 / float(de)
        got = prop_power(p1, p2, m1, m2, alpha)
        check(f"{tag} power power_proportions_2indep(diff={p1 - p2!r}, prop2={p2}, nobs1={m1:.15g}, "
              f"ratio={m2 / m1:.15g}, alpha={alpha / 2}, alternative={'smaller' if p1 < p2 else 'larger'})",
              got, float(row["power"]), 1e-12, rel=False)


def means_rows(name):
    tt = TTestIndPower()
    for row in load(name):
        v = params(row)
        tag = f"{row['grid']}[{row['index']}]"
        delta, sd, alpha = float(v["mean_difference"]), float(v["sd"]), float(v["alpha"])
        es = delta / sd

        def power(n):
            return tt.power(effect_size=es, nobs1=n, alpha=alpha, ratio=1, alternative="two-sided")

        if row["n_star"] != "NA":
            pw = float(v["power"])
            nstar = brentq(lambda n: power(n) - pw, 2.5, 1e5, xtol=1e-12)
            check(f"{tag} n* brentq on TTestIndPower().power(effect_size={delta}/{sd}, alpha={alpha})",
                  nstar, float(row["n_star"]), 1e-8)
            same(f"{tag} n1", str(ceil_noisefree(nstar, tag)), row["n1"])
        n = int(row["n1"])
        check(f"{tag} power TTestIndPower().power(effect_size={delta}/{sd}, nobs1={n}, alpha={alpha}, "
              f"ratio=1, alternative='two-sided')", power(n), float(row["power"]), 1e-9, rel=False)


prop_rows("sweep_prop.tsv")
means_rows("sweep_means.tsv")
prop_rows("sweep_ratio.tsv")
print(f"\n{checks} checks, all OK")
print(f"python {sys.version.split()[0]}, scipy {scipy.__version__}, statsmodels {statsmodels.__version__}")
