package designs

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// rateSpec writes a person-time cohort of a row of the R tables.
func rateSpec(row reftable.Row, extra string) string {
	return fmt.Sprintf("version: 1\ndesign: cohort\noutcome: rate\nunexposed_rate: %s\nrate_ratio: %s\nperson_time: %s\noverdispersion: %s\nalpha: %s\nsides: %s\n%s",
		row["lambda0"], row["rr"], row["t"], row["kappa"], row["alpha"], row["sides"], extra)
}

// Person-time cohorts against R (rates_n.tsv and rates_power.tsv,
// testdata/reference/rates_make.R: the Wald test on the log rate ratio,
// Breslow & Day 1987, Zhu & Lakkis 2014, its variance checked against
// glm's): the exposed group ceil(n1*), the unexposed ceil(ratio × n1*), and
// the power at given sizes. One row in 7 of each table keeps the test
// quick; every row's formula is the same.
func TestRatesAgainstReference(t *testing.T) {
	for i, row := range reftable.Load(t, "rates_n.tsv") {
		if i%7 != 0 {
			continue
		}
		res := mustPlan(t, rateSpec(row, fmt.Sprintf("ratio: %s\npower: %s\n", row["ratio"], row["power"])))
		n1 := row.F(t, "n1")
		want := []int{int(math.Ceil(n1 - 1e-9)), int(math.Ceil(row.F(t, "ratio")*n1 - 1e-9))}
		if got := res.Result.N; got[0] != want[0] || got[1] != want[1] {
			t.Errorf("%s: n %v, want %v (%s)", row["id"], got, want, row["source"])
		}
		if math.Abs(res.Result.NStar-n1) > 1e-9*n1 {
			t.Errorf("%s: n* %v, want %v", row["id"], res.Result.NStar, n1)
		}
	}
	checked := 0
	for i, row := range reftable.Load(t, "rates_power.tsv") {
		n1, n2 := row.F(t, "n1"), row.F(t, "n2")
		if i%7 != 0 || n1 > MaxSize || n2 > MaxSize || n1 != math.Trunc(n1) || n2 != math.Trunc(n2) {
			continue
		}
		res := mustPlan(t, rateSpec(row, fmt.Sprintf("solve: power\nn: %s\nn_second: %s\n", row["n1"], row["n2"])))
		if got, want := *res.Result.AchievedPower, row.F(t, "power"); math.Abs(got-want) > 1e-9 {
			t.Errorf("%s: power %v, want %v (%s)", row["id"], got, want, row["source"])
		}
		checked++
	}
	if checked < 50 {
		t.Errorf("only %d power rows checked", checked)
	}
}

// The expected events and person-time by hand: 400 and 800 participants
// followed 2.5 years, 0.02 events per year among the unexposed and a rate
// ratio of 1.5: person-time 1,000 and 2,000 years, events 1000 × 0.03 =
// 30 and 2000 × 0.02 = 40 (common practice arithmetic).
func TestRatesEvents(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: cohort\noutcome: rate\nunexposed_rate: 0.02\nrate_ratio: 1.5\nperson_time: 2.5\nsolve: power\nn: 400\nratio: 2\n")
	a := res.Result
	if a.PersonTime[0] != 1000 || a.PersonTime[1] != 2000 || math.Abs(a.GroupEvents[0]-30) > 1e-9 || math.Abs(a.GroupEvents[1]-40) > 1e-9 || math.Abs(*a.ExpectedEvents-70) > 1e-9 {
		t.Errorf("person-time %v, events %v (%v); want [1000 2000], [30 40] (70)", a.PersonTime, a.GroupEvents, *a.ExpectedEvents)
	}
	// Few events: a warning that points to the simulation.
	few := mustPlan(t, "version: 1\ndesign: cohort\noutcome: rate\nunexposed_rate: 0.002\nrate_ratio: 3\nperson_time: 1\nsolve: power\nn: 1000\n")
	if !strings.Contains(strings.Join(few.Warnings, " "), "enough simulate") {
		t.Errorf("no warning about few events: %q", few.Warnings)
	}
}

// The refusals of a person-time cohort, one line each naming the key.
func TestRatesRefused(t *testing.T) {
	base := "version: 1\ndesign: cohort\noutcome: rate\n"
	tests := []struct{ name, spec, want string }{
		{"trial", "version: 1\ndesign: trial\noutcome: rate\nunexposed_rate: 0.1\nrate_ratio: 2\nperson_time: 1\npower: 0.8\n", "design cohort"},
		{"no rate", base + "rate_ratio: 2\nperson_time: 1\npower: 0.8\n", "unexposed_rate"},
		{"no person-time", base + "unexposed_rate: 0.1\nrate_ratio: 2\npower: 0.8\n", "person_time"},
		{"ratio of one", base + "unexposed_rate: 0.1\nrate_ratio: 1\nperson_time: 1\npower: 0.8\n", "nothing to detect"},
		{"negative overdispersion", base + "unexposed_rate: 0.1\nrate_ratio: 2\nperson_time: 1\noverdispersion: -1\npower: 0.8\n", "overdispersion"},
		{"too many events", base + "unexposed_rate: 1000\nrate_ratio: 2\nperson_time: 1000\npower: 0.8\n", "10⁶ events"},
		{"risk key", base + "unexposed_risk: 0.1\nrate_ratio: 2\nperson_time: 1\npower: 0.8\n", "unexposed_risk"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("r.yaml", []byte(tt.spec), nil)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want one containing %q", err, tt.want)
			}
		})
	}
}
