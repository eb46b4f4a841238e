package power_test

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"enough/power"
	"enough/power/reftable"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// worst records the largest difference seen against one reference column,
// so that each table test logs how close it came (go test -v).
type worst struct {
	what     string
	abs, rel float64
	id       string
}

func (w *worst) note(id string, got, want float64) {
	d := math.Abs(got - want)
	r := d / math.Abs(want)
	if want == 0 {
		r = d
	}
	if d > w.abs {
		w.abs = d
	}
	if r > w.rel {
		w.rel, w.id = r, id
	}
}

func (w *worst) log(t *testing.T) {
	t.Helper()
	t.Logf("%s: largest abs diff %.3g, largest rel diff %.3g (%s)", w.what, w.abs, w.rel, w.id)
}

// within reports whether got is within the relative tolerance rel of want.
func within(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)
}

// layoutOf maps power.t.test's type onto a Layout: one.sample and paired
// are both a one-sample t test on n values with n − 1 degrees of freedom.
func layoutOf(t *testing.T, typ string) power.Layout {
	t.Helper()
	switch typ {
	case "two.sample":
		return power.TwoSample
	case "one.sample", "paired":
		return power.Paired
	}
	t.Fatalf("unknown type %q", typ)
	return 0
}

// powerTTestCase turns a trials_t.tsv row into a comparison. Our T method
// always counts both tails of a two-sided test, which is power.t.test's
// strict = TRUE. The strict = FALSE power of a two-sided test is the one
// tail P(T' > t(1 − α/2)), which is exactly our one-sided test at level
// α/2 (Sides 1, Alpha α/2), so those rows are compared that way. For
// one-sided rows strict makes no difference in power.t.test.
func powerTTestCase(t *testing.T, row reftable.Row) power.MeanComparison {
	t.Helper()
	mc := power.MeanComparison{
		Diff:   row.F(t, "delta"),
		SD1:    row.F(t, "sd"),
		Layout: layoutOf(t, row["type"]),
		Alpha:  row.F(t, "sig_level"),
		Sides:  2,
	}
	switch {
	case row["alternative"] == "one.sided":
		mc.Sides = 1
	case row["strict"] == "FALSE":
		mc.Sides, mc.Alpha = 1, mc.Alpha/2
	}
	return mc
}

// TestMeansTTestPowerReference checks T.Power against the power rows of
// trials_t.tsv: R stats::power.t.test, the exact call in each row's source.
func TestMeansTTestPowerReference(t *testing.T) {
	// trials_README.md recommends 1e-9 relative for power rows; the
	// largest difference seen is ~4e-14 relative, the noncentral t being
	// good to ~1e-12 absolute (AS 243 in both R and gonum), so 1e-11.
	const tol = 1e-11
	w := worst{what: "trials_t.tsv power"}
	count := 0
	for _, row := range reftable.Load(t, "trials_t.tsv") {
		if row["solve"] != "power" {
			continue
		}
		mc := powerTTestCase(t, row)
		n := row.F(t, "n")
		want := row.F(t, "power")
		got := power.T.Power(mc, n, n)
		w.note(row["id"], got, want)
		if !within(got, want, tol) {
			t.Errorf("%s: T.Power = %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
		}
		count++
	}
	w.log(t)
	if count != 18 {
		t.Errorf("checked %d power rows, want 18", count)
	}
}

// TestMeansTTestPowerDirect calls TTestPower itself with the noncentrality
// and degrees of freedom that trials_README.md gives for power.t.test
// (df = (n − 1)k, ncp = √(n/k) δ/σ, k = 2 for two.sample and 1 otherwise),
// on the rows whose convention it shares (two-sided strict = TRUE, or
// one-sided).
func TestMeansTTestPowerDirect(t *testing.T) {
	const tol = 1e-11 // as in TestMeansTTestPowerReference
	count := 0
	for _, row := range reftable.Load(t, "trials_t.tsv") {
		if row["solve"] != "power" || (row["alternative"] == "two.sided" && row["strict"] == "FALSE") {
			continue
		}
		k := 1.0
		if row["type"] == "two.sample" {
			k = 2
		}
		n := row.F(t, "n")
		ncp := math.Sqrt(n/k) * row.F(t, "delta") / row.F(t, "sd")
		sides := 2
		if row["alternative"] == "one.sided" {
			sides = 1
		}
		got := power.TTestPower(ncp, (n-1)*k, row.F(t, "sig_level"), sides)
		if want := row.F(t, "power"); !within(got, want, tol) {
			t.Errorf("%s: TTestPower(%g, %g, ...) = %.15g, want %.15g (%s)", row["id"], ncp, (n-1)*k, got, want, row["source"])
		}
		count++
	}
	if count != 14 {
		t.Errorf("checked %d rows, want 14", count)
	}
}

// TestMeansTTestNReference checks T.N against the n rows of trials_t.tsv:
// R stats::power.t.test(power=..., tol=1e-10)$n, unrounded (the exact call
// is in each row's source).
func TestMeansTTestNReference(t *testing.T) {
	// uniroot stops within 1e-10 in n, and our solver within 1e-10 × its
	// bracket; 1e-7 relative (what the brief asks) leaves room for both,
	// and the largest difference seen is ~1e-11 relative. The rounded size
	// must agree exactly (trials_README.md: no unrounded size lies within
	// 1e-6 of an integer).
	const tol = 1e-7
	w := worst{what: "trials_t.tsv n"}
	count := 0
	for _, row := range reftable.Load(t, "trials_t.tsv") {
		if row["solve"] != "n" {
			continue
		}
		mc := powerTTestCase(t, row)
		want := row.F(t, "n")
		got, err := power.T.N(mc, 1, row.F(t, "power"))
		if err != nil {
			t.Errorf("%s: T.N: %v (%s)", row["id"], err, row["source"])
			continue
		}
		w.note(row["id"], got, want)
		if !within(got, want, tol) {
			t.Errorf("%s: T.N = %.12g, want %.12g (%s)", row["id"], got, want, row["source"])
		}
		if math.Ceil(got) != math.Ceil(want) {
			t.Errorf("%s: ceil(T.N) = %v, want %v", row["id"], math.Ceil(got), math.Ceil(want))
		}
		count++
	}
	w.log(t)
	if count != 12 {
		t.Errorf("checked %d n rows, want 12", count)
	}
}

// TestNoncentralTCDFReference checks gonum's distuv.NoncentralT.CDF, on
// which TTestPower is built, against trials_pt.tsv's value_quad column: an
// independent quadrature in R (script trials_make.R), confirmed by a second
// one in scipy to 1.7e-13 relative. An upper tail is checked both by the
// reflection P(T'(ncp) > q) = P(T'(−ncp) < −q) and as the plain complement
// 1 − CDF(q), which means.go uses below noncentrality 30.
func TestNoncentralTCDFReference(t *testing.T) {
	// AS 243 (which gonum implements) sums its series until the error
	// bound is below 1e-12 absolute; the largest difference seen on these
	// 43 rows is 6.7e-13 absolute (pt_20). A relative tolerance cannot be
	// met in the far tails: see TestNoncentralTCDFTinyTails.
	const tol = 1e-12
	w := worst{what: "trials_pt.tsv value_quad"}
	for _, row := range reftable.Load(t, "trials_pt.tsv") {
		q, df, ncp := row.F(t, "q"), row.F(t, "df"), row.F(t, "ncp")
		want := row.F(t, "value_quad")
		got := map[string]float64{}
		if row["lower_tail"] == "TRUE" {
			got["CDF(q)"] = distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
		} else {
			got["reflected CDF(-q; -ncp)"] = distuv.NoncentralT{Nu: df, Mu: -ncp}.CDF(-q)
			got["1 - CDF(q)"] = 1 - distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
		}
		for how, g := range got {
			w.note(row["id"], g, want)
			if math.IsNaN(g) || math.Abs(g-want) > tol {
				t.Errorf("%s: gonum %s = %.15g, want %.15g (quadrature; R %s = %.15g)",
					row["id"], how, g, want, row["source"], row.F(t, "value"))
			}
		}
	}
	w.log(t)
}

// TestNoncentralTCDFTinyTails asks for relative accuracy where the
// probability is tiny (value_quad of trials_pt.tsv below 1e-4).
func TestNoncentralTCDFTinyTails(t *testing.T) {
	t.Skip("LIMITATION (gonum distuv.NoncentralT, not a means.go bug): like R's pt (trials_README.md, " +
		"finding 1), AS 243 is accurate to ~1e-12 absolute only. A lower tail at q < 0 is computed as " +
		"1 − (series), so every value below ~1e-4 loses relative accuracy: pt_24 (5.19e-8) 4e-6 relative, " +
		"pt_15 (1.41e-9) 1.4e-4, pt_41 (1.57e-12) 0.17, pt_11 0.65, pt_18 2.0, pt_25 (8.5e-20) gives 7.0e-14, " +
		"pt_31 (3.1e-43) gives 5.6e-16, pt_38 (9.0e-39) gives 0. The reflection in means.go's upperNCT " +
		"does not help, because gonum reflects internally too (its comment claims it keeps relative accuracy). " +
		"Harmless for power, which is never tiny, except that a tiny power can come out slightly negative " +
		"(see TestMeansPowerIsAProbability).")
	// Relative 1e-6 would do for any use; the quadrature is good to 1.7e-13.
	const tol = 1e-6
	for _, row := range reftable.Load(t, "trials_pt.tsv") {
		want := row.F(t, "value_quad")
		if want >= 1e-4 {
			continue
		}
		q, df, ncp := row.F(t, "q"), row.F(t, "df"), row.F(t, "ncp")
		var got float64
		if row["lower_tail"] == "TRUE" {
			got = distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
		} else {
			got = distuv.NoncentralT{Nu: df, Mu: -ncp}.CDF(-q)
		}
		if !within(got, want, tol) {
			t.Errorf("%s: gonum = %.6g, want %.6g (quadrature for %s)", row["id"], got, want, row["source"])
		}
	}
}

// statsmodelsCase turns a trials_statsmodels.tsv row into a comparison:
// statsmodels' TTestIndPower is the pooled t test (df = n1 + n2 − 2) with
// effect size in units of the common SD, so SD1 = 1 and Diff = effect_size.
// 'two-sided' adds both tails, like our T method; 'larger' and 'smaller'
// are one tail in the direction of the effect.
func statsmodelsCase(t *testing.T, row reftable.Row) power.MeanComparison {
	t.Helper()
	mc := power.MeanComparison{
		Diff:   row.F(t, "effect_size"),
		SD1:    1,
		Layout: power.TwoSample,
		Alpha:  row.F(t, "alpha"),
		Sides:  2,
	}
	switch row["alternative"] {
	case "two-sided":
	case "larger", "smaller":
		mc.Sides = 1
	default:
		t.Fatalf("%s: unknown alternative %q", row["id"], row["alternative"])
	}
	return mc
}

// TestMeansStatsmodelsPowerReference checks T.Power with unequal groups
// against the power rows of trials_statsmodels.tsv: statsmodels
// TTestIndPower().power (the call is in the source column) and power_r, the
// same quantity from R's qt/pt.
func TestMeansStatsmodelsPowerReference(t *testing.T) {
	// trials_README.md: 1e-8 relative against statsmodels (its t quantile
	// is off by ~1e-9 relative, finding 2) and 1e-12 against power_r. We
	// see ~2e-9 and ~2e-14 relative.
	const tolSM, tolR = 1e-8, 1e-12
	wsm := worst{what: "trials_statsmodels.tsv power"}
	wr := worst{what: "trials_statsmodels.tsv power_r"}
	count := 0
	for _, row := range reftable.Load(t, "trials_statsmodels.tsv") {
		if row["solve"] != "power" {
			continue
		}
		mc := statsmodelsCase(t, row)
		n1 := row.F(t, "nobs1")
		got := power.T.Power(mc, n1, row.F(t, "ratio")*n1)
		want, wantR := row.F(t, "power"), row.F(t, "power_r")
		wsm.note(row["id"], got, want)
		wr.note(row["id"], got, wantR)
		if !within(got, want, tolSM) {
			t.Errorf("%s: T.Power = %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
		}
		if !within(got, wantR, tolR) {
			t.Errorf("%s: T.Power = %.15g, want %.15g (power_r: R qt/pt, trials_make.py)", row["id"], got, wantR)
		}
		count++
	}
	wsm.log(t)
	wr.log(t)
	if count != 8 {
		t.Errorf("checked %d power rows, want 8", count)
	}
}

// TestMeansStatsmodelsNReference checks T.N with a ratio against the nobs1
// rows of trials_statsmodels.tsv: statsmodels TTestIndPower().solve_power
// (nobs1, the call in source), and nobs1_r, the root in R (uniroot,
// tol 1e-12, R qt/pt; script trials_make.py).
func TestMeansStatsmodelsNReference(t *testing.T) {
	// trials_README.md, finding 3: solve_power is good to ~1e-5 only, so
	// 1e-4 absolute against nobs1; 1e-9 relative against nobs1_r.
	const tolSM, tolR = 1e-4, 1e-9
	wsm := worst{what: "trials_statsmodels.tsv nobs1"}
	wr := worst{what: "trials_statsmodels.tsv nobs1_r"}
	count := 0
	for _, row := range reftable.Load(t, "trials_statsmodels.tsv") {
		if row["solve"] != "nobs1" {
			continue
		}
		mc := statsmodelsCase(t, row)
		got, err := power.T.N(mc, row.F(t, "ratio"), row.F(t, "power"))
		if err != nil {
			t.Errorf("%s: T.N: %v (%s)", row["id"], err, row["source"])
			continue
		}
		want, wantR := row.F(t, "nobs1"), row.F(t, "nobs1_r")
		wsm.note(row["id"], got, want)
		wr.note(row["id"], got, wantR)
		if math.Abs(got-want) > tolSM {
			t.Errorf("%s: T.N = %.12g, want %.12g (%s)", row["id"], got, want, row["source"])
		}
		if !within(got, wantR, tolR) {
			t.Errorf("%s: T.N = %.12g, want %.12g (nobs1_r: R uniroot, trials_make.py)", row["id"], got, wantR)
		}
		if math.Ceil(got) != math.Ceil(wantR) {
			t.Errorf("%s: ceil(T.N) = %v, want %v", row["id"], math.Ceil(got), math.Ceil(wantR))
		}
		count++
	}
	wsm.log(t)
	wr.log(t)
	if count != 8 {
		t.Errorf("checked %d nobs1 rows, want 8", count)
	}
}

// TestMeansWelchReference checks the Welch power against trials_welch.tsv:
// independent R implementation (Welch–Satterthwaite df with the true SDs,
// noncentral t; script trials_make.R, formulas in trials_README.md).
func TestMeansWelchReference(t *testing.T) {
	// trials_README.md recommends 1e-9 relative; we see ~1e-13.
	const tol = 1e-11
	w := worst{what: "trials_welch.tsv power"}
	for _, row := range reftable.Load(t, "trials_welch.tsv") {
		mc := power.MeanComparison{
			Diff:   row.F(t, "delta"),
			SD1:    row.F(t, "sd1"),
			SD2:    row.F(t, "sd2"),
			Layout: power.TwoSample,
			Welch:  true,
			Alpha:  row.F(t, "alpha"),
			Sides:  row.I(t, "sides"),
		}
		got := power.T.Power(mc, row.F(t, "n1"), row.F(t, "n2"))
		want := row.F(t, "power")
		w.note(row["id"], got, want)
		if !within(got, want, tol) {
			t.Errorf("%s: T.Power (Welch) = %.15g, want %.15g (%s; df %s)", row["id"], got, want, row["source"], row["df"])
		}
	}
	w.log(t)
}

// TestMeansTOSTReference checks equivalence power against trials_tost.tsv:
// T against the exact TOST power (independent R implementation,
// Schuirmann 1987, integral over the sample SD; script trials_make.R) and
// Z against power_z, the normal approximation given in trials_README.md.
func TestMeansTOSTReference(t *testing.T) {
	// trials_README.md: 1e-9 absolute (the two R integrals agree to
	// 1e-14). We see ~1e-15 for T, so 1e-12. power_z is a closed form:
	// 1e-12 relative (README, closed forms).
	const tolT, tolZ = 1e-12, 1e-12
	wt := worst{what: "trials_tost.tsv power (T)"}
	wz := worst{what: "trials_tost.tsv power_z (Z)"}
	for _, row := range reftable.Load(t, "trials_tost.tsv") {
		mc := power.MeanComparison{
			Diff:       row.F(t, "delta"),
			SD1:        row.F(t, "sd"),
			Layout:     power.TwoSample,
			Alpha:      row.F(t, "alpha"),
			Hypothesis: power.Equivalence,
			Bound:      row.F(t, "margin"),
		}
		n1, n2 := row.F(t, "n1"), row.F(t, "n2")
		got, want := power.T.Power(mc, n1, n2), row.F(t, "power")
		wt.note(row["id"], got, want)
		if math.Abs(got-want) > tolT {
			t.Errorf("%s: T.Power (TOST) = %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
		}
		gotZ, wantZ := power.Z.Power(mc, n1, n2), row.F(t, "power_z")
		wz.note(row["id"], gotZ, wantZ)
		if !within(gotZ, wantZ, tolZ) {
			t.Errorf("%s: Z.Power (TOST) = %.15g, want %.15g (power_z, trials_make.R)", row["id"], gotZ, wantZ)
		}
	}
	wt.log(t)
	wz.log(t)
}

// tostByMeanIntegral is the exact TOST power by method (b) of
// trials_README.md (trials_tost.tsv, column power_mean_integral): with
// k = √(1/n1 + 1/n2), df = n1 + n2 − 2 and c = t(1 − α, df),
//
//	power = ∫_{−m}^{m} φ(x; δ, (σk)²) P(χ²_df ≤ df ((m − |x|)/(c k σ))²) dx,
//
// split at 0, by composite 20-point Gauss–Legendre over 400 panels a side.
// It integrates over the observed mean difference, where means.go's
// tostExact integrates over the sample variance, and uses gonum's
// distributions only. TestTOSTMeanIntegralHelper checks it against R.
func tostByMeanIntegral(n1, n2, sd, delta, margin, alpha float64) float64 {
	k := math.Sqrt(1/n1 + 1/n2)
	df := n1 + n2 - 2
	c := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(1 - alpha)
	chi := distuv.ChiSquared{K: df}
	obs := distuv.Normal{Mu: delta, Sigma: sd * k}
	f := func(x float64) float64 {
		a := (margin - math.Abs(x)) / (c * k * sd)
		return obs.Prob(x) * chi.CDF(df*a*a)
	}
	const panels = 400
	sum := 0.0
	for _, side := range [][2]float64{{-margin, 0}, {0, margin}} {
		h := (side[1] - side[0]) / panels
		for i := 0; i < panels; i++ {
			a := side[0] + float64(i)*h
			sum += quad.Fixed(f, a, a+h, 20, quad.Legendre{}, 0)
		}
	}
	return sum
}

// TestTOSTMeanIntegralHelper checks the test helper tostByMeanIntegral
// against every row of trials_tost.tsv (independent R implementation,
// Schuirmann 1987, script trials_make.R), so that it can stand in for R
// where the table has no row.
func TestTOSTMeanIntegralHelper(t *testing.T) {
	const tol = 1e-12 // we see ~1e-15
	for _, row := range reftable.Load(t, "trials_tost.tsv") {
		got := tostByMeanIntegral(row.F(t, "n1"), row.F(t, "n2"), row.F(t, "sd"), row.F(t, "delta"), row.F(t, "margin"), row.F(t, "alpha"))
		if want := row.F(t, "power"); math.Abs(got-want) > tol {
			t.Errorf("%s: helper = %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
		}
	}
}

// TestMeansTOSTSmallDF checks the exact TOST power with very few degrees of
// freedom, where trials_tost.tsv has no row (its smallest is df = 6), against
// tostByMeanIntegral (method (b) of trials_README.md, checked against R by
// TestTOSTMeanIntegralHelper).
func TestMeansTOSTSmallDF(t *testing.T) {
	// Fixed (was skipped as a bug): "BUG: the exact TOST power (tostExact) loses accuracy below about 4 degrees of freedom. "
	// n1 = 1, n2 = 2 (df 1), Diff 0, margin 4, SD 1, alpha 0.05: T.Power = 0.301595416466, want 0.302955235515
	// (−1.4e-3); n 2/3 (df 3), Diff 0.5, margin 3: 0.598095240773, want 0.59809498834 (+2.5e-7);
	// n 2.5/2.5 (df 3), margin 2, alpha 0.1: 0.503329200486, want 0.503328969803 (+2.3e-7); n 2/2 (df 2),
	// margin 2: −4.5e-9. df 4 and 5 pass. The fixed 64×16-point Gauss–Legendre rule over u in
	// [χ² quantile(1e-16), umax] cannot follow the u^(df/2−1) density and the √u term at u = 0.
	// N sees it when the margin is several SDs (a crossover with SD1 0.1, margin 0.2231, Diff 0.05:
	// T.N = 2.21331 per sequence, the accurate root is 2.21332).")
	// trials_README.md's TOST tolerance.
	const tol = 1e-9
	for _, c := range []struct{ n1, n2, sd, delta, margin, alpha float64 }{
		{2, 2, 1, 0, 2, 0.05},    // df 2
		{2, 3, 1, 0, 2, 0.05},    // df 3
		{2, 3, 1, 0.5, 3, 0.05},  // df 3
		{1, 2, 1, 0, 4, 0.05},    // df 1
		{3, 3, 1, 0.3, 2, 0.05},  // df 4
		{3, 4, 1, 0, 3, 0.05},    // df 5
		{2.5, 2.5, 1, 0, 2, 0.1}, // df 3, unrounded sizes as N sees them
	} {
		mc := power.MeanComparison{Diff: c.delta, SD1: c.sd, Alpha: c.alpha, Hypothesis: power.Equivalence, Bound: c.margin}
		got := power.T.Power(mc, c.n1, c.n2)
		want := tostByMeanIntegral(c.n1, c.n2, c.sd, c.delta, c.margin, c.alpha)
		if math.Abs(got-want) > tol {
			t.Errorf("n %g/%g (df %g), Diff %g, margin %g, alpha %g: T.Power (TOST) = %.12g, want %.12g (diff %.2g)",
				c.n1, c.n2, c.n1+c.n2-2, c.delta, c.margin, c.alpha, got, want, got-want)
		}
	}
}

// niCase turns a trials_ni_means.tsv row into a comparison: higher is
// better, so the null boundary is −margin, and alpha is one-sided.
func niCase(t *testing.T, row reftable.Row) power.MeanComparison {
	t.Helper()
	return power.MeanComparison{
		Diff:       row.F(t, "delta"),
		SD1:        row.F(t, "sd"),
		Layout:     power.TwoSample,
		Alpha:      row.F(t, "alpha"),
		Hypothesis: power.NonInferiority,
		Bound:      -row.F(t, "margin"),
	}
}

// TestMeansNonInferiorityReference checks non-inferiority power and size
// against trials_ni_means.tsv: independent R implementation of the
// one-sided two-sample t test (script trials_make.R), the n rows solved by
// uniroot(tol=1e-10) with n2 = ratio × n1 continuous.
func TestMeansNonInferiorityReference(t *testing.T) {
	// trials_README.md: power 1e-9 relative (we see ~1e-14, so 1e-11);
	// n1_star 1e-7 absolute (uniroot tol 1e-10 in n; we see ~1e-10).
	const tolPower, tolN = 1e-11, 1e-7
	wp := worst{what: "trials_ni_means.tsv power"}
	wn := worst{what: "trials_ni_means.tsv n1_star"}
	powerRows, nRows := 0, 0
	for _, row := range reftable.Load(t, "trials_ni_means.tsv") {
		mc := niCase(t, row)
		if want := row.F(t, "power"); !math.IsNaN(want) {
			n1, n2 := row.F(t, "n1"), row.F(t, "n2")
			got := power.T.Power(mc, n1, n2)
			wp.note(row["id"], got, want)
			if !within(got, want, tolPower) {
				t.Errorf("%s: T.Power (NI) = %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
			}
			// Lower is better, mirrored: the same test with every
			// difference negated (the same reference row).
			low := mc
			low.Diff, low.Bound = -mc.Diff, -mc.Bound
			if got := power.T.Power(low, n1, n2); !within(got, want, tolPower) {
				t.Errorf("%s: T.Power (NI, lower is better) = %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
			}
			powerRows++
			continue
		}
		want := row.F(t, "n1_star")
		got, err := power.T.N(mc, row.F(t, "ratio"), row.F(t, "target"))
		if err != nil {
			t.Errorf("%s: T.N (NI): %v (%s)", row["id"], err, row["source"])
			continue
		}
		wn.note(row["id"], got, want)
		if math.Abs(got-want) > tolN {
			t.Errorf("%s: T.N (NI) = %.12g, want %.12g (%s)", row["id"], got, want, row["source"])
		}
		if math.Ceil(got) != math.Ceil(want) {
			t.Errorf("%s: ceil(T.N) = %v, want %v", row["id"], math.Ceil(got), math.Ceil(want))
		}
		nRows++
	}
	wp.log(t)
	wn.log(t)
	if powerRows != 9 || nRows != 6 {
		t.Errorf("checked %d power and %d n rows, want 9 and 6", powerRows, nRows)
	}
}

// TestMeansDFOverride checks that DF replaces the degrees of freedom and
// nothing else. Two groups of 8 with SD 1 have se = √(1/8 + 1/8) = 0.5,
// the same as 4 pairs with SD 1 (1/√4); with DF = 3 the test is then the
// one-sample t test of row t_10 of trials_t.tsv:
// power.t.test(n=4, delta=1, sd=1, type="one.sample", strict=TRUE)$power.
func TestMeansDFOverride(t *testing.T) {
	const want = 0.288752416401842 // trials_t.tsv, t_10
	mc := power.MeanComparison{Diff: 1, SD1: 1, Layout: power.TwoSample, Alpha: 0.05, Sides: 2, DF: 3}
	if got := power.T.Power(mc, 8, 8); !within(got, want, 1e-11) {
		t.Errorf("T.Power with DF 3 = %.15g, want %.15g", got, want)
	}
}

// designs is a spread of comparisons for the invariant tests.
func designs() []struct {
	name string
	mc   power.MeanComparison
	r    float64
} {
	type d = struct {
		name string
		mc   power.MeanComparison
		r    float64
	}
	return []d{
		{"two-sample two-sided", power.MeanComparison{Diff: 0.5, SD1: 1, Alpha: 0.05, Sides: 2}, 1},
		{"two-sample one-sided ratio 2", power.MeanComparison{Diff: -3, SD1: 10, Alpha: 0.025, Sides: 1}, 2},
		{"two-sample unequal SD ratio 0.5", power.MeanComparison{Diff: 1, SD1: 1, SD2: 2, Alpha: 0.05, Sides: 2}, 0.5},
		{"welch ratio 3", power.MeanComparison{Diff: 1, SD1: 2, SD2: 1, Welch: true, Alpha: 0.05, Sides: 2}, 3},
		{"welch one-sided", power.MeanComparison{Diff: 2, SD1: 1, SD2: 3, Welch: true, Alpha: 0.05, Sides: 1}, 1},
		{"paired", power.MeanComparison{Diff: 0.4, SD1: 1, Layout: power.Paired, Alpha: 0.05, Sides: 2}, 1},
		{"paired one-sided large effect", power.MeanComparison{Diff: 2, SD1: 1, Layout: power.Paired, Alpha: 0.01, Sides: 1}, 1},
		{"crossover", power.MeanComparison{Diff: 1, SD1: 3, Layout: power.Crossover, Alpha: 0.05, Sides: 2}, 1.5},
		{"non-inferiority higher better", power.MeanComparison{Diff: 0, SD1: 10, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -4}, 1},
		{"non-inferiority lower better", power.MeanComparison{Diff: 0.1, SD1: 1, Alpha: 0.05, Hypothesis: power.NonInferiority, Bound: 0.5}, 2},
		{"non-inferiority paired", power.MeanComparison{Diff: 0, SD1: 1, Layout: power.Paired, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -0.3}, 1},
		{"equivalence", power.MeanComparison{Diff: 0.1, SD1: 1, Alpha: 0.05, Hypothesis: power.Equivalence, Bound: 0.5}, 1},
		{"equivalence ratio 2", power.MeanComparison{Diff: -0.5, SD1: 2, Alpha: 0.025, Hypothesis: power.Equivalence, Bound: 1.5}, 2},
		{"equivalence crossover", power.MeanComparison{Diff: 0, SD1: 0.4, Layout: power.Crossover, Alpha: 0.05, Hypothesis: power.Equivalence, Bound: 0.2}, 1},
	}
}

var methods = []power.MeansMethod{power.Z, power.T}

// TestMeansPowerAtSolvedN: the power at the unrounded size that N returns
// is the target, and at the rounded-up size it is at least the target.
func TestMeansPowerAtSolvedN(t *testing.T) {
	// N solves to 1e-10 relative in n; power moves by much less than that.
	const tol = 1e-9
	for _, d := range designs() {
		for _, m := range methods {
			for _, target := range []float64{0.8, 0.9, 0.95} {
				n, err := m.N(d.mc, d.r, target)
				if err != nil || !(n > 0) {
					t.Errorf("%s, %v, power %g: N = %v, %v", d.name, m, target, n, err)
					continue
				}
				if got := m.Power(d.mc, n, d.r*n); math.Abs(got-target) > tol {
					t.Errorf("%s, %v: Power at N = %.12g is %.12g, want %g", d.name, m, n, got, target)
				}
				n1 := math.Ceil(n)
				if got := m.Power(d.mc, n1, math.Ceil(d.r*n1)); got < target {
					t.Errorf("%s, %v: Power at ceil(N) = %v is %.12g, below %g", d.name, m, n1, got, target)
				}
			}
		}
	}
}

// TestMeansNFallsAsDiffGrows: a larger difference (superiority), a true
// difference further on the better side (non-inferiority) or nearer zero
// (equivalence) needs fewer participants.
func TestMeansNFallsAsDiffGrows(t *testing.T) {
	for _, d := range designs() {
		for _, m := range methods {
			prev := math.Inf(1)
			for step := 0; step < 8; step++ {
				mc := d.mc
				var scale float64
				switch mc.Hypothesis {
				case power.Superiority:
					// |Diff| grows: 1, 1.25, ... times the planned one.
					scale = 1 + 0.25*float64(step)
					mc.Diff *= scale
				case power.NonInferiority:
					// The distance to the boundary grows.
					scale = 1 + 0.25*float64(step)
					mc.Diff = mc.Bound + (d.mc.Diff-mc.Bound)*scale
				case power.Equivalence:
					// |Diff| shrinks towards 0 from the planned value
					// (or from Bound/2 when that is 0).
					start := d.mc.Diff
					if start == 0 {
						start = mc.Bound / 2
					}
					scale = 1 - 0.125*float64(step)
					mc.Diff = start * scale
				}
				n, err := m.N(mc, d.r, 0.9)
				if err != nil {
					t.Errorf("%s, %v, Diff %g: %v", d.name, m, mc.Diff, err)
					break
				}
				// N never returns less than the smallest size with one
				// degree of freedom (2 pairs; n1 + r n1 = 3 otherwise);
				// once there, it stays.
				floor := 3 / (1 + d.r)
				if mc.Layout == power.Paired {
					floor = 2
				}
				if !(n < prev || n == floor && prev == floor) {
					t.Errorf("%s, %v: N = %.10g at Diff %g, not below %.10g", d.name, m, n, mc.Diff, prev)
				}
				prev = n
			}
		}
	}
}

// TestMeansCrossoverIsTwoSample: in an AB/BA crossover each participant's
// period difference d = y(period 1) − y(period 2), with SD σ_d (SD1), has
// mean τ + π in sequence AB and −τ + π in sequence BA (τ the treatment
// effect, π the period effect). The estimate τ̂ = (d̄_AB − d̄_BA)/2 has
// variance (σ_d/2)²(1/n1 + 1/n2), and its t test has n1 + n2 − 2 degrees
// of freedom (Senn 2002, chapter 3): exactly a two-sample comparison of
// n1 and n2 observations with SD σ_d/2. Power, N and the detectable
// difference must therefore agree with that two-sample comparison.
func TestMeansCrossoverIsTwoSample(t *testing.T) {
	for _, hyp := range []power.Hypothesis{power.Superiority, power.NonInferiority, power.Equivalence} {
		co := power.MeanComparison{Diff: 0.3, SD1: 1.2, Layout: power.Crossover, Alpha: 0.05, Sides: 2, Hypothesis: hyp}
		switch hyp {
		case power.NonInferiority:
			co.Bound = -0.4
		case power.Equivalence:
			co.Bound = 0.6
			co.Diff = 0.1
		}
		ts := co
		ts.Layout, ts.SD1 = power.TwoSample, co.SD1/2
		for _, m := range methods {
			for _, n := range [][2]float64{{6, 6}, {10, 14}, {40, 25}} {
				a, b := m.Power(co, n[0], n[1]), m.Power(ts, n[0], n[1])
				if !within(a, b, 1e-14) {
					t.Errorf("%v %v: crossover power %.15g, two-sample with SD/2 %.15g at %v", m, hyp, a, b, n)
				}
			}
			for _, r := range []float64{1, 0.5, 2} {
				a, errA := m.N(co, r, 0.85)
				b, errB := m.N(ts, r, 0.85)
				if errA != nil || errB != nil || !within(a, b, 1e-12) {
					t.Errorf("%v %v ratio %g: crossover N %.12g (%v), two-sample with SD/2 %.12g (%v)", m, hyp, r, a, errA, b, errB)
				}
			}
			if hyp == power.Superiority {
				a, errA := m.DetectableDiff(co, 12, 12, 0.8, 1)
				b, errB := m.DetectableDiff(ts, 12, 12, 0.8, 1)
				if errA != nil || errB != nil || !within(a, b, 1e-12) {
					t.Errorf("%v: crossover detectable %.12g (%v), two-sample with SD/2 %.12g (%v)", m, a, errA, b, errB)
				}
			}
		}
	}
}

// TestMeansDetectableDiffRoundTrip: at the unrounded size solved for a
// planned difference, the detectable difference is the planned one, above
// zero (dir > 0) and, mirrored, below it (dir < 0).
func TestMeansDetectableDiffRoundTrip(t *testing.T) {
	// N is solved to 1e-10 relative in n, the difference to 1e-12 of its
	// bracket; the difference moves like √n, so 1e-8 relative is ample.
	const tol = 1e-8
	for _, d := range designs() {
		if d.mc.Hypothesis != power.Superiority {
			continue
		}
		for _, m := range methods {
			for _, target := range []float64{0.8, 0.9} {
				n, err := m.N(d.mc, d.r, target)
				if err != nil {
					t.Errorf("%s, %v: N: %v", d.name, m, err)
					continue
				}
				planned := math.Abs(d.mc.Diff)
				for _, dir := range []int{1, -1} {
					got, err := m.DetectableDiff(d.mc, n, d.r*n, target, dir)
					want := float64(dir) * planned
					if err != nil || !within(got, want, tol) {
						t.Errorf("%s, %v, dir %d: DetectableDiff at N = %.10g is %.12g (%v), want %.12g", d.name, m, dir, n, got, err, want)
					}
				}
			}
		}
	}
}

// TestMeansZNeedsNoMoreThanT: for power of a half or more, the normal
// approximation (known SD, critical value z_α < t_α) never asks for more
// participants than the t test. This holds for every hypothesis here,
// including equivalence, where trials_tost.tsv's power_z exceeds the exact
// power on every row.
func TestMeansZNeedsNoMoreThanT(t *testing.T) {
	for _, d := range designs() {
		for _, target := range []float64{0.5, 0.8, 0.9, 0.99} {
			nz, errZ := power.Z.N(d.mc, d.r, target)
			nt, errT := power.T.N(d.mc, d.r, target)
			if errZ != nil || errT != nil {
				t.Errorf("%s, power %g: Z.N %v, T.N %v", d.name, target, errZ, errT)
				continue
			}
			if nz > nt {
				t.Errorf("%s, power %g: Z.N = %.10g exceeds T.N = %.10g", d.name, target, nz, nt)
			}
		}
	}
}

// TestMeansSignSymmetry: the power of a superiority test depends on |Diff|
// only (a one-sided test is taken in the direction of the difference).
func TestMeansSignSymmetry(t *testing.T) {
	for _, d := range designs() {
		if d.mc.Hypothesis != power.Superiority {
			continue
		}
		neg := d.mc
		neg.Diff = -d.mc.Diff
		for _, m := range methods {
			if a, b := m.Power(d.mc, 20, 20*d.r), m.Power(neg, 20, 20*d.r); a != b {
				t.Errorf("%s, %v: power %.15g at Diff, %.15g at −Diff", d.name, m, a, b)
			}
		}
	}
}

// TestMeansPowerIsAProbability: power lies in [0, 1], also for a
// non-inferiority test whose true difference is far on the worse side.
func TestMeansPowerIsAProbability(t *testing.T) {
	// Fixed (was skipped as a bug): "BUG: T.Power can return a slightly negative power for a non-inferiority test whose true "
	// difference lies well on the worse side: MeanComparison{Diff: -0.55, SD1: 1, Alpha: 0.025,
	// Hypothesis: NonInferiority, Bound: -0.1}, n1 = n2 = 501 gives -1.15e-14 (want a value in [0, 1];
	// the true power is ~1e-19); the most negative on this grid is -7.2e-14 (Diff -0.49, n 501). gonum's NoncentralT.CDF at q < 0 is 1 − (series), which can exceed 1
	// by ~1e-13; upperNCT does not clamp.")
	mc := power.MeanComparison{SD1: 1, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -0.1}
	for _, n := range []float64{3, 10, 50, 200, 501, 1000, 3000} {
		for d := -3.0; d <= 1; d += 0.01 {
			mc.Diff = d
			for _, m := range methods {
				if p := m.Power(mc, n, n); !(p >= 0 && p <= 1) {
					t.Errorf("%v.Power(NI, Diff %g, n %g) = %g, not a probability", m, d, n, p)
				}
			}
		}
	}
}

// TestMeansTPowerLargeNoncentrality: with a noncentrality above ~38.6 the
// t test rejects with probability 1 to double precision. The bound: with
// T' = (Z + ncp)/S, S = √(χ²_df/df), P(T' ≤ c) ≤ P(Z ≤ −ncp/2) +
// P(S ≥ ncp/(2c)), and for ncp ≥ 38, c < 2.4 and df ≥ 100 both terms are
// below 1e-70 (normal and chi-square tail bounds). So power must be 1
// (within rounding) and can never fall below the power at a smaller n.
func TestMeansTPowerLargeNoncentrality(t *testing.T) {
	// Fixed (was skipped as a bug): "BUG: one-sided T power collapses to 0 once the noncentrality exceeds ~38.6 "
	// (exp(−ncp²/2) underflows and gonum's NoncentralT.CDF switches to its normal approximation,
	// which for q < 0 returns the wrong tail). TTestPower(40, 398, 0.05, 1) = 0, want 1;
	// T.Power(MeanComparison{Diff: 2, SD1: 1, Layout: Paired, Alpha: 0.05, Sides: 1}, 373, 0) = 0,
	// want 1 (at 372 pairs it is 1; Z.Power gives 1). Non-inferiority (one-sided) is hit the same way.
	// Two-sided power comes out 1 only because both tails are swapped (upper 0 + lower 1).")
	for _, ncp := range []float64{38, 39, 40, 60, 100} {
		for _, sides := range []int{1, 2} {
			if got := power.TTestPower(ncp, 398, 0.05, sides); !(got > 1-1e-12 && got <= 1) {
				t.Errorf("TTestPower(%g, 398, 0.05, %d) = %.15g, want 1", ncp, sides, got)
			}
		}
	}
	mc := power.MeanComparison{Diff: 2, SD1: 1, Layout: power.Paired, Alpha: 0.05, Sides: 1}
	for _, n := range []float64{372, 373, 1000} {
		if got := power.T.Power(mc, n, 0); !(got > 1-1e-12) {
			t.Errorf("T.Power(paired, Diff 2, one-sided) at n = %g is %.15g, want 1", n, got)
		}
	}
	ni := power.MeanComparison{Diff: 0, SD1: 1, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -1}
	if got := power.T.Power(ni, 2000, 2000); !(got > 1-1e-12) { // ncp = 1/√(2/2000) = 31.6 is fine
		t.Errorf("T.Power(NI) at 2000 per group is %.15g, want 1", got)
	}
	if got := power.T.Power(ni, 4000, 4000); !(got > 1-1e-12) { // ncp = 44.7
		t.Errorf("T.Power(NI) at 4000 per group is %.15g, want 1", got)
	}
}

// TestMeansPowerMonotoneInN: more participants never lower the power.
// The sizes start at 8 per group: the exact TOST power is genuinely not
// monotone at tiny sizes (for Diff 0.1, margin 0.5, SD 1 it falls from
// 0.0038 at n = 2 to 0.00045 at n = 6 before rising, where the critical
// value shrinks faster than the SD estimate settles; tostByMeanIntegral
// shows the same). They stop below 300, where the noncentrality of the
// designs stays under 38 (see TestMeansTPowerLargeNoncentrality).
func TestMeansPowerMonotoneInN(t *testing.T) {
	for _, d := range designs() {
		for _, m := range methods {
			prev := -1.0
			for n := 8.0; n <= 300; n *= 1.2 {
				p := m.Power(d.mc, n, d.r*n)
				if math.IsNaN(p) || p < prev-1e-12 {
					t.Errorf("%s, %v: power %.15g at n %.4g, below %.15g at the previous n", d.name, m, p, n, prev)
				}
				prev = p
			}
		}
	}
}

// TestMeansNErrors: N reports why no size exists, and a failure is never
// a silent NaN: either a positive finite size and no error, or an error.
func TestMeansNErrors(t *testing.T) {
	cases := []struct {
		name string
		mc   power.MeanComparison
		want error
	}{
		{"no difference", power.MeanComparison{Diff: 0, SD1: 1, Alpha: 0.05, Sides: 2}, power.ErrNothingToDetect},
		{"NI at the boundary", power.MeanComparison{Diff: -1, SD1: 1, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -1}, power.ErrUnreachable},
		{"NI worse than the boundary", power.MeanComparison{Diff: -2, SD1: 1, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -1}, power.ErrUnreachable},
		{"NI lower better, above the boundary", power.MeanComparison{Diff: 2, SD1: 1, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: 1}, power.ErrUnreachable},
		{"equivalence outside the margin", power.MeanComparison{Diff: 1.2, SD1: 1, Alpha: 0.05, Hypothesis: power.Equivalence, Bound: 1}, power.ErrUnreachable},
		{"equivalence on the margin", power.MeanComparison{Diff: -1, SD1: 1, Alpha: 0.05, Hypothesis: power.Equivalence, Bound: 1}, power.ErrUnreachable},
	}
	for _, c := range cases {
		for _, m := range methods {
			n, err := m.N(c.mc, 1, 0.8)
			if !errors.Is(err, c.want) || !math.IsNaN(n) {
				t.Errorf("%s, %v: N = %v, %v; want NaN, %v", c.name, m, n, err, c.want)
			}
		}
	}
	// A grid of ordinary inputs: never NaN without an error.
	for _, d := range designs() {
		for _, m := range methods {
			for _, scale := range []float64{0.05, 0.3, 1, 3, 10} {
				mc := d.mc
				mc.SD1 *= scale
				mc.SD2 *= scale
				for _, target := range []float64{0.5, 0.8, 0.99} {
					n, err := m.N(mc, d.r, target)
					if err == nil && !(n > 0 && !math.IsInf(n, 0)) {
						t.Errorf("%s, %v, SD ×%g, power %g: N = %v with no error", d.name, m, scale, target, n)
					}
				}
			}
		}
	}
}

// TestMeansPanics: impossible inputs are programming errors.
func TestMeansPanics(t *testing.T) {
	cases := map[string]power.MeanComparison{
		"SD1 zero":                {Diff: 1, SD1: 0, Alpha: 0.05, Sides: 2},
		"SD2 negative":            {Diff: 1, SD1: 1, SD2: -1, Alpha: 0.05, Sides: 2},
		"equivalence no margin":   {Diff: 0, SD1: 1, Alpha: 0.05, Hypothesis: power.Equivalence},
		"equivalence margin < 0":  {Diff: 0, SD1: 1, Alpha: 0.05, Hypothesis: power.Equivalence, Bound: -1},
		"one pair, no df (power)": {Diff: 1, SD1: 1, Layout: power.Paired, Alpha: 0.05, Sides: 2},
	}
	for name, mc := range cases {
		n := 10.0
		if mc.Layout == power.Paired {
			n = 1
		}
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: Power did not panic", name)
				}
			}()
			power.T.Power(mc, n, n)
		}()
	}
	func() {
		defer func() {
			if recover() == nil {
				t.Error("DetectableDiff of a non-inferiority test did not panic")
			}
		}()
		mc := power.MeanComparison{SD1: 1, Alpha: 0.05, Hypothesis: power.NonInferiority, Bound: -1}
		_, _ = power.T.DetectableDiff(mc, 10, 10, 0.8, 1)
	}()
}

func TestMeansMethodString(t *testing.T) {
	for m, want := range map[power.MeansMethod]string{
		power.Z:              "z",
		power.T:              "t",
		power.MeansMethod(0): "MeansMethod(0)",
	} {
		if got := m.String(); got != want {
			t.Errorf("String() = %q, want %q", got, want)
		}
	}
	if got := fmt.Sprint(power.T); got != "t" {
		t.Errorf("fmt.Sprint(T) = %q", got)
	}
}
