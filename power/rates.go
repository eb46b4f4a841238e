package power

import (
	"fmt"
	"math"
)

// TwoRates describes a cohort compared on event rates: an exposed (first)
// group and an unexposed (second) group, every participant followed for
// the same person-time, counting events. The counts per participant are
// Poisson, or negative binomial when Overdispersion is positive: with
// mean μ and variance μ + κμ².
//
// The expected events per participant are μ0 = λ0 t in the unexposed group
// and μ1 = RR λ0 t in the exposed group (λ0 = UnexposedRate,
// RR = RateRatio, t = PersonTime, κ = Overdispersion).
type TwoRates struct {
	// UnexposedRate λ0 is the event rate of the unexposed group, in events
	// per unit of person-time; positive and finite.
	UnexposedRate float64
	// RateRatio RR is the exposed group's rate over the unexposed group's;
	// positive and finite.
	RateRatio float64
	// PersonTime t is each participant's follow-up, in the units of the
	// rate; positive and finite.
	PersonTime float64
	// Overdispersion κ ≥ 0 (finite) is the negative-binomial dispersion:
	// a count of mean μ has variance μ + κμ². 0 means Poisson counts.
	Overdispersion float64
}

func (c TwoRates) check() {
	for _, x := range []float64{c.UnexposedRate, c.RateRatio, c.PersonTime} {
		if !(x > 0) || math.IsInf(x, 1) {
			panic(fmt.Sprintf("power: rate, rate ratio and person-time must be positive and finite, got %v, %v and %v",
				c.UnexposedRate, c.RateRatio, c.PersonTime))
		}
	}
	if !(c.Overdispersion >= 0) || math.IsInf(c.Overdispersion, 1) {
		panic(fmt.Sprintf("power: overdispersion must be non-negative and finite, got %v", c.Overdispersion))
	}
}

// unit returns the terms of the variance of the log rate ratio per
// participant: 1/μ1 + κ (exposed) and 1/μ0 + κ (unexposed). The expected
// events are inverted one factor at a time, so that a product λ0·t below
// the smallest float64 still gives a finite term whenever it can.
func (c TwoRates) unit() (v1, v0 float64) {
	inv0 := 1 / c.UnexposedRate / c.PersonTime
	return inv0/c.RateRatio + c.Overdispersion, inv0 + c.Overdispersion
}

// Variance returns the large-sample variance of the estimated log rate
// ratio, log(ȳ1/ȳ0), with n1 exposed and n2 unexposed participants:
//
//	V(n1, n2) = (1/μ1 + κ)/n1 + (1/μ0 + κ)/n2
//
// each term the delta-method variance of the log of a group's mean count,
// Var(ȳ)/μ² = (μ + κμ²)/(n μ²). For Poisson counts (κ = 0) it is
// 1/E1 + 1/E0, the inverses of the expected events of each group. The
// group sizes need not be whole numbers; they must be positive.
//
// References: Breslow NE, Day NE (1987). Statistical Methods in Cancer
// Research, vol. II: The Design and Analysis of Cohort Studies. IARC
// Scientific Publications 82, Lyon, chapter 7; Zhu H, Lakkis H (2014).
// Sample size calculation for comparing two negative binomial rates.
// Stat Med 33:376–387.
func (c TwoRates) Variance(n1, n2 float64) float64 {
	c.check()
	if !(n1 > 0 && n2 > 0) {
		panic("power: group sizes must be positive")
	}
	v1, v0 := c.unit()
	return v1/n1 + v0/n2
}

// N1 returns the unrounded size of the exposed group for the Wald test of
// the log rate ratio to reach the target power, with ratio·n1 unexposed
// participants:
//
//	n1 = (z_{1−α/s} + z_{power})² V / (ln RR)²
//	V  = (1/μ1 + κ) + (1/μ0 + κ)/ratio
//
// (s = sides). The same variance serves under the null and the
// alternative: this is the first of the variance choices of Zhu and
// Lakkis (2014), the Wald test whose standard error is estimated from
// each group's own rate; for κ = 0 it is the Poisson form of Breslow and
// Day (1987). The person-time of each group is n_g·t and its expected
// events n_g μ_g.
//
// It returns [ErrNothingToDetect] when RR = 1, and [ErrUnreachable] when
// the target is at most alpha/sides (no participant needed) or when the
// expected events are so small that n1 overflows.
//
// References: Breslow NE, Day NE (1987). Statistical Methods in Cancer
// Research, vol. II. IARC Scientific Publications 82, chapter 7; Zhu H,
// Lakkis H (2014). Sample size calculation for comparing two negative
// binomial rates. Stat Med 33:376–387.
func (c TwoRates) N1(ratio, alpha float64, sides int, power float64) (float64, error) {
	c.check()
	if !(ratio > 0) || math.IsInf(ratio, 1) {
		panic(fmt.Sprintf("power: ratio must be positive and finite, got %v", ratio))
	}
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	lr := math.Log(c.RateRatio)
	if lr == 0 {
		return math.NaN(), ErrNothingToDetect
	}
	if za+zb <= 0 {
		return math.NaN(), ErrUnreachable
	}
	v1, v0 := c.unit()
	n := sq(za+zb) * (v1 + v0/ratio) / (lr * lr)
	if math.IsInf(n, 1) {
		return math.NaN(), ErrUnreachable
	}
	return n, nil
}

// Power returns the power of the Wald test of the log rate ratio with n1
// exposed and n2 unexposed participants (any positive sizes, n2 need not
// be a multiple of n1):
//
//	power = Φ(|ln RR| / √V(n1, n2) − z_{1−α/s})
//
// with V from [TwoRates.Variance]. As for the proportions
// ([Method.Power]), it counts rejections in the direction of the true
// effect only; for a two-sided test the opposite tail,
// Φ(−|ln RR|/√V − z_{1−α/2}), adds at most alpha/2 and is left out. At
// RR = 1 it is alpha/sides.
//
// Power is continuous in RR and rises with it for RR > 1. Below 1 it
// rises as RR falls only down to [TwoRates.PeakRatio]: further down the
// exposed group expects so few events that the variance 1/μ1 outgrows
// (ln RR)², and power falls back towards alpha/sides as RR → 0, as the
// Wald test itself does.
func (c TwoRates) Power(n1, n2, alpha float64, sides int) float64 {
	za := ZAlpha(alpha, sides)
	v := c.Variance(n1, n2)
	return normCDF(math.Abs(math.Log(c.RateRatio))/math.Sqrt(v) - za)
}

// PeakRatio returns the rate ratio below 1 at which [TwoRates.Power] is
// highest with n1 exposed and n2 unexposed participants (RateRatio is
// ignored; the level does not matter). Power rises as RR falls from 1 to
// the peak and falls beyond it, so a search for the detectable ratio
// below 1 belongs in [PeakRatio, 1).
//
// With x = −ln RR the variance is a eˣ + b, a = 1/(n1 μ0),
// b = κ/n1 + (1/μ0 + κ)/n2, and x²/(a eˣ + b) is largest where
//
//	(x − 2) a eˣ = 2b,  that is  x = 2 + W(z),  z = 2b/(a e²)
//
// (W the principal branch of Lambert's function), solved with [FindRoot]
// on y − z e^(−y) over [0, ln(1 + z)], since W(z) ≤ ln(1 + z) (on
// y + ln y − ln z when z is beyond the float64 range). With κ = 0 and
// equal groups it is e^(−2.217) = 0.109. A peak below the smallest
// float64 is returned as 0.
//
// It returns [ErrNoConvergence] from the solver (not expected).
func (c TwoRates) PeakRatio(n1, n2 float64) (float64, error) {
	c.check()
	if !(n1 > 0 && n2 > 0) {
		panic("power: group sizes must be positive")
	}
	// b/a = n1/n2 + κ μ0 (1 + n1/n2), in logarithms when it overflows.
	k := c.Overdispersion
	q := n1 / n2
	if k > 0 {
		q += k * c.UnexposedRate * c.PersonTime * (1 + n1/n2)
	}
	logZ := math.Ln2 - 2 + math.Log(q)
	if math.IsInf(q, 1) {
		logZ = math.Ln2 - 2 + math.Log(k) + math.Log(c.UnexposedRate) + math.Log(c.PersonTime) + math.Log1p(n1/n2)
	}
	var y float64
	var err error
	if logZ < 600 {
		z := math.Exp(logZ)
		y, err = FindRoot(func(y float64) float64 { return y - z*math.Exp(-y) }, 0, math.Log1p(z), 1e-14)
	} else {
		y, err = FindRoot(func(y float64) float64 { return y + math.Log(y) - logZ }, logZ-math.Log(logZ), logZ, 1e-12)
	}
	if err != nil {
		return math.NaN(), err
	}
	return math.Exp(-2 - y), nil
}
