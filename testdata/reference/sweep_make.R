## sweep_make.R -- reference values for `enough sweep` (issue 11): every point
## of a few invented grids of assumptions, solved outside the project.
##
## Run from this folder:   Rscript sweep_make.R > sweep_make.out
##
## Writes sweep_prop.tsv, sweep_means.tsv and sweep_ratio.tsv (see
## sweep_README.md). Only base R `stats` is used: power.prop.test(),
## power.t.test(), qnorm(), pnorm(), and, for unequal groups, the Fleiss,
## Levin & Paik (2003, chapter 4) formula written out below. No value comes
## from the project's own code. The scenarios are invented numbers.
##
## Every grid is enumerated in the order `enough sweep` promises: the
## Cartesian product of the axes, the LAST axis varying fastest (note that R's
## expand.grid varies the first fastest, so it is not used).
##
## Rounding (README "Rounding and inflation"): analysable first group
## ceil(n* x design_effect), second group ceil(ratio x n* x design_effect),
## enrolment ceil(analysable / (1 - attrition)) per group. The script stops if
## any unrounded size it rounds up lies within 1e-6 of a whole number, so that
## no expected size depends on floating-point noise.

options(digits = 15, width = 200)

fmt <- function(x) {
  if (is.character(x)) return(x)
  ifelse(is.na(x), "NA", sprintf("%.15g", x))
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

n_checks <- 0
check <- function(what, got, want, tol) {
  err <- abs(got - want) / max(1, abs(want))
  if (!(err <= tol)) stop(sprintf("CHECK %s FAILED: %.17g vs %.17g (rel err %.3g)", what, got, want, err))
  n_checks <<- n_checks + 1
  cat(sprintf("CHECK %s OK (rel err %.2g)\n", what, err))
}

## ceiling that refuses to round a value within 1e-6 of a whole number
safe_ceiling <- function(x, what) {
  if (abs(x - round(x)) < 1e-6) stop(sprintf("%s = %.17g is within 1e-6 of a whole number; pick another scenario", what, x))
  ceiling(x)
}

## The grid: a list of axes, each list(key=, texts=) with the values written
## as decimals exactly as given to --vary. Returns one list per point, in
## grid order (last axis fastest), each with the values and the texts.
grid_points <- function(axes) {
  lens <- vapply(axes, function(a) length(a$texts), 1L)
  total <- prod(lens)
  pts <- vector("list", total)
  for (i in 0:(total - 1)) {
    rest <- i
    idx <- integer(length(axes))
    for (k in rev(seq_along(axes))) {
      idx[k] <- rest %% lens[k]
      rest <- rest %/% lens[k]
    }
    texts <- vapply(seq_along(axes), function(k) axes[[k]]$texts[idx[k] + 1], "")
    vals <- as.numeric(texts)
    names(vals) <- vapply(axes, function(a) a$key, "")
    pts[[i + 1]] <- list(index = i, vals = vals,
                         point = paste(sprintf("%s=%s", names(vals), texts), collapse = ";"))
  }
  pts
}

axis <- function(key, texts) list(key = key, texts = texts)
fixed_text <- function(fixed) paste(sprintf("%s=%s", names(fixed), unlist(fixed)), collapse = ";")

## ---------------------------------------------------------------------------
## Two proportions, ratio 1, method fleiss (README "Methods": the normal
## approximation with the pooled variance under the null and separate
## variances under the effect, no continuity correction) = the formula that
## power.prop.test() solves. power.prop.test(strict = FALSE) counts only the
## rejection tail in the direction of the effect, as the Fleiss closed-form
## power does (README "Methods", "Closed-form power counts rejections in the
## direction of the true effect only").
##
## Trial: first group = intervention, p1 = risk_ratio x control_risk; second
## group = control, p2 = control_risk.
## ---------------------------------------------------------------------------

## Fleiss, Levin & Paik (2003), Statistical Methods for Rates and Proportions,
## 3rd ed., Wiley, chapter 4 (unequal groups, no continuity correction), with
## r = n2/n1, pbar = (p1 + r p2)/(1 + r), D = |p1 - p2|:
##   n1 = [z_a sqrt((r+1) pbar qbar) + z_b sqrt(r p1 q1 + p2 q2)]^2 / (r D^2)
## z_a = qnorm(1 - alpha/2), z_b = qnorm(power). For r = 1 this is the
## closed form of power.prop.test; used here as a cross-check of uniroot.
flp_n <- function(p1, p2, r, alpha, power) {
  pbar <- (p1 + r * p2) / (1 + r)
  za <- qnorm(1 - alpha / 2); zb <- qnorm(power)
  (za * sqrt((r + 1) * pbar * (1 - pbar)) + zb * sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))^2 /
    (r * (p1 - p2)^2)
}
## The same test's power at group sizes n1 and n2 (any sizes), written in the
## textbook form of the two-sample z test with the pooled null variance:
##   power = Phi( (D - z_a sqrt(pbar qbar (1/n1 + 1/n2))) / sqrt(p1 q1/n1 + p2 q2/n2) ),
## pbar = (n1 p1 + n2 p2)/(n1 + n2); one tail (the direction of the effect).
flp_power <- function(p1, p2, n1, n2, alpha) {
  pbar <- (n1 * p1 + n2 * p2) / (n1 + n2)
  za <- qnorm(1 - alpha / 2)
  pnorm((abs(p1 - p2) - za * sqrt(pbar * (1 - pbar) * (1 / n1 + 1 / n2))) /
          sqrt(p1 * (1 - p1) / n1 + p2 * (1 - p2) / n2))
}

prop_rows <- list()
prop_grid <- function(name, axes, fixed) {
  cat(sprintf("\n==== grid %s: %s; fixed %s ====\n", name,
              paste(vapply(axes, function(a) sprintf("%s=%s", a$key, paste(a$texts, collapse = ",")), ""), collapse = " x "),
              paste(sprintf("%s=%s", names(fixed), fixed), collapse = ", ")))
  for (pt in grid_points(axes)) {
    v <- c(pt$vals, unlist(fixed))
    v <- v[!duplicated(names(v))]
    p2 <- v[["control_risk"]]; p1 <- v[["risk_ratio"]] * p2
    alpha <- v[["alpha"]]; pw <- v[["power"]]
    if (p1 >= 1) {
      ## Not a probability: the point cannot be planned. power.prop.test()
      ## does not check this (it returns a meaningless n), so the expectation
      ## is the definition of a risk, not a library call.
      src <- sprintf("infeasible: p1 = risk_ratio x control_risk = %s x %s = %.15g is not a risk (must be below 1)",
                     v[["risk_ratio"]], p2, p1)
      cat(sprintf("%-3d %-55s %s\n", pt$index, pt$point, src))
      prop_rows[[length(prop_rows) + 1]] <<- data.frame(
        grid = name, index = pt$index, point = pt$point, fixed = fixed_text(fixed), n1 = NA_real_, n2 = NA_real_,
        enrol1 = NA_real_, enrol2 = NA_real_, n_star = NA_real_, power = NA_real_,
        n_source = src, power_source = "NA", stringsAsFactors = FALSE)
      next
    }
    ## p1 is written as the product the specification implies, so that the
    ## recorded call reproduces the value to the last bit
    p1s <- sprintf("%s*%s", as.character(v[["risk_ratio"]]), as.character(p2))
    call_n <- sprintf("power.prop.test(p1=%s, p2=%s, power=%s, sig.level=%s, tol=1e-10)$n", p1s, p2, pw, alpha)
    nstar <- power.prop.test(p1 = p1, p2 = p2, power = pw, sig.level = alpha, tol = 1e-10)$n
    check(sprintf("%s[%d] uniroot n vs FLP closed form", name, pt$index), nstar, flp_n(p1, p2, 1, alpha, pw), 1e-9)
    n <- safe_ceiling(nstar, sprintf("%s[%d] n*", name, pt$index))
    call_p <- sprintf("power.prop.test(n=%d, p1=%s, p2=%s, sig.level=%s)$power", n, p1s, p2, alpha)
    achieved <- power.prop.test(n = n, p1 = p1, p2 = p2, sig.level = alpha)$power
    check(sprintf("%s[%d] power.prop.test power vs FLP power", name, pt$index), achieved, flp_power(p1, p2, n, n, alpha), 1e-12)
    cat(sprintf("%-3d %-55s n*=%-20.15g n=%-5d power=%.15g\n", pt$index, pt$point, nstar, n, achieved))
    cat(sprintf("    %s\n    %s\n", call_n, call_p))
    prop_rows[[length(prop_rows) + 1]] <<- data.frame(
      grid = name, index = pt$index, point = pt$point, fixed = fixed_text(fixed), n1 = n, n2 = n,
      enrol1 = n, enrol2 = n, n_star = nstar, power = achieved,
      n_source = call_n, power_source = call_p, stringsAsFactors = FALSE)
  }
}

## 1. control_risk x risk_ratio (16 points), power 0.8, alpha 0.05
prop_grid("prop_n",
          list(axis("control_risk", c("0.1", "0.2", "0.3", "0.4")),
               axis("risk_ratio", c("0.5", "0.6", "0.7", "0.8"))),
          list(power = 0.8, alpha = 0.05))
## 1b. risk_ratio x power x alpha (8 points), control_risk 0.25
prop_grid("prop_alpha",
          list(axis("risk_ratio", c("0.6", "0.75")),
               axis("power", c("0.8", "0.9")),
               axis("alpha", c("0.01", "0.05"))),
          list(control_risk = 0.25))
## 3. ranges: --vary control_risk=0.1:0.3:0.1 --vary risk_ratio=0.5:0.8:0.05
##    The values are the decimals 0.1, 0.2, 0.3 and 0.5, 0.55, ..., 0.8 (7),
##    read by as.numeric() from their decimal text (21 points).
prop_grid("prop_range",
          list(axis("control_risk", c("0.1", "0.2", "0.3")),
               axis("risk_ratio", c("0.5", "0.55", "0.6", "0.65", "0.7", "0.75", "0.8"))),
          list(power = 0.8, alpha = 0.05))
## 4. a point that cannot be planned among ones that can (4 points)
prop_grid("prop_infeasible",
          list(axis("control_risk", c("0.3", "0.6")),
               axis("risk_ratio", c("1.5", "2"))),
          list(power = 0.8, alpha = 0.05))
write_tsv(do.call(rbind, prop_rows), "sweep_prop.tsv")

## ---------------------------------------------------------------------------
## Two means, method t: the exact power of the two-sided two-sample t test
## from the noncentral t distribution, both rejection tails counted (README
## "Methods", `t`) = power.t.test(strict = TRUE). Equal groups, common SD.
## ---------------------------------------------------------------------------

means_rows <- list()
means_grid <- function(name, axes, fixed, solve) {
  cat(sprintf("\n==== grid %s (solve %s): %s; fixed %s ====\n", name, solve,
              paste(vapply(axes, function(a) sprintf("%s=%s", a$key, paste(a$texts, collapse = ",")), ""), collapse = " x "),
              paste(sprintf("%s=%s", names(fixed), fixed), collapse = ", ")))
  for (pt in grid_points(axes)) {
    v <- c(pt$vals, unlist(fixed))
    v <- v[!duplicated(names(v))]
    delta <- v[["mean_difference"]]; s <- v[["sd"]]; alpha <- v[["alpha"]]
    if (solve == "n") {
      pw <- v[["power"]]
      call_n <- sprintf("power.t.test(delta=%s, sd=%s, sig.level=%s, power=%s, strict=TRUE, tol=1e-10)$n", delta, s, alpha, pw)
      nstar <- power.t.test(delta = delta, sd = s, sig.level = alpha, power = pw, strict = TRUE, tol = 1e-10)$n
      n <- safe_ceiling(nstar, sprintf("%s[%d] n*", name, pt$index))
      call_p <- sprintf("power.t.test(n=%d, delta=%s, sd=%s, sig.level=%s, strict=TRUE)$power", n, delta, s, alpha)
      achieved <- power.t.test(n = n, delta = delta, sd = s, sig.level = alpha, strict = TRUE)$power
      ## power at n* reaches the target, at n - 1 it does not
      check(sprintf("%s[%d] power at n* is the target", name, pt$index),
            power.t.test(n = nstar, delta = delta, sd = s, sig.level = alpha, strict = TRUE)$power, pw, 1e-8)
      if (!(achieved >= pw && power.t.test(n = n - 1, delta = delta, sd = s, sig.level = alpha, strict = TRUE)$power < pw))
        stop(sprintf("%s[%d]: n=%d is not the smallest size reaching the target", name, pt$index, n))
    } else {
      n <- v[["n"]]; nstar <- NA_real_; call_n <- "NA"
      call_p <- sprintf("power.t.test(n=%d, delta=%s, sd=%s, sig.level=%s, strict=TRUE)$power", n, delta, s, alpha)
      achieved <- power.t.test(n = n, delta = delta, sd = s, sig.level = alpha, strict = TRUE)$power
    }
    ## the same power by pt() with ncp, both tails (Student t, df = 2n - 2,
    ## ncp = delta / (sd sqrt(2/n)))
    df <- 2 * n - 2; ncp <- delta / (s * sqrt(2 / n)); tc <- qt(1 - alpha / 2, df)
    check(sprintf("%s[%d] power.t.test vs pt(ncp) both tails", name, pt$index),
          achieved, pt(tc, df, ncp, lower.tail = FALSE) + pt(-tc, df, ncp), 1e-12)
    cat(sprintf("%-3d %-40s n*=%-20.15g n=%-5d power=%.15g\n", pt$index, pt$point, nstar, n, achieved))
    if (solve == "n") cat(sprintf("    %s\n", call_n))
    cat(sprintf("    %s\n", call_p))
    means_rows[[length(means_rows) + 1]] <<- data.frame(
      grid = name, index = pt$index, point = pt$point, fixed = fixed_text(fixed), n1 = n, n2 = n,
      enrol1 = n, enrol2 = n, n_star = nstar, power = achieved,
      n_source = call_n, power_source = call_p, stringsAsFactors = FALSE)
  }
}

## 2. sd x mean_difference, solve n (12 points), power 0.8, alpha 0.05
means_grid("means_n",
           list(axis("sd", c("8", "10", "12")),
                axis("mean_difference", c("2", "3", "4", "5"))),
           list(power = 0.8, alpha = 0.05), "n")
## 2b. sd x mean_difference x n, solve power (36 points), alpha 0.05
means_grid("means_power",
           list(axis("sd", c("8", "10", "12")),
                axis("mean_difference", c("2", "3", "4", "5")),
                axis("n", c("30", "60", "120"))),
           list(alpha = 0.05), "power")
write_tsv(do.call(rbind, means_rows), "sweep_means.tsv")

## ---------------------------------------------------------------------------
## Two proportions with unequal groups (ratio = n2/n1 = control per
## intervention participant), and with design effect and attrition. Method
## fleiss; formula flp_n / flp_power above (Fleiss, Levin & Paik 2003, ch. 4).
## sweep_make.py checks every row again with statsmodels
## (samplesize_proportions_2indep_onetail, power_proportions_2indep).
## ---------------------------------------------------------------------------

SRC_N <- "Fleiss, Levin & Paik 2003 ch. 4 unequal groups written out in sweep_make.R: n1* = (qnorm(1-alpha/2)*sqrt((r+1)*pbar*(1-pbar)) + qnorm(power)*sqrt(r*p1*(1-p1) + p2*(1-p2)))^2 / (r*(p1-p2)^2), pbar = (p1 + r*p2)/(1+r)"
SRC_P <- "same test's one-tail power written out in sweep_make.R: pnorm((|p1-p2| - qnorm(1-alpha/2)*sqrt(pbar*(1-pbar)*(1/m1 + 1/m2))) / sqrt(p1*(1-p1)/m1 + p2*(1-p2)/m2)), pbar = (m1*p1 + m2*p2)/(m1+m2), m = analysable/design_effect"

ratio_rows <- list()
ratio_grid <- function(name, axes, fixed) {
  cat(sprintf("\n==== grid %s: %s; fixed %s ====\n", name,
              paste(vapply(axes, function(a) sprintf("%s=%s", a$key, paste(a$texts, collapse = ",")), ""), collapse = " x "),
              paste(sprintf("%s=%s", names(fixed), fixed), collapse = ", ")))
  for (pt in grid_points(axes)) {
    v <- c(pt$vals, unlist(fixed))
    v <- v[!duplicated(names(v))]
    p2 <- v[["control_risk"]]; p1 <- v[["risk_ratio"]] * p2
    alpha <- v[["alpha"]]; pw <- v[["power"]]; r <- v[["ratio"]]
    de <- v[["design_effect"]]; att <- v[["attrition"]]
    nstar <- flp_n(p1, p2, r, alpha, pw)
    if (r == 1) {
      check(sprintf("%s[%d] FLP n (r=1) vs power.prop.test", name, pt$index), nstar,
            power.prop.test(p1 = p1, p2 = p2, power = pw, sig.level = alpha, tol = 1e-12)$n, 1e-9)
    }
    ## the written-out power at the unrounded sizes is the target
    check(sprintf("%s[%d] power at n*, r n* is the target", name, pt$index),
          flp_power(p1, p2, nstar, r * nstar, alpha), pw, 1e-12)
    a1 <- safe_ceiling(nstar * de, sprintf("%s[%d] n* x de", name, pt$index))
    a2 <- safe_ceiling(r * nstar * de, sprintf("%s[%d] r n* x de", name, pt$index))
    ## enrolment = ceil(a / (1 - attrition)), in exact integer arithmetic:
    ## attrition is k/100, so a / (1 - k/100) = 100 a / (100 - k)
    k <- round(att * 100)
    stopifnot(abs(att * 100 - k) < 1e-9)
    e1 <- (100 * a1 + (100 - k) - 1) %/% (100 - k)
    e2 <- (100 * a2 + (100 - k) - 1) %/% (100 - k)
    m1 <- a1 / de; m2 <- a2 / de
    achieved <- flp_power(p1, p2, m1, m2, alpha)
    if (a1 == a2) {
      check(sprintf("%s[%d] FLP power (equal groups) vs power.prop.test", name, pt$index), achieved,
            power.prop.test(n = m1, p1 = p1, p2 = p2, sig.level = alpha)$power, 1e-12)
    }
    cat(sprintf("%-3d %-60s n*=%-20.15g n=%d,%d enrol=%d,%d power=%.15g\n",
                pt$index, pt$point, nstar, a1, a2, e1, e2, achieved))
    ratio_rows[[length(ratio_rows) + 1]] <<- data.frame(
      grid = name, index = pt$index, point = pt$point, fixed = fixed_text(fixed), n1 = a1, n2 = a2,
      enrol1 = e1, enrol2 = e2, n_star = nstar, power = achieved,
      n_source = sprintf("%s; p1=%s*%s p2=%s r=%s alpha=%s power=%s; n = ceil(n1* x %s), ceil(r x n1* x %s); enrol = ceil(n/(1-%s))",
                         SRC_N, as.character(v[["risk_ratio"]]), p2, p2, r, alpha, pw, de, de, att),
      power_source = sprintf("%s; m1=%.15g m2=%.15g", SRC_P, m1, m2),
      stringsAsFactors = FALSE)
  }
}

## 4. unequal allocation: control_risk x risk_ratio x ratio (18 points)
ratio_grid("ratio",
           list(axis("control_risk", c("0.1", "0.2", "0.3")),
                axis("risk_ratio", c("0.5", "0.7")),
                axis("ratio", c("1", "2", "3"))),
           list(power = 0.8, alpha = 0.05, design_effect = 1, attrition = 0))
## 5. rounding and inflation: ratio x design_effect x attrition (18 points)
ratio_grid("inflate",
           list(axis("ratio", c("1", "2")),
                axis("design_effect", c("1", "1.5", "2")),
                axis("attrition", c("0", "0.1", "0.15"))),
           list(control_risk = 0.2, risk_ratio = 0.6, power = 0.9, alpha = 0.05))
write_tsv(do.call(rbind, ratio_rows), "sweep_ratio.tsv")

cat(sprintf("\n%d checks, all OK\n", n_checks))
cat(sprintf("%s\n", R.version.string))
