package designs

import (
	"context"
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// One prevalence to a margin by each interval against R's brute-force scan
// (intervals_n.tsv, testdata/reference/intervals_make.R: the first n whose
// half-width at the expected count n × p is within the margin): the
// respondents needed, with no design effect, population or non-response,
// are that n for wilson and clopper-pearson, and ceil(Cochran's n0) for
// wald.
func TestPrecisionIntervalsAgainstReference(t *testing.T) {
	checked := 0
	for _, row := range reftable.Load(t, "intervals_n.tsv") {
		spec := fmt.Sprintf("version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: %s\nmargin: %s\nconfidence: %s\nmethod: %s\n",
			row["p"], row["margin"], row["confidence"], row["method"])
		res := mustPlan(t, spec)
		if got, want := res.Result.Total, row.I(t, "n"); got != want {
			t.Errorf("%s: %d respondents, want %d (%s)", row["id"], got, want, row["source"])
		}
		// The margin achieved at that size is the interval's half-width
		// there (the row's hw_n), solving effect at the same total.
		back := mustPlan(t, spec+fmt.Sprintf("solve: effect\ntotal: %s\n", row["n"]))
		if got, want := *back.Result.Margin, row.F(t, "hw_n"); math.Abs(got-want) > 1e-12+1e-9*want {
			t.Errorf("%s: margin %v at n, want %v", row["id"], got, want)
		}
		checked++
	}
	if checked < 50 {
		t.Errorf("only %d rows", checked)
	}
}

// The design effect, the finite population and non-response act on the
// method's simple-random-sampling size as they do for Wald (common
// practice arithmetic on row n_wilson_p0.01_m0.01_c0.95, 454 respondents):
// 454 × 1.5 = 681; 681 / (1 + 680/5000) = 599.47, rounded up 600; 600 /
// 0.8 = 750 to invite.
func TestPrecisionIntervalInflation(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.01\nmargin: 0.01\nmethod: wilson\ndesign_effect: 1.5\npopulation: 5000\nattrition: 0.2\n")
	if a := res.Result; a.N0 != 454 || a.Total != 600 || a.EnrolTotal != 750 {
		t.Errorf("n0 %v, respondents %d, invited %d; want 454, 600, 750", a.N0, a.Total, a.EnrolTotal)
	}
	if len(res.Result.ExpectedInterval) != 2 {
		t.Errorf("no expected interval: %v", res.Result.ExpectedInterval)
	}
}

// One mean to within ± margin by the t interval against R's scan
// (intervals_mean.tsv, intervals_make.R: the first n ≥ 2 with
// qt(1 − α/2, n − 1) × sd / √n within the margin), and the margin solved
// back at that size.
func TestPrecisionMeanAgainstReference(t *testing.T) {
	rows := reftable.Load(t, "intervals_mean.tsv")
	for _, row := range rows {
		spec := fmt.Sprintf("version: 1\ndesign: cross-sectional\ngoal: precision\noutcome: continuous\nsd: %s\nmargin: %s\nconfidence: %s\n",
			row["sd"], row["margin"], row["confidence"])
		res := mustPlan(t, spec)
		if got, want := res.Result.Total, row.I(t, "n"); got != want {
			t.Errorf("%s: %d respondents, want %d (%s)", row["id"], got, want, row["source"])
		}
		back := mustPlan(t, spec+"solve: effect\ntotal: "+row["n"]+"\n")
		if got, want := *back.Result.Margin, row.F(t, "hw_n"); math.Abs(got-want) > 1e-9*want {
			t.Errorf("%s: margin %v at n, want %v", row["id"], got, want)
		}
	}
	if len(rows) < 10 {
		t.Errorf("only %d rows", len(rows))
	}
}

// A precision survey's simulation: how often the interval meets the margin
// and how often it covers, against the exact rates R computes
// (intervals_sim_prop.tsv, intervals_make.R: sum(dbinom(0:n) × success)),
// within 4 Monte-Carlo standard errors of 20,000 replicates; the survey is
// simulated at simulate.n.
func TestVerifyPrecisionAgainstReference(t *testing.T) {
	rows := reftable.Load(t, "intervals_sim_prop.tsv")
	seen := 0
	for _, row := range rows {
		if row["method"] == "" || row.I(t, "n") > 5000 {
			continue
		}
		spec := fmt.Sprintf("version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: %s\nmargin: %s\nconfidence: %s\nmethod: %s\nsimulate: {replicates: 20000, seed: 7, n: %s}\n",
			row["p"], row["margin"], row["confidence"], row["method"], row["n"])
		s, err := Parse("p.yaml", []byte(spec), nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Plan(s)
		if err != nil {
			t.Fatal(err)
		}
		if err := Verify(context.Background(), s, res, SimOptions{}); err != nil {
			t.Fatal(err)
		}
		got := res.Simulation.WithinMargin
		if row["mode"] == "coverage" {
			got = res.Simulation.Coverage
		}
		want := row.F(t, "exact")
		if se := math.Sqrt(want * (1 - want) / 20000); got == nil || math.Abs(*got-want) > 4*se+1e-12 {
			t.Errorf("%s %s: simulated %v, exact %v (4 SE %.4f) (%s)", row["id"], row["mode"], got, want, 4*se, row["source"])
		}
		seen++
	}
	if seen < 6 {
		t.Errorf("only %d rows", seen)
	}
}

// Diagnostic accuracy against R (intervals_buderer.tsv, intervals_make.R:
// Buderer 1996 written with qnorm): both unrounded sizes, and the
// participants needed, ceil of the larger.
func TestAccuracyAgainstReference(t *testing.T) {
	rows := reftable.Load(t, "intervals_buderer.tsv")
	for _, row := range rows {
		spec := fmt.Sprintf("version: 1\ndesign: cross-sectional\ngoal: accuracy\nsensitivity: %s\nspecificity: %s\ncondition_prevalence: %s\nmargin: %s\nconfidence: %s\n",
			row["sens"], row["spec"], row["prevalence"], row["margin"], row["confidence"])
		res := mustPlan(t, spec)
		a := res.Result
		nSe, nSp := row.F(t, "n_sens"), row.F(t, "n_spec")
		if math.Abs(*a.NSensitivity-nSe) > 1e-9*nSe || math.Abs(*a.NSpecificity-nSp) > 1e-9*nSp {
			t.Errorf("%s: sizes %v and %v, want %v and %v (%s)", row["id"], *a.NSensitivity, *a.NSpecificity, nSe, nSp, row["source"])
		}
		if want := int(math.Ceil(math.Max(nSe, nSp) - 1e-9)); a.Total != want {
			t.Errorf("%s: %d participants, want %d", row["id"], a.Total, want)
		}
	}
	if len(rows) < 3 {
		t.Errorf("only %d rows", len(rows))
	}
}

// The refusals of a study of diagnostic accuracy, one line each.
func TestAccuracyRefused(t *testing.T) {
	base := "version: 1\ndesign: cross-sectional\ngoal: accuracy\nsensitivity: 0.9\nspecificity: 0.8\ncondition_prevalence: 0.2\n"
	for _, tt := range []struct{ name, spec, want string }{
		{"no margin", base, "margin"},
		{"sensitivity 1", "version: 1\ndesign: cross-sectional\ngoal: accuracy\nsensitivity: 1\nspecificity: 0.8\ncondition_prevalence: 0.2\nmargin: 0.05\n", "sensitivity"},
		{"continuous", base + "outcome: continuous\nmargin: 0.05\n", "binary"},
		{"trial", "version: 1\ndesign: trial\ngoal: accuracy\n", "goal"},
		{"power", base + "margin: 0.05\npower: 0.8\n", "power"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("a.yaml", []byte(tt.spec), nil)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want one containing %q", err, tt.want)
			}
		})
	}
}

// A ratio to a stated precision against R (intervals_ratio.tsv,
// intervals_make.R: n1 by the closed form with Katz et al. 1978 or Woolf
// 1955, ρ at ⌈n1⌉ and ⌈r n1⌉, checked there against glm's standard
// errors): the sizes ⌈n1⌉ and ⌈r n1⌉ and the achieved ρ.
func TestRatioPrecisionAgainstReference(t *testing.T) {
	rows := reftable.Load(t, "intervals_ratio.tsv")
	for _, row := range rows {
		var spec string
		if row["measure"] == "risk-ratio" {
			spec = fmt.Sprintf("version: 1\ndesign: cohort\ngoal: precision\nunexposed_risk: %s\nexposed_risk: %s\n", row["p2"], row["p1"])
		} else {
			spec = fmt.Sprintf("version: 1\ndesign: case-control\ngoal: precision\ncontrol_exposure: %s\ncase_exposure: %s\n", row["p2"], row["p1"])
		}
		spec += fmt.Sprintf("ratio: %s\nconfidence: %s\nprecision_ratio: %s\n", row["r"], row["confidence"], row["rho"])
		res := mustPlan(t, spec)
		a := res.Result
		n1 := row.F(t, "n1")
		// The second group is ⌈r × n1*⌉, as in every plan (README,
		// "Rounding and inflation"); the table's n2_ceil is r × ⌈n1⌉.
		want := []int{row.I(t, "n1_ceil"), int(math.Ceil(row.F(t, "r")*n1 - 1e-9))}
		if a.N[0] != want[0] || a.N[1] != want[1] || math.Abs(a.NStar-n1) > 1e-9*n1 {
			t.Errorf("%s: n %v (n* %v), want %v (n* %v) (%s)", row["id"], a.N, a.NStar, want, n1, row["source"])
		}
		if float64(a.N[1]) == row.F(t, "n2_ceil") {
			if rho := row.F(t, "rho_ceil"); math.Abs(*a.PrecisionRatio-rho) > 1e-9*rho {
				t.Errorf("%s: ρ %v, want %v", row["id"], *a.PrecisionRatio, rho)
			}
		}
		if *a.PrecisionRatio > row.F(t, "rho")+1e-12 {
			t.Errorf("%s: ρ %v above the target %s", row["id"], *a.PrecisionRatio, row["rho"])
		}
	}
	if len(rows) < 4 {
		t.Errorf("only %d rows", len(rows))
	}
}

// enough review rechecks diagnostic accuracy and a ratio to a stated
// precision: the stated total against Buderer's (334 for sensitivity
// 0.85, specificity 0.95, prevalence 0.3, margin 0.07: row-free arithmetic,
// 1.959964² × 0.85 × 0.15 / (0.07² × 0.3) = 333.19, common practice), and
// the stated groups against Katz's (2,618 a group, intervals_ratio.tsv
// row ratio_1).
func TestReviewPrecisionRatioAndAccuracy(t *testing.T) {
	for _, c := range []struct {
		spec string
		n    int
	}{
		{"version: 1\ndesign: cross-sectional\ngoal: accuracy\nsensitivity: 0.85\nspecificity: 0.95\ncondition_prevalence: 0.3\nmargin: 0.07\nclaimed: {total: 300}\n", 334},
		{"version: 1\ndesign: cohort\ngoal: precision\nunexposed_risk: 0.05\nrisk_ratio: 2\nprecision_ratio: 1.5\nclaimed: {n: 2500, n_second: 2500}\n", 2618},
	} {
		in, err := ParseReview("r.yaml", []byte(c.spec), nil)
		if err != nil {
			t.Fatal(err)
		}
		s, err := in.Variant()
		if err != nil {
			t.Fatal(err)
		}
		res, err := Plan(s)
		if err != nil {
			t.Fatal(err)
		}
		if res.Result.N[0] != c.n {
			t.Errorf("recomputed %v, want %d first", res.Result.N, c.n)
		}
	}
}
