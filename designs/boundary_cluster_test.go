package designs

import (
	"context"
	"errors"
	"strings"
	"testing"

	"enough/power"
)

// TestClusterCountsFitModel checks clusterCountsFit against the model it
// guards: power.NewClusterBinary must build every model it accepts and
// panic on every one it refuses, on both sides of the limit
// 2·K1·K2·max(K1, K2)·M² < 2⁶².
//
// The edges are worked by hand (2⁶¹ = 2,305,843,009,213,693,952):
// M = 18,000: K³ < 2⁶¹/18,000² = 7.117e9, K < 1,923.5;
// M = 1,000,000 (the largest cluster.size): K³ < 2.306e6, K < 132.1;
// K1 = 2, M = 1,000,000: 4·K2²·M² < 2⁶², K2 < 1,073.7;
// M = 1: 2K³ < 2⁶², K < 1,321,122.97.
// (Checked in exact integers with Python's decimal module, 50 digits.)
func TestClusterCountsFitModel(t *testing.T) {
	for _, tc := range []struct {
		k1, k2, m int
		fits      bool
	}{
		{1923, 1923, 18000, true},
		{1924, 1924, 18000, false},
		{8665, 8665, 18000, false}, // issue 9, item 7: cluster {size: 20000, icc: 0.05}, 10% attrition
		{132, 132, 1_000_000, true},
		{133, 133, 1_000_000, false},
		{2, 1073, 1_000_000, true},
		{2, 1074, 1_000_000, false},
		{1074, 2, 1_000_000, false},
		{1_321_122, 1_321_122, 1, true},
		{1_321_123, 1_321_123, 1, false},
	} {
		if got := clusterCountsFit(tc.k1, tc.k2, tc.m); got != tc.fits {
			t.Errorf("clusterCountsFit(%d, %d, %d) = %v, want %v", tc.k1, tc.k2, tc.m, got, tc.fits)
		}
		panicked := func() (p bool) {
			defer func() { p = recover() != nil }()
			power.NewClusterBinary(power.ClusterBinary{K1: tc.k1, K2: tc.k2, M: tc.m, P1: 0.15, P2: 0.2, ICC: 0.05, Alpha: 0.05, Sides: 2, Dir: -1})
			return false
		}()
		if panicked == tc.fits {
			t.Errorf("power.NewClusterBinary(K1 %d, K2 %d, M %d) panicked: %v; the check says fits: %v", tc.k1, tc.k2, tc.m, panicked, tc.fits)
		}
	}
}

// TestClusterSimulationTooLarge checks that a binary cluster trial too
// large for the model's whole-number arithmetic is refused as input
// (exit status 2) before a model is built, naming the limit and the most
// clusters that fit, while a continuous one (no whole counts) and the plan
// itself are unaffected.
func TestClusterSimulationTooLarge(t *testing.T) {
	const head = "version: 1\ndesign: trial\nattrition: 0.1\ncluster: {size: 20000, icc: 0.05}\npower: 0.8\n"
	for _, tc := range []struct {
		name, spec string
		want       []string // in the refusal; none: the simulation runs
	}{
		{"binary, 8,665 clusters of 18,000", head + "control_risk: 0.2\nrisk_ratio: 0.98\n",
			[]string{"8665 and 8665 clusters of 18000", "below 2^62", "at most 1923 clusters per arm of 18000 members"}},
		{"binary, 52 clusters of 18,000", head + "control_risk: 0.2\nrisk_ratio: 0.75\n", nil},
		{"continuous, 8,665-odd clusters", head + "outcome: continuous\nmean_difference: 0.0125\nsd: 1\n", nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Parse("cluster.yaml", []byte(tc.spec), nil)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Plan(s)
			if err != nil {
				t.Fatalf("the plan fails: %v", err)
			}
			ctx, cancel := context.WithCancel(context.Background())
			cancel() // nothing needs to run: a refusal comes before any replicate
			err = Verify(ctx, s, res, SimOptions{Replicates: 100, Workers: 1})
			var ie *InputError
			if tc.want == nil {
				if errors.As(err, &ie) {
					t.Fatalf("refused: %v", err)
				}
				return
			}
			if !errors.As(err, &ie) {
				t.Fatalf("got %v (%T), want an *InputError", err, err)
			}
			for _, w := range tc.want {
				if !strings.Contains(ie.Msg, w) {
					t.Errorf("the refusal does not say %q:\n%s", w, ie.Msg)
				}
			}
		})
	}
}
