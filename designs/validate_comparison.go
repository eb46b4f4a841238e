package designs

import (
	"fmt"
	"math"
	"strings"

	"gopkg.in/yaml.v3"
)

// testsFor lists the planned tests that suit an outcome and hypothesis.
func testsFor(s *Spec) []string {
	switch s.Outcome {
	case "continuous":
		if s.Pairing == "paired" {
			return []string{"t-paired"}
		}
		ts := []string{"t-student", "t-welch"}
		if s.Cluster != nil {
			ts = append(ts, "cluster-t")
		}
		return ts
	case "time-to-event":
		return []string{"log-rank"}
	}
	if s.Hypothesis != "superiority" {
		return []string{"score", "z-unpooled"}
	}
	ts := []string{"chi-square", "chi-square-yates", "fisher", "z-unpooled"}
	if s.Cluster != nil {
		ts = append(ts, "cluster-t")
	}
	return ts
}

// defaultTest is the planned test assumed unless `test:` says otherwise.
func defaultTest(s *Spec) string {
	switch {
	case s.Cluster != nil:
		return "cluster-t"
	case s.Pairing == "paired":
		return "t-paired"
	case s.Outcome == "continuous" && s.SD1 != s.SD2:
		return "t-welch"
	}
	return MethodByID(s.Method).DefaultTest
}

// boolean reads a true/false key.
func (r *reader) boolean(key string) (bool, *entry, error) {
	e := r.get(key)
	if e == nil {
		if raw := r.entries[key]; raw != nil {
			return false, raw, r.errAt(raw, "has no value; allowed: true or false")
		}
		return false, nil, nil
	}
	if e.node.Kind != yaml.ScalarNode || e.node.Tag != "!!bool" {
		return false, e, r.errAt(e, "%s is not true or false; allowed: true or false", show(e.node))
	}
	return e.node.Value == "true" || e.node.Value == "True" || e.node.Value == "TRUE", e, nil
}

// optNum reads an optional number checked by ok; def when absent.
func (r *reader) optNum(key string, def float64, ok func(float64) bool) (float64, *entry, error) {
	x, e, err := r.number(key)
	if err != nil || e == nil {
		return def, e, err
	}
	if !ok(x) {
		return 0, e, r.errAt(e, "%s is out of range; allowed: %s", e.node.Value, specKeys[key].allowed)
	}
	return x, e, nil
}

func (r *reader) buildComparison(s *Spec) error {
	ro := roles[s.Design]
	var err error

	// method (the test follows the outcome, so it is read last)
	var fits []string
	for _, m := range Methods {
		if m.serves(s.Design, s.Goal, s.Outcome, s.Hypothesis) {
			fits = append(fits, m.ID)
		}
	}
	def := fits[0]
	if s.Method, _, err = r.choice("method", def, fits...); err != nil {
		return r.methodError(s)
	}

	// alpha, sides
	defAlpha := 0.05
	if s.Hypothesis == "non-inferiority" {
		defAlpha = 0.025
	}
	if s.Alpha, err = r.rangeNum("alpha", defAlpha, func(x float64) bool { return x > 0 && x <= 0.5 }); err != nil {
		return err
	}
	sides, sde, err := r.whole("sides")
	if err != nil {
		return err
	}
	s.Sides = 2
	switch s.Hypothesis {
	case "non-inferiority":
		s.Sides = 1
		if sde != nil && sides != 1 {
			return r.errAt(sde, "%d is not allowed: a non-inferiority test is one-sided; allowed: 1 (give alpha as the one-sided level)", sides)
		}
	case "equivalence":
		s.Sides = 0
		if sde != nil {
			return r.errAt(sde, "does not apply to hypothesis equivalence: alpha is the level of each of the two one-sided tests; allowed: leave sides out")
		}
	default:
		if sde != nil {
			if sides != 1 && sides != 2 {
				return r.errAt(sde, "%d is not allowed; allowed: 1 or 2", sides)
			}
			s.Sides = sides
		}
	}

	// power
	pw, pe, err := r.number("power")
	if err != nil {
		return err
	}
	switch {
	case s.Solve == "power":
		if pe != nil {
			s.Ignored = append(s.Ignored, "power is ignored when solving power (the power is what is solved)")
		}
	case pe == nil:
		return r.errFile("power", "missing; required when solving %s: the target power, a number above alpha and below 1 (e.g. 0.8)", s.Solve)
	case !(pw > s.Alpha && pw < 1):
		if pw > 0 && pw <= s.Alpha {
			return r.errAt(pe, "%s is not above alpha (%g); allowed: a number above alpha and below 1", pe.node.Value, s.Alpha)
		}
		return r.errAt(pe, "%s is out of range; allowed: a number above alpha (%g) and below 1", pe.node.Value, s.Alpha)
	default:
		s.Power = pw
	}
	if s.Solve == "effect" && s.Hypothesis != "superiority" {
		return r.errAt(r.get("solve"), "effect is not available for hypothesis %s yet; allowed: n or power", s.Hypothesis)
	}

	// sizes and allocation
	if s.Solve != "n" {
		what := "the number enrolled in the " + orDefault(s.FirstGroup, ro.first)
		if s.Pairing == "paired" {
			what = "the number of pairs"
		}
		if err := r.size(s, ro.size, "required when solving "+s.Solve+": "+what); err != nil {
			return err
		}
	} else if r.get(ro.size) != nil {
		s.Ignored = append(s.Ignored, ro.size+" is ignored when solving n")
	}
	if s.Design == "cross-sectional" {
		if s.ExposurePrevalence, err = r.probability("exposure_prevalence", "required: the fraction of the surveyed population that is exposed"); err != nil {
			return err
		}
		s.Ratio = (1 - s.ExposurePrevalence) / s.ExposurePrevalence
	} else {
		if s.Ratio, err = r.rangeNum("ratio", 1, func(x float64) bool { return x > 0 && !math.IsInf(x, 0) }); err != nil {
			return err
		}
		if e := r.get("ratio"); e != nil && s.Pairing == "paired" {
			return r.errAt(e, "does not apply to a paired design: each pair holds one of each; allowed: leave ratio out")
		}
		n2, n2e, err := r.whole("n_second")
		if err != nil {
			return err
		}
		if n2e != nil {
			switch {
			case s.Solve == "n":
				s.Ignored = append(s.Ignored, "n_second is ignored when solving n (ratio sets the second group)")
			case n2 < 1 || n2 > MaxSize:
				return r.errAt(n2e, "%d is out of range; allowed: a whole number from 1 to 10⁹", n2)
			case r.get("ratio") != nil:
				return r.errAt(n2e, "given together with ratio; allowed: one of them (n_second fixes the second group's enrolment)")
			default:
				s.NSecond = n2
				s.Ratio = float64(n2) / float64(s.N)
			}
		}
	}

	if err := r.buildTrial(s); err != nil {
		return err
	}
	switch s.Outcome {
	case "continuous":
		err = r.buildContinuous(s)
	case "time-to-event":
		err = r.buildSurvival(s)
	default:
		err = r.buildBinary(s)
	}
	if err != nil {
		return err
	}
	if err := r.buildDirection(s); err != nil {
		return err
	}

	// the planned test, now that the outcome is known
	var te *entry
	if s.Test, te, err = r.choice("test", defaultTest(s), testsFor(s)...); err != nil {
		return err
	}
	if te != nil && s.Test == "t-student" && s.SD1 != s.SD2 {
		return r.errAt(te, "t-student assumes equal standard deviations, but sd_first and sd_second differ (its level and power then depart from the nominal ones); allowed: t-welch, or one common sd")
	}
	return r.buildSimulate(s)
}

// buildSimulate reads the simulate block.
func (r *reader) buildSimulate(s *Spec) error {
	se := r.get("simulate")
	if se == nil {
		return nil
	}
	sim := &SimulateSpec{Replicates: 10000, Seed: 1}
	m := r.nested["simulate"]
	whole := func(sub string, lo, hi float64, dst func(float64)) error {
		e := m[sub]
		if e == nil {
			return nil
		}
		var x float64
		_, err := fmt.Sscan(strings.ReplaceAll(e.node.Value, "_", ""), &x)
		if e.node.Kind != yaml.ScalarNode || (e.node.Tag != "!!int" && e.node.Tag != "!!float") || err != nil || x != math.Trunc(x) {
			return r.errAt(e, "%s is not a whole number; allowed: %s", show(e.node), simulateKeys[sub])
		}
		if x < lo || x > hi {
			return r.errAt(e, "%s is out of range; allowed: %s", e.node.Value, simulateKeys[sub])
		}
		dst(x)
		return nil
	}
	if err := whole("replicates", 100, 1e9, func(x float64) { sim.Replicates = int64(x) }); err != nil {
		return err
	}
	if err := whole("seed", 0, 1<<53, func(x float64) { sim.Seed = uint64(x) }); err != nil {
		return err
	}
	if err := whole("n", 2, MaxSize, func(x float64) { sim.N = int(x) }); err != nil {
		return err
	}
	s.Simulate = sim
	return nil
}

// buildTrial reads the keys of trials: hypothesis margin, clusters,
// adherence and arms.
func (r *reader) buildTrial(s *Spec) error {
	var err error
	if s.Hypothesis != "superiority" {
		if err := r.buildMargin(s); err != nil {
			return err
		}
	}

	// clusters
	if ce := r.get("cluster"); ce != nil {
		if de := r.get("design_effect"); de != nil {
			first, second := ce, de
			if second.keyPos < first.keyPos {
				first, second = second, first
			}
			return r.errAt(second, "given together with %s: a cluster design computes its own design effect; allowed: one of cluster and design_effect", first.key)
		}
		c := &Cluster{}
		m := r.nested["cluster"]
		num := func(sub string, ok func(float64) bool, required bool, dst *float64) error {
			e := m[sub]
			if e == nil {
				if required {
					return &SpecError{File: ce.file, Line: ce.line, Key: "cluster." + sub, Msg: "missing; required: " + clusterKeys[sub]}
				}
				return nil
			}
			if e.node.Kind != yaml.ScalarNode || (e.node.Tag != "!!int" && e.node.Tag != "!!float") {
				return r.errAt(e, "%s is not a number; allowed: %s", show(e.node), clusterKeys[sub])
			}
			var x float64
			if _, err := fmt.Sscan(strings.ReplaceAll(e.node.Value, "_", ""), &x); err != nil || !ok(x) {
				return r.errAt(e, "%s is out of range; allowed: %s", e.node.Value, clusterKeys[sub])
			}
			*dst = x
			return nil
		}
		if err := num("size", func(x float64) bool { return x >= 2 && x <= 1e6 }, true, &c.Size); err != nil {
			return err
		}
		if err := num("icc", func(x float64) bool { return x >= 0 && x < 1 }, true, &c.ICC); err != nil {
			return err
		}
		if err := num("size_cv", func(x float64) bool { return x >= 0 && x <= 10 }, false, &c.SizeCV); err != nil {
			return err
		}
		s.Cluster = c
		s.DesignEffect = c.DesignEffect()
		if s.MarginScale == "ratio" && s.Outcome == "binary" {
			return r.errAt(r.get("margin_scale"), "ratio is not planned for a cluster trial yet; allowed: margin_scale difference (a t test of the cluster proportions against the margin)")
		}
	}

	// adherence
	if s.NonAdherence, _, err = r.optNum("non_adherence", 0, func(x float64) bool { return x >= 0 && x < 1 }); err != nil {
		return err
	}
	var ce *entry
	if s.Contamination, ce, err = r.optNum("contamination", 0, func(x float64) bool { return x >= 0 && x < 1 }); err != nil {
		return err
	}
	if s.NonAdherence+s.Contamination >= 1 {
		return r.errAt(ce, "%g with non_adherence %g leaves no difference between the arms; allowed: non_adherence + contamination below 1", s.Contamination, s.NonAdherence)
	}

	// arms
	arms, ae, err := r.whole("arms")
	if err != nil {
		return err
	}
	s.Arms = 2
	if ae != nil {
		if arms < 2 || arms > 20 {
			return r.errAt(ae, "%d is out of range; allowed: %s", arms, specKeys["arms"].allowed)
		}
		s.Arms = arms
	}
	if s.Comparisons, _, err = r.choice("comparisons", "each-vs-control", "each-vs-control", "all-pairs"); err != nil {
		return err
	}
	if s.Comparisons == "all-pairs" && s.Ratio != 1 {
		return r.errAt(r.get("ratio"), "%g is not allowed with comparisons all-pairs, where every arm has the same size; allowed: 1", s.Ratio)
	}
	return nil
}

// buildMargin reads the margin of a non-inferiority or equivalence trial,
// its scale and which values of the outcome are better.
func (r *reader) buildMargin(s *Spec) error {
	hb, he, err := r.boolean("higher_is_better")
	if err != nil {
		return err
	}
	if he == nil && s.Hypothesis == "non-inferiority" {
		what := "true when a higher value of the outcome is better (e.g. cure), false when lower is better (e.g. infection)"
		if s.Outcome == "time-to-event" {
			what = "false when the event is harmful, so that a lower hazard is better (the usual case), true when the event is desirable (e.g. recovery)"
		}
		return r.errFile("higher_is_better", "missing; required for hypothesis non-inferiority: %s", what)
	}
	s.HigherIsBetter = hb
	switch s.Outcome {
	case "binary":
		if s.MarginScale, _, err = r.choice("margin_scale", "difference", "difference", "ratio"); err != nil {
			return err
		}
		if s.MarginScale == "ratio" && s.Method == "blackwelder" {
			return r.errAt(r.get("margin_scale"), "ratio is planned by the Farrington-Manning score method; allowed: method farrington-manning, or margin_scale difference")
		}
	case "time-to-event":
		s.MarginScale = "ratio"
	default:
		s.MarginScale = "difference"
	}
	m, me, err := r.number("margin")
	if err != nil {
		return err
	}
	ratio := s.MarginScale == "ratio"
	what := map[bool]string{false: "on the outcome's scale, a positive number", true: "a ratio (" + marginRatioRange(s) + ")"}[ratio]
	if me == nil {
		return r.errFile("margin", "missing; required for hypothesis %s: the %s margin %s", s.Hypothesis, s.Hypothesis, what)
	}
	switch {
	case ratio:
		ok := m > 1 && !math.IsInf(m, 1)
		if s.Hypothesis == "non-inferiority" && s.HigherIsBetter {
			ok = m > 0 && m < 1
		}
		if !ok {
			return r.errAt(me, "%s is out of range; allowed: %s", me.node.Value, marginRatioRange(s))
		}
	case !(m > 0):
		return r.errAt(me, "%s is not allowed: the margin is the size of the difference still judged acceptable, a positive number; the direction comes from higher_is_better", me.node.Value)
	case s.Outcome == "binary" && !(m < 1):
		return r.errAt(me, "%s is out of range; allowed: a risk difference in (0, 1) (or margin_scale: ratio for a risk-ratio margin)", me.node.Value)
	case math.IsInf(m, 1):
		return r.errAt(me, "%s is out of range; allowed: a finite positive number", me.node.Value)
	}
	s.Margin = m
	return nil
}

// marginRatioRange says which ratio margins are allowed.
func marginRatioRange(s *Spec) string {
	what := map[bool]string{false: "risk ratio", true: "hazard ratio"}[s.Outcome == "time-to-event"]
	switch {
	case s.Hypothesis == "equivalence":
		return "a " + what + " above 1; the equivalence interval is (1/margin, margin)"
	case s.HigherIsBetter:
		return "a " + what + " in (0, 1), since higher is better: the null hypothesis is that the ratio (first over second) is at most the margin"
	}
	return "a " + what + " above 1, since lower is better: the null hypothesis is that the ratio (first over second) is at least the margin"
}

// buildDirection reads the side a one-sided superiority test looks, which
// the effect key gives unless it states no difference.
func (r *reader) buildDirection(s *Spec) error {
	dv, de, err := r.choice("direction", "", "first-higher", "first-lower")
	if err != nil {
		return err
	}
	if de != nil && s.Hypothesis != "superiority" {
		why := "whose side follows from higher_is_better and the margin"
		if s.Hypothesis == "equivalence" {
			why = "whose two one-sided tests look both ways"
		}
		return r.errAt(de, "does not apply to hypothesis %s, %s; allowed: leave direction out", s.Hypothesis, why)
	}
	if de != nil && s.Sides != 1 {
		return r.errAt(de, "applies to a one-sided test (sides: 1); a two-sided test looks both ways; allowed: leave direction out, or sides: 1")
	}
	if s.Sides != 1 || s.Hypothesis != "superiority" {
		return nil
	}
	given := map[string]int{"first-higher": 1, "first-lower": -1}[dv]
	implied := 0
	sign := func(x float64) int {
		switch {
		case x > 1e-12:
			return 1
		case x < -1e-12:
			return -1
		}
		return 0
	}
	switch s.Outcome {
	case "continuous":
		implied = sign(s.MeanDiff)
	case "time-to-event":
		implied = sign(s.HazardRatio - 1)
	default:
		switch scaleOf(s.EffectKey) {
		case ScaleRatio, ScaleOdds:
			implied = sign(s.EffectValue - 1)
		case ScaleDifference:
			implied = sign(s.EffectValue)
		default:
			implied = sign(s.EffectValue - s.P2)
		}
	}
	word := map[int]string{1: "first-higher", -1: "first-lower"}
	switch {
	case given != 0 && implied != 0 && given != implied:
		return r.errAt(de, "%s disagrees with %s %s, which puts the first group %s; allowed: %s, or an effect on the other side", dv, s.EffectKey, r.get(s.EffectKey).node.Value, map[int]string{1: "higher", -1: "lower"}[implied], word[implied])
	case given == 0 && implied == 0:
		return r.errFile("direction", "missing; required with sides: 1 when %s states no difference: first-higher or first-lower (the side the one-sided test looks: the first group's %s higher, or lower, than the second's)", s.EffectKey, map[string]string{"continuous": "mean", "time-to-event": "hazard"}[s.Outcome]+map[bool]string{true: "risk", false: ""}[s.Outcome == "binary"])
	case given != 0:
		s.Direction = given
	default:
		s.Direction = implied
	}
	return nil
}

// buildBinary reads the reference risk and the effect of a binary outcome.
func (r *reader) buildBinary(s *Spec) error {
	ro := roles[s.Design]
	var err error
	s.ReferenceKey = ro.reference
	if s.P2, err = r.probability(ro.reference, "required: the risk in the "+orDefault(s.SecondGroup, ro.second)); err != nil {
		return err
	}
	if s.Hypothesis == "superiority" {
		// Which values of the outcome are good: wording only (a risk or
		// a proportion, benefit or harm); not the side of a test.
		if s.HigherIsBetter, _, err = r.boolean("higher_is_better"); err != nil {
			return err
		}
	}
	effect, err := r.exactlyOne(ro.effects, s.Hypothesis == "superiority")
	if err != nil {
		return err
	}
	if err := r.checkNullRisk(s); err != nil {
		return err
	}
	if effect == nil {
		// Non-inferiority and equivalence: no true difference by default.
		s.P1 = s.P2
		return r.checkMarginSide(s, nil, r.marginEffect(s))
	}
	s.EffectKey = effect.key
	if s.EffectValue, _, err = r.number(effect.key); err != nil {
		return err
	}
	if err := r.effectToP1(s, effect); err != nil {
		return err
	}
	return r.checkMarginSide(s, effect, r.marginEffect(s))
}

// checkNullRisk refuses a margin that puts the null hypothesis outside the
// possible risks: the first group's risk under the null (at the margin)
// must lie in (0, 1), else the test has nothing to reject.
func (r *reader) checkNullRisk(s *Spec) error {
	if s.Hypothesis == "superiority" {
		return nil
	}
	p2, m := s.P2, s.Margin
	var nulls []float64
	switch {
	case s.MarginScale == "ratio" && s.Hypothesis == "equivalence":
		nulls = []float64{p2 / m, p2 * m}
	case s.MarginScale == "ratio":
		nulls = []float64{p2 * m}
	case s.Hypothesis == "equivalence":
		nulls = []float64{p2 - m, p2 + m}
	case s.HigherIsBetter:
		nulls = []float64{p2 - m}
	default:
		nulls = []float64{p2 + m}
	}
	for _, p := range nulls {
		if !(p > 0 && p < 1) {
			return r.errAt(r.get("margin"), "%g with %s %g puts the null hypothesis at a risk of %.4g in the %s, outside (0, 1): the test would have nothing to reject; allowed: a margin that keeps that risk strictly between 0 and 1",
				m, s.ReferenceKey, p2, p, orDefault(s.FirstGroup, roles[s.Design].first))
		}
	}
	return nil
}

// marginEffect is the true effect of a binary outcome on the margin's
// scale.
func (r *reader) marginEffect(s *Spec) float64 {
	if s.MarginScale == "ratio" {
		return s.P1 / s.P2
	}
	return s.P1 - s.P2
}

// exactlyOne returns the one key of keys the specification gives; with
// required false it may give none.
func (r *reader) exactlyOne(keys []string, required bool) (*entry, error) {
	var found *entry
	for _, k := range keys {
		e := r.get(k)
		if e == nil {
			if raw := r.entries[k]; raw != nil {
				return nil, r.errAt(raw, "has no value; allowed: %s", specKeys[k].allowed)
			}
			continue
		}
		if found != nil {
			first, second := found, e
			if second.keyPos < first.keyPos {
				first, second = second, first
			}
			return nil, r.errAt(second, "a second effect key besides %s; allowed: exactly one of %s", first.key, orList(keys))
		}
		found = e
	}
	if found == nil && required {
		return nil, r.errFile("", "no effect given; allowed: exactly one of %s", orList(keys))
	}
	return found, nil
}

// checkMarginSide refuses a true effect that cannot show non-inferiority
// or equivalence: diff is the true difference, or on the ratio scale
// (margin_scale ratio, hazard ratios) the true ratio.
func (r *reader) checkMarginSide(s *Spec, e *entry, diff float64) error {
	where := func(format string, args ...any) error {
		if e != nil {
			return r.errAt(e, format, args...)
		}
		return r.errFile("margin", format, args...)
	}
	// Decimal inputs miss the margin by rounding noise (0.8 − 0.88 is
	// −0.07999999999999996): an effect that close counts as at it.
	const slack = 1e-9
	x, m, what := diff, s.Margin, "difference"
	if s.MarginScale == "ratio" {
		x, m, what = math.Log(diff), math.Log(s.Margin), "ratio"
	}
	switch s.Hypothesis {
	case "non-inferiority":
		bound := m
		if s.MarginScale != "ratio" && s.HigherIsBetter {
			bound = -m
		}
		if (s.HigherIsBetter && x <= bound+slack) || (!s.HigherIsBetter && x >= bound-slack) {
			return where("the true %s (%.4g) is at or beyond the non-inferiority margin (%g, %s): no sample size can show non-inferiority; allowed: a true %s on the acceptable side of the margin", what, diff, s.Margin, betterWord(s.HigherIsBetter), what)
		}
	case "equivalence":
		if math.Abs(x) >= math.Abs(m)-slack {
			bounds := fmt.Sprintf("±%g", s.Margin)
			if s.MarginScale == "ratio" {
				bounds = fmt.Sprintf("(%.4g, %g)", 1/s.Margin, s.Margin)
			}
			return where("the true %s (%.4g) lies outside the equivalence margin %s: no sample size can show equivalence; allowed: a true %s inside the margin", what, diff, bounds, what)
		}
	}
	return nil
}

func betterWord(higher bool) string {
	if higher {
		return "higher is better"
	}
	return "lower is better"
}

// buildContinuous reads the mean difference and standard deviations.
func (r *reader) buildContinuous(s *Spec) error {
	ro := roles[s.Design]
	var err error
	md, mde, err := r.number("mean_difference")
	if err != nil {
		return err
	}
	first, fe, err := r.number(ro.means[0])
	if err != nil {
		return err
	}
	second, sce, err := r.number(ro.means[1])
	if err != nil {
		return err
	}
	switch {
	case mde != nil && (fe != nil || sce != nil):
		other := fe
		if other == nil {
			other = sce
		}
		return r.errAt(other, "given together with mean_difference; allowed: mean_difference, or both %s and %s", ro.means[0], ro.means[1])
	case mde != nil:
		s.MeanDiff, s.EffectKey = md, "mean_difference"
	case fe != nil && sce != nil:
		s.MeanDiff, s.EffectKey = first-second, "mean_difference"
	case fe != nil || sce != nil:
		missing := ro.means[1]
		if fe == nil {
			missing = ro.means[0]
		}
		return r.errFile(missing, "missing; the two group means go together (or give mean_difference)")
	case s.Hypothesis == "superiority":
		return r.errFile("", "no effect given; allowed: mean_difference, or both %s and %s", ro.means[0], ro.means[1])
	}
	s.EffectValue = s.MeanDiff
	effectEntry := mde
	if effectEntry == nil {
		effectEntry = fe
	}
	if s.Hypothesis == "superiority" && s.MeanDiff == 0 && s.Solve != "effect" {
		return r.errAt(effectEntry, "means no difference between the groups: nothing to detect; allowed: a difference other than 0 (or solve: effect)")
	}
	if err := r.checkMarginSide(s, effectEntry, s.MeanDiff); err != nil {
		return err
	}

	pos := func(x float64) bool { return x > 0 && !math.IsInf(x, 0) }
	if s.Pairing != "" {
		sdd, sdde, err := r.optNum("sd_difference", 0, pos)
		if err != nil {
			return err
		}
		sd, sde, err := r.optNum("sd", 0, pos)
		if err != nil {
			return err
		}
		rho, rhoe, err := r.optNum("within_correlation", 0, func(x float64) bool { return x > -1 && x < 1 })
		if err != nil {
			return err
		}
		switch {
		case sdde != nil && (sde != nil || rhoe != nil):
			other := sde
			if other == nil {
				other = rhoe
			}
			return r.errAt(other, "given together with sd_difference; allowed: sd_difference, or sd with within_correlation")
		case sdde != nil:
			s.SD1 = sdd
		case sde != nil && rhoe != nil:
			s.SD1 = sd * math.Sqrt(2*(1-rho))
			s.RawSD1, s.WithinCorrelation = sd, rho
		case sde != nil:
			return r.errFile("within_correlation", "missing; with sd, a %s design needs the correlation between a participant's two measurements, in (-1, 1) (or give sd_difference)", s.Pairing)
		default:
			return r.errFile("sd_difference", "missing; required: the standard deviation of the within-participant differences, above 0 (or sd with within_correlation)")
		}
		s.SD2 = s.SD1
		return nil
	}

	sd, sde, err := r.optNum("sd", 0, pos)
	if err != nil {
		return err
	}
	sd1, sd1e, err := r.optNum("sd_first", 0, pos)
	if err != nil {
		return err
	}
	sd2, sd2e, err := r.optNum("sd_second", 0, pos)
	if err != nil {
		return err
	}
	switch {
	case sde != nil && (sd1e != nil || sd2e != nil):
		other := sd1e
		if other == nil {
			other = sd2e
		}
		return r.errAt(other, "given together with sd; allowed: sd (common), or both sd_first and sd_second")
	case sde != nil:
		s.SD1, s.SD2 = sd, sd
	case sd1e != nil && sd2e != nil:
		s.SD1, s.SD2 = sd1, sd2
	case sd1e != nil || sd2e != nil:
		missing := "sd_second"
		if sd1e == nil {
			missing = "sd_first"
		}
		return r.errFile(missing, "missing; sd_first and sd_second go together (or give sd)")
	default:
		return r.errFile("sd", "missing; required: the standard deviation of the outcome, above 0 (or sd_first and sd_second)")
	}
	s.RawSD1, s.RawSD2 = s.SD1, s.SD2
	rho, _, err := r.optNum("baseline_correlation", 0, func(x float64) bool { return x >= 0 && x < 1 })
	if err != nil {
		return err
	}
	s.BaselineCorrelation = rho
	if rho > 0 {
		f := math.Sqrt(1 - rho*rho)
		s.SD1, s.SD2 = s.SD1*f, s.SD2*f
	}
	return nil
}

// buildSurvival reads the hazard ratio, the control arm's survival and the
// timing of recruitment and follow-up.
func (r *reader) buildSurvival(s *Spec) error {
	pos := func(x float64) bool { return x > 0 && !math.IsInf(x, 0) }
	hr, he, err := r.number("hazard_ratio")
	if err != nil {
		return err
	}
	switch {
	case he == nil && s.Hypothesis != "superiority":
		// Non-inferiority and equivalence: no true difference by default.
		hr = 1
	case he == nil:
		return r.errFile("hazard_ratio", "missing; required: the intervention arm's hazard over the control arm's, above 0")
	case !(hr > 0) || math.IsInf(hr, 0):
		return r.errAt(he, "%s is out of range; allowed: a number above 0", he.node.Value)
	case hr == 1 && s.Solve != "effect" && s.Hypothesis == "superiority":
		return r.errAt(he, "1 means no difference between the arms: nothing to detect; allowed: a hazard ratio other than 1 (or solve: effect)")
	}
	s.HazardRatio, s.EffectKey, s.EffectValue = hr, "hazard_ratio", hr
	if s.Hypothesis != "superiority" {
		if err := r.checkMarginSide(s, he, hr); err != nil {
			return err
		}
	}

	med, mede, err := r.optNum("control_median", 0, pos)
	if err != nil {
		return err
	}
	surv, surve, err := r.optNum("control_survival", 0, func(x float64) bool { return x > 0 && x < 1 })
	if err != nil {
		return err
	}
	t, te, err := r.optNum("time", 0, pos)
	if err != nil {
		return err
	}
	switch {
	case mede != nil && (surve != nil || te != nil):
		other := surve
		if other == nil {
			other = te
		}
		return r.errAt(other, "given together with control_median; allowed: control_median, or control_survival with time")
	case mede != nil:
		s.ControlHazard, s.ControlMedian = math.Ln2/med, med
	case surve != nil && te != nil:
		s.ControlHazard, s.ControlSurvival, s.SurvivalTime = -math.Log(surv)/t, surv, t
	case surve != nil:
		return r.errFile("time", "missing; control_survival is the survival at this time, above 0")
	case te != nil:
		return r.errFile("control_survival", "missing; time goes with control_survival, the control arm's survival at that time")
	default:
		return r.errFile("control_median", "missing; required: the control arm's median survival time (or control_survival with time)")
	}
	if s.Accrual, _, err = r.optNum("accrual", 0, func(x float64) bool { return x >= 0 && !math.IsInf(x, 0) }); err != nil {
		return err
	}
	fu, fue, err := r.optNum("follow_up", 0, func(x float64) bool { return x >= 0 && !math.IsInf(x, 0) })
	if err != nil {
		return err
	}
	if fue == nil {
		return r.errFile("follow_up", "missing; required: the follow-up after the last participant enters, a time of at least 0")
	}
	if fu == 0 && s.Accrual == 0 {
		return r.errAt(fue, "0 with no accrual period follows nobody; allowed: a follow-up above 0 (or an accrual period)")
	}
	s.FollowUp = fu
	if s.Dropout, _, err = r.optNum("dropout", 0, func(x float64) bool { return x >= 0 && x < 1 }); err != nil {
		return err
	}
	if s.TimeUnit, _, err = r.text("time_unit"); err != nil {
		return err
	}
	if s.TimeUnit == "" {
		s.TimeUnit = "time units"
	}
	return nil
}
