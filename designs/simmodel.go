package designs

import (
	"fmt"
	"math"
	"strings"

	"enough/power"
)

// simModel builds the Monte-Carlo model of the specification at analysable
// sizes (first, second), under the planned effect or, with null, under the
// null hypothesis (no difference; for non-inferiority the margin), with the
// closed-form power at the same sizes for comparison.
func simModel(s *Spec, res *Result, sizes [2]int, null bool) (simSetup, error) {
	e := plannedEffects(s)
	st := simSetup{sizes: sizes}
	n1, n2 := sizes[0], sizes[1]
	unavailable := func(why string) (simSetup, error) {
		return st, &InputError{Msg: fmt.Sprintf("%s: simulate: %s", s.File, why)}
	}
	if s.Hypothesis == "equivalence" && s.Outcome == "continuous" {
		return unavailable("equivalence of means is not simulated yet; its exact power is already computed by integration (method t)")
	}
	if s.Adjusted && s.Hypothesis != "superiority" {
		return unavailable("an adjusted analysis against a margin is not simulated yet")
	}
	if s.Hypothesis != "superiority" && s.Cluster != nil {
		return unavailable("a cluster trial with a margin is not simulated yet; its closed form is a t test of the cluster summaries against the margin")
	}
	if s.DesignEffect > 1 && s.Cluster == nil {
		// A design effect without a cluster model: simulate the effective
		// sizes of simple random samples.
		n1 = max(2, int(math.Round(float64(n1)/s.DesignEffect)))
		n2 = max(2, int(math.Round(float64(n2)/s.DesignEffect)))
		st.notes = append(st.notes, fmt.Sprintf("The design effect of %.4g is simulated as simple random samples of the effective sizes %d and %d.", s.DesignEffect, n1, n2))
	}

	// The closed form at the same sizes.
	m := MethodByID(s.Method)
	ec := e
	mem := 0
	if s.Cluster != nil {
		// The clusters recruited for these analysable sizes, each with the
		// members left after attrition; the closed form is compared at the
		// sizes those whole clusters bring.
		enrol := []int{ceilTol(float64(n1) / (1 - s.Attrition)), ceilTol(float64(n2) / (1 - s.Attrition))}
		ec.clusterK = clustersFor(s, enrol)
		if ec.clusterK[0] < 2 || ec.clusterK[1] < 2 {
			return unavailable("fewer than two clusters per arm")
		}
		mem = max(1, int(math.Round(s.Cluster.Size*(1-s.Attrition))))
		if s.Outcome == "binary" && !clusterCountsFit(ec.clusterK[0], ec.clusterK[1], mem) {
			return unavailable(clusterCountsTooLarge(ec.clusterK[0], ec.clusterK[1], mem))
		}
		sizes = [2]int{ec.clusterK[0] * mem, ec.clusterK[1] * mem}
		n1, n2 = sizes[0], sizes[1]
		st.sizes = sizes
		st.notes = append(st.notes, fmt.Sprintf("Whole clusters are simulated: %d and %d clusters of %d analysable members.", ec.clusterK[0], ec.clusterK[1], mem))
	}
	deff := s.DesignEffect
	if s.Cluster != nil {
		// Compare with the closed form of the clusters simulated: equal
		// sizes of mem analysable members.
		deff = 1 + float64(mem-1)*s.Cluster.ICC
		if math.Abs(deff-s.DesignEffect) > 1e-9 {
			st.notes = append(st.notes, fmt.Sprintf("The closed form is evaluated with the design effect of the simulated clusters, %.4g, in place of the plan's %.4g.", deff, s.DesignEffect))
		}
	}
	eff := [2]float64{float64(sizes[0]) / deff, float64(sizes[1]) / deff}
	if s.OneGroup() {
		eff[1] = eff[0]
	}
	c := newCalculator(s, m, ec)
	st.closed = c.power(eff[0], eff[1])
	if test, ok := power.ParseBinaryTest(s.Test); ok && res.Method == "exact" && exactFits(s) == nil {
		// The method's own power is exact: compare with that.
		dir := 1
		if e.p1 < e.p2 {
			dir = -1
		}
		st.closed = power.ExactPower(test, n1, n2, e.p1, e.p2, e.alpha, s.Sides, dir)
	}

	sides, dir := s.Sides, 1
	if s.Sides == 1 && s.Direction != 0 {
		dir = s.Direction
	}
	if s.ContinuousExposure {
		// Logistic regression on a standard normal exposure (and, with
		// adjustment, one covariate of the stated R²).
		c := power.RegressionSim{Outcome: power.OutcomeBinary, Exposure: power.ExposureNormal, N: n1,
			Intercept: math.Log(s.EventRate / (1 - s.EventRate)), Effect: math.Log(e.orsd), R2: s.AdjustR2, Alpha: e.alpha, Sides: sides}
		regressionTest(s, &st, &c, null, "no relation (an odds ratio per SD of 1)")
		if n1 <= 3 {
			return unavailable("a logistic regression needs more than three participants")
		}
		st.notes = append(st.notes, "The exposure is simulated as standard normal, and the outcome by logistic regression on it with the event rate at its mean; the fit is by Newton-Raphson, and a data set that does not converge (separation) counts as not significant.")
		st.model = power.NewRegressionSim(c)
		return st, nil
	}
	if s.Adjusted {
		return adjustedModel(s, st, e, n1, n2, null, sides, dir)
	}
	switch s.Outcome {
	case "binary":
		if s.Sides != 1 && e.p1 < e.p2 {
			dir = -1
		}
		if s.Matched {
			// Dupont's (1988) model of exposure within sets, analysed by
			// McNemar's test (pairs) or the Mantel-Haenszel test
			// stratified by set.
			psi := power.OddsRatio(e.p1, e.p2)
			if null {
				psi = 1
				st.null = fmt.Sprintf("no difference (odds ratio 1, control exposure %s)", trimFloat(e.p2))
			}
			// Dupont's formula reads the odds ratio as the odds ratio within
			// sets, which the conditional analysis estimates; Connor's
			// and Schlesselman's read the exposures member by member.
			within := s.Method == "dupont"
			if within && s.ExposureCorrelation > 0 {
				st.notes = append(st.notes, "The sets are simulated as Dupont's formula reads them: the number of exposed members of a set from the correlated exposures, and the case's share of them from the odds ratio within the set.")
			}
			m, err := power.NewMatchedSim(power.MatchedSim{MatchedSets: power.MatchedSets{ControlExposure: e.p2, OddsRatio: psi,
				Controls: s.Controls, Correlation: s.ExposureCorrelation}, WithinSets: within, Sets: n1, Alpha: e.alpha, Sides: sides, Dir: dir})
			if err != nil {
				return unavailable(err.Error())
			}
			st.model = m
			return st, nil
		}
		p1, p2 := e.p1, e.p2
		if s.Hypothesis != "superiority" {
			d0 := s.Margin
			if s.HigherIsBetter {
				d0 = -s.Margin
			}
			mm := power.FarringtonManning
			if s.Test == "z-unpooled" {
				mm = power.Blackwelder
			}
			if float64(n1+1)*float64(n2+1) > power.MaxTableCells {
				return unavailable(fmt.Sprintf("the %s test's table for %d and %d is too large to build; at these sizes the closed form's normal approximation is accurate", s.Test, n1, n2))
			}
			var table []bool
			ratio := s.MarginScale == "ratio"
			switch {
			case ratio && s.Hypothesis == "equivalence":
				table = power.RatioEquivalenceRejectionTable(n1, n2, s.Margin, e.alpha)
				if null {
					p1 = p2 * s.Margin
				}
			case ratio:
				table = power.RatioMarginRejectionTable(n1, n2, s.Margin, e.alpha)
				if null {
					p1 = p2 * s.Margin
				}
			case s.Hypothesis == "equivalence":
				table = power.EquivalenceRejectionTable(mm, n1, n2, s.Margin, e.alpha)
				if null {
					p1 = p2 + s.Margin
				}
			default:
				table = power.MarginRejectionTable(mm, n1, n2, d0, e.alpha)
				if null {
					p1 = p2 + d0
				}
			}
			if !(p1 > 0 && p1 < 1) {
				return unavailable(fmt.Sprintf("the null at the margin puts the first group's risk at %.4g, outside (0, 1)", p1))
			}
			st.model = power.NewTableBinomials(n1, n2, p1, p2, table)
			return st, nil
		}
		if null {
			p1 = p2
			st.null = fmt.Sprintf("no difference (both risks %s)", trimFloat(p2))
		}
		if s.Cluster != nil {
			clusterNotes(s, &st, mem)
			st.model = power.NewClusterBinary(power.ClusterBinary{K1: ec.clusterK[0], K2: ec.clusterK[1], M: mem,
				P1: p1, P2: p2, ICC: s.Cluster.ICC, Alpha: e.alpha, Sides: sides, Dir: dir})
			return st, nil
		}
		test, ok := power.ParseBinaryTest(s.Test)
		if !ok {
			return unavailable("test " + s.Test + " has no simulation")
		}
		if power.TooLargeForTable(test, n1, n2) {
			return unavailable(fmt.Sprintf("Fisher's exact test at %d and %d is too large to simulate; at these sizes it agrees closely with chi-square-yates (--set test=chi-square-yates)", n1, n2))
		}
		st.model = power.NewTwoBinomials(power.TwoBinomials{N1: n1, N2: n2, P1: p1, P2: p2, Alpha: e.alpha, Sides: sides, Dir: dir, Test: test})
		return st, nil

	case "continuous":
		diff := e.diff
		bound := 0.0
		if s.Hypothesis == "non-inferiority" {
			sides, dir = 1, 1
			bound = -s.Margin
			if !s.HigherIsBetter {
				dir, bound = -1, s.Margin
			}
		} else if s.Sides != 1 && diff < 0 {
			dir = -1
		}
		if null {
			diff = bound
		}
		if s.BaselineCorrelation > 0 {
			st.notes = append(st.notes, "The analysis of covariance is simulated through its residual standard deviation, sd × √(1 − ρ²).")
		}
		switch {
		case s.Pairing == "paired":
			st.model = power.NewPairedMeans(power.PairedMeans{N: n1, Diff: diff, SD: s.SD1, Alpha: e.alpha, Sides: sides, Dir: dir, Bound: bound})
		case s.Pairing == "crossover":
			// The period differences of the two sequences have means ±Δ
			// (plus a common period effect) and SD sd_difference; the
			// treatment effect is half their difference.
			st.model = power.NewTwoMeans(power.TwoMeans{N1: n1, N2: n2, Diff: diff, SD1: s.SD1 / 2, Alpha: e.alpha, Sides: sides, Dir: dir, Bound: bound})
		case s.Cluster != nil:
			clusterNotes(s, &st, mem)
			st.model = power.NewClusterMeans(power.ClusterMeans{K1: ec.clusterK[0], K2: ec.clusterK[1], M: mem, Diff: diff,
				SD: s.SD1, ICC: s.Cluster.ICC, Alpha: e.alpha, Sides: sides, Dir: dir})
		default:
			st.model = power.NewTwoMeans(power.TwoMeans{N1: n1, N2: n2, Diff: diff, SD1: s.SD1, SD2: s.SD2,
				Welch: s.Test == "t-welch", Alpha: e.alpha, Sides: sides, Dir: dir, Bound: bound})
		}
		return st, nil

	case "rate":
		rr := e.rr
		if s.Sides != 1 && rr < 1 {
			dir = -1
		}
		if null {
			rr = 1
			st.null = fmt.Sprintf("no difference (a rate ratio of 1, both rates %s)", trimFloat(s.UnexposedRate))
		}
		if s.Overdispersion > 0 {
			if n1 < 2 || n2 < 2 {
				return unavailable("negative-binomial counts need at least two participants a group to estimate the overdispersion")
			}
			st.notes = append(st.notes, "Each participant's count is negative binomial; the Wald test uses the groups' means and a pooled moment estimate of the overdispersion.")
		}
		st.model = power.NewRateSim(power.RateSim{TwoRates: power.TwoRates{UnexposedRate: s.UnexposedRate, RateRatio: rr,
			PersonTime: s.PersonTime, Overdispersion: s.Overdispersion}, N1: n1, N2: n2, Alpha: e.alpha, Sides: sides, Dir: dir})
		return st, nil

	case "time-to-event":
		// Each arm is simulated as a mixture of those receiving the
		// intervention (hazard HR·h) and those not (hazard h).
		hr := e.plannedHR
		if s.Sides != 1 && e.hr < 1 {
			dir = -1
		}
		sim := power.SurvivalSim{N1: n1, N2: n2, Cross1: s.NonAdherence, Cross2: s.Contamination,
			Entry: power.Entry{Accrual: s.Accrual, FollowUp: s.FollowUp, Dropout: power.DropoutHazard(s.Dropout)},
			Alpha: e.alpha, Sides: sides, Dir: dir}
		switch s.Hypothesis {
		case "non-inferiority", "equivalence":
			sim.Sides, sim.Dir, sim.Margin = 1, 0, s.Margin
			sim.Equivalence = s.Hypothesis == "equivalence"
			if null {
				// The null at the margin: the diluted hazard ratio equals it.
				hr = math.Exp(math.Log(s.Margin) / (1 - s.NonAdherence - s.Contamination))
				st.null = fmt.Sprintf("a hazard ratio at the margin (%s)", trimFloat(s.Margin))
			}
			st.notes = append(st.notes, "The margin test is simulated on the log-rank statistic with Peto's estimate of the log hazard ratio, (O − E)/V, against the log margin.")
		default:
			if null {
				hr = 1
			}
		}
		if e.diluted {
			st.notes = append(st.notes, "Non-adherence and contamination are simulated participant by participant: each crosses to the other arm's hazard with the probability given.")
		}
		sim.H1, sim.H2 = hr*s.ControlHazard, s.ControlHazard
		st.model = power.NewSurvivalSim(sim)
		return st, nil
	}
	return unavailable("this outcome is not simulated")
}

// maxClusterProduct bounds 2·K1·K2·max(K1, K2)·M² for a binary cluster
// simulation: [power.NewClusterBinary] works on whole counts, and its sums
// of squares stay exact in 64-bit integers only below 2⁶² (it panics at
// or above it). The check here comes first, so that such a plan is refused
// as input, naming the limit, before the model is built.
const maxClusterProduct = 1 << 62

// clusterCountsFit reports whether k1 and k2 clusters of m members stay
// within the whole-number arithmetic of the binary cluster model, in the
// very expression [power.NewClusterBinary] checks.
func clusterCountsFit(k1, k2, m int) bool {
	a, b := float64(k1), float64(k2)
	return 2*a*b*math.Max(a, b)*float64(m)*float64(m) < maxClusterProduct
}

// clusterCountsTooLarge says why k1 and k2 clusters of m members are not
// simulated, with the most clusters per arm that clusters of m allow.
func clusterCountsTooLarge(k1, k2, m int) string {
	most := int(math.Cbrt(maxClusterProduct / (2 * float64(m) * float64(m))))
	for most > 2 && !clusterCountsFit(most, most, m) {
		most--
	}
	for clusterCountsFit(most+1, most+1, m) {
		most++
	}
	here := 2 * float64(k1) * float64(k2) * float64(max(k1, k2)) * float64(m) * float64(m)
	return fmt.Sprintf("%d and %d clusters of %d analysable members are too many to simulate: the cluster t test is simulated on whole counts, which needs 2 × K1 × K2 × max(K1, K2) × M² below 2^62 (about 4.6e18), and here it is %s; allowed: at most %d clusters per arm of %d members (smaller clusters allow more), or the closed form alone, whose large-sample approximation is accurate with this many clusters",
		k1, k2, m, strings.Replace(fmt.Sprintf("%.2g", here), "e+", "e", 1), most, m)
}

// clusterNotes records how the cluster model departs from the plan.
func clusterNotes(s *Spec, st *simSetup, mem int) {
	if float64(mem) != s.Cluster.Size*(1-s.Attrition) {
		st.notes = append(st.notes, fmt.Sprintf("Clusters are simulated with %d analysable members each (the mean size %g after attrition, rounded).", mem, s.Cluster.Size))
	}
	if s.Cluster.SizeCV > 0 {
		st.notes = append(st.notes, "Clusters are simulated with equal sizes; the closed form includes the inflation for unequal sizes, so it is the more conservative of the two.")
	}
}

// trimFloat formats a probability briefly: 0.2, 0.125.
func trimFloat(x float64) string { return fmt.Sprintf("%.4g", x) }

// adjustedModel simulates an analysis adjusted for covariates as a
// regression of the outcome on the exposure (the first group 1, the
// second 0) and one covariate Z whose R² with the exposure is the
// specification's: logistic for a binary outcome (the Wald test of the
// exposure's coefficient), linear for a continuous one (its t test). Z has
// no effect of its own on the outcome, which is the setting of the
// inflation 1/(1 − R²) (Hsieh, Bloch & Larsen 1998).
func adjustedModel(s *Spec, st simSetup, e effects, n1, n2 int, null bool, sides, dir int) (simSetup, error) {
	c := power.RegressionSim{Exposure: power.ExposureBinary, N1: n1, N2: n2, R2: s.AdjustR2, Alpha: e.alpha, Sides: sides}
	switch s.Outcome {
	case "continuous":
		c.Outcome, c.Effect, c.SD = power.OutcomeContinuous, e.diff, s.SD1
		if s.SD1 != s.SD2 {
			st.notes = append(st.notes, "The linear regression assumes one residual standard deviation; the larger of the two groups' is simulated.")
			c.SD = math.Max(s.SD1, s.SD2)
		}
	default:
		c.Outcome = power.OutcomeBinary
		c.Intercept = math.Log(e.p2 / (1 - e.p2))
		c.Effect = math.Log(power.OddsRatio(e.p1, e.p2))
	}
	regressionTest(s, &st, &c, null, "no difference (the exposure's coefficient 0)")
	st.notes = append(st.notes, fmt.Sprintf("The adjusted analysis is simulated as a regression on the exposure and one covariate whose R² with the exposure is %s, with no effect of its own on the outcome.", trimFloat(s.AdjustR2)))
	st.model = power.NewRegressionSim(c)
	return st, nil
}

// regressionTest sets the side a regression simulation's one-sided test
// looks (the specification's direction, else the effect's sign) and, under
// the null, no effect, which nullWords describes.
func regressionTest(s *Spec, st *simSetup, c *power.RegressionSim, null bool, nullWords string) {
	c.Dir = 1
	if s.Sides == 1 && s.Direction != 0 {
		c.Dir = s.Direction
	} else if c.Effect < 0 {
		c.Dir = -1
	}
	if null {
		c.Effect = 0
		st.null = nullWords
	}
}
