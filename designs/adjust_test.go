package designs

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// Adjustment for covariates inflates the method's n* by 1/(1 − R²)
// (Hsieh, Bloch & Larsen 1998, Stat Med 17:1623–1634): every row of
// binary_n.tsv (n* from independent R implementations of the methods,
// make_binary.R) with R² 0.2 and 0.5 gives n* / (1 − R²), rounded up as
// any n*.
func TestAdjustmentInflatesReference(t *testing.T) {
	for _, row := range reftable.Load(t, "binary_n.tsv") {
		if row["method"] == "schlesselman" || row["method"] == "fleiss-cc" {
			continue // fleiss-cc's correction matches Yates' test, not a regression's: refused with adjustment
		}
		for _, r2 := range []float64{0.2, 0.5} {
			spec := fmt.Sprintf("version: 1\ndesign: trial\ncontrol_risk: %s\nintervention_risk: %s\nmethod: %s\nratio: %s\nalpha: %s\nsides: %s\npower: %s\nadjustment:\n  r_squared: %g\n",
				row["p2"], row["p1"], row["method"], row["ratio"], row["alpha"], row["sides"], row["power"], r2)
			res := mustPlan(t, spec)
			nstar := num(t, row["n_star"]) / (1 - r2)
			r := num(t, row["ratio"])
			want := []int{int(math.Ceil(nstar - 1e-9)), int(math.Ceil(r*nstar - 1e-9))}
			if got := res.Result.N; got[0] != want[0] || got[1] != want[1] {
				t.Errorf("%s, R² %g: n = %v, want %v (%s)", row["id"], r2, got, want, row["source"])
			}
			if math.Abs(res.Result.NStar-nstar) > 1e-9*nstar {
				t.Errorf("%s, R² %g: n* = %v, want %v", row["id"], r2, res.Result.NStar, nstar)
			}
			if res.Test != "logistic-wald" {
				t.Errorf("%s: test %q, want logistic-wald", row["id"], res.Test)
			}
		}
	}
}

// With R² = 0.5 an adjusted analysis of 2n participants has the power of
// an unadjusted one of n: the power rows of binary_power.tsv (independent
// R implementations, make_binary.R) at twice their sizes, and a t test's
// power from R's power.t.test (sweep_means.tsv) likewise.
func TestAdjustmentPowerReference(t *testing.T) {
	for _, row := range reftable.Load(t, "binary_power.tsv") {
		if row["method"] == "schlesselman" || row["method"] == "exact" || row["method"] == "fleiss-cc" {
			continue
		}
		n1, n2 := int(num(t, row["n1"])), int(num(t, row["n2"]))
		spec := fmt.Sprintf("version: 1\ndesign: trial\ncontrol_risk: %s\nintervention_risk: %s\nmethod: %s\nsolve: power\nn: %d\nn_second: %d\nalpha: %s\nsides: %s\nadjustment:\n  r_squared: 0.5\n",
			row["p2"], row["p1"], row["method"], 2*n1, 2*n2, row["alpha"], row["sides"])
		res := mustPlan(t, spec)
		if want := num(t, row["power"]); math.Abs(*res.Result.AchievedPower-want) > 1e-9 {
			t.Errorf("%s: power %v, want %v (%s)", row["id"], *res.Result.AchievedPower, want, row["source"])
		}
	}
	for _, row := range reftable.Load(t, "sweep_means.tsv") {
		if row["grid"] != "means_n" {
			continue
		}
		vals := map[string]string{}
		for _, part := range strings.Split(row["point"]+";"+row["fixed"], ";") {
			k, v, _ := strings.Cut(part, "=")
			vals[k] = v
		}
		n := int(num(t, row["n1"]))
		spec := fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nsd: %s\nmean_difference: %s\nalpha: %s\nsolve: power\nn: %d\nadjustment:\n  r_squared: 0.5\n",
			vals["sd"], vals["mean_difference"], vals["alpha"], 2*n)
		res := mustPlan(t, spec)
		if want := num(t, row["power"]); math.Abs(*res.Result.AchievedPower-want) > 1e-9 {
			t.Errorf("means row %s: power %v, want %v (%s)", row["index"], *res.Result.AchievedPower, want, row["power_source"])
		}
		if res.Test != "t-regression" {
			t.Errorf("means: test %q, want t-regression", res.Test)
		}
	}
}

// The adjustment's refusals, each one line naming the key.
func TestAdjustmentRefused(t *testing.T) {
	base := "version: 1\ndesign: trial\ncontrol_risk: 0.3\nintervention_risk: 0.2\npower: 0.8\n"
	tests := []struct {
		name, spec, want string
	}{
		{"out of range", base + "adjustment:\n  r_squared: 1\n", "adjustment.r_squared"},
		{"missing", base + "adjustment:\n  r2: 0.2\n", "adjustment"},
		{"exact", base + "method: exact\nadjustment:\n  r_squared: 0.2\n", "method exact"},
		{"cluster", base + "cluster:\n  size: 20\n  icc: 0.05\nadjustment:\n  r_squared: 0.2\n", "cluster trial"},
		{"survival", "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\npower: 0.8\nadjustment:\n  r_squared: 0.2\n", "adjustment"},
		{"test", base + "test: fisher\nadjustment:\n  r_squared: 0.2\n", "logistic-wald"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("adj.yaml", []byte(tt.spec), nil)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want one containing %q", err, tt.want)
			}
			if !strings.Contains(err.Error(), "adj.yaml") {
				t.Errorf("error %q does not name the file", err)
			}
		})
	}
}
