package power

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"enough/power/reftable"
)

// btrdInverse returns the u in (−½, ½) with transform(u) = y: for
// w = y − c ≥ 0 the smaller root of b u² − (2a + b/2 + w) u + w/2 = 0,
// written as w/(B + √(B² − 2bw)) to avoid cancellation, and by symmetry
// for w < 0.
func btrdInverse(t *btrd, y float64) float64 {
	w, s := y-t.c, 1.0
	if w < 0 {
		w, s = -w, -1
	}
	B := 2*t.a + 0.5*t.b + w
	return s * w / (B + math.Sqrt(B*B-2*t.b*w))
}

// TestBTRDConditions checks, on a grid of (n, p) from the smallest n p
// that BTRD serves (10) to n = 2³¹ − 1, the conditions under which
// Hörmann's (1993) transformed rejection draws exactly Binomial(n, p):
// with k = ⌊transform(u)⌋ and f(k)/f(m) the binomial probability relative
// to the mode (log f(k)/f(m) summed from the ratios
// f(i)/f(i−1) = (n − i + 1) p / (i q), a property of the binomial pmf),
//
//  1. the hat dominates: f(k)/f(m) ≤ hat(u) for every u of every cell k
//     (hat decreases in |u|, so its least value on a cell is at the end
//     farther from 0);
//  2. the box of step 1 is accepted rightly: vr·hat(u) ≤ f(k)/f(m) for
//     |u| ≤ 0.43, and it maps into [0, n];
//  3. the Stirling form of step 3.3 ([btrd.logRatio]) is log f(k)/f(m)
//     to 1e-12 + 1e-13 |k − m| (the series of [stirlingTail] is cut at
//     4e-13; the reference sum itself carries about 1e-16 |k − m|).
//
// The slack of 1 and 2, in logarithms, is at least 0.004 on the grid.
func TestBTRDConditions(t *testing.T) {
	ns := []int{20, 21, 40, 100, 333, 1000, 4321, 100_000, 1_000_000, 10_000_000, math.MaxInt32}
	for _, n := range ns {
		for _, p := range []float64{0.5, 0.45, 0.3, 0.1, 0.03, 0.01, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7,
			10 / float64(n), 10.5 / float64(n), 16 / float64(n), 40 / float64(n)} {
			if float64(n)*p < 10 || p > 0.5 {
				continue
			}
			b := newBTRD(n, p)
			m := int(b.m)
			// lr[k − lo] = log f(k)/f(m) for the k where it is above −745.
			var up, down []float64
			acc := 0.0
			for k := m + 1; k <= n; k++ {
				acc += math.Log(b.nr/float64(k) - b.r)
				if acc < -745 {
					break
				}
				up = append(up, acc)
			}
			acc = 0
			for k := m - 1; k >= 0; k-- {
				acc -= math.Log(b.nr/float64(k+1) - b.r)
				if acc < -745 {
					break
				}
				down = append(down, acc)
			}
			lo := m - len(down)
			lr := make([]float64, 0, len(down)+1+len(up))
			for i := len(down) - 1; i >= 0; i-- {
				lr = append(lr, down[i])
			}
			lr = append(lr, 0)
			lr = append(lr, up...)
			hatSlack, boxSlack, stirErr := math.Inf(1), math.Inf(1), 0.0
			for i, l := range lr {
				k := float64(lo + i)
				u0, u1 := btrdInverse(&b, k), btrdInverse(&b, k+1)
				hatSlack = math.Min(hatSlack, math.Log(math.Min(b.hat(u0), b.hat(u1)))-l)
				if a, z := math.Max(u0, -0.43), math.Min(u1, 0.43); a < z {
					near := 0.0 // the point of the cell within the box nearest 0
					if a > 0 {
						near = a
					} else if z < 0 {
						near = z
					}
					boxSlack = math.Min(boxSlack, l-math.Log(b.vr*b.hat(near)))
				}
				if err := math.Abs(b.logRatio(k) - l); err > 1e-12+1e-13*math.Abs(k-b.m) {
					stirErr = math.Max(stirErr, err)
				}
			}
			if !(hatSlack > 0.004) || !(boxSlack > 0.004) {
				t.Errorf("n %d p %g: hat slack %.3g, box slack %.3g (logs)", n, p, hatSlack, boxSlack)
			}
			if stirErr > 0 {
				t.Errorf("n %d p %g: Stirling log ratio off by %.3g, beyond 1e-12 + 1e-13 |k − m|", n, p, stirErr)
			}
			if k0, k1 := math.Floor(b.transform(-0.43)), math.Floor(b.transform(0.43)); k0 < 0 || k1 > float64(n) {
				t.Errorf("n %d p %g: the box maps to [%v, %v]", n, p, k0, k1)
			}
		}
	}
}

// TestStirlingTail checks the remainder of Stirling's formula against
// math.Lgamma where both are accurate (k < 200: the subtraction loses
// only a few 1e-14 there) and at the switch from one form to the other.
func TestStirlingTail(t *testing.T) {
	for k := 0.0; k < 200; k++ {
		lg, _ := math.Lgamma(k + 1)
		want := lg - ((k+0.5)*math.Log(k+1) - (k + 1) + 0.5*math.Log(2*math.Pi))
		if d := math.Abs(stirlingTail(k) - want); d > 1e-12 {
			t.Errorf("k %v: %.17g, Lgamma gives %.17g", k, stirlingTail(k), want)
		}
	}
}

// TestDrawBinomial compares 10⁶ draws of drawBinomial for each case of
// testdata/reference/matched_binom_bins.tsv with R's bin probabilities
// (pbinom over about 40 bins cut at qbinom((0:40)/40)): inversion (n p < 10),
// BTRD (n p ≥ 10, up to n = 2³¹ − 1) and the reflection p > ½. Bins are
// pooled to expected counts of at least 20; X² must stay below
// qchisq(1 − 1e-6, df) (sim_gof_crit.tsv), and the mean of the draws within
// 4 Monte-Carlo SE of n p.
func TestDrawBinomial(t *testing.T) {
	crit := simGOFCrit(t)
	type bin struct{ lo, hi int }
	type bcase struct {
		n        int
		p        float64
		bins     []bin
		prob     []float64
		mean, v  float64
		source   string
		seedBase uint64
	}
	var order []string
	cases := map[string]*bcase{}
	for _, row := range reftable.Load(t, "matched_binom_bins.tsv") {
		c := cases[row["id"]]
		if c == nil {
			c = &bcase{n: row.I(t, "n"), p: row.F(t, "p"), mean: row.F(t, "mean"), v: row.F(t, "var"), source: row["source"], seedBase: uint64(len(order) + 1)}
			cases[row["id"]] = c
			order = append(order, row["id"])
		}
		c.bins = append(c.bins, bin{row.I(t, "lo"), row.I(t, "hi")})
		c.prob = append(c.prob, row.F(t, "prob"))
	}
	if len(order) < 10 {
		t.Fatalf("only %d cases", len(order))
	}
	const R = 1_000_000
	for _, id := range order {
		c := cases[id]
		r := rand.New(rand.NewPCG(c.seedBase, 0xb1))
		counts := make([]float64, len(c.bins))
		sum := 0.0
		for range R {
			x := drawBinomial(r, c.n, c.p)
			if x < 0 || x > c.n {
				t.Fatalf("%s: drew %d", id, x)
			}
			sum += float64(x)
			// bins are sorted; find x's bin by bisection
			lo, hi := 0, len(c.bins)-1
			for lo < hi {
				mid := (lo + hi) / 2
				if x > c.bins[mid].hi {
					lo = mid + 1
				} else {
					hi = mid
				}
			}
			if x < c.bins[lo].lo || x > c.bins[lo].hi {
				t.Fatalf("%s: drew %d, outside every bin of positive probability", id, x)
			}
			counts[lo]++
		}
		expected := make([]float64, len(c.bins))
		for j := range c.bins {
			expected[j] = R * c.prob[j]
		}
		if x2, df := poolChiSquare(expected, counts); df > 0 {
			if q := crit(df); x2 > q {
				t.Errorf("%s (n %d, p %g): X² = %.2f on %d df above qchisq(1-1e-6) = %.2f (%s)", id, c.n, c.p, x2, df, q, c.source)
			}
		}
		if d := math.Abs(sum/R - c.mean); d > 4*math.Sqrt(c.v/R) {
			t.Errorf("%s: mean %.6f, n p = %.6f, beyond 4 SE %.3g", id, sum/R, c.mean, math.Sqrt(c.v/R))
		}
	}
}

// TestDrawBinomialEdges: the degenerate cases need no randomness.
func TestDrawBinomialEdges(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, c := range []struct {
		n    int
		p    float64
		want int
	}{{0, 0.3, 0}, {10, 0, 0}, {10, 1, 10}, {math.MaxInt32, 1, math.MaxInt32}} {
		if got := drawBinomial(r, c.n, c.p); got != c.want {
			t.Errorf("Binomial(%d, %v): %d", c.n, c.p, got)
		}
	}
}

// matchedSimCase builds the model of a row of matched_sim.tsv or
// matched_mcnemar.tsv.
func matchedSimCase(t *testing.T, row reftable.Row, sets int) Model {
	t.Helper()
	m, err := NewMatchedSim(MatchedSim{MatchedSets: matchedRowSets(t, row), Sets: sets,
		Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir")})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// TestMatchedSimMcNemar compares the simulated power of 1:1 matching
// (McNemar's z test) with R's exact enumeration (matched_mcnemar.tsv, the
// double sum of dbinom over the rejected tables), within 4 Monte-Carlo SE
// under the alternative and 3 SE under the null (ψ = 1: the test's exact
// size), 200,000 replicates each with a fixed seed.
func TestMatchedSimMcNemar(t *testing.T) {
	const R = 200_000
	want := map[string]float64{"mcn_04": 4, "mcn_08": 4, "mcn_12": 4, "mcn_16": 4, "mcn_10": 3, "mcn_11": 3}
	seen := 0
	for _, row := range reftable.Load(t, "matched_mcnemar.tsv") {
		k, ok := want[row["id"]]
		if !ok {
			continue
		}
		seen++
		res := simRun(t, matchedSimCase(t, row, row.I(t, "pairs")), R, 77)
		exact := row.F(t, "power_z")
		if ok, se := simWithinSE(k, res.Power(), exact, R, 0); !ok {
			t.Errorf("%s: simulated %.5f, exact %.5f, beyond %v SE (%.5f) (%s)", row["id"], res.Power(), exact, k, se, row["source"])
		}
	}
	if seen != len(want) {
		t.Errorf("found %d of %d rows", seen, len(want))
	}
}

// TestMatchedSimReference compares the simulation with an independent R
// simulation of the same design (matched_sim.tsv: sets drawn member by
// member with rbinom, the Mantel–Haenszel z by set, checked against
// mantelhaen.test; the seed and replicates in each row), within 4 SE of
// the two simulations together. Rows sim_04 and sim_05 are nulls (ψ = 1).
func TestMatchedSimReference(t *testing.T) {
	const R = 200_000
	for i, row := range reftable.Load(t, "matched_sim.tsv") {
		res := simRun(t, matchedSimCase(t, row, row.I(t, "sets")), R, 900+uint64(i))
		want, se := row.F(t, "power"), row.F(t, "se")
		if ok, tot := simWithin4SE(res.Power(), want, R, se*se); !ok {
			t.Errorf("%s: simulated %.5f, R %.5f, beyond 4 SE (%.5f) (%s)", row["id"], res.Power(), want, tot, row["source"])
		}
	}
}

// TestMatchedSimWithinSets compares the within-set reading (the case's
// share of a set's exposure from the odds ratio ψ within the set, the
// reading of Dupont's formula) with an independent R simulation of that
// reading (matched_within.tsv: rmultinom of the set cells, the
// Mantel–Haenszel z by set; seeds and replicates in each row), within 4 SE
// of the two simulations together; within_06 is a null (ψ = 1). The same
// rows hold Dupont's power, which the R simulations bear out to within
// half a point (the normal approximation), unlike the member-by-member
// model of matched_sim.tsv once φ > 0.
func TestMatchedSimWithinSets(t *testing.T) {
	const R = 100_000
	for i, row := range reftable.Load(t, "matched_within.tsv") {
		m, err := NewMatchedSim(MatchedSim{MatchedSets: matchedRowSets(t, row), Sets: row.I(t, "sets"), WithinSets: true,
			Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir")})
		if err != nil {
			t.Fatal(err)
		}
		res := simRun(t, m, R, 1700+uint64(i))
		want, se := row.F(t, "power"), row.F(t, "se")
		if ok, tot := simWithin4SE(res.Power(), want, R, se*se); !ok {
			t.Errorf("%s: simulated %.5f, R %.5f, beyond 4 SE (%.5f) (%s)", row["id"], res.Power(), want, tot, row["source"])
		}
		// The member-by-member model differs once φ > 0: the reading
		// matters (at least 3 points on these rows but the null).
		if row.F(t, "psi") != 1 {
			other := simRun(t, matchedSimCase(t, row, row.I(t, "sets")), R, 1700+uint64(i))
			if math.Abs(other.Power()-res.Power()) < 0.03 {
				t.Errorf("%s: the two readings give %.4f and %.4f, which should differ", row["id"], res.Power(), other.Power())
			}
		}
	}
}

// TestMatchedSimWorkers: 1, 2 and 3 workers give identical counts with
// the same seed, and another seed other counts.
func TestMatchedSimWorkers(t *testing.T) {
	m, err := NewMatchedSim(MatchedSim{MatchedSets: MatchedSets{ControlExposure: 0.25, OddsRatio: 1.8, Controls: 3, Correlation: 0.15},
		Sets: 150, Alpha: 0.05, Sides: 2})
	if err != nil {
		t.Fatal(err)
	}
	var first SimResult
	for i, w := range []int{1, 2, 3} {
		res, err := Simulate(context.Background(), m, SimConfig{Replicates: 20_003, Seed: 31, Workers: w, BlockSize: 1000})
		if err != nil {
			t.Fatal(err)
		}
		if i == 0 {
			first = res
		} else if !sameResult(res, first) {
			t.Errorf("%d workers: %+v, 1 worker %+v", w, res, first)
		}
	}
	other, _ := Simulate(context.Background(), m, SimConfig{Replicates: 20_003, Seed: 32, Workers: 2, BlockSize: 1000})
	if other.Rejections == first.Rejections {
		t.Errorf("seeds 31 and 32 give the same count %d", first.Rejections)
	}
}

// TestMatchedSimDegenerate: a study of one pair rejects only when it is
// discordant in the tested direction, which z = ±1 never is at 5%
// (|z| = 1 < 1.96); a one-sided test at alpha = 0.2 (z_{0.8} = 0.84)
// rejects exactly when the single pair is (exposed case, unexposed
// control), with probability p10 = p1 q₀₊ (Dupont's model: p1 = 0.6,
// q₀₊ = 0.7 at φ = 0, so 0.42; common practice arithmetic).
func TestMatchedSimDegenerate(t *testing.T) {
	s := MatchedSets{ControlExposure: 0.3, OddsRatio: 3.5, Controls: 1}
	m, _ := NewMatchedSim(MatchedSim{MatchedSets: s, Sets: 1, Alpha: 0.05, Sides: 2})
	if res := simRun(t, m, 10_000, 1); res.Rejections != 0 {
		t.Errorf("one pair rejected %d times", res.Rejections)
	}
	m, _ = NewMatchedSim(MatchedSim{MatchedSets: s, Sets: 1, Alpha: 0.2, Sides: 1, Dir: 1})
	const R = 100_000
	res := simRun(t, m, R, 2)
	if ok, se := simWithin4SE(res.Power(), 0.42, R, 0); !ok {
		t.Errorf("one pair: %.4f, want 0.42 within 4 SE %.4f", res.Power(), se)
	}
}

// BenchmarkMatchedSimReplicate measures one worker's replicate: its cost
// grows with the number of controls, not with the number of sets.
func BenchmarkMatchedSimReplicate(b *testing.B) {
	for _, c := range []struct {
		name string
		m, n int
	}{{"M1_n200", 1, 200}, {"M4_n200", 4, 200}, {"M10_n200", 10, 200}, {"M4_n100000", 4, 100_000}} {
		b.Run(c.name, func(b *testing.B) {
			m, err := NewMatchedSim(MatchedSim{MatchedSets: MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: c.m, Correlation: 0.1},
				Sets: c.n, Alpha: 0.05, Sides: 2})
			if err != nil {
				b.Fatal(err)
			}
			benchReplicates(b, m)
		})
	}
}

// BenchmarkDrawBinomial measures the sampler by inversion (n p = 5) and by
// BTRD (n p = 60 and 3·10⁵).
func BenchmarkDrawBinomial(b *testing.B) {
	for _, c := range []struct {
		name string
		n    int
		p    float64
	}{{"inversion_np5", 50, 0.1}, {"btrd_np60", 200, 0.3}, {"btrd_np3e5", 1_000_000, 0.3}} {
		b.Run(c.name, func(b *testing.B) {
			r := rand.New(rand.NewPCG(3, 4))
			sink := 0
			for b.Loop() {
				sink += drawBinomial(r, c.n, c.p)
			}
			_ = sink
		})
	}
}
