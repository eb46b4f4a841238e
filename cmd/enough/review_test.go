package main

import (
	"bytes"
	"os"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"enough/designs/review"
)

// TestReviewVerdictStatuses checks that each verdict ends enough review
// with the status README documents for it (issue 10, item 11: 0
// consistent, 3 under-powered, 4 larger than needed, 5 incomplete), and
// that a verdict's status passes through exitCode unchanged.
func TestReviewVerdictStatuses(t *testing.T) {
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	documented := map[string]int{}
	for _, m := range regexp.MustCompile("(?m)^\\| `([a-z-]+)` \\| (\\d) \\|$").FindAllStringSubmatch(string(readme), -1) {
		n, _ := strconv.Atoi(m[2])
		documented[m[1]] = n
	}
	want := map[string]int{review.Consistent: 0, review.UnderPowered: 3, review.LargerThanNeeded: 4, review.Incomplete: 5}
	for v, code := range want {
		if verdictCodes[v] != code {
			t.Errorf("verdict %s ends with %d, want %d", v, verdictCodes[v], code)
		}
		if documented[v] != code {
			t.Errorf("README gives verdict %s the status %d, want %d", v, documented[v], code)
		}
		if code != 0 {
			if got := exitCode(&verdictStatus{verdict: v, code: code}); got != code {
				t.Errorf("exitCode of verdict %s = %d, want %d", v, got, code)
			}
		}
	}
	if len(verdictCodes) != len(want) {
		t.Errorf("%d verdicts have a status, want %d", len(verdictCodes), len(want))
	}
}

// TestReviewFlags checks what enough review reads from its command line.
func TestReviewFlags(t *testing.T) {
	var got *ReviewOptions
	cmd := NewCmdReview(&IO{}, func(o *ReviewOptions) error { got = o; return nil })
	cmd.SetArgs([]string{"p.yaml", "-f", "json", "-o", "r.json", "--set", "claimed.n=300", "--set", "power=0.9"})
	if err := cmd.Execute(); err != nil {
		t.Fatal(err)
	}
	if got == nil || got.Spec != "p.yaml" || got.Format != "json" || got.Output != "r.json" || !slices.Equal(got.Sets, []string{"claimed.n=300", "power=0.9"}) {
		t.Errorf("options %+v", got)
	}
}

// TestReviewQuietVerdict: a verdict that is not consistent writes the
// review and nothing on standard error, and Execute returns its status.
func TestReviewQuietVerdict(t *testing.T) {
	dir := t.TempDir()
	spec := dir + "/p.yaml"
	// Fleiss with continuity correction needs 632 per arm for 0.072
	// against 0.12 at 80% power, two-sided 0.05 (testdata/reference/
	// review_examples.out): 506 is under-powered.
	data := "version: 1\ndesign: trial\ncontrol_risk: 0.12\nrisk_ratio: 0.6\nclaimed:\n  n: 506\n  power: 0.8\n"
	if err := os.WriteFile(spec, []byte(data), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errOut bytes.Buffer
	code := Execute([]string{"review", spec, "-f", "text"}, &IO{In: strings.NewReader(""), Out: &out, ErrOut: &errOut})
	if code != ExitUnderPowered || errOut.Len() > 0 || !strings.Contains(out.String(), "Under-powered.") {
		t.Errorf("status %d, stderr %q, stdout %.200q", code, errOut.String(), out.String())
	}
}
