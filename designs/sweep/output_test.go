package sweep

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"enough/designs"
	"enough/examples"
)

// spec parses an example with overrides.
func spec(t *testing.T, name string, sets ...string) *designs.Spec {
	t.Helper()
	data, err := examples.Files.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	s, err := designs.Parse(name, data, sets)
	if err != nil {
		t.Fatalf("%s %v: %v", name, sets, err)
	}
	return s
}

// TestColumns checks the columns chosen for each kind of plan, as README's
// "Sweeping assumptions" lists them.
func TestColumns(t *testing.T) {
	two := []string{"analysable_first", "analysable_second", "analysable_total", "enrol_total"}
	cat := func(parts ...[]string) []string { return slices.Concat(parts...) }
	for _, c := range []struct {
		name      string
		file      string
		sets      []string
		keys      []string
		simulated bool
		methods   []string
		want      []string
	}{
		{"binary, solve n", "demo-trial.yaml", nil, []string{"risk_ratio"}, false, nil,
			cat([]string{"risk_ratio"}, two, []string{"achieved_power", "error"})},
		{"two keys as given", "demo-trial.yaml", nil, []string{"control_risk", "risk_ratio"}, false, nil,
			cat([]string{"control_risk", "risk_ratio"}, two, []string{"achieved_power", "error"})},
		{"solve power", "trial-power-check.yaml", nil, []string{"n"}, false, nil,
			cat([]string{"n"}, two, []string{"achieved_power", "error"})},
		{"solve effect", "cohort-detectable.yaml", nil, []string{"n"}, false, nil,
			cat([]string{"n"}, two, []string{"detectable_lower", "detectable_upper", "error"})},
		{"precision survey", "survey-booster-coverage.yaml", nil, []string{"margin"}, false, nil,
			[]string{"margin", "analysable", "enrol_total", "error"}},
		{"precision survey, solve effect", "survey-booster-coverage.yaml", []string{"solve=effect", "total=600"}, []string{"total"}, false, nil,
			[]string{"total", "analysable", "enrol_total", "achieved_margin", "error"}},
		{"paired", "cohort-paired-sleep.yaml", nil, []string{"sd_difference"}, false, nil,
			[]string{"sd_difference", "analysable", "enrol_total", "achieved_power", "error"}},
		{"crossover: two sequences", "trial-crossover-night-splint.yaml", nil, []string{"sd"}, false, nil,
			cat([]string{"sd"}, two, []string{"achieved_power", "error"})},
		{"time-to-event, solve n", "trial-survival-home-dialysis.yaml", nil, []string{"hazard_ratio"}, false, nil,
			cat([]string{"hazard_ratio"}, two, []string{"achieved_power", "events_required", "error"})},
		{"time-to-event, solve power", "trial-survival-home-dialysis.yaml", []string{"solve=power", "n=300"}, []string{"hazard_ratio"}, false, nil,
			cat([]string{"hazard_ratio"}, two, []string{"achieved_power", "error"})},
		{"cluster trial", "trial-cluster-schools.yaml", nil, []string{"cluster.icc"}, false, nil,
			cat([]string{"cluster.icc"}, two, []string{"achieved_power", "clusters_first", "clusters_second", "error"})},
		{"interim, binary", "demo-trial.yaml", []string{"interim.looks=3", "interim.boundary=pocock", "method=fleiss"}, []string{"interim.looks"}, false, nil,
			cat([]string{"interim.looks"}, two, []string{"achieved_power", "inflation", "expected_total_alternative", "expected_total_null", "error"})},
		{"interim, time-to-event", "trial-interim-foot-ulcer.yaml", nil, []string{"hazard_ratio"}, false, nil,
			cat([]string{"hazard_ratio"}, two, []string{"achieved_power", "events_required", "inflation", "expected_total_alternative", "expected_total_null",
				"expected_events_alternative", "expected_events_null", "error"})},
		{"simulated", "demo-trial.yaml", nil, []string{"risk_ratio"}, true, nil,
			cat([]string{"risk_ratio"}, two, []string{"achieved_power", "simulated_power", "simulated_se", "error"})},
		{"alternatives, solve n", "demo-trial.yaml", nil, []string{"risk_ratio"}, false, []string{"fleiss", "kelsey"},
			cat([]string{"risk_ratio"}, two, []string{"achieved_power",
				"fleiss.analysable_total", "fleiss.enrol_total", "fleiss.achieved_power",
				"kelsey.analysable_total", "kelsey.enrol_total", "kelsey.achieved_power", "error"})},
		{"alternatives, solve effect", "cohort-detectable.yaml", nil, []string{"n"}, false, []string{"kelsey"},
			cat([]string{"n"}, two, []string{"detectable_lower", "detectable_upper", "kelsey.detectable_lower", "kelsey.detectable_upper", "error"})},
	} {
		got := Columns(spec(t, c.file, c.sets...), c.keys, c.simulated, c.methods)
		if !slices.Equal(got, c.want) {
			t.Errorf("%s: columns\n%v\nwant\n%v", c.name, got, c.want)
		}
		h := Header{Vary: c.keys, Columns: got}
		if _, err := NewLayout(&h); err != nil {
			t.Errorf("%s: %v", c.name, err)
		}
	}
}

// TestOtherMethodsAsPlan checks that the other methods a sweep gives
// columns to are those enough plan answers with, for every example
// solving each question: plan's list leaves out a method that cannot
// answer, so it must be OtherMethods with at most some left out.
func TestOtherMethodsAsPlan(t *testing.T) {
	names, _ := examplesList()
	equal := 0
	for _, name := range names {
		for _, sets := range [][]string{nil, {"solve=power", "n=200"}, {"solve=effect", "n=200"}} {
			data, _ := examples.Files.ReadFile(name)
			s, err := designs.Parse(name, data, sets)
			if err != nil {
				continue
			}
			res, err := designs.Plan(s)
			if err != nil {
				continue
			}
			var planned []string
			for _, a := range res.Alternatives {
				planned = append(planned, a.Method)
			}
			others := OtherMethods(s)
			if !subsequence(planned, others) {
				t.Errorf("%s %v: plan gives %v, not among the sweep's %v", name, sets, planned, others)
			}
			if slices.Equal(planned, others) || (len(planned) == 0 && len(others) == 0) {
				equal++
			}
		}
	}
	if equal < 20 {
		t.Errorf("only %d plans list the sweep's other methods exactly", equal)
	}
}

func examplesList() ([]string, error) {
	entries, err := examples.Files.ReadDir(".")
	var names []string
	for _, e := range entries {
		if strings.HasSuffix(e.Name(), ".yaml") {
			names = append(names, e.Name())
		}
	}
	return names, err
}

func subsequence(xs, of []string) bool {
	j := 0
	for _, x := range xs {
		for j < len(of) && of[j] != x {
			j++
		}
		if j == len(of) {
			return false
		}
		j++
	}
	return true
}

// TestResultAsPlan checks that a point's result object is byte for byte
// the result object of enough plan's JSON for every example (its derived
// settings rounded as plan rounds them).
func TestResultAsPlan(t *testing.T) {
	names, _ := examplesList()
	for _, name := range names {
		for _, sets := range [][]string{nil, {"solve=power", "n=200"}, {"solve=effect", "n=200"}} {
			data, _ := examples.Files.ReadFile(name)
			s, err := designs.Parse(name, data, sets)
			if err != nil {
				continue
			}
			res, err := designs.Plan(s)
			if err != nil {
				continue
			}
			whole, err := json.Marshal(res)
			if err != nil {
				t.Fatal(err)
			}
			var plan struct {
				Result json.RawMessage `json:"result"`
			}
			if err := json.Unmarshal(whole, &plan); err != nil {
				t.Fatal(err)
			}
			h := Header{Vary: []string{"alpha=0.05"}, Columns: []string{"alpha", ColError}}
			el, err := AppendElement(nil, &h, &Record{Point: []string{"0.05"}, Result: &res.Result})
			if err != nil {
				t.Fatal(err)
			}
			var got struct {
				Result json.RawMessage `json:"result"`
			}
			if err := json.Unmarshal(el, &got); err != nil {
				t.Fatalf("%s: %v in %s", name, err, el)
			}
			if !bytes.Equal(got.Result, plan.Result) {
				t.Errorf("%s %v: result\n%s\nwant (plan's)\n%s", name, sets, got.Result, plan.Result)
			}
		}
	}
}

// TestNewTable checks the points' texts in grid order (the last axis
// fastest), a text that is no JSON number written again, and the rows
// with an error.
func TestNewTable(t *testing.T) {
	g := Grid{Axes: []Axis{
		{Key: "attrition", Values: []float64{0, 0.1}, Texts: []string{"0", "0.1"}},
		{Key: "risk_ratio", Values: []float64{0.5, 0.6, 0.7}, Texts: []string{".5", "0.6", "0.7"}},
	}}
	ans := &designs.Answer{N: []int{10, 10}, Total: 20, EnrolTotal: 22}
	var rows []Row
	for i := range 6 {
		rows = append(rows, Row{Index: i, Result: ans})
	}
	rows[4] = Row{Index: 4, Result: ans, Err: errors.New("boom")}
	rows[5] = Row{Index: 5, Err: errors.New("bad")}
	h := Header{Vary: []string{"attrition=0,0.1", "risk_ratio=.5,0.6,0.7"}, Columns: []string{"attrition", "risk_ratio", ColError}}
	tb := NewTable(h, g, rows, func(err error) json.RawMessage {
		return json.RawMessage(`{"message":"` + err.Error() + `"}`)
	})
	want := [][]string{{"0", "0.5"}, {"0", "0.6"}, {"0", "0.7"}, {"0.1", "0.5"}, {"0.1", "0.6"}, {"0.1", "0.7"}}
	for i, r := range tb.Records {
		if !slices.Equal(r.Point, want[i]) {
			t.Errorf("point %d: %v; want %v", i, r.Point, want[i])
		}
	}
	// Point 4's simulation failed: its figures stay beside the error.
	if r := tb.Records[4]; r.Result != ans || string(r.Error) != `{"message":"boom"}` {
		t.Errorf("row 4: %+v", r)
	}
	if r := tb.Records[5]; r.Result != nil || string(r.Error) != `{"message":"bad"}` {
		t.Errorf("row 5: %+v", r)
	}
	if tb.Failed() != 2 {
		t.Errorf("Failed() = %d; want 2", tb.Failed())
	}
}

func TestIsJSONNumber(t *testing.T) {
	for s, want := range map[string]bool{
		"0": true, "-0": true, "0.5": true, "12": true, "1e-05": true, "1E+5": true, "-2.5e3": true,
		"": false, ".5": false, "01": false, "1.": false, "+1": false, "NaN": false, "Inf": false, "1e": false, "0x10": false, "1_000": false,
	} {
		if got := isJSONNumber(s); got != want {
			t.Errorf("isJSONNumber(%q) = %v; want %v", s, got, want)
		}
	}
}

func TestErrorText(t *testing.T) {
	for obj, want := range map[string]string{
		`{"file":"s.yaml","line":null,"key":"risk_ratio","value":null,"message":"too large","allowed":"at most 2"}`: "risk_ratio: too large; allowed: at most 2",
		`{"file":"s.yaml","line":3,"key":null,"value":null,"message":"no key","allowed":null}`:                      "no key",
		`{"file":"s.yaml","message":"cannot be planned"}`:                                                           "cannot be planned",
	} {
		if got := ErrorText(json.RawMessage(obj)); got != want {
			t.Errorf("ErrorText(%s) = %q; want %q", obj, got, want)
		}
	}
}

// TestInterimCells: the interim columns read result.interim: the inflation
// as it is, the expected totals as the groups' expected sizes added up
// (two groups) or scaled to every arm (three arms: the total is 3 × n,
// the comparison's groups 2 × n), the expected events as they are.
func TestInterimCells(t *testing.T) {
	for _, c := range []struct {
		file  string
		sets  []string
		scale float64
	}{
		{"trial-interim-foot-ulcer.yaml", nil, 1},
		{"demo-trial.yaml", []string{"interim.looks=4", "interim.boundary=obrien-fleming", "method=fleiss"}, 1},
		{"demo-trial.yaml", []string{"interim.looks=3", "interim.boundary=pocock", "method=fleiss", "arms=3", "comparisons=each-vs-control"}, 1.5},
	} {
		s := spec(t, c.file, c.sets...)
		res, err := designs.Plan(s)
		if err != nil {
			t.Fatal(err)
		}
		iv := res.Result.Interim
		cols := Columns(s, nil, false, nil)
		l, err := NewLayout(&Header{Columns: cols})
		if err != nil {
			t.Fatal(err)
		}
		rec := &Record{Result: &res.Result}
		want := map[string]float64{
			ColInflation:        iv.Inflation,
			ColExpectedTotalAlt: c.scale * (iv.ExpectedNAlternative[0] + iv.ExpectedNAlternative[1]),
			ColExpectedTotalH0:  c.scale * (iv.ExpectedNNull[0] + iv.ExpectedNNull[1]),
		}
		if iv.ExpectedEventsNull != nil {
			want[ColExpectedEventsAlt], want[ColExpectedEventsH0] = *iv.ExpectedEventsAlternative, *iv.ExpectedEventsNull
		}
		seen := 0
		for i, col := range cols {
			w, ok := want[col]
			if !ok {
				continue
			}
			seen++
			if v := l.Value(i, rec); v.Kind != Number || math.Abs(v.Num-w) > 1e-9*w {
				t.Errorf("%s %v: %s = %+v, want %v", c.file, c.sets, col, v, w)
			}
		}
		if seen != len(want) {
			t.Errorf("%s %v: %d of the %d interim columns", c.file, c.sets, seen, len(want))
		}
	}
}
