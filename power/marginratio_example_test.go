package power_test

import (
	"fmt"
	"math"

	"enough/power"
)

// A trial of a new dressing where an infection risk of 10% is expected in
// both arms, and the new dressing is acceptable unless it multiplies the
// risk by 1.5 or more (ρ0 = 1.5: a higher risk is worse); one-sided alpha
// 0.025, 80% power, equal arms. The same n* and restricted MLEs are row
// ni_01 of testdata/reference/ratio_n.tsv (868.896522695125;
// p̃ = 0.119471611624912, 0.0796477410832747), from an independent R
// implementation (ratio_make.R).
func ExampleRatioNonInferiorityN() {
	p1t, p2t := power.RestrictedMLERatio(0.1, 0.1, 1, 1.5)
	fmt.Printf("restricted MLE: %.4f, %.4f\n", p1t, p2t)
	n, err := power.RatioNonInferiorityN(0.1, 0.1, 1, 1.5, 0.025, 0.8)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("n* = %.2f, per group %v\n", n, math.Ceil(n))
	// Output:
	// restricted MLE: 0.1195, 0.0796
	// n* = 868.90, per group 869
}
