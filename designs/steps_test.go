package designs

import (
	"encoding/json"
	"io/fs"
	"math"
	"strings"
	"testing"

	"enough/examples"
)

// replayStep recomputes a step's output from its inputs by its rule, as a
// reviewer would by hand. It returns ok false for steps that are computed
// by a method (a formula's n*, a power, a search) rather than by the
// arithmetic of rounding and inflation; those are checked against outside
// values elsewhere, and their links here.
func replayStep(st Step) (float64, bool) {
	g := func(name string) float64 {
		v, ok := st.Inputs.Get(name)
		if !ok {
			return math.NaN()
		}
		return v
	}
	up := func(x float64) float64 { return float64(ceilTol(x)) }
	down := func(x float64) float64 { return float64(floorTol(x)) }
	rule := st.Rule
	switch {
	case rule == "ceil(n_star × design_effect)":
		return up(g("n_star") * g("design_effect")), true
	case rule == "max(2, ceil(n_star × design_effect))":
		return math.Max(2, up(g("n_star")*g("design_effect"))), true
	case rule == "ceil(ratio × n_star × design_effect)":
		return up(g("ratio") * g("n_star") * g("design_effect")), true
	case rule == "max(2, ceil(ratio × n_star × design_effect))":
		return math.Max(2, up(g("ratio")*g("n_star")*g("design_effect"))), true
	case strings.HasPrefix(rule, "ceil(analysable_") && strings.Contains(rule, "/ (1 − attrition))"):
		a := strings.TrimSuffix(strings.TrimPrefix(strings.SplitN(rule, " /", 2)[0], "ceil("), "")
		return up(g(a) / (1 - g("attrition"))), true
	case strings.HasPrefix(rule, "floor(enrol_") && strings.HasSuffix(rule, "× (1 − attrition))"):
		e := strings.TrimPrefix(strings.SplitN(rule, " ×", 2)[0], "floor(")
		return down(g(e) * (1 - g("attrition"))), true
	case strings.HasPrefix(rule, "floor(total × (1 − attrition))"):
		return down(g("total") * (1 - g("attrition"))), true
	case rule == "ceil(ratio × enrol_first)":
		return up(g("ratio") * g("enrol_first")), true
	case rule == "ceil(ratio × analysable_first)":
		return up(g("ratio") * g("analysable_first")), true
	case rule == "n, as given", rule == "n, as given (pairs)", rule == "n, as given (everyone)":
		return g("n"), true
	case rule == "total, as given (everyone)":
		return g("total"), true
	case rule == "n_second, as given":
		return g("n_second"), true
	case strings.HasSuffix(st.Name, "_total") && strings.HasPrefix(rule, "(arms − 1) × "):
		w := strings.TrimSuffix(st.Name, "_total")
		return (g("arms")-1)*g(w+"_first") + g(w+"_second"), true
	case strings.HasSuffix(st.Name, "_total") && strings.HasPrefix(rule, "arms × "):
		return g("arms") * g(strings.TrimSuffix(st.Name, "_total")+"_first"), true
	case strings.HasSuffix(st.Name, "_total") && strings.Contains(rule, "_first + "):
		w := strings.TrimSuffix(st.Name, "_total")
		return g(w+"_first") + g(w+"_second"), true
	case strings.HasPrefix(st.Name, "clusters_"):
		return up(g("enrol_"+strings.TrimPrefix(st.Name, "clusters_")) / g("cluster_size")), true
	case strings.HasPrefix(rule, "analysable_") && strings.HasSuffix(rule, " / design_effect"):
		return g(strings.TrimSuffix(rule, " / design_effect")) / g("design_effect"), true
	case rule == "exposure_prevalence × analysable_total / design_effect":
		return g("exposure_prevalence") * g("analysable_total") / g("design_effect"), true
	case rule == "(1 − exposure_prevalence) × analysable_total / design_effect":
		return (1 - g("exposure_prevalence")) * g("analysable_total") / g("design_effect"), true
	case rule == "round(exposure_prevalence × analysable_total)":
		return math.Round(g("exposure_prevalence") * g("analysable_total")), true
	case rule == "analysable_total − analysable_first":
		return g("analysable_total") - g("analysable_first"), true
	case rule == "round(exposure_prevalence × total)":
		return math.Round(g("exposure_prevalence") * g("total")), true
	case rule == "total − enrol_first":
		return g("total") - g("enrol_first"), true
	case strings.HasPrefix(rule, "max(ceil(2 × cluster_size), ceil(2 × cluster_size / ratio))"):
		return math.Max(up(2*g("cluster_size")), up(2*g("cluster_size")/g("ratio"))), true
	case strings.HasPrefix(rule, "ceil(events_star)"):
		return up(g("events_star")), true
	case rule == "events_star / (event_probability_first + ratio × event_probability_second)":
		return g("events_star") / (g("event_probability_first") + g("ratio")*g("event_probability_second")), true
	case strings.HasSuffix(rule, " × event_probability_first + analysable_second × event_probability_second"), strings.HasSuffix(rule, " × event_probability_first + effective_second × event_probability_second"):
		a, b := "analysable_first", "analysable_second"
		if strings.HasPrefix(rule, "effective") {
			a, b = "effective_first", "effective_second"
		}
		return g(a)*g("event_probability_first") + g(b)*g("event_probability_second"), true
	case strings.HasPrefix(rule, "n_star_fixed × inflation"):
		return g("n_star_fixed") * g("inflation"), true
	case strings.HasPrefix(rule, "events_star_fixed × inflation"):
		return g("events_star_fixed") * g("inflation"), true
	case strings.HasPrefix(rule, "n_star_unadjusted / (1 − r_squared)"):
		return g("n_star_unadjusted") / (1 - g("r_squared")), true
	case rule == "unexposed_rate × rate_ratio":
		return g("unexposed_rate") * g("rate_ratio"), true
	case strings.HasPrefix(st.Name, "person_time_") && strings.HasSuffix(rule, " × person_time"):
		return g(strings.TrimSuffix(rule, " × person_time")) * g("person_time"), true
	case strings.HasPrefix(st.Name, "expected_events_") && strings.HasPrefix(rule, "person_time_"):
		parts := strings.SplitN(rule, " × ", 2)
		return g(parts[0]) * g(parts[1]), true
	case strings.HasPrefix(rule, "z² × sensitivity × (1 − sensitivity) / (margin² × condition_prevalence)"):
		return g("z") * g("z") * g("sensitivity") * (1 - g("sensitivity")) / (g("margin") * g("margin") * g("condition_prevalence")), true
	case strings.HasPrefix(rule, "z² × specificity × (1 − specificity) / (margin² × (1 − condition_prevalence))"):
		return g("z") * g("z") * g("specificity") * (1 - g("specificity")) / (g("margin") * g("margin") * (1 - g("condition_prevalence"))), true
	case strings.HasPrefix(rule, "ceil(max(n_sensitivity, n_specificity))"):
		return up(math.Max(g("n_sensitivity"), g("n_specificity"))), true
	case strings.HasPrefix(rule, "z × sqrt(sensitivity × (1 − sensitivity) / (analysable_first × condition_prevalence))"):
		return g("z") * math.Sqrt(g("sensitivity")*(1-g("sensitivity"))/(g("analysable_first")*g("condition_prevalence"))), true
	case strings.HasPrefix(rule, "z × sqrt(specificity × (1 − specificity) / (analysable_first × (1 − condition_prevalence)))"):
		return g("z") * math.Sqrt(g("specificity")*(1-g("specificity"))/(g("analysable_first")*(1-g("condition_prevalence")))), true
	case strings.HasPrefix(rule, "floor(total × (1 − attrition)): the participants expected"):
		return down(g("total") * (1 - g("attrition"))), true
	case strings.HasPrefix(rule, "ceil(analysable_first / (1 − attrition)): the people to test"):
		return up(g("analysable_first") / (1 - g("attrition"))), true
	case rule == "analysable_first × discordant_per_set":
		return g("analysable_first") * g("discordant_per_set"), true
	case rule == "controls_per_case × analysable_first":
		return g("controls_per_case") * g("analysable_first"), true
	case rule == "controls_per_case × enrol_first":
		return g("controls_per_case") * g("enrol_first"), true
	case rule == "ceil(n_star)":
		return up(g("n_star")), true
	case strings.HasPrefix(rule, "(1 − exposure_prevalence) / exposure_prevalence"):
		return (1 - g("exposure_prevalence")) / g("exposure_prevalence"), true
	case rule == "sd × √(2 × (1 − within_correlation))":
		return g("sd") * math.Sqrt(2*(1-g("within_correlation"))), true
	case strings.Contains(rule, " × √(1 − baseline_correlation²)"):
		r := g("baseline_correlation")
		return g(strings.SplitN(rule, " ", 2)[0]) * math.Sqrt(1-r*r), true
	case rule == "ln(2) / control_median (exponential survival)":
		return math.Ln2 / g("control_median"), true
	case rule == "−ln(control_survival) / time (exponential survival)":
		return -math.Log(g("control_survival")) / g("time"), true
	case rule == "alpha / comparisons (Bonferroni)":
		return g("alpha") / g("comparisons"), true
	case strings.HasPrefix(rule, "difference × (1 − non_adherence − contamination)"):
		return g("difference") * (1 - g("non_adherence") - g("contamination")), true
	case strings.HasPrefix(rule, "exp(ln(hazard_ratio) × (1 − non_adherence − contamination))"):
		return math.Exp(math.Log(g("hazard_ratio")) * (1 - g("non_adherence") - g("contamination"))), true
	case strings.HasPrefix(rule, "(1 − non_adherence) × first_risk + non_adherence × second_risk"):
		return (1-g("non_adherence"))*g("first_risk") + g("non_adherence")*g("second_risk"), true
	case rule == "(1 − contamination) × second_risk + contamination × first_risk":
		return (1-g("contamination"))*g("second_risk") + g("contamination")*g("first_risk"), true
	case strings.HasPrefix(rule, "detectable_") && strings.Contains(rule, " × (1 − non_adherence − contamination)"):
		return g(strings.Replace(st.Name, "diluted_", "detectable_", 1)) * (1 - g("non_adherence") - g("contamination")), true
	case strings.HasPrefix(rule, "exp(ln(detectable_"):
		return math.Exp(math.Log(g(strings.Replace(st.Name, "diluted_", "detectable_", 1))) * (1 - g("non_adherence") - g("contamination"))), true
	case strings.HasPrefix(rule, "z² × expected_prevalence × (1 − expected_prevalence) / margin²"):
		p := g("expected_prevalence")
		return g("z") * g("z") * p * (1 - p) / (g("margin") * g("margin")), true
	case rule == "n0 × design_effect":
		return g("n0") * g("design_effect"), true
	case strings.HasSuffix(rule, "(finite population correction)"):
		n := g(strings.SplitN(rule, " /", 2)[0])
		return n / (1 + (n-1)/g("population")), true
	case strings.HasPrefix(rule, "ceil(n0)"), strings.HasPrefix(rule, "ceil(n_design)"), strings.HasPrefix(rule, "ceil(n_population)"):
		return up(g(strings.TrimPrefix(strings.SplitN(rule, ")", 2)[0], "ceil("))), true
	case strings.HasPrefix(rule, "ceil(analysable_first / (1 − attrition)): the people to invite"):
		return up(g("analysable_first") / (1 - g("attrition"))), true
	case strings.HasPrefix(rule, "floor(total × (1 − attrition)): the respondents"):
		return down(g("total") * (1 - g("attrition"))), true
	case strings.HasPrefix(rule, "analysable_first × (population − 1) / (population − analysable_first)"):
		n, N := g("analysable_first"), g("population")
		return n * (N - 1) / (N - n), true
	case strings.HasSuffix(rule, " / design_effect") && st.Name == "n0":
		return g(strings.TrimSuffix(rule, " / design_effect")) / g("design_effect"), true
	case strings.HasPrefix(rule, "z × sqrt(expected_prevalence × (1 − expected_prevalence) / "):
		p := g("expected_prevalence")
		return g("z") * math.Sqrt(p*(1-p)/g(strings.TrimSuffix(strings.TrimPrefix(rule, "z × sqrt(expected_prevalence × (1 − expected_prevalence) / "), ")"))), true
	}
	return 0, false
}

// computedSteps are the steps that a method computes (checked against
// outside values elsewhere); every other step must replay by arithmetic.
var computedSteps = map[string]bool{
	"n_star": true, "n_star_unadjusted": true, "n_star_fixed": true, "events_star_fixed": true, "inflation": true, "discordant_per_set": true, "n0": true, "expected_lower": true, "expected_upper": true, "precision_ratio_achieved": true, "events_star": true, "achieved_power": true, "power": true, "fixed_power": true,
	"event_probability_first": true, "event_probability_second": true,
	"detectable_lower": true, "detectable_upper": true, "diluted_lower": true, "diluted_upper": true,
	"z": true, "margin": true, "analysable_first": true,
}

// checkReplay replays a result's steps: each arithmetic step's output
// follows from its inputs by its rule, every input named after an earlier
// step holds that step's output, searches record power at or above the
// target at their answer and below it one participant earlier, and the
// last steps give the printed answer.
func checkReplay(t *testing.T, res *Result, what string) {
	t.Helper()
	if len(res.Steps) == 0 {
		t.Fatalf("no steps recorded\n%s", what)
	}
	last := map[string]float64{}
	for i, st := range res.Steps {
		for _, x := range st.Inputs {
			if v, ok := last[x.Name]; ok && v != x.Value {
				t.Fatalf("step %d %s: input %s = %v, but the earlier step gave %v\n%s", i+1, st.Name, x.Name, x.Value, v, what)
			}
			_, seen := last[x.Name]
			for _, prefix := range []string{"analysable_", "enrol_", "effective_", "clusters_", "n_star", "events", "diluted_", "alpha_per", "cluster_minimum", "formula_first", "expected_events", "event_probability", "residual_"} {
				if strings.HasPrefix(x.Name, prefix) && !seen {
					t.Fatalf("step %d %s: input %s was not computed by an earlier step\n%s", i+1, st.Name, x.Name, what)
				}
			}
		}
		want, ok := replayStep(st)
		switch {
		case ok:
			if math.Abs(want-st.Output) > 1e-9*math.Max(1, math.Abs(want)) {
				t.Fatalf("step %d %s = %s with %v: replayed %v, recorded %v\n%s", i+1, st.Name, st.Rule, st.Inputs, want, st.Output, what)
			}
		case !computedSteps[st.Name] && !strings.HasPrefix(st.Name, "closed_form") && st.Name != "formula_first" && st.Name != "n_design" && st.Name != "n_population":
			t.Fatalf("step %d %s (%s) neither replays nor is a computed step\n%s", i+1, st.Name, st.Rule, what)
		}
		if target, ok := st.Inputs.Get("target_power"); ok {
			if p, ok := st.Inputs.Get("power_at_output"); ok && p < target {
				t.Fatalf("step %d %s: power %v at the answer is below the target %v", i+1, st.Name, p, target)
			}
			if p, ok := st.Inputs.Get("power_one_below"); ok && p >= target {
				t.Fatalf("step %d %s: power %v one participant below already reaches the target %v", i+1, st.Name, p, target)
			}
		}
		last[st.Name] = st.Output
	}
	a := res.Result
	names := []string{"analysable_first", "analysable_second"}
	for i, n := range a.N {
		if v, ok := last[names[i]]; !ok || v != float64(n) {
			t.Fatalf("the steps give %s = %v, the answer %d\n%s", names[i], v, n, what)
		}
	}
	for i, n := range a.Enrol {
		name := []string{"enrol_first", "enrol_second"}[i]
		if v, ok := last[name]; ok && v != float64(n) {
			t.Fatalf("the steps give %s = %v, the answer %d\n%s", name, v, n, what)
		}
	}
	if v, ok := last["analysable_total"]; ok && v != float64(a.Total) {
		t.Fatalf("the steps give a total of %v, the answer %d\n%s", v, a.Total, what)
	}
	if v, ok := last["enrol_total"]; ok && v != float64(a.EnrolTotal) {
		t.Fatalf("the steps give an enrolment of %v, the answer %d\n%s", v, a.EnrolTotal, what)
	}
	for _, name := range []string{"achieved_power", "power"} {
		if v, ok := last[name]; ok && a.AchievedPower != nil && v != *a.AchievedPower {
			t.Fatalf("the steps give %s %v, the answer %v\n%s", name, v, *a.AchievedPower, what)
		}
	}
	if d := a.Detectable; d != nil {
		for name, p := range map[string]*float64{"detectable_lower": d.Lower, "detectable_upper": d.Upper} {
			if v, ok := last[name]; ok != (p != nil) || (ok && v != *p) {
				t.Fatalf("the steps give %s %v, the answer %v\n%s", name, v, p, what)
			}
		}
	}
	// The JSON form keeps the inputs in order and round-trips.
	data, err := json.Marshal(res.Steps)
	if err != nil {
		t.Fatal(err)
	}
	var back []Step
	if err := json.Unmarshal(data, &back); err != nil || len(back) != len(res.Steps) {
		t.Fatalf("steps do not round-trip through JSON: %v", err)
	}
}

// TestStepsReplay replays the steps of every example and starter, solving
// n, power and effect where each applies.
func TestStepsReplay(t *testing.T) {
	var files []struct{ name, data string }
	fs.WalkDir(examples.Files, ".", func(p string, d fs.DirEntry, err error) error {
		if err == nil && strings.HasSuffix(p, ".yaml") {
			b, _ := examples.Files.ReadFile(p)
			files = append(files, struct{ name, data string }{"examples/" + p, string(b)})
		}
		return nil
	})
	starterFiles, _ := fs.Glob(starters, "starters/*.yaml")
	for _, p := range starterFiles {
		b, _ := starters.ReadFile(p)
		files = append(files, struct{ name, data string }{p, string(b)})
	}
	if len(files) < 20 {
		t.Fatalf("only %d specifications", len(files))
	}
	for _, f := range files {
		for _, solve := range []string{"", "solve=n", "solve=power", "solve=effect"} {
			var sets []string
			if solve != "" {
				sets = append(sets, solve)
				if solve != "solve=n" && !strings.Contains(f.data, "\nn:") && !strings.Contains(f.data, "\ntotal:") {
					if strings.Contains(f.data, "design: cross-sectional") {
						sets = append(sets, "total=600")
					} else {
						sets = append(sets, "n=150")
					}
				}
			}
			s, err := Parse(f.name, []byte(f.data), sets)
			if err != nil {
				continue // e.g. effect is not offered for non-inferiority
			}
			res, err := Plan(s)
			if err != nil {
				continue
			}
			checkReplay(t, res, f.name+" "+solve)
		}
	}
}

// TestExactStepsReplay replays the steps of plans whose answer comes from
// the exact search (--exact on a closed-form plan).
func TestExactStepsReplay(t *testing.T) {
	for _, extra := range []string{"", "attrition: 0.1\nratio: 2\n", "solve: power\nn: 60\n", "arms: 3\n"} {
		s, err := Parse("test.yaml", []byte("version: 1\ndesign: trial\ncontrol_risk: 0.2\nintervention_risk: 0.5\npower: 0.8\ntest: fisher\n"+extra), nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Plan(s)
		if err != nil {
			t.Fatal(err)
		}
		if err := Exact(s, res); err != nil {
			t.Fatal(err)
		}
		checkReplay(t, res, extra)
		if !strings.Contains(extra, "solve: power") && stepOut(res, "analysable_first") != float64(res.Result.Exact.First) {
			t.Errorf("%q: the steps end at %v, the exact search at %d", extra, stepOut(res, "analysable_first"), res.Result.Exact.First)
		}
	}
}
