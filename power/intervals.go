package power

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mathext"
)

// This file sizes studies that estimate rather than test: one proportion
// by the Wald, Wilson or Clopper–Pearson interval, a ratio of two risks or
// odds on the log scale, a mean by the t interval, and a test's
// sensitivity and specificity (Buderer 1996). The margin is the
// half-width of the interval, (upper − lower)/2. [PrecisionN] (Cochran's
// n for the Wald interval, with the design effect and the finite
// population correction) lives in precision.go.

// MaxPrecisionN is the largest size the searches of this file consider,
// 10⁹: a size beyond it returns [ErrUnreachable]. Up to it the
// Clopper–Pearson limits (gonum's inverse incomplete beta function) agree
// with R's qbeta to better than 10⁻⁶ of the half-width.
const MaxPrecisionN = 1_000_000_000

// IntervalMethod is a confidence interval for one proportion.
type IntervalMethod int

// The intervals for one proportion, x successes among n. Each is defined
// for a real x in [0, n], so that a plan can evaluate it at the expected
// count x = n p; z = Φ⁻¹(1 − α/2) and α = 1 − confidence.
const (
	// WaldInterval is the normal-approximation interval
	//
	//	p̂ ∓ z √(p̂ (1 − p̂)/n),  p̂ = x/n,
	//
	// not clipped to [0, 1]. At x = 0 or x = n it is the single point p̂.
	//
	// References: Cochran WG (1977). Sampling Techniques, 3rd ed. Wiley,
	// chapter 4.
	WaldInterval IntervalMethod = iota + 1

	// WilsonInterval is the score interval
	//
	//	(x + z²/2 ∓ z √(x (n − x)/n + z²/4)) / (n + z²),
	//
	// of half-width z √(x (n − x)/n + z²/4) / (n + z²); its lower limit is
	// 0 at x = 0 and its upper limit 1 at x = n. At x = n p the half-width
	// falls strictly as n grows (its derivative in n has the sign of
	// p(1 − p)(z² − n)/2 − z²/4 < 0, as p(1 − p) ≤ ¼).
	//
	// References: Wilson EB (1927). Probable inference, the law of
	// succession, and statistical inference. J Am Stat Assoc 22:209–212.
	WilsonInterval

	// ClopperPearsonInterval is the exact interval in its beta-quantile
	// form, which extends it to a real x:
	//
	//	lower = B⁻¹(α/2; x, n − x + 1)      (0 when x = 0)
	//	upper = B⁻¹(1 − α/2; x + 1, n − x)  (1 when x = n)
	//
	// where B⁻¹(q; a, b) is the q-quantile of the Beta(a, b) distribution
	// (gonum's mathext.InvRegIncBeta). At a whole x these are the limits
	// that invert the two one-sided binomial tests.
	//
	// References: Clopper CJ, Pearson ES (1934). The use of confidence or
	// fiducial limits illustrated in the case of the binomial. Biometrika
	// 26:404–413.
	ClopperPearsonInterval
)

// String returns the interval's identifier as used in specifications.
func (m IntervalMethod) String() string {
	switch m {
	case WaldInterval:
		return "wald"
	case WilsonInterval:
		return "wilson"
	case ClopperPearsonInterval:
		return "clopper-pearson"
	}
	return fmt.Sprintf("IntervalMethod(%d)", int(m))
}

// ParseIntervalMethod returns the interval named s ("wald", "wilson" or
// "clopper-pearson") and whether it is one.
func ParseIntervalMethod(s string) (IntervalMethod, bool) {
	for _, m := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		if m.String() == s {
			return m, true
		}
	}
	return 0, false
}

func (m IntervalMethod) check() {
	if m < WaldInterval || m > ClopperPearsonInterval {
		panic(fmt.Sprintf("power: unknown interval method %d", int(m)))
	}
}

// confidenceZ returns z = Φ⁻¹(1 − α/2) and α = 1 − confidence, panicking
// unless the confidence is in (0, 1).
func confidenceZ(confidence float64) (z, alpha float64) {
	if !(confidence > 0 && confidence < 1) {
		panic(fmt.Sprintf("power: confidence %v out of (0, 1)", confidence))
	}
	alpha = 1 - confidence
	return ZAlpha(alpha, 2), alpha
}

// Limits returns the interval's limits at x successes among n trials (a
// real x, so that a plan can take the expected count n p). It panics
// unless n > 0 is finite, 0 ≤ x ≤ n, the confidence is in (0, 1) and m is
// one of the three intervals.
func (m IntervalMethod) Limits(x, n, confidence float64) (lower, upper float64) {
	m.check()
	checkCount(x, n)
	z, alpha := confidenceZ(confidence)
	return m.limits(x, n, z, alpha)
}

// HalfWidth returns the half-width (upper − lower)/2 of the interval at
// the expected count x = n p: for the Wald interval z √(p (1 − p)/n), for
// Wilson's z √(n p (1 − p) + z²/4) / (n + z²). It panics unless p is in
// (0, 1), n > 0 is finite and the confidence is in (0, 1).
func (m IntervalMethod) HalfWidth(p, n, confidence float64) float64 {
	m.check()
	checkP(p)
	checkCount(0, n)
	z, alpha := confidenceZ(confidence)
	return m.halfWidthAt(p, n, z, alpha)
}

// N returns the smallest whole n, from 1 to [MaxPrecisionN], at which the
// half-width at the expected count n p ([IntervalMethod.HalfWidth]) is at
// most margin.
//
// The half-width of the Wald and Wilson intervals falls strictly with n,
// and N returns the smallest such n exactly. That of Clopper–Pearson at a
// real x = n p is not proved monotone (it was strictly decreasing in every
// scan of the reference grid, intervals_make.R); for it N returns an n
// whose half-width is at most margin and such that none of the 32 whole
// numbers below it (down to 1) qualifies: the search gallops from Cochran's
// n (the Wald answer) to a bracket, bisects it, and then scans downward,
// restarting the 32 below any smaller n that qualifies.
//
// It returns [ErrUnreachable] when no n up to MaxPrecisionN is enough, and
// panics unless p is in (0, 1), margin > 0 and the confidence is in (0, 1).
func (m IntervalMethod) N(p, margin, confidence float64) (int, error) {
	m.check()
	checkP(p)
	checkPrecisionMargin(margin)
	z, alpha := confidenceZ(confidence)
	ok := func(n int) bool { return m.halfWidthAt(p, float64(n), z, alpha) <= margin }
	window := 0
	if m == ClopperPearsonInterval {
		window = 32
	}
	return smallestN(z*z*p*(1-p)/(margin*margin), 1, window, ok)
}

func checkP(p float64) {
	if !(p > 0 && p < 1) {
		panic(fmt.Sprintf("power: proportion %v out of (0, 1)", p))
	}
}

func checkPrecisionMargin(margin float64) {
	if !(margin > 0) {
		panic(fmt.Sprintf("power: margin %v must be positive", margin))
	}
}

func checkCount(x, n float64) {
	if !(n > 0) || math.IsInf(n, 1) || !(x >= 0 && x <= n) {
		panic(fmt.Sprintf("power: %v successes among %v trials out of range", x, n))
	}
}

// limits returns the interval at (x, n) with z and α precomputed.
func (m IntervalMethod) limits(x, n, z, alpha float64) (lower, upper float64) {
	switch m {
	case WaldInterval:
		p := x / n
		h := z * math.Sqrt(p*(1-p)/n)
		return p - h, p + h
	case WilsonInterval:
		d := n + z*z
		c := (x + z*z/2) / d
		h := wilsonHalf(x, n, z)
		lower, upper = c-h, c+h
		if x == 0 {
			lower = 0
		}
		if x == n {
			upper = 1
		}
		return lower, upper
	}
	return clopperPearson(x, n, alpha)
}

// wilsonHalf is the Wilson half-width z √(x (n − x)/n + z²/4) / (n + z²).
func wilsonHalf(x, n, z float64) float64 {
	return z * math.Sqrt(x*(n-x)/n+z*z/4) / (n + z*z)
}

// clopperPearson returns the Clopper–Pearson limits at a real x in [0, n].
func clopperPearson(x, n, alpha float64) (lower, upper float64) {
	upper = 1
	if x > 0 {
		lower = mathext.InvRegIncBeta(x, n-x+1, alpha/2)
	}
	if x < n {
		upper = mathext.InvRegIncBeta(x+1, n-x, 1-alpha/2)
	}
	return lower, upper
}

// halfWidth returns the half-width at a count x among n.
func (m IntervalMethod) halfWidth(x, n, z, alpha float64) float64 {
	switch m {
	case WaldInterval:
		p := x / n
		return z * math.Sqrt(p*(1-p)/n)
	case WilsonInterval:
		return wilsonHalf(x, n, z)
	}
	lo, hi := clopperPearson(x, n, alpha)
	return (hi - lo) / 2
}

// halfWidthAt returns the half-width at the expected count x = n p.
func (m IntervalMethod) halfWidthAt(p, n, z, alpha float64) float64 {
	switch m {
	case WaldInterval:
		return z * math.Sqrt(p*(1-p)/n)
	case WilsonInterval:
		return z * math.Sqrt(n*p*(1-p)+z*z/4) / (n + z*z)
	}
	return m.halfWidth(n*p, n, z, alpha)
}

// smallestN returns the smallest whole n in [lo, MaxPrecisionN] with
// ok(n), for an ok that is false and then true as n grows. It starts at
// ⌈guess⌉, gallops (steps doubling) down or up to a bracket and bisects
// it. With window > 0 it then scans the window whole numbers below the
// answer, and, whenever one qualifies, the window below that one: a
// safeguard for an ok that is not proved monotone. It returns
// [ErrUnreachable] when ok(MaxPrecisionN) is false.
func smallestN(guess float64, lo, window int, ok func(int) bool) (int, error) {
	g := lo
	if guess > float64(lo) {
		g = int(math.Min(math.Ceil(guess), MaxPrecisionN))
	}
	var bad, good int // ok(bad) is false (or bad = lo − 1), ok(good) is true
	if ok(g) {
		good = g
		for step := 1; ; step *= 2 {
			c := max(good-step, lo)
			if c == good {
				bad = lo - 1
				break
			}
			if !ok(c) {
				bad = c
				break
			}
			good = c
		}
	} else {
		bad = g
		for step := 1; ; step *= 2 {
			c := min(bad+step, MaxPrecisionN)
			if c == bad {
				return 0, ErrUnreachable
			}
			if ok(c) {
				good = c
				break
			}
			bad = c
		}
	}
	for good-bad > 1 {
		mid := bad + (good-bad)/2
		if ok(mid) {
			good = mid
		} else {
			bad = mid
		}
	}
	for c, stop := good-1, good-window; c >= lo && c >= stop; c-- {
		if ok(c) {
			good, stop = c, c-window
		}
	}
	return good, nil
}

// MeanHalfWidth returns the half-width of the t interval for a mean from
// n observations with standard deviation sd:
//
//	t_{1−α/2, n−1} · sd/√n,  α = 1 − confidence
//
// (the t quantile from [TUpperQuantile]). n may be a real number ≥ 2. It
// panics unless sd > 0, n ≥ 2 and the confidence is in (0, 1).
//
// References: Student (1908). The probable error of a mean. Biometrika
// 6:1–25.
func MeanHalfWidth(sd, n, confidence float64) float64 {
	checkMean(sd, confidence)
	if !(n >= 2) || math.IsInf(n, 1) {
		panic(fmt.Sprintf("power: %v observations: at least 2 needed", n))
	}
	_, alpha := confidenceZ(confidence)
	return TUpperQuantile(alpha/2, n-1) * sd / math.Sqrt(n)
}

// MeanPrecisionN returns the smallest whole n ≥ 2 at which the t interval
// for a mean is within ± margin ([MeanHalfWidth] ≤ margin). The half-width
// falls strictly with n (the quantile t_{1−α/2, n−1} falls and 1/√n
// falls), so the search from the normal answer z² sd²/margin² returns the
// smallest such n exactly. It returns [ErrUnreachable] beyond
// [MaxPrecisionN] and panics unless sd > 0, margin > 0 and the confidence
// is in (0, 1).
func MeanPrecisionN(sd, margin, confidence float64) (int, error) {
	checkMean(sd, confidence)
	checkPrecisionMargin(margin)
	z, alpha := confidenceZ(confidence)
	ok := func(n int) bool {
		return TUpperQuantile(alpha/2, float64(n-1))*sd/math.Sqrt(float64(n)) <= margin
	}
	return smallestN(sq(z*sd/margin), 2, 0, ok)
}

func checkMean(sd, confidence float64) {
	if !(sd > 0) || math.IsInf(sd, 1) {
		panic(fmt.Sprintf("power: standard deviation %v must be positive and finite", sd))
	}
	confidenceZ(confidence)
}

// RatioMeasure is the ratio estimated by [RatioPrecision].
type RatioMeasure int

// The ratios estimated on the log scale.
const (
	// MeasureRiskRatio is the ratio of the risks in a cohort, P1/P2, with
	//
	//	SE²(log RR̂) = (1 − p1)/(n1 p1) + (1 − p2)/(n2 p2).
	//
	// References: Katz D, Baptista J, Azen SP, Pike MC (1978). Obtaining
	// confidence intervals for the risk ratio in cohort studies.
	// Biometrics 34:469–474.
	MeasureRiskRatio RatioMeasure = iota + 1

	// MeasureOddsRatio is the odds ratio of exposure between cases and
	// controls, P1(1 − P2)/(P2(1 − P1)), with
	//
	//	SE²(log OR̂) = 1/(n1 p1 (1 − p1)) + 1/(n2 p2 (1 − p2)).
	//
	// References: Woolf B (1955). On estimating the relation between blood
	// group and disease. Ann Hum Genet 19:251–253.
	MeasureOddsRatio
)

// String returns the measure's identifier.
func (m RatioMeasure) String() string {
	switch m {
	case MeasureRiskRatio:
		return "risk-ratio"
	case MeasureOddsRatio:
		return "odds-ratio"
	}
	return fmt.Sprintf("RatioMeasure(%d)", int(m))
}

// RatioPrecision describes the estimation of a risk ratio (cohort) or an
// odds ratio (case-control) by the Wald interval on the log scale,
//
//	exp(log ratiô ∓ z SE),
//
// whose precision is stated as the ratio of its limits,
//
//	ρ = upper/lower = exp(2 z SE).
type RatioPrecision struct {
	// Measure is [MeasureRiskRatio] or [MeasureOddsRatio].
	Measure RatioMeasure
	// P1 is the risk among the exposed (risk ratio) or the share exposed
	// among the cases (odds ratio), in (0, 1).
	P1 float64
	// P2 is the risk among the unexposed (risk ratio) or the share exposed
	// among the controls (odds ratio), in (0, 1).
	P2 float64
	// Confidence is the confidence level, in (0, 1).
	Confidence float64
}

// parts returns V1 and V2, n1 and n2 times the two terms of SE², and z.
func (rp RatioPrecision) parts() (v1, v2, z float64) {
	if !(rp.P1 > 0 && rp.P1 < 1) || !(rp.P2 > 0 && rp.P2 < 1) {
		panic(fmt.Sprintf("power: proportions must be in (0, 1), got %v and %v", rp.P1, rp.P2))
	}
	z, _ = confidenceZ(rp.Confidence)
	switch rp.Measure {
	case MeasureRiskRatio:
		return (1 - rp.P1) / rp.P1, (1 - rp.P2) / rp.P2, z
	case MeasureOddsRatio:
		return 1 / (rp.P1 * (1 - rp.P1)), 1 / (rp.P2 * (1 - rp.P2)), z
	}
	panic(fmt.Sprintf("power: unknown ratio measure %d", int(rp.Measure)))
}

// Ratio returns the true ratio: P1/P2, or P1(1 − P2)/(P2(1 − P1)).
func (rp RatioPrecision) Ratio() float64 {
	rp.parts()
	if rp.Measure == MeasureRiskRatio {
		return rp.P1 / rp.P2
	}
	return OddsRatio(rp.P1, rp.P2)
}

// N1 returns the unrounded size of the first group (exposed, or cases)
// whose interval has precision ratio rho, with r times as many in the
// second group (n2 = r n1):
//
//	n1 = z² (V1 + V2/r) / (ln ρ / 2)²
//
// with V1 = (1 − p1)/p1, V2 = (1 − p2)/p2 for the risk ratio (Katz et al.
// 1978) and V1 = 1/(p1(1 − p1)), V2 = 1/(p2(1 − p2)) for the odds ratio
// (Woolf 1955). It panics unless rho > 1, r > 0 are finite and the fields
// are in range.
func (rp RatioPrecision) N1(rho, r float64) float64 {
	v1, v2, z := rp.parts()
	if !(rho > 1) || math.IsInf(rho, 1) {
		panic(fmt.Sprintf("power: precision ratio %v must be above 1 and finite", rho))
	}
	if !(r > 0) || math.IsInf(r, 1) {
		panic(fmt.Sprintf("power: allocation ratio %v must be positive and finite", r))
	}
	return z * z * (v1 + v2/r) / sq(math.Log(rho)/2)
}

// Rho returns the precision ratio upper/lower = exp(2 z √(V1/n1 + V2/n2))
// that n1 and n2 participants give (V1, V2 as in [RatioPrecision.N1]). It
// panics unless n1, n2 > 0 and the fields are in range.
func (rp RatioPrecision) Rho(n1, n2 float64) float64 {
	v1, v2, z := rp.parts()
	if !(n1 > 0 && n2 > 0) {
		panic(fmt.Sprintf("power: group sizes %v and %v must be positive", n1, n2))
	}
	return math.Exp(2 * z * math.Sqrt(v1/n1+v2/n2))
}

// DiagnosticAccuracy describes the estimation of a test's sensitivity and
// specificity in a sample of the population it will serve, where the
// diseased are a share Prevalence of those recruited.
type DiagnosticAccuracy struct {
	// Sensitivity and Specificity are the expected values, in (0, 1).
	Sensitivity, Specificity float64
	// Prevalence is the share of the sample with the disease, in (0, 1).
	Prevalence float64
	// Confidence is the confidence level, in (0, 1).
	Confidence float64
}

func (d DiagnosticAccuracy) check() (z float64) {
	for _, v := range []float64{d.Sensitivity, d.Specificity, d.Prevalence} {
		checkP(v)
	}
	z, _ = confidenceZ(d.Confidence)
	return z
}

// N returns the unrounded numbers of participants whose Wald intervals
// for the sensitivity and for the specificity have half-width margin:
//
//	n_sens = z² Se (1 − Se) / (margin² · prevalence)
//	n_spec = z² Sp (1 − Sp) / (margin² · (1 − prevalence))
//
// The study needs the larger of the two, rounded up. It panics unless
// margin > 0 and the fields are in range.
//
// References: Buderer NMF (1996). Statistical methodology: I.
// Incorporating the prevalence of disease into the sample size calculation
// for sensitivity and specificity. Acad Emerg Med 3:895–900.
func (d DiagnosticAccuracy) N(margin float64) (nSens, nSpec float64) {
	z := d.check()
	checkPrecisionMargin(margin)
	w := z * z / (margin * margin)
	return w * d.Sensitivity * (1 - d.Sensitivity) / d.Prevalence,
		w * d.Specificity * (1 - d.Specificity) / (1 - d.Prevalence)
}
