package power

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// Layout is how the observations of a mean comparison are arranged.
type Layout int

// Layouts of a mean comparison.
const (
	// TwoSample compares two independent groups of n1 and n2.
	TwoSample Layout = iota
	// Paired compares within n1 pairs (or before and after in n1
	// participants): a one-sample test on the differences, n1 − 1 degrees
	// of freedom.
	Paired
	// Crossover is a two-period AB/BA crossover with n1 and n2 participants
	// in the two sequences, analysed by a two-sample test comparing the
	// period differences between sequences, n1 + n2 − 2 degrees of freedom
	// (Senn S, 2002. Cross-over Trials in Clinical Research, 2nd ed. Wiley,
	// chapter 3).
	Crossover
)

// Hypothesis is the question a comparison answers.
type Hypothesis int

// Hypotheses.
const (
	// Superiority tests no difference.
	Superiority Hypothesis = iota
	// NonInferiority tests the one-sided null hypothesis that the
	// difference lies at or beyond the boundary Bound on the worse side.
	NonInferiority
	// Equivalence tests, by two one-sided tests, that the difference lies
	// within ±Bound (Bound > 0).
	Equivalence
)

// MeanComparison describes the planned test of a difference in means.
type MeanComparison struct {
	// Diff is the true difference, first group minus second (Paired: the
	// mean within-pair difference; Crossover: the treatment effect).
	Diff float64
	// SD1 and SD2 are the standard deviations of one observation in each
	// group. For Paired and Crossover, SD1 is the standard deviation of a
	// participant's difference and SD2 is ignored. SD2 = 0 means SD1.
	SD1, SD2 float64
	Layout   Layout
	// Welch uses the Welch–Satterthwaite degrees of freedom (TwoSample only).
	Welch bool
	// Alpha is the level of the test (each one-sided test for
	// NonInferiority and Equivalence).
	Alpha float64
	// Sides is 1 or 2 (Superiority only; the others are one-sided).
	Sides      int
	Hypothesis Hypothesis
	// Bound is the null boundary of the difference for NonInferiority
	// (negative when higher is better, positive when lower is better) and
	// the equivalence margin (positive) for Equivalence.
	Bound float64
	// DF, when positive, replaces the degrees of freedom of the t test: a
	// cluster-level analysis of k1 + k2 clusters has k1 + k2 − 2.
	DF float64
}

// MeansMethod is a method for the power of a test of means.
type MeansMethod int

// Methods for means.
const (
	// Z is the normal approximation: power = Φ(|Δ|/se − z_α), one tail.
	//
	// References: Chow SC, Shao J, Wang H (2008). Sample Size Calculations
	// in Clinical Research, 2nd ed. Chapman & Hall, chapter 3.
	Z MeansMethod = iota + 1
	// T is the exact power of the t test from the noncentral t
	// distribution, counting both tails of a two-sided test:
	//
	//	power = P(T' > t_c) + P(T' < −t_c),  T' ~ t(df, ncp = Δ/se)
	//
	// and, for two one-sided tests of equivalence, the exact joint
	// probability by integration over the sample standard deviation
	// (equivalent to Owen's Q).
	//
	// References: Owen DB (1965). A special case of a bivariate
	// non-central t-distribution. Biometrika 52:437–446; Schuirmann DJ
	// (1987). A comparison of the two one-sided tests procedure and the
	// power approach for assessing the equivalence of average
	// bioavailability. J Pharmacokinet Biopharm 15:657–680.
	T
)

// String returns the method's identifier.
func (m MeansMethod) String() string {
	switch m {
	case Z:
		return "z"
	case T:
		return "t"
	}
	return fmt.Sprintf("MeansMethod(%d)", int(m))
}

func (mc MeanComparison) sd2() float64 {
	if mc.SD2 == 0 {
		return mc.SD1
	}
	return mc.SD2
}

// seDF returns the standard error of the estimated difference and the
// degrees of freedom of its t test at sizes n1 and n2.
func (mc MeanComparison) seDF(n1, n2 float64) (se, df float64) {
	switch mc.Layout {
	case Paired:
		return mc.SD1 / math.Sqrt(n1), n1 - 1
	case Crossover:
		return mc.SD1 / 2 * math.Sqrt(1/n1+1/n2), n1 + n2 - 2
	}
	v1, v2 := mc.SD1*mc.SD1/n1, mc.sd2()*mc.sd2()/n2
	se = math.Sqrt(v1 + v2)
	if mc.Welch {
		// Welch–Satterthwaite with the true variances (an approximation to
		// the distribution of Welch's statistic).
		return se, (v1 + v2) * (v1 + v2) / (v1*v1/(n1-1) + v2*v2/(n2-1))
	}
	return se, n1 + n2 - 2
}

func (mc MeanComparison) check() {
	if !(mc.SD1 > 0) || mc.SD2 < 0 {
		panic("power: standard deviations must be positive")
	}
	if mc.Hypothesis == Equivalence && !(mc.Bound > 0) {
		panic("power: the equivalence margin must be positive")
	}
}

// Power returns the power at sizes n1 and n2 (Paired: n1 pairs, n2
// ignored).
func (m MeansMethod) Power(mc MeanComparison, n1, n2 float64) float64 {
	mc.check()
	if mc.Layout == Paired {
		n2 = n1
	}
	se, df := mc.seDF(n1, n2)
	if mc.DF > 0 {
		df = mc.DF
	}
	if !(df > 0) {
		panic("power: too few observations for a t test")
	}
	switch mc.Hypothesis {
	case NonInferiority:
		// Reject when the estimate is far enough from the boundary on the
		// better side.
		shift := mc.Diff - mc.Bound
		if mc.Bound > 0 {
			shift = -shift
		}
		return clamp01(m.oneSided(shift/se, df, mc.Alpha))
	case Equivalence:
		if m == T {
			return tostExact(mc.Diff, mc.Bound, se, df, mc.Alpha)
		}
		za := ZAlpha(mc.Alpha, 1)
		p := normCDF((mc.Bound-mc.Diff)/se-za) + normCDF((mc.Bound+mc.Diff)/se-za) - 1
		return math.Max(0, p)
	}
	ncp := math.Abs(mc.Diff) / se
	if m == Z {
		return normCDF(ncp - ZAlpha(mc.Alpha, mc.Sides))
	}
	return TTestPower(ncp, df, mc.Alpha, mc.Sides)
}

// TTestPower returns the exact power of a t test with df degrees of freedom
// whose statistic has noncentrality ncp ≥ 0, at level alpha with sides
// tails, counting both tails of a two-sided test:
//
//	power = P(T' > t_c) + P(T' < −t_c),  T' ~ t(df, ncp)
//
// References: Lenth RV (1989). Algorithm AS 243: cumulative distribution
// function of the non-central t distribution. Appl Stat 38:185–189 (as
// implemented by gonum's distuv.NoncentralT).
func TTestPower(ncp, df, alpha float64, sides int) float64 {
	if sides == 1 {
		return T.oneSided(ncp, df, alpha)
	}
	c := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(1 - alpha/2)
	return clamp01(nctUpper(ncp, df, c) + nctLower(ncp, df, -c))
}

// oneSided returns the power of a one-sided test with noncentrality ncp.
func (m MeansMethod) oneSided(ncp, df, alpha float64) float64 {
	if m == Z {
		return normCDF(ncp - ZAlpha(alpha, 1))
	}
	c := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(1 - alpha)
	return clamp01(nctUpper(ncp, df, c))
}

// largeNCP is where gonum's noncentral t switches to a normal
// approximation that returns the wrong tail for negative arguments (seen
// above about 38.6); beyond it the tails are integrated directly.
const largeNCP = 30

// nctUpper returns P(T' > c) for T' ~ t(df, ncp).
func nctUpper(ncp, df, c float64) float64 {
	if math.Abs(ncp) > largeNCP {
		return nctIntegral(func(w float64) float64 { return normCDF(ncp - c*w) }, df)
	}
	return 1 - distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(c)
}

// nctLower returns P(T' < c) for T' ~ t(df, ncp).
func nctLower(ncp, df, c float64) float64 {
	if math.Abs(ncp) > largeNCP {
		return nctIntegral(func(w float64) float64 { return normCDF(c*w - ncp) }, df)
	}
	return distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(c)
}

// nctIntegral returns E[g(√(U/df))] for U ~ χ²(df): with T' = (Z + ncp)/W,
// W = √(U/df), P(T' > c) = E[Φ(ncp − cW)] and P(T' < c) = E[Φ(cW − ncp)].
func nctIntegral(g func(w float64) float64, df float64) float64 {
	return chiIntegral(df, math.Inf(1), func(u float64) float64 { return g(math.Sqrt(u / df)) })
}

// chiIntegral returns ∫ f(u) dχ²(df)(u) over 0 < u < upper. It integrates
// in s = √u, where the density 2s f_χ²(s²) has no singularity at zero
// (df = 1), by composite Gauss–Legendre over 64 panels of 16 nodes between
// the 1e-16 and 1 − 1e-16 quantiles.
func chiIntegral(df, upper float64, f func(u float64) float64) float64 {
	chi := distuv.ChiSquared{K: df}
	lo, hi := chi.Quantile(1e-16), chi.Quantile(1-1e-16)
	if math.IsInf(hi, 0) || math.IsNaN(hi) {
		hi = df + 40*math.Sqrt(2*df) + 100
	}
	hi = math.Min(hi, upper)
	if !(hi > lo) {
		return 0
	}
	g := func(s float64) float64 {
		u := s * s
		return f(u) * 2 * s * chi.Prob(u)
	}
	const panels = 64
	a, b := math.Sqrt(lo), math.Sqrt(hi)
	h := (b - a) / panels
	sum := 0.0
	for i := 0; i < panels; i++ {
		x := a + float64(i)*h
		sum += quad.Fixed(g, x, x+h, 16, quad.Legendre{}, 0)
	}
	return sum
}

func clamp01(p float64) float64 { return math.Min(1, math.Max(0, p)) }

// tostExact is the exact power of two one-sided t tests at level alpha for
// the margin ±bound: both reject when |d̂| + t_c ŝe < bound. With
// u = df ŝe²/se² ~ χ²(df),
//
//	power = ∫ [Φ((bound − t_c se √(u/df) − Δ)/se) − Φ((−bound + t_c se √(u/df) − Δ)/se)] f_χ²(u) du
//
// over 0 < u < df (bound/(t_c se))². This is Owen's Q written as one
// integral (Owen 1965).
func tostExact(diff, bound, se, df, alpha float64) float64 {
	c := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(1 - alpha)
	umax := df * sq(bound/(c*se))
	p := chiIntegral(df, umax, func(u float64) float64 {
		w := c * se * math.Sqrt(u/df)
		return math.Max(0, normCDF((bound-w-diff)/se)-normCDF((-bound+w-diff)/se))
	})
	return clamp01(p)
}

// N returns the unrounded size of the first group (Paired: the number of
// pairs) for the target power; the second group has r times as many. It
// solves Power = target by root finding from the normal-approximation
// answer, and returns [ErrNothingToDetect] for a superiority test of no
// difference and [ErrUnreachable] when the true difference is not on the
// alternative side (non-inferiority) or not inside the margin
// (equivalence).
func (m MeansMethod) N(mc MeanComparison, r, power float64) (float64, error) {
	mc.check()
	switch mc.Hypothesis {
	case Superiority:
		if mc.Diff == 0 {
			return math.NaN(), ErrNothingToDetect
		}
	case NonInferiority:
		if (mc.Bound <= 0 && mc.Diff <= mc.Bound) || (mc.Bound > 0 && mc.Diff >= mc.Bound) {
			return math.NaN(), ErrUnreachable
		}
	case Equivalence:
		if math.Abs(mc.Diff) >= mc.Bound {
			return math.NaN(), ErrUnreachable
		}
	}
	if mc.Layout == Paired {
		r = 1
	}
	// The smallest size with at least one degree of freedom.
	lo := 3 / (1 + r)
	if mc.Layout == Paired {
		lo = 2
	}
	if mc.Welch {
		lo = math.Max(lo, 1.0001*math.Max(1, 1/r))
	}
	f := func(n float64) float64 { return m.Power(mc, n, r*n) - power }
	if f(lo) >= 0 {
		return lo, nil
	}
	hi := 2 * lo
	for f(hi) < 0 {
		lo = hi
		hi *= 2
		if hi > 1e12 {
			return math.NaN(), ErrUnreachable
		}
	}
	return FindRoot(f, lo, hi, 1e-10*hi)
}

// DetectableDiff returns the smallest true difference, below zero
// (dir < 0) or above it (dir > 0), that a superiority test detects with the
// target power at sizes n1 and n2; mc.Diff is ignored.
func (m MeansMethod) DetectableDiff(mc MeanComparison, n1, n2, power float64, dir int) (float64, error) {
	if mc.Hypothesis != Superiority {
		panic("power: DetectableDiff serves superiority tests")
	}
	if mc.Layout == Paired {
		n2 = n1
	}
	se, _ := mc.seDF(n1, n2)
	sign := 1.0
	if dir < 0 {
		sign = -1
	}
	f := func(d float64) float64 {
		c := mc
		c.Diff = sign * d
		return m.Power(c, n1, n2) - power
	}
	hi := se
	for f(hi) < 0 {
		hi *= 2
		if hi > 1e6*se {
			return math.NaN(), ErrUnreachable
		}
	}
	d, err := FindRoot(f, 0, hi, 1e-12*hi)
	return sign * d, err
}
