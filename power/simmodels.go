package power

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// This file holds the Monte-Carlo models of [Simulate]. Each constructor
// checks its input (panicking on programmer errors, as the rest of the
// package), builds the read-only tables once and returns a [Model] whose
// workers share them.

// checkTest panics unless alpha, sides and dir describe a test: alpha in
// (0, 1), sides 1 or 2, and dir ±1 for a one-sided test.
func checkTest(alpha float64, sides, dir int) {
	if !(alpha > 0 && alpha < 1) {
		panic(fmt.Sprintf("power: alpha %v out of (0, 1)", alpha))
	}
	if sides != 1 && sides != 2 {
		panic("power: sides must be 1 or 2")
	}
	if sides == 1 && dir != 1 && dir != -1 {
		panic("power: a one-sided test needs dir = +1 or -1")
	}
}

// tCrit returns the upper critical value of a t test with df degrees of
// freedom at level alpha with sides tails: t_{1 − α/sides}(df), taken from
// the upper tail ([TUpperQuantile]).
func tCrit(df, alpha float64, sides int) float64 {
	return TUpperQuantile(alpha/float64(sides), df)
}

// signOf returns the direction a one-sided test rejects in: 0 for a
// two-sided test (both), +1 or −1 otherwise.
func signOf(sides, dir int) float64 {
	if sides == 2 {
		return 0
	}
	return float64(dir)
}

// TwoBinomials is the Monte-Carlo model of two independent binomial
// counts, x1 ~ Binomial(N1, P1) and x2 ~ Binomial(N2, P2), analysed by the
// test Test at level Alpha with Sides tails (Dir, +1 when P1 > P2 is the
// alternative and −1 otherwise, picks the tail of a one-sided test), as
// decided by [RejectionTable]. It serves trials (events among N1 treated
// and N2 controls) and case-control studies alike: there x1 and x2 are the
// exposed among N1 cases and N2 controls, P1 and P2 the exposure
// prevalences.
type TwoBinomials struct {
	N1, N2     int
	P1, P2     float64
	Alpha      float64
	Sides, Dir int
	Test       BinaryTest
}

type twoBinomials struct {
	t1, t2 *BinomialTable
	reject []uint64 // RejectionTable packed 64 decisions a word
	stride int
}

// NewTwoBinomials returns the model. It builds one alias table per group
// ([BinomialTable]) and the test's decision for every pair of counts
// ([RejectionTable]), so that a replicate costs two table draws and a
// lookup. It panics unless N1, N2 ≥ 1, the risks are in [0, 1] and the
// test is valid.
func NewTwoBinomials(c TwoBinomials) Model {
	if c.N1 < 1 || c.N2 < 1 {
		panic("power: each group needs at least one participant")
	}
	checkTest(c.Alpha, c.Sides, c.Dir)
	if cells := float64(c.N1+1) * float64(c.N2+1); cells > MaxTableCells {
		if c.Test == Fisher {
			panic("power: Fisher's test is too large to tabulate; check TooLargeForTable first")
		}
		// Too large to tabulate: decide each replicate's table directly.
		return &twoBinomialsDirect{t1: NewBinomialTable(c.N1, c.P1), t2: NewBinomialTable(c.N2, c.P2),
			rule: newCellRule(c.Test, c.N1, c.N2, c.Alpha, c.Sides, c.Dir)}
	}
	return NewTableBinomials(c.N1, c.N2, c.P1, c.P2, RejectionTable(c.Test, c.N1, c.N2, c.Alpha, c.Sides, c.Dir))
}

// MaxTableCells is the largest rejection table (n1+1)(n2+1) the
// two-binomial model builds (16.8 million cells, about 2 MB as a bitset);
// beyond it the chi-square family and the unpooled z test decide each
// replicate from its counts, and Fisher's test is not simulated.
const MaxTableCells = 1 << 24

// TooLargeForTable reports whether [NewTwoBinomials] cannot simulate the
// test at these sizes (Fisher's test beyond [MaxTableCells]).
func TooLargeForTable(test BinaryTest, n1, n2 int) bool {
	return test == Fisher && float64(n1+1)*float64(n2+1) > MaxTableCells
}

// twoBinomialsDirect decides each replicate from its counts.
type twoBinomialsDirect struct {
	t1, t2 *BinomialTable
	rule   cellRule
}

func (m *twoBinomialsDirect) NewWorker() Worker { return &twoBinomialsDirectWorker{m: m} }

type twoBinomialsDirectWorker struct{ m *twoBinomialsDirect }

func (w *twoBinomialsDirectWorker) Replicate(r *rand.Rand) bool {
	return w.m.rule.reject(w.m.t1.Draw(r), w.m.t2.Draw(r))
}

type twoBinomialsWorker struct {
	t1, t2 aliasTable
	reject []uint64
	stride int
}

func (m *twoBinomials) NewWorker() Worker {
	return &twoBinomialsWorker{t1: m.t1.tab, t2: m.t2.tab, reject: m.reject, stride: m.stride}
}

// Replicate draws x1 and x2 and looks the decision up. The rejection
// table is a bitset (5 KB at 200 per group, 1/8 of the []bool) so that it
// stays in the first-level cache.
func (w *twoBinomialsWorker) Replicate(r *rand.Rand) bool {
	x1 := w.t1.pick(r.Uint64())
	x2 := w.t2.pick(r.Uint64())
	i := uint(x1*w.stride + x2)
	return w.reject[i>>6]>>(i&63)&1 != 0
}

// TwoMeans is the Monte-Carlo model of two independent groups of N1 and N2
// normal observations, means differing by Diff (first minus second),
// analysed by Student's pooled-variance t test (df N1 + N2 − 2) or, with
// Welch, by Welch's unequal-variance t test with the
// Welch–Satterthwaite degrees of freedom estimated from each data set.
//
// The statistic is T = (d̂ − Bound)/ŝe: Bound = 0 tests superiority, a
// non-zero Bound is the non-inferiority margin as in [MeanComparison]
// (negative when higher is better: Sides 1, Dir +1; positive when lower is
// better: Sides 1, Dir −1). A two-sided test rejects when |T| > t_{1−α/2};
// a one-sided one when Dir·T > t_{1−α}.
//
// References: Student (1908). The probable error of a mean. Biometrika
// 6:1–25; Welch BL (1947). The generalization of "Student's" problem when
// several different population variances are involved. Biometrika
// 34:28–35; Satterthwaite FE (1946). An approximate distribution of
// estimates of variance components. Biometrics Bull 2:110–114.
type TwoMeans struct {
	N1, N2 int
	Diff   float64
	// SD1 and SD2 are the standard deviations in each group; SD2 = 0
	// means SD1. Student's test with unequal SDs is simulated as such (its
	// level then differs from Alpha).
	SD1, SD2   float64
	Welch      bool
	Alpha      float64
	Sides, Dir int
	Bound      float64
}

// NewTwoMeans returns the model. Each replicate is drawn through the
// sufficient statistics, in O(1) whatever the sizes: the difference of the
// sample means is N(Diff, SD1²/N1 + SD2²/N2), and independently each
// sample variance is SDᵢ² χ²(Nᵢ − 1)/(Nᵢ − 1) (Cochran's theorem; with
// equal SDs Student's pooled sum of squares is one SD² χ²(N1 + N2 − 2)).
// The test compares T² with the squared critical value, so no square root
// is taken. For Welch, the critical value at the estimated degrees of
// freedom ν̂ comes from a table of t²_{1−α/sides}(ν) at 1025 points
// evenly spaced in 1/ν over the attainable range
// [1/(N1 + N2 − 2), 1/(min(N1, N2) − 1)], interpolated by cubic Lagrange
// polynomials (relative error below 1e-8 for ν ≥ 1).
//
// It panics unless N1, N2 ≥ 2, SD1 > 0, SD2 ≥ 0 and the test is valid.
func NewTwoMeans(c TwoMeans) Model {
	if c.N1 < 2 || c.N2 < 2 {
		panic("power: each group needs at least two observations")
	}
	if !(c.SD1 > 0) || !(c.SD2 >= 0) {
		panic("power: standard deviations must be positive")
	}
	checkTest(c.Alpha, c.Sides, c.Dir)
	sd2 := c.SD2
	if sd2 == 0 {
		sd2 = c.SD1
	}
	n1, n2 := float64(c.N1), float64(c.N2)
	v1, v2 := c.SD1*c.SD1, sd2*sd2
	base := normalPart{mean: c.Diff - c.Bound, sd: math.Sqrt(v1/n1 + v2/n2), sign: signOf(c.Sides, c.Dir)}
	if c.Welch {
		f1, f2 := n1-1, n2-1
		return &welchModel{
			normalPart: base,
			chi1:       NewChiSquareSampler(f1),
			chi2:       NewChiSquareSampler(f2),
			a1:         v1 / (f1 * n1),
			a2:         v2 / (f2 * n2),
			g1:         1 / f1,
			g2:         1 / f2,
			crit:       newTCritTable(math.Min(f1, f2), f1+f2, c.Alpha, c.Sides),
		}
	}
	df := n1 + n2 - 2
	c2 := sq(tCrit(df, c.Alpha, c.Sides))
	k := (1/n1 + 1/n2) / df
	if c.SD2 == 0 || c.SD2 == c.SD1 {
		return &studentModel{normalPart: base, chi: NewChiSquareSampler(df), c2v: c2 * k * v1}
	}
	return &studentUnequalModel{
		normalPart: base,
		chi1:       NewChiSquareSampler(n1 - 1),
		chi2:       NewChiSquareSampler(n2 - 1),
		c2v1:       c2 * k * v1,
		c2v2:       c2 * k * v2,
	}
}

// PairedMeans is the Monte-Carlo model of N pairs whose differences are
// normal with mean Diff and standard deviation SD, analysed by the paired
// (one-sample) t test with N − 1 degrees of freedom; Bound, Sides and Dir
// as in [TwoMeans].
//
// References: Student (1908). The probable error of a mean. Biometrika
// 6:1–25.
type PairedMeans struct {
	N          int
	Diff, SD   float64
	Alpha      float64
	Sides, Dir int
	Bound      float64
}

// NewPairedMeans returns the model, drawn through the sufficient
// statistics: the mean difference is N(Diff, SD²/N) and, independently,
// the variance of the differences is SD² χ²(N − 1)/(N − 1). It panics
// unless N ≥ 2, SD > 0 and the test is valid.
func NewPairedMeans(c PairedMeans) Model {
	if c.N < 2 {
		panic("power: a paired t test needs at least two pairs")
	}
	if !(c.SD > 0) {
		panic("power: standard deviations must be positive")
	}
	checkTest(c.Alpha, c.Sides, c.Dir)
	n := float64(c.N)
	df := n - 1
	return &studentModel{
		normalPart: normalPart{mean: c.Diff - c.Bound, sd: c.SD / math.Sqrt(n), sign: signOf(c.Sides, c.Dir)},
		chi:        NewChiSquareSampler(df),
		c2v:        sq(tCrit(df, c.Alpha, c.Sides)) * c.SD * c.SD / (n * df),
	}
}

// ClusterMeans is the Monte-Carlo model of a cluster-randomised trial with
// K1 and K2 clusters of M members, a normal outcome with total standard
// deviation SD and intra-class correlation ICC (a normal random intercept
// of variance ICC·SD² plus within-cluster variance (1 − ICC)·SD²), and
// means differing by Diff, analysed by the two-sample t test on the
// cluster means with K1 + K2 − 2 degrees of freedom; Sides and Dir as in
// [TwoMeans].
//
// References: Donner A, Klar N (2000). Design and Analysis of Cluster
// Randomization Trials in Health Research. Arnold, chapters 2 and 6.
type ClusterMeans struct {
	K1, K2, M  int
	Diff, SD   float64
	ICC        float64
	Alpha      float64
	Sides, Dir int
}

// NewClusterMeans returns the model. A cluster mean is normal with
// variance SD²[ICC + (1 − ICC)/M] = SD²[1 + (M − 1) ICC]/M, so the
// replicate is that of [TwoMeans] on K1 and K2 cluster means, drawn
// through their sufficient statistics in O(1). It panics unless K1, K2 ≥ 2,
// M ≥ 1, SD > 0, 0 ≤ ICC ≤ 1 and the test is valid.
func NewClusterMeans(c ClusterMeans) Model {
	if c.K1 < 2 || c.K2 < 2 || c.M < 1 {
		panic("power: a cluster t test needs at least two clusters per arm of at least one member")
	}
	if !(c.ICC >= 0 && c.ICC <= 1) {
		panic(fmt.Sprintf("power: intra-class correlation %v out of [0, 1]", c.ICC))
	}
	sdc := c.SD * math.Sqrt(c.ICC+(1-c.ICC)/float64(c.M))
	return NewTwoMeans(TwoMeans{N1: c.K1, N2: c.K2, Diff: c.Diff, SD1: sdc, Alpha: c.Alpha, Sides: c.Sides, Dir: c.Dir})
}

// ClusterBinary is the Monte-Carlo model of a cluster-randomised trial
// with K1 and K2 clusters of M members and a binary outcome: each
// cluster's risk is drawn from a beta distribution with mean P1 (or P2)
// and intra-class correlation ICC (a + b = (1 − ICC)/ICC), its count of
// events is binomial given that risk (together, beta-binomial), and the
// cluster proportions are compared by the two-sample t test with
// K1 + K2 − 2 degrees of freedom; Sides and Dir (+1 when P1 > P2 is the
// alternative) as in [TwoMeans].
//
// When every cluster of both arms has the same proportion the t statistic
// is 0/0 and the test does not reject; when the proportions differ between
// the arms but not within them it is infinite and rejects in its
// direction.
//
// References: Donner A, Klar N (2000). Design and Analysis of Cluster
// Randomization Trials in Health Research. Arnold, chapter 6 (the
// cluster-level t test); Skellam JG (1948). J R Stat Soc B 10:257–261 (the
// beta-binomial distribution).
type ClusterBinary struct {
	K1, K2, M  int
	P1, P2     float64
	ICC        float64
	Alpha      float64
	Sides, Dir int
}

type clusterBinary struct {
	t1, t2 *BetaBinomialTable
	k1, k2 int
	c      float64
	sign   float64
}

// NewClusterBinary returns the model: one beta-binomial alias table per
// arm ([BetaBinomialTable]), so a replicate costs K1 + K2 table draws. It
// panics unless K1, K2 ≥ 2, M ≥ 1, the risks are in [0, 1],
// 0 ≤ ICC < 1 and the test is valid, and when 2 K1 K2 max(K1, K2) M²
// reaches 2⁶² (the sums of squares must stay exact in 64-bit integers;
// 1,000 clusters of 20,000 per arm are fine).
func NewClusterBinary(c ClusterBinary) Model {
	if c.K1 < 2 || c.K2 < 2 || c.M < 1 {
		panic("power: a cluster t test needs at least two clusters per arm of at least one member")
	}
	checkTest(c.Alpha, c.Sides, c.Dir)
	k1, k2 := float64(c.K1), float64(c.K2)
	if 2*k1*k2*math.Max(k1, k2)*float64(c.M)*float64(c.M) >= 1<<62 {
		panic("power: too many or too large clusters for the whole-number arithmetic of the t test")
	}
	df := k1 + k2 - 2
	return &clusterBinary{
		t1:   NewBetaBinomialTable(c.M, c.P1, c.ICC),
		t2:   NewBetaBinomialTable(c.M, c.P2, c.ICC),
		k1:   c.K1,
		k2:   c.K2,
		c:    sq(tCrit(df, c.Alpha, c.Sides)) * (k1 + k2) / df,
		sign: signOf(c.Sides, c.Dir),
	}
}

type clusterBinaryWorker struct {
	t1, t2 aliasTable
	k1, k2 int64
	c      float64
	sign   float64
}

func (m *clusterBinary) NewWorker() Worker {
	return &clusterBinaryWorker{t1: m.t1.tab, t2: m.t2.tab, k1: int64(m.k1), k2: int64(m.k2), c: m.c, sign: m.sign}
}

// Replicate works on whole counts: with Sᵢ and Qᵢ the sum and the sum of
// squares of arm i's cluster counts, the numerator and the pooled sum of
// squares of the t statistic, both multiplied by K1 K2 M, are the
// integers N = S1 K2 − S2 K1 and A = K2 (K1 Q1 − S1²) + K1 (K2 Q2 − S2²),
// and the test rejects when N² > t²_c (K1 + K2)/(K1 + K2 − 2) · A, so
// identical proportions give exactly A = 0.
func (w *clusterBinaryWorker) Replicate(r *rand.Rand) bool {
	var s1, q1, s2, q2 int64
	for i := int64(0); i < w.k1; i++ {
		y := int64(w.t1.pick(r.Uint64()))
		s1 += y
		q1 += y * y
	}
	for i := int64(0); i < w.k2; i++ {
		y := int64(w.t2.pick(r.Uint64()))
		s2 += y
		q2 += y * y
	}
	num := float64(s1*w.k2 - s2*w.k1)
	if w.sign*num < 0 {
		return false
	}
	a := float64(w.k2*(w.k1*q1-s1*s1) + w.k1*(w.k2*q2-s2*s2))
	return num*num > w.c*a
}

// normalPart is the normal estimate of a mean or a difference, centred on
// the null boundary: d̂ − Bound ~ N(mean, sd²), with sign the direction
// of a one-sided test (0: two-sided).
type normalPart struct {
	mean, sd, sign float64
}

// draw returns d̂ − Bound, or ok = false when it lies on the side a
// one-sided test cannot reject.
func (p *normalPart) draw(r *rand.Rand) (z float64, ok bool) {
	z = p.mean + p.sd*r.NormFloat64()
	return z, p.sign*z >= 0
}

// studentModel serves Student's test with one chi-square for the pooled
// sum of squares (equal SDs) and the paired test: it rejects when
// z² > c2v·χ², where c2v·χ² = t_c² ŝe², that is
// c2v = t_c² σ² (1/N1 + 1/N2)/df (two groups) or t_c² σ²/(N (N − 1))
// (pairs).
type studentModel struct {
	normalPart
	chi ChiSquareSampler
	c2v float64
}

func (m *studentModel) NewWorker() Worker { w := *m; return &w }

func (m *studentModel) Replicate(r *rand.Rand) bool {
	z, ok := m.draw(r)
	if !ok {
		return false
	}
	return z*z > m.c2v*m.chi.Draw(r)
}

// studentUnequalModel serves Student's pooled test when the groups' SDs
// differ: the pooled sum of squares is SD1² χ²(N1−1) + SD2² χ²(N2−1).
type studentUnequalModel struct {
	normalPart
	chi1, chi2 ChiSquareSampler
	c2v1, c2v2 float64
}

func (m *studentUnequalModel) NewWorker() Worker { w := *m; return &w }

func (m *studentUnequalModel) Replicate(r *rand.Rand) bool {
	z, ok := m.draw(r)
	if !ok {
		return false
	}
	return z*z > m.c2v1*m.chi1.Draw(r)+m.c2v2*m.chi2.Draw(r)
}

// welchModel serves Welch's test: with vᵢ = sᵢ²/Nᵢ = aᵢ χ²ᵢ, the squared
// standard error is V = v1 + v2 and 1/ν̂ = (v1² g1 + v2² g2)/V²,
// gᵢ = 1/(Nᵢ − 1).
type welchModel struct {
	normalPart
	chi1, chi2 ChiSquareSampler
	a1, a2     float64
	g1, g2     float64
	crit       *tCritTable
}

func (m *welchModel) NewWorker() Worker { w := *m; return &w }

func (m *welchModel) Replicate(r *rand.Rand) bool {
	z, ok := m.draw(r)
	if !ok {
		return false
	}
	v1 := m.a1 * m.chi1.Draw(r)
	v2 := m.a2 * m.chi2.Draw(r)
	v := v1 + v2
	x := (v1*v1*m.g1 + v2*v2*m.g2) / (v * v)
	return z*z > m.crit.at(x)*v
}

// tCritTable tabulates the squared critical value t²_{1−α/sides}(ν) of a t
// test against x = 1/ν at G + 1 evenly spaced points of [x0, x0 + G h]; it
// is read-only after construction.
type tCritTable struct {
	x0, invH float64
	c2       []float64
}

const tCritIntervals = 1024

func newTCritTable(dfMin, dfMax, alpha float64, sides int) *tCritTable {
	x0, x1 := 1/dfMax, 1/dfMin
	h := (x1 - x0) / tCritIntervals
	t := &tCritTable{x0: x0, c2: make([]float64, tCritIntervals+1)}
	if h > 0 {
		t.invH = 1 / h
	}
	for i := range t.c2 {
		x := x0 + float64(i)*h
		if i == tCritIntervals {
			x = x1
		}
		t.c2[i] = sq(tCrit(1/x, alpha, sides))
	}
	return t
}

// at returns t²(1/x) by cubic Lagrange interpolation on the four nearest
// nodes (shifted inwards at the ends); x outside the range is clamped.
func (t *tCritTable) at(x float64) float64 {
	f := (x - t.x0) * t.invH
	if !(f > 0) {
		return t.c2[0]
	}
	if f >= tCritIntervals {
		return t.c2[tCritIntervals]
	}
	s := int(f) - 1
	s = max(0, min(s, tCritIntervals-3))
	u := f - float64(s)
	c := t.c2[s : s+4 : s+4]
	u1, u2, u3 := u-1, u-2, u-3
	return (-c[0]*u1*u2*u3+c[3]*u*u1*u2)/6 + (c[1]*u*u2*u3-c[2]*u*u1*u3)/2
}
