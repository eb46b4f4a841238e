package power

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"

	"enough/power/reftable"
)

// The tests of the group-sequential models (seqsim.go). Outside values:
//
//   - seqsim_canonical.tsv (scipy multivariate_normal boxes, each checked
//     by recursive numerical integration; seqsim_canonical.py): crossing
//     probabilities of the canonical joint distribution, and the Pocock
//     and O'Brien–Fleming-shaped nominal levels;
//   - seqsim_binomial_stats.tsv, seqsim_means_*.tsv, seqsim_survival_*.tsv
//     (prop.test, fisher.test, t.test, survdiff on recorded data;
//     seqsim_make.R): the statistic and p-value of a look;
//   - seqsim_binomial_exact.tsv (seqsim_make.R): exact crossing
//     probabilities of sequential tests of two binomials, by convolution
//     over every accrued table;
//   - seqsim_sim.tsv (seqsim_sim.R): independent R simulations on raw data
//     (t.test, survdiff at each look).

// floats parses a comma-separated list of numbers of a reference row.
func seqFloats(t *testing.T, row reftable.Row, col string) []float64 {
	t.Helper()
	var out []float64
	for _, f := range strings.Split(row[col], ",") {
		x, err := strconv.ParseFloat(f, 64)
		if err != nil {
			t.Fatalf("%s: column %s: %v", row["id"], col, err)
		}
		out = append(out, x)
	}
	return out
}

// ints parses a comma-separated list of whole numbers of a reference row.
func seqInts(t *testing.T, row reftable.Row, col string) []int {
	t.Helper()
	var out []int
	for _, x := range seqFloats(t, row, col) {
		out = append(out, int(x))
	}
	return out
}

// seqCheckLooks checks the share of R replicates first crossing at each
// look, and their total, against want (one probability per look) within
// k standard errors, √(p(1 − p)/R); when the reference is itself a
// simulation of refReps replicates (else 0), its variance p(1 − p)/refReps
// is added.
func seqCheckLooks(t *testing.T, label string, res SimResult, want []float64, k float64, refReps float64) {
	t.Helper()
	if len(res.ByLook) != len(want) {
		t.Fatalf("%s: %d looks simulated, %d in the reference", label, len(res.ByLook), len(want))
	}
	R := float64(res.Replicates)
	cmp := func(what string, got, p float64) {
		v := p * (1 - p) / R
		if refReps > 0 {
			v += p * (1 - p) / refReps
		}
		se := math.Sqrt(v)
		t.Logf("%s %s: simulated %.5f, reference %.5f, z = %+.2f", label, what, got, p, (got-p)/se)
		if !(math.Abs(got-p) < k*se) {
			t.Errorf("%s %s: simulated %.5f, reference %.5f, beyond %g SE (%.2g)", label, what, got, p, k, se)
		}
	}
	total := 0.0
	for i, p := range want {
		cmp(fmt.Sprintf("look %d", i+1), float64(res.ByLook[i])/R, p)
		total += p
	}
	cmp("total", res.Power(), total)
}

// TestSequentialZReference checks the canonical model against scipy's
// crossing probabilities (seqsim_canonical.tsv): the two-sided Pocock
// design with K = 5 and α = 0.05 under the null (type I error) and at a
// drift θ = 3.1 (power), an O'Brien–Fleming-shaped one-sided design at
// unequal information fractions under the null and at θ = 3, and the
// Pocock designs with K = 3. The one-sided rows are run again with Dir −1
// and the drift negated: by the symmetry of the normal distribution the
// crossing probabilities are the same. Each look's share of 2·10⁶
// replicates, and the total, must be within 4 Monte-Carlo SE of scipy's
// value (scipy's own error, below 2e-7 by the cross-check of its script,
// is negligible beside an SE of 1e-4 or more).
//
// The tolerance is 4 SE, not 3: these are 46 comparisons, and at 3 SE a
// correct model fails one of them with probability about 12% (it did, at
// 3.3 SE, on the first look of pocock5_null with 10⁶ replicates; 4 × 10⁷
// replicates then gave 0.01577 to 0.01582 against 0.015814). At 4 SE the
// family fails by chance with probability about 0.3%.
func TestSequentialZReference(t *testing.T) {
	const R = 2_000_000
	for i, row := range reftable.Load(t, "seqsim_canonical.tsv") {
		c := SequentialZ{Times: seqFloats(t, row, "times"), Drift: row.F(t, "drift"), Nominal: seqFloats(t, row, "nominal"),
			Sides: row.I(t, "sides"), Dir: row.I(t, "dir")}
		want := seqFloats(t, row, "cross")
		seqCheckLooks(t, row["id"], simRun(t, NewSequentialZ(c), R, uint64(4000+i)), want, 4, 0)
		if c.Sides == 1 {
			c.Dir, c.Drift = -c.Dir, -c.Drift
			seqCheckLooks(t, row["id"]+" mirrored", simRun(t, NewSequentialZ(c), R, uint64(4100+i)), want, 4, 0)
		}
	}
}

// TestPocockConstantsFromMemory cross-checks the constants the reference
// script solved for against the published tables, from memory: Pocock's
// two-sided constants at α = 0.05 are 2.413 for K = 5 and 2.289 for
// K = 3 (Pocock 1977, Biometrika 64:191–199, Table 1; Jennison & Turnbull
// 2000, Table 2.1). The tables give three decimals.
func TestPocockConstantsFromMemory(t *testing.T) {
	want := map[string]float64{"pocock5_null": 2.413, "pocock3_null": 2.289}
	for _, row := range reftable.Load(t, "seqsim_canonical.tsv") {
		w, ok := want[row["id"]]
		if !ok {
			continue
		}
		delete(want, row["id"])
		c := seqFloats(t, row, "crit")[0]
		if math.Abs(c-w) > 5e-4 {
			t.Errorf("%s: scipy's constant %.6f, the table's %.3f", row["id"], c, w)
		}
		// The nominal level is the two-sided tail of the constant.
		if a := seqFloats(t, row, "nominal")[0]; math.Abs(a-2*normUpper(c)) > 1e-15 {
			t.Errorf("%s: nominal %v, 2(1 − Φ(%v)) = %v", row["id"], a, c, 2*normUpper(c))
		}
	}
	if len(want) > 0 {
		t.Errorf("rows missing: %v", want)
	}
}

// canonical returns the row of seqsim_canonical.tsv with the id.
func seqCanonical(t *testing.T, id string) reftable.Row {
	t.Helper()
	for _, row := range reftable.Load(t, "seqsim_canonical.tsv") {
		if row["id"] == id {
			return row
		}
	}
	t.Fatalf("seqsim_canonical.tsv: no row %s", id)
	return nil
}

// seqFlip returns nominal levels a hair above and below p: a look must
// cross at the first and not at the second. The relative gap 10⁻⁵ is far
// beyond the error of the critical values (10⁻¹² relative for the normal
// and t quantiles, 10⁻⁸ for Welch's interpolated table) and of the
// reference p-values, and far below any gap between neighbouring
// p-values of the recorded data.
func seqFlip(p float64) (above, below float64) { return p * (1 + 1e-5), p * (1 - 1e-5) }

// TestSequentialBinomialsStats checks the rule of a look against R on
// recorded tables (seqsim_binomial_stats.tsv: prop.test with and without
// Yates' correction, fisher.test, the Wald z, and the margin tests, the
// score test's restricted MLE found by optimize): in a 3-look design whose
// second look has the table's sizes, the second look crosses at a nominal
// level just above R's p-value and not just below it. The margin tests'
// z must also equal R's (10⁻⁹ relative; the score test's restricted MLE
// comes from a cubic here and from numerical maximisation there).
func TestSequentialBinomialsStats(t *testing.T) {
	tests := map[string]BinaryTest{"chi-square": ChiSquare, "chi-square-yates": ChiSquareYates, "fisher": Fisher, "z-unpooled": ZUnpooled}
	margins := map[string]MarginMethod{"farrington-manning": FarringtonManning, "blackwelder": Blackwelder}
	for _, row := range reftable.Load(t, "seqsim_binomial_stats.tsv") {
		n1, n2, x1, x2 := row.I(t, "n1"), row.I(t, "n2"), row.I(t, "x1"), row.I(t, "x2")
		p := row.F(t, "p")
		for _, flip := range []bool{true, false} {
			a, b := seqFlip(p)
			if !flip {
				a = b
			}
			c := SequentialBinomials{N1: []int{n1 - 5, n1, n1 + 5}, N2: []int{n2 - 3, n2, n2 + 7}, P1: 0.5, P2: 0.5,
				Nominal: []float64{0.01, a, 0.02}, Sides: row.I(t, "sides"), Dir: row.I(t, "dir")}
			if mt, ok := margins[row["test"]]; ok {
				c.Margin, c.MarginTest = row.F(t, "margin"), mt
			} else {
				c.Test = tests[row["test"]]
			}
			w := NewSequentialBinomials(c).NewWorker().(*seqBinomialsWorker)
			if got := w.crosses(1, x1, x2); got != flip {
				t.Errorf("%s: at nominal %v (R's p %v) the look crosses: %v (%s)", row["id"], a, p, got, row["source"])
			}
		}
		if mt, ok := margins[row["test"]]; ok {
			num, v := marginStat(mt, x1, n1, x2, n2, row.F(t, "margin"))
			z, want := num/math.Sqrt(v), row.F(t, "stat")
			if math.Abs(z-want) > 1e-9*math.Abs(want) {
				t.Errorf("%s: z = %.15g, R %.15g (%s)", row["id"], z, want, row["source"])
			}
		}
	}
}

// TestSequentialBinomialsExact checks the simulated crossing probabilities
// of 3-look tests of two binomials against R's exact ones
// (seqsim_binomial_exact.tsv: the accrued tables' distribution carried
// from look to look by convolution with the binomial batches, each table
// decided by prop.test, fisher.test, the Wald z or the margin tests):
// type I errors and powers, two- and one-sided, equal and unequal groups,
// Pocock and increasing nominal levels. Each look's share of 400,000
// replicates and the total must lie within 4 Monte-Carlo SE of the exact
// value (32 comparisons; a correct model fails one with probability about
// 0.2%). The null rows also show what the finite sizes change: the exact
// type I error of the chi-square test at the Pocock levels is 0.05002
// against the canonical 0.05.
func TestSequentialBinomialsExact(t *testing.T) {
	const R = 400_000
	tests := map[string]BinaryTest{"chi-square": ChiSquare, "chi-square-yates": ChiSquareYates, "fisher": Fisher, "z-unpooled": ZUnpooled}
	margins := map[string]MarginMethod{"farrington-manning": FarringtonManning, "blackwelder": Blackwelder}
	for i, row := range reftable.Load(t, "seqsim_binomial_exact.tsv") {
		c := SequentialBinomials{N1: seqInts(t, row, "n1"), N2: seqInts(t, row, "n2"), P1: row.F(t, "p1"), P2: row.F(t, "p2"),
			Nominal: seqFloats(t, row, "nominal"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir")}
		if mt, ok := margins[row["test"]]; ok {
			c.Margin, c.MarginTest = row.F(t, "margin"), mt
		} else {
			c.Test = tests[row["test"]]
		}
		seqCheckLooks(t, row["id"], simRun(t, NewSequentialBinomials(c), R, uint64(4200+i)), seqFloats(t, row, "cross"), 4, 0)
	}
}

// TestSequentialBinomialsOneLook: a look at level α decides every table as
// the fixed-sample test does ([RejectionTable], [MarginRejectionTable],
// both checked against R elsewhere), for every test, sides, direction and
// a few sizes, at the first of two looks and at the second.
func TestSequentialBinomialsOneLook(t *testing.T) {
	for _, sz := range [][2]int{{1, 1}, {7, 12}, {30, 30}} {
		for _, alpha := range []float64{0.05, 0.01} {
			type plan struct {
				c     SequentialBinomials
				fixed []bool
			}
			var plans []plan
			for _, test := range []BinaryTest{ChiSquare, ChiSquareYates, Fisher, ZUnpooled} {
				for _, sd := range [][2]int{{2, 0}, {1, 1}, {1, -1}} {
					plans = append(plans, plan{SequentialBinomials{Sides: sd[0], Dir: sd[1], Test: test},
						RejectionTable(test, sz[0], sz[1], alpha, sd[0], sd[1])})
				}
			}
			for _, mt := range []MarginMethod{FarringtonManning, Blackwelder} {
				for _, d0 := range []float64{-0.15, 0.1} {
					plans = append(plans, plan{SequentialBinomials{Sides: 1, Margin: d0, MarginTest: mt},
						MarginRejectionTable(mt, sz[0], sz[1], d0, alpha)})
				}
			}
			for _, p := range plans {
				c := p.c
				c.P1, c.P2 = 0.3, 0.3
				c.N1, c.N2, c.Nominal = []int{sz[0]}, []int{sz[1]}, []float64{alpha}
				one := NewSequentialBinomials(c).NewWorker().(*seqBinomialsWorker)
				c.N1, c.N2, c.Nominal = []int{sz[0], sz[0] + 4}, []int{sz[1], sz[1] + 4}, []float64{alpha, alpha}
				first := NewSequentialBinomials(c).NewWorker().(*seqBinomialsWorker)
				c.N1, c.N2 = []int{1, sz[0]}, []int{1, sz[1]}
				second := NewSequentialBinomials(c).NewWorker().(*seqBinomialsWorker)
				for x1 := 0; x1 <= sz[0]; x1++ {
					for x2 := 0; x2 <= sz[1]; x2++ {
						want := p.fixed[x1*(sz[1]+1)+x2]
						if one.crosses(0, x1, x2) != want || first.crosses(0, x1, x2) != want || second.crosses(1, x1, x2) != want {
							t.Errorf("%v %v margin %v %s, sizes %v, alpha %v, table (%d, %d): fixed-sample %v",
								c.Test, c.MarginTest, c.Margin, fmt.Sprint(c.Sides, c.Dir), sz, alpha, x1, x2, want)
						}
					}
				}
			}
		}
	}
}

// seqBatchStats returns the mean and the sum of squared deviations of xs,
// the inputs a batch of recorded data gives the model (two passes).
func seqBatchStats(xs []float64) (mean, ss float64) {
	for _, x := range xs {
		mean += x
	}
	mean /= float64(len(xs))
	for _, x := range xs {
		ss += (x - mean) * (x - mean)
	}
	return mean, ss
}

// TestSequentialMeansStats feeds recorded normal data (seqsim_means_data.tsv)
// batch by batch into the model's update and checks each look against R
// (seqsim_means_stats.tsv): the accrued means and sums of squares against
// mean() and sum((x − mean(x))²) (10⁻¹²), the t statistic and its degrees
// of freedom against t.test (10⁻¹⁰; Student's and Welch's, superiority
// and a bound), and the crossing rule against t.test's p-values, two-sided
// and one-sided in the direction of the smaller p. Batches of one
// participant are included.
func TestSequentialMeansStats(t *testing.T) {
	data := map[string]map[[2]int][]float64{} // id → (group, look) → values
	for _, row := range reftable.Load(t, "seqsim_means_data.tsv") {
		if data[row["id"]] == nil {
			data[row["id"]] = map[[2]int][]float64{}
		}
		key := [2]int{row.I(t, "group"), row.I(t, "look")}
		data[row["id"]][key] = append(data[row["id"]][key], row.F(t, "value"))
	}
	stats := reftable.Load(t, "seqsim_means_stats.tsv")
	sizes := map[string][2][]int{}
	for _, row := range stats {
		s := sizes[row["id"]]
		if k := row.I(t, "look"); len(s[0]) < k {
			s[0], s[1] = append(s[0], row.I(t, "n1")), append(s[1], row.I(t, "n2"))
		}
		sizes[row["id"]] = s
	}
	rel := func(got, want float64) float64 { return math.Abs(got-want) / math.Max(1e-300, math.Abs(want)) }
	for _, row := range stats {
		id, k := row["id"], row.I(t, "look")
		welch := row["test"] == "welch"
		for _, sides := range []int{2, 1} {
			p, dir := row.F(t, "p2"), 0
			if sides == 1 {
				p, dir = row.F(t, "pgreater"), 1
				if pl := row.F(t, "pless"); pl < p {
					p, dir = pl, -1
				}
			}
			for _, flip := range []bool{true, false} {
				a, b := seqFlip(p)
				if !flip {
					a = b
				}
				nominal := []float64{0.3, 0.3, 0.3}
				nominal[k-1] = a
				m := NewSequentialMeans(SequentialMeans{N1: sizes[id][0], N2: sizes[id][1], SD1: 1, Welch: welch,
					Nominal: nominal, Sides: sides, Dir: dir, Bound: row.F(t, "bound")})
				w := m.NewWorker().(*seqMeansWorker)
				for j := 1; j <= k; j++ {
					for g, st := range []*[3]*float64{{&w.n1, &w.x1, &w.ss1}, {&w.n2, &w.x2, &w.ss2}} {
						xs := data[id][[2]int{g + 1, j}]
						if len(xs) == 0 {
							continue
						}
						mean, ss := seqBatchStats(xs)
						joinBatch(st[0], st[1], st[2], float64(len(xs)), mean, ss)
					}
				}
				if flip && sides == 2 {
					if w.n1 != row.F(t, "n1") || w.n2 != row.F(t, "n2") ||
						rel(w.x1, row.F(t, "mean1")) > 1e-12 || rel(w.x2, row.F(t, "mean2")) > 1e-12 ||
						rel(w.ss1, row.F(t, "ss1")) > 1e-12 || rel(w.ss2, row.F(t, "ss2")) > 1e-12 {
						t.Errorf("%s look %d: n %v %v, means %.15g %.15g, SS %.15g %.15g; R: %s %s, %s %s, %s %s", id, k,
							w.n1, w.n2, w.x1, w.x2, w.ss1, w.ss2, row["n1"], row["n2"], row["mean1"], row["mean2"], row["ss1"], row["ss2"])
					}
					tt, df := w.tStat()
					if rel(tt, row.F(t, "t")) > 1e-10 || rel(df, row.F(t, "df")) > 1e-10 {
						t.Errorf("%s look %d %s bound %s: t = %.15g on %.15g df; R %s on %s (%s)", id, k, row["test"], row["bound"],
							tt, df, row["t"], row["df"], row["source"])
					}
				}
				if got := w.crosses(k - 1); got != flip {
					t.Errorf("%s look %d %s bound %s, sides %d dir %d: at nominal %v (R's p %v) crosses: %v", id, k, row["test"],
						row["bound"], sides, dir, a, p, got)
				}
			}
		}
	}
}

// seqSimRows returns the rows of seqsim_sim.tsv of a model, with their
// parameters parsed from the params column (name=value pairs).
func seqSimRows(t *testing.T, model string) []reftable.Row {
	t.Helper()
	var out []reftable.Row
	for _, row := range reftable.Load(t, "seqsim_sim.tsv") {
		if row["model"] != model {
			continue
		}
		for _, kv := range strings.Fields(row["params"]) {
			k, v, ok := strings.Cut(kv, "=")
			if !ok {
				t.Fatalf("%s: params %q", row["id"], row["params"])
			}
			row[k] = v
		}
		out = append(out, row)
	}
	if len(out) == 0 {
		t.Fatalf("seqsim_sim.tsv: no %s rows", model)
	}
	return out
}

// seqRefShares returns the shares of a row of seqsim_sim.tsv by look.
func seqRefShares(t *testing.T, row reftable.Row) []float64 {
	t.Helper()
	reps := row.F(t, "reps")
	var out []float64
	for _, c := range seqFloats(t, row, "counts") {
		out = append(out, c/reps)
	}
	return out
}

// TestSequentialMeansSim checks the model, drawn through sufficient
// statistics, against R simulations on raw data (seqsim_sim.tsv: 20,000
// replicates of rnorm data, t.test at each look): Welch's test with
// unequal SDs, Student's test for non-inferiority with a bound and unequal
// groups, and Student's test with unequal SDs. Each look's share and the
// total must lie within 4 SE of the difference of the two simulations,
// √(p(1 − p)(1/R + 1/R_R)), with R = 400,000 here.
func TestSequentialMeansSim(t *testing.T) {
	const R = 400_000
	for i, row := range seqSimRows(t, "means") {
		c := SequentialMeans{N1: seqInts(t, row, "N1"), N2: seqInts(t, row, "N2"), Diff: row.F(t, "diff"), SD1: row.F(t, "sd1"),
			SD2: row.F(t, "sd2"), Welch: row["welch"] == "TRUE", Nominal: seqFloats(t, row, "nominal"),
			Sides: row.I(t, "sides"), Dir: row.I(t, "dir"), Bound: row.F(t, "bound")}
		seqCheckLooks(t, row["id"], simRun(t, NewSequentialMeans(c), R, uint64(4300+i)), seqRefShares(t, row), 4, row.F(t, "reps"))
	}
}

// TestSequentialPocockTypeI: the type I error of 3-look designs at the
// Pocock nominal level, two-sided α = 0.05 (seqsim_canonical.tsv, row
// pocock3_null: 0.0220516 at each look), for Student's and Welch's t tests
// at 150 per group per look and the log-rank test at 100, 200 and 300
// events (equal allocation and hazards: information fractions 1/3, 2/3
// and 1), against scipy's crossing probabilities of the canonical joint
// distribution. The finite-sample statistics follow that distribution only
// approximately; at these sizes their departures (of the t statistics at
// 298 to 898 degrees of freedom, of the log-rank score at 100 events and
// more) are of order 1/df and 1/d, well below the Monte-Carlo SE of the
// comparisons (≥ 2.4e-4 for the looks, 3.4e-4 for the total at 400,000
// replicates; 7e-4 for the total at 100,000), so the tolerance is that of
// chance alone: 4 SE, each comparison failing a correct model with
// probability 6e-5. (The binomial models are checked against R's exact
// sequential probabilities instead, TestSequentialBinomialsExact, whose
// null row is the same design at 150 per group per look.)
func TestSequentialPocockTypeI(t *testing.T) {
	row := seqCanonical(t, "pocock3_null")
	nominal, want := seqFloats(t, row, "nominal"), seqFloats(t, row, "cross")
	n := []int{150, 300, 450}
	for i, welch := range []bool{false, true} {
		c := SequentialMeans{N1: n, N2: n, SD1: 2, Welch: welch, Nominal: nominal, Sides: 2}
		seqCheckLooks(t, fmt.Sprintf("means welch=%v", welch), simRun(t, NewSequentialMeans(c), 400_000, uint64(4400+i)), want, 4, 0)
	}
	c := SequentialSurvival{N1: 250, N2: 250, H1: 0.3, H2: 0.3, Entry: Entry{Accrual: 1, FollowUp: 4, Dropout: 0.02},
		Events: []int{100, 200, 300}, Nominal: nominal, Sides: 2}
	seqCheckLooks(t, "log-rank", simRun(t, NewSequentialSurvival(c), 100_000, 4410), want, 4, 0)
}

// TestSequentialSurvivalStats loads recorded survival data
// (seqsim_survival_data.tsv: entry, event and dropout times) into a worker
// and checks each look against R (seqsim_survival_stats.tsv): the look's
// calendar time, the D-th observed event's entry plus event time or the
// end of the study, exactly; and U = O1 − E1, V and the chi-square of
// survdiff on the data censored at that time (10⁻¹⁰). One data set has
// accrual and dropout, its last look at the end of the study (fewer events
// than asked); the other has everyone entering together and no dropout.
func TestSequentialSurvivalStats(t *testing.T) {
	type person struct{ e, t, c float64 }
	data := map[string][]person{}
	sizes := map[string][3]float64{}
	for _, row := range reftable.Load(t, "seqsim_survival_data.tsv") {
		data[row["id"]] = append(data[row["id"]], person{row.F(t, "entry"), row.F(t, "t"), row.F(t, "c")})
		sizes[row["id"]] = [3]float64{row.F(t, "n1"), row.F(t, "n2"), row.F(t, "end")}
	}
	stats := reftable.Load(t, "seqsim_survival_stats.tsv")
	events := map[string][]int{}
	for _, row := range stats {
		events[row["id"]] = append(events[row["id"]], row.I(t, "events"))
	}
	for _, row := range stats {
		id, k := row["id"], row.I(t, "look")
		sz := sizes[id]
		// The data fix everything; the hazards, accrual and levels only
		// need to be valid (the end of the study, Accrual + FollowUp, is
		// the data's).
		m := NewSequentialSurvival(SequentialSurvival{N1: int(sz[0]), N2: int(sz[1]), H1: 1, H2: 1,
			Entry: Entry{Accrual: sz[2] / 2, FollowUp: sz[2] / 2}, Events: events[id],
			Nominal: []float64{0.01, 0.01, 0.01}, Sides: 2})
		w := m.NewWorker().(*seqSurvivalWorker)
		for i, p := range data[id] {
			w.set(i, p.e, p.t, p.c)
		}
		if !w.lookTimes() {
			t.Fatal("lookTimes stopped")
		}
		tau, final := w.tau[k-1], row.I(t, "final") == 1
		if final != (tau == math.Inf(1)) || (!final && tau != row.F(t, "tau")) {
			t.Errorf("%s look %d: calendar time %v, R %s (final %v)", id, k, tau, row["tau"], final)
		}
		if final {
			tau = w.m.lr.end
		}
		u, v, ok := w.look(tau, final)
		chi := u * u / v
		if !ok || math.Abs(u-row.F(t, "U")) > 1e-10 || math.Abs(v-row.F(t, "V")) > 1e-10*row.F(t, "V") ||
			math.Abs(chi-row.F(t, "chisq")) > 1e-10*math.Max(1, row.F(t, "chisq")) {
			t.Errorf("%s look %d: U %.15g V %.15g chi-square %.15g; R %s %s %s (%s)", id, k, u, v, chi, row["U"], row["V"], row["chisq"], row["source"])
		}
	}
}

// TestSequentialSurvivalOneLook: with one look whose event count is never
// reached, the model is the fixed-sample log-rank model at the same level
// (NewSurvivalSim, checked against survdiff and R simulations elsewhere):
// from the same stream, each replicate draws the same data and gives the
// same U and V and the same decision. The settings cover accrual or none,
// dropout, crossing-over, one- and two-sided tests and a margin.
func TestSequentialSurvivalOneLook(t *testing.T) {
	cases := []SurvivalSim{
		{N1: 60, N2: 80, H1: 0.2, H2: 0.35, Entry: Entry{Accrual: 2, FollowUp: 1}, Alpha: 0.05, Sides: 2},
		{N1: 50, N2: 50, H1: 0.3, H2: 0.2, Entry: Entry{FollowUp: 2, Dropout: 0.1}, Alpha: 0.1, Sides: 1, Dir: 1},
		{N1: 70, N2: 40, H1: 0.2, H2: 0.3, Cross1: 0.2, Cross2: 0.1, Entry: Entry{Accrual: 1, FollowUp: 1, Dropout: 0.05}, Alpha: 0.025, Sides: 1, Dir: -1},
		{N1: 90, N2: 90, H1: 0.25, H2: 0.25, Entry: Entry{Accrual: 1, FollowUp: 3}, Alpha: 0.2, Sides: 1, Margin: 1.3},
		{N1: 90, N2: 90, H1: 0.25, H2: 0.25, Entry: Entry{Accrual: 3}, Alpha: 0.2, Sides: 1, Dir: 1, Margin: 0.8},
	}
	for i, c := range cases {
		fixed := NewSurvivalSim(c)
		seq := NewSequentialSurvival(SequentialSurvival{N1: c.N1, N2: c.N2, H1: c.H1, H2: c.H2, Cross1: c.Cross1, Cross2: c.Cross2,
			Entry: c.Entry, Events: []int{c.N1 + c.N2 + 1}, Nominal: []float64{c.Alpha}, Sides: c.Sides, Dir: c.Dir, Margin: c.Margin})
		fw, sw := fixed.NewWorker().(*logRankWorker), seq.NewWorker().(*seqSurvivalWorker)
		r1, r2 := rand.New(rand.NewPCG(uint64(i), 7)), rand.New(rand.NewPCG(uint64(i), 7))
		rejections := 0
		for rep := range 3000 {
			if rep%2 == 0 {
				fw.draw(r1)
				sw.draw(r2)
				u0, v0 := fw.stat()
				sw.lookTimes()
				u, v, _ := sw.look(seq.(*seqSurvival).lr.end, true)
				if u != u0 || v != v0 {
					t.Fatalf("case %d, replicate %d: U %v V %v; fixed-sample model %v %v", i, rep, u, v, u0, v0)
				}
				continue
			}
			a, b := fw.Replicate(r1), sw.ReplicateLook(r2)
			if a != (b == 1) || b > 1 {
				t.Fatalf("case %d, replicate %d: sequential look %d, fixed-sample rejection %v", i, rep, b, a)
			}
			if a {
				rejections++
			}
		}
		if rejections == 0 || rejections == 1500 {
			t.Errorf("case %d: %d of 1500 replicates reject; the comparison is idle", i, rejections)
		}
	}
}

// TestSequentialSurvivalSim checks the model against R simulations on
// raw data (seqsim_sim.tsv: 10,000 replicates of runif/rexp data,
// survdiff on the data known at each look): a two-sided test with accrual
// and dropout, a non-inferiority margin of 1.3 at the null's boundary
// side, and a one-sided test with crossing-over whose last look's event
// count is never reached (the final analysis at the end of the study).
// Each look's share and the total must lie within 4 SE of the difference
// of the two simulations, with R = 40,000 here.
func TestSequentialSurvivalSim(t *testing.T) {
	const R = 40_000
	for i, row := range seqSimRows(t, "survival") {
		c := SequentialSurvival{N1: row.I(t, "n1"), N2: row.I(t, "n2"), H1: row.F(t, "h1"), H2: row.F(t, "h2"),
			Cross1: row.F(t, "cross1"), Cross2: row.F(t, "cross2"),
			Entry:  Entry{Accrual: row.F(t, "A"), FollowUp: row.F(t, "F"), Dropout: row.F(t, "eta")},
			Events: seqInts(t, row, "D"), Nominal: seqFloats(t, row, "nominal"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir"),
			Margin: row.F(t, "margin")}
		seqCheckLooks(t, row["id"], simRun(t, NewSequentialSurvival(c), R, uint64(4500+i)), seqRefShares(t, row), 4, row.F(t, "reps"))
	}
}

// TestSequentialSurvivalStop: a survival worker handed a stop flag that is
// set draws nothing (the random stream is untouched), its look-time sort
// and its looks give up, and its replicate reports no crossing; with the
// flag clear it crosses as a worker without a flag.
func TestSequentialSurvivalStop(t *testing.T) {
	m := seqTestModels()["survival"]
	w, plain := m.NewWorker().(*seqSurvivalWorker), m.NewWorker().(*seqSurvivalWorker)
	stop := new(atomic.Bool)
	w.watchStop(stop)
	r1, r2 := rand.New(rand.NewPCG(3, 4)), rand.New(rand.NewPCG(3, 4))
	for rep := range 200 {
		if a, b := w.ReplicateLook(r1), plain.ReplicateLook(r2); a != b {
			t.Fatalf("replicate %d with a clear flag: look %d, without a flag %d", rep, a, b)
		}
	}
	stop.Store(true)
	src := rand.NewPCG(1, 2)
	before := *src
	if look := w.ReplicateLook(rand.New(src)); look != 0 || *src != before {
		t.Errorf("a stopped worker crossed at look %d or used the stream", look)
	}
	if w.lookTimes() {
		t.Error("the look-time sort ran with the flag set")
	}
	if _, _, ok := w.look(1, false); ok {
		t.Error("a look ran with the flag set")
	}
}

// TestSequentialLookIsReplicate: for every model, Replicate is
// ReplicateLook > 0 on the same stream.
func TestSequentialLookIsReplicate(t *testing.T) {
	for name, m := range seqTestModels() {
		a, b := m.NewWorker(), m.NewWorker().(LookWorker)
		r1, r2 := rand.New(rand.NewPCG(5, 6)), rand.New(rand.NewPCG(5, 6))
		for rep := range 2000 {
			if got, look := a.Replicate(r1), b.ReplicateLook(r2); got != (look > 0) || look < 0 || look > m.Looks() {
				t.Fatalf("%s, replicate %d: Replicate %v, ReplicateLook %d", name, rep, got, look)
			}
		}
	}
}

// TestSequentialNominalZero: a look at level 0 never stops the study; the
// other looks keep their counts' order of magnitude.
func TestSequentialNominalZero(t *testing.T) {
	m := NewSequentialZ(SequentialZ{Times: []float64{0.5, 1}, Drift: 5, Nominal: []float64{0, 0.05}, Sides: 2})
	res := simRun(t, m, 10_000, 1)
	if res.ByLook[0] != 0 || res.ByLook[1] < 9_000 {
		t.Errorf("counts by look %v; want none at the first look", res.ByLook)
	}
}

// TestSequentialWorkerBytes: the survival worker holds 40 bytes a
// participant, the histograms and the looks' times; the binomial worker
// of Fisher's test three rows of its largest look's support; the others
// none.
func TestSequentialWorkerBytes(t *testing.T) {
	m := NewSequentialSurvival(SequentialSurvival{N1: 100, N2: 50, H1: 0.2, H2: 0.3, Entry: Entry{FollowUp: 1},
		Events: []int{10, 20}, Nominal: []float64{0.01, 0.04}, Sides: 2})
	if got := WorkerBytes(m); got != 40*150+4096+16 {
		t.Errorf("survival: %d bytes, want %d", got, 40*150+4096+16)
	}
	f := NewSequentialBinomials(SequentialBinomials{N1: []int{10, 30}, N2: []int{20, 40}, P1: 0.2, P2: 0.3,
		Nominal: []float64{0.01, 0.04}, Sides: 2, Test: Fisher})
	if got := WorkerBytes(f); got != 24*31 {
		t.Errorf("Fisher: %d bytes, want %d", got, 24*31)
	}
	for _, name := range []string{"z", "binomials", "means welch"} {
		if got := WorkerBytes(seqTestModels()[name]); got != 0 {
			t.Errorf("%s: %d bytes", name, got)
		}
	}
}

// TestSequentialPanics: the constructors refuse programmer errors.
func TestSequentialPanics(t *testing.T) {
	z := SequentialZ{Times: []float64{0.5, 1}, Nominal: []float64{0.01, 0.04}, Sides: 2}
	b := SequentialBinomials{N1: []int{10, 20}, N2: []int{10, 20}, P1: 0.2, P2: 0.3, Nominal: []float64{0.01, 0.04}, Sides: 2, Test: ChiSquare}
	mn := SequentialMeans{N1: []int{10, 20}, N2: []int{10, 20}, SD1: 1, Nominal: []float64{0.01, 0.04}, Sides: 2}
	s := SequentialSurvival{N1: 10, N2: 10, H1: 0.2, H2: 0.3, Entry: Entry{FollowUp: 1}, Events: []int{5, 10},
		Nominal: []float64{0.01, 0.04}, Sides: 2}
	cases := map[string]func(){
		"z no looks":         func() { c := z; c.Times, c.Nominal = nil, nil; NewSequentialZ(c) },
		"z times not ending": func() { c := z; c.Times = []float64{0.5, 0.9}; NewSequentialZ(c) },
		"z times decreasing": func() {
			c := z
			c.Times = []float64{0.6, 0.5, 1}
			c.Nominal = []float64{0.1, 0.1, 0.1}
			NewSequentialZ(c)
		},
		"z times vs levels":    func() { c := z; c.Nominal = []float64{0.05}; NewSequentialZ(c) },
		"z level 1":            func() { c := z; c.Nominal = []float64{0.01, 1}; NewSequentialZ(c) },
		"z level negative":     func() { c := z; c.Nominal = []float64{-0.01, 0.04}; NewSequentialZ(c) },
		"z one-sided level":    func() { c := z; c.Sides, c.Dir, c.Nominal = 1, 1, []float64{0.6, 0.04}; NewSequentialZ(c) },
		"z one-sided no dir":   func() { c := z; c.Sides = 1; NewSequentialZ(c) },
		"z drift NaN":          func() { c := z; c.Drift = math.NaN(); NewSequentialZ(c) },
		"z sides 3":            func() { c := z; c.Sides = 3; NewSequentialZ(c) },
		"bin sizes decreasing": func() { c := b; c.N1 = []int{20, 10}; NewSequentialBinomials(c) },
		"bin no one":           func() { c := b; c.N2 = []int{0, 10}; NewSequentialBinomials(c) },
		"bin sizes vs levels":  func() { c := b; c.N1 = []int{10}; NewSequentialBinomials(c) },
		"bin risk":             func() { c := b; c.P1 = 1.2; NewSequentialBinomials(c) },
		"bin no test":          func() { c := b; c.Test = 0; NewSequentialBinomials(c) },
		"bin margin two-sided": func() { c := b; c.Test, c.Margin, c.MarginTest = 0, -0.1, FarringtonManning; NewSequentialBinomials(c) },
		"bin margin wrong side": func() {
			c := b
			c.Test, c.Margin, c.MarginTest, c.Sides, c.Dir = 0, -0.1, Blackwelder, 1, -1
			NewSequentialBinomials(c)
		},
		"bin margin and test":  func() { c := b; c.Margin, c.MarginTest, c.Sides = -0.1, Blackwelder, 1; NewSequentialBinomials(c) },
		"bin margin no method": func() { c := b; c.Test, c.Margin, c.Sides = 0, -0.1, 1; NewSequentialBinomials(c) },
		"bin method no margin": func() { c := b; c.MarginTest = Blackwelder; NewSequentialBinomials(c) },
		"bin margin range": func() {
			c := b
			c.Test, c.Margin, c.MarginTest, c.Sides = 0, -1, Blackwelder, 1
			NewSequentialBinomials(c)
		},
		"means one":             func() { c := mn; c.N1 = []int{1, 20}; NewSequentialMeans(c) },
		"means SD":              func() { c := mn; c.SD1 = 0; NewSequentialMeans(c) },
		"means bound":           func() { c := mn; c.Bound = math.Inf(-1); NewSequentialMeans(c) },
		"means one-sided":       func() { c := mn; c.Sides = 1; NewSequentialMeans(c) },
		"surv events equal":     func() { c := s; c.Events = []int{5, 5}; NewSequentialSurvival(c) },
		"surv no event":         func() { c := s; c.Events = []int{0, 5}; NewSequentialSurvival(c) },
		"surv events vs levels": func() { c := s; c.Events = []int{5}; NewSequentialSurvival(c) },
		"surv hazard":           func() { c := s; c.H1 = 0; NewSequentialSurvival(c) },
		"surv margin sides":     func() { c := s; c.Margin = 1.3; NewSequentialSurvival(c) },
		"surv one-sided no dir": func() { c := s; c.Sides = 1; NewSequentialSurvival(c) },
	}
	for name, f := range cases {
		t.Run(name, func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		})
	}
	// The valid ones do not panic.
	NewSequentialZ(z)
	NewSequentialBinomials(b)
	NewSequentialMeans(mn)
	NewSequentialSurvival(s)
}

// seqSink keeps the benchmarks' results alive.
var seqSink int

// seqBench runs one replicate per iteration of m's worker, so that
// ns/op is the cost of one replicate.
func seqBench(b *testing.B, m SequentialModel) {
	w := m.NewWorker().(LookWorker)
	r := rand.New(rand.NewPCG(1, 2))
	for b.Loop() {
		seqSink += w.ReplicateLook(r)
	}
}

// The benchmarks simulate designs with 500 per group and five looks at
// equal steps, at Pocock's nominal level (K = 5, two-sided 0.05), under
// an effect of moderate size, so that most replicates run to a late look.
var seqBenchNominal = []float64{0.0158, 0.0158, 0.0158, 0.0158, 0.0158}

func BenchmarkSequentialZ(b *testing.B) {
	seqBench(b, NewSequentialZ(SequentialZ{Times: []float64{0.2, 0.4, 0.6, 0.8, 1}, Drift: 2, Nominal: seqBenchNominal, Sides: 2}))
}

func seqBenchBinomials(b *testing.B, test BinaryTest) {
	n := []int{100, 200, 300, 400, 500}
	seqBench(b, NewSequentialBinomials(SequentialBinomials{N1: n, N2: n, P1: 0.3, P2: 0.25, Nominal: seqBenchNominal, Sides: 2, Test: test}))
}

func BenchmarkSequentialBinomialsChiSquare(b *testing.B) { seqBenchBinomials(b, ChiSquare) }
func BenchmarkSequentialBinomialsFisher(b *testing.B)    { seqBenchBinomials(b, Fisher) }

func BenchmarkSequentialBinomialsFarringtonManning(b *testing.B) {
	n := []int{100, 200, 300, 400, 500}
	seqBench(b, NewSequentialBinomials(SequentialBinomials{N1: n, N2: n, P1: 0.3, P2: 0.3, Nominal: seqBenchNominal,
		Sides: 1, Margin: -0.1, MarginTest: FarringtonManning}))
}

func seqBenchMeans(b *testing.B, welch bool) {
	n := []int{100, 200, 300, 400, 500}
	seqBench(b, NewSequentialMeans(SequentialMeans{N1: n, N2: n, Diff: 0.15, SD1: 1, SD2: 1.2, Welch: welch, Nominal: seqBenchNominal, Sides: 2}))
}

func BenchmarkSequentialMeansStudent(b *testing.B) { seqBenchMeans(b, false) }
func BenchmarkSequentialMeansWelch(b *testing.B)   { seqBenchMeans(b, true) }

func BenchmarkSequentialSurvival(b *testing.B) {
	seqBench(b, NewSequentialSurvival(SequentialSurvival{N1: 500, N2: 500, H1: 0.2, H2: 0.25,
		Entry: Entry{Accrual: 2, FollowUp: 3, Dropout: 0.02}, Events: []int{100, 200, 300, 400, 500}, Nominal: seqBenchNominal, Sides: 2}))
}
