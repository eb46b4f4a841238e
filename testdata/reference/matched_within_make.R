## Reference values for the within-set reading of matched sets
## (power.MatchedSim with WithinSets: true), computed independently of the
## Go code, in base R only.
##
## The model (Dupont 1988, Biometrics 44:1157-1168): controls exposed with
## p0, odds ratio psi, M controls per case, correlation phi of exposure
## between the case and each control. Case exposure p1 = p0 psi / (1 +
## p0 (psi - 1)); given the case's exposure, its controls are exposed
## independently with
##   p+ = (p0 p1 + phi s) / p1,   p- = (p0 q1 - phi s) / q1,   s = sqrt(p1 q1 p0 q0).
## A set has m exposed members (m = 1..M) with probability
##   t_m = p1 C(M, m-1) p+^(m-1) q+^(M-m+1) + q1 C(M, m) p-^m q-^(M-m),
## and the rest of the sets are uninformative. In the within-set reading the
## case is the exposed member with e_m = m psi / (m psi + M - m + 1), the
## probability an odds ratio psi within the set gives (the reading of
## Dupont's formula). Each simulated study draws n sets' cells from the
## multinomial of (t_m e_m, t_m (1 - e_m), uninformative) and applies the
## Mantel-Haenszel z by set:
##   z = sum(a - m/(M+1)) / sqrt(sum m (M+1-m)/(M+1)^2).
## Run: Rscript matched_within_make.R > matched_within_make.out
write_tsv <- function(df, file) write.table(df, file, sep = "\t", quote = FALSE, row.names = FALSE)
cells <- function(p0, psi, M, phi) {
  p1 <- p0 * psi / (1 + p0 * (psi - 1)); q1 <- 1 - p1; q0 <- 1 - p0
  s <- sqrt(p1 * q1 * p0 * q0)
  pp <- (p0 * p1 + phi * s) / p1; pm <- (p0 * q1 - phi * s) / q1
  m <- 1:M
  t <- p1 * choose(M, m - 1) * pp^(m - 1) * (1 - pp)^(M - m + 1) + q1 * choose(M, m) * pm^m * (1 - pm)^(M - m)
  e <- m * psi / (m * psi + M - m + 1)
  list(prob = c(t * e, t * (1 - e), 1 - sum(t)), a = c(rep(1, M), rep(0, M), 0), m = c(m, m, 0), t = t, e = e)
}
dupont_power <- function(p0, psi, M, phi, alpha, sides, n) {
  g <- cells(p0, psi, M, phi); m <- 1:M
  D <- sum(g$t * (g$e - m / (M + 1))); V0 <- sum(g$t * m * (M + 1 - m) / (M + 1)^2); V1 <- sum(g$t * g$e * (1 - g$e))
  pnorm((sqrt(n) * abs(D) - qnorm(1 - alpha / sides) * sqrt(V0)) / sqrt(V1))
}
sim_power <- function(p0, psi, M, phi, n, alpha, sides, dir, reps, seed) {
  set.seed(seed)
  g <- cells(p0, psi, M, phi)
  c <- qnorm(1 - alpha / sides)
  x <- rmultinom(reps, n, g$prob)            # one column per study
  S <- colSums(x * (g$a - g$m / (M + 1)))
  V <- colSums(x * (g$m * (M + 1 - g$m) / (M + 1)^2))
  z <- S / sqrt(V)
  r <- if (sides == 2) abs(z) > c else dir * z > c
  r[V == 0] <- FALSE
  sum(r)
}
d <- data.frame(
  p0 = c(0.3, 0.2, 0.25, 0.12, 0.3, 0.25),
  psi = c(2, 1.8, 1.8, 2, 0.5, 1),
  M = c(2, 4, 1, 3, 1, 2),
  phi = c(0.1, 0.2, 0.15, 0.1, 0.2, 0.15),
  sets = c(120, 90, 250, 190, 160, 150),
  alpha = 0.05, sides = c(2, 2, 2, 2, 1, 2), dir = c(0, 0, 0, 0, -1, 0),
  reps = 200000, seed = 701:706)
rows <- list()
for (i in seq_len(nrow(d))) {
  x <- d[i, ]
  k <- sim_power(x$p0, x$psi, x$M, x$phi, x$sets, x$alpha, x$sides, x$dir, x$reps, x$seed)
  p <- k / x$reps
  dp <- if (x$psi != 1) dupont_power(x$p0, x$psi, x$M, x$phi, x$alpha, x$sides, x$sets) else NA
  cat(sprintf("within_%02d: %d/%d = %.5f (SE %.5f); Dupont's formula %.5f\n", i, k, x$reps, p, sqrt(p * (1 - p) / x$reps), dp))
  rows[[i]] <- data.frame(id = sprintf("within_%02d", i), x, rejections = k, power = p, se = sqrt(p * (1 - p) / x$reps),
                          dupont = dp,
                          source = sprintf("set.seed(%d); rmultinom(%d, %d, cells) of the within-set reading, Mantel-Haenszel z by set (matched_within_make.R)", x$seed, x$reps, x$sets))
}
write_tsv(do.call(rbind, rows), "matched_within.tsv")

## Exact power of McNemar's z test (no continuity correction) at n pairs in
## the within-set reading: d ~ Binomial(n, t_1) discordant pairs, and
## n10 | d ~ Binomial(d, psi/(1 + psi)); the full double sum with dbinom,
## rejecting when (2 n10 - d)/sqrt(d) > c (two-sided: |.| > c).
mcnemar_within <- function(p0, psi, phi, n, alpha, sides, dir) {
  g <- cells(p0, psi, 1, phi)
  td <- g$t[1]; pi <- psi / (1 + psi)
  c <- qnorm(1 - alpha / sides)
  tot <- 0
  for (d in 1:n) {
    k <- 0:d
    z <- (2 * k - d) / sqrt(d)
    rej <- if (sides == 2) abs(z) > c else dir * z > c
    tot <- tot + dbinom(d, n, td) * sum(dbinom(k[rej], d, pi))
  }
  tot
}
e <- data.frame(p0 = c(0.3, 0.25, 0.12, 0.3), psi = c(2, 1.8, 2, 0.5), phi = c(0.1, 0.15, 0, 0.2),
                n = c(150, 251, 300, 160), alpha = c(0.05, 0.05, 0.05, 0.05), sides = c(2, 2, 2, 1), dir = c(0, 0, 0, -1))
e$power <- mapply(mcnemar_within, e$p0, e$psi, e$phi, e$n, e$alpha, e$sides, e$dir)
e$id <- sprintf("mcw_%02d", seq_len(nrow(e)))
e$source <- "full double sum of dbinom over d ~ Bin(n, t_1) and n10 | d ~ Bin(d, psi/(1+psi)), McNemar z without correction (matched_within_make.R)"
print(e[, c("id", "p0", "psi", "phi", "n", "sides", "power")], digits = 15)
write_tsv(e[, c("id", "p0", "psi", "phi", "n", "alpha", "sides", "dir", "power", "source")], "matched_mcnemar_within.tsv")
