package designs

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"gopkg.in/yaml.v3"
)

// Designs lists the study designs of specification version 1.
var Designs = []string{"cohort", "case-control", "trial", "cross-sectional"}

// build validates the collected keys into a Spec, recording every problem
// in r.errs; the Spec is nil only when a problem stopped it early.
func (r *reader) build() *Spec {
	var claimed *Claimed
	if r.get("claimed") != nil {
		// The claimed block first: its power, alpha, sides and method
		// serve the plan where the top level does not give them.
		c, errs := r.readClaimed()
		bad := map[string]bool{}
		for _, se := range errs {
			r.refuse(se)
			bad[strings.TrimPrefix(se.Key, "claimed.")] = true
		}
		claimed = &c
		r.promoteClaimed(bad)
	}
	s := &Spec{Sources: r.sourceMap(), Claimed: claimed}

	// version
	v, ve, err := r.whole("version")
	switch {
	case !r.keep(err):
	case ve == nil:
		r.missing("version", "", "1 (add the line `version: 1`)")
	case v != 1:
		// Another version's keys cannot be judged by this one's rules.
		r.refuse(r.errAt(ve, "%d is not supported; allowed: 1", v))
		return nil
	}

	// design, goal, outcome, pairing and hypothesis decide the other keys
	sel, ok := r.selection(s)
	if !ok {
		r.reportUnknown(nil, nil)
		return nil
	}
	allowed := keysFor(sel)
	r.reportUnknown(&sel, allowed)
	r.reportMisplaced(s, sel, allowed)
	precision := s.Goal == "precision" || s.Goal == "accuracy"

	// solve
	solves := []string{"n", "power", "effect"}
	if precision {
		solves = []string{"n", "effect"}
	}
	var se *SpecError
	s.Solve, _, se = r.choice("solve", "n", solves...)
	if se != nil {
		if e := r.get("solve"); precision && e != nil && e.node.Value == "power" {
			se = r.errAt(e, "power does not apply to a precision survey; allowed: n (the size for a margin) or effect (the margin for a size)")
		}
		r.refuse(se)
		// Carry on as if solving n, but call no key missing that only some
		// solves require.
		s.Solve, r.solveBad = "n", true
	}

	// text
	for _, t := range []struct {
		key string
		dst *string
	}{{"title", &s.Title}, {"primary_outcome", &s.PrimaryOutcome}, {"first_group", &s.FirstGroup}, {"second_group", &s.SecondGroup}} {
		v, _, err := r.text(t.key)
		if r.keep(err) {
			*t.dst = v
		}
	}
	if s.Title == "" {
		s.Title = "Untitled study"
	}

	// inflation
	s.Attrition, _ = r.rangeNum("attrition", 0, inFraction0)
	s.DesignEffect, _ = r.rangeNum("design_effect", 1, inDesignEffect)

	switch {
	case s.Goal == "accuracy":
		r.buildAccuracy(s)
	case precision && s.Design != "cross-sectional":
		r.buildRatioPrecision(s)
	case precision:
		r.buildPrecision(s)
	default:
		r.buildComparison(s)
	}
	r.checkSources()
	if claimed != nil {
		s.Ignored = append(s.Ignored, claimedIgnored)
	}
	s.Given = r.given()
	return s
}

// selection reads the keys that decide which others belong: design, goal,
// outcome, pairing and hypothesis. ok is false when one of them is missing
// or wrong, so that the keys that belong cannot be known.
func (r *reader) selection(s *Spec) (sel selector, ok bool) {
	ok = true
	design, de, err := r.choice("design", "", Designs...)
	switch {
	case !r.keep(err):
		ok = false
	case de == nil:
		r.missing("design", "", orList(Designs))
		ok = false
	}
	s.Design = design
	if ok {
		r.design = design
	}

	goal := "comparison"
	ratioGoal := design == "cohort" || design == "case-control"
	if ge := r.entries["goal"]; ge != nil && ok && design != "cross-sectional" && !ratioGoal {
		r.refuse(r.errAt(ge, "applies only to designs cross-sectional, cohort and case-control; a %s study always compares two groups", design))
	} else if g, ge, err := r.choice("goal", "comparison", "comparison", "precision", "accuracy"); !r.keep(err) {
		ok = false
	} else if ratioGoal && g == "accuracy" {
		r.refuse(r.errAt(ge, "accuracy applies to design cross-sectional; allowed for design %s: comparison, or precision (a ratio estimated to a stated precision)", design))
		ok = false
	} else {
		goal = g
	}
	if design == "cross-sectional" || (ratioGoal && goal == "precision") {
		s.Goal = goal
	}
	precision := s.Goal == "precision" || s.Goal == "accuracy"
	r.precision = precision

	outcome, oe, err := r.choice("outcome", "binary", "binary", "continuous", "time-to-event", "rate")
	switch {
	case !r.keep(err):
		ok = false
	case !ok:
	case s.Goal == "precision" && design != "cross-sectional" && outcome != "binary":
		r.refuse(r.errAt(oe, "%s does not apply to a ratio estimated to a stated precision, which is a risk or odds ratio; allowed: binary", outcome))
		ok = false
	case s.Goal == "accuracy" && outcome != "binary":
		r.refuse(r.errAt(oe, "%s does not apply to a study of diagnostic accuracy, whose test result and condition are both yes or no; allowed: binary", outcome))
		ok = false
	case precision && outcome != "binary" && outcome != "continuous":
		r.refuse(r.errAt(oe, "%s does not apply to a precision survey, which estimates one prevalence or one mean; allowed: binary or continuous", outcome))
		ok = false
	case design == "case-control" && outcome != "binary":
		r.refuse(r.errAt(oe, "%s does not apply to a case-control study, which compares exposure between cases and controls; allowed: binary", outcome))
		ok = false
	case outcome == "rate" && design != "cohort":
		r.refuse(r.errAt(oe, "rate applies to design cohort (events over person-time); allowed for design %s: binary or continuous", design))
		ok = false
	case outcome == "time-to-event" && design != "trial":
		r.refuse(r.errAt(oe, "time-to-event applies to design trial; allowed for design %s: binary or continuous", design))
		ok = false
	}
	s.Outcome = outcome

	// pairing and hypothesis are read where they may apply; elsewhere they
	// are reported as keys of another selection.
	if ok && outcome == "continuous" && (design == "trial" || design == "cohort") {
		p, pe, err := r.choice("pairing", "", "paired", "crossover")
		switch {
		case !r.keep(err):
			ok = false
		case p == "crossover" && design != "trial":
			r.refuse(r.errAt(pe, "crossover applies to design trial; allowed for design %s: paired", design))
			ok = false
		}
		s.Pairing = p
	}
	s.Hypothesis = "superiority"
	if ok && design == "trial" {
		h, _, err := r.choice("hypothesis", "superiority", "superiority", "non-inferiority", "equivalence")
		if r.keep(err) {
			s.Hypothesis = h
		} else {
			ok = false
		}
	}
	if ok && r.entries["outcome"] == nil && (r.get("mean_difference") != nil || r.get("hazard_ratio") != nil) {
		e, want := r.get("mean_difference"), "continuous"
		if e == nil {
			e, want = r.get("hazard_ratio"), "time-to-event"
		}
		r.refuse(r.errAt(e, "belongs to a %s outcome; add `outcome: %s` (the default outcome is binary)", want, want))
		ok = false
	}
	matched := design == "case-control" && r.entries["matching"] != nil
	continuous := false
	if ok && s.Outcome == "binary" && (design == "cohort" || design == "cross-sectional") {
		x, _, err := r.choice("exposure", "groups", "groups", "continuous")
		if r.keep(err) {
			continuous = x == "continuous"
		} else {
			ok = false
		}
	}
	s.ContinuousExposure = continuous
	return selector{design: design, goal: goal, outcome: s.Outcome, pairing: s.Pairing, hypothesis: s.Hypothesis, matched: matched, continuous: continuous}, ok
}

// reportUnknown reports the keys no specification knows, each with the key
// it most likely stands for among those allowed (every key when the
// selection is not known: sel and allowed nil).
func (r *reader) reportUnknown(sel *selector, allowed map[string]bool) {
	if allowed == nil {
		allowed = map[string]bool{}
		for k := range specKeys {
			allowed[k] = true
		}
	}
	for _, e := range r.unknown {
		msg := "unknown key"
		lower := strings.ToLower(e.key)
		if _, known := specKeys[lower]; known && !allowed[lower] && sel != nil {
			// A key of another selection, in capitals.
			msg += "; keys are written in lower case, and " + lower + " does not apply here either"
			if h := r.hint(e, sel, allowed, false); h != "" {
				msg += h
			} else {
				where, _ := belongsTo(lower, *sel)
				msg += where
			}
		} else if h := r.hint(e, sel, allowed, true); h != "" {
			msg += h
		} else {
			msg += "; allowed keys are listed in the README (or start from `enough new DESIGN`)"
		}
		r.fail(&SpecError{File: e.file, Line: e.line, Key: clip(e.key), Msg: msg})
		r.refused[e.key] = true
	}
}

// hint suggests the key that e, unknown or of another selection, most
// likely stands for (a key a typo away too, when typos is set). A key not
// yet given is suggested and its absence is then not reported as well; a
// key given already is named with its line.
func (r *reader) hint(e *entry, sel *selector, allowed map[string]bool, typos bool) string {
	given := r.givenKeys()
	if e.set {
		// --set replaces a key the file gives.
		given = nil
	}
	find := func(given map[string]bool) string {
		if k := suggestKey(e.key, sel, allowed, given); k != "" || !typos {
			return k
		}
		if given[wordKey(e.key)] {
			// The key itself in capitals, given already: no typo of
			// another key.
			return ""
		}
		var names []string
		for a := range allowed {
			if !given[a] {
				names = append(names, a)
			}
		}
		sort.Strings(names)
		if k, ok := nearest(e.key, names); ok {
			return k
		}
		return ""
	}
	if k := find(given); k != "" {
		if sel != nil {
			// A key that goes with none of those given already is no
			// help: it would be refused next.
			if noun, others := exclusive(k, *sel); noun != "" {
				for _, o := range others {
					if ge := r.entries[o]; ge != nil && ge != e {
						return fmt.Sprintf("; %s is given already, by %s %s", noun, o, where(ge))
					}
				}
			}
		}
		r.standsFor[k] = true
		return didYouMean(e, k)
	}
	k := find(nil)
	if k == "" {
		return ""
	}
	ge := r.entries[k]
	if head, sub, nested := strings.Cut(k, "."); nested {
		ge = r.nested[head][sub]
	}
	if ge == nil {
		return ""
	}
	return fmt.Sprintf("; did you mean %q? (it is given already, %s)", k, where(ge))
}

// where says where an entry was given: "at line 4", or "by --set k=v".
func where(e *entry) string {
	if e.line > 0 {
		return fmt.Sprintf("at line %d", e.line)
	}
	return "by " + e.file
}

// didYouMean suggests key k in place of e: a nested key (cluster.icc) is
// shown inside its map, as the file would hold it.
func didYouMean(e *entry, k string) string {
	head, sub, nested := strings.Cut(k, ".")
	if !nested || e.set {
		return fmt.Sprintf("; did you mean %q?", k)
	}
	value := "…"
	if e.node.Kind == yaml.ScalarNode {
		value = clip(e.node.Value)
	}
	return fmt.Sprintf("; did you mean %s: {%s: %s}? (%s belongs inside the %s map)", head, sub, value, sub, head)
}

// reportMisplaced reports the keys that do not belong to this selection
// and removes them, so that no later check reads them.
func (r *reader) reportMisplaced(s *Spec, sel selector, allowed map[string]bool) {
	design, precision := sel.design, sel.goal == "precision" && sel.design == "cross-sectional"
	what := "design " + design
	switch {
	case design == "cross-sectional":
		what += " with goal " + sel.goal
	case s.Outcome != "binary":
		what += " with a " + s.Outcome + " outcome"
	}
	if s.Pairing != "" {
		what += " (" + s.Pairing + ")"
	}
	for _, e := range r.order {
		if allowed[e.key] || r.refused[e.key] {
			continue
		}
		msg := "does not apply to " + what
		switch {
		case e.key == "ratio" && s.Pairing == "paired":
			msg = "does not apply to a paired design: each pair holds one of each; allowed: leave ratio out"
		case sel.goal != "comparison" && sel.design != "cross-sectional" && keysFor(selector{design: sel.design, goal: "comparison", outcome: sel.outcome, hypothesis: sel.hypothesis})[e.key],
			sel.goal == "accuracy" && keysFor(selector{design: sel.design, goal: "comparison", outcome: sel.outcome, hypothesis: sel.hypothesis})[e.key]:
			msg = fmt.Sprintf("does not apply with goal %s, which sizes a study for the width of an interval, not for a test; allowed: leave %s out, or goal: comparison", sel.goal, e.key)
		case (e.key == "ratio" || e.key == "n_second") && sel.matched:
			msg = "does not apply with matching, where each case has matching.controls_per_case controls; allowed: matching.controls_per_case, and no " + e.key
		case e.key == "design_effect" && sel.matched:
			msg = "does not apply with matching, whose sets are analysed conditionally; allowed: leave design_effect out"
		case sel.continuous && keysFor(selector{design: sel.design, goal: sel.goal, outcome: sel.outcome, hypothesis: sel.hypothesis})[e.key]:
			msg = "does not apply with exposure: continuous, where everyone is measured on one exposure and there are no groups; allowed: event_rate and odds_ratio_per_sd (or exposure: groups, for two groups)"
		case e.key == "adjustment" && s.Pairing != "":
			msg = "does not apply to a paired design, whose analysis is within pairs; allowed: leave adjustment out"
		case e.key == "adjustment":
			msg = "does not apply to " + what + "; allowed: adjustment with a binary or continuous outcome of a two-group comparison or a continuous exposure"
		case e.key == "matching":
			msg = "does not apply to " + what + "; allowed: matching with design case-control (a binary exposure)"
		case e.key == "event_rate" || e.key == "odds_ratio_per_sd" || e.key == "exposure":
			msg += "; allowed: " + e.key + " with a binary outcome of design cohort or cross-sectional (exposure: continuous)"
		case (s.Outcome == "rate" && outcomeKey(e.key) == "binary") || (s.Outcome != "rate" && outcomeKey(e.key) == "rate"):
			msg += fmt.Sprintf("; it belongs to outcome %s; allowed: the keys of a %s outcome, or outcome: %s", outcomeKey(e.key), s.Outcome, outcomeKey(e.key))
		case precision && (e.key == "alpha" || e.key == "power" || e.key == "sides"):
			msg += "; a precision survey is set by margin and confidence"
		case e.key == "ratio" && design == "cross-sectional":
			msg += "; the split between groups follows from exposure_prevalence"
		case e.key == "attrition" && s.Outcome == "time-to-event":
			msg += "; a time-to-event plan uses dropout (the fraction lost per time unit) in its place"
		case e.key == "margin_scale" && s.Outcome == "time-to-event" && s.Hypothesis != "superiority":
			msg += "; a time-to-event margin is always a hazard ratio"
		case e.key == "margin_scale" && s.Outcome == "continuous" && s.Hypothesis != "superiority":
			msg += "; the margin of a continuous outcome is a difference in means"
		case e.key == "higher_is_better" && design == "case-control":
			msg += "; a case-control study compares exposure, not an outcome's good or bad values"
		case e.key == "higher_is_better":
			msg += "; it belongs to binary outcomes and to hypothesis non-inferiority"
		case e.key == "margin" || e.key == "margin_scale":
			msg += "; it belongs to hypothesis non-inferiority or equivalence"
		default:
			if h := r.hint(e, &sel, allowed, false); h != "" {
				msg += h
			} else {
				where, outcome := belongsTo(e.key, sel)
				msg += where
				r.outcomeDoubt = r.outcomeDoubt || outcome
			}
		}
		r.refuse(r.errAt(e, "%s", msg))
		delete(r.entries, e.key)
	}
}

// outcomeKey names the outcome a key belongs to when it belongs to one
// outcome only: rate for the keys of events over person-time, binary for
// a two-group design's risks; "" otherwise.
func outcomeKey(key string) string {
	switch key {
	case "unexposed_rate", "rate_ratio", "person_time", "overdispersion":
		return "rate"
	case "unexposed_risk", "exposed_risk", "risk_ratio", "risk_difference":
		return "binary"
	}
	return ""
}

// belongsTo says where a key that does not apply to sel belongs: another
// outcome of the same design (outcome true), a paired design, or other
// designs.
func belongsTo(key string, sel selector) (where string, outcome bool) {
	for _, o := range []string{"binary", "continuous", "time-to-event"} {
		for _, p := range []string{"", "paired"} {
			alt := sel
			alt.outcome, alt.pairing = o, p
			if o != sel.outcome && keysFor(alt)[key] {
				return fmt.Sprintf("; it belongs to a %s outcome (outcome: %s)", o, o), true
			}
		}
	}
	for _, p := range []string{"paired", "crossover"} {
		alt := sel
		alt.pairing = p
		if p != sel.pairing && keysFor(alt)[key] && (p == "paired" || sel.design == "trial") {
			return fmt.Sprintf("; it belongs to a %s design (pairing: %s)", p, p), false
		}
	}
	var designs []string
	for _, d := range Designs {
		for _, g := range []string{"comparison", "precision"} {
			if d != "cross-sectional" && g == "precision" {
				continue
			}
			alt := selector{design: d, goal: g, outcome: sel.outcome, hypothesis: "superiority"}
			if (d != sel.design || g != sel.goal) && keysFor(alt)[key] {
				name := d
				if g == "precision" {
					name += " with goal precision"
				}
				designs = append(designs, name)
				break
			}
		}
	}
	if len(designs) > 0 {
		return "; it belongs to design " + orList(designs), false
	}
	return "", false
}

// checkSources refuses a source that names no key of the specification.
func (r *reader) checkSources() {
	for _, k := range r.sortedSourceKeys() {
		e := r.nested["sources"][k]
		head, sub, dotted := strings.Cut(k, ".")
		if r.refused[k] || r.refused[head] {
			// Its key is reported already.
			continue
		}
		if info, ok := specKeys[k]; ok && info.kind == kindMap && r.get(k) != nil {
			r.refuse(r.errAt(e, "names a group of keys; allowed: one of its keys, such as sources.%s.%s", k, map[string]string{"cluster": "icc", "simulate": "seed", "sources": "alpha"}[k]))
			continue
		}
		if r.get(k) != nil || (dotted && r.nested[head][sub] != nil) {
			continue
		}
		var present []string
		for _, g := range r.order {
			if g.key != "sources" && r.entries[g.key] != nil {
				present = append(present, g.key)
			}
		}
		msg := "names no key of this specification; allowed: a key the specification sets"
		if sug, ok := nearest(k, present); ok {
			msg += fmt.Sprintf(" (did you mean %q?)", sug)
		}
		r.refuse(r.errAt(e, "%s", msg))
	}
}

// counterpart maps a key of another design to the key that plays the same
// role in this design: control_risk in a cohort is unexposed_risk.
func counterpart(key, design string) (string, bool) {
	ro, ok := roles[design]
	if !ok {
		return "", false
	}
	for _, other := range roles {
		if key == other.reference {
			return ro.reference, true
		}
		// The last effect key of each design is the first group's risk.
		if key == other.effects[len(other.effects)-1] {
			return ro.effects[len(ro.effects)-1], true
		}
	}
	if _, known := specKeys[key]; !known {
		return "", false
	}
	if sc := scaleOf(key); sc != ScaleRisk {
		for _, k := range ro.effects {
			if scaleOf(k) == sc {
				return k, true
			}
		}
	}
	return "", false
}

// rangeNum reads an optional number with a default and a range check; on a
// problem, recorded, it returns the default and false.
func (r *reader) rangeNum(key string, def float64, in func(float64) bool) (float64, bool) {
	x, _, ok := r.optNum(key, def, in)
	return x, ok
}

// optNum reads an optional number checked by in: def when absent. On a
// problem, recorded, it returns def, the key's entry and false.
func (r *reader) optNum(key string, def float64, in func(float64) bool) (float64, *entry, bool) {
	x, e, err := r.number(key)
	if !r.keep(err) {
		return def, e, false
	}
	if e == nil {
		return def, nil, true
	}
	if !in(x) {
		r.refuse(r.rangeErr(e, x, specKeys[key].allowed, in))
		return def, e, false
	}
	return x, e, true
}

func in01(x float64) bool { return x > 0 && x < 1 }

// probability reads a required probability from MinRisk to 1 − MinRisk,
// what says what it is; on a problem, recorded, it returns false.
func (r *reader) probability(key, what string) (float64, bool) {
	x, e, err := r.number(key)
	switch {
	case !r.keep(err):
		return 0, false
	case e == nil:
		r.missing(key, "", what+", "+allowedRisk)
		return 0, false
	case !inRisk(x):
		r.refuse(r.rangeErr(e, x, allowedRisk, inRisk))
		return 0, false
	}
	return x, true
}

// inPrecisionRatio is the range of precision_ratio: above 1, at most 1000.
func inPrecisionRatio(x float64) bool { return x > 1 && x <= MaxRatio }

// buildRatioPrecision reads a risk ratio (cohort) or odds ratio
// (case-control) to be estimated to a stated precision: the ratio of the
// upper to the lower limit of its interval, the groups' risks or
// exposures, the allocation and the confidence.
func (r *reader) buildRatioPrecision(s *Spec) {
	s.Hypothesis = "superiority"
	def := map[string]string{"cohort": "katz", "case-control": "woolf"}[s.Design]
	var err *SpecError
	if s.Method, _, err = r.choice("method", def, def); err != nil {
		r.refuse(r.methodError(s))
		s.Method = def
	}
	s.Ratio, _ = r.rangeNum("ratio", 1, inRatio)
	s.Confidence, _ = r.rangeNum("confidence", 0.95, inConfidence)
	switch s.Solve {
	case "n":
		r.target(s, "precision_ratio", "n", specKeys["precision_ratio"].allowed, inPrecisionRatio, &s.PrecisionRatio)
	case "effect":
		if r.size(s, "n", "required when solving effect", "the number enrolled in the "+roles[s.Design].first) {
			n2, n2e, err := r.whole("n_second")
			switch {
			case !r.keep(err) || n2e == nil:
			case n2 < 1 || n2 > MaxSize:
				r.refuse(r.errAt(n2e, "%d is out of range; allowed: a whole number from 1 to 10⁹", n2))
			case r.get("ratio") != nil:
				r.refuse(r.errAt(n2e, "given together with ratio; allowed: one of them (n_second fixes the second group's enrolment)"))
			default:
				s.NSecond, s.Ratio = n2, float64(n2)/float64(s.N)
			}
		}
		if r.get("precision_ratio") != nil {
			s.Ignored = append(s.Ignored, "precision_ratio is ignored when solving effect (the precision is what is solved)")
		}
	}
	r.buildBinary(s)
	r.buildSimulate(s)
}

// target reads the precision a plan solving n is sized for (key, required,
// within in, what allowed says) into dst; the size key, which solving n
// does not use, is noted as ignored.
func (r *reader) target(s *Spec, key, size, allowed string, in func(float64) bool, dst *float64) {
	x, e, err := r.number(key)
	switch {
	case !r.keep(err):
	case e == nil:
		if !r.solveBad {
			r.missing(key, "required when solving n", allowed)
		}
	case !in(x):
		r.refuse(r.rangeErr(e, x, allowed, in))
	default:
		*dst = x
	}
	if r.get(size) != nil {
		s.Ignored = append(s.Ignored, size+" is ignored when solving n")
	}
}

// buildAccuracy reads a study of diagnostic accuracy: the expected
// sensitivity and specificity, the prevalence of the condition among those
// tested, the margin (solving n) or the total (solving effect) and the
// confidence.
func (r *reader) buildAccuracy(s *Spec) {
	r.marginKind = "fraction"
	var err *SpecError
	if s.Method, _, err = r.choice("method", "buderer", "buderer"); err != nil {
		r.refuse(r.methodError(s))
		s.Method = "buderer"
	}
	s.Sensitivity, _ = r.probability("sensitivity", "the sensitivity the test is expected to have")
	s.Specificity, _ = r.probability("specificity", "the specificity the test is expected to have")
	s.ConditionPrevalence, _ = r.probability("condition_prevalence", "the prevalence of the condition among those to be tested")
	s.Confidence, _ = r.rangeNum("confidence", 0.95, inConfidence)
	switch s.Solve {
	case "n":
		r.target(s, "margin", "total", "the half-width of the intervals of sensitivity and specificity, a number in (0, 0.5)", inSurveyMargin, &s.Margin)
	case "effect":
		r.size(s, "total", "required when solving effect", "the number of people to be tested")
		if r.get("margin") != nil {
			s.Ignored = append(s.Ignored, "margin is ignored when solving effect (the margins are what is solved)")
		}
	}
	r.buildSimulate(s)
}

func (r *reader) buildPrecision(s *Spec) {
	var err *SpecError
	methods := []string{"wald", "wald", "wilson", "clopper-pearson"}
	if s.Outcome == "continuous" {
		methods = []string{"t-interval", "t-interval"}
	}
	if s.Method, _, err = r.choice("method", methods[0], methods[1:]...); err != nil {
		r.refuse(r.methodError(s))
		s.Method = methods[0]
	}
	if s.Outcome == "continuous" {
		sd, sde, err := r.number("sd")
		switch {
		case !r.keep(err):
		case sde == nil:
			r.missing("sd", "", "the standard deviation of the measurement, a number above 0")
		case !inPositive(sd):
			r.refuse(r.rangeErr(sde, sd, "a number above 0", inPositive))
		default:
			s.SD1, s.SD2, s.RawSD1, s.RawSD2 = sd, sd, sd, sd
		}
	} else {
		s.ExpectedPrevalence, _ = r.probability("expected_prevalence", "the prevalence you expect to estimate")
	}
	s.Confidence, _ = r.rangeNum("confidence", 0.95, inConfidence)
	pop, pe, err := r.whole("population")
	popOK := r.keep(err)
	if popOK && pe != nil && pop < 2 {
		r.refuse(r.errAt(pe, "%d is out of range; allowed: %s", pop, specKeys["population"].allowed))
		popOK = false
	} else if popOK {
		s.Population = pop
	}
	r.marginKind = "fraction"
	inMargin, allowedMargin := inSurveyMargin, "a number in (0, 0.5)"
	if s.Outcome == "continuous" {
		// A mean's margin is in the measurement's units.
		r.marginKind = ""
		inMargin, allowedMargin = func(x float64) bool {
			// Judged against the standard deviation only when it is known:
			// a bad sd is reported once, not again through the margin.
			return x > 0 && !math.IsInf(x, 0) && (s.SD1 == 0 || x <= MaxStandardized*s.SD1)
		}, "a number above 0, in the measurement's units, at most 100 standard deviations"
	}
	switch s.Solve {
	case "n":
		m, me, err := r.number("margin")
		switch {
		case !r.keep(err):
		case me == nil:
			if !r.solveBad {
				r.missing("margin", "required when solving n", "the half-width of the confidence interval, "+allowedMargin)
			}
		case !inMargin(m):
			r.refuse(r.rangeErr(me, m, allowedMargin, inMargin))
		default:
			s.Margin = m
		}
		if e := r.get("total"); e != nil {
			s.Ignored = append(s.Ignored, "total is ignored when solving n")
		}
	case "effect":
		sizeOK := r.size(s, "total", "required when solving effect", "the number of people to be surveyed")
		if r.get("margin") != nil {
			s.Ignored = append(s.Ignored, "margin is ignored when solving effect (the margin is what is solved)")
		}
		if sizeOK && popOK && s.Population > 0 && s.Total > s.Population {
			r.refuse(r.errAt(r.get("total"), "%d is more than the population of %d; allowed: at most the population", s.Total, s.Population))
		}
	}
	r.buildSimulate(s)
}

// methodError explains why the method key is refused.
func (r *reader) methodError(s *Spec) *SpecError {
	var fits []string
	for _, m := range Methods {
		if m.servesSpec(s) {
			fits = append(fits, m.ID)
		}
	}
	e := r.get("method")
	if e == nil {
		return r.errAt(r.entries["method"], "has no value; allowed: %s", orList(fits))
	}
	if e.node.Kind != yaml.ScalarNode {
		return r.errAt(e, "is not a single value; allowed: %s", orList(fits))
	}
	name := strings.TrimSpace(e.node.Value)
	what := "design " + s.Design
	if s.Design == "cross-sectional" {
		what += " with goal " + s.Goal
	}
	if s.Outcome != "binary" && s.Outcome != "" {
		what += " with a " + s.Outcome + " outcome"
	}
	if s.Hypothesis != "superiority" && s.Hypothesis != "" {
		what += " and hypothesis " + s.Hypothesis
	}
	switch {
	case s.Matched && s.Controls == 1:
		what = "a matched case-control study with one control per case"
	case s.Matched:
		what = fmt.Sprintf("a matched case-control study with %d controls per case", s.Controls)
	case s.Design == "case-control":
		what = "an unmatched case-control study"
	}
	for _, m := range Methods {
		switch {
		case m.ID != name:
		case m.PairsOnly && s.Matched:
			return r.errAt(e, "%s serves one control per case (matching.controls_per_case 1), not %d; allowed: %s", name, s.Controls, orList(fits))
		case m.Matched && !s.Matched:
			return r.errAt(e, "%s serves matched sets; allowed without a matching block: %s (or add matching: {controls_per_case: M})", name, orList(fits))
		default:
			return r.errAt(e, "%s does not fit %s; allowed: %s", name, what, orList(fits))
		}
	}
	msg := fmt.Sprintf("%s is not a method; allowed for %s: %s", show(e.node), what, orList(fits))
	var all []string
	for _, m := range Methods {
		all = append(all, m.ID)
	}
	if sug, ok := nearest(name, all); ok {
		msg += fmt.Sprintf(" (did you mean %q?)", sug)
	}
	return r.errAt(e, "%s", msg)
}

// size reads the group or survey size key, required (why) and what it is;
// on a problem, recorded, it returns false.
func (r *reader) size(s *Spec, key, why, what string) bool {
	x, e, err := r.whole(key)
	switch {
	case !r.keep(err):
		return false
	case e == nil:
		r.missing(key, why, what+", a whole number of at least 2")
		return false
	case x < 2:
		r.refuse(r.errAt(e, "%d is out of range; allowed: %s", x, specKeys[key].allowed))
		return false
	}
	if key == "n" {
		s.N = x
	} else {
		s.Total = x
	}
	return true
}

// effectToP1 checks the effect value and converts it to the first group's
// risk; p2OK says whether the reference risk is usable. It records a
// problem and returns false when the effect cannot be used.
func (r *reader) effectToP1(s *Spec, e *entry, p2OK bool) bool {
	x, p2 := s.EffectValue, s.P2
	p1, ok := effectP1(s.EffectKey, x, p2)
	if !ok {
		switch scaleOf(s.EffectKey) {
		case ScaleRatio, ScaleOdds:
			r.refuse(r.rangeErr(e, x, allowedRatio, inRatio))
		case ScaleDifference:
			r.refuse(r.rangeErr(e, x, "a number in (-1, 1)", inOpen1))
		default:
			r.refuse(r.rangeErr(e, x, allowedRisk, inRisk))
		}
		return false
	}
	if !p2OK {
		return false
	}
	if s.Solve == "effect" {
		// The value only names the scale, and for a one-sided test the
		// direction the test looks.
		if in01(p1) {
			s.P1 = p1
		}
		return true
	}
	ro := roles[s.Design]
	if !inRisk(p1) {
		r.refuse(r.errAt(e, "%s with %s %g gives a risk of %.4g in the %s; allowed: an effect that keeps the risk from 1e-9 to 1 − 1e-9", show(e.node), s.ReferenceKey, p2, p1, ro.first))
		return false
	}
	if math.Abs(p1-p2) < 1e-12 {
		if s.Hypothesis != "superiority" || s.Goal == "precision" {
			// No true difference: the usual assumption of such trials, and
			// a ratio of 1 estimated to a precision.
			s.P1 = p2
			return true
		}
		if !r.solveBad {
			r.refuse(r.errAt(e, "%s means no difference between the groups: nothing to detect; allowed: an effect other than no difference (or solve: effect)", show(e.node)))
		}
		return false
	}
	s.P1 = p1
	return true
}

// effectP1 converts the effect x, stated by key, into the first group's
// risk against the second group's p2; ok is false when x is outside the
// range of its scale (a ratio from 1/MaxRatio to MaxRatio, a difference in
// (−1, 1), a risk within the named limits).
//
//	ratio: p1 = x p2;  odds ratio: p1 = x p2 / (1 + p2 (x − 1));
//	difference: p1 = p2 + x;  risk: p1 = x
func effectP1(key string, x, p2 float64) (p1 float64, ok bool) {
	switch sc := scaleOf(key); sc {
	case ScaleRatio, ScaleOdds:
		if !inRatio(x) {
			return 0, false
		}
		if sc == ScaleRatio {
			return x * p2, true
		}
		return x * p2 / (1 + p2*(x-1)), true
	case ScaleDifference:
		return p2 + x, inOpen1(x)
	}
	return x, inRisk(x)
}

// Scale is the scale on which an effect is stated.
type Scale int

// Effect scales.
const (
	ScaleRisk       Scale = iota // the first group's risk itself
	ScaleRatio                   // risk (prevalence) ratio
	ScaleOdds                    // odds ratio
	ScaleDifference              // risk (prevalence) difference
)

func scaleOf(key string) Scale {
	switch {
	case strings.HasSuffix(key, "_ratio") && key != "odds_ratio":
		return ScaleRatio
	case key == "odds_ratio":
		return ScaleOdds
	case strings.HasSuffix(key, "_difference"):
		return ScaleDifference
	}
	return ScaleRisk
}
