package designs

import (
	"errors"
	"fmt"
	"strings"

	"enough/power"
)

// exactFits says whether exact enumeration serves the specification, and
// why not.
func exactFits(s *Spec) error {
	switch {
	case s.Outcome != "binary" || s.Goal == "precision" || s.Goal == "accuracy":
		return fmt.Errorf("exact power serves two groups with a binary outcome")
	case s.Hypothesis != "superiority":
		return fmt.Errorf("exact power serves superiority tests; for %s use the closed form or simulate", s.Hypothesis)
	case s.Cluster != nil || s.DesignEffect > 1:
		return fmt.Errorf("exact enumeration assumes independent binomial counts; a design effect above 1 needs simulation")
	case s.Solve == "effect":
		return fmt.Errorf("exact power answers solve: n or power")
	}
	if _, ok := power.ParseBinaryTest(s.Test); !ok {
		return fmt.Errorf("test %s has no exact enumeration; allowed: chi-square, chi-square-yates, fisher, z-unpooled", s.Test)
	}
	return nil
}

// Exact adds the exact power by full enumeration of both binomial counts,
// for the planned test at the analysable sizes; when solving n it searches
// a window around the closed-form answer and reports the saw-tooth. The
// exact answer becomes the plan's (result.n and the achieved power), and a
// closed-form method chosen in the specification moves to the alternatives.
func Exact(s *Spec, res *Result) error {
	if err := exactFits(s); err != nil {
		return &InputError{Msg: s.File + ": exact: " + err.Error()}
	}
	test, _ := power.ParseBinaryTest(s.Test)
	e := plannedEffects(s)
	dir := 1
	if e.p1 < e.p2 {
		dir = -1
	}
	a := &res.Result
	// The plan's power is now the exact power of the planned test: notes on
	// what the closed form counts, or how it matches the test, no longer
	// speak of it.
	var notes []string
	for _, n := range res.Notes {
		if n != closedFormOneTail && !strings.HasPrefix(n, "The formula includes a continuity correction") && !strings.HasPrefix(n, "The planned test is conservative") {
			notes = append(notes, n)
		}
	}
	res.Notes = append([]string{}, notes...)
	if s.Method != "exact" {
		// The closed-form answer becomes an alternative.
		m := MethodByID(s.Method)
		alt := Alternative{Method: m.ID, Name: m.Name, Citation: m.Citation, Short: m.Short, AchievedPower: a.AchievedPower}
		if s.Solve == "n" {
			alt.N, alt.Total, alt.EnrolTotal = a.N, a.Total, a.EnrolTotal
		}
		res.Alternatives = append([]Alternative{alt}, res.Alternatives...)
		x := MethodByID("exact")
		res.Method, res.MethodName, res.Citation, res.Short = x.ID, x.Name, x.Citation, x.Short
	}
	if s.Solve == "power" {
		if cells := float64(a.N[0]+1) * float64(a.N[1]+1); cells > 4e7 || (test == power.Fisher && cells > 5e6) {
			return &InputError{Msg: fmt.Sprintf("%s: exact: enumerating every pair of counts for %d and %d would take too long; allowed: smaller sizes, or verify the plan with enough simulate", s.File, a.N[0], a.N[1])}
		}
		a.ExactPower = ptr(power.ExactPower(test, a.N[0], a.N[1], e.p1, e.p2, e.alpha, s.Sides, dir))
		a.AchievedPower = a.ExactPower
		// The exact power replaces the closed form's as the last step.
		if k := len(res.Steps) - 1; k >= 0 && res.Steps[k].Name == "power" {
			res.Steps = res.Steps[:k]
		}
		tr := &trail{steps: res.Steps}
		tr.add("power", "the exact power of "+TestName(s.Test)+", summed over every pair of counts", *a.ExactPower,
			append([]Input{inInt("analysable_first", a.N[0]), inInt("analysable_second", a.N[1])}, append(riskInputs(e), alphaInput(s, e), inInt("sides", s.Sides))...)...)
		res.Steps = tr.steps
		return nil
	}
	// Centre the window on the closed form that suits the test: with a
	// continuity correction for Yates and Fisher, without for the others.
	engine := power.Fleiss
	if test == power.Fisher || test == power.ChiSquareYates {
		engine = power.FleissCC
	}
	nstar, err := engine.N(power.TwoProportions{P1: e.p1, P2: e.p2, Alpha: e.alpha, Sides: s.Sides}, s.Ratio, s.Power)
	if err != nil {
		return solveError(s, err)
	}
	cf := ceilTol(nstar)
	// The window: 15% of the closed form plus 10 either side, narrowed so
	// that the enumeration stays within a budget of table cells: about ten
	// seconds on two cores. A cell costs some 6 ns on one core while the
	// table of one size fits in the cache, up to 9 ns for tables of 10⁸
	// cells, and some 70 ns for Fisher's test; each row (each count of the
	// first group) costs about as much as 8 cells more, which is what
	// counts when a tiny ratio leaves the second group a handful (ratio
	// 1e-6: the budget of 2e9 cells without the rows took 16 s, issue 9).
	budget := 1e9
	if test == power.Fisher {
		budget = 1.5e8
	}
	perN := float64(cf+1) * (s.Ratio*float64(cf) + 1 + 8)
	w := min(cf*15/100+10, int(budget/perN/2))
	if w < 5 {
		return &InputError{Msg: fmt.Sprintf("%s: exact: enumerating every pair of counts near %d per group would take too long; allowed: smaller sizes, or verify the plan with enough simulate", s.File, cf)}
	}
	low, high := max(2, cf-w), cf+w
	st, err := power.ExactSolveN(test, s.Ratio, e.p1, e.p2, e.alpha, s.Sides, dir, s.Power, low, high)
	if errors.Is(err, power.ErrUnreachable) {
		return &PlanError{File: s.File, Msg: fmt.Sprintf("exact: no first-group size in the window searched (%d to %d, around the closed form's %d and narrowed to keep the enumeration within about ten seconds) reaches the target power with %s; the answer lies outside it: verify the plan with enough simulate", low, high, cf, TestName(s.Test)), Err: err}
	}
	if err != nil {
		return err
	}
	a.Exact = &ExactSearch{First: st.First, Stable: st.Stable, Window: []int{st.Low, st.High}, ClosedForm: cf}
	// The steps: those before the closed form's (dilution, alpha), then
	// the search.
	var prefix []Step
	for _, x := range res.Steps {
		if x.Name == "n_star" {
			break
		}
		prefix = append(prefix, x)
	}
	tr := &trail{steps: prefix}
	params := append(riskInputs(e), alphaInput(s, e), inInt("sides", s.Sides))
	tr.add("n_star", "the unrounded size of the first group from "+map[power.Method]string{power.Fleiss: "Fleiss, no continuity correction", power.FleissCC: "Fleiss with continuity correction"}[engine]+", the closed form that centres the exact search", nstar,
		append(params, in("target_power", s.Power), in("ratio", s.Ratio))...)
	tr.addInt("closed_form_first", "ceil(n_star)", cf, in("n_star", nstar))
	n1 := st.First
	ins := []Input{inInt("window_low", st.Low), inInt("window_high", st.High), in("target_power", s.Power), in("power_at_output", st.Powers[n1-st.Low])}
	if n1 > st.Low {
		ins = append(ins, in("power_one_below", st.Powers[n1-1-st.Low]))
	}
	tr.addInt("analysable_first", "the smallest first-group size from window_low to window_high (around closed_form_first) at which the exact power of "+TestName(s.Test)+", summed over every pair of counts with the second group ceil(ratio × first), reaches the target", n1, ins...)
	n2 := tr.addInt("analysable_second", "ceil(ratio × analysable_first)", ceilTol(s.Ratio*float64(n1)-1e-9), in("ratio", s.Ratio), inInt("analysable_first", n1))
	a.ExactPower = ptr(st.Powers[n1-st.Low])
	a.NStar = 0
	e1 := enrolFor(s, "enrol_first", n1, tr)
	sz := sizes{k: 2, v: [4]int{n1, n2, e1, enrolFor(s, "enrol_second", n2, tr)}}
	// New slices: the closed form's, now an alternative, keep theirs.
	a.N, a.Enrol = nil, nil
	fillSizes(s, a, &sz)
	recordTotals(s, tr, "analysable", sz.n())
	recordTotals(s, tr, "enrol", sz.enrol())
	a.AchievedPower = a.ExactPower
	tr.add("achieved_power", "the exact power of "+TestName(s.Test)+" at the analysable sizes (power_at_output of the search)", *a.ExactPower,
		append([]Input{inInt("analysable_first", n1), inInt("analysable_second", n2)}, params...)...)
	res.Steps = tr.steps
	if st.First == st.Low && st.Low > 2 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("The exact search found the target already at the lower end of its window (%d); a smaller size may also reach it.", st.Low))
	}
	if st.Stable != st.First {
		res.Notes = append(res.Notes, fmt.Sprintf("The exact power of %s is a saw-tooth in n: it first reaches the target at %d per first group, but dips below it again until %d, beyond which it stays above within the window %d–%d.", TestName(s.Test), st.First, st.Stable, st.Low, st.High))
	}
	return nil
}
