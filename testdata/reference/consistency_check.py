"""Second, independent check of consistency_detect.tsv and consistency_events.tsv
with scipy.  Run after consistency_make.R:

    cd testdata/reference && /usr/bin/python3 consistency_check.py > consistency_check.out

For every row the power is recomputed with scipy at the reported lower/upper
effect (must equal the target), and the effect is solved again with
scipy.optimize.brentq on a bracket found by an outward scan.  Part E2 is
recomputed from its inputs.  Stops with an error on any mismatch.
"""
import csv
import functools
import math

import numpy as np
import scipy
from scipy import integrate, optimize, stats

nchecks = 0


def check(label, a, b, tol):
    global nchecks
    d = abs(a - b)
    ok = math.isfinite(d) and d <= tol
    print(f"CHECK {label:<62s} a={a:.15g} b={b:.15g} |diff|={d:.3g} tol={tol:.0g} {'OK' if ok else 'FAIL'}")
    if not ok:
        raise SystemExit("cross-check failed: " + label)
    nchecks += 1


def num(x):
    return float("nan") if x == "NA" else float(x)


@functools.lru_cache(maxsize=None)
def t_crit(p, df):
    # scipy 1.10.1 stats.t.ppf is only good to about 1e-9 relative here (for
    # df=48 it is 3e-9 low, while R's qt is right to 1e-16), which moves the
    # power by ~1e-9.  Invert the accurate stats.t.cdf instead.
    x0 = stats.t.ppf(p, df)
    return optimize.brentq(lambda x: stats.t.cdf(x, df) - p, x0 - 1e-3, x0 + 1e-3, xtol=1e-15, rtol=1e-15)


def t2_power(ncp, df, alpha):
    tc = t_crit(1 - alpha / 2, df)
    return stats.nct.sf(tc, df, ncp) + stats.nct.cdf(-tc, df, ncp)


def t2_power_quad(ncp, df, alpha):
    """Same power without nct: average the normal tail over the chi-square."""
    tc = t_crit(1 - alpha / 2, df)

    def f(v):
        s = tc * math.sqrt(v / df)
        return (stats.norm.sf(s - ncp) + stats.norm.cdf(-s - ncp)) * stats.chi2.pdf(v, df)
    return integrate.quad(f, 0, math.inf, epsabs=0, epsrel=1e-13, limit=200)[0]


def dilute(p1, p2, na, c):
    return (1 - na) * p1 + na * p2, (1 - c) * p2 + c * p1


def fleiss_power(p1, p2, n1, n2, alpha, cc):
    r = n2 / n1
    D = abs(p1 - p2)
    pbar = (p1 + r * p2) / (1 + r)
    nn = n1
    if cc:
        a = (r + 1) / (2 * r * D) if D > 0 else math.inf
        nn = 0.0 if n1 <= a else (n1 - a) ** 2 / n1
    z = stats.norm.ppf(1 - alpha / 2)
    return stats.norm.cdf((D * math.sqrt(nn * r) - z * math.sqrt((r + 1) * pbar * (1 - pbar)))
                          / math.sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))


def p_event(lam, A, F, d):
    eta = -math.log(1 - d)
    s = lam + eta
    if A > 0:
        return lam / s * (1 - (math.exp(-s * F) - math.exp(-s * (A + F))) / (s * A))
    return lam / s * (1 - math.exp(-s * F))


def mix(HR, h, A, F, d, na, c):
    Ph, Pt = p_event(h, A, F, d), p_event(HR * h, A, F, d)
    return (1 - na) * Pt + na * Ph, (1 - c) * Ph + c * Pt


def solve(g, x0, x1, n=4001):
    xs = np.linspace(x0, x1, n)
    prev = xs[0]
    for x in xs[1:]:
        if g(x) >= 0:
            return optimize.brentq(g, prev, x, xtol=1e-14, rtol=1e-14)
        prev = x
    return float("nan")


def power_fn(row):
    """Return (power of the undiluted effect x, x at no difference, far ends, to-scale map)."""
    part = row["part"]
    al, na, c = num(row["alpha"]), num(row["na"]), num(row["c"])
    if part == "A":
        n, sd = num(row["n1"]), num(row["sd"])
        df = 2 * (n - 1)
        if row["sides"] == "1":
            tc = t_crit(1 - al, df)
            f = lambda x: stats.nct.sf(tc, df, math.sqrt(n / 2) * (1 - na - c) * x / sd)
        else:
            f = lambda x: t2_power(math.sqrt(n / 2) * abs((1 - na - c) * x) / sd, df, al)
        return f, 0.0, (-10 * sd, 10 * sd), lambda x: x
    if part == "B":
        p2, n1, n2 = num(row["p2"]), num(row["n1"]), num(row["n2"])
        cc = "continuity corrected" in row["method"]
        f = lambda p1: fleiss_power(*dilute(p1, p2, na, c), n1, n2, al, cc)
        return f, p2, (0.0, 1.0), lambda p1: p1 / p2
    if part == "C":
        p2, N, m, icc = num(row["p2"]), num(row["N_arm"]), num(row["m"]), num(row["icc"])
        ne = N / (1 + (m - 1) * icc)
        df = 2 * math.ceil(N / m) - 2

        def f(p1):
            a, b = dilute(p1, p2, na, c)
            return t2_power(abs(a - b) / math.sqrt((a * (1 - a) + b * (1 - b)) / ne), df, al)
        return f, p2, (0.0, 1.0), lambda p1: p1 / p2
    if part == "D":
        sd, N, m, icc = num(row["sd"]), num(row["N_arm"]), num(row["m"]), num(row["icc"])
        ne = N / (1 + (m - 1) * icc)
        df = 2 * math.ceil(N / m) - 2
        f = lambda x: t2_power(abs((1 - na - c) * x) / (sd * math.sqrt(2 / ne)), df, al)
        return f, 0.0, (-10 * sd, 10 * sd), lambda x: x
    if part == "E1":
        med, A, F, d = num(row["median"]), num(row["A"]), num(row["F"]), num(row["d"])
        n1, n2 = num(row["n1"]), num(row["n2"])
        h = math.log(2) / med

        def f(lhr):
            P1, P2 = mix(math.exp(lhr), h, A, F, d, na, c)
            D = n1 * P1 + n2 * P2
            return stats.norm.cdf(math.sqrt(D * n1 * n2 / (n1 + n2) ** 2) * abs((1 - na - c) * lhr)
                                  - stats.norm.ppf(1 - al / 2))
        return f, 0.0, (math.log(1e-3), math.log(1e3)), math.exp
    raise ValueError(part)


def inverse_scale(row, v):
    if row["part"] in ("B", "C"):
        return v * num(row["p2"])
    if row["part"] == "E1":
        return math.log(v)
    return v


print("scipy", scipy.__version__, "numpy", np.__version__)
with open("consistency_detect.tsv") as fh:
    rows = list(csv.DictReader(fh, delimiter="\t"))
for row in rows:
    f, x0, ends, to_scale = power_fn(row)
    target = num(row["power"])
    for side, end in (("lower", ends[0]), ("upper", ends[1])):
        v = num(row[side])
        if math.isnan(v):
            if row["sides"] == "1" and side == "lower":
                continue
            raise SystemExit(f"{row['case']} {side} is NA")
        x = inverse_scale(row, v)
        check(f"{row['case']} {side} scipy power at reported value", f(x), target, 1e-9)
        if row["part"] == "C":
            a, b = dilute(x, num(row["p2"]), num(row["na"]), num(row["c"]))
            ne = num(row["N_arm"]) / (1 + (num(row["m"]) - 1) * num(row["icc"]))
            ncp = abs(a - b) / math.sqrt((a * (1 - a) + b * (1 - b)) / ne)
            check(f"{row['case']} {side} scipy quad (no nct) power", t2_power_quad(ncp, 2 * math.ceil(num(row["N_arm"]) / num(row["m"])) - 2, num(row["alpha"])), target, 1e-9)
        xs = solve(lambda t: f(t) - target, x0, end)
        check(f"{row['case']} {side} brentq re-solve", to_scale(xs), v, 1e-9)

with open("consistency_events.tsv") as fh:
    ev = list(csv.DictReader(fh, delimiter="\t"))
for row in ev:
    g = {k: num(v) for k, v in row.items() if k not in ("case", "source")}
    h = math.log(2) / g["median"]
    r = g["r"]
    HRd = math.exp((1 - g["na"] - g["c"]) * math.log(g["HR"]))
    Ds = (stats.norm.ppf(1 - g["alpha"] / 2) + stats.norm.ppf(g["power"])) ** 2 * (1 + r) ** 2 / r / math.log(HRd) ** 2
    check(f"{row['case']} D_star", Ds, g["D_star"], 1e-8)
    check(f"{row['case']} D", math.ceil(Ds), g["D"], 0)
    P1, P2 = mix(g["HR"], h, g["A"], g["F"], g["d"], g["na"], g["c"])
    check(f"{row['case']} P1", P1, g["P1"], 1e-13)
    check(f"{row['case']} P2", P2, g["P2"], 1e-13)
    n1s = math.ceil(Ds) / (P1 + r * P2)
    check(f"{row['case']} n1_star", n1s, g["n1_star"], 1e-9)
    check(f"{row['case']} n1", math.ceil(n1s), g["n1"], 0)
    check(f"{row['case']} n2", math.ceil(r * n1s), g["n2"], 0)
    P1s, P2s = p_event(HRd * h, g["A"], g["F"], g["d"]), p_event(h, g["A"], g["F"], g["d"])
    check(f"{row['case']} P1_simple", P1s, g["P1_simple"], 1e-13)
    check(f"{row['case']} P2_simple", P2s, g["P2_simple"], 1e-13)
    n1ss = math.ceil(Ds) / (P1s + r * P2s)
    check(f"{row['case']} n1_star_simple", n1ss, g["n1_star_simple"], 1e-9)
    check(f"{row['case']} n1_simple", math.ceil(n1ss), g["n1_simple"], 0)
    check(f"{row['case']} n2_simple", math.ceil(r * n1ss), g["n2_simple"], 0)
    # P(lambda) once more by quadrature over the uniform follow-up time
    s = h - math.log(1 - g["d"])
    q = integrate.quad(lambda t: h / s * (1 - math.exp(-s * t)), g["F"], g["A"] + g["F"],
                       epsabs=0, epsrel=1e-13)[0] / g["A"]
    check(f"{row['case']} P(h) closed vs scipy quad", p_event(h, g["A"], g["F"], g["d"]), q, 1e-12)

print(f"\n{nchecks} CHECK lines, all OK")
