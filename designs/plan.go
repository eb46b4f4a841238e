package designs

import (
	"errors"
	"fmt"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

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
	// The built-in min and max treat NaN and signed zeros as math.Min and
	// math.Max do, and are inlined: this runs for every size rounded.
	return min(roundTol*max(1, math.Abs(x)), 1e-7)
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
		Alternatives: []Alternative{}, Notes: []string{}, Warnings: ignoredWarnings(s),
		Cautions: Cautions, Spec: s,
	}
	if s.Solve != "power" && s.Goal != "precision" && s.Goal != "accuracy" {
		res.Power = ptr(s.Power)
	}
	res.Assumptions = assumptions(s)
	if s.Goal == "precision" && s.Design != "cross-sectional" {
		ro := roles[s.Design]
		res.Ratio = ptr(s.Ratio)
		res.FirstGroup, res.SecondGroup = orDefault(s.FirstGroup, ro.first), orDefault(s.SecondGroup, ro.second)
		tr := &trail{}
		defer func() { res.Steps = tr.steps }()
		if err := ratioPrecisionCore(s, &res.Result, tr); err != nil {
			return res, err
		}
		res.Result.Effect = plannedEffect(s)
		if a := res.Result; a.N[0] > 0 && math.Min(float64(a.N[0])*math.Min(s.P1, 1-s.P1), float64(a.N[1])*math.Min(s.P2, 1-s.P2)) < 10 {
			res.Warnings = append(res.Warnings, "Fewer than 10 events (or non-events) are expected in a group: the log-scale Wald interval is unreliable with so few; check by simulation (enough simulate).")
		}
		return res, nil
	}
	if s.Goal == "precision" {
		return res, planPrecision(s, res)
	}
	if s.Goal == "accuracy" {
		tr := &trail{}
		defer func() { res.Steps = tr.steps }()
		if err := accuracyCore(s, &res.Result, tr); err != nil {
			return res, err
		}
		a := res.Result
		if d := float64(a.Total) * s.ConditionPrevalence; d < 30 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("About %.1f of those tested are expected to have the condition: with so few the Wald interval of sensitivity is unreliable; check by simulation (enough simulate).", d))
		}
		res.Notes = append(res.Notes, "The prevalence of the condition is that among those tested; a sample enriched for the condition (cases and non-cases recruited separately) changes it, and with it the size.")
		return res, nil
	}
	res.Alpha, res.Sides, res.Ratio = ptr(s.Alpha), s.Sides, ptr(s.Ratio)
	ro := roles[s.Design]
	if s.Pairing == "crossover" {
		// Everyone receives both treatments; the groups are the orders.
		ro.first, ro.second = "first sequence", "second sequence"
	}
	res.FirstGroup, res.SecondGroup = orDefault(s.FirstGroup, ro.first), orDefault(s.SecondGroup, ro.second)
	if err := planComparison(s, res, m); err != nil {
		return res, err
	}
	if s.Method == "exact" {
		return res, Exact(s, res)
	}
	return res, nil
}

// ignoredKey matches a reason a key is ignored that starts with the key.
var ignoredKey = regexp.MustCompile(`^[a-z_.]+ is ignored`)

// ignoredWarnings words the keys this solve ignores as warnings, one full
// sentence each: "The key power is ignored when solving power (…).".
func ignoredWarnings(s *Spec) []string {
	out := []string{}
	for _, l := range s.Ignored {
		if ignoredKey.MatchString(l) {
			l = "The key " + l
		}
		out = append(out, Sentence(l))
	}
	return out
}

// Sentence returns a message as a full sentence: a capital first letter
// and a closing full stop (or other end mark).
func Sentence(s string) string {
	s = strings.TrimSpace(s)
	if s == "" {
		return s
	}
	r, n := utf8.DecodeRuneInString(s)
	if unicode.IsLower(r) {
		s = string(unicode.ToUpper(r)) + s[n:]
	}
	if !strings.HasSuffix(s, ".") && !strings.HasSuffix(s, "?") && !strings.HasSuffix(s, "!") {
		s += "."
	}
	return s
}

func orDefault(s, def string) string {
	if s == "" {
		return def
	}
	return s
}

func ptr[T any](x T) *T { return &x }

// textKeys are the keys that are not assumptions (settings and labels).
var textKeys = map[string]bool{"version": true, "title": true, "design": true, "outcome": true,
	"solve": true, "method": true, "test": true, "goal": true, "primary_outcome": true,
	"first_group": true, "second_group": true, "time_unit": true, "hypothesis": true,
	"pairing": true, "comparisons": true, "margin_scale": true, "direction": true}

// assumptions lists the numeric inputs with their sources, in file order.
func assumptions(s *Spec) []Assumption {
	var out []Assumption
	// Keys the solve ignores are left out (a warning names them).
	skip := func(k string) bool {
		switch s.Solve {
		case "n":
			return k == "n" || k == "total" || textKeys[k]
		case "power":
			return k == "power" || textKeys[k]
		case "effect":
			return k == "margin" || textKeys[k]
		}
		return textKeys[k]
	}
	for _, g := range s.Given {
		if skip(g.Key) {
			continue
		}
		v := g.Value
		if s.Solve == "effect" && g.Key == s.EffectKey {
			v = "solved (the key names the scale of the answer)"
		}
		a := Assumption{Key: g.Key, Value: v, Source: s.Sources[g.Key]}
		if fv, ok := s.Overridden[g.Key]; ok {
			a.SetOnCommandLine = true
			if fv != (FileValue{}) {
				a.File = &fv
			}
		}
		out = append(out, a)
	}
	return out
}

// sizes holds the group sizes of a plan, by value: a point of a sweep
// allocates nothing for them (fillSizes copies them into the answer).
type sizes struct {
	// k is the number of groups: 2, or 1 for pairs.
	k int
	// v holds the analysable sizes of the groups, then their enrolment:
	// first, second, enrolled first, enrolled second.
	v [4]int
	// eff are the effective sizes (analysable / design effect) at which
	// power is evaluated.
	eff [2]float64
}

// n returns the analysable sizes, one per group (a view of z).
func (z *sizes) n() []int { return z.v[0:z.k:z.k] }

// enrol returns the enrolment, one per group (a view of z).
func (z *sizes) enrol() []int { return z.v[2 : 2+z.k : 2+z.k] }

// oneGroup returns the sizes of pairs: n analysable of e enrolled, with
// the design effect deff.
func oneGroup(n, e int, deff float64) sizes {
	return sizes{k: 1, v: [4]int{n, 0, e, 0}, eff: [2]float64{float64(n) / deff, float64(n) / deff}}
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

// least is the smallest analysable group: two for a t test, else one.
func least(s *Spec) int {
	if s.Outcome == "continuous" {
		return 2
	}
	return 1
}

// firstFromNStar rounds the first group: ceil(n* × design effect), at
// least two for a t test.
func firstFromNStar(s *Spec, nstar float64, tr *trail, name string) int {
	rule := "ceil(n_star × design_effect)"
	if least(s) > 1 {
		rule = "max(2, ceil(n_star × design_effect))"
	}
	return tr.addInt(name, rule, max(least(s), ceilTol(nstar*s.DesignEffect)), in("n_star", nstar), in("design_effect", s.DesignEffect))
}

// enrolFor inflates an analysable size for attrition.
func enrolFor(s *Spec, name string, n int, tr *trail) int {
	a, rule := "analysable_first", "ceil(analysable_first / (1 − attrition))"
	if name == "enrol_second" {
		a, rule = "analysable_second", "ceil(analysable_second / (1 − attrition))"
	}
	return tr.addInt(name, rule, ceilTol(float64(n)/(1-s.Attrition)), inInt(a, n), in("attrition", s.Attrition))
}

// restFromNStar completes the sizes from n* and the rounded first group:
// the second group ceil(ratio × n* × design effect), then each enrolment
// ceil(analysable / (1 − attrition)).
func restFromNStar(s *Spec, nstar float64, n1 int, tr *trail) sizes {
	if s.Pairing == "paired" || s.ContinuousExposure {
		return oneGroup(n1, enrolFor(s, "enrol_first", n1, tr), s.DesignEffect)
	}
	if s.Matched {
		return matchedSizes(s, n1, enrolFor(s, "enrol_first", n1, tr), tr)
	}
	rule := "ceil(ratio × n_star × design_effect)"
	if least(s) > 1 {
		rule = "max(2, ceil(ratio × n_star × design_effect))"
	}
	n2 := tr.addInt("analysable_second", rule, max(least(s), ceilTol(s.Ratio*nstar*s.DesignEffect)),
		in("ratio", s.Ratio), in("n_star", nstar), in("design_effect", s.DesignEffect))
	return twoGroups(n1, n2, enrolFor(s, "enrol_first", n1, tr), enrolFor(s, "enrol_second", n2, tr), s.DesignEffect)
}

// matchedSizes returns the sizes of matched sets: n1 analysable cases of
// e1 enrolled, each with its controls (a set lost is lost whole).
func matchedSizes(s *Spec, n1, e1 int, tr *trail) sizes {
	m := inInt("controls_per_case", s.Controls)
	n2 := tr.addInt("analysable_second", "controls_per_case × analysable_first", s.Controls*n1, m, inInt("analysable_first", n1))
	e2 := tr.addInt("enrol_second", "controls_per_case × enrol_first", s.Controls*e1, m, inInt("enrol_first", e1))
	return twoGroups(n1, n2, e1, e2, s.DesignEffect)
}

// twoGroups returns the sizes of two groups: analysable n1 and n2,
// enrolled e1 and e2, with the design effect deff.
func twoGroups(n1, n2, e1, e2 int, deff float64) sizes {
	return sizes{k: 2, v: [4]int{n1, n2, e1, e2}, eff: [2]float64{float64(n1) / deff, float64(n2) / deff}}
}

// sizesFromNStar applies the documented rounding and inflation order to the
// unrounded first-group size (no cluster search).
func sizesFromNStar(s *Spec, nstar float64, tr *trail) (sizes, error) {
	f1, f2 := nstar*s.DesignEffect, s.Ratio*nstar*s.DesignEffect
	if err := checkSizes(s, f1, f2, f1/(1-s.Attrition), f2/(1-s.Attrition)); err != nil {
		return sizes{}, err
	}
	return restFromNStar(s, nstar, firstFromNStar(s, nstar, tr, "analysable_first"), tr), nil
}

// sizesFromEnrolment turns the specification's enrolment into analysable
// and effective sizes: analysable = floor(enrolment × (1 − attrition)).
func sizesFromEnrolment(s *Spec, tr *trail) (sizes, error) {
	var sz sizes
	// Constant rules: a rule put together from pieces would be allocated
	// at every call, even when a nil trail records nothing.
	floorRule := func(name string) string {
		if name == "first" {
			return "floor(enrol_first × (1 − attrition))"
		}
		return "floor(enrol_second × (1 − attrition))"
	}
	switch {
	case s.ContinuousExposure:
		size, key := s.N, "n"
		if s.Design == "cross-sectional" {
			size, key = s.Total, "total"
		}
		en := tr.addInt("enrol_first", key+", as given (everyone)", size, inInt(key, size))
		a := tr.addInt("analysable_first", floorRule("first"), floorTol(float64(en)*(1-s.Attrition)), inInt("enrol_first", en), in("attrition", s.Attrition))
		sz = oneGroup(a, en, s.DesignEffect)
		recordEffective(s, tr, sz)
	case s.Design == "cross-sectional":
		e, deff := s.ExposurePrevalence, s.DesignEffect
		a := tr.addInt("analysable_total", "floor(total × (1 − attrition))", floorTol(float64(s.Total)*(1-s.Attrition)), inInt("total", s.Total), in("attrition", s.Attrition))
		first := tr.addInt("analysable_first", "round(exposure_prevalence × analysable_total)", int(math.Round(e*float64(a))), in("exposure_prevalence", e), inInt("analysable_total", a))
		second := tr.addInt("analysable_second", "analysable_total − analysable_first", a-first, inInt("analysable_total", a), inInt("analysable_first", first))
		efirst := tr.addInt("enrol_first", "round(exposure_prevalence × total)", int(math.Round(e*float64(s.Total))), in("exposure_prevalence", e), inInt("total", s.Total))
		esecond := tr.addInt("enrol_second", "total − enrol_first", s.Total-efirst, inInt("total", s.Total), inInt("enrol_first", efirst))
		sz = sizes{
			k: 2,
			v: [4]int{first, second, efirst, esecond},
			eff: [2]float64{
				tr.add("effective_first", "exposure_prevalence × analysable_total / design_effect", e*float64(a)/deff, in("exposure_prevalence", e), inInt("analysable_total", a), in("design_effect", deff)),
				tr.add("effective_second", "(1 − exposure_prevalence) × analysable_total / design_effect", (1-e)*float64(a)/deff, in("exposure_prevalence", e), inInt("analysable_total", a), in("design_effect", deff)),
			},
		}
	case s.Pairing == "paired":
		en := tr.addInt("enrol_first", "n, as given (pairs)", s.N, inInt("n", s.N))
		a := tr.addInt("analysable_first", floorRule("first"), floorTol(float64(en)*(1-s.Attrition)), inInt("enrol_first", en), in("attrition", s.Attrition))
		sz = oneGroup(a, en, s.DesignEffect)
		recordEffective(s, tr, sz)
	default:
		if err := checkSizes(s, s.Ratio*float64(s.N)); err != nil {
			return sz, err
		}
		e1 := tr.addInt("enrol_first", "n, as given", s.N, inInt("n", s.N))
		if s.Matched {
			a1 := tr.addInt("analysable_first", floorRule("first"), floorTol(float64(e1)*(1-s.Attrition)), inInt("enrol_first", e1), in("attrition", s.Attrition))
			sz = matchedSizes(s, a1, e1, tr)
			recordEffective(s, tr, sz)
			break
		}
		var e2 int
		if s.NSecond > 0 {
			e2 = tr.addInt("enrol_second", "n_second, as given", s.NSecond, inInt("n_second", s.NSecond))
		} else {
			e2 = tr.addInt("enrol_second", "ceil(ratio × enrol_first)", ceilTol(s.Ratio*float64(s.N)), in("ratio", s.Ratio), inInt("enrol_first", e1))
		}
		a1 := tr.addInt("analysable_first", floorRule("first"), floorTol(float64(e1)*(1-s.Attrition)), inInt("enrol_first", e1), in("attrition", s.Attrition))
		a2 := tr.addInt("analysable_second", floorRule("second"), floorTol(float64(e2)*(1-s.Attrition)), inInt("enrol_second", e2), in("attrition", s.Attrition))
		sz = twoGroups(a1, a2, e1, e2, s.DesignEffect)
		recordEffective(s, tr, sz)
	}
	if !(sz.eff[0] >= float64(least(s)) && sz.eff[1] >= float64(least(s))) {
		key := "n"
		if s.Design == "cross-sectional" {
			key = "total"
		}
		return sz, &SpecError{File: s.File, Key: key, Msg: fmt.Sprintf("after attrition, design effect and allocation a group has fewer than %d analysable participants (%s); allowed: a larger %s", least(s), fmtSizes(sz.n()), key)}
	}
	return sz, nil
}

// recordEffective records the effective sizes when a design effect makes
// them differ from the analysable ones.
func recordEffective(s *Spec, tr *trail, sz sizes) {
	if s.DesignEffect == 1 {
		return
	}
	tr.add("effective_first", "analysable_first / design_effect", sz.eff[0], inInt("analysable_first", sz.n()[0]), in("design_effect", s.DesignEffect))
	if len(sz.n()) == 2 {
		tr.add("effective_second", "analysable_second / design_effect", sz.eff[1], inInt("analysable_second", sz.n()[1]), in("design_effect", s.DesignEffect))
	}
}

// sizeInputs names the sizes at which power is evaluated: the effective
// sizes when the steps computed them, else the analysable ones.
func sizeInputs(s *Spec, tr *trail, sz sizes) []Input {
	if tr.has("effective_first") {
		if len(sz.n()) == 1 {
			return []Input{in("effective_first", sz.eff[0])}
		}
		return []Input{in("effective_first", sz.eff[0]), in("effective_second", sz.eff[1])}
	}
	if len(sz.n()) == 1 {
		return []Input{inInt("analysable_first", sz.n()[0])}
	}
	return []Input{inInt("analysable_first", sz.n()[0]), inInt("analysable_second", sz.n()[1])}
}

func fmtSizes(n []int) string {
	if len(n) == 2 {
		return thousands(n[0]) + " and " + thousands(n[1])
	}
	return thousands(n[0])
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
// size whose clusters (at least two per arm) reach the target in a
// cluster-level t test on k1 + k2 − 2 degrees of freedom (the search
// starts at ceil(n* × design effect)). It records its steps on tr.
func solveN(s *Spec, m *MethodInfo, e effects, tr *trail) (solved, error) {
	var sv solved
	err := solveNInto(&sv, s, m, e, tr)
	return sv, err
}

// solveNInto is solveN into sv (no copy of the solution on the way).
func solveNInto(sv *solved, s *Spec, m *MethodInfo, e effects, tr *trail) error {
	sv.calc, sv.e = newCalculator(s, m, e), e
	nstar, err := sv.calc.nStar(s.Power, tr)
	if err != nil {
		return solveError(s, err)
	}
	sv.nstar = nstar
	if s.Cluster == nil {
		sv.sz, err = sizesFromNStar(s, nstar, tr)
		return err
	}
	f1, f2 := nstar*s.DesignEffect, s.Ratio*nstar*s.DesignEffect
	if err := checkSizes(s, f1, f2, f1/(1-s.Attrition), f2/(1-s.Attrition)); err != nil {
		return err
	}
	n1 := firstFromNStar(s, nstar, tr, "formula_first")
	if s.Ratio*float64(n1) > MaxSize {
		return checkSizes(s, s.Ratio*float64(n1))
	}
	// The smallest first-arm size, from the formula's upwards, whose
	// clusters give the target power in a cluster-level t test.
	at := func(n1 int) (sizes, effects, calculator) {
		sz := clusterSizes(s, n1, nil)
		ec := e
		ec.clusterK = clustersFor(s, sz.enrol())
		return sz, ec, newCalculator(s, m, ec)
	}
	powerAt := func(n1 int) float64 {
		sz, _, c := at(n1)
		return c.power(sz.eff[0], sz.eff[1])
	}
	ok := func(n1 int) bool { return powerAt(n1) >= s.Power }
	size := s.Cluster.Size
	least := tr.addInt("cluster_minimum", "max(ceil(2 × cluster_size), ceil(2 × cluster_size / ratio)): at least two clusters per arm",
		max(ceilTol(2*size), ceilTol(2*size/s.Ratio)), in("cluster_size", size), in("ratio", s.Ratio))
	// Power grows with n1 (clusters never fall and effective sizes rise),
	// so the smallest size that reaches the target is found by bisection,
	// starting from the individual-level answer.
	lo, hi := least-1, max(least, n1)
	if ok(least) {
		hi = least
	} else {
		for step := 1; !ok(hi); step *= 2 {
			lo, hi = hi, hi+step
			if hi > MaxSize {
				return checkSizes(s, float64(hi))
			}
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
	ins := []Input{inInt("cluster_minimum", least), in("target_power", s.Power), in("power_at_output", powerAt(hi))}
	if hi > least {
		ins = append(ins, in("power_one_below", powerAt(hi-1)))
	}
	n1 = tr.addInt("analysable_first", "the smallest first-arm size of at least cluster_minimum whose clusters (ceil(enrolment / cluster_size) per arm) reach the target power in a t test on cluster summaries with clusters_first + clusters_second − 2 degrees of freedom, the second arm being ceil(ratio × first); the search starts at formula_first, the individual-level answer", hi, ins...)
	sz := clusterSizes(s, n1, tr)
	ec := e
	ec.clusterK = clustersFor(s, sz.enrol())
	recordClusters(s, tr, sz, ec)
	sv.sz, sv.calc, sv.e = sz, newCalculator(s, m, ec), ec
	return nil
}

// clustersFor returns the clusters per arm that an enrolment fills:
// attrition loses participants, not clusters, so the analysis has as many
// clusters as are recruited.
func clustersFor(s *Spec, enrol []int) [2]int {
	return [2]int{ceilTol(float64(enrol[0]) / s.Cluster.Size), ceilTol(float64(enrol[1]) / s.Cluster.Size)}
}

// recordClusters records the clusters per arm and the effective sizes of a
// cluster design.
func recordClusters(s *Spec, tr *trail, sz sizes, e effects) {
	recordClusterCounts(s, tr, sz, e)
	recordEffective(s, tr, sz)
}

// recordClusterCounts records the clusters each arm's enrolment fills.
func recordClusterCounts(s *Spec, tr *trail, sz sizes, e effects) {
	for i, g := range []string{"first", "second"} {
		tr.addInt("clusters_"+g, "ceil(enrol_"+g+" / cluster_size)", e.clusterK[i], inInt("enrol_"+g, sz.enrol()[i]), in("cluster_size", s.Cluster.Size))
	}
}

// clusterSizes returns the sizes of a cluster design with n1 analysable
// participants in the first arm: the second ceil(ratio × n1).
func clusterSizes(s *Spec, n1 int, tr *trail) sizes {
	n2 := tr.addInt("analysable_second", "ceil(ratio × analysable_first)", ceilTol(s.Ratio*float64(n1)), in("ratio", s.Ratio), inInt("analysable_first", n1))
	return twoGroups(n1, n2, enrolFor(s, "enrol_first", n1, tr), enrolFor(s, "enrol_second", n2, tr), s.DesignEffect)
}

// atEnrolment builds the calculator for sizes given by the specification
// (solving power or effect), with the clusters those sizes make.
func atEnrolment(s *Spec, m *MethodInfo, e effects, tr *trail) (sizes, calculator, effects, error) {
	sz, err := sizesFromEnrolment(s, tr)
	if err != nil {
		return sz, calculator{}, e, err
	}
	if s.Cluster != nil {
		e.clusterK = clustersFor(s, sz.enrol())
		if e.clusterK[0] < 2 || e.clusterK[1] < 2 {
			return sz, calculator{}, e, &SpecError{File: s.File, Key: "n", Msg: fmt.Sprintf("%s analysable participants make fewer than two clusters of %g in an arm; allowed: at least two clusters per arm", fmtSizes(sz.n()), s.Cluster.Size)}
		}
		recordClusterCounts(s, tr, sz, e)
	}
	return sz, newCalculator(s, m, e), e, nil
}

// recordEffects records the dilution and the multiplicity correction, the
// first steps of every comparison.
func recordEffects(s *Spec, tr *trail, e effects) {
	switch s.Outcome {
	case "continuous":
		recordSDs(s, tr)
	case "time-to-event":
		if s.ControlMedian > 0 {
			tr.add("control_hazard", "ln(2) / control_median (exponential survival)", s.ControlHazard, in("control_median", s.ControlMedian))
		} else {
			tr.add("control_hazard", "−ln(control_survival) / time (exponential survival)", s.ControlHazard, in("control_survival", s.ControlSurvival), in("time", s.SurvivalTime))
		}
	}
	if s.Design == "cross-sectional" && !s.ContinuousExposure {
		tr.add("ratio", "(1 − exposure_prevalence) / exposure_prevalence: the unexposed per exposed respondent", s.Ratio, in("exposure_prevalence", s.ExposurePrevalence))
	}
	if k := comparisons(s); k > 1 {
		tr.add("alpha_per_comparison", "alpha / comparisons (Bonferroni)", e.alpha, in("alpha", s.Alpha), inInt("comparisons", k))
	}
	if !e.diluted || s.Solve == "effect" {
		return
	}
	na, c := in("non_adherence", s.NonAdherence), in("contamination", s.Contamination)
	switch s.Outcome {
	case "continuous":
		tr.add("diluted_difference", "difference × (1 − non_adherence − contamination) (Lachin & Foulkes 1986)", e.diff, in("difference", s.MeanDiff), na, c)
	case "time-to-event":
		tr.add("diluted_hazard_ratio", "exp(ln(hazard_ratio) × (1 − non_adherence − contamination)) (Lachin & Foulkes 1986)", e.hr, in("hazard_ratio", s.HazardRatio), na, c)
	default:
		p1, p2 := in("first_risk", s.P1), in("second_risk", s.P2)
		tr.add("diluted_first_risk", "(1 − non_adherence) × first_risk + non_adherence × second_risk (Lachin & Foulkes 1986)", e.p1, p1, p2, na)
		tr.add("diluted_second_risk", "(1 − contamination) × second_risk + contamination × first_risk", e.p2, p1, p2, c)
	}
}

// recordPower records the totals and the power at the rounded sizes.
func recordPower(s *Spec, tr *trail, sv *solved, what string) float64 {
	sz := sv.sz
	if tr == nil {
		// Nothing to record (Quick): the same power, without building the
		// steps' inputs.
		return sv.calc.power(sz.eff[0], sz.eff[1])
	}
	if s.Solve == "n" {
		if s.Cluster == nil {
			recordEffective(s, tr, sz)
		}
		recordTotals(s, tr, "analysable", sz.n())
		recordTotals(s, tr, "enrol", sz.enrol())
	}
	ins := sizeInputs(s, tr, sz)
	if sc, ok := sv.calc.survival(); ok {
		p1, p2 := sc.probabilities()
		if s.Solve != "n" {
			sc.recordProbabilities(tr, p1, p2)
		}
		rule := ins[0].Name + " × event_probability_first + " + ins[1].Name + " × event_probability_second"
		ins = []Input{tr.inputOf("expected_events", rule,
			sc.expectedEvents(sz.eff[0], sz.eff[1]), append(ins, in("event_probability_first", p1), in("event_probability_second", p2))...)}
		ins = append(ins, in("allocation", sz.eff[1]/sz.eff[0]))
	}
	if sv.e.clusterK[0] > 0 {
		ins = append(ins, inInt("clusters_first", sv.e.clusterK[0]), inInt("clusters_second", sv.e.clusterK[1]))
	}
	ins = append(ins, sv.calc.params()...)
	if iv := s.Interim; iv != nil {
		// The method's power with no interim look, then the boundaries'
		// power at its drift: two steps a reviewer can follow.
		p := tr.inputOf("fixed_power", sv.calc.fixedPowerName()+" with no interim look", sv.calc.fixedPower(sz.eff[0], sz.eff[1]), ins...)
		rule := fmt.Sprintf("the group-sequential power: the probability of crossing a boundary on the side of the effect, at some look, at drift θ = z_α + Φ⁻¹(fixed_power), of %d looks at information %s with %s boundaries (recursive integration, Jennison & Turnbull 2000, chapter 19)", iv.Looks, iv.TimingWords(), iv.BoundaryWords())
		return tr.add(what, rule, sv.calc.power(sz.eff[0], sz.eff[1]), p, in("alpha", sv.e.alpha), inInt("sides", s.Sides), inInt("looks", iv.Looks))
	}
	return tr.add(what, sv.calc.powerName(), sv.calc.power(sz.eff[0], sz.eff[1]), ins...)
}

// inputOf records a step and returns it as an input of the next.
func (t *trail) inputOf(name, rule string, out float64, ins ...Input) Input {
	t.add(name, rule, out, ins...)
	return in(name, out)
}

// recordTotals records the total over the groups (and arms).
func recordTotals(s *Spec, tr *trail, what string, n []int) {
	if len(n) == 1 {
		return
	}
	a, b := inInt(what+"_first", n[0]), inInt(what+"_second", n[1])
	switch {
	case s.Arms > 2 && s.Comparisons == "all-pairs":
		tr.addInt(what+"_total", "arms × "+what+"_first (every arm the same size)", totalOf(s, n), inInt("arms", s.Arms), a)
	case s.Arms > 2:
		tr.addInt(what+"_total", "(arms − 1) × "+what+"_first + "+what+"_second (each intervention arm has the first group's size, the control arm the second's)", totalOf(s, n), inInt("arms", s.Arms), a, b)
	default:
		tr.addInt(what+"_total", what+"_first + "+what+"_second", totalOf(s, n), a, b)
	}
}

// solveCore computes the figures of a two-group answer that Plan and Quick
// share (one truth: the sizes, the unrounded n*, the achieved power or the
// detectable effect, and the pairs, events and clusters), recording its
// steps on tr (nil: none, as Quick asks). It puts the main method's
// solution in main and returns the planned effects (before any clusters),
// from which Plan adds the alternatives, notes and warnings.
func solveCore(s *Spec, m *MethodInfo, ans *Answer, tr *trail, main *solved) (effects, error) {
	e := plannedEffects(s)
	recordEffects(s, tr, e)
	switch s.Solve {
	case "n":
		if err := solveNInto(main, s, m, e, tr); err != nil {
			return e, err
		}
		ans.NStar = main.nstar
		fillSizes(s, ans, &main.sz)
		setPower(ans, recordPower(s, tr, main, "achieved_power"))
	default:
		sz, calc, e2, err := atEnrolment(s, m, e, tr)
		if err != nil {
			return e, err
		}
		*main = solved{sz: sz, calc: calc, e: e2}
		fillSizes(s, ans, &sz)
		if s.Solve == "power" {
			setPower(ans, recordPower(s, tr, main, "power"))
		} else {
			ans.Detectable = detectable(s, m, e2, sz, tr)
		}
	}
	designFigures(s, ans, main)
	if s.Matched {
		matchedFigures(s, ans, main, e, tr)
	}
	if s.Outcome == "rate" && s.Solve != "effect" {
		rateFigures(s, ans, tr)
	}
	return e, nil
}

// rateFigures records a person-time cohort's person-time and expected
// events in each group at the analysable sizes and the planned rates.
func rateFigures(s *Spec, ans *Answer, tr *trail) {
	r1 := tr.add("exposed_rate", "unexposed_rate × rate_ratio", s.UnexposedRate*s.RateRatio, in("unexposed_rate", s.UnexposedRate), in("rate_ratio", s.RateRatio))
	ans.PersonTime = make([]float64, 2)
	ans.GroupEvents = make([]float64, 2)
	total := 0.0
	for i, g := range []string{"first", "second"} {
		n := ans.N[i]
		pt := tr.add("person_time_"+g, "analysable_"+g+" × person_time", float64(n)*s.PersonTime, inInt("analysable_"+g, n), in("person_time", s.PersonTime))
		rate, name := s.UnexposedRate, "unexposed_rate"
		if i == 0 {
			rate, name = r1, "exposed_rate"
		}
		ev := tr.add("expected_events_"+g, "person_time_"+g+" × "+name, pt*rate, in("person_time_"+g, pt), in(name, rate))
		ans.PersonTime[i], ans.GroupEvents[i] = pt, ev
		total += ev
	}
	ans.ExpectedEvents = ptr(total)
}

// matchedFigures records the matched sets' figures: the sets, the sets
// expected to be discordant at the planned effect, and (solving n) the
// cases an unmatched design with as many controls per case would need.
func matchedFigures(s *Spec, ans *Answer, sv *solved, e effects, tr *trail) {
	ans.Sets = ans.N[0]
	if s.Solve == "effect" {
		return
	}
	mc, ok := (*matchedCalc)(&sv.calc), sv.calc.kind == calcMatched
	if !ok {
		return
	}
	if d, err := mc.sets().DiscordantPerSet(); err == nil {
		d = tr.add("discordant_per_set", "the probability that a matched set holds both exposed and unexposed members (Dupont 1988)", d, mc.params()...)
		v := tr.add("expected_discordant_sets", "analysable_first × discordant_per_set", float64(ans.N[0])*d, inInt("analysable_first", ans.N[0]), in("discordant_per_set", d))
		ans.ExpectedDiscordantSets = ptr(v)
	}
	if s.Controls == 1 && ans.N[0] >= 1 {
		ms := mc.sets()
		dir := 1
		if ms.OddsRatio < 1 {
			dir = -1
		}
		if s.Sides == 1 && s.Direction != 0 {
			dir = s.Direction
		}
		exact := ms.McNemarExactPower
		if sv.calc.id == "dupont" {
			exact = ms.McNemarExactPowerWithinSets
		}
		if p, err := exact(ans.N[0], e.alpha, s.Sides, dir); err == nil {
			ans.McNemarExactPower = ptr(p)
		}
	}
	if s.Solve == "n" {
		tp := power.TwoProportions{P1: e.p1, P2: e.p2, Alpha: e.alpha, Sides: s.Sides}
		if n, err := power.Fleiss.N(tp, float64(s.Controls), s.Power); err == nil {
			ans.UnmatchedCases = ceilTol(n)
		}
	}
}

// setPower puts the achieved power in the answer: in the room
// AchievedPower points to, when it does, or else in a value of its own.
func setPower(ans *Answer, p float64) {
	if ans.AchievedPower == nil {
		// new here, not &p: p itself would then be moved to the heap at
		// every call.
		ans.AchievedPower = new(float64)
	}
	*ans.AchievedPower = p
}

// designFigures fills the figures of the answer that belong to a design:
// the pairs of a paired design, the events a time-to-event plan needs
// (solving n) and the clusters per arm of a cluster design.
func designFigures(s *Spec, ans *Answer, sv *solved) {
	if s.Pairing == "paired" {
		ans.Pairs = ans.N[0]
	}
	if sc, ok := sv.calc.survival(); ok && s.Outcome == "time-to-event" && s.Solve == "n" {
		if d, err := sc.maxEvents(s.Power); err == nil {
			ans.Events = ceilTol(d)
		}
	}
	if s.Cluster != nil {
		// Clusters to recruit: enough whole clusters for the enrolment, as
		// in the cluster-level analysis.
		k := clustersFor(s, ans.Enrol)
		ans.Clusters = []int{k[0], k[1]}
	}
}

// OtherMethods returns, in the catalogue's order, the methods whose
// answers a plan gives beside the chosen one (its alternatives): those that
// serve the specification's design, goal, outcome and hypothesis; none for
// a cluster trial, whose cluster-level t test is the analysis whatever the
// method, nor for a precision survey.
func OtherMethods(s *Spec) []*MethodInfo {
	others := []*MethodInfo{}
	if s.Cluster != nil || s.Goal == "precision" || s.Goal == "accuracy" {
		return others
	}
	for i := range Methods {
		o := &Methods[i]
		if s.MarginScale == "ratio" && o.ID == "blackwelder" {
			continue // a Wald method on the difference scale
		}
		if s.Interim != nil && !slices.Contains(InterimMethods, o.ID) {
			continue // its test is not a z statistic the inflation scales
		}
		if o.ID != s.Method && o.ID != "exact" && o.servesSpec(s) {
			others = append(others, o)
		}
	}
	return others
}

func planComparison(s *Spec, res *Result, m *MethodInfo) error {
	others := OtherMethods(s)
	tr := &trail{}
	defer func() { res.Steps = tr.steps }()
	ans := &res.Result
	var main solved
	e, err := solveCore(s, m, ans, tr, &main)
	if err != nil {
		return err
	}
	switch s.Solve {
	case "n":
		// Other methods' sizes, when one differs from the chosen method's by
		// more than one participant in a group.
		var differ []string
		for _, o := range others {
			alt, err := solveN(s, o, e, nil)
			if err != nil {
				continue
			}
			a := Alternative{
				Method: o.ID, Name: o.Name, Citation: o.Citation, Short: o.Short,
				N: slices.Clone(alt.sz.n()), Total: totalOf(s, alt.sz.n()), EnrolTotal: totalOf(s, alt.sz.enrol()),
				AchievedPower: ptr(alt.calc.power(alt.sz.eff[0], alt.sz.eff[1])),
			}
			res.Alternatives = append(res.Alternatives, a)
			for i := range alt.sz.n() {
				if abs(alt.sz.n()[i]-main.sz.n()[i]) > 1 {
					differ = append(differ, fmt.Sprintf("%s gives %s", o.Name, fmtSizes(alt.sz.n())))
					break
				}
			}
		}
		if len(differ) > 0 && m.ID != "exact" {
			res.Notes = append(res.Notes, fmt.Sprintf(
				"The methods differ by more than one participant in a group: %s gives %s %s, while %s.",
				m.Name, fmtSizes(main.sz.n()), sizesWhat(s), andList(differ)))
		}
		if s.Outcome == "continuous" && m.means == power.Z && s.Cluster == nil {
			tc := meansCalc{kind: calcMeans, s: s, method: int(power.T), id: "t", mc: meanComparison(s, e)}
			if tp := tc.power(main.sz.eff[0], main.sz.eff[1]); tp < s.Power {
				res.Warnings = append(res.Warnings, fmt.Sprintf("At these sizes %s, the analysis planned, has a power of %s, below the %s target: the normal approximation (method z) ignores the uncertainty of the estimated standard deviation; method t gives the size the t test needs.", TestName(s.Test), pct1(tp), pct1(s.Power)))
			}
		}
		if e.diluted {
			// What the dilution costs: the same plan without it.
			plain := e
			plain.p1, plain.p2, plain.diff, plain.hr = s.P1, s.P2, s.MeanDiff, s.HazardRatio
			plain.na, plain.c, plain.diluted = 0, 0, false
			if u, err := solveN(s, m, plain, nil); err == nil {
				ans.UndilutedN = slices.Clone(u.sz.n())
			}
		}
	case "power", "effect":
		sz := main.sz
		if s.Solve == "power" && *ans.AchievedPower < 0.8 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("The power is %.1f%%, below the customary 80%%: the study may well miss an effect of this size.", 100**ans.AchievedPower))
		}
		for _, o := range others {
			_, oc, oe, err := atEnrolment(s, o, e, nil)
			if err != nil {
				continue
			}
			a := Alternative{Method: o.ID, Name: o.Name, Citation: o.Citation, Short: o.Short}
			if s.Solve == "power" {
				a.AchievedPower = ptr(oc.power(sz.eff[0], sz.eff[1]))
			} else {
				a.Detectable = detectable(s, o, oe, sz, nil)
			}
			res.Alternatives = append(res.Alternatives, a)
		}
		if s.Solve == "effect" {
			for _, side := range []struct {
				v    *float64
				what string
				dir  int
			}{{ans.Detectable.Lower, "below", -1}, {ans.Detectable.Upper, "above", 1}} {
				if s.Sides == 1 && side.dir != s.Direction {
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
	if s.Interim != nil && s.Solve != "effect" {
		if err := interimFigures(s, ans, &main, tr); err != nil {
			return err
		}
	}
	describeDesign(s, res, &main)
	if s.Outcome == "binary" && s.Solve != "effect" && !s.ContinuousExposure && !s.Matched {
		smallCells(s, res, main.sz)
	}
	if a := res.Result; a.ExpectedDiscordantSets != nil && *a.ExpectedDiscordantSets < 20 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("Only %.1f discordant sets are expected, the sets that inform the analysis: with so few the normal approximation behind the formula is poor; check the power by simulation (enough simulate).", *a.ExpectedDiscordantSets))
	}
	if s.Adjusted && s.Design == "trial" {
		res.Notes = append(res.Notes, "In a randomised trial the arms are balanced on the covariates by design, so the R² of the arm on them is near 0; adjusting for covariates that predict the outcome adds precision, which this inflation does not model.")
	}
	if s.Method == "schlesselman-pairs" && s.ExposureCorrelation > 0 {
		res.Notes = append(res.Notes, fmt.Sprintf("Schlesselman's formula takes the exposures of a case and its control as independent: it leaves out the correlation of %g given, which dupont and connor use; its discordant pairs are counted with exposures independent.", s.ExposureCorrelation))
	}
	if s.Outcome == "rate" && s.Solve == "effect" {
		if n := res.Result.N; len(n) == 2 {
			if e0 := float64(n[1]) * s.UnexposedRate * s.PersonTime; e0 < 20 {
				res.Warnings = append(res.Warnings, fmt.Sprintf("Only %.1f events are expected among the unexposed: with so few events the Wald test's normal approximation overstates the power; check by simulation (enough simulate).", e0))
			}
		}
	}
	if a := res.Result; a.GroupEvents != nil && math.Min(a.GroupEvents[0], a.GroupEvents[1]) < 20 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("Only %.1f and %.1f events are expected in the two groups: with so few events the Wald test's normal approximation overstates the power (a group with no event gives no test at all); check the plan by simulation (enough simulate).", a.GroupEvents[0], a.GroupEvents[1]))
	}
	methodTestNotes(s, res)
	commonNotes(s, res)
	return nil
}

// outcomeNoun names the measure of a binary outcome in messages: "risk"
// for an adverse outcome, "prevalence" in a survey, "proportion" for a
// desirable outcome (higher_is_better), "exposure" in a case-control study.
func outcomeNoun(s *Spec) string {
	switch {
	case s.Design == "case-control":
		return "exposure"
	case s.HigherIsBetter:
		return "proportion"
	case s.Design == "cross-sectional":
		return "prevalence"
	}
	return "risk"
}

// ratioName names the ratio of a binary outcome's two groups in messages.
func ratioName(s *Spec) string {
	if n := outcomeNoun(s); n != "proportion" {
		return n + " ratio"
	}
	return "ratio of proportions"
}

// unreachableWhy explains an unreachable direction.
func unreachableWhy(s *Spec, res *Result, side string) string {
	switch {
	case s.Outcome != "binary" || s.ContinuousExposure:
		return ""
	case s.Matched && s.ExposureCorrelation > 0:
		phi := s.ExposureCorrelation
		return fmt.Sprintf(": with a correlation of exposure of %g within sets the odds ratio must lie between φ² = %.4g and 1/φ² = %.4g (Dupont's model), short of the target power", phi, phi*phi, 1/(phi*phi))
	}
	return fmt.Sprintf(": the first group's %s would have to pass %s", outcomeNoun(s), map[string]string{"below": "0", "above": "1"}[side])
}

// sizesWhat says what a list of sizes counts, for messages: "pairs", or
// "(first group, second group)".
func sizesWhat(s *Spec) string {
	if s.Pairing == "paired" {
		return "pairs"
	}
	return "(first group, second group)"
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
	case "rate":
		return rateEffect(s, s.RateRatio)
	}
	if s.ContinuousExposure {
		return &Effect{OddsRatioPerSD: ptr(s.ORPerSD), EventRate: ptr(s.EventRate)}
	}
	return effectOf(s.Design, s.P1, s.P2)
}

// rateEffect restates a rate ratio: each group's rate and the difference.
func rateEffect(s *Spec, rr float64) *Effect {
	r1 := s.UnexposedRate * rr
	return &Effect{RateRatio: ptr(rr), FirstRate: ptr(r1), SecondRate: ptr(s.UnexposedRate), RateDifference: ptr(r1 - s.UnexposedRate)}
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
func describeDesign(s *Spec, res *Result, sv *solved) {
	ans := &res.Result
	if s.Outcome == "time-to-event" {
		ans.Duration = ptr(s.Accrual + s.FollowUp)
		if s.Ratio != 1 && s.Solve != "effect" && s.Hypothesis == "superiority" {
			res.Warnings = append(res.Warnings, fmt.Sprintf("With unequal allocation the events formulas are rougher: simulation of the log-rank test has found %s a few points off the true power (Schoenfeld's too high and Freedman's too low when the larger arm is the control arm, the other way round otherwise); check the %s power with enough simulate.", MethodByID(s.Method).Name, pct1(*ans.AchievedPower)))
		}
		if sc, ok := sv.calc.survival(); ok && sv.sz.k > 0 && s.Solve != "effect" {
			ans.ExpectedEvents = ptr(sc.expectedEvents(sv.sz.eff[0], sv.sz.eff[1]))
		}
	}
	if s.Cluster != nil {
		ans.DesignEffect = ptr(s.DesignEffect)
		m := s.Cluster.Size
		k := ans.Clusters
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

// pct1 formats a probability as a percentage with one decimal.
func pct1(p float64) string { return strconv.FormatFloat(100*p, 'f', 1, 64) + "%" }

// fillSizes puts the sizes in the answer: copies, in the room N and Enrol
// hold (their capacity), or else in slices of their own.
func fillSizes(s *Spec, ans *Answer, sz *sizes) {
	ans.N, ans.Total = append(ans.N[:0], sz.n()...), totalOf(s, sz.n())
	ans.Enrol, ans.EnrolTotal = append(ans.Enrol[:0], sz.enrol()...), totalOf(s, sz.enrol())
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
	case errors.Is(err, power.ErrUnreachable) && s.Hypothesis != "superiority":
		return &PlanError{File: s.File, Msg: fmt.Sprintf("power: %g cannot be reached: the assumed true effect lies at or beyond the %s margin, or the target is at or below alpha; allowed: a true effect inside the margin and a target power well above alpha", s.Power, s.Hypothesis), Err: err}
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
	if s.Method == "exact" {
		return // the exact power is the planned test's own
	}
	corrected := s.Method == "fleiss-cc"
	switch {
	case corrected && s.Test == "chi-square":
		res.Notes = append(res.Notes, "The formula includes a continuity correction but the planned test does not; the uncorrected formula (fleiss) matches that test more closely and asks for fewer participants.")
	case !corrected && (s.Test == "chi-square-yates" || s.Test == "fisher"):
		res.Notes = append(res.Notes, "The planned test is conservative (continuity-corrected or exact) but the formula has no correction; fleiss-cc matches that test more closely and asks for more participants.")
	}
}

// closedFormOneTail is the note on what a closed-form power counts.
const closedFormOneTail = "The closed-form power counts rejections in the direction of the planned effect only, as the published formulas do; for a two-sided test the other direction adds at most alpha/2."

// commonNotes adds notes on interpretation.
func commonNotes(s *Spec, res *Result) {
	if s.Design != "case-control" && s.Outcome == "binary" && math.Max(s.P1, s.P2) > 0.1 && s.P1 != s.P2 && s.Solve != "effect" {
		res.Notes = append(res.Notes, fmt.Sprintf("The outcome is not rare (up to %.0f%%): the odds ratio (%.3g) lies further from 1 than the %s (%.3g) and should not be read as one.",
			100*math.Max(s.P1, s.P2), power.OddsRatio(s.P1, s.P2), ratioName(s), s.P1/s.P2))
	}
	switch {
	case s.Method == "t" || s.Cluster != nil:
		if s.Sides == 2 {
			res.Notes = append(res.Notes, "The t-test power counts rejections in both directions, as the test does.")
		}
	case s.Sides == 2 && s.Hypothesis == "superiority" && s.Method != "exact":
		res.Notes = append(res.Notes, closedFormOneTail)
	}
	if s.DesignEffect > 1 {
		res.Notes = append(res.Notes, fmt.Sprintf("The design effect of %.4g inflates each group's size; power is evaluated at the effective sizes (analysable participants divided by the design effect).", s.DesignEffect))
	}
}

// planPrecision sizes a survey that estimates one prevalence.
func planPrecision(s *Spec, res *Result) error {
	ans := &res.Result
	tr := &trail{}
	defer func() { res.Steps = tr.steps }()
	if err := precisionCore(s, ans, tr); err != nil {
		return err
	}
	p := s.ExpectedPrevalence
	switch s.Solve {
	case "n":
		if s.Population > 0 && ans.EnrolTotal > s.Population {
			res.Warnings = append(res.Warnings, fmt.Sprintf("The enrolment of %d exceeds the population of %d: survey everyone and report the achieved margin.", ans.EnrolTotal, s.Population))
		}
	case "effect":
		if *ans.Margin >= 0.5 {
			if s.Outcome != "continuous" {
				res.Warnings = append(res.Warnings, "The achievable margin is wider than ±50 percentage points: this survey cannot estimate the prevalence usefully.")
			}
		}
	}
	d := *ans.Margin
	if s.Method != "wald" {
		// Wilson and Clopper-Pearson intervals stay within [0, 1].
	} else if d >= p || d >= 1-p {
		res.Warnings = append(res.Warnings, fmt.Sprintf("The margin (%.3g) is not smaller than the expected prevalence or its complement: the Wald interval would cross 0 or 1; an exact (Clopper-Pearson) or Wilson interval suits better.", d))
	}
	if eff := float64(ans.Total) / s.DesignEffect; s.Method == "wald" && eff*math.Min(p, 1-p) < 10 {
		res.Warnings = append(res.Warnings, "Fewer than 10 expected cases (or non-cases) among the effective respondents: the Wald interval is unreliable here.")
	}
	if s.DesignEffect > 1 {
		res.Notes = append(res.Notes, fmt.Sprintf("The design effect of %.4g multiplies the simple-random-sampling size.", s.DesignEffect))
	}
	return nil
}

// precisionCore computes the figures of a precision survey that Plan and
// Quick share: the sizes and n* (solving n) or the margin (solving
// effect), recording its steps on tr (nil: none).
func precisionCore(s *Spec, ans *Answer, tr *trail) error {
	pr := power.Precision{P: s.ExpectedPrevalence, Confidence: s.Confidence,
		DesignEffect: s.DesignEffect, Population: float64(s.Population)}
	z := 0.0
	if tr != nil {
		z = power.ZAlpha(1-s.Confidence, 2)
	}
	p := s.ExpectedPrevalence
	if s.Outcome == "continuous" {
		return meanPrecisionCore(s, ans, tr)
	}
	interval, _ := power.ParseIntervalMethod(s.Method)
	// effName and effValue are, solving effect, the step and value of the
	// simple random sample the survey is worth (after undoing the finite
	// population correction and the design effect).
	effName, effValue := "n0", 0.0
	switch s.Solve {
	case "n":
		n0, n := power.PrecisionN(pr, s.Margin)
		if interval != power.WaldInterval {
			// The smallest whole n whose interval at the expected count
			// has half-width within the margin; then the design effect
			// and the finite population correction as for Wald.
			m, err := interval.N(p, s.Margin, s.Confidence)
			if err != nil {
				return &SpecError{File: s.File, Key: "margin", Msg: fmt.Sprintf("%g: no survey of at most 10⁹ respondents reaches a %s of ±%g; allowed: a larger margin", s.Margin, MethodByID(s.Method).Name, s.Margin)}
			}
			n0 = float64(m)
			n = n0 * s.DesignEffect
			if s.Population > 0 {
				n = n / (1 + (n-1)/float64(s.Population))
			}
		}
		if err := checkSizes(s, n, n/(1-s.Attrition)); err != nil {
			return err
		}
		if interval == power.WaldInterval {
			tr.add("z", "the standard normal quantile at (1 + confidence) / 2", z, in("confidence", s.Confidence))
			tr.add("n0", "z² × expected_prevalence × (1 − expected_prevalence) / margin² (simple random sampling; Cochran 1977)", n0, in("z", z), in("expected_prevalence", p), in("margin", s.Margin))
		} else {
			tr.add("n0", fmt.Sprintf("the smallest whole number of respondents whose %s at the expected count n0 × expected_prevalence has half-width at most the margin (simple random sampling; %s)", MethodByID(s.Method).Name, MethodByID(s.Method).Short),
				n0, in("expected_prevalence", p), in("margin", s.Margin), in("confidence", s.Confidence))
		}
		surveySizes(s, ans, tr, n0, n)
	case "effect":
		a, err := surveyRespondents(s, ans, tr, 1, "after non-response no respondent is left; allowed: a larger total")
		if err != nil {
			return err
		}
		tr.add("z", "the standard normal quantile at (1 + confidence) / 2", z, in("confidence", s.Confidence))
		next, nv := surveyEffective(s, tr, a)
		rule := "z × sqrt(expected_prevalence × (1 − expected_prevalence) / " + next + ")"
		margin := power.PrecisionMargin(pr, float64(a))
		if interval != power.WaldInterval {
			rule = fmt.Sprintf("half the width of the %s at the expected count %s × expected_prevalence (%s)", MethodByID(s.Method).Name, next, MethodByID(s.Method).Short)
			margin = interval.HalfWidth(p, nv, s.Confidence)
		}
		if s.Population > 0 && a >= s.Population {
			rule, margin = "0: every member of the population responds (a census)", 0
		}
		ans.Margin = ptr(tr.add("margin", rule, margin, in("z", z), in("expected_prevalence", p), in(next, nv)))
		effName, effValue = next, nv
	}
	// The interval expected at the plan: the method's limits at the
	// expected count of the simple random sample the plan is worth.
	eff, name := ans.N0, "n0"
	if s.Solve == "effect" {
		eff, name = effValue, effName
	}
	if tr != nil && eff > 0 && !(s.Population > 0 && ans.Total >= s.Population) {
		lo, hi := interval.Limits(eff*p, eff, s.Confidence)
		rule := fmt.Sprintf("the %%s limit of the %s at the expected count %s × expected_prevalence", MethodByID(s.Method).Name, name)
		ans.ExpectedInterval = []float64{
			tr.add("expected_lower", fmt.Sprintf(rule, "lower"), lo, in(name, eff), in("expected_prevalence", p), in("confidence", s.Confidence)),
			tr.add("expected_upper", fmt.Sprintf(rule, "upper"), hi, in(name, eff), in("expected_prevalence", p), in("confidence", s.Confidence)),
		}
	}
	return nil
}

// surveyRespondents records the respondents a survey of the given total
// expects after non-response, as its sizes; fewer than least is refused
// with the message few.
func surveyRespondents(s *Spec, ans *Answer, tr *trail, least int, few string) (int, error) {
	a := tr.addInt("analysable_first", "floor(total × (1 − attrition)): the respondents expected", floorTol(float64(s.Total)*(1-s.Attrition)), inInt("total", s.Total), in("attrition", s.Attrition))
	if a < least {
		return a, &SpecError{File: s.File, Key: "total", Msg: few}
	}
	ans.N, ans.Total = append(ans.N[:0], a), a
	ans.Enrol, ans.EnrolTotal = append(ans.Enrol[:0], s.Total), s.Total
	return a, nil
}

// surveyEffective is what a respondents are worth as a simple random
// sample: the finite population correction undone, then the design effect
// divided out. It returns the last step's name and value.
func surveyEffective(s *Spec, tr *trail, a int) (next string, nv float64) {
	next, nv = "analysable_first", float64(a)
	if s.Population > 0 && nv < float64(s.Population) {
		nv = tr.add("n_before_population", "analysable_first × (population − 1) / (population − analysable_first) (undoing the finite population correction)", nv*float64(s.Population-1)/(float64(s.Population)-nv), inInt("analysable_first", a), inInt("population", s.Population))
		next = "n_before_population"
	}
	if s.DesignEffect != 1 {
		nv = tr.add("n0", next+" / design_effect", nv/s.DesignEffect, in(next, nv), in("design_effect", s.DesignEffect))
		next = "n0"
	}
	return next, nv
}

// meanPrecisionCore is precisionCore for one mean to within ± margin by
// the t interval: n0 the smallest n ≥ 2 with t(1 − α/2, n − 1) sd / √n ≤
// margin (simple random sampling), then the design effect, the finite
// population correction and non-response as for a prevalence; solving
// effect, the half-width at the effective respondents.
func meanPrecisionCore(s *Spec, ans *Answer, tr *trail) error {
	sd := s.SD1
	switch s.Solve {
	case "n":
		m, err := power.MeanPrecisionN(sd, s.Margin, s.Confidence)
		if err != nil {
			return &PlanError{File: s.File, Msg: fmt.Sprintf("no survey of at most 10⁹ respondents estimates the mean within ±%g; allowed: a larger margin", s.Margin), Err: err}
		}
		n0 := float64(m)
		n := n0 * s.DesignEffect
		if s.Population > 0 {
			n = n / (1 + (n-1)/float64(s.Population))
		}
		if err := checkSizes(s, n, n/(1-s.Attrition)); err != nil {
			return err
		}
		tr.add("n0", "the smallest whole number of respondents n0 ≥ 2 with t(1 − (1 − confidence)/2, n0 − 1) × sd / √n0 at most the margin (simple random sampling; the t interval, Student 1908)", n0, in("sd", sd), in("margin", s.Margin), in("confidence", s.Confidence))
		surveySizes(s, ans, tr, n0, n)
	case "effect":
		a, err := surveyRespondents(s, ans, tr, 2, "after non-response fewer than two respondents are left, too few for a t interval; allowed: a larger total")
		if err != nil {
			return err
		}
		next, nv := surveyEffective(s, tr, a)
		if nv < 2 {
			return &SpecError{File: s.File, Key: "total", Msg: fmt.Sprintf("%d respondents are worth %.3g of a simple random sample after the design effect, fewer than two: no t interval; allowed: a larger total", s.Total, nv)}
		}
		margin := power.MeanHalfWidth(sd, nv, s.Confidence)
		rule := "t(1 − (1 − confidence)/2, " + next + " − 1) × sd / √" + next + " (the t interval)"
		if s.Population > 0 && a >= s.Population {
			rule, margin = "0: every member of the population responds (a census)", 0
		}
		ans.Margin = ptr(tr.add("margin", rule, margin, in("sd", sd), in("confidence", s.Confidence), in(next, nv)))
	}
	return nil
}

// accuracyCore computes a study of diagnostic accuracy (Buderer 1996): the
// participants to estimate sensitivity and specificity within the margin
// by Wald intervals, given the prevalence of the condition among those
// tested (solving n: the larger of the two sizes, then non-response), or
// the margin each reaches with the participants given (solving effect).
func accuracyCore(s *Spec, ans *Answer, tr *trail) error {
	da := power.DiagnosticAccuracy{Sensitivity: s.Sensitivity, Specificity: s.Specificity, Prevalence: s.ConditionPrevalence, Confidence: s.Confidence}
	z := power.ZAlpha(1-s.Confidence, 2)
	se, sp, prev := s.Sensitivity, s.Specificity, s.ConditionPrevalence
	tr.add("z", "the standard normal quantile at (1 + confidence) / 2", z, in("confidence", s.Confidence))
	switch s.Solve {
	case "n":
		nSe, nSp := da.N(s.Margin)
		if err := checkSizes(s, nSe, nSp, math.Max(nSe, nSp)/(1-s.Attrition)); err != nil {
			return err
		}
		nSe = tr.add("n_sensitivity", "z² × sensitivity × (1 − sensitivity) / (margin² × condition_prevalence) (Buderer 1996)", nSe, in("z", z), in("sensitivity", se), in("margin", s.Margin), in("condition_prevalence", prev))
		nSp = tr.add("n_specificity", "z² × specificity × (1 − specificity) / (margin² × (1 − condition_prevalence)) (Buderer 1996)", nSp, in("z", z), in("specificity", sp), in("margin", s.Margin), in("condition_prevalence", prev))
		a := tr.addInt("analysable_first", "ceil(max(n_sensitivity, n_specificity)): the participants needed", ceilTol(math.Max(nSe, nSp)), in("n_sensitivity", nSe), in("n_specificity", nSp))
		ans.NSensitivity, ans.NSpecificity, ans.NStar = ptr(nSe), ptr(nSp), math.Max(nSe, nSp)
		ans.N, ans.Total = append(ans.N[:0], a), a
		ans.Enrol = append(ans.Enrol[:0], tr.addInt("enrol_first", "ceil(analysable_first / (1 − attrition)): the people to test, allowing for non-response", ceilTol(float64(a)/(1-s.Attrition)), inInt("analysable_first", a), in("attrition", s.Attrition)))
		ans.EnrolTotal = ans.Enrol[0]
		ans.Margin = ptr(s.Margin)
	case "effect":
		a := tr.addInt("analysable_first", "floor(total × (1 − attrition)): the participants expected", floorTol(float64(s.Total)*(1-s.Attrition)), inInt("total", s.Total), in("attrition", s.Attrition))
		if a < 1 {
			return &SpecError{File: s.File, Key: "total", Msg: "after non-response nobody is left; allowed: a larger total"}
		}
		ans.N, ans.Total = append(ans.N[:0], a), a
		ans.Enrol, ans.EnrolTotal = append(ans.Enrol[:0], s.Total), s.Total
		mSe := tr.add("margin_sensitivity", "z × sqrt(sensitivity × (1 − sensitivity) / (analysable_first × condition_prevalence)) (Buderer 1996)", z*math.Sqrt(se*(1-se)/(float64(a)*prev)), in("z", z), in("sensitivity", se), inInt("analysable_first", a), in("condition_prevalence", prev))
		mSp := tr.add("margin_specificity", "z × sqrt(specificity × (1 − specificity) / (analysable_first × (1 − condition_prevalence))) (Buderer 1996)", z*math.Sqrt(sp*(1-sp)/(float64(a)*(1-prev))), in("z", z), in("specificity", sp), inInt("analysable_first", a), in("condition_prevalence", prev))
		ans.MarginSensitivity, ans.MarginSpecificity = ptr(mSe), ptr(mSp)
		ans.Margin = ptr(math.Max(mSe, mSp))
	}
	return nil
}

// surveySizes records a survey's sizes from its simple-random-sampling size
// n0 and n, n0 after the design effect and the finite population
// correction: the respondents needed ⌈n⌉ and those to invite, allowing for
// non-response; the margin is the specification's.
func surveySizes(s *Spec, ans *Answer, tr *trail, n0, n float64) {
	next := "n0"
	if s.DesignEffect != 1 {
		tr.add("n_design", "n0 × design_effect", n0*s.DesignEffect, in("n0", n0), in("design_effect", s.DesignEffect))
		next = "n_design"
	}
	if s.Population > 0 {
		tr.add("n_population", next+" / (1 + ("+next+" − 1) / population) (finite population correction)", n, in(next, n0*s.DesignEffect), inInt("population", s.Population))
		next = "n_population"
	}
	a := tr.addInt("analysable_first", "ceil("+next+"): the respondents needed", ceilTol(n), in(next, n))
	ans.N0, ans.NStar = n0, n
	ans.N, ans.Total = append(ans.N[:0], a), a
	ans.Enrol = append(ans.Enrol[:0], tr.addInt("enrol_first", "ceil(analysable_first / (1 − attrition)): the people to invite, allowing for non-response", ceilTol(float64(a)/(1-s.Attrition)), inInt("analysable_first", a), in("attrition", s.Attrition)))
	ans.EnrolTotal = ans.Enrol[0]
	ans.Margin = ptr(s.Margin)
}

// ratioPrecisionCore computes a risk ratio (cohort; Katz et al. 1978) or
// odds ratio (case-control; Woolf 1955) to a stated precision, the ratio ρ
// of the upper to the lower limit of its log-scale Wald interval: solving
// n, n1* = z² (V1 + V2/r) / (ln ρ / 2)², rounded as any n* (the second
// group ⌈r n1*⌉, then attrition); solving effect, the ρ the enrolment
// reaches. Both record the interval expected around the planned ratio.
func ratioPrecisionCore(s *Spec, ans *Answer, tr *trail) error {
	rp := power.RatioPrecision{Measure: power.MeasureRiskRatio, P1: s.P1, P2: s.P2, Confidence: s.Confidence}
	if s.Design == "case-control" {
		rp.Measure = power.MeasureOddsRatio
	}
	ins := []Input{in("first_risk", s.P1), in("second_risk", s.P2), in("confidence", s.Confidence)}
	var sz sizes
	switch s.Solve {
	case "n":
		n1 := rp.N1(s.PrecisionRatio, s.Ratio)
		tr.add("n_star", fmt.Sprintf("the unrounded size of the first group whose %s's interval has upper/lower = precision_ratio (%s)", map[bool]string{true: "odds ratio", false: "risk ratio"}[rp.Measure == power.MeasureOddsRatio], MethodByID(s.Method).Short),
			n1, append(ins, in("precision_ratio", s.PrecisionRatio), in("ratio", s.Ratio))...)
		var err error
		if sz, err = sizesFromNStar(s, n1, tr); err != nil {
			return err
		}
		ans.NStar = n1
	default:
		var err error
		if sz, err = sizesFromEnrolment(s, tr); err != nil {
			return err
		}
	}
	fillSizes(s, ans, &sz)
	n := sz.n()
	if s.Solve == "n" {
		recordTotals(s, tr, "analysable", n)
		recordTotals(s, tr, "enrol", sz.enrol())
	}
	rho := tr.add("precision_ratio_achieved", "exp(2 z SE) at the analysable sizes: the upper over the lower limit of the interval", rp.Rho(float64(n[0]), float64(n[1])),
		append([]Input{inInt("analysable_first", n[0]), inInt("analysable_second", n[1])}, ins...)...)
	ans.PrecisionRatio = ptr(rho)
	ratio := rp.Ratio()
	ans.ExpectedInterval = []float64{ratio / math.Sqrt(rho), ratio * math.Sqrt(rho)}
	return nil
}
