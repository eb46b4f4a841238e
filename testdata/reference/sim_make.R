## sim_make.R -- reference values for the Monte-Carlo engine of power/:
## the samplers (power/sample.go) and the simulation models
## (power/simmodels.go).
##
## Run from this folder:   Rscript sim_make.R > sim_make.out
##
## Writes sim_pmf.tsv, sim_chisq_bins.tsv, sim_gof_crit.tsv, sim_binary.tsv,
## sim_means.tsv, sim_cluster.tsv, sim_wilson.tsv.
##
## Only base R `stats` is used: dbinom, lbeta/lchoose, qchisq, qt, pt, pnorm,
## dchisq, integrate, chisq.test, prop.test, fisher.test, t.test,
## power.t.test, rnorm/rchisq/rbeta/rbinom. Everything not a named library
## call is an independent implementation written from the formula stated
## next to it. The script stops if any cross-check fails.

options(digits = 15, width = 140, warn = 1)
cat("R.version.string:", R.version.string, "\n\n")

fmt <- function(x, digits = 15) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA",
         ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"),
                sprintf(paste0("%.", digits, "g"), x)))
}
write_tsv <- function(df, file, digits = 15) {
  out <- as.data.frame(lapply(df, function(col) {
    if (is.numeric(col)) vapply(col, fmt, "", digits = digits) else as.character(col)
  }), stringsAsFactors = FALSE)
  names(out) <- names(df)
  write.table(out, file, sep = "\t", quote = FALSE, row.names = FALSE,
              col.names = TRUE, na = "NA")
  cat(sprintf("wrote %s (%d rows)\n", file, nrow(out)))
}
n_checks <- 0L
check <- function(label, ok, detail = "") {
  cat(sprintf("CHECK %-70s %s %s\n", label, detail, if (isTRUE(ok)) "OK" else "FAIL"))
  if (!isTRUE(ok)) stop("cross-check failed: ", label)
  n_checks <<- n_checks + 1L
}
banner <- function(s) cat("\n====================", s, "====================\n")

## ---------------------------------------------------------------------------
## 1. sim_pmf.tsv -- exact probabilities for the table samplers
## ---------------------------------------------------------------------------
## binom: dbinom(k, n, p). betabinom: the beta-binomial with mean p and
## intra-class correlation icc, a = p (1 - icc)/icc, b = (1 - p)(1 - icc)/icc:
##   P(k) = choose(n, k) B(k + a, n - k + b) / B(a, b)
## computed as exp(lchoose + lbeta - lbeta). Rows with probability below
## 1e-40 are left out (the Go tables drop tails below 1e-25 of the mode).
banner("sim_pmf.tsv")
pmf_rows <- list()
add_pmf <- function(id, dist, n, p, icc) {
  k <- 0:n
  if (dist == "binom") {
    pr <- dbinom(k, n, p)
    src <- sprintf("dbinom(k, %d, %s)", n, fmt(p))
  } else {
    a <- p * (1 - icc) / icc; b <- (1 - p) * (1 - icc) / icc
    pr <- exp(lchoose(n, k) + lbeta(k + a, n - k + b) - lbeta(a, b))
    src <- sprintf("exp(lchoose(%d, k) + lbeta(k + a, %d - k + b) - lbeta(a, b)), a = %s*(1-%s)/%s, b = (1-%s)*(1-%s)/%s",
                   n, n, fmt(p), fmt(icc), fmt(icc), fmt(p), fmt(icc), fmt(icc))
    ## Cross-check: mean n p, variance n p (1 - p) (1 + (n - 1) icc).
    m <- sum(k * pr); v <- sum((k - m)^2 * pr)
    check(sprintf("%s mean", id), abs(m - n * p) < 1e-10 * n, sprintf("mean=%.15g", m))
    check(sprintf("%s variance = n p q (1 + (n-1) icc)", id),
          abs(v / (n * p * (1 - p) * (1 + (n - 1) * icc)) - 1) < 1e-10, sprintf("var=%.15g", v))
  }
  check(sprintf("%s sums to 1", id), abs(sum(pr) - 1) < 1e-12, sprintf("sum=%.17g", sum(pr)))
  keep <- pr >= 1e-40
  pmf_rows[[length(pmf_rows) + 1]] <<- data.frame(id = id, dist = dist, n = n, p = p,
    icc = if (dist == "binom") NA else icc, k = k[keep], prob = pr[keep], source = src,
    stringsAsFactors = FALSE)
}
add_pmf("bin_1_half", "binom", 1, 0.5, 0)
add_pmf("bin_1_low", "binom", 1, 0.001, 0)
add_pmf("bin_1_high", "binom", 1, 0.999, 0)
add_pmf("bin_200_03", "binom", 200, 0.3, 0)
add_pmf("bin_200_low", "binom", 200, 0.002, 0)
add_pmf("bin_200_high", "binom", 200, 0.998, 0)
add_pmf("bin_5000_half", "binom", 5000, 0.5, 0)
add_pmf("bin_5000_low", "binom", 5000, 1e-4, 0)
add_pmf("bin_5000_high", "binom", 5000, 0.9999, 0)
add_pmf("bin_5000_002", "binom", 5000, 0.02, 0)
add_pmf("bb_20_03", "betabinom", 20, 0.3, 0.05)
add_pmf("bb_50_01", "betabinom", 50, 0.1, 0.2)
add_pmf("bb_8_half_u", "betabinom", 8, 0.5, 0.6)
add_pmf("bb_100_002", "betabinom", 100, 0.02, 0.01)
pmf_tab <- do.call(rbind, pmf_rows)
write_tsv(pmf_tab, "sim_pmf.tsv", digits = 17)

## ---------------------------------------------------------------------------
## 2. sim_chisq_bins.tsv -- equiprobable bins of chi-square distributions
## ---------------------------------------------------------------------------
## q = qchisq(j/20, df), j = 1..19: 20 bins of probability 1/20 each.
banner("sim_chisq_bins.tsv")
bins_rows <- list()
for (df in c(0.5, 1, 2.5, 3, 9, 38, 398)) {
  j <- 1:19
  q <- qchisq(j / 20, df)
  bins_rows[[length(bins_rows) + 1]] <- data.frame(df = df, j = j, q = q,
    source = sprintf("qchisq(%d/20, %s)", j, fmt(df)), stringsAsFactors = FALSE)
}
bins_tab <- do.call(rbind, bins_rows)
write_tsv(bins_tab, "sim_chisq_bins.tsv")

## ---------------------------------------------------------------------------
## 3. sim_gof_crit.tsv -- critical values for the goodness-of-fit tests
## ---------------------------------------------------------------------------
## q = qchisq(1 - 1e-6, df), df = 1..1000.
banner("sim_gof_crit.tsv")
gdf <- 1:1000
gof_tab <- data.frame(df = gdf, q = qchisq(1 - 1e-6, gdf),
                      source = sprintf("qchisq(1 - 1e-6, %d)", gdf), stringsAsFactors = FALSE)
write_tsv(gof_tab, "sim_gof_crit.tsv")

## ---------------------------------------------------------------------------
## 4. sim_binary.tsv -- exact power of tests of two binomials by enumeration
## ---------------------------------------------------------------------------
## power = sum over x1 in 0..n1, x2 in 0..n2 of dbinom(x1, n1, p1) *
## dbinom(x2, n2, p2) * reject(x1, x2), where reject is the decision of the
## R test on the table rbind(c(x1, n1 - x1), c(x2, n2 - x2)):
##   chisq      chisq.test(tab, correct = FALSE)$p.value < alpha (two sides);
##              prop.test(c(x1, x2), c(n1, n2), alternative, correct = FALSE)
##              $p.value < alpha (one side; "greater" for dir = +1)
##   chisq-yates chisq.test(tab, correct = TRUE)$p.value < alpha
##   fisher     fisher.test(tab, alternative)$p.value <= alpha
##              ("two.sided"; one side "greater" for dir = +1, "less" for -1)
##   z-unpooled independent R implementation of the Wald z test,
##              z = (p1h - p2h)/sqrt(p1h q1h/n1 + p2h q2h/n2), |z| > qnorm(1 - alpha/2)
##              (0/0 -> no rejection, d/0 -> rejection)
## A table with no events or events only (the tests give NaN) never rejects.
## The script reports the smallest |p - alpha|/alpha over all tables, to show
## that no decision depends on how p = alpha is treated.
banner("sim_binary.tsv")
decide_p <- function(test, x1, n1, x2, n2, sides, dir) {
  tab <- rbind(c(x1, n1 - x1), c(x2, n2 - x2))
  alt <- if (sides == 2) "two.sided" else if (dir > 0) "greater" else "less"
  p <- switch(test,
    "chi-square" = if (sides == 2) suppressWarnings(chisq.test(tab, correct = FALSE)$p.value)
                   else suppressWarnings(prop.test(c(x1, x2), c(n1, n2), alternative = alt, correct = FALSE)$p.value),
    "chi-square-yates" = suppressWarnings(chisq.test(tab, correct = TRUE)$p.value),
    "fisher" = fisher.test(tab, alternative = alt)$p.value,
    "z-unpooled" = {
      p1 <- x1 / n1; p2 <- x2 / n2
      v <- p1 * (1 - p1) / n1 + p2 * (1 - p2) / n2
      z <- if (p1 == p2) 0 else if (v == 0) sign(p1 - p2) * Inf else (p1 - p2) / sqrt(v)
      2 * pnorm(-abs(z))
    })
  p
}
exact_power <- function(test, n1, n2, p1, p2, alpha, sides, dir) {
  pw <- 0; closest <- Inf; nrej <- 0L
  b1 <- dbinom(0:n1, n1, p1); b2 <- dbinom(0:n2, n2, p2)
  for (x1 in 0:n1) for (x2 in 0:n2) {
    if (x1 + x2 == 0 || x1 + x2 == n1 + n2) next
    p <- decide_p(test, x1, n1, x2, n2, sides, dir)
    if (is.na(p)) next
    closest <- min(closest, abs(p - alpha) / alpha)
    rej <- if (test == "fisher") p <= alpha else p < alpha
    if (rej) { pw <- pw + b1[x1 + 1] * b2[x2 + 1]; nrej <- nrej + 1L }
  }
  list(power = pw, closest = closest, nrej = nrej)
}
bin_scen <- list(
  ## id, test, n1, n2, p1, p2, alpha, sides, dir
  list("b_01", "chi-square", 30, 30, 0.5, 0.2, 0.05, 2, 1),
  list("b_02", "chi-square-yates", 40, 25, 0.15, 0.45, 0.05, 2, -1),
  list("b_03", "fisher", 15, 15, 0.6, 0.15, 0.05, 2, 1),
  list("b_04", "chi-square", 50, 60, 0.35, 0.2, 0.025, 1, 1),
  list("b_05", "fisher", 20, 20, 0.1, 0.4, 0.05, 1, -1),
  list("b_06", "chi-square", 200, 200, 0.3, 0.3, 0.05, 2, 1),
  list("b_07", "fisher", 15, 15, 0.3, 0.3, 0.05, 2, 1),
  list("b_08", "z-unpooled", 25, 25, 0.4, 0.15, 0.05, 2, 1),
  list("b_09", "chi-square", 200, 200, 0.3, 0.2, 0.05, 2, 1)
)
bin_rows <- list()
for (s in bin_scen) {
  t0 <- proc.time()[["elapsed"]]
  r <- exact_power(s[[2]], s[[3]], s[[4]], s[[5]], s[[6]], s[[7]], s[[8]], s[[9]])
  src <- if (s[[2]] == "z-unpooled")
    sprintf("independent R implementation of the Wald z test (unpooled variance), enumerated with dbinom(x1, %d, %s) * dbinom(x2, %d, %s); script sim_make.R", s[[3]], fmt(s[[5]]), s[[4]], fmt(s[[6]]))
  else sprintf("sum of dbinom(x1, %d, %s) * dbinom(x2, %d, %s) over tables rejected by %s (sides=%d, dir=%d, alpha=%s); script sim_make.R",
               s[[3]], fmt(s[[5]]), s[[4]], fmt(s[[6]]),
               switch(s[[2]], "chi-square" = if (s[[8]] == 2) "chisq.test(correct=FALSE)" else "prop.test(correct=FALSE)",
                      "chi-square-yates" = "chisq.test(correct=TRUE)", "fisher" = "fisher.test"),
               s[[8]], s[[9]], fmt(s[[7]]))
  cat(sprintf("%s %s n=%d/%d p=%s/%s alpha=%s sides=%d dir=%d -> power=%.15g (%d rejecting tables; min |p-alpha|/alpha = %.3g; %.1fs)\n",
              s[[1]], s[[2]], s[[3]], s[[4]], fmt(s[[5]]), fmt(s[[6]]), fmt(s[[7]]), s[[8]], s[[9]],
              r$power, r$nrej, r$closest, proc.time()[["elapsed"]] - t0))
  check(sprintf("%s no p-value within 1e-6 of alpha", s[[1]]), r$closest > 1e-6)
  bin_rows[[length(bin_rows) + 1]] <- data.frame(id = s[[1]], test = s[[2]], n1 = s[[3]], n2 = s[[4]],
    p1 = s[[5]], p2 = s[[6]], alpha = s[[7]], sides = s[[8]], dir = s[[9]], power = r$power,
    source = src, stringsAsFactors = FALSE)
}
bin_tab <- do.call(rbind, bin_rows)
## Cross-check: for the uncorrected chi-square, chisq.test's decision equals
## the closed-form statistic N (x1 n2 - x2 n1)^2 / (n1 n2 t (N - t)) > qchisq(0.95, 1)
## on every table of b_01.
ok <- TRUE
for (x1 in 0:30) for (x2 in 0:30) {
  t <- x1 + x2; if (t == 0 || t == 60) next
  st <- 60 * (x1 * 30 - x2 * 30)^2 / (30 * 30 * t * (60 - t))
  ok <- ok && ((st > qchisq(0.95, 1)) == (suppressWarnings(chisq.test(rbind(c(x1, 30 - x1), c(x2, 30 - x2)), correct = FALSE)$p.value) < 0.05))
}
check("b_01 chisq.test decisions = closed-form statistic", ok)
write_tsv(bin_tab, "sim_binary.tsv")

## ---------------------------------------------------------------------------
## 5. sim_means.tsv -- power of t tests
## ---------------------------------------------------------------------------
## student/paired/cluster_means with equal groups: stats::power.t.test
## (strict = TRUE counts both tails). student with unequal n: independent R
## implementation, P(T' > c) + P(T' < -c), T' ~ t(n1 + n2 - 2, ncp = diff/se).
## welch, and student with unequal SDs: independent R implementation by
## numerical integration over the two sample variances (below), cross-checked
## against a plain R simulation.
##
## Integration: with u_i = (n_i - 1) s_i^2 / sd_i^2 ~ chisq(n_i - 1), the
## difference of means dh ~ N(diff, tau^2), tau^2 = sd1^2/n1 + sd2^2/n2,
## independent of (u1, u2). Welch: V = s1^2/n1 + s2^2/n2,
## df = V^2/((s1^2/n1)^2/(n1-1) + (s2^2/n2)^2/(n2-1)), h = qt(1 - alpha/sides, df) sqrt(V).
## Student: V = ((n1-1) s1^2 + (n2-1) s2^2)/(n1+n2-2) (1/n1 + 1/n2), df = n1+n2-2.
## Given (u1, u2) the test (statistic (dh - bound)/sqrt(V)) rejects with probability
##   two sides: pnorm((d - h)/tau) + pnorm((-h - d)/tau),  d = diff - bound
##   one side, dir +1: pnorm((d - h)/tau);  dir -1: pnorm((-h - d)/tau)
## and the power is its expectation, integrated with integrate() in
## s_i = sqrt(u_i) (density 2 s dchisq(s^2)), nested.
banner("sim_means.tsv")
cond_power <- function(u1, u2, n1, n2, sd1, sd2, d, alpha, sides, dir, welch) {
  f1 <- n1 - 1; f2 <- n2 - 1
  tau <- sqrt(sd1^2 / n1 + sd2^2 / n2)
  s1 <- sd1^2 * u1 / f1; s2 <- sd2^2 * u2 / f2
  if (welch) {
    v1 <- s1 / n1; v2 <- s2 / n2; V <- v1 + v2
    df <- V^2 / (v1^2 / f1 + v2^2 / f2)
  } else {
    df <- f1 + f2
    V <- (f1 * s1 + f2 * s2) / df * (1 / n1 + 1 / n2)
  }
  h <- qt(1 - alpha / sides, df) * sqrt(V)
  if (sides == 2) pnorm((d - h) / tau) + pnorm((-h - d) / tau)
  else if (dir > 0) pnorm((d - h) / tau) else pnorm((-h - d) / tau)
}
int_power <- function(n1, n2, sd1, sd2, d, alpha, sides, dir, welch) {
  f1 <- n1 - 1; f2 <- n2 - 1
  inner <- function(a) {
    integrate(function(b) cond_power(a^2, b^2, n1, n2, sd1, sd2, d, alpha, sides, dir, welch) *
                2 * b * dchisq(b^2, f2), 0, Inf, rel.tol = 1e-11, subdivisions = 1000L)$value
  }
  integrate(function(a) vapply(a, inner, 0) * 2 * a * dchisq(a^2, f1), 0, Inf,
            rel.tol = 1e-10, subdivisions = 1000L)$value
}
sim_power <- function(R, n1, n2, sd1, sd2, d, alpha, sides, dir, welch, seed) {
  set.seed(seed)
  f1 <- n1 - 1; f2 <- n2 - 1
  dh <- rnorm(R, d, sqrt(sd1^2 / n1 + sd2^2 / n2))
  u1 <- rchisq(R, f1); u2 <- rchisq(R, f2)
  s1 <- sd1^2 * u1 / f1; s2 <- sd2^2 * u2 / f2
  if (welch) {
    v1 <- s1 / n1; v2 <- s2 / n2; V <- v1 + v2
    df <- V^2 / (v1^2 / f1 + v2^2 / f2)
  } else {
    df <- f1 + f2
    V <- (f1 * s1 + f2 * s2) / df * (1 / n1 + 1 / n2)
  }
  tt <- dh / sqrt(V)
  cr <- qt(1 - alpha / sides, df)
  mean(if (sides == 2) abs(tt) > cr else dir * tt > cr)
}
## Cross-check of the statistics used above against t.test on raw data.
set.seed(11)
xa <- rnorm(7, 1, 2); xb <- rnorm(12, 0, 1)
fa <- 6; fb <- 11
va <- var(xa) / 7; vb <- var(xb) / 12
check("Welch t and df as t.test(var.equal=FALSE)",
      abs((mean(xa) - mean(xb)) / sqrt(va + vb) - t.test(xa, xb)$statistic) < 1e-12 &&
      abs((va + vb)^2 / (va^2 / fa + vb^2 / fb) - t.test(xa, xb)$parameter) < 1e-9)
check("Student pooled t as t.test(var.equal=TRUE)",
      abs((mean(xa) - mean(xb)) / sqrt((fa * var(xa) + fb * var(xb)) / 17 * (1 / 7 + 1 / 12)) -
          t.test(xa, xb, var.equal = TRUE)$statistic) < 1e-12)

m_rows <- list()
add_m <- function(id, model, n1, n2, m, sd1, sd2, icc, diff, bound, alpha, sides, dir, power, source) {
  cat(sprintf("%s %s n1=%s n2=%s m=%s sd1=%s sd2=%s icc=%s diff=%s bound=%s alpha=%s sides=%d dir=%d -> power=%.15g\n",
              id, model, fmt(n1), fmt(n2), fmt(m), fmt(sd1), fmt(sd2), fmt(icc), fmt(diff), fmt(bound),
              fmt(alpha), sides, dir, power))
  m_rows[[length(m_rows) + 1]] <<- data.frame(id = id, model = model, n1 = n1, n2 = n2, m = m,
    sd1 = sd1, sd2 = sd2, icc = icc, diff = diff, bound = bound, alpha = alpha, sides = sides,
    dir = dir, power = power, source = source, stringsAsFactors = FALSE)
}
ptt <- function(...) {
  args <- list(...)
  call <- paste0("power.t.test(", paste(sprintf("%s=%s", names(args),
    vapply(args, function(a) if (is.character(a)) sprintf("\"%s\"", a) else if (is.logical(a)) as.character(a) else fmt(a), "")),
    collapse = ", "), ")$power")
  list(power = do.call(power.t.test, args)$power, call = call)
}
r <- ptt(n = 20, delta = 0.8, sd = 1, sig.level = 0.05, type = "two.sample", alternative = "two.sided", strict = TRUE)
add_m("m_01", "student", 20, 20, NA, 1, 1, NA, 0.8, 0, 0.05, 2, 1, r$power, r$call)
r <- ptt(n = 30, delta = 1.2, sd = 2, sig.level = 0.025, type = "two.sample", alternative = "one.sided", strict = TRUE)
add_m("m_02", "student", 30, 30, NA, 2, 2, NA, 1.2, 0, 0.025, 1, 1, r$power, r$call)
add_m("m_03", "student", 30, 30, NA, 2, 2, NA, -1.2, 0, 0.025, 1, -1, r$power, paste(r$call, "(mirror image: diff -1.2, dir -1)"))
## Non-inferiority, higher is better: margin -0.6, true difference 0:
## the one-sided test of the shifted null is power.t.test with delta = 0 - (-0.6).
r <- ptt(n = 40, delta = 0.6, sd = 1.5, sig.level = 0.025, type = "two.sample", alternative = "one.sided", strict = TRUE)
add_m("m_04", "student", 40, 40, NA, 1.5, 1.5, NA, 0, -0.6, 0.025, 1, 1, r$power, paste(r$call, "(non-inferiority: delta = diff - bound)"))
## Student with unequal n, noncentral t.
n1 <- 15; n2 <- 30; sd <- 1.3; d <- 1
se <- sd * sqrt(1 / n1 + 1 / n2); df <- n1 + n2 - 2; cr <- qt(0.975, df)
pw <- pt(cr, df, d / se, lower.tail = FALSE) + pt(-cr, df, d / se)
check("m_05 noncentral t = integration", abs(pw - int_power(n1, n2, sd, sd, d, 0.05, 2, 1, FALSE)) < 1e-8)
add_m("m_05", "student", n1, n2, NA, sd, sd, NA, d, 0, 0.05, 2, 1, pw,
      "independent R implementation: pt(qt(0.975, 43), 43, ncp, lower.tail=FALSE) + pt(-qt(0.975, 43), 43, ncp), ncp = 1/(1.3*sqrt(1/15+1/30)); script sim_make.R")
## Integration rows, each cross-checked with an R simulation of 2e6 replicates.
int_scen <- list(
  ## id, model, n1, n2, sd1, sd2, diff, alpha, sides, dir
  list("m_06", "student", 5, 20, 3, 1, 0, 0.05, 2, 1),
  list("m_07", "welch", 10, 25, 2, 1, 1.2, 0.05, 2, 1),
  list("m_08", "welch", 6, 6, 1, 3, 2, 0.05, 1, 1),
  list("m_09", "welch", 5, 20, 3, 1, 0, 0.05, 2, 1),
  list("m_10", "welch", 2, 10, 1, 1, 2, 0.05, 2, 1),
  list("m_11", "welch", 30, 12, 1, 2.5, -1.5, 0.01, 1, -1)
)
Rsim <- 2e6
for (s in int_scen) {
  welch <- s[[2]] == "welch"
  pw <- int_power(s[[3]], s[[4]], s[[5]], s[[6]], s[[7]], s[[8]], s[[9]], s[[10]], welch)
  ps <- sim_power(Rsim, s[[3]], s[[4]], s[[5]], s[[6]], s[[7]], s[[8]], s[[9]], s[[10]], welch, seed = 2024)
  se <- sqrt(pw * (1 - pw) / Rsim)
  check(sprintf("%s integration vs R simulation (2e6, seed 2024) within 4 MC SE", s[[1]]),
        abs(pw - ps) < 4 * se, sprintf("int=%.10f sim=%.6f se=%.2g", pw, ps, se))
  add_m(s[[1]], s[[2]], s[[3]], s[[4]], NA, s[[5]], s[[6]], NA, s[[7]], 0, s[[8]], s[[9]], s[[10]], pw,
        sprintf("independent R implementation: numerical integration (integrate, nested, in sqrt of chi-square) of the conditional rejection probability of the %s t test over both sample variances; cross-checked by R simulation of 2e6 replicates (%.6f); script sim_make.R",
                if (welch) "Welch" else "Student pooled", ps))
}
r <- ptt(n = 12, delta = 0.7, sd = 1, sig.level = 0.05, type = "paired", alternative = "two.sided", strict = TRUE)
add_m("m_12", "paired", 12, NA, NA, 1, NA, NA, 0.7, 0, 0.05, 2, 1, r$power, r$call)
r <- ptt(n = 25, delta = 0.3, sd = 0.8, sig.level = 0.05, type = "paired", alternative = "one.sided", strict = TRUE)
add_m("m_13", "paired", 25, NA, NA, 0.8, NA, NA, 0.3, 0, 0.05, 1, 1, r$power, r$call)
## Cluster means: a cluster mean has SD sd*sqrt(icc + (1 - icc)/m) (Donner & Klar 2000).
r <- ptt(n = 12, delta = 0.4, sd = sqrt(0.05 + 0.95 / 20), sig.level = 0.05, type = "two.sample", alternative = "two.sided", strict = TRUE)
add_m("m_14", "cluster_means", 12, 12, 20, 1, 1, 0.05, 0.4, 0, 0.05, 2, 1, r$power,
      paste(r$call, "(sd = sqrt(0.05 + 0.95/20): SD of a cluster mean, SD 1, ICC 0.05, 20 members)"))
m_tab <- do.call(rbind, m_rows)
write_tsv(m_tab, "sim_means.tsv")

## ---------------------------------------------------------------------------
## 6. sim_cluster.tsv -- cluster-randomised binary outcome, R simulation
## ---------------------------------------------------------------------------
## Each cluster's risk ~ rbeta(a, b), a = p (1 - icc)/icc, b = (1 - p)(1 - icc)/icc;
## its count ~ rbinom(m, risk); the cluster proportions of the two arms are
## compared by the pooled two-sample t test with k1 + k2 - 2 df, two-sided
## |t| > qt(1 - alpha/2, df) or one-sided dir * t > qt(1 - alpha, df). The
## statistic is computed from the counts in whole numbers (as
## t.test(var.equal = TRUE) on the proportions; checked below); a zero
## pooled variance rejects when the arm means differ and not otherwise. The
## power is the share of R replicates that reject; its Monte-Carlo SE is
## sqrt(p (1 - p)/R).
banner("sim_cluster.tsv")
sim_cluster <- function(R, k1, k2, m, p1, p2, icc, alpha, sides, dir, seed) {
  set.seed(seed)
  s <- (1 - icc) / icc
  y1 <- matrix(rbinom(R * k1, m, rbeta(R * k1, p1 * s, (1 - p1) * s)), R)
  y2 <- matrix(rbinom(R * k2, m, rbeta(R * k2, p2 * s, (1 - p2) * s)), R)
  S1 <- rowSums(y1); Q1 <- rowSums(y1^2); S2 <- rowSums(y2); Q2 <- rowSums(y2^2)
  num <- S1 * k2 - S2 * k1                        # k1 k2 m (mean1 - mean2)
  A <- k2 * (k1 * Q1 - S1^2) + k1 * (k2 * Q2 - S2^2) # k1 k2 m^2 (pooled sum of squares)
  df <- k1 + k2 - 2
  ## t = num/(k1 k2 m) / sqrt(A/(k1 k2 m^2)/df * (1/k1 + 1/k2)) = num / sqrt(A (k1 + k2)/df)
  t <- num / sqrt(A * (k1 + k2) / df)
  t[A == 0] <- sign(num[A == 0]) * Inf
  t[A == 0 & num == 0] <- 0
  cr <- qt(1 - alpha / sides, df)
  rej <- if (sides == 2) abs(t) > cr else dir * t > cr
  ## t.test on the proportions of the first replicates gives the same t.
  for (i in 1:20) if (A[i] > 0) {
    tt <- t.test(y1[i, ] / m, y2[i, ] / m, var.equal = TRUE)$statistic
    if (abs(tt - t[i]) > 1e-9 * max(1, abs(tt))) stop("t mismatch")
  }
  list(power = mean(rej), zero = sum(A == 0))
}
cl_scen <- list(
  ## id, k1, k2, m, p1, p2, icc, alpha, sides, dir
  list("c_01", 8, 8, 50, 0.3, 0.15, 0.05, 0.05, 2, 1),
  list("c_02", 6, 10, 20, 0.1, 0.25, 0.1, 0.05, 1, -1),
  list("c_03", 10, 10, 30, 0.2, 0.2, 0.02, 0.05, 2, 1)
)
Rc <- 1e6
cl_rows <- list()
for (s in cl_scen) {
  r <- sim_cluster(Rc, s[[2]], s[[3]], s[[4]], s[[5]], s[[6]], s[[7]], s[[8]], s[[9]], s[[10]], seed = 7)
  check(sprintf("%s t statistic = t.test(var.equal=TRUE) on 20 replicates", s[[1]]), TRUE)
  cat(sprintf("%s k=%d/%d m=%d p=%s/%s icc=%s alpha=%s sides=%d dir=%d -> power=%.6f (R=%g, %d replicates with zero variance)\n",
              s[[1]], s[[2]], s[[3]], s[[4]], fmt(s[[5]]), fmt(s[[6]]), fmt(s[[7]]), fmt(s[[8]]), s[[9]], s[[10]],
              r$power, Rc, r$zero))
  cl_rows[[length(cl_rows) + 1]] <- data.frame(id = s[[1]], k1 = s[[2]], k2 = s[[3]], m = s[[4]],
    p1 = s[[5]], p2 = s[[6]], icc = s[[7]], alpha = s[[8]], sides = s[[9]], dir = s[[10]],
    power = r$power, replicates = Rc,
    source = sprintf("independent R simulation (set.seed(7), rbeta + rbinom, pooled t test on cluster proportions), %g replicates; script sim_make.R", Rc),
    stringsAsFactors = FALSE)
}
cl_tab <- do.call(rbind, cl_rows)
write_tsv(cl_tab, "sim_cluster.tsv")

## ---------------------------------------------------------------------------
## 7. sim_wilson.tsv -- Wilson score interval of a simulated power
## ---------------------------------------------------------------------------
## prop.test(x, n, correct = FALSE)$conf.int is the Wilson (1927) score
## interval; cross-checked against the closed form
## (p + z^2/2n -/+ z sqrt(p q/n + z^2/4n^2))/(1 + z^2/n), z = qnorm(0.975).
banner("sim_wilson.tsv")
w_rows <- list()
for (xn in list(c(30, 100), c(0, 50), c(50, 50), c(8012, 10000), c(1, 1))) {
  x <- xn[1]; n <- xn[2]
  ci <- suppressWarnings(prop.test(x, n, correct = FALSE)$conf.int)
  z <- qnorm(0.975); p <- x / n
  lo <- (p + z^2 / (2 * n) - z * sqrt(p * (1 - p) / n + z^2 / (4 * n^2))) / (1 + z^2 / n)
  hi <- (p + z^2 / (2 * n) + z * sqrt(p * (1 - p) / n + z^2 / (4 * n^2))) / (1 + z^2 / n)
  check(sprintf("Wilson %g/%g: prop.test = closed form", x, n),
        abs(ci[1] - max(0, lo)) < 1e-12 && abs(ci[2] - min(1, hi)) < 1e-12)
  w_rows[[length(w_rows) + 1]] <- data.frame(x = x, n = n, lo = ci[1], hi = ci[2],
    source = sprintf("prop.test(%g, %g, correct=FALSE)$conf.int", x, n), stringsAsFactors = FALSE)
}
write_tsv(do.call(rbind, w_rows), "sim_wilson.tsv")

cat(sprintf("\n%d checks passed\n", n_checks))
