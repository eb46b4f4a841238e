package power_test

import (
	"context"
	"fmt"

	"enough/power"
)

// An invented study: 30% of controls exposed, an odds ratio of 2 and a
// within-set exposure correlation of 0.1, analysed by the Mantel–Haenszel
// test at 5% two-sided with 80% power. Dupont's (1988) formula written in
// R (testdata/reference/matched_closed.tsv, rows mc_047, mc_050 and
// mc_053): 155.455766792402 pairs, 112.698155885549 sets of 1:2 and
// 90.5053454501818 sets of 1:4; informative sets per set 0.4389, 0.6468
// and 0.8295.
func ExampleMatchedSets_DupontSets() {
	for _, m := range []int{1, 2, 4} {
		s := power.MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: m, Correlation: 0.1}
		n, err := s.DupontSets(0.05, 2, 0.8)
		if err != nil {
			fmt.Println(err)
			return
		}
		inf, _ := s.DiscordantPerSet()
		fmt.Printf("1:%d  %.4f sets, %.4f informative per set\n", m, n, inf)
	}
	// Output:
	// 1:1  155.4558 sets, 0.4389 informative per set
	// 1:2  112.6982 sets, 0.6468 informative per set
	// 1:4  90.5053 sets, 0.8295 informative per set
}

// The same exposure for 1:1 pairs with independent exposures within pairs
// (φ = 0): Dupont's sets equal Schlesselman's pairs (68.23 discordant out
// of 140.80), and Connor's unconditional formula asks for a few more.
// R values, row mc_046 of testdata/reference/matched_closed.tsv:
// Dupont 140.799256542607, Schlesselman 140.799256542607 (68.2334858629558
// discordant), Connor 143.384211551657.
func ExampleMatchedSets_ConnorPairs() {
	s := power.MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 1}
	d, _ := s.DupontSets(0.05, 2, 0.8)
	pairs, disc, _ := s.SchlesselmanPairs(0.05, 2, 0.8)
	c, _ := s.ConnorPairs(0.05, 2, 0.8)
	fmt.Printf("Dupont %.2f, Schlesselman %.2f (%.2f discordant), Connor %.2f\n", d, pairs, disc, c)
	// Output: Dupont 140.80, Schlesselman 140.80 (68.23 discordant), Connor 143.38
}

// The exact power of McNemar's tests with 90 pairs, 30% of controls
// exposed, odds ratio 2.5 and correlation 0.1, two-sided at 5%. R
// enumeration with dbinom, row mcn_04 of
// testdata/reference/matched_mcnemar.tsv: z test 0.879622826…, exact
// binomial test 0.847688….
func ExampleMatchedSets_McNemarExactPower() {
	s := power.MatchedSets{ControlExposure: 0.3, OddsRatio: 2.5, Controls: 1, Correlation: 0.1}
	z, _ := s.McNemarExactPower(90, 0.05, 2, 0)
	b, _ := s.McNemarBinomialPower(90, 0.05, 2, 0)
	fmt.Printf("z test %.4f, exact test %.4f\n", z, b)
	// Output: z test 0.8796, exact test 0.8477
}

// A simulation of 120 sets of one case and two controls (30% of controls
// exposed, odds ratio 2, correlation 0.1), analysed by the Mantel–Haenszel
// test stratified by set, and the same design under the null (odds ratio
// 1). An independent R simulation (row sim_01 of
// testdata/reference/matched_sim.tsv, 200,000 replicates, seed 501) gives
// 0.8838 (SE 0.0007). Under the null the test rejects a little less often
// than its nominal 5%. The seed fixes the result whatever the number of
// workers.
func ExampleNewMatchedSim() {
	c := power.MatchedSim{
		MatchedSets: power.MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 2, Correlation: 0.1},
		Sets:        120, Alpha: 0.05, Sides: 2,
	}
	for _, psi := range []float64{2, 1} {
		c.OddsRatio = psi
		m, err := power.NewMatchedSim(c)
		if err != nil {
			fmt.Println(err)
			return
		}
		res, _ := power.Simulate(context.Background(), m, power.SimConfig{Replicates: 100_000, Seed: 1})
		fmt.Printf("odds ratio %v: %.3f\n", psi, res.Power())
	}
	// Output:
	// odds ratio 2: 0.883
	// odds ratio 1: 0.041
}
