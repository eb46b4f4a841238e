package power_test

import (
	"context"
	"fmt"
	"math"

	"enough/power"
)

// A survey plans to estimate the share of clinic visitors who have had a
// seasonal vaccine, expected near 10%, within ±5 points with 95%
// confidence. The three intervals need 139, 141 and 158 respondents, with
// half-widths 0.049873, 0.049995 and 0.049863 at the expected count: R's
// brute-force scans, rows n_wald_p0.1_m0.05_c0.95, n_wilson_… and
// n_clopper-pearson_… of testdata/reference/intervals_n.tsv.
func ExampleIntervalMethod_N() {
	for _, m := range []power.IntervalMethod{power.WaldInterval, power.WilsonInterval, power.ClopperPearsonInterval} {
		n, err := m.N(0.1, 0.05, 0.95)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-16s n = %d, half-width %.6f\n", m, n, m.HalfWidth(0.1, float64(n), 0.95))
	}
	// Output:
	// wald             n = 139, half-width 0.049873
	// wilson           n = 141, half-width 0.049995
	// clopper-pearson  n = 158, half-width 0.049863
}

// The 95% intervals for 7 successes in 20 trials. R:
// prop.test(7, 20, correct=FALSE)$conf.int = 0.1811918 0.5671457 and
// binom.test(7, 20)$conf.int = 0.1539092 0.5921885 (rows
// lim_wilson_n20_x7_c0.95 and lim_clopper-pearson_n20_x7_c0.95 of
// testdata/reference/intervals_limits.tsv).
func ExampleIntervalMethod_Limits() {
	for _, m := range []power.IntervalMethod{power.WilsonInterval, power.ClopperPearsonInterval} {
		lo, hi := m.Limits(7, 20, 0.95)
		fmt.Printf("%-16s (%.4f, %.4f)\n", m, lo, hi)
	}
	// Output:
	// wilson           (0.1812, 0.5671)
	// clopper-pearson  (0.1539, 0.5922)
}

// A cohort plans to estimate a risk ratio of 1.5 (30% against 20%) with
// equal groups so that the 95% interval's upper limit is at most twice its
// lower. Row ratio_12 of testdata/reference/intervals_ratio.tsv: n1* =
// 202.5525 (Katz et al. 1978), and 203 per group give 1.9985.
func ExampleRatioPrecision_N1() {
	rp := power.RatioPrecision{Measure: power.MeasureRiskRatio, P1: 0.3, P2: 0.2, Confidence: 0.95}
	n1 := rp.N1(2, 1)
	n := math.Ceil(n1)
	fmt.Printf("n1* = %.4f, per group %v, upper/lower %.4f\n", n1, n, rp.Rho(n, n))
	// Output: n1* = 202.5525, per group 203, upper/lower 1.9985
}

// A mean blood pressure with SD 10 mmHg, to within ±2 mmHg by the 95% t
// interval: 99 participants (R: the first n with qt(0.975, n-1)*10/sqrt(n)
// <= 2; row mean_sd10_m2_c0.95 of testdata/reference/intervals_mean.tsv),
// where the normal answer is ⌈96.04⌉ = 97.
func ExampleMeanPrecisionN() {
	n, err := power.MeanPrecisionN(10, 2, 0.95)
	fmt.Println(n, err)
	// Output: 99 <nil>
}

// A screening test expected to have sensitivity and specificity 90%, in a
// population where 20% have the disease, each to within ±5 points: Buderer
// (1996) gives 691.46 for the sensitivity and 172.87 for the specificity,
// so 692 participants (row buderer_11 of
// testdata/reference/intervals_buderer.tsv).
func ExampleDiagnosticAccuracy_N() {
	d := power.DiagnosticAccuracy{Sensitivity: 0.9, Specificity: 0.9, Prevalence: 0.2, Confidence: 0.95}
	ns, nsp := d.N(0.05)
	fmt.Printf("%.2f %.2f -> %v\n", ns, nsp, math.Ceil(math.Max(ns, nsp)))
	// Output: 691.46 172.87 -> 692
}

// How often do 100 participants, with a true proportion of 10%, give a
// Clopper–Pearson interval within ±6.5 points, and how often does it cover
// 10%? R's exact rates are 0.5832 and 0.9557 (row prop_cp_n100 of
// testdata/reference/intervals_sim_prop.tsv); 200,000 replicates have a
// standard error near 0.001. The seed fixes every number, whatever the
// number of workers.
func ExampleNewProportionPrecisionSim() {
	c := power.ProportionPrecisionSim{N: 100, P: 0.1, Confidence: 0.95, Interval: power.ClopperPearsonInterval, Margin: 0.065}
	for _, cover := range []bool{false, true} {
		c.Coverage = cover
		res, err := power.Simulate(context.Background(), power.NewProportionPrecisionSim(c), power.SimConfig{Replicates: 200_000, Seed: 7})
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("coverage %v: %.2f\n", cover, res.Power())
	}
	// Output:
	// coverage false: 0.58
	// coverage true: 0.96
}
