package designs

import (
	"fmt"
	"math"

	"enough/power"
)

// calculator answers two questions of one method for one specification,
// at effective sizes (analysable / design effect): the size for a target
// power, and the power at given sizes. The third question, the smallest
// detectable effect, is answered for every method alike by searching the
// effect at which power reaches the target (see detectEffect), so that the
// three answers can never disagree.
//
// It is one of the method families' calculators (binaryCalc, marginCalc,
// meansCalc, survivalCalc), held by value rather than behind an interface:
// a sweep builds one for each of its points, and a search for the
// detectable effect one at each step, without allocating.
type calculator struct {
	kind calcKind
	s    *Spec
	id   string
	// method is the family's method: a power.Method, power.MarginMethod,
	// power.MeansMethod or power.EventsMethod.
	method int
	e      effects              // binary, margin and survival
	mc     power.MeanComparison // means
}

// calcKind names a method family's calculator.
type calcKind uint8

const (
	calcBinary calcKind = iota
	calcMargin
	calcMeans
	calcSurvival
	calcMatched
	calcRate
	calcLogistic
)

// The method families' calculators are the calculator under other names,
// so that dispatching to one is a conversion of its pointer.
type (
	// binaryCalc serves the superiority methods for two risks.
	binaryCalc calculator
	// marginCalc serves non-inferiority and equivalence for two risks, on
	// the difference or the ratio scale.
	marginCalc calculator
	// meansCalc serves the z and t methods.
	meansCalc calculator
	// survivalCalc serves the events methods, converting events to
	// participants through each arm's probability of an observed event.
	survivalCalc calculator
	// matchedCalc serves matched case-control sets: its sizes are sets
	// (cases), the controls following from the controls per case.
	matchedCalc calculator
	// rateCalc serves events over person-time: the Wald test on the log
	// rate ratio.
	rateCalc calculator
	// logisticCalc serves a binary outcome and a continuous exposure: one
	// group, everyone.
	logisticCalc calculator
)

// survival returns the survival calculator, when c is one.
func (c *calculator) survival() (*survivalCalc, bool) {
	return (*survivalCalc)(c), c.kind == calcSurvival
}

// nStar is the unrounded first-group size at the target power; it records
// its steps on tr. With an adjustment for covariates, the method's size is
// inflated by 1/(1 − R²) (Hsieh, Bloch & Larsen 1998, Stat Med
// 17:1623–1634):
//
//	n* = n*_unadjusted / (1 − R²)
//
// With interim analyses (the interim block), the fixed-sample n* is
// multiplied by the group-sequential design's inflation factor R for the
// target power (Jennison & Turnbull 2000, section 2.3); a time-to-event
// plan inflates its events instead (survivalCalc.nStar).
func (c *calculator) nStar(target float64, tr *trail) (float64, error) {
	n, err := c.methodNStar(target, tr)
	if err != nil {
		return n, err
	}
	if c.s.Adjusted {
		tr.rename("n_star", "n_star_unadjusted")
		n = tr.add("n_star", "n_star_unadjusted / (1 − r_squared): the inflation for the adjustment (Hsieh, Bloch & Larsen 1998)",
			n/(1-c.s.AdjustR2), in("n_star_unadjusted", n), in("r_squared", c.s.AdjustR2))
	}
	if c.s.Interim != nil && c.kind != calcSurvival {
		r, err := c.inflation(target, tr)
		if err != nil {
			return math.NaN(), err
		}
		tr.rename("n_star", "n_star_fixed")
		n = tr.add("n_star", "n_star_fixed × inflation: the maximum size of the group-sequential design",
			n*r, in("n_star_fixed", n), in("inflation", r))
	}
	return n, nil
}

// inflation records and returns the inflation factor of the interim
// block for the target power, at each comparison's alpha.
func (c *calculator) inflation(target float64, tr *trail) (float64, error) {
	iv := c.s.Interim
	r, err := iv.Inflation(c.e.alpha, c.s.Sides, target)
	if err != nil {
		return math.NaN(), err
	}
	return tr.add("inflation", fmt.Sprintf("the maximum-information inflation factor R = (θ / (z_α + z_β))² of %d looks at information %s with %s boundaries, θ the drift at which the boundaries are crossed on the side of the effect with the target power (Armitage, McPherson & Rowe 1969; Jennison & Turnbull 2000, chapter 19)", iv.Looks, iv.TimingWords(), iv.BoundaryWords()),
		r, alphaInput(c.s, c.e), inInt("sides", c.s.Sides), in("target_power", target), inInt("looks", iv.Looks)), nil
}

// methodNStar is the method's own n*, before any adjustment.
func (c *calculator) methodNStar(target float64, tr *trail) (float64, error) {
	switch c.kind {
	case calcMargin:
		return (*marginCalc)(c).nStar(target, tr)
	case calcMeans:
		return (*meansCalc)(c).nStar(target, tr)
	case calcSurvival:
		return (*survivalCalc)(c).nStar(target, tr)
	case calcMatched:
		return (*matchedCalc)(c).nStar(target, tr)
	case calcRate:
		return (*rateCalc)(c).nStar(target, tr)
	case calcLogistic:
		return (*logisticCalc)(c).nStar(target, tr)
	}
	return (*binaryCalc)(c).nStar(target, tr)
}

// power is the power at effective sizes n1 and n2: with an adjustment for
// covariates, the method's power at n × (1 − R²), the information an
// adjusted estimate keeps (the inverse of nStar's inflation).
func (c *calculator) power(n1, n2 float64) float64 {
	p := c.fixedPower(n1, n2)
	if c.s.Interim != nil {
		return c.s.Interim.sequentialPower(p, c.e.alpha, c.s.Sides)
	}
	return p
}

// fixedPower is the power of the fixed-sample design at effective sizes
// n1 and n2 (see power).
func (c *calculator) fixedPower(n1, n2 float64) float64 {
	if c.s.Adjusted {
		f := 1 - c.s.AdjustR2
		n1, n2 = n1*f, n2*f
	}
	switch c.kind {
	case calcMargin:
		return (*marginCalc)(c).power(n1, n2)
	case calcMeans:
		return (*meansCalc)(c).power(n1, n2)
	case calcSurvival:
		return (*survivalCalc)(c).power(n1, n2)
	case calcMatched:
		return (*matchedCalc)(c).power(n1, n2)
	case calcRate:
		return (*rateCalc)(c).rates().Power(n1, n2, c.e.alpha, c.s.Sides)
	case calcLogistic:
		return power.HsiehPower(n1, c.s.EventRate, math.Log(c.e.orsd), c.e.alpha, c.s.Sides)
	}
	return (*binaryCalc)(c).power(n1, n2)
}

// powerName names the power computation in the steps.
func (c *calculator) powerName() string {
	name := c.fixedPowerName()
	if c.s.Interim != nil {
		name = "the group-sequential power: the probability of crossing a boundary on the side of the effect at drift θ = z_α + Φ⁻¹(p), p " + name + " with no interim look (recursive integration, Jennison & Turnbull 2000, chapter 19)"
	}
	return name
}

// fixedPowerName names the power of the fixed-sample design (no interim
// look) in the steps.
func (c *calculator) fixedPowerName() string {
	name := c.methodPowerName()
	if c.s.Adjusted {
		name += ", at each size × (1 − r_squared) for the adjustment"
	}
	return name
}

// methodPowerName names the method's own power computation.
func (c *calculator) methodPowerName() string {
	switch c.kind {
	case calcMargin:
		return (*marginCalc)(c).powerName()
	case calcMeans:
		return (*meansCalc)(c).powerName()
	case calcSurvival:
		return (*survivalCalc)(c).powerName()
	case calcMatched, calcRate, calcLogistic:
		return "the power from " + MethodByID(c.id).Name
	}
	return (*binaryCalc)(c).powerName()
}

// params names the values, other than the sizes, that the size and power
// computations use, for the steps.
func (c *calculator) params() []Input {
	var ins []Input
	switch c.kind {
	case calcMargin:
		ins = (*marginCalc)(c).params()
	case calcMeans:
		ins = (*meansCalc)(c).params()
	case calcSurvival:
		ins = (*survivalCalc)(c).params()
	case calcMatched:
		ins = (*matchedCalc)(c).params()
	case calcRate:
		ins = (*rateCalc)(c).params()
	case calcLogistic:
		ins = []Input{in("event_rate", c.s.EventRate), in("odds_ratio_per_sd", c.e.orsd), alphaInput(c.s, c.e), inInt("sides", c.s.Sides)}
	default:
		ins = (*binaryCalc)(c).params()
	}
	if c.s.Adjusted {
		ins = append(ins, in("r_squared", c.s.AdjustR2))
	}
	return ins
}

// effects holds the effect an analysis sees: the planned (undiluted) effect
// diluted by non-adherence and contamination (Lachin & Foulkes 1986,
// Biometrics 42:507–519), and the alpha of each comparison.
type effects struct {
	p1, p2    float64 // binary: the risks an intention-to-treat analysis sees
	diff      float64 // continuous: the diluted difference in means
	hr        float64 // time-to-event: the diluted hazard ratio
	rr        float64 // person-time: the rate ratio
	orsd      float64 // a continuous exposure: the odds ratio per SD
	plannedHR float64 // time-to-event: the hazard ratio of receiving the intervention
	na, c     float64 // non-adherence and contamination
	diluted   bool
	alpha     float64 // per comparison (Bonferroni over the arms)
	clusterK  [2]int  // clusters per arm, for a cluster-level t test (0: none)
}

// plannedEffects applies the dilution of an intention-to-treat analysis and
// the multiplicity correction to the specification's effect.
func plannedEffects(s *Spec) effects {
	e := effectsAt(s, s.P1, s.MeanDiff, s.HazardRatio)
	e.rr, e.orsd = s.RateRatio, s.ORPerSD
	return e
}

// effectsAt is plannedEffects for another undiluted effect: the first
// group's risk p1, the difference in means diff or the hazard ratio hr
// (the second group's risk and everything else as specified).
//
//	p1′ = (1 − na) p1 + na p2,  p2′ = (1 − c) p2 + c p1
//	Δ′ = (1 − na − c) Δ,  ln HR′ = (1 − na − c) ln HR
func effectsAt(s *Spec, p1, diff, hr float64) effects {
	e := effects{p1: p1, p2: s.P2, diff: diff, hr: hr, plannedHR: hr, alpha: s.Alpha}
	if s.NonAdherence > 0 || s.Contamination > 0 {
		e.diluted = true
		na, c := s.NonAdherence, s.Contamination
		e.na, e.c = na, c
		factor := 1 - na - c
		e.p1 = (1-na)*p1 + na*s.P2
		e.p2 = (1-c)*s.P2 + c*p1
		e.diff = diff * factor
		if hr > 0 {
			e.hr = math.Exp(math.Log(hr) * factor)
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
		return calculator{kind: calcMeans, s: s, id: m.ID, method: int(mm), mc: meanComparison(s, e), e: e}
	case s.Outcome == "time-to-event":
		return calculator{kind: calcSurvival, s: s, id: m.ID, method: int(m.events), e: e}
	case s.Outcome == "rate":
		return calculator{kind: calcRate, s: s, id: m.ID, e: e}
	case s.ContinuousExposure:
		return calculator{kind: calcLogistic, s: s, id: m.ID, e: e}
	case m.margin != 0:
		return calculator{kind: calcMargin, s: s, id: m.ID, method: int(m.margin), e: e}
	case s.Matched:
		return calculator{kind: calcMatched, s: s, id: m.ID, e: e}
	}
	return calculator{kind: calcBinary, s: s, id: m.ID, method: int(m.engine), e: e}
}

// alphaInput names the alpha of one comparison for the steps.
func alphaInput(s *Spec, e effects) Input {
	if comparisons(s) > 1 {
		return in("alpha_per_comparison", e.alpha)
	}
	return in("alpha", e.alpha)
}

// riskInputs names the risks a binary calculation uses.
func riskInputs(e effects) []Input {
	if e.diluted {
		return []Input{in("diluted_first_risk", e.p1), in("diluted_second_risk", e.p2)}
	}
	return []Input{in("first_risk", e.p1), in("second_risk", e.p2)}
}

func (c *binaryCalc) tp() power.TwoProportions {
	return power.TwoProportions{P1: c.e.p1, P2: c.e.p2, Alpha: c.e.alpha, Sides: c.s.Sides}
}

func (c *binaryCalc) nStar(target float64, tr *trail) (float64, error) {
	n, err := power.Method(c.method).N(c.tp(), c.s.Ratio, target)
	if err == nil && tr != nil {
		ins := append(c.params(), in("target_power", target), in("ratio", c.s.Ratio))
		tr.add("n_star", fmt.Sprintf("the unrounded size of the first group from %s", MethodByID(c.id).Name), n, ins...)
	}
	return n, err
}

func (c *binaryCalc) params() []Input {
	return append(riskInputs(c.e), alphaInput(c.s, c.e), inInt("sides", c.s.Sides))
}

func (c *binaryCalc) power(n1, n2 float64) float64 {
	if c.e.clusterK[0] > 0 {
		return clusterTBinary(c.e, c.s.Sides, n1, n2)
	}
	return power.Method(c.method).Power(c.tp(), n1, n2)
}

func (c *binaryCalc) powerName() string {
	if c.e.clusterK[0] > 0 {
		return "the power of a t test on cluster proportions with clusters_first + clusters_second − 2 degrees of freedom"
	}
	return "the power from " + MethodByID(c.id).Name
}

// clusterTBinary is the power of a t test on cluster proportions with
// k1 + k2 − 2 degrees of freedom, at effective sizes n1 and n2.
func clusterTBinary(e effects, sides int, n1, n2 float64) float64 {
	se := math.Sqrt(e.p1*(1-e.p1)/n1 + e.p2*(1-e.p2)/n2)
	return power.TTestPower(math.Abs(e.p1-e.p2)/se, float64(e.clusterK[0]+e.clusterK[1]-2), e.alpha, sides)
}

// d0 is the margin as a signed difference p1 − p2 under the null.
func (c *marginCalc) d0() float64 {
	if c.s.HigherIsBetter {
		return -c.s.Margin
	}
	return c.s.Margin
}

func (c *marginCalc) ratio() bool { return c.s.MarginScale == "ratio" }

func (c *marginCalc) nStar(target float64, tr *trail) (float64, error) {
	var n float64
	var err error
	switch {
	case c.ratio() && c.s.Hypothesis == "equivalence":
		n, err = power.RatioEquivalenceN(c.e.p1, c.e.p2, c.s.Ratio, c.s.Margin, c.e.alpha, target)
	case c.ratio():
		n, err = power.RatioNonInferiorityN(c.e.p1, c.e.p2, c.s.Ratio, c.s.Margin, c.e.alpha, target)
	case c.s.Hypothesis == "equivalence":
		n, err = power.MarginMethod(c.method).EquivalenceN(c.e.p1, c.e.p2, c.s.Ratio, c.s.Margin, c.e.alpha, target)
	default:
		n, err = power.MarginMethod(c.method).NonInferiorityN(c.e.p1, c.e.p2, c.s.Ratio, c.d0(), c.e.alpha, target)
	}
	if err == nil && tr != nil {
		ins := append(c.params(), in("target_power", target), in("ratio", c.s.Ratio))
		rule := fmt.Sprintf("the unrounded size of the first group from %s (%s, margin on the %s scale)", MethodByID(c.id).Name, c.s.Hypothesis, c.s.MarginScale)
		if !c.ratio() && c.s.Hypothesis == "non-inferiority" {
			rule += "; null_difference is the first risk minus the second under the null: −margin when higher is better, +margin otherwise"
		}
		tr.add("n_star", rule, n, ins...)
	}
	return n, err
}

func (c *marginCalc) params() []Input {
	margin := in("margin", c.s.Margin)
	if !c.ratio() && c.s.Hypothesis == "non-inferiority" {
		margin = in("null_difference", c.d0())
	}
	return append(riskInputs(c.e), margin, alphaInput(c.s, c.e))
}

func (c *marginCalc) power(n1, n2 float64) float64 {
	if c.e.clusterK[0] > 0 {
		// A t test of the cluster proportions against the margin, on
		// k1 + k2 − 2 degrees of freedom, with each arm's binomial
		// variance (difference scale; ratio margins with clusters are
		// refused).
		p1, p2 := c.e.p1, c.e.p2
		mc := power.MeanComparison{Diff: p1 - p2, SD1: math.Sqrt(p1 * (1 - p1)), SD2: math.Sqrt(p2 * (1 - p2)),
			Alpha: c.e.alpha, Sides: 1, Welch: true, DF: float64(c.e.clusterK[0] + c.e.clusterK[1] - 2)}
		if c.s.Hypothesis == "equivalence" {
			mc.Hypothesis, mc.Bound = power.Equivalence, c.s.Margin
		} else {
			mc.Hypothesis, mc.Bound = power.NonInferiority, c.d0()
		}
		return power.T.Power(mc, n1, n2)
	}
	switch {
	case c.ratio() && c.s.Hypothesis == "equivalence":
		return power.RatioEquivalencePower(c.e.p1, c.e.p2, n1, n2, c.s.Margin, c.e.alpha)
	case c.ratio():
		return power.RatioNonInferiorityPower(c.e.p1, c.e.p2, n1, n2, c.s.Margin, c.e.alpha)
	case c.s.Hypothesis == "equivalence":
		return power.MarginMethod(c.method).EquivalencePower(c.e.p1, c.e.p2, n1, n2, c.s.Margin, c.e.alpha)
	}
	return power.MarginMethod(c.method).NonInferiorityPower(c.e.p1, c.e.p2, n1, n2, c.d0(), c.e.alpha)
}

func (c *marginCalc) powerName() string {
	if c.e.clusterK[0] > 0 {
		return "the power of a t test of the cluster proportions against the margin with clusters_first + clusters_second − 2 degrees of freedom"
	}
	return "the power from " + MethodByID(c.id).Name
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

func (c *meansCalc) nStar(target float64, tr *trail) (float64, error) {
	n, err := power.MeansMethod(c.method).N(c.mc, c.s.Ratio, target)
	if err == nil && tr != nil {
		ins := append(c.params(), in("target_power", target), in("ratio", c.s.Ratio))
		rule := fmt.Sprintf("the unrounded size of the first group from %s", MethodByID(c.id).Name)
		if c.s.Hypothesis == "non-inferiority" {
			rule += "; null_difference is the difference in means (first minus second) under the null: −margin when higher is better, +margin otherwise"
		}
		tr.add("n_star", rule, n, ins...)
	}
	return n, err
}

func (c *meansCalc) params() []Input {
	name := "difference"
	if c.s.NonAdherence > 0 || c.s.Contamination > 0 {
		name = "diluted_difference"
	}
	ins := append([]Input{in(name, c.mc.Diff)}, sdInputs(c.s)...)
	switch c.s.Hypothesis {
	case "non-inferiority":
		ins = append(ins, in("null_difference", c.mc.Bound))
	case "equivalence":
		ins = append(ins, in("margin", c.mc.Bound))
	}
	ins = append(ins, in("alpha", c.mc.Alpha))
	if c.s.Hypothesis == "superiority" {
		ins = append(ins, inInt("sides", c.mc.Sides))
	}
	return ins
}

func (c *meansCalc) power(n1, n2 float64) float64 {
	return power.MeansMethod(c.method).Power(c.mc, n1, n2)
}

func (c *meansCalc) powerName() string {
	if c.mc.DF > 0 {
		return "the power of a t test on cluster means with clusters_first + clusters_second − 2 degrees of freedom"
	}
	return "the power from " + MethodByID(c.id).Name
}

// sdNames names the standard deviations a continuous plan uses: the SD of
// the within-participant differences (paired, crossover), the residual SD
// after adjustment for the baseline, the common SD or each group's.
func sdNames(s *Spec) []string {
	prefix := ""
	if s.BaselineCorrelation > 0 {
		prefix = "residual_"
	}
	switch {
	case s.Pairing != "":
		return []string{"sd_difference"}
	case s.RawSD1 == s.RawSD2:
		return []string{prefix + "sd"}
	}
	return []string{prefix + "sd_first", prefix + "sd_second"}
}

// sdInputs names the standard deviations for the steps.
func sdInputs(s *Spec) []Input {
	names := sdNames(s)
	out := []Input{in(names[0], s.SD1)}
	if len(names) == 2 {
		out = append(out, in(names[1], s.SD2))
	}
	return out
}

// recordSDs records how the standard deviations were derived, when they
// were: the SD of a difference from the SD of one measurement, or a
// residual SD after adjustment for the baseline.
func recordSDs(s *Spec, tr *trail) {
	names := sdNames(s)
	switch {
	case s.Pairing != "" && s.WithinCorrelation != 0:
		tr.add("sd_difference", "sd × √(2 × (1 − within_correlation))", s.SD1, in("sd", s.RawSD1), in("within_correlation", s.WithinCorrelation))
	case s.BaselineCorrelation > 0:
		raw := []string{"sd", "sd_first", "sd_second"}
		for i, n := range names {
			k, v, sd := raw[0], s.RawSD1, s.SD1
			if len(names) == 2 {
				k = raw[1+i]
			}
			if i == 1 {
				v, sd = s.RawSD2, s.SD2
			}
			tr.add(n, k+" × √(1 − baseline_correlation²) (analysis of covariance; Borm, Fransen & Lemmens 2007)", sd, in(k, v), in("baseline_correlation", s.BaselineCorrelation))
		}
	}
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

func (c *survivalCalc) entry() power.Entry {
	return power.Entry{Accrual: c.s.Accrual, FollowUp: c.s.FollowUp, Dropout: power.DropoutHazard(c.s.Dropout)}
}

// probabilities returns the probability of an observed event in each arm.
// With non-adherence and contamination each arm is a mixture of those
// receiving the intervention (hazard HR·h) and those not (hazard h):
//
//	P1 = (1 − na) P(HR h) + na P(h),  P2 = (1 − c) P(h) + c P(HR h)
func (c *survivalCalc) probabilities() (float64, float64) {
	return c.probabilitiesAt(c.entry())
}

// probabilitiesAt is probabilities with recruitment and follow-up en.
func (c *survivalCalc) probabilitiesAt(en power.Entry) (float64, float64) {
	h := c.s.ControlHazard
	pi, pc := power.EventProbability(c.e.plannedHR*h, en), power.EventProbability(h, en)
	return (1-c.e.na)*pi + c.e.na*pc, (1-c.e.c)*pc + c.e.c*pi
}

// events is the unrounded number of events for the target power.
func (c *survivalCalc) events(target float64) (float64, error) {
	switch c.s.Hypothesis {
	case "non-inferiority":
		return power.EventsMethod(c.method).NonInferiorityEvents(c.e.hr, c.s.Margin, c.s.Ratio, c.e.alpha, target)
	case "equivalence":
		return power.EventsMethod(c.method).EquivalenceEvents(c.e.hr, c.s.Margin, c.s.Ratio, c.e.alpha, target)
	}
	return power.EventsMethod(c.method).Events(c.e.hr, c.s.Ratio, c.e.alpha, c.s.Sides, target)
}

// maxEvents is the events the plan needs at the target power: those of
// the method, times the inflation factor with interim analyses.
func (c *survivalCalc) maxEvents(target float64) (float64, error) {
	d, err := c.events(target)
	if err != nil || c.s.Interim == nil {
		return d, err
	}
	r, err := c.s.Interim.Inflation(c.e.alpha, c.s.Sides, target)
	return d * r, err
}

func (c *survivalCalc) nStar(target float64, tr *trail) (float64, error) {
	d, err := c.events(target)
	if err != nil {
		return math.NaN(), err
	}
	var ins []Input
	if tr != nil {
		ins = append(c.params(), in("target_power", target), in("ratio", c.s.Ratio))
	}
	tr.add("events_star", fmt.Sprintf("the unrounded number of events from %s", MethodByID(c.id).Name), d, ins...)
	if c.s.Interim != nil {
		r, err := (*calculator)(c).inflation(target, tr)
		if err != nil {
			return math.NaN(), err
		}
		tr.rename("events_star", "events_star_fixed")
		d = tr.add("events_star", "events_star_fixed × inflation: the events of the group-sequential design's last look", d*r, in("events_star_fixed", d), in("inflation", r))
	}
	tr.addInt("events", "ceil(events_star): the events to report", ceilTol(d), in("events_star", d))
	p1, p2 := c.probabilities()
	c.recordProbabilities(tr, p1, p2)
	r := c.s.Ratio
	// Participants whose expected events reach the events needed:
	// events_star = n1 P1 + r n1 P2. Converting the unrounded events keeps
	// the size the smallest whose power reaches the target, as solving
	// power computes it; the rounding up of the participants then brings
	// at least ceil(events_star) expected events in nearly every plan.
	return tr.add("n_star", "events_star / (event_probability_first + ratio × event_probability_second)",
		d/(p1+r*p2), in("events_star", d), in("event_probability_first", p1), in("event_probability_second", p2), in("ratio", r)), nil
}

func (c *survivalCalc) params() []Input {
	hrName := "hazard_ratio"
	if c.e.diluted {
		hrName = "diluted_hazard_ratio"
	}
	ins := []Input{in(hrName, c.e.hr)}
	if c.s.Hypothesis != "superiority" {
		ins = append(ins, in("margin", c.s.Margin))
	}
	ins = append(ins, alphaInput(c.s, c.e))
	if c.s.Hypothesis == "superiority" {
		ins = append(ins, inInt("sides", c.s.Sides))
	}
	return ins
}

// recordProbabilities records the event probabilities of both arms.
func (c *survivalCalc) recordProbabilities(tr *trail, p1, p2 float64) {
	rule := "the probability of an observed event under exponential survival with uniform entry over the accrual period, follow-up after the last entry and exponential dropout (Lachin & Foulkes 1986)"
	if c.e.diluted {
		rule += ", mixed over those receiving the intervention and those not"
	}
	if tr == nil {
		return
	}
	ins := []Input{in("control_hazard", c.s.ControlHazard), in("hazard_ratio", c.e.plannedHR), in("accrual", c.s.Accrual), in("follow_up", c.s.FollowUp), in("dropout", c.s.Dropout)}
	if c.e.diluted {
		ins = append(ins, in("non_adherence", c.e.na), in("contamination", c.e.c))
	}
	tr.add("event_probability_first", rule, p1, ins...)
	tr.add("event_probability_second", rule, p2, ins...)
}

func (c *survivalCalc) expectedEvents(n1, n2 float64) float64 {
	p1, p2 := c.probabilities()
	return n1*p1 + n2*p2
}

func (c *survivalCalc) power(n1, n2 float64) float64 {
	d := c.expectedEvents(n1, n2)
	switch c.s.Hypothesis {
	case "non-inferiority":
		return power.EventsMethod(c.method).NonInferiorityEventsPower(c.e.hr, c.s.Margin, n2/n1, c.e.alpha, d)
	case "equivalence":
		return power.EventsMethod(c.method).EquivalenceEventsPower(c.e.hr, c.s.Margin, n2/n1, c.e.alpha, d)
	}
	return power.EventsMethod(c.method).EventsPower(c.e.hr, n2/n1, c.e.alpha, c.s.Sides, d)
}

func (c *survivalCalc) powerName() string {
	return "the power from " + MethodByID(c.id).Name + " with the expected events"
}

// sets is the matched sets' model at the effect the calculator sees: the
// control exposure, the odds ratio of the case exposure against it, the
// controls per case and the correlation within sets (Dupont 1988).
func (c *matchedCalc) sets() power.MatchedSets {
	return power.MatchedSets{ControlExposure: c.e.p2, OddsRatio: power.OddsRatio(c.e.p1, c.e.p2),
		Controls: c.s.Controls, Correlation: c.s.ExposureCorrelation}
}

// nStar is the unrounded number of matched sets (cases): Dupont's for any
// number of controls per case, Connor's or Schlesselman's for pairs.
func (c *matchedCalc) nStar(target float64, tr *trail) (float64, error) {
	ms := c.sets()
	var n float64
	var err error
	switch c.id {
	case "connor":
		n, err = ms.ConnorPairs(c.e.alpha, c.s.Sides, target)
	case "schlesselman-pairs":
		n, _, err = ms.SchlesselmanPairs(c.e.alpha, c.s.Sides, target)
	default:
		n, err = ms.DupontSets(c.e.alpha, c.s.Sides, target)
	}
	if err == nil && tr != nil {
		ins := append(c.params(), in("target_power", target))
		tr.add("n_star", fmt.Sprintf("the unrounded number of matched sets (one case each) from %s", MethodByID(c.id).Name), n, ins...)
	}
	return n, err
}

// power is the power at n1 matched sets (n2, the controls, follows).
func (c *matchedCalc) power(n1, _ float64) float64 {
	ms := c.sets()
	var p float64
	var err error
	switch c.id {
	case "connor":
		p, err = ms.ConnorPower(n1, c.e.alpha, c.s.Sides)
	case "schlesselman-pairs":
		p = ms.SchlesselmanPower(n1, c.e.alpha, c.s.Sides)
	default:
		p, err = ms.DupontPower(n1, c.e.alpha, c.s.Sides)
	}
	if err != nil {
		// Exposures the correlation makes impossible: no power.
		return 0
	}
	return p
}

func (c *matchedCalc) params() []Input {
	return append(riskInputs(c.e), inInt("controls_per_case", c.s.Controls), in("exposure_correlation", c.s.ExposureCorrelation),
		alphaInput(c.s, c.e), inInt("sides", c.s.Sides))
}

// rates is the person-time model at the rate ratio the calculator sees.
func (c *rateCalc) rates() power.TwoRates {
	return power.TwoRates{UnexposedRate: c.s.UnexposedRate, RateRatio: c.e.rr, PersonTime: c.s.PersonTime, Overdispersion: c.s.Overdispersion}
}

// nStar is the unrounded size of the exposed group for the Wald test on
// the log rate ratio (Breslow & Day 1987; Zhu & Lakkis 2014).
func (c *rateCalc) nStar(target float64, tr *trail) (float64, error) {
	n, err := c.rates().N1(c.s.Ratio, c.e.alpha, c.s.Sides, target)
	if err == nil && tr != nil {
		ins := append(c.params(), in("target_power", target), in("ratio", c.s.Ratio))
		tr.add("n_star", fmt.Sprintf("the unrounded size of the first group from the %s", MethodByID(c.id).Name), n, ins...)
	}
	return n, err
}

func (c *rateCalc) params() []Input {
	ins := []Input{in("unexposed_rate", c.s.UnexposedRate), in("rate_ratio", c.e.rr), in("person_time", c.s.PersonTime)}
	if c.s.Overdispersion > 0 {
		ins = append(ins, in("overdispersion", c.s.Overdispersion))
	}
	return append(ins, alphaInput(c.s, c.e), inInt("sides", c.s.Sides))
}

// nStar is the unrounded number of participants for the Wald test of a
// continuous exposure's coefficient in a logistic regression (Hsieh,
// Bloch & Larsen 1998, eq. 1).
func (c *logisticCalc) nStar(target float64, tr *trail) (float64, error) {
	n, err := power.HsiehN(c.s.EventRate, math.Log(c.e.orsd), c.e.alpha, c.s.Sides, target)
	if err == nil && tr != nil {
		ins := []Input{in("event_rate", c.s.EventRate), in("odds_ratio_per_sd", c.e.orsd), alphaInput(c.s, c.e), inInt("sides", c.s.Sides), in("target_power", target)}
		tr.add("n_star", "the unrounded number of participants from "+MethodByID(c.id).Name, n, ins...)
	}
	return n, err
}
