package examples_test

import (
	"bytes"
	"encoding/json"
	"io/fs"
	"math"
	"regexp"
	"slices"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/report"
	"enough/designs/review"
	"enough/examples"
)

// TestExamples plans every example in every format and checks that each
// design is covered and every summary carries the cautions.
func TestExamples(t *testing.T) {
	names, err := fs.Glob(examples.Files, "*.yaml")
	if err != nil || len(names) == 0 {
		t.Fatalf("no examples: %v", err)
	}
	seen := map[string]bool{}
	for _, name := range names {
		data, _ := examples.Files.ReadFile(name)
		s, err := designs.Parse(name, data, nil)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		seen[s.Design] = true
		res, err := designs.Plan(s)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		for _, f := range report.Formats {
			var b bytes.Buffer
			if err := report.Write(&b, res, f); err != nil {
				t.Errorf("%s %s: %v", name, f, err)
			}
			if f != "json" && !strings.Contains(b.String(), "qualified statistician") {
				t.Errorf("%s %s: no cautions", name, f)
			}
		}
	}
	for _, d := range designs.Designs {
		if !seen[d] {
			t.Errorf("no example for design %s", d)
		}
	}
}

// TestStarters checks that every starter of `enough new` plans as it stands.
func TestStarters(t *testing.T) {
	for _, c := range designs.Starters {
		data, err := designs.Starter(c.Design, c.Goal, c.Outcome)
		if err != nil {
			t.Fatal(err)
		}
		s, err := designs.Parse("starter", data, nil)
		if err != nil {
			t.Errorf("%s: %v", c.Command(), err)
			continue
		}
		if _, err := designs.Plan(s); err != nil {
			t.Errorf("%s: %v", c.Command(), err)
		}
		if s.Design != c.Design {
			t.Errorf("starter for %s is a %s", c.Design, s.Design)
		}
	}
	if _, err := designs.Starter("ecological", "", ""); err == nil {
		t.Error("a starter for an unknown design")
	}
}

// reviewExpect is what the recheck of each example protocol must find. The
// figures were computed outside the project, in R, by
// testdata/reference/review_examples.R (its output beside it): the sizes
// are the ceilings of the unrounded n it prints, the powers those it prints
// (Fleiss with continuity correction, one direction, two-sided alpha 0.05).
var reviewExpect = map[string]struct {
	verdict string
	n       int      // the recomputed analysable size per group
	power   float64  // the power the stated size gives (0: not checked)
	slip    string   // a slip among the top three of the diagnosis ("" none)
	missing []string // among the elements missing
}{
	// power.t.test(delta = 6, sd = 15, power = 0.9, strict = TRUE): 132.31.
	"review-consistent-balance-classes.yaml": {verdict: "consistent", n: 133},
	// n_fleiss_cc(0.072, 0.12, 1, 0.05, 2, 0.8) = 631.08; one-sided 505.51;
	// power at 506 per arm 0.700821.
	"review-under-powered-wound-dressing.yaml": {verdict: "under-powered", n: 632, power: 0.700821, slip: "one-sided-alpha", missing: []string{"method"}},
	// n_fleiss_cc(0.144, 0.08, 1, 0.05, 2, 0.8) = 410.64; at 90% power
	// 538.98; power at 539 per group 0.900009.
	"review-larger-than-needed-solvent-hearing.yaml": {verdict: "larger-than-needed", n: 411, power: 0.900009, slip: "power-90-as-80"},
	// n_fleiss_cc(0.455, 0.35, 1, 0.05, 2, 0.8) = 360.04.
	"review-incomplete-peer-support.yaml": {verdict: "incomplete", n: 361, missing: []string{"sample_size", "alpha", "sides", "method", "allocation", "attrition", "effect_source"}},
}

// TestReviewExamples rechecks every example protocol (review-VERDICT-…)
// with enough review's engine, renders it in every format, and checks the
// verdict its name announces, the recomputed size, the power of the stated
// size and the slip the protocol was built to commit, against the values
// computed outside the project.
func TestReviewExamples(t *testing.T) {
	names, _ := fs.Glob(examples.Files, "review-*.yaml")
	if len(names) != len(reviewExpect) {
		t.Errorf("%d review examples, %d expectations: give each example its expectation", len(names), len(reviewExpect))
	}
	verdicts := map[string]bool{}
	for _, name := range names {
		want, ok := reviewExpect[name]
		if !ok {
			t.Errorf("%s: no expectation", name)
			continue
		}
		if !strings.HasPrefix(name, "review-"+want.verdict+"-") {
			t.Errorf("%s: the name does not announce its verdict %s", name, want.verdict)
		}
		data, _ := examples.Files.ReadFile(name)
		in, err := designs.ParseReview(name, data, nil)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		rep, err := review.Run(in)
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		verdicts[rep.Verdict] = true
		if rep.Verdict != want.verdict {
			t.Errorf("%s: verdict %s, want %s (%s)", name, rep.Verdict, want.verdict, rep.Sentence)
		}
		if rep.Recomputed == nil || len(rep.Recomputed.N) == 0 || rep.Recomputed.N[0] != want.n {
			t.Errorf("%s: recomputed %+v, want %d per group", name, rep.Recomputed, want.n)
		}
		if want.power > 0 && (rep.ClaimedPowerActual == nil || math.Abs(*rep.ClaimedPowerActual-want.power) > 5e-6) {
			t.Errorf("%s: power of the stated size %v, want %v", name, rep.ClaimedPowerActual, want.power)
		}
		var top []string
		for i, d := range rep.Diagnosis {
			if i < 3 {
				top = append(top, d.Slips...)
				top = append(top, d.Tied...)
			}
		}
		switch {
		case want.slip == "" && len(rep.Diagnosis) > 0:
			t.Errorf("%s: a diagnosis %v for a protocol without a slip", name, top)
		case want.slip != "" && !slices.Contains(top, want.slip):
			t.Errorf("%s: %s not among the top three of the diagnosis %v", name, want.slip, top)
		}
		for _, m := range want.missing {
			if !slices.Contains(rep.Reporting.Missing, m) {
				t.Errorf("%s: %s not listed as missing (%v)", name, m, rep.Reporting.Missing)
			}
		}
		if want.verdict == "consistent" && len(rep.Requests) > 0 {
			t.Errorf("%s: requests of a complete, consistent protocol: %q", name, rep.Requests)
		}
		if want.verdict != "consistent" && len(rep.Requests) == 0 {
			t.Errorf("%s: no request to the investigators", name)
		}
		for _, f := range report.Formats {
			var b bytes.Buffer
			if err := report.WriteReview(&b, rep, in, report.ReviewSource{File: name, Data: data}, f); err != nil {
				t.Errorf("%s %s: %v", name, f, err)
				continue
			}
			switch {
			case f == "json" && !json.Valid(b.Bytes()):
				t.Errorf("%s: the JSON is not valid", name)
			case f != "json" && !strings.Contains(b.String(), "qualified statistician"):
				t.Errorf("%s %s: no cautions", name, f)
			}
		}
	}
	for v := range map[string]bool{"consistent": true, "under-powered": true, "larger-than-needed": true, "incomplete": true} {
		if !verdicts[v] {
			t.Errorf("no example protocol with the verdict %s", v)
		}
	}
}

// TestReviewStarters checks that every starter of `enough new --review`
// is refused while a placeholder is left, and is read by enough review
// once the placeholders are filled in with the values they suggest.
func TestReviewStarters(t *testing.T) {
	placeholder := regexp.MustCompile(`"\[as stated, e\.g\. ([^\]]+)\]"`)
	for _, c := range designs.Starters {
		data, err := designs.ReviewStarter(c.Design, c.Goal, c.Outcome)
		if err != nil {
			t.Fatal(err)
		}
		text := string(data)
		if !strings.Contains(text, "\nclaimed:\n") || !strings.Contains(text, "tolerance_n") {
			t.Errorf("%v: no claimed block with its tolerances", c)
		}
		if _, err := designs.ParseReview("starter.yaml", data, nil); err == nil {
			t.Errorf("%v: a starter with its placeholders is read as a protocol", c)
		}
		filled := placeholder.ReplaceAllString(text, "$1")
		if strings.Contains(filled, "as stated") {
			t.Errorf("%v: a placeholder is left after filling in", c)
		}
		in, err := designs.ParseReview("starter.yaml", []byte(filled), nil)
		if err != nil {
			t.Errorf("%v: the filled-in starter is refused: %v", c, err)
			continue
		}
		if in.Claimed.N == 0 && in.Claimed.Total == 0 {
			t.Errorf("%v: no stated size read", c)
		}
		if _, err := review.Run(in); err != nil {
			t.Errorf("%v: the filled-in starter cannot be reviewed: %v", c, err)
		}
	}
	if _, err := designs.ReviewStarter("ecological", "", ""); err == nil {
		t.Error("a review starter for an unknown design")
	}
}
