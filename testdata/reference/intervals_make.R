## intervals_make.R -- reference values for power/intervals.go and
## power/precisionsim.go (estimation to a stated precision: one proportion
## by the Wald, Wilson and Clopper-Pearson intervals, a ratio on the log
## scale, a mean by the t interval, sensitivity and specificity).
##
## Run from this folder:   Rscript intervals_make.R > intervals_make.out
## (about half a minute)
##
## Only base R (stats) is used. The formulas are written out below from
## their statement in the papers, not from the Go code; the intervals at
## whole counts are checked against binom.test and prop.test:
##
##   z = qnorm((1 - conf)/2, lower.tail = FALSE), alpha = 1 - conf
##   Wald      x/n -+ z sqrt(p(1 - p)/n), p = x/n (not clipped)
##   Wilson    (x + z^2/2 -+ z sqrt(x(n - x)/n + z^2/4)) / (n + z^2)
##             (Wilson 1927, J Am Stat Assoc 22:209-212)
##   Clopper-Pearson  lower = qbeta(alpha/2, x, n - x + 1)  (0 when x = 0)
##                    upper = qbeta(1 - alpha/2, x + 1, n - x)  (1 when x = n)
##             (Clopper & Pearson 1934, Biometrika 26:404-413)
##   half-width = (upper - lower)/2, at x = n p (a real number) for planning
##   ratio:    rho = upper/lower = exp(2 z SE), n1 = z^2 (V1 + V2/r)/(log(rho)/2)^2
##             risk ratio   V1 = (1 - p1)/p1, V2 = (1 - p2)/p2  (Katz et al. 1978)
##             odds ratio   V1 = 1/(p1(1 - p1)), V2 = 1/(p0(1 - p0))  (Woolf 1955)
##   mean:     half-width = qt(1 - alpha/2, n - 1) sd/sqrt(n)
##   Buderer (1996, Acad Emerg Med 3:895-900):
##             n_sens = z^2 Se(1 - Se)/(margin^2 prevalence)
##             n_spec = z^2 Sp(1 - Sp)/(margin^2 (1 - prevalence))
##
## The scenarios are invented numbers; nothing was taken from any course,
## book or program. No sample-size or power program was used or consulted.
##
## Writes:
##   intervals_limits.tsv    limits and half-widths at given (n, x), x whole or not
##   intervals_n.tsv         smallest n per method, by brute-force scan of n
##   intervals_ratio.tsv     n1 for a ratio (closed form), achieved rho at sizes
##   intervals_mean.tsv      smallest n for a mean, by scanning n with qt
##   intervals_buderer.tsv   Buderer's two sizes
##   intervals_sim_prop.tsv  simulated and exact success rates, one proportion
##   intervals_sim_mean.tsv  the same for a mean
##   intervals_sim_ratio.tsv the same for a ratio
##   intervals_sim_diag.tsv  the same for sensitivity and specificity

options(digits = 15, width = 140, warn = 1)
cat("R.version.string:", R.version.string, "\n\n")
t_start <- proc.time()[["elapsed"]]
## Numbers in 15 significant digits when that is the double exactly
## (0.1 stays 0.1), else in 17 (enough for any double).
fmt <- function(x) {
  if (is.character(x)) return(x)
  if (is.logical(x)) return(ifelse(x, "1", "0"))
  s <- sprintf("%.15g", x)
  s <- ifelse(is.finite(x) & as.numeric(s) != x, sprintf("%.17g", x), s)
  ifelse(is.na(x), "NA", ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"), s))
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
check_true <- function(what, cond) {
  if (!isTRUE(all(cond))) stop(sprintf("CHECK FAILED %s", what))
  n_checks <<- n_checks + 1
}

zq <- function(conf) qnorm((1 - conf) / 2, lower.tail = FALSE)

## The three intervals, vectorised over x (and n).
wald_lim <- function(x, n, conf) {
  z <- zq(conf); p <- x / n; h <- z * sqrt(p * (1 - p) / n)
  cbind(p - h, p + h)
}
wilson_lim <- function(x, n, conf) {
  z <- zq(conf)
  c0 <- (x + z^2 / 2) / (n + z^2)
  h <- z * sqrt(x * (n - x) / n + z^2 / 4) / (n + z^2)
  cbind(c0 - h, c0 + h)
}
cp_lim <- function(x, n, conf) {
  a <- 1 - conf
  lo <- ifelse(x == 0, 0, suppressWarnings(qbeta(a / 2, x, n - x + 1)))
  hi <- ifelse(x == n, 1, suppressWarnings(qbeta(1 - a / 2, x + 1, n - x)))
  cbind(lo, hi)
}
lim <- function(method, x, n, conf) {
  switch(method, wald = wald_lim(x, n, conf), wilson = wilson_lim(x, n, conf),
         "clopper-pearson" = cp_lim(x, n, conf))
}
## The Wilson half-width written directly (not as a difference).
wilson_hw <- function(x, n, conf) {
  z <- zq(conf); z * sqrt(x * (n - x) / n + z^2 / 4) / (n + z^2)
}
## The half-width at x = n p, the planning value.
hw_at <- function(method, p, n, conf) {
  x <- n * p
  switch(method,
         wald = zq(conf) * sqrt(p * (1 - p) / n),
         wilson = wilson_hw(x, n, conf),
         "clopper-pearson" = { L <- cp_lim(x, n, conf); (L[, 2] - L[, 1]) / 2 })
}
methods <- c("wald", "wilson", "clopper-pearson")

## ---- 1. Limits at given (n, x) ---------------------------------------------
cat("== 1. Interval limits ==\n")
cases <- list(
  c(10, 0), c(10, 1), c(10, 10), c(20, 7), c(50, 3), c(100, 50), c(250, 12),
  c(1000, 1), c(1000, 999), c(37, 36), c(5, 2),
  ## non-integer x: the expected count n p
  c(16, 0.16), c(100, 0.5), c(100, 99.5), c(385, 192.5), c(30, 3.3), c(1, 0.01),
  c(2000, 20.4), c(7, 6.93), c(120000, 1234.56))
confs <- c(0.95, 0.9, 0.99)
lrows <- list()
for (cs in cases) for (conf in confs) for (m in methods) {
  n <- cs[1]; x <- cs[2]
  L <- lim(m, x, n, conf)
  hw <- (L[2] - L[1]) / 2
  whole <- x == round(x)
  src <- switch(m,
    wald = sprintf("x/n -+ qnorm(%g, lower.tail=FALSE)*sqrt(p(1-p)/n), p = x/n", (1 - conf) / 2),
    wilson = sprintf("Wilson (1927) limits written out with z = qnorm(%g, lower.tail=FALSE)", (1 - conf) / 2),
    "clopper-pearson" = sprintf("qbeta(%g, x, n-x+1), qbeta(%g, x+1, n-x) (0 at x = 0, 1 at x = n)",
                                (1 - conf) / 2, 1 - (1 - conf) / 2))
  if (m == "wilson") {
    check(sprintf("wilson half-width n=%g x=%g", n, x), wilson_hw(x, n, conf), hw, 1e-12)
    if (whole) {
      ci <- suppressWarnings(prop.test(x, n, conf.level = conf, correct = FALSE))$conf.int
      ## prop.test clips its limits to [0, 1]; they are inside anyway.
      check(sprintf("prop.test lower n=%g x=%g conf=%g", n, x, conf), ci[1] + 1, L[1] + 1, 1e-14)
      check(sprintf("prop.test upper n=%g x=%g conf=%g", n, x, conf), ci[2], L[2], 1e-13)
      src <- paste0(src, sprintf("; = prop.test(%g, %g, conf.level=%g, correct=FALSE)$conf.int", x, n, conf))
    }
  }
  if (m == "clopper-pearson" && whole) {
    ci <- binom.test(x, n, conf.level = conf)$conf.int
    check(sprintf("binom.test lower n=%g x=%g conf=%g", n, x, conf), ci[1] + 1, L[1] + 1, 1e-15)
    check(sprintf("binom.test upper n=%g x=%g conf=%g", n, x, conf), ci[2], L[2], 1e-15)
    src <- paste0(src, sprintf("; = binom.test(%g, %g, conf.level=%g)$conf.int", x, n, conf))
  }
  lrows[[length(lrows) + 1]] <- data.frame(
    id = sprintf("lim_%s_n%g_x%g_c%g", m, n, x, conf), method = m, n = fmt(n), x = fmt(x),
    confidence = fmt(conf), lower = fmt(L[1]), upper = fmt(L[2]), half_width = fmt(hw),
    source = paste0(src, "; intervals_make.R"), stringsAsFactors = FALSE)
}
ltab <- do.call(rbind, lrows)
cat(sprintf("%d limits; Wilson checked against prop.test(correct=FALSE) and Clopper-Pearson against binom.test at whole x\n",
            nrow(ltab)))
print(head(ltab[ltab$confidence == "0.95", c("id", "lower", "upper", "half_width")], 12), row.names = FALSE)
write_tsv(ltab, "intervals_limits.tsv")

## ---- 2. The smallest n, by brute force ---------------------------------------
## For each method the half-width at x = n p is computed for every n from 1
## to a bound, doubled until some n qualifies; the answer is the first n
## with half-width <= margin. 'monotone' records whether the half-width
## fell strictly from each n to the next over 1..2n (the Go search relies on
## it only near the answer; see intervals_README.md).
cat("\n== 2. Smallest n per method (brute-force scan) ==\n")
first_n <- function(m, p, margin, conf) {
  N <- 256
  repeat {
    hw <- hw_at(m, p, 1:N, conf)
    k <- which(hw <= margin)
    if (length(k) > 0 && k[1] * 2 <= N) break
    N <- N * 2
  }
  n <- k[1]
  list(n = n, hw = hw[n], prev = if (n > 1) hw[n - 1] else NA,
       monotone = all(diff(hw[1:(2 * n)]) < 0), N = N,
       gap = min(abs(hw[1:(2 * n)] - margin)))
}
grid <- expand.grid(p = c(0.01, 0.05, 0.1, 0.3, 0.5), margin = c(0.01, 0.02, 0.05), conf = c(0.95, 0.9))
extra <- data.frame(p = c(0.9, 0.7, 0.002, 0.5, 0.5, 0.2, 0.01, 0.05),
                    margin = c(0.05, 0.02, 0.002, 0.4, 0.3, 0.15, 0.1, 0.005),
                    conf = c(0.95, 0.9, 0.95, 0.95, 0.99, 0.99, 0.95, 0.99))
grid <- rbind(grid, extra)
nrows <- list()
for (i in seq_len(nrow(grid))) for (m in methods) {
  g <- grid[i, ]
  r <- first_n(m, g$p, g$margin, g$conf)
  check_true(sprintf("first n qualifies %s %d", m, i), r$hw <= g$margin)
  check_true(sprintf("n - 1 does not %s %d", m, i), is.na(r$prev) || r$prev > g$margin)
  ## No half-width within 1e-9 of the margin: the answer does not hang on
  ## the last digits of either program.
  check_true(sprintf("no near-tie %s %d", m, i), r$gap > 1e-9 * g$margin)
  wald0 <- zq(g$conf)^2 * g$p * (1 - g$p) / g$margin^2
  if (m == "wald") check(sprintf("wald n is ceiling of Cochran's %d", i), r$n, ceiling(wald0), 0)
  nrows[[length(nrows) + 1]] <- data.frame(
    id = sprintf("n_%s_p%g_m%g_c%g", m, g$p, g$margin, g$conf), method = m, p = fmt(g$p),
    margin = fmt(g$margin), confidence = fmt(g$conf), n = r$n, hw_n = fmt(r$hw), hw_prev = fmt(r$prev),
    cochran_n0 = fmt(wald0), monotone = fmt(r$monotone),
    source = sprintf("first n in 1..%d with half-width at x = n*%g <= %g (%s, z = qnorm(%g, lower.tail=FALSE)); intervals_make.R",
                     r$N, g$p, g$margin,
                     switch(m, wald = "z*sqrt(p(1-p)/n)", wilson = "Wilson (1927) half-width",
                            "clopper-pearson" = "(qbeta(1-a/2, x+1, n-x) - qbeta(a/2, x, n-x+1))/2"),
                     (1 - g$conf) / 2),
    stringsAsFactors = FALSE)
}
ntab <- do.call(rbind, nrows)
print(reshape(ntab[, c("p", "margin", "confidence", "method", "n")], idvar = c("p", "margin", "confidence"),
              timevar = "method", direction = "wide"), row.names = FALSE)
cat(sprintf("half-width strictly decreasing over 1..2n in %d of %d scans (not in: %s)\n",
            sum(ntab$monotone == "1"), nrow(ntab),
            paste(ntab$id[ntab$monotone != "1"], collapse = ", ")))
write_tsv(ntab, "intervals_n.tsv")

## ---- 3. A ratio on the log scale ----------------------------------------------
cat("\n== 3. Ratio to a stated precision ==\n")
Vparts <- function(measure, p1, p2) {
  if (measure == "risk-ratio") c((1 - p1) / p1, (1 - p2) / p2) else c(1 / (p1 * (1 - p1)), 1 / (p2 * (1 - p2)))
}
rho_at <- function(measure, p1, p2, n1, n2, conf) {
  v <- Vparts(measure, p1, p2); exp(2 * zq(conf) * sqrt(v[1] / n1 + v[2] / n2))
}
## The same SE from glm on the expected 2x2 table (binomial, log link for
## the risk ratio, logit for the odds ratio), started at the exact fit.
se_glm <- function(measure, p1, p2, n1, n2) {
  d <- data.frame(y = c(p1, p2), g = c(1, 0), w = c(n1, n2))
  link <- if (measure == "risk-ratio") "log" else "logit"
  fit <- suppressWarnings(glm(y ~ g, family = binomial(link = link), data = d, weights = w, mustart = y,
                              control = glm.control(epsilon = 1e-14, maxit = 100)))
  sqrt(vcov(fit)[2, 2])
}
rgrid <- rbind(
  expand.grid(measure = "risk-ratio", p1 = c(0.1, 0.3), p2 = c(0.05, 0.2), r = c(1, 2), rho = c(1.5, 2, 3),
              conf = 0.95, stringsAsFactors = FALSE),
  expand.grid(measure = "odds-ratio", p1 = c(0.4, 0.25), p2 = c(0.2, 0.3), r = c(1, 4), rho = c(2, 3),
              conf = 0.95, stringsAsFactors = FALSE),
  data.frame(measure = c("risk-ratio", "odds-ratio"), p1 = c(0.02, 0.6), p2 = c(0.01, 0.5), r = c(3, 0.5),
             rho = c(4, 1.8), conf = c(0.9, 0.99), stringsAsFactors = FALSE))
rrows <- list()
for (i in seq_len(nrow(rgrid))) {
  g <- rgrid[i, ]
  v <- Vparts(g$measure, g$p1, g$p2)
  n1 <- zq(g$conf)^2 * (v[1] + v[2] / g$r) / (log(g$rho) / 2)^2
  check(sprintf("rho at n1* row %d", i), rho_at(g$measure, g$p1, g$p2, n1, g$r * n1, g$conf), g$rho, 1e-13)
  n1c <- ceiling(n1); n2c <- g$r * n1c
  rho_c <- rho_at(g$measure, g$p1, g$p2, n1c, n2c, g$conf)
  rho_b <- rho_at(g$measure, g$p1, g$p2, n1c - 1, g$r * (n1c - 1), g$conf)
  check_true(sprintf("achieved rho at ceiling within target, row %d", i), rho_c <= g$rho)
  check_true(sprintf("one fewer misses the target, row %d", i), rho_b > g$rho)
  seg <- se_glm(g$measure, g$p1, g$p2, n1c, n2c)
  check(sprintf("glm SE row %d", i), exp(2 * zq(g$conf) * seg), rho_c, 1e-8)
  rrows[[length(rrows) + 1]] <- data.frame(
    id = sprintf("ratio_%d", i), measure = g$measure, p1 = fmt(g$p1), p2 = fmt(g$p2), r = fmt(g$r),
    confidence = fmt(g$conf), rho = fmt(g$rho), n1 = fmt(n1), n1_ceil = n1c, n2_ceil = fmt(n2c),
    rho_ceil = fmt(rho_c), rho_below = fmt(rho_b), rho_glm = fmt(exp(2 * zq(g$conf) * seg)),
    source = sprintf(paste0("n1 = qnorm(%g, lower.tail=FALSE)^2 * (%.10g + %.10g/%g) / (log(%g)/2)^2 (%s); ",
                            "rho = exp(2 z sqrt(V1/n1 + V2/n2)); rho_glm from sqrt(vcov(glm(binomial(link=%s)))[2,2]) ",
                            "on the expected table; intervals_make.R"),
                     (1 - g$conf) / 2, v[1], v[2], g$r, g$rho,
                     if (g$measure == "risk-ratio") "Katz et al. 1978" else "Woolf 1955",
                     if (g$measure == "risk-ratio") "log" else "logit"),
    stringsAsFactors = FALSE)
}
rtab <- do.call(rbind, rrows)
print(rtab[, c("id", "measure", "p1", "p2", "r", "rho", "n1", "n1_ceil", "rho_ceil", "rho_below")], row.names = FALSE)
write_tsv(rtab, "intervals_ratio.tsv")

## ---- 4. A mean with the t interval ---------------------------------------------
cat("\n== 4. Mean (t interval), scan of n with qt ==\n")
mgrid <- expand.grid(sd = c(1, 10), ratio = c(0.3, 1, 2, 5, 10, 25.3, 100), conf = c(0.9, 0.95, 0.99))
mrows <- list()
for (i in seq_len(nrow(mgrid))) {
  g <- mgrid[i, ]
  margin <- g$sd / g$ratio
  zn <- zq(g$conf)^2 * g$sd^2 / margin^2
  ns <- 2:(ceiling(zn) + 200)
  hw <- qt(1 - (1 - g$conf) / 2, ns - 1) * g$sd / sqrt(ns)
  k <- which(hw <= margin)[1]
  check_true(sprintf("mean scan found row %d", i), !is.na(k))
  check_true(sprintf("mean half-width decreasing row %d", i), all(diff(hw) < 0))
  check_true(sprintf("mean no near-tie row %d", i), min(abs(hw - margin)) > 1e-9 * margin)
  n <- ns[k]
  mrows[[length(mrows) + 1]] <- data.frame(
    id = sprintf("mean_sd%g_m%.6g_c%g", g$sd, margin, g$conf), sd = fmt(g$sd), margin = fmt(margin),
    confidence = fmt(g$conf), n = n, hw_n = fmt(hw[k]), hw_prev = fmt(if (k > 1) hw[k - 1] else NA),
    z_n = fmt(zn),
    source = sprintf("first n >= 2 with qt(%g, n-1)*%g/sqrt(n) <= %.10g; intervals_make.R",
                     1 - (1 - g$conf) / 2, g$sd, margin),
    stringsAsFactors = FALSE)
}
mtab <- do.call(rbind, mrows)
print(mtab[, c("id", "n", "hw_n", "hw_prev", "z_n")], row.names = FALSE)
write_tsv(mtab, "intervals_mean.tsv")

## ---- 5. Buderer (1996) ---------------------------------------------------------
cat("\n== 5. Buderer's sizes for sensitivity and specificity ==\n")
bgrid <- rbind(expand.grid(se = c(0.8, 0.9, 0.95), sp = c(0.7, 0.9), prev = c(0.05, 0.2, 0.5),
                           margin = c(0.05, 0.1), conf = 0.95),
               data.frame(se = c(0.85, 0.99), sp = c(0.95, 0.6), prev = c(0.3, 0.01), margin = c(0.07, 0.02),
                          conf = c(0.9, 0.99)))
brows <- list()
for (i in seq_len(nrow(bgrid))) {
  g <- bgrid[i, ]
  z <- zq(g$conf)
  ns <- z^2 * g$se * (1 - g$se) / (g$margin^2 * g$prev)
  nsp <- z^2 * g$sp * (1 - g$sp) / (g$margin^2 * (1 - g$prev))
  ## Cross-check: n_sens x prevalence diseased are the Wald size for Se
  ## (the first whole D with z sqrt(Se(1-Se)/D) <= margin is its ceiling).
  D <- 1:(ceiling(ns * g$prev) + 5)
  check(sprintf("buderer diseased row %d", i), D[which(z * sqrt(g$se * (1 - g$se) / D) <= g$margin)[1]],
        ceiling(ns * g$prev), 0)
  brows[[length(brows) + 1]] <- data.frame(
    id = sprintf("buderer_%d", i), sens = fmt(g$se), spec = fmt(g$sp), prevalence = fmt(g$prev),
    margin = fmt(g$margin), confidence = fmt(g$conf), n_sens = fmt(ns), n_spec = fmt(nsp),
    source = sprintf(paste0("Buderer (1996): qnorm(%g, lower.tail=FALSE)^2 * %g*(1-%g) / (%g^2 * %g) and ",
                            "... * %g*(1-%g) / (%g^2 * (1-%g)); intervals_make.R"),
                     (1 - g$conf) / 2, g$se, g$se, g$margin, g$prev, g$sp, g$sp, g$margin, g$prev),
    stringsAsFactors = FALSE)
}
btab <- do.call(rbind, brows)
print(btab[, c("id", "sens", "spec", "prevalence", "margin", "confidence", "n_sens", "n_spec")], row.names = FALSE)
write_tsv(btab, "intervals_buderer.tsv")

## ---- 6. Simulation: success rates, simulated and exact ---------------------------
## Each scenario is simulated once with its seed; the width and the coverage
## rows of a scenario come from the same replicates. The exact rates sum
## over every outcome with dbinom weights (for the mean: pchisq, and the
## coverage is the confidence itself).
cat("\n== 6. Simulation ==\n")
sim_row <- function(id, mode, succ, reps, exact, src, ...) {
  sh <- succ / reps
  data.frame(id = id, mode = mode, ..., reps = reps, successes = succ, share = fmt(sh),
             se = fmt(sqrt(sh * (1 - sh) / reps)), exact = fmt(exact),
             z_vs_exact = fmt((sh - exact) / sqrt(exact * (1 - exact) / reps)),
             source = paste0(src, "; intervals_make.R"), stringsAsFactors = FALSE)
}
R <- 50000

## 6a. One proportion.
cat("-- one proportion: X ~ rbinom(R, n, p), the interval at X --\n")
pcases <- list(
  list(id = "prop_wilson_n100", method = "wilson", n = 100, p = 0.1, margin = 0.06, conf = 0.95, seed = 1101),
  list(id = "prop_cp_n100", method = "clopper-pearson", n = 100, p = 0.1, margin = 0.065, conf = 0.95, seed = 1102),
  list(id = "prop_wald_n385", method = "wald", n = 385, p = 0.5, margin = 0.0499, conf = 0.95, seed = 1103),
  list(id = "prop_cp_n200", method = "clopper-pearson", n = 200, p = 0.05, margin = 0.035, conf = 0.95, seed = 1104),
  list(id = "prop_wald_n60", method = "wald", n = 60, p = 0.1, margin = 0.07, conf = 0.95, seed = 1105),
  list(id = "prop_cp_n50", method = "clopper-pearson", n = 50, p = 0.1, margin = 0.09, conf = 0.95, seed = 1106),
  list(id = "prop_cp_n200b", method = "clopper-pearson", n = 200, p = 0.3, margin = 0.065, conf = 0.95, seed = 1107),
  list(id = "prop_wilson_n50", method = "wilson", n = 50, p = 0.1, margin = 0.09, conf = 0.95, seed = 1108),
  list(id = "prop_wilson_n200", method = "wilson", n = 200, p = 0.3, margin = 0.063, conf = 0.95, seed = 1109),
  list(id = "prop_wald_n50", method = "wald", n = 50, p = 0.1, margin = 0.08, conf = 0.95, seed = 1110),
  list(id = "prop_wilson_n30_c90", method = "wilson", n = 30, p = 0.5, margin = 0.14, conf = 0.9, seed = 1111),
  ## A large study: the Go model computes the interval at each draw rather
  ## than tabulating every count.
  list(id = "prop_cp_n1e7", method = "clopper-pearson", n = 1e7, p = 0.3, margin = 0.0002840705, conf = 0.95, seed = 1112))
prows <- list()
for (cs in pcases) {
  ## Every count, or for a large n those whose dbinom is not negligible
  ## (the mass left out, below 2e-20, cannot show in the exact rate).
  xs <- if (cs$n <= 1e5) 0:cs$n else
    qbinom(1e-20, cs$n, cs$p):qbinom(1e-20, cs$n, cs$p, lower.tail = FALSE)
  L <- lim(cs$method, xs, cs$n, cs$conf)
  hw <- (L[, 2] - L[, 1]) / 2
  ## No half-width within 1e-9 of the margin (at n = 1e7 neighbouring
  ## counts differ by 3e-11 in half-width: there 1e-8 of the margin, above
  ## the drift between R's qbeta and gonum's at that n, 7e-9 of it).
  tie <- if (cs$n <= 1e5) 1e-9 else 1e-8 * cs$margin
  check_true(sprintf("%s: no half-width within %g of the margin", cs$id, tie), min(abs(hw - cs$margin)) > tie)
  ex_w <- sum(dbinom(xs, cs$n, cs$p) * (hw <= cs$margin))
  ex_c <- sum(dbinom(xs, cs$n, cs$p) * (L[, 1] <= cs$p & cs$p <= L[, 2]))
  set.seed(cs$seed)
  x <- rbinom(R, cs$n, cs$p)
  Lx <- lim(cs$method, x, cs$n, cs$conf)
  sw <- sum((Lx[, 2] - Lx[, 1]) / 2 <= cs$margin)
  sc <- sum(Lx[, 1] <= cs$p & cs$p <= Lx[, 2])
  src <- sprintf("set.seed(%d); x <- rbinom(%d, %d, %g); %s interval at x, conf %g", cs$seed, R, cs$n, cs$p,
                 cs$method, cs$conf)
  for (mode in c("width", "coverage")) {
    prows[[length(prows) + 1]] <- sim_row(
      cs$id, mode, if (mode == "width") sw else sc, R, if (mode == "width") ex_w else ex_c,
      paste0(src, if (mode == "width") sprintf("; success = half-width <= %g; exact = sum(dbinom(0:n) * success)", cs$margin)
                  else "; success = lower <= p <= upper; exact = sum(dbinom(0:n) * covers)"),
      method = cs$method, n = cs$n, p = fmt(cs$p), margin = fmt(cs$margin), confidence = fmt(cs$conf), seed = cs$seed)
  }
  cat(sprintf("%-22s width %.4f (exact %.4f)  coverage %.4f (exact %.4f)\n", cs$id, sw / R, ex_w, sc / R, ex_c))
}
ptab <- do.call(rbind, prows)
cov <- function(id) as.numeric(ptab$exact[ptab$id == id & ptab$mode == "coverage"])
check_true("CP coverage >= nominal (n=50, p=0.1)", cov("prop_cp_n50") >= 0.95)
check_true("CP coverage >= nominal (n=200, p=0.3)", cov("prop_cp_n200b") >= 0.95)
check_true("CP coverage >= nominal (n=100, p=0.1)", cov("prop_cp_n100") >= 0.95)
check_true("Wilson coverage near nominal", abs(c(cov("prop_wilson_n50"), cov("prop_wilson_n200")) - 0.95) < 0.025)
write_tsv(ptab, "intervals_sim_prop.tsv")

## 6b. A mean: R samples every participant (rnorm), then mean and sd.
cat("-- mean: n normal observations per replicate (rnorm), t interval --\n")
mcases <- list(
  list(id = "mean_n30", n = 30, mu = 50, sd = 10, margin = 3.8, conf = 0.95, seed = 1201),
  list(id = "mean_n12", n = 12, mu = 0, sd = 1, margin = 0.55, conf = 0.9, seed = 1202),
  list(id = "mean_n5", n = 5, mu = -3, sd = 2, margin = 2.5, conf = 0.99, seed = 1203))
mrows <- list()
for (cs in mcases) {
  tq <- qt(1 - (1 - cs$conf) / 2, cs$n - 1)
  ex_w <- pchisq(cs$margin^2 * cs$n * (cs$n - 1) / (tq^2 * cs$sd^2), cs$n - 1)
  set.seed(cs$seed)
  X <- matrix(rnorm(R * cs$n, cs$mu, cs$sd), nrow = R)
  m <- rowMeans(X); s <- sqrt(rowSums((X - m)^2) / (cs$n - 1))
  hw <- tq * s / sqrt(cs$n)
  sw <- sum(hw <= cs$margin); sc <- sum(abs(m - cs$mu) <= hw)
  src <- sprintf("set.seed(%d); matrix(rnorm(%d*%d, %g, %g), nrow=%d); mean, sd of each row; half-width qt(%g, %d)*sd/sqrt(%d)",
                 cs$seed, R, cs$n, cs$mu, cs$sd, R, 1 - (1 - cs$conf) / 2, cs$n - 1, cs$n)
  for (mode in c("width", "coverage")) {
    mrows[[length(mrows) + 1]] <- sim_row(
      cs$id, mode, if (mode == "width") sw else sc, R, if (mode == "width") ex_w else cs$conf,
      paste0(src, if (mode == "width") sprintf("; success = half-width <= %g; exact = pchisq(m^2 n (n-1)/(t^2 sd^2), n-1)", cs$margin)
                  else "; success = |mean - mu| <= half-width; exact = the confidence"),
      n = cs$n, mean = fmt(cs$mu), sd = fmt(cs$sd), margin = fmt(cs$margin), confidence = fmt(cs$conf), seed = cs$seed)
  }
  cat(sprintf("%-10s width %.4f (exact %.4f)  coverage %.4f (exact %g)\n", cs$id, sw / R, ex_w, sc / R, cs$conf))
}
write_tsv(do.call(rbind, mrows), "intervals_sim_mean.tsv")

## 6c. A ratio: two binomial counts; a zero cell fails both checks.
cat("-- ratio: two rbinom counts, log-scale Wald interval --\n")
ratio_eval <- function(measure, a, b, n1, n2, conf, rho, truth) {
  z <- zq(conf)
  if (measure == "risk-ratio") {
    ok <- a > 0 & b > 0
    v <- 1 / a - 1 / n1 + 1 / b - 1 / n2
    est <- log((a / n1) / (b / n2))
  } else {
    ok <- a > 0 & a < n1 & b > 0 & b < n2
    v <- 1 / a + 1 / (n1 - a) + 1 / b + 1 / (n2 - b)
    est <- log(a * (n2 - b) / ((n1 - a) * b))
  }
  se <- sqrt(v)
  list(width = ok & exp(2 * z * se) <= rho, cover = ok & abs(est - log(truth)) <= z * se)
}
qcases <- list(
  list(id = "ratio_rr", measure = "risk-ratio", n1 = 150, n2 = 300, p1 = 0.2, p2 = 0.1, rho = 2.55, conf = 0.95, seed = 1301),
  list(id = "ratio_or", measure = "odds-ratio", n1 = 100, n2 = 200, p1 = 0.35, p2 = 0.2, rho = 3, conf = 0.95, seed = 1302),
  list(id = "ratio_rr_sparse", measure = "risk-ratio", n1 = 200, n2 = 200, p1 = 0.03, p2 = 0.015, rho = 8, conf = 0.9, seed = 1303))
qrows <- list()
for (cs in qcases) {
  truth <- if (cs$measure == "risk-ratio") cs$p1 / cs$p2 else cs$p1 * (1 - cs$p2) / (cs$p2 * (1 - cs$p1))
  A <- outer(0:cs$n1, rep(1, cs$n2 + 1)); B <- outer(rep(1, cs$n1 + 1), 0:cs$n2)
  W <- outer(dbinom(0:cs$n1, cs$n1, cs$p1), dbinom(0:cs$n2, cs$n2, cs$p2))
  e <- ratio_eval(cs$measure, A, B, cs$n1, cs$n2, cs$conf, cs$rho, truth)
  z <- zq(cs$conf)
  gap <- abs(exp(2 * z * sqrt(if (cs$measure == "risk-ratio") 1 / A - 1 / cs$n1 + 1 / B - 1 / cs$n2
                                else 1 / A + 1 / (cs$n1 - A) + 1 / B + 1 / (cs$n2 - B))) - cs$rho)
  check_true(sprintf("%s: no ratio within 1e-9 of the target", cs$id), min(gap[is.finite(gap)]) > 1e-9)
  ex_w <- sum(W * e$width); ex_c <- sum(W * e$cover)
  set.seed(cs$seed)
  a <- rbinom(R, cs$n1, cs$p1); b <- rbinom(R, cs$n2, cs$p2)
  s <- ratio_eval(cs$measure, a, b, cs$n1, cs$n2, cs$conf, cs$rho, truth)
  sw <- sum(s$width); sc <- sum(s$cover)
  src <- sprintf("set.seed(%d); a <- rbinom(%d, %d, %g); b <- rbinom(%d, %d, %g); %s log-scale Wald interval, conf %g; zero cell fails",
                 cs$seed, R, cs$n1, cs$p1, R, cs$n2, cs$p2, cs$measure, cs$conf)
  for (mode in c("width", "coverage")) {
    qrows[[length(qrows) + 1]] <- sim_row(
      cs$id, mode, if (mode == "width") sw else sc, R, if (mode == "width") ex_w else ex_c,
      paste0(src, if (mode == "width") sprintf("; success = upper/lower <= %g; exact = double sum of dbinom weights", cs$rho)
                  else sprintf("; success = interval covers %.10g; exact = double sum of dbinom weights", truth)),
      measure = cs$measure, n1 = cs$n1, n2 = cs$n2, p1 = fmt(cs$p1), p2 = fmt(cs$p2), rho = fmt(cs$rho),
      confidence = fmt(cs$conf), seed = cs$seed)
  }
  cat(sprintf("%-16s width %.4f (exact %.4f)  coverage %.4f (exact %.4f)\n", cs$id, sw / R, ex_w, sc / R, ex_c))
}
write_tsv(do.call(rbind, qrows), "intervals_sim_ratio.tsv")

## 6d. Sensitivity and specificity.
cat("-- diagnostic accuracy: D ~ rbinom(n, prev), TP ~ rbinom(D, Se), TN ~ rbinom(n - D, Sp) --\n")
## P(the interval for a proportion q among m meets the check), m = 0 fails.
part_prob <- function(method, m, q, conf, margin, mode) {
  if (m == 0) return(0)
  k <- 0:m
  L <- lim(method, k, m, conf)
  ok <- if (mode == "width") (L[, 2] - L[, 1]) / 2 <= margin else L[, 1] <= q & q <= L[, 2]
  sum(dbinom(k, m, q) * ok)
}
dcases <- list(
  list(id = "diag_wald", method = "wald", n = 400, prev = 0.3, se = 0.85, sp = 0.9, margin = 0.065, conf = 0.95, seed = 1401),
  list(id = "diag_wald_small", method = "wald", n = 150, prev = 0.2, se = 0.9, sp = 0.8, margin = 0.12, conf = 0.95, seed = 1402),
  list(id = "diag_wilson", method = "wilson", n = 150, prev = 0.2, se = 0.9, sp = 0.8, margin = 0.12, conf = 0.95, seed = 1403))
drows <- list()
for (cs in dcases) {
  ex <- c(width = 0, coverage = 0)
  for (mode in names(ex)) for (D in 0:cs$n)
    ex[mode] <- ex[mode] + dbinom(D, cs$n, cs$prev) *
      part_prob(cs$method, D, cs$se, cs$conf, cs$margin, mode) *
      part_prob(cs$method, cs$n - D, cs$sp, cs$conf, cs$margin, mode)
  set.seed(cs$seed)
  D <- rbinom(R, cs$n, cs$prev)
  TP <- rbinom(R, D, cs$se)
  TN <- rbinom(R, cs$n - D, cs$sp)
  ok <- D > 0 & D < cs$n
  Ls <- lim(cs$method, TP, pmax(D, 1), cs$conf); Lp <- lim(cs$method, TN, pmax(cs$n - D, 1), cs$conf)
  sw <- sum(ok & (Ls[, 2] - Ls[, 1]) / 2 <= cs$margin & (Lp[, 2] - Lp[, 1]) / 2 <= cs$margin)
  sc <- sum(ok & Ls[, 1] <= cs$se & cs$se <= Ls[, 2] & Lp[, 1] <= cs$sp & cs$sp <= Lp[, 2])
  src <- sprintf("set.seed(%d); D <- rbinom(%d, %d, %g); TP <- rbinom(%d, D, %g); TN <- rbinom(%d, %d - D, %g); %s intervals, conf %g; D = 0 or n fails",
                 cs$seed, R, cs$n, cs$prev, R, cs$se, R, cs$n, cs$sp, cs$method, cs$conf)
  for (mode in c("width", "coverage")) {
    drows[[length(drows) + 1]] <- sim_row(
      cs$id, mode, if (mode == "width") sw else sc, R, ex[[mode]],
      paste0(src, if (mode == "width") sprintf("; success = both half-widths <= %g", cs$margin) else "; success = both intervals cover",
             "; exact = sum over D of dbinom(D) P(Se part) P(Sp part)"),
      method = cs$method, n = cs$n, prevalence = fmt(cs$prev), sens = fmt(cs$se), spec = fmt(cs$sp),
      margin = fmt(cs$margin), confidence = fmt(cs$conf), seed = cs$seed)
  }
  cat(sprintf("%-16s width %.4f (exact %.4f)  coverage %.4f (exact %.4f)\n", cs$id, sw / R, ex[["width"]], sc / R, ex[["coverage"]]))
}
dtab <- do.call(rbind, drows)
write_tsv(dtab, "intervals_sim_diag.tsv")

## Every simulated share within 4 Monte-Carlo SE of its exact value.
all_sim <- rbind(ptab[, c("id", "mode", "z_vs_exact")], do.call(rbind, mrows)[, c("id", "mode", "z_vs_exact")],
                 do.call(rbind, qrows)[, c("id", "mode", "z_vs_exact")], dtab[, c("id", "mode", "z_vs_exact")])
zs <- as.numeric(all_sim$z_vs_exact)
check_true("R simulations within 4 SE of the exact rates", abs(zs) < 4)
cat(sprintf("R simulation against exact: largest |z| = %.2f over %d rows\n", max(abs(zs)), length(zs)))

cat(sprintf("\n%d checks passed (%.0f s)\n", n_checks, proc.time()[["elapsed"]] - t_start))
