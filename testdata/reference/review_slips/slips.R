# slips.R: reference figures for the diagnosis of `enough review`.
#
# For each slip of issue 10 (item 5) one invented protocol commits that slip
# on purpose: its stated figure is the figure the slip yields, computed here
# from the published formula of the method the protocol plans with. The
# correct figure (the protocol's own assumptions, no slip) is computed beside
# it, and the power that the stated figure actually gives, so that the
# verdict is plainly not `consistent` (more than 5% away and more than 2
# points of power short or over).
#
# Nothing here uses the project's code. Formulas, from the papers cited in
# README.md ("Methods"), written out by hand:
#   Fleiss (no correction): Fleiss, Levin & Paik 2003, ch. 4
#     n' = [z_a sqrt((r+1) pbar qbar) + z_b sqrt(r p1 q1 + p2 q2)]^2 / (r D^2)
#   Fleiss with continuity correction: Fleiss, Tytun & Ury 1980, Biometrics 36:343
#     n = n'/4 [1 + sqrt(1 + 2(r+1)/(n' r D))]^2
#   normal approximation for means (Chow, Shao & Wang 2008, ch. 3)
#     n1 = (z_a + z_b)^2 (s1^2 + s2^2/r) / D^2
#   t test: stats::power.t.test(..., strict = TRUE) (both tails counted)
#   Schoenfeld 1983, Biometrics 39:499: D = (z_a + z_b)^2 / (p1 p2 ln^2 HR)
#   Lachin & Foulkes 1986, Biometrics 42:507: probability of an event under
#     exponential survival, uniform accrual a and follow-up f (no dropout):
#     P = 1 - (exp(-l f) - exp(-l (a + f))) / (l a)
#   odds ratio to risk: p1 = psi p0 / (1 + p0 (psi - 1)) (common practice)
# Rounding (README "Rounding and inflation"): per group ceiling of
# n* x design_effect (second group ratio x n* x design_effect), enrolment
# ceiling(analysable / (1 - attrition)) per group; rounding up ignores noise
# below one part in 1e9.
#
# Run: Rscript slips.R > slips.out   (writes slips.tsv beside it)

za <- function(alpha, sides) qnorm(1 - alpha / sides)
zb <- function(power) qnorm(power)

ceil9 <- function(x) {
  r <- round(x)
  if (abs(x - r) <= 1e-9 * max(1, abs(x))) r else ceiling(x)
}

# --- binary outcomes -------------------------------------------------------
fleiss_nprime <- function(p1, p2, r, alpha, sides, power) {
  pbar <- (p1 + r * p2) / (1 + r)
  d <- abs(p1 - p2)
  (za(alpha, sides) * sqrt((r + 1) * pbar * (1 - pbar)) +
     zb(power) * sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))^2 / (r * d^2)
}
fleiss_cc <- function(np, p1, p2, r) {
  d <- abs(p1 - p2)
  np / 4 * (1 + sqrt(1 + 2 * (r + 1) / (np * r * d)))^2
}
# n* (unrounded first group) by fleiss or fleiss-cc
nstar_bin <- function(p1, p2, r = 1, alpha = 0.05, sides = 2, power = 0.8,
                      cc = TRUE) {
  np <- fleiss_nprime(p1, p2, r, alpha, sides, power)
  if (cc) fleiss_cc(np, p1, p2, r) else np
}
# power of the same formula at analysable (effective) sizes n1, n2
power_bin <- function(p1, p2, n1, n2, alpha = 0.05, sides = 2, cc = TRUE) {
  r <- n2 / n1
  d <- abs(p1 - p2)
  np <- n1
  if (cc) {
    c <- (r + 1) / (2 * r * d)
    np <- if (n1 <= c) 0 else (n1 - c)^2 / n1
  }
  pbar <- (p1 + r * p2) / (1 + r)
  z <- (sqrt(np * r * d^2) - za(alpha, sides) * sqrt((r + 1) * pbar * (1 - pbar))) /
    sqrt(r * p1 * (1 - p1) + p2 * (1 - p2))
  pnorm(z)
}
groups <- function(nstar, r = 1, de = 1) c(ceil9(nstar * de), ceil9(r * nstar * de))
enrol <- function(n, a) sapply(n, function(x) ceil9(x / (1 - a)))
or_risk <- function(psi, p0) psi * p0 / (1 + p0 * (psi - 1))

# --- continuous outcomes ---------------------------------------------------
n_t <- function(delta, sd, alpha = 0.05, power = 0.8)
  power.t.test(delta = delta, sd = sd, sig.level = alpha, power = power,
               strict = TRUE)$n
power_t <- function(n, delta, sd, alpha = 0.05)
  power.t.test(n = n, delta = delta, sd = sd, sig.level = alpha,
               strict = TRUE)$power
n_z <- function(delta, sd, alpha = 0.05, sides = 2, power = 0.8, r = 1)
  (za(alpha, sides) + zb(power))^2 * (sd^2 + sd^2 / r) / delta^2
power_z <- function(n, delta, sd, alpha = 0.05, sides = 2)
  pnorm(sqrt(n * delta^2 / (2 * sd^2)) - za(alpha, sides))

# --- time to event ---------------------------------------------------------
schoenfeld <- function(hr, alpha = 0.05, sides = 2, power = 0.8, r = 1) {
  p1 <- 1 / (1 + r); p2 <- r / (1 + r)
  (za(alpha, sides) + zb(power))^2 / (p1 * p2 * log(hr)^2)
}
p_event <- function(lambda, accrual, follow)
  1 - (exp(-lambda * follow) - exp(-lambda * (accrual + follow))) / (lambda * accrual)
tte <- function(hr, median, accrual, follow, power = 0.8, alpha = 0.05, r = 1) {
  l2 <- log(2) / median
  l1 <- hr * l2
  P1 <- p_event(l1, accrual, follow); P2 <- p_event(l2, accrual, follow)
  D <- schoenfeld(hr, alpha, 2, power, r)
  nstar <- D / (P1 + r * P2)
  list(D = D, P1 = P1, P2 = P2, nstar = nstar, n = groups(nstar, r))
}
power_tte <- function(n1, n2, hr, median, accrual, follow, alpha = 0.05) {
  l2 <- log(2) / median
  E <- n1 * p_event(hr * l2, accrual, follow) + n2 * p_event(l2, accrual, follow)
  pi1 <- n1 / (n1 + n2)
  pnorm(sqrt(E * pi1 * (1 - pi1)) * abs(log(hr)) - za(alpha, 2))
}

rows <- list()
add <- function(id, file, figure, stated, correct, power_stated, slip, call) {
  cat(sprintf("%-24s %-6s stated %6d correct %6d (%+.1f%%) power at stated %.4f\n  slip: %s\n  call: %s\n",
              id, figure, stated, correct, 100 * (stated - correct) / correct,
              power_stated, slip, call))
  rows[[length(rows) + 1]] <<- data.frame(
    id = id, file = file, figure = figure, stated = stated, correct = correct,
    power_at_stated = sprintf("%.4f", power_stated), slip_rule = slip,
    source = call, stringsAsFactors = FALSE)
}

# 0. correct: trial, control 0.35, intervention 0.25, fleiss-cc, 1:1, attrition 0.1
p2 <- 0.35; p1 <- 0.25
ns <- nstar_bin(p1, p2)
g <- groups(ns)
cat(sprintf("correct: n* = %.6f, groups %d %d, enrol %s (total %d)\n", ns, g[1], g[2],
            paste(enrol(g, 0.1), collapse = " "), sum(enrol(g, 0.1))))
add("correct", "correct.yaml", "n", g[1], g[1],
    power_bin(p1, p2, g[1], g[2]),
    "none: the stated figure is the correct one",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.25 p2=0.35 r=1 alpha=0.05 two-sided power=0.8; n1=ceiling(n*)")

# 1. one-sided-alpha: trial, control_risk 0.40, risk_ratio 0.7, fleiss-cc
p2 <- 0.40; p1 <- 0.28
good <- groups(nstar_bin(p1, p2))
bad <- groups(nstar_bin(p1, p2, sides = 1))
add("one-sided-alpha", "one-sided-alpha.yaml", "n", bad[1], good[1],
    power_bin(p1, p2, bad[1], bad[1]),
    "z_alpha = qnorm(0.95) (one-sided) in place of qnorm(0.975)",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.28 p2=0.40 r=1 power=0.8; slip sides=1, correct sides=2")

# 2. per-group-as-total: continuous trial, t, difference 4, sd 8
good <- ceil9(n_t(4, 8))
add("per-group-as-total", "per-group-as-total.yaml", "total", good, 2 * good,
    power_t(good / 2, 4, 8),
    "the per-group n reported as the total",
    "power.t.test(delta=4, sd=8, sig.level=0.05, power=0.8, strict=TRUE)$n, ceiling per group; total = 2 x n")

# 3. total-as-per-group: cohort, unexposed 0.10, risk ratio 2, fleiss-cc
p2 <- 0.10; p1 <- 0.20
good <- groups(nstar_bin(p1, p2))
add("total-as-per-group", "total-as-per-group.yaml", "n", sum(good), good[1],
    power_bin(p1, p2, sum(good), sum(good)),
    "the total (n1 + n2) reported as the first group's n",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.20 p2=0.10 r=1 alpha=0.05 two-sided power=0.8")

# 4. attrition-ignored: trial, control 0.25, risk difference -0.10, attrition 0.2
p2 <- 0.25; p1 <- 0.15
good <- groups(nstar_bin(p1, p2))
en <- enrol(good, 0.2)
stated <- sum(good)
an <- floor(stated * (1 - 0.2) / 2)  # analysable per group at the stated enrolment
add("attrition-ignored", "attrition-ignored.yaml", "enrol_total", stated, sum(en),
    power_bin(p1, p2, an, an),
    "enrolment = the analysable total, not inflated for loss",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.15 p2=0.25 r=1 power=0.8; enrol per group ceiling(n/(1-0.2))")

# 5. attrition-multiplied: continuous trial, t, difference -5, sd 12, attrition 0.3
good <- ceil9(n_t(5, 12))
en <- enrol(c(good, good), 0.3)
bad <- sapply(c(good, good), function(x) ceil9(x * 1.3))
an <- floor(sum(bad) * (1 - 0.3) / 2)
add("attrition-multiplied", "attrition-multiplied.yaml", "enrol_total", sum(bad), sum(en),
    power_t(an, 5, 12),
    "enrolment per group ceiling(n x (1 + 0.3)) in place of ceiling(n / (1 - 0.3))",
    "power.t.test(delta=5, sd=12, sig.level=0.05, power=0.8, strict=TRUE)$n, ceiling; x1.3 vs /0.7 per group")

# 6. continuity-omitted: cohort, unexposed 0.15, exposed 0.30, ratio 2, fleiss-cc planned
p2 <- 0.15; p1 <- 0.30
good <- groups(nstar_bin(p1, p2, r = 2), r = 2)
bad <- groups(nstar_bin(p1, p2, r = 2, cc = FALSE), r = 2)
cat(sprintf("continuity-omitted: slip groups %d %d, correct groups %d %d\n", bad[1], bad[2], good[1], good[2]))
add("continuity-omitted", "continuity-omitted.yaml", "n", bad[1], good[1],
    power_bin(p1, p2, bad[1], bad[2]),
    "Fleiss without continuity correction where fleiss-cc is planned",
    "Fleiss-Levin-Paik 2003 (no cc) vs Fleiss-Tytun-Ury 1980 (cc); p1=0.30 p2=0.15 r=2 alpha=0.05 two-sided power=0.8")

# 7. continuity-added: trial, control 0.12, intervention 0.06, method fleiss
p2 <- 0.12; p1 <- 0.06
good <- groups(nstar_bin(p1, p2, cc = FALSE))
bad <- groups(nstar_bin(p1, p2, cc = TRUE))
add("continuity-added", "continuity-added.yaml", "n", bad[1], good[1],
    power_bin(p1, p2, bad[1], bad[2], cc = FALSE),
    "Fleiss with continuity correction where fleiss (no correction) is planned",
    "Fleiss-Tytun-Ury 1980 (cc) vs Fleiss-Levin-Paik 2003 (no cc); p1=0.06 p2=0.12 r=1 alpha=0.05 two-sided power=0.8")

# 8. odds-ratio-as-risk-ratio: case-control, control exposure 0.25, OR 2.5
p0 <- 0.25; psi <- 2.5
good <- groups(nstar_bin(or_risk(psi, p0), p0))
bad <- groups(nstar_bin(psi * p0, p0))
cat(sprintf("odds-ratio-as-risk-ratio: case exposure correct %.6f, slip %.6f\n", or_risk(psi, p0), psi * p0))
add("odds-ratio-as-risk-ratio", "odds-ratio-as-risk-ratio.yaml", "n", bad[1], good[1],
    power_bin(or_risk(psi, p0), p0, bad[1], bad[2]),
    "case exposure = 2.5 x 0.25 = 0.625 in place of psi p0/(1 + p0(psi - 1)) = 0.4545",
    "Fleiss-Tytun-Ury 1980 cc; p2=0.25 r=1 power=0.8; p1 slip 0.625, correct 2.5*0.25/(1+0.25*1.5)")

# 9. design-effect-ignored: trial randomised by practice, design_effect 2.2
p2 <- 0.10; p1 <- 0.18
ns <- nstar_bin(p1, p2)
good <- groups(ns, de = 2.2)
bad <- groups(ns)
add("design-effect-ignored", "design-effect-ignored.yaml", "n", bad[1], good[1],
    power_bin(p1, p2, bad[1] / 2.2, bad[2] / 2.2),
    "n* not multiplied by the design effect 2.2",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.18 p2=0.10 r=1 alpha=0.05 two-sided power=0.8; n1 = ceiling(n* x 2.2)")

# 10. power-90-as-80: time to event, HR 0.6, control median 36, accrual 12, follow-up 24
good <- tte(0.6, 36, 12, 24, power = 0.8)
bad <- tte(0.6, 36, 12, 24, power = 0.9)
cat(sprintf("power-90-as-80: correct D* %.6f P1 %.6f P2 %.6f n* %.6f; slip D* %.6f n* %.6f\n",
            good$D, good$P1, good$P2, good$nstar, bad$D, bad$nstar))
add("power-90-as-80", "power-90-as-80.yaml", "total", sum(bad$n), sum(good$n),
    power_tte(bad$n[1], bad$n[2], 0.6, 36, 12, 24),
    "z_beta = qnorm(0.9) where 80% power is stated",
    "Schoenfeld 1983 events, Lachin-Foulkes 1986 P; HR=0.6 median=36 accrual=12 follow_up=24 alpha=0.05 two-sided; slip power 0.9, correct 0.8")

# 11. power-80-as-90: survey comparison, exposure 0.4, unexposed 0.10, PR 2, fleiss
e <- 0.4; r <- (1 - e) / e
p2 <- 0.10; p1 <- 0.20
good <- groups(nstar_bin(p1, p2, r = r, power = 0.9, cc = FALSE), r = r)
bad <- groups(nstar_bin(p1, p2, r = r, power = 0.8, cc = FALSE), r = r)
an <- sum(bad)
cat(sprintf("power-80-as-90: correct groups %d %d, slip groups %d %d\n", good[1], good[2], bad[1], bad[2]))
add("power-80-as-90", "power-80-as-90.yaml", "total", sum(bad), sum(good),
    power_bin(p1, p2, an * e, an * (1 - e), cc = FALSE),
    "z_beta = qnorm(0.8) where 90% power is stated",
    "Fleiss-Levin-Paik 2003 (no cc); p1=0.20 p2=0.10 r=(1-0.4)/0.4=1.5 alpha=0.05 two-sided; slip power 0.8, correct 0.9")

# 12. normal-instead-of-t: continuous trial, difference 6, sd 4, alpha 0.01, t planned
good <- ceil9(n_t(6, 4, alpha = 0.01))
bad <- ceil9(n_z(6, 4, alpha = 0.01))
add("normal-instead-of-t", "normal-instead-of-t.yaml", "n", bad, good,
    power_t(bad, 6, 4, alpha = 0.01),
    "normal approximation 2 (z_a + z_b)^2 sd^2 / D^2 where the t test is planned",
    "power.t.test(delta=6, sd=4, sig.level=0.01, power=0.8, strict=TRUE)$n vs 2*(qnorm(0.995)+qnorm(0.8))^2*16/36")

# 13. ratio-ignored: cohort, unexposed 0.20, RR 1.5, three unexposed per exposed
p2 <- 0.20; p1 <- 0.30
good <- groups(nstar_bin(p1, p2, r = 3), r = 3)
one <- groups(nstar_bin(p1, p2, r = 1))
cat(sprintf("ratio-ignored: correct groups %d %d, 1:1 groups %d %d\n", good[1], good[2], one[1], one[2]))
tot <- sum(one); n1 <- floor(tot / 4 + 0.5)  # the engine's split, rounded half away from zero
add("ratio-ignored", "ratio-ignored.yaml", "total", sum(one), sum(good),
    power_bin(p1, p2, n1, tot - n1),
    "the total of the 1:1 plan, allocated 1:3",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.30 p2=0.20 alpha=0.05 two-sided power=0.8; slip r=1, correct r=3")

# 14. variance-not-doubled: continuous cohort, method z, difference -3, sd 10
good <- ceil9(n_z(3, 10))
bad <- ceil9((za(0.05, 2) + zb(0.8))^2 * 10^2 / 3^2)
add("variance-not-doubled", "variance-not-doubled.yaml", "n", bad, good,
    power_z(bad, 3, 10),
    "(z_a + z_b)^2 sd^2 / D^2 per group: the variance of the difference counted once",
    "Chow-Shao-Wang 2008 ch. 3: 2*(qnorm(0.975)+qnorm(0.8))^2*100/9 vs (qnorm(0.975)+qnorm(0.8))^2*100/9")

# 15. relative-as-absolute: trial, control 0.40, risk ratio 0.75 (a 25% reduction)
p2 <- 0.40
good <- groups(nstar_bin(0.30, p2))
bad <- groups(nstar_bin(0.40 - 0.25, p2))
add("relative-as-absolute", "relative-as-absolute.yaml", "n", bad[1], good[1],
    power_bin(0.30, p2, bad[1], bad[2]),
    "first risk 0.40 - 0.25 = 0.15 in place of 0.40 x 0.75 = 0.30",
    "Fleiss-Tytun-Ury 1980 cc; p2=0.40 r=1 alpha=0.05 two-sided power=0.8; slip p1=0.15, correct p1=0.30")

# 16. absolute-as-relative: trial, control 0.30, risk difference -0.10
p2 <- 0.30
good <- groups(nstar_bin(0.20, p2))
bad <- groups(nstar_bin(0.30 * (1 - 0.10), p2))
add("absolute-as-relative", "absolute-as-relative.yaml", "n", bad[1], good[1],
    power_bin(0.20, p2, bad[1], bad[2]),
    "first risk 0.30 x (1 - 0.10) = 0.27 in place of 0.30 - 0.10 = 0.20",
    "Fleiss-Tytun-Ury 1980 cc; p2=0.30 r=1 alpha=0.05 two-sided power=0.8; slip p1=0.27, correct p1=0.20")

# 17. events-as-participants: time to event, HR 0.7, control median 24, accrual 18, follow-up 12
good <- tte(0.7, 24, 18, 12)
ev <- ceil9(good$D)
cat(sprintf("events-as-participants: D* %.6f (events %d) P1 %.6f P2 %.6f n* %.6f groups %d %d\n",
            good$D, ev, good$P1, good$P2, good$nstar, good$n[1], good$n[2]))
add("events-as-participants", "events-as-participants.yaml", "total", ev, sum(good$n),
    power_tte(ev / 2, ev / 2, 0.7, 24, 18, 12),
    "the events required reported as the participants required",
    "Schoenfeld 1983 events, Lachin-Foulkes 1986 P; HR=0.7 median=24 accrual=18 follow_up=12 alpha=0.05 two-sided power=0.8")

# 18. multiplicity-ignored: trial of three arms, every pair compared (3
# comparisons), control 0.20, risk ratio 0.5 (p1 0.10), fleiss-cc. The plan
# tests each comparison at alpha / 3 (Bonferroni; Dunn 1961, J Am Stat
# Assoc 56:52); the slip sizes each at the stated alpha 0.05.
p2 <- 0.20; p1 <- 0.10; k <- 3
good <- groups(nstar_bin(p1, p2, alpha = 0.05 / k))
bad <- groups(nstar_bin(p1, p2, alpha = 0.05))
add("multiplicity-ignored", "multiplicity-ignored.yaml", "n", bad[1], good[1],
    power_bin(p1, p2, bad[1], bad[2], alpha = 0.05 / k),
    "each of the 3 comparisons sized at the stated alpha 0.05 in place of 0.05 / 3 (Bonferroni)",
    "Fleiss-Tytun-Ury 1980 cc; p1=0.10 p2=0.20 r=1 two-sided power=0.8; slip alpha 0.05, correct alpha 0.05/3 per comparison")

out <- do.call(rbind, rows)
write.table(out, file = "slips.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat("\n"); print(sessionInfo()$R.version$version.string)
