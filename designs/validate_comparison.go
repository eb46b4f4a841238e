package designs

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"gopkg.in/yaml.v3"

	"enough/power"
)

// testsFor lists the planned tests that suit an outcome and hypothesis.
func testsFor(s *Spec) []string {
	switch {
	case s.ContinuousExposure:
		return []string{"logistic-wald"}
	case s.Matched && s.Controls == 1:
		return []string{"mcnemar"}
	case s.Matched:
		return []string{"mantel-haenszel"}
	case s.Adjusted && s.Outcome == "continuous":
		return []string{"t-regression"}
	case s.Adjusted:
		return []string{"logistic-wald"}
	}
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
	case "rate":
		return []string{"wald-rate"}
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
	case s.Adjusted, s.Matched, s.ContinuousExposure:
		return testsFor(s)[0]
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
func (r *reader) boolean(key string) (bool, *entry, *SpecError) {
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

func (r *reader) buildComparison(s *Spec) {
	ro := roles[s.Design]
	r.buildMatching(s)

	// method (the test follows the outcome, so it is read last)
	var fits []string
	for _, m := range Methods {
		if m.servesSpec(s) {
			fits = append(fits, m.ID)
		}
	}
	def := fits[0]
	if s.Matched {
		def = "dupont"
	}
	if (r.get("adjustment") != nil || r.get("interim") != nil) && def == "fleiss-cc" {
		// An adjusted analysis is a regression's Wald test, and a
		// group-sequential one a z statistic's: neither has a continuity
		// correction.
		def = "fleiss"
	}
	if r.get("interim") != nil && def == "t" && slices.Contains(fits, "z") {
		// The inflation of a group-sequential design is on the z scale.
		def = "z"
	}
	var err *SpecError
	if s.Method, _, err = r.choice("method", def, fits...); err != nil {
		r.refuse(r.methodError(s))
		s.Method = fits[0]
	}

	// alpha, sides
	defAlpha := 0.05
	if s.Hypothesis == "non-inferiority" {
		defAlpha = 0.025
	}
	var alphaOK bool
	// Below power.MinAlpha the engine's critical values are not checked.
	s.Alpha, alphaOK = r.rangeNum("alpha", defAlpha, inAlpha)
	if alphaOK {
		r.alpha = s.Alpha
	}
	r.buildSides(s)

	// power
	pw, pe, err := r.number("power")
	inPower := func(x float64) bool { return x > s.Alpha && x <= MaxPower }
	switch {
	case !r.keep(err):
	case s.Solve == "power":
		if pe != nil {
			s.Ignored = append(s.Ignored, "power is ignored when solving power (the power is what is solved)")
		}
	case pe == nil:
		if !r.solveBad {
			r.missing("power", "required when solving "+s.Solve, "the target power, a number above alpha and at most 1 − 1e-9 (e.g. 0.8)")
		}
	case !alphaOK:
		// The bound is unknown; only what no alpha allows is refused.
		if in := func(x float64) bool { return x > 0 && x <= MaxPower }; !in(pw) {
			r.refuse(r.rangeErr(pe, pw, "a number above alpha and at most 1 − 1e-9", in))
		}
	case !inPower(pw):
		if pw > 0 && pw <= s.Alpha {
			r.refuse(r.errAt(pe, "%s is not above alpha (%g); allowed: a number above alpha and at most 1 − 1e-9", show(pe.node), s.Alpha))
		} else {
			r.refuse(r.rangeErr(pe, pw, fmt.Sprintf("a number above alpha (%g) and at most 1 − 1e-9", s.Alpha), inPower))
		}
	default:
		s.Power = pw
	}
	if s.Solve == "effect" && s.Hypothesis != "superiority" {
		r.refuse(r.errAt(r.get("solve"), "effect is not available for hypothesis %s yet; allowed: n or power", s.Hypothesis))
	}

	// sizes and allocation
	sizeOK := true
	if s.Solve != "n" {
		what := "the number enrolled in the " + orDefault(s.FirstGroup, ro.first)
		if s.Pairing == "paired" {
			what = "the number of pairs"
		}
		sizeOK = r.size(s, ro.size, "required when solving "+s.Solve, what)
	} else if r.get(ro.size) != nil {
		s.Ignored = append(s.Ignored, ro.size+" is ignored when solving n")
	}
	if s.ContinuousExposure {
		s.Ratio = 1
	} else if s.Design == "cross-sectional" {
		var ok bool
		s.Ratio = 1
		if s.ExposurePrevalence, ok = r.probability("exposure_prevalence", "the fraction of the surveyed population that is exposed"); ok {
			if e := s.ExposurePrevalence; e < 1e-6 || e > 1-1e-6 {
				// A split beyond a million to one leaves no group to compare.
				r.refuse(r.errAt(r.get("exposure_prevalence"), "%g leaves one group more than a million times the other; allowed: a fraction from 0.000001 to 0.999999", e))
			} else {
				s.Ratio = (1 - s.ExposurePrevalence) / s.ExposurePrevalence
			}
		}
	} else {
		s.Ratio, _ = r.rangeNum("ratio", 1, inRatio)
		if s.Matched {
			// Every case has its matched controls.
			s.Ratio = float64(s.Controls)
		}
		n2, n2e, err := r.whole("n_second")
		if r.keep(err) && n2e != nil {
			switch {
			case s.Matched:
				// Refused with the matching block.
			case s.Solve == "n":
				s.Ignored = append(s.Ignored, "n_second is ignored when solving n (ratio sets the second group)")
			case n2 < 1 || n2 > MaxSize:
				r.refuse(r.errAt(n2e, "%d is out of range; allowed: a whole number from 1 to 10⁹", n2))
			case r.get("ratio") != nil:
				r.refuse(r.errAt(n2e, "given together with ratio; allowed: one of them (n_second fixes the second group's enrolment)"))
			case sizeOK:
				s.NSecond = n2
				s.Ratio = float64(n2) / float64(s.N)
			}
		}
	}

	r.buildTrial(s)
	r.buildAdjustment(s)
	switch s.Outcome {
	case "continuous":
		r.buildContinuous(s)
	case "time-to-event":
		r.buildSurvival(s)
	case "rate":
		r.buildRate(s)
	default:
		if s.ContinuousExposure {
			r.buildLogistic(s)
		} else {
			r.buildBinary(s)
		}
	}
	r.buildDirection(s)
	r.checkMatching(s)

	// the planned test, now that the outcome is known
	var te *entry
	if s.Test, te, err = r.choice("test", defaultTest(s), testsFor(s)...); err != nil {
		if !(r.refused["cluster"] && te != nil && strings.TrimSpace(te.node.Value) == "cluster-t") {
			r.refuse(err)
		}
	} else if te != nil && s.Test == "t-student" && s.SD1 != s.SD2 {
		r.refuse(r.errAt(te, "t-student assumes equal standard deviations, but sd_first and sd_second differ (its level and power then depart from the nominal ones); allowed: t-welch, or one common sd"))
	}
	r.buildInterim(s)
	r.buildSimulate(s)
}

// buildSides reads sides, which the hypothesis may fix.
func (r *reader) buildSides(s *Spec) {
	sides, sde, err := r.whole("sides")
	s.Sides = 2
	if err != nil && sde != nil && sde.node.Kind == yaml.ScalarNode {
		// sides: two is 2, when the hypothesis takes it.
		if w, ok := valueWords["sides"][wordKey(sde.node.Value)]; ok && (s.Hypothesis == "superiority" || (s.Hypothesis == "non-inferiority" && w == "1")) {
			err.Msg += "; did you mean sides: " + w + "?"
		}
	}
	if !r.keep(err) {
		return
	}
	switch s.Hypothesis {
	case "non-inferiority":
		s.Sides = 1
		if sde != nil && sides != 1 {
			r.refuse(r.errAt(sde, "%d is not allowed: a non-inferiority test is one-sided; allowed: 1 (give alpha as the one-sided level)", sides))
		}
	case "equivalence":
		s.Sides = 0
		if sde != nil {
			r.refuse(r.errAt(sde, "does not apply to hypothesis equivalence: alpha is the level of each of the two one-sided tests; allowed: leave sides out"))
		}
	default:
		if sde != nil {
			if sides != 1 && sides != 2 {
				r.refuse(r.errAt(sde, "%d is not allowed; allowed: 1 or 2", sides))
				return
			}
			s.Sides = sides
		}
	}
}

// buildSimulate reads the simulate block.
func (r *reader) buildSimulate(s *Spec) {
	se := r.get("simulate")
	if se == nil || r.refused["simulate"] {
		return
	}
	sim := &SimulateSpec{Replicates: 10000, Seed: 1}
	m := r.nested["simulate"]
	whole := func(sub string, lo, hi float64, dst func(float64)) {
		e := m[sub]
		if e == nil {
			return
		}
		var x float64
		_, err := fmt.Sscan(strings.ReplaceAll(e.node.Value, "_", ""), &x)
		switch {
		case e.node.Kind != yaml.ScalarNode || (e.node.Tag != "!!int" && e.node.Tag != "!!float") || err != nil || x != math.Trunc(x):
			r.refuse(r.errAt(e, "%s is not a whole number; allowed: %s", show(e.node), simulateKeys[sub]))
		case x < lo || x > hi:
			r.refuse(r.errAt(e, "%s is out of range; allowed: %s", show(e.node), simulateKeys[sub]))
		default:
			dst(x)
		}
	}
	whole("replicates", 100, 1e9, func(x float64) { sim.Replicates = int64(x) })
	whole("seed", 0, 1<<53, func(x float64) { sim.Seed = uint64(x) })
	whole("n", 2, MaxSize, func(x float64) { sim.N = int(x) })
	s.Simulate = sim
}

// inRate is the range of unexposed_rate: events per unit of person-time.
func inRate(x float64) bool { return x >= MinRisk && x <= 1e6 }

// inOverdispersion is the range of overdispersion: from 0 to 100.
func inOverdispersion(x float64) bool { return x >= 0 && x <= 100 }

// maxEventsPerParticipant bounds the events expected per participant
// (rate × person-time) in either group, so that counts and their sums
// stay far within float64.
const maxEventsPerParticipant = 1e6

// buildRate reads the keys of a person-time cohort: the unexposed rate,
// the rate ratio, the person-time per participant and the overdispersion.
func (r *reader) buildRate(s *Spec) {
	rate, rateOK := r.rangeNum("unexposed_rate", 0, inRate)
	if r.get("unexposed_rate") == nil {
		r.missing("unexposed_rate", "", "events per unit of person-time among the unexposed, a number from 1e-9 to 1e6 (e.g. 0.02 for 2 per 100 person-years)")
		rateOK = false
	}
	rr, re, err := r.number("rate_ratio")
	ok := r.keep(err)
	switch {
	case !ok:
	case re == nil:
		r.missing("rate_ratio", "", "the exposed group's rate over the unexposed group's, "+allowedRatio)
		ok = false
	case !inRatio(rr):
		r.refuse(r.rangeErr(re, rr, allowedRatio, inRatio))
		ok = false
	case rr == 1 && s.Solve != "effect":
		if !r.solveBad {
			r.refuse(r.errAt(re, "1 means the same rate in both groups: nothing to detect; allowed: a rate ratio other than 1 (or solve: effect)"))
		}
		ok = false
	}
	pt, ptOK := r.rangeNum("person_time", 0, inTime)
	if r.get("person_time") == nil {
		r.missing("person_time", "", "the person-time each participant is followed, in time_unit, "+allowedTime)
		ptOK = false
	}
	s.Overdispersion, _ = r.rangeNum("overdispersion", 0, inOverdispersion)
	r.timeUnit(s)
	if rateOK && ptOK {
		s.UnexposedRate, s.PersonTime = rate, pt
		if ok && rate*pt*math.Max(1, rr) > maxEventsPerParticipant {
			r.refuse(r.errAt(r.get("person_time"), "%s with unexposed_rate %s and rate_ratio %s expects more than 10⁶ events per participant; allowed: unexposed_rate × person_time × max(1, rate_ratio) of at most 10⁶ (choose another time_unit)",
				show(r.get("person_time").node), show(r.get("unexposed_rate").node), show(r.get("rate_ratio").node)))
			ok = false
		}
	}
	if ok {
		s.RateRatio, s.EffectKey, s.EffectValue = rr, "rate_ratio", rr
		r.effectOK = true
	}
}

// buildLogistic reads the keys of a binary outcome related to a continuous
// exposure: the event rate at the exposure's mean and the odds ratio per
// standard deviation of the exposure.
func (r *reader) buildLogistic(s *Spec) {
	if p, ok := r.probability("event_rate", "the proportion with the outcome at the mean of the exposure"); ok {
		s.EventRate = p
	}
	or, oe, err := r.number("odds_ratio_per_sd")
	switch {
	case !r.keep(err):
	case oe == nil:
		r.missing("odds_ratio_per_sd", "", "the odds ratio of the outcome per standard deviation of the exposure, "+allowedRatio)
	case !inRatio(or):
		r.refuse(r.rangeErr(oe, or, allowedRatio, inRatio))
	case or == 1 && s.Solve != "effect":
		if !r.solveBad {
			r.refuse(r.errAt(oe, "1 means no relation between the exposure and the outcome: nothing to detect; allowed: an odds ratio per SD other than 1 (or solve: effect)"))
		}
	default:
		s.ORPerSD, s.EffectKey, s.EffectValue = or, "odds_ratio_per_sd", or
		r.effectOK = true
	}
}

// buildMatching reads the matching block of a case-control study: the
// controls per case and the correlation of exposure within sets. The
// ratio is then the controls per case; ratio and n_second do not apply.
func (r *reader) buildMatching(s *Spec) {
	me := r.get("matching")
	if me == nil || s.Design != "case-control" {
		return
	}
	s.Matched, s.Controls = true, 1
	if r.refused["matching"] {
		return
	}
	var m, phi float64
	inControls := func(x float64) bool { return x >= 1 && x <= power.MaxMatchedControls }
	if e := r.nested["matching"]["controls_per_case"]; e != nil && e.node.Tag == "!!float" {
		r.refuse(r.errAt(e, "%s is not a whole number; allowed: %s", show(e.node), matchingKeys["controls_per_case"]))
	} else if r.nestedNum("matching", me, "controls_per_case", inControls, true, &m) {
		s.Controls = int(m)
	}
	if r.nestedNum("matching", me, "exposure_correlation", inFraction0, false, &phi) {
		s.ExposureCorrelation = phi
	}
}

// checkMatching refuses a within-set correlation of exposure that the odds
// ratio makes impossible (a control's conditional probability of exposure
// beyond 0 or 1), and a method for pairs with more controls per case.
func (r *reader) checkMatching(s *Spec) {
	if !s.Matched {
		return
	}
	m := MethodByID(s.Method)
	if m != nil && m.PairsOnly && s.Controls != 1 {
		r.refuse(r.errAt(r.get("method"), "%s serves one control per case (matching.controls_per_case 1), not %d; allowed: dupont", s.Method, s.Controls))
	}
	if s.Solve == "effect" || !r.effectOK || s.ExposureCorrelation == 0 {
		return
	}
	psi := power.OddsRatio(s.P1, s.P2)
	if most := power.MaxMatchedCorrelation(psi); s.ExposureCorrelation >= most {
		r.refuse(r.errAt(r.nested["matching"]["exposure_correlation"], "%g is too large for an odds ratio of %.4g: a control's probability of exposure given its case's would leave [0, 1] (Dupont 1988); allowed: below min(√ψ, 1/√ψ) = %.4g", s.ExposureCorrelation, psi, most))
	}
}

// buildAdjustment reads the adjustment block: the R² of the exposure
// regressed on the covariates the analysis adjusts for.
func (r *reader) buildAdjustment(s *Spec) {
	ae := r.get("adjustment")
	if ae == nil || r.refused["adjustment"] {
		return
	}
	var r2 float64
	if !r.nestedNum("adjustment", ae, "r_squared", inFraction0, true, &r2) {
		r.refused["adjustment"] = true
		return
	}
	switch {
	case s.Matched:
		r.refuse(r.errAt(ae, "is not planned for matched sets yet (their analysis is conditional on the set); allowed: no adjustment"))
	case s.Hypothesis != "superiority":
		r.refuse(r.errAt(ae, "is not planned for hypothesis %s yet, whose test is against a margin; allowed: no adjustment, or hypothesis superiority", s.Hypothesis))
	case s.Method == "fleiss-cc":
		r.refuse(r.errAt(r.get("method"), "fleiss-cc's continuity correction matches Yates' chi-square test, not the Wald test of a regression that adjusts; allowed with adjustment: fleiss or kelsey"))
	case s.Method == "exact":
		r.refuse(r.errAt(ae, "does not apply with method exact, whose enumeration of two binomial counts cannot adjust for covariates; allowed: another method, or no adjustment"))
	case s.Cluster != nil:
		r.refuse(r.errAt(ae, "is not planned for a cluster trial yet, whose analysis is a t test on cluster summaries; allowed: no adjustment"))
	case s.Arms > 2:
		r.refuse(r.errAt(ae, "is not planned for a trial of more than two arms yet; allowed: no adjustment"))
	default:
		s.Adjusted, s.AdjustR2 = true, r2
	}
}

// nestedNum reads the number head.sub of the map he into dst when it is
// within in; a missing required key, a percentage, a value that is no
// number or one out of range is refused. It returns false when the key
// was refused (true when an optional key is absent).
func (r *reader) nestedNum(head string, he *entry, sub string, in func(float64) bool, required bool, dst *float64) bool {
	allowed := nestedKeys[head][sub]
	e := r.nested[head][sub]
	if e == nil {
		if required && !r.refused[head+"."+sub] {
			r.refuse(&SpecError{File: he.file, Line: he.line, Key: head + "." + sub, Msg: "missing; allowed: " + allowed})
			return false
		}
		return !required
	}
	var x float64
	switch {
	case e.node.Kind == yaml.ScalarNode && percentLike.MatchString(e.node.Value):
		r.refuse(r.errAt(e, "%s", r.percentMsg(head+"."+sub, e.node)))
	case isPlaceholder(e.node):
		r.refuse(r.errAt(e, "%s is a placeholder still to fill in; allowed: %s", show(e.node), allowed))
	case e.node.Kind != yaml.ScalarNode || (e.node.Tag != "!!int" && e.node.Tag != "!!float"):
		r.refuse(r.errAt(e, "%s is not a number; allowed: %s", show(e.node), allowed))
	default:
		if _, err := fmt.Sscan(strings.ReplaceAll(e.node.Value, "_", ""), &x); err != nil {
			r.refuse(r.errAt(e, "%s is not a number; allowed: %s", show(e.node), allowed))
		} else if !in(x) {
			r.refuse(r.rangeErr(e, x, allowed, in))
		} else {
			*dst = x
			return true
		}
	}
	return false
}

// buildTrial reads the keys of trials: hypothesis margin, clusters,
// adherence and arms.
func (r *reader) buildTrial(s *Spec) {
	if s.Hypothesis != "superiority" {
		r.buildMargin(s)
	}

	// clusters
	if ce := r.get("cluster"); ce != nil && !r.refused["cluster"] {
		if de := r.get("design_effect"); de != nil {
			first, second := ce, de
			if second.keyPos < first.keyPos {
				first, second = second, first
			}
			r.fail(r.errAt(second, "given together with %s: a cluster design computes its own design effect; allowed: one of cluster and design_effect", first.key))
		}
		c := &Cluster{}
		good := true
		num := func(sub string, in func(float64) bool, required bool, dst *float64) {
			good = r.nestedNum("cluster", ce, sub, in, required, dst) && good
		}
		num("size", inClusterSize, true, &c.Size)
		num("icc", inFraction0, true, &c.ICC)
		num("size_cv", inSizeCV, false, &c.SizeCV)
		if good {
			s.Cluster = c
			s.DesignEffect = c.DesignEffect()
		} else {
			r.refused["cluster"] = true
		}
		if s.MarginScale == "ratio" && s.Outcome == "binary" {
			r.refuse(r.errAt(r.get("margin_scale"), "ratio is not planned for a cluster trial yet; allowed: margin_scale difference (a t test of the cluster proportions against the margin)"))
		}
	}

	// adherence
	na, _, naOK := r.optNum("non_adherence", 0, inFraction0)
	co, coe, coOK := r.optNum("contamination", 0, inFraction0)
	s.NonAdherence, s.Contamination = na, co
	if naOK && coOK && na+co >= 1 {
		r.refuse(r.errAt(coe, "%g with non_adherence %g leaves no difference between the arms; allowed: non_adherence + contamination below 1", co, na))
	}

	// arms
	arms, ae, err := r.whole("arms")
	s.Arms = 2
	if r.keep(err) && ae != nil {
		if arms < 2 || arms > 20 {
			r.refuse(r.errAt(ae, "%d is out of range; allowed: %s", arms, specKeys["arms"].allowed))
		} else {
			s.Arms = arms
		}
	}
	if s.Comparisons, _, err = r.choice("comparisons", "each-vs-control", "each-vs-control", "all-pairs"); !r.keep(err) {
		s.Comparisons = "each-vs-control"
	}
	if s.Comparisons == "all-pairs" && s.Ratio != 1 && !r.refused["ratio"] {
		if e := r.get("ratio"); e != nil {
			r.refuse(r.errAt(e, "%g is not allowed with comparisons all-pairs, where every arm has the same size; allowed: 1", s.Ratio))
		} else if e := r.get("n_second"); e != nil {
			r.refuse(r.errAt(e, "%d is not allowed with comparisons all-pairs, where every arm has the same size; allowed: n_second equal to n (%d)", s.NSecond, s.N))
		}
	}
}

// buildMargin reads the margin of a non-inferiority or equivalence trial,
// its scale and which values of the outcome are better; r.marginOK says
// whether all three are usable.
func (r *reader) buildMargin(s *Spec) {
	hb, he, err := r.boolean("higher_is_better")
	ok := r.keep(err)
	if ok && he == nil && s.Hypothesis == "non-inferiority" {
		what := "true when a higher value of the outcome is better (e.g. cure), false when lower is better (e.g. infection)"
		if s.Outcome == "time-to-event" {
			what = "false when the event is harmful, so that a lower hazard is better (the usual case), true when the event is desirable (e.g. recovery)"
		}
		r.missing("higher_is_better", "required for hypothesis non-inferiority", what)
		ok = false
	}
	s.HigherIsBetter = hb
	switch s.Outcome {
	case "binary":
		if s.MarginScale, _, err = r.choice("margin_scale", "difference", "difference", "ratio"); !r.keep(err) {
			s.MarginScale, ok = "difference", false
		}
		if s.MarginScale == "ratio" && s.Method == "blackwelder" {
			r.refuse(r.errAt(r.get("margin_scale"), "ratio is planned by the Farrington-Manning score method; allowed: method farrington-manning, or margin_scale difference"))
		}
	case "time-to-event":
		s.MarginScale = "ratio"
	default:
		s.MarginScale = "difference"
	}
	ratio := s.MarginScale == "ratio"
	switch {
	case ratio:
		r.marginKind = "ratio"
	case s.Outcome == "binary":
		r.marginKind = "fraction"
	}
	m, me, err := r.number("margin")
	what := map[bool]string{false: "on the outcome's scale, a positive number", true: "a ratio (" + marginRatioRange(s) + ")"}[ratio]
	switch {
	case !r.keep(err):
		return
	case me == nil:
		r.missing("margin", "required for hypothesis "+s.Hypothesis, "the "+s.Hypothesis+" margin "+what)
		return
	case ratio && ok:
		in := func(x float64) bool { return x > 1 && x <= MaxRatio }
		if s.Hypothesis == "non-inferiority" && s.HigherIsBetter {
			in = func(x float64) bool { return x >= 1/MaxRatio && x < 1 }
		}
		if !in(m) {
			r.refuse(r.errAt(me, "%s is out of range; allowed: %s", show(me.node), marginRatioRange(s)))
			return
		}
	case ratio:
		// Which ratios are allowed follows from higher_is_better.
		if !inRatio(m) {
			r.refuse(r.rangeErr(me, m, "a ratio from 0.001 to 1000", inRatio))
		}
		return
	case !(m > 0):
		r.refuse(r.errAt(me, "%s is not allowed: the margin is the size of the difference still judged acceptable, a positive number; the direction comes from higher_is_better", show(me.node)))
		return
	case s.Outcome == "binary" && !(m < 1):
		in := func(x float64) bool { return x > 0 && x < 1 }
		r.refuse(r.rangeErr(me, m, "a risk difference in (0, 1) (or margin_scale: ratio for a risk-ratio margin)", in))
		return
	case math.IsInf(m, 1):
		r.refuse(r.errAt(me, "%s is out of range; allowed: a finite positive number", show(me.node)))
		return
	}
	s.Margin = m
	r.marginOK = ok
}

// marginRatioRange says which ratio margins are allowed.
func marginRatioRange(s *Spec) string {
	what := map[bool]string{false: "risk ratio", true: "hazard ratio"}[s.Outcome == "time-to-event"]
	switch {
	case s.Hypothesis == "equivalence":
		return "a " + what + " above 1 and at most 1000; the equivalence interval is (1/margin, margin)"
	case s.HigherIsBetter:
		return "a " + what + " from 0.001 to below 1, since higher is better: the null hypothesis is that the ratio (first over second) is at most the margin"
	}
	return "a " + what + " above 1 and at most 1000, since lower is better: the null hypothesis is that the ratio (first over second) is at least the margin"
}

// buildDirection reads the side a one-sided superiority test looks, which
// the effect key gives unless it states no difference.
func (r *reader) buildDirection(s *Spec) {
	dv, de, err := r.choice("direction", "", "first-higher", "first-lower")
	switch {
	case !r.keep(err):
		return
	case de != nil && s.Hypothesis != "superiority":
		why := "whose side follows from higher_is_better and the margin"
		if s.Hypothesis == "equivalence" {
			why = "whose two one-sided tests look both ways"
		}
		r.refuse(r.errAt(de, "does not apply to hypothesis %s, %s; allowed: leave direction out", s.Hypothesis, why))
		return
	case r.refused["sides"]:
		return
	case de != nil && s.Sides != 1:
		r.refuse(r.errAt(de, "applies to a one-sided test (sides: 1); a two-sided test looks both ways; allowed: leave direction out, or sides: 1"))
		return
	case s.Sides != 1 || s.Hypothesis != "superiority" || !r.effectOK:
		return
	}
	given := map[string]int{"first-higher": 1, "first-lower": -1}[dv]
	implied := impliedDirection(s)
	word := map[int]string{1: "first-higher", -1: "first-lower"}
	effect := fmtFraction(s.EffectValue)
	if e := r.get(s.EffectKey); e != nil {
		effect = show(e.node)
	}
	switch {
	case given != 0 && implied != 0 && given != implied:
		r.refuse(r.errAt(de, "%s disagrees with %s %s, which puts the first group %s; allowed: %s, or an effect on the other side", dv, s.EffectKey, effect, map[int]string{1: "higher", -1: "lower"}[implied], word[implied]))
	case given == 0 && implied == 0:
		if !r.solveBad {
			r.missing("direction", "required with sides: 1 when "+s.EffectKey+" states no difference",
				"first-higher or first-lower (the side the one-sided test looks: the first group's "+map[string]string{"continuous": "mean", "time-to-event": "hazard", "binary": "risk"}[s.Outcome]+" higher, or lower, than the second's)")
		}
	case given != 0:
		s.Direction = given
	default:
		s.Direction = implied
	}
}

// impliedDirection is the side the effect puts the first group: +1 when
// its risk, mean or hazard is higher than the second's, −1 when lower, 0
// when the effect states no difference (within 1e-12).
func impliedDirection(s *Spec) int {
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
		return sign(s.MeanDiff)
	case "time-to-event":
		return sign(s.HazardRatio - 1)
	case "rate":
		return sign(s.RateRatio - 1)
	}
	if s.ContinuousExposure {
		return sign(s.ORPerSD - 1)
	}
	switch scaleOf(s.EffectKey) {
	case ScaleRatio, ScaleOdds:
		return sign(s.EffectValue - 1)
	case ScaleDifference:
		return sign(s.EffectValue)
	}
	return sign(s.EffectValue - s.P2)
}

// buildBinary reads the reference risk and the effect of a binary outcome.
func (r *reader) buildBinary(s *Spec) {
	ro := roles[s.Design]
	s.ReferenceKey = ro.reference
	var p2OK bool
	s.P2, p2OK = r.probability(ro.reference, "the risk in the "+orDefault(s.SecondGroup, ro.second))
	if s.Hypothesis == "superiority" {
		// Which values of the outcome are good: wording only (a risk or
		// a proportion, benefit or harm); not the side of a test.
		hb, _, err := r.boolean("higher_is_better")
		if r.keep(err) {
			s.HigherIsBetter = hb
		}
	}
	effect, effectOK := r.exactlyOne(ro.effects, s.Hypothesis == "superiority")
	marginOK := s.Hypothesis == "superiority" || (r.marginOK && p2OK && r.checkNullRisk(s))
	if !effectOK {
		return
	}
	if effect == nil {
		// Non-inferiority and equivalence: no true difference by default.
		s.P1 = s.P2
		if p2OK && marginOK {
			r.effectOK = r.checkMarginSide(s, nil, marginEffect(s))
		}
		return
	}
	s.EffectKey = effect.key
	var err *SpecError
	if s.EffectValue, _, err = r.number(effect.key); !r.keep(err) {
		return
	}
	if !r.effectToP1(s, effect, p2OK) {
		return
	}
	r.effectOK = marginOK && r.checkMarginSide(s, effect, marginEffect(s))
}

// checkNullRisk refuses a margin that puts the null hypothesis outside the
// possible risks: the first group's risk under the null (at the margin)
// must lie in (0, 1), else the test has nothing to reject.
func (r *reader) checkNullRisk(s *Spec) bool {
	if s.Hypothesis == "superiority" {
		return true
	}
	p, bad := nullRiskOutside(s)
	if bad {
		r.refuse(r.errAt(r.get("margin"), "%g with %s %g puts the null hypothesis at a risk of %.4g in the %s, outside (0, 1): the test would have nothing to reject; allowed: a margin that keeps that risk strictly between 0 and 1",
			s.Margin, s.ReferenceKey, s.P2, p, orDefault(s.FirstGroup, roles[s.Design].first)))
		return false
	}
	return true
}

// nullRiskOutside returns the first group's risk under the null
// hypothesis (at the margin) that lies outside (0, 1), and whether there
// is one: with an equivalence margin there are two null risks, one each
// side.
func nullRiskOutside(s *Spec) (float64, bool) {
	p2, m := s.P2, s.Margin
	var a, b float64
	two := false
	switch {
	case s.MarginScale == "ratio" && s.Hypothesis == "equivalence":
		a, b, two = p2/m, p2*m, true
	case s.MarginScale == "ratio":
		a = p2 * m
	case s.Hypothesis == "equivalence":
		a, b, two = p2-m, p2+m, true
	case s.HigherIsBetter:
		a = p2 - m
	default:
		a = p2 + m
	}
	switch {
	case !in01(a):
		return a, true
	case two && !in01(b):
		return b, true
	}
	return 0, false
}

// marginEffect is the true effect of a binary outcome on the margin's
// scale.
func marginEffect(s *Spec) float64 {
	if s.MarginScale == "ratio" {
		return s.P1 / s.P2
	}
	return s.P1 - s.P2
}

// exactlyOne returns the one key of keys the specification gives; with
// required false it may give none. ok is false when a problem was
// recorded.
func (r *reader) exactlyOne(keys []string, required bool) (found *entry, ok bool) {
	ok = true
	for _, k := range keys {
		e := r.get(k)
		if e == nil {
			if raw := r.entries[k]; raw != nil {
				r.refuse(r.errAt(raw, "has no value; allowed: %s", specKeys[k].allowed))
				ok = false
			}
			continue
		}
		if found != nil {
			first, second := found, e
			if second.keyPos < first.keyPos {
				first, second = second, first
			}
			r.refuse(r.errAt(second, "a second effect key besides %s; allowed: exactly one of %s", first.key, orList(keys)))
			found, ok = first, false
			continue
		}
		found = e
	}
	stoodFor := false
	for _, k := range keys {
		stoodFor = stoodFor || r.standsFor[k]
	}
	if found == nil && ok && required && !stoodFor && !r.outcomeDoubt {
		r.refuse(r.errFile("", "no effect given; allowed: exactly one of %s", orList(keys)))
		ok = false
	}
	return found, ok
}

// checkMarginSide refuses a true effect that cannot show non-inferiority
// or equivalence: diff is the true difference, or on the ratio scale
// (margin_scale ratio, hazard ratios) the true ratio. It returns false
// when it recorded a problem.
func (r *reader) checkMarginSide(s *Spec, e *entry, diff float64) bool {
	where := func(format string, args ...any) bool {
		if e != nil {
			r.refuse(r.errAt(e, format, args...))
		} else {
			r.refuse(r.errFile("margin", format, args...))
		}
		return false
	}
	if marginSideOK(s, diff) {
		return true
	}
	what := "difference"
	if s.MarginScale == "ratio" {
		what = "ratio"
	}
	if s.Hypothesis == "non-inferiority" {
		return where("the true %s (%.4g) is at or beyond the non-inferiority margin (%g, %s): no sample size can show non-inferiority; allowed: a true %s on the acceptable side of the margin", what, diff, s.Margin, betterWord(s.HigherIsBetter), what)
	}
	bounds := fmt.Sprintf("±%g", s.Margin)
	if s.MarginScale == "ratio" {
		bounds = fmt.Sprintf("(%.4g, %g)", 1/s.Margin, s.Margin)
	}
	return where("the true %s (%.4g) lies outside the equivalence margin %s: no sample size can show equivalence; allowed: a true %s inside the margin", what, diff, bounds, what)
}

// marginSideOK says whether the true effect diff (a difference, or on the
// ratio scale a ratio) lies on the side of the margin where
// non-inferiority, or equivalence, can be shown; superiority always can.
func marginSideOK(s *Spec, diff float64) bool {
	// Decimal inputs miss the margin by rounding noise (0.8 − 0.88 is
	// −0.07999999999999996): an effect that close counts as at it.
	const slack = 1e-9
	x, m := diff, s.Margin
	if s.MarginScale == "ratio" {
		x, m = math.Log(diff), math.Log(s.Margin)
	}
	switch s.Hypothesis {
	case "non-inferiority":
		bound := m
		if s.MarginScale != "ratio" && s.HigherIsBetter {
			bound = -m
		}
		return !((s.HigherIsBetter && x <= bound+slack) || (!s.HigherIsBetter && x >= bound-slack))
	case "equivalence":
		return !(math.Abs(x) >= math.Abs(m)-slack)
	}
	return true
}

func betterWord(higher bool) string {
	if higher {
		return "higher is better"
	}
	return "lower is better"
}

// buildContinuous reads the mean difference and standard deviations.
func (r *reader) buildContinuous(s *Spec) {
	ro := roles[s.Design]
	md, mde, err := r.number("mean_difference")
	mdOK := r.keep(err)
	first, fe, err := r.number(ro.means[0])
	fOK := r.keep(err)
	second, sce, err := r.number(ro.means[1])
	sOK := r.keep(err)
	known := false
	switch {
	case mde != nil && (fe != nil || sce != nil):
		other := fe
		if other == nil {
			other = sce
		}
		r.refuse(r.errAt(other, "given together with mean_difference; allowed: mean_difference, or both %s and %s", ro.means[0], ro.means[1]))
	case mde != nil:
		s.MeanDiff, s.EffectKey, known = md, "mean_difference", mdOK
	case fe != nil && sce != nil:
		s.MeanDiff, s.EffectKey, known = first-second, "mean_difference", fOK && sOK
	case fe != nil || sce != nil:
		missing := ro.means[1]
		if fe == nil {
			missing = ro.means[0]
		}
		r.missing(missing, "the two group means go together", "both "+ro.means[0]+" and "+ro.means[1]+", or mean_difference alone")
	case s.Hypothesis == "superiority":
		if !r.outcomeDoubt && !r.standsFor["mean_difference"] && !r.standsFor[ro.means[0]] && !r.standsFor[ro.means[1]] {
			r.refuse(r.errFile("", "no effect given; allowed: mean_difference, or both %s and %s", ro.means[0], ro.means[1]))
		}
	default:
		known = true
	}
	s.EffectValue = s.MeanDiff
	effectEntry := mde
	if effectEntry == nil {
		effectEntry = fe
	}
	switch {
	case !known:
	case s.Hypothesis == "superiority" && s.MeanDiff == 0 && s.Solve != "effect":
		if !r.solveBad {
			r.refuse(r.errAt(effectEntry, "means no difference between the groups: nothing to detect; allowed: a difference other than 0 (or solve: effect)"))
		}
	case s.Hypothesis == "superiority":
		r.effectOK = true
	case r.marginOK:
		r.effectOK = r.checkMarginSide(s, effectEntry, s.MeanDiff)
	}

	if s.Pairing != "" {
		sdd, sdde, sddOK := r.optNum("sd_difference", 0, inPositive)
		sd, sde, sdOK := r.optNum("sd", 0, inPositive)
		rho, rhoe, rhoOK := r.optNum("within_correlation", 0, inOpen1)
		switch {
		case sdde != nil && (sde != nil || rhoe != nil):
			other := sde
			if other == nil {
				other = rhoe
			}
			r.refuse(r.errAt(other, "given together with sd_difference; allowed: sd_difference, or sd with within_correlation"))
		case sdde != nil:
			if sddOK {
				s.SD1 = sdd
			}
		case sde != nil && rhoe != nil:
			if sdOK && rhoOK {
				s.SD1 = sd * math.Sqrt(2*(1-rho))
				s.RawSD1, s.WithinCorrelation = sd, rho
			}
		case sde != nil:
			r.missing("within_correlation", "with sd, a "+s.Pairing+" design needs the correlation between a participant's two measurements", "a number in (-1, 1) (or sd_difference in place of sd)")
		default:
			r.missing("sd_difference", "", "the standard deviation of the within-participant differences, above 0 (or sd with within_correlation)")
		}
		s.SD2 = s.SD1
		r.checkStandardized(s, effectEntry, known)
		return
	}

	sd, sde, sdOK := r.optNum("sd", 0, inPositive)
	sd1, sd1e, sd1OK := r.optNum("sd_first", 0, inPositive)
	sd2, sd2e, sd2OK := r.optNum("sd_second", 0, inPositive)
	switch {
	case sde != nil && (sd1e != nil || sd2e != nil):
		other := sd1e
		if other == nil {
			other = sd2e
		}
		r.refuse(r.errAt(other, "given together with sd; allowed: sd (common), or both sd_first and sd_second"))
	case sde != nil:
		if sdOK {
			s.SD1, s.SD2 = sd, sd
		}
	case sd1e != nil && sd2e != nil:
		if sd1OK && sd2OK {
			s.SD1, s.SD2 = sd1, sd2
		}
	case sd1e != nil || sd2e != nil:
		missing := "sd_second"
		if sd1e == nil {
			missing = "sd_first"
		}
		r.missing(missing, "sd_first and sd_second go together", "both sd_first and sd_second, or sd alone")
	default:
		r.missing("sd", "", "the standard deviation of the outcome, above 0 (or sd_first and sd_second)")
	}
	s.RawSD1, s.RawSD2 = s.SD1, s.SD2
	rho, _, _ := r.optNum("baseline_correlation", 0, inFraction0)
	s.BaselineCorrelation = rho
	if rho > 0 {
		f := math.Sqrt(1 - rho*rho)
		s.SD1, s.SD2 = s.SD1*f, s.SD2*f
	}
	r.checkStandardized(s, effectEntry, known)
}

// checkStandardized refuses a difference of means, or a margin, of more
// than MaxStandardized standard deviations (the smaller of the two groups'
// after any adjustment for the baseline), which no study needs and which
// would carry the engine's noncentral distributions past their range.
func (r *reader) checkStandardized(s *Spec, effectEntry *entry, known bool) {
	sd := math.Min(s.SD1, s.SD2)
	if !(sd > 0) {
		return
	}
	sdWhat := "the standard deviation"
	if s.BaselineCorrelation > 0 {
		sdWhat = "the standard deviation after adjustment for the baseline"
	}
	check := func(e *entry, what, noun string, x float64) {
		if !withinStandardized(s, x) {
			d := math.Abs(x) / sd
			r.refuse(r.errAt(e, "%s, %.3g times %s (%.4g); allowed: a %s of at most %d standard deviations", what, d, sdWhat, sd, noun, MaxStandardized))
		}
	}
	if known && effectEntry != nil {
		what := show(effectEntry.node) + " is a difference of means"
		if effectEntry.key != "mean_difference" {
			what = fmt.Sprintf("%s gives a difference of means of %.4g", show(effectEntry.node), s.MeanDiff)
		}
		check(effectEntry, what, "difference", s.MeanDiff)
	}
	if me := r.get("margin"); s.Hypothesis != "superiority" && s.Margin > 0 && me != nil {
		check(me, show(me.node)+" is a margin of means", "margin", s.Margin)
	}
}

// withinStandardized says whether x, a difference of means or a margin, is
// at most MaxStandardized standard deviations (the smaller of the two
// groups' after any adjustment for the baseline); always, when the
// standard deviations are not known.
func withinStandardized(s *Spec, x float64) bool {
	sd := math.Min(s.SD1, s.SD2)
	return !(sd > 0) || math.Abs(x)/sd <= MaxStandardized
}

// buildSurvival reads the hazard ratio, the control arm's survival and the
// timing of recruitment and follow-up.
func (r *reader) buildSurvival(s *Spec) {
	hr, he, err := r.number("hazard_ratio")
	ok := r.keep(err)
	switch {
	case !ok:
	case he == nil && s.Hypothesis != "superiority":
		// Non-inferiority and equivalence: no true difference by default.
		hr = 1
	case he == nil:
		r.missing("hazard_ratio", "", "the intervention arm's hazard over the control arm's, "+allowedRatio)
		ok = false
	case !inRatio(hr):
		r.refuse(r.rangeErr(he, hr, allowedRatio, inRatio))
		ok = false
	case hr == 1 && s.Solve != "effect" && s.Hypothesis == "superiority":
		if !r.solveBad {
			r.refuse(r.errAt(he, "1 means no difference between the arms: nothing to detect; allowed: a hazard ratio other than 1 (or solve: effect)"))
		}
		ok = false
	}
	if ok {
		s.HazardRatio, s.EffectKey, s.EffectValue = hr, "hazard_ratio", hr
		switch {
		case s.Hypothesis == "superiority":
			r.effectOK = true
		case r.marginOK:
			r.effectOK = r.checkMarginSide(s, he, hr)
		}
	}

	med, mede, medOK := r.optNum("control_median", 0, inTime)
	surv, surve, survOK := r.optNum("control_survival", 0, inRisk)
	t, te, tOK := r.optNum("time", 0, inTime)
	switch {
	case mede != nil && (surve != nil || te != nil):
		other := surve
		if other == nil {
			other = te
		}
		r.refuse(r.errAt(other, "given together with control_median; allowed: control_median, or control_survival with time"))
	case mede != nil:
		if medOK {
			s.ControlHazard, s.ControlMedian = math.Ln2/med, med
		}
	case surve != nil && te != nil:
		if survOK && tOK {
			s.ControlHazard, s.ControlSurvival, s.SurvivalTime = -math.Log(surv)/t, surv, t
		}
	case surve != nil:
		r.missing("time", "control_survival is the survival at this time", allowedTime)
	case te != nil:
		r.missing("control_survival", "time goes with control_survival", "the control arm's survival at that time, "+allowedRisk)
	default:
		r.missing("control_median", "", "the control arm's median survival time, "+allowedTime+" (or control_survival with time)")
	}
	var accOK bool
	s.Accrual, _, accOK = r.optNum("accrual", 0, inTime0)
	fu, fue, fuOK := r.optNum("follow_up", 0, inTime0)
	switch {
	case fue == nil:
		r.missing("follow_up", "", "the follow-up after the last participant enters, "+allowedTime0)
	case fuOK && accOK && fu == 0 && s.Accrual == 0:
		r.refuse(r.errAt(fue, "0 with no accrual period follows nobody; allowed: a follow-up above 0 (or an accrual period)"))
	default:
		s.FollowUp = fu
	}
	s.Dropout, _ = r.rangeNum("dropout", 0, inFraction0)
	r.timeUnit(s)
}

// timeUnit reads the time unit, "time units" when none is given.
func (r *reader) timeUnit(s *Spec) {
	tu, _, err := r.text("time_unit")
	if r.keep(err) {
		s.TimeUnit = tu
	}
	if s.TimeUnit == "" {
		s.TimeUnit = "time units"
	}
}
