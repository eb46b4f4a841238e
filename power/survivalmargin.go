package power

import (
	"fmt"
	"math"
)

// hrMarginSlack is how close to a hazard-ratio margin, on the log scale, a
// true hazard ratio counts as at the margin: decimal inputs such as a
// margin of 1.3 and a hazard ratio of 1.3 computed as 0.13/0.1 differ by
// about 1e-16 in ln, and would otherwise ask for some 1e33 events. It plays
// the part of marginSlack (margin.go) on the log-hazard-ratio scale.
const hrMarginSlack = 1e-12

// marginOnly panics unless m is Schoenfeld, the one events method with a
// margin form.
func (m EventsMethod) marginOnly() {
	if m != Schoenfeld {
		panic(fmt.Sprintf("power: %v has no hazard-ratio margin form; use Schoenfeld", m))
	}
}

// checkHRMargin panics unless margin is positive, finite and not 1.
func checkHRMargin(margin float64) {
	if !(margin > 0) || math.IsInf(margin, 1) || margin == 1 {
		panic(fmt.Sprintf("power: hazard-ratio margin must be positive, finite and not 1, got %v", margin))
	}
}

// checkEquivalenceHRMargin panics unless margin is finite and above 1.
func checkEquivalenceHRMargin(margin float64) {
	if !(margin > 1) || math.IsInf(margin, 1) {
		panic(fmt.Sprintf("power: hazard-ratio equivalence margin must be above 1 and finite, got %v", margin))
	}
}

// checkHREvents panics unless d is non-negative.
func checkHREvents(d float64) {
	if !(d >= 0) {
		panic(fmt.Sprintf("power: events must be non-negative, got %v", d))
	}
}

// hrMarginSide returns s = +1 when the margin M > 1 (a lower hazard is
// better: the alternative is HR < M) and −1 when M < 1 (a higher hazard is
// better: the alternative is HR > M). The distance s·(ln M − ln hr) is
// positive exactly when hr is on the alternative side.
func hrMarginSide(margin float64) float64 {
	if margin > 1 {
		return 1
	}
	return -1
}

// hrAllocation returns π1 π2 = r/(1 + r)², the product of the shares of the
// two groups with r = n2/n1.
func hrAllocation(r float64) float64 { return r / sq(1+r) }

// NonInferiorityEvents returns the unrounded number of events for a
// non-inferiority log-rank (or Cox score) test of the hazard ratio
// HR = λ1/λ2 (first group's hazard over the second's) against the margin
// M, with allocation r = n2/n1, one-sided level alpha and the target
// power:
//
//	D = (z_α + z_β)² / (π1 π2 (ln hr − ln M)²),  π1 = 1/(1+r),  π2 = r/(1+r)
//
// with z_α = [ZAlpha](alpha, 1) and z_β = [ZPower](power). This is
// Schoenfeld's formula (1983, eq. 1) with the null log hazard ratio moved
// from 0 to ln M. The margin sets the side: M > 1 means a lower hazard is
// better, H0: HR ≥ M against HR < M; M < 1 means a higher hazard is better,
// H0: HR ≤ M against HR > M. A true hr of 1 (the usual assumption) is
// allowed.
//
// It returns [ErrUnreachable] when hr is not strictly on the alternative
// side of M (within 1e-12 on the log scale, for decimal rounding noise) or
// when z_α + z_β ≤ 0 (a target power at or below alpha). Only [Schoenfeld]
// has a margin form: for any other method it panics. It also panics if hr
// or r is not positive and finite, M is not positive and finite or is 1,
// or alpha or power is not in (0, 1).
//
// References: Schoenfeld DA (1983). Sample-size formula for the
// proportional-hazards regression model. Biometrics 39:499–503 (eq. 1).
func (m EventsMethod) NonInferiorityEvents(hr, margin, r, alpha, power float64) (float64, error) {
	m.marginOnly()
	checkHR(hr, r)
	checkHRMargin(margin)
	za, zb := ZAlpha(alpha, 1), ZPower(power)
	e := hrMarginSide(margin) * (math.Log(margin) - math.Log(hr))
	if !(e > hrMarginSlack) || za+zb <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return sq(za+zb) / (hrAllocation(r) * e * e), nil
}

// NonInferiorityEventsPower returns the power of the non-inferiority test
// of [EventsMethod.NonInferiorityEvents] with d expected events:
//
//	power = Φ(√(d π1 π2) · s · (ln M − ln hr) − z_α)
//
// with s = +1 when M > 1 and −1 when M < 1, z_α = [ZAlpha](alpha, 1). Only
// the tail toward the alternative counts, so at the margin the power is
// alpha and beyond it less (there is no mirrored alternative). It panics
// as NonInferiorityEvents does, and if d is negative or NaN.
//
// References: Schoenfeld DA (1983). Sample-size formula for the
// proportional-hazards regression model. Biometrics 39:499–503 (eq. 1).
func (m EventsMethod) NonInferiorityEventsPower(hr, margin, r, alpha, d float64) float64 {
	m.marginOnly()
	checkHR(hr, r)
	checkHRMargin(margin)
	checkHREvents(d)
	za := ZAlpha(alpha, 1)
	e := hrMarginSide(margin) * (math.Log(margin) - math.Log(hr))
	return normCDF(math.Sqrt(d*hrAllocation(r))*e - za)
}

// EquivalenceEventsPower returns the power of two one-sided log-rank
// tests, each at level alpha, that the hazard ratio lies in the
// equivalence interval (1/M, M), M > 1, with d expected events and
// allocation r = n2/n1:
//
//	power = max(0, Φ(√(d π1 π2)(ln M − ln hr) − z_α) + Φ(√(d π1 π2)(ln M + ln hr) − z_α) − 1)
//
// with z_α = [ZAlpha](alpha, 1); it is computed as 1 − Φ(−a) − Φ(−b) for
// the two arguments a and b above, which keeps its accuracy near 1. Each
// one-sided test uses Schoenfeld's normal approximation of the log-rank
// statistic with the null log hazard ratio at ±ln M.
//
// Only [Schoenfeld] has a margin form: for any other method it panics.
// It also panics if hr or r is not positive and finite, M is not above 1
// and finite, alpha is not in (0, 1), or d is negative or NaN.
//
// References: Schoenfeld DA (1983). Sample-size formula for the
// proportional-hazards regression model. Biometrics 39:499–503 (eq. 1).
// Schuirmann DJ (1987). A comparison of the two one-sided tests procedure
// and the power approach for assessing the equivalence of average
// bioavailability. J Pharmacokinet Biopharm 15:657–680.
func (m EventsMethod) EquivalenceEventsPower(hr, margin, r, alpha, d float64) float64 {
	m.marginOnly()
	checkHR(hr, r)
	checkEquivalenceHRMargin(margin)
	checkHREvents(d)
	return equivalenceHRPower(math.Log(hr), math.Log(margin), hrAllocation(r), ZAlpha(alpha, 1), d)
}

// equivalenceHRPower is the power of [EventsMethod.EquivalenceEventsPower]
// with x = ln hr, l = ln M, k = π1 π2 and za = z_α.
func equivalenceHRPower(x, l, k, za, d float64) float64 {
	s := math.Sqrt(d * k)
	return tost(s*(l-x)-za, s*(l+x)-za)
}

// EquivalenceEvents returns the unrounded number of events at which the
// two one-sided tests of [EventsMethod.EquivalenceEventsPower] reach the
// target power, for the equivalence interval (1/M, M), M > 1. For hr
// inside the interval the power rises with d from max(0, 2α − 1) at d = 0
// toward 1, so the root is unique; it is found with [FindRoot] on a
// bracket [0, D] whose upper end doubles, from the value at hr = 1, until
// the power there reaches the target. At hr = 1 the two tests have the same
// margin distance and
//
//	D = (z_α + z_{(1+power)/2})² / (π1 π2 (ln M)²)
//
// It returns [ErrUnreachable] when hr is not strictly inside (1/M, M)
// (within 1e-12 on the log scale, for decimal rounding noise) or the
// target is at or below the power at d = 0. Only [Schoenfeld] has a margin
// form: for any other method it panics. It also panics if hr or r is not
// positive and finite, M is not above 1 and finite, or alpha or power is
// not in (0, 1).
//
// References: Schoenfeld DA (1983). Sample-size formula for the
// proportional-hazards regression model. Biometrics 39:499–503 (eq. 1).
// Schuirmann DJ (1987). A comparison of the two one-sided tests procedure
// and the power approach for assessing the equivalence of average
// bioavailability. J Pharmacokinet Biopharm 15:657–680.
func (m EventsMethod) EquivalenceEvents(hr, margin, r, alpha, power float64) (float64, error) {
	m.marginOnly()
	checkHR(hr, r)
	checkEquivalenceHRMargin(margin)
	za := ZAlpha(alpha, 1)
	ZPower(power) // panics if power is not in (0, 1)
	x, l, k := math.Log(hr), math.Log(margin), hrAllocation(r)
	if !(math.Abs(x) < l-hrMarginSlack) {
		return math.NaN(), ErrUnreachable
	}
	f := func(d float64) float64 { return equivalenceHRPower(x, l, k, za, d) - power }
	if !(f(0) < 0) {
		return math.NaN(), ErrUnreachable
	}
	// Start from the answer at hr = 1 (z_α + z_{(1+power)/2} > 0 here,
	// since power > 2α − 1), or from 1 event should that underflow.
	hi := math.Max(1, sq(za+ZPower((1+power)/2))/(k*l*l))
	lo := 0.0
	for f(hi) < 0 {
		lo, hi = hi, 2*hi
		if math.IsInf(hi, 1) {
			return math.NaN(), ErrUnreachable
		}
	}
	d, err := FindRoot(f, lo, hi, 1e-13*hi)
	if err != nil {
		return math.NaN(), err
	}
	return d, nil
}
