package review

import (
	"sort"

	"enough/designs"
)

// sensitivityChanges are the fractions by which each assumption is made
// less favourable (issue 10, item 6).
var sensitivityChanges = []float64{0.1, 0.2}

// lever is one assumption the sensitivity analysis moves: its key, its
// value, and how a change of fraction f makes it less favourable (both
// directions tried when the less favourable one depends on the plan).
type lever struct {
	key  string
	from float64
	// to returns the values to try for fraction f, each a valid value of
	// the key; the one giving the larger size is kept.
	to func(f float64) []float64
}

// sensitivity recomputes the size with each assumption made 10% and 20%
// less favourable, one at a time, largest enrolment first (then largest
// analysable total; issue 10, item 6):
//
//   - the effect moved towards no effect by that fraction on its own scale:
//     a ratio x becomes 1 + (x − 1)(1 − f), a difference d becomes
//     d (1 − f), a first-group risk or mean p₁ becomes p₂ + (p₁ − p₂)(1 − f);
//     a non-inferiority, equivalence or precision margin M becomes M (1 − f)
//     (a ratio margin 1 + (M − 1)(1 − f));
//   - every standard deviation, the ICC, the attrition, the dropout, the
//     non-adherence and the contamination × (1 + f); a design effect d
//     becomes 1 + (d − 1)(1 + f); a baseline or within-pair correlation
//     × (1 − f);
//   - the reference value (risk, prevalence, median or survival) moved by
//     f of its value in whichever direction gives the larger size, the
//     effect key held at its stated value (a risk ratio stays a risk
//     ratio; a first-group risk stays that risk).
//
// A variant that cannot be planned gives an entry with the reason.
func (rc *recheck) sensitivity() []Sensitivity {
	out := []Sensitivity{}
	for _, lv := range rc.levers() {
		for _, f := range sensitivityChanges {
			e := Sensitivity{Key: lv.key, Change: f, From: lv.from}
			var firstErr error
			for _, to := range lv.to(f) {
				res, err := rc.plan(designs.Set(lv.key, round12(to)))
				if err != nil {
					if firstErr == nil {
						firstErr = err
					}
					continue
				}
				a := res.Result
				if e.Total == nil || a.EnrolTotal > *e.EnrolTotal || (a.EnrolTotal == *e.EnrolTotal && a.Total > *e.Total) {
					n, t, en := a.N[0], a.Total, a.EnrolTotal
					e.N, e.Total, e.EnrolTotal, e.To = &n, &t, &en, round12(to)
				}
			}
			if e.Total == nil {
				if tos := lv.to(f); len(tos) > 0 {
					e.To = round12(tos[0])
				}
				e.Error = "could not be planned"
				if firstErr != nil {
					e.Error = firstErr.Error()
				}
			}
			out = append(out, e)
		}
	}
	sort.SliceStable(out, func(i, j int) bool {
		a, b := out[i], out[j]
		switch {
		case a.Total == nil || b.Total == nil:
			return a.Total != nil && b.Total == nil
		case *a.EnrolTotal != *b.EnrolTotal:
			return *a.EnrolTotal > *b.EnrolTotal
		}
		return *a.Total > *b.Total
	})
	return out
}

// levers lists the assumptions the protocol gives that the sensitivity
// analysis moves.
func (rc *recheck) levers() []lever {
	s := rc.spec
	p := &Protocol{In: rc.in, Spec: s}
	var out []lever
	given := func(key string) (float64, bool) {
		x, ok := p.value(key)
		return x, ok
	}
	add := func(key string, to func(x, f float64) []float64, when func(x float64) bool) {
		x, ok := given(key)
		if !ok || !when(x) {
			return
		}
		out = append(out, lever{key: key, from: x, to: func(f float64) []float64 { return to(x, f) }})
	}
	always := func(float64) bool { return true }
	positive := func(x float64) bool { return x > 0 }
	one := func(v float64) []float64 { return []float64{v} }
	towardsOne := func(x, f float64) []float64 { return one(1 + (x-1)*(1-f)) }
	shrink := func(x, f float64) []float64 { return one(x * (1 - f)) }
	grow := func(x, f float64) []float64 { return one(x * (1 + f)) }
	fraction := func(x, f float64) []float64 {
		if y := x * (1 + f); y < 1 {
			return one(y)
		}
		return nil
	}

	// The effect.
	switch {
	case s.Goal == "precision":
		add("margin", shrink, positive)
	case s.Hypothesis == "non-inferiority" || s.Hypothesis == "equivalence":
		ratioMargin := s.Outcome == "time-to-event" || (s.Outcome != "continuous" && s.MarginScale == "ratio")
		if ratioMargin {
			add("margin", towardsOne, always)
		} else {
			add("margin", shrink, positive)
		}
	default:
		for _, k := range []string{"risk_ratio", "odds_ratio", "prevalence_ratio", "hazard_ratio", "rate_ratio", "odds_ratio_per_sd"} {
			add(k, towardsOne, always)
		}
		for _, k := range []string{"risk_difference", "prevalence_difference", "mean_difference"} {
			add(k, shrink, always)
		}
		for _, k := range []string{"exposed_risk", "intervention_risk", "case_exposure", "exposed_prevalence"} {
			ref := s.P2
			add(k, func(x, f float64) []float64 { return one(ref + (x-ref)*(1-f)) }, always)
		}
		for _, pair := range [][2]string{{"intervention_mean", "control_mean"}, {"exposed_mean", "unexposed_mean"}} {
			if ref, ok := given(pair[1]); ok {
				add(pair[0], func(x, f float64) []float64 { return one(ref + (x-ref)*(1-f)) }, always)
			}
		}
	}

	// The spread, the clustering and the losses.
	for _, k := range []string{"sd", "sd_first", "sd_second", "sd_difference"} {
		add(k, grow, positive)
	}
	add("cluster.icc", fraction, positive)
	add("design_effect", func(x, f float64) []float64 { return one(1 + (x-1)*(1+f)) }, func(x float64) bool { return x > 1 })
	for _, k := range []string{"attrition", "dropout", "non_adherence", "contamination"} {
		add(k, fraction, positive)
	}
	for _, k := range []string{"baseline_correlation", "within_correlation"} {
		add(k, shrink, positive)
	}
	// The correlation of exposure within matched sets and the R² of the
	// exposure on the covariates: larger, fewer informative sets and less
	// information (those beyond their ranges are left out by the plan's
	// own refusal).
	add("matching.exposure_correlation", fraction, positive)
	add("adjustment.r_squared", fraction, positive)
	add("overdispersion", grow, positive)

	// The reference value, in whichever direction raises the size.
	both := func(x, f float64) []float64 { return []float64{x * (1 - f), x * (1 + f)} }
	risk := func(x, f float64) []float64 {
		var tos []float64
		for _, y := range both(x, f) {
			if y >= 1e-9 && y <= 1-1e-9 {
				tos = append(tos, y)
			}
		}
		return tos
	}
	switch {
	case s.Goal == "precision":
		add("expected_prevalence", risk, always)
	case s.Outcome == "time-to-event":
		add("control_median", both, positive)
		add("control_survival", risk, always)
	case s.Outcome == "continuous":
	case s.Outcome == "rate":
		add("unexposed_rate", both, positive)
	case s.ContinuousExposure:
		add("event_rate", risk, always)
	default:
		if s.ReferenceKey != "" {
			add(s.ReferenceKey, risk, always)
		}
	}
	return out
}
