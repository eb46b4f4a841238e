package power

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync/atomic"
)

// This file holds the Monte-Carlo models of group-sequential studies:
// studies analysed at K looks, interim analyses and the final one, which
// stop for efficacy at the first look whose test crosses its boundary.
// Each model is a [SequentialModel] whose workers report the look of the
// first crossing ([LookWorker]), so that a run counts the crossings by
// look ([SimResult].ByLook).
//
// In every model the boundary is given as Nominal, the nominal p-value
// threshold of each look: the study stops at the first look k whose
// p-value is at most Nominal[k−1] (two-sided: the two-sided p of the
// planned test; one-sided: the p in the planned direction). A nominal
// level of 0 never stops the study at that look. The crossing is decided,
// as in the fixed-sample models, by comparing the statistic with the
// critical value of the nominal level, computed once per look: a
// statistic strictly beyond it crosses. For continuous statistics the
// tie p = Nominal has probability 0; the discrete tests of two
// proportions break it as their fixed-sample versions do ([RejectionTable],
// [MarginRejectionTable]), so that one look at level α is exactly the
// fixed-sample test at level α.
//
// The data accrue: each look adds the participants (or, for survival, the
// follow-up) arrived since the previous look to the data already drawn,
// which are never drawn again, so that the statistics of successive looks
// have their true joint distribution, not the canonical approximation.
//
// References: Armitage P, McPherson CK, Rowe BC (1969). Repeated
// significance tests on accumulating data. J R Stat Soc A 132:235–244.
// Pocock SJ (1977). Group sequential methods in the design and analysis
// of clinical trials. Biometrika 64:191–199. Jennison C, Turnbull BW
// (2000). Group Sequential Methods with Applications to Clinical Trials.
// Chapman & Hall/CRC, §3.1 (the canonical joint distribution).

// checkLooks panics unless sides is 1 or 2 and nominal holds at least
// one level, each in [0, 1), and at most ½ for a one-sided test (whose
// critical value must not be negative).
func checkLooks(nominal []float64, sides int) {
	if len(nominal) == 0 {
		panic("power: a sequential design needs at least one look")
	}
	if sides != 1 && sides != 2 {
		panic("power: sides must be 1 or 2")
	}
	for k, a := range nominal {
		if !(a >= 0 && a < 1) || (sides == 1 && a > 0.5) {
			panic(fmt.Sprintf("power: nominal level %v of look %d out of [0, 1), or of [0, 0.5] one-sided", a, k+1))
		}
	}
}

// checkDir panics unless a one-sided test has dir +1 or −1.
func checkDir(sides, dir int) {
	if sides == 1 && dir != 1 && dir != -1 {
		panic("power: a one-sided test needs dir = +1 or -1")
	}
}

// lookZ returns the normal critical value of each look's nominal level,
// [ZAlpha](Nominal[k], sides), and +Inf for a level of 0.
func lookZ(nominal []float64, sides int) []float64 {
	z := make([]float64, len(nominal))
	for k, a := range nominal {
		z[k] = math.Inf(1)
		if a > 0 {
			z[k] = ZAlpha(a, sides)
		}
	}
	return z
}

// checkCumulative panics unless n1 and n2 hold one cumulative size for
// each of the looks, non-decreasing, the first at least least (the
// smallest group a test takes) and none above 2³¹ − 1.
func checkCumulative(n1, n2 []int, looks, least int) {
	if len(n1) != looks || len(n2) != looks {
		panic(fmt.Sprintf("power: %d looks need %d cumulative sizes per group, got %d and %d", looks, looks, len(n1), len(n2)))
	}
	for _, n := range [][]int{n1, n2} {
		if n[0] < least {
			panic(fmt.Sprintf("power: each group needs at least %d at the first look, got %d", least, n[0]))
		}
		for k := 1; k < looks; k++ {
			if n[k] < n[k-1] {
				panic(fmt.Sprintf("power: cumulative sizes must not decrease, got %v", n))
			}
		}
		if n[looks-1] > math.MaxInt32 {
			panic(fmt.Sprintf("power: group size %d out of range", n[looks-1]))
		}
	}
}

// SequentialZ is the canonical joint distribution of the z statistics of
// a group-sequential study, the model every normal test with independent
// increments follows asymptotically. At information fractions
// t_1 < … < t_K = 1, with W a standard Brownian motion and θ the drift,
//
//	B(t_k) = θ t_k + W(t_k),  Z_k = B(t_k)/√t_k
//
// so that Z_k ~ N(θ √t_k, 1) and Cov(Z_j, Z_k) = √(t_j/t_k) for j ≤ k. For
// a z-test plan with K looks at information I_k, t_k = I_k/I_K and
// θ = δ √I_K is the mean of the final statistic under the effect δ (θ = 0
// for the type I error). Look k crosses when the p-value of Z_k is at most
// Nominal[k−1]: two-sided, 2(1 − Φ(|Z_k|)); one-sided, 1 − Φ(Dir·Z_k).
//
// References: Jennison C, Turnbull BW (2000). Group Sequential Methods
// with Applications to Clinical Trials. Chapman & Hall/CRC, §3.1;
// Armitage P, McPherson CK, Rowe BC (1969). J R Stat Soc A 132:235–244.
type SequentialZ struct {
	// Times are the information fractions of the looks, increasing, the
	// first above 0 and the last exactly 1.
	Times []float64
	// Drift is θ, the mean of Z_K, finite.
	Drift float64
	// Nominal holds the nominal p-value threshold of each look, one per
	// time, each in [0, 1) (at most 0.5 one-sided); 0 never stops there.
	Nominal []float64
	// Sides is 1 or 2; Dir, for a one-sided test, +1 when large Z is the
	// alternative and −1 when small Z is.
	Sides, Dir int
}

type seqZ struct {
	inc   []float64 // θ (t_k − t_{k−1}), the mean of each increment of B
	sd    []float64 // √(t_k − t_{k−1})
	bound []float64 // z_k √t_k: the boundary on the scale of B
	sign  float64   // 0 two-sided, else Dir
}

// NewSequentialZ returns the model. A replicate draws the K independent
// normal increments of B, W(t_k) − W(t_{k−1}) ~ N(0, t_k − t_{k−1}),
// one look at a time, and stops drawing at the first crossing, where
// B(t_k) is beyond z_k √t_k, z_k the normal critical value of Nominal[k−1]
// ([ZAlpha]). It panics unless the times are as documented, Drift is
// finite, Nominal has one valid level per time, and Sides and Dir
// describe a test.
func NewSequentialZ(c SequentialZ) SequentialModel {
	checkLooks(c.Nominal, c.Sides)
	checkDir(c.Sides, c.Dir)
	k := len(c.Nominal)
	if len(c.Times) != k {
		panic(fmt.Sprintf("power: %d nominal levels for %d information times", k, len(c.Times)))
	}
	if math.IsNaN(c.Drift) || math.IsInf(c.Drift, 0) {
		panic(fmt.Sprintf("power: drift must be finite, got %v", c.Drift))
	}
	m := &seqZ{inc: make([]float64, k), sd: make([]float64, k), bound: make([]float64, k), sign: signOf(c.Sides, c.Dir)}
	z := lookZ(c.Nominal, c.Sides)
	prev := 0.0
	for i, t := range c.Times {
		if !(t > prev) || t > 1 || (i == k-1 && t != 1) {
			panic(fmt.Sprintf("power: information times must increase from above 0 to exactly 1, got %v", c.Times))
		}
		m.inc[i] = c.Drift * (t - prev)
		m.sd[i] = math.Sqrt(t - prev)
		m.bound[i] = z[i] * math.Sqrt(t)
		prev = t
	}
	return m
}

// Looks returns K.
func (m *seqZ) Looks() int { return len(m.bound) }

func (m *seqZ) NewWorker() Worker { w := *m; return &w }

// ReplicateLook draws the path of B look by look and returns the first
// look beyond the boundary, or 0.
func (m *seqZ) ReplicateLook(r *rand.Rand) int {
	b := 0.0
	for k, sd := range m.sd {
		b += m.inc[k] + sd*r.NormFloat64()
		if m.sign == 0 {
			if math.Abs(b) > m.bound[k] {
				return k + 1
			}
		} else if m.sign*b > m.bound[k] {
			return k + 1
		}
	}
	return 0
}

func (m *seqZ) Replicate(r *rand.Rand) bool { return m.ReplicateLook(r) > 0 }

// SequentialBinomials is the Monte-Carlo model of a group-sequential
// comparison of two risks: events among N1[k] participants of group 1 and
// N2[k] of group 2 analysed at look k + 1, the risks P1 and P2 (for a
// case-control study, the exposure prevalences among cases and controls).
// Between looks each group gains a batch of participants whose number of
// events is binomial; at each look the planned test is applied to the
// counts accrued so far and its p-value compared with the look's nominal
// level.
//
// The test is Test (chi-square, chi-square with Yates' correction,
// Fisher's exact test or the unpooled z test, as in [BinaryTest]) with
// Sides and Dir (+1 when P1 > P2 is the alternative), or, when Margin is
// not 0, the one-sided test of non-inferiority H0: p1 − p2 = Margin of
// MarginTest ([FarringtonManning], the score test, or [Blackwelder], the
// Wald test; see [MarginRejectionTable]).
//
// References: the tests as cited at [BinaryTest] and [MarginMethod];
// Jennison C, Turnbull BW (2000). Group Sequential Methods with
// Applications to Clinical Trials. Chapman & Hall/CRC, §3.1.
type SequentialBinomials struct {
	// N1 and N2 are the cumulative numbers analysed in each group at each
	// look, one per look, non-decreasing, at least 1 at the first look and
	// at most 2³¹ − 1.
	N1, N2 []int
	// P1 and P2 are the risks, each in [0, 1].
	P1, P2 float64
	// Nominal holds the nominal p-value threshold of each look, in
	// [0, 1) (at most 0.5 one-sided); 0 never stops there.
	Nominal []float64
	// Sides (1 or 2) and Dir (+1 or −1 one-sided) set the test as in
	// [RejectionTable]. With a margin, Sides must be 1 and Dir 0 or the
	// margin's side (+1 for Margin < 0, −1 for Margin > 0).
	Sides, Dir int
	// Test is the planned test without a margin; 0 with one.
	Test BinaryTest
	// Margin is the difference p1 − p2 under the null hypothesis of a
	// non-inferiority test, in (−1, 1): negative when higher risks are
	// better, positive when lower are. 0 means no margin.
	Margin float64
	// MarginTest is the statistic of the margin test: FarringtonManning
	// or Blackwelder; 0 without a margin.
	MarginTest MarginMethod
}

type seqBinomials struct {
	b1, b2 []*BinomialTable // the events of each batch
	looks  []binLook
	test   BinaryTest
	margin float64
	mtest  MarginMethod
	dir    int // 0 two-sided
}

// binLook is the decision rule of one look.
type binLook struct {
	n1, n2 int
	never  bool     // nominal level 0
	rule   cellRule // chi-square family and z test
	limit  float64  // Fisher: Nominal (1 + 10⁻⁷), as RejectionTable
	za     float64  // margin tests: the one-sided critical value
}

// NewSequentialBinomials returns the model. A replicate draws each
// batch's counts from alias tables built once per batch ([BinomialTable])
// and decides each look from the accrued counts in O(1) (the chi-square
// family and the z test, by the arithmetic of [RejectionTable]; the margin
// tests, by that of [MarginRejectionTable]) or, for Fisher's test, from
// the hypergeometric distribution of the look's margins, in O(min(N1, N2)).
// With one look at level α its decisions are those of the fixed-sample
// test. It panics unless the sizes are as documented, the risks are in
// [0, 1], Nominal has one valid level per look, and the test (with its
// margin) is valid.
func NewSequentialBinomials(c SequentialBinomials) SequentialModel {
	checkLooks(c.Nominal, c.Sides)
	k := len(c.Nominal)
	checkCumulative(c.N1, c.N2, k, 1)
	checkProb("P1", c.P1)
	checkProb("P2", c.P2)
	m := &seqBinomials{test: c.Test, margin: c.Margin, mtest: c.MarginTest, dir: c.Dir, looks: make([]binLook, k)}
	if c.Sides == 2 {
		m.dir = 0
	}
	var za []float64
	if c.Margin != 0 {
		if !(c.Margin > -1 && c.Margin < 1) {
			panic(fmt.Sprintf("power: margin must be in (-1, 1), got %v", c.Margin))
		}
		if c.MarginTest != FarringtonManning && c.MarginTest != Blackwelder {
			panic("power: a margin needs MarginTest FarringtonManning or Blackwelder")
		}
		if c.Test != 0 {
			panic("power: a margin test takes no Test")
		}
		side := 1
		if c.Margin > 0 {
			side = -1
		}
		if c.Sides != 1 || (c.Dir != 0 && c.Dir != side) {
			panic(fmt.Sprintf("power: margin %v takes sides 1 and dir 0 or %+d, got %d and %d", c.Margin, side, c.Sides, c.Dir))
		}
		za = lookZ(c.Nominal, 1)
	} else {
		if c.MarginTest != 0 {
			panic("power: MarginTest without a margin")
		}
		checkDir(c.Sides, c.Dir)
		checkExact(c.Test, c.N1[0], c.N2[0], 0.05, c.Sides, c.Dir) // the test itself; each level below
	}
	prev1, prev2 := 0, 0
	for i := range m.looks {
		l := &m.looks[i]
		l.n1, l.n2 = c.N1[i], c.N2[i]
		m.b1 = append(m.b1, NewBinomialTable(l.n1-prev1, c.P1))
		m.b2 = append(m.b2, NewBinomialTable(l.n2-prev2, c.P2))
		prev1, prev2 = l.n1, l.n2
		a := c.Nominal[i]
		l.never = a == 0
		switch {
		case l.never:
		case c.Margin != 0:
			l.za = za[i]
		default:
			checkExact(c.Test, l.n1, l.n2, a, c.Sides, c.Dir)
			if c.Test == Fisher {
				l.limit = a * (1 + relTie)
			} else {
				l.rule = newCellRule(c.Test, l.n1, l.n2, a, c.Sides, c.Dir)
			}
		}
	}
	return m
}

// Looks returns K.
func (m *seqBinomials) Looks() int { return len(m.looks) }

// workerBytes is the scratch of Fisher's test: three rows of weights of
// the largest look's support.
func (m *seqBinomials) workerBytes() int64 {
	if m.test != Fisher || m.margin != 0 {
		return 0
	}
	l := m.looks[len(m.looks)-1]
	return 24 * (int64(min(l.n1, l.n2)) + 1)
}

func (m *seqBinomials) NewWorker() Worker { return &seqBinomialsWorker{m: m} }

type seqBinomialsWorker struct {
	m *seqBinomials
	h hyperRow // Fisher's test
}

// ReplicateLook draws the batches look by look and returns the first look
// whose test crosses, or 0.
func (w *seqBinomialsWorker) ReplicateLook(r *rand.Rand) int {
	m := w.m
	x1, x2 := 0, 0
	for k := range m.looks {
		x1 += m.b1[k].Draw(r)
		x2 += m.b2[k].Draw(r)
		if w.crosses(k, x1, x2) {
			return k + 1
		}
	}
	return 0
}

func (w *seqBinomialsWorker) Replicate(r *rand.Rand) bool { return w.ReplicateLook(r) > 0 }

// crosses decides look k (from 0) for x1 events among the look's n1 and
// x2 among its n2.
func (w *seqBinomialsWorker) crosses(k, x1, x2 int) bool {
	m := w.m
	l := &m.looks[k]
	switch {
	case l.never:
		return false
	case m.margin != 0:
		return marginReject(m.mtest, x1, l.n1, x2, l.n2, m.margin, l.za)
	case m.test == Fisher:
		// As fillFisher: the tables with no events or events only never
		// reject.
		t := x1 + x2
		if t == 0 || t == l.n1+l.n2 {
			return false
		}
		w.h.fill(l.n1, l.n2, t)
		return w.h.tail(x1, m.dir) <= l.limit*w.h.total
	}
	return l.rule.reject(x1, x2)
}

// SequentialMeans is the Monte-Carlo model of a group-sequential
// comparison of two means: normal outcomes with standard deviations SD1
// and SD2 and means differing by Diff (first minus second), N1[k] and
// N2[k] participants analysed at look k + 1, each look analysed by the
// two-sample t test on the data accrued so far, as [TwoMeans]: Student's
// pooled-variance test, or Welch's with the Welch–Satterthwaite degrees of
// freedom, of T = (d̂ − Bound)/ŝe, Bound the non-inferiority margin (0
// for superiority). Look k crosses when the p-value of T is at most
// Nominal[k−1]: two-sided when |T| > t_{1−a/2}(ν), one-sided when
// Dir·T > t_{1−a}(ν), a the nominal level and ν the look's degrees of
// freedom.
//
// References: Student (1908). Biometrika 6:1–25; Welch BL (1947).
// Biometrika 34:28–35; Jennison C, Turnbull BW (2000). Group Sequential
// Methods with Applications to Clinical Trials. Chapman & Hall/CRC,
// §3.1; Chan TF, Golub GH, LeVeque RJ
// (1983). Algorithms for computing the sample variance: analysis and
// recommendations. Am Stat 37:242–247 (the pairwise update of a mean and
// sum of squares).
type SequentialMeans struct {
	// N1 and N2 are the cumulative numbers analysed in each group at each
	// look, one per look, non-decreasing, at least 2 at the first look.
	N1, N2 []int
	// Diff is the true difference of the means, first minus second,
	// finite.
	Diff float64
	// SD1 and SD2 are the standard deviations, SD1 > 0 and SD2 ≥ 0; SD2 = 0
	// means SD1. Student's test with unequal SDs is simulated as such.
	SD1, SD2 float64
	// Welch selects Welch's test instead of Student's.
	Welch bool
	// Nominal holds the nominal p-value threshold of each look, in
	// [0, 1) (at most 0.5 one-sided); 0 never stops there.
	Nominal []float64
	// Sides (1 or 2) and Dir (+1 or −1 one-sided) as in [TwoMeans].
	Sides, Dir int
	// Bound is the difference under the null hypothesis, as in [TwoMeans]:
	// 0 for superiority, the non-inferiority margin otherwise (finite).
	Bound float64
}

type seqMeans struct {
	batch  []meanBatch
	look   []meanLook
	diff   float64
	bound  float64
	sign   float64 // 0 two-sided, else Dir
	welch  bool
	pooled bool // one chi-square for both groups' within-batch sums of squares
}

// meanBatch draws the participants added at one look.
type meanBatch struct {
	m1, m2     float64          // sizes
	sd1, sd2   float64          // standard deviations of the batch means, σ/√m
	v1, v2     float64          // σ²
	chi1, chi2 ChiSquareSampler // within-batch sums of squares over σ²
	has1, has2 bool             // whether chi1 and chi2 are drawn (degrees of freedom > 0)
}

// meanLook is the decision rule of one look.
type meanLook struct {
	never  bool
	w      float64     // Student: t² (1/n1 + 1/n2)/(n1 + n2 − 2)
	a1, a2 float64     // Welch: 1/(nᵢ(nᵢ − 1)), sᵢ²/nᵢ = aᵢ SSᵢ
	g1, g2 float64     // Welch: 1/(nᵢ − 1)
	crit   *tCritTable // Welch: t² against 1/ν
}

// NewSequentialMeans returns the model. Each replicate is drawn through
// the sufficient statistics of each batch, in O(K) whatever the sizes: a
// batch of m participants of group i has a mean N(μᵢ, σᵢ²/m) and,
// independently, a within-batch sum of squares σᵢ² χ²(m − 1) (Cochran's
// theorem; with equal SDs and Student's test the two groups' sums of
// squares are drawn as one σ² χ²). The batch joins the data accrued, n
// participants of mean x̄ and sum of squares S, by the exact update
//
//	δ = x̄_b − x̄,  x̄ ← x̄ + δ m/(n + m),  S ← S + S_b + δ² n m/(n + m)
//
// (Chan, Golub & LeVeque 1983), so every look sees the exact mean and sum
// of squares of the data so far. Critical values are computed once per
// look ([TUpperQuantile]; for Welch a table over the attainable degrees of
// freedom, as [NewTwoMeans]). It panics unless the sizes, SDs, Diff and
// Bound are as documented, Nominal has one valid level per look, and
// Sides and Dir describe a test.
func NewSequentialMeans(c SequentialMeans) SequentialModel {
	checkLooks(c.Nominal, c.Sides)
	checkDir(c.Sides, c.Dir)
	k := len(c.Nominal)
	checkCumulative(c.N1, c.N2, k, 2)
	if !(c.SD1 > 0) || !(c.SD2 >= 0) || math.IsInf(c.SD1, 1) || math.IsInf(c.SD2, 1) {
		panic("power: standard deviations must be positive and finite")
	}
	for _, x := range []float64{c.Diff, c.Bound} {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			panic(fmt.Sprintf("power: difference and bound must be finite, got %v", x))
		}
	}
	sd2 := c.SD2
	if sd2 == 0 {
		sd2 = c.SD1
	}
	v1, v2 := c.SD1*c.SD1, sd2*sd2
	m := &seqMeans{diff: c.Diff, bound: c.Bound, sign: signOf(c.Sides, c.Dir), welch: c.Welch,
		pooled: !c.Welch && v1 == v2, batch: make([]meanBatch, k), look: make([]meanLook, k)}
	prev1, prev2 := 0, 0
	for i := range k {
		b := &m.batch[i]
		b.m1, b.m2 = float64(c.N1[i]-prev1), float64(c.N2[i]-prev2)
		b.v1, b.v2 = v1, v2
		if b.m1 > 0 {
			b.sd1 = c.SD1 / math.Sqrt(b.m1)
		}
		if b.m2 > 0 {
			b.sd2 = sd2 / math.Sqrt(b.m2)
		}
		f1, f2 := math.Max(0, b.m1-1), math.Max(0, b.m2-1)
		if m.pooled {
			f1, f2 = f1+f2, 0
		}
		if b.has1 = f1 > 0; b.has1 {
			b.chi1 = NewChiSquareSampler(f1)
		}
		if b.has2 = f2 > 0; b.has2 {
			b.chi2 = NewChiSquareSampler(f2)
		}
		prev1, prev2 = c.N1[i], c.N2[i]

		l := &m.look[i]
		a := c.Nominal[i]
		if l.never = a == 0; l.never {
			continue
		}
		n1, n2 := float64(c.N1[i]), float64(c.N2[i])
		if c.Welch {
			l.a1, l.a2 = 1/(n1*(n1-1)), 1/(n2*(n2-1))
			l.g1, l.g2 = 1/(n1-1), 1/(n2-1)
			l.crit = newTCritTable(math.Min(n1, n2)-1, n1+n2-2, a, c.Sides)
		} else {
			df := n1 + n2 - 2
			l.w = sq(tCrit(df, a, c.Sides)) * (1/n1 + 1/n2) / df
		}
	}
	return m
}

// Looks returns K.
func (m *seqMeans) Looks() int { return len(m.look) }

func (m *seqMeans) NewWorker() Worker { return &seqMeansWorker{m: m} }

// seqMeansWorker holds the data accrued in one replicate: the sizes,
// means and sums of squares of each group.
type seqMeansWorker struct {
	m              *seqMeans
	n1, n2, x1, x2 float64
	ss1, ss2       float64
}

// joinBatch joins a batch of m values with mean bm and sum of squares bss to
// the n values of mean *x and sum of squares *ss.
func joinBatch(n, x, ss *float64, m, bm, bss float64) {
	if m == 0 {
		return
	}
	nn := *n + m
	d := bm - *x
	*x += d * m / nn
	*ss += bss + d*d*(*n)*m/nn
	*n = nn
}

// ReplicateLook draws the batches look by look and returns the first look
// whose test crosses, or 0.
func (w *seqMeansWorker) ReplicateLook(r *rand.Rand) int {
	m := w.m
	w.n1, w.n2, w.x1, w.x2, w.ss1, w.ss2 = 0, 0, 0, 0, 0, 0
	for k := range m.batch {
		b := &m.batch[k]
		var bm1, bm2, s1, s2 float64
		if b.m1 > 0 {
			bm1 = m.diff + b.sd1*r.NormFloat64()
		}
		if b.m2 > 0 {
			bm2 = b.sd2 * r.NormFloat64()
		}
		if b.has1 {
			s1 = b.v1 * b.chi1.Draw(r)
		}
		if b.has2 {
			s2 = b.v2 * b.chi2.Draw(r)
		}
		if m.pooled {
			// s1 is both groups' within-batch sum of squares; only the
			// total is used.
			joinBatch(&w.n1, &w.x1, &w.ss1, b.m1, bm1, 0)
			joinBatch(&w.n2, &w.x2, &w.ss2, b.m2, bm2, 0)
			w.ss1 += s1
		} else {
			joinBatch(&w.n1, &w.x1, &w.ss1, b.m1, bm1, s1)
			joinBatch(&w.n2, &w.x2, &w.ss2, b.m2, bm2, s2)
		}
		if w.crosses(k) {
			return k + 1
		}
	}
	return 0
}

func (w *seqMeansWorker) Replicate(r *rand.Rand) bool { return w.ReplicateLook(r) > 0 }

// crosses decides look k (from 0) on the data accrued: it compares T²
// with the squared critical value, without a square root.
func (w *seqMeansWorker) crosses(k int) bool {
	m := w.m
	l := &m.look[k]
	if l.never {
		return false
	}
	d := w.x1 - w.x2 - m.bound
	if m.sign*d < 0 {
		return false
	}
	if !m.welch {
		return d*d > l.w*(w.ss1+w.ss2)
	}
	v1, v2 := l.a1*w.ss1, l.a2*w.ss2
	v := v1 + v2
	return d*d > l.crit.at((v1*v1*l.g1+v2*v2*l.g2)/(v*v))*v
}

// tStat returns the t statistic of the data accrued and its degrees of
// freedom (for the tests: the crossing rule never takes the root).
func (w *seqMeansWorker) tStat() (t, df float64) {
	d := w.x1 - w.x2 - w.m.bound
	if !w.m.welch {
		df = w.n1 + w.n2 - 2
		return d / math.Sqrt((w.ss1+w.ss2)/df*(1/w.n1+1/w.n2)), df
	}
	v1, v2 := w.ss1/((w.n1-1)*w.n1), w.ss2/((w.n2-1)*w.n2)
	v := v1 + v2
	return d / math.Sqrt(v), v * v / (v1*v1/(w.n1-1) + v2*v2/(w.n2-1))
}

// SequentialSurvival is the Monte-Carlo model of a group-sequential
// two-arm survival study analysed with the log-rank test at looks set by
// the number of events. The participants are those of [SurvivalSim]: N1
// and N2 in the arms, exponential event times with hazards H1 and H2 (or
// the other arm's after crossing over, with probabilities Cross1 and
// Cross2), uniform entry over Entry.Accrual, exponential loss to
// follow-up with hazard Entry.Dropout, and an end of the study at
// Accrual + FollowUp; each participant's entry, event and dropout times
// are drawn once.
//
// Look k takes place at the calendar time (entry plus event time) of the
// Events[k−1]-th event observed, both arms together, or at the end of the
// study if fewer events occur by then. The data of a look are those known
// at its calendar time τ: the participants entered by τ, each followed up
// to the earliest of the event, the dropout and τ, an event counted only
// when it happened by τ. So the last look is the planned end of an
// event-driven trial: the Events[K−1]-th event, or the end of the study,
// whichever comes first. When the study ends before the event count of an
// interim look k < K is reached, that look and the later interim ones are
// skipped: the next analysis is the final one, at the end of the study
// with the events observed by then, at the last look's level
// Nominal[K−1], and is counted as look K. Events at the same instant as
// the look's event (ties in the calendar time, which have probability 0)
// all count.
//
// Each look applies the test of [SurvivalSim] to its data: the log-rank
// test with Sides and Dir, or, with a hazard-ratio Margin (not 0 or 1),
// the one-sided test of Z = (U − V ln M)/√V on Peto's U = O1 − E1 and the
// log-rank variance V, rejecting for Z < −z (M > 1) or Z > z (M < 1);
// z is the look's normal critical value of Nominal[k−1].
//
// With one look whose event count is never reached (Events[0] > N1 + N2)
// at level α, the model is [NewSurvivalSim] at Alpha = α: the same draws,
// the same data and the same decision, replicate by replicate.
//
// References: Tsiatis AA (1981). The asymptotic joint distribution of the
// efficient scores test for the proportional hazards model calculated
// over time. Biometrika 68:311–315; Jennison C, Turnbull BW (2000). Group
// Sequential Methods with Applications to Clinical Trials. Chapman &
// Hall/CRC, §3.1; the tests as cited at [NewSurvivalSim].
type SequentialSurvival struct {
	// N1 and N2 are the numbers randomised to each arm, at least 1 each,
	// at most 2³² − 1 together.
	N1, N2 int
	// H1 and H2 are the hazards of each arm's treatment, positive and
	// finite.
	H1, H2 float64
	// Cross1 and Cross2 are the crossing-over fractions of [SurvivalSim],
	// each in [0, 1].
	Cross1, Cross2 float64
	// Entry is recruitment, follow-up and loss to follow-up.
	Entry Entry
	// Events holds the cumulative number of events of each look,
	// increasing, the first at least 1.
	Events []int
	// Nominal holds the nominal p-value threshold of each look, in
	// [0, 1) (at most 0.5 one-sided); 0 never stops there.
	Nominal []float64
	// Sides and Dir as in [SurvivalSim]: a superiority test with Sides 1
	// or 2 (Dir −1 or +1 one-sided), or with a Margin, Sides 1 and Dir 0
	// or the margin's side.
	Sides, Dir int
	// Margin, when not 0 or 1, is the hazard ratio under the null
	// hypothesis of a non-inferiority test, positive and finite.
	Margin float64
}

type seqSurvival struct {
	lr     *logRankModel // the arms, the entry, the test; its level is unused
	events []int
	z      []float64 // the critical value of each look (margin tests)
	crit2  []float64 // its square (superiority)
}

// NewSequentialSurvival returns the model. A replicate draws every
// participant as [NewSurvivalSim] does (the same variates in the same
// order), finds the calendar times of the looks by sorting the observed
// events by calendar time, and analyses each look as [LogRankTest] does,
// on 32-bit fixed-point follow-up times sorted by a radix sort: O(N) a
// look. It panics unless the arms, entry and test are valid for
// [NewSurvivalSim] (equivalence is not offered), N1 + N2 < 2³², the event
// counts are as documented, and Nominal has one valid level per look.
func NewSequentialSurvival(c SequentialSurvival) SequentialModel {
	checkLooks(c.Nominal, c.Sides)
	if len(c.Events) != len(c.Nominal) {
		panic(fmt.Sprintf("power: %d nominal levels for %d event counts", len(c.Nominal), len(c.Events)))
	}
	for i, d := range c.Events {
		if d < 1 || (i > 0 && d <= c.Events[i-1]) {
			panic(fmt.Sprintf("power: event counts must increase from at least 1, got %v", c.Events))
		}
	}
	if int64(c.N1)+int64(c.N2) > math.MaxUint32 {
		panic("power: at most 2³² − 1 participants")
	}
	// The level 0.05 only satisfies NewSurvivalSim's check: each look has
	// its own critical value.
	lr := NewSurvivalSim(SurvivalSim{N1: c.N1, N2: c.N2, H1: c.H1, H2: c.H2, Cross1: c.Cross1, Cross2: c.Cross2,
		Entry: c.Entry, Alpha: 0.05, Sides: c.Sides, Dir: c.Dir, Margin: c.Margin}).(*logRankModel)
	m := &seqSurvival{lr: lr, events: slices.Clone(c.Events), z: lookZ(c.Nominal, c.Sides)}
	for _, z := range m.z {
		m.crit2 = append(m.crit2, z*z)
	}
	return m
}

// Looks returns K.
func (m *seqSurvival) Looks() int { return len(m.events) }

// workerBytes is a worker's scratch: per participant its entry, follow-up
// and calendar event times and two packed keys (40 bytes), the
// histograms, and the looks' times.
func (m *seqSurvival) workerBytes() int64 {
	return 40*(int64(m.lr.n1)+int64(m.lr.n2)) + int64(len(seqSurvivalWorker{}.count))*256*4 + 8*int64(len(m.events))
}

func (m *seqSurvival) NewWorker() Worker {
	n := m.lr.n1 + m.lr.n2
	return &seqSurvivalWorker{m: m, entry: make([]float64, n), y: make([]float64, n), ce: make([]float64, n),
		keys: make([]uint64, n), tmp: make([]uint64, n), tau: make([]float64, len(m.events))}
}

// seqSurvivalWorker holds one goroutine's scratch space: each
// participant's entry time, follow-up before the end of the study
// (min(event, dropout)) and calendar time of the event (+Inf when it is
// not observed by the end of the study), the packed keys of the log-rank
// machinery, and the calendar times of the looks.
type seqSurvivalWorker struct {
	m            *seqSurvival
	entry, y, ce []float64
	keys, tmp    []uint64
	count        [4][256]uint32
	tau          []float64
	run          []float64 // scratch for ties in the calendar order
	stop         *atomic.Bool
}

func (w *seqSurvivalWorker) watchStop(stop *atomic.Bool) { w.stop = stop }

// stopped reports whether the runner asked the replicate to stop.
func (w *seqSurvivalWorker) stopped() bool { return w.stop != nil && w.stop.Load() }

// set records participant i with entry e, event time t and dropout time
// c (+Inf for none). The event is observed when it comes before the
// dropout and the end of the study: t ≤ min(end − e, c), the comparison
// [NewSurvivalSim] makes.
func (w *seqSurvivalWorker) set(i int, e, t, c float64) {
	w.entry[i] = e
	w.y[i] = min(t, c)
	w.ce[i] = math.Inf(1)
	if t <= min(w.m.lr.end-e, c) {
		w.ce[i] = e + t
	}
}

// draw draws every participant, with the variates of [NewSurvivalSim] in
// its order; it returns false when the stop flag cut it short.
func (w *seqSurvivalWorker) draw(rng *rand.Rand) bool {
	m := w.m.lr
	for i := range w.entry {
		if i&(1<<14-1) == 0 && w.stopped() {
			return false
		}
		mean, other, cross := m.mean1, m.mean2, m.cross1
		if i >= m.n1 {
			mean, other, cross = m.mean2, m.mean1, m.cross2
		}
		if cross > 0 && rng.Float64() < cross {
			mean = other
		}
		e := 0.0
		if m.accrual > 0 {
			e = m.accrual * rng.Float64()
		}
		c := math.Inf(1)
		if m.meanDrop > 0 {
			c = rng.ExpFloat64() * m.meanDrop
		}
		w.set(i, e, rng.ExpFloat64()*mean, c)
	}
	return true
}

// lookTimes sets w.tau to the calendar time of each look, +Inf for a look
// whose event count is not reached by the end of the study. The observed
// events are sorted by calendar time on 32-bit fixed-point keys carrying
// the participant's index, by the radix sort of the log-rank machinery;
// the rare run of events in one step of 2⁻³² of the study is put in exact
// order. It returns false when the stop flag cut it short.
func (w *seqSurvivalWorker) lookTimes() bool {
	m := w.m.lr
	w.count = [4][256]uint32{}
	c := &w.count
	keys := w.keys[:0]
	for i, t := range w.ce {
		if t == math.Inf(1) {
			continue
		}
		q := min(uint64(int64(t*m.scale)), math.MaxUint32)
		keys = append(keys, q<<32|uint64(i))
		c[0][uint8(q)]++
		c[1][uint8(q>>8)]++
		c[2][uint8(q>>16)]++
		c[3][uint8(q>>24)]++
	}
	sorted := radixSortHigh32(keys, w.tmp, c, w.stop)
	if sorted == nil {
		return false
	}
	for k, d := range w.m.events {
		w.tau[k] = math.Inf(1)
		if d > len(sorted) {
			continue
		}
		j := d - 1
		w.tau[k] = w.ce[uint32(sorted[j])]
		a, b := j, j+1
		for a > 0 && sorted[a-1]>>32 == sorted[j]>>32 {
			a--
		}
		for b < len(sorted) && sorted[b]>>32 == sorted[j]>>32 {
			b++
		}
		if b-a > 1 {
			w.run = w.run[:0]
			for _, key := range sorted[a:b] {
				w.run = append(w.run, w.ce[uint32(key)])
			}
			slices.Sort(w.run)
			w.tau[k] = w.run[j-a]
		}
	}
	return true
}

// look returns U = O1 − E1 and V of the log-rank test on the data known
// at calendar time tau, or at the end of the study when final is set (tau
// is then the end); ok is false when the stop flag cut it short. At the
// end, the data are those of [NewSurvivalSim]: every participant, followed
// up to min(event, dropout, end − entry).
func (w *seqSurvivalWorker) look(tau float64, final bool) (u, v float64, ok bool) {
	m := w.m.lr
	w.count = [4][256]uint32{}
	c := &w.count
	j, n1 := 0, 0
	for i, e := range w.entry {
		if i&(1<<14-1) == 0 && w.stopped() {
			return 0, 0, false
		}
		ce := w.ce[i]
		if !(e < tau || ce <= tau) {
			continue // not yet entered
		}
		f := w.y[i]
		var flag uint64
		if ce <= tau || (final && ce < math.Inf(1)) {
			flag = lrEvent
		} else {
			f = min(f, tau-e)
		}
		if i >= m.n1 {
			flag |= lrGroup2
		} else {
			n1++
		}
		// f ≤ end (up to a rounding of tau) and scale = (2³² − 1)/end, so
		// truncation keeps q below 2³².
		q := uint64(int64(f * m.scale))
		w.keys[j] = q<<32 | flag
		j++
		c[0][uint8(q)]++
		c[1][uint8(q>>8)]++
		c[2][uint8(q>>16)]++
		c[3][uint8(q>>24)]++
	}
	sorted := radixSortHigh32(w.keys[:j], w.tmp, c, w.stop)
	if sorted == nil {
		return 0, 0, false
	}
	o, e, v := logRankSorted(sorted, n1, j-n1)
	return o - e, v, true
}

// ReplicateLook draws one study and analyses it look by look; it returns
// the first look whose test crosses, or 0 (also when the stop flag cut
// the replicate short: the runner then discards it).
func (w *seqSurvivalWorker) ReplicateLook(rng *rand.Rand) int {
	if !w.draw(rng) || !w.lookTimes() {
		return 0
	}
	m := w.m
	last := len(m.events) - 1
	for k := 0; k <= last; k++ {
		tau, final := w.tau[k], false
		if tau == math.Inf(1) {
			// The study ends before this look's events: the final
			// analysis, at the last look's level.
			tau, final, k = m.lr.end, true, last
		}
		u, v, ok := w.look(tau, final)
		if !ok {
			return 0
		}
		if m.lr.rejects(u, v, m.z[k], m.crit2[k]) {
			return k + 1
		}
	}
	return 0
}

func (w *seqSurvivalWorker) Replicate(rng *rand.Rand) bool { return w.ReplicateLook(rng) > 0 }
