## matched_make.R -- reference values for power/matched.go and
## power/matchedsim.go (matched case-control designs).
##
## Run from this folder:   Rscript matched_make.R > matched_make.out
## (about a minute; the R simulations take most of it)
##
## Writes
##   matched_closed.tsv   Dupont (1988), Connor (1987) and Schlesselman (1982)
##                        sample sizes and powers on an invented grid
##   matched_maxphi.tsv   the largest feasible within-set correlation, by uniroot
##   matched_mcnemar.tsv  exact power of McNemar's z test and of the exact
##                        (binomial) McNemar test, by enumeration with dbinom
##   matched_sim.tsv      an R simulation of matched sets analysed by the
##                        Mantel-Haenszel test stratified by set
##   matched_binom_bins.tsv  binomial probabilities of bins (pbinom), for the
##                        goodness-of-fit test of the binomial sampler
##
## Only base R (stats) is used: qnorm, pnorm, dbinom, pbinom, qbinom, choose,
## uniroot, rbinom, mantelhaen.test, mcnemar.test, binom.test. Every formula is
## written out below from the papers' equations (as restated in the comments);
## nothing here calls, or was copied from, the Go code or any sample-size
## program. The scenarios are invented numbers picked to cover the cases.

options(digits = 15, width = 140, warn = 1)
cat("R.version.string:", R.version.string, "\n\n")

fmt <- function(x) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA", ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"), sprintf("%.15g", x)))
}
n_checks <- 0
check <- function(what, ok) {
  if (!isTRUE(ok)) stop("CHECK FAILED: ", what)
  n_checks <<- n_checks + 1
  cat("CHECK", what, "OK\n")
}
close_rel <- function(a, b, tol) all(abs(a - b) <= tol * pmax(1, abs(b)))
write_tsv <- function(df, file) {
  out <- as.data.frame(lapply(df, fmt), stringsAsFactors = FALSE)
  write.table(out, file, sep = "\t", quote = FALSE, row.names = FALSE)
  cat("wrote", file, nrow(df), "rows\n")
}

## ---------------------------------------------------------------------------
## 1. The within-set exposure model (Dupont 1988).
## p1 = p0 psi / (1 + p0 (psi - 1)); the 2x2 joint of (case exposed, control
## exposed) has margins p1, p0 and correlation phi:
##   P(both exposed) = p0 p1 + phi sqrt(p1 q1 p0 q0)
## so P(control exposed | case exposed)   = P(both)/p1
##    P(control exposed | case unexposed) = (p0 - P(both))/q1
model <- function(p0, psi, phi) {
  p1 <- p0 * psi / (1 + p0 * (psi - 1))
  q0 <- 1 - p0; q1 <- 1 - p1
  both <- p0 * p1 + phi * sqrt(p1 * q1 * p0 * q0)
  pplus <- both / p1
  pminus <- (p0 - both) / q1
  feasible <- pplus >= -1e-12 && pplus <= 1 + 1e-12 && pminus >= -1e-12 && pminus <= 1 + 1e-12
  list(p1 = p1, q1 = q1, pplus = pplus, pminus = pminus, feasible = feasible)
}

## Dupont (1988): sets with m exposed members (m = 1..M) have probability
##   t_m = p1 C(M, m-1) p+^(m-1) q+^(M-m+1) + q1 C(M, m) p-^m q-^(M-m)
## case exposed among them with prob e_m = m psi/(m psi + M - m + 1) (H1),
## e0_m = m/(M+1) (H0); D = sum t (e - e0), V0 = sum t e0(1-e0),
## V1 = sum t e(1-e);
##   n = (z_a sqrt(V0) + z_b sqrt(V1))^2 / D^2
##   power = pnorm((sqrt(n) |D| - z_a sqrt(V0)) / sqrt(V1))
dupont_parts <- function(p0, psi, M, phi) {
  g <- model(p0, psi, phi)
  m <- 1:M
  tm <- g$p1 * choose(M, m - 1) * g$pplus^(m - 1) * (1 - g$pplus)^(M - m + 1) +
    g$q1 * choose(M, m) * g$pminus^m * (1 - g$pminus)^(M - m)
  e <- m * psi / (m * psi + M - m + 1)
  e0 <- m / (M + 1)
  list(t = tm, D = sum(tm * (e - e0)), V0 = sum(tm * e0 * (1 - e0)), V1 = sum(tm * e * (1 - e)),
       W = sum(tm * (e - e0)^2) - sum(tm * (e - e0))^2)
}
dupont_n <- function(p0, psi, M, phi, alpha, sides, power) {
  d <- dupont_parts(p0, psi, M, phi)
  (qnorm(1 - alpha / sides) * sqrt(d$V0) + qnorm(power) * sqrt(d$V1))^2 / d$D^2
}
dupont_power <- function(p0, psi, M, phi, alpha, sides, n) {
  d <- dupont_parts(p0, psi, M, phi)
  pnorm((sqrt(n) * abs(d$D) - qnorm(1 - alpha / sides) * sqrt(d$V0)) / sqrt(d$V1))
}

## Connor (1987): p10 = p1 q+, p01 = q1 p-, pd = p10 + p01, delta = p10 - p01
##   n = (z_a sqrt(pd) + z_b sqrt(pd - delta^2))^2 / delta^2
##   power = pnorm((sqrt(n) |delta| - z_a sqrt(pd)) / sqrt(pd - delta^2))
pairs_probs <- function(p0, psi, phi) {
  g <- model(p0, psi, phi)
  c(p10 = g$p1 * (1 - g$pplus), p01 = g$q1 * g$pminus)
}
connor_n <- function(p0, psi, phi, alpha, sides, power) {
  pp <- pairs_probs(p0, psi, phi); pd <- sum(pp); del <- pp[[1]] - pp[[2]]
  (qnorm(1 - alpha / sides) * sqrt(pd) + qnorm(power) * sqrt(pd - del^2))^2 / del^2
}
connor_power <- function(p0, psi, phi, alpha, sides, n) {
  pp <- pairs_probs(p0, psi, phi); pd <- sum(pp); del <- pp[[1]] - pp[[2]]
  pnorm((sqrt(n) * abs(del) - qnorm(1 - alpha / sides) * sqrt(pd)) / sqrt(pd - del^2))
}

## Schlesselman (1982, ch. 6): P = psi/(1+psi); discordant pairs
##   m = (z_a/2 + z_b sqrt(P(1-P)))^2 / (P - 1/2)^2
## total pairs m / pe with pe = p0 q1 + p1 q0 (exposures independent within
## pairs); power at n pairs from m = n pe.
schl_m <- function(psi, alpha, sides, power) {
  P <- psi / (1 + psi)
  (qnorm(1 - alpha / sides) / 2 + qnorm(power) * sqrt(P * (1 - P)))^2 / (P - 0.5)^2
}
schl_pe <- function(p0, psi) {
  p1 <- p0 * psi / (1 + p0 * (psi - 1))
  p0 * (1 - p1) + p1 * (1 - p0)
}
schl_power <- function(p0, psi, alpha, sides, n) {
  P <- psi / (1 + psi); m <- n * schl_pe(p0, psi)
  pnorm((sqrt(m) * abs(P - 0.5) - qnorm(1 - alpha / sides) / 2) / sqrt(P * (1 - P)))
}

## ---------------------------------------------------------------------------
## 2. The grid.
cat("== closed forms ==\n")
grid <- expand.grid(phi = c(0, 0.1, 0.2), M = c(1, 2, 4), psi = c(1.5, 2, 3, 0.5), p0 = c(0.1, 0.3, 0.5))
grid$alpha <- 0.05; grid$sides <- 2; grid$power <- 0.8
g2 <- expand.grid(M = c(1, 2, 4), psi = c(2, 0.5), p0 = c(0.1, 0.3, 0.5))
g2$phi <- 0.1; g2$alpha <- 0.01; g2$sides <- 1; g2$power <- 0.9
g3 <- data.frame(p0 = c(0.3, 0.1, 0.5, 0.3, 0.2), psi = c(3, 0.25, 5, 3, 4), M = c(2, 1, 4, 1, 3),
                 phi = c(0.6, 0.55, 0.45, 0.57, 0.49), alpha = 0.05, sides = 2, power = 0.8)
grid <- rbind(grid[, names(g3)], g2[, names(g3)], g3)

rows <- list()
for (i in seq_len(nrow(grid))) {
  x <- grid[i, ]
  g <- model(x$p0, x$psi, x$phi)
  r <- data.frame(id = sprintf("mc_%03d", i), p0 = x$p0, psi = x$psi, M = x$M, phi = x$phi,
                  alpha = x$alpha, sides = x$sides, power = x$power, feasible = as.integer(g$feasible),
                  p1 = g$p1, pplus = NA, pminus = NA, discordant = NA, dupont_sets = NA, n_at = NA,
                  dupont_power = NA, connor_pairs = NA, connor_power = NA, schl_discordant = NA,
                  schl_pairs = NA, schl_power = NA, source = "")
  if (g$feasible) {
    d <- dupont_parts(x$p0, x$psi, x$M, x$phi)
    r$pplus <- g$pplus; r$pminus <- g$pminus
    r$discordant <- sum(d$t)
    ## the same by the complement: 1 - P(no member exposed) - P(all exposed)
    check(sprintf("%s discordant = 1 - q1 q-^M - p1 p+^M", r$id),
          close_rel(r$discordant, 1 - g$q1 * (1 - g$pminus)^x$M - g$p1 * g$pplus^x$M, 1e-13))
    r$dupont_sets <- dupont_n(x$p0, x$psi, x$M, x$phi, x$alpha, x$sides, x$power)
    r$n_at <- ceiling(0.6 * r$dupont_sets)
    r$dupont_power <- dupont_power(x$p0, x$psi, x$M, x$phi, x$alpha, x$sides, r$n_at)
    src <- sprintf("Dupont (1988) written in R: t_m from choose(); n = (qnorm(1-%g/%d)*sqrt(V0) + qnorm(%g)*sqrt(V1))^2/D^2; power = pnorm((sqrt(n_at)*abs(D) - qnorm(1-%g/%d)*sqrt(V0))/sqrt(V1))",
                   x$alpha, x$sides, x$power, x$alpha, x$sides)
    if (x$M == 1) {
      r$connor_pairs <- connor_n(x$p0, x$psi, x$phi, x$alpha, x$sides, x$power)
      r$connor_power <- connor_power(x$p0, x$psi, x$phi, x$alpha, x$sides, r$n_at)
      r$schl_discordant <- schl_m(x$psi, x$alpha, x$sides, x$power)
      r$schl_pairs <- r$schl_discordant / schl_pe(x$p0, x$psi)
      r$schl_power <- schl_power(x$p0, x$psi, x$alpha, x$sides, r$n_at)
      src <- paste0(src, "; Connor (1987) n = (z_a sqrt(pd) + z_b sqrt(pd - delta^2))^2/delta^2; Schlesselman (1982) m = (z_a/2 + z_b sqrt(P(1-P)))^2/(P-1/2)^2, pairs m/pe")
      ## Identities (derivation in matched_README.md):
      ## (a) Connor's delta = p10 - p01 is p1 - p0 whatever phi;
      pp <- pairs_probs(x$p0, x$psi, x$phi)
      check(sprintf("%s Connor delta = p1 - p0", r$id), abs((pp[[1]] - pp[[2]]) - (g$p1 - x$p0)) < 1e-15)
      if (x$phi == 0) {
        ## (b) at phi = 0, Dupont's 1:1 sets = Schlesselman's pairs;
        check(sprintf("%s Dupont(M=1, phi=0) = Schlesselman", r$id), close_rel(r$dupont_sets, r$schl_pairs, 1e-12))
        ## (c) Dupont's formula with the unconditional variance V1 + W
        ##     (W = variance of E[a - e0 | m] over the sets) is Connor's.
        cn <- (qnorm(1 - x$alpha / x$sides) * sqrt(d$V0) + qnorm(x$power) * sqrt(d$V1 + d$W))^2 / d$D^2
        check(sprintf("%s unconditional Dupont(M=1, phi=0) = Connor", r$id), close_rel(cn, r$connor_pairs, 1e-12))
      }
    }
    r$source <- src
  } else {
    r$source <- "model() in matched_make.R: P(control exposed | case exposed or not) outside [0, 1]: infeasible"
  }
  rows[[i]] <- r
}
closed <- do.call(rbind, rows)
write_tsv(closed, "matched_closed.tsv")

## With phi > 0 the model's own matched odds ratio p10/p01 is not psi:
for (x in list(c(0.3, 2, 0.1), c(0.3, 2, 0.2), c(0.1, 3, 0.2), c(0.5, 0.5, 0.2))) {
  pp <- pairs_probs(x[1], x[2], x[3])
  cat(sprintf("p0 = %g, psi = %g, phi = %g: p10/p01 = %.6f\n", x[1], x[2], x[3], pp[[1]] / pp[[2]]))
}
## ... and for M > 1 the probability that the case is the exposed one among
## sets with m exposed, under the data model, is not e_m:
for (x in list(c(0.3, 2, 4, 0), c(0.3, 2, 4, 0.2))) {
  g <- model(x[1], x[2], x[4]); M <- x[3]; m <- 1:M
  a <- g$p1 * choose(M, m - 1) * g$pplus^(m - 1) * (1 - g$pplus)^(M - m + 1)
  b <- g$q1 * choose(M, m) * g$pminus^m * (1 - g$pminus)^(M - m)
  cat(sprintf("p0 = %g, psi = %g, M = %d, phi = %g:\n  model P(case exposed | m) = %s\n  Dupont e_m              = %s\n",
              x[1], x[2], M, x[4], paste(sprintf("%.5f", a / (a + b)), collapse = " "),
              paste(sprintf("%.5f", m * x[2] / (m * x[2] + M - m + 1)), collapse = " ")))
}

## ---------------------------------------------------------------------------
## 3. The largest feasible phi, found numerically: the smallest phi at which
## P(control exposed | case exposed) reaches 1 or P(control exposed | case
## unexposed) reaches 0, by uniroot on the formulas of section 1.
cat("\n== largest feasible phi ==\n")
mp <- expand.grid(psi = c(0.2, 0.5, 0.9, 1.5, 2, 3, 10), p0 = c(0.05, 0.3, 0.7))
mp$maxphi <- NA
for (i in seq_len(nrow(mp))) {
  f1 <- function(phi) model(mp$p0[i], mp$psi[i], phi)$pplus - 1
  f2 <- function(phi) model(mp$p0[i], mp$psi[i], phi)$pminus
  r1 <- if (f1(5) > 0) uniroot(f1, c(0, 5), tol = 1e-15)$root else Inf
  r2 <- if (f2(5) < 0) uniroot(f2, c(0, 5), tol = 1e-15)$root else Inf
  mp$maxphi[i] <- min(r1, r2)
}
mp$id <- sprintf("mp_%02d", seq_len(nrow(mp)))
mp$source <- "min of uniroot(P(ctrl exposed|case exposed) - 1) and uniroot(P(ctrl exposed|case unexposed)), tol 1e-15, on model() of matched_make.R"
write_tsv(mp[, c("id", "p0", "psi", "maxphi", "source")], "matched_maxphi.tsv")

## ---------------------------------------------------------------------------
## 4. Exact power of McNemar's tests at n pairs.
## d ~ Bin(n, pd) discordant pairs, n10 | d ~ Bin(d, p10/pd).
## z test (no continuity correction): z = (n10 - n01)/sqrt(n10 + n01);
##   two-sided rejects when |z| > qnorm(1 - alpha/2), one-sided when
##   dir * z > qnorm(1 - alpha); d = 0 never rejects.
## Exact (conditional binomial) test: binom.test(n10, d, 0.5)$p.value <= alpha
##   (alternative "greater" for dir = +1, "less" for dir = -1).
cat("\n== McNemar ==\n")
zreject <- function(n10, d, alpha, sides, dir) {
  z <- (n10 - (d - n10)) / sqrt(n10 + (d - n10))
  if (sides == 2) abs(z) > qnorm(1 - alpha / 2) else dir * z > qnorm(1 - alpha)
}
## binom.test's p-value written with pbinom (checked against binom.test below)
bpval <- function(x, d, sides, dir) {
  lo <- pbinom(x, d, 0.5); hi <- pbinom(x - 1, d, 0.5, lower.tail = FALSE)
  if (sides == 2) pmin(1, 2 * pmin(lo, hi)) else if (dir > 0) hi else lo
}
set.seed(11)
tested <- 0
for (d in 1:60) for (x in 0:d) for (sd in list(c(2, 0), c(1, 1), c(1, -1))) {
  alt <- if (sd[1] == 2) "two.sided" else if (sd[2] > 0) "greater" else "less"
  p <- binom.test(x, d, 0.5, alternative = alt)$p.value
  if (abs(p - bpval(x, d, sd[1], sd[2])) > 1e-12 * max(1, p)) stop("binom.test mismatch ", d, " ", x)
  tested <- tested + 1
}
check(sprintf("pbinom p-value = binom.test for %d (d, n10, alternative)", tested), TRUE)
## the z rule equals mcnemar.test(correct = FALSE)'s p-value <= alpha
mm <- 0
for (d in 1:80) for (x in 0:d) {
  tab <- matrix(c(7, d - x, x, 5), 2)  # concordant cells do not enter
  p <- mcnemar.test(tab, correct = FALSE)$p.value
  if (!is.na(p) && (p <= 0.05) != zreject(x, d, 0.05, 2, 0)) stop("mcnemar.test mismatch ", d, " ", x)
  mm <- mm + 1
}
check(sprintf("z rule = mcnemar.test(correct=FALSE)$p.value <= 0.05 on %d tables", mm), TRUE)

gap_min <- Inf   # smallest relative distance of a z from its critical value
gapb_min <- Inf  # smallest relative distance of a binomial tail U(k) from alpha/sides
mcnemar_full <- function(n, p10, p01, alpha, sides, dir) {
  pd <- p10 + p01; pz <- 0; pb <- 0
  for (d in 1:n) {
    x <- 0:d
    f <- dbinom(d, n, pd) * dbinom(x, d, p10 / pd)
    pz <- pz + sum(f[zreject(x, d, alpha, sides, dir)])
    pb <- pb + sum(f[bpval(x, d, sides, dir) <= alpha])
    z <- (2 * x - d) / sqrt(d)
    c <- qnorm(1 - alpha / sides)
    gap_min <<- min(gap_min, abs(abs(z) - c) / c)
  }
  c(pz, pb)
}
## Over all d at once with pbinom tails: for each d, the smallest n10 the
## upper tail rejects and the largest the lower tail rejects.
mcnemar_tails <- function(n, p10, p01, alpha, sides, dir) {
  pd <- p10 + p01; d <- 1:n; pi <- p10 / pd
  c <- qnorm(1 - alpha / sides)
  ku <- floor((d + c * sqrt(d)) / 2) + 1
  ## settle rounding: the z rule itself decides
  zu <- function(k) (2 * k - d) / sqrt(d)
  for (it in 1:3) {
    down <- ku - 1 >= 0 & zu(ku - 1) > c; ku[down] <- ku[down] - 1
    up <- ku <= d & !(zu(ku) > c); ku[up] <- ku[up] + 1
  }
  gap_min <<- min(gap_min, min(abs(zu(ku) - c) / c), min(abs(zu(ku - 1) - c) / c))
  up_p <- pbinom(ku - 1, d, pi, lower.tail = FALSE)            # P(n10 >= ku)
  lo_p <- pbinom(d - ku, d, pi)                                # P(n10 <= d - ku)
  rz <- if (sides == 2) up_p + lo_p else if (dir > 0) up_p else lo_p
  ## exact test: U(k) = P(Bin(d, 1/2) >= k); reject n10 >= kb with kb the
  ## smallest k with U(k) <= alpha/sides (two-sided p = 2 U for n10 > d/2)
  a1 <- alpha / sides
  kb <- qbinom(a1, d, 0.5, lower.tail = FALSE) + 1
  for (it in 1:3) {
    down <- kb - 1 >= 0 & pbinom(kb - 2, d, 0.5, lower.tail = FALSE) <= a1; kb[down] <- kb[down] - 1
    up <- kb <= d & !(pbinom(kb - 1, d, 0.5, lower.tail = FALSE) <= a1); kb[up] <- kb[up] + 1
  }
  gapb_min <<- min(gapb_min, abs(pbinom(kb - 1, d, 0.5, lower.tail = FALSE) - a1) / a1,
                   abs(pbinom(kb - 2, d, 0.5, lower.tail = FALSE) - a1) / a1)
  bu <- ifelse(kb <= d, pbinom(kb - 1, d, pi, lower.tail = FALSE), 0)
  bl <- ifelse(kb <= d, pbinom(d - kb, d, pi), 0)
  rb <- if (sides == 2) bu + bl else if (dir > 0) bu else bl
  w <- dbinom(d, n, pd)
  c(sum(w * rz), sum(w * rb))
}

mc_cases <- data.frame(
  p0 = c(0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.3, 0.15, 0.15, 0.3, 0.3, 0.5, 0.4, 0.4, 0.4, 0.1),
  psi = c(2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 2.5, 0.4, 0.4, 1, 1, 3, 1.02, 1.01, 1.01, 4),
  phi = c(0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.1, 0.2, 0.2, 0.1, 0.1, 0, 0.1, 0.1, 0, 0.15),
  pairs = c(5, 20, 57, 90, 150, 400, 1000, 120, 120, 90, 1000, 33, 100000, 1000000, 200000, 75),
  alpha = c(0.05, 0.05, 0.05, 0.05, 0.05, 0.05, 0.05, 0.025, 0.025, 0.05, 0.05, 0.01, 0.05, 0.05, 0.05, 0.05),
  sides = c(2, 2, 2, 2, 2, 2, 2, 1, 1, 2, 2, 1, 2, 2, 1, 2),
  dir = c(0, 0, 0, 0, 0, 0, 0, -1, 1, 0, 0, 1, 0, 0, 1, 0))
mc_rows <- list()
for (i in seq_len(nrow(mc_cases))) {
  x <- mc_cases[i, ]
  pp <- pairs_probs(x$p0, x$psi, x$phi)
  tl <- mcnemar_tails(x$pairs, pp[[1]], pp[[2]], x$alpha, x$sides, x$dir)
  if (x$pairs <= 1000) {
    fu <- mcnemar_full(x$pairs, pp[[1]], pp[[2]], x$alpha, x$sides, x$dir)
    check(sprintf("mcn_%02d double sum = pbinom-tail sum (z %.3g, exact %.3g)", i, abs(fu[1] - tl[1]), abs(fu[2] - tl[2])),
          abs(fu[1] - tl[1]) < 1e-12 && abs(fu[2] - tl[2]) < 1e-12)
    v <- fu
    src <- "double sum over d = 1..n and n10 = 0..d of dbinom(d, n, pd)*dbinom(n10, d, p10/pd) over the rejected (d, n10); rule zreject / binom.test p <= alpha (matched_make.R)"
  } else {
    v <- tl
    src <- "sum over d = 1..n of dbinom(d, n, pd) times the pbinom(., d, p10/pd) tails beyond the critical n10 of each d (matched_make.R)"
  }
  mc_rows[[i]] <- data.frame(id = sprintf("mcn_%02d", i), p0 = x$p0, psi = x$psi, phi = x$phi, pairs = x$pairs,
                             alpha = x$alpha, sides = x$sides, dir = x$dir, p10 = pp[[1]], p01 = pp[[2]],
                             power_z = v[1], power_exact = v[2], source = src)
}
mcn <- do.call(rbind, mc_rows)
## Ties: a decision could flip between R and another correct program only
## when a statistic lies within rounding (1e-15 relative) of its critical
## value; with up to a million values of d, gaps near 1e-10 occur by chance.
cat(sprintf("smallest relative gap between |z| and the critical value: %.3g\n", gap_min))
cat(sprintf("smallest relative gap between a binomial tail and alpha/sides: %.3g\n", gapb_min))
check("no z within a relative 1e-12 of its critical value", gap_min > 1e-12)
check("no binomial tail within a relative 1e-12 of alpha/sides", gapb_min > 1e-12)
write_tsv(mcn, "matched_mcnemar.tsv")

## ---------------------------------------------------------------------------
## 5. Simulation of matched sets analysed by the Mantel-Haenszel test
## stratified by set. Each set: case exposed ~ Bernoulli(p1); its M controls
## each exposed ~ Bernoulli(p+ or p-) independently. With a_i = 1 when the
## case is exposed and m_i the exposed members of the set,
##   z = sum(a_i - m_i/(M+1)) / sqrt(sum m_i (M+1-m_i)/(M+1)^2)
## (sets with m_i = 0 or M+1 add nothing to either sum); no informative set
## means no rejection. Checked against mantelhaen.test(correct = FALSE).
cat("\n== simulation ==\n")
sim_z <- function(a, m, M) {
  S <- sum(a - m / (M + 1)); V <- sum(m * (M + 1 - m) / (M + 1)^2)
  S / sqrt(V)
}
draw_sets <- function(n, M, g) {
  a <- rbinom(n, 1, g$p1)
  pc <- ifelse(a == 1, g$pplus, g$pminus)
  ctrl <- matrix(rbinom(n * M, 1, rep(pc, each = M)), nrow = M)  # column = set
  list(a = a, ctrl = ctrl, m = a + colSums(ctrl))
}
set.seed(4242)
for (rep in 1:25) {
  M <- c(1, 2, 4)[rep %% 3 + 1]
  g <- model(0.3, 2, 0.1)
  s <- draw_sets(40, M, g)
  arr <- array(0, c(2, 2, 40))  # [exposed yes/no, case/control, set]
  for (i in 1:40) {
    arr[1, 1, i] <- s$a[i]; arr[2, 1, i] <- 1 - s$a[i]
    arr[1, 2, i] <- sum(s$ctrl[, i]); arr[2, 2, i] <- M - sum(s$ctrl[, i])
  }
  mh <- mantelhaen.test(arr, correct = FALSE)$statistic[[1]]
  z <- sim_z(s$a, s$m, M)
  if (abs(mh - z^2) > 1e-10 * max(1, mh)) stop("mantelhaen mismatch")
}
check("z^2 = mantelhaen.test(correct=FALSE)$statistic on 25 simulated studies (M = 1, 2, 4)", TRUE)

sim_power <- function(p0, psi, M, phi, n, alpha, sides, dir, reps, seed) {
  set.seed(seed)
  g <- model(p0, psi, phi)
  c <- qnorm(1 - alpha / sides)
  rej <- 0
  chunk <- 5000
  done <- 0
  while (done < reps) {
    k <- min(chunk, reps - done)
    a <- rbinom(n * k, 1, g$p1)
    pc <- ifelse(a == 1, g$pplus, g$pminus)
    ctrl <- colSums(matrix(rbinom(n * k * M, 1, rep(pc, each = M)), nrow = M))
    m <- a + ctrl
    study <- rep(1:k, each = n)
    S <- rowsum(a - m / (M + 1), study)[, 1]
    V <- rowsum(m * (M + 1 - m) / (M + 1)^2, study)[, 1]
    z <- S / sqrt(V)
    r <- if (sides == 2) abs(z) > c else dir * z > c
    r[V == 0] <- FALSE
    rej <- rej + sum(r)
    done <- done + k
  }
  rej
}
sims <- data.frame(
  p0 = c(0.3, 0.2, 0.4, 0.3, 0.25, 0.3),
  psi = c(2, 1.8, 0.6, 1, 1, 2.5),
  M = c(2, 4, 4, 4, 2, 1),
  phi = c(0.1, 0.2, 0, 0.2, 0.1, 0.1),
  sets = c(120, 90, 80, 60, 150, 90),
  alpha = c(0.05, 0.05, 0.025, 0.05, 0.05, 0.05),
  sides = c(2, 2, 1, 2, 1, 2),
  dir = c(0, 0, -1, 0, 1, 0),
  reps = 200000,
  seed = c(501, 502, 503, 504, 505, 506))
sim_rows <- list()
for (i in seq_len(nrow(sims))) {
  x <- sims[i, ]
  k <- sim_power(x$p0, x$psi, x$M, x$phi, x$sets, x$alpha, x$sides, x$dir, x$reps, x$seed)
  p <- k / x$reps
  dp <- if (x$psi != 1) dupont_power(x$p0, x$psi, x$M, x$phi, x$alpha, x$sides, x$sets) else NA
  cat(sprintf("sim_%02d: %d/%d = %.5f (SE %.5f); Dupont's formula %.5f\n", i, k, x$reps, p,
              sqrt(p * (1 - p) / x$reps), dp))
  sim_rows[[i]] <- data.frame(id = sprintf("sim_%02d", i), x, rejections = k, power = p,
                              se = sqrt(p * (1 - p) / x$reps),
                              source = sprintf("set.seed(%d); %d replicates of sim_power(): rbinom sets, Mantel-Haenszel z by set (matched_make.R)", x$seed, x$reps))
}
sim <- do.call(rbind, sim_rows)
## the 1:1 simulation agrees with the exact enumeration of section 4
ex <- mcnemar_full(90, pairs_probs(0.3, 2.5, 0.1)[[1]], pairs_probs(0.3, 2.5, 0.1)[[2]], 0.05, 2, 0)[1]
check(sprintf("sim_06 (%.5f) within 4 SE of exact McNemar enumeration %.5f", sim$power[6], ex),
      abs(sim$power[6] - ex) < 4 * sqrt(ex * (1 - ex) / sim$reps[6]))
write_tsv(sim, "matched_sim.tsv")

## ---------------------------------------------------------------------------
## 6. Bins of binomial distributions for the goodness-of-fit test of the
## binomial sampler: about 40 bins of near-equal probability from qbinom,
## each bin's probability from pbinom.
cat("\n== binomial bins ==\n")
bcases <- data.frame(n = c(7, 40, 50, 200, 1000, 1000, 12345, 1000000, 3000, 2147483647, 1000000, 12),
                     p = c(0.3, 0.2, 0.2, 0.93, 0.5, 0.75, 0.013, 0.3, 0.0034, 1e-7, 5e-6, 0.5))
brows <- list()
for (i in seq_len(nrow(bcases))) {
  n <- bcases$n[i]; p <- bcases$p[i]
  e <- unique(qbinom((0:40) / 40, n, p))
  e <- unique(c(-1, e[-length(e)], n))
  lo <- e[-length(e)] + 1; hi <- e[-1]
  pr <- pbinom(hi, n, p) - pbinom(lo - 1, n, p)
  keep <- pr > 0
  brows[[i]] <- data.frame(id = sprintf("bin_%02d", i), n = n, p = p, lo = lo[keep], hi = hi[keep], prob = pr[keep],
                           mean = n * p, var = n * p * (1 - p),
                           source = sprintf("pbinom(hi, %d, %g) - pbinom(lo-1, %d, %g); bins from qbinom((0:40)/40)", n, p, n, p))
  check(sprintf("bin_%02d bins sum to 1", i), abs(sum(pr) - 1) < 1e-12)
}
write_tsv(do.call(rbind, brows), "matched_binom_bins.tsv")

cat("\n", n_checks, "checks passed\n")
