package power_test

import (
	"fmt"
	"math"

	"enough/power"
)

// Sizing a two-arm trial to detect a difference of half a standard
// deviation with a two-sided t test at alpha 0.05 and 80% power. The
// unrounded size is row t_19 of testdata/reference/trials_t.tsv:
// R power.t.test(power=0.8, delta=0.5, sd=1, sig.level=0.05,
// type="two.sample", alternative="two.sided", strict=TRUE, tol=1e-10)$n
// = 63.7656101909419.
func ExampleMeansMethod_N() {
	mc := power.MeanComparison{Diff: 0.5, SD1: 1, Layout: power.TwoSample, Alpha: 0.05, Sides: 2}
	n, err := power.T.N(mc, 1, 0.8)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("n* = %.4f, per group %v\n", n, math.Ceil(n))
	// Output: n* = 63.7656, per group 64
}

// The power of 64 per group for the same difference. Row t_07 of
// testdata/reference/trials_t.tsv: R power.t.test(n=64, delta=0.5, sd=1,
// sig.level=0.05, type="two.sample", alternative="two.sided",
// strict=TRUE)$power = 0.801459557922328.
func ExampleMeansMethod_Power() {
	mc := power.MeanComparison{Diff: 0.5, SD1: 1, Layout: power.TwoSample, Alpha: 0.05, Sides: 2}
	fmt.Printf("%.4f\n", power.T.Power(mc, 64, 64))
	// Output: 0.8015
}
