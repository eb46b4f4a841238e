package power

import (
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"enough/power/reftable"
)

// simPMFCase is one distribution of testdata/reference/sim_pmf.tsv: its exact
// probabilities by value, computed by R (dbinom, or lchoose/lbeta for the
// beta-binomial; the call is in each row's source).
type simPMFCase struct {
	id, dist, source string
	n                int
	p, icc           float64
	prob             map[int]float64
}

func loadSimPMF(t *testing.T) []*simPMFCase {
	t.Helper()
	var cases []*simPMFCase
	byID := map[string]*simPMFCase{}
	for _, row := range reftable.Load(t, "sim_pmf.tsv") {
		c := byID[row["id"]]
		if c == nil {
			c = &simPMFCase{id: row["id"], dist: row["dist"], source: row["source"], n: row.I(t, "n"), p: row.F(t, "p"), prob: map[int]float64{}}
			if c.dist == "betabinom" {
				c.icc = row.F(t, "icc")
			}
			byID[c.id] = c
			cases = append(cases, c)
		}
		c.prob[row.I(t, "k")] = row.F(t, "prob")
	}
	return cases
}

func (c *simPMFCase) table() aliasTable {
	if c.dist == "binom" {
		return NewBinomialTable(c.n, c.p).tab
	}
	return NewBetaBinomialTable(c.n, c.p, c.icc).tab
}

// simGOFCrit returns qchisq(1 − 1e-6, df) from sim_gof_crit.tsv (R).
func simGOFCrit(t *testing.T) func(df int) float64 {
	t.Helper()
	q := map[int]float64{}
	for _, row := range reftable.Load(t, "sim_gof_crit.tsv") {
		q[row.I(t, "df")] = row.F(t, "q")
	}
	return func(df int) float64 {
		v, ok := q[df]
		if !ok {
			t.Fatalf("no critical value for %d degrees of freedom", df)
		}
		return v
	}
}

// TestTableProbabilities checks the distribution each alias table really
// draws from (the probabilities implied by its cells, computed exactly)
// against R's dbinom and the beta-binomial from R's lbeta
// (sim_pmf.tsv): within 1e-12 relative plus 1e-16 absolute (the cells'
// thresholds are 2⁻⁶⁴-resolution fractions), including n = 1, 200 and 5000 and p near 0
// and 1. Values that R puts below 1e-40 are absent from the file and must
// be (nearly) absent from the table.
func TestTableProbabilities(t *testing.T) {
	for _, c := range loadSimPMF(t) {
		tab := c.table()
		lo, got := tab.probs()
		seen := map[int]bool{}
		bad := 0
		for i, g := range got {
			k := lo + i
			seen[k] = true
			want := c.prob[k] // 0 when R has it below 1e-40
			if d := math.Abs(g - want); d > 1e-12*want+1e-16 {
				if bad++; bad <= 3 {
					t.Errorf("%s: P(%d) = %.17g, R %.17g (%s)", c.id, k, g, want, c.source)
				}
			}
		}
		missing := 0.0
		for k, want := range c.prob {
			if !seen[k] {
				missing += want
			}
		}
		if missing > 1e-20 {
			t.Errorf("%s: mass missing from the table %.3g (%s)", c.id, missing, c.source)
		}
	}
}

// TestTableDraws is a chi-square goodness-of-fit test of 10⁶ draws from each
// table against R's exact probabilities (sim_pmf.tsv), with a fixed seed.
// Values are pooled, from the left, into cells expected to hold at least
// 20 draws; the statistic must stay below qchisq(1 − 1e-6, cells − 1)
// (sim_gof_crit.tsv). The sample mean must lie within 4 Monte-Carlo
// standard errors, 4·√(Var/R), of the exact mean.
func TestTableDraws(t *testing.T) {
	crit := simGOFCrit(t)
	const R = 1_000_000
	for i, c := range loadSimPMF(t) {
		tab := c.table()
		r := rand.New(rand.NewPCG(uint64(i)+1, 0xfeed))
		counts := map[int]int{}
		sum := 0.0
		for range R {
			x := tab.draw(r)
			counts[x]++
			sum += float64(x)
		}
		ks := make([]int, 0, len(c.prob))
		for k := range c.prob {
			ks = append(ks, k)
		}
		sort.Ints(ks)
		for k := range counts {
			if _, ok := c.prob[k]; !ok {
				t.Errorf("%s: drew %d, which R gives probability below 1e-40", c.id, k)
			}
		}
		// Pool into cells of expected count ≥ 20; the remainder joins the
		// last cell.
		var exp, obs []float64
		e, o := 0.0, 0.0
		for _, k := range ks {
			e += R * c.prob[k]
			o += float64(counts[k])
			if e >= 20 {
				exp, obs = append(exp, e), append(obs, o)
				e, o = 0, 0
			}
		}
		if len(exp) == 0 {
			exp, obs = append(exp, e), append(obs, o)
		} else {
			exp[len(exp)-1] += e
			obs[len(obs)-1] += o
		}
		x2 := 0.0
		for j := range exp {
			x2 += sq(obs[j]-exp[j]) / exp[j]
		}
		if len(exp) > 1 {
			if q := crit(len(exp) - 1); x2 > q {
				t.Errorf("%s: X² = %.2f on %d df above qchisq(1-1e-6) = %.2f (%s)", c.id, x2, len(exp)-1, q, c.source)
			}
		}
		mean, m2 := 0.0, 0.0
		for k, p := range c.prob {
			mean += float64(k) * p
		}
		for k, p := range c.prob {
			m2 += sq(float64(k)-mean) * p
		}
		if d := math.Abs(sum/R - mean); d > 4*math.Sqrt(m2/R)+1e-12 {
			t.Errorf("%s: mean of draws %.6f, exact %.6f, beyond 4 MC SE %.3g", c.id, sum/R, mean, math.Sqrt(m2/R))
		}
	}
}

// TestTableDegenerate checks the tables with one possible value.
func TestTableDegenerate(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	for _, c := range []struct {
		n    int
		p    float64
		want int
	}{{0, 0.3, 0}, {7, 0, 0}, {7, 1, 7}, {0, 1, 0}, {1, 0, 0}, {1, 1, 1}} {
		tab := NewBinomialTable(c.n, c.p)
		for range 100 {
			if x := tab.Draw(r); x != c.want {
				t.Fatalf("Binomial(%d, %v) drew %d, want %d", c.n, c.p, x, c.want)
			}
		}
		if tab.N() != c.n || tab.P() != c.p {
			t.Errorf("N, P = %d, %v", tab.N(), tab.P())
		}
	}
	for _, c := range []struct {
		n      int
		p, icc float64
		want   int
	}{{10, 0, 0.3, 0}, {10, 1, 0.3, 10}} {
		tab := NewBetaBinomialTable(c.n, c.p, c.icc)
		for range 100 {
			if x := tab.Draw(r); x != c.want {
				t.Fatalf("BetaBinomial(%d, %v, %v) drew %d, want %d", c.n, c.p, c.icc, x, c.want)
			}
		}
	}
}

// TestBetaBinomialNoICC: with icc = 0 the beta-binomial table is the
// binomial one, cell for cell.
func TestBetaBinomialNoICC(t *testing.T) {
	a := NewBetaBinomialTable(40, 0.27, 0).tab
	b := NewBinomialTable(40, 0.27).tab
	if len(a.cells) != len(b.cells) {
		t.Fatal("different tables")
	}
	for i := range a.cells {
		if a.cells[i] != b.cells[i] {
			t.Fatalf("cell %d differs", i)
		}
	}
}

// TestAliasTableShapes checks the alias construction on small hand-made
// distributions whose cell probabilities are exact binary fractions, so the
// implied probabilities must be exact: padding cells (3 values in 4 cells),
// a zero weight, a single value.
func TestAliasTableShapes(t *testing.T) {
	for _, c := range []struct {
		lo int
		w  []float64
	}{
		{0, []float64{1, 2, 1}},
		{5, []float64{0, 1, 0, 3}},
		{-3, []float64{1}},
		{0, []float64{1, 1, 1, 1, 1, 1, 1, 1, 8}},
	} {
		tab := newAliasTable(c.lo, c.w)
		lo, p := tab.probs()
		total := 0.0
		for _, x := range c.w {
			total += x
		}
		for i, x := range c.w {
			k := c.lo + i
			got := 0.0
			if j := k - lo; j >= 0 && j < len(p) {
				got = p[j]
			}
			if got != x/total {
				t.Errorf("weights %v: P(%d) = %v, want %v", c.w, k, got, x/total)
			}
		}
	}
}

// simChiBins returns the 19 inner edges of 20 equiprobable bins of χ²(df):
// R qchisq(j/20, df), sim_chisq_bins.tsv.
func simChiBins(t *testing.T) map[float64][]float64 {
	t.Helper()
	bins := map[float64][]float64{}
	for _, row := range reftable.Load(t, "sim_chisq_bins.tsv") {
		df := row.F(t, "df")
		bins[df] = append(bins[df], row.F(t, "q"))
	}
	return bins
}

// TestChiSquareSampler checks 400,000 draws (fixed seed) for each degrees
// of freedom — 0.5 and 1 use the shape boost, the others Marsaglia–Tsang
// directly — by a chi-square goodness-of-fit test on 20 equiprobable bins
// whose edges are R's qchisq(j/20, df) (sim_chisq_bins.tsv), against
// qchisq(1 − 1e-6, 19) (sim_gof_crit.tsv), and by the first two moments
// within 4 Monte-Carlo standard errors: the mean k with SE √(2k/R), the
// variance 2k with SE √((μ₄ − σ⁴)/R) = √((8k² + 48k)/R), from the central
// moments μ₂ = 2k, μ₄ = 12k² + 48k of χ²(k) (Johnson NL, Kotz S,
// Balakrishnan N, 1994. Continuous Univariate Distributions, vol. 1, 2nd
// ed. Wiley, chapter 18).
func TestChiSquareSampler(t *testing.T) {
	crit := simGOFCrit(t)(19)
	const R = 400_000
	for df, edges := range simChiBins(t) {
		if len(edges) != 19 {
			t.Fatalf("df %v: %d edges", df, len(edges))
		}
		s := NewChiSquareSampler(df)
		if s.DF() != df {
			t.Errorf("DF = %v", s.DF())
		}
		r := rand.New(rand.NewPCG(uint64(df*1000), 42))
		var counts [20]float64
		sum, sum2 := 0.0, 0.0
		for range R {
			x := s.Draw(r)
			if !(x > 0) || math.IsInf(x, 0) {
				t.Fatalf("df %v: drew %v", df, x)
			}
			counts[sort.SearchFloat64s(edges, x)]++
			sum += x
			sum2 += x * x
		}
		x2 := 0.0
		for _, c := range counts {
			x2 += sq(c-R/20) / (R / 20)
		}
		if x2 > crit {
			t.Errorf("df %v: X² = %.2f above %.2f", df, x2, crit)
		}
		mean := sum / R
		v := (sum2 - R*mean*mean) / (R - 1)
		if d := math.Abs(mean - df); d > 4*math.Sqrt(2*df/R) {
			t.Errorf("df %v: mean %.5f, beyond 4 SE", df, mean)
		}
		if d := math.Abs(v - 2*df); d > 4*math.Sqrt((8*df*df+48*df)/R) {
			t.Errorf("df %v: variance %.5f, want %v within 4 SE", df, v, 2*df)
		}
	}
}

// TestDrawChiSquare: the one-off function draws what the sampler draws.
func TestDrawChiSquare(t *testing.T) {
	for _, k := range []float64{0.7, 4, 31} {
		r1 := rand.New(rand.NewPCG(9, 9))
		r2 := rand.New(rand.NewPCG(9, 9))
		s := NewChiSquareSampler(k)
		for range 1000 {
			if a, b := DrawChiSquare(r1, k), s.Draw(r2); a != b {
				t.Fatalf("k %v: %v != %v", k, a, b)
			}
		}
	}
}

func TestSamplerPanics(t *testing.T) {
	for name, f := range map[string]func(){
		"binomial n < 0":    func() { NewBinomialTable(-1, 0.5) },
		"binomial p > 1":    func() { NewBinomialTable(10, 1.5) },
		"binomial p NaN":    func() { NewBinomialTable(10, math.NaN()) },
		"beta-binomial icc": func() { NewBetaBinomialTable(10, 0.5, 1) },
		"beta-binomial p":   func() { NewBetaBinomialTable(10, -0.1, 0.1) },
		"chi-square k = 0":  func() { NewChiSquareSampler(0) },
		"chi-square k = ∞":  func() { NewChiSquareSampler(math.Inf(1)) },
		"alias no weight":   func() { newAliasTable(0, []float64{0, 0}) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}

func BenchmarkBinomialTableDraw(b *testing.B) {
	tab := NewBinomialTable(200, 0.3)
	r := rand.New(rand.NewPCG(1, 2))
	s := 0
	for i := 0; i < b.N; i++ {
		s += tab.Draw(r)
	}
	_ = s
}

func BenchmarkChiSquare(b *testing.B) {
	c := NewChiSquareSampler(398)
	r := rand.New(rand.NewPCG(1, 2))
	s := 0.0
	for i := 0; i < b.N; i++ {
		s += c.Draw(r)
	}
	_ = s
}
