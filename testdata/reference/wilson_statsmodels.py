#!/usr/bin/python3
"""wilson_statsmodels.py -- the 95% Wilson (1927) score interval of a
simulated proportion at the extremes a simulation reaches: every replicate
rejecting, none rejecting, and nearly so, at the replicate counts the
program uses (10,000 and 20,000), with a few ordinary rows.

Run from this folder:

    /usr/bin/python3 wilson_statsmodels.py > wilson_statsmodels.out

Writes wilson_statsmodels.tsv with columns  x  n  lo  hi  source, where the
source is the exact statsmodels call. Each interval is cross-checked here
against the closed form written out,
    (p + z^2/2n -/+ z sqrt(p q/n + z^2/4n^2)) / (1 + z^2/n),
with z = scipy.stats.norm.ppf(0.975), and against R's
prop.test(x, n, correct = FALSE)$conf.int for the rows of sim_wilson.tsv.
The script stops if a check fails.
"""
import csv
import math
import sys

from scipy.stats import norm
from statsmodels.stats.proportion import proportion_confint

rows = [(10000, 10000), (0, 10000), (9999, 10000), (1, 10000), (8700, 10000),
        (500, 10000), (20000, 20000), (19980, 20000), (0, 20000), (3, 100),
        (97, 100), (30, 100), (0, 50), (50, 50), (8012, 10000), (1, 1)]
z = norm.ppf(0.975)
checks = 0


def check(what, ok):
    global checks
    if not ok:
        sys.exit("CHECK FAILED: " + what)
    checks += 1
    print("CHECK %s OK" % what)


out = []
for x, n in rows:
    lo, hi = proportion_confint(x, n, alpha=0.05, method="wilson")
    p = x / n
    den = 1 + z * z / n
    c = (p + z * z / (2 * n)) / den
    h = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / den
    check("wilson %d/%d = closed form" % (x, n),
          abs(lo - max(0.0, c - h)) < 1e-12 and abs(hi - min(1.0, c + h)) < 1e-12)
    out.append({"x": x, "n": n, "lo": "%.15g" % max(0.0, lo), "hi": "%.15g" % min(1.0, hi),
                "source": "proportion_confint(%d, %d, alpha=0.05, method='wilson')" % (x, n)})

# The rows R computed (sim_wilson.tsv) agree with statsmodels.
with open("sim_wilson.tsv") as f:
    for r in csv.DictReader(f, delimiter="\t"):
        lo, hi = proportion_confint(int(r["x"]), int(r["n"]), alpha=0.05, method="wilson")
        check("statsmodels = R for %s/%s" % (r["x"], r["n"]),
              abs(max(0.0, lo) - float(r["lo"])) < 1e-12 and abs(min(1.0, hi) - float(r["hi"])) < 1e-12)

with open("wilson_statsmodels.tsv", "w", newline="") as f:
    w = csv.DictWriter(f, fieldnames=["x", "n", "lo", "hi", "source"], delimiter="\t", lineterminator="\n")
    w.writeheader()
    w.writerows(out)
for r in out:
    print("%(x)s\t%(n)s\t%(lo)s\t%(hi)s\t%(source)s" % r)
print("\n%d checks passed" % checks)
