"""Crossing probabilities of group-sequential boundaries under the canonical
joint distribution, for the tests of power/seqsim.go.

Z_1, ..., Z_K are multivariate normal with E Z_k = theta sqrt(t_k) and
Cov(Z_j, Z_k) = sqrt(t_j / t_k) for j <= k (Jennison & Turnbull 2000,
section 3.1). The probability of continuing past looks 1..k is a box
probability of that distribution, computed with scipy.stats.multivariate_normal
(Genz's algorithm, scipy's mvnun), and the probability of a first crossing at
look k is the difference of two such boxes. Each value is cross-checked by a
second, independent computation: the recursive numerical integration of
Armitage, McPherson & Rowe (1969) on a fine grid (composite Simpson rule).

Run: /usr/bin/python3 seqsim_canonical.py > seqsim_canonical.out
It writes seqsim_canonical.tsv and stops if a cross-check fails.
"""

import sys

import numpy as np
import scipy
from scipy.optimize import brentq
from scipy.stats import multivariate_normal, norm

EPS = 1e-10  # abseps and releps asked of mvnun
MAXPTS = 20_000_000


def cov_of(times):
    t = np.asarray(times, float)
    return np.sqrt(np.minimum.outer(t, t) / np.maximum.outer(t, t))


def box(times, lo, hi, theta):
    """P(lo_k < Z_k < hi_k for every k) by scipy's multivariate normal cdf."""
    k = len(times)
    mean = theta * np.sqrt(np.asarray(times, float))
    if k == 1:
        return norm.cdf(hi[0] - mean[0]) - norm.cdf(lo[0] - mean[0])
    return float(multivariate_normal.cdf(np.asarray(hi, float), mean=mean, cov=cov_of(times),
                                         maxpts=MAXPTS, abseps=EPS, releps=EPS, lower_limit=np.asarray(lo, float)))


def limits(crit, sides, direction):
    """The continuation region of each look: |Z| < c two-sided, Dir Z < c one-sided."""
    lo, hi = [], []
    for c in crit:
        if sides == 2:
            lo.append(-c)
            hi.append(c)
        elif direction > 0:
            lo.append(-np.inf)
            hi.append(c)
        else:
            lo.append(-c)
            hi.append(np.inf)
    return lo, hi


def first_crossing(times, crit, sides, direction, theta):
    """P(first crossing at look k), k = 1..K, by scipy's mvn boxes."""
    lo, hi = limits(crit, sides, direction)
    cont = [1.0]
    for k in range(1, len(times) + 1):
        cont.append(box(times[:k], lo[:k], hi[:k], theta))
    return [cont[k - 1] - cont[k] for k in range(1, len(times) + 1)]


def first_crossing_grid(times, crit, sides, direction, theta, m=2000, width=12.0):
    """The same by recursive numerical integration (Armitage, McPherson &
    Rowe 1969): the sub-density g_k of Z_k over the paths that have not
    crossed before look k is carried from look to look by the normal
    transition of the Brownian motion,

        g_k(z) = int_{C_{k-1}} g_{k-1}(u) sqrt(t_k/d) phi((z sqrt(t_k) - u sqrt(t_{k-1}) - theta d)/sqrt(d)) du,

    d = t_k - t_{k-1}, and integrated over each continuation region C_k by
    the composite Simpson rule on 2m + 1 points (an infinite end is cut at
    12 beyond the mean). P(first crossing at k) = P(C_1..C_{k-1}) - P(C_1..C_k)."""
    out = []
    prev_u = prev_g = None
    prev_t, prev_cont = 0.0, 1.0
    for t, c in zip(times, crit):
        mu = theta * np.sqrt(t)
        if sides == 2:
            a, b = -c, c
        elif direction > 0:
            a, b = min(mu, c) - width, c
        else:
            a, b = -c, max(mu, -c) + width
        z = np.linspace(a, b, 2 * m + 1)
        if prev_u is None:
            g = norm.pdf(z - mu)
        else:
            d = t - prev_t
            arg = (z[:, None] * np.sqrt(t) - prev_u[None, :] * np.sqrt(prev_t) - theta * d) / np.sqrt(d)
            g = (norm.pdf(arg) * np.sqrt(t / d)) @ (simpson_weights(prev_u) * prev_g)
        cont = float(np.sum(simpson_weights(z) * g))
        out.append(prev_cont - cont)
        prev_u, prev_g, prev_t, prev_cont = z, g, t, cont
    return out


def simpson_weights(x):
    n = len(x)
    h = (x[-1] - x[0]) / (n - 1)
    w = np.ones(n)
    w[1:-1:2] = 4
    w[2:-1:2] = 2
    return w * h / 3


def solve_constant(times, shape, sides, alpha):
    """The C with P(some crossing) = alpha at theta = 0 for crit_k = C shape_k."""
    f = lambda C: sum(first_crossing(times, [C * s for s in shape], sides, 1, 0.0)) - alpha
    return brentq(f, 1.5, 4.0, xtol=1e-12, rtol=1e-14)


rows = []
failures = 0


def check(label, ok):
    global failures
    print(("CHECK %s OK" if ok else "CHECK %s FAILED") % label)
    if not ok:
        failures += 1


def scenario(rid, times, crit, sides, direction, theta, note):
    p = first_crossing(times, crit, sides, direction, theta)
    g = first_crossing_grid(times, crit, sides, direction, theta)
    diff = max(abs(x - y) for x, y in zip(p, g))
    check("%s: mvn and recursive integration agree within 5e-7 (max diff %.2g)" % (rid, diff), diff < 5e-7)
    nominal = [(2 if sides == 2 else 1) * norm.sf(c) for c in crit]
    print("%s: times %s crit %s nominal %s theta %g" % (rid, times, ["%.10f" % c for c in crit], ["%.6g" % a for a in nominal], theta))
    print("   first crossing %s total %.10f" % (["%.10f" % x for x in p], sum(p)))
    rows.append({
        "id": rid, "sides": sides, "dir": direction,
        "times": ",".join(repr(float(t)) for t in times),
        "crit": ",".join(repr(float(c)) for c in crit),
        "nominal": ",".join(repr(float(a)) for a in nominal),
        "drift": repr(float(theta)),
        "cross": ",".join(repr(float(x)) for x in p),
        "total": repr(float(sum(p))),
        "griddiff": "%.3g" % diff,
        "source": note,
    })
    return p


print("scipy", scipy.__version__, "numpy", np.__version__, "python", sys.version.split()[0])

# Pocock, K = 5, two-sided alpha = 0.05, equal information.
t5 = [k / 5 for k in range(1, 6)]
c5 = solve_constant(t5, [1] * 5, 2, 0.05)
print("Pocock K=5 two-sided 0.05: C = %.10f (Pocock 1977 Table 1 / Jennison & Turnbull 2000 Table 2.1, from memory: 2.413)" % c5)
check("Pocock K=5 constant rounds to 2.413", round(c5, 3) == 2.413)
src = "scipy %s multivariate_normal(mean=theta*sqrt(t), cov=sqrt(t_j/t_k)).cdf boxes (abseps=releps=1e-10), Pocock constant by brentq; script seqsim_canonical.py" % scipy.__version__
scenario("pocock5_null", t5, [c5] * 5, 2, 1, 0.0, src)
scenario("pocock5_drift", t5, [c5] * 5, 2, 1, 3.1, src)

# O'Brien-Fleming shape, one-sided alpha = 0.025, unequal information.
t4 = [0.3, 0.55, 0.8, 1.0]
shape = [1 / np.sqrt(t) for t in t4]
cb = solve_constant(t4, shape, 1, 0.025)
print("O'Brien-Fleming shape, t = %s, one-sided 0.025: C = %.10f" % (t4, cb))
scenario("obf4_null", t4, [cb * s for s in shape], 1, 1, 0.0, src)
scenario("obf4_drift", t4, [cb * s for s in shape], 1, 1, 3.0, src)

# Pocock, K = 3, two-sided 0.05 and one-sided 0.025, equal information:
# the nominal levels of the 3-look tests of the finite-sample models.
t3 = [1 / 3, 2 / 3, 1.0]
c3 = solve_constant(t3, [1] * 3, 2, 0.05)
print("Pocock K=3 two-sided 0.05: C = %.10f (Jennison & Turnbull 2000 Table 2.1, from memory: 2.289)" % c3)
check("Pocock K=3 constant rounds to 2.289", round(c3, 3) == 2.289)
scenario("pocock3_null", t3, [c3] * 3, 2, 1, 0.0, src)
c3one = solve_constant(t3, [1] * 3, 1, 0.025)
print("Pocock K=3 one-sided 0.025: C = %.10f" % c3one)
scenario("pocock3_one_null", t3, [c3one] * 3, 1, 1, 0.0, src)

cols = ["id", "sides", "dir", "times", "crit", "nominal", "drift", "cross", "total", "griddiff", "source"]
with open("seqsim_canonical.tsv", "w") as f:
    f.write("\t".join(cols) + "\n")
    for r in rows:
        f.write("\t".join(str(r[c]) for c in cols) + "\n")
print("wrote seqsim_canonical.tsv, %d rows" % len(rows))
if failures:
    sys.exit("%d checks failed" % failures)
