package designs_test

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"reflect"
	"regexp"
	"testing"
	"time"

	"enough/designs"
	"enough/designs/report"
)

// The checks shared by FuzzRender and TestExtremeValues: what any
// specification, however odd, must give.

// pipelineBudget is the most time one specification may take to be
// parsed, planned and rendered in every format (issue 9: "failing any
// input that takes more than 2 s"); the examples take milliseconds.
const pipelineBudget = 2 * time.Second

// checkPipeline parses (through parse), plans and renders one
// specification, and fails t unless every step keeps its contract: no
// panic; a refusal is a *SpecError or SpecErrors (exit status 2), from
// Parse or Plan; a failure to plan a *PlanError (exit status 1, never an
// internal error); a plan holds no NaN or infinity and renders in every
// format without error and with no NaN or Inf in its text; and the whole
// takes less than pipelineBudget (a run that hangs is reported at the
// budget and left behind). input is what the user wrote, so that a NaN or
// Inf the user wrote (as a title) is not taken for a computed one. It
// returns the plan, or nil.
//
// A specification of method exact is parsed but not planned: its
// enumeration is bounded by its own guard (about ten seconds, README), far
// beyond the budget of these checks (TestExactStepsReplay and the tests of
// verify_test.go plan it).
func checkPipeline(t *testing.T, input string, parse func() (*designs.Spec, error)) *designs.Result {
	t.Helper()
	res, problem := runPipeline(input, parse)
	if problem != "" {
		t.Fatal(problem)
	}
	return res
}

// runPipeline is checkPipeline returning the first broken contract ("" for
// none) instead of failing a test.
func runPipeline(input string, parse func() (*designs.Spec, error)) (*designs.Result, string) {
	type outcome struct {
		res     *designs.Result
		problem string
	}
	done := make(chan outcome, 1)
	go func() {
		var o outcome
		defer func() {
			if p := recover(); p != nil {
				o.problem = fmt.Sprintf("panic (an internal error, exit status 1): %v", p)
			}
			done <- o
		}()
		o.res, o.problem = pipeline(input, parse)
	}()
	timer := time.NewTimer(pipelineBudget)
	defer timer.Stop()
	select {
	case o := <-done:
		return o.res, o.problem
	case <-timer.C:
		return nil, fmt.Sprintf("took more than %v (still running)", pipelineBudget)
	}
}

// pipeline is the work of runPipeline: it returns the plan (or nil) and
// the first broken contract (or "").
func pipeline(input string, parse func() (*designs.Spec, error)) (*designs.Result, string) {
	s, err := parse()
	if err != nil {
		if !onlySpecErrors(err) {
			return nil, fmt.Sprintf("refused with %T, not *SpecError or SpecErrors (exit status 2): %v", err, err)
		}
		return nil, ""
	}
	if s.Method == "exact" {
		return nil, ""
	}
	res, err := designs.Plan(s)
	if err != nil {
		// Planning may still find a problem of the input (a size that
		// leaves a group empty): a refusal like Parse's.
		var pe *designs.PlanError
		if !errors.As(err, &pe) && !onlySpecErrors(err) {
			return nil, fmt.Sprintf("plan failed with %T, neither *PlanError nor *SpecError: %v", err, err)
		}
		return nil, ""
	}
	if bad := nonFinite(reflect.ValueOf(res), "Result"); len(bad) > 0 {
		return nil, fmt.Sprintf("the plan holds non-finite numbers: %v", bad)
	}
	userWrote := nanOrInf.MatchString(input)
	for _, format := range report.Formats {
		var buf bytes.Buffer
		if err := report.Write(&buf, res, format); err != nil {
			return nil, fmt.Sprintf("%s: %v", format, err)
		}
		if userWrote || !mayHoldNaNOrInf(buf.Bytes()) {
			continue
		}
		if m := nanOrInf.Find(buf.Bytes()); m != nil {
			return nil, fmt.Sprintf("%s output holds %q", format, m)
		}
	}
	return res, ""
}

// nanOrInf matches the ways Go and the report write a NaN or an infinity.
var nanOrInf = regexp.MustCompile(`(?i)\b(nan|[+-]?inf(inity)?)\b|∞`)

// mayHoldNaNOrInf is a quick test before nanOrInf, which is slow on long
// outputs: whether b holds "nan", "inf" (in any case) or "∞" at all.
func mayHoldNaNOrInf(b []byte) bool {
	lower := bytes.ToLower(b)
	return bytes.Contains(lower, []byte("nan")) || bytes.Contains(lower, []byte("inf")) || bytes.Contains(b, []byte("∞"))
}

// onlySpecErrors reports whether err is a *SpecError or a SpecErrors with
// nothing else inside.
func onlySpecErrors(err error) bool {
	switch err.(type) {
	case *designs.SpecError, designs.SpecErrors:
		return true
	}
	return false
}

// nonFinite returns the paths of the NaN and infinite floats that v holds,
// through structs, pointers, interfaces, slices, arrays and maps.
func nonFinite(v reflect.Value, path string) []string {
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		if x := v.Float(); math.IsNaN(x) || math.IsInf(x, 0) {
			return []string{fmt.Sprintf("%s = %v", path, x)}
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			return nonFinite(v.Elem(), path)
		}
	case reflect.Struct:
		var out []string
		for i := range v.NumField() {
			out = append(out, nonFinite(v.Field(i), path+"."+v.Type().Field(i).Name)...)
		}
		return out
	case reflect.Slice, reflect.Array:
		var out []string
		for i := range v.Len() {
			out = append(out, nonFinite(v.Index(i), fmt.Sprintf("%s[%d]", path, i))...)
		}
		return out
	case reflect.Map:
		var out []string
		it := v.MapRange()
		for it.Next() {
			out = append(out, nonFinite(it.Value(), fmt.Sprintf("%s[%v]", path, it.Key()))...)
		}
		return out
	}
	return nil
}

// TestNonFinite checks the walk that finds NaN and infinities.
func TestNonFinite(t *testing.T) {
	type inner struct{ X float64 }
	type outer struct {
		A  float64
		P  *inner
		S  []float64
		M  map[string]float64
		I  any
		ok float64
	}
	for _, tc := range []struct {
		v    any
		want int
	}{
		{outer{A: 1, P: &inner{2}, S: []float64{3}, M: map[string]float64{"m": 4}, I: 5.0, ok: 6}, 0},
		{outer{A: math.NaN()}, 1},
		{outer{P: &inner{math.Inf(1)}}, 1},
		{outer{S: []float64{0, math.Inf(-1), math.NaN()}}, 2},
		{outer{M: map[string]float64{"m": math.NaN()}}, 1},
		{outer{I: math.Inf(1)}, 1},
		{outer{ok: math.NaN()}, 1},
	} {
		if got := nonFinite(reflect.ValueOf(tc.v), "v"); len(got) != tc.want {
			t.Errorf("nonFinite(%+v) = %v, want %d", tc.v, got, tc.want)
		}
	}
}

// TestNanOrInf checks the pattern that finds a NaN or an infinity in a
// summary, and that words holding "inf" or "nan" are no match.
func TestNanOrInf(t *testing.T) {
	for _, tc := range []struct {
		text string
		want bool
	}{
		{"power NaN%", true},
		{"n = +Inf", true},
		{"ratio -Inf", true},
		{"a risk of Inf", true},
		{"infinity", true},
		{"∞ participants", true},
		{"infection within 30 days", false},
		{"inflated by the design effect", false},
		{"Nanjing cohort", false},
		{"the financial year", false},
	} {
		if got := nanOrInf.MatchString(tc.text) && mayHoldNaNOrInf([]byte(tc.text)); got != tc.want {
			t.Errorf("%q: match %v, want %v", tc.text, got, tc.want)
		}
	}
}
