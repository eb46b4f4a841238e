package power

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sync/atomic"
)

// This file holds the Monte-Carlo model of a cohort compared on event
// rates ([NewRateSim]) and its samplers: Poisson variates by inversion
// for small means and by Hörmann's transformed rejection (PTRS) for large
// ones, and negative-binomial variates from an alias table or, for long
// tails, as gamma–Poisson mixtures, the gamma drawn by Marsaglia and
// Tsang's method ([ChiSquareSampler]).

// poissonInversionMax is the mean below which Poisson variates are drawn
// by inversion (on average 1 + μ steps); from it on, by PTRS, whose
// published constants hold for μ ≥ 10 (Hörmann 1993).
const poissonInversionMax = 10

// poissonSampler draws Poisson(μ) variates for one mean μ ≥ 0 (finite),
// with the constants of its method computed once. Inversion: the smallest
// k with U < P(X ≤ k), the terms built by p(k) = p(k−1) μ/k from e^(−μ).
// PTRS, the transformed rejection with squeeze of Hörmann:
//
//	b = 0.931 + 2.53 √μ,  a = −0.059 + 0.02483 b
//	1/α = 1.1239 + 1.1328/(b − 3.4),  v_r = 0.9277 − 3.6224/(b − 2)
//	U ~ U(−½, ½), V ~ U(0, 1), u_s = ½ − |U|
//	k = ⌊(2a/u_s + b) U + μ + 0.43⌋
//	accept when u_s ≥ 0.07 and V ≤ v_r; reject when k < 0 or
//	(u_s < 0.013 and V > u_s); else accept when
//	ln(V (1/α) / (a/u_s² + b)) ≤ ln p(k)
//
// about 1.1 pairs of uniforms a draw, with ln p(k) from
// [poissonLogPMF] (exact to rounding at any μ, so the sampler stays
// exact for group totals of 10¹² and beyond). Variates are float64
// whole numbers, exact up to 2⁵³.
//
// A poissonSampler is read-only after construction.
//
// References: Hörmann W (1993). The transformed rejection method for
// generating Poisson random variables. Insurance Math Econom 12:39–45
// (algorithm PTRS).
type poissonSampler struct {
	mu       float64
	expNeg   float64 // e^(−μ), for inversion
	ptrs     bool
	a, b     float64
	invAlpha float64
	vr       float64
}

func newPoissonSampler(mu float64) poissonSampler {
	if !(mu >= 0) || math.IsInf(mu, 1) {
		panic(fmt.Sprintf("power: Poisson mean must be non-negative and finite, got %v", mu))
	}
	s := poissonSampler{mu: mu}
	if mu < poissonInversionMax {
		s.expNeg = math.Exp(-mu)
		return s
	}
	s.ptrs = true
	s.b = 0.931 + 2.53*math.Sqrt(mu)
	s.a = -0.059 + 0.02483*s.b
	s.invAlpha = 1.1239 + 1.1328/(s.b-3.4)
	s.vr = 0.9277 - 3.6224/(s.b-2)
	return s
}

// draw returns one Poisson(μ) variate.
func (s *poissonSampler) draw(r *rand.Rand) float64 {
	if !s.ptrs {
		return poissonInvert(r, s.mu, s.expNeg)
	}
	for {
		u := r.Float64() - 0.5
		v := r.Float64()
		us := 0.5 - math.Abs(u)
		k := math.Floor((2*s.a/us+s.b)*u + s.mu + 0.43)
		if us >= 0.07 && v <= s.vr {
			return k
		}
		if !(k >= 0) || (us < 0.013 && v > us) {
			continue
		}
		if math.Log(v*s.invAlpha/(s.a/(us*us)+s.b)) <= poissonLogPMF(k, s.mu) {
			return k
		}
	}
}

// poissonInvert draws Poisson(mu) by sequential inversion, emu = e^(−mu).
// When rounding leaves the running sum short of U once the terms vanish
// (a chance below 10⁻¹⁵), it starts again with a new U.
func poissonInvert(r *rand.Rand, mu, emu float64) float64 {
	for {
		u := r.Float64()
		p, s, k := emu, emu, 0.0
		for u >= s && p > 0 {
			k++
			p *= mu / k
			s += p
		}
		if u < s {
			return k
		}
	}
}

// drawPoisson returns one Poisson(mu) variate for a mean that changes
// from draw to draw (the gamma rate of a negative-binomial count).
func drawPoisson(r *rand.Rand, mu float64) float64 {
	if mu < poissonInversionMax {
		return poissonInvert(r, mu, math.Exp(-mu))
	}
	s := newPoissonSampler(mu)
	return s.draw(r)
}

// poissonLogPMF returns ln P(X = k) for X ~ Poisson(mu), k a whole number
// ≥ 0 and mu > 0, in Loader's form
//
//	ln p(k) = −δ(k) − bd0(k, μ) − ½ ln(2πk),  bd0(k, μ) = k ln(k/μ) + μ − k
//
// δ the error of Stirling's formula for ln k!, so that no two large terms
// cancel.
//
// References: Loader C (2000). Fast and accurate computation of binomial
// probabilities. Technical report, Bell Laboratories.
func poissonLogPMF(k, mu float64) float64 {
	if k == 0 {
		return -mu
	}
	return -stirlingError(k) - bd0(k, mu) - 0.5*math.Log(2*math.Pi*k)
}

// stirlingError returns δ(n) = ln n! − [(n + ½) ln n − n + ½ ln 2π] for a
// whole number n ≥ 1: from [math.Lgamma] below 15, where the terms are
// small, and beyond from the Stirling series
//
//	δ(n) = 1/(12n) − 1/(360n³) + 1/(1260n⁵) − 1/(1680n⁷) + 1/(1188n⁹) − …
//
// whose next term is below 2·10⁻¹⁶ there.
//
// References: Abramowitz M, Stegun IA (1964). Handbook of Mathematical
// Functions, 6.1.41.
func stirlingError(n float64) float64 {
	if n < 15 {
		lg, _ := math.Lgamma(n + 1)
		return lg - (n+0.5)*math.Log(n) + n - 0.5*math.Log(2*math.Pi)
	}
	n2 := 1 / (n * n)
	return (1.0/12 - n2*(1.0/360-n2*(1.0/1260-n2*(1.0/1680-n2/1188)))) / n
}

// bd0 returns k ln(k/μ) + μ − k (≥ 0), by the series
//
//	bd0 = (k − μ) v + 2k Σ_{j≥1} v^(2j+1)/(2j + 1),  v = (k − μ)/(k + μ)
//
// when k is within 10% of μ, where the direct form would cancel
// (Loader 2000).
func bd0(k, mu float64) float64 {
	d := k - mu
	if math.Abs(d) >= 0.1*(k+mu) {
		return k*math.Log(k/mu) + mu - k
	}
	v := d / (k + mu)
	s := d * v
	ej := 2 * k * v
	v2 := v * v
	for j := 3.0; ; j += 2 {
		ej *= v2
		s1 := s + ej/j
		if s1 == s {
			return s
		}
		s = s1
	}
}

// negBinSampler draws negative-binomial counts with mean μ and variance
// μ + κμ² (size r = 1/κ, p = κμ/(1 + κμ)):
//
//	P(Y = k) = Γ(k + r)/(Γ(r) k!) (1 − p)^r p^k
//
// When the distribution fits in an alias table of at most
// [negBinTableMax] values (tails below 1e-25 of the mode dropped, as for
// [BinomialTable]), each draw is one table look-up: the probabilities are
// built once by the ratio recursion
//
//	f(k+1)/f(k) = p (k + r)/(k + 1)
//
// outward from the mode ⌊(r − 1) p/(1 − p)⌋ (0 when r ≤ 1) and normalised,
// with Walker's alias method. Otherwise (a long tail: κμ or μ in the
// thousands) each draw is the gamma–Poisson mixture: a rate
// Λ ~ Gamma(shape 1/κ, scale κμ), drawn as (κμ/2)·χ²(2/κ) by
// [ChiSquareSampler] (Marsaglia and Tsang's gamma method), then a count
// ~ Poisson(Λ) by [drawPoisson]. Both give the same distribution; the
// table is about ten times faster (BenchmarkNegBinDraw).
//
// A negBinSampler is read-only after construction.
//
// References: Greenwood M, Yule GU (1920). An inquiry into the nature of
// frequency distributions representative of multiple happenings. J R Stat
// Soc 83:255–279 (the gamma mixture of Poissons); Marsaglia G, Tsang WW
// (2000). ACM Trans Math Softw 26:363–372; Walker AJ (1977). ACM Trans
// Math Softw 3:253–256.
type negBinSampler struct {
	tab   aliasTable
	table bool
	chi   ChiSquareSampler
	half  float64 // κμ/2
}

// negBinTableMax is the largest support, in values, that a
// negative-binomial alias table may hold (1 MB of cells).
const negBinTableMax = 1 << 16

func newNegBinSampler(mu, kappa float64) negBinSampler {
	if !(kappa > 0) || !(mu >= 0) || math.IsInf(kappa*mu, 1) || math.IsInf(2/kappa, 1) {
		panic(fmt.Sprintf("power: negative binomial needs μ ≥ 0 and κ > 0 with κμ and 1/κ finite, got %v and %v", mu, kappa))
	}
	s := negBinSampler{chi: NewChiSquareSampler(2 / kappa), half: kappa * mu / 2}
	if lo, w := negBinWeights(mu, kappa); w != nil {
		s.tab, s.table = newAliasTable(lo, w), true
	}
	return s
}

// negBinWeights returns the probabilities of the negative binomial,
// relative to the mode's, from lo on, or nil when they take more than
// negBinTableMax values.
func negBinWeights(mu, kappa float64) (lo int, w []float64) {
	if mu == 0 {
		return 0, []float64{1}
	}
	r := 1 / kappa
	km := kappa * mu
	p := km / (1 + km)
	mode := 0.0
	if r > 1 {
		mode = math.Floor((r - 1) * mu / r) // (r − 1) p/(1 − p), p/(1 − p) = μ/r
	}
	if mode > negBinTableMax {
		return 0, nil
	}
	var up []float64 // f(mode+1), f(mode+2), ... relative to f(mode) = 1
	x := 1.0
	for k := mode; ; k++ {
		x *= p * (k + r) / (k + 1)
		if x < tailCut {
			break
		}
		if up = append(up, x); len(up) > negBinTableMax {
			return 0, nil
		}
	}
	var down []float64 // f(mode−1), f(mode−2), ...
	x = 1.0
	for k := mode; k > 0; k-- {
		x *= k / (p * (k - 1 + r))
		if x < tailCut {
			break
		}
		down = append(down, x)
	}
	if len(down)+1+len(up) > negBinTableMax {
		return 0, nil
	}
	w = make([]float64, 0, len(down)+1+len(up))
	for i := len(down) - 1; i >= 0; i-- {
		w = append(w, down[i])
	}
	w = append(w, 1)
	w = append(w, up...)
	return int(mode) - len(down), w
}

// rate returns one gamma rate Λ of the mixture.
func (s *negBinSampler) rate(r *rand.Rand) float64 { return s.half * s.chi.Draw(r) }

// mixture returns one count drawn as a gamma–Poisson mixture.
func (s *negBinSampler) mixture(r *rand.Rand) float64 { return drawPoisson(r, s.rate(r)) }

// draw returns one count.
func (s *negBinSampler) draw(r *rand.Rand) float64 {
	if s.table {
		return float64(s.tab.pick(r.Uint64()))
	}
	return s.mixture(r)
}

// RateSim describes a simulated cohort compared on event rates, analysed
// by the Wald test of the log rate ratio planned by [TwoRates.N1]; see
// [NewRateSim].
type RateSim struct {
	// TwoRates gives the rates, the person-time and the overdispersion.
	TwoRates
	// N1 exposed and N2 unexposed participants: at least 1 each for
	// Poisson counts, at least 2 each with overdispersion (each group's
	// variance is estimated).
	N1, N2 int
	// Alpha is the level, in (0, 1).
	Alpha float64
	// Sides is 1 or 2; Dir (+1 for RR > 1, −1 for RR < 1) is the
	// direction of a one-sided test.
	Sides, Dir int
}

// NewRateSim returns the Monte-Carlo model of c: each replicate draws the
// counts and applies the Wald test of ln RR at level Alpha, rejecting
// when z² > z²_{1−α/2} (two-sided) or Dir·z > z_{1−α} (one-sided), with
// z = ln(ȳ1/ȳ0)/ŝe. The person-time cancels from the estimate.
//
// Poisson counts (κ = 0): the group totals Y_g ~ Poisson(n_g μ_g) are
// drawn at once (a sum of independent Poisson counts is Poisson), so a
// replicate costs O(1) whatever the sizes, and
//
//	ŝe² = 1/Y1 + 1/Y0
//
// Negative-binomial counts (κ > 0): each participant's count is drawn,
// O(N1 + N2) a replicate: one look-up in an alias table of the
// negative-binomial probabilities built once per group, or, when the
// tail is too long for a table of 65,536 values, a gamma–Poisson mixture
// (rate ~ Gamma(1/κ, scale κμ) by Marsaglia and Tsang's method, count ~
// Poisson(rate)). With ȳ_g and s²_g each group's mean and unbiased
// variance,
//
//	κ̂  = max(0, Σ_g n_g (s²_g − ȳ_g) / Σ_g n_g ȳ_g²)
//	ŝe² = (1/ȳ1 + κ̂)/n1 + (1/ȳ0 + κ̂)/n0
//
// κ̂ is the moment estimator pooled over the groups: s²_g − ȳ_g estimates
// κμ_g² without bias (E s² = μ + κμ², E ȳ = μ), so κ̂ is consistent, and
// it is truncated at 0 as κ cannot be negative. ŝe² is the variance of
// [TwoRates.Variance] at the estimates (Zhu and Lakkis 2014).
//
// A replicate in which a group has no event (Y_g = 0) does not reject:
// ln RR̂ is then undefined. This is the test's own behaviour and makes the
// simulated power fall short of [TwoRates.Power] when the expected events
// are few.
//
// The workers of a negative-binomial model watch the runner's stop flag
// every 16,384 participants, so a study of millions stops promptly.
//
// NewRateSim panics when c is invalid: rates as in [TwoRates], sizes as
// in [RateSim], a test as in [NewTwoMeans], or expected events per
// participant (and, for Poisson, per group) or κμ beyond the float64
// range.
//
// References: Breslow NE, Day NE (1987). Statistical Methods in Cancer
// Research, vol. II. IARC Scientific Publications 82, chapter 7; Zhu H,
// Lakkis H (2014). Sample size calculation for comparing two negative
// binomial rates. Stat Med 33:376–387.
func NewRateSim(c RateSim) Model {
	c.check()
	checkTest(c.Alpha, c.Sides, c.Dir)
	mu0 := c.UnexposedRate * c.PersonTime
	mu1 := c.RateRatio * mu0
	if math.IsInf(mu1, 1) || math.IsInf(mu0, 1) {
		panic(fmt.Sprintf("power: expected events per participant overflow: %v and %v", mu1, mu0))
	}
	z := ZAlpha(c.Alpha, c.Sides)
	sign := signOf(c.Sides, c.Dir)
	if c.Overdispersion == 0 {
		if c.N1 < 1 || c.N2 < 1 {
			panic(fmt.Sprintf("power: group sizes must be at least 1, got %d and %d", c.N1, c.N2))
		}
		t1, t0 := float64(c.N1)*mu1, float64(c.N2)*mu0
		if math.IsInf(t1, 1) || math.IsInf(t0, 1) {
			panic("power: expected events per group overflow")
		}
		return &poissonRates{
			y1: newPoissonSampler(t1), y0: newPoissonSampler(t0),
			shift: math.Log(float64(c.N2) / float64(c.N1)),
			c2:    z * z, sign: sign,
		}
	}
	if c.N1 < 2 || c.N2 < 2 {
		panic(fmt.Sprintf("power: with overdispersion each group needs at least 2 participants, got %d and %d", c.N1, c.N2))
	}
	return &negBinRates{
		g1: newNegBinSampler(mu1, c.Overdispersion), g0: newNegBinSampler(mu0, c.Overdispersion),
		n1: c.N1, n0: c.N2, mu1: mu1, mu0: mu0,
		c2: z * z, sign: sign,
	}
}

// poissonRates is the Poisson model: read-only, copied to each worker.
type poissonRates struct {
	y1, y0   poissonSampler
	shift    float64 // ln(n0/n1): ln RR̂ = ln(Y1/Y0) + shift
	c2, sign float64
}

func (m *poissonRates) NewWorker() Worker { w := *m; return &w }

func (m *poissonRates) Replicate(r *rand.Rand) bool {
	y1 := m.y1.draw(r)
	y0 := m.y0.draw(r)
	if y1 == 0 || y0 == 0 {
		return false
	}
	l := math.Log(y1/y0) + m.shift
	return waldRejects(l, 1/y1+1/y0, m.c2, m.sign)
}

// waldRejects reports whether the estimate l with variance v rejects:
// l² > c2·v, and for a one-sided test (sign ±1) on the side of sign.
func waldRejects(l, v, c2, sign float64) bool {
	if sign*l < 0 {
		return false
	}
	return l*l > c2*v
}

// negBinRates is the negative-binomial model: read-only and shared.
type negBinRates struct {
	g1, g0   negBinSampler
	n1, n0   int
	mu1, mu0 float64
	c2, sign float64
}

func (m *negBinRates) NewWorker() Worker { return &negBinRatesWorker{m: m} }

// negBinRatesWorker holds nothing but the runner's stop flag: each group
// is reduced to its sums as it is drawn.
type negBinRatesWorker struct {
	m    *negBinRates
	stop *atomic.Bool
	left int // participants until the next look at stop
}

func (w *negBinRatesWorker) watchStop(stop *atomic.Bool) { w.stop = stop }

// group draws n counts and returns their mean and their sum of squared
// deviations from it, accumulated about the expected mean c for accuracy;
// ok is false when the stop flag cut the replicate short.
func (w *negBinRatesWorker) group(r *rand.Rand, s *negBinSampler, n int, c float64) (mean, ss float64, ok bool) {
	var tot, s2 float64
	for i := 0; i < n; i++ {
		if w.left--; w.left < 0 {
			w.left = 1<<14 - 1
			if w.stop != nil && w.stop.Load() {
				return 0, 0, false
			}
		}
		y := s.draw(r)
		tot += y
		s2 += (y - c) * (y - c)
	}
	nf := float64(n)
	mean = tot / nf
	d := mean - c
	return mean, math.Max(0, s2-nf*d*d), true
}

func (w *negBinRatesWorker) Replicate(r *rand.Rand) bool {
	m := w.m
	y1, ss1, ok := w.group(r, &m.g1, m.n1, m.mu1)
	if !ok {
		return false
	}
	y0, ss0, ok := w.group(r, &m.g0, m.n0, m.mu0)
	if !ok || y1 == 0 || y0 == 0 {
		return false
	}
	l, v := negBinWald(float64(m.n1), y1, ss1, float64(m.n0), y0, ss0)
	return waldRejects(l, v, m.c2, m.sign)
}

// negBinWald returns the estimate ln(ȳ1/ȳ0) and its variance
// (1/ȳ1 + κ̂)/n1 + (1/ȳ0 + κ̂)/n0 from each group's size n, mean ȳ > 0 and
// sum of squared deviations ss, with κ̂ the pooled moment estimator of
// [NewRateSim].
func negBinWald(n1, y1, ss1, n0, y0, ss0 float64) (l, v float64) {
	num := n1*(ss1/(n1-1)-y1) + n0*(ss0/(n0-1)-y0)
	k := math.Max(0, num/(n1*y1*y1+n0*y0*y0))
	return math.Log(y1 / y0), (1/y1+k)/n1 + (1/y0+k)/n0
}
