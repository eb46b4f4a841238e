package power

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// This file holds the Monte-Carlo models that check a precision plan
// (intervals.go) by drawing the study's data and computing the planned
// interval. A replicate succeeds when the interval is as narrow as
// planned; with Coverage set, when it covers the true value instead. The
// two modes draw the same numbers in the same order, so two runs with one
// seed see the same data sets. [SimResult.Power] is then the share of
// studies that meet the precision (or whose interval covers).

// ProportionPrecisionSim is the Monte-Carlo model of a study that
// estimates one proportion: X ~ Binomial(N, P) and the interval Interval
// at the observed X ([IntervalMethod.Limits]). A replicate succeeds when
// the half-width is at most Margin or, with Coverage, when
// lower ≤ P ≤ upper. The Wald interval at X = 0 or X = N is a single
// point, 0 or 1: it meets any margin and never covers P.
type ProportionPrecisionSim struct {
	// N is the number of participants, from 1 to 2³¹ − 1.
	N int
	// P is the true proportion, in (0, 1).
	P float64
	// Confidence is the interval's confidence level, in (0, 1).
	Confidence float64
	// Interval is the interval computed; it must be set.
	Interval IntervalMethod
	// Margin is the half-width planned, positive.
	Margin float64
	// Coverage makes a replicate succeed when the interval covers P.
	Coverage bool
}

// proportionPrecision decides each count's outcome: from the table
// success[x − lo] when there is one, else by computing the interval.
type proportionPrecision struct {
	tab      *BinomialTable
	lo       int
	success  []bool
	method   IntervalMethod
	n, p     float64
	z, alpha float64
	margin   float64
	coverage bool
}

// maxOutcomeTable is the most counts whose outcomes a proportion's model
// tabulates: beyond, a replicate computes its interval (for
// Clopper–Pearson, two inverse incomplete beta functions, about 5 µs),
// which bounds the set-up under 0.1 s.
const maxOutcomeTable = 1 << 14

// NewProportionPrecisionSim returns the model. When the [BinomialTable] of
// Binomial(N, P) can draw at most 2¹⁴ counts (those whose probability its
// 64-bit alias cells resolve, about 8.5 standard deviations either side of
// N P: so up to N P (1 − P) ≈ 9·10⁵), it computes the interval once for
// each count, and a replicate is one table draw and one lookup; beyond, a
// replicate computes the interval at its count. Both give the same
// outcome for the same draw. It panics unless 1 ≤ N ≤ 2³¹ − 1, P is in
// (0, 1), the confidence is in (0, 1), Margin > 0 and Interval is one of
// the three.
func NewProportionPrecisionSim(c ProportionPrecisionSim) Model {
	return newProportionPrecision(c, maxOutcomeTable)
}

// newProportionPrecision builds the model with a table of at most
// maxTable counts (0: none).
func newProportionPrecision(c ProportionPrecisionSim, maxTable int) *proportionPrecision {
	if c.N < 1 || c.N > math.MaxInt32 {
		panic(fmt.Sprintf("power: %d participants out of 1..2³¹ − 1", c.N))
	}
	checkP(c.P)
	c.Interval.check()
	checkPrecisionMargin(c.Margin)
	z, alpha := confidenceZ(c.Confidence)
	m := &proportionPrecision{tab: NewBinomialTable(c.N, c.P), method: c.Interval, n: float64(c.N), p: c.P,
		z: z, alpha: alpha, margin: c.Margin, coverage: c.Coverage}
	lo, hi := binomialSupport(m.tab)
	if hi-lo+1 <= maxTable {
		m.lo = lo
		m.success = make([]bool, hi-lo+1)
		for x := lo; x <= hi; x++ {
			m.success[x-lo] = m.decide(x)
		}
	}
	return m
}

// decide computes the interval at x and applies the check.
func (m *proportionPrecision) decide(x int) bool {
	if m.coverage {
		l, u := m.method.limits(float64(x), m.n, m.z, m.alpha)
		return l <= m.p && m.p <= u
	}
	return m.method.halfWidth(float64(x), m.n, m.z, m.alpha) <= m.margin
}

// binomialSupport returns the smallest and largest counts the table can
// draw: a cell draws its value when its threshold is above 0 and its alias
// when the threshold is below 2^shift (a padding cell's value, beyond the
// support, has threshold 0).
func binomialSupport(t *BinomialTable) (lo, hi int) {
	lo, hi = math.MaxInt32, math.MinInt32
	for _, c := range t.tab.cells {
		if c.thresh > 0 {
			lo, hi = min(lo, int(c.value)), max(hi, int(c.value))
		}
		if c.thresh <= t.tab.mask {
			lo, hi = min(lo, int(c.alias)), max(hi, int(c.alias))
		}
	}
	return lo, hi
}

// NewWorker returns the model itself: a replicate reads only its tables.
func (m *proportionPrecision) NewWorker() Worker { return m }

// Replicate draws the count and looks up, or computes, whether its
// interval succeeds.
func (m *proportionPrecision) Replicate(r *rand.Rand) bool {
	x := m.tab.Draw(r)
	if m.success != nil {
		return m.success[x-m.lo]
	}
	return m.decide(x)
}

// MeanPrecisionSim is the Monte-Carlo model of a study that estimates a
// mean from N normal observations with standard deviation SD by the t
// interval x̄ ∓ t_{1−α/2, N−1} s/√N. A replicate draws the sufficient
// statistics, x̄ − μ = SD Z/√N with Z standard normal and
// (N − 1) s²/SD² ~ χ²(N − 1) ([ChiSquareSampler]), independent; it
// succeeds when the half-width is at most Margin or, with Coverage, when
// |x̄ − μ| ≤ half-width. The true mean μ cancels from both checks.
type MeanPrecisionSim struct {
	// N is the number of observations, from 2 to 2³¹ − 1.
	N int
	// SD is the true standard deviation, positive and finite.
	SD float64
	// Confidence is the interval's confidence level, in (0, 1).
	Confidence float64
	// Margin is the half-width planned, positive.
	Margin float64
	// Coverage makes a replicate succeed when the interval covers μ.
	Coverage bool
}

// meanPrecision decides on Z and χ² = (N − 1) s²/SD²: the half-width is
// at most the margin when χ² ≤ widthMax = margin² N (N − 1)/(t² SD²), and
// the interval covers when Z² (N − 1) ≤ t² χ².
type meanPrecision struct {
	chi      ChiSquareSampler
	widthMax float64
	df, t2   float64
	coverage bool
}

// NewMeanPrecisionSim returns the model. It panics unless
// 2 ≤ N ≤ 2³¹ − 1, SD > 0 is finite, Margin > 0 and the confidence is in
// (0, 1).
func NewMeanPrecisionSim(c MeanPrecisionSim) Model {
	if c.N < 2 || c.N > math.MaxInt32 {
		panic(fmt.Sprintf("power: %d observations out of 2..2³¹ − 1", c.N))
	}
	checkMean(c.SD, c.Confidence)
	checkPrecisionMargin(c.Margin)
	_, alpha := confidenceZ(c.Confidence)
	n := float64(c.N)
	t := TUpperQuantile(alpha/2, n-1)
	return &meanPrecision{
		chi:      NewChiSquareSampler(n - 1),
		widthMax: sq(c.Margin) * n * (n - 1) / sq(t*c.SD),
		df:       n - 1,
		t2:       t * t,
		coverage: c.Coverage,
	}
}

// NewWorker returns a copy of the model (the sampler is read-only).
func (m *meanPrecision) NewWorker() Worker { w := *m; return &w }

// Replicate draws Z and then χ², in both modes.
func (m *meanPrecision) Replicate(r *rand.Rand) bool {
	z := r.NormFloat64()
	chi := m.chi.Draw(r)
	if m.coverage {
		return z*z*m.df <= m.t2*chi
	}
	return chi <= m.widthMax
}

// RatioPrecisionSim is the Monte-Carlo model of a study that estimates a
// risk ratio (N1 exposed, N2 unexposed) or an odds ratio (N1 cases, N2
// controls) by the Wald interval on the log scale ([RatioPrecision]). A
// replicate draws a ~ Binomial(N1, P1) and b ~ Binomial(N2, P2) (events,
// or exposed) and computes
//
//	risk ratio:  log RR̂ = log((a/N1)/(b/N2)),  SE² = 1/a − 1/N1 + 1/b − 1/N2
//	odds ratio:  log OR̂ = log(a (N2 − b)/((N1 − a) b)),
//	             SE² = 1/a + 1/(N1 − a) + 1/b + 1/(N2 − b)
//
// It succeeds when upper/lower = exp(2 z SE) ≤ Rho or, with Coverage, when
// |log ratiô − log ratio| ≤ z SE. A replicate with a zero cell (a or b
// zero, or for the odds ratio a = N1 or b = N2) has no estimate: it fails
// in both modes.
type RatioPrecisionSim struct {
	RatioPrecision
	// N1 and N2 are the sizes of the groups, from 1 to 2³¹ − 1.
	N1, N2 int
	// Rho is the precision ratio planned, above 1.
	Rho float64
	// Coverage makes a replicate succeed when the interval covers the
	// true ratio.
	Coverage bool
}

type ratioPrecision struct {
	t1, t2   *BinomialTable
	n1, n2   float64
	odds     bool
	varMax   float64 // (ln ρ / (2z))²: the largest SE² that meets ρ
	logRatio float64
	z2       float64
	coverage bool
}

// NewRatioPrecisionSim returns the model. It panics unless
// 1 ≤ N1, N2 ≤ 2³¹ − 1, Rho > 1 and the fields of RatioPrecision are in
// range.
func NewRatioPrecisionSim(c RatioPrecisionSim) Model {
	_, _, z := c.parts()
	for _, n := range []int{c.N1, c.N2} {
		if n < 1 || n > math.MaxInt32 {
			panic(fmt.Sprintf("power: group size %d out of 1..2³¹ − 1", n))
		}
	}
	if !(c.Rho > 1) {
		panic(fmt.Sprintf("power: precision ratio %v must be above 1", c.Rho))
	}
	return &ratioPrecision{
		t1:       NewBinomialTable(c.N1, c.P1),
		t2:       NewBinomialTable(c.N2, c.P2),
		n1:       float64(c.N1),
		n2:       float64(c.N2),
		odds:     c.Measure == MeasureOddsRatio,
		varMax:   sq(math.Log(c.Rho) / (2 * z)),
		logRatio: math.Log(c.Ratio()),
		z2:       z * z,
		coverage: c.Coverage,
	}
}

// NewWorker returns the model itself: a replicate reads only its tables.
func (m *ratioPrecision) NewWorker() Worker { return m }

// Replicate draws the two counts and applies the interval.
func (m *ratioPrecision) Replicate(r *rand.Rand) bool {
	a := float64(m.t1.Draw(r))
	b := float64(m.t2.Draw(r))
	var est, v float64
	if m.odds {
		if a == 0 || b == 0 || a == m.n1 || b == m.n2 {
			return false
		}
		v = 1/a + 1/(m.n1-a) + 1/b + 1/(m.n2-b)
		est = math.Log(a * (m.n2 - b) / ((m.n1 - a) * b))
	} else {
		if a == 0 || b == 0 {
			return false
		}
		v = 1/a - 1/m.n1 + 1/b - 1/m.n2
		est = math.Log(a * m.n2 / (m.n1 * b))
	}
	if m.coverage {
		return sq(est-m.logRatio) <= m.z2*v
	}
	return v <= m.varMax
}

// DiagnosticPrecisionSim is the Monte-Carlo model of a study of a test's
// accuracy in N participants: D ~ Binomial(N, Prevalence) diseased, of
// whom TP ~ Binomial(D, Sensitivity) test positive, and of the N − D
// others TN ~ Binomial(N − D, Specificity) test negative. The sensitivity
// TP/D and the specificity TN/(N − D) each get the interval Interval. A
// replicate succeeds when both half-widths are at most Margin or, with
// Coverage, when both intervals cover. A replicate with no diseased (or
// no healthy) participant has no estimate and fails in both modes. The
// Wald interval at TP = D (or TP = 0) is a single point: it meets any
// margin and never covers, which the coverage mode shows.
type DiagnosticPrecisionSim struct {
	DiagnosticAccuracy
	// N is the number of participants, from 2 to 2³¹ − 1.
	N int
	// Margin is the half-width planned for both, positive.
	Margin float64
	// Interval is the interval for each proportion; 0 means
	// [WaldInterval], the interval of Buderer's (1996) formula.
	Interval IntervalMethod
	// Coverage makes a replicate succeed when both intervals cover.
	Coverage bool
}

type diagnosticPrecision struct {
	tab      *BinomialTable
	n        int
	se, sp   float64
	method   IntervalMethod
	z, alpha float64
	margin   float64
	coverage bool
}

// NewDiagnosticPrecisionSim returns the model. The number diseased is
// drawn from a [BinomialTable], the positives and negatives from
// [drawBinomial]; a replicate computes two intervals (four inverse
// incomplete beta functions for Clopper–Pearson). It panics unless
// 2 ≤ N ≤ 2³¹ − 1, Margin > 0, Interval is 0 or one of the three and the
// fields of DiagnosticAccuracy are in range.
func NewDiagnosticPrecisionSim(c DiagnosticPrecisionSim) Model {
	c.check()
	if c.N < 2 || c.N > math.MaxInt32 {
		panic(fmt.Sprintf("power: %d participants out of 2..2³¹ − 1", c.N))
	}
	checkPrecisionMargin(c.Margin)
	if c.Interval == 0 {
		c.Interval = WaldInterval
	}
	c.Interval.check()
	z, alpha := confidenceZ(c.Confidence)
	return &diagnosticPrecision{
		tab:      NewBinomialTable(c.N, c.Prevalence),
		n:        c.N,
		se:       c.Sensitivity,
		sp:       c.Specificity,
		method:   c.Interval,
		z:        z,
		alpha:    alpha,
		margin:   c.Margin,
		coverage: c.Coverage,
	}
}

// NewWorker returns the model itself: a replicate reads only its fields.
func (m *diagnosticPrecision) NewWorker() Worker { return m }

// Replicate draws D, then TP, then TN, in both modes.
func (m *diagnosticPrecision) Replicate(r *rand.Rand) bool {
	d := m.tab.Draw(r)
	tp := drawBinomial(r, d, m.se)
	tn := drawBinomial(r, m.n-d, m.sp)
	if d == 0 || d == m.n {
		return false
	}
	return m.part(tp, d, m.se) && m.part(tn, m.n-d, m.sp)
}

// part reports whether the interval of k successes among n meets the
// check: the margin, or the coverage of q.
func (m *diagnosticPrecision) part(k, n int, q float64) bool {
	x, nf := float64(k), float64(n)
	if m.coverage {
		lo, hi := m.method.limits(x, nf, m.z, m.alpha)
		return lo <= q && q <= hi
	}
	return m.method.halfWidth(x, nf, m.z, m.alpha) <= m.margin
}
