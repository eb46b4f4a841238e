package power_test

import (
	"context"
	"fmt"
	"math"

	"enough/power"
)

// An invented cohort: a fifth of the participants at the average level of
// a biomarker develop the outcome, the odds ratio to detect is 1.5 per
// standard deviation of the biomarker, and the analysis adjusts for age
// and body mass index, which explain 30% of the biomarker's variance
// (R² = 0.3). R gives the same unrounded sizes, 298.387562787483 and
// 426.267946839262 (testdata/reference/logistic_n.tsv, rows
// P0.2_OR1.5_a0.05_s2_pw0.8_r0 and _r0.3).
func ExampleHsiehN() {
	n, err := power.HsiehN(0.2, math.Log(1.5), 0.05, 2, 0.8)
	if err != nil {
		fmt.Println(err)
		return
	}
	adj := n * power.VarianceInflation(0.3)
	fmt.Printf("unadjusted: %.2f, %v participants\n", n, math.Ceil(n))
	fmt.Printf("adjusted:   %.2f, %v participants\n", adj, math.Ceil(adj))
	// R: pnorm(sqrt(427*(1-0.3)*0.2*0.8)*log(1.5) - qnorm(0.975)) = 0.800673
	fmt.Printf("power of the adjusted analysis with 427: %.4f\n",
		power.HsiehPower(427*(1-0.3), 0.2, math.Log(1.5), 0.05, 2))
	// Output:
	// unadjusted: 298.39, 299 participants
	// adjusted:   426.27, 427 participants
	// power of the adjusted analysis with 427: 0.8007
}

// Checking the adjusted plan of ExampleHsiehN by simulating its analysis:
// a standard normal biomarker, a confounder explaining 30% of its
// variance, and logistic regression on both with the Wald test of the
// biomarker. The seed is fixed so that the output is reproducible; 10,000
// replicates give a Monte-Carlo standard error of about 0.004. An
// independent simulation in R with glm finds 0.796 ± 0.004 at 430
// participants (testdata/reference/logistic_sim.tsv, logit_norm_r3).
func ExampleNewRegressionSim() {
	m := power.NewRegressionSim(power.RegressionSim{
		Outcome:   power.OutcomeBinary,
		Exposure:  power.ExposureNormal,
		N:         427,
		Intercept: math.Log(0.2 / 0.8), // logit of the risk at the mean
		Effect:    math.Log(1.5),       // log odds ratio per SD
		R2:        0.3,
		Alpha:     0.05,
		Sides:     2,
	})
	res, err := power.Simulate(context.Background(), m, power.SimConfig{Replicates: 10000, Seed: 7})
	if err != nil {
		fmt.Println(err)
		return
	}
	lo, hi := res.CI()
	fmt.Printf("simulated power %.3f (95%% CI %.3f to %.3f)\n", res.Power(), lo, hi)
	// Output:
	// simulated power 0.792 (95% CI 0.784 to 0.800)
}
