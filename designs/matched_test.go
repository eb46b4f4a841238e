package designs

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// matchedSpec writes a matched case-control specification of a row of
// matched_closed.tsv.
func matchedSpec(row reftable.Row, method, solve string, extra string) string {
	return fmt.Sprintf("version: 1\ndesign: case-control\ncontrol_exposure: %s\nodds_ratio: %s\nmethod: %s\nsolve: %s\nalpha: %s\nsides: %s\npower: %s\nmatching:\n  controls_per_case: %s\n  exposure_correlation: %s\n%s",
		row["p0"], row["psi"], method, solve, row["alpha"], row["sides"], row["power"], row["M"], row["phi"], extra)
}

// Matched sets against the R evaluation of the published formulas
// (matched_closed.tsv, testdata/reference/matched_make.R): Dupont's
// sets (1988) for every M, Connor's (1987) and Schlesselman's (1982)
// pairs for M = 1, rounded up; the cases are the sets and the controls
// M × sets; the power at the table's n_at sets; and the sets expected to
// be discordant, n × the discordant probability of the row.
func TestMatchedAgainstReference(t *testing.T) {
	rows := 0
	for _, row := range reftable.Load(t, "matched_closed.tsv") {
		if row["feasible"] != "1" {
			continue
		}
		m := row.I(t, "M")
		methods := map[string][2]string{"dupont": {"dupont_sets", "dupont_power"}}
		if m == 1 {
			methods["connor"] = [2]string{"connor_pairs", "connor_power"}
			methods["schlesselman-pairs"] = [2]string{"schl_pairs", "schl_power"}
		}
		for method, cols := range methods {
			res := mustPlan(t, matchedSpec(row, method, "n", ""))
			sets := int(math.Ceil(row.F(t, cols[0]) - 1e-9))
			a := res.Result
			if a.Sets != sets || a.N[0] != sets || a.N[1] != m*sets || a.Total != (m+1)*sets {
				t.Errorf("%s %s: sets %d, n %v; want %d sets, [%d %d] (%s)", row["id"], method, a.Sets, a.N, sets, sets, m*sets, row["source"])
			}
			if math.Abs(a.NStar-row.F(t, cols[0])) > 1e-9*a.NStar {
				t.Errorf("%s %s: n* %v, want %v", row["id"], method, a.NStar, row.F(t, cols[0]))
			}
			want := float64(sets) * row.F(t, "discordant")
			if a.ExpectedDiscordantSets == nil || math.Abs(*a.ExpectedDiscordantSets-want) > 1e-9*want {
				t.Errorf("%s %s: discordant sets %v, want %v", row["id"], method, a.ExpectedDiscordantSets, want)
			}
			p := mustPlan(t, matchedSpec(row, method, "power", "n: "+row["n_at"]+"\n"))
			if got, want := *p.Result.AchievedPower, row.F(t, cols[1]); math.Abs(got-want) > 1e-9 {
				t.Errorf("%s %s: power at %s sets %v, want %v", row["id"], method, row["n_at"], got, want)
			}
			rows++
		}
	}
	if rows < 100 {
		t.Errorf("only %d matched cases checked", rows)
	}
}

// Attrition loses whole sets: 200 sets enrolled with 10% attrition leave
// floor(180) analysable cases, each with its M controls (common practice:
// a case lost takes its matched set with it).
func TestMatchedAttrition(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\nsolve: power\nn: 200\nattrition: 0.1\nmatching: {controls_per_case: 3}\n")
	if a := res.Result; a.N[0] != 180 || a.N[1] != 540 || a.Enrol[1] != 600 || a.Sets != 180 {
		t.Errorf("n %v enrol %v sets %d; want [180 540] [200 600] 180", a.N, a.Enrol, a.Sets)
	}
}

// The matching block's refusals, one line each naming the key.
func TestMatchedRefused(t *testing.T) {
	base := "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\npower: 0.8\n"
	tests := []struct{ name, spec, want string }{
		{"ratio", base + "ratio: 2\nmatching: {controls_per_case: 2}\n", "ratio"},
		{"too many controls", base + "matching: {controls_per_case: 11}\n", "matching.controls_per_case"},
		{"fraction of a control", base + "matching: {controls_per_case: 1.5}\n", "matching.controls_per_case"},
		{"missing controls", base + "matching: {exposure_correlation: 0.1}\n", "matching.controls_per_case"},
		{"correlation 1", base + "matching: {controls_per_case: 1, exposure_correlation: 1}\n", "matching.exposure_correlation"},
		// min(√2, 1/√2) = 0.7071 (Dupont's model; power.MaxMatchedCorrelation).
		{"correlation beyond the odds ratio", base + "matching: {controls_per_case: 1, exposure_correlation: 0.75}\n", "0.7071"},
		{"connor with three controls", base + "method: connor\nmatching: {controls_per_case: 3}\n", "one control per case"},
		{"unmatched method", base + "method: fleiss\nmatching: {controls_per_case: 1}\n", "method"},
		{"cohort", "version: 1\ndesign: cohort\nunexposed_risk: 0.2\nrisk_ratio: 2\npower: 0.8\nmatching: {controls_per_case: 1}\n", "matching"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("m.yaml", []byte(tt.spec), nil)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want one containing %q", err, tt.want)
			}
		})
	}
}

// A 1:1 plan reports the exact power of McNemar's test at its pairs in
// the method's reading: for dupont, row mcw_02 of
// matched_mcnemar_within.tsv (R's full double sum, matched_within_make.R):
// 0.80035032252775 at 251 pairs for p0 0.25, odds ratio 1.8, φ 0.15.
func TestMatchedMcNemarExact(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: case-control\ncontrol_exposure: 0.25\nodds_ratio: 1.8\nsolve: power\nn: 251\nmatching: {controls_per_case: 1, exposure_correlation: 0.15}\n")
	if p := res.Result.McNemarExactPower; p == nil || math.Abs(*p-0.80035032252775) > 1e-9 {
		t.Errorf("exact McNemar power %v, want 0.80035032252775", p)
	}
	three := mustPlan(t, "version: 1\ndesign: case-control\ncontrol_exposure: 0.25\nodds_ratio: 1.8\nsolve: power\nn: 251\nmatching: {controls_per_case: 3}\n")
	if three.Result.McNemarExactPower != nil {
		t.Error("a 1:3 plan reports McNemar's exact power")
	}
}
