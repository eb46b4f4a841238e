## tails_make.R -- reference values for the upper tails and upper quantiles
## of the normal, chi-square (1 df) and t distributions (central and
## noncentral) at levels from 0.5 down to 1e-20, and for t-test and TOST
## power at such levels.
##
## Run from this folder:   Rscript tails_make.R > tails_make.out
##
## Writes tails_t.tsv, tails_normal.tsv, tails_nct.tsv, tails_power.tsv and
## tails_tost.tsv. tails_check.py then re-checks every table with mpmath.
##
## Only base R `stats` is used: qt, pt, qnorm, pnorm, qchisq, pchisq,
## dchisq, power.t.test and integrate(). Everything not from a named library
## call is an independent implementation written from the formula stated in
## tails_README.md. The script stops if any cross-check fails.

options(digits = 17, width = 160, warn = 1)
cat("R.version.string:", R.version.string, "\n\n")

fmt <- function(x) {
  if (is.character(x)) return(x)
  if (is.logical(x)) return(ifelse(is.na(x), "NA", ifelse(x, "TRUE", "FALSE")))
  ifelse(is.na(x), "NA",
         ifelse(is.infinite(x), ifelse(x > 0, "Inf", "-Inf"),
                sprintf("%.17g", x)))
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
worst <- list()
check <- function(group, label, mine, other, tol, relative = TRUE) {
  err <- abs(mine - other)
  if (relative) err <- err / max(abs(other), 1e-300)
  if (is.null(worst[[group]]) || err > worst[[group]]) worst[[group]] <<- err
  cat(sprintf("CHECK %-58s mine=%.17g other=%.17g %s=%.3g %s\n", label, mine, other,
              if (relative) "relerr" else "abserr", err, if (err <= tol) "OK" else "FAIL"))
  if (!is.finite(err) || err > tol) stop("cross-check failed: ", label)
  n_checks <<- n_checks + 1L
}

banner <- function(s) cat("\n====================", s, "====================\n")

## The grid: upper-tail probabilities from 0.5 to 1e-20 and degrees of
## freedom from 1 to 1e6, with three fractional ones (Welch and cluster
## degrees of freedom are not whole numbers).
P_GRID <- c(0.5, 0.4, 0.25, 0.1, 0.05, 0.025, 0.01, 1e-3, 1e-4, 1e-6, 1e-8,
            1e-10, 1e-12, 1e-14, 1e-16, 1e-18, 1e-20)
DF_GRID <- c(1, 2, 3, 5, 10, 30, 100, 1000, 1e4, 1e5, 1e6)
DF_FRAC <- c(1.5, 2.5, 47.3)

## ---------------------------------------------------------------------------
## 1. tails_t.tsv -- qt(p, df, lower.tail = FALSE) and pt at that quantile
## ---------------------------------------------------------------------------
banner("tails_t.tsv")
t_rows <- list()
for (df in c(DF_GRID, DF_FRAC)) for (p in P_GRID) {
  q <- qt(p, df, lower.tail = FALSE)
  up <- pt(q, df, lower.tail = FALSE)
  id <- sprintf("t_%d", length(t_rows) + 1L)
  src_q <- sprintf("qt(%s, %s, lower.tail = FALSE)", fmt(p), fmt(df))
  src_u <- sprintf("pt(q, %s, lower.tail = FALSE) at that q", fmt(df))
  ## R's own round trip: the tail at R's quantile gives back p.
  check("qt/pt round trip", paste(id, "pt(qt(p)) = p"), up, p, 1e-12)
  t_rows[[length(t_rows) + 1L]] <- data.frame(id = id, p = p, df = df, q = q, upper = up,
    source_q = src_q, source_upper = src_u, stringsAsFactors = FALSE)
}
t_tab <- do.call(rbind, t_rows)
write_tsv(t_tab, "tails_t.tsv")

## ---------------------------------------------------------------------------
## 2. tails_normal.tsv -- qnorm and qchisq(., 1) upper quantiles
## ---------------------------------------------------------------------------
banner("tails_normal.tsv")
n_rows <- list()
for (p in P_GRID) {
  z <- qnorm(p, lower.tail = FALSE)
  c1 <- qchisq(p, 1, lower.tail = FALSE)
  ## R's qchisq misses by 1.1e-10 at p = 1e-14 (its own pchisq gives back
  ## p(1 + 3.5e-9) there); the root of pchisq on the log scale does not.
  c1r <- if (p == 0.5) c1 else
    uniroot(function(x) pchisq(x, 1, lower.tail = FALSE, log.p = TRUE) - log(p),
            c(0.5, 2) * c1, tol = 1e-15)$root
  id <- sprintf("norm_%d", length(n_rows) + 1L)
  check("qnorm/pnorm round trip", paste(id, "pnorm(qnorm(p)) = p"), pnorm(z, lower.tail = FALSE), p, 1e-13)
  ## a chi-square on 1 df is the square of a normal: two tails of z
  check("pchisq root vs qnorm^2", paste(id, "root of pchisq = qnorm(p/2)^2"), c1r,
        qnorm(p / 2, lower.tail = FALSE)^2, 1e-13)
  check("qchisq vs pchisq root", paste(id, "qchisq = root of pchisq"), c1, c1r, 2e-10)
  n_rows[[length(n_rows) + 1L]] <- data.frame(id = id, p = p, z = z, chisq1 = c1, chisq1_root = c1r,
    source_z = sprintf("qnorm(%s, lower.tail = FALSE)", fmt(p)),
    source_chisq1 = sprintf("qchisq(%s, 1, lower.tail = FALSE)", fmt(p)),
    source_chisq1_root = sprintf("uniroot(function(x) pchisq(x, 1, lower.tail = FALSE, log.p = TRUE) - log(%s), c(0.5, 2) * qchisq(%s, 1, lower.tail = FALSE), tol = 1e-15)$root", fmt(p), fmt(p)),
    stringsAsFactors = FALSE)
}
n_tab <- do.call(rbind, n_rows)
write_tsv(n_tab, "tails_normal.tsv")

## ---------------------------------------------------------------------------
## 3. tails_nct.tsv -- noncentral t upper tails, by quadrature and pt(ncp=)
## ---------------------------------------------------------------------------
banner("tails_nct.tsv")

## T = (Z + ncp)/S, S = sqrt(V/df), V ~ chisq(df):
##   P(T > q) = E[ pnorm(ncp - q*S) ]                          (form A, over S)
##            = integral over x > -ncp of dnorm(x) * pchisq(df*((x + ncp)/q)^2, df)   (form B, over Z = x)
## Each is integrated with integrate() at rel.tol 1e-13 on the log scale
## (the integrand divided by its maximum), split at breakpoints around the
## mode on the scales of both factors, so that tiny tails keep their
## relative accuracy. The two forms share no code; the script requires them
## to agree.
log_fS <- function(s, df) dchisq(df * s^2, df, log = TRUE) + log(2 * df * s)

## integrate() over the pieces between breakpoints. A piece on which
## integrate() reports round-off (a piece a few ulps wide, or one where the
## integrand's own rounding shows, as in pnorm(ncp - q*s) with q*s near a
## huge ncp) is retried at rel.tol 1e-10; one that still fails counts as 0
## if it cannot hold 1e-16 of the total, and otherwise fails the whole.
piecewise <- function(f, br, upper_inf) {
  br <- sort(unique(br))
  one <- function(a, b) {
    r <- tryCatch(integrate(f, a, b, rel.tol = 1e-13, abs.tol = 0, subdivisions = 5000L)$value,
                  error = function(e) NA)
    if (is.na(r)) r <- tryCatch(integrate(f, a, b, rel.tol = 1e-10, abs.tol = 0, subdivisions = 5000L)$value,
                                error = function(e) NA)
    if (is.na(r)) {
      bound <- if (is.finite(b)) (b - a) * max(f(c(a, (a + b) / 2, b))) else Inf
      r <- if (bound < 1e-16) 0 else NA
    }
    r
  }
  tot <- 0
  for (j in seq_len(length(br) - 1)) if (br[j + 1] > br[j]) tot <- tot + one(br[j], br[j + 1])
  if (upper_inf) tot <- tot + one(max(br), Inf)
  tot
}

## the maximum of a unimodal log-integrand on (lo, hi), on a log-spaced scan
## refined by optimize()
find_mode <- function(lg, lo, hi) {
  xs <- if (lo > 0) exp(seq(log(lo), log(hi), length.out = 4001)) else seq(lo, hi, length.out = 4001)
  v <- vapply(xs, lg, 0)
  i <- which.max(v)
  a <- xs[max(1, i - 1)]; b <- xs[min(length(xs), i + 1)]
  if (b > a) {
    o <- optimize(lg, c(a, b), maximum = TRUE, tol = 1e-15 * max(abs(a), abs(b), 1e-300))
    if (o$objective >= v[i]) return(c(o$maximum, o$objective))
  }
  c(xs[i], v[i])
}

## Below s = 1e-150 (where df*s^2 would underflow) the integrand is taken
## as 0: what it leaves out is below 1e-150 of the whole.
finite0 <- function(v) { v[!is.finite(v)] <- 0; v }

nct_A <- function(q, df, ncp) {
  lg <- function(s) pnorm(ncp - q * s, log.p = TRUE) + log_fS(pmax(s, 1e-150), df)
  m <- find_mode(lg, 1e-150, 10 + 10 / sqrt(df))
  mode <- m[1]; lmax <- m[2]
  f <- function(s) finite0(exp(lg(s) - lmax))
  sc <- c(1 / sqrt(2 * df), 1 / q, mode)
  k <- c(0.01, 0.1, 0.5, 1, 2, 5, 10, 20, 40, 80)
  ## and around s = ncp/q, where pnorm(ncp - q*s) falls from 1 to 0 over 1/q
  br <- c(0, mode, mode + outer(sc, k), mode - outer(sc, k), mode * 2^(-(1:60)),
          ncp / q + c(0, k, -k) / q)
  br <- br[br >= 0 & is.finite(br)]
  exp(log(piecewise(f, br, TRUE)) + lmax)
}

nct_B <- function(q, df, ncp) {
  lg <- function(x) dnorm(x, log = TRUE) + pchisq(df * (pmax(x + ncp, 1e-150 * q) / q)^2, df, log.p = TRUE)
  lo <- -ncp
  m <- find_mode(function(y) lg(lo + y), 1e-150 * q, 60 + q + abs(ncp))
  mode <- lo + m[1]; lmax <- m[2]
  f <- function(x) finite0(exp(lg(x) - lmax))
  sc <- c(1, q / sqrt(2 * df), m[1])
  k <- c(0.01, 0.1, 0.5, 1, 2, 5, 10, 20, 40, 80)
  ## and around x = q - ncp (S = 1), where pchisq rises over q/sqrt(2 df)
  br <- c(lo, mode, mode + outer(sc, k), mode - outer(sc, k), lo + m[1] * 2^(-(1:60)),
          q - ncp + c(0, k, -k) * q / sqrt(2 * df))
  br <- br[br >= lo & is.finite(br)]
  exp(log(piecewise(f, br, TRUE)) + lmax)
}

## Rows: q is the one-sided critical value at level a, and the
## noncentrality is small, moderate, the one giving power about 0.8
## (q + qnorm(0.8)), or negative (the far tail a two-sided test adds).
NCT_DF <- c(1, 2, 5, 10, 30, 100, 1000, 1e4, 1e5, 1e6, 2.5)
NCT_A <- c(1e-4, 1e-10, 1e-20)
nct_rows <- list()
for (df in NCT_DF) for (a in NCT_A) {
  q <- qt(a, df, lower.tail = FALSE)
  for (ncp in c(0.5, 3, q + qnorm(0.8), -3)) {
    id <- sprintf("nct_%d", length(nct_rows) + 1L)
    va <- nct_A(q, df, ncp)
    vb <- nct_B(q, df, ncp)
    cat(sprintf("%s form A %.17g  form B %.17g\n", id, va, vb))
    if (is.na(va) && is.na(vb)) stop("both quadratures failed: ", id)
    if (!is.na(va) && !is.na(vb)) {
      check("quadrature A vs B", paste(id, "form A vs form B"), va, vb, 1e-12)
    } else {
      cat(sprintf("NOTE %s form %s failed (round-off); the other is kept and checked by tails_check.py\n",
                  id, if (is.na(va)) "A" else "B"))
    }
    ## Form B is kept where both ran: at df = 1e6 form A (dchisq at 1e6
    ## degrees of freedom) strays by up to 8e-13, B by 2e-15 (mpmath).
    if (!is.na(vb)) va <- vb
    ## R's pt(ncp=) is AS 243: exact only for df <= 4e5 and ncp <= 37.62,
    ## and accurate to about 1e-12 absolute (its upper tail is 1 - lower).
    pt_ok <- df <= 4e5 && abs(ncp) <= 37.62
    vp <- if (pt_ok) pt(q, df, ncp, lower.tail = FALSE) else NA
    if (pt_ok) cat(sprintf("NOTE %s pt(ncp) - quadrature = %.3g (relative %.3g)\n", id, vp - va, (vp - va) / va))
    cat(sprintf("%s q=%.17g df=%s ncp=%.17g  quadrature=%.17g  pt=%s\n", id, q, fmt(df), ncp, va, fmt(vp)))
    nct_rows[[length(nct_rows) + 1L]] <- data.frame(id = id, q = q, df = df, ncp = ncp,
      value_quad = va, value_pt = vp,
      source_q = sprintf("qt(%s, %s, lower.tail = FALSE)", fmt(a), fmt(df)),
      source_pt = if (pt_ok) sprintf("pt(q, %s, ncp, lower.tail = FALSE)", fmt(df)) else "NA",
      stringsAsFactors = FALSE)
  }
}
nct_tab <- do.call(rbind, nct_rows)
write_tsv(nct_tab, "tails_nct.tsv")

## ---------------------------------------------------------------------------
## 4. tails_power.tsv -- power.t.test at tiny sig.level (issue 9)
## ---------------------------------------------------------------------------
banner("tails_power.tsv")
pw_scen <- list(
  ## solve, type, alternative, n, delta, sd, sig.level  (power 0.8 when solving n)
  list("n", "two.sample", "two.sided", NA, 0.25, 1, 0.05),
  list("n", "two.sample", "two.sided", NA, 0.25, 1, 1e-13),
  list("n", "two.sample", "two.sided", NA, 0.25, 1, 1e-14),
  list("n", "two.sample", "two.sided", NA, 0.25, 1, 1e-16),
  list("n", "two.sample", "two.sided", NA, 0.25, 1, 1e-20),
  list("n", "two.sample", "one.sided", NA, 0.25, 1, 1e-20),
  list("n", "one.sample", "two.sided", NA, 0.5, 1, 1e-20),
  list("n", "paired", "one.sided", NA, 1, 1, 1e-16),
  list("n", "two.sample", "two.sided", NA, 2, 1, 1e-20),
  list("power", "two.sample", "two.sided", 2193, 0.25, 1, 1e-13),
  list("power", "two.sample", "two.sided", 3242, 0.25, 1, 1e-14),
  list("power", "two.sample", "two.sided", 2300, 0.25, 1, 1e-13),
  list("power", "two.sample", "two.sided", 2400, 0.25, 1, 1e-13),
  list("power", "two.sample", "two.sided", 2372, 0.25, 1, 1e-14),
  list("power", "two.sample", "two.sided", 3000, 0.25, 1, 1e-20),
  list("power", "two.sample", "one.sided", 50, 1, 1, 1e-10),
  list("power", "one.sample", "two.sided", 40, 1.5, 1, 1e-20),
  list("power", "paired", "one.sided", 30, 1.2, 1, 1e-16)
)
pw_rows <- list()
for (s in pw_scen) {
  solve <- s[[1]]; typ <- s[[2]]; alt <- s[[3]]; n <- s[[4]]
  delta <- s[[5]]; sd <- s[[6]]; a <- s[[7]]
  for (strict in c(FALSE, TRUE)) {
    id <- sprintf("pw_%d", length(pw_rows) + 1L)
    if (solve == "n") {
      call <- sprintf("power.t.test(delta = %s, sd = %s, power = 0.8, sig.level = %s, type = \"%s\", alternative = \"%s\", strict = %s, tol = 1e-12)$n",
                      fmt(delta), fmt(sd), fmt(a), typ, alt, strict)
      n <- eval(parse(text = call)); pw <- 0.8
    } else {
      call <- sprintf("power.t.test(n = %s, delta = %s, sd = %s, sig.level = %s, type = \"%s\", alternative = \"%s\", strict = %s)$power",
                      fmt(n), fmt(delta), fmt(sd), fmt(a), typ, alt, strict)
      pw <- eval(parse(text = call))
    }
    cat(sprintf("%s %s\n    = %.17g\n", id, call, if (solve == "n") n else pw))
    pw_rows[[length(pw_rows) + 1L]] <- data.frame(id = id, solve = solve, type = typ,
      alternative = alt, strict = strict, n = n, delta = delta, sd = sd, sig_level = a,
      power = pw, source = call, stringsAsFactors = FALSE)
  }
}
pw_tab <- do.call(rbind, pw_rows)
## strict = TRUE adds the far tail pt(-qu, df, ncp), which here is below
## 1e-40; what it adds in R is the rounding of AS 243's 1 - (series), up
## to 1.3e-12 (pw_20). The strict = FALSE rows are the reference.
for (i in seq(1, nrow(pw_tab), by = 2)) {
  if (pw_tab$solve[i] == "n") {
    check("strict FALSE vs TRUE (n)", paste(pw_tab$id[i], "strict changes n by < 1e-9"),
          pw_tab$n[i], pw_tab$n[i + 1], if (pw_tab$sig_level[i] < 0.01) 1e-9 else 1e-3)
  } else {
    check("strict FALSE vs TRUE (power)", paste(pw_tab$id[i], "strict adds < 2e-12"),
          pw_tab$power[i], pw_tab$power[i + 1], 2e-12, relative = FALSE)
  }
}
## Each row against its own qt/pt formula: k = 2 for two.sample, 1 otherwise.
pw_formula <- function(n, delta, sd, a, typ, alt, strict) {
  k <- if (typ == "two.sample") 2 else 1
  df <- (n - 1) * k; ncp <- sqrt(n / k) * delta / sd
  sides <- if (alt == "two.sided") 2 else 1
  qu <- qt(a / sides, df, lower.tail = FALSE)
  p <- pt(qu, df, ncp, lower.tail = FALSE)
  if (strict && sides == 2) p <- p + pt(-qu, df, ncp)
  p
}
for (i in seq_len(nrow(pw_tab))) {
  r <- pw_tab[i, ]
  check("power.t.test vs qt/pt", paste(r$id, "qt/pt formula"),
        pw_formula(r$n, r$delta, r$sd, r$sig_level, r$type, r$alternative, r$strict), r$power,
        if (r$solve == "n") 1e-9 else 1e-12)
}
write_tsv(pw_tab, "tails_power.tsv")

## ---------------------------------------------------------------------------
## 5. tails_tost.tsv -- exact TOST power at tiny alpha, two integrals
## ---------------------------------------------------------------------------
banner("tails_tost.tsv")
SRC_TOST <- "independent R implementation of exact TOST power (Schuirmann 1987), integrate() over the sample SD s and over the mean difference x, c = qt(alpha, df, lower.tail = FALSE), script tails_make.R"
## (a) over the sample SD s, df*s^2/sd^2 ~ chisq(df), up to s = margin/(c*k)
tost_a <- function(n1, n2, sd, delta, margin, a) {
  k <- sqrt(1 / n1 + 1 / n2); df <- n1 + n2 - 2; cc <- qt(a, df, lower.tail = FALSE)
  smax <- margin / (cc * k)
  f <- function(s) {
    (pnorm((margin - cc * s * k - delta) / (sd * k)) -
       pnorm((-margin + cc * s * k - delta) / (sd * k))) *
      exp(dchisq(df * s^2 / sd^2, df, log = TRUE)) * 2 * df * s / sd^2
  }
  br <- sort(unique(c(0, smax * c(0.5, 0.8, 0.9, 0.95, 0.99), sd * (1 + c(-5, -2, 0, 2, 5) / sqrt(2 * df)))))
  br <- c(br[br > 0 & br < smax], smax)
  piecewise(f, c(0, br), FALSE)
}
## (b) over the mean difference x ~ N(delta, (sd*k)^2): both one-sided tests
##     reject iff s <= (margin - |x|)/(c*k)
tost_b <- function(n1, n2, sd, delta, margin, a) {
  k <- sqrt(1 / n1 + 1 / n2); df <- n1 + n2 - 2; cc <- qt(a, df, lower.tail = FALSE)
  g <- function(x) dnorm(x, delta, sd * k) * pchisq(df * ((margin - abs(x)) / (cc * k * sd))^2, df)
  br <- sort(unique(c(-margin, 0, margin, delta + sd * k * c(-8, -4, -2, 0, 2, 4, 8),
                      margin - cc * k * sd * (1 + c(-8, -4, 0, 4, 8) / sqrt(2 * df)),
                      -margin + cc * k * sd * (1 + c(-8, -4, 0, 4, 8) / sqrt(2 * df)))))
  br <- br[br >= -margin & br <= margin]
  piecewise(g, br, FALSE)
}
tost_scen <- list(
  ## n1, n2, sd, delta, margin, alpha
  c(200, 200, 1, 0, 1, 1e-6), c(200, 200, 1, 0.2, 1, 1e-12), c(200, 200, 1, 0, 1, 1e-20),
  c(600, 600, 1, 0.1, 0.5, 1e-20), c(2000, 2000, 1, 0.05, 0.3, 1e-16),
  c(60, 60, 1, 0, 2, 1e-20), c(30, 60, 2, -0.5, 3, 1e-10), c(12, 12, 1, 0, 5, 1e-20),
  c(5000, 5000, 1, 0.1, 0.25, 1e-20)
)
tost_rows <- list()
for (s in tost_scen) {
  id <- sprintf("tost_%d", length(tost_rows) + 1L)
  pa <- tost_a(s[1], s[2], s[3], s[4], s[5], s[6])
  pb <- tost_b(s[1], s[2], s[3], s[4], s[5], s[6])
  cat(sprintf("%s n1=%s n2=%s sd=%s delta=%s margin=%s alpha=%s -> (a) %.17g  (b) %.17g\n",
              id, fmt(s[1]), fmt(s[2]), fmt(s[3]), fmt(s[4]), fmt(s[5]), fmt(s[6]), pa, pb))
  check("TOST (a) vs (b)", paste(id, "over s vs over x"), pa, pb, 1e-11)
  tost_rows[[length(tost_rows) + 1L]] <- data.frame(id = id, n1 = s[1], n2 = s[2], sd = s[3],
    delta = s[4], margin = s[5], alpha = s[6], power = pa, power_x = pb, source = SRC_TOST,
    stringsAsFactors = FALSE)
}
write_tsv(do.call(rbind, tost_rows), "tails_tost.tsv")

cat("\nLargest difference per cross-check:\n")
for (g in names(worst)) cat(sprintf("  %-32s %.3g\n", g, worst[[g]]))
cat(sprintf("\nAll %d cross-checks passed.\n", n_checks))
