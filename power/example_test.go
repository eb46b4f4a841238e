package power_test

import (
	"fmt"
	"math"

	"enough/power"
)

// Sizing a trial with a control risk of 30% and an intervention risk of 20%,
// two-sided alpha 0.05, 80% power, equal arms. The same n* are rows
// n_fleiss_01 (and R power.prop.test, row n_ppt_01), n_fleisscc_01 and
// n_kelsey_01 of testdata/reference/binary_n.tsv.
func ExampleMethod_N() {
	tp := power.TwoProportions{P1: 0.2, P2: 0.3, Alpha: 0.05, Sides: 2}
	for _, m := range []power.Method{power.Fleiss, power.FleissCC, power.Kelsey} {
		n, err := m.N(tp, 1, 0.8)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-10s n* = %.2f, per group %v\n", m, n, math.Ceil(n))
	}
	// Output:
	// fleiss     n* = 293.15, per group 294
	// fleiss-cc  n* = 312.83, per group 313
	// kelsey     n* = 294.33, per group 295
}

// The power of 150 per arm for the same risks. R 4.2.2:
// power.prop.test(n=150, p1=0.2, p2=0.3)$power = 0.5160752639.
func ExampleMethod_Power() {
	tp := power.TwoProportions{P1: 0.2, P2: 0.3, Alpha: 0.05, Sides: 2}
	fmt.Printf("%.3f\n", power.Fleiss.Power(tp, 150, 150))
	// Output: 0.516
}

// The smallest risk below 30% that 300 per arm detect with 80% power
// (row eff_fleiss_01 of testdata/reference/binary_effect.tsv: 0.2010729).
func ExampleMethod_Detectable() {
	tp := power.TwoProportions{P2: 0.3, Alpha: 0.05, Sides: 2}
	p1, err := power.Fleiss.Detectable(tp, 300, 300, 0.8, -1)
	fmt.Printf("%.4f %v\n", p1, err)
	// Output: 0.2011 <nil>
}

// Respondents needed to estimate a prevalence near 50% within ±5 points
// with 95% confidence (row prec_01 of testdata/reference/precision.tsv).
func ExamplePrecisionN() {
	n0, n := power.PrecisionN(power.Precision{P: 0.5, Confidence: 0.95}, 0.05)
	fmt.Printf("%.1f %.0f\n", n0, math.Ceil(n))
	// Output: 384.1 385
}
