## seqsim_make.R -- reference values for the group-sequential Monte-Carlo
## models of power/seqsim.go: the statistic of each look on recorded data,
## and the exact crossing probabilities of sequential tests of two
## binomials.
##
## Run from this folder, after seqsim_canonical.py (it reads the Pocock
## nominal levels from seqsim_canonical.tsv):
##
##   Rscript seqsim_make.R > seqsim_make.out
##
## Writes seqsim_binomial_stats.tsv, seqsim_binomial_exact.tsv,
## seqsim_means_data.tsv, seqsim_means_stats.tsv, seqsim_survival_data.tsv,
## seqsim_survival_stats.tsv.
##
## Only base R `stats` and the recommended package `survival` are used:
## prop.test, fisher.test, t.test, survdiff, optimize, dbinom, pnorm,
## pchisq, rnorm, rexp, runif, rbinom. Everything not a named library call
## is written here from the formula stated beside it. The script stops if
## any cross-check fails; each check prints a CHECK ... OK line.

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(survival))
cat("R.version.string:", R.version.string, "\n")
cat("survival", as.character(packageVersion("survival")), "\n\n")

fmt <- function(x, digits = 17) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA",
         ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"),
                sprintf(paste0("%.", digits, "g"), x)))
}
write_tsv <- function(df, file) {
  out <- as.data.frame(lapply(df, function(col) {
    if (is.numeric(col)) vapply(col, fmt, "") else as.character(col)
  }), stringsAsFactors = FALSE)
  names(out) <- names(df)
  write.table(out, file, sep = "\t", quote = FALSE, row.names = FALSE)
  cat(sprintf("wrote %s, %d rows\n", file, nrow(df)))
}
check <- function(label, ok) {
  cat(sprintf("CHECK %s %s\n", label, if (isTRUE(ok)) "OK" else "FAILED"))
  if (!isTRUE(ok)) stop("check failed: ", label)
}
lst <- function(x) paste(fmt(x), collapse = ",")

canon <- read.delim("seqsim_canonical.tsv", stringsAsFactors = FALSE)
nominal_of <- function(id) as.numeric(strsplit(canon$nominal[canon$id == id], ",")[[1]])
poc2 <- nominal_of("pocock3_null")      # two-sided Pocock, K = 3, alpha = 0.05
poc1 <- nominal_of("pocock3_one_null")  # one-sided Pocock, K = 3, alpha = 0.025
cat("Pocock K=3 nominal levels from seqsim_canonical.tsv: two-sided", poc2[1], "one-sided", poc1[1], "\n\n")

## ---------------------------------------------------------------------
## 1. Tests of two proportions on recorded tables.
## ---------------------------------------------------------------------

## The restricted maximum-likelihood risks under p1 - p2 = d0, found by
## optimize() on the binomial log-likelihood of p2 (p1 = p2 + d0), then
## polished by three Newton steps on its derivative (optimize alone stops
## near sqrt(machine epsilon) of the maximum): an independent route to
## Farrington & Manning's (1990) score test, whose closed form is a cubic.
restricted <- function(x1, n1, x2, n2, d0) {
  ll <- function(p2) {
    p1 <- p2 + d0
    x1 * log(p1) + (n1 - x1) * log(1 - p1) + x2 * log(p2) + (n2 - x2) * log(1 - p2)
  }
  lo <- max(0, -d0); hi <- min(1, 1 - d0)
  p2 <- optimize(ll, c(lo, hi), maximum = TRUE, tol = 1e-13)$maximum
  for (s in 1:3) {
    p1 <- p2 + d0
    g <- x1 / p1 - (n1 - x1) / (1 - p1) + x2 / p2 - (n2 - x2) / (1 - p2)
    h <- -x1 / p1^2 - (n1 - x1) / (1 - p1)^2 - x2 / p2^2 - (n2 - x2) / (1 - p2)^2
    if (is.finite(g) && is.finite(h) && h < 0) {
      nxt <- p2 - g / h
      if (nxt > lo && nxt < hi) p2 <- nxt
    }
  }
  c(p2 + d0, p2)
}
## z of the one-sided test of H0: p1 - p2 = d0, signed towards the
## alternative (above d0 when d0 < 0, below when d0 > 0).
margin_z <- function(x1, n1, x2, n2, d0, method) {
  s <- if (d0 < 0) 1 else -1
  a1 <- x1 / n1; a2 <- x2 / n2
  if (method == "farrington-manning") {
    r <- restricted(x1, n1, x2, n2, d0)
    v <- r[1] * (1 - r[1]) / n1 + r[2] * (1 - r[2]) / n2
  } else {
    v <- a1 * (1 - a1) / n1 + a2 * (1 - a2) / n2   # Blackwelder (1982), Wald
  }
  s * (a1 - a2 - d0) / sqrt(v)
}

set.seed(20250601)
tabs <- data.frame(n1 = c(40, 75, 120, 200, 33, 300, 64),
                   n2 = c(40, 60, 130, 180, 47, 310, 64))
tabs$x1 <- c(19, 30, 41, 93, 9, 112, 40)
tabs$x2 <- c(8, 13, 25, 57, 24, 85, 22)
st <- list()
add_row <- function(id, r, test, sides, dir, margin, stat, p, source) {
  st[[length(st) + 1]] <<- data.frame(id = id, n1 = r$n1, x1 = r$x1, n2 = r$n2, x2 = r$x2,
    test = test, sides = sides, dir = dir, margin = margin, stat = stat, p = p, source = source,
    stringsAsFactors = FALSE)
}
for (i in seq_len(nrow(tabs))) {
  r <- tabs[i, ]
  x <- c(r$x1, r$x2); n <- c(r$n1, r$n2)
  up <- r$x1 / r$n1 > r$x2 / r$n2
  one <- if (up) "greater" else "less"
  dir <- if (up) 1 else -1
  for (yates in c(FALSE, TRUE)) {
    test <- if (yates) "chi-square-yates" else "chi-square"
    pt2 <- prop.test(x, n, correct = yates)
    add_row(sprintf("t%d_%s_2", i, test), r, test, 2, 0, 0, unname(pt2$statistic), pt2$p.value,
            sprintf("prop.test(c(%d, %d), c(%d, %d), correct = %s)", r$x1, r$x2, r$n1, r$n2, yates))
    pt1 <- prop.test(x, n, correct = yates, alternative = one)
    add_row(sprintf("t%d_%s_1", i, test), r, test, 1, dir, 0, unname(pt1$statistic), pt1$p.value,
            sprintf("prop.test(c(%d, %d), c(%d, %d), correct = %s, alternative = \"%s\")", r$x1, r$x2, r$n1, r$n2, yates, one))
  }
  m <- matrix(c(r$x1, r$n1 - r$x1, r$x2, r$n2 - r$x2), 2, byrow = TRUE)
  add_row(sprintf("t%d_fisher_2", i), r, "fisher", 2, 0, 0, NA, fisher.test(m)$p.value,
          sprintf("fisher.test(matrix(c(%d, %d, %d, %d), 2, byrow = TRUE))", r$x1, r$n1 - r$x1, r$x2, r$n2 - r$x2))
  add_row(sprintf("t%d_fisher_1", i), r, "fisher", 1, dir, 0, NA, fisher.test(m, alternative = one)$p.value,
          sprintf("fisher.test(matrix(c(%d, %d, %d, %d), 2, byrow = TRUE), alternative = \"%s\")", r$x1, r$n1 - r$x1, r$x2, r$n2 - r$x2, one))
  a1 <- r$x1 / r$n1; a2 <- r$x2 / r$n2
  z <- (a1 - a2) / sqrt(a1 * (1 - a1) / r$n1 + a2 * (1 - a2) / r$n2)
  add_row(sprintf("t%d_z-unpooled_2", i), r, "z-unpooled", 2, 0, 0, z, 2 * pnorm(-abs(z)),
          "Wald z = (p1 - p2)/sqrt(p1 q1/n1 + p2 q2/n2), 2*pnorm(-abs(z))")
  add_row(sprintf("t%d_z-unpooled_1", i), r, "z-unpooled", 1, dir, 0, z, pnorm(-dir * z),
          "Wald z = (p1 - p2)/sqrt(p1 q1/n1 + p2 q2/n2), pnorm(-dir*z)")
  d <- a1 - a2
  for (d0 in c(round(min(d, 0) - 0.12, 2), round(max(d, 0) + 0.12, 2))) {
    for (method in c("farrington-manning", "blackwelder")) {
      z <- margin_z(r$x1, r$n1, r$x2, r$n2, d0, method)
      src <- if (method == "farrington-manning")
        sprintf("score z at the restricted MLE by optimize(log-likelihood, tol = 1e-13), d0 = %g, pnorm(-z)", d0)
      else sprintf("Wald z with observed risks, d0 = %g, pnorm(-z)", d0)
      add_row(sprintf("t%d_%s_%+.2f", i, method, d0), r, method, 1, 0, d0, z, pnorm(-z), src)
    }
  }
}
st <- do.call(rbind, st)
## Cross-check the restricted MLE against the score equation: at p~2 the
## derivative of the log-likelihood vanishes.
for (i in seq_len(nrow(tabs))) {
  r <- tabs[i, ]
  d0 <- round(r$x1 / r$n1 - r$x2 / r$n2 - 0.12, 2)
  p <- restricted(r$x1, r$n1, r$x2, r$n2, d0)
  g <- r$x1 / p[1] - (r$n1 - r$x1) / (1 - p[1]) + r$x2 / p[2] - (r$n2 - r$x2) / (1 - p[2])
  check(sprintf("table %d: score equation at the restricted MLE |%.2g| < 1e-9", i, g), abs(g) < 1e-9)
}
check("binomial statistics: every p in (1e-12, 0.5)", all(st$p > 1e-12 & st$p < 0.5 | st$sides == 2 & st$p < 1))
write_tsv(st, "seqsim_binomial_stats.tsv")
cat("\n")

## ---------------------------------------------------------------------
## 2. Exact crossing probabilities of sequential tests of two binomials.
## ---------------------------------------------------------------------
## The sub-distribution f_k(x1, x2) of the accrued counts over the
## replicates that have not crossed before look k is carried from look to
## look by the two independent binomial batches (a convolution), the
## rejected cells of look k are summed (the probability of a first
## crossing there) and removed:
##
##   g_k = f_{k-1} * (Bin(m1_k, p1) x Bin(m2_k, p2)),  P_k = sum of g_k over
##   the cells look k rejects,  f_k = g_k outside them.
##
## Each cell's p-value comes from a vectorised formula, checked against
## prop.test on 300 random cells of every look; Fisher's test calls
## fisher.test on every cell; the margin tests use margin_z above.

conv <- function(f, b1, b2) {
  h <- matrix(0, nrow(f), ncol(f) + length(b2) - 1)
  for (j in seq_along(b2)) h[, j:(j + ncol(f) - 1)] <- h[, j:(j + ncol(f) - 1)] + b2[j] * f
  g <- matrix(0, nrow(f) + length(b1) - 1, ncol(h))
  for (i in seq_along(b1)) g[i:(i + nrow(f) - 1), ] <- g[i:(i + nrow(f) - 1), ] + b1[i] * h
  g
}

## p-values of every cell (x1 in 0..n1 rows, x2 in 0..n2 columns).
cell_p <- function(test, n1, n2, sides, dir, margin) {
  x1 <- matrix(0:n1, n1 + 1, n2 + 1)
  x2 <- matrix(0:n2, n1 + 1, n2 + 1, byrow = TRUE)
  a1 <- x1 / n1; a2 <- x2 / n2
  N <- n1 + n2; t <- x1 + x2
  if (test %in% c("chi-square", "chi-square-yates")) {
    ## Pearson's X^2 over the four cells, each |O - E| less Yates'
    ## min(1/2, |O - E|) for the corrected test (prop.test's YATES).
    dev <- abs(x1 * n2 - x2 * n1) / N
    y <- if (test == "chi-square-yates") pmin(0.5, dev) else 0
    E <- list(n1 * t / N, n1 * (N - t) / N, n2 * t / N, n2 * (N - t) / N)
    X2 <- Reduce(`+`, lapply(E, function(e) (dev - y)^2 / e))
    X2[t == 0 | t == N] <- NA
    if (sides == 2) return(pchisq(X2, 1, lower.tail = FALSE))
    z <- sign(a1 - a2) * sqrt(X2)
    return(pnorm(-dir * z))
  }
  if (test == "z-unpooled") {
    z <- (a1 - a2) / sqrt(a1 * (1 - a1) / n1 + a2 * (1 - a2) / n2)
    z[a1 == a2] <- 0
    if (sides == 2) return(2 * pnorm(-abs(z)))
    return(pnorm(-dir * z))
  }
  if (test == "fisher") {
    alt <- if (sides == 2) "two.sided" else if (dir > 0) "greater" else "less"
    p <- matrix(NA, n1 + 1, n2 + 1)
    for (i in 0:n1) for (j in 0:n2) {
      if (i + j == 0 || i + j == N) next
      p[i + 1, j + 1] <- fisher.test(matrix(c(i, n1 - i, j, n2 - j), 2, byrow = TRUE), alternative = alt)$p.value
    }
    return(p)
  }
  ## margin tests, one-sided
  p <- matrix(NA, n1 + 1, n2 + 1)
  for (i in 0:n1) for (j in 0:n2) {
    z <- margin_z(i, n1, j, n2, margin, test)
    p[i + 1, j + 1] <- if (is.nan(z)) NA else pnorm(-z)
  }
  p
}

spot_check <- function(p, test, n1, n2, sides, dir, label) {
  if (!(test %in% c("chi-square", "chi-square-yates"))) return(invisible())
  set.seed(7)
  worst <- 0
  for (s in 1:300) {
    i <- sample(0:n1, 1); j <- sample(0:n2, 1)
    if (i + j == 0 || i + j == n1 + n2) next
    alt <- if (sides == 2) "two.sided" else if (dir > 0) "greater" else "less"
    q <- suppressWarnings(prop.test(c(i, j), c(n1, n2), correct = test == "chi-square-yates", alternative = alt)$p.value)
    worst <- max(worst, abs(p[i + 1, j + 1] - q) / q)
  }
  check(sprintf("%s: vectorised p = prop.test p on 300 cells (worst relative %.2g)", label, worst), worst < 1e-9)
}

exact_seq <- function(id, test, N1, N2, p1, p2, sides, dir, margin, nominal) {
  f <- matrix(1, 1, 1)
  cross <- numeric(length(N1))
  prev1 <- 0; prev2 <- 0
  near <- Inf
  for (k in seq_along(N1)) {
    g <- conv(f, dbinom(0:(N1[k] - prev1), N1[k] - prev1, p1), dbinom(0:(N2[k] - prev2), N2[k] - prev2, p2))
    p <- cell_p(test, N1[k], N2[k], sides, dir, margin)
    spot_check(p, test, N1[k], N2[k], sides, dir, sprintf("%s look %d", id, k))
    near <- min(near, min(abs(p / nominal[k] - 1), na.rm = TRUE))
    rej <- !is.na(p) & p <= nominal[k]
    cross[k] <- sum(g[rej])
    g[rej] <- 0
    f <- g
    prev1 <- N1[k]; prev2 <- N2[k]
  }
  ## No cell's p-value lies within a relative 1e-6 of its look's nominal
  ## level, so the tie conventions (p <= level, or the statistic strictly
  ## beyond the critical value) cannot matter.
  check(sprintf("%s: no cell p within 1e-6 of the nominal level (closest %.2g)", id, near), near > 1e-6)
  check(sprintf("%s: the distribution keeps its mass (%.3g)", id, abs(sum(f) + sum(cross) - 1)), abs(sum(f) + sum(cross) - 1) < 1e-12)
  cat(sprintf("%s: first crossing %s, total %.10f\n", id, lst(cross), sum(cross)))
  data.frame(id = id, test = test, n1 = paste(N1, collapse = ","), n2 = paste(N2, collapse = ","),
             p1 = p1, p2 = p2, sides = sides, dir = dir, margin = margin,
             nominal = lst(nominal), cross = lst(cross), total = sum(cross),
             source = sprintf("exact: convolution of dbinom batches over the accrued tables, cells decided by %s p <= nominal; script seqsim_make.R",
                              switch(test, "chi-square" = "prop.test(correct=FALSE)", "chi-square-yates" = "prop.test(correct=TRUE)",
                                     "fisher" = "fisher.test", "z-unpooled" = "the Wald z",
                                     "farrington-manning" = "the score z (optimize)", "blackwelder" = "the Wald z against the margin")),
             stringsAsFactors = FALSE)
}

ex <- rbind(
  exact_seq("chisq_null", "chi-square", c(150, 300, 450), c(150, 300, 450), 0.3, 0.3, 2, 0, 0, poc2),
  exact_seq("chisq_power", "chi-square", c(150, 300, 450), c(150, 300, 450), 0.3, 0.2, 2, 0, 0, poc2),
  exact_seq("z_null_unequal", "z-unpooled", c(100, 200, 300), c(150, 300, 450), 0.25, 0.25, 2, 0, 0, c(0.0005, 0.005, 0.045)),
  exact_seq("yates_one_power", "chi-square-yates", c(120, 240, 360), c(120, 240, 360), 0.2, 0.3, 1, -1, 0, poc1),
  exact_seq("fisher_null", "fisher", c(30, 60, 90), c(30, 60, 90), 0.4, 0.4, 2, 0, 0, poc2),
  exact_seq("fisher_one_power", "fisher", c(20, 40, 60), c(25, 50, 75), 0.5, 0.25, 1, 1, 0, c(0.001, 0.01, 0.02)),
  exact_seq("fm_margin_null", "farrington-manning", c(100, 200, 300), c(100, 200, 300), 0.5, 0.6, 1, 0, -0.1, poc1),
  exact_seq("bw_margin_power", "blackwelder", c(150, 300, 450), c(150, 300, 450), 0.2, 0.2, 1, 0, 0.1, poc1)
)
write_tsv(ex, "seqsim_binomial_exact.tsv")
cat("\n")

## ---------------------------------------------------------------------
## 3. t tests on recorded normal data, look by look.
## ---------------------------------------------------------------------
set.seed(20250602)
md <- list(); ms <- list()
for (case in 1:2) {
  N1 <- if (case == 1) c(7, 8, 20) else c(12, 30, 31)
  N2 <- if (case == 1) c(9, 16, 30) else c(10, 25, 40)
  x <- rnorm(max(N1), 0.6, 1.3)
  y <- rnorm(max(N2), 0, 0.8)
  id <- sprintf("means%d", case)
  md[[case]] <- rbind(
    data.frame(id = id, group = 1, look = findInterval(seq_along(x) - 1, N1) + 1, value = x),
    data.frame(id = id, group = 2, look = findInterval(seq_along(y) - 1, N2) + 1, value = y))
  for (k in 1:3) {
    a <- x[1:N1[k]]; b <- y[1:N2[k]]
    for (bound in c(0, -0.3)) for (welch in c(FALSE, TRUE)) {
      tt <- t.test(a, b, mu = bound, var.equal = !welch)
      tg <- t.test(a, b, mu = bound, var.equal = !welch, alternative = "greater")
      tl <- t.test(a, b, mu = bound, var.equal = !welch, alternative = "less")
      ms[[length(ms) + 1]] <- data.frame(id = id, look = k, n1 = N1[k], n2 = N2[k],
        mean1 = mean(a), ss1 = sum((a - mean(a))^2), mean2 = mean(b), ss2 = sum((b - mean(b))^2),
        test = if (welch) "welch" else "student", bound = bound,
        t = unname(tt$statistic), df = unname(tt$parameter), p2 = tt$p.value, pgreater = tg$p.value, pless = tl$p.value,
        source = sprintf("t.test(x[1:%d], y[1:%d], mu = %g, var.equal = %s) and alternative = \"greater\", \"less\"; mean(), sum((x - mean(x))^2)",
                         N1[k], N2[k], bound, !welch), stringsAsFactors = FALSE)
    }
  }
}
md <- do.call(rbind, md); ms <- do.call(rbind, ms)
write_tsv(md, "seqsim_means_data.tsv")
write_tsv(ms, "seqsim_means_stats.tsv")
cat("\n")

## ---------------------------------------------------------------------
## 4. Log-rank tests at event-driven looks on recorded survival data.
## ---------------------------------------------------------------------
## Participant i enters at e, has an event time t and a dropout time c;
## the study ends at end = accrual + follow-up. The event is observed when
## t <= min(end - e, c), at calendar time e + t. Look k is at the calendar
## time tau of the D_k-th observed event (or at the end when fewer occur;
## the looks not reached are then replaced by one final analysis at the
## end). The data at tau: participants entered by tau (e < tau), followed
## up to min(t, c, tau - e), an event when observed by tau.
set.seed(20250603)
sd_list <- list(); ss_list <- list()
for (case in 1:2) {
  n1 <- if (case == 1) 25 else 40
  n2 <- if (case == 1) 30 else 35
  A <- if (case == 1) 2 else 0
  F <- if (case == 1) 1 else 2.5
  eta <- if (case == 1) 0.1 else 0
  end <- A + F
  g <- rep(1:2, c(n1, n2))
  h <- ifelse(g == 1, 0.4, 0.7)
  e <- if (A > 0) A * runif(n1 + n2) else rep(0, n1 + n2)
  tt <- rexp(n1 + n2, h)
  cc <- if (eta > 0) rexp(n1 + n2, eta) else rep(Inf, n1 + n2)
  elig <- tt <= pmin(end - e, cc)
  ce <- ifelse(elig, e + tt, Inf)
  D <- if (case == 1) c(8, 16, 40) else c(10, 30, 45)
  id <- sprintf("surv%d", case)
  cat(sprintf("%s: %d participants, %d events observed by the end %g\n", id, n1 + n2, sum(elig), end))
  sd_list[[case]] <- data.frame(id = id, i = seq_along(g) - 1, group = g, entry = e, t = tt, c = cc,
                                n1 = n1, n2 = n2, end = end)
  sorted <- sort(ce[elig])
  final_done <- FALSE
  for (k in seq_along(D)) {
    if (final_done) break
    if (D[k] <= length(sorted)) {
      tau <- sorted[D[k]]; final <- FALSE
    } else {
      tau <- end; final <- TRUE; final_done <- TRUE
    }
    inc <- e < tau | ce <= tau
    ev <- elig & (ce <= tau | final)
    time <- ifelse(ev, tt, pmin(tt, cc, tau - e))
    sdf <- survdiff(Surv(time[inc], ev[inc]) ~ g[inc])
    U <- sdf$obs[1] - sdf$exp[1]
    V <- sdf$var[1, 1]
    check(sprintf("%s look %d: chisq = U^2/V", id, k), abs(sdf$chisq - U^2 / V) < 1e-9 * sdf$chisq)
    ss_list[[length(ss_list) + 1]] <- data.frame(id = id, look = k, events = D[k], tau = tau, final = as.integer(final),
      entered = sum(inc), entered1 = sum(inc & g == 1), observed = sum(ev[inc]), U = U, V = V, chisq = sdf$chisq,
      p = pchisq(sdf$chisq, 1, lower.tail = FALSE),
      source = "survdiff(Surv(time, status) ~ group) on the data censored at tau: U = obs[1] - exp[1], V = var[1,1]",
      stringsAsFactors = FALSE)
  }
}
write_tsv(do.call(rbind, sd_list), "seqsim_survival_data.tsv")
write_tsv(do.call(rbind, ss_list), "seqsim_survival_stats.tsv")
cat("\ndone\n")
