package power

import (
	"fmt"
	"math"
)

// This file holds the closed forms for logistic regression on one
// continuous exposure, and the inflation of a sample size for the
// adjustment for other covariates. The regression simulation that checks
// them is in regsim.go.

// VarianceInflation returns the factor by which adjusting for other
// covariates multiplies the sample size of a test of one exposure:
//
//	n_adjusted = n / (1 − R²)
//
// where R² is the squared multiple correlation of the exposure regressed
// on the other covariates. For a linear model it is exact (the variance of
// the exposure's coefficient is σ²/(n Var(X) (1 − R²))); for logistic
// regression it is the large-sample approximation proposed by Hsieh, Bloch
// and Larsen. It panics unless 0 ≤ r2 < 1.
//
// References: Hsieh FY, Bloch DA, Larsen MD (1998). A simple method of
// sample size calculation for linear and logistic regression. Stat Med
// 17:1623–1634 (section 2).
func VarianceInflation(r2 float64) float64 {
	if !(r2 >= 0 && r2 < 1) {
		panic(fmt.Sprintf("power: squared multiple correlation %v out of [0, 1)", r2))
	}
	return 1 / (1 - r2)
}

// checkLogistic panics unless the event rate is in (0, 1) and the log odds
// ratio is finite.
func checkLogistic(eventRate, logOR float64) {
	if !(eventRate > 0 && eventRate < 1) {
		panic(fmt.Sprintf("power: event rate %v out of (0, 1)", eventRate))
	}
	if math.IsNaN(logOR) || math.IsInf(logOR, 0) {
		panic(fmt.Sprintf("power: log odds ratio %v is not finite", logOR))
	}
}

// HsiehN returns the unrounded number of participants for a logistic
// regression of a binary outcome on one normally distributed exposure,
// standardised so that logOR (β) is the log odds ratio per standard
// deviation, with event rate eventRate (P) at the mean of the exposure,
// tested at level alpha with sides tails:
//
//	n = (z_{1−α/sides} + z_power)² / (P (1 − P) β²)
//
// Adjustment for other covariates is the caller's: multiply by
// [VarianceInflation]. It returns [ErrNothingToDetect] when β = 0 and
// [ErrUnreachable] when z_{1−α/sides} + z_power ≤ 0 (a target power at or
// below the one-sided level). It panics unless eventRate is in (0, 1),
// logOR is finite, and alpha, sides and power are valid.
//
// References: Hsieh FY, Bloch DA, Larsen MD (1998). A simple method of
// sample size calculation for linear and logistic regression. Stat Med
// 17:1623–1634, equation (1); after Hsieh FY (1989). Sample size tables
// for logistic regression. Stat Med 8:795–802.
func HsiehN(eventRate, logOR, alpha float64, sides int, power float64) (float64, error) {
	checkLogistic(eventRate, logOR)
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	if logOR == 0 {
		return math.NaN(), ErrNothingToDetect
	}
	if za+zb <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return sq(za+zb) / (eventRate * (1 - eventRate) * logOR * logOR), nil
}

// HsiehPower returns the power of [HsiehN]'s design with n participants,
// the formula solved for z_power:
//
//	power = Φ(√(n P (1 − P)) |β| − z_{1−α/sides})
//
// As in [Method.Power], it counts rejections in the direction of the true
// effect only; with β = 0 it is Φ(−z_{1−α/sides}). For an adjusted
// analysis pass n (1 − R²). It panics unless n > 0 and the other inputs
// are valid as for HsiehN.
//
// References: Hsieh FY, Bloch DA, Larsen MD (1998). Stat Med
// 17:1623–1634, equation (1).
func HsiehPower(n, eventRate, logOR, alpha float64, sides int) float64 {
	checkLogistic(eventRate, logOR)
	if !(n > 0) {
		panic("power: the number of participants must be positive")
	}
	za := ZAlpha(alpha, sides)
	return normCDF(math.Sqrt(n*eventRate*(1-eventRate))*math.Abs(logOR) - za)
}

// hsieh1989Delta returns δ = (1 + (1 + β²) e^{5β²/4}) / (1 + e^{−β²/4}).
func hsieh1989Delta(b2 float64) float64 {
	return (1 + (1+b2)*math.Exp(1.25*b2)) / (1 + math.Exp(-b2/4))
}

// hsieh1989N returns the unrounded number of participants for the design
// of [HsiehN] by Hsieh's refinement for one normally distributed exposure,
// built on Whittemore's large-sample variance of the logistic coefficient:
//
//	n = (z_{1−α/sides} + z_power e^{−β²/4})² (1 + 2 P δ) / (P β²)
//	δ = (1 + (1 + β²) e^{5β²/4}) / (1 + e^{−β²/4})
//
// with P the event rate at the mean of the exposure and β the log odds
// ratio per standard deviation. The formula is stated here from memory of
// Hsieh (1989), and checked against an R simulation of the logistic
// regression's Wald test (testdata/reference/logistic_README.md: at the
// points tried it is conservative, 0.84 to 0.86 for a target of 0.8). It
// was derived for small P; at P = 0.5 and small β it agrees with
// [HsiehN]. It is not monotone in the effect: n is smallest at an odds
// ratio per SD of about 2.4 (P = 0.9) to 4.3 (P = 0.01) and rises beyond.
// Errors and panics as for HsiehN ([ErrUnreachable] when
// z_{1−α/sides} + z_power e^{−β²/4} ≤ 0). Being from memory, it is kept
// unexported and offered as no method; the tests hold it for comparison.
//
// References: Hsieh FY (1989). Sample size tables for logistic regression.
// Stat Med 8:795–802; Whittemore AS (1981). Sample size for logistic
// regression with small response probability. J Am Stat Assoc 76:27–32.
func hsieh1989N(eventRate, logOR, alpha float64, sides int, power float64) (float64, error) {
	checkLogistic(eventRate, logOR)
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	if logOR == 0 {
		return math.NaN(), ErrNothingToDetect
	}
	b2 := logOR * logOR
	s := za + zb*math.Exp(-b2/4)
	if s <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return s * s * (1 + 2*eventRate*hsieh1989Delta(b2)) / (eventRate * b2), nil
}

// hsieh1989Power returns the power of [hsieh1989N]'s design with n
// participants, its formula solved for z_power:
//
//	power = Φ((√(n P β² / (1 + 2 P δ)) − z_{1−α/sides}) e^{β²/4})
//
// in the direction of the true effect only; with β = 0 it is
// Φ(−z_{1−α/sides}). Panics as for [HsiehPower].
//
// References: Hsieh FY (1989). Stat Med 8:795–802 (from memory, see
// [hsieh1989N]).
func hsieh1989Power(n, eventRate, logOR, alpha float64, sides int) float64 {
	checkLogistic(eventRate, logOR)
	if !(n > 0) {
		panic("power: the number of participants must be positive")
	}
	za := ZAlpha(alpha, sides)
	b2 := logOR * logOR
	x := math.Sqrt(n*eventRate*b2/(1+2*eventRate*hsieh1989Delta(b2))) - za
	return normCDF(x * math.Exp(b2/4))
}
