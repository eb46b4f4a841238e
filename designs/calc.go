package designs

import (
	"math"

	"enough/power"
)

// calculator answers the three questions of one method for one
// specification, at effective sizes (analysable / design effect).
type calculator interface {
	// nStar is the unrounded first-group size at the target power.
	nStar(target float64) (float64, error)
	// power at sizes n1 and n2.
	power(n1, n2 float64) float64
	// detect is the smallest effect detectable in direction dir, on the
	// scale of the specification's effect key, with its restatement.
	detect(n1, n2, target float64, dir int) (float64, *Effect, error)
}

// effects holds the planned effect after dilution by non-adherence and
// contamination (Lachin & Foulkes 1986, Biometrics 42:507–519).
type effects struct {
	p1, p2   float64 // binary
	diff     float64 // continuous
	hr       float64 // time-to-event
	diluted  bool
	alpha    float64 // per comparison (Bonferroni over the arms)
	clusterK [2]int  // clusters per arm, for a cluster-level t test (0: none)
}

// plannedEffects applies the dilution of an intention-to-treat analysis and
// the multiplicity correction.
func plannedEffects(s *Spec) effects {
	e := effects{p1: s.P1, p2: s.P2, diff: s.MeanDiff, hr: s.HazardRatio, alpha: s.Alpha}
	if s.NonAdherence > 0 || s.Contamination > 0 {
		e.diluted = true
		na, c := s.NonAdherence, s.Contamination
		factor := 1 - na - c
		e.p1 = (1-na)*s.P1 + na*s.P2
		e.p2 = (1-c)*s.P2 + c*s.P1
		e.diff = s.MeanDiff * factor
		if s.HazardRatio > 0 {
			e.hr = math.Exp(math.Log(s.HazardRatio) * factor)
		}
	}
	if k := comparisons(s); k > 1 {
		e.alpha = s.Alpha / float64(k)
	}
	return e
}

// comparisons is the number of pairwise comparisons among the arms.
func comparisons(s *Spec) int {
	if s.Arms <= 2 {
		return 1
	}
	if s.Comparisons == "all-pairs" {
		return s.Arms * (s.Arms - 1) / 2
	}
	return s.Arms - 1
}

// newCalculator builds the calculator of method m for the specification.
func newCalculator(s *Spec, m *MethodInfo, e effects) calculator {
	switch {
	case s.Outcome == "continuous":
		mm := m.means
		if e.clusterK[0] > 0 {
			// The cluster-level analysis is a t test whatever the method.
			mm = power.T
		}
		return meansCalc{s: s, m: mm, mc: meanComparison(s, e)}
	case s.Outcome == "time-to-event":
		return survivalCalc{s: s, m: m.events, e: e}
	case m.margin != 0:
		return marginCalc{s: s, m: m.margin, e: e}
	}
	return binaryCalc{s: s, m: m.engine, e: e}
}

// binaryCalc serves the superiority methods for two risks.
type binaryCalc struct {
	s *Spec
	m power.Method
	e effects
}

func (c binaryCalc) tp() power.TwoProportions {
	return power.TwoProportions{P1: c.e.p1, P2: c.e.p2, Alpha: c.e.alpha, Sides: c.s.Sides}
}

func (c binaryCalc) nStar(target float64) (float64, error) { return c.m.N(c.tp(), c.s.Ratio, target) }

func (c binaryCalc) power(n1, n2 float64) float64 {
	if c.e.clusterK[0] > 0 {
		return clusterTBinary(c.e, c.s.Sides, n1, n2)
	}
	return c.m.Power(c.tp(), n1, n2)
}

func (c binaryCalc) detect(n1, n2, target float64, dir int) (float64, *Effect, error) {
	p1, err := c.m.Detectable(c.tp(), n1, n2, target, dir)
	if err != nil {
		return math.NaN(), nil, err
	}
	return scaleValue(c.s.EffectKey, p1, c.s.P2), effectOf(c.s.Design, p1, c.s.P2), nil
}

// clusterTBinary is the power of a t test on cluster proportions with
// k1 + k2 − 2 degrees of freedom, at effective sizes n1 and n2.
func clusterTBinary(e effects, sides int, n1, n2 float64) float64 {
	se := math.Sqrt(e.p1*(1-e.p1)/n1 + e.p2*(1-e.p2)/n2)
	return power.TTestPower(math.Abs(e.p1-e.p2)/se, float64(e.clusterK[0]+e.clusterK[1]-2), e.alpha, sides)
}

// marginCalc serves non-inferiority and equivalence for two risks.
type marginCalc struct {
	s *Spec
	m power.MarginMethod
	e effects
}

func (c marginCalc) d0() float64 {
	if c.s.HigherIsBetter {
		return -c.s.Margin
	}
	return c.s.Margin
}

func (c marginCalc) nStar(target float64) (float64, error) {
	if c.s.Hypothesis == "equivalence" {
		return c.m.EquivalenceN(c.e.p1, c.e.p2, c.s.Ratio, c.s.Margin, c.e.alpha, target)
	}
	return c.m.NonInferiorityN(c.e.p1, c.e.p2, c.s.Ratio, c.d0(), c.e.alpha, target)
}

func (c marginCalc) power(n1, n2 float64) float64 {
	if c.s.Hypothesis == "equivalence" {
		return c.m.EquivalencePower(c.e.p1, c.e.p2, n1, n2, c.s.Margin, c.e.alpha)
	}
	return c.m.NonInferiorityPower(c.e.p1, c.e.p2, n1, n2, c.d0(), c.e.alpha)
}

func (c marginCalc) detect(float64, float64, float64, int) (float64, *Effect, error) {
	return math.NaN(), nil, power.ErrUnreachable
}

// meanComparison maps a continuous specification onto the engine.
func meanComparison(s *Spec, e effects) power.MeanComparison {
	mc := power.MeanComparison{Diff: e.diff, SD1: s.SD1, SD2: s.SD2, Alpha: e.alpha, Sides: s.Sides,
		Welch: s.Test == "t-welch"}
	switch s.Pairing {
	case "paired":
		mc.Layout = power.Paired
	case "crossover":
		mc.Layout = power.Crossover
	}
	switch s.Hypothesis {
	case "non-inferiority":
		mc.Hypothesis = power.NonInferiority
		mc.Bound = s.Margin
		if s.HigherIsBetter {
			mc.Bound = -s.Margin
		}
	case "equivalence":
		mc.Hypothesis, mc.Bound = power.Equivalence, s.Margin
	}
	if e.clusterK[0] > 0 {
		mc.DF = float64(e.clusterK[0] + e.clusterK[1] - 2)
	}
	return mc
}

// meansCalc serves the z and t methods.
type meansCalc struct {
	s  *Spec
	m  power.MeansMethod
	mc power.MeanComparison
}

func (c meansCalc) nStar(target float64) (float64, error) { return c.m.N(c.mc, c.s.Ratio, target) }

func (c meansCalc) power(n1, n2 float64) float64 { return c.m.Power(c.mc, n1, n2) }

func (c meansCalc) detect(n1, n2, target float64, dir int) (float64, *Effect, error) {
	d, err := c.m.DetectableDiff(c.mc, n1, n2, target, dir)
	if err != nil {
		return math.NaN(), nil, err
	}
	return d, meansEffect(c.s, d), nil
}

// meansEffect restates a mean difference, also in standard deviations of
// the outcome as given (Cohen's d; for paired and crossover designs, in SDs
// of the within-participant difference, d_z).
func meansEffect(s *Spec, d float64) *Effect {
	sd := math.Sqrt((s.RawSD1*s.RawSD1 + s.RawSD2*s.RawSD2) / 2)
	if s.Pairing != "" {
		sd = s.SD1
	}
	return &Effect{MeanDifference: ptr(d), StandardizedDifference: ptr(d / sd)}
}

// survivalCalc serves the events methods, converting events to
// participants through each arm's probability of an observed event.
type survivalCalc struct {
	s *Spec
	m power.EventsMethod
	e effects
}

func (c survivalCalc) entry() power.Entry {
	return power.Entry{Accrual: c.s.Accrual, FollowUp: c.s.FollowUp, Dropout: power.DropoutHazard(c.s.Dropout)}
}

// probabilities returns the probability of an observed event in each arm.
func (c survivalCalc) probabilities(hr float64) (float64, float64) {
	en := c.entry()
	return power.EventProbability(hr*c.s.ControlHazard, en), power.EventProbability(c.s.ControlHazard, en)
}

func (c survivalCalc) events(target float64) (float64, error) {
	return c.m.Events(c.e.hr, c.s.Ratio, c.e.alpha, c.s.Sides, target)
}

func (c survivalCalc) nStar(target float64) (float64, error) {
	d, err := c.events(target)
	if err != nil {
		return math.NaN(), err
	}
	p1, p2 := c.probabilities(c.e.hr)
	r := c.s.Ratio
	// The whole number of events required, then participants to expect
	// them: ceil(D) = n1 P1 + r n1 P2.
	return float64(ceilTol(d)) / (p1 + r*p2), nil
}

func (c survivalCalc) expectedEvents(n1, n2 float64) float64 {
	p1, p2 := c.probabilities(c.e.hr)
	return n1*p1 + n2*p2
}

func (c survivalCalc) power(n1, n2 float64) float64 {
	return c.m.EventsPower(c.e.hr, n2/n1, c.e.alpha, c.s.Sides, c.expectedEvents(n1, n2))
}

func (c survivalCalc) detect(n1, n2, target float64, dir int) (float64, *Effect, error) {
	hr, err := c.m.DetectableHazardRatio(c.s.ControlHazard, c.entry(), n1, n2, c.e.alpha, c.s.Sides, target, dir)
	if err != nil {
		return math.NaN(), nil, err
	}
	return hr, &Effect{HazardRatio: ptr(hr)}, nil
}
