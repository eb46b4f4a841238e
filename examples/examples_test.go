package examples_test

import (
	"bytes"
	"io/fs"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/report"
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
	for _, c := range []struct{ design, goal, outcome string }{
		{"cohort", "", ""}, {"case-control", "", ""}, {"trial", "", ""}, {"cross-sectional", "", ""},
		{"cross-sectional", "precision", ""}, {"trial", "", "continuous"}, {"trial", "", "time-to-event"},
		{"cohort", "", "continuous"}, {"cross-sectional", "", "continuous"},
	} {
		data, err := designs.Starter(c.design, c.goal, c.outcome)
		if err != nil {
			t.Fatal(err)
		}
		s, err := designs.Parse("starter", data, nil)
		if err != nil {
			t.Errorf("%s %s: %v", c.design, c.goal, err)
			continue
		}
		if _, err := designs.Plan(s); err != nil {
			t.Errorf("%s %s: %v", c.design, c.goal, err)
		}
		if s.Design != c.design {
			t.Errorf("starter for %s is a %s", c.design, s.Design)
		}
	}
	if _, err := designs.Starter("ecological", "", ""); err == nil {
		t.Error("a starter for an unknown design")
	}
}
