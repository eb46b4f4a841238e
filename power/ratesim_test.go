package power

import (
	"context"
	"math"
	"math/rand/v2"
	"sort"
	"strconv"
	"strings"
	"sync/atomic"
	"testing"

	"enough/power/reftable"
)

// rateBins is one distribution of rates_bins.tsv: upper bin edges (the
// last +Inf) and their probabilities from R (ppois, pnbinom or pgamma;
// the call is in the source).
type rateBins struct {
	id, dist, source string
	mu, kappa        float64
	hi, prob         []float64
}

func loadRateBins(t *testing.T) []*rateBins {
	t.Helper()
	var out []*rateBins
	by := map[string]*rateBins{}
	for _, row := range reftable.Load(t, "rates_bins.tsv") {
		b := by[row["id"]]
		if b == nil {
			b = &rateBins{id: row["id"], dist: row["dist"], source: row["source"], mu: row.F(t, "mu"), kappa: row.F(t, "kappa")}
			by[b.id] = b
			out = append(out, b)
		}
		b.hi = append(b.hi, row.F(t, "hi"))
		b.prob = append(b.prob, row.F(t, "prob"))
	}
	return out
}

// poolChiSquare returns Pearson's X² of observed against expected counts
// per bin, bins pooled from the left until each expects at least 20
// draws (the remainder joins the last), and its degrees of freedom, the
// pooled bins less one.
func poolChiSquare(expected, observed []float64) (x2 float64, df int) {
	var exp, obs []float64
	e, o := 0.0, 0.0
	for k := range expected {
		e += expected[k]
		o += observed[k]
		if e >= 20 {
			exp, obs = append(exp, e), append(obs, o)
			e, o = 0, 0
		}
	}
	if len(exp) == 0 {
		return 0, 0
	}
	exp[len(exp)-1] += e
	obs[len(obs)-1] += o
	for k := range exp {
		x2 += sq(obs[k]-exp[k]) / exp[k]
	}
	return x2, len(exp) - 1
}

// TestRateSamplerDistributions draws 10⁶ variates from each distribution
// of rates_bins.tsv with a fixed seed and checks
//
//   - the counts in R's bins by a chi-square goodness-of-fit test, bins
//     pooled from the left to an expected count of at least 20, against
//     qchisq(1 − 1e-6, bins − 1) (sim_gof_crit.tsv, made by sim_make.R);
//   - the sample mean against the theoretical mean (μ for the Poisson,
//     the negative binomial and the gamma rate: textbook facts), within 4
//     Monte-Carlo standard errors, √(σ²/R);
//   - the sample variance against μ (Poisson), μ + κμ² (negative
//     binomial) and κμ² (gamma, shape 1/κ and scale κμ), within 4 of its
//     standard error, √((m₄ − s⁴)/R) from the sample's fourth central
//     moment.
//
// Poisson variates are drawn both by the sampler built for a fixed mean
// (group totals) and by drawPoisson (a new mean each draw); the means
// cover inversion (below 10), PTRS (10 and above) and totals of 10¹².
// Negative-binomial counts are drawn both by the sampler (an alias table
// but for μ = 2000, κ = 5) and as gamma–Poisson mixtures.
func TestRateSamplerDistributions(t *testing.T) {
	crit := simGOFCrit(t)
	const R = 1_000_000
	for i, b := range loadRateBins(t) {
		type drawer struct {
			name string
			f    func(*rand.Rand) float64
		}
		var ds []drawer
		wantVar := 0.0
		switch b.dist {
		case "poisson":
			s := newPoissonSampler(b.mu)
			mu := b.mu
			ds = []drawer{{"fixed mean", s.draw}, {"drawPoisson", func(r *rand.Rand) float64 { return drawPoisson(r, mu) }}}
			wantVar = b.mu
		case "negbin":
			s := newNegBinSampler(b.mu, b.kappa)
			ds = []drawer{{"count", s.draw}, {"mixture", s.mixture}}
			wantVar = b.mu + b.kappa*b.mu*b.mu
		case "gamma":
			s := newNegBinSampler(b.mu, b.kappa)
			ds = []drawer{{"rate", s.rate}}
			wantVar = b.kappa * b.mu * b.mu
		default:
			t.Fatalf("unknown distribution %q", b.dist)
		}
		for j, d := range ds {
			r := rand.New(rand.NewPCG(uint64(100+i), uint64(j)))
			counts := make([]float64, len(b.hi))
			xs := make([]float64, R)
			for k := range xs {
				x := d.f(r)
				xs[k] = x
				counts[sort.SearchFloat64s(b.hi, x)]++ // the first bin with hi ≥ x
			}
			expected := make([]float64, len(b.prob))
			for k, p := range b.prob {
				expected[k] = R * p
			}
			if x2, df := poolChiSquare(expected, counts); df < 1 || x2 > crit(df) {
				t.Errorf("%s (%s): X² = %.1f on %d df, above qchisq(1-1e-6) or no test (%s)", b.id, d.name, x2, df, b.source)
			}
			// Moments about the known mean first, to keep the sums exact
			// at a mean of 10¹².
			var s1, s2 float64
			for _, x := range xs {
				s1 += x - b.mu
			}
			m := s1 / R
			var m4 float64
			for _, x := range xs {
				dx := x - b.mu - m
				s2 += dx * dx
				m4 += dx * dx * dx * dx
			}
			v := s2 / (R - 1)
			m4 /= R
			if se := math.Sqrt(wantVar / R); math.Abs(m) > 4*se {
				t.Errorf("%s (%s): mean %.8g, want %.8g within 4 SE %.3g", b.id, d.name, b.mu+m, b.mu, se)
			}
			if se := math.Sqrt((m4 - v*v) / R); math.Abs(v-wantVar) > 4*se {
				t.Errorf("%s (%s): variance %.8g, want %.8g within 4 SE %.3g", b.id, d.name, v, wantVar, se)
			}
		}
	}
}

// TestNegBinTable checks the distribution that each negative-binomial
// alias table really draws from (its cells' probabilities, exactly)
// against R's pnbinom in the bins of rates_bins.tsv, to 1e-12 relative
// plus 1e-15, and that the long-tailed case (μ = 2000, κ = 5: a support
// of about 580,000 values) falls back to the mixture.
func TestNegBinTable(t *testing.T) {
	for _, b := range loadRateBins(t) {
		if b.dist != "negbin" {
			continue
		}
		s := newNegBinSampler(b.mu, b.kappa)
		if want := b.mu < 1000; s.table != want {
			t.Errorf("%s: table %v, want %v", b.id, s.table, want)
		}
		if !s.table {
			continue
		}
		lo, p := s.tab.probs()
		got := make([]float64, len(b.hi))
		for i, x := range p {
			got[sort.SearchFloat64s(b.hi, float64(lo+i))] += x
		}
		for i := range got {
			if !rateClose(got[i], b.prob[i], 1e-12, 1e-15) {
				t.Errorf("%s: bin %d (to %v): table %.15g, R %.15g (%s)", b.id, i+1, b.hi[i], got[i], b.prob[i], b.source)
			}
		}
	}
}

// TestPoissonLogPMF checks the log-probabilities of PTRS's acceptance
// step against R's dpois(k, mu, log = TRUE) (rates_logpmf.tsv), including
// totals of 10¹² and 3·10¹⁵ where k ln μ, μ and ln k! each exceed the
// answer 10¹³-fold: to 1e-12 relative plus 1e-11 absolute.
func TestPoissonLogPMF(t *testing.T) {
	for _, row := range reftable.Load(t, "rates_logpmf.tsv") {
		k, mu := row.F(t, "k"), row.F(t, "mu")
		got, want := poissonLogPMF(k, mu), row.F(t, "logp")
		if !rateClose(got, want, 1e-12, 1e-11) {
			t.Errorf("ln P(%v; %v) = %.15g, R %.15g (%s)", k, mu, got, want, row["source"])
		}
	}
}

// TestNegBinWald checks the negative-binomial Wald statistic (the pooled
// moment estimate of κ, the estimate of ln RR and its variance) on
// invented data sets against the same statistic computed in R from mean()
// and var() (rates_wald.tsv, rates_make.R), to 1e-12 relative; the
// group's mean and sum of squares come from the accumulation the worker
// uses, about a shifted centre. The "underdispersed" set has κ̂ = 0.
func TestNegBinWald(t *testing.T) {
	parse := func(s string) []float64 {
		var out []float64
		for _, f := range strings.Split(s, ",") {
			x, err := strconv.ParseFloat(f, 64)
			if err != nil {
				t.Fatal(err)
			}
			out = append(out, x)
		}
		return out
	}
	sums := func(ys []float64, c float64) (mean, ss float64) {
		var tot, s2 float64
		for _, y := range ys {
			tot += y
			s2 += (y - c) * (y - c)
		}
		n := float64(len(ys))
		mean = tot / n
		return mean, s2 - n*(mean-c)*(mean-c)
	}
	for _, row := range reftable.Load(t, "rates_wald.tsv") {
		a, b := parse(row["y1"]), parse(row["y0"])
		y1, ss1 := sums(a, 3) // any centre will do
		y0, ss0 := sums(b, 2)
		l, v := negBinWald(float64(len(a)), y1, ss1, float64(len(b)), y0, ss0)
		if want := row.F(t, "l"); !rateClose(l, want, 1e-12, 1e-15) {
			t.Errorf("%s: ln RR %.15g, R %.15g (%s)", row["id"], l, want, row["source"])
		}
		if want := row.F(t, "v"); !rateClose(v, want, 1e-12, 0) {
			t.Errorf("%s: variance %.15g, R %.15g (%s)", row["id"], v, want, row["source"])
		}
		if want := row.F(t, "z"); !rateClose(l/math.Sqrt(v), want, 1e-12, 1e-15) {
			t.Errorf("%s: z %.15g, R %.15g (%s)", row["id"], l/math.Sqrt(v), want, row["source"])
		}
	}
}

// rateSimCase builds the model of a row of rates_sim.tsv.
func rateSimCase(t *testing.T, row reftable.Row) Model {
	t.Helper()
	return NewRateSim(RateSim{
		TwoRates: TwoRates{UnexposedRate: row.F(t, "lambda0"), RateRatio: row.F(t, "rr"),
			PersonTime: row.F(t, "t"), Overdispersion: row.F(t, "kappa")},
		N1: row.I(t, "n1"), N2: row.I(t, "n2"), Alpha: row.F(t, "alpha"),
		Sides: row.I(t, "sides"), Dir: row.I(t, "dir"),
	})
}

// TestRateSimAgainstR compares the simulated power with an independent
// simulation in R (rates_sim.tsv, rates_make.R): counts drawn per
// participant by rpois or rnbinom(size = 1/κ, mu), the same Wald
// statistic computed in R, seeds in each row's source. Both shares are
// Monte-Carlo estimates, so the tolerance is 4 standard errors of their
// difference, √(p(1 − p)(1/R_go + 1/R_R)) with p the pooled share. The
// null rows (RR = 1, large expected counts) are checked against alpha in
// TestRateSimNullLevel.
func TestRateSimAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "rates_sim.tsv") {
		if row.F(t, "rr") == 1 {
			continue
		}
		reps := int64(row.F(t, "reps"))
		res := simulate(t, rateSimCase(t, row), reps, 700+uint64(i), 0)
		rr, rk := row.F(t, "reps"), row.F(t, "rejections")
		p := (float64(res.Rejections) + rk) / (float64(res.Replicates) + rr)
		tol := 4 * math.Sqrt(p*(1-p)*(1/float64(res.Replicates)+1/rr))
		want := row.F(t, "share")
		t.Logf("%s: Go %.5f, R %.5f, tolerance %.5f", row["id"], res.Power(), want, tol)
		if math.Abs(res.Power()-want) > tol {
			t.Errorf("%s: Go %.5f, R %.5f; tolerance %.5f (%s)", row["id"], res.Power(), want, tol, row["source"])
		}
	}
}

// TestRateSimNullLevel checks the rejection rate under the null (RR = 1)
// with large expected counts, 5,000 events a group for the Poisson and
// 1,000 for the negative binomial (κ = 0.5), the designs of the null rows
// of rates_sim.tsv: within 3 Monte-Carlo standard errors √(α(1 − α)/R)
// of alpha, two-sided and each one-sided test. (R's shares of the same
// designs, in rates_make.out, are within 1.3 standard errors of alpha.)
func TestRateSimNullLevel(t *testing.T) {
	for i, row := range reftable.Load(t, "rates_sim.tsv") {
		if row.F(t, "rr") != 1 {
			continue
		}
		reps := int64(row.F(t, "reps"))
		res := simulate(t, rateSimCase(t, row), reps, 800+uint64(i), 0)
		a := row.F(t, "alpha")
		se := math.Sqrt(a * (1 - a) / float64(reps))
		t.Logf("%s: rejection rate %.5f, alpha %v, (rate − alpha)/SE = %+.2f", row["id"], res.Power(), a, (res.Power()-a)/se)
		if math.Abs(res.Power()-a) > 3*se {
			t.Errorf("%s: rejection rate %.5f under the null, alpha %v; beyond 3 SE %.5f", row["id"], res.Power(), a, se)
		}
	}
}

// TestRateSimWorkers checks that the result for a seed does not depend on
// the number of workers, for both models, with blocks small enough that
// each worker runs several.
func TestRateSimWorkers(t *testing.T) {
	base := TwoRates{UnexposedRate: 0.4, RateRatio: 1.3, PersonTime: 1.5}
	for _, k := range []float64{0, 0.8} {
		c := base
		c.Overdispersion = k
		m := NewRateSim(RateSim{TwoRates: c, N1: 120, N2: 200, Alpha: 0.05, Sides: 2})
		var res [2]SimResult
		for w := range res {
			var err error
			res[w], err = Simulate(context.Background(), m, SimConfig{Replicates: 5003, Seed: 42, Workers: w + 1, BlockSize: 500})
			if err != nil {
				t.Fatal(err)
			}
		}
		if !sameResult(res[0], res[1]) {
			t.Errorf("κ %v: 1 worker %+v, 2 workers %+v", k, res[0], res[1])
		}
		if res[0].Rejections == 0 || res[0].Rejections == res[0].Replicates {
			t.Errorf("κ %v: degenerate result %+v", k, res[0])
		}
	}
}

// TestRateSimNoEvents: with about 10⁻⁶ expected events a group no
// replicate has events in both groups, so none rejects, whatever the
// test. (A group without events does not reject: NewRateSim.)
func TestRateSimNoEvents(t *testing.T) {
	for _, k := range []float64{0, 1} {
		for _, sd := range [][2]int{{2, 0}, {1, 1}, {1, -1}} {
			m := NewRateSim(RateSim{TwoRates: TwoRates{UnexposedRate: 1e-8, RateRatio: 5, PersonTime: 1, Overdispersion: k},
				N1: 20, N2: 30, Alpha: 0.4, Sides: sd[0], Dir: sd[1]})
			if res := simulate(t, m, 20000, 9, 1); res.Rejections != 0 {
				t.Errorf("κ %v sides %d dir %d: %d rejections without events", k, sd[0], sd[1], res.Rejections)
			}
		}
	}
}

// TestRateSimOneSided: one-sided tests reject only in their direction.
// With RR = 3 and 300 expected events in the unexposed group the Wald z
// is about 15, so the test on the side of the effect always rejects and
// the other never does.
func TestRateSimOneSided(t *testing.T) {
	for _, k := range []float64{0, 0.2} {
		for _, dir := range []int{1, -1} {
			m := NewRateSim(RateSim{TwoRates: TwoRates{UnexposedRate: 1, RateRatio: 3, PersonTime: 1, Overdispersion: k},
				N1: 300, N2: 300, Alpha: 0.05, Sides: 1, Dir: dir})
			res := simulate(t, m, 2000, 11, 1)
			want := int64(0)
			if dir == 1 {
				want = res.Replicates
			}
			if res.Rejections != want {
				t.Errorf("κ %v dir %+d: %d rejections of %d", k, dir, res.Rejections, res.Replicates)
			}
		}
	}
}

// TestRateSimStop: once the runner's stop flag is set, a
// negative-binomial replicate of a large study is cut short (and does not
// reject).
func TestRateSimStop(t *testing.T) {
	m := NewRateSim(RateSim{TwoRates: TwoRates{UnexposedRate: 1, RateRatio: 3, PersonTime: 1, Overdispersion: 0.5},
		N1: 2_000_000, N2: 2_000_000, Alpha: 0.05, Sides: 2})
	w := m.NewWorker()
	sw, ok := w.(stopWatcher)
	if !ok {
		t.Fatal("the negative-binomial worker does not watch the stop flag")
	}
	stop := new(atomic.Bool)
	stop.Store(true)
	sw.watchStop(stop)
	if w.Replicate(rand.New(rand.NewPCG(1, 2))) {
		t.Error("a stopped replicate rejected")
	}
}

// TestRateSimPanics checks that invalid models panic.
func TestRateSimPanics(t *testing.T) {
	ok := RateSim{TwoRates: TwoRates{UnexposedRate: 0.1, RateRatio: 2, PersonTime: 1, Overdispersion: 0.5},
		N1: 10, N2: 10, Alpha: 0.05, Sides: 2}
	for name, c := range map[string]RateSim{
		"no group":         func() RateSim { c := ok; c.N2 = 0; return c }(),
		"one with κ":       func() RateSim { c := ok; c.N1 = 1; return c }(),
		"negative κ":       func() RateSim { c := ok; c.Overdispersion = -1; return c }(),
		"alpha 1":          func() RateSim { c := ok; c.Alpha = 1; return c }(),
		"one-sided no dir": func() RateSim { c := ok; c.Sides = 1; return c }(),
		"overflow μ":       func() RateSim { c := ok; c.UnexposedRate, c.PersonTime = 1e200, 1e200; return c }(),
		"overflow total": func() RateSim {
			c := ok
			c.Overdispersion, c.UnexposedRate, c.N1 = 0, 1e307, 1000
			return c
		}(),
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			NewRateSim(c)
		}()
	}
	// One participant per group is enough for Poisson counts.
	c := ok
	c.Overdispersion, c.N1, c.N2 = 0, 1, 1
	NewRateSim(c)
}

// BenchmarkRateSimPoisson measures one worker's Poisson replicate (two
// group totals by PTRS, 500 participants a group, about 50 and 75 events).
func BenchmarkRateSimPoisson(b *testing.B) {
	m := NewRateSim(RateSim{TwoRates: TwoRates{UnexposedRate: 0.1, RateRatio: 1.5, PersonTime: 1},
		N1: 500, N2: 500, Alpha: 0.05, Sides: 2})
	benchReplicates(b, m)
}

// BenchmarkRateSimNegBin measures one worker's negative-binomial
// replicate at 500 participants a group (κ = 0.5, 0.5 and 0.7 expected
// events each): 1,000 gamma and 1,000 Poisson draws.
func BenchmarkRateSimNegBin(b *testing.B) {
	m := NewRateSim(RateSim{TwoRates: TwoRates{UnexposedRate: 0.5, RateRatio: 1.4, PersonTime: 1, Overdispersion: 0.5},
		N1: 500, N2: 500, Alpha: 0.05, Sides: 2})
	benchReplicates(b, m)
}

// BenchmarkNegBinDraw measures one negative-binomial count (μ = 0.5,
// κ = 0.5) from the alias table and as a gamma–Poisson mixture.
func BenchmarkNegBinDraw(b *testing.B) {
	s := newNegBinSampler(0.5, 0.5)
	for _, d := range []struct {
		name string
		f    func(*rand.Rand) float64
	}{{"table", s.draw}, {"mixture", s.mixture}} {
		b.Run(d.name, func(b *testing.B) {
			r := rand.New(rand.NewPCG(1, 1))
			sum := 0.0
			for b.Loop() {
				sum += d.f(r)
			}
			_ = sum
		})
	}
}

// BenchmarkPoissonPTRS measures one Poisson draw at a mean of 10⁴.
func BenchmarkPoissonPTRS(b *testing.B) {
	s := newPoissonSampler(1e4)
	r := rand.New(rand.NewPCG(1, 1))
	sum := 0.0
	for b.Loop() {
		sum += s.draw(r)
	}
	_ = sum
}
