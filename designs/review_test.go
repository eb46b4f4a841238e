package designs

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"
)

// Regression tests for problems found by reviewing the tool as a new user.

func TestReviewErrors(t *testing.T) {
	for _, c := range []struct{ name, spec, key, msg string }{
		// Student's test is not the test for unequal standard deviations.
		{"student with unequal sds", "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 4\nsd_first: 8\nsd_second: 14\npower: 0.85\ntest: t-student\n", "test", "t-welch"},
		// 0.8 − 0.88 is −0.07999999999999996 in floating point: at the margin.
		{"at the margin by rounding", "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: true\nmargin: 0.08\ncontrol_risk: 0.88\nintervention_risk: 0.8\npower: 0.9\n", "intervention_risk", "at or beyond the non-inferiority margin"},
		{"n_second with ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 100\nn_second: 50\nratio: 2\n", "n_second", "given together with ratio"},
		{"too small a survey", "version: 1\ndesign: cross-sectional\nexposure_prevalence: 0.3\nunexposed_prevalence: 0.1\nprevalence_ratio: 2\nsolve: power\ntotal: 2\nattrition: 0.5\n", "total", "fewer than 1 analysable"},
		{"method with no value", "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\npower: 0.8\nmethod:\n", "method", "has no value"},
	} {
		s, err := Parse("s.yaml", []byte(c.spec), nil)
		if err == nil {
			_, err = Plan(s)
		}
		var se *SpecError
		if !errors.As(err, &se) || se.Key != c.key || !strings.Contains(se.Msg, c.msg) {
			t.Errorf("%s: err = %v; want key %q and %q", c.name, err, c.key, c.msg)
		}
	}
}

func TestReviewVerifyEffect(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: cohort\nsolve: effect\nn: 400\nratio: 2\nunexposed_risk: 0.05\nrisk_ratio: 1\npower: 0.8\n")
	var ie *InputError
	if err := Verify(context.Background(), res.Spec, res, SimOptions{Replicates: 1000}); !errors.As(err, &ie) {
		t.Errorf("err = %v, want an InputError", err)
	}
}

// TestReviewNotes: binary-outcome notes stay off other outcomes, and the t
// method says it counts both tails.
func TestReviewNotes(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 1\nsd: 2\npower: 0.8\n")
	notes := strings.Join(res.Notes, " ")
	if strings.Contains(notes, "odds ratio") || strings.Contains(notes, "direction of the planned effect only") {
		t.Errorf("binary notes on a continuous plan: %q", notes)
	}
	if !strings.Contains(notes, "both directions") {
		t.Errorf("no both-tails note: %q", notes)
	}
}

// TestReviewLargeRounding: rounding noise never rounds a large size down,
// nor makes more analysable than enrolled.
func TestReviewLargeRounding(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 1.00104e-05\nrisk_ratio: 0.9\npower: 0.8\nmethod: fleiss\n")
	if a := res.Result; float64(a.N[0]) < a.NStar || *a.AchievedPower < 0.8 {
		t.Errorf("n %v below n* %v (power %v)", a.N, a.NStar, *a.AchievedPower)
	}
	res = mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 1000000000\n")
	if a := res.Result; a.N[0] > a.Enrol[0] || a.N[1] > a.Enrol[1] {
		t.Errorf("analysable %v above enrolment %v", a.N, a.Enrol)
	}
}

// TestReviewNSecond: a protocol's two group sizes can be entered as such.
func TestReviewNSecond(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 1230\nn_second: 370\nmethod: fleiss\n")
	if a := res.Result; a.Enrol[0] != 1230 || a.Enrol[1] != 370 || math.Abs(*res.Ratio-370.0/1230) > 1e-15 {
		t.Errorf("enrol %v ratio %v", a.Enrol, *res.Ratio)
	}
}

// TestReviewClusterAttrition: enough whole clusters to enrol everyone.
func TestReviewClusterAttrition(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 3\nsd: 10\ncluster: {size: 25, icc: 0.05}\npower: 0.8\nattrition: 0.2\n")
	a := res.Result
	for i := range 2 {
		if a.WholeClusters[i] < a.Enrol[i] || a.Clusters[i] != int(math.Ceil(float64(a.Enrol[i])/25)) {
			t.Errorf("arm %d: %d clusters bring %d for an enrolment of %d", i, a.Clusters[i], a.WholeClusters[i], a.Enrol[i])
		}
	}
}

// TestReviewOneSidedEffect: a one-sided test's detectable effect lies on its
// own side only.
func TestReviewOneSidedEffect(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\nsolve: effect\nn: 200\ncontrol_risk: 0.3\nrisk_ratio: 0.8\nsides: 1\npower: 0.8\n")
	d := res.Result.Detectable
	if d.Direction != "lower" || d.Lower == nil || d.Upper != nil {
		t.Errorf("detectable %+v", d)
	}
	if _, err := Parse("s.yaml", []byte("version: 1\ndesign: trial\nsolve: effect\nn: 200\ncontrol_risk: 0.3\nrisk_ratio: 1\nsides: 1\npower: 0.8\n"), nil); err == nil {
		t.Error("a one-sided effect solve without a direction was accepted")
	}
}

// TestReviewClusterZ: with method z a cluster plan still reaches the target
// in the cluster-level t test (t distribution on k1 + k2 − 2 df).
func TestReviewClusterZ(t *testing.T) {
	spec := "version: 1\ndesign: trial\noutcome: continuous\nmethod: z\nalpha: 0.042\nsides: 1\npower: 0.798\ncluster: {size: 31.7, icc: 0.147, size_cv: 0.17}\nmean_difference: 7.191\nsd: 8.11\n"
	res := mustPlan(t, spec)
	withT := mustPlan(t, strings.Replace(spec, "method: z", "method: t", 1))
	if res.Result.N[0] != withT.Result.N[0] || *res.Result.AchievedPower < 0.798 {
		t.Errorf("z cluster plan %v (power %v), t cluster plan %v", res.Result.N, *res.Result.AchievedPower, withT.Result.N)
	}
}
