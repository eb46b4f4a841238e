package power

import (
	"context"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"enough/power/reftable"
)

// The simulated references are made by testdata/reference/intervals_make.R:
// each scenario is simulated in R with its own seed (the call is in the
// row's source) and its rate computed exactly by summing dbinom weights
// over every outcome (pchisq for the mean's width; the confidence itself
// for the mean's coverage). The width and coverage rows of a scenario come
// from the same R replicates.

// checkSimRow simulates m with as many replicates as R did and checks the
// share against R's simulated share, within 4 standard errors of the
// difference of two independent shares (pooled), and against R's exact
// rate, within 4 Monte-Carlo standard errors of the Go share.
func checkSimRow(t *testing.T, row reftable.Row, m Model, seed uint64) SimResult {
	t.Helper()
	reps := int64(row.F(t, "reps"))
	res := simulate(t, m, reps, seed, 0)
	rr, rk := row.F(t, "reps"), row.F(t, "successes")
	pool := (float64(res.Rejections) + rk) / (float64(res.Replicates) + rr)
	tolR := 4 * math.Sqrt(pool*(1-pool)*(1/float64(res.Replicates)+1/rr))
	exact := row.F(t, "exact")
	tolE := 4 * math.Sqrt(exact*(1-exact)/float64(res.Replicates))
	got, share := res.Power(), row.F(t, "share")
	t.Logf("%s %s: Go %.5f, R %.5f, exact %.5f", row["id"], row["mode"], got, share, exact)
	if math.Abs(got-share) > tolR {
		t.Errorf("%s %s: Go %.5f, R simulation %.5f; tolerance %.5f (%s)", row["id"], row["mode"], got, share, tolR, row["source"])
	}
	if math.Abs(got-exact) > tolE {
		t.Errorf("%s %s: Go %.5f, R exact %.5f; tolerance %.5f (%s)", row["id"], row["mode"], got, exact, tolE, row["source"])
	}
	return res
}

func proportionSimCase(t *testing.T, row reftable.Row) ProportionPrecisionSim {
	return ProportionPrecisionSim{N: row.I(t, "n"), P: row.F(t, "p"), Confidence: row.F(t, "confidence"),
		Interval: parseInterval(t, row["method"]), Margin: row.F(t, "margin"), Coverage: row["mode"] == "coverage"}
}

// TestProportionPrecisionSimAgainstR checks the share of studies whose
// interval meets the margin (and, in the coverage rows, covers p) against
// intervals_sim_prop.tsv. It then checks the coverage claims: the
// Clopper–Pearson interval is conservative (its exact coverage from R is
// at least the confidence in every row, and the Go share is no more than
// 4 standard errors below it), and Wilson's is near the confidence (Go
// share within 0.025 of it; R's exact values are 0.9364 to 0.9703).
func TestProportionPrecisionSimAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "intervals_sim_prop.tsv") {
		c := proportionSimCase(t, row)
		res := checkSimRow(t, row, NewProportionPrecisionSim(c), 3100+uint64(i))
		if !c.Coverage {
			continue
		}
		switch c.Interval {
		case ClopperPearsonInterval:
			if row.F(t, "exact") < c.Confidence {
				t.Errorf("%s: R's exact Clopper–Pearson coverage %s below %v", row["id"], row["exact"], c.Confidence)
			}
			if res.Power() < c.Confidence-4*res.SE() {
				t.Errorf("%s: Clopper–Pearson coverage %.4f below %v", row["id"], res.Power(), c.Confidence)
			}
		case WilsonInterval:
			if math.Abs(res.Power()-c.Confidence) > 0.025 {
				t.Errorf("%s: Wilson coverage %.4f not near %v", row["id"], res.Power(), c.Confidence)
			}
		}
	}
}

// TestMeanPrecisionSimAgainstR: the mean's model, which draws the
// sufficient statistics, against R simulating every observation with
// rnorm (intervals_sim_mean.tsv); exact rates pchisq(m² n (n − 1)/(t² σ²),
// n − 1) and the confidence.
func TestMeanPrecisionSimAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "intervals_sim_mean.tsv") {
		m := NewMeanPrecisionSim(MeanPrecisionSim{N: row.I(t, "n"), SD: row.F(t, "sd"), Confidence: row.F(t, "confidence"),
			Margin: row.F(t, "margin"), Coverage: row["mode"] == "coverage"})
		checkSimRow(t, row, m, 3200+uint64(i))
	}
}

func ratioSimCase(t *testing.T, row reftable.Row) RatioPrecisionSim {
	measure := MeasureRiskRatio
	if row["measure"] == "odds-ratio" {
		measure = MeasureOddsRatio
	}
	return RatioPrecisionSim{
		RatioPrecision: RatioPrecision{Measure: measure, P1: row.F(t, "p1"), P2: row.F(t, "p2"), Confidence: row.F(t, "confidence")},
		N1:             row.I(t, "n1"), N2: row.I(t, "n2"), Rho: row.F(t, "rho"), Coverage: row["mode"] == "coverage"}
}

// TestRatioPrecisionSimAgainstR: risk and odds ratios, one sparse case in
// which a zero cell is common (intervals_sim_ratio.tsv; exact rates by the
// double sum over both counts).
func TestRatioPrecisionSimAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "intervals_sim_ratio.tsv") {
		checkSimRow(t, row, NewRatioPrecisionSim(ratioSimCase(t, row)), 3300+uint64(i))
	}
}

func diagSimCase(t *testing.T, row reftable.Row) DiagnosticPrecisionSim {
	return DiagnosticPrecisionSim{
		DiagnosticAccuracy: DiagnosticAccuracy{Sensitivity: row.F(t, "sens"), Specificity: row.F(t, "spec"),
			Prevalence: row.F(t, "prevalence"), Confidence: row.F(t, "confidence")},
		N: row.I(t, "n"), Margin: row.F(t, "margin"), Interval: parseInterval(t, row["method"]),
		Coverage: row["mode"] == "coverage"}
}

// TestDiagnosticPrecisionSimAgainstR: sensitivity and specificity by the
// Wald interval (Buderer's) and by Wilson's (intervals_sim_diag.tsv; exact
// rates by summing over the number diseased and each count).
func TestDiagnosticPrecisionSimAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "intervals_sim_diag.tsv") {
		checkSimRow(t, row, NewDiagnosticPrecisionSim(diagSimCase(t, row)), 3400+uint64(i))
	}
}

// precisionModels returns one model of each kind, in its width and its
// coverage mode.
func precisionModels() map[string][2]Model {
	out := map[string][2]Model{}
	for _, iv := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		var ms [2]Model
		for k := range ms {
			ms[k] = NewProportionPrecisionSim(ProportionPrecisionSim{N: 90, P: 0.15, Confidence: 0.95, Interval: iv,
				Margin: 0.075, Coverage: k == 1})
		}
		out["proportion "+iv.String()] = ms
		for k := range ms {
			ms[k] = NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{
				DiagnosticAccuracy: DiagnosticAccuracy{Sensitivity: 0.88, Specificity: 0.75, Prevalence: 0.25, Confidence: 0.95},
				N:                  250, Margin: 0.1, Interval: iv, Coverage: k == 1})
		}
		out["diagnostic "+iv.String()] = ms
	}
	var ms [2]Model
	for k := range ms {
		ms[k] = NewMeanPrecisionSim(MeanPrecisionSim{N: 20, SD: 3, Confidence: 0.9, Margin: 1.1, Coverage: k == 1})
	}
	out["mean"] = ms
	for _, meas := range []RatioMeasure{MeasureRiskRatio, MeasureOddsRatio} {
		for k := range ms {
			ms[k] = NewRatioPrecisionSim(RatioPrecisionSim{
				RatioPrecision: RatioPrecision{Measure: meas, P1: 0.25, P2: 0.15, Confidence: 0.95},
				N1:             120, N2: 240, Rho: 3, Coverage: k == 1})
		}
		out["ratio "+meas.String()] = ms
	}
	return out
}

// TestPrecisionSimWorkers: every model gives the same counts with 1 and 2
// workers (small blocks, so that both workers run), and neither mode's
// result is degenerate (all or none), so the comparison can fail.
func TestPrecisionSimWorkers(t *testing.T) {
	for name, ms := range precisionModels() {
		for k, m := range ms {
			var res [2]SimResult
			for w := range res {
				var err error
				res[w], err = Simulate(context.Background(), m, SimConfig{Replicates: 5003, Seed: 77, Workers: w + 1, BlockSize: 500})
				if err != nil {
					t.Fatal(err)
				}
			}
			if !sameResult(res[0], res[1]) {
				t.Errorf("%s mode %d: 1 worker %+v, 2 workers %+v", name, k, res[0], res[1])
			}
			if res[0].Rejections == 0 || res[0].Rejections == res[0].Replicates {
				t.Errorf("%s mode %d: degenerate result %+v", name, k, res[0])
			}
		}
	}
}

// TestPrecisionSimModesSameData: the width and the coverage mode of a
// model draw the same numbers, so that two runs with one seed see the
// same data sets. From identical generators, a replicate of each mode must
// leave the generators in the same state, replicate after replicate.
func TestPrecisionSimModesSameData(t *testing.T) {
	for name, ms := range precisionModels() {
		w0, w1 := ms[0].NewWorker(), ms[1].NewWorker()
		r0, r1 := rand.New(rand.NewPCG(5, 6)), rand.New(rand.NewPCG(5, 6))
		for i := 0; i < 2000; i++ {
			w0.Replicate(r0)
			w1.Replicate(r1)
			if a, b := r0.Uint64(), r1.Uint64(); a != b {
				t.Errorf("%s: the modes' streams part at replicate %d", name, i)
				break
			}
		}
	}
}

// TestPrecisionSimDegenerate checks the documented edge cases, whose
// outcomes follow from the definitions: with P = 10⁻⁹ and N = 10 the count
// is 0 in all but about 1 replicate in 10⁸, and the Wald interval at 0 is
// the single point 0, which meets any margin and does not cover P; with
// such risks a ratio's count is 0 and the replicate fails in both modes,
// as does a diagnostic study without a diseased participant.
func TestPrecisionSimDegenerate(t *testing.T) {
	width := NewProportionPrecisionSim(ProportionPrecisionSim{N: 10, P: 1e-9, Confidence: 0.95, Interval: WaldInterval, Margin: 0.01})
	cover := NewProportionPrecisionSim(ProportionPrecisionSim{N: 10, P: 1e-9, Confidence: 0.95, Interval: WaldInterval, Margin: 0.01, Coverage: true})
	if res := simulate(t, width, 20000, 1, 0); res.Rejections != res.Replicates {
		t.Errorf("Wald at x = 0: %d of %d meet the margin, want all", res.Rejections, res.Replicates)
	}
	if res := simulate(t, cover, 20000, 1, 0); res.Rejections != 0 {
		t.Errorf("Wald at x = 0: %d of %d cover, want none", res.Rejections, res.Replicates)
	}
	for _, k := range []bool{false, true} {
		for _, meas := range []RatioMeasure{MeasureRiskRatio, MeasureOddsRatio} {
			m := NewRatioPrecisionSim(RatioPrecisionSim{RatioPrecision: RatioPrecision{Measure: meas, P1: 1e-9, P2: 0.3, Confidence: 0.95},
				N1: 50, N2: 50, Rho: 1e6, Coverage: k})
			if res := simulate(t, m, 20000, 2, 0); res.Rejections != 0 {
				t.Errorf("%v coverage %v: %d successes with a zero cell", meas, k, res.Rejections)
			}
		}
		d := NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{
			DiagnosticAccuracy: DiagnosticAccuracy{Sensitivity: 0.9, Specificity: 0.9, Prevalence: 1e-9, Confidence: 0.95},
			N:                  100, Margin: 0.9, Coverage: k})
		if res := simulate(t, d, 20000, 3, 0); res.Rejections != 0 {
			t.Errorf("diagnostic coverage %v: %d successes without a diseased participant", k, res.Rejections)
		}
	}
}

func TestPrecisionSimPanics(t *testing.T) {
	da := DiagnosticAccuracy{Sensitivity: 0.9, Specificity: 0.9, Prevalence: 0.2, Confidence: 0.95}
	rp := RatioPrecision{Measure: MeasureRiskRatio, P1: 0.2, P2: 0.1, Confidence: 0.95}
	checkPanics(t, map[string]func(){
		"proportion N 0": func() {
			NewProportionPrecisionSim(ProportionPrecisionSim{P: 0.1, Confidence: 0.95, Interval: WaldInterval, Margin: 0.1})
		},
		"proportion no method": func() { NewProportionPrecisionSim(ProportionPrecisionSim{N: 9, P: 0.1, Confidence: 0.95, Margin: 0.1}) },
		"proportion margin 0": func() {
			NewProportionPrecisionSim(ProportionPrecisionSim{N: 9, P: 0.1, Confidence: 0.95, Interval: WilsonInterval})
		},
		"proportion P 1": func() {
			NewProportionPrecisionSim(ProportionPrecisionSim{N: 9, P: 1, Confidence: 0.95, Interval: WilsonInterval, Margin: 0.1})
		},
		"mean N 1":          func() { NewMeanPrecisionSim(MeanPrecisionSim{N: 1, SD: 1, Confidence: 0.95, Margin: 1}) },
		"mean SD 0":         func() { NewMeanPrecisionSim(MeanPrecisionSim{N: 5, Confidence: 0.95, Margin: 1}) },
		"mean confidence 0": func() { NewMeanPrecisionSim(MeanPrecisionSim{N: 5, SD: 1, Margin: 1}) },
		"ratio rho 1":       func() { NewRatioPrecisionSim(RatioPrecisionSim{RatioPrecision: rp, N1: 5, N2: 5, Rho: 1}) },
		"ratio N2 0":        func() { NewRatioPrecisionSim(RatioPrecisionSim{RatioPrecision: rp, N1: 5, Rho: 2}) },
		"ratio no measure": func() {
			NewRatioPrecisionSim(RatioPrecisionSim{RatioPrecision: RatioPrecision{P1: 0.2, P2: 0.1, Confidence: 0.95}, N1: 5, N2: 5, Rho: 2})
		},
		"diagnostic N 1": func() { NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{DiagnosticAccuracy: da, N: 1, Margin: 0.1}) },
		"diagnostic bad method": func() {
			NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{DiagnosticAccuracy: da, N: 10, Margin: 0.1, Interval: 7})
		},
		"diagnostic Se 1": func() {
			NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{DiagnosticAccuracy: DiagnosticAccuracy{Sensitivity: 1, Specificity: 0.9, Prevalence: 0.2, Confidence: 0.95}, N: 10, Margin: 0.1})
		},
	})
}

// TestProportionPrecisionTableIsDirect: the model that tabulates every
// count's outcome and the model that computes the interval at each draw
// give the same counts for one seed, for each interval and mode; and the
// large study of intervals_sim_prop.tsv (prop_cp_n1e7, checked against R
// above) takes the direct path, the small ones the table.
func TestProportionPrecisionTableIsDirect(t *testing.T) {
	for _, iv := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		for _, cover := range []bool{false, true} {
			c := ProportionPrecisionSim{N: 300, P: 0.2, Confidence: 0.9, Interval: iv, Margin: 0.038, Coverage: cover}
			table, direct := newProportionPrecision(c, maxOutcomeTable), newProportionPrecision(c, 0)
			if table.success == nil || direct.success != nil {
				t.Fatalf("%v: the paths were not the ones asked for", iv)
			}
			a, b := simulate(t, table, 20000, 4, 0), simulate(t, direct, 20000, 4, 0)
			if !sameResult(a, b) || a.Rejections == 0 || a.Rejections == a.Replicates {
				t.Errorf("%v coverage %v: table %+v, direct %+v", iv, cover, a, b)
			}
		}
	}
	for _, row := range reftable.Load(t, "intervals_sim_prop.tsv") {
		m := newProportionPrecision(proportionSimCase(t, row), maxOutcomeTable)
		if direct := m.success == nil; direct != (row["id"] == "prop_cp_n1e7") {
			t.Errorf("%s: direct path %v", row["id"], direct)
		}
	}
}

// TestBinomialSupport: the counts whose outcome NewProportionPrecisionSim
// tabulates lie in [0, n] and hold every draw of the table (a draw
// outside would index out of the table), including the tables padded to
// a power of two cells.
func TestBinomialSupport(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 9))
	for _, n := range []int{1, 2, 3, 5, 7, 50, 1000, 1 << 20} {
		for _, p := range []float64{1e-9, 0.01, 0.3, 0.5, 0.97} {
			tab := NewBinomialTable(n, p)
			lo, hi := binomialSupport(tab)
			if lo < 0 || hi > n || lo > hi {
				t.Errorf("n %d p %v: support [%d, %d]", n, p, lo, hi)
				continue
			}
			for range 20000 {
				if x := tab.Draw(r); x < lo || x > hi {
					t.Errorf("n %d p %v: draw %d outside [%d, %d]", n, p, x, lo, hi)
					break
				}
			}
		}
	}
}

// BenchmarkPrecisionSimReplicate times one replicate of each model (width
// mode).
func BenchmarkPrecisionSimReplicate(b *testing.B) {
	da := DiagnosticAccuracy{Sensitivity: 0.85, Specificity: 0.9, Prevalence: 0.3, Confidence: 0.95}
	for _, c := range []struct {
		name string
		m    Model
	}{
		{"proportion_cp_n1000", NewProportionPrecisionSim(ProportionPrecisionSim{N: 1000, P: 0.1, Confidence: 0.95, Interval: ClopperPearsonInterval, Margin: 0.02})},
		{"mean_n30", NewMeanPrecisionSim(MeanPrecisionSim{N: 30, SD: 10, Confidence: 0.95, Margin: 3.8})},
		{"ratio_rr_n150_300", NewRatioPrecisionSim(RatioPrecisionSim{RatioPrecision: RatioPrecision{Measure: MeasureRiskRatio, P1: 0.2, P2: 0.1, Confidence: 0.95}, N1: 150, N2: 300, Rho: 2.55})},
		{"ratio_or_n100_200", NewRatioPrecisionSim(RatioPrecisionSim{RatioPrecision: RatioPrecision{Measure: MeasureOddsRatio, P1: 0.35, P2: 0.2, Confidence: 0.95}, N1: 100, N2: 200, Rho: 3})},
		{"diagnostic_wald_n400", NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{DiagnosticAccuracy: da, N: 400, Margin: 0.065})},
		{"diagnostic_wilson_n400", NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{DiagnosticAccuracy: da, N: 400, Margin: 0.065, Interval: WilsonInterval})},
		{"diagnostic_cp_n400", NewDiagnosticPrecisionSim(DiagnosticPrecisionSim{DiagnosticAccuracy: da, N: 400, Margin: 0.065, Interval: ClopperPearsonInterval})},
	} {
		b.Run(c.name, func(b *testing.B) {
			benchReplicates(b, c.m)
		})
	}
}

// BenchmarkNewProportionPrecisionSim times the set-up of the
// Clopper–Pearson table (a computed interval per drawable count).
func BenchmarkNewProportionPrecisionSim(b *testing.B) {
	for _, n := range []int{1000, 100_000} {
		b.Run("cp_n"+strconv.Itoa(n), func(b *testing.B) {
			for b.Loop() {
				NewProportionPrecisionSim(ProportionPrecisionSim{N: n, P: 0.3, Confidence: 0.95, Interval: ClopperPearsonInterval, Margin: 0.02})
			}
		})
	}
}
