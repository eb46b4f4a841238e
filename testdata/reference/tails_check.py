"""tails_check.py -- re-check the tables of tails_make.R with mpmath.

Run from this folder, after tails_make.R:

    /usr/bin/python3 tails_check.py > tails_check.out

Every value is recomputed at 60 significant digits from its definition,
independently of R and of the project's Go code:

* t tail: P(T > q) = I_x(df/2, 1/2)/2, x = df/(df + q^2) (mpmath.betainc),
  and the quantile as the root of that tail on the log scale (findroot).
* normal tail: Q(z) = erfc(z/sqrt 2)/2; chi-square on 1 df: the square of
  the normal quantile at p/2.
* noncentral t tail: P(T > q) = integral over x > -ncp of
  phi(x) * P(chisq_df < df ((x + ncp)/q)^2) dx (mpmath.quad, tanh-sinh, split
  at the mode of phi and around x = q - ncp, where the chi-square factor
  rises), the form R's tails_make.R calls B; from df = 1e4 on, where
  mpmath's gammainc does not converge, E[Q(q W - ncp)] over z = ln W.
* power.t.test rows: the same tails at the exact quantile.
* TOST: the integral over the mean difference (tails_make.R's (b)).

The script stops at the first failure; every check prints a CHECK line.
"""

import csv
import sys

import mpmath as mp

mp.mp.dps = 60  # at 40, gammainc with a = 5000 loses 12 digits (nct_96)
checks = 0
worst = {}


def check(group, label, mine, other, tol, abs_tol=0):
    """Require |mine - other| <= tol * |other| (relative), or <= abs_tol."""
    global checks
    diff = abs(mp.mpf(mine) - mp.mpf(other))
    err = diff / max(abs(mp.mpf(other)), mp.mpf(10) ** -300)
    worst[group] = max(worst.get(group, 0), err)
    ok = err <= tol or diff <= abs_tol
    print("CHECK %-52s R=%s mpmath=%s relerr=%.3g %s" % (
        label, mp.nstr(mp.mpf(mine), 17), mp.nstr(mp.mpf(other), 17), float(err), "OK" if ok else "FAIL"))
    if not ok:
        sys.exit("check failed: " + label)
    checks += 1


def rows(name):
    with open(name, newline="") as f:
        return list(csv.DictReader(f, delimiter="\t"))


def t_upper(q, df):
    q, df = mp.mpf(q), mp.mpf(df)
    if q == 0:
        return mp.mpf(1) / 2
    v = mp.betainc(df / 2, mp.mpf(1) / 2, 0, df / (df + q * q), regularized=True) / 2
    return v if q > 0 else 1 - v


def t_quantile(p, df, start):
    p = mp.mpf(p)
    if p == mp.mpf(1) / 2:
        return mp.mpf(0)
    lp = mp.log(p)
    return mp.exp(mp.findroot(lambda u: mp.log(t_upper(mp.exp(u), df)) - lp, mp.log(mp.mpf(start))))


def norm_upper(z):
    return mp.erfc(mp.mpf(z) / mp.sqrt(2)) / 2


def norm_quantile(p, start):
    p = mp.mpf(p)
    if p == mp.mpf(1) / 2:
        return mp.mpf(0)
    return mp.findroot(lambda z: mp.log(norm_upper(z)) - mp.log(p), mp.mpf(start))


def nct_upper_z(q, df, ncp):
    """P(T > q) = E[Q(q W - ncp)] integrated over z = ln W, W = sqrt(chisq_df/df),
    for large df, where mpmath's gammainc (form B) does not converge: the
    density of z is exp(K - df (e^(2z) - 1 - 2z)/2), K = a ln a - a + ln 2 -
    ln Gamma(a), a = df/2, at 60 digits, split around z = 0 on the scale
    1/sqrt(2 df) and around ln(ncp/q), where Q falls over 1/q."""
    q, df, ncp = mp.mpf(q), mp.mpf(df), mp.mpf(ncp)
    a = df / 2
    K = a * mp.log(a) - a + mp.log(2) - mp.loggamma(a)

    def g(z):
        return mp.exp(K - df * (mp.exp(2 * z) - 1 - 2 * z) / 2) * mp.erfc((q * mp.exp(z) - ncp) / mp.sqrt(2)) / 2

    s = 1 / mp.sqrt(2 * df)
    pts = {mp.mpf(k) * s for k in range(-40, 41, 2)}
    if ncp > 0:
        zc = mp.log(ncp / q)
        pts.update(zc + mp.mpf(k) / q for k in range(-40, 41, 4))
    pts = sorted(x for x in pts if -40 * s <= x <= 40 * s)
    return mp.quad(g, [-1] + pts + [1])


def nct_upper(q, df, ncp):
    """P(T > q), T ~ t(df, ncp), q > 0, by form B (over z for df >= 1e4)."""
    if float(df) >= 1e4:
        return nct_upper_z(q, df, ncp)
    q, df, ncp = mp.mpf(q), mp.mpf(df), mp.mpf(ncp)

    def F(w):
        return mp.gammainc(df / 2, 0, df * w * w / 2, regularized=True)

    def g(x):
        return mp.npdf(x) * F((x + ncp) / q)

    lo = -ncp
    xc, width = q - ncp, q / mp.sqrt(2 * df)
    pts = {lo}
    for k in [0, 0.5, 1, 2, 4, 8, 16, 32, 64]:
        pts.update([xc + k * width, xc - k * width])
    pts.update(mp.mpf(x) for x in [-40, -20, -10, -6, -3, -2, -1, 0, 1, 2, 3, 6, 10, 20, 40])
    pts.update(lo + mp.mpf(10) ** -e for e in range(0, 30, 3))
    pts = sorted(x for x in pts if x >= lo)
    return mp.quad(g, pts + [mp.inf])


def main():
    print("mpmath", mp.__version__, "dps", mp.mp.dps)

    print("\n== tails_t.tsv ==")
    for r in rows("tails_t.tsv"):
        p, df, q, up = r["p"], r["df"], r["q"], r["upper"]
        check("t quantile", r["id"] + " qt vs root of betainc", q, t_quantile(p, df, q if float(q) > 0 else 1), 1e-13)
        check("t tail", r["id"] + " pt vs betainc at R's q", up, t_upper(q, df), 1e-13)

    print("\n== tails_normal.tsv ==")
    for r in rows("tails_normal.tsv"):
        p = r["p"]
        z = norm_quantile(p, r["z"] if float(r["z"]) > 0 else 1)
        check("normal quantile", r["id"] + " qnorm vs root of erfc", r["z"], z, 1e-14)
        z2 = norm_quantile(mp.mpf(p) / 2, 1)
        check("chi-square 1 df", r["id"] + " pchisq root vs qnorm(p/2)^2", r["chisq1_root"], z2 * z2, 1e-14)
        err = abs(mp.mpf(r["chisq1"]) - z2 * z2) / (z2 * z2)
        print("NOTE %s qchisq(p, 1, lower.tail = FALSE) relative error %.3g" % (r["id"], float(err)))

    print("\n== tails_nct.tsv ==")
    for r in rows("tails_nct.tsv"):
        v = nct_upper(r["q"], r["df"], r["ncp"])
        check("noncentral t tail", r["id"] + " quadrature vs mpmath", r["value_quad"], v, 1e-12)

    print("\n== tails_power.tsv ==")
    for r in rows("tails_power.tsv"):
        if r["strict"] != "FALSE":
            continue
        n, delta, sd, a = (mp.mpf(r[c]) for c in ("n", "delta", "sd", "sig_level"))
        k = 2 if r["type"] == "two.sample" else 1
        sides = 2 if r["alternative"] == "two.sided" else 1
        df, ncp = (n - 1) * k, mp.sqrt(n / k) * delta / sd
        qu = t_quantile(a / sides, df, 5)
        pw = nct_upper(qu, df, ncp)
        # R's pt(ncp) is good to about 1e-12 absolute (AS 243), so a small
        # power is checked in absolute terms.
        check("power.t.test power", r["id"] + " power at n", r["power"], pw, 1e-10, 1e-12)

    print("\n== tails_tost.tsv ==")
    for r in rows("tails_tost.tsv"):
        n1, n2, sd, delta, margin, a = (mp.mpf(r[c]) for c in ("n1", "n2", "sd", "delta", "margin", "alpha"))
        kk, df = mp.sqrt(1 / n1 + 1 / n2), n1 + n2 - 2
        cc = t_quantile(a, df, 5)

        def g(x):
            return mp.npdf(x, delta, sd * kk) * mp.gammainc(
                df / 2, 0, df * ((margin - abs(x)) / (cc * kk * sd)) ** 2 / 2, regularized=True)

        pts = sorted({-margin, 0, margin} | {x for x in (delta + sd * kk * j for j in range(-8, 9, 2)) if -margin < x < margin})
        check("TOST", r["id"] + " power vs mpmath", r["power"], mp.quad(g, pts), 1e-11)

    print("\nLargest difference per check:")
    for g, e in worst.items():
        print("  %-24s %.3g" % (g, float(e)))
    print("\nAll %d checks passed." % checks)


main()
