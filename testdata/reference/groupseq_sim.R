# groupseq_sim.R -- Monte-Carlo check of two tabulated group-sequential designs,
# with R base only (stats: rnorm, set.seed). Run from this folder, after
# groupseq_make.py:
#
#     Rscript groupseq_sim.R > groupseq_sim.out
#
# Reads the boundaries, theta_s, per-look first-crossing probabilities and
# expected sample sizes from groupseq_power.tsv, simulates the standardized
# statistics from independent normal increments (S_k = Z_k sqrt(t_k) is a
# Brownian motion with drift theta at times t_k), and stops with an error if a
# simulated value is more than 4 Monte-Carlo standard errors from the table.

set.seed(20240611)
REPS <- 1e6
CHUNK <- 250000

tab <- read.delim("groupseq_power.tsv", stringsAsFactors = FALSE)
nums <- function(s) as.numeric(strsplit(s, ",", fixed = TRUE)[[1]])

simulate <- function(t, up, lo, theta, reps) {
  K <- length(t)
  d <- diff(c(0, t))
  cu <- numeric(K); cl <- numeric(K)
  nsum <- 0; nsq <- 0
  done <- 0
  while (done < reps) {
    m <- min(CHUNK, reps - done)
    s <- numeric(m)
    stopped <- rep(FALSE, m)
    tstop <- rep(1, m)
    for (k in seq_len(K)) {
      s <- s + rnorm(m, mean = theta * d[k], sd = sqrt(d[k]))
      z <- s / sqrt(t[k])
      hu <- !stopped & z >= up[k]
      hl <- !stopped & z <= lo[k]
      cu[k] <- cu[k] + sum(hu)
      cl[k] <- cl[k] + sum(hl)
      if (k < K) tstop[hu | hl] <- t[k]
      stopped <- stopped | hu | hl
    }
    nsum <- nsum + sum(tstop)
    nsq <- nsq + sum(tstop^2)
    done <- done + m
  }
  en <- nsum / reps
  list(pu = cu / reps, pl = cl / reps, en = en,
       en_se = sqrt((nsq / reps - en^2) / reps))
}

fails <- 0
worst <- 0
report <- function(what, sim, ref, se) {
  z <- (sim - ref) / se
  worst <<- max(worst, abs(z))
  ok <- abs(z) <= 4
  if (!ok) fails <<- fails + 1
  cat(sprintf("  %-32s sim %.6f  table %.6f  se %.6f  z %+.2f  %s\n",
              what, sim, ref, se, z, if (ok) "OK" else "FAIL"))
}
binse <- function(p) sqrt(p * (1 - p) / REPS)

cat(sprintf("groupseq_sim.R: %s, %d replicates per scenario, set.seed(20240611)\n",
            R.version.string, REPS))

for (id in c("pocock_2s_0.05_K5_pow0.9", "obf_2s_0.05_K4_pow0.9")) {
  row <- tab[tab$id == id, ]
  stopifnot(nrow(row) == 1)
  t <- nums(row$t); up <- nums(row$boundaries); lo <- -up
  K <- length(t)
  cat(sprintf("\n%s: K=%d two-sided alpha=%g, boundaries %s, theta_s=%.9f\n",
              id, K, row$alpha, paste(sprintf("%.6f", up), collapse = " "), row$theta_s))

  h0 <- simulate(t, up, lo, 0, REPS)
  cat("  under theta = 0:\n")
  report("type I error (either side)", sum(h0$pu + h0$pl), row$alpha, binse(row$alpha))
  report("upper side only", sum(h0$pu), row$alpha / 2, binse(row$alpha / 2))
  report("E[N]/N_max", h0$en, row$en_frac_max_h0, h0$en_se)

  h1 <- simulate(t, up, lo, row$theta_s, REPS)
  cat(sprintf("  under theta_s = %.6f:\n", row$theta_s))
  report("power (first crossing upper)", sum(h1$pu), row$power_upper, binse(row$power_upper))
  report("crossing either side", sum(h1$pu + h1$pl), row$power_either, binse(row$power_either))
  pfu <- nums(row$p_first_upper)
  for (k in seq_len(K))
    report(sprintf("first crossing upper, look %d", k), h1$pu[k], pfu[k], binse(pfu[k]))
  report("E[N]/N_max", h1$en, row$en_frac_max_h1, h1$en_se)
}

cat(sprintf("\nworst |z| = %.2f; %d of the comparisons beyond 4 standard errors\n", worst, fails))
if (fails > 0) stop("simulation disagrees with the tables")
cat("ALL WITHIN 4 SE\n")
