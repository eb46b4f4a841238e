## ratio_make.R -- reference values for non-inferiority and equivalence of two
## risks on the ratio scale, Farrington & Manning (1990) score method.
##
## Run from this folder:   Rscript ratio_make.R > ratio_make.out
##
## Writes ratio_mle.tsv, ratio_n.tsv, ratio_power.tsv and ratio_table_power.tsv.
## (ratio_score.tsv is written by ratio_statsmodels.py.)
##
## Only base R `stats` is used. Everything here is written from the formulas
## of the papers, as restated in ratio_README.md:
##
##   Farrington CP, Manning G (1990). Test statistics and sample size formulae
##   for comparative binomial trials with null hypothesis of non-zero risk
##   difference or non-unity relative risk. Stat Med 9:1447-1454.
##   Miettinen O, Nurminen M (1985). Comparative analysis of two rates.
##   Stat Med 4:213-226.
##
## The restricted maximum-likelihood risks are found by numerical
## maximisation of the log-likelihood (optimize(), then uniroot() on the
## score to get past optimize()'s sqrt(eps) limit). The closed form (the
## smaller root of Farrington & Manning's quadratic) is computed separately
## and only compared. The script stops if any cross-check fails.

options(digits = 15, width = 140, warn = 1)

cat("R.version.string:", R.version.string, "\n\n")

fmt <- function(x) {
  if (is.character(x)) return(x)
  if (is.logical(x)) return(ifelse(is.na(x), "NA", ifelse(x, "TRUE", "FALSE")))
  ifelse(is.na(x), "NA",
         ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"),
                sprintf("%.15g", x)))
}

write_tsv <- function(df, file) {
  out <- as.data.frame(lapply(df, function(col) {
    if (is.numeric(col) || is.logical(col)) vapply(col, fmt, "") else as.character(col)
  }), stringsAsFactors = FALSE)
  names(out) <- names(df)
  write.table(out, file, sep = "\t", quote = FALSE, row.names = FALSE,
              col.names = TRUE, na = "NA")
  cat(sprintf("wrote %s (%d rows)\n", file, nrow(out)))
}

n_checks <- 0L
check <- function(label, mine, other, tol, relative = TRUE) {
  err <- abs(mine - other)
  if (relative) err <- err / max(abs(other), 1e-300)
  cat(sprintf("CHECK %-58s mine=%.15g other=%.15g %s=%.3g %s\n", label, mine, other,
              if (relative) "relerr" else "abserr", err, if (err <= tol) "OK" else "FAIL"))
  if (!is.finite(err) || err > tol) stop("cross-check failed: ", label)
  n_checks <<- n_checks + 1L
}

not_near_integer <- function(label, x) {
  if (abs(x - round(x)) < 1e-6) stop("value too close to an integer: ", label, " = ", x)
  invisible(TRUE)
}

banner <- function(s) cat("\n====================", s, "====================\n")

## ---------------------------------------------------------------------------
## Restricted MLE under p1 / p2 = rho0.
##
## Parameterise by x = p2 (so p1 = rho0 x), 0 <= x <= min(1, 1/rho0). With
## observed (or expected) proportions a1 = x1/n1, a2 = x2/n2 and r = n2/n1,
## the log-likelihood per first-group participant is
##   L(x) = a1 log(rho0 x) + (1-a1) log(1 - rho0 x) + r [a2 log x + (1-a2) log(1-x)]
## with 0 log 0 = 0 (boundary counts).
## ---------------------------------------------------------------------------
xlogy <- function(a, y) if (a == 0) 0 else a * log(y)

loglik <- function(x, a1, a2, r, rho0)
  xlogy(a1, rho0 * x) + xlogy(1 - a1, 1 - rho0 * x) + r * (xlogy(a2, x) + xlogy(1 - a2, 1 - x))

## dL/dx, terms with a zero coefficient dropped.
score <- function(x, a1, a2, r, rho0) {
  s <- 0
  if (a1 + r * a2 > 0) s <- s + (a1 + r * a2) / x
  if (a1 < 1) s <- s - rho0 * (1 - a1) / (1 - rho0 * x)
  if (a2 < 1) s <- s - r * (1 - a2) / (1 - x)
  s
}

## Numerical restricted MLE: optimize() on L, then polish with uniroot() on
## the score near the optimum; when the maximum sits on an end of the
## interval (boundary counts) the end point is kept if L is no smaller there.
mle_num <- function(a1, a2, r, rho0) {
  hi <- min(1, 1 / rho0)
  f <- function(x) loglik(x, a1, a2, r, rho0)
  opt <- optimize(f, c(0, hi), maximum = TRUE, tol = 1e-12)$maximum
  x <- opt
  lo_b <- max(opt - 1e-6, 0); hi_b <- min(opt + 1e-6, hi)
  s_lo <- score(lo_b, a1, a2, r, rho0); s_hi <- score(hi_b, a1, a2, r, rho0)
  if (is.finite(s_lo) && is.finite(s_hi) && s_lo > 0 && s_hi < 0) {
    x <- uniroot(function(x) score(x, a1, a2, r, rho0), c(lo_b, hi_b), tol = 1e-15)$root
  }
  for (e in c(0, hi)) {
    if (abs(e - opt) < 1e-5 && is.finite(f(e)) && f(e) >= f(x)) x <- e
  }
  c(p1t = rho0 * x, p2t = x)
}

## Closed form, for comparison only: Farrington & Manning (1990), the
## restricted p2 is the smaller root of a x^2 + b x + c = 0, written here
## per first-group participant (N1 -> 1, N2 -> r, x11 -> a1, x21 -> r a2).
mle_closed <- function(a1, a2, r, rho0) {
  A <- rho0 * (1 + r)
  B <- -(rho0 + a1 + r + r * a2 * rho0)
  C <- a1 + r * a2
  x <- (-B - sqrt(B^2 - 4 * A * C)) / (2 * A)
  c(p1t = rho0 * x, p2t = x)
}

## Variances of p1hat - rho0 p2hat per first-group participant.
v_null <- function(p1, p2, r, rho0) {
  m <- mle_num(p1, p2, r, rho0)
  unname(m["p1t"] * (1 - m["p1t"]) + rho0^2 * m["p2t"] * (1 - m["p2t"]) / r)
}
v_alt <- function(p1, p2, r, rho0) p1 * (1 - p1) + rho0^2 * p2 * (1 - p2) / r

## side: rho0 > 1 -> alternative below (s = -1); rho0 < 1 -> above (s = +1).
side <- function(rho0) if (rho0 > 1) -1 else 1

## Farrington & Manning (1990) sample size, first group.
fm_n1 <- function(p1, p2, r, rho0, alpha, power) {
  za <- qnorm(1 - alpha); zb <- qnorm(power)
  (za * sqrt(v_null(p1, p2, r, rho0)) + zb * sqrt(v_alt(p1, p2, r, rho0)))^2 /
    (p1 - rho0 * p2)^2
}

## One-sided power (normal approximation), the inversion of fm_n1.
fm_power <- function(p1, p2, n1, n2, rho0, alpha) {
  r <- n2 / n1; za <- qnorm(1 - alpha); s <- side(rho0)
  pnorm((s * (p1 - rho0 * p2) * sqrt(n1) - za * sqrt(v_null(p1, p2, r, rho0))) /
          sqrt(v_alt(p1, p2, r, rho0)))
}

## Two one-sided tests against 1/M and M, power = max(0, P_lo + P_hi - 1).
eq_power <- function(p1, p2, n1, n2, M, alpha) {
  max(0, fm_power(p1, p2, n1, n2, 1 / M, alpha) + fm_power(p1, p2, n1, n2, M, alpha) - 1)
}

eq_n1 <- function(p1, p2, r, M, alpha, power) {
  uniroot(function(n) eq_power(p1, p2, n, r * n, M, alpha) - power,
          c(1, 10), extendInt = "upX", tol = 1e-10)$root
}

## ---------------------------------------------------------------------------
banner("restricted MLE: numerical maximisation vs closed form")
## A grid of expected risks, including extremes, and the boundary counts.
worst_opt <- 0; worst_num <- 0
for (a1 in c(0.01, 0.2, 0.5, 0.8, 0.99)) for (a2 in c(0.01, 0.2, 0.5, 0.8, 0.99))
  for (r in c(0.25, 1, 3)) for (rho0 in c(0.3, 0.8, 0.95, 1.1, 1.5, 4)) {
    hi <- min(1, 1 / rho0)
    opt <- optimize(function(x) loglik(x, a1, a2, r, rho0), c(0, hi), maximum = TRUE, tol = 1e-12)$maximum
    num <- mle_num(a1, a2, r, rho0); cf <- mle_closed(a1, a2, r, rho0)
    worst_opt <- max(worst_opt, abs(opt - cf["p2t"]))
    worst_num <- max(worst_num, abs(num["p2t"] - cf["p2t"]))
  }
cat(sprintf("grid of 450 interior cases: max |optimize - closed form| = %.3g, max |optimize+uniroot - closed form| = %.3g\n",
            worst_opt, worst_num))
check("MLE grid: optimize vs closed form", worst_opt, 0, 1e-7, relative = FALSE)
check("MLE grid: optimize+uniroot vs closed form", worst_num, 0, 1e-12, relative = FALSE)

## Boundary counts: (0,0), (n1,n2), (n1,0), (0,n2), (k,0), (0,k), (n1,k), (k,n2).
worst_b <- 0
for (n1 in c(7, 20)) for (n2 in c(7, 13)) for (rho0 in c(0.5, 0.9, 1.25, 3)) {
  r <- n2 / n1
  for (cell in list(c(0, 0), c(n1, n2), c(n1, 0), c(0, n2), c(3, 0), c(0, 3), c(n1, 3), c(3, n2))) {
    a1 <- cell[1] / n1; a2 <- cell[2] / n2
    num <- mle_num(a1, a2, r, rho0); cf <- mle_closed(a1, a2, r, rho0)
    d <- abs(num["p2t"] - cf["p2t"])
    worst_b <- max(worst_b, d)
    if (d > 1e-12) cat(sprintf("  boundary n=%d/%d x=%d/%d rho0=%g: numerical %.15g closed %.15g\n",
                               n1, n2, cell[1], cell[2], rho0, num["p2t"], cf["p2t"]))
  }
}
cat(sprintf("boundary counts (128 cells): max |numerical - closed form| = %.3g\n", worst_b))
check("MLE boundary counts: numerical vs closed form", worst_b, 0, 1e-12, relative = FALSE)

## Near-double roots: when the two roots of the quadratic (nearly)
## coincide, b^2 - 4ac cancels and the closed form loses half its digits.
## This happens at boundary counts: x2 = n2 with x1/n1 = rho0 (1 + r) - r
## (rho0 < 1), or x1 = n1 with x2/n2 = ((1 + r)/rho0 - 1)/r (rho0 > 1).
## The numerical MLE has no such trouble; its values go to ratio_mle.tsv.
src_mle <- paste("restricted MLE under p1/p2 = rho0 by optimize() on the log-likelihood, polished by",
                 "uniroot() on the score or kept at the end of the interval (script ratio_make.R)")
dr <- data.frame(
  p1   = c(0.5, 1,   1,   0.6, 0.4, 1,   0.5,   0.999, 0.5,       0.51, 0.2),
  p2   = c(1,   0.6, 0.7, 1,   1,   1,   0.999, 0.6,   0.9999999, 1,    0.3),
  r    = c(1,   1,   2,   1,   0.5, 1,   1,     1,     1,         1,    1),
  rho0 = c(0.75, 1.25, 1.25, 0.8, 0.6, 1, 0.75, 1.25,  0.75,      0.75, 1.5))
rows <- list()
for (i in seq_len(nrow(dr))) {
  c0 <- dr[i, ]
  num <- mle_num(c0$p1, c0$p2, c0$r, c0$rho0); cf <- mle_closed(c0$p1, c0$p2, c0$r, c0$rho0)
  cat(sprintf("mle_%02d p1=%g p2=%.10g r=%g rho0=%g: numerical p2t=%.15g, closed form %.15g (error %.3g)\n",
              i, c0$p1, c0$p2, c0$r, c0$rho0, num["p2t"], cf["p2t"], abs(num["p2t"] - cf["p2t"])))
  rows[[i]] <- data.frame(id = sprintf("mle_%02d", i), p1 = c0$p1, p2 = c0$p2, r = c0$r, rho0 = c0$rho0,
    p1_tilde = unname(num["p1t"]), p2_tilde = unname(num["p2t"]),
    closed_form_error = unname(abs(num["p2t"] - cf["p2t"])), source = src_mle)
}
## The score at the numerical MLE: zero inside, and pointing out of the
## interval at an end.
for (i in seq_len(nrow(dr))) {
  c0 <- dr[i, ]; x <- rows[[i]]$p2_tilde; hi <- min(1, 1 / c0$rho0)
  sc <- score(x, c0$p1, c0$p2, c0$r, c0$rho0)
  if (x < hi && abs(sc) > 1e-6) stop("score not zero at mle_", i)
  if (x == hi && sc < -1e-9) stop("score negative at the end, mle_", i)
}
write_tsv(do.call(rbind, rows), "ratio_mle.tsv")

## ---------------------------------------------------------------------------
banner("ratio_n.tsv: sample size")
src_ni <- paste("independent R implementation of Farrington & Manning 1990 (Stat Med 9:1447)",
                "score-test sample size on the ratio scale, restricted MLE by optimize()+uniroot()",
                "on the log-likelihood, script ratio_make.R")
src_eq <- paste("independent R implementation of two one-sided Farrington & Manning 1990 score tests",
                "at 1/M and M, power max(0, P_lo + P_hi - 1), n1 by uniroot(tol = 1e-10), script ratio_make.R")

ni <- data.frame(
  p1    = c(0.10, 0.10, 0.20, 0.08, 0.70, 0.75, 0.40, 0.02, 0.95, 0.30, 0.60),
  p2    = c(0.10, 0.10, 0.25, 0.06, 0.70, 0.70, 0.42, 0.02, 0.93, 0.30, 0.50),
  ratio = c(1,    2,    0.5,  1,    1,    1.5,  3,    1,    0.75, 1,    1),
  rho0  = c(1.5,  1.5,  1.25, 2.0,  0.85, 0.9,  0.8,  3,    0.95, 0.5,  1.3),
  alpha = c(0.025, 0.025, 0.05, 0.025, 0.025, 0.05, 0.01, 0.05, 0.025, 0.1, 0.05),
  power = c(0.8,  0.9,  0.8,  0.85, 0.8,  0.9,  0.8,  0.8,  0.95, 0.7,  0.8))
eq <- data.frame(
  p1    = c(0.30, 0.50, 0.12, 0.80, 0.05, 0.40),
  p2    = c(0.30, 0.48, 0.10, 0.85, 0.05, 0.44),
  ratio = c(1,    2,    1,    0.5,  1.5,  1),
  rho0  = c(1.25, 1.2,  1.5,  1.1,  2,    1.2),
  alpha = c(0.05, 0.025, 0.05, 0.05, 0.025, 0.1),
  power = c(0.8,  0.9,  0.8,  0.85, 0.8,  0.7))

rows <- list()
for (i in seq_len(nrow(ni))) {
  c0 <- ni[i, ]
  n1 <- fm_n1(c0$p1, c0$p2, c0$ratio, c0$rho0, c0$alpha, c0$power)
  m <- mle_num(c0$p1, c0$p2, c0$ratio, c0$rho0)
  id <- sprintf("ni_%02d", i)
  not_near_integer(paste(id, "n1"), n1); not_near_integer(paste(id, "n2"), c0$ratio * n1)
  check(paste(id, "power at n1 is the target"),
        fm_power(c0$p1, c0$p2, n1, c0$ratio * n1, c0$rho0, c0$alpha), c0$power, 1e-12)
  cf <- mle_closed(c0$p1, c0$p2, c0$ratio, c0$rho0)
  check(paste(id, "restricted p2: numerical vs closed form"), unname(m["p2t"]), unname(cf["p2t"]), 1e-12, relative = FALSE)
  rows[[length(rows) + 1]] <- data.frame(id = id, kind = "noninferiority", p1 = c0$p1, p2 = c0$p2,
    ratio = c0$ratio, bound = c0$rho0, alpha = c0$alpha, power = c0$power, n1_star = n1,
    p1_tilde = unname(m["p1t"]), p2_tilde = unname(m["p2t"]), source = src_ni)
}
for (i in seq_len(nrow(eq))) {
  c0 <- eq[i, ]
  n1 <- eq_n1(c0$p1, c0$p2, c0$ratio, c0$rho0, c0$alpha, c0$power)
  id <- sprintf("eq_%02d", i)
  not_near_integer(paste(id, "n1"), n1); not_near_integer(paste(id, "n2"), c0$ratio * n1)
  check(paste(id, "equivalence power at n1 is the target"),
        eq_power(c0$p1, c0$p2, n1, c0$ratio * n1, c0$rho0, c0$alpha), c0$power, 1e-10)
  ## The equivalence size is at least each one-sided size.
  for (b in c(1 / c0$rho0, c0$rho0)) {
    one <- fm_n1(c0$p1, c0$p2, c0$ratio, b, c0$alpha, c0$power)
    if (!(one <= n1)) stop(id, ": one-sided n above equivalence n")
  }
  rows[[length(rows) + 1]] <- data.frame(id = id, kind = "equivalence", p1 = c0$p1, p2 = c0$p2,
    ratio = c0$ratio, bound = c0$rho0, alpha = c0$alpha, power = c0$power, n1_star = n1,
    p1_tilde = NA, p2_tilde = NA, source = src_eq)
}
ntab <- do.call(rbind, rows)
print(ntab[, c("id", "p1", "p2", "ratio", "bound", "alpha", "power", "n1_star", "p1_tilde", "p2_tilde")], row.names = FALSE)
write_tsv(ntab, "ratio_n.tsv")

## ---------------------------------------------------------------------------
banner("ratio_power.tsv: power at given sizes")
src_nip <- paste("independent R implementation of Farrington & Manning 1990 (Stat Med 9:1447)",
                 "one-sided score-test power pnorm((s (p1 - rho0 p2) sqrt(n1) - qnorm(1-alpha) sqrt(V0)) / sqrt(V1)),",
                 "restricted MLE by optimize()+uniroot(), script ratio_make.R")
src_eqp <- paste("independent R implementation of two one-sided Farrington & Manning 1990 score tests",
                 "at 1/M and M, max(0, P_lo + P_hi - 1), script ratio_make.R")
nip <- data.frame(
  p1   = c(0.10, 0.10, 0.70, 0.75, 0.15, 0.20, 0.60, 0.05, 0.90, 0.30, 0.50, 0.14),
  p2   = c(0.10, 0.10, 0.70, 0.70, 0.10, 0.10, 0.80, 0.04, 0.92, 0.35, 0.50, 0.005),
  n1   = c(300,  200,  250,  120,  500,  500,  400,  30,   1000, 80,   5,    3),
  n2   = c(300,  400,  250,  180,  500,  500,  400,  45,   800,  60,   5,    15),
  rho0 = c(1.5,  1.5,  0.85, 0.9,  1.5,  1.5,  0.85, 2.5,  0.95, 0.6,  0.7,  1.05),
  alpha = c(0.025, 0.025, 0.05, 0.025, 0.025, 0.025, 0.05, 0.05, 0.01, 0.1, 0.05, 0.025),
  note = c("", "", "", "", "at the margin", "null side", "null side", "small n", "", "", "tiny n",
           "null side, tiny n, V1 > V0: above alpha"))
eqp <- data.frame(
  p1   = c(0.30, 0.50, 0.12, 0.20, 0.40, 0.80, 0.10),
  p2   = c(0.30, 0.48, 0.10, 0.30, 0.40, 0.85, 0.09),
  n1   = c(500,  300,  2000, 400,  40,   700,  3000),
  n2   = c(500,  600,  2000, 400,  40,   350,  2500),
  rho0 = c(1.25, 1.2,  1.5,  1.25, 1.25, 1.1,  1.3),
  alpha = c(0.05, 0.025, 0.05, 0.05, 0.05, 0.05, 0.025),
  note = c("", "", "", "outside the interval", "floored at 0", "", ""))
rows <- list()
for (i in seq_len(nrow(nip))) {
  c0 <- nip[i, ]
  pw <- fm_power(c0$p1, c0$p2, c0$n1, c0$n2, c0$rho0, c0$alpha)
  rows[[length(rows) + 1]] <- data.frame(id = sprintf("nip_%02d", i), kind = "noninferiority",
    p1 = c0$p1, p2 = c0$p2, n1 = c0$n1, n2 = c0$n2, bound = c0$rho0, alpha = c0$alpha,
    power = pw, note = c0$note, source = src_nip)
}
## At the margin the restricted MLE is the truth, V0 = V1, and the power is alpha.
check("nip_05 at the margin: power is alpha", rows[[5]]$power, 0.025, 1e-9)
## Beyond the margin the formula gives less than alpha once the effect term
## dominates; with V1 > V0 and tiny n it can give more (nip_12).
for (k in c(6, 7)) if (!(rows[[k]]$power < nip$alpha[k])) stop("null-side power not below alpha")
m12 <- mle_num(0.14, 0.005, 5, 1.05)
cat(sprintf("nip_12: V0 = %.6g, V1 = %.6g, power %.6g > alpha 0.025\n",
            v_null(0.14, 0.005, 5, 1.05), v_alt(0.14, 0.005, 5, 1.05), rows[[12]]$power))
if (!(rows[[12]]$power > 0.025)) stop("nip_12 expected above alpha")
for (i in seq_len(nrow(eqp))) {
  c0 <- eqp[i, ]
  pw <- eq_power(c0$p1, c0$p2, c0$n1, c0$n2, c0$rho0, c0$alpha)
  rows[[length(rows) + 1]] <- data.frame(id = sprintf("eqp_%02d", i), kind = "equivalence",
    p1 = c0$p1, p2 = c0$p2, n1 = c0$n1, n2 = c0$n2, bound = c0$rho0, alpha = c0$alpha,
    power = pw, note = c0$note, source = src_eqp)
}
ptab <- do.call(rbind, rows)
ptab$note[ptab$note == ""] <- "NA"
print(ptab[, c("id", "p1", "p2", "n1", "n2", "bound", "alpha", "power", "note")], row.names = FALSE)
write_tsv(ptab, "ratio_power.tsv")

## ---------------------------------------------------------------------------
banner("ratio_table_power.tsv: exact power of the score test's rejection table")
## For each count pair the score statistic is computed with the numerical
## restricted MLE of the observed proportions; the test rejects when
## s z > qnorm(1 - alpha) (one-sided) or both one-sided tests reject
## (equivalence). A zero standard error happens only at x1 = x2 = 0, where
## the estimate p1hat - rho0 p2hat is 0: no rejection. The exact power is
## sum over (x1, x2) of dbinom(x1, n1, p1) dbinom(x2, n2, p2) [reject].
zscore <- function(x1, n1, x2, n2, rho0) {
  a1 <- x1 / n1; a2 <- x2 / n2
  m <- mle_num(a1, a2, n2 / n1, rho0)
  v <- m["p1t"] * (1 - m["p1t"]) / n1 + rho0^2 * m["p2t"] * (1 - m["p2t"]) / n2
  unname(c(num = a1 - rho0 * a2, v = v))
}
reject_ni <- function(x1, n1, x2, n2, rho0, za) {
  nv <- zscore(x1, n1, x2, n2, rho0); s <- side(rho0)
  if (nv[2] <= 0) return(list(rej = s * nv[1] > 0, gap = Inf))
  z <- s * nv[1] / sqrt(nv[2])
  list(rej = z > za, gap = abs(z - za))
}
src_tp <- paste("exact power sum(dbinom(x1, n1, p1) * dbinom(x2, n2, p2) * reject) with an independent R",
                "implementation of the Farrington & Manning 1990 score test (restricted MLE of the observed",
                "proportions by optimize()+uniroot()), script ratio_make.R")
tp <- data.frame(
  kind = c("noninferiority", "noninferiority", "noninferiority", "noninferiority", "equivalence", "equivalence"),
  n1   = c(40,  60,   25,  50,   150,  70),
  n2   = c(40,  90,   35,  30,   150,  100),
  bound = c(1.5, 0.8, 2.5, 0.6,  1.5,  1.5),
  alpha = c(0.05, 0.025, 0.05, 0.1, 0.05, 0.05),
  p1   = c(0.15, 0.55, 0.10, 0.45, 0.40, 0.30),
  p2   = c(0.15, 0.50, 0.08, 0.50, 0.40, 0.28))
rows <- list()
min_gap <- Inf
for (i in seq_len(nrow(tp))) {
  c0 <- tp[i, ]
  za <- qnorm(1 - c0$alpha)
  pw <- 0; pnull <- 0; count <- 0L
  for (x1 in 0:c0$n1) for (x2 in 0:c0$n2) {
    if (c0$kind == "noninferiority") {
      d <- reject_ni(x1, c0$n1, x2, c0$n2, c0$bound, za)
      rej <- d$rej; gap <- d$gap
    } else {
      lo <- reject_ni(x1, c0$n1, x2, c0$n2, 1 / c0$bound, za)
      up <- reject_ni(x1, c0$n1, x2, c0$n2, c0$bound, za)
      rej <- lo$rej && up$rej; gap <- min(lo$gap, up$gap)
    }
    min_gap <- min(min_gap, gap)
    if (rej) {
      count <- count + 1L
      pw <- pw + dbinom(x1, c0$n1, c0$p1) * dbinom(x2, c0$n2, c0$p2)
    }
  }
  ## The normal-approximation power for comparison (not written).
  approx <- if (c0$kind == "noninferiority")
    fm_power(c0$p1, c0$p2, c0$n1, c0$n2, c0$bound, c0$alpha) else
    eq_power(c0$p1, c0$p2, c0$n1, c0$n2, c0$bound, c0$alpha)
  cat(sprintf("tp_%02d %s n %d/%d bound %g alpha %g p %g/%g: %d rejecting cells, exact power %.15g (normal approximation %.6f)\n",
              i, c0$kind, c0$n1, c0$n2, c0$bound, c0$alpha, c0$p1, c0$p2, count, pw, approx))
  rows[[length(rows) + 1]] <- data.frame(id = sprintf("tp_%02d", i), kind = c0$kind, n1 = c0$n1, n2 = c0$n2,
    bound = c0$bound, alpha = c0$alpha, p1 = c0$p1, p2 = c0$p2, count = count, power = pw, source = src_tp)
}
cat(sprintf("smallest |z - z_alpha| over all cells: %.3g (no decision is a near tie)\n", min_gap))
if (min_gap < 1e-8) stop("a cell is within 1e-8 of the critical value")
write_tsv(do.call(rbind, rows), "ratio_table_power.tsv")

cat(sprintf("\n%d checks passed\n", n_checks))
