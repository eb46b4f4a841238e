## survmargin_sim.R -- Monte-Carlo reference for the survival simulation
## with crossing-over and hazard-ratio margins (power/logrank.go,
## NewSurvivalSim).
##
## Run from this folder:   Rscript survmargin_sim.R > survmargin_sim.out
## (takes several minutes)
##
## Writes survmargin_sim.tsv: for each scenario and test, the share of
## simulated trials that reject, with its Monte-Carlo standard error. The
## data are drawn with base R (runif, rexp) under a fixed seed,
## independently of the Go code, and analysed with survival::survdiff:
##
##   crossed ~ runif(n) < c_group          (drawn for every participant)
##   hazard  = h1 for group 1 not crossed and group 2 crossed, else h2
##   entry ~ U(0, A); event ~ Exp(hazard); dropout ~ Exp(eta) (none if 0);
##   observed time = min(event, dropout, A + F - entry);
##   status = 1 when the event comes first; analysed by randomised group.
##
## From survdiff(Surv(time, status) ~ g): U = $obs[1] - $exp[1],
## V = $var[1, 1], z = qnorm(1 - alpha).
##   margin M > 1:  reject when (U - V*log(M))/sqrt(V) < -z
##   margin M < 1:  reject when (U - V*log(M))/sqrt(V) >  z
##   equivalence:   reject when (U + V*log(M))/sqrt(V) > z and (U - V*log(M))/sqrt(V) < -z
##   superiority, one-sided dir -1: reject when U/sqrt(V) < -z
## The Go tests compare their own simulation with these shares within the
## combined Monte-Carlo error of both.

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(survival))
cat("R.version.string:", R.version.string, "\n")
cat("survival version:", as.character(packageVersion("survival")), "\n\n")
fmt <- function(x) sprintf("%.15g", x)

sim_one <- function(n1, n2, h1, h2, c1, c2, A, F, eta) {
  n <- n1 + n2
  g <- c(rep(1L, n1), rep(2L, n2))
  crossed <- runif(n) < ifelse(g == 1L, c1, c2)
  haz <- ifelse((g == 1L) != crossed, h1, h2)
  entry <- if (A > 0) runif(n, 0, A) else rep(0, n)
  ev <- rexp(n, haz)
  cens <- A + F - entry
  if (eta > 0) cens <- pmin(cens, rexp(n, eta))
  time <- pmin(ev, cens)
  status <- as.integer(ev <= cens)
  s <- survdiff(Surv(time, status) ~ g)
  c(u = s$obs[1] - s$exp[1], v = s$var[1, 1])
}

## test: "margin" (one-sided against M), "equivalence" (interval (1/M, M)),
## "superiority" (one-sided, dir -1).
reject <- function(test, u, v, M, alpha) {
  z <- qnorm(1 - alpha)
  ok <- v > 0
  r <- switch(test,
    margin = if (M > 1) (u - v * log(M)) / sqrt(v) < -z else (u - v * log(M)) / sqrt(v) > z,
    equivalence = (u + v * log(M)) / sqrt(v) > z & (u - v * log(M)) / sqrt(v) < -z,
    superiority = u / sqrt(v) < -z)
  ok & r
}

scen <- list(
  list(id = "size_equal", n1 = 150, n2 = 150, h1 = 0.65, h2 = 0.5, c1 = 0, c2 = 0,
       A = 1, F = 2, eta = 0, alpha = 0.025, M = 1.3,
       tests = c("margin"), seed = 201, reps = 100000),
  list(id = "size_unequal", n1 = 200, n2 = 100, h1 = 1, h2 = 0.5, c1 = 0, c2 = 0,
       A = 1, F = 2, eta = 0, alpha = 0.025, M = 2,
       tests = c("margin"), seed = 202, reps = 50000),
  list(id = "ni_cross", n1 = 200, n2 = 200, h1 = 0.4, h2 = 0.5, c1 = 0.15, c2 = 0.1,
       A = 1, F = 2, eta = 0.1, alpha = 0.025, M = 1.2,
       tests = c("margin", "superiority"), seed = 203, reps = 50000),
  list(id = "eq_cross", n1 = 200, n2 = 200, h1 = 0.45, h2 = 0.5, c1 = 0.2, c2 = 0.1,
       A = 1, F = 2, eta = 0, alpha = 0.05, M = 1.5,
       tests = c("equivalence"), seed = 204, reps = 50000),
  list(id = "ni_low_margin", n1 = 150, n2 = 250, h1 = 0.55, h2 = 0.5, c1 = 0, c2 = 0.2,
       A = 0, F = 2, eta = 0.05, alpha = 0.025, M = 0.8,
       tests = c("margin"), seed = 205, reps = 50000)
)

rows <- list()
for (s in scen) {
  set.seed(s$seed)
  t0 <- proc.time()[["elapsed"]]
  res <- vapply(seq_len(s$reps), function(i)
    sim_one(s$n1, s$n2, s$h1, s$h2, s$c1, s$c2, s$A, s$F, s$eta), c(u = 0, v = 0))
  cat(sprintf("%s: %d replicates in %.0f s, mean V %.2f\n", s$id, s$reps,
              proc.time()[["elapsed"]] - t0, mean(res["v", ])))
  src <- sprintf(paste0("set.seed(%d); %d replicates of sim_one(n1=%d, n2=%d, h1=%s, h2=%s, c1=%s, c2=%s, ",
                        "A=%s, F=%s, eta=%s) (runif/rexp data, survdiff(Surv(time, status) ~ g)), ",
                        "script survmargin_sim.R"),
                 s$seed, s$reps, s$n1, s$n2, fmt(s$h1), fmt(s$h2), fmt(s$c1), fmt(s$c2),
                 fmt(s$A), fmt(s$F), fmt(s$eta))
  for (test in s$tests) {
    k <- sum(reject(test, res["u", ], res["v", ], s$M, s$alpha))
    p <- k / s$reps
    se <- sqrt(p * (1 - p) / s$reps)
    cat(sprintf("  %-24s alpha %g: %d rejections, share %.5f (SE %.5f)\n",
                if (test == "superiority") "superiority dir -1" else sprintf("%s M %g", test, s$M),
                s$alpha, k, p, se))
    rows[[length(rows) + 1]] <- data.frame(
      id = sprintf("%s_%s", s$id, test), test = test,
      n1 = s$n1, n2 = s$n2, h1 = fmt(s$h1), h2 = fmt(s$h2), cross1 = fmt(s$c1), cross2 = fmt(s$c2),
      accrual = fmt(s$A), followup = fmt(s$F), dropout = fmt(s$eta), alpha = fmt(s$alpha),
      margin = if (test == "superiority") "0" else fmt(s$M),
      reps = s$reps, rejections = k, share = fmt(p), se = fmt(se),
      source = paste0(src, "; test ", test, if (test == "superiority") " dir -1" else sprintf(" M=%s", fmt(s$M))),
      stringsAsFactors = FALSE)
  }
}
tab <- do.call(rbind, rows)
write.table(tab, "survmargin_sim.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote survmargin_sim.tsv (%d rows)\n", nrow(tab)))
