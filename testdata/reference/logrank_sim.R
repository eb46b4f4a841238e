## logrank_sim.R -- Monte-Carlo reference for the log-rank simulation model
## of power/logrank.go (NewSurvivalModel).
##
## Run from this folder:   Rscript logrank_sim.R > logrank_sim.out
## (takes a few minutes)
##
## Writes logrank_sim.tsv: for each scenario the share of simulated trials in
## which survival::survdiff's log-rank test rejects, with its Monte-Carlo
## standard error. The data are drawn with base R (runif, rexp) under a
## fixed seed, independently of the Go code, in the same design:
##
##   entry ~ U(0, A); event ~ Exp(h_group); dropout ~ Exp(eta) (none if 0);
##   observed time = min(event, dropout, A + F - entry);
##   status = 1 when the event comes first.
##
## Test: z = (O1 - E1)/sqrt(V) from survdiff ($obs[1], $exp[1], $var[1,1]);
## two-sided rejects when $chisq > qchisq(1 - alpha, 1); one-sided rejects
## when z < -qnorm(1 - alpha) (dir -1) or z > qnorm(1 - alpha) (dir +1).
## The Go tests compare their own simulation with these shares within the
## combined Monte-Carlo error of both.

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(survival))
cat("R.version.string:", R.version.string, "\n")
cat("survival version:", as.character(packageVersion("survival")), "\n\n")
fmt <- function(x) sprintf("%.15g", x)

sim_one <- function(n1, n2, h1, h2, A, F, eta) {
  n <- n1 + n2
  g <- c(rep(1L, n1), rep(2L, n2))
  entry <- if (A > 0) runif(n, 0, A) else rep(0, n)
  ev <- rexp(n, ifelse(g == 1L, h1, h2))
  cens <- A + F - entry
  if (eta > 0) cens <- pmin(cens, rexp(n, eta))
  time <- pmin(ev, cens)
  status <- as.integer(ev <= cens)
  s <- survdiff(Surv(time, status) ~ g)
  c(chisq = s$chisq, z = (s$obs[1] - s$exp[1]) / sqrt(s$var[1, 1]))
}

scen <- list(
  list(id = "logrank_sim_equal", n1 = 346, n2 = 346, h1 = 0.75 * log(2) / 3, h2 = log(2) / 3,
       A = 2, F = 3, eta = 0, alpha = 0.05, seed = 101, reps = 20000),
  list(id = "logrank_sim_unequal", n1 = 200, n2 = 400, h1 = 0.7 * 0.25, h2 = 0.25,
       A = 1, F = 2, eta = -log(1 - 0.05), alpha = 0.025, seed = 102, reps = 20000),
  list(id = "logrank_sim_null", n1 = 150, n2 = 300, h1 = 0.2, h2 = 0.2,
       A = 0, F = 3, eta = 0, alpha = 0.025, seed = 103, reps = 100000)
)

rows <- list()
for (s in scen) {
  set.seed(s$seed)
  t0 <- proc.time()[["elapsed"]]
  res <- vapply(seq_len(s$reps), function(i) sim_one(s$n1, s$n2, s$h1, s$h2, s$A, s$F, s$eta),
                c(chisq = 0, z = 0))
  crit2 <- qchisq(1 - s$alpha, 1); crit1 <- qnorm(1 - s$alpha)
  rej <- list(
    list(sides = 2, dir = 0, k = sum(res["chisq", ] > crit2)),
    list(sides = 1, dir = -1, k = sum(res["z", ] < -crit1)),
    list(sides = 1, dir = 1, k = sum(res["z", ] > crit1)))
  cat(sprintf("%s: %d replicates in %.0f s\n", s$id, s$reps, proc.time()[["elapsed"]] - t0))
  src <- sprintf(paste0("set.seed(%d); %d replicates of sim_one(n1=%d, n2=%d, h1=%s, h2=%s, A=%s, F=%s, eta=%s) ",
                        "(runif/rexp data, survdiff(Surv(time, status) ~ g)), script logrank_sim.R"),
                 s$seed, s$reps, s$n1, s$n2, fmt(s$h1), fmt(s$h2), fmt(s$A), fmt(s$F), fmt(s$eta))
  for (r in rej) {
    p <- r$k / s$reps
    cat(sprintf("  alpha %g sides %d dir %+d: %d rejections, share %.5f (SE %.5f)\n",
                s$alpha, r$sides, r$dir, r$k, p, sqrt(p * (1 - p) / s$reps)))
    rows[[length(rows) + 1]] <- data.frame(
      id = sprintf("%s_s%d_d%+d", s$id, r$sides, r$dir),
      n1 = s$n1, n2 = s$n2, h1 = fmt(s$h1), h2 = fmt(s$h2), accrual = fmt(s$A),
      followup = fmt(s$F), dropout = fmt(s$eta), alpha = fmt(s$alpha),
      sides = r$sides, dir = r$dir, reps = s$reps, rejections = r$k,
      share = fmt(p), se = fmt(sqrt(p * (1 - p) / s$reps)), source = src,
      stringsAsFactors = FALSE)
  }
}
tab <- do.call(rbind, rows)
write.table(tab, "logrank_sim.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote logrank_sim.tsv (%d rows)\n", nrow(tab)))
