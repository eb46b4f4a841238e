package power

import (
	"fmt"
	"math"
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
//	power = P(T' > t_c) + P(T' < −t_c),  T' ~ t(df, ncp),  t_c = t_{1−α/sides}(df)
//
// with the critical value from [TUpperQuantile] and both tails from
// [TUpper] (the lower one as P(−T' > t_c), −T' ~ t(df, −ncp)), each from
// the tail itself, so that it holds for alpha down to [MinAlpha] and below.
//
// References: Owen DB (1965). A special case of a bivariate non-central
// t-distribution. Biometrika 52:437–446 (the noncentral t as a mixture of
// normals over the sample standard deviation).
func TTestPower(ncp, df, alpha float64, sides int) float64 {
	if sides == 1 {
		return T.oneSided(ncp, df, alpha)
	}
	c := TUpperQuantile(alpha/2, df)
	return clamp01(TUpper(c, df, ncp) + TUpper(c, df, -ncp))
}

// oneSided returns the power of a one-sided test with noncentrality ncp.
func (m MeansMethod) oneSided(ncp, df, alpha float64) float64 {
	if m == Z {
		return normCDF(ncp - ZAlpha(alpha, 1))
	}
	return clamp01(TUpper(TUpperQuantile(alpha, df), df, ncp))
}

func clamp01(p float64) float64 { return math.Min(1, math.Max(0, p)) }

// tostExact is the exact power of two one-sided t tests at level alpha for
// the margin ±bound: both reject when |d̂| + t_c ŝe < bound. With
// W = ŝe/se, df W² ~ χ²(df), and z = ln W,
//
//	power = ∫ [Φ(b₁ − t_c W) − Φ(t_c W − b₂)] dF(W),  b₁ = (bound − Δ)/se,  b₂ = (bound + Δ)/se,
//
// over W < bound/(t_c se), where the bracket is positive. This is Owen's Q
// written as one integral (Owen 1965). The integrand is log-concave in z
// (a normal probability of an interval whose ends move linearly with W),
// and is summed as in [TUpper].
func tostExact(diff, bound, se, df, alpha float64) float64 {
	c := TUpperQuantile(alpha, df)
	f := tostIntegrand{b1: (bound - diff) / se, b2: (bound + diff) / se, c: c, nu: df, k: logChiMode(df)}
	hi := math.Log(bound / (c * se))
	if math.IsInf(hi, -1) || math.IsNaN(hi) {
		return 0
	}
	top, sum := integrateLogConcave(&f, 0, math.Min(1, 1/math.Sqrt(2*df)), hi, false)
	return clamp01(math.Exp(top) * sum)
}

// tostIntegrand is ln of D(e^z) h_ν(z), the integrand of tostExact, with
// D(w) = Φ(x₁) − Φ(x₂), x₁ = b₁ − c w > x₂ = c w − b₂.
type tostIntegrand struct{ b1, b2, c, nu, k float64 }

// logD returns ln D(w) and ln of D's slope in x, φ(x₁) + φ(x₂), less
// ln D, each difference of tails taken on the side where it is small.
func (f *tostIntegrand) logD(w float64) (ld, lslope float64) {
	x1, x2 := f.b1-f.c*w, f.c*w-f.b2
	switch {
	case !(x1 > x2):
		return math.Inf(-1), math.Inf(1)
	case x2 >= 0: // Q(x₂) − Q(x₁)
		l2, _ := logNormUpper(x2)
		l1, _ := logNormUpper(x1)
		ld = l2 + math.Log(-math.Expm1(l1-l2))
	case x1 <= 0: // Q(−x₁) − Q(−x₂)
		l1, _ := logNormUpper(-x1)
		l2, _ := logNormUpper(-x2)
		ld = l1 + math.Log(-math.Expm1(l2-l1))
	default:
		ld = math.Log1p(-normUpper(x1) - normUpper(-x2))
	}
	phi := math.Exp(-x1*x1/2-logSqrt2Pi-ld) + math.Exp(-x2*x2/2-logSqrt2Pi-ld)
	return ld, math.Log(phi)
}

func (f *tostIntegrand) logf(z float64) (lf, slope float64) {
	w := math.Exp(z)
	ld, ls := f.logD(w)
	return f.k - f.nu*expm1mx2(z) + ld, -f.nu*math.Expm1(2*z) - f.c*w*math.Exp(ls)
}

func (f *tostIntegrand) scaled(z, top float64) float64 {
	ld, _ := f.logD(math.Exp(z))
	return math.Exp(f.k - f.nu*expm1mx2(z) + ld - top)
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
	if m == T {
		// Bracket the root next to the normal-approximation answer, which
		// costs no t power, instead of doubling up from lo.
		if nz, err := Z.N(mc, r, power); err == nil && nz > hi && nz < 1e12 {
			if f(nz) >= 0 {
				hi = nz
			} else {
				lo, hi = nz, 1.1*nz+2
			}
		}
	}
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
