package designs

import (
	"math"

	"enough/power"
)

// The smallest detectable effect is found the same way for every method,
// outcome and design: the undiluted effect (the effect of receiving the
// intervention, which the investigator plans for) is moved away from no
// difference until the power that solving power would report at the same
// sizes — after dilution, with the same clusters, alpha and method —
// reaches the target. Solving n at the effect found therefore gives back
// the sizes it was solved at, and solving power there gives the target.

// detectScan is the number of steps of the outward scan for the first
// crossing of the target; power need not be monotone in the effect (the
// Freedman effect is bounded, and binary powers turn near 0 and 1).
const detectScan = 512

// detectable finds the smallest detectable effect in each direction the
// test looks, with what an intention-to-treat analysis sees of it, and
// records the steps on tr.
func detectable(s *Spec, m *MethodInfo, e effects, sz sizes, tr *trail) *Detectable {
	d := &Detectable{Scale: s.EffectKey}
	dirs := []int{-1, 1}
	if s.Sides == 1 {
		// A one-sided test detects effects on its own side only.
		dirs = []int{s.Direction}
		d.Direction = map[int]string{-1: "lower", 1: "upper"}[s.Direction]
	}
	ins := sizeInputs(s, tr, sz)
	switch s.Outcome {
	case "continuous":
		ins = append(ins, sdInputs(s)...)
	case "time-to-event":
		ins = append(ins, in("control_hazard", s.ControlHazard))
	case "rate":
		ins = append(ins, in("unexposed_rate", s.UnexposedRate), in("person_time", s.PersonTime))
	default:
		if s.ContinuousExposure {
			ins = append(ins, in("event_rate", s.EventRate))
			break
		}
		ins = append(ins, in("second_risk", s.P2))
	}
	ins = append(ins, alphaInput(s, e), inInt("sides", s.Sides), in("target_power", s.Power))
	if e.clusterK[0] > 0 {
		ins = append(ins, inInt("clusters_first", e.clusterK[0]), inInt("clusters_second", e.clusterK[1]))
	}
	if e.diluted {
		d.Diluted = &DilutedBounds{}
		ins = append(ins, in("non_adherence", e.na), in("contamination", e.c))
	}
	for _, dir := range dirs {
		x, ok := detectEffect(s, m, e, sz, dir)
		if !ok {
			continue
		}
		v, planned, diluted, dv := restate(s, e, x)
		if math.IsInf(v, 0) || math.IsNaN(v) || math.IsInf(dv, 0) || math.IsNaN(dv) {
			// A ratio against a reference risk so small that it overflows:
			// no finite effect on this scale reaches the target.
			continue
		}
		side := map[int]string{-1: "lower", 1: "upper"}[dir]
		c := newCalculator(s, m, e)
		rule := "the " + scaleName(s) + " nearest no difference, " + map[int]string{-1: "below", 1: "above"}[dir] + " it, at which " + c.powerName() + " reaches the target power"
		if e.diluted {
			rule += " once diluted by non-adherence and contamination"
		}
		tr.add("detectable_"+side, rule, v, ins...)
		if dir < 0 {
			d.Lower, d.LowerEffect = ptr(v), planned
		} else {
			d.Upper, d.UpperEffect = ptr(v), planned
		}
		if e.diluted {
			tr.add("diluted_"+side, dilutionRule(s, "detectable_"+side), dv, in("detectable_"+side, v), in("non_adherence", e.na), in("contamination", e.c))
			if dir < 0 {
				d.Diluted.Lower, d.Diluted.LowerEffect = ptr(dv), diluted
			} else {
				d.Diluted.Upper, d.Diluted.UpperEffect = ptr(dv), diluted
			}
		}
	}
	return d
}

// scaleName names the scale of the answer in a rule.
func scaleName(s *Spec) string {
	switch s.Outcome {
	case "continuous":
		return "difference in means"
	case "time-to-event":
		return "hazard ratio"
	case "rate":
		return "rate ratio"
	}
	if s.ContinuousExposure {
		return "odds ratio per standard deviation"
	}
	return s.EffectKey
}

// dilutionRule says how the undiluted effect (the step called name)
// becomes the diluted one.
func dilutionRule(s *Spec, name string) string {
	switch s.Outcome {
	case "continuous":
		return name + " × (1 − non_adherence − contamination) (Lachin & Foulkes 1986)"
	case "time-to-event":
		return "exp(ln(" + name + ") × (1 − non_adherence − contamination)) (Lachin & Foulkes 1986)"
	}
	return "the " + s.EffectKey + " of the mixed risks (1 − non_adherence) p1 + non_adherence p2 against (1 − contamination) p2 + contamination p1, p1 and p2 the risks at " + name + " (Lachin & Foulkes 1986)"
}

// restate expresses the undiluted effect x (the first group's risk, the
// difference in means or the log hazard ratio) on the effect key's scale,
// with the restatements before and after dilution.
func restate(s *Spec, e effects, x float64) (v float64, planned, diluted *Effect, dv float64) {
	switch s.Outcome {
	case "continuous":
		de := effectsAt(s, 0, x, 0)
		return x, meansEffect(s, x), meansEffect(s, de.diff), de.diff
	case "time-to-event":
		hr := math.Exp(x)
		de := effectsAt(s, 0, 0, hr)
		return hr, &Effect{HazardRatio: ptr(hr)}, &Effect{HazardRatio: ptr(de.hr)}, de.hr
	case "rate":
		rr := math.Exp(x)
		return rr, rateEffect(s, rr), rateEffect(s, rr), rr
	}
	if s.ContinuousExposure {
		or := math.Exp(x)
		e := &Effect{OddsRatioPerSD: ptr(or), EventRate: ptr(s.EventRate)}
		return or, e, e, or
	}
	de := effectsAt(s, x, 0, 0)
	return scaleValue(s.EffectKey, x, s.P2), effectOf(s.Design, x, s.P2), effectOf(s.Design, de.p1, de.p2), scaleValue(s.EffectKey, de.p1, de.p2)
}

// detectEffect returns the undiluted effect in direction dir nearest no
// difference whose power at the sizes reaches the target: the first
// group's risk (binary), the difference in means (continuous) or the log
// hazard ratio (time-to-event). ok is false when no effect reaches it.
func detectEffect(s *Spec, m *MethodInfo, base effects, sz sizes, dir int) (float64, bool) {
	at := func(x float64) effects {
		var e effects
		switch s.Outcome {
		case "continuous":
			e = effectsAt(s, 0, x, 0)
		case "time-to-event":
			e = effectsAt(s, 0, 0, math.Exp(x))
		case "rate":
			e = effectsAt(s, 0, 0, 0)
			e.rr = math.Exp(x)
		default:
			if s.ContinuousExposure {
				e = effectsAt(s, 0, 0, 0)
				e.orsd = math.Exp(x)
				break
			}
			e = effectsAt(s, x, 0, 0)
		}
		e.clusterK = base.clusterK
		return e
	}
	// The effect is found where the power is a hair (1e-12) above the
	// target, so that restating it on another scale (p1 = ratio × p2, and
	// back) cannot leave its power a rounding error short of the target.
	f := func(x float64) float64 {
		c := newCalculator(s, m, at(x))
		return c.power(sz.eff[0], sz.eff[1]) - s.Power - 1e-12
	}
	var from, to float64
	switch s.Outcome {
	case "continuous":
		// Power grows with the difference: double until it reaches the
		// target, then refine.
		scale := math.Max(s.SD1, s.SD2)
		hi := scale * 1e-3 * float64(dir)
		for f(hi) < 0 {
			hi *= 2
			if math.Abs(hi) > scale*1e9 {
				return math.NaN(), false
			}
		}
		return refine(f, 0, hi)
	case "time-to-event":
		from, to = 0, math.Log(1e6)*float64(dir)
	case "rate":
		// Within the ratios a specification allows; below 1 the Wald
		// test's power turns down again past a peak, beyond which the
		// outward scan does not look.
		from, to = 0, math.Log(MaxRatio)*float64(dir)
	default:
		if s.ContinuousExposure {
			from, to = 0, math.Log(MaxRatio)*float64(dir)
			break
		}
		const edge = 1e-9
		from, to = s.P2, 1-edge
		if dir < 0 {
			to = edge
		}
	}
	prev := from
	for i := 1; i <= detectScan; i++ {
		x := from + (to-from)*float64(i)/detectScan
		if f(x) >= 0 {
			return refine(f, prev, x)
		}
		prev = x
	}
	return math.NaN(), false
}

// refine finds the crossing of f between lo (below the target) and hi (at
// or above it) and returns a point where f ≥ 0, so that the power at the
// effect returned is never below the target, by rounding, and solving n
// there gives back the sizes it was found at.
func refine(f func(float64) float64, lo, hi float64) (float64, bool) {
	x, err := power.FindRoot(f, lo, hi, 1e-13*math.Max(1, math.Abs(hi)))
	if err != nil {
		if f(hi) >= 0 {
			return hi, true
		}
		return math.NaN(), false
	}
	// Step towards hi until the power is at the target.
	step := (hi - x) * 1e-12
	for k := 0; f(x) < 0 && k < 64; k++ {
		x += step
		step *= 2
		if (hi-x)*(hi-lo) < 0 {
			return hi, true
		}
	}
	return x, true
}

// DetectableSide is the side of no difference on which a plan solving
// effect is read: "lower" when a one-sided test looks down, or when a
// two-sided plan's stated effect puts the first group lower (a protective
// effect), else "upper". A plot of detectable effects draws this side.
func DetectableSide(s *Spec) string {
	dir := s.Direction
	if s.Sides != 1 {
		dir = impliedDirection(s)
	}
	if dir < 0 {
		return "lower"
	}
	return "upper"
}
