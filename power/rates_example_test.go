package power_test

import (
	"context"
	"fmt"
	"math"

	"enough/power"
)

// An invented cohort: 0.8 new cases per 100 person-years among the
// unexposed, an exposure thought to raise the rate by half, three years
// of follow-up each, counts overdispersed with κ = 0.4, and two unexposed
// participants per exposed one. R gives n1 = 3145.23003847038 for 90%
// power at two-sided 0.05 (testdata/reference/rates_n.tsv, row
// example_n).
func ExampleTwoRates_N1() {
	c := power.TwoRates{UnexposedRate: 0.008, RateRatio: 1.5, PersonTime: 3, Overdispersion: 0.4}
	n1, err := c.N1(2, 0.05, 2, 0.9)
	if err != nil {
		fmt.Println(err)
		return
	}
	e1 := math.Ceil(n1)
	fmt.Printf("n1* = %.2f: %v exposed and %v unexposed\n", n1, e1, 2*e1)
	fmt.Printf("person-years %v and %v, expected events %.1f and %.1f\n",
		e1*3, 2*e1*3, e1*1.5*0.008*3, 2*e1*0.008*3)
	// Output:
	// n1* = 3145.23: 3146 exposed and 6292 unexposed
	// person-years 9438 and 18876, expected events 113.3 and 151.0
}

// The same cohort with 2,500 exposed and 5,000 unexposed participants.
// R gives 0.823813554703237 (testdata/reference/rates_power.tsv, row
// example_power). Below 1, power is highest at RR = 0.1196 (R: row
// peak_example of rates_peak.tsv): smaller ratios leave the exposed
// group too few events for the Wald test.
func ExampleTwoRates_Power() {
	c := power.TwoRates{UnexposedRate: 0.008, RateRatio: 1.5, PersonTime: 3, Overdispersion: 0.4}
	fmt.Printf("power %.4f, standard error of ln RR %.4f\n",
		c.Power(2500, 5000, 0.05, 2), math.Sqrt(c.Variance(2500, 5000)))
	peak, _ := c.PeakRatio(2500, 5000)
	fmt.Printf("power peaks below 1 at RR = %.3f\n", peak)
	// Output:
	// power 0.8238, standard error of ln RR 0.1403
	// power peaks below 1 at RR = 0.120
}

// Simulating the cohort with Poisson counts, 2,000 exposed and 4,000
// unexposed: the group totals are drawn at once, so 20,000 replicates
// take milliseconds. The fixed seed makes the output reproducible. An
// independent simulation in R gives 0.72735 ± 0.0031
// (testdata/reference/rates_sim.tsv, row example_sim_s2_d+0); the closed
// form gives 0.7392.
func ExampleNewRateSim() {
	c := power.RateSim{
		TwoRates: power.TwoRates{UnexposedRate: 0.008, RateRatio: 1.5, PersonTime: 3},
		N1:       2000, N2: 4000, Alpha: 0.05, Sides: 2,
	}
	res, err := power.Simulate(context.Background(), power.NewRateSim(c), power.SimConfig{Replicates: 20000, Seed: 1})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("simulated power %.3f (SE %.3f); closed form %.3f\n",
		res.Power(), res.SE(), c.Power(2000, 4000, 0.05, 2))
	// Output:
	// simulated power 0.731 (SE 0.003); closed form 0.739
}
