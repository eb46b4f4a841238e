## logistic_make.R -- reference values for power/logistic.go (Hsieh's
## formulas, the inflation 1/(1 - R^2)) and power/regsim.go (the regression
## simulation model and its fits).
##
## Run from this folder:   Rscript logistic_make.R > logistic_make.out
## (about seven minutes; base R only: stats::qnorm, pnorm, rnorm, rbinom,
## glm(family = binomial), lm)
##
## Writes
##   logistic_n.tsv      n of the two formulas, inflated by 1/(1 - R^2)
##   logistic_power.tsv  power of the two formulas at given n
##   logistic_fits.tsv   glm and lm fits of small data sets typed by hand
##   logistic_sim.tsv    Monte-Carlo power of glm's Wald test and lm's t test
##   logistic_formula_sim.tsv  simulated power of glm's Wald test at the n
##                       of each formula (how good the formulas are)
## and prints where Hsieh (1989)'s n is smallest as a function of b.
##
## The formulas are typed here from the papers, independently of the Go
## code:
##   Hsieh, Bloch & Larsen (1998), Stat Med 17:1623-1634, eq. (1):
##     n = (z_{1-a/s} + z_{power})^2 / (P (1 - P) b^2)
##   Hsieh (1989), Stat Med 8:795-802 (stated from memory):
##     n = (z_{1-a/s} + z_{power} exp(-b^2/4))^2 (1 + 2 P d) / (P b^2),
##     d = (1 + (1 + b^2) exp(5 b^2/4)) / (1 + exp(-b^2/4))
##   with P the event rate at the mean of the exposure and b the log odds
##   ratio per standard deviation; the adjusted n is n / (1 - R^2).
## All scenarios and data sets are invented.

options(digits = 15, width = 140, warn = 1)
cat("R.version.string:", R.version.string, "\n\n")
fmt <- function(x) sprintf("%.15g", x)
write_tsv <- function(df, file) {
  write.table(df, file, sep = "\t", quote = FALSE, row.names = FALSE, na = "NA")
  cat("wrote", file, "(", nrow(df), "rows )\n\n")
}

## ---------------------------------------------------------------- formulas
za_of <- function(alpha, sides) qnorm(alpha / sides, lower.tail = FALSE)
delta89 <- function(b) (1 + (1 + b^2) * exp(5 * b^2 / 4)) / (1 + exp(-b^2 / 4))
n98 <- function(P, b, alpha, sides, pw)
  (za_of(alpha, sides) + qnorm(pw))^2 / (P * (1 - P) * b^2)
n89 <- function(P, b, alpha, sides, pw)
  (za_of(alpha, sides) + qnorm(pw) * exp(-b^2 / 4))^2 * (1 + 2 * P * delta89(b)) / (P * b^2)
pow98 <- function(n, P, b, alpha, sides)
  pnorm(sqrt(n * P * (1 - P)) * abs(b) - za_of(alpha, sides))
pow89 <- function(n, P, b, alpha, sides)
  pnorm((sqrt(n * P * b^2 / (1 + 2 * P * delta89(b))) - za_of(alpha, sides)) * exp(b^2 / 4))

tests <- list(c(alpha = 0.05, sides = 2), c(alpha = 0.025, sides = 1))
rows_n <- list(); rows_p <- list()
for (P in c(0.05, 0.2, 0.5)) for (OR in c(1.2, 1.5, 2, 0.7)) for (te in tests) for (r2 in c(0, 0.3)) {
  b <- log(OR); a <- te[["alpha"]]; s <- te[["sides"]]
  for (pw in c(0.8, 0.9)) {
    id <- sprintf("P%g_OR%g_a%g_s%d_pw%g_r%g", P, OR, a, s, pw, r2)
    rows_n[[length(rows_n) + 1]] <- data.frame(id = id, event_rate = P, or = OR, log_or = fmt(b),
      alpha = a, sides = s, power = pw, r2 = r2,
      n_hsieh1998 = fmt(n98(P, b, a, s, pw) / (1 - r2)),
      n_hsieh1989 = fmt(n89(P, b, a, s, pw) / (1 - r2)),
      source = sprintf("R: (qnorm(%g/%d, lower.tail=FALSE) + qnorm(%g))^2 / (P(1-P) log(%g)^2) / (1 - %g) [Hsieh 1998 eq. 1]; and Hsieh 1989 (from memory), script logistic_make.R",
                       a, s, pw, OR, r2))
  }
  for (n in c(100, 500)) {
    id <- sprintf("P%g_OR%g_a%g_s%d_n%d_r%g", P, OR, a, s, n, r2)
    rows_p[[length(rows_p) + 1]] <- data.frame(id = id, event_rate = P, or = OR, log_or = fmt(b),
      alpha = a, sides = s, n = n, r2 = r2,
      power_hsieh1998 = fmt(pow98(n * (1 - r2), P, b, a, s)),
      power_hsieh1989 = fmt(pow89(n * (1 - r2), P, b, a, s)),
      source = sprintf("R: pnorm(sqrt(%d*(1-%g)*P*(1-P))*abs(log(%g)) - qnorm(%g/%d, lower.tail=FALSE)) [Hsieh 1998 eq. 1]; and Hsieh 1989 solved for power (from memory), script logistic_make.R",
                       n, r2, OR, a, s))
  }
}
tab_n <- do.call(rbind, rows_n); tab_p <- do.call(rbind, rows_p)
## Hsieh (1989)'s n is not monotone in b: it has a minimum, beyond which
## it rises again with the effect (two-sided 0.05, power 0.8).
for (P in c(0.01, 0.05, 0.2, 0.5, 0.9)) {
  o <- optimize(function(b) n89(P, b, 0.05, 2, 0.8), c(0.05, 5))
  cat(sprintf("Hsieh 1989, P %g: smallest n %.4f at b %.4f (OR per SD %.4f)\n", P, o$objective, o$minimum, exp(o$minimum)))
}
cat("\n")
cat("Sample sizes (first rows):\n"); print(head(tab_n[, 1:10], 8))
cat("\nPowers (first rows):\n"); print(head(tab_p[, 1:10], 8)); cat("\n")
write_tsv(tab_n, "logistic_n.tsv")
write_tsv(tab_p, "logistic_power.tsv")

## ------------------------------------------------------ fixed small data
## Typed by hand; power/regsim_test.go types the same numbers.
ds <- list(
  small2x2 = list(model = "glm",
    x = rep(c(1, 0), c(10, 10)),
    y = c(1, 1, 0, 1, 0, 1, 1, 0, 1, 0,   0, 1, 0, 0, 0, 1, 0, 0, 1, 0)),
  cont = list(model = "glm",
    x = c(-1.62, -0.94, 0.31, 1.05, -0.27, 0.88, -2.10, 0.45, 1.73, -0.56, 0.02, 1.21,
          -1.33, 0.67, -0.08, 2.04, -0.71, 0.19, 1.46, -1.01, 0.53, -0.39, 0.96, -1.88),
    y = c(0, 0, 1, 1, 0, 0, 0, 1, 1, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1, 0)),
  adj = list(model = "glm",
    x = c(0.12, -0.85, 1.34, -0.47, 0.76, -1.52, 0.33, 1.08, -0.21, -0.99, 0.58, 2.11, -1.27, 0.04, 0.91,
          -0.66, 1.49, -0.13, -1.85, 0.27, 0.69, -0.38, 1.22, -0.74, 0.45, -1.06, 0.83, -0.29, 1.67, -0.52),
    z = c(0.40, -0.31, 1.02, -0.95, 1.21, -1.10, -0.22, 1.45, 0.38, -1.40, 0.11, 1.60, -0.75, 0.52, 0.44,
          -1.03, 1.88, 0.29, -1.36, -0.15, 1.10, -0.81, 0.70, -0.20, 0.97, -1.49, 0.36, 0.23, 1.30, -0.88),
    y = c(0, 0, 1, 0, 1, 0, 1, 1, 0, 0, 1, 1, 0, 1, 0, 0, 1, 0, 0, 1, 0, 1, 1, 0, 0, 0, 1, 0, 1, 1)),
  adjbin = list(model = "glm",
    x = rep(c(1, 0), c(9, 11)),
    z = c(1.35, 0.62, 1.90, 0.88, 1.12, 0.41, 1.57, 0.95, 1.23,
          -0.44, 0.31, -0.87, 0.15, -0.29, 0.58, -1.12, 0.06, -0.63, 0.92, -0.18),
    y = c(1, 0, 1, 1, 0, 1, 1, 0, 1,   0, 0, 1, 0, 0, 1, 0, 0, 0, 1, 0)),
  sep = list(model = "glm",
    x = c(0.5, 1.1, 1.6, 2.3, 2.9, 3.4, 4.0, 4.8),
    y = c(0, 0, 0, 0, 1, 1, 1, 1)),
  ols1 = list(model = "lm",
    x = c(-1.62, -0.94, 0.31, 1.05, -0.27, 0.88, -2.10, 0.45, 1.73, -0.56, 0.02, 1.21),
    y = c(1.8, 2.9, 3.1, 4.4, 2.2, 3.0, 0.9, 3.7, 4.9, 2.4, 3.3, 3.8)),
  ols2 = list(model = "lm",
    x = rep(c(1, 0), c(6, 7)),
    z = c(1.20, 0.35, 1.71, 0.88, 0.52, 1.44, -0.30, 0.61, -0.95, 0.12, -0.48, 0.27, 0.80),
    y = c(5.3, 4.1, 6.2, 4.8, 3.9, 5.7, 3.2, 4.4, 2.5, 3.9, 3.0, 3.6, 4.7))
)
rows_f <- list()
for (name in names(ds)) {
  d <- ds[[name]]
  df <- data.frame(x = d$x, y = d$y)
  form <- y ~ x
  if (!is.null(d$z)) { df$z <- d$z; form <- y ~ x + z }
  if (d$model == "glm") {
    ## Converged far beyond glm's default (epsilon 1e-8), so that the
    ## estimates are the maximum likelihood ones to rounding.
    fit <- glm(form, family = binomial, data = df, control = glm.control(epsilon = 1e-14, maxit = 100))
    call <- sprintf("glm(%s, family = binomial, control = glm.control(epsilon = 1e-14, maxit = 100))", deparse(form))
    conv <- fit$converged
  } else {
    fit <- lm(form, data = df)
    call <- sprintf("lm(%s)", deparse(form))
    conv <- TRUE
  }
  co <- summary(fit)$coefficients
  cat(name, ":", call, " converged:", conv, "\n"); print(co); cat("\n")
  for (term in rownames(co)) {
    rows_f[[length(rows_f) + 1]] <- data.frame(id = paste(name, term, sep = "_"), dataset = name,
      model = d$model, term = term, estimate = fmt(co[term, 1]), se = fmt(co[term, 2]),
      stat = fmt(co[term, 3]), p_value = fmt(co[term, 4]), converged = as.integer(conv),
      source = sprintf("R: summary(%s)$coefficients, data set %s typed in logistic_make.R", call, name))
  }
}
## The 2x2 table of small2x2: 6/10 and 3/10 events; Woolf's log odds ratio
## and its standard error, to compare with glm's by hand.
cat("small2x2 by Woolf: log OR", fmt(log(6 * 7 / (4 * 3))), " se", fmt(sqrt(1/6 + 1/4 + 1/3 + 1/7)), "\n\n")
write_tsv(do.call(rbind, rows_f), "logistic_fits.tsv")

## ------------------------------------------------------------ simulation
## One data set: X binary (first n1 are 1) or N(0, 1); with r2 > 0 a
## confounder Z = X + N(0, s^2), s^2 = Var(X) (1 - r2)/r2, Var(X) =
## n1 n2/n^2 (binary) or 1; Y binary (logit b0 + b1 X) or normal
## (b0 + b1 X + N(0, sd^2)). Returns the test statistic of X: glm's Wald
## z value or lm's t value (summary(...)$coefficients["x", 3]).
one_stat <- function(s) {
  if (s$exposure == "binary") {
    x <- rep(c(1, 0), c(s$n1, s$n2)); n <- s$n1 + s$n2; vx <- s$n1 * s$n2 / n^2
  } else {
    n <- s$n; x <- rnorm(n); vx <- 1
  }
  if (s$outcome == "binary") y <- rbinom(n, 1, plogis(s$b0 + s$b1 * x))
  else y <- s$b0 + s$b1 * x + rnorm(n, 0, s$sd)
  if (s$r2 > 0) {
    z <- x + rnorm(n, 0, sqrt(vx * (1 - s$r2) / s$r2))
    form <- y ~ x + z
  } else form <- y ~ x
  fit <- if (s$outcome == "binary") suppressWarnings(glm(form, family = binomial)) else lm(form)
  summary(fit)$coefficients["x", 3]
}
scen <- list(
  list(id = "logit_norm_r0", outcome = "binary", exposure = "normal", n = 300, b0 = qlogis(0.2), b1 = log(1.5), r2 = 0, reps = 10000),
  list(id = "logit_norm_r3", outcome = "binary", exposure = "normal", n = 430, b0 = qlogis(0.2), b1 = log(1.5), r2 = 0.3, reps = 10000),
  list(id = "logit_norm_neg_r3", outcome = "binary", exposure = "normal", n = 350, b0 = 0, b1 = log(0.7), r2 = 0.3, reps = 10000),
  list(id = "logit_norm_null_r5", outcome = "binary", exposure = "normal", n = 200, b0 = qlogis(0.1), b1 = 0, r2 = 0.5, reps = 10000),
  list(id = "logit_bin_r0", outcome = "binary", exposure = "binary", n1 = 150, n2 = 200, b0 = qlogis(0.2), b1 = log(2), r2 = 0, reps = 10000),
  list(id = "logit_bin_r3", outcome = "binary", exposure = "binary", n1 = 215, n2 = 285, b0 = qlogis(0.2), b1 = log(2), r2 = 0.3, reps = 10000),
  list(id = "logit_bin_small_r0", outcome = "binary", exposure = "binary", n1 = 40, n2 = 40, b0 = qlogis(0.05), b1 = log(4), r2 = 0, reps = 10000),
  list(id = "logit_bin_small_r3", outcome = "binary", exposure = "binary", n1 = 40, n2 = 40, b0 = qlogis(0.05), b1 = log(4), r2 = 0.3, reps = 10000),
  list(id = "ols_bin_r0", outcome = "continuous", exposure = "binary", n1 = 40, n2 = 50, b0 = 10, b1 = 0.5, sd = 1.2, r2 = 0, reps = 20000),
  list(id = "ols_bin_r3", outcome = "continuous", exposure = "binary", n1 = 60, n2 = 60, b0 = 10, b1 = 0.5, sd = 1, r2 = 0.3, reps = 20000),
  list(id = "ols_norm_r3", outcome = "continuous", exposure = "normal", n = 60, b0 = 2, b1 = 0.3, sd = 1, r2 = 0.3, reps = 20000)
)
alpha2 <- 0.05; alpha1 <- 0.025
rows_s <- list()
for (k in seq_along(scen)) {
  s <- scen[[k]]
  if (is.null(s$sd)) s$sd <- 0
  if (is.null(s$n)) s$n <- 0
  if (is.null(s$n1)) { s$n1 <- 0; s$n2 <- 0 }
  seed <- 2100 + k
  set.seed(seed)
  t0 <- proc.time()[["elapsed"]]
  st <- vapply(seq_len(s$reps), function(i) one_stat(s), 0)
  nn <- if (s$exposure == "binary") s$n1 + s$n2 else s$n
  p <- if (s$r2 > 0) 3 else 2
  if (s$outcome == "binary") {
    c2 <- qnorm(alpha2 / 2, lower.tail = FALSE); c1 <- qnorm(alpha1, lower.tail = FALSE)
    test <- "glm Wald z value"
  } else {
    c2 <- qt(alpha2 / 2, nn - p, lower.tail = FALSE); c1 <- qt(alpha1, nn - p, lower.tail = FALSE)
    test <- sprintf("lm t value, qt(., %d)", nn - p)
  }
  cat(sprintf("%s: %d replicates in %.0f s, NA statistics %d\n", s$id, s$reps, proc.time()[["elapsed"]] - t0, sum(is.na(st))))
  st[is.na(st)] <- 0
  for (r in list(list(sides = 2, dir = 0, alpha = alpha2, k = sum(abs(st) > c2)),
                 list(sides = 1, dir = 1, alpha = alpha1, k = sum(st > c1)),
                 list(sides = 1, dir = -1, alpha = alpha1, k = sum(st < -c1)))) {
    sh <- r$k / s$reps
    cat(sprintf("  alpha %g sides %d dir %+d: %d rejections, share %.5f (SE %.5f)\n",
                r$alpha, r$sides, r$dir, r$k, sh, sqrt(sh * (1 - sh) / s$reps)))
    rows_s[[length(rows_s) + 1]] <- data.frame(id = sprintf("%s_s%d_d%+d", s$id, r$sides, r$dir),
      outcome = s$outcome, exposure = s$exposure, n = s$n, n1 = s$n1, n2 = s$n2,
      intercept = fmt(s$b0), effect = fmt(s$b1), sd = s$sd, r2 = s$r2,
      alpha = r$alpha, sides = r$sides, dir = r$dir, reps = s$reps, rejections = r$k,
      share = fmt(sh), se = fmt(sqrt(sh * (1 - sh) / s$reps)),
      source = sprintf("set.seed(%d); %d replicates of one_stat (rnorm/rbinom data, %s), script logistic_make.R",
                       seed, s$reps, test))
  }
}
cat("\n")
write_tsv(do.call(rbind, rows_s), "logistic_sim.tsv")

## ---------------------------------------- how good are the two formulas
## Simulated power of glm's two-sided Wald test (normal exposure, no
## confounder) at the n of each formula for a target of 0.8.
rows_c <- list()
pts <- list(c(0.05, 1.5), c(0.05, 2), c(0.2, 1.5), c(0.2, 0.7), c(0.5, 2))
for (k in seq_along(pts)) {
  P <- pts[[k]][1]; OR <- pts[[k]][2]; b <- log(OR)
  out <- list(id = sprintf("P%g_OR%g", P, OR), event_rate = P, or = OR, alpha = 0.05, sides = 2, target = 0.8)
  for (f in c("hsieh1998", "hsieh1989")) {
    n <- ceiling(if (f == "hsieh1998") n98(P, b, 0.05, 2, 0.8) else n89(P, b, 0.05, 2, 0.8))
    seed <- 2200 + 10 * k + (f == "hsieh1989")
    set.seed(seed)
    s <- list(outcome = "binary", exposure = "normal", n = n, b0 = qlogis(P), b1 = b, r2 = 0)
    reps <- 4000
    st <- vapply(seq_len(reps), function(i) one_stat(s), 0)
    st[is.na(st)] <- 0
    sh <- mean(abs(st) > qnorm(0.975))
    cat(sprintf("P %g OR %g: %s n = %d, simulated power %.4f (SE %.4f)\n", P, OR, f, n, sh, sqrt(sh * (1 - sh) / reps)))
    out[[paste0("n_", f)]] <- n
    out[[paste0("sim_", f)]] <- fmt(sh)
    out[[paste0("se_", f)]] <- fmt(sqrt(sh * (1 - sh) / reps))
    out[[paste0("seed_", f)]] <- seed
  }
  out$reps <- 4000
  out$source <- "set.seed(seed_*); 4000 replicates of one_stat at ceiling(n_*) (glm Wald z value, two-sided 0.05), script logistic_make.R"
  rows_c[[k]] <- as.data.frame(out)
}
cat("\n")
write_tsv(do.call(rbind, rows_c), "logistic_formula_sim.tsv")
