package power

import (
	"fmt"
	"math"
	"runtime"
	"sync"
)

// BinaryTest is a planned test of two independent proportions: x1 events
// out of n1 in the first group against x2 out of n2 in the second.
//
// Every test treats the tables with no events at all or with events only
// (x1 + x2 = 0 or n1 + n2) as carrying no evidence: they never reject.
// Group 1 and group 2 play symmetric roles: swapping the groups (and the
// direction of a one-sided test) gives the same decisions.
type BinaryTest int

// The tests of two independent proportions whose exact power is computed by
// [ExactPower].
const (
	// ChiSquare is Pearson's chi-square test without continuity correction,
	// the same as the z test with the pooled variance:
	//
	//	z = (p̂1 − p̂2) / √(p̄ q̄ (1/n1 + 1/n2)),  p̄ = (x1 + x2)/(n1 + n2)
	//	X² = z² = N (x1 n2 − x2 n1)² / (n1 n2 t (N − t)),  t = x1 + x2, N = n1 + n2
	//
	// Two-sided it rejects when X² > χ²₁(1 − α), that is |z| > z_{α/2}; one-
	// sided when the signed z exceeds z_α in the planned direction.
	//
	// References: Pearson K (1900). On the criterion that a given system of
	// deviations from the probable in the case of a correlated system of
	// variables is such that it can be reasonably supposed to have arisen
	// from random sampling. Philosophical Magazine, 5th series, 50:157–175.
	ChiSquare BinaryTest = iota + 1

	// ChiSquareYates is the chi-square test with Yates' continuity
	// correction. With |O − E| = |x1 n2 − x2 n1|/N, the same in the four
	// cells, each cell's deviation is reduced by min(½, |O − E|):
	//
	//	X² = N (|x1 n2 − x2 n1| − N/2)² / (n1 n2 t (N − t))  when |x1 n2 − x2 n1| > N/2
	//	X² = 0                                               otherwise
	//
	// the statistic of R's chisq.test(correct = TRUE) and, signed by
	// p̂1 − p̂2, of prop.test(correct = TRUE) for one side.
	//
	// References: Yates F (1934). Contingency tables involving small numbers
	// and the χ² test. Supplement to the Journal of the Royal Statistical
	// Society 1:217–235.
	ChiSquareYates

	// Fisher is Fisher's exact test, conditional on the total number of
	// events t = x1 + x2, under which x1 is hypergeometric:
	//
	//	P(x1 | t) = C(n1, x1) C(n2, t − x1) / C(N, t)
	//
	// One-sided, the p-value is the tail in the planned direction (P(X ≥ x1)
	// for p1 > p2). Two-sided it is the sum of the probabilities of the
	// tables no more likely than the observed one, with a relative
	// tolerance of 10⁻⁷ for ties, as in R's fisher.test:
	//
	//	p = Σ P(y | t) over y with P(y | t) ≤ P(x1 | t) (1 + 10⁻⁷)
	//
	// The test rejects when p ≤ α; a p-value within a relative 10⁻⁷ of α
	// counts as equal to it (mathematically p = α happens: for n1 = n2 = 3,
	// x1 = 3, x2 = 0 the one-sided p is exactly 1/20, which floating point
	// renders a hair above 0.05).
	//
	// References: Fisher RA (1935). The logic of inductive inference.
	// Journal of the Royal Statistical Society 98:39–82. Irwin JO (1935).
	// Tests of significance for differences between percentages based on
	// small numbers. Metron 12:83–94.
	Fisher

	// ZUnpooled is the Wald z test with the unpooled variance:
	//
	//	z = (p̂1 − p̂2) / √(p̂1 q̂1/n1 + p̂2 q̂2/n2)
	//
	// rejecting when |z| > z_{α/2} (two sides) or the signed z exceeds z_α
	// in the planned direction (one side). The variance estimate is zero
	// only when each p̂ is 0 or 1. Then, by the limit of the formula: equal
	// proportions (both 0 or both 1) give z = 0 and never reject; opposite
	// ones (0 against 1) give |z| = ∞ and always reject (in their direction).
	// This is what makes the Wald test anti-conservative at very small n.
	ZUnpooled
)

// String returns the test's identifier: "chi-square", "chi-square-yates",
// "fisher" or "z-unpooled".
func (t BinaryTest) String() string {
	switch t {
	case ChiSquare:
		return "chi-square"
	case ChiSquareYates:
		return "chi-square-yates"
	case Fisher:
		return "fisher"
	case ZUnpooled:
		return "z-unpooled"
	}
	return fmt.Sprintf("BinaryTest(%d)", int(t))
}

// ParseBinaryTest returns the test whose String is s.
func ParseBinaryTest(s string) (BinaryTest, bool) {
	for _, t := range []BinaryTest{ChiSquare, ChiSquareYates, Fisher, ZUnpooled} {
		if t.String() == s {
			return t, true
		}
	}
	return 0, false
}

// relTie is R's relative tolerance for equal probabilities in the two-sided
// Fisher p-value (fisher.test: relErr <- 1 + 10^(-7)); the same tolerance
// decides p = α.
const relTie = 1e-7

// checkExact panics on arguments that the caller should have validated.
func checkExact(test BinaryTest, n1, n2 int, alpha float64, sides, dir int) {
	switch test {
	case ChiSquare, ChiSquareYates, Fisher, ZUnpooled:
	default:
		panic(fmt.Sprintf("power: unknown binary test %d", int(test)))
	}
	if n1 < 1 || n2 < 1 {
		panic(fmt.Sprintf("power: group sizes must be at least 1, got %d and %d", n1, n2))
	}
	switch sides {
	case 2:
		if !(alpha > 0 && alpha < 1) {
			panic("power: alpha out of range")
		}
	case 1:
		if !(alpha > 0 && alpha <= 0.5) {
			panic("power: one-sided alpha must be in (0, 0.5]")
		}
		if dir != 1 && dir != -1 {
			panic("power: direction must be +1 or -1")
		}
	default:
		panic("power: sides must be 1 or 2")
	}
}

// RejectionTable returns, for every pair of event counts x1 in 0..n1 and
// x2 in 0..n2, whether the test rejects at level alpha; the decision for
// (x1, x2) is at index x1·(n2 + 1) + x2.
//
// With sides = 2 the test rejects in either direction (dir is ignored);
// with sides = 1 only when the evidence points in direction dir: +1 for
// p1 > p2, −1 for p1 < p2. Alpha must be in (0, 1) for two sides and in
// (0, 0.5] for one; the chi-square and z tests reject when the statistic
// lies strictly beyond its normal (or χ²₁) critical value, Fisher's when
// p ≤ alpha (see [Fisher] for the tolerances).
//
// The chi-square family costs O(n1 n2); Fisher's test computes the
// hypergeometric probabilities of each total t once, by the ratio
// recursion from the mode, with cumulative sums from both ends so that
// small tails keep their relative accuracy, and finds each table's
// two-sided p-value by binary search on the two monotone halves:
// O(n1 n2 log min(n1, n2)).
//
// RejectionTable panics on an unknown test, n1 or n2 below 1, or alpha,
// sides or dir out of range.
func RejectionTable(test BinaryTest, n1, n2 int, alpha float64, sides, dir int) []bool {
	checkExact(test, n1, n2, alpha, sides, dir)
	rej := make([]bool, (n1+1)*(n2+1))
	var h hyperRow
	fillRejection(rej, test, n1, n2, alpha, sides, dir, &h)
	return rej
}

// fillRejection writes the rejection table into rej, which has
// (n1+1)(n2+1) entries; h is scratch space for Fisher's test.
func fillRejection(rej []bool, test BinaryTest, n1, n2 int, alpha float64, sides, dir int, h *hyperRow) {
	if sides == 2 {
		dir = 0
	}
	clear(rej)
	if test == Fisher {
		fillFisher(rej, n1, n2, alpha, dir, h)
		return
	}
	rule := newCellRule(test, n1, n2, alpha, sides, dir)
	for x1 := 0; x1 <= n1; x1++ {
		row := rej[x1*(n2+1) : (x1+1)*(n2+1)]
		for x2 := 0; x2 <= n2; x2++ {
			row[x2] = rule.reject(x1, x2)
		}
	}
}

// cellRule decides one table of the chi-square family or the unpooled z
// test from its counts, in O(1), with the arithmetic of RejectionTable.
type cellRule struct {
	test         BinaryTest
	n1, n2, dir  int
	crit, half   float64
	fn1, fn2, fN float64
}

func newCellRule(test BinaryTest, n1, n2 int, alpha float64, sides, dir int) cellRule {
	if sides == 2 {
		dir = 0
	}
	z := ZAlpha(alpha, sides)
	crit := z * z
	if z < 0 {
		crit = 0 // one-sided alpha = 0.5: z_α is zero, a rounding below it is too
	}
	half := 0.0
	if test == ChiSquareYates {
		half = float64(n1+n2) / 2
	}
	return cellRule{test: test, n1: n1, n2: n2, dir: dir, crit: crit, half: half,
		fn1: float64(n1), fn2: float64(n2), fN: float64(n1 + n2)}
}

// reject decides the table with x1 and x2 events.
func (c *cellRule) reject(x1, x2 int) bool {
	d := float64(x1*c.n2 - x2*c.n1)
	switch {
	case c.dir == 0:
		d = math.Abs(d)
	case c.dir < 0:
		d = -d
	}
	if c.test == ZUnpooled {
		// z² = d² n1 n2 / (n2³ x1 (n1 − x1) + n1³ x2 (n2 − x2)), d = x1 n2 − x2 n1:
		// reject when d² > a(x1) + b(x2) (and d points the planned way).
		a := c.crit * c.fn2 * c.fn2 * float64(x1) * float64(c.n1-x1) / c.fn1
		b := c.crit * c.fn1 * c.fn1 * float64(x2) * float64(c.n2-x2) / c.fn2
		return d > 0 && d*d > a+b
	}
	// Chi-square: reject when N d² > crit · n1 n2 t (N − t), d = |x1 n2 −
	// x2 n1| (less N/2 with Yates' correction).
	t := x1 + x2
	if t == 0 || t == c.n1+c.n2 {
		return false
	}
	g := c.crit * c.fn1 * c.fn2 * float64(t) * float64(c.n1+c.n2-t) / c.fN
	d -= c.half
	return d > 0 && d*d > g
}

// fillFisher writes Fisher's decisions, one total t = x1 + x2 at a time.
func fillFisher(rej []bool, n1, n2 int, alpha float64, dir int, h *hyperRow) {
	limit := alpha * (1 + relTie)
	h.reserve(min(n1, n2) + 1)
	for t := 1; t < n1+n2; t++ {
		h.fill(n1, n2, t)
		cut := limit * h.total
		for x1 := h.lo; x1 <= h.hi; x1++ {
			rej[x1*(n2+1)+t-x1] = h.tail(x1, dir) <= cut
		}
	}
}

// hyperRow holds the hypergeometric distribution of x1 given t events in
// all: unnormalised weights w (1 at the mode), their cumulative sums from
// the left and from the right, and their total.
type hyperRow struct {
	lo, hi, mode   int
	w, left, right []float64
	total          float64
}

// fill computes the row for n1, n2 and t by the ratio recursion
//
//	P(x + 1)/P(x) = (n1 − x)(t − x) / ((x + 1)(n2 − t + x + 1))
//
// outward from the mode ⌊(t + 1)(n1 + 1)/(N + 2)⌋; far tails underflow
// gracefully to zero.
func (h *hyperRow) fill(n1, n2, t int) {
	h.lo, h.hi = max(0, t-n2), min(t, n1)
	k := h.hi - h.lo + 1
	h.reserve(k)
	h.w, h.left, h.right = h.w[:k], h.left[:k], h.right[:k]
	m := int((int64(t) + 1) * int64(n1+1) / int64(n1+n2+2))
	m = min(max(m, h.lo), h.hi)
	h.mode = m
	w := h.w
	w[m-h.lo] = 1
	for x := m; x < h.hi; x++ {
		w[x+1-h.lo] = w[x-h.lo] * (float64(n1-x) * float64(t-x)) / (float64(x+1) * float64(n2-t+x+1))
	}
	for x := m; x > h.lo; x-- {
		w[x-1-h.lo] = w[x-h.lo] * (float64(x) * float64(n2-t+x)) / (float64(n1-x+1) * float64(t-x+1))
	}
	s := 0.0
	for i, v := range w {
		s += v
		h.left[i] = s
	}
	s = 0
	for i := k - 1; i >= 0; i-- {
		s += w[i]
		h.right[i] = s
	}
	h.total = h.left[k-1]
}

// reserve makes room for k weights.
func (h *hyperRow) reserve(k int) {
	if cap(h.w) < k {
		h.w = make([]float64, k)
		h.left = make([]float64, k)
		h.right = make([]float64, k)
	}
}

// lower returns the unnormalised P(X ≤ x).
func (h *hyperRow) lower(x int) float64 { return h.left[x-h.lo] }

// upper returns the unnormalised P(X ≥ x).
func (h *hyperRow) upper(x int) float64 { return h.right[x-h.lo] }

// twoSided returns the unnormalised sum of the weights no larger than
// w(x)(1 + 10⁻⁷). The weights rise to the mode and fall after it, so the
// weights above that bound form one run [a, b] around the mode; the
// p-value is what lies outside it.
func (h *hyperRow) twoSided(x int) float64 {
	w := h.w
	c := w[x-h.lo] * (1 + relTie)
	m := h.mode - h.lo
	if w[m] <= c {
		return h.total
	}
	// a: the first index in [0, m] with w > c (w rises on [0, m]).
	lo, hi := 0, m
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if w[mid] > c {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	a := lo
	// b: the last index in [m, k−1] with w > c (w falls on [m, k−1]).
	lo, hi = m, len(w)-1
	for lo < hi {
		mid := int(uint(lo+hi+1) >> 1)
		if w[mid] > c {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	b := lo
	p := 0.0
	if a > 0 {
		p += h.left[a-1]
	}
	if b < len(w)-1 {
		p += h.right[b+1]
	}
	return p
}

// fisherP returns the p-value of Fisher's exact test for x1 events out of
// n1 against x2 out of n2: two-sided when dir is 0, else the tail in
// direction dir.
func fisherP(x1, n1, x2, n2, dir int) float64 {
	var h hyperRow
	h.fill(n1, n2, x1+x2)
	return math.Min(1, h.tail(x1, dir)/h.total)
}

// chiSquareStat returns Pearson's X² for x1 of n1 against x2 of n2, with
// Yates' correction when yates is set; ok is false when all or none of the
// outcomes are events and X² is undefined.
func chiSquareStat(x1, n1, x2, n2 int, yates bool) (x2stat float64, ok bool) {
	N, t := n1+n2, x1+x2
	if t == 0 || t == N {
		return 0, false
	}
	d := math.Abs(float64(x1*n2 - x2*n1))
	if yates {
		d = math.Max(0, d-float64(N)/2)
	}
	return float64(N) * d * d / (float64(n1) * float64(n2) * float64(t) * float64(N-t)), true
}

// zUnpooledStat returns the Wald z for x1 of n1 against x2 of n2 with the
// unpooled variance, with the degenerate cases of [ZUnpooled]: 0 for equal
// proportions, ±Inf for 0 against 1.
func zUnpooledStat(x1, n1, x2, n2 int) float64 {
	p1, p2 := float64(x1)/float64(n1), float64(x2)/float64(n2)
	if x1*n2 == x2*n1 {
		return 0
	}
	v := p1*(1-p1)/float64(n1) + p2*(1-p2)/float64(n2)
	if v == 0 {
		return math.Inf(int(math.Copysign(1, p1-p2)))
	}
	return (p1 - p2) / math.Sqrt(v)
}

// binomPMF writes the binomial(n, p) probabilities of 0..n into out, by the
// ratio recursion P(x + 1)/P(x) = (n − x)/(x + 1) · p/q outward from the
// mode ⌊(n + 1)p⌋, normalised by their sum; p may be 0 or 1.
func binomPMF(n int, p float64, out []float64) []float64 {
	if cap(out) < n+1 {
		out = make([]float64, n+1)
	}
	out = out[:n+1]
	clear(out)
	switch p {
	case 0:
		out[0] = 1
		return out
	case 1:
		out[n] = 1
		return out
	}
	rho := p / (1 - p)
	m := min(int(float64(n+1)*p), n)
	out[m] = 1
	for x := m; x < n; x++ {
		out[x+1] = out[x] * float64(n-x) / float64(x+1) * rho
	}
	for x := m; x > 0; x-- {
		out[x-1] = out[x] * float64(x) / (float64(n-x+1) * rho)
	}
	s := 0.0
	for _, v := range out {
		s += v
	}
	for i := range out {
		out[i] /= s
	}
	return out
}

// exactScratch is the reusable space of one exact power computation.
type exactScratch struct {
	rej    []bool
	b1, b2 []float64
	h      hyperRow
}

func (s *exactScratch) power(test BinaryTest, n1, n2 int, p1, p2, alpha float64, sides, dir int) float64 {
	k := (n1 + 1) * (n2 + 1)
	if cap(s.rej) < k {
		s.rej = make([]bool, k)
	}
	s.rej = s.rej[:k]
	fillRejection(s.rej, test, n1, n2, alpha, sides, dir, &s.h)
	s.b1 = binomPMF(n1, p1, s.b1)
	s.b2 = binomPMF(n2, p2, s.b2)
	pow := 0.0
	for x1, f1 := range s.b1 {
		if f1 == 0 {
			continue
		}
		row := s.rej[x1*(n2+1) : (x1+1)*(n2+1)]
		sum := 0.0
		for x2, r := range row {
			if r {
				sum += s.b2[x2]
			}
		}
		pow += f1 * sum
	}
	return math.Min(1, pow)
}

func checkProb(name string, p float64) {
	if !(p >= 0 && p <= 1) {
		panic(fmt.Sprintf("power: %s must be in [0, 1], got %v", name, p))
	}
}

// ExactPower returns the exact power of the test when the event counts are
// binomial(n1, p1) and binomial(n2, p2), by full enumeration of the
// (n1 + 1)(n2 + 1) outcomes:
//
//	power = Σ over rejected (x1, x2) of b(x1; n1, p1) b(x2; n2, p2)
//
// where the rejection region is [RejectionTable]'s. One-sided, only
// rejections in direction dir count. At p1 = p2 it is the exact size
// (type I error) of the test at that common proportion. The binomial
// probabilities come from the ratio recursion from the mode, normalised;
// p1 and p2 may be 0 or 1.
//
// ExactPower panics when p1 or p2 is outside [0, 1] and on the arguments
// [RejectionTable] rejects.
//
// References: Bennett BM, Hsu P (1960). On the power function of the exact
// test for the 2 × 2 contingency table. Biometrika 47:393–398.
func ExactPower(test BinaryTest, n1, n2 int, p1, p2, alpha float64, sides, dir int) float64 {
	checkExact(test, n1, n2, alpha, sides, dir)
	checkProb("p1", p1)
	checkProb("p2", p2)
	var s exactScratch
	return s.power(test, n1, n2, p1, p2, alpha, sides, dir)
}

// SawTooth is the result of searching for the smallest first-group size
// whose exact power reaches a target. Exact power is not monotone in n: it
// rises in a saw-tooth, so a size can reach the target while the next one
// falls below it again.
type SawTooth struct {
	// First is the smallest n1 in the window with power ≥ target (0 if none).
	First int
	// Stable is the smallest n1 such that every n1' in [Stable, High] has
	// power ≥ target (0 if none).
	Stable int
	// Low and High are the window searched.
	Low, High int
	// Powers holds the exact power at each n1 from Low to High.
	Powers []float64
}

// ExactSolveN computes the exact power ([ExactPower]) of every first-group
// size n1 in the window [low, high], the second group having
//
//	n2 = max(1, ⌈ratio · n1 − 10⁻⁹⌉)
//
// and reports the first size that reaches the target power and the size
// from which the whole rest of the window does. The sizes are computed in
// parallel; the result does not depend on the number of processors.
//
// It returns [ErrNothingToDetect] when p1 = p2, and [ErrUnreachable] (with
// the powers filled in) when no n1 in the window reaches the target. It
// panics when ratio is not positive and finite, target is not in (0, 1),
// low < 1 or high < low, and on the arguments [ExactPower] rejects.
//
// References: Chernick MR, Liu CY (2002). The saw-toothed behavior of power
// versus sample size and software solutions: single binomial proportion
// using exact methods. The American Statistician 56:149–155.
func ExactSolveN(test BinaryTest, ratio, p1, p2, alpha float64, sides, dir int, target float64, low, high int) (SawTooth, error) {
	if !(ratio > 0) || math.IsInf(ratio, 1) {
		panic("power: ratio must be positive and finite")
	}
	if !(target > 0 && target < 1) {
		panic("power: target power out of range")
	}
	if low < 1 || high < low {
		panic(fmt.Sprintf("power: bad window [%d, %d]", low, high))
	}
	checkExact(test, 1, 1, alpha, sides, dir)
	checkProb("p1", p1)
	checkProb("p2", p2)
	st := SawTooth{Low: low, High: high}
	if p1 == p2 {
		return st, ErrNothingToDetect
	}
	size := func(n1 int) int {
		return max(1, int(math.Ceil(ratio*float64(n1)-1e-9)))
	}
	st.Powers = make([]float64, high-low+1)
	workers := min(runtime.GOMAXPROCS(0), len(st.Powers))
	// Workers take sizes from the top of the window, the costliest first.
	next := make(chan int, len(st.Powers))
	for n1 := high; n1 >= low; n1-- {
		next <- n1
	}
	close(next)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var s exactScratch
			for n1 := range next {
				st.Powers[n1-low] = s.power(test, n1, size(n1), p1, p2, alpha, sides, dir)
			}
		}()
	}
	wg.Wait()
	for i, p := range st.Powers {
		if p >= target {
			if st.First == 0 {
				st.First = low + i
			}
			if st.Stable == 0 {
				st.Stable = low + i
			}
		} else {
			st.Stable = 0
		}
	}
	if st.First == 0 {
		return st, ErrUnreachable
	}
	return st, nil
}

// tail returns the unnormalised p-value of x1 in direction dir (> 0 upper,
// < 0 lower, 0 two-sided by the summed-probabilities rule).
func (h *hyperRow) tail(x1, dir int) float64 {
	switch {
	case dir > 0:
		return h.upper(x1)
	case dir < 0:
		return h.lower(x1)
	}
	return h.twoSided(x1)
}
