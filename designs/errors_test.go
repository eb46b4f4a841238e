package designs

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Tests of how problems in a specification are reported: every
// independent problem at once, in file order, one line each, with
// suggestions that fit the design. The specifications are invented.

// want is one expected problem: its line, its key and a fragment of its
// message.
type want struct {
	line int
	key  string
	msg  string
}

// parseAll parses spec and returns every problem it reports.
func parseAll(t *testing.T, spec string, sets []string) []*SpecError {
	t.Helper()
	_, err := Parse("s.yaml", []byte(spec), sets)
	if err == nil {
		return nil
	}
	all := AllSpecErrors(err)
	if all == nil {
		t.Fatalf("err = %v (%T), want *SpecError or SpecErrors", err, err)
	}
	return all
}

// checkWants compares the problems reported with the wanted ones, in order.
func checkWants(t *testing.T, name string, got []*SpecError, wants []want) {
	t.Helper()
	var lines []string
	for _, se := range got {
		lines = append(lines, se.Error())
	}
	if len(got) != len(wants) {
		t.Errorf("%s: %d problems, want %d:\n%s", name, len(got), len(wants), strings.Join(lines, "\n"))
		return
	}
	for i, w := range wants {
		se := got[i]
		if se.Line != w.line || se.Key != w.key || !strings.Contains(se.Msg, w.msg) {
			t.Errorf("%s: problem %d is %q; want line %d key %q and %q", name, i+1, se.Error(), w.line, w.key, w.msg)
		}
	}
}

// keyCase is a specification with a problem on one key: its message holds
// msg and not not.
type keyCase struct {
	name, spec, key string
	msg             string   // a fragment of the message
	not             string   // must not appear ("" for no check)
	sets            []string // --set overrides
}

// checkKeyCases checks the message of each case's key.
func checkKeyCases(t *testing.T, cases []keyCase) {
	t.Helper()
	for _, c := range cases {
		var found *SpecError
		for _, se := range parseAll(t, c.spec, c.sets) {
			if se.Key == c.key {
				found = se
			}
		}
		switch {
		case found == nil:
			t.Errorf("%s: no problem with key %q", c.name, c.key)
		case !strings.Contains(found.Msg, c.msg):
			t.Errorf("%s: %q does not contain %q", c.name, found.Error(), c.msg)
		case c.not != "" && strings.Contains(found.Msg, c.not):
			t.Errorf("%s: %q contains %q", c.name, found.Error(), c.not)
		}
	}
}

// TestSpecErrorsContract checks the type Parse returns for several
// problems: one line each joined by newlines, errors.As finding the first
// for callers that expect one, and AllSpecErrors listing them all.
func TestSpecErrorsContract(t *testing.T) {
	a := &SpecError{File: "s.yaml", Line: 3, Key: "alpha", Msg: "0.7 is out of range; allowed: a number in (0, 0.5]"}
	b := &SpecError{File: "s.yaml", Line: 5, Key: "sides", Msg: "3 is not allowed; allowed: 1 or 2"}
	errs := SpecErrors{a, b}
	if got, want := errs.Error(), a.Error()+"\n"+b.Error(); got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
	var wrapped error = fmt.Errorf("planning: %w", errs)
	var first *SpecError
	if !errors.As(wrapped, &first) || first != a {
		t.Errorf("errors.As found %v, want the first problem %v", first, a)
	}
	for _, c := range []struct {
		name string
		err  error
		want []*SpecError
	}{
		{"several", wrapped, []*SpecError{a, b}},
		{"one", a, []*SpecError{a}},
		{"one wrapped", fmt.Errorf("x: %w", b), []*SpecError{b}},
		{"other", errors.New("disk full"), nil},
		{"nil", nil, nil},
	} {
		got := AllSpecErrors(c.err)
		if fmt.Sprint(got) != fmt.Sprint(c.want) {
			t.Errorf("AllSpecErrors(%s) = %v, want %v", c.name, got, c.want)
		}
	}
}

// TestSpecErrorsResult checks the order problems are reported in (the
// file's by line, then key; the file's with no line; then the --set
// overrides' in command-line order), that repeats are dropped, and that one
// problem is a *SpecError and none is nil.
func TestSpecErrorsResult(t *testing.T) {
	l7 := &SpecError{File: "s.yaml", Line: 7, Key: "alhpa", Msg: "unknown key"}
	l3 := &SpecError{File: "s.yaml", Line: 3, Key: "attrition", Msg: "15 is out of range"}
	l3b := &SpecError{File: "s.yaml", Line: 3, Key: "attrition.x", Msg: "other"}
	none := &SpecError{File: "s.yaml", Key: "power", Msg: "missing"}
	noneB := &SpecError{File: "s.yaml", Key: "design", Msg: "missing"}
	alpha := &SpecError{File: "--set alpha=2", Key: "alpha", Msg: "2 is out of range"}
	sides := &SpecError{File: "--set sides=3", Key: "sides", Msg: "3 is not allowed"}
	sidesB := &SpecError{File: "--set sides=3", Key: "direction", Msg: "other"}
	for _, c := range []struct {
		name string
		in   SpecErrors
		sets []string
		want string // the lines, "|"-joined; "" for nil
	}{
		{"none", nil, nil, ""},
		{"one", SpecErrors{l7}, nil, l7.Error()},
		{"line order", SpecErrors{l7, none, l3}, nil, l3.Error() + "|" + l7.Error() + "|" + none.Error()},
		{"key breaks ties", SpecErrors{l3b, l3}, nil, l3.Error() + "|" + l3b.Error()},
		{"the file's missing keys by key", SpecErrors{none, noneB}, nil, noneB.Error() + "|" + none.Error()},
		{"the file's problems before the overrides'", SpecErrors{alpha, none, l7}, []string{"alpha=2"}, l7.Error() + "|" + none.Error() + "|" + alpha.Error()},
		{"overrides in command-line order, not by key", SpecErrors{alpha, sides}, []string{"sides=3", "alpha=2"}, sides.Error() + "|" + alpha.Error()},
		{"one override's problems in the order found", SpecErrors{alpha, sides, sidesB}, []string{"sides=3", "alpha=2"}, sides.Error() + "|" + sidesB.Error() + "|" + alpha.Error()},
		{"repeat dropped", SpecErrors{l3, l7, l3}, nil, l3.Error() + "|" + l7.Error()},
	} {
		err := c.in.result(c.sets)
		got := ""
		if err != nil {
			got = strings.ReplaceAll(err.Error(), "\n", "|")
		}
		if got != c.want {
			t.Errorf("%s: got %q, want %q", c.name, got, c.want)
		}
		_, isOne := err.(*SpecError)
		if strings.Count(c.want, "|") == 0 && c.want != "" && !isOne {
			t.Errorf("%s: one problem is %T, want *SpecError", c.name, err)
		}
	}
}

// TestParseSeveralErrors checks that independent problems are reported
// together, in line order, and that checking stops only where a problem
// makes the next meaningless.
func TestParseSeveralErrors(t *testing.T) {
	for _, c := range []struct {
		name  string
		spec  string
		sets  []string
		wants []want
	}{
		{"three independent problems in line order",
			"version: 1\ndesign: trial\nattrition: 15\ncontrol_risk: 0.2\nrisk_ratio: -0.5\npower: 0.8\nalhpa: 0.05\n", nil,
			[]want{{3, "attrition", "did you mean 0.15?"}, {5, "risk_ratio", "allowed: a number from 0.001 to 1000"}, {7, "alhpa", `did you mean "alpha"?`}}},
		{"a bad reference and a bad effect, and nothing combined from them",
			"version: 1\ndesign: cohort\nunexposed_risk: 20\nrisk_ratio: -1\npower: 0.8\n", nil,
			[]want{{3, "unexposed_risk", "did you mean 0.2?"}, {4, "risk_ratio", "out of range"}}},
		{"an unknown design stops before the design's keys",
			"version: 1\ndesign: survey\ncontrol_risk: 20\nrisk_ratio: 0.75\nzzz_key: 1\n", nil,
			[]want{{2, "design", `"survey" is not allowed`}, {5, "zzz_key", "unknown key"}}},
		{"a missing design stops too, but typos of any key are named",
			"version: 1\ncontrol_risk: 20\npowr: 0.8\n", nil,
			[]want{{3, "powr", `did you mean "power"?`}, {0, "design", "missing"}}},
		{"an unsupported version stops everything",
			"version: 2\ndesign: trial\ncontrol_risk: 20\nzzz_key: 1\n", nil,
			[]want{{1, "version", "not supported"}}},
		{"a bad outcome stops before the outcome's keys",
			"version: 1\ndesign: trial\noutcome: survival\ncontrol_risk: 20\n", nil,
			[]want{{3, "outcome", "binary, continuous, time-to-event or rate"}}},
		{"a bad solve reports values but no key it would require",
			"version: 1\ndesign: trial\nsolve: powr\ncontrol_risk: 0.2\nrisk_ratio: 0.75\nalpha: 0.7\n", nil,
			[]want{{3, "solve", `did you mean "power"?`}, {6, "alpha", "[1e-20, 0.5]"}}},
		{"a key given twice and a bad value elsewhere",
			"version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\npower: 0.9\nsides: 3\n", nil,
			[]want{{6, "power", "given twice (first at line 5)"}, {7, "sides", "allowed: 1 or 2"}}},
		{"missing keys come after the lines",
			"version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\nalpha: 0.7\n", nil,
			[]want{{5, "alpha", "[1e-20, 0.5]"}, {0, "power", "missing"}}},
		{"an override's problem comes after the file's",
			"version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nsides: 3\n", []string{"alpha=2"},
			[]want{{6, "sides", "allowed: 1 or 2"}, {0, "alpha", "[1e-20, 0.5]"}}},
		{"keys of another outcome: the outcome's own keys are not called missing",
			"version: 1\ndesign: trial\noutcome: continuous\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n", nil,
			[]want{{4, "control_risk", "it belongs to a binary outcome"}, {5, "risk_ratio", "it belongs to a binary outcome"}}},
		{"a required key in capitals is one problem, not two",
			"Version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n", nil,
			[]want{{1, "Version", `unknown key; did you mean "version"?`}}},
		{"so is a design in capitals, whose keys are then unknowable",
			"version: 1\nDesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n", nil,
			[]want{{2, "Design", `unknown key; did you mean "design"?`}}},
		{"a required key missing, and an unknown key that is not it",
			"version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\nPowr: 0.8\nalpha: 0.01\n", nil,
			[]want{{5, "Powr", `did you mean "power"?`}}},
		{"overrides in command-line order, after the file's problems",
			"version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nattrition: 15\n", []string{"sides=3", "alpha=2", "power=x"},
			[]want{{6, "attrition", "did you mean 0.15?"}, {0, "sides", "allowed: 1 or 2"}, {0, "alpha", "[1e-20, 0.5]"}, {0, "power", `"x" is not a number`}}},
		{"a suggested key is not called missing as well",
			"version: 1\ndesign: cross-sectional\nunexposed_prevalence: 0.1\nprevalence_ratio: 2\nexposure_prevalence: 0.3\nsolve: power\nn: 400\n", nil,
			[]want{{7, "n", `did you mean "total"?`}}},
		{"a bad effect value and a bad sd in a continuous plan",
			"version: 1\ndesign: trial\noutcome: continuous\nmean_difference: abc\nsd: -2\npower: 0.8\n", nil,
			[]want{{4, "mean_difference", `"abc" is not a number`}, {5, "sd", "out of range"}}},
		{"two bad cluster values, and the cluster test not refused for them",
			"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster:\n  size: 1\n  icc: 2\ntest: cluster-t\n", nil,
			[]want{{7, "cluster.size", "out of range"}, {8, "cluster.icc", "out of range"}}},
		{"two bad simulation settings",
			"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\nsimulate:\n  replicates: 5\n  seed: -1\n", nil,
			[]want{{7, "simulate.replicates", "out of range"}, {8, "simulate.seed", "out of range"}}},
		{"a bad alpha leaves power checked only against (0, 1), not against the default alpha",
			"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nalpha: 0.6\npower: 0.04\n", nil,
			[]want{{5, "alpha", "[1e-20, 0.5]"}}},
		{"a bad margin is not combined with the reference risk",
			"version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: false\nmargin: 5\ncontrol_risk: 0.9\npower: 0.8\n", nil,
			[]want{{5, "margin", "did you mean 0.05?"}}},
		{"a misplaced key is not named again by its source",
			"version: 1\ndesign: cohort\ncontrol_risk: 0.3\nrisk_ratio: 2\npower: 0.8\nsources:\n  control_risk: a ward audit (invented)\n", nil,
			[]want{{3, "control_risk", `did you mean "unexposed_risk"?`}}},
		{"an unknown key is not named again by its source",
			"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\nalhpa: 0.05\nsources:\n  alhpa: a guideline (invented)\n", nil,
			[]want{{6, "alhpa", `did you mean "alpha"?`}}},
	} {
		checkWants(t, c.name, parseAll(t, c.spec, c.sets), c.wants)
	}
}

// TestSuggestions checks that unknown and misplaced keys are pointed to the
// key of this design and outcome they stand for, and never to one that
// would then be refused.
func TestSuggestions(t *testing.T) {
	const (
		trial  = "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
		cohort = "version: 1\ndesign: cohort\nunexposed_risk: 0.2\nrisk_ratio: 2\npower: 0.8\n"
		cc     = "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\npower: 0.8\n"
		xs     = "version: 1\ndesign: cross-sectional\nunexposed_prevalence: 0.1\nprevalence_ratio: 2\nexposure_prevalence: 0.3\npower: 0.8\n"
		prec   = "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\n"
		tte    = "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\npower: 0.8\n"
		cont   = "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 2\nsd: 5\npower: 0.8\n"
	)
	long := strings.Repeat("x", 70)
	checkKeyCases(t, []keyCase{
		{"upper case", trial + "ALPHA: 0.01\n", "ALPHA", `unknown key; did you mean "alpha"?`, "", nil},
		{"capitalised", trial + "Sides: 1\n", "Sides", `did you mean "sides"?`, "", nil},
		{"hyphen for underscore", trial + "design-effect: 1.5\n", "design-effect", `did you mean "design_effect"?`, "", nil},
		{"baseline risk in a cohort", "version: 1\ndesign: cohort\nbaseline_risk: 0.2\nrisk_ratio: 2\npower: 0.8\n", "baseline_risk", `did you mean "unexposed_risk"?`, "", nil},
		{"p0 in a trial", "version: 1\ndesign: trial\np0: 0.2\nrisk_ratio: 0.75\npower: 0.8\n", "p0", `did you mean "control_risk"?`, "", nil},
		{"p0 in a case-control study", "version: 1\ndesign: case-control\np0: 0.2\nodds_ratio: 2\npower: 0.8\n", "p0", `did you mean "control_exposure"?`, "", nil},
		{"baseline prevalence in a survey", "version: 1\ndesign: cross-sectional\ngoal: precision\nbaseline_prevalence: 0.3\nmargin: 0.05\n", "baseline_prevalence", `did you mean "expected_prevalence"?`, "", nil},
		{"the reference given already", trial + "baseline_risk: 0.25\n", "baseline_risk", `did you mean "control_risk"? (it is given already, at line 3)`, "", nil},
		{"dropout in a binary plan", trial + "dropout: 0.1\n", "dropout", `did you mean "attrition"?`, "", nil},
		{"dropout in a continuous plan", cont + "dropout: 0.1\n", "dropout", `did you mean "attrition"?`, "", nil},
		{"attrition in a time-to-event plan", tte + "attrition: 0.1\n", "attrition", "uses dropout", "", nil},
		{"loss to follow-up in a time-to-event plan", tte + "loss_to_follow_up: 0.1\n", "loss_to_follow_up", `did you mean "dropout"?`, "", nil},
		{"a risk ratio on a case-control study", "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nrisk_ratio: 2\npower: 0.8\n", "risk_ratio", `did you mean "odds_ratio"?`, "", nil},
		{"a relative risk on a case-control study", "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nrelative_risk: 2\npower: 0.8\n", "relative_risk", `did you mean "odds_ratio"?`, "risk_ratio", nil},
		{"a relative risk on a survey", "version: 1\ndesign: cross-sectional\nunexposed_prevalence: 0.1\nrelative_risk: 2\nexposure_prevalence: 0.3\npower: 0.8\n", "relative_risk", `did you mean "prevalence_ratio"?`, "", nil},
		{"n on a survey", xs + "solve: power\nn: 400\n", "n", `did you mean "total"?`, "", nil},
		{"total on a trial", trial + "solve: power\ntotal: 400\n", "total", `did you mean "n"?`, "", nil},
		{"sample size on a trial", "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\nsolve: power\nsample_size: 300\n", "sample_size", `did you mean "n"?`, "", nil},
		{"sample size on a precision survey", prec + "sample_size: 300\n", "sample_size", `did you mean "total"?`, "", nil},
		{"icc at the top level of a trial", trial + "icc: 0.05\n", "icc", "did you mean cluster: {icc: 0.05}?", "", nil},
		{"icc set on the command line", trial, "icc", `did you mean "cluster.icc"?`, "", []string{"icc=0.05"}},
		{"icc in a cohort, which has no clusters", cohort + "icc: 0.05\n", "icc", "unknown key", "cluster", nil},
		{"icc in a crossover trial, which has no clusters", "version: 1\ndesign: trial\noutcome: continuous\npairing: crossover\nmean_difference: 2\nsd_difference: 3\npower: 0.8\nicc: 0.05\n", "icc", "unknown key", "cluster", nil},
		{"a hazard ratio abbreviated", "version: 1\ndesign: trial\noutcome: time-to-event\nhr: 0.7\ncontrol_median: 12\nfollow_up: 12\npower: 0.8\n", "hr", `did you mean "hazard_ratio"?`, "", nil},
		{"a key of a time-to-event outcome in a continuous plan", cont + "time: 3\n", "time", "it belongs to a time-to-event outcome", "title", nil},
		{"a key of a continuous outcome in a binary plan", trial + "sd: 4\n", "sd", "it belongs to a continuous outcome", `"n"`, nil},
		{"a key of paired designs", cont + "sd_difference: 3\n", "sd_difference", "it belongs to a paired design", "", nil},
		{"a key of a precision survey in a comparison", xs + "confidence: 0.9\n", "confidence", "it belongs to design cross-sectional with goal precision", "", nil},
		{"a word too long to be a typo", trial + long + ": 1\n", strings.Repeat("x", 60) + "…", "allowed keys are listed in the README", "did you mean", nil},
		{"a word like no key", cc + "colour: blue\n", "colour", "allowed keys are listed in the README", "did you mean", nil},
		{"the first group's risk of a cohort in a trial that has its effect", trial + "exposed_risk: 0.14\n", "exposed_risk", "does not apply to design trial; the effect is given already, by risk_ratio at line 4", "intervention_risk", nil},
		{"the same on the command line", trial, "exposed_risk", "the effect is given already, by risk_ratio at line 4", "did you mean", []string{"exposed_risk=0.14"}},
		{"a synonym of a second effect", trial + "rd: 0.05\ndelta: 0.05\n", "delta", "the effect is given already, by risk_ratio at line 4", "did you mean", nil},
		{"a typo of sd_first where sd is given", cont + "sd_frist: 3\n", "sd_frist", "the standard deviation is given already, by sd at line 5", "did you mean", nil},
		{"n_second's synonym with ratio given", trial + "ratio: 2\nallocation_ratio: 2\n", "allocation_ratio", `did you mean "ratio"? (it is given already, at line 6)`, "", nil},
		{"a design effect beside a cluster", trial + "cluster: {size: 20, icc: 0.05}\ndeff: 2\n", "deff", "the design effect is given already, by cluster at line 6", "did you mean", nil},
		{"an effect key of the design when none is given", "version: 1\ndesign: trial\ncontrol_risk: 0.2\npower: 0.8\nexposed_risk: 0.14\n", "exposed_risk", `did you mean "intervention_risk"?`, "", nil},
		{"controls per case", cc + "controls_per_case: 3\n", "controls_per_case", `did you mean "ratio"?`, "", nil},
		{"controls per case is no key of a trial", trial + "controls_per_case: 3\n", "controls_per_case", "unknown key", "did you mean", nil},
		{"non-compliance", trial + "non_compliance: 0.1\n", "non_compliance", `did you mean "non_adherence"?`, "", nil},
		{"noncompliance", trial + "noncompliance: 0.1\n", "noncompliance", `did you mean "non_adherence"?`, "", nil},
		{"non-compliance in a cohort, which has none", cohort + "non_compliance: 0.1\n", "non_compliance", "unknown key", "did you mean", nil},
		{"two-sided", trial + "two_sided: true\n", "two_sided", `did you mean "sides"?`, "", nil},
		{"seed at the top level", trial + "seed: 7\n", "seed", "did you mean simulate: {seed: 7}? (seed belongs inside the simulate map)", "", nil},
		{"replicates at the top level", trial + "replicates: 5000\n", "replicates", "did you mean simulate: {replicates: 5000}?", "", nil},
		{"seed on the command line", trial, "seed", `did you mean "simulate.seed"?`, "", []string{"seed=7"}},
		{"exposure in controls", "version: 1\ndesign: case-control\nexposure_in_controls: 0.2\nodds_ratio: 2\npower: 0.8\n", "exposure_in_controls", `did you mean "control_exposure"?`, "", nil},
	})
}

// TestValueHints checks the suggestions for values written in the trade's
// other words or forms: each suggests a value the key then accepts.
func TestValueHints(t *testing.T) {
	const (
		trial = "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
		cc    = "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\npower: 0.8\n"
		rest  = "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
	)
	checkKeyCases(t, []keyCase{
		{"ratio as the summary prints it", trial + "ratio: 1:2\n", "ratio", `"1:2" is not a number; allowed: a number from 0.001 to 1000; did you mean ratio: 2? (the second group's size per member of the first)`, "", nil},
		{"controls per case as 1:4", cc + "ratio: 1:4\n", "ratio", "did you mean ratio: 4?", "", nil},
		{"ratio 2:1 is a half", trial + "ratio: 2:1\n", "ratio", "did you mean ratio: 0.5?", "", nil},
		{"ratio 0:1 means nothing", trial + "ratio: 0:1\n", "ratio", "is not a number", "did you mean", nil},
		{"sides two", trial + "sides: two\n", "sides", `"two" is not a whole number; allowed: 1 or 2; did you mean sides: 2?`, "", nil},
		{"sides one-sided", trial + "sides: one-sided\n", "sides", "did you mean sides: 1?", "", nil},
		{"sides two in a non-inferiority trial, which takes 1 only", "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: false\nmargin: 0.05\ncontrol_risk: 0.2\npower: 0.8\nsides: two\n", "sides", "not a whole number", "did you mean", nil},
		{"outcome survival", "version: 1\ndesign: trial\noutcome: survival\n", "outcome", `(did you mean "time-to-event"?)`, "", nil},
		{"outcome survival in a cohort, which has none", "version: 1\ndesign: cohort\noutcome: survival\n", "outcome", "is not allowed", "did you mean", nil},
		{"outcome dichotomous", "version: 1\ndesign: cohort\noutcome: dichotomous\n", "outcome", `(did you mean "binary"?)`, "", nil},
		{"design RCT", "version: 1\ndesign: RCT\n" + rest, "design", `"RCT" is not allowed; allowed: cohort, case-control, trial or cross-sectional (did you mean "trial"?)`, "", nil},
		{"design randomised trial", "version: 1\ndesign: randomised trial\n" + rest, "design", `(did you mean "trial"?)`, "", nil},
		{"design randomized controlled trial", "version: 1\ndesign: Randomized Controlled Trial\n" + rest, "design", `(did you mean "trial"?)`, "", nil},
		{"hypothesis non-inferior", trial + "hypothesis: non-inferior\n", "hypothesis", `(did you mean "non-inferiority"?)`, "", nil},
	})
}

// specTexts returns the starters and examples, by name.
func specTexts(t *testing.T) map[string]string {
	t.Helper()
	out := map[string]string{}
	names, _ := fs.Glob(starters, "starters/*.yaml")
	for _, n := range names {
		data, err := fs.ReadFile(starters, n)
		if err != nil {
			t.Fatal(err)
		}
		out[n] = string(data)
	}
	paths, _ := filepath.Glob(filepath.Join("..", "examples", "*.yaml"))
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		out[p] = string(data)
	}
	if len(out) < 10 {
		t.Fatalf("only %d specifications found", len(out))
	}
	return out
}

var suggested = regexp.MustCompile(`did you mean "([a-z_.]+)"\?$`)

// refusedAfter matches the refusals of a suggested key that mean the
// suggestion was no help.
var refusedAfter = regexp.MustCompile(`unknown key|does not apply|given twice|a second effect key|given together with`)

// TestSuggestionsAreAccepted adds every key and synonym in turn to every
// starter and example (as written and upper-cased) and follows the
// suggestion it gets: the suggested key is then accepted in its place,
// never refused as unknown or as a key of another design.
func TestSuggestionsAreAccepted(t *testing.T) {
	words := map[string]bool{}
	for k := range specKeys {
		words[k] = true
	}
	for k := range synonyms {
		words[k] = true
	}
	followed := 0
	for name, text := range specTexts(t) {
		if _, err := Parse("s.yaml", []byte(text), nil); err != nil {
			t.Fatalf("%s does not parse: %v", name, err)
		}
		for w := range words {
			for _, word := range []string{w, strings.ToUpper(w)} {
				spec := text + "\n" + word + ": 0.1\n"
				for _, se := range parseAll(t, spec, nil) {
					m := suggested.FindStringSubmatch(se.Msg)
					if se.Key != word || m == nil || strings.Contains(m[1], ".") {
						continue
					}
					followed++
					fixed := text + "\n" + m[1] + ": 0.1\n"
					for _, after := range parseAll(t, fixed, nil) {
						if after.Key == m[1] && refusedAfter.MatchString(after.Msg) {
							t.Errorf("%s: %s suggests %q, which is then refused: %s", name, word, m[1], after.Error())
						}
					}
				}
			}
		}
	}
	if followed < 100 {
		t.Errorf("only %d suggestions followed", followed)
	}
}

// TestMissingSaysWhatIsAllowed removes each top-level key and each key of
// a nested map from every starter and example in turn: every key then
// called missing says what is allowed after "; allowed: ", so that the
// JSON form fills its allowed field.
func TestMissingSaysWhatIsAllowed(t *testing.T) {
	keyLine := regexp.MustCompile(`^\s*([a-z_]+):`)
	seen := map[string]bool{}
	for name, text := range specTexts(t) {
		lines := strings.Split(text, "\n")
		for i, l := range lines {
			if keyLine.FindStringSubmatch(l) == nil {
				continue
			}
			cut := strings.Join(append(append([]string(nil), lines[:i]...), lines[i+1:]...), "\n")
			for _, se := range parseAll(t, cut, nil) {
				if !strings.HasPrefix(se.Msg, "missing") {
					continue
				}
				seen[se.Key] = true
				if !strings.HasPrefix(se.Msg, "missing; ") || !strings.Contains(se.Msg, "; allowed: ") {
					t.Errorf("%s without line %d: %q does not say what is allowed", name, i+1, se.Error())
				}
			}
		}
	}
	for _, k := range []string{"version", "design", "power", "control_risk", "cluster.icc"} {
		if !seen[k] {
			t.Errorf("no specification lacking %s was tried", k)
		}
	}
}

// TestNoCascade spoils two numeric keys of every starter and example at a
// time: each must give exactly its own problem, on its own line, and
// nothing derived from it.
func TestNoCascade(t *testing.T) {
	keyLine := regexp.MustCompile(`^([a-z_]+):\s*[-0-9.]`)
	pairs := 0
	for name, text := range specTexts(t) {
		lines := strings.Split(text, "\n")
		var numeric []int
		for i, l := range lines {
			if m := keyLine.FindStringSubmatch(l); m != nil && m[1] != "version" {
				if k, ok := specKeys[m[1]]; ok && (k.kind == kindNumber || k.kind == kindWhole) {
					numeric = append(numeric, i)
				}
			}
		}
		for a := 0; a < len(numeric); a++ {
			for b := a + 1; b < len(numeric); b++ {
				spoilt := append([]string(nil), lines...)
				var wants []want
				for _, i := range []int{numeric[a], numeric[b]} {
					key := keyLine.FindStringSubmatch(lines[i])[1]
					spoilt[i] = key + ": abc"
					wants = append(wants, want{i + 1, key, `"abc" is not a`})
				}
				pairs++
				checkWants(t, name, parseAll(t, strings.Join(spoilt, "\n"), nil), wants)
			}
		}
	}
	if pairs < 100 {
		t.Errorf("only %d pairs of keys spoilt", pairs)
	}
}

// TestPercentLike checks that a value written as a percentage, or as a
// percentage number where a fraction belongs, is answered with the
// fraction, and only where the key takes one.
func TestPercentLike(t *testing.T) {
	const (
		head = "version: 1\ndesign: trial\n"
		ni   = head + "hypothesis: non-inferiority\nhigher_is_better: false\ncontrol_risk: 0.2\npower: 0.8\n"
		prec = "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\n"
	)
	checkKeyCases(t, []keyCase{
		{"control risk 20", head + "control_risk: 20\nrisk_ratio: 0.75\npower: 0.8\n", "control_risk", "20 is out of range; allowed: a probability from 1e-9 to 1 − 1e-9; did you mean 0.2?", "", nil},
		{"power 80", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 80\n", "power", "allowed: a number above alpha (0.05) and at most 1 − 1e-9; did you mean 0.8?", "", nil},
		{"alpha 5", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nalpha: 5\n", "alpha", "did you mean 0.05?", "", nil},
		{"attrition 15", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nattrition: 15\n", "attrition", "did you mean 0.15?", "", nil},
		{"risk difference -10", head + "control_risk: 0.2\nrisk_difference: -10\npower: 0.8\n", "risk_difference", "did you mean -0.1?", "", nil},
		{"survey margin 5", prec + "margin: 5\n", "margin", "allowed: a number in (0, 0.5); did you mean 0.05?", "", nil},
		{"confidence 95", prec + "margin: 0.05\nconfidence: 95\n", "confidence", "did you mean 0.95?", "", nil},
		{"a risk-difference margin 5", ni + "margin: 5\n", "margin", "did you mean 0.05?", "", nil},
		{"a ratio margin is no fraction", ni + "margin_scale: ratio\nmargin: 0.5\n", "margin", "out of range", "did you mean", nil},
		{"control risk 100: 1 is no risk either", head + "control_risk: 100\nrisk_ratio: 0.75\npower: 0.8\n", "control_risk", "out of range", "did you mean", nil},
		{"attrition 150", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nattrition: 150\n", "attrition", "out of range", "did you mean", nil},
		{"design effect is no fraction", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ndesign_effect: 0.5\n", "design_effect", "out of range", "did you mean", nil},
		{"power written 80%", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 80%\n", "power", `"80%" is a percentage; allowed: a number above alpha and at most 1 − 1e-9, written as a fraction; did you mean 0.8?`, "", nil},
		{"control risk written 12.5%", head + "control_risk: '12.5%'\nrisk_ratio: 0.75\npower: 0.8\n", "control_risk", "did you mean 0.125?", "", nil},
		{"power written 0.8%: 0.008 is below alpha, so no guess", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8%\n", "power", `"0.8%" is a percentage, and the fraction it stands for, 0.008, is out of range too; allowed: a number above alpha (0.05) and at most 1 − 1e-9`, "did you mean", nil},
		{"power written 3% against alpha 0.01: 0.03 is above it", head + "control_risk: 0.2\nrisk_ratio: 0.75\nalpha: 0.01\npower: 3%\n", "power", "did you mean 0.03?", "", nil},
		{"attrition written 10%: the fraction is not said twice", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nattrition: 10%\n", "attrition", `"10%" is a percentage; allowed: a fraction in [0, 1); did you mean 0.1?`, "written as a fraction", nil},
		{"alpha written 60%: 0.6 is above 0.5", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nalpha: 60%\n", "alpha", "out of range too", "did you mean", nil},
		{"icc 5", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ncluster: {size: 20, icc: 5}\n", "cluster.icc", "5 is out of range; allowed: the intracluster correlation coefficient, in [0, 1); did you mean 0.05?", "", nil},
		{"icc written 5%", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ncluster:\n  size: 20\n  icc: 5%\n", "cluster.icc", `"5%" is a percentage; allowed: the intracluster correlation coefficient, in [0, 1), written as a fraction; did you mean 0.05?`, "", nil},
		{"icc 5 on the command line", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ncluster: {size: 20, icc: 0.05}\n", "cluster.icc", "did you mean 0.05?", "", []string{"cluster.icc=5"}},
		{"icc 100: 1 is no icc", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ncluster: {size: 20, icc: 100}\n", "cluster.icc", "out of range", "did you mean", nil},
		{"cluster size is no fraction", head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ncluster: {size: 1, icc: 0.05}\n", "cluster.size", "out of range", "did you mean", nil},
		{"baseline correlation 50", head + "outcome: continuous\nmean_difference: 2\nsd: 5\npower: 0.8\nbaseline_correlation: 50\n", "baseline_correlation", "50 is out of range; allowed: a number in [0, 1); did you mean 0.5?", "", nil},
		{"within correlation 60", head + "outcome: continuous\npairing: paired\nmean_difference: 2\nsd: 5\npower: 0.8\nwithin_correlation: 60\n", "within_correlation", "did you mean 0.6?", "", nil},
		{"within correlation -60", head + "outcome: continuous\npairing: paired\nmean_difference: 2\nsd: 5\npower: 0.8\nwithin_correlation: -60\n", "within_correlation", "did you mean -0.6?", "", nil},
		{"a risk ratio written 75%", head + "control_risk: 0.2\nrisk_ratio: 75%\npower: 0.8\n", "risk_ratio", "risk_ratio is a ratio, not a percentage; allowed: a number from 0.001 to 1000", "fraction", nil},
		{"a ratio margin written 110%", ni + "margin_scale: ratio\nmargin: 110%\n", "margin", "margin is a ratio, not a percentage", "fraction", nil},
		{"a mean difference written 5%", head + "outcome: continuous\nmean_difference: 5%\nsd: 2\npower: 0.8\n", "mean_difference", `"5%" is a percentage; allowed: a number (first group minus second)`, "fraction", nil},
	})
}

// TestFileErrors checks the one line for a file that is not UTF-8 text,
// and that text with accents is read.
func TestFileErrors(t *testing.T) {
	const ok = "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
	for _, c := range []struct {
		name string
		data string
		line int
		msg  string // "" when the file is fine
	}{
		{"binary", "\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR", 0, "is not a text file (it contains NUL bytes, as binary files do); allowed: a YAML specification"},
		{"UTF-16", "\xff\xfev\x00e\x00r\x00", 0, "is not a text file enough reads (it is UTF-16; save it as UTF-8); allowed: a YAML specification"},
		{"Latin-1 byte", "version: 1\ndesign: trial\ntitle: caf\xe9 study\n", 3, "is not a text file (byte 0xE9 on this line is not UTF-8; save the file as UTF-8); allowed: a YAML specification"},
		{"control character", ok + "title: a\x01b\n", 6, "is not a text file (a control character, 0x01, on this line); allowed: a YAML specification"},
		{"UTF-8 accents", ok + "title: Étude du café, São Paulo\n", 0, ""},
		{"UTF-8 byte-order mark", "\xef\xbb\xbf" + ok, 0, ""},
	} {
		_, err := Parse("s.yaml", []byte(c.data), nil)
		if c.msg == "" {
			if err != nil {
				t.Errorf("%s: %v", c.name, err)
			}
			continue
		}
		var se *SpecError
		if !errors.As(err, &se) || se.Line != c.line || se.Msg != c.msg || se.Key != "" {
			t.Errorf("%s: err = %v; want line %d and %q", c.name, err, c.line, c.msg)
		}
	}
}

// parserWords are phrases of the YAML library's own messages: no message
// may show them.
var parserWords = regexp.MustCompile(`mapping values|did not find|could not find|end of stream|cannot start any token|node content|tag handle|escape character|hexdecimal|alphabetic or numeric|document indicator|directive name|block sequence entries|violates indentation|^yaml|line \d+:`)

// TestSyntaxHints checks that a YAML syntax error gives its line and says
// in plain words what is wrong there and how to mend it, never in the YAML
// library's words; a --set value likewise.
func TestSyntaxHints(t *testing.T) {
	const (
		head = "version: 1\ndesign: trial\n"
		full = head + "control_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
	)
	for _, c := range []struct {
		name, spec string
		sets       []string
		line       int
		msg        string // a fragment of the message
	}{
		{"colon in a value", head + "title: Ward rounds: a trial\n", nil, 3, `YAML syntax error: a value contains ": "; put it in quotes: title: "Ward rounds: a trial"`},
		{"colon in a source", head + "sources:\n  power: the funder: a rule\n", nil, 4, `put it in quotes: power: "the funder: a rule"`},
		{"colon in a value with quotes", head + "title: The \"best\": a trial\n", nil, 3, `a value contains ": "; put the whole value in quotes`},
		{"a colon too many", head + "power: : 0.8\n", nil, 3, "a colon too many"},
		{"indented under a value", head + "control_risk: 0.2\n  risk_ratio: 0.75\n", nil, 4, "this line is indented more than the line above"},
		{"indentation of a nested map", head + "sources:\n  power: a\n power2: b\n", nil, 5, "check the indentation: keys of one map start in the same column"},
		{"a list item among keys", head + "- power: 0.8\n", nil, 3, "a list item (- ) stands where a key was expected"},
		{"a bracket too many", head + "title: [a]]\n", nil, 3, "a ] or } on this line closes nothing"},
		{"text after a closing quote", head + "title: \"Ward\" rounds\n", nil, 3, "text follows the closing quotation mark; put the whole value in quotes"},
		{"text after a closing quote on the first line", "title: 'Ward' rounds\n", nil, 1, "text follows the closing quotation mark"},
		{"no colon", "version: 1\ndesign trial\npower: 0.8\n", nil, 2, "a key needs a colon and a space before its value"},
		{"unclosed bracket", head + "control_risk: [0.2\npower: 0.8\n", nil, 3, "a [ … ] list opened on this line is not closed (close it with ]"},
		{"unclosed brace", head + "cluster: {size: 20\npower: 0.8\n", nil, 3, "a { … } map opened on this line is not closed (close it with }"},
		{"unclosed quote", head + "title: \"Ward rounds\npower: 0.8\n", nil, 3, "the file ends inside a quoted text: a quotation mark opened on this line is not closed"},
		{"a line --- inside quotes", head + "title: \"Ward\n---\nrounds\"\n", nil, 3, "a quotation mark opened on this line is not closed before a line --- or ..."},
		{"a value starting with @", head + "title: @ward\n", nil, 3, "a value that starts with @ needs quotes around it"},
		{"a value starting with ]", head + "power: ]\n", nil, 3, "a value is missing, or starts with a character YAML keeps for itself"},
		{"a value starting with !", head + "title: !x!y ward\n", nil, 3, "a value that starts with ! needs quotes around it"},
		{"a backslash in double quotes", head + "title: \"a\\qb\"\n", nil, 3, `write \\ for a backslash`},
		{"an anchor with no name", head + "power: &\n", nil, 3, "& and * start YAML anchors and aliases"},
		{"a directive", "%FOO\nversion: 1\n", nil, 0, "a line that starts with % is read as a YAML directive"},
		{"a tab in the indentation", head + "\tpower: 0.8\n", nil, 3, "a tab character in the indentation; allowed: spaces only"},
		{"an alias with no anchor", head + "power: *target\n", nil, 3, "the alias *target needs an anchor &target"},
		{"a --set list not closed", full, []string{"control_risk=[1"}, 0, "value is not valid YAML: a [ … ] list is not closed (close it with ]"},
		{"a --set map not closed", full, []string{"cluster={size: 20"}, 0, "value is not valid YAML: a { … } map is not closed"},
		{"a --set quote not closed", full, []string{`title="Ward`}, 0, "value is not valid YAML: a quotation mark is not closed"},
		{"a --set value with a colon", full, []string{`title=Ward: "a" trial`}, 0, `value is not valid YAML: it contains ": "; put it in quotes: --set 'title="Ward: \"a\" trial"'`},
	} {
		_, err := Parse("s.yaml", []byte(c.spec), c.sets)
		var se *SpecError
		switch {
		case !errors.As(err, &se) || se.Line != c.line || !strings.Contains(se.Msg, c.msg):
			t.Errorf("%s: err = %v; want line %d and %q", c.name, err, c.line, c.msg)
		case c.sets == nil && !strings.HasPrefix(se.Msg, "YAML syntax error: "):
			t.Errorf("%s: %q does not start with \"YAML syntax error: \"", c.name, se.Msg)
		}
		for _, se := range AllSpecErrors(err) {
			if parserWords.MatchString(se.Msg) {
				t.Errorf("%s: the YAML library's words: %q", c.name, se.Msg)
			}
		}
	}
}

// TestSyntaxHintWords checks the plain sentence for every problem the YAML
// library is known to report, and for one it is not: never its words.
func TestSyntaxHintWords(t *testing.T) {
	for _, problem := range []string{
		"mapping values are not allowed in this context", "did not find expected key",
		"did not find expected ',' or ']'", "did not find expected ',' or '}'",
		"could not find expected ':'", "found unexpected end of stream",
		"found character that cannot start any token", "found a tab character that violates indentation",
		"found a tab character where an indentation space is expected", "did not find expected node content",
		"found undefined tag handle", "did not find the expected '>'", "found unknown escape character",
		"did not find expected hexdecimal number", "did not find expected alphabetic or numeric character",
		"found unexpected document indicator", "found duplicate %YAML directive", "found unknown directive name",
		"did not find expected <document start>", "found incompatible YAML document",
		"block sequence entries are not allowed in this context", "did not find expected '-' indicator",
		"document contains excessive aliasing", "exceeded max depth of 10000", "a problem no one has seen yet",
	} {
		for _, set := range []bool{false, true} {
			got := syntaxHint(problem, "title: x", "design: trial", set)
			if got == "" || parserWords.MatchString(got) || strings.Contains(got, problem) {
				t.Errorf("syntaxHint(%q, set %v) = %q", problem, set, got)
			}
		}
	}
}

// TestLongValuesClipped checks that a message repeats at most 60
// characters of a value or a key.
func TestLongValuesClipped(t *testing.T) {
	const head = "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
	long := strings.Repeat("é", 500)
	for _, c := range []struct{ name, spec, key string }{
		{"a long word where a number belongs", head + "alpha: " + long + "\n", "alpha"},
		{"a long design", "version: 1\ndesign: " + long + "\n", "design"},
		{"a long unknown key", head + long + ": 1\n", strings.Repeat("é", 60) + "…"},
		{"a long source key", head + "sources:\n  " + long + ": x\n", "sources." + strings.Repeat("é", 60) + "…"},
	} {
		got := parseAll(t, c.spec, nil)
		if len(got) != 1 || got[0].Key != c.key {
			t.Errorf("%s: got %v, want one problem with key %q", c.name, got, c.key)
			continue
		}
		if n := strings.Count(got[0].Error(), "é"); n > 120 {
			t.Errorf("%s: the message repeats %d characters of the value: %q", c.name, n, got[0].Error())
		}
		if c.key != "" && !strings.Contains(got[0].Error(), "…") {
			t.Errorf("%s: no mark of the cut: %q", c.name, got[0].Error())
		}
	}
}

// BenchmarkParseLarge parses a specification padded with comments to the
// 1 MiB limit: the text checks must stay linear in the file's size (a
// quadratic line count once took 13 s here).
func BenchmarkParseLarge(b *testing.B) {
	spec := "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.7\npower: 0.8\n"
	data := []byte(spec + strings.Repeat("# a comment line of padding, as long as many real ones\n", (MaxSpecBytes-len(spec))/56))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Parse("large.yaml", data, nil); err != nil {
			b.Fatal(err)
		}
	}
}
