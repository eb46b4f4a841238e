## survmargin_make.R -- reference values for non-inferiority and equivalence
## on the hazard-ratio scale (power/survivalmargin.go).
##
## Run from this folder:   Rscript survmargin_make.R > survmargin_make.out
##
## Writes survmargin_events.tsv (events for a target power) and
## survmargin_power.tsv (power for a number of events).
##
## Only base R `stats` (qnorm, pnorm, uniroot) is used. Every value is an
## independent implementation written from the formulas as stated in
## survmargin_README.md; no sample-size program or package was consulted.
## The scenarios are invented numbers. The script stops if a cross-check
## fails.
##
## Notation: HR = hazard of group 1 over group 2, r = n2/n1,
## k = pi1*pi2 = r/(1+r)^2, za = qnorm(alpha, lower.tail = FALSE) (one-sided),
## zb = qnorm(power).
##
## Non-inferiority (Schoenfeld 1983, Biometrics 39:499-503, eq. 1, with the
##   null log hazard ratio at log(M)): s = +1 when M > 1, -1 when M < 1;
##   e = s*(log(M) - log(hr));
##   events = (za + zb)^2 / (k * e^2)          (NA unless e > 1e-12 and za + zb > 0)
##   power  = pnorm(sqrt(d*k)*e - za)
## Equivalence, interval (1/M, M), two one-sided tests each at alpha
##   (Schuirmann 1987, J Pharmacokinet Biopharm 15:657-680):
##   power  = max(0, pnorm(sqrt(d*k)*(log(M) - log(hr)) - za)
##                 + pnorm(sqrt(d*k)*(log(M) + log(hr)) - za) - 1)
##   events = uniroot of power(d) = target on log(d)  (NA unless
##            |log(hr)| < log(M) - 1e-12 and target > max(0, 2*alpha - 1))
##   at hr = 1: events = (za + qnorm((1 + power)/2))^2 / (k * log(M)^2), used
##   as a cross-check of the root.

options(digits = 15, width = 140, warn = 1)
cat("R.version.string:", R.version.string, "\n\n")

## Numbers are written with the fewest of 15, 16 or 17 significant digits
## that read back as the same double.
fmt1 <- function(x) {
  if (is.na(x)) return("NA")
  for (p in 15:17) {
    s <- sprintf(paste0("%.", p, "g"), x)
    if (as.numeric(s) == x) return(s)
  }
  s
}
fmt <- function(x) if (is.character(x)) x else vapply(x, fmt1, "")
write_tsv <- function(df, file) {
  out <- as.data.frame(lapply(df, function(col) {
    if (is.numeric(col)) vapply(col, fmt, "") else as.character(col)
  }), stringsAsFactors = FALSE)
  names(out) <- names(df)
  write.table(out, file, sep = "\t", quote = FALSE, row.names = FALSE, na = "NA")
  cat(sprintf("wrote %s (%d rows)\n", file, nrow(out)))
}
n_checks <- 0L
check <- function(label, mine, other, tol) {
  err <- abs(mine - other) / max(abs(other), 1e-300)
  cat(sprintf("CHECK %-58s mine=%.15g other=%.15g relerr=%.3g %s\n", label, mine, other,
              err, if (err <= tol) "OK" else "FAIL"))
  if (!is.finite(err) || err > tol) stop("cross-check failed: ", label)
  n_checks <<- n_checks + 1L
}

slack <- 1e-12
kk <- function(r) r / (1 + r)^2
za_of <- function(alpha) qnorm(alpha, lower.tail = FALSE)

ni_events <- function(hr, M, r, alpha, power) {
  s <- if (M > 1) 1 else -1
  e <- s * (log(M) - log(hr))
  za <- za_of(alpha); zb <- qnorm(power)
  if (!(e > slack) || za + zb <= 0) return(NA_real_)
  (za + zb)^2 / (kk(r) * e^2)
}
ni_power <- function(hr, M, r, alpha, d) {
  s <- if (M > 1) 1 else -1
  pnorm(sqrt(d * kk(r)) * s * (log(M) - log(hr)) - za_of(alpha))
}
eq_power <- function(hr, M, r, alpha, d) {
  u <- sqrt(d * kk(r)); za <- za_of(alpha)
  max(0, pnorm(u * (log(M) - log(hr)) - za) + pnorm(u * (log(M) + log(hr)) - za) - 1)
}
eq_events <- function(hr, M, r, alpha, power) {
  if (!(abs(log(hr)) < log(M) - slack)) return(NA_real_)
  if (!(power > max(0, 2 * alpha - 1))) return(NA_real_)
  ## The power is at least 2*pnorm(sqrt(d*k)*delta - za) - 1 with
  ## delta = log(M) - |log(hr)|, which bounds the root from above.
  delta <- log(M) - abs(log(hr))
  up <- (za_of(alpha) + qnorm((1 + power) / 2))^2 / (kk(r) * delta^2)
  f <- function(ld) eq_power(hr, M, r, alpha, exp(ld)) - power
  ur <- uniroot(f, c(log(up) - 30, log(up) + 1), tol = 1e-14, maxiter = 1000)
  exp(ur$root)
}

## ---------------------------------------------------------------------------
## Events for a target power
## ---------------------------------------------------------------------------
ev <- data.frame(
  id = character(), test = character(), hr = numeric(), margin = numeric(),
  ratio = numeric(), alpha = numeric(), power = numeric(), events = numeric(),
  note = character(), stringsAsFactors = FALSE)
add_ev <- function(id, test, hr, M, r, alpha, power, note = "") {
  d <- if (test == "ni") ni_events(hr, M, r, alpha, power) else eq_events(hr, M, r, alpha, power)
  if (is.na(d) && note == "") stop("unexpected NA: ", id)
  if (!is.na(d) && note != "") stop("expected NA: ", id)
  ev[nrow(ev) + 1, ] <<- list(id, test, hr, M, r, alpha, power, d, if (is.na(d)) note else "")
}

## Non-inferiority, M > 1 (lower hazard is better).
add_ev("ni_01", "ni", 1,    1.3,  1,   0.025, 0.8)
add_ev("ni_02", "ni", 1,    1.25, 2,   0.025, 0.9)
add_ev("ni_03", "ni", 0.9,  1.2,  0.5, 0.05,  0.8)
add_ev("ni_04", "ni", 1.15, 1.4,  1.5, 0.05,  0.95)
add_ev("ni_05", "ni", 0.95, 1.1,  1,   0.001, 0.99)
add_ev("ni_06", "ni", 1,    2,    1,   0.1,   0.5)
## Non-inferiority, M < 1 (higher hazard is better).
add_ev("ni_07", "ni", 1,    0.8,  1,   0.025, 0.85)
add_ev("ni_08", "ni", 1.1,  0.75, 3,   0.01,  0.9)
add_ev("ni_09", "ni", 0.9,  0.7,  0.8, 0.05,  0.8)
## Unreachable: at, beyond, or on the wrong side of the margin; rounding
## noise at the margin; target power at or below alpha.
add_ev("ni_10", "ni", 1.3,  1.3,  1,   0.025, 0.8, "unreachable: hr at the margin")
add_ev("ni_11", "ni", 1.4,  1.3,  1,   0.025, 0.8, "unreachable: hr beyond the margin (M > 1)")
add_ev("ni_12", "ni", 0.7,  0.9,  1,   0.025, 0.8, "unreachable: hr beyond the margin (M < 1)")
add_ev("ni_13", "ni", 1.3 * (1 + 2e-16), 1.3, 1, 0.025, 0.8,
       "unreachable: hr one double above the margin, within 1e-12 on the log scale")
if (!(ev$hr[ev$id == "ni_13"] > 1.3)) stop("ni_13: hr is not above the margin")
add_ev("ni_14", "ni", 1,    1.3,  1,   0.2,   0.15, "unreachable: power below alpha")
add_ev("ni_15", "ni", 0.8,  0.8,  2,   0.05,  0.9, "unreachable: hr at the margin (M < 1)")
add_ev("ni_16", "ni", 1.29, 1.3,  1,   0.025, 0.8)   # close to the margin: reachable

## Equivalence, interval (1/M, M).
add_ev("eq_01", "eq", 1,    1.25, 1,   0.05,  0.8)
add_ev("eq_02", "eq", 1,    1.3,  2,   0.025, 0.9)
add_ev("eq_03", "eq", 1.05, 1.25, 1,   0.05,  0.8)
add_ev("eq_04", "eq", 0.9,  1.3,  0.5, 0.025, 0.85)
add_ev("eq_05", "eq", 1.2,  1.25, 1,   0.05,  0.8)
add_ev("eq_06", "eq", 0.85, 1.5,  3,   0.1,   0.7)
add_ev("eq_07", "eq", 1,    1.5,  1,   0.05,  0.05)
add_ev("eq_08", "eq", 1.1,  1.4,  1,   0.6,   0.5)
add_ev("eq_09", "eq", 0.98, 1.15, 1.2, 0.01,  0.95)
add_ev("eq_10", "eq", 1.25, 1.25, 1,   0.05,  0.8, "unreachable: hr at the upper margin")
add_ev("eq_11", "eq", 0.8,  1.25, 1,   0.05,  0.8, "unreachable: hr at the lower margin 1/M")
add_ev("eq_12", "eq", 1.5,  1.25, 1,   0.05,  0.8, "unreachable: hr outside the interval")
add_ev("eq_13", "eq", 1,    1.25, 1,   0.6,   0.1,
       "unreachable: target at or below the power 2*alpha - 1 at zero events")

ev$source <- ifelse(
  ev$test == "ni",
  "independent R implementation of Schoenfeld 1983 eq. 1 with null log HR log(M): (qnorm(alpha, lower.tail=FALSE) + qnorm(power))^2 / (r/(1+r)^2 * (log(hr) - log(M))^2), script survmargin_make.R",
  "independent R implementation of two one-sided tests (Schuirmann 1987) on Schoenfeld 1983 eq. 1: uniroot on log(d) of pnorm(sqrt(d*k)*(log(M)-log(hr))-za) + pnorm(sqrt(d*k)*(log(M)+log(hr))-za) - 1 = power, script survmargin_make.R")

cat("Events\n")
print(ev[, c("id", "test", "hr", "margin", "ratio", "alpha", "power", "events", "note")], row.names = FALSE)
cat("\n")

## Cross-checks: the power at the events is the target; at hr = 1 the
## equivalence root equals the closed form.
for (i in seq_len(nrow(ev))) {
  x <- ev[i, ]
  if (is.na(x$events)) next
  p <- if (x$test == "ni") ni_power(x$hr, x$margin, x$ratio, x$alpha, x$events)
       else eq_power(x$hr, x$margin, x$ratio, x$alpha, x$events)
  check(sprintf("%s power at events", x$id), p, x$power, 1e-12)
  if (x$test == "eq" && x$hr == 1) {
    cf <- (za_of(x$alpha) + qnorm((1 + x$power) / 2))^2 / (kk(x$ratio) * log(x$margin)^2)
    check(sprintf("%s root vs closed form at hr = 1", x$id), x$events, cf, 1e-12)
  }
}
## Swapping the groups (hr -> 1/hr, M -> 1/M, r -> 1/r) gives the same events.
for (i in seq_len(nrow(ev))) {
  x <- ev[i, ]
  if (is.na(x$events) || x$test != "ni") next
  check(sprintf("%s swapped groups", x$id),
        ni_events(1 / x$hr, 1 / x$margin, 1 / x$ratio, x$alpha, x$power), x$events, 1e-12)
}
write_tsv(ev, "survmargin_events.tsv")

## ---------------------------------------------------------------------------
## Power for a number of events
## ---------------------------------------------------------------------------
pw <- data.frame(
  id = character(), test = character(), hr = numeric(), margin = numeric(),
  ratio = numeric(), alpha = numeric(), events = numeric(), power = numeric(),
  stringsAsFactors = FALSE)
add_pw <- function(id, test, hr, M, r, alpha, d) {
  p <- if (test == "ni") ni_power(hr, M, r, alpha, d) else eq_power(hr, M, r, alpha, d)
  pw[nrow(pw) + 1, ] <<- list(id, test, hr, M, r, alpha, d, p)
}
add_pw("nip_01", "ni", 1,    1.3,  1,   0.025, 400)
add_pw("nip_02", "ni", 0.9,  1.2,  0.5, 0.05,  250)
add_pw("nip_03", "ni", 1.1,  0.75, 3,   0.01,  600)
add_pw("nip_04", "ni", 1,    0.8,  1,   0.025, 150)
add_pw("nip_05", "ni", 1.3,  1.3,  1,   0.025, 500)   # at the margin: alpha
add_pw("nip_06", "ni", 1.5,  1.3,  2,   0.05,  300)   # beyond: below alpha
add_pw("nip_07", "ni", 0.6,  0.8,  1,   0.025, 300)   # beyond (M < 1): below alpha
add_pw("nip_08", "ni", 1,    1.3,  1,   0.025, 0)     # no events: alpha
add_pw("nip_09", "ni", 0.7,  1.1,  1,   0.001, 2000)  # near 1
add_pw("eqp_01", "eq", 1,    1.25, 1,   0.05,  700)
add_pw("eqp_02", "eq", 1.1,  1.3,  2,   0.025, 900)
add_pw("eqp_03", "eq", 0.9,  1.25, 0.5, 0.05,  300)   # low power
add_pw("eqp_04", "eq", 1,    1.25, 1,   0.05,  20)    # max(0, .) at 0
add_pw("eqp_05", "eq", 1.4,  1.25, 1,   0.05,  800)   # outside: below alpha
add_pw("eqp_06", "eq", 1.25, 1.25, 1,   0.05,  5000)  # at the margin: about alpha
add_pw("eqp_07", "eq", 1,    1.5,  1,   0.05,  3000)  # near 1
add_pw("eqp_08", "eq", 1,    1.25, 1,   0.05,  0)     # no events: 0
add_pw("eqp_09", "eq", 0.95, 1.2,  1.5, 0.6,   50)    # alpha > 1/2: 2*alpha - 1 at d = 0
pw$source <- ifelse(
  pw$test == "ni",
  "independent R implementation of Schoenfeld 1983 eq. 1 with null log HR log(M): pnorm(sqrt(d*r/(1+r)^2)*s*(log(M)-log(hr)) - qnorm(alpha, lower.tail=FALSE)), s = sign(log(M)), script survmargin_make.R",
  "independent R implementation of two one-sided tests (Schuirmann 1987) on Schoenfeld 1983 eq. 1: max(0, pnorm(sqrt(d*k)*(log(M)-log(hr))-za) + pnorm(sqrt(d*k)*(log(M)+log(hr))-za) - 1), script survmargin_make.R")
cat("\nPower\n")
print(pw[, c("id", "test", "hr", "margin", "ratio", "alpha", "events", "power")], row.names = FALSE)
cat("\n")
## At the margin and with no events the non-inferiority power is alpha.
check("nip_05 power at the margin is alpha", pw$power[pw$id == "nip_05"], 0.025, 1e-12)
check("nip_08 power with no events is alpha", pw$power[pw$id == "nip_08"], 0.025, 1e-12)
write_tsv(pw, "survmargin_power.tsv")

cat(sprintf("\n%d cross-checks passed\n", n_checks))
