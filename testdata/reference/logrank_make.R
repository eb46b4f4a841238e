## logrank_make.R -- reference values for power/logrank.go
##
## Run from this folder:   Rscript logrank_make.R > logrank_make.out
##
## Writes logrank_data.tsv (invented datasets, long format) and logrank_chisq.tsv
## (one row per dataset: survival::survdiff's chi-square, observed and
## expected events of group 1, and the variance of O1 - E1).
##
## Only base R and `survival` are used. The datasets are invented with
## set.seed and base R random numbers; nothing was taken from any course,
## book or program. Each survdiff result is re-checked against an
## independent hand-written log-rank below (hypergeometric variance with the
## ties factor (n - d)/(n - 1)); the script stops if they disagree.

options(digits = 15, width = 140, warn = 1)
suppressPackageStartupMessages(library(survival))

cat("R.version.string:", R.version.string, "\n")
cat("survival version:", as.character(packageVersion("survival")), "\n\n")

fmt <- function(x) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA", sprintf("%.15g", x))
}

n_checks <- 0
check <- function(what, got, want, tol) {
  err <- abs(got - want) / max(1, abs(want))
  if (!(err <= tol)) stop(sprintf("CHECK FAILED %s: %.17g vs %.17g", what, got, want))
  n_checks <<- n_checks + 1
  cat(sprintf("CHECK %s OK (rel err %.3g)\n", what, err))
}

## Independent hand implementation of the two-group log-rank statistic.
hand_logrank <- function(time, status, group) {
  ut <- sort(unique(time[status == 1]))
  O1 <- E1 <- V <- 0
  for (t in ut) {
    atrisk <- time >= t
    n <- sum(atrisk); n1 <- sum(atrisk & group == 1)
    d <- sum(time == t & status == 1); d1 <- sum(time == t & status == 1 & group == 1)
    O1 <- O1 + d1; E1 <- E1 + d * n1 / n
    if (n > 1) V <- V + d * (n1 / n) * (1 - n1 / n) * (n - d) / (n - 1)
  }
  c(O1 = O1, E1 = E1, V = V, chisq = if (V > 0) (O1 - E1)^2 / V else 0)
}

## Exponential times with exponential censoring, both rounded to `digits`
## decimals (rounding makes ties); group 1 has hazard h1, group 2 h2.
make_exp <- function(n1, n2, h1, h2, hc, digits) {
  ev <- c(rexp(n1, h1), rexp(n2, h2))
  ce <- c(rexp(n1 + n2, hc))
  time <- round(pmin(ev, ce), digits)
  status <- as.integer(ev <= ce)
  time[time == 0] <- 10^-digits   # keep times positive after rounding
  data.frame(time = time, status = status, group = c(rep(1L, n1), rep(2L, n2)))
}

sets <- list()

## tiny: the example in power/logrank_example_test.go (typed by hand).
sets$tiny <- data.frame(
  time   = c(3, 5, 5, 8, 10, 12,   1, 2, 4, 5, 6, 9),
  status = c(1, 1, 0, 1, 0, 0,     1, 1, 1, 1, 0, 1),
  group  = c(rep(1L, 6), rep(2L, 6)))
cat("dataset tiny typed by hand\n")

set.seed(20240611)
## ties: integer times, moderate censoring, equal groups.
sets$ties <- make_exp(40, 40, 0.10, 0.15, 0.05, 0)
## heavy: about 80% censored, 1-decimal times.
sets$heavy <- make_exp(60, 50, 0.02, 0.04, 0.15, 1)
## unequal: 12 versus 90, integer times.
sets$unequal <- make_exp(12, 90, 0.2, 0.1, 0.05, 0)
## coarse: times on a 1..6 grid, massive ties across groups.
sets$coarse <- make_exp(35, 45, 0.3, 0.45, 0.1, 0)
sets$coarse$time <- pmin(sets$coarse$time, 6)
## large: 500 versus 400, 2-decimal times, strong effect.
sets$large <- make_exp(500, 400, 0.5, 0.8, 0.3, 2)
## continuous: no rounding beyond 15 significant digits, no ties.
sets$continuous <- make_exp(25, 30, 1.0, 1.6, 0.5, 12)
## tailgroup: the last times are all in group 2, and events and
## censorings share times.
sets$tailgroup <- data.frame(
  time   = c(1, 2, 2, 2, 3, 4, 4,    2, 2, 3, 5, 6, 7, 7, 8),
  status = c(1, 1, 0, 1, 1, 0, 1,    1, 0, 1, 1, 0, 1, 1, 0),
  group  = c(rep(1L, 7), rep(2L, 8)))
cat("dataset tailgroup typed by hand\n")

long <- do.call(rbind, lapply(names(sets), function(nm)
  data.frame(dataset = nm, sets[[nm]], stringsAsFactors = FALSE)))
out <- data.frame(dataset = long$dataset, time = fmt(long$time),
                  status = long$status, group = long$group)
write.table(out, "logrank_data.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote logrank_data.tsv (%d rows)\n\n", nrow(out)))

## Read the file back so the reference values belong to the written numbers.
back <- read.delim("logrank_data.tsv", stringsAsFactors = FALSE)
rows <- list()
for (nm in names(sets)) {
  call <- sprintf("survdiff(Surv(time, status) ~ group, data = subset(read.delim(\"logrank_data.tsv\"), dataset == \"%s\"))", nm)
  d <- subset(back, dataset == nm)
  sdf <- eval(parse(text = call))
  cat("==== dataset", nm, "\n"); print(sdf)
  h <- hand_logrank(d$time, d$status, d$group)
  check(paste(nm, "chisq: survdiff vs hand"), sdf$chisq, h[["chisq"]], 1e-12)
  check(paste(nm, "E1: survdiff vs hand"), sdf$exp[1], h[["E1"]], 1e-12)
  check(paste(nm, "O1: survdiff vs hand"), sdf$obs[1], h[["O1"]], 0)
  check(paste(nm, "var: survdiff vs hand"), sdf$var[1, 1], h[["V"]], 1e-12)
  ties <- sum(duplicated(d$time))
  cat(sprintf("n1 %d n2 %d events %d censored %.1f%% tied times %d\n\n",
              sum(d$group == 1), sum(d$group == 2), sum(d$status),
              100 * mean(d$status == 0), ties))
  rows[[nm]] <- data.frame(
    id = paste0("logrank_", nm), dataset = nm,
    n1 = sum(d$group == 1), n2 = sum(d$group == 2), events = sum(d$status),
    chisq = fmt(sdf$chisq), obs1 = fmt(sdf$obs[1]), exp1 = fmt(sdf$exp[1]),
    var = fmt(sdf$var[1, 1]),
    p_value = fmt(pchisq(sdf$chisq, df = 1, lower.tail = FALSE)),
    source = paste0(call, " ($chisq, $obs[1], $exp[1], $var[1,1]; p_value = pchisq(chisq, 1, lower.tail=FALSE))"),
    stringsAsFactors = FALSE)
}
tab <- do.call(rbind, rows)
write.table(tab, "logrank_chisq.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote logrank_chisq.tsv (%d rows)\n", nrow(tab)))
cat(sprintf("%d checks passed\n", n_checks))
