package review

import (
	"bufio"
	"encoding/json"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"enough/designs"
)

// The expected figures come from testdata/reference/review_engine/make.R
// (R 4.2.2, base stats only), whose output is make.out beside it and whose
// table is cases.tsv: each figure's formula or R call is in its source
// column and in the README there. No expected figure is computed with the
// project's own code.

var (
	refOnce sync.Once
	refVals map[string]float64
	refErr  error
)

// ref returns the reference figure with the id from cases.tsv.
func ref(t *testing.T, id string) float64 {
	t.Helper()
	refOnce.Do(func() {
		f, err := os.Open("../../testdata/reference/review_engine/cases.tsv")
		if err != nil {
			refErr = err
			return
		}
		defer f.Close()
		refVals = map[string]float64{}
		sc := bufio.NewScanner(f)
		for sc.Scan() {
			cols := strings.Split(sc.Text(), "\t")
			if len(cols) < 2 || cols[0] == "id" {
				continue
			}
			x, err := strconv.ParseFloat(cols[1], 64)
			if err != nil {
				refErr = err
				return
			}
			refVals[cols[0]] = x
		}
		refErr = sc.Err()
	})
	if refErr != nil {
		t.Fatal(refErr)
	}
	x, ok := refVals[id]
	if !ok {
		t.Fatalf("no reference figure %q in cases.tsv", id)
	}
	return x
}

// refInt is a reference figure that is a whole number.
func refInt(t *testing.T, id string) int {
	t.Helper()
	x := ref(t, id)
	if x != math.Trunc(x) {
		t.Fatalf("reference %q = %v is not whole", id, x)
	}
	return int(x)
}

// review parses a protocol and rechecks it.
func review(t *testing.T, spec string) *Report {
	t.Helper()
	in, err := designs.ParseReview("p.yaml", []byte(spec), nil)
	if err != nil {
		t.Fatalf("parse: %v\n%s", err, spec)
	}
	rep, err := Run(in)
	if err != nil {
		t.Fatalf("run: %v\n%s", err, spec)
	}
	return rep
}

// figure returns the report's judged figure with the name, or nil.
func figure(rep *Report, name string) *Figure { return figureOf(rep.Figures, name) }

// baseTrial is an invented protocol: a binary trial, control risk 0.30,
// risk ratio 0.7, the default fleiss-cc, attrition 0.1.
const baseTrial = "version: 1\ndesign: trial\nprimary_outcome: fall needing medical care within a year\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nattrition: 0.1\n"

func TestVerdicts(t *testing.T) {
	type check func(t *testing.T, rep *Report)
	figureIs := func(name string, stated int, recID, judgement string, powerID string) check {
		return func(t *testing.T, rep *Report) {
			f := figure(rep, name)
			if f == nil {
				t.Fatalf("no figure %s in %+v", name, rep.Figures)
			}
			if f.Stated != stated || f.Judgement != judgement {
				t.Errorf("figure %s: stated %d judged %q; want %d %q (%s)", name, f.Stated, f.Judgement, stated, judgement, f.Why)
			}
			if recID != "" && f.Recomputed != refInt(t, recID) {
				t.Errorf("figure %s: recomputed %d; want %d (%s)", name, f.Recomputed, refInt(t, recID), recID)
			}
			if powerID != "" && (f.Power == nil || math.Abs(*f.Power-ref(t, powerID)) > 1e-9) {
				t.Errorf("figure %s: power %v; want %v (%s)", name, f.Power, ref(t, powerID), powerID)
			}
		}
	}
	for _, c := range []struct {
		name, spec, verdict string
		checks              []check
	}{
		{
			// Stated figures = make.R base_n (389, Fleiss-Tytun-Ury) and
			// base_enrol_total (2 × ⌈389/0.9⌉ = 866).
			name: "consistent", verdict: Consistent,
			spec: baseTrial + "claimed:\n  n: 389\n  enrol_total: 866\n  power: 0.8\n",
			checks: []check{
				figureIs("n", 389, "base_n", "consistent", ""),
				figureIs("enrol_total", 866, "base_enrol_total", "consistent", ""),
				func(t *testing.T, rep *Report) {
					if len(rep.Diagnosis) != 0 || rep.DiagnosisNote == "" {
						t.Errorf("a consistent protocol has diagnosis %+v, note %q", rep.Diagnosis, rep.DiagnosisNote)
					}
					if f := figure(rep, "enrol_total"); f.Analysable == nil || *f.Analysable != 2*refInt(t, "base_n") {
						t.Errorf("enrolment 866 yields %v analysable; want 2 × %d", f.Analysable, refInt(t, "base_n"))
					}
				},
			},
		},
		{
			// 300 a group: power 68.4% by the inverted Fleiss-Tytun-Ury
			// formula (make.R base_power_at_300).
			name: "under-powered", verdict: UnderPowered,
			spec:   baseTrial + "claimed:\n  n: 300\n  power: 0.8\n",
			checks: []check{figureIs("n", 300, "base_n", "too small", "base_power_at_300")},
		},
		{
			name: "larger than needed", verdict: LargerThanNeeded,
			spec:   baseTrial + "claimed:\n  n: 500\n  power: 0.8\n",
			checks: []check{figureIs("n", 500, "base_n", "too large", "base_power_at_500")},
		},
		{
			// The analysable n is right, but the enrolment of 800 leaves
			// ⌊400 × 0.9⌋ = 360 a group: power 76.7% (base_power_at_360),
			// more than 2 points short, and 7.5% fewer than 778.
			name: "enrolment judged after attrition", verdict: UnderPowered,
			spec: baseTrial + "claimed:\n  n: 389\n  enrol_total: 800\n  power: 0.8\n",
			checks: []check{
				figureIs("n", 389, "base_n", "consistent", ""),
				figureIs("enrol_total", 800, "base_enrol_total", "too small", "base_power_at_360"),
				func(t *testing.T, rep *Report) {
					if f := figure(rep, "enrol_total"); f.Analysable == nil || *f.Analysable != 720 {
						t.Errorf("enrolment 800 yields %v analysable; want 2 × ⌊400 × 0.9⌋ = 720", f.Analysable)
					}
				},
			},
		},
		{
			name: "enrolment alone", verdict: Consistent,
			spec:   baseTrial + "claimed:\n  enrol_total: 866\n  power: 0.8\n",
			checks: []check{figureIs("enrol_total", 866, "base_enrol_total", "consistent", "")},
		},
		{
			// 16 is 5.9% below the t answer 17 (make.R t_n_1_1), but its
			// power, 78.1% (t_power_at_16_1_1), is within 2 points of 80%.
			name: "consistent by power", verdict: Consistent,
			spec:   "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 1\nsd: 1\nclaimed:\n  n: 16\n  power: 0.8\n",
			checks: []check{figureIs("n", 16, "t_n_1_1", "consistent", "t_power_at_16_1_1")},
		},
		{
			// A wider tolerance takes the 300 of the under-powered case.
			name: "wider tolerance", verdict: Consistent,
			spec:   baseTrial + "claimed:\n  n: 300\n  power: 0.8\n  tolerance_n: 0.25\n",
			checks: []check{figureIs("n", 300, "base_n", "consistent", "base_power_at_300")},
		},
		{
			// No power stated: the power the stated n gives, and the
			// verdict is incomplete.
			name: "no power", verdict: Incomplete,
			spec: baseTrial + "claimed:\n  n: 300\n",
			checks: []check{func(t *testing.T, rep *Report) {
				if rep.ClaimedPowerActual == nil || math.Abs(*rep.ClaimedPowerActual-ref(t, "base_power_at_300")) > 1e-9 {
					t.Errorf("claimed power actual %v; want %v (base_power_at_300)", rep.ClaimedPowerActual, ref(t, "base_power_at_300"))
				}
				if !slices.Contains(rep.Reporting.Missing, "power") || len(rep.DetectableEffect) != 2 || rep.DetectableEffect[0].Power != 0.8 || rep.DetectableEffect[1].Power != 0.9 {
					t.Errorf("missing %q, detectable %+v", rep.Reporting.Missing, rep.DetectableEffect)
				}
			}},
		},
		{
			name: "no reference value", verdict: Incomplete,
			spec: "version: 1\ndesign: trial\nrisk_ratio: 0.7\nclaimed:\n  n: 300\n  power: 0.8\n",
			checks: []check{func(t *testing.T, rep *Report) {
				if rep.Mode != designs.ReviewNone || rep.Recomputed != nil || !slices.Contains(rep.Reporting.Missing, "reference_value") {
					t.Errorf("mode %q, recomputed %v, missing %q", rep.Mode, rep.Recomputed, rep.Reporting.Missing)
				}
			}},
		},
		{
			name: "no effect", verdict: Incomplete,
			spec: "version: 1\ndesign: trial\ncontrol_risk: 0.3\npower: 0.8\nclaimed:\n  n: 300\n",
			checks: []check{func(t *testing.T, rep *Report) {
				if !slices.Contains(rep.Reporting.Missing, "effect") || len(rep.DetectableEffect) != 1 || rep.DetectableEffect[0].Lower == nil {
					t.Errorf("missing %q, detectable %+v", rep.Reporting.Missing, rep.DetectableEffect)
				}
			}},
		},
		{
			// Nothing stated but the assumptions: every element the
			// protocol left out is listed, with a request each.
			name: "missing elements", verdict: Incomplete,
			spec: "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nclaimed:\n  power: 0.8\n",
			checks: []check{func(t *testing.T, rep *Report) {
				want := []string{"primary_outcome", "effect_source", "alpha", "sides", "method", "allocation", "attrition", "sample_size"}
				if !slices.Equal(rep.Reporting.Missing, want) {
					t.Errorf("missing %q; want %q", rep.Reporting.Missing, want)
				}
				if len(rep.Requests) < len(want) {
					t.Errorf("%d requests for %d missing elements: %q", len(rep.Requests), len(want), rep.Requests)
				}
				if rep.Recomputed == nil || rep.Recomputed.N[0] != refInt(t, "base_n") {
					t.Errorf("recomputed %+v; want n %d (base_n)", rep.Recomputed, refInt(t, "base_n"))
				}
			}},
		},
		{
			// Cochran 1977: ⌈1.96² × 0.21 / 0.05² × 1.5⌉ = 485 respondents,
			// ⌈485 / 0.8⌉ = 607 to invite (make.R survey_total, survey_invite).
			name: "precision survey", verdict: Consistent,
			spec: "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\ndesign_effect: 1.5\nattrition: 0.2\nclaimed:\n  total: 485\n  enrol_total: 607\n",
			checks: []check{
				figureIs("total", 485, "survey_total", "consistent", ""),
				figureIs("enrol_total", 607, "survey_invite", "consistent", ""),
			},
		},
	} {
		t.Run(c.name, func(t *testing.T) {
			rep := review(t, c.spec)
			if rep.Verdict != c.verdict {
				t.Errorf("verdict %q; want %q: %s", rep.Verdict, c.verdict, rep.Sentence)
			}
			if !strings.HasPrefix(strings.ToLower(rep.Sentence), strings.ReplaceAll(c.verdict, "-", " ")[:5]) {
				t.Errorf("sentence does not open with the verdict: %q", rep.Sentence)
			}
			for _, ch := range c.checks {
				ch(t, rep)
			}
		})
	}
}

// TestMethodsListed: the named (or default) method first, then every
// alternative; the fleiss line is make.R fleiss_n.
func TestMethodsListed(t *testing.T) {
	rep := review(t, baseTrial+"claimed:\n  n: 389\n  power: 0.8\n")
	if len(rep.Methods) < 3 || rep.Methods[0].Method != "fleiss-cc" || !rep.Methods[0].Named || rep.Methods[0].N[0] != refInt(t, "base_n") {
		t.Fatalf("methods %+v", rep.Methods)
	}
	for _, m := range rep.Methods[1:] {
		if m.Named {
			t.Errorf("%s marked named", m.Method)
		}
		if m.Method == "fleiss" && m.N[0] != refInt(t, "fleiss_n") {
			t.Errorf("fleiss n %d; want %d (fleiss_n)", m.N[0], refInt(t, "fleiss_n"))
		}
	}
}

// TestDetectable: the smallest effect 367 a group detect at 80% power by
// Fleiss's formula is the risk power.prop.test finds (make.R
// detect_upper_p1_367), on the risk-ratio scale of the protocol.
func TestDetectable(t *testing.T) {
	rep := review(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nmethod: fleiss\nclaimed:\n  n: 367\n  power: 0.8\n")
	if len(rep.DetectableEffect) != 1 {
		t.Fatalf("detectable %+v", rep.DetectableEffect)
	}
	d := rep.DetectableEffect[0]
	want := ref(t, "detect_upper_p1_367") / 0.3
	if d.Scale != "risk_ratio" || d.Power != 0.8 || d.Lower == nil || math.Abs(*d.Lower-want) > 1e-6 {
		t.Errorf("detectable %+v lower %v; want %v", d, d.Lower, want)
	}
}

// TestSensitivity: each assumption made 10% and 20% less favourable, the
// largest enrolment first; the sizes are make.R's sens_* figures.
func TestSensitivity(t *testing.T) {
	rep := review(t, baseTrial+"claimed:\n  n: 389\n  power: 0.8\n")
	s := rep.Sensitivity
	for i := 1; i < len(s); i++ {
		if s[i-1].EnrolTotal == nil || (s[i].EnrolTotal != nil && *s[i].EnrolTotal > *s[i-1].EnrolTotal) {
			t.Fatalf("not sorted by enrolment at %d: %+v", i, s)
		}
	}
	want := []struct {
		key    string
		change float64
		n      string // reference of the first group's size
		enrol  string // reference of the enrolment
		to     float64
	}{
		{"risk_ratio", 0.2, "sens_rr_0.2", "", 0.76},
		{"control_risk", 0.2, "sens_control_0.2", "", 0.24},
		{"risk_ratio", 0.1, "sens_rr_0.1", "", 0.73},
		{"control_risk", 0.1, "sens_control_0.1", "", 0.27},
		{"attrition", 0.2, "base_n", "sens_attrition_enrol_0.2", 0.12},
		{"attrition", 0.1, "base_n", "sens_attrition_enrol_0.1", 0.11},
	}
	if len(s) != len(want) {
		t.Fatalf("%d entries; want %d: %+v", len(s), len(want), s)
	}
	for i, w := range want {
		e := s[i]
		if e.Key != w.key || e.Change != w.change || math.Abs(e.To-w.to) > 1e-12 || e.N == nil || *e.N != refInt(t, w.n) {
			t.Errorf("entry %d = %s %v to %v n %v; want %s %v to %v n %d (%s)", i, e.Key, e.Change, e.To, e.N, w.key, w.change, w.to, refInt(t, w.n), w.n)
		}
		if w.enrol != "" && *e.EnrolTotal != refInt(t, w.enrol) {
			t.Errorf("entry %d enrolment %d; want %d (%s)", i, *e.EnrolTotal, refInt(t, w.enrol), w.enrol)
		}
	}
}

// TestSensitivityFailure: a variant that cannot be planned (attrition 0.85
// made 20% worse is 1.02) gives an entry with the reason, not an abort.
func TestSensitivityFailure(t *testing.T) {
	rep := review(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nattrition: 0.85\nclaimed:\n  n: 389\n  power: 0.8\n")
	var failed bool
	for _, e := range rep.Sensitivity {
		if e.Key == "attrition" && e.Change == 0.2 {
			failed = e.N == nil && e.Error != ""
		}
	}
	if !failed {
		t.Errorf("no failed attrition entry: %+v", rep.Sensitivity)
	}
	if last := rep.Sensitivity[len(rep.Sensitivity)-1]; last.Error == "" {
		t.Errorf("the failed entry is not last: %+v", rep.Sensitivity)
	}
}

func TestReportingAndCautions(t *testing.T) {
	trial := review(t, baseTrial+"claimed:\n  n: 389\n  power: 0.8\n")
	if !slices.Equal(trial.Reporting.Guidelines, []string{"CONSORT 2010 item 7a", "SPIRIT 2013 item 14", "CONSORT 2025 item 16a", "SPIRIT 2025 item 19"}) {
		t.Errorf("trial guidelines %q", trial.Reporting.Guidelines)
	}
	cohort := review(t, "version: 1\ndesign: cohort\nunexposed_risk: 0.2\nrisk_ratio: 1.5\nclaimed:\n  n: 300\n  power: 0.8\n")
	if !slices.Equal(cohort.Reporting.Guidelines, []string{"STROBE item 10"}) {
		t.Errorf("cohort guidelines %q", cohort.Reporting.Guidelines)
	}
	if n := len(trial.Cautions); n != len(designs.Cautions)+1 || !strings.Contains(trial.Cautions[n-1], "committee decides") {
		t.Errorf("cautions %q", trial.Cautions)
	}
	// One request per missing element.
	if len(trial.Requests) != len(trial.Reporting.Missing) {
		t.Errorf("%d requests for missing %q: %q", len(trial.Requests), trial.Reporting.Missing, trial.Requests)
	}
}

// TestRunDeterministic: the same protocol gives the same report.
func TestRunDeterministic(t *testing.T) {
	spec := baseTrial + "claimed:\n  n: 289\n  enrol_total: 700\n  power: 0.8\n"
	a, b := review(t, spec), review(t, spec)
	if a.Sentence != b.Sentence || len(a.Diagnosis) != len(b.Diagnosis) || strings.Join(a.Requests, "|") != strings.Join(b.Requests, "|") {
		t.Errorf("two runs differ:\n%+v\n%+v", a, b)
	}
	for i := range a.Diagnosis {
		if strings.Join(a.Diagnosis[i].Slips, "+") != strings.Join(b.Diagnosis[i].Slips, "+") {
			t.Errorf("diagnosis %d differs", i)
		}
	}
}

// TestJSONNames: the names issue 10 (item 10) fixes for the review object.
func TestJSONNames(t *testing.T) {
	rep := review(t, baseTrial+"claimed:\n  n: 289\n  power: 0.8\n")
	b, err := json.Marshal(rep)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"verdict", "tolerance", "recomputed", "claimed", "claimed_power_actual", "detectable_effect", "diagnosis", "sensitivity", "reporting", "requests"} {
		if _, ok := m[k]; !ok {
			t.Errorf("no %q in %s", k, b)
		}
	}
	has := func(v any, keys ...string) {
		t.Helper()
		o, ok := v.(map[string]any)
		if !ok {
			t.Fatalf("%v is not an object", v)
		}
		for _, k := range keys {
			if _, ok := o[k]; !ok {
				t.Errorf("no %q in %v", k, o)
			}
		}
	}
	has(m["tolerance"], "n", "power")
	has(m["reporting"], "given", "missing")
	has(m["sensitivity"].([]any)[0], "key", "change", "n")
	diag := m["diagnosis"].([]any)
	if len(diag) == 0 {
		t.Fatal("no diagnosis to check")
	}
	has(diag[0], "slips", "reproduces", "distance", "explanation")
}
