## rates_make.R -- reference values for power/rates.go and power/ratesim.go
## (two event rates in a person-time cohort: the Wald test of the log rate
## ratio, Poisson or negative-binomial counts).
##
## Run from this folder:   Rscript rates_make.R > rates_make.out
## (about a minute)
##
## Only base R (stats) and MASS (for the negative.binomial glm family) are
## used. The formulas are written out below from their statement in the
## papers, not from the Go code:
##
##   mu0 = lambda0 * t, mu1 = RR * mu0 (expected events per participant)
##   Var(log of a group's mean count) = (1/mu + kappa)/n   (delta method)
##   V per exposed participant = (1/mu1 + kappa) + (1/mu0 + kappa)/ratio
##   n1 = (qnorm(1 - alpha/sides) + qnorm(power))^2 * V / log(RR)^2
##   power(n1, n2) = pnorm(|log RR| / sqrt(V(n1, n2)) - qnorm(1 - alpha/sides))
##
## (Breslow & Day 1987, IARC vol. II, ch. 7, Poisson; Zhu & Lakkis 2014,
## Stat Med 33:376-387, negative binomial, variance under the null taken
## equal to the alternative's.) Every variance is re-checked against the
## inverse Fisher information of a log-link GLM fitted by glm() (Poisson, or
## MASS::negative.binomial(theta = 1/kappa)) to the expected counts: the
## script stops if they disagree.
##
## The scenarios are invented numbers; nothing was taken from any course,
## book or program. No sample-size or power program was used or consulted.
##
## Writes:
##   rates_n.tsv      n1 (unrounded) over the grid, two- and one-sided
##   rates_power.tsv  power at given n1, n2 (grid and extreme values)
##   rates_peak.tsv   the rate ratio below 1 of highest power at given n1, n2
##   rates_bins.tsv   bins and probabilities of Poisson, gamma and negative
##                    binomial distributions (ppois, pgamma, pnbinom)
##   rates_logpmf.tsv    dpois(k, mu, log = TRUE) at large k and mu
##   rates_wald.tsv   the negative-binomial Wald statistic on invented data
##   rates_sim.tsv    Monte-Carlo power of the Wald test, simulated with
##                    rpois / rnbinom per participant

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(MASS))
cat("R.version.string:", R.version.string, "\n")
cat("MASS version:", as.character(packageVersion("MASS")), "\n\n")
fmt <- function(x) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA", ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"), sprintf("%.15g", x)))
}
write_tsv <- function(tab, file) {
  write.table(tab, file, sep = "\t", quote = FALSE, row.names = FALSE)
  cat(sprintf("wrote %s (%d rows)\n", file, nrow(tab)))
}

n_checks <- 0
check <- function(what, got, want, tol) {
  err <- abs(got - want) / max(abs(want), 1e-300)
  if (!(err <= tol)) stop(sprintf("CHECK FAILED %s: %.17g vs %.17g", what, got, want))
  n_checks <<- n_checks + 1
}

## ---- 1. The closed forms -------------------------------------------------

zcrit <- function(alpha, sides) qnorm(alpha / sides, lower.tail = FALSE)
V_unit <- function(lambda0, RR, t, kappa, ratio) {
  mu0 <- lambda0 * t; mu1 <- RR * mu0
  (1 / mu1 + kappa) + (1 / mu0 + kappa) / ratio
}
V_n <- function(lambda0, RR, t, kappa, n1, n2) {
  mu0 <- lambda0 * t; mu1 <- RR * mu0
  (1 / mu1 + kappa) / n1 + (1 / mu0 + kappa) / n2
}
n1_star <- function(lambda0, RR, t, kappa, ratio, alpha, sides, power) {
  (zcrit(alpha, sides) + qnorm(power))^2 * V_unit(lambda0, RR, t, kappa, ratio) / log(RR)^2
}
power_at <- function(lambda0, RR, t, kappa, n1, n2, alpha, sides) {
  pnorm(abs(log(RR)) / sqrt(V_n(lambda0, RR, t, kappa, n1, n2)) - zcrit(alpha, sides))
}

## The same variance from glm: a log-link GLM with one row per group, the
## group's expected count as the response (so the fit is exact), prior
## weights n1 = 1 and n2 = ratio, and offset log(t); cov.unscaled[2, 2] is
## the inverse Fisher information of the log rate ratio (working weights
## mu/(1 + kappa mu) for the negative binomial, mu for the Poisson). The
## fit starts at the exact solution (mustart = y), so IRLS stops there.
V_glm <- function(lambda0, RR, t, kappa, ratio) {
  mu0 <- lambda0 * t; mu1 <- RR * mu0
  d <- data.frame(y = c(mu1, mu0), exposed = c(1, 0), w = c(1, ratio), t = t)
  fam <- if (kappa == 0) poisson() else negative.binomial(theta = 1 / kappa)
  fit <- suppressWarnings(glm(y ~ exposed + offset(log(t)), family = fam, data = d, weights = w,
                              mustart = y, control = glm.control(epsilon = 1e-14, maxit = 100)))
  summary(fit)$cov.unscaled[2, 2]
}

grid <- expand.grid(lambda0 = c(0.01, 0.1, 1), RR = c(0.5, 0.7, 1.5, 2), t = c(1, 2.5),
                    ratio = c(1, 2), kappa = c(0, 0.5, 2))
tests <- list(list(alpha = 0.05, sides = 2), list(alpha = 0.025, sides = 1))

nrows <- list()
for (i in seq_len(nrow(grid))) {
  g <- grid[i, ]
  v <- V_unit(g$lambda0, g$RR, g$t, g$kappa, g$ratio)
  vg <- V_glm(g$lambda0, g$RR, g$t, g$kappa, g$ratio)
  check(sprintf("glm variance row %d", i), vg, v, 1e-9)
  for (ts in tests) for (pw in c(0.8, 0.9)) {
    n <- n1_star(g$lambda0, g$RR, g$t, g$kappa, g$ratio, ts$alpha, ts$sides, pw)
    nrows[[length(nrows) + 1]] <- data.frame(
      id = sprintf("n_%d_a%g_s%d_p%g", i, ts$alpha, ts$sides, pw),
      lambda0 = fmt(g$lambda0), rr = fmt(g$RR), t = fmt(g$t), ratio = fmt(g$ratio),
      kappa = fmt(g$kappa), alpha = fmt(ts$alpha), sides = ts$sides, power = fmt(pw),
      v = fmt(v), v_glm = fmt(vg), n1 = fmt(n),
      source = sprintf(paste0("(qnorm(%g/%d, lower.tail=FALSE) + qnorm(%g))^2 * V / log(%g)^2, ",
                              "V = (1/mu1 + %g) + (1/mu0 + %g)/%g, mu0 = %g*%g, mu1 = %g*mu0; ",
                              "v_glm = summary(glm(..., family = %s))$cov.unscaled[2,2]; rates_make.R"),
                       ts$alpha, ts$sides, pw, g$RR, g$kappa, g$kappa, g$ratio, g$lambda0, g$t, g$RR,
                       if (g$kappa == 0) "poisson()" else sprintf("negative.binomial(theta = %g)", 1 / g$kappa)),
      stringsAsFactors = FALSE)
  }
}
ntab <- do.call(rbind, nrows)

## Power at given sizes: at the solved size rounded up (n1 = ceiling(n1*),
## n2 = ceiling(ratio n1) + 5, so n2 is not ratio n1), and at n1 = 120,
## n2 = 95 for every grid point; then extreme values of lambda0 t and RR.
prows <- list()
add_power <- function(id, lambda0, RR, t, kappa, n1, n2, alpha, sides) {
  p <- power_at(lambda0, RR, t, kappa, n1, n2, alpha, sides)
  prows[[length(prows) + 1]] <<- data.frame(
    id = id, lambda0 = fmt(lambda0), rr = fmt(RR), t = fmt(t), kappa = fmt(kappa),
    n1 = fmt(n1), n2 = fmt(n2), alpha = fmt(alpha), sides = sides,
    v = fmt(V_n(lambda0, RR, t, kappa, n1, n2)), power = fmt(p),
    source = sprintf(paste0("pnorm(abs(log(%g)) / sqrt((1/mu1 + %g)/%s + (1/mu0 + %g)/%s) - ",
                            "qnorm(%g/%d, lower.tail=FALSE)), mu0 = %g*%g, mu1 = %g*mu0; rates_make.R"),
                     RR, kappa, fmt(n1), kappa, fmt(n2), alpha, sides, lambda0, t, RR),
    stringsAsFactors = FALSE)
}
for (i in seq_len(nrow(grid))) {
  g <- grid[i, ]
  for (ts in tests) {
    n <- n1_star(g$lambda0, g$RR, g$t, g$kappa, g$ratio, ts$alpha, ts$sides, 0.8)
    n1 <- ceiling(n); n2 <- ceiling(g$ratio * n1) + 5
    add_power(sprintf("p_%d_a%g_s%d_nstar", i, ts$alpha, ts$sides), g$lambda0, g$RR, g$t, g$kappa,
              n1, n2, ts$alpha, ts$sides)
    add_power(sprintf("p_%d_a%g_s%d_fixed", i, ts$alpha, ts$sides), g$lambda0, g$RR, g$t, g$kappa,
              120, 95, ts$alpha, ts$sides)
  }
}
## Extremes: expected events per participant from 1e-9 to 1e6, RR from
## 0.001 to 1000, fractional sizes.
ext <- expand.grid(mu0 = c(1e-9, 1e-3, 1, 1e6), RR = c(0.001, 0.9, 1.0001, 1000), kappa = c(0, 2))
for (i in seq_len(nrow(ext))) {
  e <- ext[i, ]
  add_power(sprintf("x_%d", i), e$mu0 / 4, e$RR, 4, e$kappa, 1e4 + 0.5, 2.5e4, 0.05, 2)
}
## The example of power/rates_example_test.go (invented): 0.8 new cases per
## 100 person-years, RR 1.5, 3 years each, kappa 0.4, 1:2 allocation.
add_power("example_power", 0.008, 1.5, 3, 0.4, 2500, 5000, 0.05, 2)
ptab <- do.call(rbind, prows)
write_tsv(ptab, "rates_power.tsv")
ex <- n1_star(0.008, 1.5, 3, 0.4, 2, 0.05, 2, 0.9)
cat(sprintf("example: n1* = %.15g (90%% power, two-sided 0.05, ratio 2)\n", ex))
ntab <- rbind(ntab, data.frame(
  id = "example_n", lambda0 = fmt(0.008), rr = fmt(1.5), t = fmt(3), ratio = fmt(2), kappa = fmt(0.4),
  alpha = fmt(0.05), sides = 2, power = fmt(0.9), v = fmt(V_unit(0.008, 1.5, 3, 0.4, 2)),
  v_glm = fmt(V_glm(0.008, 1.5, 3, 0.4, 2)), n1 = fmt(ex),
  source = "n1_star(0.008, 1.5, 3, 0.4, 2, 0.05, 2, 0.9) as the grid; rates_make.R", stringsAsFactors = FALSE))
write_tsv(ntab, "rates_n.tsv")

## ---- 2. Where power peaks below RR = 1 ------------------------------------
## Power is pnorm(x / sqrt(V) - z) with x = -log RR, so it is highest where
## g(x) = x^2 / V(x) is; V(x) = (exp(x)/mu0 + kappa)/n1 + (1/mu0 + kappa)/n2.
## The root of g'(x) (symbolic derivative by R's D()) by uniroot, checked
## against optimize() on |log RR|/sqrt(V), the argument of pnorm (the power
## itself saturates at 1 where the peak is high).
gexpr <- quote(x^2 / ((exp(x) / mu0 + kappa) / n1 + (1 / mu0 + kappa) / n2))
dg <- D(gexpr, "x")
cat("d/dx of", deparse(gexpr), "=\n  ", deparse(dg), "\n")
krows <- list()
peaks <- expand.grid(mu0 = c(0.01, 0.3, 5, 200), kappa = c(0, 0.5, 3), n = list(c(100, 100), c(50, 400)))
## and the example of power/rates_example_test.go: mu0 = 0.008 * 3, kappa 0.4, 2500 and 5000.
peaks <- rbind(peaks, data.frame(mu0 = 0.024, kappa = 0.4, n = I(list(c(2500, 5000)))))
for (i in seq_len(nrow(peaks))) {
  mu0 <- peaks$mu0[i]; kappa <- peaks$kappa[i]; n1 <- peaks$n[[i]][1]; n2 <- peaks$n[[i]][2]
  env <- list(mu0 = mu0, kappa = kappa, n1 = n1, n2 = n2)
  f <- function(x) eval(dg, c(env, list(x = x)))
  hi <- 2; while (f(hi) > 0) hi <- hi * 2
  r <- uniroot(f, c(1, hi), tol = 1e-15)$root
  o <- optimize(function(lr) abs(lr) / sqrt(V_n(mu0, exp(lr), 1, kappa, n1, n2)), c(-60, 0),
                maximum = TRUE, tol = 1e-12)$maximum
  check(sprintf("peak %d optimize", i), -o, r, 1e-5)
  krows[[length(krows) + 1]] <- data.frame(
    id = if (i == nrow(peaks)) "peak_example" else sprintf("peak_%d", i), mu0 = fmt(mu0), kappa = fmt(kappa), n1 = n1, n2 = n2,
    rr = fmt(exp(-r)), source = sprintf(paste0("exp(-uniroot(D(x^2/V(x), 'x'), tol=1e-15)$root), ",
                                               "mu0=%g kappa=%g n1=%d n2=%d; optimize() agrees to %.1g; rates_make.R"),
                                        mu0, kappa, n1, n2, abs(-o - r)),
    stringsAsFactors = FALSE)
}
write_tsv(do.call(rbind, krows), "rates_peak.tsv")

## ---- 3. Distributions of the samplers --------------------------------------
## Bins (lo, hi] on whole numbers (upper edges `hi`; the last bin is open),
## with their probabilities from ppois / pnbinom; for the gamma, 20
## equiprobable bins with edges qgamma((1:19)/20, ...). Small supports get
## one bin per value up to the 0.9999 quantile; large ones 50 quantile bins.
brows <- list()
add_bins <- function(id, dist, mu, kappa, edges, cdf, src) {
  p <- diff(c(0, cdf(edges), 1))
  p[length(p)] <- 1 - cdf(edges[length(edges)])
  brows[[length(brows) + 1]] <<- data.frame(
    id = id, dist = dist, mu = fmt(mu), kappa = fmt(kappa), bin = seq_along(p),
    hi = fmt(c(edges, Inf)), prob = fmt(p), source = src, stringsAsFactors = FALSE)
}
count_edges <- function(q) {
  lo <- q(1e-4); hi <- q(0.9999)
  if (hi - lo <= 200) return(0:hi)
  unique(q((1:49) / 50))
}
for (mu in c(0.3, 4, 9.99, 10, 37.5, 1000, 1e6, 1e12)) {
  e <- count_edges(function(p) qpois(p, mu))
  add_bins(sprintf("pois_%g", mu), "poisson", mu, 0, e, function(x) ppois(x, mu),
           sprintf("ppois(hi, %g) differences (upper tail ppois(lower.tail=FALSE)); rates_make.R", mu))
}
for (pr in list(c(0.7, 0.5), c(3, 2), c(18, 0.1), c(1, 10), c(500, 0.01), c(2000, 5), c(1e-4, 0.3))) {
  mu <- pr[1]; kappa <- pr[2]
  e <- count_edges(function(p) qnbinom(p, size = 1 / kappa, mu = mu))
  add_bins(sprintf("nb_%g_%g", mu, kappa), "negbin", mu, kappa, e,
           function(x) pnbinom(x, size = 1 / kappa, mu = mu),
           sprintf("pnbinom(hi, size = 1/%g, mu = %g) differences; rates_make.R", kappa, mu))
  e <- qgamma((1:19) / 20, shape = 1 / kappa, scale = kappa * mu)
  add_bins(sprintf("gamma_%g_%g", mu, kappa), "gamma", mu, kappa, e,
           function(x) pgamma(x, shape = 1 / kappa, scale = kappa * mu),
           sprintf("qgamma((1:19)/20, shape = 1/%g, scale = %g*%g), pgamma differences; rates_make.R", kappa, kappa, mu))
}
## Log-probabilities of the Poisson, where the terms k log mu, mu and
## lgamma(k + 1) are each far larger than their sum.
lp <- data.frame(k = c(0, 1, 7, 10, 14, 15, 16, 40, 1e4 + 37, 1e12 + 1e6, 3e15, 1e6),
                 mu = c(12, 12, 12, 12, 15.5, 15.5, 15.5, 33.3, 1e4, 1e12, 3e15 - 2e7, 1e6 * 1.5))
write_tsv(data.frame(k = fmt(lp$k), mu = fmt(lp$mu), logp = fmt(dpois(lp$k, lp$mu, log = TRUE)),
                     source = sprintf("dpois(%s, %s, log = TRUE)", fmt(lp$k), fmt(lp$mu))),
          "rates_logpmf.tsv")
btab <- do.call(rbind, brows)
write_tsv(btab, "rates_bins.tsv")

## ---- 4. Simulated power of the Wald test -----------------------------------
## Counts per participant: rpois(n, mu) or rnbinom(n, size = 1/kappa, mu).
## Poisson: z = log((Y1/n1)/(Y0/n0)) / sqrt(1/Y1 + 1/Y0), Y the group totals.
## Negative binomial: with ybar and s2 = var(y) of each group,
##   kappa_hat = max(0, (n1 (s2_1 - ybar1) + n0 (s2_0 - ybar0)) / (n1 ybar1^2 + n0 ybar0^2))
##   z = log(ybar1/ybar0) / sqrt((1/ybar1 + kappa_hat)/n1 + (1/ybar0 + kappa_hat)/n0)
## A replicate in which a group has no event does not reject (z = NA).
## Two-sided rejects when |z| > qnorm(1 - alpha/2); one-sided when
## z > qnorm(1 - alpha) (dir +1) or z < -qnorm(1 - alpha) (dir -1).
sim_z <- function(n1, n0, mu1, mu0, kappa) {
  if (kappa == 0) {
    y1 <- sum(rpois(n1, mu1)); y0 <- sum(rpois(n0, mu0))
    if (y1 == 0 || y0 == 0) return(NA_real_)
    return(log((y1 / n1) / (y0 / n0)) / sqrt(1 / y1 + 1 / y0))
  }
  a <- rnbinom(n1, size = 1 / kappa, mu = mu1); b <- rnbinom(n0, size = 1 / kappa, mu = mu0)
  m1 <- mean(a); m0 <- mean(b)
  if (m1 == 0 || m0 == 0) return(NA_real_)
  k <- max(0, (n1 * (var(a) - m1) + n0 * (var(b) - m0)) / (n1 * m1^2 + n0 * m0^2))
  log(m1 / m0) / sqrt((1 / m1 + k) / n1 + (1 / m0 + k) / n0)
}
scen <- list(
  list(id = "pois_equal", lambda0 = 0.1, RR = 1.5, t = 2, kappa = 0, n1 = 400, n2 = 400, alpha = 0.05, seed = 201, reps = 20000),
  list(id = "pois_unequal", lambda0 = 0.05, RR = 0.6, t = 3, kappa = 0, n1 = 250, n2 = 500, alpha = 0.05, seed = 202, reps = 20000),
  list(id = "pois_sparse", lambda0 = 0.002, RR = 3, t = 1, kappa = 0, n1 = 1000, n2 = 1000, alpha = 0.05, seed = 203, reps = 20000),
  list(id = "nb_equal", lambda0 = 0.5, RR = 1.4, t = 1, kappa = 0.5, n1 = 300, n2 = 300, alpha = 0.05, seed = 204, reps = 20000),
  list(id = "nb_unequal", lambda0 = 2, RR = 0.75, t = 1.5, kappa = 2, n1 = 200, n2 = 400, alpha = 0.05, seed = 205, reps = 20000),
  list(id = "nb_large_mean", lambda0 = 6, RR = 1.2, t = 2.5, kappa = 0.1, n1 = 60, n2 = 60, alpha = 0.05, seed = 206, reps = 20000),
  list(id = "example_sim", lambda0 = 0.008, RR = 1.5, t = 3, kappa = 0, n1 = 2000, n2 = 4000, alpha = 0.05, seed = 209, reps = 20000),
  list(id = "pois_null", lambda0 = 1, RR = 1, t = 5, kappa = 0, n1 = 1000, n2 = 1000, alpha = 0.05, seed = 207, reps = 100000),
  list(id = "nb_null", lambda0 = 2, RR = 1, t = 1, kappa = 0.5, n1 = 500, n2 = 500, alpha = 0.05, seed = 208, reps = 100000)
)
## The negative-binomial Wald statistic of sim_z on invented data sets,
## for the unit test of the estimator (the counts are written out).
set.seed(210)
wrows <- list()
wdata <- list(
  list(id = "typed", a = c(0, 3, 1, 0, 7, 2, 0, 0, 4, 1), b = c(1, 0, 0, 2, 0, 1, 0, 0)),
  list(id = "underdispersed", a = c(2, 3, 2, 3, 2, 3), b = c(1, 1, 2, 1, 1, 2, 1)),
  list(id = "drawn", a = rnbinom(150, size = 1 / 0.8, mu = 2.5), b = rnbinom(90, size = 1 / 0.8, mu = 1.2)),
  list(id = "large", a = rnbinom(400, size = 1 / 0.05, mu = 800), b = rnbinom(300, size = 1 / 0.05, mu = 1000)))
for (w in wdata) {
  n1 <- length(w$a); n0 <- length(w$b); m1 <- mean(w$a); m0 <- mean(w$b)
  num <- n1 * (var(w$a) - m1) + n0 * (var(w$b) - m0)
  k <- max(0, num / (n1 * m1^2 + n0 * m0^2))
  v <- (1 / m1 + k) / n1 + (1 / m0 + k) / n0
  wrows[[length(wrows) + 1]] <- data.frame(
    id = w$id, y1 = paste(w$a, collapse = ","), y0 = paste(w$b, collapse = ","),
    kappa_hat = fmt(k), l = fmt(log(m1 / m0)), v = fmt(v), z = fmt(log(m1 / m0) / sqrt(v)),
    source = "mean, var (unbiased) and the formulas of sim_z; rates_make.R", stringsAsFactors = FALSE)
  cat(sprintf("wald %s: kappa_hat %.6g, z %.6g\n", w$id, k, log(m1 / m0) / sqrt(v)))
}
write_tsv(do.call(rbind, wrows), "rates_wald.tsv")

srows <- list()
for (s in scen) {
  set.seed(s$seed)
  t0 <- proc.time()[["elapsed"]]
  mu0 <- s$lambda0 * s$t; mu1 <- s$RR * mu0
  z <- vapply(seq_len(s$reps), function(i) sim_z(s$n1, s$n2, mu1, mu0, s$kappa), 0)
  c2 <- qnorm(1 - s$alpha / 2); c1 <- qnorm(1 - s$alpha)
  zz <- ifelse(is.na(z), 0, z)
  rej <- list(list(sides = 2, dir = 0, k = sum(abs(zz) > c2)),
              list(sides = 1, dir = 1, k = sum(zz > c1)),
              list(sides = 1, dir = -1, k = sum(zz < -c1)))
  cat(sprintf("%s: %d replicates in %.0f s, %d with a group without events; closed-form power (two-sided, opposite tail left out) %.5f\n",
              s$id, s$reps, proc.time()[["elapsed"]] - t0, sum(is.na(z)),
              power_at(s$lambda0, s$RR, s$t, s$kappa, s$n1, s$n2, s$alpha, 2)))
  src <- sprintf(paste0("set.seed(%d); %d replicates of sim_z(n1=%d, n0=%d, mu1=%s, mu0=%s, kappa=%g) ",
                        "(%s per participant); rates_make.R"),
                 s$seed, s$reps, s$n1, s$n2, fmt(mu1), fmt(mu0), s$kappa,
                 if (s$kappa == 0) "rpois" else sprintf("rnbinom(size = 1/%g, mu)", s$kappa))
  for (r in rej) {
    p <- r$k / s$reps; se <- sqrt(p * (1 - p) / s$reps)
    line <- sprintf("  alpha %g sides %d dir %+d: %d rejections, share %.5f (SE %.5f)", s$alpha, r$sides, r$dir, r$k, p, se)
    if (s$RR == 1) {
      lev <- s$alpha; se0 <- sqrt(lev * (1 - lev) / s$reps)
      line <- sprintf("%s; level %g, (share - level)/SE = %+.2f", line, lev, (p - lev) / se0)
    }
    cat(line, "\n")
    srows[[length(srows) + 1]] <- data.frame(
      id = sprintf("%s_s%d_d%+d", s$id, r$sides, r$dir), lambda0 = fmt(s$lambda0), rr = fmt(s$RR),
      t = fmt(s$t), kappa = fmt(s$kappa), n1 = s$n1, n2 = s$n2, alpha = fmt(s$alpha),
      sides = r$sides, dir = r$dir, reps = s$reps, rejections = r$k, share = fmt(p), se = fmt(se),
      source = src, stringsAsFactors = FALSE)
  }
}
write_tsv(do.call(rbind, srows), "rates_sim.tsv")
cat(sprintf("\n%d checks passed\n", n_checks))
