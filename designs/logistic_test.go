package designs

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// A binary outcome and a continuous exposure against R
// (logistic_n.tsv and logistic_power.tsv, testdata/reference/
// logistic_make.R: Hsieh, Bloch & Larsen 1998, eq. 1, with R² dividing n
// by 1 − R²): ceil(n*) participants, one group; the power at n.
func TestLogisticAgainstReference(t *testing.T) {
	spec := func(row reftable.Row, design, extra string) string {
		s := fmt.Sprintf("version: 1\ndesign: %s\nexposure: continuous\nevent_rate: %s\nodds_ratio_per_sd: %s\nalpha: %s\nsides: %s\n%s",
			design, row["event_rate"], row["or"], row["alpha"], row["sides"], extra)
		if row["r2"] != "0" {
			s += "adjustment:\n  r_squared: " + row["r2"] + "\n"
		}
		return s
	}
	for i, row := range reftable.Load(t, "logistic_n.tsv") {
		design := []string{"cohort", "cross-sectional"}[i%2]
		res := mustPlan(t, spec(row, design, "power: "+row["power"]+"\n"))
		n := row.F(t, "n_hsieh1998")
		if want := int(math.Ceil(n - 1e-9)); len(res.Result.N) != 1 || res.Result.N[0] != want || res.Result.Total != want {
			t.Errorf("%s: n %v, want [%d] (%s)", row["id"], res.Result.N, want, row["source"])
		}
		if math.Abs(res.Result.NStar-n) > 1e-9*n {
			t.Errorf("%s: n* %v, want %v", row["id"], res.Result.NStar, n)
		}
	}
	for _, row := range reftable.Load(t, "logistic_power.tsv") {
		res := mustPlan(t, spec(row, "cohort", "solve: power\nn: "+row["n"]+"\n"))
		if got, want := *res.Result.AchievedPower, row.F(t, "power_hsieh1998"); math.Abs(got-want) > 1e-9 {
			t.Errorf("%s: power %v, want %v (%s)", row["id"], got, want, row["source"])
		}
	}
}

// The refusals of a continuous exposure, one line each naming the key.
func TestLogisticRefused(t *testing.T) {
	base := "version: 1\ndesign: cohort\nexposure: continuous\n"
	tests := []struct{ name, spec, want string }{
		{"no event rate", base + "odds_ratio_per_sd: 1.5\npower: 0.8\n", "event_rate"},
		{"no effect", base + "event_rate: 0.2\npower: 0.8\n", "odds_ratio_per_sd"},
		{"no relation", base + "event_rate: 0.2\nodds_ratio_per_sd: 1\npower: 0.8\n", "nothing to detect"},
		{"group key", base + "event_rate: 0.2\nodds_ratio_per_sd: 1.5\nratio: 2\npower: 0.8\n", "ratio"},
		{"risk key", base + "event_rate: 0.2\nodds_ratio_per_sd: 1.5\nunexposed_risk: 0.1\npower: 0.8\n", "unexposed_risk"},
		{"trial", "version: 1\ndesign: trial\nexposure: continuous\nevent_rate: 0.2\nodds_ratio_per_sd: 1.5\npower: 0.8\n", "exposure"},
		{"bad value", "version: 1\ndesign: cohort\nexposure: numeric\nevent_rate: 0.2\nodds_ratio_per_sd: 1.5\npower: 0.8\n", "groups or continuous"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("l.yaml", []byte(tt.spec), nil)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want one containing %q", err, tt.want)
			}
		})
	}
}
