#!/usr/bin/python3
"""make_statsmodels.py -- uncorrected unequal-allocation reference values
from statsmodels.stats.proportion (second, independent library).

Run from this folder (after make_binary.R, whose TSVs are used for the
cross-check only):

    /usr/bin/python3 make_statsmodels.py > statsmodels.out

Writes statsmodels_binary.tsv with columns
    id  p1  p2  ratio  alpha  power  n_star  source

Conventions (read these before using the file):
  * ratio = nobs2/nobs1, the same as r = n2/n1 in the project; nobs1 is the
    group with proportion p1 = p2 + diff.
  * Every call is ONE-SIDED ('larger' when p1 > p2, 'smaller' when p1 < p2),
    and the `alpha` column is the one-tail level actually passed.  Compare with
    the project's method `fleiss` at sides = 1 and that alpha (identically:
    sides = 2 at 2*alpha).  Rows whose id ends in `_2s` are the two-sided
    convention (alpha column = nominal two-sided alpha / 2).
  * Rows `sm_n_*`: power is the target, n_star is the returned (unrounded)
    nobs1 from samplesize_proportions_2indep_onetail.
  * Rows `sm_pow_*`: n_star is the GIVEN nobs1 (nobs2 = ratio*nobs1), power is
    the returned value of power_proportions_2indep(...).power.
  * statsmodels' alternative='two-sided' power adds BOTH tails; that is not the
    one-direction power, so it is shown in statsmodels.out but not tabulated.
"""
import csv
import math
import sys

import numpy as np
import scipy
import statsmodels
from scipy import stats
from statsmodels.stats.proportion import (power_proportions_2indep,
                                          samplesize_proportions_2indep_onetail)


def g(x):
    return "%.15g" % x


def fleiss_n(p1, p2, r, a1, power):
    """Own one-line Fleiss (no cc) for the cross-check, a1 = one-tail alpha."""
    D = abs(p1 - p2)
    pb = (p1 + r * p2) / (1 + r)
    za, zb = stats.norm.isf(a1), stats.norm.ppf(power)
    return (za * math.sqrt((r + 1) * pb * (1 - pb))
            + zb * math.sqrt(r * p1 * (1 - p1) + p2 * (1 - p2))) ** 2 / (r * D * D)


def fleiss_pow(p1, p2, n1, r, a1):
    D = abs(p1 - p2)
    pb = (p1 + r * p2) / (1 + r)
    za = stats.norm.isf(a1)
    return stats.norm.cdf((math.sqrt(n1 * r * D * D) - za * math.sqrt((r + 1) * pb * (1 - pb)))
                          / math.sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))


def load(path):
    with open(path) as f:
        return list(csv.DictReader(f, delimiter="\t"))


def close(a, b, rel=1e-6):
    return abs(a - b) <= rel * abs(b)


print("python", sys.version.split()[0], "numpy", np.__version__,
      "scipy", scipy.__version__, "statsmodels", statsmodels.__version__)
print()

# Reference rows from make_binary.R for the cross-check: (p1,p2,r,alpha,sides,power) -> n
bn = {}
for row in load("binary_n.tsv"):
    if row["method"] == "fleiss":
        key = (float(row["p1"]), float(row["p2"]), float(row["ratio"]),
               float(row["alpha"]) / float(row["sides"]), float(row["power"]))
        bn.setdefault(key, float(row["n_star"]))
bp = {}
for row in load("binary_power.tsv"):
    if row["method"] == "fleiss":
        n1, n2 = float(row["n1"]), float(row["n2"])
        key = (float(row["p1"]), float(row["p2"]), n1, n2 / n1,
               float(row["alpha"]) / float(row["sides"]))
        bp.setdefault(key, float(row["power"]))

out = []
fails = 0

# ------------------------------------------------------------ sample sizes
# (p1, p2, ratio, nominal alpha, sides, power)
ncases = [
    (0.20, 0.30, 1.0, 0.05, 2, 0.8),
    (0.20, 0.30, 2.0, 0.05, 2, 0.8),
    (0.20, 0.30, 0.5, 0.05, 2, 0.8),
    (0.10, 0.05, 3.0, 0.01, 2, 0.8),
    (0.30, 0.225, 0.5, 0.01, 1, 0.9),
    (0.45, 0.60, 2.0, 0.01, 2, 0.9),
    (0.02, 0.04, 0.5, 0.05, 1, 0.9),
    (0.70, 0.50, 3.0, 0.05, 2, 0.9),
    (0.15, 0.10, 2.0, 0.05, 1, 0.8),
    (0.10, 0.05, 1.0, 0.05, 2, 0.9),
    (0.30, 0.225, 1.0, 0.05, 1, 0.8),
    (0.02, 0.04, 3.0, 0.05, 2, 0.8),
]
print("==== samplesize_proportions_2indep_onetail (one-sided calls) ====")
for i, (p1, p2, r, alpha, sides, power) in enumerate(ncases, 1):
    a1 = alpha / sides
    diff = p1 - p2
    alt = "larger" if diff > 0 else "smaller"
    call = ("statsmodels.stats.proportion.samplesize_proportions_2indep_onetail("
            "diff=%s, prop2=%s, power=%s, ratio=%s, alpha=%s, alternative='%s')"
            % (g(diff), g(p2), g(power), g(r), g(a1), alt))
    n = float(samplesize_proportions_2indep_onetail(diff=diff, prop2=p2, power=power,
                                                    ratio=r, alpha=a1, alternative=alt))
    # same thing through the two-sided convention (halves alpha internally)
    n2s = None
    if sides == 2:
        n2s = float(samplesize_proportions_2indep_onetail(diff=diff, prop2=p2, power=power,
                                                          ratio=r, alpha=alpha,
                                                          alternative="two-sided"))
    mine = fleiss_n(p1, p2, r, a1, power)
    ref = bn.get((p1, p2, r, a1, power))
    ok = close(n, mine) and (ref is None or close(n, ref)) and (n2s is None or close(n, n2s, 1e-14))
    fails += not ok
    print(call)
    print("   -> nobs1 = %.15g   (nobs2 = %.15g)" % (n, r * n))
    print("   own fleiss formula = %.15g  relerr %.2e" % (mine, abs(n - mine) / mine))
    if ref is not None:
        print("   make_binary.R binary_n.tsv fleiss = %.15g  relerr %.2e" % (ref, abs(n - ref) / ref))
    if n2s is not None:
        print("   same with alpha=%s, alternative='two-sided' = %.15g" % (g(alpha), n2s))
    print("   %s" % ("OK" if ok else "FAIL"))
    sid = "sm_n_%02d%s" % (i, "_2s" if sides == 2 else "")
    out.append((sid, p1, p2, r, a1, power, n, call + " [returns nobs1]"))

# ------------------------------------------------------------ power
# (p1, p2, n1, n2, nominal alpha, sides)
pcases = [
    (0.20, 0.30, 300, 300, 0.05, 2),
    (0.20, 0.30, 200, 400, 0.05, 2),
    (0.20, 0.30, 400, 200, 0.05, 2),
    (0.10, 0.05, 400, 1200, 0.01, 2),
    (0.30, 0.225, 500, 500, 0.05, 1),
    (0.45, 0.60, 150, 75, 0.01, 2),
    (0.02, 0.04, 1000, 1000, 0.05, 2),
    (0.70, 0.50, 60, 180, 0.05, 2),
    (0.15, 0.10, 700, 350, 0.05, 1),
]
print()
print("==== power_proportions_2indep (one-sided calls) ====")
for i, (p1, p2, n1, n2, alpha, sides) in enumerate(pcases, 1):
    a1 = alpha / sides
    r = n2 / n1
    diff = p1 - p2
    alt = "larger" if diff > 0 else "smaller"
    call = ("statsmodels.stats.proportion.power_proportions_2indep("
            "diff=%s, prop2=%s, nobs1=%s, ratio=%s, alpha=%s, alternative='%s').power"
            % (g(diff), g(p2), g(n1), g(r), g(a1), alt))
    pw = float(power_proportions_2indep(diff=diff, prop2=p2, nobs1=n1, ratio=r, alpha=a1,
                                        alternative=alt).power)
    both = float(power_proportions_2indep(diff=diff, prop2=p2, nobs1=n1, ratio=r, alpha=2 * a1,
                                          alternative="two-sided").power)
    mine = fleiss_pow(p1, p2, n1, r, a1)
    ref = bp.get((p1, p2, float(n1), r, a1))
    ok = close(pw, mine) and (ref is None or close(pw, ref))
    fails += not ok
    print(call)
    print("   -> power = %.15g" % pw)
    print("   own fleiss formula = %.15g  relerr %.2e" % (mine, abs(pw - mine) / mine))
    if ref is not None:
        print("   make_binary.R binary_power.tsv fleiss = %.15g  relerr %.2e" % (ref, abs(pw - ref) / ref))
    print("   alternative='two-sided', alpha=%s (both tails) = %.15g  (far tail adds %.3g)"
          % (g(2 * a1), both, both - pw))
    print("   %s" % ("OK" if ok else "FAIL"))
    sid = "sm_pow_%02d%s" % (i, "_2s" if sides == 2 else "")
    out.append((sid, p1, p2, r, a1, pw, float(n1),
                call + " [n_star = given nobs1; power = returned]"))

# ------------------------------------------------------------ two-sided note
print()
print("==== what alternative='two-sided' counts ====")
print("power_proportions_2indep(alternative='two-sided') = P(Z > crit) + P(Z < -crit):")
print("both rejection tails.  The project's / power.prop.test(strict=FALSE) power counts")
print("only the tail in the direction of the true effect.  Where the far tail matters:")
for (p1, p2, n1, r) in [(0.20, 0.30, 20, 1.0), (0.20, 0.30, 6, 1.0), (0.45, 0.60, 30, 0.5)]:
    diff = p1 - p2
    alt = "larger" if diff > 0 else "smaller"
    one = float(power_proportions_2indep(diff, p2, n1, ratio=r, alpha=0.025, alternative=alt).power)
    two = float(power_proportions_2indep(diff, p2, n1, ratio=r, alpha=0.05, alternative="two-sided").power)
    print("  p1=%s p2=%s nobs1=%s ratio=%s: one tail (alpha=0.025, '%s') = %.15g; "
          "'two-sided' alpha=0.05 = %.15g; difference = %.3g" % (g(p1), g(p2), g(n1), g(r), alt, one, two, two - one))
print("samplesize_proportions_2indep_onetail ignores the far tail by design (its")
print("'two-sided' simply halves alpha), so it equals the one-direction formula.")

with open("statsmodels_binary.tsv", "w") as f:
    f.write("id\tp1\tp2\tratio\talpha\tpower\tn_star\tsource\n")
    for sid, p1, p2, r, a1, power, n, src in out:
        f.write("\t".join([sid, g(p1), g(p2), g(r), g(a1), g(power), g(n), src]) + "\n")
print()
print("wrote statsmodels_binary.tsv (%d rows)" % len(out))
if fails:
    print("FAILED cross-checks: %d" % fails)
    sys.exit(1)
print("All cross-checks passed (relative 1e-6).")
