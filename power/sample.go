package power

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
)

// This file holds the random variate generators of the Monte-Carlo models:
// table samplers for discrete distributions built once per parameter set
// by Walker's alias method, and Marsaglia and Tsang's gamma generator for
// chi-square variates. Normal variates come from math/rand/v2's
// NormFloat64 (the ziggurat method of Marsaglia & Tsang 2000, J Stat
// Softw 5(8)).

// aliasCell is one cell of an alias table: a draw landing in the cell
// returns value when its threshold bits fall below thresh, and alias
// otherwise.
type aliasCell struct {
	thresh       uint64
	value, alias int32
}

// aliasTable samples a discrete distribution on whole numbers in O(1) per
// draw from one 64-bit random number: the top bits pick one of 2^b
// equiprobable cells and the remaining 64 − b bits are compared with the
// cell's threshold.
//
// References: Walker AJ (1977). An efficient method for generating discrete
// random variables with general distributions. ACM Trans Math Softw
// 3:253–256; Vose MD (1991). A linear algorithm for generating random
// numbers with a given distribution. IEEE Trans Softw Eng 17:972–975.
type aliasTable struct {
	cells []aliasCell
	shift uint   // 64 − b: the cell is u >> shift
	mask  uint64 // 2^shift − 1: the threshold bits are u & mask
}

// newAliasTable builds the table of the distribution P(X = lo + i) ∝ w[i]
// (w[i] ≥ 0, not all zero) by Vose's stable construction. The number of
// cells is the smallest power of two, at least 2, that holds every value;
// the extra cells have probability zero and always return their alias.
func newAliasTable(lo int, w []float64) aliasTable {
	m := len(w)
	if m == 0 || lo < math.MinInt32 || lo+m-1 > math.MaxInt32 {
		panic("power: alias table out of range")
	}
	b := bits.Len(uint(m - 1))
	if b == 0 {
		b = 1
	}
	size := 1 << b
	sum := 0.0
	for _, x := range w {
		if !(x >= 0) || math.IsInf(x, 1) {
			panic("power: alias weights must be finite and non-negative")
		}
		sum += x
	}
	if !(sum > 0) {
		panic("power: alias weights are all zero")
	}
	q := make([]float64, size)
	for i, x := range w {
		q[i] = x * float64(size) / sum
	}
	t := aliasTable{cells: make([]aliasCell, size), shift: uint(64 - b)}
	t.mask = 1<<t.shift - 1
	one := float64(t.mask) + 1 // 2^shift, exactly
	small := make([]int, 0, size)
	large := make([]int, 0, size)
	for i, x := range q {
		if x < 1 {
			small = append(small, i)
		} else {
			large = append(large, i)
		}
	}
	for len(small) > 0 && len(large) > 0 {
		s := small[len(small)-1]
		small = small[:len(small)-1]
		l := large[len(large)-1]
		large = large[:len(large)-1]
		t.cells[s] = aliasCell{thresh: uint64(q[s] * one), value: int32(lo + s), alias: int32(lo + l)}
		// Vose's ordering, (q_l + q_s) − 1, loses the least precision.
		q[l] = (q[l] + q[s]) - 1
		if q[l] < 1 {
			small = append(small, l)
		} else {
			large = append(large, l)
		}
	}
	// What is left has probability 1 up to rounding: always the cell's own
	// value. A leftover padding cell (possible only through rounding) gets
	// a value of the support.
	for _, list := range [][]int{large, small} {
		for _, i := range list {
			v := lo + i
			if i >= m {
				v = lo + m - 1
			}
			t.cells[i] = aliasCell{thresh: t.mask + 1, value: int32(v), alias: int32(v)}
		}
	}
	return t
}

// draw returns one variate.
func (t *aliasTable) draw(r *rand.Rand) int { return t.pick(r.Uint64()) }

// pick returns the variate of the 64 random bits u. It is written so that
// the compiler inlines it and selects without a branch (a conditional
// move): the comparison is a coin toss for many cells, which a branch
// would mispredict.
func (t *aliasTable) pick(u uint64) int {
	c := &t.cells[u>>t.shift]
	v := c.alias
	if u&t.mask < c.thresh {
		v = c.value
	}
	return int(v)
}

// probs returns the probabilities that the table assigns to the values
// lo, lo+1, ..., with the first value and the count: the distribution the
// sampler really draws from, for tests.
func (t *aliasTable) probs() (lo int, p []float64) {
	lo, hi := math.MaxInt32, math.MinInt32
	for _, c := range t.cells {
		lo = min(lo, int(c.value), int(c.alias))
		hi = max(hi, int(c.value), int(c.alias))
	}
	p = make([]float64, hi-lo+1)
	one := float64(t.mask) + 1
	cell := 1 / float64(len(t.cells))
	for _, c := range t.cells {
		f := float64(c.thresh) / one
		p[int(c.value)-lo] += cell * f
		p[int(c.alias)-lo] += cell * (1 - f)
	}
	return lo, p
}

// tailCut is the weight, relative to the largest, below which a table
// stops extending a tail. The tails of the binomial and beta-binomial
// distributions decay at least geometrically past the cut, so the mass
// dropped is a small multiple of 1e-25 of the total: far below what any
// simulation can resolve.
const tailCut = 1e-25

// BinomialTable draws Binomial(n, p) variates in constant time, a few
// nanoseconds a draw, from one 64-bit output of the generator.
//
// The probabilities are built once by the ratio recursion
//
//	f(k+1)/f(k) = (n − k)/(k + 1) · p/(1 − p)
//
// outward from the mode, where f is largest, and normalised at the end, so
// no term underflows or needs a factorial; each probability carries a
// relative error of order √n machine epsilons. Tails below 1e-25 of the
// mode are dropped. The draws then use Walker's alias method (Walker 1977,
// ACM Trans Math Softw 3:253; Vose 1991, IEEE Trans Softw Eng 17:972).
//
// A BinomialTable is read-only after construction and safe for concurrent
// use.
type BinomialTable struct {
	n   int
	p   float64
	tab aliasTable
}

// NewBinomialTable builds the sampler of Binomial(n, p). It panics unless
// 0 ≤ n ≤ 2³¹ − 1 and 0 ≤ p ≤ 1.
func NewBinomialTable(n int, p float64) *BinomialTable {
	if n < 0 || n > math.MaxInt32 {
		panic(fmt.Sprintf("power: binomial size %d out of range", n))
	}
	if !(p >= 0 && p <= 1) {
		panic(fmt.Sprintf("power: binomial probability %v out of [0, 1]", p))
	}
	t := &BinomialTable{n: n, p: p}
	switch {
	case p == 0 || n == 0:
		t.tab = newAliasTable(0, []float64{1})
		return t
	case p == 1:
		t.tab = newAliasTable(n, []float64{1})
		return t
	}
	mode := min(n, int(float64(n+1)*p))
	odds := p / (1 - p)
	var up []float64 // f(mode+1), f(mode+2), ... relative to f(mode) = 1
	w := 1.0
	for k := mode; k < n; k++ {
		w *= float64(n-k) / float64(k+1) * odds
		if w < tailCut {
			break
		}
		up = append(up, w)
	}
	var down []float64 // f(mode−1), f(mode−2), ...
	w = 1.0
	for k := mode; k > 0; k-- {
		w *= float64(k) / float64(n-k+1) / odds
		if w < tailCut {
			break
		}
		down = append(down, w)
	}
	weights := make([]float64, 0, len(down)+1+len(up))
	for i := len(down) - 1; i >= 0; i-- {
		weights = append(weights, down[i])
	}
	weights = append(weights, 1)
	weights = append(weights, up...)
	t.tab = newAliasTable(mode-len(down), weights)
	return t
}

// N returns the number of trials.
func (t *BinomialTable) N() int { return t.n }

// P returns the probability of success.
func (t *BinomialTable) P() float64 { return t.p }

// Draw returns one Binomial(n, p) variate.
func (t *BinomialTable) Draw(r *rand.Rand) int { return t.tab.draw(r) }

// BetaBinomialTable draws beta-binomial variates: the number of events
// among n members of a cluster whose own risk is drawn from a beta
// distribution with mean p and intra-class correlation icc, that is
// Beta(a, b) with a = p(1 − icc)/icc and b = (1 − p)(1 − icc)/icc (so
// a + b = (1 − icc)/icc). Its variance is n p (1 − p) [1 + (n − 1) icc].
// With icc = 0 it is Binomial(n, p).
//
// The probabilities are built once, in logarithms, by the ratio recursion
//
//	f(k+1)/f(k) = (n − k)/(k + 1) · (k + a)/(n − k − 1 + b)
//
// and normalised; the draws use Walker's alias method as for
// [BinomialTable].
//
// References: Skellam JG (1948). A probability distribution derived from
// the binomial distribution by regarding the probability of success as
// variable between the sets of trials. J R Stat Soc B 10:257–261; Donner A,
// Klar N (2000). Design and Analysis of Cluster Randomization Trials in
// Health Research. Arnold, chapter 2.
type BetaBinomialTable struct {
	tab aliasTable
}

// NewBetaBinomialTable builds the sampler. It panics unless
// 0 ≤ n ≤ 2³¹ − 1, 0 ≤ p ≤ 1 and 0 ≤ icc < 1.
func NewBetaBinomialTable(n int, p, icc float64) *BetaBinomialTable {
	if !(icc >= 0 && icc < 1) {
		panic(fmt.Sprintf("power: intra-class correlation %v out of [0, 1)", icc))
	}
	if icc == 0 || p == 0 || p == 1 || n <= 1 {
		// A cluster of one has a Bernoulli(p) count whatever the icc.
		return &BetaBinomialTable{tab: NewBinomialTable(n, p).tab}
	}
	if n > math.MaxInt32 {
		panic(fmt.Sprintf("power: cluster size %d out of range", n))
	}
	if !(p > 0 && p < 1) {
		panic(fmt.Sprintf("power: probability %v out of [0, 1]", p))
	}
	s := (1 - icc) / icc
	a, b := p*s, (1-p)*s
	lw := make([]float64, n+1)
	top := 0.0
	for k := 0; k < n; k++ {
		lw[k+1] = lw[k] + math.Log(float64(n-k)/float64(k+1)) + math.Log((float64(k)+a)/(float64(n-k-1)+b))
		top = math.Max(top, lw[k+1])
	}
	lo, hi := 0, n
	cut := math.Log(tailCut)
	for lo < hi && lw[lo]-top < cut {
		lo++
	}
	for hi > lo && lw[hi]-top < cut {
		hi--
	}
	w := make([]float64, hi-lo+1)
	for k := lo; k <= hi; k++ {
		w[k-lo] = math.Exp(lw[k] - top)
	}
	return &BetaBinomialTable{tab: newAliasTable(lo, w)}
}

// Draw returns one variate.
func (t *BetaBinomialTable) Draw(r *rand.Rand) int { return t.tab.draw(r) }

// ChiSquareSampler draws chi-square variates with k > 0 degrees of freedom
// as twice a Gamma(k/2, 1) variate by the squeeze-and-reject method of
// Marsaglia and Tsang: with d = a − 1/3, c = 1/√(9d), x standard normal and
// v = (1 + c x)³, accept d v when u < 1 − 0.0331 x⁴ or
// log u < x²/2 + d (1 − v + log v). The acceptance rate exceeds 95% for
// every shape. A shape a < 1 (k < 2) uses the boost
// Gamma(a) = Gamma(a + 1) · U^(1/a).
//
// The constants are computed once per k; a ChiSquareSampler is read-only
// and safe for concurrent use.
//
// References: Marsaglia G, Tsang WW (2000). A simple method for generating
// gamma variables. ACM Trans Math Softw 26:363–372.
type ChiSquareSampler struct {
	k     float64
	d, c  float64 // Marsaglia–Tsang constants for the shape max(a, a + 1)
	twoD  float64 // 2d: the chi-square is 2 d v
	boost bool
	invA  float64 // 1/a for the boost
}

// NewChiSquareSampler returns the sampler for k degrees of freedom. It
// panics unless k is positive and finite.
func NewChiSquareSampler(k float64) ChiSquareSampler {
	if !(k > 0) || math.IsInf(k, 1) {
		panic(fmt.Sprintf("power: chi-square degrees of freedom %v must be positive", k))
	}
	a := k / 2
	s := ChiSquareSampler{k: k}
	if a < 1 {
		s.boost = true
		s.invA = 1 / a
		a++
	}
	s.d = a - 1.0/3
	s.c = 1 / math.Sqrt(9*s.d)
	s.twoD = 2 * s.d
	return s
}

// DF returns the degrees of freedom.
func (s *ChiSquareSampler) DF() float64 { return s.k }

// Draw returns one χ²(k) variate.
func (s *ChiSquareSampler) Draw(r *rand.Rand) float64 {
	for {
		x := r.NormFloat64()
		v := 1 + s.c*x
		if v <= 0 {
			continue
		}
		v = v * v * v
		u := r.Float64()
		x2 := x * x
		if u < 1-0.0331*x2*x2 || math.Log(u) < 0.5*x2+s.d*(1-v+math.Log(v)) {
			g := s.twoD * v
			if s.boost {
				// 1 − Float64 is in (0, 1], so the power is never 0^(1/a).
				g *= math.Pow(1-r.Float64(), s.invA)
			}
			return g
		}
	}
}

// DrawChiSquare returns one χ²(k) variate (Marsaglia & Tsang 2000, as
// [ChiSquareSampler]); build a ChiSquareSampler once to draw many with the
// same k. (The name ChiSquare is the [BinaryTest].)
func DrawChiSquare(r *rand.Rand, k float64) float64 {
	s := NewChiSquareSampler(k)
	return s.Draw(r)
}
