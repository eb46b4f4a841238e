# Reference values for the exact tests of two proportions (power/exact.go).
#
# Only R's base stats package is used: fisher.test, chisq.test, prop.test,
# dbinom, pnorm. The Wald z test with the unpooled variance has no stats
# function; it is written out below from its formula. Nothing here calls the
# Go code.
#
# Run from this directory:  Rscript exact_make.R > exact_make.out
# Writes exact_fisher.tsv, exact_chisq.tsv, exact_reject.tsv,
# exact_power.tsv and exact_sawtooth.tsv.

options(warn = -1) # chisq.test/prop.test warn about small expected counts; the values are what we want
cat(R.version.string, "\n")

fmt <- function(x) ifelse(is.na(x), "NA", sprintf("%.15g", x))
relErr <- 1 + 10^(-7) # fisher.test's own tie tolerance; also used for p = alpha

checks <- 0L
check <- function(ok, what) {
  if (!isTRUE(ok)) stop("CHECK FAILED: ", what)
  checks <<- checks + 1L
  cat("CHECK", what, "OK\n")
}

write_tsv <- function(df, file) {
  write.table(df, file, sep = "\t", quote = FALSE, row.names = FALSE, na = "NA")
  cat("wrote", file, nrow(df), "rows\n")
}

tab <- function(x1, n1, x2, n2) matrix(c(x1, n1 - x1, x2, n2 - x2), 2)
mcall <- function(x1, n1, x2, n2) sprintf("matrix(c(%d, %d, %d, %d), 2)", x1, n1 - x1, x2, n2 - x2)

# ---------------------------------------------------------------------------
# 1. Fixed tables: Fisher and chi-square p-values.
# Columns x1, n1, x2, n2: events / size of group 1 and group 2.
tables <- read.table(header = TRUE, text = "
x1 n1 x2 n2
3 3 0 3
0 3 3 3
1 5 4 5
0 10 0 10
10 10 10 10
2 10 8 10
5 10 5 10
4 10 6 10
0 1 1 1
1 1 0 1
7 12 2 15
0 20 5 20
1 4 30 40
12 50 25 50
3 7 11 13
40 100 55 100
15 200 30 200
1 2 9 30
0 5 2 60
250 500 280 500
6 8 2 9
2 6 4 6
90 300 60 200
13 25 4 25
0 7 7 7
1 30 0 3
0 5 8 21
5 6 2 11
1 7 8 14
4 6 11 39
2 2 1 23
2 3 0 22
10 33 8 46
15 42 41 50
4 7 15 59
")
# Rows 27-30 have another table of exactly the same probability (found by a
# search in exact rational arithmetic): without the 1e-7 tie tolerance the
# two-sided p would lose it. Rows 31-32 have p = 1/100 exactly (two-sided
# and greater), which floating point puts a hair above 0.01. Rows 33-35 have
# another table only a relative 2.4e-5, 5.1e-5 and 6.7e-4 more likely: near
# ties that are not ties, so they stay out of the two-sided p.
tables$id <- sprintf("tab_%02d", seq_len(nrow(tables)))

fis <- do.call(rbind, lapply(seq_len(nrow(tables)), function(i) {
  r <- tables[i, ]
  m <- tab(r$x1, r$n1, r$x2, r$n2)
  p2 <- fisher.test(m)$p.value
  pg <- fisher.test(m, alternative = "greater")$p.value
  pl <- fisher.test(m, alternative = "less")$p.value
  # cross-check the two-sided value with an independent sum over dhyper
  t <- r$x1 + r$x2
  s <- max(0, t - r$n2):min(t, r$n1)
  d <- dhyper(s, r$n1, r$n2, t)
  alt <- sum(d[d <= d[s == r$x1] * relErr])
  check(abs(alt - p2) <= 1e-12 * max(1, p2), sprintf("%s fisher two-sided = dhyper sum", r$id))
  data.frame(id = r$id, x1 = r$x1, n1 = r$n1, x2 = r$x2, n2 = r$n2,
    p_two = fmt(p2), p_greater = fmt(pg), p_less = fmt(pl),
    source = sprintf("fisher.test(%s)$p.value; alternative = \"greater\" / \"less\" for the one-sided columns", mcall(r$x1, r$n1, r$x2, r$n2)))
}))
write_tsv(fis, "exact_fisher.tsv")

chi <- do.call(rbind, lapply(seq_len(nrow(tables)), function(i) {
  r <- tables[i, ]
  m <- tab(r$x1, r$n1, r$x2, r$n2)
  a <- chisq.test(m, correct = FALSE)
  b <- chisq.test(m, correct = TRUE)
  x <- c(r$x1, r$x2); n <- c(r$n1, r$n2)
  pp <- function(alt, correct) prop.test(x, n, alternative = alt, correct = correct)$p.value
  v <- c(a$statistic, a$p.value, b$statistic, b$p.value,
    pp("greater", FALSE), pp("less", FALSE), pp("greater", TRUE), pp("less", TRUE))
  if (all(is.finite(v))) {
    # prop.test's two-sided X^2 is Pearson's: the same numbers.
    check(abs(prop.test(x, n, correct = FALSE)$statistic - a$statistic) <= 1e-12 * max(1, a$statistic),
      sprintf("%s prop.test X2 = chisq.test X2", r$id))
  }
  data.frame(id = r$id, x1 = r$x1, n1 = r$n1, x2 = r$x2, n2 = r$n2,
    stat = fmt(v[1]), p = fmt(v[2]), stat_yates = fmt(v[3]), p_yates = fmt(v[4]),
    p_greater = fmt(v[5]), p_less = fmt(v[6]), p_greater_yates = fmt(v[7]), p_less_yates = fmt(v[8]),
    source = sprintf(paste0("chisq.test(%s, correct = FALSE/TRUE): $statistic, $p.value; ",
      "prop.test(c(%d, %d), c(%d, %d), alternative = \"greater\"/\"less\", correct = FALSE/TRUE)$p.value"),
      mcall(r$x1, r$n1, r$x2, r$n2), r$x1, r$x2, r$n1, r$n2))
}))
write_tsv(chi, "exact_chisq.tsv")

# ---------------------------------------------------------------------------
# 2. Rejection tables and exact power by enumeration.
# decide() is the decision of R's own test for one table.
decide <- function(test, x1, n1, x2, n2, alpha, sides, dir) {
  alt <- if (sides == 2) "two.sided" else if (dir > 0) "greater" else "less"
  if (test == "fisher") {
    p <- fisher.test(tab(x1, n1, x2, n2), alternative = alt)$p.value
    return(c(p <= alpha * relErr, p))
  }
  if (test %in% c("chi-square", "chi-square-yates")) {
    correct <- test == "chi-square-yates"
    p <- if (sides == 2) chisq.test(tab(x1, n1, x2, n2), correct = correct)$p.value
         else prop.test(c(x1, x2), c(n1, n2), alternative = alt, correct = correct)$p.value
    return(c(isTRUE(p <= alpha), p)) # NaN (no events or all events): no rejection
  }
  # z-unpooled: independent implementation of the Wald z with unpooled variance.
  # 0/0 (both proportions 0 or both 1) is NaN: no rejection; 0 against 1 is +-Inf.
  h1 <- x1 / n1; h2 <- x2 / n2
  z <- (h1 - h2) / sqrt(h1 * (1 - h1) / n1 + h2 * (1 - h2) / n2)
  p <- if (sides == 2) 2 * pnorm(-abs(z)) else pnorm(z, lower.tail = dir < 0)
  c(isTRUE(p <= alpha), p)
}

src_decision <- function(test) switch(test,
  "fisher" = "fisher.test(matrix(c(x1, n1-x1, x2, n2-x2), 2), alternative)$p.value <= alpha*(1+1e-7)",
  "chi-square" = "two-sided chisq.test(matrix(c(x1, n1-x1, x2, n2-x2), 2), correct = FALSE)$p.value <= alpha; one-sided prop.test(c(x1, x2), c(n1, n2), alternative, correct = FALSE)$p.value <= alpha; NaN = no",
  "chi-square-yates" = "two-sided chisq.test(matrix(c(x1, n1-x1, x2, n2-x2), 2), correct = TRUE)$p.value <= alpha; one-sided prop.test(c(x1, x2), c(n1, n2), alternative, correct = TRUE)$p.value <= alpha; NaN = no",
  "z-unpooled" = "independent R implementation of the Wald z (unpooled variance), 2*pnorm(-abs(z)) or pnorm(z, lower.tail = dir < 0) <= alpha; NaN = no")

# nearest p-value to alpha among the decisions that are not exact ties
near <- new.env()
near$chi <- Inf
near$fisher <- Inf
near$fisher_ties <- 0L

rejection <- function(test, n1, n2, alpha, sides, dir) {
  R <- matrix(FALSE, n1 + 1, n2 + 1)
  for (x1 in 0:n1) for (x2 in 0:n2) {
    v <- decide(test, x1, n1, x2, n2, alpha, sides, dir)
    R[x1 + 1, x2 + 1] <- as.logical(v[1])
    p <- v[2]
    if (is.finite(p)) {
      rel <- abs(p / alpha - 1)
      if (test == "fisher") {
        if (rel < 1e-7) {
          near$fisher_ties <- near$fisher_ties + 1L
          if (near$fisher_ties <= 5) cat(sprintf("Fisher p = alpha: %s, alpha %g, sides %d, dir %d, p = %.17g\n",
            mcall(x1, n1, x2, n2), alpha, sides, dir, p))
        } else near$fisher <- min(near$fisher, rel)
      } else near$chi <- min(near$chi, rel)
    }
  }
  R
}

configs <- expand.grid(sd = 1:3, test = c("chi-square", "chi-square-yates", "fisher", "z-unpooled"),
  nn = c("3/3", "10/10", "20/20", "35/35", "15/30", "7/12"), stringsAsFactors = FALSE)
configs$alpha <- 0.05
extra <- data.frame(sd = c(1, 1, 1, 2, 1, 1, 1, 2, 1, 1, 1),
  test = c("fisher", "fisher", "chi-square", "chi-square", "chi-square-yates", "z-unpooled", "fisher", "fisher", "fisher", "fisher", "fisher"),
  nn = c("3/3", "20/20", "20/20", "20/20", "12/9", "12/9", "2/23", "2/23", "3/22", "7/14", "6/11"),
  alpha = c(0.1, 0.01, 0.01, 0.025, 0.1, 0.1, 0.01, 0.01, 0.01, 0.1, 0.025), stringsAsFactors = FALSE)
# 2/23 and 3/22 at alpha 0.01 hold tables with p = alpha exactly; 7/14 at
# 0.1 and 6/11 at 0.025 hold two-sided ties that decide a rejection.
configs <- rbind(configs, extra)
sides_of <- c(2, 1, 1); dir_of <- c(0, 1, -1)

pairs <- list(c(0.3, 0.3), c(0.2, 0.6), c(0.55, 0.15))

rej_rows <- list(); pow_rows <- list()
for (i in seq_len(nrow(configs))) {
  cf <- configs[i, ]
  nn <- as.integer(strsplit(cf$nn, "/")[[1]]); n1 <- nn[1]; n2 <- nn[2]
  sides <- sides_of[cf$sd]; dir <- dir_of[cf$sd]
  R <- rejection(cf$test, n1, n2, cf$alpha, sides, dir)
  id <- sprintf("rej_%03d", i)
  rej_rows[[i]] <- data.frame(id = id, test = cf$test, n1 = n1, n2 = n2, alpha = cf$alpha, sides = sides, dir = dir,
    count = sum(R), table = paste0(as.integer(t(R)), collapse = ""),
    source = paste0("decision per table (x1, x2), row-major by x1: ", src_decision(cf$test)))
  for (j in seq_along(pairs)) {
    p1 <- pairs[[j]][1]; p2 <- pairs[[j]][2]
    P <- outer(dbinom(0:n1, n1, p1), dbinom(0:n2, n2, p2))
    pow <- sum(P[R])
    pow_rows[[length(pow_rows) + 1]] <- data.frame(id = sprintf("pow_%03d_%d", i, j), test = cf$test, n1 = n1, n2 = n2,
      p1 = p1, p2 = p2, alpha = cf$alpha, sides = sides, dir = dir, power = fmt(pow),
      source = sprintf("sum(outer(dbinom(0:%d, %d, %g), dbinom(0:%d, %d, %g))[R]), R = table %s of exact_reject.tsv", n1, n1, p1, n2, n2, p2, id))
  }
}

# Larger sizes, power only (the tables are long): the size of the uncorrected
# chi-square test at 100 per group, and Fisher at 60 per group.
big <- data.frame(test = c("chi-square", "chi-square", "chi-square", "fisher", "fisher"),
  n1 = c(100, 100, 100, 60, 60), n2 = c(100, 100, 100, 60, 60),
  p1 = c(0.5, 0.2, 0.3, 0.4, 0.15), p2 = c(0.5, 0.2, 0.45, 0.4, 0.4), stringsAsFactors = FALSE)
Rcache <- list()
for (i in seq_len(nrow(big))) {
  b <- big[i, ]
  key <- paste(b$test, b$n1, b$n2)
  if (is.null(Rcache[[key]])) Rcache[[key]] <- rejection(b$test, b$n1, b$n2, 0.05, 2, 0)
  R <- Rcache[[key]]
  P <- outer(dbinom(0:b$n1, b$n1, b$p1), dbinom(0:b$n2, b$n2, b$p2))
  pow_rows[[length(pow_rows) + 1]] <- data.frame(id = sprintf("pow_big_%d", i), test = b$test, n1 = b$n1, n2 = b$n2,
    p1 = b$p1, p2 = b$p2, alpha = 0.05, sides = 2, dir = 0, power = fmt(sum(P[R])),
    source = sprintf("sum(outer(dbinom(0:%d, %d, %g), dbinom(0:%d, %d, %g))[R]), R[x1+1, x2+1] = %s",
      b$n1, b$n1, b$p1, b$n2, b$n2, b$p2, src_decision(b$test)))
}

# Large sizes (the benchmark's scale). Calling chisq.test on 251001 tables is
# slow, so the chi-square and z decisions are vectorised from the formulas
# and checked against chisq.test / prop.test / decide() on 3000 random tables
# of each; Fisher keeps fisher.test for every table.
vec_rejection <- function(test, n1, n2, alpha, sides, dir) {
  N <- n1 + n2
  D <- outer((0:n1) * n2, (0:n2) * n1, "-")
  T <- outer(0:n1, 0:n2, "+")
  if (test == "z-unpooled") {
    h1 <- (0:n1) / n1; h2 <- (0:n2) / n2
    z <- outer(h1, h2, "-") / sqrt(outer(h1 * (1 - h1) / n1, h2 * (1 - h2) / n2, "+"))
  } else {
    d <- abs(D)
    if (test == "chi-square-yates") d <- pmax(0, d - N / 2)
    z <- sign(D) * sqrt(N * d^2 / (n1 * n2 * T * (N - T)))
  }
  p <- if (sides == 2) 2 * pnorm(-abs(z)) else pnorm(z, lower.tail = dir < 0)
  R <- p <= alpha
  R[is.na(R)] <- FALSE
  R
}
set.seed(20240601)
large <- data.frame(test = c("chi-square", "chi-square", "chi-square-yates", "z-unpooled", "fisher"),
  n1 = c(500, 500, 300, 400, 150), n2 = c(500, 500, 450, 300, 120),
  p1 = c(0.3, 0.5, 0.12, 0.6, 0.25), p2 = c(0.38, 0.5, 0.2, 0.5, 0.4),
  sides = c(2, 2, 2, 1, 2), dir = c(0, 0, 0, 1, 0), stringsAsFactors = FALSE)
for (i in seq_len(nrow(large))) {
  b <- large[i, ]
  if (b$test == "fisher") {
    R <- rejection(b$test, b$n1, b$n2, 0.05, b$sides, b$dir)
    how <- src_decision(b$test)
  } else {
    R <- vec_rejection(b$test, b$n1, b$n2, 0.05, b$sides, b$dir)
    bad <- 0L
    for (k in 1:3000) {
      x1 <- sample(0:b$n1, 1); x2 <- sample(0:b$n2, 1)
      if (as.logical(decide(b$test, x1, b$n1, x2, b$n2, 0.05, b$sides, b$dir)[1]) != R[x1 + 1, x2 + 1]) bad <- bad + 1L
    }
    check(bad == 0L, sprintf("large %d %s %d/%d: vectorised decisions = %s on 3000 random tables", i, b$test, b$n1, b$n2,
      if (b$test == "z-unpooled") "the scalar Wald z" else "chisq.test/prop.test"))
    how <- sprintf("vectorised formula, equal on 3000 random tables to %s", src_decision(b$test))
  }
  P <- outer(dbinom(0:b$n1, b$n1, b$p1), dbinom(0:b$n2, b$n2, b$p2))
  pow_rows[[length(pow_rows) + 1]] <- data.frame(id = sprintf("pow_large_%d", i), test = b$test, n1 = b$n1, n2 = b$n2,
    p1 = b$p1, p2 = b$p2, alpha = 0.05, sides = b$sides, dir = b$dir, power = fmt(sum(P[R])),
    source = sprintf("sum(outer(dbinom(0:%d, %d, %g), dbinom(0:%d, %d, %g))[R]), R[x1+1, x2+1] = %s",
      b$n1, b$n1, b$p1, b$n2, b$n2, b$p2, how))
}

rej <- do.call(rbind, rej_rows)
pow <- do.call(rbind, pow_rows)
write_tsv(rej, "exact_reject.tsv")
write_tsv(pow, "exact_power.tsv")

# ---------------------------------------------------------------------------
# 3. Saw-tooth: exact power for every n1 in a window.
saw <- data.frame(test = c("fisher", "chi-square-yates", "chi-square", "z-unpooled", "fisher"),
  ratio = c(1, 1, 1, 1.5, 1), p1 = c(0.05, 0.2, 0.1, 0.3, 0.2), p2 = c(0.4, 0.7, 0.5, 0.75, 0.4),
  alpha = 0.05, sides = c(2, 2, 2, 1, 2), dir = c(0, 0, 0, -1, 0), target = c(0.841, 0.83, 0.755, 0.8, 0.9),
  low = c(20, 12, 12, 8, 5), high = c(30, 24, 22, 26, 15), stringsAsFactors = FALSE)
saw_rows <- list()
for (i in seq_len(nrow(saw))) {
  s <- saw[i, ]
  ns <- s$low:s$high
  pw <- sapply(ns, function(n1) {
    n2 <- ceiling(s$ratio * n1 - 1e-9)
    R <- rejection(s$test, n1, n2, s$alpha, s$sides, s$dir)
    sum(outer(dbinom(0:n1, n1, s$p1), dbinom(0:n2, n2, s$p2))[R])
  })
  ok <- pw >= s$target
  first <- if (any(ok)) ns[which(ok)[1]] else 0
  stable <- if (ok[length(ok)]) { k <- length(ok); while (k > 1 && ok[k - 1]) k <- k - 1; ns[k] } else 0
  cat(sprintf("sawtooth %d %s: first %d stable %d\n", i, s$test, first, stable))
  saw_rows[[i]] <- data.frame(id = sprintf("saw_%d_n%03d", i, ns), case = i, test = s$test, ratio = s$ratio,
    p1 = s$p1, p2 = s$p2, alpha = s$alpha, sides = s$sides, dir = s$dir, target = s$target,
    low = s$low, high = s$high, n1 = ns, n2 = ceiling(s$ratio * ns - 1e-9), power = fmt(pw),
    first = first, stable = stable,
    source = sprintf("n2 = ceiling(%g*n1 - 1e-9); sum(outer(dbinom(0:n1, n1, %g), dbinom(0:n2, n2, %g))[R]), R[x1+1, x2+1] = %s",
      s$ratio, s$p1, s$p2, src_decision(s$test)))
}
write_tsv(do.call(rbind, saw_rows), "exact_sawtooth.tsv")

# ---------------------------------------------------------------------------
cat(sprintf("Fisher p-values within a relative 1e-7 of alpha (exact ties p = alpha): %d\n", near$fisher_ties))
cat(sprintf("chi-square/z p-values: smallest |p/alpha - 1| = %.3g\n", near$chi))
cat(sprintf("other Fisher p-values: smallest |p/alpha - 1| = %.3g\n", near$fisher))
check(near$fisher > 1e-6, "no Fisher p-value near alpha but the exact ties: the 1e-7 tolerance decides only p = alpha")
check(near$chi > 1e-6, "no chi-square or z p-value within 1e-6 of alpha: p < alpha and p <= alpha agree")
cat(sprintf("%d checks passed\n", checks))
