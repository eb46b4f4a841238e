package power_test

import (
	"fmt"
	"math"

	"enough/power"
)

// A non-inferiority trial with an 80% success rate expected in both arms,
// a margin of 10 points (d0 = -0.1: the new treatment may be at most 10
// points worse), one-sided alpha 0.025, 80% power, equal arms. The same
// n* and restricted MLEs are rows fm_01_fm and fm_01_bw of
// testdata/reference/trials_fm.tsv (254.217704623161 and
// 251.164151499171; p̃ = 0.741059940128979, 0.841059940128979).
func ExampleMarginMethod_NonInferiorityN() {
	p1t, p2t := power.RestrictedMLE(0.8, 0.8, 1, -0.1)
	fmt.Printf("restricted MLE: %.4f, %.4f\n", p1t, p2t)
	for _, m := range []power.MarginMethod{power.FarringtonManning, power.Blackwelder} {
		n, err := m.NonInferiorityN(0.8, 0.8, 1, -0.1, 0.025, 0.8)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%-18s n* = %.2f, per group %v\n", m, n, math.Ceil(n))
	}
	// Output:
	// restricted MLE: 0.7411, 0.8411
	// farrington-manning n* = 254.22, per group 255
	// blackwelder        n* = 251.16, per group 252
}

// Equivalence within ±10 points of two arms with a 50% response rate, 200
// per arm, two one-sided Wald tests at alpha 0.05 each. Worked by hand:
// se = sqrt(0.25/200*2) = 0.05, power = 2*Phi(0.1/0.05 - 1.644853627) - 1,
// which scipy gives as 0.27752006262467055 (see TestEquivalenceHand).
func ExampleMarginMethod_EquivalencePower() {
	fmt.Printf("%.4f\n", power.Blackwelder.EquivalencePower(0.5, 0.5, 200, 200, 0.1, 0.05))
	// Output: 0.2775
}
