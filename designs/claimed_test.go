package designs

import (
	"slices"
	"strings"
	"testing"
)

// reviewBase is an invented protocol: a trial of text reminders with a
// claimed block.
const reviewBase = "version: 1\ndesign: trial\ncontrol_risk: 0.4\nrisk_ratio: 0.75\nattrition: 0.15\n"

func TestParseReviewClaimed(t *testing.T) {
	in, err := ParseReview("p.yaml", []byte(reviewBase+"claimed:\n  n: 290\n  enrol_total: 700\n  power: 0.8\n  alpha: 0.05\n  tolerance_n: 0.1\n"), nil)
	if err != nil {
		t.Fatal(err)
	}
	c := in.Claimed
	if c.N != 290 || c.EnrolTotal != 700 || c.Power != 0.8 || c.Alpha != 0.05 || c.ToleranceN != 0.1 || c.TolerancePower != DefaultTolerancePower {
		t.Errorf("claimed = %+v", c)
	}
	if in.Mode != ReviewN || in.Spec == nil || in.Spec.Solve != "n" || in.Spec.Power != 0.8 {
		t.Errorf("mode %q, spec %+v", in.Mode, in.Spec)
	}
	if in.Spec.Claimed == nil || in.Spec.Claimed.N != 290 {
		t.Error("the plan to recheck does not carry the claimed block")
	}
	want := []string{"primary_outcome", "effect_source", "sides", "method", "allocation"}
	if !slices.Equal(in.Missing, want) {
		t.Errorf("missing = %q; want %q", in.Missing, want)
	}
	if len(in.Assumed) != 2 || !strings.Contains(in.Assumed[0], "two-sided") || !strings.Contains(in.Assumed[1], "1:1") {
		t.Errorf("assumed = %q", in.Assumed)
	}
}

func TestParseReviewModes(t *testing.T) {
	for _, c := range []struct {
		name, spec, mode, solve string
		missing                 []string // among the missing elements
	}{
		{"everything stated", reviewBase + "power: 0.9\nclaimed:\n  n: 300\n", ReviewN, "n", nil},
		{"no power", reviewBase + "claimed:\n  n: 300\n", ReviewPower, "power", []string{"power"}},
		{"no effect", "version: 1\ndesign: trial\ncontrol_risk: 0.4\npower: 0.8\nclaimed:\n  n: 300\n", ReviewEffect, "effect", []string{"effect"}},
		{"no effect, no power", "version: 1\ndesign: trial\ncontrol_risk: 0.4\nclaimed:\n  n: 300\n", ReviewEffect, "effect", []string{"effect", "power"}},
		{"no reference", "version: 1\ndesign: trial\nrisk_ratio: 0.75\npower: 0.8\nclaimed:\n  n: 300\n", ReviewNone, "", []string{"reference_value"}},
		{"no size", reviewBase + "power: 0.8\nclaimed:\n  alpha: 0.05\n", ReviewN, "n", []string{"sample_size"}},
		{"continuous without sd", "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 4\npower: 0.8\nclaimed:\n  n: 60\n", ReviewNone, "", []string{"reference_value"}},
		{"survival without effect", "version: 1\ndesign: trial\noutcome: time-to-event\ncontrol_median: 12\nfollow_up: 24\npower: 0.8\nclaimed:\n  n: 200\n", ReviewEffect, "effect", []string{"effect"}},
	} {
		in, err := ParseReview("p.yaml", []byte(c.spec), nil)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if in.Mode != c.mode {
			t.Errorf("%s: mode %q; want %q", c.name, in.Mode, c.mode)
		}
		if c.solve == "" && in.Spec != nil {
			t.Errorf("%s: a plan to recheck without a reference value", c.name)
		}
		if c.solve != "" && (in.Spec == nil || in.Spec.Solve != c.solve) {
			t.Errorf("%s: the plan to recheck does not solve %s", c.name, c.solve)
		}
		for _, m := range c.missing {
			if !slices.Contains(in.Missing, m) {
				t.Errorf("%s: %s not among the missing elements %q", c.name, m, in.Missing)
			}
		}
	}
}

func TestParseReviewErrors(t *testing.T) {
	for _, c := range []struct{ name, spec, key, msg string }{
		{"no claimed block", reviewBase + "power: 0.8\n", "claimed", "missing"},
		{"power twice, disagreeing", reviewBase + "power: 0.8\nclaimed:\n  power: 0.9\n  n: 300\n", "claimed.power", "disagrees with power: 0.8"},
		{"unknown claimed key", reviewBase + "power: 0.8\nclaimed:\n  enroll_total: 700\n", "claimed.enroll_total", `did you mean "enrol_total"?`},
		{"n and total", reviewBase + "power: 0.8\nclaimed:\n  n: 300\n  total: 600\n", "claimed.total", "given together with claimed.n"},
		{"n not whole", reviewBase + "power: 0.8\nclaimed:\n  n: 300.5\n", "claimed.n", "not a whole number"},
		{"unknown method", reviewBase + "power: 0.8\nclaimed:\n  n: 300\n  method: magic\n", "claimed.method", "not a method"},
		{"tolerance out of range", reviewBase + "power: 0.8\nclaimed:\n  n: 300\n  tolerance_n: 5\n", "claimed.tolerance_n", "out of range"},
		{"bad value elsewhere", reviewBase + "power: 0.8\nratio: 0\nclaimed:\n  n: 300\n", "ratio", "out of range"},
		{"power as a percentage", reviewBase + "claimed:\n  n: 300\n  power: 80\n", "claimed.power", "did you mean 0.8?"},
		{"events of a binary outcome", reviewBase + "power: 0.8\nclaimed:\n  n: 300\n  events: 100\n", "claimed.events", "does not apply"},
		{"clusters without the cluster block", reviewBase + "power: 0.8\nclaimed:\n  n: 300\n  clusters: 10\n", "claimed.clusters", "without the cluster block"},
		{"claimed power below alpha", reviewBase + "claimed:\n  n: 300\n  power: 0.03\n", "claimed.power", "not above alpha"},
		{"claimed power in a survey", "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\nclaimed:\n  total: 300\n  power: 0.8\n", "claimed.power", "does not apply"},
	} {
		_, err := ParseReview("p.yaml", []byte(c.spec), nil)
		errs := AllSpecErrors(err)
		found := false
		for _, se := range errs {
			found = found || (se.Key == c.key && strings.Contains(se.Msg, c.msg))
		}
		if !found {
			t.Errorf("%s: err = %v; want key %q with %q", c.name, err, c.key, c.msg)
		}
	}
}

// TestParseReviewAssumed: the conventions assumed follow the hypothesis,
// and the allocation follows the stated sizes.
func TestParseReviewAssumed(t *testing.T) {
	ni := "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: true\ncontrol_risk: 0.85\nmargin: 0.1\nclaimed:\n  n: 268\n  power: 0.9\n"
	in, err := ParseReview("p.yaml", []byte(ni), nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(in.Assumed) < 2 || !strings.HasPrefix(in.Assumed[0], "alpha 0.025") || !strings.HasPrefix(in.Assumed[1], "a one-sided test") {
		t.Errorf("non-inferiority assumed %q; want alpha 0.025 and a one-sided test (the plan's defaults)", in.Assumed)
	}
	eq := "version: 1\ndesign: trial\nhypothesis: equivalence\ncontrol_risk: 0.85\nmargin: 0.1\nclaimed:\n  n: 268\n  power: 0.9\n"
	if in, err = ParseReview("p.yaml", []byte(eq), nil); err != nil {
		t.Fatal(err)
	}
	if slices.Contains(in.Missing, "sides") || slices.ContainsFunc(in.Assumed, func(a string) bool { return strings.Contains(a, "sided") }) {
		t.Errorf("equivalence: sides do not apply; missing %q, assumed %q", in.Missing, in.Assumed)
	}
	// 339 and 677 stated, no ratio: the allocation 1:2 the sizes imply.
	un := "version: 1\ndesign: trial\ncontrol_risk: 0.1\nintervention_risk: 0.05\nclaimed:\n  n: 339\n  n_second: 677\n  power: 0.8\n"
	if in, err = ParseReview("p.yaml", []byte(un), nil); err != nil {
		t.Fatal(err)
	}
	if in.Spec.Ratio != 2 || slices.ContainsFunc(in.Assumed, func(a string) bool { return strings.Contains(a, "1:1") }) {
		t.Errorf("ratio %g, assumed %q; want 2 and no 1:1 assumed", in.Spec.Ratio, in.Assumed)
	}
	// Only the clusters per arm: the plan at the stated clusters, full.
	cl := "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\ncluster:\n  size: 30\n  icc: 0.08\nclaimed:\n  clusters: 12\n"
	if in, err = ParseReview("p.yaml", []byte(cl), nil); err != nil {
		t.Fatal(err)
	}
	if in.Mode != ReviewPower || in.Spec.N != 360 || in.Spec.NSecond != 360 || slices.Contains(in.Missing, "sample_size") {
		t.Errorf("clusters only: mode %s, n %d and %d, missing %q", in.Mode, in.Spec.N, in.Spec.NSecond, in.Missing)
	}
}

// TestPlanReadsClaimed: plan takes power, alpha and sides stated only in
// the claimed block, and says that it does not use the rest.
func TestPlanReadsClaimed(t *testing.T) {
	s, err := Parse("p.yaml", []byte(reviewBase+"claimed:\n  n: 300\n  power: 0.9\n  alpha: 0.01\n"), nil)
	if err != nil {
		t.Fatal(err)
	}
	if s.Power != 0.9 || s.Alpha != 0.01 {
		t.Errorf("power %g alpha %g; want 0.9 and 0.01 from the claimed block", s.Power, s.Alpha)
	}
	if !slices.ContainsFunc(s.Ignored, func(x string) bool { return strings.Contains(x, "enough review") }) {
		t.Errorf("ignored = %q; want a note that review reads the claimed block", s.Ignored)
	}
}

// TestVariantEdits: a variant sets, replaces and deletes keys, nested ones
// too, and leaves the protocol's own values otherwise.
func TestVariantEdits(t *testing.T) {
	in, err := ParseReview("p.yaml", []byte("version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster:\n  size: 20\n  icc: 0.05\nclaimed:\n  n: 900\n"), nil)
	if err != nil {
		t.Fatal(err)
	}
	s, err := in.Variant(Set("cluster.icc", 0.1), Set("power", 0.9))
	if err != nil {
		t.Fatal(err)
	}
	if s.Cluster == nil || s.Cluster.ICC != 0.1 || s.Power != 0.9 || s.P2 != 0.3 {
		t.Errorf("variant: cluster %+v power %g risk %g", s.Cluster, s.Power, s.P2)
	}
	s, err = in.Variant(Delete("cluster"), Delete("risk_ratio"), Set("intervention_risk", 0.2))
	if err != nil {
		t.Fatal(err)
	}
	if s.Cluster != nil || s.EffectKey != "intervention_risk" || s.P1 != 0.2 {
		t.Errorf("variant: cluster %+v effect %s %g", s.Cluster, s.EffectKey, s.P1)
	}
	s, err = in.Variant(append(in.SizeEdits(), Set("solve", "power"))...)
	if err != nil {
		t.Fatal(err)
	}
	if s.Solve != "power" || s.N != 900 || s.Attrition != 0 {
		t.Errorf("sizes: solve %s n %d attrition %g", s.Solve, s.N, s.Attrition)
	}
}
