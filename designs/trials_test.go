package designs

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// TestSurvivalPlan runs the rows of trials_survival.tsv that convert events
// into participants (independent R implementation of Schoenfeld 1983 and
// Freedman 1982 with the exact event probability; see trials_README.md)
// through whole specifications: the events D, reported as ceil(D), then
// n1* = D/(P1 + ratio P2) with the table's event probabilities, first arm
// ceil(n1*), second ceil(ratio n1*).
func TestSurvivalPlan(t *testing.T) {
	rows := 0
	for _, row := range reftable.Load(t, "trials_survival.tsv") {
		if math.IsNaN(row.F(t, "n1_star")) {
			continue
		}
		rows++
		spec := fmt.Sprintf("version: 1\ndesign: trial\noutcome: time-to-event\nmethod: %s\nhazard_ratio: %s\nratio: %s\nalpha: %s\nsides: %s\npower: %s\nfollow_up: %s\n",
			row["method"], row["hr"], row["ratio"], row["alpha"], row["sides"], row["power"], row["follow_up"])
		if row["control_median"] != "NA" {
			spec += "control_median: " + row["control_median"] + "\n"
		} else {
			spec += "control_survival: " + row["control_survival"] + "\ntime: " + row["time"] + "\n"
		}
		if row["accrual"] != "NA" {
			spec += "accrual: " + row["accrual"] + "\n"
		}
		if row["dropout"] != "NA" {
			spec += "dropout: " + row["dropout"] + "\n"
		}
		res := mustPlan(t, spec)
		r := row.F(t, "ratio")
		n1 := row.F(t, "events") / (row.F(t, "p_event_intervention") + r*row.F(t, "p_event_control"))
		want := []int{int(math.Ceil(n1)), int(math.Ceil(r * n1))}
		if got := res.Result.N; got[0] != want[0] || got[1] != want[1] {
			t.Errorf("%s: n = %v, want %v (%s)", row["id"], got, want, row["source"])
		}
		if got, want := res.Result.Events, int(math.Ceil(row.F(t, "events"))); got != want {
			t.Errorf("%s: events = %d, want %d", row["id"], got, want)
		}
		if p := *res.Result.AchievedPower; p < row.F(t, "power") {
			t.Errorf("%s: achieved power %v below target", row["id"], p)
		}
	}
	if rows < 5 {
		t.Fatalf("only %d rows with participants", rows)
	}
	// Common practice: about 380 events for a hazard ratio of 0.75, two-sided
	// alpha 0.05, 80% power, 1:1 (Schoenfeld's formula gives 379.35).
	res := mustPlan(t, "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.75\ncontrol_median: 12\nfollow_up: 24\npower: 0.8\n")
	if res.Result.Events != 380 {
		t.Errorf("events = %d, want 380", res.Result.Events)
	}
	if d := *res.Result.Duration; d != 24 {
		t.Errorf("duration = %v, want 24 (no accrual, 24 of follow-up)", d)
	}
}

// TestMeansPlan runs the rows of trials_t.tsv that solve n with both tails
// counted (R power.t.test(..., strict=TRUE, tol=1e-10); the call is in each
// row's source) through whole specifications.
func TestMeansPlan(t *testing.T) {
	rows := 0
	for _, row := range reftable.Load(t, "trials_t.tsv") {
		if row["solve"] != "n" || (row["strict"] != "TRUE" && row["alternative"] == "two.sided") {
			continue
		}
		rows++
		sides := "2"
		if row["alternative"] == "one.sided" {
			sides = "1"
		}
		var spec string
		switch row["type"] {
		case "two.sample":
			spec = fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nmean_difference: %s\nsd: %s\n", row["delta"], row["sd"])
		default:
			spec = fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\npairing: paired\nmean_difference: %s\nsd_difference: %s\n", row["delta"], row["sd"])
		}
		spec += fmt.Sprintf("alpha: %s\nsides: %s\npower: %s\nmethod: t\n", row["sig_level"], sides, row["power"])
		res := mustPlan(t, spec)
		want := int(math.Ceil(row.F(t, "n")))
		if got := res.Result.N[0]; got != want {
			t.Errorf("%s: n = %v, want %d (%s)", row["id"], res.Result.N, want, row["source"])
		}
		if math.Abs(res.Result.NStar-row.F(t, "n")) > 1e-6*row.F(t, "n") {
			t.Errorf("%s: n* = %.10g, want %s", row["id"], res.Result.NStar, row["n"])
		}
	}
	if rows < 4 {
		t.Fatalf("only %d rows", rows)
	}
}

// TestNonInferiorityPlan runs trials_fm.tsv (independent R implementation of
// Farrington & Manning 1990 and Blackwelder 1982) through specifications.
func TestNonInferiorityPlan(t *testing.T) {
	for _, row := range reftable.Load(t, "trials_fm.tsv") {
		d0 := row.F(t, "d0")
		higher := d0 < 0
		spec := fmt.Sprintf("version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: %v\nmargin: %v\ncontrol_risk: %s\nmethod: %s\nratio: %s\nalpha: %s\nsides: 1\npower: %s\n",
			higher, math.Abs(d0), row["p2"], row["method"], row["ratio"], row["alpha"], row["power"])
		if row["p1"] != row["p2"] {
			spec += "intervention_risk: " + row["p1"] + "\n"
		}
		n1, r := row.F(t, "n1_star"), row.F(t, "ratio")
		want := []int{int(math.Ceil(n1)), int(math.Ceil(r * n1))}
		// No true difference may also be stated explicitly, on any scale.
		extras := []string{""}
		if row["p1"] == row["p2"] {
			extras = append(extras, "intervention_risk: "+row["p2"]+"\n", "risk_difference: 0\n", "risk_ratio: 1\n", "odds_ratio: 1\n")
		}
		for _, extra := range extras {
			res := mustPlan(t, spec+extra)
			if got := res.Result.N; got[0] != want[0] || got[1] != want[1] {
				t.Errorf("%s %s: n = %v, want %v (%s)", row["id"], strings.TrimSpace(extra), got, want, row["source"])
			}
		}
	}
}

// TestClusterDesignEffect checks the design effects by hand (Donner & Klar
// 2000; Eldridge, Ashby & Kerry 2006) and the cluster counts.
func TestClusterDesignEffect(t *testing.T) {
	base := "version: 1\ndesign: trial\ncontrol_risk: 0.55\nintervention_risk: 0.65\nmethod: fleiss\npower: 0.8\n"
	// 1 + (20 − 1) 0.05 = 1.95.
	res := mustPlan(t, base+"cluster: {size: 20, icc: 0.05}\n")
	if de := *res.Result.DesignEffect; math.Abs(de-1.95) > 1e-12 {
		t.Errorf("design effect %v, want 1.95", de)
	}
	// 1 + ((0.4² + 1) 40 − 1) 0.03 = 1 + 45.4 × 0.03 = 2.362.
	res = mustPlan(t, base+"cluster: {size: 40, icc: 0.03, size_cv: 0.4}\n")
	if de := *res.Result.DesignEffect; math.Abs(de-2.362) > 1e-12 {
		t.Errorf("design effect %v, want 2.362", de)
	}
	a := res.Result
	for i := range 2 {
		if want := int(math.Ceil(float64(a.N[i]) / 40)); a.Clusters[i] != want || a.WholeClusters[i] != 40*want {
			t.Errorf("arm %d: %d participants, %d clusters, %d whole: want %d clusters", i, a.N[i], a.Clusters[i], a.WholeClusters[i], want)
		}
	}
	// At least ceil(n* × DE): n* is row n_fleiss-style for 0.65 against 0.55
	// (uncorrected Fleiss), checked here against the ICC-free plan.
	plain := mustPlan(t, base)
	if lo := int(math.Ceil(plain.Result.NStar * 2.362)); a.N[0] < lo {
		t.Errorf("cluster n %d below ceil(n* × DE) = %d", a.N[0], lo)
	}
	if p := *a.AchievedPower; p < 0.8 {
		t.Errorf("cluster-t power %v below target", p)
	}
	// Few clusters draw a warning.
	res = mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.2\nintervention_risk: 0.6\npower: 0.8\ncluster: {size: 50, icc: 0.01}\n")
	if !strings.Contains(strings.Join(res.Warnings, " "), "fewer than about 6") {
		t.Errorf("no few-clusters warning: %q", res.Warnings)
	}
}

// TestDilution checks the intention-to-treat dilution of Lachin & Foulkes
// (1986) by hand: risks 0.2 against 0.3 with 10% non-adherence and 5%
// contamination become 0.9 × 0.2 + 0.1 × 0.3 = 0.21 and 0.95 × 0.3 +
// 0.05 × 0.2 = 0.295; a mean difference of 4 becomes 4 × 0.85 = 3.4; a
// hazard ratio of 0.7 becomes 0.7^0.85.
func TestDilution(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nintervention_risk: 0.2\nnon_adherence: 0.1\ncontamination: 0.05\npower: 0.8\n")
	d := res.Result.DilutedEffect
	if math.Abs(*d.FirstRisk-0.21) > 1e-12 || math.Abs(*d.SecondRisk-0.295) > 1e-12 {
		t.Errorf("diluted risks %v %v", *d.FirstRisk, *d.SecondRisk)
	}
	if res.Result.UndilutedN[0] >= res.Result.N[0] {
		t.Errorf("dilution did not cost participants: %v against %v", res.Result.UndilutedN, res.Result.N)
	}
	res = mustPlan(t, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 4\nsd: 10\nnon_adherence: 0.1\ncontamination: 0.05\npower: 0.8\n")
	if got := *res.Result.DilutedEffect.MeanDifference; math.Abs(got-3.4) > 1e-12 {
		t.Errorf("diluted mean difference %v, want 3.4", got)
	}
	res = mustPlan(t, "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 10\nfollow_up: 20\nnon_adherence: 0.1\ncontamination: 0.05\npower: 0.8\n")
	if got, want := *res.Result.DilutedEffect.HazardRatio, math.Pow(0.7, 0.85); math.Abs(got-want) > 1e-12 {
		t.Errorf("diluted hazard ratio %v, want %v", got, want)
	}
}

// TestArms checks the Bonferroni split and the totals of several arms.
func TestArms(t *testing.T) {
	three := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.55\nrisk_difference: 0.06\npower: 0.8\narms: 3\n")
	two := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.55\nrisk_difference: 0.06\npower: 0.8\nalpha: 0.025\n")
	a := three.Result
	if *a.AlphaPerComparison != 0.025 || a.Comparisons != 2 {
		t.Errorf("alpha per comparison %v over %d comparisons, want 0.025 over 2", *a.AlphaPerComparison, a.Comparisons)
	}
	if a.N[0] != two.Result.N[0] || a.Total != 2*a.N[0]+a.N[1] {
		t.Errorf("three arms n %v total %d; two arms at alpha 0.025 n %v", a.N, a.Total, two.Result.N)
	}
	// All pairs of 4 arms: 6 comparisons, 4 equal arms.
	four := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.55\nrisk_difference: 0.06\npower: 0.8\narms: 4\ncomparisons: all-pairs\n")
	if f := four.Result; f.Comparisons != 6 || math.Abs(*f.AlphaPerComparison-0.05/6) > 1e-15 || f.Total != 4*f.N[0] {
		t.Errorf("all pairs: %d comparisons, alpha %v, total %d for n %v", f.Comparisons, *f.AlphaPerComparison, f.Total, f.N)
	}
}

// TestTrialErrors covers the bad input of the trial keys.
func TestTrialErrors(t *testing.T) {
	cont := "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 2\nsd: 5\npower: 0.8\n"
	tte := "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\nfollow_up: 12\npower: 0.8\n"
	ni := "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: true\nmargin: 0.1\ncontrol_risk: 0.8\npower: 0.8\n"
	for _, c := range []struct {
		name, spec, key, msg string
	}{
		{"sd negative", strings.Replace(cont, "sd: 5", "sd: -5", 1), "sd", "out of range"},
		{"sd and sd_first", cont + "sd_first: 4\n", "sd_first", "given together with sd"},
		{"no sd", strings.Replace(cont, "sd: 5\n", "", 1), "sd", "missing"},
		{"zero difference", strings.Replace(cont, "mean_difference: 2", "mean_difference: 0", 1), "mean_difference", "nothing to detect"},
		{"one mean only", strings.Replace(cont, "mean_difference: 2", "control_mean: 10", 1), "intervention_mean", "go together"},
		{"paired with ratio", cont + "pairing: paired\nratio: 2\n", "ratio", "does not apply to a paired design"},
		{"paired without sd_difference", strings.Replace(cont, "sd: 5\n", "", 1) + "pairing: paired\n", "sd_difference", "missing"},
		{"within correlation", cont + "pairing: paired\nwithin_correlation: 1\n", "within_correlation", "out of range"},
		{"crossover in cohort", "version: 1\ndesign: cohort\noutcome: continuous\npairing: crossover\n", "pairing", "applies to design trial"},
		{"continuous case-control", "version: 1\ndesign: case-control\noutcome: continuous\n", "outcome", "does not apply to a case-control"},
		{"hazard ratio 1", strings.Replace(tte, "hazard_ratio: 0.7", "hazard_ratio: 1", 1), "hazard_ratio", "nothing to detect"},
		{"dropout and attrition", tte + "attrition: 0.1\n", "attrition", "dropout"},
		{"no follow-up", strings.Replace(tte, "follow_up: 12\n", "", 1), "follow_up", "missing"},
		{"median and survival", tte + "control_survival: 0.5\ntime: 12\n", "control_survival", "given together with control_median"},
		{"dropout 1", tte + "dropout: 1\n", "dropout", "out of range"},
		{"tte in cohort", "version: 1\ndesign: cohort\noutcome: time-to-event\n", "outcome", "applies to design trial"},
		{"margin negative", strings.Replace(ni, "margin: 0.1", "margin: -0.1", 1), "margin", "positive"},
		{"margin missing", strings.Replace(ni, "margin: 0.1\n", "", 1), "margin", "missing"},
		{"direction missing", strings.Replace(ni, "higher_is_better: true\n", "", 1), "higher_is_better", "missing"},
		{"direction not bool", strings.Replace(ni, "higher_is_better: true", "higher_is_better: maybe", 1), "higher_is_better", "not true or false"},
		{"true difference beyond margin", ni + "intervention_risk: 0.65\n", "intervention_risk", "no sample size can show non-inferiority"},
		{"two-sided non-inferiority", ni + "sides: 2\n", "sides", "one-sided"},
		{"sides in equivalence", strings.Replace(ni, "non-inferiority", "equivalence", 1) + "sides: 1\n", "sides", "equivalence"},
		{"outside equivalence margin", strings.Replace(ni, "non-inferiority", "equivalence", 1) + "intervention_risk: 0.95\n", "intervention_risk", "outside the equivalence margin"},
		{"margin in superiority", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\nmargin: 0.1\n", "margin", "non-inferiority or equivalence"},
		{"cluster and design effect", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster: {size: 20, icc: 0.05}\ndesign_effect: 2\n", "design_effect", "one of cluster and design_effect"},
		{"cluster icc 1", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster: {size: 20, icc: 1}\n", "cluster.icc", "out of range"},
		{"cluster unknown key", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster: {size: 20, icc: 0.1, sise_cv: 1}\n", "cluster.sise_cv", `did you mean "size_cv"`},
		{"cluster size missing", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster: {icc: 0.1}\n", "cluster.size", "missing"},
		{"adherence sum", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\nnon_adherence: 0.6\ncontamination: 0.4\n", "contamination", "below 1"},
		{"arms 1", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\narms: 1\n", "arms", "2 to 20"},
		{"all pairs ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\narms: 3\ncomparisons: all-pairs\nratio: 2\n", "ratio", "all-pairs"},
		{"test misfit", cont + "test: log-rank\n", "test", "allowed: t-student or t-welch"},
		{"method misfit", tte + "method: t\n", "method", "does not fit"},
	} {
		_, err := Parse("s.yaml", []byte(c.spec), nil)
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: err = %v, want *SpecError", c.name, err)
			continue
		}
		if se.Key != c.key || !strings.Contains(se.Msg, c.msg) {
			t.Errorf("%s: got key %q msg %q; want key %q msg containing %q", c.name, se.Key, se.Msg, c.key, c.msg)
		}
	}
}

// TestRatioMarginPlan runs ratio_n.tsv (independent R implementation of the
// Farrington & Manning 1990 score method on the risk-ratio scale, restricted
// MLE by numerical maximisation; see ratio_README.md) through
// specifications with margin_scale: ratio: first group ceil(n*), second
// ceil(ratio n*).
func TestRatioMarginPlan(t *testing.T) {
	rows := 0
	for _, row := range reftable.Load(t, "ratio_n.tsv") {
		if row["n1_star"] == "NA" {
			continue
		}
		bound := row.F(t, "bound")
		hyp := map[string]string{"noninferiority": "non-inferiority", "equivalence": "equivalence"}[row["kind"]]
		if hyp == "" {
			continue
		}
		spec := fmt.Sprintf("version: 1\ndesign: trial\nhypothesis: %s\nmargin_scale: ratio\nmargin: %s\nhigher_is_better: %v\ncontrol_risk: %s\nintervention_risk: %s\nratio: %s\nalpha: %s\npower: %s\n",
			hyp, row["bound"], bound < 1, row["p2"], row["p1"], row["ratio"], row["alpha"], row["power"])
		res := mustPlan(t, spec)
		n1, r := row.F(t, "n1_star"), row.F(t, "ratio")
		want := []int{int(math.Ceil(n1)), int(math.Ceil(r * n1))}
		if got := res.Result.N; got[0] != want[0] || got[1] != want[1] {
			t.Errorf("%s: n = %v, want %v (%s)", row["id"], got, want, row["source"])
		}
		if math.Abs(res.Result.NStar-n1) > 1e-9*n1 {
			t.Errorf("%s: n* = %.12g, want %.12g", row["id"], res.Result.NStar, n1)
		}
		rows++
	}
	if rows < 10 {
		t.Fatalf("only %d rows", rows)
	}
}

// TestSurvivalMarginPlan runs survmargin_events.tsv (independent R
// implementation of Schoenfeld 1983 with a log hazard-ratio margin, and of
// two one-sided tests for equivalence; see survmargin_README.md) through
// specifications: the events required are ceil(D) of the table's D, and
// the power at the plan's expected events reaches the target. Rows whose
// events are NA (the true ratio at or beyond the margin) must be refused.
func TestSurvivalMarginPlan(t *testing.T) {
	rows := 0
	for _, row := range reftable.Load(t, "survmargin_events.tsv") {
		hyp := map[string]string{"ni": "non-inferiority", "eq": "equivalence"}[row["test"]]
		m := row.F(t, "margin")
		if row.F(t, "alpha") > 0.5 || row.F(t, "power") <= row.F(t, "alpha") {
			continue // engine-only rows: a specification refuses these settings
		}
		spec := fmt.Sprintf("version: 1\ndesign: trial\noutcome: time-to-event\nhypothesis: %s\nmargin: %s\nhigher_is_better: %v\nhazard_ratio: %s\nratio: %s\nalpha: %s\npower: %s\ncontrol_median: 12\nfollow_up: 24\n",
			hyp, row["margin"], hyp == "non-inferiority" && m < 1, row["hr"], row["ratio"], row["alpha"], row["power"])
		s, err := Parse("test.yaml", []byte(spec), nil)
		if row["events"] == "NA" {
			if err == nil {
				if _, err = Plan(s); err == nil {
					t.Errorf("%s: planned, want a refusal (%s)", row["id"], row["note"])
				}
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", row["id"], err)
			continue
		}
		res, err := Plan(s)
		if err != nil {
			t.Errorf("%s: %v", row["id"], err)
			continue
		}
		if want := int(math.Ceil(row.F(t, "events") - 1e-9)); res.Result.Events != want {
			t.Errorf("%s: events %d, want %d (%s)", row["id"], res.Result.Events, want, row["source"])
		}
		if *res.Result.AchievedPower < row.F(t, "power") {
			t.Errorf("%s: achieved power %v below the target", row["id"], *res.Result.AchievedPower)
		}
		rows++
	}
	if rows < 15 {
		t.Fatalf("only %d rows", rows)
	}
}
