## make.R -- reference figures for the tests of the review engine
## (designs/review/engine_test.go).
##
## Run from this folder:   Rscript make.R > make.out
##
## Writes cases.tsv: one row per figure, with the formula or the R call
## that gave it. Base R `stats` only; every formula is written out here
## from its publication, and the r = 1 binary cases are cross-checked
## against stats::power.prop.test(), the means against
## stats::power.t.test(). The scenarios are invented.

options(digits = 15, width = 120)

rows <- list()
add <- function(id, value, source) {
  rows[[length(rows) + 1]] <<- data.frame(id = id, value = sprintf("%.15g", value),
                                          source = source, stringsAsFactors = FALSE)
  cat(sprintf("%-34s %-22s %s\n", id, sprintf("%.15g", value), source))
}
## Round up, ignoring noise below 1e-9 (README "Rounding and inflation").
up <- function(x) ceiling(x - 1e-9)

za <- function(alpha, sides) qnorm(1 - alpha / sides)

## Fleiss, Levin & Paik 2003, ch. 4 (unequal groups, no continuity
## correction):  n' = [z_a sqrt((r+1) pbar qbar) + z_b sqrt(r p1 q1 + p2 q2)]^2 / (r D^2)
n_fleiss <- function(p1, p2, r = 1, alpha = 0.05, sides = 2, power = 0.8) {
  D <- abs(p1 - p2); pb <- (p1 + r * p2) / (1 + r)
  (za(alpha, sides) * sqrt((r + 1) * pb * (1 - pb)) +
     qnorm(power) * sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))^2 / (r * D^2)
}
## Fleiss, Tytun & Ury 1980:  n = n'/4 [1 + sqrt(1 + 2(r+1)/(n' r D))]^2
n_fleiss_cc <- function(p1, p2, r = 1, alpha = 0.05, sides = 2, power = 0.8) {
  np <- n_fleiss(p1, p2, r, alpha, sides, power); D <- abs(p1 - p2)
  np / 4 * (1 + sqrt(1 + 2 * (r + 1) / (np * r * D)))^2
}
## Power of the corrected formula at n1 a group (r = 1), by inverting it:
## n' = (n1 - c)^2 / n1, c = (r+1)/(2 r D);
## z_b = (sqrt(n' r D^2) - z_a sqrt((r+1) pbar qbar)) / sqrt(r p1 q1 + p2 q2).
pow_fleiss_cc <- function(p1, p2, n1, alpha = 0.05, sides = 2) {
  r <- 1; D <- abs(p1 - p2); pb <- (p1 + p2) / 2
  c <- (r + 1) / (2 * r * D); np <- (n1 - c)^2 / n1
  pnorm((sqrt(np * r * D^2) - za(alpha, sides) * sqrt((r + 1) * pb * (1 - pb))) /
          sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))
}
## Cross-check of n' (r = 1) against stats::power.prop.test.
check_ppt <- function(p1, p2, power = 0.8, alternative = "two.sided") {
  ours <- n_fleiss(p1, p2, 1, 0.05, if (alternative == "two.sided") 2 else 1, power)
  theirs <- power.prop.test(p1 = p1, p2 = p2, power = power, alternative = alternative,
                            strict = FALSE, tol = 1e-12)$n
  stopifnot(abs(ours - theirs) < 1e-6)
}

cat("== verdicts: trial, control risk 0.30, risk ratio 0.7 (p1 0.21), fleiss-cc, attrition 0.1\n")
nb <- n_fleiss_cc(0.21, 0.30)
add("base_n", up(nb), "ceiling of Fleiss-Tytun-Ury n(0.21, 0.30, r=1, alpha 0.05 two-sided, power 0.8)")
add("base_enrol_total", 2 * up(up(nb) / 0.9), "2 * ceiling(base_n / (1 - 0.1))")
add("base_power_at_300", pow_fleiss_cc(0.21, 0.30, 300), "inverted Fleiss-Tytun-Ury power at 300 a group")
add("base_power_at_500", pow_fleiss_cc(0.21, 0.30, 500), "inverted Fleiss-Tytun-Ury power at 500 a group")
add("base_power_at_360", pow_fleiss_cc(0.21, 0.30, 360), "inverted Fleiss-Tytun-Ury power at floor(400 * 0.9) = 360 a group (enrolment 800)")
add("base_power_at_375", pow_fleiss_cc(0.21, 0.30, 375), "inverted Fleiss-Tytun-Ury power at 375 a group")

cat("== sensitivity of the base plan (each value the first group's analysable size)\n")
add("sens_rr_0.2", up(n_fleiss_cc(0.30 * 0.76, 0.30)), "risk ratio 1 + (0.7 - 1) * 0.8 = 0.76: ceiling Fleiss-Tytun-Ury n(0.228, 0.30)")
add("sens_rr_0.1", up(n_fleiss_cc(0.30 * 0.73, 0.30)), "risk ratio 1 + (0.7 - 1) * 0.9 = 0.73: ceiling Fleiss-Tytun-Ury n(0.219, 0.30)")
for (f in c(0.1, 0.2)) {
  lo <- up(n_fleiss_cc(0.7 * 0.30 * (1 - f), 0.30 * (1 - f)))
  hi <- up(n_fleiss_cc(0.7 * 0.30 * (1 + f), 0.30 * (1 + f)))
  add(sprintf("sens_control_%g", f), max(lo, hi),
      sprintf("control risk 0.30 * (1 -/+ %g), risk ratio 0.7: the larger of ceiling Fleiss-Tytun-Ury n (%d and %d)", f, lo, hi))
}
for (f in c(0.1, 0.2)) {
  a <- 0.1 * (1 + f)
  add(sprintf("sens_attrition_enrol_%g", f), 2 * up(up(nb) / (1 - a)),
      sprintf("attrition %g: 2 * ceiling(base_n / (1 - %g))", a, a))
}

cat("== slips (each value is the figure the protocol states, committing the slip)\n")
## Trial, control risk 0.30, risk ratio 0.7, method fleiss unless stated.
nf <- n_fleiss(0.21, 0.30); check_ppt(0.21, 0.30)
add("fleiss_n", up(nf), "ceiling Fleiss n'(0.21, 0.30); = ceiling(power.prop.test(p1=0.21, p2=0.3, power=0.8)$n)")
n1s <- n_fleiss(0.21, 0.30, sides = 1); check_ppt(0.21, 0.30, alternative = "one.sided")
add("one_sided_alpha_n", up(n1s), "ceiling Fleiss n' with z_a = qnorm(0.95); = ceiling(power.prop.test(p1=0.21, p2=0.3, power=0.8, alternative='one.sided')$n)")
add("per_group_as_total_total", up(nf), "stated total = the per-group ceiling Fleiss n'(0.21, 0.30)")
add("total_as_per_group_n", 2 * up(nf), "stated n = the total 2 * ceiling Fleiss n'(0.21, 0.30)")
add("attrition_ignored_enrol_total", 2 * up(nf), "attrition 0.2 ignored: enrolment = analysable 2 * ceiling Fleiss n'")
add("attrition_multiplied_enrol_total", 2 * up(up(nf) * 1.3), "attrition 0.3 multiplied: 2 * ceiling(ceiling(Fleiss n') * 1.3)")
add("attrition_correct_enrol_total", 2 * up(up(nf) / 0.8), "attrition 0.2 divided (correct): 2 * ceiling(ceiling(Fleiss n') / 0.8)")
add("continuity_omitted_n", up(nf), "fleiss-cc planned, stated n = ceiling Fleiss n' (no correction)")
add("continuity_added_n", up(n_fleiss_cc(0.21, 0.30)), "fleiss planned, stated n = ceiling Fleiss-Tytun-Ury n (corrected)")
add("power_90_as_80_n", up(n_fleiss(0.21, 0.30, power = 0.9)), "80% stated, ceiling Fleiss n' at qnorm(0.9); = ceiling(power.prop.test(p1=0.21, p2=0.3, power=0.9)$n)")
check_ppt(0.21, 0.30, power = 0.9)
add("power_80_as_90_n", up(nf), "90% stated, ceiling Fleiss n' at qnorm(0.8)")
add("design_effect_ignored_n", up(nf), "design_effect 2 planned, stated n = ceiling Fleiss n' without it")
add("design_effect_correct_n", up(nf * 2), "design_effect 2: ceiling(Fleiss n' * 2)")
add("ratio_ignored_n", up(nf), "ratio 2 planned, stated n = ceiling Fleiss n'(r = 1)")
add("ratio_correct_n", up(n_fleiss(0.21, 0.30, r = 2)), "ratio 2: ceiling Fleiss n'(0.21, 0.30, r = 2), first group")
## Detectable effect at the stated n = 367 a group, fleiss: the first risk
## above 0.30 that power.prop.test reaches 80% power with.
add("detect_upper_p1_367", power.prop.test(n = 367, p2 = 0.3, power = 0.8, strict = FALSE, tol = 1e-12)$p1,
    "power.prop.test(n=367, p2=0.3, power=0.8, strict=FALSE)$p1")
## Cohort, unexposed risk 0.2, odds ratio 2: exposed risk 2 * 0.2 / (1 + 0.2) = 1/3
## (common practice: p1 = OR p0 / (1 + p0 (OR - 1))); the slip takes 2 * 0.2 = 0.4.
check_ppt(0.4, 0.2)
add("or_as_rr_n", up(n_fleiss(0.4, 0.2)), "odds ratio 2 taken as a risk ratio: ceiling Fleiss n'(0.4, 0.2); = ceiling(power.prop.test(p1=0.4, p2=0.2, power=0.8)$n)")
add("or_correct_n", up(n_fleiss(2 * 0.2 / 1.2, 0.2)), "ceiling Fleiss n'(1/3, 0.2)")
## Trial, control risk 0.4: risk ratio 0.75 read as 25 points; difference -0.1 read as -10%.
check_ppt(0.15, 0.4); check_ppt(0.36, 0.4)
add("relative_as_absolute_n", up(n_fleiss(0.15, 0.4)), "risk ratio 0.75 as 0.4 + (0.75 - 1) = 0.15: ceiling(power.prop.test(p1=0.15, p2=0.4, power=0.8)$n)")
add("absolute_as_relative_n", up(n_fleiss(0.36, 0.4)), "risk difference -0.1 as 0.4 * (1 - 0.1) = 0.36: ceiling(power.prop.test(p1=0.36, p2=0.4, power=0.8)$n)")
## Pair: one-sided alpha and the per-group size reported as the total.
add("pair_one_sided_per_group_total", up(n1s), "stated total = the one-sided per-group ceiling Fleiss n'")

## Means, difference 5, SD 12, method t.
pt <- power.t.test(delta = 5, sd = 12, sig.level = 0.05, power = 0.8, strict = TRUE, tol = 1e-12)$n
add("t_n_5_12", up(pt), "ceiling(power.t.test(delta=5, sd=12, sig.level=0.05, power=0.8, strict=TRUE)$n)")
add("design_effect_ignored_cluster_n", up(pt), "cluster trial planned, stated n = the individual-level t answer above")
z2 <- (qnorm(0.975) + qnorm(0.8))^2
add("variance_not_doubled_n", up(z2 * 12^2 / 5^2), "one-sample formula (qnorm(0.975) + qnorm(0.8))^2 * 12^2 / 5^2, rounded up")
## Means, difference 15, SD 10 (1.5 SD), method t.
add("normal_instead_of_t_n", up(2 * z2 * 10^2 / 15^2), "normal approximation 2 (qnorm(0.975) + qnorm(0.8))^2 * 10^2 / 15^2 (Chow, Shao & Wang 2008, ch. 3), rounded up")
add("t_n_15_10", up(power.t.test(delta = 15, sd = 10, sig.level = 0.05, power = 0.8, strict = TRUE, tol = 1e-12)$n),
    "ceiling(power.t.test(delta=15, sd=10, sig.level=0.05, power=0.8, strict=TRUE)$n)")
add("t_power_at_7_15_10", power.t.test(n = 7, delta = 15, sd = 10, sig.level = 0.05, strict = TRUE)$power,
    "power.t.test(n=7, delta=15, sd=10, sig.level=0.05, strict=TRUE)$power")

## Means, difference 1, SD 1, method t: a size beyond 5% whose power is
## within 2 points.
add("t_n_1_1", up(power.t.test(delta = 1, sd = 1, sig.level = 0.05, power = 0.8, strict = TRUE, tol = 1e-12)$n),
    "ceiling(power.t.test(delta=1, sd=1, sig.level=0.05, power=0.8, strict=TRUE)$n)")
add("t_power_at_16_1_1", power.t.test(n = 16, delta = 1, sd = 1, sig.level = 0.05, strict = TRUE)$power,
    "power.t.test(n=16, delta=1, sd=1, sig.level=0.05, strict=TRUE)$power")

## Time to event: hazard ratio 0.7, control median 12, accrual 12, follow-up 12.
## Schoenfeld 1983: D = (z_a + z_b)^2 / (pi1 pi2 ln^2 HR), pi1 = pi2 = 1/2.
D <- z2 / (0.25 * log(0.7)^2)
add("events_as_participants_total", up(D), "ceiling Schoenfeld events 4 (qnorm(0.975) + qnorm(0.8))^2 / ln(0.7)^2")
## Lachin & Foulkes 1986, uniform accrual a, follow-up f, no dropout:
## P = 1 - (exp(-l f) - exp(-l (a + f))) / (l a).
pev <- function(l, a, f) 1 - (exp(-l * f) - exp(-l * (a + f))) / (l * a)
l2 <- log(2) / 12; l1 <- 0.7 * l2
nstar <- D / (pev(l1, 12, 12) + pev(l2, 12, 12))
add("events_correct_total", 2 * up(nstar), "2 * ceiling(D / (P1 + P2)), P of Lachin & Foulkes 1986 with exponential survival")

## Precision survey: expected prevalence 0.3, margin 0.05, design effect 1.5,
## non-response 0.2 (Cochran 1977, ch. 4: n0 = z^2 p (1 - p) / margin^2).
n0 <- qnorm(0.975)^2 * 0.3 * 0.7 / 0.05^2
add("survey_total", up(n0 * 1.5), "ceiling(qnorm(0.975)^2 * 0.3 * 0.7 / 0.05^2 * 1.5)")
add("survey_invite", up(up(n0 * 1.5) / 0.8), "ceiling(survey_total / (1 - 0.2))")
add("survey_design_effect_ignored_total", up(n0), "ceiling(qnorm(0.975)^2 * 0.3 * 0.7 / 0.05^2), no design effect")

## Several arms: three arms each against the control (two comparisons),
## control risk 0.30, risk ratio 0.7 (p1 0.21), fleiss-cc. The plan divides
## alpha among the comparisons (Bonferroni; Dunn 1961): each at 0.05 / 2 =
## 0.025 two-sided. multiplicity-ignored sizes each comparison at the
## stated 0.05 two-sided; one-sided-alpha (0.05 one-sided, divided by 2:
## 0.025 one-sided) has the same z_a = qnorm(0.975), so the two tie.
cat("== several arms: alpha divided among the comparisons\n")
add("multiplicity_correct_n", up(n_fleiss_cc(0.21, 0.30, alpha = 0.025)),
    "3 arms each vs control: ceiling Fleiss-Tytun-Ury n(0.21, 0.30) at alpha 0.05 / 2 = 0.025 two-sided (Bonferroni)")
add("multiplicity_ignored_n", up(n_fleiss_cc(0.21, 0.30, alpha = 0.05)),
    "3 arms, alpha not divided: ceiling Fleiss-Tytun-Ury n(0.21, 0.30) at alpha 0.05 two-sided per comparison")
add("multiplicity_one_sided_n", up(n_fleiss_cc(0.21, 0.30, alpha = 0.025, sides = 1)),
    "3 arms, alpha 0.05 one-sided divided by 2: ceiling Fleiss-Tytun-Ury n(0.21, 0.30) at alpha 0.025 one-sided (z_a = qnorm(0.975))")
stopifnot(up(n_fleiss_cc(0.21, 0.30, alpha = 0.05)) == up(n_fleiss_cc(0.21, 0.30, alpha = 0.025, sides = 1)))

## Cluster trial of the means above (difference 5, SD 12), clusters of 20:
## the clusters per arm the individual-level t answer fills when the design
## effect is left out, ceiling(92 / 20) (design-effect-ignored).
add("design_effect_ignored_clusters", up(up(pt) / 20),
    "ceiling(ceiling(power.t.test(delta=5, sd=12, sig.level=0.05, power=0.8, strict=TRUE)$n) / 20)")

out <- do.call(rbind, rows)
write.table(out, "cases.tsv", sep = "\t", quote = FALSE, row.names = FALSE)
cat(sprintf("wrote cases.tsv (%d rows)\n", nrow(out)))
cat(R.version.string, "\n")
