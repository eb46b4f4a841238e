## make_binary.R -- reference values for two-group binary outcomes and for
## precision (single proportion) sample sizes.
##
## Run from this folder:   Rscript make_binary.R > binary.out
##
## Writes binary_n.tsv, binary_power.tsv, binary_effect.tsv, precision.tsv.
## Everything here is an independent implementation of the published formulas
## (written from the formulas as stated, using only base R `stats`), plus
## stats::power.prop.test() rows where the r = 1 case overlaps.
##
## Notation: z_a = qnorm(1 - alpha/sides), z_b = qnorm(power), D = |p1 - p2|,
## r = n2/n1, pbar = (p1 + r*p2)/(1 + r), qbar = 1 - pbar.

options(digits = 15, width = 120)

fmt <- function(x) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA",
         ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"),
                sprintf("%.15g", x)))
}

write_tsv <- function(df, file) {
  out <- as.data.frame(lapply(df, function(col) {
    if (is.numeric(col)) vapply(col, fmt, "") else as.character(col)
  }), stringsAsFactors = FALSE)
  names(out) <- names(df)
  write.table(out, file, sep = "\t", quote = FALSE, row.names = FALSE,
              col.names = TRUE, na = "NA")
  cat(sprintf("wrote %s (%d rows)\n", file, nrow(out)))
}

za <- function(alpha, sides) qnorm(1 - alpha / sides)
pbar_of <- function(p1, p2, r) (p1 + r * p2) / (1 + r)

SRC_FLEISS <- "independent R implementation of Fleiss, Levin & Paik 2003 (ch. 4, unequal groups, no continuity correction) formula, script make_binary.R"
SRC_FLEISS_CC <- "independent R implementation of Fleiss, Levin & Paik 2003 n' with Fleiss, Tytun & Ury 1980 continuity correction, script make_binary.R"
SRC_KELSEY <- "independent R implementation of Kelsey, Whittemore, Evans & Thompson 1996 (pooled variance) formula, script make_binary.R"
SRC_SCHL <- "independent R implementation of Schlesselman 1982 (ch. 6) case-control formula, script make_binary.R"

## ---------------------------------------------------------------- sample size
n_fleiss <- function(p1, p2, r, alpha, sides, power) {
  D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  (za(alpha, sides) * sqrt((r + 1) * pb * qb) +
     qnorm(power) * sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))^2 / (r * D^2)
}
n_fleiss_cc <- function(p1, p2, r, alpha, sides, power) {
  D <- abs(p1 - p2); np <- n_fleiss(p1, p2, r, alpha, sides, power)
  np / 4 * (1 + sqrt(1 + 2 * (r + 1) / (np * r * D)))^2
}
n_kelsey <- function(p1, p2, r, alpha, sides, power) {
  D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  (za(alpha, sides) + qnorm(power))^2 * pb * qb * (r + 1) / (r * D^2)
}
n_schlesselman <- function(p1, p2, r, alpha, sides, power) {
  D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  (za(alpha, sides) * sqrt((1 + 1 / r) * pb * qb) +
     qnorm(power) * sqrt(p1 * (1 - p1) + p2 * (1 - p2) / r))^2 / D^2
}

## ---------------------------------------------------------------- power
## Fleiss power written in terms of (n1, r) so that n' = 0 is well defined
pow_fleiss_r <- function(p1, p2, n1, r, alpha, sides) {
  D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  pnorm((sqrt(n1 * r * D^2) - za(alpha, sides) * sqrt((r + 1) * pb * qb)) /
          sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))
}
pow_fleiss <- function(p1, p2, n1, n2, alpha, sides) pow_fleiss_r(p1, p2, n1, n2 / n1, alpha, sides)
pow_fleiss_cc <- function(p1, p2, n1, n2, alpha, sides) {
  r <- n2 / n1; D <- abs(p1 - p2)
  thr <- (r + 1) / (2 * r * D)
  np <- if (n1 > thr) (n1 - thr)^2 / n1 else 0
  pow_fleiss_r(p1, p2, np, r, alpha, sides)
}
pow_kelsey <- function(p1, p2, n1, n2, alpha, sides) {
  r <- n2 / n1; D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  pnorm(sqrt(n1 * r * D^2 / ((r + 1) * pb * qb)) - za(alpha, sides))
}
pow_schlesselman <- function(p1, p2, n1, n2, alpha, sides) {
  r <- n2 / n1; D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  pnorm((sqrt(n1) * D - za(alpha, sides) * sqrt((1 + 1 / r) * pb * qb)) /
          sqrt(p1 * (1 - p1) + p2 * (1 - p2) / r))
}

NFUN <- list(fleiss = n_fleiss, "fleiss-cc" = n_fleiss_cc, kelsey = n_kelsey,
             schlesselman = n_schlesselman)
PFUN <- list(fleiss = pow_fleiss, "fleiss-cc" = pow_fleiss_cc, kelsey = pow_kelsey,
             schlesselman = pow_schlesselman)
SRC <- list(fleiss = SRC_FLEISS, "fleiss-cc" = SRC_FLEISS_CC, kelsey = SRC_KELSEY,
            schlesselman = SRC_SCHL)

or_to_p1 <- function(OR, p0) OR * p0 / (1 + p0 * (OR - 1))

relerr <- function(a, b) abs(a - b) / abs(b)
check <- function(label, mine, other, tol = 1e-6) {
  re <- relerr(mine, other)
  cat(sprintf("CHECK %-60s mine=%.15g other=%.15g relerr=%.3g %s\n",
              label, mine, other, re, if (re <= tol) "OK" else "FAIL"))
  if (re > tol) stop("cross-check failed: ", label)
}

cat("R.version.string:", R.version.string, "\n\n")

## ============================================================ binary_n.tsv
cat("==================== binary_n.tsv ====================\n")
## p1, p2, r, alpha, sides, power
grid <- data.frame(
  p1    = c(0.20, 0.20, 0.20, 0.10, 0.10, 0.30, 0.30,  0.45, 0.02, 0.02, 0.70, 0.15, 0.15, 0.70, 0.45),
  p2    = c(0.30, 0.30, 0.30, 0.05, 0.05, 0.225, 0.225, 0.60, 0.04, 0.04, 0.50, 0.10, 0.10, 0.50, 0.60),
  ratio = c(1,    2,    0.5,  1,    3,    1,    0.5,   2,    1,    0.5,  3,    2,    1,    1,    1),
  alpha = c(0.05, 0.05, 0.05, 0.05, 0.01, 0.05, 0.01,  0.01, 0.05, 0.05, 0.05, 0.05, 0.01, 0.05, 0.01),
  sides = c(2,    2,    2,    2,    2,    1,    1,     2,    2,    1,    2,    1,    2,    1,    2),
  power = c(0.8,  0.8,  0.8,  0.9,  0.8,  0.8,  0.9,   0.9,  0.8,  0.9,  0.9,  0.8,  0.9,  0.8,  0.8))

rows_n <- list()
add_n <- function(id, method, p1, p2, ratio, alpha, sides, power, n_star, source) {
  rows_n[[length(rows_n) + 1]] <<- data.frame(id = id, method = method, p1 = p1, p2 = p2,
    ratio = ratio, alpha = alpha, sides = sides, power = power, n_star = n_star,
    source = source, stringsAsFactors = FALSE)
}

for (m in c("fleiss", "fleiss-cc", "kelsey")) {
  for (i in seq_len(nrow(grid))) {
    g <- grid[i, ]
    n <- NFUN[[m]](g$p1, g$p2, g$ratio, g$alpha, g$sides, g$power)
    id <- sprintf("n_%s_%02d", gsub("-", "", m), i)
    add_n(id, m, g$p1, g$p2, g$ratio, g$alpha, g$sides, g$power, n, SRC[[m]])
    cat(sprintf("%-14s %-12s p1=%g p2=%g r=%g alpha=%g sides=%g power=%g -> n_star=%.15g (n2=%.15g)\n",
                id, m, g$p1, g$p2, g$ratio, g$alpha, g$sides, g$power, n, g$ratio * n))
    ## self-consistency: power at the unrounded n equals the target
    back <- PFUN[[m]](g$p1, g$p2, n, g$ratio * n, g$alpha, g$sides)
    check(paste(id, "power(n_star) == target"), back, g$power, 1e-10)
  }
}

## power.prop.test rows (r = 1): every r = 1 grid row
cat("\n---- stats::power.prop.test (n solved by uniroot, tol=1e-10) ----\n")
k <- 0
for (i in which(grid$ratio == 1)) {
  g <- grid[i, ]
  alt <- if (g$sides == 1) "one.sided" else "two.sided"
  call <- sprintf('power.prop.test(p1=%s, p2=%s, power=%s, sig.level=%s, alternative="%s", tol=1e-10)$n',
                  fmt(g$p1), fmt(g$p2), fmt(g$power), fmt(g$alpha), alt)
  res <- power.prop.test(p1 = g$p1, p2 = g$p2, power = g$power, sig.level = g$alpha,
                         alternative = alt, tol = 1e-10)
  cat("> ", call, "\n", sep = ""); print(res)
  k <- k + 1
  id <- sprintf("n_ppt_%02d", k)
  add_n(id, "fleiss", g$p1, g$p2, 1, g$alpha, g$sides, g$power, res$n, call)
  check(sprintf("%s vs n_fleiss_%02d", id, i), n_fleiss(g$p1, g$p2, 1, g$alpha, g$sides, g$power), res$n)
}

## Schlesselman rows: p2 = p0 (controls' exposure), OR -> p1
cat("\n---- schlesselman: OR -> p1 conversion, p1 = OR*p0/(1 + p0*(OR-1)) ----\n")
sch <- data.frame(
  p0    = c(0.20, 0.20, 0.20, 0.10, 0.30, 0.05, 0.40, 0.02, 0.15, 0.30),
  OR    = c(2,    2,    2,    3,    0.5,  2.5,  1.5,  4,    0.4,  2),
  ratio = c(1,    2,    0.5,  3,    1,    2,    1,    3,    0.5,  2),
  alpha = c(0.05, 0.05, 0.05, 0.05, 0.01, 0.05, 0.05, 0.01, 0.05, 0.01),
  sides = c(2,    2,    2,    2,    2,    1,    2,    2,    1,    1),
  power = c(0.8,  0.8,  0.8,  0.9,  0.8,  0.8,  0.9,  0.9,  0.9,  0.8))
for (i in seq_len(nrow(sch))) {
  s <- sch[i, ]
  p1 <- or_to_p1(s$OR, s$p0)
  n <- n_schlesselman(p1, s$p0, s$ratio, s$alpha, s$sides, s$power)
  id <- sprintf("n_schlesselman_%02d", i)
  cat(sprintf("NOTE %s: OR=%g, p0=%g -> p1 = %g*%g/(1 + %g*(%g-1)) = %.15g\n",
              id, s$OR, s$p0, s$OR, s$p0, s$p0, s$OR, p1))
  cat(sprintf("%-20s r=%g alpha=%g sides=%g power=%g -> n_star (cases)=%.15g, controls=%.15g\n",
              id, s$ratio, s$alpha, s$sides, s$power, n, s$ratio * n))
  add_n(id, "schlesselman", p1, s$p0, s$ratio, s$alpha, s$sides, s$power, n,
        sprintf("%s; OR=%s, p0=%s, p1=OR*p0/(1+p0*(OR-1))", SRC_SCHL, fmt(s$OR), fmt(s$p0)))
  back <- pow_schlesselman(p1, s$p0, n, s$ratio * n, s$alpha, s$sides)
  check(paste(id, "power(n_star) == target"), back, s$power, 1e-10)
  ## Schlesselman's expression is algebraically the Fleiss one divided through by r
  check(paste(id, "== fleiss formula"), n, n_fleiss(p1, s$p0, s$ratio, s$alpha, s$sides, s$power), 1e-12)
}
binary_n <- do.call(rbind, rows_n)
write_tsv(binary_n, "binary_n.tsv")

## ============================================================ binary_power.tsv
cat("\n==================== binary_power.tsv ====================\n")
pgrid <- data.frame(
  p1    = c(0.20, 0.20, 0.20, 0.10, 0.30,  0.45, 0.02, 0.70, 0.15),
  p2    = c(0.30, 0.30, 0.30, 0.05, 0.225, 0.60, 0.04, 0.50, 0.10),
  n1    = c(300,  200,  400,  400,  500,   150,  1000, 60,   700),
  n2    = c(300,  400,  200,  1200, 500,   75,   1000, 180,  350),
  alpha = c(0.05, 0.05, 0.05, 0.01, 0.05,  0.01, 0.05, 0.05, 0.05),
  sides = c(2,    2,    2,    2,    1,     2,    2,    2,    1))
rows_p <- list()
add_p <- function(id, method, p1, p2, n1, n2, alpha, sides, power, source) {
  rows_p[[length(rows_p) + 1]] <<- data.frame(id = id, method = method, p1 = p1, p2 = p2,
    n1 = n1, n2 = n2, alpha = alpha, sides = sides, power = power, source = source,
    stringsAsFactors = FALSE)
}
for (m in c("fleiss", "fleiss-cc", "kelsey")) {
  for (i in seq_len(nrow(pgrid))) {
    g <- pgrid[i, ]
    pw <- PFUN[[m]](g$p1, g$p2, g$n1, g$n2, g$alpha, g$sides)
    id <- sprintf("pow_%s_%02d", gsub("-", "", m), i)
    cat(sprintf("%-16s %-10s p1=%g p2=%g n1=%g n2=%g alpha=%g sides=%g -> power=%.15g\n",
                id, m, g$p1, g$p2, g$n1, g$n2, g$alpha, g$sides, pw))
    add_p(id, m, g$p1, g$p2, g$n1, g$n2, g$alpha, g$sides, pw, SRC[[m]])
  }
}
## fleiss-cc: rows inside / just above n1 <= (r+1)/(2 r D)
cat("\n---- fleiss-cc near the threshold n1 <= (r+1)/(2 r D) ----\n")
cc <- data.frame(p1 = c(0.20, 0.10, 0.20, 0.10), p2 = c(0.30, 0.05, 0.30, 0.05),
                 n1 = c(6, 12, 11, 16), n2 = c(6, 24, 11, 32),
                 alpha = 0.05, sides = 2)
for (i in seq_len(nrow(cc))) {
  g <- cc[i, ]
  r <- g$n2 / g$n1; D <- abs(g$p1 - g$p2); thr <- (r + 1) / (2 * r * D)
  pw <- pow_fleiss_cc(g$p1, g$p2, g$n1, g$n2, g$alpha, g$sides)
  id <- sprintf("pow_fleisscc_small_%02d", i)
  inside <- g$n1 <= thr
  cat(sprintf("%-22s p1=%g p2=%g n1=%g n2=%g threshold=%.15g %s -> power=%.15g\n",
              id, g$p1, g$p2, g$n1, g$n2, thr, if (inside) "(inside: n'=0)" else "(above)", pw))
  add_p(id, "fleiss-cc", g$p1, g$p2, g$n1, g$n2, g$alpha, g$sides, pw,
        paste0(SRC_FLEISS_CC, if (inside) "; n1 <= (r+1)/(2rD) so n'=0" else "; n1 just above (r+1)/(2rD)"))
}
## schlesselman power rows (OR given)
cat("\n---- schlesselman power (n1 cases, n2 controls) ----\n")
spg <- data.frame(p0 = c(0.20, 0.20, 0.20, 0.10, 0.30, 0.05, 0.40, 0.02),
                  OR = c(2, 2, 2, 3, 0.5, 2.5, 1.5, 4),
                  n1 = c(170, 120, 250, 60, 200, 300, 400, 150),
                  n2 = c(170, 240, 125, 180, 200, 600, 400, 450),
                  alpha = c(0.05, 0.05, 0.05, 0.05, 0.01, 0.05, 0.05, 0.01),
                  sides = c(2, 2, 2, 2, 2, 1, 2, 2))
for (i in seq_len(nrow(spg))) {
  g <- spg[i, ]
  p1 <- or_to_p1(g$OR, g$p0)
  pw <- pow_schlesselman(p1, g$p0, g$n1, g$n2, g$alpha, g$sides)
  id <- sprintf("pow_schlesselman_%02d", i)
  cat(sprintf("NOTE %s: OR=%g, p0=%g -> p1=%.15g\n", id, g$OR, g$p0, p1))
  cat(sprintf("%-22s n1=%g n2=%g alpha=%g sides=%g -> power=%.15g\n", id, g$n1, g$n2, g$alpha, g$sides, pw))
  add_p(id, "schlesselman", p1, g$p0, g$n1, g$n2, g$alpha, g$sides, pw,
        sprintf("%s; OR=%s, p0=%s, p1=OR*p0/(1+p0*(OR-1))", SRC_SCHL, fmt(g$OR), fmt(g$p0)))
  check(paste(id, "== fleiss power"), pw, pow_fleiss(p1, g$p0, g$n1, g$n2, g$alpha, g$sides), 1e-12)
}
## power.prop.test power rows
cat("\n---- stats::power.prop.test power at n per group ----\n")
ppg <- data.frame(p1 = c(0.20, 0.30, 0.02, 0.70, 0.15), p2 = c(0.30, 0.225, 0.04, 0.50, 0.10),
                  n = c(300, 500, 1000, 90, 900), alpha = c(0.05, 0.05, 0.05, 0.05, 0.01),
                  sides = c(2, 1, 2, 1, 2))
for (i in seq_len(nrow(ppg))) {
  g <- ppg[i, ]
  alt <- if (g$sides == 1) "one.sided" else "two.sided"
  call <- sprintf('power.prop.test(n=%s, p1=%s, p2=%s, sig.level=%s, alternative="%s")$power',
                  fmt(g$n), fmt(g$p1), fmt(g$p2), fmt(g$alpha), alt)
  res <- power.prop.test(n = g$n, p1 = g$p1, p2 = g$p2, sig.level = g$alpha, alternative = alt)
  cat("> ", call, "\n", sep = ""); print(res)
  id <- sprintf("pow_ppt_%02d", i)
  add_p(id, "fleiss", g$p1, g$p2, g$n, g$n, g$alpha, g$sides, res$power, call)
  check(paste(id, "vs pow_fleiss"), pow_fleiss(g$p1, g$p2, g$n, g$n, g$alpha, g$sides), res$power)
}
binary_power <- do.call(rbind, rows_p)
write_tsv(binary_power, "binary_power.tsv")

## ============================================================ binary_effect.tsv
cat("\n==================== binary_effect.tsv ====================\n")
## For the detectable p1 on each side of p2, walk outward from p2 on a fine
## grid to the first point whose power reaches the target, then refine with
## uniroot(tol=1e-12) inside that bracket; NA when no point in the open
## interval reaches it (endpoints 0 and 1 are evaluated too).
detect <- function(pf, p2, n1, r, alpha, sides, target, upper) {
  f <- function(p1) pf(p1, p2, n1, r * n1, alpha, sides) - target
  end <- if (upper) 1 else 0
  xs <- p2 + (end - p2) * seq(0, 1, length.out = 20001)[-1]
  vals <- vapply(xs, f, 0)
  hit <- which(vals >= 0)
  if (length(hit) == 0) return(NA_real_)
  j <- hit[1]
  lo <- if (j == 1) p2 + (end - p2) * 1e-12 else xs[j - 1]
  uniroot(f, sort(c(lo, xs[j])), tol = 1e-12, maxiter = 10000)$root
}
eg <- data.frame(p2 = c(0.30, 0.10, 0.50, 0.90, 0.05),
                 ratio = c(1, 2, 0.5, 1, 3),
                 n1 = c(300, 500, 200, 20, 100),
                 alpha = c(0.05, 0.05, 0.01, 0.05, 0.05),
                 sides = c(2, 2, 1, 2, 2),
                 power = c(0.8, 0.9, 0.8, 0.8, 0.8))
rows_e <- list()
for (m in c("fleiss", "fleiss-cc", "kelsey")) {
  for (i in seq_len(nrow(eg))) {
    g <- eg[i, ]
    lo <- detect(PFUN[[m]], g$p2, g$n1, g$ratio, g$alpha, g$sides, g$power, FALSE)
    hi <- detect(PFUN[[m]], g$p2, g$n1, g$ratio, g$alpha, g$sides, g$power, TRUE)
    id <- sprintf("eff_%s_%02d", gsub("-", "", m), i)
    cat(sprintf("%-16s p2=%g r=%g n1=%g alpha=%g sides=%g power=%g -> p1_lower=%.15g p1_upper=%.15g\n",
                id, g$p2, g$ratio, g$n1, g$alpha, g$sides, g$power, lo, hi))
    for (v in c(lo, hi)) if (!is.na(v))
      check(paste(id, "power(p1) == target"),
            PFUN[[m]](v, g$p2, g$n1, g$ratio * g$n1, g$alpha, g$sides), g$power, 1e-9)
    rows_e[[length(rows_e) + 1]] <- data.frame(id = id, method = m, p2 = g$p2, ratio = g$ratio,
      alpha = g$alpha, sides = g$sides, power = g$power, n1 = g$n1, p1_lower = lo, p1_upper = hi,
      source = paste0(SRC[[m]], "; power(p1) = target solved by uniroot(tol=1e-12) on the first crossing outward from p2; NA = not reachable in (0,1)"),
      stringsAsFactors = FALSE)
    ## r = 1 fleiss: cross-check with power.prop.test solving for p1 / p2
    if (m == "fleiss" && g$ratio == 1) {
      alt <- if (g$sides == 1) "one.sided" else "two.sided"
      if (!is.na(lo)) {
        call <- sprintf('power.prop.test(n=%s, p2=%s, power=%s, sig.level=%s, alternative="%s", tol=1e-10)$p1',
                        fmt(g$n1), fmt(g$p2), fmt(g$power), fmt(g$alpha), alt)
        res <- power.prop.test(n = g$n1, p2 = g$p2, power = g$power, sig.level = g$alpha,
                               alternative = alt, tol = 1e-10)
        cat("> ", call, "\n", sep = ""); print(res)
        check(paste(id, "p1_lower vs power.prop.test"), lo, res$p1)
      }
      if (!is.na(hi)) {
        ## the r = 1 formula is symmetric in (p1, p2): solve for p2 above p1 = our p2
        call <- sprintf('power.prop.test(n=%s, p1=%s, power=%s, sig.level=%s, alternative="%s", tol=1e-10)$p2',
                        fmt(g$n1), fmt(g$p2), fmt(g$power), fmt(g$alpha), alt)
        res <- power.prop.test(n = g$n1, p1 = g$p2, power = g$power, sig.level = g$alpha,
                               alternative = alt, tol = 1e-10)
        cat("> ", call, "\n", sep = ""); print(res)
        check(paste(id, "p1_upper vs power.prop.test"), hi, res$p2)
      }
    }
  }
}
binary_effect <- do.call(rbind, rows_e)
write_tsv(binary_effect, "binary_effect.tsv")

## ============================================================ precision.tsv
cat("\n==================== precision.tsv ====================\n")
SRC_PREC <- "independent R implementation of Cochran 1977 (Sampling Techniques, 3rd ed., ch. 4): n0=z^2 p(1-p)/d^2, *deff, finite-population n/(1+(n-1)/N), ceiling, /(1-nonresponse), ceiling; script make_binary.R"
pr <- data.frame(
  p          = c(0.50, 0.50, 0.30, 0.10, 0.05, 0.20, 0.45, 0.15, 0.50, 0.25),
  margin     = c(0.05, 0.05, 0.03, 0.02, 0.02, 0.035, 0.10, 0.03, 0.07, 0.05),
  confidence = c(0.95, 0.95, 0.99, 0.95, 0.99, 0.95, 0.99, 0.95, 0.99, 0.95),
  deff       = c(1,    1,    1.5,  1,    1.5,  1.5,  1,    1,    1.5,  1.5),
  population = c(Inf,  2000, Inf,  5000, Inf,  800,  Inf,  10000, 3000, Inf),
  nonresponse= c(0,    0,    0.2,  0,    0.2,  0.2,  0.2,  0,    0,    0.2))
rows_c <- list()
for (i in seq_len(nrow(pr))) {
  g <- pr[i, ]
  z <- qnorm(1 - (1 - g$confidence) / 2)
  n0 <- z^2 * g$p * (1 - g$p) / g$margin^2
  n <- n0 * g$deff
  if (is.finite(g$population)) n <- n / (1 + (n - 1) / g$population)
  a <- ceiling(n)
  b <- a / (1 - g$nonresponse)
  nf <- ceiling(b)
  ## guard: flag any step that sits within 1e-6 of an integer (rounding-sensitive)
  near <- function(x) abs(x - round(x)) < 1e-6
  flag <- if (near(n) || (g$nonresponse > 0 && near(b))) "  WARNING: near-integer before ceiling" else ""
  id <- sprintf("prec_%02d", i)
  cat(sprintf("%-8s p=%g margin=%g conf=%g deff=%g N=%s nonresp=%g: z=%.15g n0=%.15g n(after deff/fpc)=%.15g ceil=%g /(1-nr)=%.15g n_final=%g%s\n",
              id, g$p, g$margin, g$confidence, g$deff, fmt(g$population), g$nonresponse,
              z, n0, n, a, b, nf, flag))
  rows_c[[i]] <- data.frame(id = id, p = g$p, margin = g$margin, confidence = g$confidence,
    deff = g$deff, population = g$population, nonresponse = g$nonresponse,
    n0 = n0, n_final = nf, source = SRC_PREC, stringsAsFactors = FALSE)
}
write_tsv(do.call(rbind, rows_c), "precision.tsv")

cat("\nAll cross-checks passed.\n")
