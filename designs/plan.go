package designs

import (
	"errors"
	"fmt"
	"math"
	"strconv"

	"enough/power"
)

// roundTol absorbs floating-point noise before rounding up, so that a size
// that is mathematically whole (e.g. 100 computed as 100.00000000001) is not
// pushed to the next participant.
const roundTol = 1e-9

// ceilTol rounds x up to a whole number, ignoring noise below roundTol.
func ceilTol(x float64) int {
	return int(math.Ceil(x - noise(x)))
}

// noise is the rounding tolerance at x: relative 1e-9, but never more than
// 1e-7 in absolute terms, so that large sizes are still rounded up.
func noise(x float64) float64 {
	return math.Min(roundTol*math.Max(1, math.Abs(x)), 1e-7)
}

// floorTol rounds x down to a whole number, ignoring noise below roundTol.
func floorTol(x float64) int {
	return int(math.Floor(x + noise(x)))
}

// PlanError is a failure to compute a plan from a valid specification (for
// example a target that no sample size reaches).
type PlanError struct {
	File string
	Msg  string
	Err  error
}

func (e *PlanError) Error() string { return e.File + ": " + e.Msg }
func (e *PlanError) Unwrap() error { return e.Err }

// Plan computes the answer a specification asks for.
func Plan(s *Spec) (*Result, error) {
	m := MethodByID(s.Method)
	res := &Result{
		Tool: Tool, Version: Version,
		SpecFile: s.File, SpecSHA256: s.SHA256, Overrides: s.Overrides,
		Title: s.Title, Design: s.Design, Goal: s.Goal, Outcome: s.Outcome,
		Solve: s.Solve, Method: s.Method, MethodName: m.Name, Citation: m.Citation, Short: m.Short,
		Test: s.Test, TestName: TestName(s.Test),
		Attrition: s.Attrition, DesignEff: s.DesignEffect,
		Alternatives: []Alternative{}, Notes: []string{}, Warnings: append([]string{}, s.Ignored...),
		Cautions: Cautions, Spec: s,
	}
	if s.Solve != "power" && s.Goal != "precision" {
		res.Power = ptr(s.Power)
	}
	res.Assumptions = assumptions(s)
	if s.Goal == "precision" {
		return res, planPrecision(s, res)
	}
	res.Alpha, res.Sides, res.Ratio = ptr(s.Alpha), s.Sides, ptr(s.Ratio)
	ro := roles[s.Design]
	res.FirstGroup, res.SecondGroup = orDefault(s.FirstGroup, ro.first), orDefault(s.SecondGroup, ro.second)
	if err := planComparison(s, res, m); err != nil {
		return res, err
	}
	if s.Method == "exact" {
		return res, Exact(s, res)
	}
	return res, nil
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

func ptr[T any](x T) *T { return &x }

// assumptions lists the numeric inputs with their sources, in file order.
func assumptions(s *Spec) []Assumption {
	var out []Assumption
	skip := map[string]bool{"version": true, "title": true, "design": true, "outcome": true,
		"solve": true, "method": true, "test": true, "goal": true, "primary_outcome": true,
		"first_group": true, "second_group": true, "time_unit": true, "hypothesis": true,
		"pairing": true, "comparisons": true}
	// Keys the solve ignores are left out (a warning names them).
	switch s.Solve {
	case "n":
		skip["n"], skip["total"] = true, true
	case "power":
		skip["power"] = true
	case "effect":
		skip["margin"] = true
	}
	for _, g := range s.Given {
		if skip[g.Key] {
			continue
		}
		v := g.Value
		if s.Solve == "effect" && g.Key == s.EffectKey {
			v = "solved (the key names the scale of the answer)"
		}
		out = append(out, Assumption{Key: g.Key, Value: v, Source: s.Sources[g.Key]})
	}
	return out
}

// sizes holds the group sizes of a two-group plan.
type sizes struct {
	n, enrol []int
	// eff are the effective sizes (analysable / design effect) at which
	// power is evaluated.
	eff [2]float64
}

// checkSizes refuses sizes that are not finite, exceed MaxSize or round to
// no participant at all; they come from extreme assumptions.
func checkSizes(s *Spec, xs ...float64) error {
	for _, x := range xs {
		switch {
		case !(x <= MaxSize):
			return &PlanError{File: s.File, Msg: fmt.Sprintf("the plan would need more than %s participants in a group; allowed: assumptions that give at most that (check alpha, the effect, ratio, design_effect and margin)", "1,000,000,000")}
		case !(x > roundTol):
			return &PlanError{File: s.File, Msg: "a group would have no participant at all; allowed: a ratio (or exposure_prevalence) that gives each group at least one participant"}
		}
	}
	return nil
}

// sizesFromNStar applies the documented rounding and inflation order to the
// unrounded first-group size: n = ceil(n* × deff) per group, then
// enrolment = ceil(n / (1 − attrition)).
func sizesFromNStar(s *Spec, nstar float64) (sizes, error) {
	f1, f2 := nstar*s.DesignEffect, s.Ratio*nstar*s.DesignEffect
	if err := checkSizes(s, f1, f2, f1/(1-s.Attrition), f2/(1-s.Attrition)); err != nil {
		return sizes{}, err
	}
	n1, n2 := ceilTol(f1), ceilTol(f2)
	if s.Outcome == "continuous" {
		// A t test needs at least two observations per group.
		n1, n2 = max(n1, 2), max(n2, 2)
	}
	if s.Pairing == "paired" {
		return sizes{
			n:     []int{n1},
			enrol: []int{ceilTol(float64(n1) / (1 - s.Attrition))},
			eff:   [2]float64{float64(n1) / s.DesignEffect, float64(n1) / s.DesignEffect},
		}, nil
	}
	return sizes{
		n:     []int{n1, n2},
		enrol: []int{ceilTol(float64(n1) / (1 - s.Attrition)), ceilTol(float64(n2) / (1 - s.Attrition))},
		eff:   [2]float64{float64(n1) / s.DesignEffect, float64(n2) / s.DesignEffect},
	}, nil
}

// sizesFromEnrolment turns the specification's enrolment into analysable
// and effective sizes: analysable = floor(enrolment × (1 − attrition)).
func sizesFromEnrolment(s *Spec) (sizes, error) {
	var sz sizes
	if s.Design == "cross-sectional" {
		e := s.ExposurePrevalence
		a := floorTol(float64(s.Total) * (1 - s.Attrition))
		first := int(math.Round(e * float64(a)))
		efirst := int(math.Round(e * float64(s.Total)))
		sz = sizes{
			n:     []int{first, a - first},
			enrol: []int{efirst, s.Total - efirst},
			eff:   [2]float64{e * float64(a) / s.DesignEffect, (1 - e) * float64(a) / s.DesignEffect},
		}
	} else if s.Pairing == "paired" {
		a := floorTol(float64(s.N) * (1 - s.Attrition))
		sz = sizes{n: []int{a}, enrol: []int{s.N}, eff: [2]float64{float64(a) / s.DesignEffect, float64(a) / s.DesignEffect}}
	} else {
		if err := checkSizes(s, s.Ratio*float64(s.N)); err != nil {
			return sz, err
		}
		e1, e2 := s.N, ceilTol(s.Ratio*float64(s.N))
		if s.NSecond > 0 {
			e2 = s.NSecond
		}
		a1, a2 := floorTol(float64(e1)*(1-s.Attrition)), floorTol(float64(e2)*(1-s.Attrition))
		sz = sizes{
			n:     []int{a1, a2},
			enrol: []int{e1, e2},
			eff:   [2]float64{float64(a1) / s.DesignEffect, float64(a2) / s.DesignEffect},
		}
	}
	least := 1.0
	if s.Outcome == "continuous" {
		least = 2
	}
	if !(sz.eff[0] >= least && sz.eff[1] >= least) {
		key := "n"
		if s.Design == "cross-sectional" {
			key = "total"
		}
		return sz, &SpecError{File: s.File, Key: key, Msg: fmt.Sprintf("after attrition, design effect and allocation a group has fewer than %g analysable participants (%s); allowed: a larger %s", least, fmtSizes(sz.n), key)}
	}
	return sz, nil
}

func fmtSizes(n []int) string {
	if len(n) == 2 {
		return thousands(n[0]) + " and " + thousands(n[1])
	}
	return fmt.Sprint(n)
}

// thousands formats a whole number with thousands separators.
func thousands(n int) string {
	s := strconv.Itoa(n)
	for i := len(s) - 3; i > 0 && s[i-1] != '-'; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// solved is one method's answer at the rounded sizes.
type solved struct {
	nstar float64
	sz    sizes
	calc  calculator
	e     effects
}

// solveN finds the sizes for the target power: the formula's n*, the
// documented rounding and inflation, and for a cluster design the smallest
// size, from ceil(n* × design effect) upwards, whose clusters (at least two
// per arm) reach the target in a cluster-level t test on k1 + k2 − 2 degrees
// of freedom.
func solveN(s *Spec, m *MethodInfo, e effects) (solved, error) {
	calc := newCalculator(s, m, e)
	nstar, err := calc.nStar(s.Power)
	if err != nil {
		return solved{}, solveError(s, err)
	}
	sz, err := sizesFromNStar(s, nstar)
	if err != nil {
		return solved{}, err
	}
	if s.Cluster == nil {
		return solved{nstar, sz, calc, e}, nil
	}
	// The smallest first-arm size, from the formula's upwards, whose
	// clusters give the target power in a cluster-level t test.
	at := func(n1 int) (sizes, effects, calculator) {
		sz := clusterSizes(s, n1)
		ec := e
		ec.clusterK = clustersFor(s, sz.enrol)
		return sz, ec, newCalculator(s, m, ec)
	}
	ok := func(n1 int) bool {
		sz, _, c := at(n1)
		return c.power(sz.eff[0], sz.eff[1]) >= s.Power
	}
	lo := max(sz.n[0], ceilTol(2*s.Cluster.Size), ceilTol(2*s.Cluster.Size/s.Ratio))
	if !ok(lo) {
		hi := lo
		for step := 1; !ok(hi); step *= 2 {
			lo, hi = hi, hi+step
			if hi > MaxSize {
				return solved{}, checkSizes(s, float64(hi))
			}
		}
		for hi-lo > 1 {
			mid := lo + (hi-lo)/2
			if ok(mid) {
				hi = mid
			} else {
				lo = mid
			}
		}
		lo = hi
	}
	sz, e, calc = at(lo)
	return solved{nstar, sz, calc, e}, nil
}

// clustersFor returns the clusters per arm that an enrolment fills:
// attrition loses participants, not clusters, so the analysis has as many
// clusters as are recruited.
func clustersFor(s *Spec, enrol []int) [2]int {
	return [2]int{ceilTol(float64(enrol[0]) / s.Cluster.Size), ceilTol(float64(enrol[1]) / s.Cluster.Size)}
}

// clusterSizes returns the sizes of a cluster design with n1 analysable
// participants in the first arm (at least two clusters per arm).
func clusterSizes(s *Spec, n1 int) sizes {
	n2 := ceilTol(s.Ratio * float64(n1))
	return sizes{
		n:     []int{n1, n2},
		enrol: []int{ceilTol(float64(n1) / (1 - s.Attrition)), ceilTol(float64(n2) / (1 - s.Attrition))},
		eff:   [2]float64{float64(n1) / s.DesignEffect, float64(n2) / s.DesignEffect},
	}
}

// atEnrolment builds the calculator for sizes given by the specification
// (solving power or effect), with the clusters those sizes make.
func atEnrolment(s *Spec, m *MethodInfo, e effects) (sizes, calculator, effects, error) {
	sz, err := sizesFromEnrolment(s)
	if err != nil {
		return sz, nil, e, err
	}
	if s.Cluster != nil {
		e.clusterK = clustersFor(s, sz.enrol)
		if e.clusterK[0] < 2 || e.clusterK[1] < 2 {
			return sz, nil, e, &SpecError{File: s.File, Key: "n", Msg: fmt.Sprintf("%s analysable participants make fewer than two clusters of %g in an arm; allowed: at least two clusters per arm", fmtSizes(sz.n), s.Cluster.Size)}
		}
	}
	return sz, newCalculator(s, m, e), e, nil
}

func planComparison(s *Spec, res *Result, m *MethodInfo) error {
	others := []*MethodInfo{}
	for i := range Methods {
		o := &Methods[i]
		if o.ID != m.ID && o.ID != "exact" && o.serves(s.Design, s.Goal, s.Outcome, s.Hypothesis) {
			others = append(others, o)
		}
	}
	e := plannedEffects(s)
	ans := &res.Result
	var main solved
	switch s.Solve {
	case "n":
		var err error
		if main, err = solveN(s, m, e); err != nil {
			return err
		}
		ans.NStar = main.nstar
		fillSizes(s, ans, main.sz)
		ans.AchievedPower = ptr(main.calc.power(main.sz.eff[0], main.sz.eff[1]))
		var differ []string
		for _, o := range others {
			alt, err := solveN(s, o, e)
			if err != nil {
				continue
			}
			a := Alternative{
				Method: o.ID, Name: o.Name, Citation: o.Citation, Short: o.Short,
				N: alt.sz.n, Total: totalOf(s, alt.sz.n), EnrolTotal: totalOf(s, alt.sz.enrol),
				AchievedPower: ptr(alt.calc.power(alt.sz.eff[0], alt.sz.eff[1])),
			}
			res.Alternatives = append(res.Alternatives, a)
			for i := range alt.sz.n {
				if abs(alt.sz.n[i]-main.sz.n[i]) > 1 {
					differ = append(differ, fmt.Sprintf("%s asks for %s", o.Name, fmtSizes(alt.sz.n)))
					break
				}
			}
		}
		if len(differ) > 0 && m.ID != "exact" {
			res.Warnings = append(res.Warnings, fmt.Sprintf(
				"The choice of formula matters here: %s asks for %s (%s), while %s. The difference exceeds one participant per group.",
				m.Name, fmtSizes(main.sz.n), groupsPhrase(s, res), andList(differ)))
		}
		if e.diluted {
			// What the dilution costs: the same plan without it.
			plain := e
			plain.p1, plain.p2, plain.diff, plain.hr = s.P1, s.P2, s.MeanDiff, s.HazardRatio
			if u, err := solveN(s, m, plain); err == nil {
				ans.UndilutedN = u.sz.n
			}
		}
	case "power", "effect":
		sz, calc, e2, err := atEnrolment(s, m, e)
		if err != nil {
			return err
		}
		main = solved{sz: sz, calc: calc, e: e2}
		fillSizes(s, ans, sz)
		if s.Solve == "power" {
			ans.AchievedPower = ptr(calc.power(sz.eff[0], sz.eff[1]))
			if *ans.AchievedPower < 0.8 {
				res.Warnings = append(res.Warnings, fmt.Sprintf("The power is %.1f%%, below the customary 80%%: the study may well miss an effect of this size.", 100**ans.AchievedPower))
			}
		} else {
			ans.Detectable = detectable(s, calc, sz)
		}
		for _, o := range others {
			_, oc, _, err := atEnrolment(s, o, e)
			if err != nil {
				continue
			}
			a := Alternative{Method: o.ID, Name: o.Name, Citation: o.Citation, Short: o.Short}
			if s.Solve == "power" {
				a.AchievedPower = ptr(oc.power(sz.eff[0], sz.eff[1]))
			} else {
				a.Detectable = detectable(s, oc, sz)
			}
			res.Alternatives = append(res.Alternatives, a)
		}
		if s.Solve == "effect" {
			for _, side := range []struct {
				v    *float64
				what string
				dir  int
			}{{ans.Detectable.Lower, "below", -1}, {ans.Detectable.Upper, "above", 1}} {
				if s.Sides == 1 && side.dir != oneSidedDir(s) {
					continue
				}
				if side.v == nil {
					res.Warnings = append(res.Warnings, fmt.Sprintf(
						"No effect %s no difference reaches %.0f%% power with these sizes%s.",
						side.what, 100*s.Power, unreachableWhy(s, res, side.what)))
				}
			}
		}
	}
	if s.Solve != "effect" {
		ans.Effect = plannedEffect(s)
		if e.diluted {
			ans.DilutedEffect = dilutedEffect(s, main.e)
		}
	}
	describeDesign(s, res, main)
	if s.Outcome == "binary" && s.Solve != "effect" {
		smallCells(s, res, main.sz)
	}
	methodTestNotes(s, res)
	commonNotes(s, res)
	return nil
}

// unreachableWhy explains an unreachable direction.
func unreachableWhy(s *Spec, res *Result, side string) string {
	if s.Outcome != "binary" {
		return ""
	}
	return fmt.Sprintf(": the risk in the %s would have to pass %s", res.FirstGroup, map[string]string{"below": "0", "above": "1"}[side])
}

// groupsPhrase names the two groups for messages.
func groupsPhrase(s *Spec, res *Result) string {
	if s.Pairing == "paired" {
		return "pairs"
	}
	return res.FirstGroup + " and " + res.SecondGroup
}

// plannedEffect restates the planned (undiluted) effect.
func plannedEffect(s *Spec) *Effect {
	switch s.Outcome {
	case "continuous":
		if s.Hypothesis != "superiority" && s.EffectKey == "" {
			return meansEffect(s, 0)
		}
		return meansEffect(s, s.MeanDiff)
	case "time-to-event":
		return &Effect{HazardRatio: ptr(s.HazardRatio)}
	}
	return effectOf(s.Design, s.P1, s.P2)
}

// dilutedEffect restates the effect an intention-to-treat analysis sees.
func dilutedEffect(s *Spec, e effects) *Effect {
	switch s.Outcome {
	case "continuous":
		return meansEffect(s, e.diff)
	case "time-to-event":
		return &Effect{HazardRatio: ptr(e.hr)}
	}
	return effectOf(s.Design, e.p1, e.p2)
}

// describeDesign fills the design-specific parts of the answer.
func describeDesign(s *Spec, res *Result, sv solved) {
	ans := &res.Result
	if s.Pairing == "paired" {
		ans.Pairs = ans.N[0]
	}
	if s.Outcome == "time-to-event" {
		ans.Duration = ptr(s.Accrual + s.FollowUp)
		if s.Ratio != 1 {
			res.Notes = append(res.Notes, "With unequal allocation the events formulas are rougher: simulation of the log-rank test has found Schoenfeld's power a few points too high and Freedman's a few points too low when the larger arm is the control arm (the errors reverse the other way round); check the plan with enough simulate.")
		}
		if sc, ok := sv.calc.(survivalCalc); ok {
			ans.ExpectedEvents = ptr(sc.expectedEvents(sv.sz.eff[0], sv.sz.eff[1]))
			if s.Solve == "n" {
				if d, err := sc.events(s.Power); err == nil {
					ans.Events = ceilTol(d)
				}
			}
		}
	}
	if s.Cluster != nil {
		ans.DesignEffect = ptr(s.DesignEffect)
		// Clusters to recruit: enough whole clusters for the enrolment, as
		// in the cluster-level analysis.
		m := s.Cluster.Size
		k := clustersFor(s, ans.Enrol)
		ans.Clusters = []int{k[0], k[1]}
		ans.WholeClusters = []int{ceilTol(float64(k[0]) * m), ceilTol(float64(k[1]) * m)}
		if k[0] < 6 || k[1] < 6 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("Only %d and %d clusters per arm: with fewer than about 6 clusters per arm the cluster-level analysis is fragile and the ICC poorly estimated.", k[0], k[1]))
		}
	}
	if c := comparisons(s); s.Arms > 2 {
		ans.Arms, ans.Comparisons = s.Arms, c
		ans.AlphaPerComparison = ptr(sv.e.alpha)
	}
}

func fillSizes(s *Spec, ans *Answer, sz sizes) {
	ans.N, ans.Total = sz.n, totalOf(s, sz.n)
	ans.Enrol, ans.EnrolTotal = sz.enrol, totalOf(s, sz.enrol)
}

// totalOf sums the groups, over every arm of a trial with several arms: each
// intervention arm has the first group's size and the control arm the
// second's (all-pairs: every arm the first's).
func totalOf(s *Spec, n []int) int {
	switch {
	case len(n) == 1:
		return n[0]
	case s.Arms > 2 && s.Comparisons == "all-pairs":
		return s.Arms * n[0]
	case s.Arms > 2:
		return (s.Arms-1)*n[0] + n[1]
	}
	return n[0] + n[1]
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

func solveError(s *Spec, err error) error {
	switch {
	case errors.Is(err, power.ErrNothingToDetect):
		return &PlanError{File: s.File, Msg: s.EffectKey + ": nothing to detect: the groups have the same risk", Err: err}
	case errors.Is(err, power.ErrUnreachable):
		return &PlanError{File: s.File, Msg: fmt.Sprintf("power: %g is so close to alpha that the formula reaches it with no participants; allowed: a target power well above alpha (e.g. 0.8)", s.Power), Err: err}
	}
	return &PlanError{File: s.File, Msg: err.Error(), Err: err}
}

// effectOf restates the effect p1 against p2 for the design.
func effectOf(design string, p1, p2 float64) *Effect {
	or := power.OddsRatio(p1, p2)
	if design == "case-control" {
		return &Effect{
			OddsRatio:       ptr(or),
			CaseExposure:    ptr(p1),
			ControlExposure: ptr(p2),
			CaseOdds:        ptr(p1 / (1 - p1)),
			ControlOdds:     ptr(p2 / (1 - p2)),
		}
	}
	rd := p1 - p2
	e := &Effect{
		FirstRisk: ptr(p1), SecondRisk: ptr(p2),
		RiskRatio: ptr(p1 / p2), RiskDifference: ptr(rd), OddsRatio: ptr(or),
	}
	if math.Abs(rd) > 1e-12 {
		e.NNT = ptr(ceilTol(1 / math.Abs(rd)))
	}
	return e
}

// scaleValue expresses p1 against p2 on the scale of the effect key.
func scaleValue(key string, p1, p2 float64) float64 {
	switch scaleOf(key) {
	case ScaleRatio:
		return p1 / p2
	case ScaleOdds:
		return power.OddsRatio(p1, p2)
	case ScaleDifference:
		return p1 - p2
	}
	return p1
}

// detectable finds the smallest detectable effect in both directions.
func detectable(s *Spec, calc calculator, sz sizes) *Detectable {
	d := &Detectable{Scale: s.EffectKey}
	dirs := []int{-1, 1}
	if s.Sides == 1 {
		// A one-sided test detects effects on its own side only.
		dirs = []int{oneSidedDir(s)}
		d.Direction = map[int]string{-1: "lower", 1: "upper"}[dirs[0]]
	}
	for _, dir := range dirs {
		v, e, err := calc.detect(sz.eff[0], sz.eff[1], s.Power, dir)
		if err != nil {
			continue
		}
		if dir < 0 {
			d.Lower, d.LowerEffect = ptr(v), e
		} else {
			d.Upper, d.UpperEffect = ptr(v), e
		}
	}
	return d
}

// oneSidedDir is the direction a one-sided test looks: −1 when the first
// group is expected lower (risk, mean or hazard), +1 otherwise.
func oneSidedDir(s *Spec) int {
	switch s.Outcome {
	case "continuous":
		if s.MeanDiff < 0 {
			return -1
		}
	case "time-to-event":
		if s.HazardRatio < 1 {
			return -1
		}
	default:
		if s.P1 < s.P2 {
			return -1
		}
	}
	return 1
}

// smallCells warns when an expected cell count is small.
func smallCells(s *Spec, res *Result, sz sizes) {
	p1 := s.P1
	minCell := math.Min(math.Min(sz.eff[0]*p1, sz.eff[0]*(1-p1)), math.Min(sz.eff[1]*s.P2, sz.eff[1]*(1-s.P2)))
	if minCell < 5 {
		advice := "plan for Fisher's exact test and check the power by exact enumeration (--exact) or simulation"
		if s.Test == "fisher" {
			advice = "check the power of Fisher's exact test by exact enumeration (--exact) or simulation"
		}
		res.Warnings = append(res.Warnings, fmt.Sprintf(
			"An expected cell count is %.1f, below 5: the normal approximation behind the formula is doubtful here; %s.", minCell, advice))
	}
}

// methodTestNotes notes a mismatch between the formula and the planned test.
func methodTestNotes(s *Spec, res *Result) {
	corrected := s.Method == "fleiss-cc"
	switch {
	case corrected && s.Test == "chi-square":
		res.Notes = append(res.Notes, "The formula includes a continuity correction but the planned test does not; the uncorrected formula (fleiss) matches that test more closely and asks for fewer participants.")
	case !corrected && (s.Test == "chi-square-yates" || s.Test == "fisher"):
		res.Notes = append(res.Notes, "The planned test is conservative (continuity-corrected or exact) but the formula has no correction; fleiss-cc matches that test more closely and asks for more participants.")
	}
}

// commonNotes adds notes on interpretation.
func commonNotes(s *Spec, res *Result) {
	if s.Design != "case-control" && s.Outcome == "binary" && math.Max(s.P1, s.P2) > 0.1 && s.P1 != s.P2 {
		res.Notes = append(res.Notes, fmt.Sprintf("The outcome is not rare (up to %.0f%%): the odds ratio (%.3g) lies further from 1 than the risk ratio (%.3g) and should not be read as one.",
			100*math.Max(s.P1, s.P2), power.OddsRatio(s.P1, s.P2), s.P1/s.P2))
	}
	switch {
	case s.Method == "t":
		if s.Sides == 2 {
			res.Notes = append(res.Notes, "The t-test power counts rejections in both directions, as the test does.")
		}
	case s.Sides == 2 && s.Hypothesis == "superiority" && s.Method != "exact":
		res.Notes = append(res.Notes, "The closed-form power counts rejections in the direction of the planned effect only, as the published formulas do; for a two-sided test the other direction adds at most alpha/2.")
	}
	if s.DesignEffect > 1 {
		res.Notes = append(res.Notes, fmt.Sprintf("The design effect of %.4g inflates each group's size; power is evaluated at the effective sizes (analysable participants divided by the design effect).", s.DesignEffect))
	}
	res.Order = []string{
		"n* = the unrounded size of the first group from the formula; the second group has ratio x n*",
		"analysable per group = ceil(n* x design_effect), the second group ceil(ratio x n* x design_effect)",
		"enrolment per group = ceil(analysable / (1 - attrition))",
		"totals are the sums of the groups; achieved power is evaluated at analysable / design_effect",
	}
	if s.Outcome == "time-to-event" && s.Solve == "n" {
		res.Order = append([]string{"events D from the formula, rounded up; n* = D / (P1 + ratio x P2) with each arm's probability of an observed event"}, res.Order[1:]...)
	}
	if s.Solve != "n" {
		res.Order = []string{
			"enrolment: the first group as given, the second ceil(ratio x n) (cross-sectional: the total split by exposure_prevalence)",
			"analysable per group = floor(enrolment x (1 - attrition))",
			"effective size = analysable / design_effect, at which power is evaluated",
		}
	}
}

// planPrecision sizes a survey that estimates one prevalence.
func planPrecision(s *Spec, res *Result) error {
	pr := power.Precision{P: s.ExpectedPrevalence, Confidence: s.Confidence,
		DesignEffect: s.DesignEffect, Population: float64(s.Population)}
	ans := &res.Result
	switch s.Solve {
	case "n":
		n0, n := power.PrecisionN(pr, s.Margin)
		if err := checkSizes(s, n, n/(1-s.Attrition)); err != nil {
			return err
		}
		a := ceilTol(n)
		ans.N0, ans.NStar = n0, n
		ans.N, ans.Total = []int{a}, a
		ans.Enrol = []int{ceilTol(float64(a) / (1 - s.Attrition))}
		ans.EnrolTotal = ans.Enrol[0]
		ans.Margin = ptr(s.Margin)
		if s.Population > 0 && ans.EnrolTotal > s.Population {
			res.Warnings = append(res.Warnings, fmt.Sprintf("The enrolment of %d exceeds the population of %d: survey everyone and report the achieved margin.", ans.EnrolTotal, s.Population))
		}
	case "effect":
		a := floorTol(float64(s.Total) * (1 - s.Attrition))
		if a < 1 {
			return &SpecError{File: s.File, Key: "total", Msg: "after non-response no respondent is left; allowed: a larger total"}
		}
		ans.N, ans.Total = []int{a}, a
		ans.Enrol, ans.EnrolTotal = []int{s.Total}, s.Total
		ans.Margin = ptr(power.PrecisionMargin(pr, float64(a)))
		if *ans.Margin >= 0.5 {
			res.Warnings = append(res.Warnings, "The achievable margin is wider than ±50 percentage points: this survey cannot estimate the prevalence usefully.")
		}
	}
	p, d := s.ExpectedPrevalence, *ans.Margin
	if d >= p || d >= 1-p {
		res.Warnings = append(res.Warnings, fmt.Sprintf("The margin (%.3g) is not smaller than the expected prevalence or its complement: the Wald interval would cross 0 or 1; an exact (Clopper-Pearson) or Wilson interval suits better.", d))
	}
	if eff := float64(ans.Total) / s.DesignEffect; eff*math.Min(p, 1-p) < 10 {
		res.Warnings = append(res.Warnings, "Fewer than 10 expected cases (or non-cases) among the effective respondents: the Wald interval is unreliable here.")
	}
	if s.DesignEffect > 1 {
		res.Notes = append(res.Notes, fmt.Sprintf("The design effect of %.4g multiplies the simple-random-sampling size.", s.DesignEffect))
	}
	res.Order = []string{
		"n0 = z^2 p (1 - p) / margin^2 (simple random sampling)",
		"times design_effect",
		"finite population correction n / (1 + (n - 1) / population), when population is given",
		"rounded up: the respondents needed",
		"divided by (1 - attrition) for non-response and rounded up: the number to invite",
	}
	if s.Solve == "effect" {
		res.Order = []string{
			"respondents = floor(total x (1 - attrition))",
			"undo the finite population correction and the design effect",
			"margin = z sqrt(p (1 - p) / n0)",
		}
	}
	return nil
}
