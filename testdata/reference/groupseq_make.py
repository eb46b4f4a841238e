"""groupseq_make.py -- outside reference values for group-sequential designs.

Run from this folder:

    /usr/bin/python3 groupseq_make.py > groupseq_make.out

Writes groupseq_constants.tsv, groupseq_inflation.tsv, groupseq_spending.tsv,
groupseq_power.tsv and groupseq_power_at.tsv. Uses numpy and scipy only
(no sample-size or group-sequential program or package). Exits non-zero if any
self-check fails. See groupseq_README.md.

The law: under drift theta, (Z_1..Z_K) is multivariate normal with
E[Z_k] = theta sqrt(t_k), Cov(Z_j, Z_k) = sqrt(t_j / t_k), j <= k.  Equivalently
S_k = Z_k sqrt(t_k) is a Brownian motion with drift theta observed at t_k, with
independent increments S_k - S_{k-1} ~ N(theta (t_k - t_{k-1}), t_k - t_{k-1}).

Main engine ("quad"): every crossing probability is a rectangle probability of
that multivariate normal, P(l_j < Z_j < u_j, j < k; Z_k >= u_k), evaluated by
integrating out one look at a time (the Markov property of the increments)
with Gauss-Legendre quadrature on each continuation interval.  scipy's
multivariate normal CDF (Genz) is used on the same rectangles as an
independent check: exactly (bivariate) for K = 2, by conditioning on Z_1 plus
the bivariate CDF for K = 3, and with its quasi-Monte-Carlo error estimate for
K >= 4 (it cannot reach 1e-9 there: see the README).
"""

import math
import os
import sys
import time

os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")  # small matrices: threads only add overhead
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np
import scipy
from numpy.polynomial.legendre import leggauss
from scipy import integrate, optimize, special
from scipy.stats import multivariate_normal, norm
from scipy.stats import _mvn  # the Fortran Genz routine behind multivariate_normal.cdf; gives an error estimate

T0 = time.time()
NQ = 200          # Gauss-Legendre nodes per look (main run)
NQ_CHECK = 400    # nodes for the convergence re-run
TRUNC = 12.0      # continuation intervals clipped to theta t +- TRUNC sqrt(t) (S scale)
XTOL = 1e-13

FAILS = []
INFO = []         # (|theta_s - theta_s_upper_only|, where): reported, not a check
CHECKS = {}       # name -> [count, worst discrepancy, tolerance]


def check(name, discrepancy, tol, what=""):
    d = abs(discrepancy)
    c = CHECKS.setdefault(name, [0, 0.0, tol, ""])
    c[0] += 1
    if d > c[1] or (d != d):
        c[1] = d
        c[3] = what
    if not (d <= tol):
        FAILS.append("%s: %s discrepancy %.3g > tol %.3g" % (name, what, d, tol))


def fmt(x):
    if isinstance(x, str):
        return x
    if x is None or (isinstance(x, float) and math.isnan(x)):
        return "NA"
    if isinstance(x, (int, np.integer)):
        return str(int(x))
    return "%.12g" % x


def flist(xs):
    return ",".join(fmt(float(x)) for x in xs)


# ---------------------------------------------------------------- quadrature

_GL = {}


def gl(n):
    if n not in _GL:
        _GL[n] = leggauss(n)
    return _GL[n]


def _nodes(a, b, n):
    x, w = gl(n)
    return 0.5 * (b - a) * x + 0.5 * (b + a), 0.5 * (b - a) * w


def _interval(t, lo_z, up_z, theta):
    st = math.sqrt(t)
    a = max(lo_z * st, theta * t - TRUNC * st)
    b = min(up_z * st, theta * t + TRUNC * st)
    return a, b


_R2PI = 1.0 / math.sqrt(2.0 * math.pi)


def _pdf(x):
    return _R2PI * np.exp(-0.5 * x * x)


def _sf(x):
    return special.ndtr(-x)


def exits(t, up, lo, theta, n=NQ):
    """First-exit probabilities of the continuation region lo_k < Z_k < up_k.

    t, up, lo: sequences of the same length K (lo may hold -inf).
    Returns (pu, pl, pcont): pu[k] = P(first exit at look k through the upper
    boundary), pl[k] likewise through the lower one, pcont = P(continue at
    every look), computed by direct integration of the last sub-density.
    """
    K = len(t)
    pu = np.zeros(K)
    pl = np.zeros(K)
    m1 = theta * math.sqrt(t[0])
    pu[0] = norm.sf(up[0] - m1)
    pl[0] = norm.cdf(lo[0] - m1) if np.isfinite(lo[0]) else 0.0
    a, b = _interval(t[0], lo[0], up[0], theta)
    if b <= a:
        return pu, pl, 0.0
    x, w = _nodes(a, b, n)
    g = _pdf((x - theta * t[0]) / math.sqrt(t[0])) / math.sqrt(t[0])
    for k in range(1, K):
        d = t[k] - t[k - 1]
        sd = math.sqrt(d)
        m = theta * d
        su = up[k] * math.sqrt(t[k])
        pu[k] = np.sum(w * g * _sf((su - x - m) / sd))
        if np.isfinite(lo[k]):
            sl = lo[k] * math.sqrt(t[k])
            pl[k] = np.sum(w * g * special.ndtr((sl - x - m) / sd))
        a, b = _interval(t[k], lo[k], up[k], theta)
        if b <= a:
            return pu, pl, 0.0
        y, wy = _nodes(a, b, n)
        kern = _pdf((y[:, None] - x[None, :] - m) / sd) / sd
        g = kern @ (w * g)
        x, w = y, wy
    return pu, pl, float(np.sum(w * g))


def lower_of(up, sides):
    up = np.asarray(up, float)
    return -up if sides == 2 else np.full(len(up), -np.inf)


def total_alpha(t, up, sides, n=NQ):
    pu, pl, _ = exits(t, up, lower_of(up, sides), 0.0, n)
    return float(pu.sum() + pl.sum())


# ---------------------------------------------------------------- designs

def equal_t(K):
    return np.arange(1, K + 1) / K


def classic_bounds(family, C, K):
    k = np.arange(1, K + 1)
    if family == "pocock":
        return np.full(K, C)
    if family == "obf":
        return C * np.sqrt(K / k)
    raise ValueError(family)


def solve_classic(family, K, alpha, sides, n=NQ):
    t = equal_t(K)
    f = lambda C: total_alpha(t, classic_bounds(family, C, K), sides, n) - alpha
    C = optimize.brentq(f, 0.5, 8.0, xtol=XTOL, rtol=4 * np.finfo(float).eps, maxiter=200)
    return C


def spend(family, alpha, t, rho=None):
    t = np.asarray(t, float)
    if family == "sf_obf":       # form (a): equals alpha at t = 1, both for sides 2 and 1
        return 2.0 * norm.sf(norm.isf(alpha / 2.0) / np.sqrt(t))
    if family == "sf_obf_alt_b":  # remark only: literal z_{1-alpha}, equals 2 alpha at t = 1
        return 2.0 * norm.sf(norm.isf(alpha) / np.sqrt(t))
    if family == "sf_obf_alt_c":  # remark only: z_{1-alpha} on one side, equals alpha at t = 1
        return norm.sf(norm.isf(alpha) / np.sqrt(t))
    if family == "sf_obf_alt_d":  # remark only, two-sided: each side spends form (a) at alpha/2
        return 2.0 * (2.0 * norm.sf(norm.isf(alpha / 4.0) / np.sqrt(t)))
    if family == "sf_pocock":
        return alpha * np.log(1.0 + (math.e - 1.0) * t)
    if family == "sf_power":
        return alpha * t ** rho
    raise ValueError(family)


def bounds_from_cum(t, cum, sides, n=NQ):
    """Boundaries c_k with P(first crossing at k | theta = 0) = cum_k - cum_{k-1}."""
    t = np.asarray(t, float)
    K = len(t)
    c = np.zeros(K)
    inc = np.diff(np.concatenate([[0.0], cum]))
    c[0] = norm.isf(inc[0] / 2.0) if sides == 2 else norm.isf(inc[0])
    for k in range(1, K):
        def f(ck):
            up = np.concatenate([c[:k], [ck]])
            pu, pl, _ = exits(t[:k + 1], up, lower_of(up, sides), 0.0, n)
            return (pu[k] + pl[k]) - inc[k]
        c[k] = optimize.brentq(f, 0.0, 40.0, xtol=XTOL, rtol=4 * np.finfo(float).eps, maxiter=300)
    return c


def power_upper(t, up, sides, theta, n=NQ):
    pu, pl, _ = exits(t, up, lower_of(up, sides), theta, n)
    return float(pu.sum())


def solve_theta(t, up, sides, power, n=NQ, upper_only=False):
    s = 1 if upper_only else sides
    f = lambda th: power_upper(t, up, s, th, n) - power
    return optimize.brentq(f, 0.0, 12.0, xtol=XTOL, rtol=4 * np.finfo(float).eps, maxiter=200)


def theta_fixed(alpha, sides, power):
    za = norm.isf(alpha / 2.0) if sides == 2 else norm.isf(alpha)
    return za + norm.isf(1.0 - power)


def operating(t, up, sides, theta, n=NQ):
    """Per-look first-crossing probabilities and E[N]/N_max (stop at any crossing)."""
    t = np.asarray(t, float)
    pu, pl, pc = exits(t, up, lower_of(up, sides), theta, n)
    stop = pu + pl
    en = float(np.sum(t[:-1] * stop[:-1]) + (1.0 - np.sum(stop[:-1])))
    return dict(pu=pu, pl=pl, pcont=pc, power_upper=float(pu.sum()),
                power_either=float(stop.sum()), en=en,
                power_upper_only=power_upper(t, up, 1, theta, n))


# ---------------------------------------------------------------- scipy MVN checks

def _corr(t):
    t = np.asarray(t, float)
    return np.sqrt(np.minimum.outer(t, t) / np.maximum.outer(t, t))


def rect_mvndst(t, lo, up, theta, maxpts):
    """P(lo_k < Z_k < up_k for all k) by scipy's Genz routine; returns (value, error)."""
    t = np.asarray(t, float)
    mu = theta * np.sqrt(t)
    K = len(t)
    if K == 1:
        return float(norm.cdf(up[0] - mu[0]) - norm.cdf(lo[0] - mu[0])), 0.0
    lo = np.asarray(lo, float) - mu
    up = np.asarray(up, float) - mu
    infin = np.where(np.isfinite(lo) & np.isfinite(up), 2,
                     np.where(np.isfinite(lo), 1, np.where(np.isfinite(up), 0, -1))).astype(np.int32)
    lo2 = np.where(np.isfinite(lo), lo, 0.0)
    up2 = np.where(np.isfinite(up), up, 0.0)
    corr = _corr(t)[np.tril_indices(K, -1)]
    err, val, inform = _mvn.mvndst(lo2, up2, infin, corr, maxpts, 1e-10, 1e-10)
    return val, err


def rect_cdf(t, lo, up, theta):
    """The public API: multivariate_normal.cdf with lower_limit (used for K = 2, where it is exact)."""
    t = np.asarray(t, float)
    mu = theta * np.sqrt(t)
    return multivariate_normal.cdf(np.asarray(up, float), mean=mu, cov=_corr(t),
                                   lower_limit=np.asarray(lo, float),
                                   maxpts=10 ** 6, abseps=1e-12, releps=1e-12)


def mvn_exits(t, up, sides, theta, rect):
    """Inclusion-exclusion over rectangles: P(first exit at k, upper / lower) and P(continue)."""
    up = np.asarray(up, float)
    lo = lower_of(up, sides)
    K = len(t)
    pu = np.zeros(K)
    pl = np.zeros(K)
    eu = np.zeros(K)
    el = np.zeros(K)
    for k in range(K):
        L = np.concatenate([lo[:k], [up[k]]])
        U = np.concatenate([up[:k], [np.inf]])
        pu[k], eu[k] = rect(t[:k + 1], L, U, theta)
        if sides == 2:
            L = np.concatenate([lo[:k], [-np.inf]])
            U = np.concatenate([up[:k], [lo[k]]])
            pl[k], el[k] = rect(t[:k + 1], L, U, theta)
    pc, ec = rect(t, lo, up, theta)
    return pu, pl, pc, eu, el, ec


def rect_k2_public(t, lo, up, theta):
    # bivariate: infinite limits are fine for the public API
    v = rect_cdf(t, lo, up, theta)
    return float(v), 0.0


def rect_k3_condition(t, lo, up, theta):
    """K = 3 rectangle: integrate over Z_1 the exact bivariate CDF of (Z_2, Z_3) given Z_1."""
    t = np.asarray(t, float)
    lo = np.asarray(lo, float)
    up = np.asarray(up, float)
    if len(t) == 1:
        m = theta * math.sqrt(t[0])
        return float(norm.cdf(up[0] - m) - norm.cdf(lo[0] - m)), 0.0
    if len(t) == 2:
        return rect_k2_public(t, lo, up, theta)
    s = np.sqrt(t)
    # S_k = Z_k sqrt(t_k); given S_1 = x: S_2 - x, S_3 - x have mean theta (t_k - t_1), cov min(t_j,t_k) - t_1
    d2, d3 = t[1] - t[0], t[2] - t[0]
    cov = np.array([[d2, d2], [d2, d3]])

    def inner(z1):
        x = z1 * s[0]
        mu = np.array([x + theta * d2, x + theta * d3])
        L = np.array([lo[1] * s[1], lo[2] * s[2]])
        U = np.array([up[1] * s[1], up[2] * s[2]])
        # standardize so the public API (unit variances) gets an exact bivariate call
        sd = np.sqrt(np.diag(cov))
        R = cov / np.outer(sd, sd)
        Ls = np.where(np.isfinite(L), (L - mu) / sd, -np.inf)
        Us = np.where(np.isfinite(U), (U - mu) / sd, np.inf)
        # replace infinities by a large finite value (the Genz bivariate code needs finite limits via this API)
        Ls = np.maximum(Ls, -40.0)
        Us = np.minimum(Us, 40.0)
        if np.any(Us <= Ls):
            return 0.0
        return multivariate_normal.cdf(Us, mean=np.zeros(2), cov=R, lower_limit=Ls,
                                       abseps=1e-13, releps=1e-13) * norm.pdf(z1 - theta * s[0])

    a = max(lo[0], theta * s[0] - 14.0)
    b = min(up[0], theta * s[0] + 14.0)
    if b <= a:
        return 0.0, 0.0
    v, e = integrate.quad(inner, a, b, epsabs=1e-13, epsrel=1e-12, limit=200)
    return v, e


# ---------------------------------------------------------------- Monte Carlo

def mc_exits(t, up, sides, theta, reps, rng, chunk=250000):
    t = np.asarray(t, float)
    up = np.asarray(up, float)
    lo = lower_of(up, sides)
    K = len(t)
    d = np.diff(np.concatenate([[0.0], t]))
    cu = np.zeros(K)
    cl = np.zeros(K)
    done = 0
    while done < reps:
        m = min(chunk, reps - done)
        inc = rng.standard_normal((m, K)) * np.sqrt(d) + theta * d
        z = np.cumsum(inc, axis=1) / np.sqrt(t)
        hit_u = z >= up
        hit_l = z <= lo
        hit = hit_u | hit_l
        any_hit = hit.any(axis=1)
        first = np.argmax(hit, axis=1)
        rows = np.nonzero(any_hit)[0]
        fk = first[rows]
        upper = hit_u[rows, fk]
        cu += np.bincount(fk[upper], minlength=K)
        cl += np.bincount(fk[~upper], minlength=K)
        done += m
    return cu / reps, cl / reps


# ================================================================ main

def main():
    print("groupseq_make.py: python %s, numpy %s, scipy %s" %
          (sys.version.split()[0], np.__version__, scipy.__version__))
    print("quadrature: Gauss-Legendre, %d nodes per look (check re-run: %d), truncation %g sd" %
          (NQ, NQ_CHECK, TRUNC))

    # ---------------------------------------------------------- (a) constants
    MEM_SRC = "from memory: Jennison & Turnbull (2000) Table %s"
    # (family, sides, alpha) -> {K: value}; recalled, not looked up
    memory = {
        ("pocock", 2, 0.05): ({2: 2.178, 3: 2.289, 4: 2.361, 5: 2.413, 6: 2.453, 7: 2.485,
                               8: 2.512, 9: 2.535, 10: 2.555}, "2.1"),
        ("pocock", 2, 0.01): ({2: 2.772, 3: 2.873, 4: 2.939, 5: 2.986}, "2.1"),
        ("obf", 2, 0.05): ({2: 1.977, 3: 2.004, 4: 2.024, 5: 2.040, 6: 2.053, 7: 2.063,
                            8: 2.072, 9: 2.080, 10: 2.087}, "2.3"),
        ("obf", 2, 0.01): ({2: 2.580, 3: 2.595, 4: 2.609, 5: 2.621}, "2.3"),
    }
    consts = {}
    rows = []
    for family in ("pocock", "obf"):
        for sides, alpha in ((2, 0.05), (2, 0.01), (1, 0.025), (1, 0.05)):
            for K in range(2, 11):
                C = solve_classic(family, K, alpha, sides)
                consts[(family, sides, alpha, K)] = C
                t = equal_t(K)
                up = classic_bounds(family, C, K)
                pu, pl, pc = exits(t, up, lower_of(up, sides), 0.0)
                tot = pu.sum() + pl.sum()
                check("total alpha of Pocock/OBF constants (quad)", tot - alpha, 1e-9,
                      "%s sides=%d alpha=%g K=%d" % (family, sides, alpha, K))
                check("sum of exit probabilities + P(continue) = 1 (quad, theta=0)",
                      tot + pc - 1.0, 1e-10, "%s K=%d" % (family, K))
                C2 = solve_classic(family, K, alpha, sides, n=NQ_CHECK)
                check("constant: quadrature %d vs %d nodes" % (NQ, NQ_CHECK), C - C2, 1e-9,
                      "%s sides=%d alpha=%g K=%d" % (family, sides, alpha, K))
                # reconstruction through the spending solver
                cum = np.cumsum(pu + pl)
                crec = bounds_from_cum(t, cum, sides)
                check("constants reconstructed by the spending solver", np.max(np.abs(crec - up)), 1e-8,
                      "%s sides=%d alpha=%g K=%d" % (family, sides, alpha, K))
                mem, src = memory.get((family, sides, alpha), ({}, ""))
                mv = mem.get(K)
                rows.append(["%s_%ds_%g_K%d" % (family, sides, alpha, K), family, sides, alpha, K,
                             C, flist(up), flist(np.cumsum(pu + pl)), tot,
                             mv if mv is not None else None,
                             ((MEM_SRC % src) if K <= 5 else
                              "from memory: Pocock (1977) / O'Brien & Fleming (1979) tables, K > 5")
                             if mv is not None else "NA",
                             (C - mv) if mv is not None else None])
                if mv is not None and abs(C - mv) > 0.0006:
                    print("FROM-MEMORY DISAGREES: %s sides=%d alpha=%g K=%d computed %.6f memory %.3f" %
                          (family, sides, alpha, K, C, mv))
    with open("groupseq_constants.tsv", "w") as f:
        f.write("\t".join(["id", "family", "sides", "alpha", "K", "constant", "boundaries",
                           "alpha_cum", "total_alpha", "from_memory", "memory_source",
                           "constant_minus_memory"]) + "\n")
        for r in rows:
            f.write("\t".join(fmt(x) for x in r) + "\n")
    print("wrote groupseq_constants.tsv (%d rows), %.1fs" % (len(rows), time.time() - T0))
    for family in ("pocock", "obf"):
        print("  %s two-sided 0.05: %s" % (family, " ".join(
            "K%d=%.6f" % (K, consts[(family, 2, 0.05, K)]) for K in range(2, 11))))

    # ---------------------------------------------------------- (b) inflation
    mem_R = {  # (family, power) -> {K: R}, two-sided alpha = 0.05, recalled
        ("pocock", 0.8): {2: 1.110, 3: 1.166, 4: 1.202, 5: 1.229},
        ("pocock", 0.9): {2: 1.100, 3: 1.151, 4: 1.183, 5: 1.207},
        ("obf", 0.8): {2: 1.008, 3: 1.017, 4: 1.024, 5: 1.028},
        ("obf", 0.9): {2: 1.007, 3: 1.016, 4: 1.022, 5: 1.026},
    }
    rows = []
    thetas = {}
    for family in ("pocock", "obf"):
        for sides, alpha in ((2, 0.05), (1, 0.025)):
            for power in (0.8, 0.9):
                for K in range(2, 11):
                    C = consts[(family, sides, alpha, K)]
                    t = equal_t(K)
                    up = classic_bounds(family, C, K)
                    thf = theta_fixed(alpha, sides, power)
                    ths = solve_theta(t, up, sides, power)
                    thetas[(family, sides, alpha, K, power)] = ths
                    R = (ths / thf) ** 2
                    ths2 = solve_theta(t, up, sides, power, n=NQ_CHECK)
                    check("theta_s: quadrature %d vs %d nodes" % (NQ, NQ_CHECK), ths - ths2, 1e-9,
                          "%s sides=%d K=%d power=%g" % (family, sides, K, power))
                    ths_u = solve_theta(t, up, sides, power, upper_only=True)
                    INFO.append((abs(ths - ths_u), "%s sides=%d K=%d power=%g" % (family, sides, K, power)))
                    op1 = operating(t, up, sides, ths)
                    op0 = operating(t, up, sides, 0.0)
                    mv = mem_R.get((family, power), {}).get(K) if (sides, alpha) == (2, 0.05) else None
                    rows.append(["%s_%ds_%g_K%d_pow%g" % (family, sides, alpha, K, power), family, sides,
                                 alpha, K, power, C, thf, ths, R, ths_u, (ths_u / thf) ** 2,
                                 op0["en"], op1["en"],
                                 R * op1["en"], op1["power_either"],
                                 mv, ("from memory: Jennison & Turnbull (2000) Table %s" %
                                      ("2.2" if family == "pocock" else "2.4")) if mv is not None else "NA",
                                 (R - mv) if mv is not None else None])
                    if mv is not None and abs(R - mv) > 0.0006:
                        print("FROM-MEMORY DISAGREES: R %s K=%d power=%g computed %.6f memory %.3f" %
                              (family, K, power, R, mv))
    with open("groupseq_inflation.tsv", "w") as f:
        f.write("\t".join(["id", "family", "sides", "alpha", "K", "power", "constant", "theta_fixed",
                           "theta_s", "R", "theta_s_upper_only", "R_upper_only", "en_frac_max_h0", "en_frac_max_h1", "en_frac_fixed_h1",
                           "power_either", "from_memory", "memory_source", "R_minus_memory"]) + "\n")
        for r in rows:
            f.write("\t".join(fmt(x) for x in r) + "\n")
    print("wrote groupseq_inflation.tsv (%d rows), %.1fs" % (len(rows), time.time() - T0))
    for family in ("pocock", "obf"):
        for power in (0.8, 0.9):
            print("  R %s two-sided 0.05 power %g: %s" % (family, power, " ".join(
                "K%d=%.6f" % (K, (thetas[(family, 2, 0.05, K, power)] / theta_fixed(0.05, 2, power)) ** 2)
                for K in range(2, 11))))

    # ---------------------------------------------------------- (c) spending
    timings = [("eq2", equal_t(2)), ("eq3", equal_t(3)), ("eq4", equal_t(4)), ("eq5", equal_t(5)),
               ("u0.3-0.6-1", np.array([0.3, 0.6, 1.0])),
               ("u0.25-0.5-0.8-1", np.array([0.25, 0.5, 0.8, 1.0]))]
    # {0.5, 1} asked as an unequal timing is the same as eq2.
    fams = [("sf_obf", None), ("sf_pocock", None), ("sf_power", 1.0), ("sf_power", 2.0), ("sf_power", 3.0)]
    mem_sf = {  # (family, sides, alpha, timing) -> boundaries, recalled
        ("sf_obf_alt_d", 2, 0.05, "eq5"): [4.877, 3.357, 2.680, 2.290, 2.031],
        ("sf_pocock", 2, 0.05, "eq5"): [2.438, 2.427, 2.410, 2.397, 2.386],
        ("sf_obf_alt_d", 2, 0.05, "eq4"): [4.333, 2.963, 2.359, 2.014],
    }
    designs = {}
    rows = []

    def add_spending(family, rho, sides, alpha, tname, t):
        cum = spend(family, alpha, t, rho)
        c = bounds_from_cum(t, cum, sides)
        c2 = bounds_from_cum(t, cum, sides, n=NQ_CHECK)
        name = "%s%s_%ds_%g_%s" % (family, "" if rho is None else "%g" % rho, sides, alpha, tname)
        check("spending boundary: quadrature %d vs %d nodes" % (NQ, NQ_CHECK), np.max(np.abs(c - c2)), 1e-9, name)
        pu, pl, pc = exits(t, c, lower_of(c, sides), 0.0)
        tot = pu.sum() + pl.sum()
        check("total alpha of spending designs = alpha(1) (quad)", tot - cum[-1], 1e-9, name)
        check("cumulative crossing = alpha(t_k) at every look (quad)",
              np.max(np.abs(np.cumsum(pu + pl) - cum)), 1e-9, name)
        designs[name] = dict(family=family, rho=rho, sides=sides, alpha=alpha, timing=tname, t=t, c=c)
        mem = mem_sf.get((family, sides, alpha, tname))
        for k in range(len(t)):
            p = 2 * norm.sf(c[k]) if sides == 2 else norm.sf(c[k])
            mv = mem[k] if mem else None
            rows.append([name, family, "NA" if rho is None else rho, sides, alpha, tname, len(t), k + 1,
                         t[k], cum[k], c[k], p, mv,
                         "from memory (Lan-DeMets boundaries as commonly tabulated)" if mv is not None else "NA",
                         (c[k] - mv) if mv is not None else None])
            if mv is not None and abs(c[k] - mv) > 0.0006:
                print("FROM-MEMORY DISAGREES: %s look %d computed %.6f memory %.3f" % (name, k + 1, c[k], mv))

    for family, rho in fams:
        for sides, alpha in ((2, 0.05), (1, 0.025)):
            for tname, t in timings:
                add_spending(family, rho, sides, alpha, tname, t)
    # remark rows: other readings of the one-sided O'Brien-Fleming-type function
    for family in ("sf_obf_alt_b", "sf_obf_alt_c"):
        for tname, t in timings:
            add_spending(family, None, 1, 0.025, tname, t)
    # remark rows: two-sided O'Brien-Fleming-type with each side spending form (a) at alpha/2
    for tname, t in timings:
        add_spending("sf_obf_alt_d", None, 2, 0.05, tname, t)
    # form (a) with one-sided alpha = 0.05 equals alt_b with alpha = 0.025: check
    for tname, t in timings:
        a = designs["sf_obf_1s_0.025_%s" % tname]
        b = designs["sf_obf_alt_b_1s_0.025_%s" % tname]
        ca = bounds_from_cum(t, spend("sf_obf", 0.05, t), 1)
        check("one-sided alt_b at 0.025 = form (a) at 0.05", np.max(np.abs(ca - b["c"])), 1e-12, tname)
    with open("groupseq_spending.tsv", "w") as f:
        f.write("\t".join(["id", "family", "rho", "sides", "alpha", "timing", "K", "look", "t",
                           "alpha_cum", "boundary", "nominal_p", "from_memory", "memory_source",
                           "boundary_minus_memory"]) + "\n")
        for r in rows:
            f.write("\t".join(fmt(x) for x in r) + "\n")
    print("wrote groupseq_spending.tsv (%d rows, %d designs), %.1fs" % (len(rows), len(designs), time.time() - T0))
    for nm in ("sf_obf_2s_0.05_eq5", "sf_pocock_2s_0.05_eq5", "sf_obf_1s_0.025_eq5", "sf_obf_alt_d_2s_0.05_eq5"):
        print("  %s: %s" % (nm, " ".join("%.6f" % x for x in designs[nm]["c"])))
    rec = np.array(mem_sf[("sf_obf_alt_d", 2, 0.05, "eq5")])
    print("  FROM-MEMORY: the recalled two-sided alpha=0.05 K=5 O'Brien-Fleming-type boundaries %s" %
          " ".join("%.3f" % x for x in rec))
    print("    differ from sf_obf_2s_0.05_eq5 (alpha(t) = 2-2Phi(z_{1-alpha/2}/sqrt t) over both sides) "
          "by up to %.3f, and match sf_obf_alt_d_2s_0.05_eq5 (each side spends that function at alpha/2) "
          "to %.1e" % (np.max(np.abs(designs["sf_obf_2s_0.05_eq5"]["c"] - rec)),
                       np.max(np.abs(designs["sf_obf_alt_d_2s_0.05_eq5"]["c"] - rec))))

    # classic designs as entries of the same dictionary
    for family in ("pocock", "obf"):
        for sides, alpha in ((2, 0.05), (2, 0.01), (1, 0.025), (1, 0.05)):
            for K in range(2, 11):
                C = consts[(family, sides, alpha, K)]
                designs["%s_%ds_%g_K%d" % (family, sides, alpha, K)] = dict(
                    family=family, rho=None, sides=sides, alpha=alpha, timing="eq%d" % K,
                    t=equal_t(K), c=classic_bounds(family, C, K))

    # ---------------------------------------------------------- (d) power
    power_designs = ["pocock_2s_0.05_K5", "obf_2s_0.05_K4", "pocock_2s_0.05_K2", "pocock_1s_0.025_K3",
                     "obf_1s_0.025_K5", "obf_2s_0.05_K10", "pocock_2s_0.01_K4",
                     "sf_obf_2s_0.05_eq5", "sf_obf_1s_0.025_u0.3-0.6-1", "sf_pocock_2s_0.05_u0.25-0.5-0.8-1",
                     "sf_pocock_1s_0.025_eq4", "sf_power1_2s_0.05_eq3", "sf_power2_1s_0.025_eq2",
                     "sf_power3_2s_0.05_eq2", "sf_obf_2s_0.05_eq3", "sf_obf_alt_d_2s_0.05_eq5"]
    rows = []
    solved = {}
    for nm in power_designs:
        d = designs[nm]
        for power in (0.8, 0.9):
            ths = solve_theta(d["t"], d["c"], d["sides"], power)
            ths_u = solve_theta(d["t"], d["c"], d["sides"], power, upper_only=True)
            solved[(nm, power)] = ths
            thf = theta_fixed(d["alpha"], d["sides"], power)
            op1 = operating(d["t"], d["c"], d["sides"], ths)
            op0 = operating(d["t"], d["c"], d["sides"], 0.0)
            R = (ths / thf) ** 2
            rows.append([nm + "_pow%g" % power, d["family"], "NA" if d["rho"] is None else d["rho"],
                         d["sides"], d["alpha"], d["timing"], len(d["t"]), flist(d["t"]), flist(d["c"]),
                         power, thf, ths, R, ths_u, (ths_u / thf) ** 2, op1["power_upper"], op1["power_either"], op1["power_upper_only"],
                         flist(op1["pu"]), flist(op1["pu"] + op1["pl"]), op0["en"], op1["en"], R * op1["en"],
                         op0["power_either"]])
    with open("groupseq_power.tsv", "w") as f:
        f.write("\t".join(["id", "family", "rho", "sides", "alpha", "timing", "K", "t", "boundaries",
                           "power", "theta_fixed", "theta_s", "R", "theta_s_upper_only", "R_upper_only",
                           "power_upper", "power_either",
                           "power_upper_only", "p_first_upper", "p_first_either",
                           "en_frac_max_h0", "en_frac_max_h1", "en_frac_fixed_h1", "total_alpha"]) + "\n")
        for r in rows:
            f.write("\t".join(fmt(x) for x in r) + "\n")
    print("wrote groupseq_power.tsv (%d rows), %.1fs" % (len(rows), time.time() - T0))

    # ---------------------------------------------------------- (e) power at drifts
    at_designs = ["pocock_2s_0.05_K5", "obf_2s_0.05_K4", "pocock_1s_0.025_K2", "sf_obf_1s_0.025_eq3",
                  "sf_pocock_2s_0.05_u0.3-0.6-1", "sf_power2_1s_0.025_u0.25-0.5-0.8-1", "sf_obf_2s_0.05_eq5",
                  "sf_obf_alt_d_2s_0.05_eq4"]
    rows = []
    for nm in at_designs:
        d = designs[nm]
        for th in (1.0, 2.0, 2.5, 3.0, 3.5):
            op = operating(d["t"], d["c"], d["sides"], th)
            op2 = operating(d["t"], d["c"], d["sides"], th, n=NQ_CHECK)
            check("power at drift: quadrature %d vs %d nodes" % (NQ, NQ_CHECK),
                  op["power_upper"] - op2["power_upper"], 1e-10, "%s theta=%g" % (nm, th))
            rows.append(["%s_theta%g" % (nm, th), d["family"], "NA" if d["rho"] is None else d["rho"],
                         d["sides"], d["alpha"], d["timing"], len(d["t"]), flist(d["t"]), flist(d["c"]), th,
                         op["power_upper"], op["power_either"], op["power_upper_only"], flist(op["pu"]),
                         op["en"]])
    with open("groupseq_power_at.tsv", "w") as f:
        f.write("\t".join(["id", "family", "rho", "sides", "alpha", "timing", "K", "t", "boundaries",
                           "theta", "power_upper", "power_either", "power_upper_only", "p_first_upper",
                           "en_frac_max"]) + "\n")
        for r in rows:
            f.write("\t".join(fmt(x) for x in r) + "\n")
    print("wrote groupseq_power_at.tsv (%d rows), %.1fs" % (len(rows), time.time() - T0))

    # ---------------------------------------------------------- checks with scipy's MVN CDF
    # K = 2: every K = 2 design, exact bivariate CDF (public API), at theta = 0 and theta_s / 2.5
    for nm, d in designs.items():
        if len(d["t"]) != 2:
            continue
        for th in (0.0, 2.5):
            pu, pl, pc, *_ = mvn_exits(d["t"], d["c"], d["sides"], th, rect_k2_public)
            qu, ql, qc = exits(d["t"], d["c"], lower_of(d["c"], d["sides"]), th)
            check("K=2 designs vs scipy bivariate normal CDF",
                  max(np.max(np.abs(pu - qu)), np.max(np.abs(pl - ql)), abs(pc - qc)), 1e-10,
                  "%s theta=%g" % (nm, th))
    # K = 3: conditioning on Z_1 + exact bivariate CDF, quad
    for nm, d in designs.items():
        if len(d["t"]) != 3 or not (nm.startswith("sf_") or nm.endswith("K3")):
            continue
        if d["sides"] == 2 and d["alpha"] == 0.01:
            continue
        for th in (0.0, 3.0):
            pu, pl, pc, eu, el, ec = mvn_exits(d["t"], d["c"], d["sides"], th, rect_k3_condition)
            qu, ql, qc = exits(d["t"], d["c"], lower_of(d["c"], d["sides"]), th)
            check("K=3 designs vs conditioning on Z1 + scipy bivariate CDF",
                  max(np.max(np.abs(pu - qu)), np.max(np.abs(pl - ql)), abs(pc - qc)), 1e-9,
                  "%s theta=%g" % (nm, th))
    # K >= 4: Genz QMC with its own error estimate
    qmc = [("pocock_2s_0.05_K5", 0.0), ("pocock_2s_0.05_K5", None), ("obf_2s_0.05_K4", None),
           ("obf_1s_0.025_K5", None), ("sf_pocock_2s_0.05_u0.25-0.5-0.8-1", 0.0),
           ("sf_obf_2s_0.05_eq5", None), ("obf_2s_0.05_K10", 0.0), ("pocock_2s_0.05_K10", 0.0)]
    worst_ratio = 0.0
    for nm, th in qmc:
        d = designs[nm]
        if th is None:
            th = solved[(nm, 0.9)]
        pc, ec = rect_mvndst(d["t"], lower_of(d["c"], d["sides"]), d["c"], th, 4 * 10 ** 6)
        qu, ql, qc = exits(d["t"], d["c"], lower_of(d["c"], d["sides"]), th)
        diff = pc - qc
        worst_ratio = max(worst_ratio, abs(diff) / ec)
        check("K>=4 P(continue all) vs scipy Genz QMC (tol 5 x its error estimate)", abs(diff) / (5 * ec), 1.0,
              "%s theta=%.4f diff=%.2e err=%.2e" % (nm, th, diff, ec))
        print("  Genz QMC %s theta=%.5f: P(continue) quad %.10f qmc %.10f (err est %.1e)" %
              (nm, th, qc, pc, ec))
    # inclusion-exclusion over rectangles, look by look, K >= 4
    for nm in ("obf_2s_0.05_K4", "sf_obf_2s_0.05_eq5"):
        d = designs[nm]
        th = solved[(nm, 0.9)]
        rect = lambda t, lo, up, theta: rect_mvndst(t, lo, up, theta, 2 * 10 ** 6)
        pu, pl, pc, eu, el, ec = mvn_exits(d["t"], d["c"], d["sides"], th, rect)
        qu, ql, qc = exits(d["t"], d["c"], lower_of(d["c"], d["sides"]), th)
        for k in range(len(qu)):
            for what, a, b, e in (("upper", pu[k], qu[k], eu[k]), ("lower", pl[k], ql[k], el[k])):
                e = max(e, 1e-15)
                worst_ratio = max(worst_ratio, abs(a - b) / e)
                check("K>=4 first crossing by look vs scipy Genz QMC rectangles (tol 5 x error estimate + 1e-12)",
                      abs(a - b) / (5 * e + 1e-12), 1.0, "%s theta=%.4f look %d %s diff=%.2e err=%.2e" %
                      (nm, th, k + 1, what, a - b, e))
        print("  Genz QMC rectangles %s theta=%.5f: first-crossing upper by look qmc %s quad %s" %
              (nm, th, " ".join("%.9f" % x for x in pu), " ".join("%.9f" % x for x in qu)))
    print("  Genz QMC: worst |diff| / error estimate = %.2f" % worst_ratio)

    # ---------------------------------------------------------- Monte Carlo (numpy, fixed seed)
    rng = np.random.default_rng(20240607)
    reps = 10 ** 6
    mc_designs = ["pocock_2s_0.05_K5", "obf_2s_0.05_K4", "sf_obf_1s_0.025_u0.3-0.6-1",
                  "sf_pocock_2s_0.05_u0.25-0.5-0.8-1", "sf_power2_1s_0.025_eq2", "sf_power1_2s_0.05_eq3"]
    worst_z = 0.0
    for nm in mc_designs:
        d = designs[nm]
        for th in (0.0, solved[(nm, 0.9)]):
            cu, cl = mc_exits(d["t"], d["c"], d["sides"], th, reps, rng)
            qu, ql, qc = exits(d["t"], d["c"], lower_of(d["c"], d["sides"]), th)
            for name, mcv, qv in [("upper total", cu.sum(), qu.sum()), ("either total", (cu + cl).sum(),
                                                                           (qu + ql).sum())] + \
                    [("upper look %d" % (k + 1), cu[k], qu[k]) for k in range(len(qu))]:
                se = math.sqrt(max(qv * (1 - qv), 1e-12) / reps)
                z = (mcv - qv) / se
                worst_z = max(worst_z, abs(z))
                check("Monte Carlo 1e6 (numpy) within 4 SE", abs(z), 4.0,
                      "%s theta=%.4f %s mc=%.6f quad=%.6f" % (nm, th, name, mcv, qv))
            # expected fraction of the maximum sample size
            t = np.asarray(d["t"], float)
            ps = qu + ql
            pk = np.concatenate([ps[:-1], [1.0 - ps[:-1].sum()]])
            en_q = float(np.sum(t * pk))
            sd_q = math.sqrt(max(float(np.sum(t * t * pk)) - en_q ** 2, 1e-12))
            ms = cu + cl
            mk = np.concatenate([ms[:-1], [1.0 - ms[:-1].sum()]])
            en_mc = float(np.sum(t * mk))
            z = (en_mc - en_q) / (sd_q / math.sqrt(reps))
            worst_z = max(worst_z, abs(z))
            check("Monte Carlo 1e6 (numpy) within 4 SE", abs(z), 4.0,
                  "%s theta=%.4f E[N]/Nmax mc=%.6f quad=%.6f" % (nm, th, en_mc, en_q))
            print("  MC %s theta=%.5f: E[N]/Nmax %.6f (quad %.6f);" % (nm, th, en_mc, en_q), end="")
            print("  upper %.6f (quad %.6f) either %.6f (quad %.6f)" %
                  (cu.sum(), qu.sum(), (cu + cl).sum(), (qu + ql).sum()))
    print("  Monte Carlo: worst |z| = %.2f" % worst_z)

    # ---------------------------------------------------------- summary
    print()
    worst = max(INFO)
    print("INFO (not a check): theta_s with the lower boundary stopping the trial vs ignored entirely: "
          "largest |difference| %.3g at %s" % worst)
    print("SELF-CHECKS (count, worst discrepancy, tolerance, where):")
    for name, (cnt, worst, tol, what) in CHECKS.items():
        print("  %-75s n=%4d worst=%.3g tol=%.3g  [%s]" % (name, cnt, worst, tol, what))
    print("total run time %.1fs" % (time.time() - T0))
    if FAILS:
        print("FAILED CHECKS:")
        for f in FAILS:
            print("  " + f)
        sys.exit(1)
    print("ALL CHECKS PASSED")


if __name__ == "__main__":
    main()
