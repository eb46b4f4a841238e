## review_examples.R -- the stated figures of the invented protocols in
## examples/review-*.yaml, computed outside the project, each with the slip
## (if any) the invented protocol commits.
##
## Run from this folder:   Rscript review_examples.R > review_examples.out
##
## Base R `stats` only. The binary formulas are those of make_binary.R
## (Fleiss, Levin & Paik 2003, ch. 4, with the continuity correction of
## Fleiss, Tytun & Ury 1980), written again here from the formulas.
## Notation: z_a = qnorm(1 - alpha/sides), z_b = qnorm(power), D = |p1 - p2|,
## r = n2/n1, pbar = (p1 + r*p2)/(1 + r).

options(digits = 10)

za <- function(alpha, sides) qnorm(1 - alpha / sides)
pbar_of <- function(p1, p2, r) (p1 + r * p2) / (1 + r)
n_fleiss <- function(p1, p2, r, alpha, sides, power) {
  D <- abs(p1 - p2); pb <- pbar_of(p1, p2, r); qb <- 1 - pb
  (za(alpha, sides) * sqrt((r + 1) * pb * qb) +
     qnorm(power) * sqrt(r * p1 * (1 - p1) + p2 * (1 - p2)))^2 / (r * D^2)
}
n_fleiss_cc <- function(p1, p2, r, alpha, sides, power) {
  D <- abs(p1 - p2); np <- n_fleiss(p1, p2, r, alpha, sides, power)
  np / 4 * (1 + sqrt(1 + 2 * (r + 1) / (np * r * D)))^2
}
## one-direction power of Fleiss with cc at n1 = n2 = n (as make_binary.R)
pow_fleiss_cc <- function(p1, p2, n, alpha, sides) {
  D <- abs(p1 - p2); pb <- pbar_of(p1, p2, 1); qb <- 1 - pb
  np <- if (n > 1 / D) (n - 1 / D)^2 / n else 0
  pnorm((sqrt(np * D^2) - za(alpha, sides) * sqrt(2 * pb * qb)) /
          sqrt(p1 * (1 - p1) + p2 * (1 - p2)))
}
show <- function(label, x) cat(sprintf("%-58s %14.6f  ceiling %d\n", label, x, ceiling(x)))

cat("## review-consistent-balance-classes.yaml: continuous trial, t test\n")
cat("## stated: 133 per arm, 314 recruited (15% loss), 90% power, two-sided 0.05\n")
n <- power.t.test(delta = 6, sd = 15, power = 0.9, sig.level = 0.05, strict = TRUE, tol = 1e-10)$n
show("power.t.test(delta=6, sd=15, power=0.9, strict=TRUE) n", n)
show("enrolment per arm: 133 / (1 - 0.15)", 133 / 0.85)
cat(sprintf("%-58s %14d\n", "floor(314/2 * (1 - 0.15)) analysable per arm", floor(314 / 2 * 0.85)))

cat("\n## review-under-powered-wound-dressing.yaml: binary trial, Fleiss with cc\n")
cat("## control risk 0.12, risk ratio 0.6 (p1 = 0.072), 80% power, two-sided 0.05\n")
cat("## the slip: the two-sided alpha of 0.05 used one-sided (z = qnorm(0.95))\n")
show("correct: n_fleiss_cc(0.072, 0.12, 1, 0.05, sides 2, 0.8)", n_fleiss_cc(0.072, 0.12, 1, 0.05, 2, 0.8))
show("slip one-sided-alpha: sides 1", n_fleiss_cc(0.072, 0.12, 1, 0.05, 1, 0.8))
show("enrolment per arm of the stated 506: 506 / (1 - 0.1)", 506 / 0.9)
cat(sprintf("%-58s %14.6f\n", "power at 506 per arm, two-sided 0.05", pow_fleiss_cc(0.072, 0.12, 506, 0.05, 2)))
cat(sprintf("%-58s %14d\n", "floor(1126/2 * (1 - 0.1)) analysable per arm", floor(1126 / 2 * 0.9)))

cat("\n## review-larger-than-needed-solvent-hearing.yaml: binary cohort, Fleiss with cc\n")
cat("## unexposed risk 0.08, risk ratio 1.8 (p1 = 0.144), 80% power stated, two-sided 0.05\n")
cat("## the slip: the z of 90% power used where 80% is stated\n")
show("correct: n_fleiss_cc(0.144, 0.08, 1, 0.05, 2, 0.8)", n_fleiss_cc(0.144, 0.08, 1, 0.05, 2, 0.8))
show("slip power-90-as-80: power 0.9", n_fleiss_cc(0.144, 0.08, 1, 0.05, 2, 0.9))
show("enrolment per group of the stated 539: 539 / (1 - 0.05)", 539 / 0.95)
cat(sprintf("%-58s %14.6f\n", "power at 539 per group, two-sided 0.05", pow_fleiss_cc(0.144, 0.08, 539, 0.05, 2)))
cat(sprintf("%-58s %14d\n", "floor(1136/2 * (1 - 0.05)) analysable per group", floor(1136 / 2 * 0.95)))

cat("\n## review-incomplete-peer-support.yaml: binary trial stating no sample size\n")
cat("## control proportion 0.35, ratio 1.3 (p1 = 0.455), 80% power; alpha, sides not stated\n")
show("at the usual 0.05 two-sided: n_fleiss_cc(0.455, 0.35, 1, 0.05, 2, 0.8)", n_fleiss_cc(0.455, 0.35, 1, 0.05, 2, 0.8))
