# Fixed-sample sizes behind the interim plans of designs/interim_test.go,
# written out with R's qnorm (R base stats), to be multiplied by the
# inflation factors of groupseq_inflation.tsv (column R).
options(digits = 12)
za <- qnorm(0.975)
# 1. Two means, sd 10, difference 3, two-sided alpha 0.05, power 0.8, the z
#    method: n per group = 2 sd^2 (z_a + z_b)^2 / diff^2.
n1 <- 2 * 10^2 * (za + qnorm(0.8))^2 / 3^2
R1 <- 1.22859261025            # pocock_2s_0.05_K5_pow0.8
cat("means_z_fixed", n1, "\n")
cat("means_z_pocock5", n1 * R1, ceiling(n1 * R1), "\n")
# 2. Schoenfeld's events, hazard ratio 0.7, 1:1, two-sided 0.05, power 0.9:
#    d = 4 (z_a + z_b)^2 / log(0.7)^2.
d2 <- 4 * (za + qnorm(0.9))^2 / log(0.7)^2
R2 <- 1.02216303849           # obf_2s_0.05_K4_pow0.9
cat("schoenfeld_fixed", d2, "\n")
cat("schoenfeld_obf4", d2 * R2, ceiling(d2 * R2), "\n")
