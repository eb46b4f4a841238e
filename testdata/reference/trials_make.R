## trials_make.R -- reference values for continuous-outcome (t test), TOST,
## non-inferiority, time-to-event and Farrington-Manning calculations.
##
## Run from this folder:   Rscript trials_make.R > trials_make.out
##
## Writes trials_t.tsv, trials_pt.tsv, trials_welch.tsv, trials_tost.tsv,
## trials_ni_means.tsv, trials_survival.tsv, trials_logrank_data.tsv,
## trials_logrank.tsv, trials_fm.tsv, trials_fm_power.tsv.
## (trials_statsmodels.tsv is written by trials_make.py.)
##
## Only base R `stats` and `survival` are used. Everything not from a named
## library call is an independent implementation written from the formula as
## stated in trials_README.md. The script stops if any cross-check fails.

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(survival))

cat("R.version.string:", R.version.string, "\n")
cat("survival version:", as.character(packageVersion("survival")), "\n\n")

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
  cat(sprintf("CHECK %-60s mine=%.15g other=%.15g %s=%.3g %s\n", label, mine, other,
              if (relative) "relerr" else "abserr", err, if (err <= tol) "OK" else "FAIL"))
  if (!is.finite(err) || err > tol) stop("cross-check failed: ", label)
  n_checks <<- n_checks + 1L
}

## A sample size that a test would round up must not sit within 1e-6 of an integer.
not_near_integer <- function(label, x) {
  d <- abs(x - round(x))
  if (d < 1e-6) stop("value too close to an integer: ", label, " = ", x)
  invisible(TRUE)
}

banner <- function(s) cat("\n====================", s, "====================\n")

## ---------------------------------------------------------------------------
## 1. trials_t.tsv -- stats::power.t.test
## ---------------------------------------------------------------------------
banner("trials_t.tsv")

t_scen <- list(
  ## solve = "power": n given
  list("power", "two.sample", "two.sided", TRUE,  4,   1,   1,   0.05),
  list("power", "two.sample", "two.sided", FALSE, 4,   1,   1,   0.05),
  list("power", "two.sample", "two.sided", TRUE,  6,   1.5, 1,   0.01),
  list("power", "two.sample", "two.sided", FALSE, 6,   1.5, 1,   0.01),
  list("power", "two.sample", "one.sided", TRUE,  6,   1.2, 1,   0.05),
  list("power", "two.sample", "one.sided", FALSE, 20,  0.5, 1,   0.05),
  list("power", "two.sample", "two.sided", TRUE,  64,  0.5, 1,   0.05),
  list("power", "two.sample", "two.sided", TRUE,  250, 3,   12,  0.01),
  list("power", "two.sample", "two.sided", TRUE,  10,  0.3, 1,   0.05),
  list("power", "one.sample", "two.sided", TRUE,  4,   1,   1,   0.05),
  list("power", "one.sample", "two.sided", FALSE, 4,   1,   1,   0.05),
  list("power", "one.sample", "one.sided", TRUE,  6,   1,   1,   0.01),
  list("power", "one.sample", "two.sided", TRUE,  30,  2.5, 5,   0.05),
  list("power", "one.sample", "one.sided", FALSE, 1000, 0.1, 1,  0.05),
  list("power", "paired",     "two.sided", TRUE,  4,   2,   1.5, 0.05),
  list("power", "paired",     "two.sided", FALSE, 6,   0.8, 1,   0.01),
  list("power", "paired",     "one.sided", TRUE,  15,  0.6, 1,   0.05),
  list("power", "paired",     "two.sided", TRUE,  120, 0.25, 1,  0.01),
  ## solve = "n": power given
  list("n", "two.sample", "two.sided", TRUE,  0.8, 0.5, 1,   0.05),
  list("n", "two.sample", "two.sided", FALSE, 0.8, 0.5, 1,   0.05),
  list("n", "two.sample", "two.sided", TRUE,  0.9, 2,   1,   0.01),
  list("n", "two.sample", "one.sided", TRUE,  0.8, 1,   2,   0.05),
  list("n", "two.sample", "two.sided", TRUE,  0.8, 2.5, 1,   0.05),
  list("n", "two.sample", "two.sided", TRUE,  0.95, 0.2, 1,  0.05),
  list("n", "one.sample", "two.sided", TRUE,  0.8, 1,   1,   0.05),
  list("n", "one.sample", "one.sided", FALSE, 0.9, 0.3, 1,   0.01),
  list("n", "one.sample", "two.sided", TRUE,  0.8, 3,   1,   0.01),
  list("n", "paired",     "two.sided", TRUE,  0.9, 5,   8,   0.05),
  list("n", "paired",     "one.sided", TRUE,  0.8, 0.4, 1,   0.05),
  list("n", "paired",     "two.sided", FALSE, 0.85, 1.5, 1,  0.01)
)

t_rows <- list()
for (i in seq_along(t_scen)) {
  s <- t_scen[[i]]
  solve <- s[[1]]; type <- s[[2]]; alt <- s[[3]]; strict <- s[[4]]
  delta <- s[[6]]; sd <- s[[7]]; sl <- s[[8]]
  if (solve == "power") {
    n <- s[[5]]
    call <- sprintf("power.t.test(n=%s, delta=%s, sd=%s, sig.level=%s, type=\"%s\", alternative=\"%s\", strict=%s)$power",
                    fmt(n), fmt(delta), fmt(sd), fmt(sl), type, alt, strict)
    power <- eval(parse(text = call))
  } else {
    power <- s[[5]]
    call <- sprintf("power.t.test(power=%s, delta=%s, sd=%s, sig.level=%s, type=\"%s\", alternative=\"%s\", strict=%s, tol=1e-10)$n",
                    fmt(power), fmt(delta), fmt(sd), fmt(sl), type, alt, strict)
    n <- eval(parse(text = call))
    not_near_integer(call, n)
  }
  id <- sprintf("t_%02d", i)
  cat(sprintf("%s %s -> %s\n", id, call, fmt(if (solve == "power") power else n)))
  t_rows[[i]] <- data.frame(id = id, type = type, alternative = alt, strict = strict,
                            n = n, delta = delta, sd = sd, sig_level = sl, power = power,
                            solve = solve, source = call, stringsAsFactors = FALSE)
}
t_tab <- do.call(rbind, t_rows)

## Cross-check each row against an independent pt()/qt() evaluation.
pow_t_indep <- function(n, delta, sd, sl, type, alt, strict) {
  tsample <- if (type == "two.sample") 2 else 1
  sides <- if (alt == "two.sided") 2 else 1
  df <- (n - 1) * tsample
  ncp <- sqrt(n / tsample) * delta / sd
  qu <- qt(sl / sides, df, lower.tail = FALSE)
  p <- pt(qu, df, ncp, lower.tail = FALSE)
  if (strict && sides == 2) p <- p + pt(-qu, df, ncp)
  p
}
for (i in seq_len(nrow(t_tab))) {
  r <- t_tab[i, ]
  check(paste(r$id, "power.t.test vs pt() formula"),
        pow_t_indep(r$n, r$delta, r$sd, r$sig_level, r$type, r$alternative, r$strict),
        r$power, if (r$solve == "n") 1e-8 else 1e-13)
}
write_tsv(t_tab, "trials_t.tsv")

## ---------------------------------------------------------------------------
## 2. trials_pt.tsv -- stats::pt with ncp, checked by quadrature
## ---------------------------------------------------------------------------
banner("trials_pt.tsv")

## Independent check: T = (Z + ncp) / S with S = sqrt(V/df), V ~ chisq(df).
## P(T <= q) = E[ pnorm(q*S - ncp) ],  P(T > q) = E[ pnorm(ncp - q*S) ].
## The integrand is evaluated on the log scale and the range is split around
## the mode of the integrand, so that tiny tail probabilities keep full
## relative accuracy.
log_fS <- function(s, df) dchisq(df * s^2, df, log = TRUE) + log(2 * df * s)
pt_quad <- function(q, df, ncp, lower) {
  lg <- function(s) {
    z <- if (lower) q * s - ncp else ncp - q * s
    pnorm(z, log.p = TRUE) + log_fS(s, df)
  }
  ## mode of the integrand (unimodal on (0, Inf))
  hi <- 50
  m <- optimize(lg, c(1e-8, hi), maximum = TRUE, tol = 1e-12)
  lmax <- m$objective; mode <- m$maximum
  f <- function(s) exp(lg(s) - lmax)
  ## breakpoints around the mode, on a scale that fits the spread of S
  sc <- max(1 / sqrt(2 * df), 1e-3)
  br <- sort(unique(pmax(0, mode + sc * c(-40, -20, -10, -5, -2, -1, 0, 1, 2, 5, 10, 20, 40))))
  br <- unique(c(0, br))
  tot <- 0
  for (j in seq_len(length(br) - 1)) {
    tot <- tot + integrate(f, br[j], br[j + 1], rel.tol = 1e-13, abs.tol = 0,
                           subdivisions = 2000L)$value
  }
  tot <- tot + integrate(f, max(br), Inf, rel.tol = 1e-13, abs.tol = 0,
                         subdivisions = 2000L)$value
  exp(log(tot) + lmax)
}

pt_scen <- list(
  ## q, df, ncp, lower_tail
  c(-4, 2, 0, 1), c(1.5, 2, 0.5, 0), c(4, 2, 2, 0), c(-2, 2, 3.5, 1),
  c(8, 2, 6, 0), c(0.5, 2, -3, 1), c(2.919986, 2, 2, 0),
  c(-4, 5, 0.5, 1), c(2, 5, 2, 0), c(2.5, 5, 3.5, 1), c(-3, 5, 6, 1),
  c(8, 5, 10, 0), c(0, 5, -3, 0), c(-1, 5, -3, 0),
  c(-4, 10, 3.5, 1), c(2.2, 10, 2, 0), c(3, 10, 6, 1), c(-2.2, 10, 6, 1),
  c(1, 10, -3, 0), c(6, 10, 10, 0),
  c(2, 30, 0, 0), c(-2, 30, 2, 1), c(2, 30, 3.5, 0), c(-2, 30, 3.5, 1),
  c(-4, 30, 6, 1), c(8, 30, 6, 0), c(2, 30, 10, 0),
  c(2, 200, 0.5, 0), c(-1.97, 200, 2, 1), c(1.97, 200, 3.5, 0),
  c(-4, 200, 10, 1), c(1.97, 200, 6, 0), c(-1.5, 200, -3, 1),
  c(1.96, 1000, 0, 0), c(-1.96, 1000, 2, 1), c(1.96, 1000, 3.5, 0),
  c(2, 1000, 6, 1), c(-3, 1000, 10, 1), c(8, 1000, 3.5, 0),
  c(3, 1000, 10, 0), c(4, 1000, -3, 0), c(8, 1000, 2, 1), c(-4, 1000, -3, 1)
)
pt_rows <- list()
for (i in seq_along(pt_scen)) {
  s <- pt_scen[[i]]
  q <- s[1]; df <- s[2]; ncp <- s[3]; lower <- s[4] == 1
  call <- if (lower) sprintf("pt(%s, df=%s, ncp=%s)", fmt(q), fmt(df), fmt(ncp))
          else sprintf("pt(%s, df=%s, ncp=%s, lower.tail=FALSE)", fmt(q), fmt(df), fmt(ncp))
  val <- eval(parse(text = call))
  vq <- pt_quad(q, df, ncp, lower)
  id <- sprintf("pt_%02d", i)
  rel <- abs(val - vq) / vq
  cat(sprintf("%s %-45s = %.15g   quadrature = %.15g   relerr = %.2e\n", id, call, val, vq, rel))
  pt_rows[[i]] <- data.frame(id = id, q = q, df = df, ncp = ncp, lower_tail = lower,
                             value = val, value_quad = vq, source = call,
                             stringsAsFactors = FALSE)
}
pt_tab <- do.call(rbind, pt_rows)
## R's pt(ncp=) (AS 243) is accurate to about 1e-12 absolute, not relative:
## require abs error <= 1e-12, and relative error <= 1e-9 where value > 1e-3.
for (i in seq_len(nrow(pt_tab))) {
  r <- pt_tab[i, ]
  check(paste(r$id, "pt vs quadrature (abs)"), r$value, r$value_quad, 1e-12, relative = FALSE)
  if (r$value_quad > 1e-3) check(paste(r$id, "pt vs quadrature (rel)"), r$value, r$value_quad, 1e-9)
}
cat(sprintf("rows with value < 1e-6: %d; rows with value > 1 - 1e-6: %d\n",
            sum(pt_tab$value < 1e-6), sum(pt_tab$value > 1 - 1e-6)))
write_tsv(pt_tab, "trials_pt.tsv")

## ---------------------------------------------------------------------------
## 3. trials_welch.tsv -- Welch-Satterthwaite t power with the true SDs
## ---------------------------------------------------------------------------
banner("trials_welch.tsv")
SRC_WELCH <- "independent R implementation of two-sample Welch t power (Welch 1947 / Satterthwaite 1946 df with the true SDs, noncentral t), script trials_make.R"
welch_power <- function(n1, n2, sd1, sd2, delta, alpha, sides) {
  v1 <- sd1^2 / n1; v2 <- sd2^2 / n2
  se <- sqrt(v1 + v2)
  df <- (v1 + v2)^2 / (v1^2 / (n1 - 1) + v2^2 / (n2 - 1))
  ncp <- delta / se
  if (sides == 2) {
    cr <- qt(1 - alpha / 2, df)
    p <- pt(cr, df, ncp, lower.tail = FALSE) + pt(-cr, df, ncp)
  } else {
    cr <- qt(1 - alpha, df)
    p <- pt(cr, df, ncp, lower.tail = FALSE)
  }
  c(df = df, power = p)
}
welch_scen <- list(
  ## n1, n2, sd1, sd2, delta, alpha, sides
  c(20, 20, 1, 2, 1, 0.05, 2),
  c(20, 40, 1, 2, 1, 0.05, 2),
  c(40, 20, 1, 2, 1, 0.05, 2),
  c(6, 10, 1.5, 0.5, 1.2, 0.05, 2),
  c(6, 6, 1, 3, 2, 0.05, 1),
  c(50, 75, 10, 15, 5, 0.01, 2),
  c(12, 30, 2, 1, 1, 0.05, 1),
  c(100, 100, 1, 1, 0.4, 0.05, 2),
  c(8, 25, 4, 1, 2.5, 0.01, 1),
  c(300, 150, 20, 30, 6, 0.05, 2)
)
welch_rows <- list()
for (i in seq_along(welch_scen)) {
  s <- welch_scen[[i]]
  w <- welch_power(s[1], s[2], s[3], s[4], s[5], s[6], s[7])
  id <- sprintf("welch_%02d", i)
  cat(sprintf("%s n1=%g n2=%g sd1=%g sd2=%g delta=%g alpha=%g sides=%g -> df=%.15g power=%.15g\n",
              id, s[1], s[2], s[3], s[4], s[5], s[6], s[7], w["df"], w["power"]))
  welch_rows[[i]] <- data.frame(id = id, n1 = s[1], n2 = s[2], sd1 = s[3], sd2 = s[4],
                                delta = s[5], alpha = s[6], sides = s[7],
                                df = unname(w["df"]), power = unname(w["power"]),
                                source = SRC_WELCH, stringsAsFactors = FALSE)
}
welch_tab <- do.call(rbind, welch_rows)
## With equal SDs and equal n the Welch df equals n1 + n2 - 2, so the power
## must equal power.t.test(strict=TRUE).
r <- welch_tab[welch_tab$id == "welch_08", ]
check("welch_08 df == n1+n2-2", r$df, 198, 1e-13)
check("welch_08 vs power.t.test(n=100, delta=0.4, sd=1, strict=TRUE)",
      r$power, power.t.test(n = 100, delta = 0.4, sd = 1, strict = TRUE)$power, 1e-12)
write_tsv(welch_tab, "trials_welch.tsv")

## ---------------------------------------------------------------------------
## 4. trials_tost.tsv -- exact TOST power (Schuirmann 1987), two integrals
## ---------------------------------------------------------------------------
banner("trials_tost.tsv")
SRC_TOST <- "independent R implementation of exact TOST power (Schuirmann 1987; integral over the sample SD, equivalent to Owen's Q), integrate() over s, script trials_make.R"

## (a) integrate over the sample SD s; df*s^2/sd^2 ~ chisq(df)
tost_a <- function(n1, n2, sd, delta, margin, alpha) {
  k <- sqrt(1 / n1 + 1 / n2); df <- n1 + n2 - 2; cc <- qt(1 - alpha, df)
  smax <- margin / (cc * k)
  f <- function(s) {
    (pnorm((margin - cc * s * k - delta) / (sd * k)) -
       pnorm((-margin + cc * s * k - delta) / (sd * k))) *
      dchisq(df * s^2 / sd^2, df) * 2 * df * s / sd^2
  }
  integrate(f, 0, smax, rel.tol = 1e-13, abs.tol = 0, subdivisions = 2000L)$value
}
## (b) integrate over the observed mean difference x ~ N(delta, (sd*k)^2):
##     both one-sided tests reject iff s <= (margin - |x|)/(c*k)
tost_b <- function(n1, n2, sd, delta, margin, alpha) {
  k <- sqrt(1 / n1 + 1 / n2); df <- n1 + n2 - 2; cc <- qt(1 - alpha, df)
  g <- function(x) dnorm(x, delta, sd * k) * pchisq(df * ((margin - abs(x)) / (cc * k * sd))^2, df)
  integrate(g, -margin, 0, rel.tol = 1e-13, abs.tol = 0, subdivisions = 2000L)$value +
    integrate(g, 0, margin, rel.tol = 1e-13, abs.tol = 0, subdivisions = 2000L)$value
}
tost_z <- function(n1, n2, sd, delta, margin, alpha) {
  k <- sqrt(1 / n1 + 1 / n2)
  pnorm((margin - delta) / (sd * k) - qnorm(1 - alpha)) +
    pnorm((margin + delta) / (sd * k) - qnorm(1 - alpha)) - 1
}
tost_scen <- list(
  ## n1, n2, sd, delta, margin, alpha
  c(20, 20, 1, 0, 1, 0.05),
  c(20, 20, 1, 0.5, 1, 0.05),
  c(6, 6, 1, 0, 1.5, 0.05),
  c(6, 6, 1, 0.75, 1.5, 0.05),
  c(4, 4, 1, 0, 2, 0.05),
  c(30, 60, 2, 0, 1.5, 0.05),
  c(30, 60, 2, 0.75, 1.5, 0.05),
  c(50, 50, 10, 2, 8, 0.05),
  c(8, 16, 1.5, 0.3, 1.2, 0.1),
  c(100, 100, 1, -0.2, 0.5, 0.05),
  c(12, 12, 1, 0, 1, 0.025),
  c(40, 20, 1, 0.1, 0.6, 0.025)
)
tost_rows <- list()
for (i in seq_along(tost_scen)) {
  s <- tost_scen[[i]]
  pa <- tost_a(s[1], s[2], s[3], s[4], s[5], s[6])
  pb <- tost_b(s[1], s[2], s[3], s[4], s[5], s[6])
  pz <- tost_z(s[1], s[2], s[3], s[4], s[5], s[6])
  id <- sprintf("tost_%02d", i)
  cat(sprintf("%s n1=%g n2=%g sd=%g delta=%g margin=%g alpha=%g -> power(a)=%.15g power(b)=%.15g power_z=%.15g\n",
              id, s[1], s[2], s[3], s[4], s[5], s[6], pa, pb, pz))
  check(paste(id, "integral over s vs integral over mean"), pa, pb, 1e-8, relative = FALSE)
  check(paste(id, "integral over s vs integral over mean (rel)"), pa, pb, 1e-9)
  tost_rows[[i]] <- data.frame(id = id, n1 = s[1], n2 = s[2], sd = s[3], delta = s[4],
                               margin = s[5], alpha = s[6], power = pa,
                               power_mean_integral = pb, power_z = pz,
                               source = SRC_TOST, stringsAsFactors = FALSE)
}
tost_tab <- do.call(rbind, tost_rows)
write_tsv(tost_tab, "trials_tost.tsv")

## ---------------------------------------------------------------------------
## 5. trials_ni_means.tsv -- one-sided t non-inferiority, two means
## ---------------------------------------------------------------------------
banner("trials_ni_means.tsv")
SRC_NI <- "independent R implementation of one-sided two-sample t non-inferiority power (noncentral t, ncp = (delta + margin)/(sd*k), df = n1 + n2 - 2), script trials_make.R"
SRC_NI_N <- "independent R implementation: uniroot(power(n1) - target, tol=1e-10) of the one-sided two-sample t non-inferiority power with n2 = ratio*n1 continuous, script trials_make.R"
ni_power <- function(n1, n2, sd, delta, margin, alpha) {
  k <- sqrt(1 / n1 + 1 / n2); df <- n1 + n2 - 2
  pt(qt(1 - alpha, df), df, (delta + margin) / (sd * k), lower.tail = FALSE)
}
ni_scen <- list(
  ## n1, n2, sd, delta, margin, alpha
  c(50, 50, 10, 0, 5, 0.025),
  c(64, 64, 1, 0, 0.5, 0.025),
  c(30, 60, 2, 0.5, 1, 0.05),
  c(10, 10, 1, 0, 1, 0.025),
  c(6, 6, 1, 0.2, 1, 0.05),
  c(100, 50, 15, -2, 6, 0.025),
  c(200, 200, 1, 0.1, 0.2, 0.025),
  c(25, 25, 3, 1, 2, 0.05),
  c(4, 8, 1, 0.5, 1.5, 0.05)
)
ni_rows <- list()
for (i in seq_along(ni_scen)) {
  s <- ni_scen[[i]]
  p <- ni_power(s[1], s[2], s[3], s[4], s[5], s[6])
  id <- sprintf("ni_%02d", i)
  cat(sprintf("%s n1=%g n2=%g sd=%g delta=%g margin=%g alpha=%g -> power=%.15g\n",
              id, s[1], s[2], s[3], s[4], s[5], s[6], p))
  ni_rows[[length(ni_rows) + 1]] <- data.frame(
    id = id, n1 = s[1], n2 = s[2], sd = s[3], delta = s[4], margin = s[5], alpha = s[6],
    power = p, ratio = NA_real_, target = NA_real_, n1_star = NA_real_,
    source = SRC_NI, stringsAsFactors = FALSE)
}
## cross-check: with n1 = n2 the one-sided NI power equals
## power.t.test(delta = delta + margin, alternative = "one.sided")
for (j in c(1, 2, 4, 5, 7, 8)) {
  s <- ni_scen[[j]]
  check(sprintf("ni_%02d vs power.t.test(one.sided, delta=delta+margin)", j),
        ni_rows[[j]]$power,
        power.t.test(n = s[1], delta = s[4] + s[5], sd = s[3], sig.level = s[6],
                     alternative = "one.sided")$power, 1e-13)
}
ni_solve <- list(
  ## sd, delta, margin, alpha, ratio, target
  c(10, 0, 5, 0.025, 1, 0.9),
  c(1, 0, 0.5, 0.025, 2, 0.8),
  c(2, 0.5, 1, 0.05, 0.5, 0.9),
  c(1, 0.2, 1, 0.05, 1, 0.8),
  c(15, -2, 6, 0.025, 3, 0.85),
  c(1, 1, 1, 0.05, 1, 0.8)
)
for (i in seq_along(ni_solve)) {
  s <- ni_solve[[i]]
  sd <- s[1]; delta <- s[2]; margin <- s[3]; alpha <- s[4]; ratio <- s[5]; target <- s[6]
  f <- function(n1) ni_power(n1, ratio * n1, sd, delta, margin, alpha) - target
  lo <- 2 / (1 + ratio) + 1e-9    # df > 0
  if (f(lo) >= 0) stop("ni solve: power at smallest n already above target")
  n1s <- uniroot(f, c(lo, 1e7), tol = 1e-10)$root
  not_near_integer(sprintf("ni_n_%02d", i), n1s)
  id <- sprintf("ni_n_%02d", i)
  back <- ni_power(n1s, ratio * n1s, sd, delta, margin, alpha)
  cat(sprintf("%s sd=%g delta=%g margin=%g alpha=%g ratio=%g target=%g -> n1_star=%.15g (n2=%.15g)\n",
              id, sd, delta, margin, alpha, ratio, target, n1s, ratio * n1s))
  check(paste(id, "power(n1_star) == target"), back, target, 1e-9)
  if (ratio == 1) {
    check(paste(id, "vs power.t.test(power=, one.sided, tol=1e-10)$n"), n1s,
          power.t.test(power = target, delta = delta + margin, sd = sd, sig.level = alpha,
                       alternative = "one.sided", tol = 1e-10)$n, 1e-8)
  }
  ni_rows[[length(ni_rows) + 1]] <- data.frame(
    id = id, n1 = NA_real_, n2 = NA_real_, sd = sd, delta = delta, margin = margin,
    alpha = alpha, power = NA_real_, ratio = ratio, target = target, n1_star = n1s,
    source = SRC_NI_N, stringsAsFactors = FALSE)
}
ni_tab <- do.call(rbind, ni_rows)
write_tsv(ni_tab, "trials_ni_means.tsv")

## ---------------------------------------------------------------------------
## 6. trials_survival.tsv -- Schoenfeld / Freedman events, event probability
## ---------------------------------------------------------------------------
banner("trials_survival.tsv")
SRC_SCH <- "independent R implementation of Schoenfeld 1983 events formula"
SRC_FRE <- "independent R implementation of Freedman 1982 events formula"
SRC_PEV <- "; event probability: exponential survival and dropout, uniform entry (closed form, checked by integrate() double integral); Simpson shortcut Schoenfeld 1983; script trials_make.R"

events_schoenfeld <- function(hr, r, alpha, sides, power) {
  pi1 <- 1 / (1 + r); pi2 <- r / (1 + r)
  (qnorm(1 - alpha / sides) + qnorm(power))^2 / (pi1 * pi2 * log(hr)^2)
}
events_freedman <- function(hr, r, alpha, sides, power) {
  (qnorm(1 - alpha / sides) + qnorm(power))^2 * (r + hr)^2 / (r * (1 - hr)^2)
}
p_event <- function(lambda, eta, a, f) {
  h <- lambda + eta
  if (a == 0) return(lambda / h * (1 - exp(-h * f)))
  lambda / h * (1 - (exp(-h * f) - exp(-h * (a + f))) / (h * a))
}
## defining integral: entry e ~ U(0, a); event at t before dropout and before
## the end of study (a + f - e): density lambda*exp(-(lambda+eta)*t)
p_event_int <- function(lambda, eta, a, f) {
  inner <- function(T) integrate(function(t) lambda * exp(-(lambda + eta) * t), 0, T,
                                 rel.tol = 1e-13, abs.tol = 0)$value
  if (a == 0) return(inner(f))
  integrate(Vectorize(function(e) inner(a + f - e) / a), 0, a,
            rel.tol = 1e-13, abs.tol = 0)$value
}
p_simpson <- function(lambda, a, f) {
  S <- function(t) exp(-lambda * t)
  1 - (S(f) + 4 * S(f + a / 2) + S(f + a)) / 6
}

surv_scen <- list(
  ## events only
  list(method = "schoenfeld", hr = 0.75, ratio = 1,   alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "freedman",   hr = 0.75, ratio = 1,   alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "schoenfeld", hr = 0.6,  ratio = 1,   alpha = 0.05,  sides = 2, power = 0.9),
  list(method = "freedman",   hr = 0.6,  ratio = 1,   alpha = 0.05,  sides = 2, power = 0.9),
  list(method = "schoenfeld", hr = 1.5,  ratio = 1,   alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "freedman",   hr = 1.5,  ratio = 1,   alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "schoenfeld", hr = 0.75, ratio = 2,   alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "freedman",   hr = 0.75, ratio = 2,   alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "schoenfeld", hr = 0.75, ratio = 0.5, alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "freedman",   hr = 0.75, ratio = 0.5, alpha = 0.05,  sides = 2, power = 0.8),
  list(method = "schoenfeld", hr = 0.7,  ratio = 1,   alpha = 0.025, sides = 1, power = 0.9),
  list(method = "freedman",   hr = 0.7,  ratio = 1,   alpha = 0.01,  sides = 2, power = 0.85),
  ## with participants (time unit: any, e.g. years or months)
  list(method = "schoenfeld", hr = 0.75, ratio = 1, alpha = 0.05, sides = 2, power = 0.8,
       median = 3, a = 2, f = 3, dropout = 0),
  list(method = "schoenfeld", hr = 0.75, ratio = 1, alpha = 0.05, sides = 2, power = 0.8,
       median = 3, a = 2, f = 3, dropout = 0.05),
  list(method = "schoenfeld", hr = 0.75, ratio = 1, alpha = 0.05, sides = 2, power = 0.8,
       surv = 0.6, time = 2, a = 0, f = 3, dropout = 0),
  list(method = "schoenfeld", hr = 0.75, ratio = 1, alpha = 0.05, sides = 2, power = 0.8,
       surv = 0.6, time = 2, a = 0, f = 3, dropout = 0.05),
  list(method = "freedman", hr = 0.6, ratio = 2, alpha = 0.05, sides = 2, power = 0.9,
       median = 1.5, a = 2, f = 1, dropout = 0.05),
  list(method = "freedman", hr = 1.5, ratio = 0.5, alpha = 0.05, sides = 2, power = 0.8,
       surv = 0.8, time = 1, a = 3, f = 2, dropout = 0),
  list(method = "schoenfeld", hr = 0.6, ratio = 0.5, alpha = 0.05, sides = 2, power = 0.8,
       surv = 0.7, time = 5, a = 1.5, f = 4, dropout = 0.05),
  list(method = "freedman", hr = 0.75, ratio = 1, alpha = 0.05, sides = 2, power = 0.8,
       median = 12, a = 18, f = 12, dropout = 0),
  list(method = "schoenfeld", hr = 0.8, ratio = 2, alpha = 0.025, sides = 1, power = 0.9,
       median = 24, a = 36, f = 0, dropout = 0),
  list(method = "schoenfeld", hr = 1.5, ratio = 1, alpha = 0.05, sides = 2, power = 0.8,
       surv = 0.9, time = 1, a = 0, f = 2, dropout = 0.05)
)

surv_rows <- list()
for (i in seq_along(surv_scen)) {
  s <- surv_scen[[i]]
  D <- if (s$method == "schoenfeld") events_schoenfeld(s$hr, s$ratio, s$alpha, s$sides, s$power)
       else events_freedman(s$hr, s$ratio, s$alpha, s$sides, s$power)
  id <- sprintf("surv_%02d", i)
  not_near_integer(paste(id, "events"), D)
  src <- if (s$method == "schoenfeld") SRC_SCH else SRC_FRE
  ## [[ ]] matches names exactly ($ would partially match "a" to "alpha")
  getn <- function(nm) if (is.null(s[[nm]])) NA_real_ else s[[nm]]
  med <- getn("median"); sv <- getn("surv"); tm <- getn("time")
  acc <- getn("a"); fu <- getn("f"); dr <- getn("dropout")
  pc <- pi_ <- pc_int <- pi_int <- psc <- psi <- Ntot <- n1s <- NA_real_
  if (!is.na(acc)) {
    lc <- if (!is.na(med)) log(2) / med else -log(sv) / tm
    li <- s$hr * lc
    eta <- -log(1 - dr)
    pc <- p_event(lc, eta, acc, fu); pi_ <- p_event(li, eta, acc, fu)
    pc_int <- p_event_int(lc, eta, acc, fu); pi_int <- p_event_int(li, eta, acc, fu)
    check(paste(id, "P_event control closed form vs integrate()"), pc, pc_int, 1e-9, relative = FALSE)
    check(paste(id, "P_event intervention closed form vs integrate()"), pi_, pi_int, 1e-9, relative = FALSE)
    if (dr == 0) {
      psc <- p_simpson(lc, acc, fu); psi <- p_simpson(li, acc, fu)
    }
    pi1 <- 1 / (1 + s$ratio); pi2 <- s$ratio / (1 + s$ratio)
    Ntot <- D / (pi1 * pi_ + pi2 * pc)
    n1s <- pi1 * Ntot
    not_near_integer(paste(id, "n_total_star"), Ntot)
    not_near_integer(paste(id, "n1_star"), n1s)
    not_near_integer(paste(id, "n2_star"), s$ratio * n1s)
    src <- paste0(src, SRC_PEV)
  } else {
    src <- paste0(src, ", script trials_make.R")
  }
  cat(sprintf("%s %s hr=%g r=%g alpha=%g sides=%g power=%g -> events=%.15g", id, s$method,
              s$hr, s$ratio, s$alpha, s$sides, s$power, D))
  if (!is.na(acc))
    cat(sprintf("\n     median=%s S=%s at t=%s a=%g f=%g dropout=%g: Pc=%.15g Pi=%.15g simpson(c,i)=%s,%s N=%.15g n1=%.15g",
                fmt(med), fmt(sv), fmt(tm), acc, fu, dr, pc, pi_, fmt(psc), fmt(psi), Ntot, n1s))
  cat("\n")
  surv_rows[[i]] <- data.frame(
    id = id, method = s$method, hr = s$hr, ratio = s$ratio, alpha = s$alpha, sides = s$sides,
    power = s$power, events = D, control_median = med, control_survival = sv, time = tm,
    accrual = acc, follow_up = fu, dropout = dr,
    p_event_control = pc, p_event_intervention = pi_,
    p_event_control_int = pc_int, p_event_intervention_int = pi_int,
    p_simpson_control = psc, p_simpson_intervention = psi,
    n_total_star = Ntot, n1_star = n1s, source = src, stringsAsFactors = FALSE)
}
surv_tab <- do.call(rbind, surv_rows)
## Schoenfeld with r = 1 is 4*(za+zb)^2/log(HR)^2; Freedman with r = 1 is (za+zb)^2 (1+HR)^2/(1-HR)^2
check("surv_01 == 4*(za+zb)^2/log(0.75)^2", surv_tab$events[1],
      4 * (qnorm(0.975) + qnorm(0.8))^2 / log(0.75)^2, 1e-14)
check("surv_02 == (za+zb)^2*(1.75)^2/0.25^2", surv_tab$events[2],
      (qnorm(0.975) + qnorm(0.8))^2 * 1.75^2 / 0.25^2, 1e-14)
## Simpson with a = 0 is exact
for (i in which(surv_tab$accrual == 0 & surv_tab$dropout == 0)) {
  check(paste(surv_tab$id[i], "Simpson (a=0) == exact"), surv_tab$p_simpson_control[i],
        surv_tab$p_event_control[i], 1e-14)
}
## Schoenfeld is symmetric in log(HR): HR and 1/HR give the same events
check("schoenfeld(HR=1.5) == schoenfeld(HR=1/1.5)", surv_tab$events[5],
      events_schoenfeld(1 / 1.5, 1, 0.05, 2, 0.8), 1e-14)
write_tsv(surv_tab, "trials_survival.tsv")

## ---------------------------------------------------------------------------
## 7. trials_logrank_data.tsv / trials_logrank.tsv -- survival::survdiff
## ---------------------------------------------------------------------------
banner("trials_logrank.tsv")
lr <- data.frame(
  time   = c(2, 3, 3, 5, 6, 6, 6, 8, 9, 11, 12, 12, 14, 15, 17, 18, 20, 21, 23, 25,
             1, 2, 3, 4, 4, 5, 6, 7, 7, 8, 9, 10, 10, 12, 13, 14, 16, 18),
  status = c(1, 1, 0, 1, 1, 1, 0, 1, 0, 1, 1, 0, 1, 0, 1, 0, 1, 0, 0, 0,
             1, 1, 1, 1, 0, 1, 1, 1, 1, 0, 1, 1, 1, 0, 1, 1, 0, 1),
  group  = c(rep(1, 20), rep(2, 18))
)
write.table(lr, "trials_logrank_data.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote trials_logrank_data.tsv (%d rows)\n", nrow(lr)))
sd_call <- "survdiff(Surv(time, status) ~ group, data = read.delim(\"trials_logrank_data.tsv\"))"
sdf <- eval(parse(text = sd_call))
print(sdf)
chisq <- sdf$chisq
pval <- pchisq(chisq, df = 1, lower.tail = FALSE)
## independent hand implementation of the log-rank statistic
ut <- sort(unique(lr$time[lr$status == 1]))
O1 <- E1 <- V <- 0
for (t in ut) {
  atrisk <- lr$time >= t
  n <- sum(atrisk); n1 <- sum(atrisk & lr$group == 1)
  d <- sum(lr$time == t & lr$status == 1); d1 <- sum(lr$time == t & lr$status == 1 & lr$group == 1)
  O1 <- O1 + d1; E1 <- E1 + d * n1 / n
  if (n > 1) V <- V + d * (n1 / n) * (1 - n1 / n) * (n - d) / (n - 1)
}
chisq_hand <- (O1 - E1)^2 / V
check("log-rank chisq: survdiff vs hand implementation", chisq, chisq_hand, 1e-12)
check("log-rank E1: survdiff vs hand implementation", sdf$exp[1], E1, 1e-12)
check("log-rank var: survdiff vs hand implementation", sdf$var[1, 1], V, 1e-12)
lr_tab <- data.frame(
  id = c("logrank_chisq", "logrank_df", "logrank_p", "logrank_obs_1", "logrank_exp_1",
         "logrank_obs_2", "logrank_exp_2", "logrank_var"),
  quantity = c("chisq", "df", "p_value", "observed_group1", "expected_group1",
               "observed_group2", "expected_group2", "variance_O1_minus_E1"),
  value = c(chisq, length(sdf$n) - 1, pval, sdf$obs[1], sdf$exp[1], sdf$obs[2], sdf$exp[2],
            sdf$var[1, 1]),
  source = c(paste0(sd_call, "$chisq"), paste0("length(", sd_call, "$n) - 1"),
             paste0("pchisq(", sd_call, "$chisq, df=1, lower.tail=FALSE)"),
             paste0(sd_call, "$obs[1]"), paste0(sd_call, "$exp[1]"),
             paste0(sd_call, "$obs[2]"), paste0(sd_call, "$exp[2]"),
             paste0(sd_call, "$var[1,1]")),
  stringsAsFactors = FALSE)
write_tsv(lr_tab, "trials_logrank.tsv")

## ---------------------------------------------------------------------------
## 8. trials_fm.tsv / trials_fm_power.tsv -- Farrington & Manning 1990, Blackwelder 1982
## ---------------------------------------------------------------------------
banner("trials_fm.tsv")
SRC_FM <- "independent R implementation of Farrington & Manning 1990 (Stat Med 9:1447) score-test sample size, restricted MLE of Miettinen & Nurminen 1985 (closed form checked against optimize() and uniroot() on the score), script trials_make.R"
SRC_BW <- "independent R implementation of Blackwelder 1982 Wald (unrestricted variance) non-inferiority sample size, script trials_make.R"
SRC_FMP <- "independent R implementation of Farrington & Manning 1990 score-test power, restricted MLE of Miettinen & Nurminen 1985, script trials_make.R"
SRC_BWP <- "independent R implementation of Blackwelder 1982 Wald non-inferiority power, script trials_make.R"

## closed form, exactly as written in the brief
rmle_closed <- function(p1, p2, theta, d0) {
  a <- 1 + theta
  b <- -(1 + theta + p1 + theta * p2 + d0 * (theta + 2))
  c <- d0^2 + d0 * (2 * p1 + theta + 1) + p1 + theta * p2
  d <- -p1 * d0 * (1 + d0)
  v <- b^3 / (27 * a^3) - b * c / (6 * a^2) + d / (2 * a)
  u <- sign(v) * sqrt(b^2 / (9 * a^2) - c / (3 * a))
  w <- (pi + acos(v / u^3)) / 3
  p1t <- 2 * u * cos(w) - b / (3 * a)
  c(p1t = p1t, p2t = p1t - d0)
}
## expected log-likelihood per participant of group 1 (n2/n1 = theta)
ell <- function(x, p1, p2, theta, d0)
  p1 * log(x) + (1 - p1) * log(1 - x) + theta * (p2 * log(x - d0) + (1 - p2) * log(1 - x + d0))
score <- function(x, p1, p2, theta, d0)
  p1 / x - (1 - p1) / (1 - x) + theta * (p2 / (x - d0) - (1 - p2) / (1 - x + d0))
rmle_optimize <- function(p1, p2, theta, d0) {
  lo <- max(0, d0); hi <- min(1, 1 + d0)
  optimize(ell, c(lo, hi), p1 = p1, p2 = p2, theta = theta, d0 = d0,
           maximum = TRUE, tol = 1e-15)$maximum
}
rmle_score <- function(p1, p2, theta, d0) {
  lo <- max(0, d0); hi <- min(1, 1 + d0)
  eps <- 1e-14
  uniroot(score, c(lo + eps, hi - eps), p1 = p1, p2 = p2, theta = theta, d0 = d0,
          tol = 1e-15)$root
}
rmle_all <- function(id, p1, p2, theta, d0) {
  cf <- rmle_closed(p1, p2, theta, d0)
  xo <- rmle_optimize(p1, p2, theta, d0)
  xs <- rmle_score(p1, p2, theta, d0)
  cat(sprintf("  RMLE %s p1=%g p2=%g theta=%g d0=%g: closed=%.15g optimize=%.15g score-root=%.15g\n",
              id, p1, p2, theta, d0, cf["p1t"], xo, xs))
  check(paste(id, "RMLE closed form vs uniroot(score)"), unname(cf["p1t"]), xs, 1e-8, relative = FALSE)
  check(paste(id, "RMLE closed form vs optimize(loglik)"), unname(cf["p1t"]), xo, 1e-8, relative = FALSE)
  ## the score at the closed-form root must be ~ 0
  sc <- score(cf["p1t"], p1, p2, theta, d0)
  if (abs(sc) > 1e-9) stop("score at closed form not ~0: ", sc)
  cf
}

fm_n <- function(p1, p2, r, d0, alpha, power, p1t, p2t) {
  za <- qnorm(1 - alpha); zb <- qnorm(power)
  (za * sqrt(p1t * (1 - p1t) + p2t * (1 - p2t) / r) +
     zb * sqrt(p1 * (1 - p1) + p2 * (1 - p2) / r))^2 / (p1 - p2 - d0)^2
}
bw_n <- function(p1, p2, r, d0, alpha, power) {
  (qnorm(1 - alpha) + qnorm(power))^2 * (p1 * (1 - p1) + p2 * (1 - p2) / r) / (p1 - p2 - d0)^2
}
fm_pow <- function(p1, p2, n1, n2, d0, alpha, p1t, p2t) {
  r <- n2 / n1; za <- qnorm(1 - alpha)
  pnorm((abs(p1 - p2 - d0) * sqrt(n1) - za * sqrt(p1t * (1 - p1t) + p2t * (1 - p2t) / r)) /
          sqrt(p1 * (1 - p1) + p2 * (1 - p2) / r))
}
bw_pow <- function(p1, p2, n1, n2, d0, alpha) {
  pnorm(abs(p1 - p2 - d0) / sqrt(p1 * (1 - p1) / n1 + p2 * (1 - p2) / n2) - qnorm(1 - alpha))
}

fm_scen <- list(
  ## p1, p2, ratio, d0, alpha, power
  c(0.8, 0.8, 1, -0.1, 0.025, 0.8),
  c(0.8, 0.8, 1, -0.1, 0.025, 0.9),
  c(0.8, 0.8, 2, -0.1, 0.025, 0.8),
  c(0.85, 0.8, 1, -0.1, 0.025, 0.9),
  c(0.85, 0.8, 2, -0.1, 0.05, 0.8),
  c(0.1, 0.1, 1, 0.05, 0.05, 0.8),
  c(0.1, 0.1, 2, 0.1, 0.025, 0.9),
  c(0.6, 0.65, 1, -0.15, 0.05, 0.8),
  c(0.3, 0.3, 0.5, -0.1, 0.025, 0.8),
  c(0.5, 0.5, 1, -0.12, 0.05, 0.9),
  c(0.95, 0.95, 1, -0.05, 0.025, 0.8),
  c(0.2, 0.15, 3, 0.1, 0.025, 0.85)
)
fm_rows <- list()
for (i in seq_along(fm_scen)) {
  s <- fm_scen[[i]]
  p1 <- s[1]; p2 <- s[2]; r <- s[3]; d0 <- s[4]; alpha <- s[5]; power <- s[6]
  id <- sprintf("fm_%02d", i)
  cf <- rmle_all(id, p1, p2, r, d0)
  nfm <- fm_n(p1, p2, r, d0, alpha, power, cf[1], cf[2])
  nbw <- bw_n(p1, p2, r, d0, alpha, power)
  not_near_integer(paste(id, "fm n1"), nfm); not_near_integer(paste(id, "fm n2"), r * nfm)
  not_near_integer(paste(id, "bw n1"), nbw); not_near_integer(paste(id, "bw n2"), r * nbw)
  check(paste(id, "FM power(n1_star) == target"),
        fm_pow(p1, p2, nfm, r * nfm, d0, alpha, cf[1], cf[2]), power, 1e-12)
  check(paste(id, "Wald power(n1_star) == target"),
        bw_pow(p1, p2, nbw, r * nbw, d0, alpha), power, 1e-12)
  cat(sprintf("%s p1=%g p2=%g r=%g d0=%g alpha=%g power=%g -> FM n1=%.15g  Blackwelder n1=%.15g\n",
              id, p1, p2, r, d0, alpha, power, nfm, nbw))
  fm_rows[[length(fm_rows) + 1]] <- data.frame(
    id = paste0(id, "_fm"), method = "farrington-manning", p1 = p1, p2 = p2, ratio = r, d0 = d0,
    alpha = alpha, power = power, n1_star = unname(nfm), p1_tilde = unname(cf[1]),
    p2_tilde = unname(cf[2]), source = SRC_FM, stringsAsFactors = FALSE)
  fm_rows[[length(fm_rows) + 1]] <- data.frame(
    id = paste0(id, "_bw"), method = "blackwelder", p1 = p1, p2 = p2, ratio = r, d0 = d0,
    alpha = alpha, power = power, n1_star = nbw, p1_tilde = NA_real_, p2_tilde = NA_real_,
    source = SRC_BW, stringsAsFactors = FALSE)
}
fm_tab <- do.call(rbind, fm_rows)
write_tsv(fm_tab, "trials_fm.tsv")

banner("trials_fm_power.tsv")
fmp_scen <- list(
  ## p1, p2, n1, n2, d0, alpha
  c(0.8, 0.8, 250, 250, -0.1, 0.025),
  c(0.8, 0.8, 200, 400, -0.1, 0.025),
  c(0.85, 0.8, 150, 150, -0.1, 0.025),
  c(0.85, 0.8, 100, 200, -0.1, 0.05),
  c(0.1, 0.1, 300, 300, 0.05, 0.05),
  c(0.1, 0.1, 100, 200, 0.1, 0.025),
  c(0.6, 0.65, 500, 500, -0.15, 0.05),
  c(0.3, 0.3, 400, 200, -0.1, 0.025),
  c(0.5, 0.5, 60, 60, -0.12, 0.05),
  c(0.95, 0.95, 120, 120, -0.05, 0.025),
  c(0.2, 0.15, 80, 240, 0.1, 0.025),
  c(0.9, 0.85, 40, 45, -0.1, 0.05)
)
fmp_rows <- list()
for (i in seq_along(fmp_scen)) {
  s <- fmp_scen[[i]]
  p1 <- s[1]; p2 <- s[2]; n1 <- s[3]; n2 <- s[4]; d0 <- s[5]; alpha <- s[6]
  id <- sprintf("fmp_%02d", i)
  cf <- rmle_all(id, p1, p2, n2 / n1, d0)
  pf <- unname(fm_pow(p1, p2, n1, n2, d0, alpha, cf[1], cf[2]))
  pb <- bw_pow(p1, p2, n1, n2, d0, alpha)
  cat(sprintf("%s p1=%g p2=%g n1=%g n2=%g d0=%g alpha=%g -> FM power=%.15g  Wald power=%.15g (p1t=%.15g)\n",
              id, p1, p2, n1, n2, d0, alpha, pf, pb, cf[1]))
  fmp_rows[[length(fmp_rows) + 1]] <- data.frame(
    id = paste0(id, "_fm"), method = "farrington-manning", p1 = p1, p2 = p2, n1 = n1, n2 = n2,
    d0 = d0, alpha = alpha, power = pf, p1_tilde = unname(cf[1]), p2_tilde = unname(cf[2]),
    source = SRC_FMP, stringsAsFactors = FALSE)
  fmp_rows[[length(fmp_rows) + 1]] <- data.frame(
    id = paste0(id, "_bw"), method = "blackwelder", p1 = p1, p2 = p2, n1 = n1, n2 = n2,
    d0 = d0, alpha = alpha, power = pb, p1_tilde = NA_real_, p2_tilde = NA_real_,
    source = SRC_BWP, stringsAsFactors = FALSE)
}
fmp_tab <- do.call(rbind, fmp_rows)
write_tsv(fmp_tab, "trials_fm_power.tsv")

cat(sprintf("\nAll %d cross-checks passed.\n", n_checks))
