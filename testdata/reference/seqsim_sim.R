## seqsim_sim.R -- independent R simulations of group-sequential studies,
## for the tests of power/seqsim.go: each replicate draws every
## participant's raw data once (rnorm; runif/rexp) and applies t.test or
## survdiff to the data known at each look, stopping at the first look
## whose p-value is at most its nominal level.
##
## Run from this folder, after seqsim_canonical.py:
##
##   Rscript seqsim_sim.R > seqsim_sim.out
##
## Writes seqsim_sim.tsv: the share of replicates first crossing at each
## look. Only base R stats and the recommended package survival are used.

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(survival))
cat("R.version.string:", R.version.string, "\n")
cat("survival", as.character(packageVersion("survival")), "\n\n")

fmt <- function(x) ifelse(is.infinite(x), "Inf", sprintf("%.17g", x))
lst <- function(x) paste(fmt(x), collapse = ",")
canon <- read.delim("seqsim_canonical.tsv", stringsAsFactors = FALSE)
nominal_of <- function(id) as.numeric(strsplit(canon$nominal[canon$id == id], ",")[[1]])
poc2 <- nominal_of("pocock3_null")
poc1 <- nominal_of("pocock3_one_null")

rows <- list()
record <- function(id, model, params, nominal, first, reps, seed) {
  K <- length(nominal)
  counts <- tabulate(first[first > 0], nbins = K)
  cat(sprintf("%s: %s\n   first crossing by look %s of %d, total %.5f\n", id, params, paste(counts, collapse = " "), reps, sum(counts) / reps))
  rows[[length(rows) + 1]] <<- data.frame(id = id, model = model, params = params, nominal = lst(nominal),
    counts = paste(counts, collapse = ","), reps = reps,
    source = sprintf("set.seed(%d); %d replicates of raw data, %s at each look; script seqsim_sim.R", seed, reps,
                     if (model == "means") "t.test" else "survdiff"),
    stringsAsFactors = FALSE)
}

## Means: x ~ N(diff, sd1), y ~ N(0, sd2); t.test(x[1:N1k], y[1:N2k], mu = bound).
sim_means <- function(id, N1, N2, diff, sd1, sd2, welch, sides, dir, bound, nominal, reps, seed) {
  set.seed(seed)
  alt <- if (sides == 2) "two.sided" else if (dir > 0) "greater" else "less"
  first <- integer(reps)
  for (r in 1:reps) {
    x <- rnorm(max(N1), diff, sd1)
    y <- rnorm(max(N2), 0, sd2)
    for (k in seq_along(N1)) {
      p <- t.test(x[1:N1[k]], y[1:N2[k]], mu = bound, var.equal = !welch, alternative = alt)$p.value
      if (p <= nominal[k]) { first[r] <- k; break }
    }
  }
  record(id, "means", sprintf("N1=%s N2=%s diff=%g sd1=%g sd2=%g welch=%s sides=%d dir=%d bound=%g",
                              paste(N1, collapse = ","), paste(N2, collapse = ","), diff, sd1, sd2, welch, sides, dir, bound),
         nominal, first, reps, seed)
}

## Survival: entry U(0, A), event Exp(h) (the other arm's hazard after
## crossing over), dropout Exp(eta); an event is observed when
## t <= min(A + F - e, c), at calendar time e + t. Look k at the D_k-th
## observed event's calendar time (the end when fewer occur: the final
## analysis, at the last look's level). Data at tau: e < tau, time
## min(t, c, tau - e), event when observed by tau.
sim_surv <- function(id, n1, n2, h1, h2, cross1, cross2, A, F, eta, D, sides, dir, margin, nominal, reps, seed) {
  set.seed(seed)
  end <- A + F
  g <- rep(1:2, c(n1, n2))
  K <- length(D)
  first <- integer(reps)
  for (r in 1:reps) {
    crossed <- runif(n1 + n2) < ifelse(g == 1, cross1, cross2)
    h <- ifelse(xor(g == 1, crossed), h1, h2)
    e <- if (A > 0) runif(n1 + n2, 0, A) else rep(0, n1 + n2)
    cc <- if (eta > 0) rexp(n1 + n2, eta) else rep(Inf, n1 + n2)
    tt <- rexp(n1 + n2, h)
    elig <- tt <= pmin(end - e, cc)
    ce <- ifelse(elig, e + tt, Inf)
    sorted <- sort(ce[elig])
    k <- 1
    while (k <= K) {
      if (D[k] <= length(sorted)) { tau <- sorted[D[k]]; final <- FALSE } else { tau <- end; final <- TRUE; k <- K }
      inc <- e < tau | ce <= tau
      ev <- elig & (ce <= tau | final)
      time <- ifelse(ev, tt, pmin(tt, cc, tau - e))
      s <- survdiff(Surv(time[inc], ev[inc]) ~ g[inc])
      U <- s$obs[1] - s$exp[1]; V <- s$var[1, 1]
      p <- if (margin > 0) {
        Z <- (U - V * log(margin)) / sqrt(V)
        if (margin > 1) pnorm(Z) else pnorm(-Z)
      } else if (sides == 2) {
        pchisq(U^2 / V, 1, lower.tail = FALSE)
      } else pnorm(-dir * U / sqrt(V))
      if (p <= nominal[k]) { first[r] <- k; break }
      if (final) break
      k <- k + 1
    }
  }
  record(id, "survival", sprintf("n1=%d n2=%d h1=%g h2=%g cross1=%g cross2=%g A=%g F=%g eta=%g D=%s sides=%d dir=%d margin=%g",
                                 n1, n2, h1, h2, cross1, cross2, A, F, eta, paste(D, collapse = ","), sides, dir, margin),
         nominal, first, reps, seed)
}

t0 <- proc.time()
sim_means("means_welch", c(20, 40, 60), c(20, 40, 60), 0.5, 1, 1.5, TRUE, 2, 0, 0, poc2, 20000, 301)
sim_means("means_ni", c(15, 30, 45), c(20, 40, 60), 0, 1, 1, FALSE, 1, 1, -0.5, poc1, 20000, 302)
sim_means("means_unequal", c(10, 25, 50), c(10, 25, 50), 0.8, 1, 2, FALSE, 2, 0, 0, c(0.001, 0.01, 0.04), 20000, 303)
sim_surv("surv_two", 150, 150, 0.1, 0.16, 0, 0, 2, 3, 0.05, c(60, 120, 180), 2, 0, 0, poc2, 10000, 311)
sim_surv("surv_margin", 200, 200, 0.2, 0.2, 0, 0, 1, 2, 0, c(80, 160, 240), 1, 0, 1.3, poc1, 10000, 312)
sim_surv("surv_one_cross", 120, 180, 0.15, 0.25, 0.1, 0.05, 1.5, 1, 0, c(40, 80, 400), 1, -1, 0, c(0.005, 0.01, 0.02), 10000, 313)
cat(sprintf("\nelapsed %.0f s\n", (proc.time() - t0)[["elapsed"]]))

out <- do.call(rbind, rows)
write.table(out, "seqsim_sim.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote seqsim_sim.tsv, %d rows\n", nrow(out)))
