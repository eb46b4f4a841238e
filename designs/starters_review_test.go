package designs

import (
	"regexp"
	"slices"
	"strings"
	"testing"
)

// reviewPlaceholder is a placeholder of a review starter, with the value
// it suggests.
var reviewPlaceholder = regexp.MustCompile(`"\[as stated, e\.g\. ([^\]]+)\]"`)

// TestReviewStarterDesignEffect: no review starter gives design_effect
// uncommented (stated, even as 1, it marks the element as given for an
// individually randomised trial); each offers it commented out with a
// note; the trial starters with claimed.clusters offer a commented cluster
// block which, uncommented and filled in, is read; the precision survey's
// starter offers no tolerance_power.
func TestReviewStarterDesignEffect(t *testing.T) {
	for _, c := range []struct {
		design, goal, outcome string
		// designEffect: the starter offers design_effect (commented);
		// cluster: it offers the cluster block.
		designEffect, cluster bool
	}{
		{"trial", "", "", true, true},
		{"trial", "", "continuous", false, true},
		{"trial", "", "time-to-event", false, false},
		{"cross-sectional", "", "", true, false},
		{"cross-sectional", "precision", "", true, false},
		{"cross-sectional", "", "continuous", true, false},
		{"cohort", "", "", false, false},
		{"case-control", "", "", false, false},
	} {
		data, err := ReviewStarter(c.design, c.goal, c.outcome)
		if err != nil {
			t.Fatal(err)
		}
		text := string(data)
		name := c.design + "/" + c.goal + "/" + c.outcome
		if regexp.MustCompile(`(?m)^design_effect:`).MatchString(text) {
			t.Errorf("%s: design_effect offered uncommented", name)
		}
		if got := strings.Contains(text, "\n# design_effect: "); got != c.designEffect {
			t.Errorf("%s: commented design_effect offered %v, want %v", name, got, c.designEffect)
		}
		if c.designEffect && !strings.Contains(text, "\n# Only for a cluster") {
			t.Errorf("%s: no note on when design_effect applies", name)
		}
		if got := strings.Contains(text, "\n# cluster:\n#   size: ") && strings.Contains(text, "\n#   icc: "); got != c.cluster {
			t.Errorf("%s: commented cluster block offered %v, want %v", name, got, c.cluster)
		}
		if got, want := strings.Contains(text, "tolerance_power"), c.goal != "precision"; got != want {
			t.Errorf("%s: tolerance_power offered %v, want %v", name, got, want)
		}
		if strings.Count(text, "cluster:") > 1 {
			t.Errorf("%s: the cluster block is offered twice", name)
		}

		// Filled in as it stands: the design effect is not reported as given.
		filled := reviewPlaceholder.ReplaceAllString(text, "$1")
		in, err := ParseReview("starter.yaml", []byte(filled), nil)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if slices.Contains(in.Given, "design_effect") || slices.Contains(in.Missing, "design_effect") {
			t.Errorf("%s: design_effect is an element of an individually randomised plan: given %q, missing %q", name, in.Given, in.Missing)
		}
		if !c.cluster {
			continue
		}
		// The cluster block and claimed.clusters uncommented: a cluster
		// trial, its clustering stated.
		for _, l := range []string{"# cluster:", "#   size: ", "#   icc: ", "  # clusters: "} {
			filled = strings.Replace(filled, "\n"+l, "\n"+strings.Replace(l, "# ", "", 1), 1)
		}
		in, err = ParseReview("starter.yaml", []byte(filled), nil)
		if err != nil {
			t.Fatalf("%s with its cluster block: %v", name, err)
		}
		if in.Spec == nil || in.Spec.Cluster == nil || in.Spec.Cluster.Size != 20 || in.Spec.Cluster.ICC != 0.05 || in.Claimed.Clusters != 12 {
			t.Errorf("%s: cluster block not read: %+v, clusters %d", name, in.Spec, in.Claimed.Clusters)
		}
		if !slices.Contains(in.Given, "design_effect") {
			t.Errorf("%s: the clustering is stated, yet design_effect is not given: %q", name, in.Given)
		}
	}
}

// TestReviewStarterInterim: every trial's review starter offers the interim
// block commented out with placeholders; uncommented and left unfilled,
// each placeholder is named as one (the cluster block's too); filled in, it
// plans a group-sequential trial.
func TestReviewStarterInterim(t *testing.T) {
	uncomment := func(text string, lines ...string) string {
		for _, l := range lines {
			text = strings.Replace(text, "\n"+l, "\n"+strings.Replace(l, "# ", "", 1), 1)
		}
		return text
	}
	for _, outcome := range []string{"", "continuous", "time-to-event"} {
		data, err := ReviewStarter("trial", "", outcome)
		if err != nil {
			t.Fatal(err)
		}
		text := uncomment(string(data), "# interim:", "#   looks: ", "#   boundary: ")
		_, err = ParseReview("starter.yaml", []byte(text), nil)
		if err == nil {
			t.Fatalf("%s: unfilled placeholders accepted", outcome)
		}
		for _, key := range []string{"interim.looks", "interim.boundary"} {
			if !strings.Contains(err.Error(), key+`: "[as stated, e.g. `) || !strings.Contains(err.Error(), "placeholder still to fill in") {
				t.Errorf("%s: %s's placeholder not named as one: %v", outcome, key, err)
			}
		}
		in, err := ParseReview("starter.yaml", []byte(reviewPlaceholder.ReplaceAllString(text, "$1")), nil)
		if err != nil {
			t.Fatalf("%s filled in: %v", outcome, err)
		}
		if iv := in.Spec.Interim; iv == nil || iv.Looks != 3 || iv.Boundary != "obrien-fleming" {
			t.Errorf("%s: interim block not read: %+v", outcome, iv)
		}
		if outcome == "" {
			text = uncomment(string(data), "# cluster:", "#   size: ", "#   icc: ")
			if _, err := ParseReview("starter.yaml", []byte(text), nil); err == nil || !strings.Contains(err.Error(), `cluster.icc: "[as stated, e.g. 0.05]" is a placeholder still to fill in`) {
				t.Errorf("the cluster block's placeholder: %v", err)
			}
		}
	}
}
