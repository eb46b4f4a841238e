package designs

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"enough/power/reftable"
)

func num(t *testing.T, s string) float64 {
	t.Helper()
	if s == "Inf" {
		return math.Inf(1)
	}
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return x
}

func mustPlan(t *testing.T, spec string, sets ...string) *Result {
	t.Helper()
	s, err := Parse("test.yaml", []byte(spec), sets)
	if err != nil {
		t.Fatalf("Parse: %v\n%s", err, spec)
	}
	r, err := Plan(s)
	if err != nil {
		t.Fatalf("Plan: %v\n%s", err, spec)
	}
	return r
}

// TestPlanAgainstReference runs every row of binary_n.tsv through a whole
// specification and checks the rounded group sizes: first = ceil(n*),
// second = ceil(ratio × n*), with n* from the reference (R; the call or
// formula is in each row's source).
func TestPlanAgainstReference(t *testing.T) {
	for _, row := range reftable.Load(t, "binary_n.tsv") {
		var spec string
		if row["method"] == "schlesselman" {
			spec = fmt.Sprintf("version: 1\ndesign: case-control\ncontrol_exposure: %s\ncase_exposure: %s\n", row["p2"], row["p1"])
		} else {
			spec = fmt.Sprintf("version: 1\ndesign: trial\ncontrol_risk: %s\nintervention_risk: %s\n", row["p2"], row["p1"])
		}
		spec += fmt.Sprintf("method: %s\nratio: %s\nalpha: %s\nsides: %s\npower: %s\n",
			row["method"], row["ratio"], row["alpha"], row["sides"], row["power"])
		res := mustPlan(t, spec)
		nstar, r := num(t, row["n_star"]), num(t, row["ratio"])
		want := []int{int(math.Ceil(nstar)), int(math.Ceil(r * nstar))}
		got := res.Result.N
		if got[0] != want[0] || got[1] != want[1] || res.Result.Total != want[0]+want[1] {
			t.Errorf("%s: n = %v, want %v (%s)", row["id"], got, want, row["source"])
		}
		if *res.Result.AchievedPower < num(t, row["power"]) {
			t.Errorf("%s: achieved power %v below target", row["id"], *res.Result.AchievedPower)
		}
	}
}

// TestInflationOrder checks the documented order on a reference row:
// n* = 293.151285506487 (R power.prop.test(p1=0.2, p2=0.3, power=0.8),
// row n_ppt_01). By hand: ceil(293.1513 × 1.3 = 381.0967) = 382 analysable;
// ceil(382 / 0.85 = 449.41) = 450 to enrol; second group with ratio 2:
// ceil(586.3026 × 1.3 = 762.1933) = 763, ceil(763 / 0.85 = 897.65) = 898.
func TestInflationOrder(t *testing.T) {
	res := mustPlan(t, `version: 1
design: trial
control_risk: 0.3
intervention_risk: 0.2
method: fleiss
power: 0.8
design_effect: 1.3
attrition: 0.15
`)
	if got := res.Result; got.N[0] != 382 || got.Enrol[0] != 450 || got.EnrolTotal != 900 || got.Total != 764 {
		t.Errorf("got n %v enrol %v (total %d, %d), want [382 382] [450 450] (764, 900)", got.N, got.Enrol, got.Total, got.EnrolTotal)
	}
	res = mustPlan(t, `version: 1
design: trial
control_risk: 0.3
intervention_risk: 0.2
method: fleiss
power: 0.8
ratio: 2
design_effect: 1.3
attrition: 0.15
`)
	// n* for ratio 2 is row n_fleiss_02: 223.434500350965. By hand:
	// ceil(290.4649) = 291, ceil(580.9297) = 581; ceil(342.35) = 343,
	// ceil(683.45) = 684.
	if got := res.Result; got.N[0] != 291 || got.N[1] != 581 || got.Enrol[0] != 343 || got.Enrol[1] != 684 {
		t.Errorf("ratio 2: n %v enrol %v, want [291 581] [343 684]", got.N, got.Enrol)
	}
}

// TestPrecisionAgainstReference checks every row of precision.tsv
// (independent R implementation of Cochran 1977) through a specification.
func TestPrecisionAgainstReference(t *testing.T) {
	for _, row := range reftable.Load(t, "precision.tsv") {
		spec := fmt.Sprintf("version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: %s\nmargin: %s\nconfidence: %s\ndesign_effect: %s\nattrition: %s\n",
			row["p"], row["margin"], row["confidence"], row["deff"], row["nonresponse"])
		if row["population"] != "Inf" {
			spec += "population: " + row["population"] + "\n"
		}
		res := mustPlan(t, spec)
		if want := int(num(t, row["n_final"])); res.Result.EnrolTotal != want {
			t.Errorf("%s: enrol %d, want %d (%s)", row["id"], res.Result.EnrolTotal, want, row["source"])
		}
		if !(math.Abs(res.Result.N0-num(t, row["n0"])) < 1e-9*num(t, row["n0"])) {
			t.Errorf("%s: n0 %v, want %s", row["id"], res.Result.N0, row["n0"])
		}
	}
}

// TestCrossSectionalSplit checks that a cross-sectional comparison is the
// two-group formula with ratio (1 − e)/e. Reference: row n_fleiss_02 of
// binary_n.tsv has ratio 2, which is exposure_prevalence 1/3; its n* is
// 223.434500350965, so ceil(n*) = 224 exposed and ceil(2 n*) = 447
// unexposed.
func TestCrossSectionalSplit(t *testing.T) {
	res := mustPlan(t, `version: 1
design: cross-sectional
exposure_prevalence: 0.3333333333333333
unexposed_prevalence: 0.3
exposed_prevalence: 0.2
method: fleiss
power: 0.8
`)
	if got := res.Result.N; got[0] != 224 || got[1] != 447 || res.Result.Total != 671 {
		t.Errorf("n = %v (total %d), want [224 447] (671)", got, res.Result.Total)
	}
}

// TestRoundTrips checks the round trips on every example-like
// scenario: power at the solved n reaches the target, and solving effect at
// that n gives back about the planned effect (slightly smaller, since the
// sizes were rounded up).
func TestRoundTrips(t *testing.T) {
	for _, c := range []struct{ design, ref, effect string }{
		{"trial", "control_risk: 0.18", "risk_ratio: 0.7"},
		{"trial", "control_risk: 0.4", "risk_difference: 0.15"},
		{"cohort", "unexposed_risk: 0.06", "risk_ratio: 1.5"},
		{"cohort", "unexposed_risk: 0.2", "odds_ratio: 0.5"},
		{"case-control", "control_exposure: 0.2", "odds_ratio: 2"},
		{"case-control", "control_exposure: 0.35", "case_exposure: 0.2"},
	} {
		for _, method := range []string{"fleiss-cc", "fleiss", "kelsey"} {
			base := fmt.Sprintf("version: 1\ndesign: %s\n%s\n%s\nmethod: %s\npower: 0.85\nratio: 1.5\n", c.design, c.ref, c.effect, method)
			res := mustPlan(t, base)
			n := res.Result.N[0]
			pw := mustPlan(t, base, "solve=power", fmt.Sprintf("n=%d", n))
			if p := *pw.Result.AchievedPower; p < 0.85 {
				t.Errorf("%s %s %s: power at solved n %d is %v", c.design, c.effect, method, n, p)
			}
			key, val, _ := strings.Cut(c.effect, ": ")
			planned := num(t, val)
			if key == "case_exposure" || key == "exposed_risk" {
				planned = num(t, val)
			}
			ef := mustPlan(t, base, "solve=effect", fmt.Sprintf("n=%d", n))
			d := ef.Result.Detectable
			var got *float64
			if d.Lower != nil && d.Upper != nil {
				got = d.Lower
				if math.Abs(*d.Upper-planned) < math.Abs(*d.Lower-planned) {
					got = d.Upper
				}
			}
			if got == nil || math.Abs(*got-planned) > 0.02*math.Max(1, math.Abs(planned)) {
				t.Errorf("%s %s %s: detectable %v, planned %v", c.design, c.effect, method, d, planned)
			}
		}
	}
}

// TestEffectRestatement checks the restated effect against hand
// calculations (common practice: RR = p1/p2, RD = p1 − p2, OR = ad/bc,
// NNT = 1/|RD| rounded up).
func TestEffectRestatement(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.25\nrisk_difference: -0.1\npower: 0.8\n")
	e := res.Result.Effect
	// p1 = 0.15: RR = 0.6; OR = (0.15 × 0.75)/(0.25 × 0.85) = 0.1125/0.2125;
	// NNT = 1/0.1 = 10.
	if math.Abs(*e.FirstRisk-0.15) > 1e-15 || math.Abs(*e.RiskRatio-0.6) > 1e-12 ||
		math.Abs(*e.OddsRatio-0.1125/0.2125) > 1e-12 || *e.NNT != 10 {
		t.Errorf("trial effect %+v", e)
	}
	// A case-control study restates exposure and odds only.
	res = mustPlan(t, "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\npower: 0.8\n")
	e = res.Result.Effect
	if e.RiskRatio != nil || e.RiskDifference != nil || e.NNT != nil || e.FirstRisk != nil {
		t.Errorf("case-control effect has risk measures: %+v", e)
	}
	// Case odds = (1/3)/(2/3) = 0.5; control odds = 0.25; OR = 2.
	if math.Abs(*e.CaseOdds-0.5) > 1e-12 || math.Abs(*e.ControlOdds-0.25) > 1e-12 || math.Abs(*e.OddsRatio-2) > 1e-12 {
		t.Errorf("case-control odds %+v", e)
	}
	// NNT rounds up: RD = 0.03 gives 1/0.03 = 33.3, so 34.
	res = mustPlan(t, "version: 1\ndesign: cohort\nunexposed_risk: 0.06\nexposed_risk: 0.09\npower: 0.8\n")
	if got := *res.Result.Effect.NNT; got != 34 {
		t.Errorf("NNT = %d, want 34", got)
	}
}

// TestSolveEffectUnreachable: with 20 per group and a reference risk of
// 0.9, no risk above 0.9 reaches 80% power (row eff_fleiss_04 of
// binary_effect.tsv: p1_upper NA, p1_lower 0.507238266202217).
func TestSolveEffectUnreachable(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: cohort\nsolve: effect\nn: 20\nunexposed_risk: 0.9\nexposed_risk: 0.5\nmethod: fleiss\npower: 0.8\n")
	d := res.Result.Detectable
	if d.Upper != nil || d.Lower == nil || math.Abs(*d.Lower-0.507238266202217) > 1e-9 {
		t.Fatalf("detectable = %+v", d)
	}
	found := false
	for _, w := range res.Warnings {
		found = found || strings.Contains(w, "No effect above no difference")
	}
	if !found {
		t.Errorf("no warning for the unreachable direction: %q", res.Warnings)
	}
}

// TestMethodsDisagree checks the note when methods differ by more than
// one participant per group (a note: it needs no action), and its absence
// when they do not.
func TestMethodsDisagree(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nintervention_risk: 0.2\npower: 0.8\n")
	if !strings.Contains(strings.Join(res.Notes, " "), "methods differ by more than one participant") {
		t.Errorf("no disagreement note: %q", res.Notes)
	}
	if strings.Contains(strings.Join(res.Warnings, " "), "methods differ") {
		t.Errorf("disagreement between methods is a warning: %q", res.Warnings)
	}
	// Fleiss (294) and Kelsey (295): rows n_fleiss_01 and n_kelsey_01 differ
	// by one participant per group, below the threshold; schlesselman is
	// not applicable to a trial.
	res = mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nintervention_risk: 0.2\npower: 0.8\nmethod: fleiss\n")
	for _, w := range res.Notes {
		if strings.Contains(w, "Kelsey gives") {
			t.Errorf("Kelsey reported as disagreeing by one: %q", w)
		}
	}
}

// benchPlan measures Plan on one specification, parse excluded.
func benchPlan(b *testing.B, spec string) {
	s, err := Parse("bench.yaml", []byte(spec), nil)
	if err != nil {
		b.Fatal(err)
	}
	var sink *Result
	b.ReportAllocs()
	for b.Loop() {
		if sink, err = Plan(s); err != nil {
			b.Fatal(err)
		}
	}
	_ = sink
}

func BenchmarkPlan(b *testing.B) {
	benchPlan(b, "version: 1\ndesign: trial\ncontrol_risk: 0.18\nrisk_ratio: 0.7\npower: 0.8\nattrition: 0.1\n")
}

func BenchmarkPlanT(b *testing.B) {
	benchPlan(b, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 5\nsd: 12\npower: 0.9\nattrition: 0.1\n")
}

func BenchmarkPlanSurvival(b *testing.B) {
	benchPlan(b, "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.75\ncontrol_median: 12\naccrual: 24\nfollow_up: 12\ndropout: 0.01\npower: 0.8\n")
}

// BenchmarkPlanEffectCluster measures solving the detectable effect of a
// binary cluster trial with non-adherence: the search on the cluster-level
// t test's power in both directions.
func BenchmarkPlanEffectCluster(b *testing.B) {
	benchPlan(b, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 1\nsolve: effect\nn: 300\npower: 0.9\nnon_adherence: 0.1\ncluster: {size: 10, icc: 0.05}\n")
}

// BenchmarkPlanEffectT measures solving the detectable difference in means
// with the exact t power (and the z alternative).
func BenchmarkPlanEffectT(b *testing.B) {
	benchPlan(b, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 0\nsd: 10\nsolve: effect\nn: 80\npower: 0.9\nnon_adherence: 0.2\n")
}
