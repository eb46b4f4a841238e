package power_test

import (
	"context"
	"fmt"

	"enough/power"
)

// Simulating the type I error of a two-sided Pocock design with five
// equally spaced looks: each look stops the trial when its two-sided
// p-value is at most 0.0158, the nominal level whose overall type I error
// under the canonical joint distribution is 0.05 (scipy's
// multivariate_normal, testdata/reference/seqsim_canonical.tsv; Pocock's
// constant 2.413). By look, scipy's crossing probabilities are 0.0158,
// 0.0117, 0.0090, 0.0073 and 0.0061 (rounded: 0.016, 0.012, 0.009, 0.007
// and 0.006); a million replicates have standard errors of 1.3e-4 and
// less.
//
// The seed fixes every random number, whatever the number of workers.
func ExampleNewSequentialZ() {
	m := power.NewSequentialZ(power.SequentialZ{
		Times:   []float64{0.2, 0.4, 0.6, 0.8, 1},
		Nominal: []float64{0.015814, 0.015814, 0.015814, 0.015814, 0.015814},
		Sides:   2,
	})
	res, err := power.Simulate(context.Background(), m, power.SimConfig{Replicates: 1_000_000, Seed: 20250601})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("type I error %.3f\n", res.Power())
	for k, c := range res.ByLook {
		fmt.Printf("look %d: %.3f\n", k+1, float64(c)/float64(res.Replicates))
	}
	// Output:
	// type I error 0.050
	// look 1: 0.016
	// look 2: 0.012
	// look 3: 0.009
	// look 4: 0.007
	// look 5: 0.006
}
