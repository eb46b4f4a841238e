package designs

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// Designs lists the study designs of specification version 1.
var Designs = []string{"cohort", "case-control", "trial", "cross-sectional"}

// build validates the collected keys into a Spec.
func (r *reader) build() (*Spec, error) {
	s := &Spec{Sources: r.sourceMap()}

	// version
	v, ve, err := r.whole("version")
	if err != nil {
		return nil, err
	}
	if ve == nil {
		return nil, r.errFile("version", "missing; allowed: 1 (add the line `version: 1`)")
	}
	if v != 1 {
		return nil, r.errAt(ve, "%d is not supported; allowed: 1", v)
	}

	// design and goal
	design, de, err := r.choice("design", "", Designs...)
	if err != nil {
		return nil, err
	}
	if de == nil {
		return nil, r.errFile("design", "missing; allowed: %s", orList(Designs))
	}
	s.Design = design
	goal, ge, err := r.choice("goal", "comparison", "comparison", "precision")
	if err != nil {
		return nil, err
	}
	if ge != nil && design != "cross-sectional" {
		return nil, r.errAt(ge, "applies only to design cross-sectional; a %s study always compares two groups", design)
	}
	if design == "cross-sectional" {
		s.Goal = goal
	}
	precision := s.Goal == "precision"

	// outcome, pairing and hypothesis decide the other keys
	outcomes := []string{"binary", "continuous", "time-to-event"}
	var oe *entry
	s.Outcome, oe, err = r.choice("outcome", "binary", outcomes...)
	if err != nil {
		return nil, err
	}
	switch {
	case precision && s.Outcome != "binary":
		return nil, r.errAt(oe, "%s does not apply to a precision survey, which estimates one prevalence; allowed: binary", s.Outcome)
	case design == "case-control" && s.Outcome != "binary":
		return nil, r.errAt(oe, "%s does not apply to a case-control study, which compares exposure between cases and controls; allowed: binary", s.Outcome)
	case s.Outcome == "time-to-event" && design != "trial":
		return nil, r.errAt(oe, "time-to-event applies to design trial; allowed for design %s: binary or continuous", design)
	}
	if s.Pairing, _, err = r.choice("pairing", "", "paired", "crossover"); err != nil {
		return nil, err
	}
	if pe := r.get("pairing"); pe != nil && s.Pairing == "crossover" && design != "trial" {
		return nil, r.errAt(pe, "crossover applies to design trial; allowed for design %s: paired", design)
	}
	if s.Hypothesis, _, err = r.choice("hypothesis", "superiority", "superiority", "non-inferiority", "equivalence"); err != nil {
		return nil, err
	}
	sel := selector{design: design, goal: goal, outcome: s.Outcome, pairing: s.Pairing, hypothesis: s.Hypothesis}
	if r.get("outcome") == nil && (r.get("mean_difference") != nil || r.get("hazard_ratio") != nil) {
		e := r.get("mean_difference")
		want := "continuous"
		if e == nil {
			e, want = r.get("hazard_ratio"), "time-to-event"
		}
		return nil, r.errAt(e, "belongs to a %s outcome; add `outcome: %s` (the default outcome is binary)", want, want)
	}

	// keys that do not belong to this selection
	allowed := keysFor(sel)
	for _, e := range r.order {
		if allowed[e.key] {
			continue
		}
		var names []string
		for k := range allowed {
			names = append(names, k)
		}
		sort.Strings(names)
		what := "design " + design
		switch {
		case design == "cross-sectional":
			what += " with goal " + goal
		case s.Outcome != "binary":
			what += " with a " + s.Outcome + " outcome"
		}
		if s.Pairing != "" {
			what += " (" + s.Pairing + ")"
		}
		msg := fmt.Sprintf("does not apply to %s", what)
		switch {
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
			if sug, ok := counterpart(e.key, design); ok && allowed[sug] {
				msg += fmt.Sprintf("; did you mean %q?", sug)
			} else if sug, ok := nearest(e.key, names); ok {
				msg += fmt.Sprintf("; did you mean %q?", sug)
			}
		}
		return nil, r.errAt(e, "%s", msg)
	}

	// solve
	solves := []string{"n", "power", "effect"}
	if precision {
		solves = []string{"n", "effect"}
	}
	var se *entry
	s.Solve, se, err = r.choice("solve", "n", solves...)
	if err != nil {
		if e := r.get("solve"); precision && e != nil && e.node.Value == "power" {
			return nil, r.errAt(e, "power does not apply to a precision survey; allowed: n (the size for a margin) or effect (the margin for a size)")
		}
		return nil, err
	}
	_ = se

	// text
	if s.Title, _, err = r.text("title"); err != nil {
		return nil, err
	}
	if s.Title == "" {
		s.Title = "Untitled study"
	}
	if s.PrimaryOutcome, _, err = r.text("primary_outcome"); err != nil {
		return nil, err
	}
	if s.FirstGroup, _, err = r.text("first_group"); err != nil {
		return nil, err
	}
	if s.SecondGroup, _, err = r.text("second_group"); err != nil {
		return nil, err
	}

	// inflation
	if s.Attrition, err = r.rangeNum("attrition", 0, func(x float64) bool { return x >= 0 && x < 1 }); err != nil {
		return nil, err
	}
	if s.DesignEffect, err = r.rangeNum("design_effect", 1, func(x float64) bool { return x >= 1 && x <= 1000 }); err != nil {
		return nil, err
	}

	if precision {
		err = r.buildPrecision(s)
	} else {
		err = r.buildComparison(s)
	}
	if err != nil {
		return nil, err
	}

	// sources must name keys of this specification
	for _, k := range r.sortedSourceKeys() {
		e := r.nested["sources"][k]
		if info, ok := specKeys[k]; ok && info.kind == kindMap && r.get(k) != nil {
			return nil, r.errAt(e, "names a group of keys; allowed: one of its keys, such as sources.%s.%s", k, map[string]string{"cluster": "icc", "simulate": "seed", "sources": "alpha"}[k])
		}
		if r.get(k) != nil {
			continue
		}
		if head, sub, ok := strings.Cut(k, "."); ok && r.nested[head][sub] != nil {
			continue
		}
		var present []string
		for _, g := range r.order {
			if g.key != "sources" {
				present = append(present, g.key)
			}
		}
		msg := "names no key of this specification; allowed: a key the specification sets"
		if sug, ok := nearest(k, present); ok {
			msg += fmt.Sprintf(" (did you mean %q?)", sug)
		}
		return nil, r.errAt(e, "%s", msg)
	}
	s.Given = r.given()
	return s, nil
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
	if sc := scaleOf(key); sc != ScaleRisk {
		for _, k := range ro.effects {
			if scaleOf(k) == sc {
				return k, true
			}
		}
	}
	return "", false
}

// rangeNum reads an optional number with a default and a range check.
func (r *reader) rangeNum(key string, def float64, ok func(float64) bool) (float64, error) {
	x, e, err := r.number(key)
	if err != nil {
		return 0, err
	}
	if e == nil {
		return def, nil
	}
	if !ok(x) {
		return 0, r.errAt(e, "%s is out of range; allowed: %s", e.node.Value, specKeys[key].allowed)
	}
	return x, nil
}

// probability reads a required probability in (0, 1).
func (r *reader) probability(key, why string) (float64, error) {
	x, e, err := r.number(key)
	if err != nil {
		return 0, err
	}
	if e == nil {
		return 0, r.errFile(key, "missing; %s, a probability in (0, 1)", why)
	}
	if !(x > 0 && x < 1) {
		return 0, r.errAt(e, "%s is out of range; allowed: a probability strictly between 0 and 1", e.node.Value)
	}
	return x, nil
}

func (r *reader) buildPrecision(s *Spec) error {
	var err error
	s.Method, _, err = r.choice("method", "wald", "wald")
	if err != nil {
		return r.methodError(s)
	}
	if s.ExpectedPrevalence, err = r.probability("expected_prevalence", "required: the prevalence you expect to estimate"); err != nil {
		return err
	}
	if s.Confidence, err = r.rangeNum("confidence", 0.95, func(x float64) bool { return x >= 0.5 && x < 1 }); err != nil {
		return err
	}
	pop, pe, err := r.whole("population")
	if err != nil {
		return err
	}
	if pe != nil && pop < 2 {
		return r.errAt(pe, "%d is out of range; allowed: %s", pop, specKeys["population"].allowed)
	}
	s.Population = pop
	switch s.Solve {
	case "n":
		m, me, err := r.number("margin")
		if err != nil {
			return err
		}
		if me == nil {
			return r.errFile("margin", "missing; required when solving n: the half-width of the confidence interval, in (0, 0.5)")
		}
		if !(m > 0 && m < 0.5) {
			return r.errAt(me, "%s is out of range; allowed: a number in (0, 0.5)", me.node.Value)
		}
		s.Margin = m
		if e := r.get("total"); e != nil {
			s.Ignored = append(s.Ignored, "total is ignored when solving n")
		}
	case "effect":
		if err := r.size(s, "total", "required when solving effect: the number of people to be surveyed"); err != nil {
			return err
		}
		if r.get("margin") != nil {
			s.Ignored = append(s.Ignored, "margin is ignored when solving effect (the margin is what is solved)")
		}
		if s.Population > 0 && s.Total > s.Population {
			e := r.get("total")
			return r.errAt(e, "%d is more than the population of %d; allowed: at most the population", s.Total, s.Population)
		}
	}
	return nil
}

func (r *reader) methodError(s *Spec) error {
	if r.get("method") == nil {
		var fits []string
		for _, m := range Methods {
			if m.serves(s.Design, s.Goal, s.Outcome, s.Hypothesis) {
				fits = append(fits, m.ID)
			}
		}
		return r.errAt(r.entries["method"], "has no value; allowed: %s", orList(fits))
	}
	e := r.get("method")
	name := strings.TrimSpace(e.node.Value)
	var fits []string
	for _, m := range Methods {
		if m.serves(s.Design, s.Goal, s.Outcome, s.Hypothesis) {
			fits = append(fits, m.ID)
		}
	}
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
	for _, m := range Methods {
		if m.ID == name {
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

// size reads the required group or survey size key.
func (r *reader) size(s *Spec, key, why string) error {
	x, e, err := r.whole(key)
	if err != nil {
		return err
	}
	if e == nil {
		return r.errFile(key, "missing; %s, a whole number of at least 2", why)
	}
	if x < 2 {
		return r.errAt(e, "%d is out of range; allowed: %s", x, specKeys[key].allowed)
	}
	if key == "n" {
		s.N = x
	} else {
		s.Total = x
	}
	return nil
}

// effectToP1 checks the effect value and converts it to the first group's
// risk.
func (r *reader) effectToP1(s *Spec, e *entry) error {
	x, p2 := s.EffectValue, s.P2
	var p1 float64
	switch scaleOf(s.EffectKey) {
	case ScaleRatio, ScaleOdds:
		if !(x > 0) {
			return r.errAt(e, "%s is out of range; allowed: a number above 0", e.node.Value)
		}
		if scaleOf(s.EffectKey) == ScaleRatio {
			p1 = x * p2
		} else {
			p1 = x * p2 / (1 + p2*(x-1))
		}
	case ScaleDifference:
		if !(x > -1 && x < 1) {
			return r.errAt(e, "%s is out of range; allowed: a number in (-1, 1)", e.node.Value)
		}
		p1 = p2 + x
	case ScaleRisk:
		if !(x > 0 && x < 1) {
			return r.errAt(e, "%s is out of range; allowed: a probability strictly between 0 and 1", e.node.Value)
		}
		p1 = x
	}
	if s.Solve == "effect" {
		// The value only names the scale, and for a one-sided test the
		// direction the test looks.
		if p1 > 0 && p1 < 1 {
			s.P1 = p1
		}
		return nil
	}
	ro := roles[s.Design]
	if !(p1 > 0 && p1 < 1) {
		return r.errAt(e, "%s with %s %g gives a risk of %.4g in the %s; allowed: an effect that keeps the risk strictly between 0 and 1", e.node.Value, s.ReferenceKey, p2, p1, ro.first)
	}
	if math.Abs(p1-p2) < 1e-12 {
		if s.Hypothesis != "superiority" {
			// No true difference: the usual assumption of such trials.
			s.P1 = p2
			return nil
		}
		return r.errAt(e, "%s means no difference between the groups: nothing to detect; allowed: an effect other than no difference (or solve: effect)", e.node.Value)
	}
	s.P1 = p1
	return nil
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
