package power

import "gonum.org/v1/gonum/stat/distuv"

// ZAlpha returns the standard normal critical value for a test at level
// alpha with the given number of sides (1 or 2):
//
//	z = Φ⁻¹(1 − alpha/sides)
//
// For alpha = 0.05 and two sides it is 1.959964 (common practice: 1.96).
// It is taken from the tail alpha/sides itself, never from 1 − alpha/sides,
// and agrees with R's qnorm(p, lower.tail = FALSE) for p from 0.5 to 1e-20;
// its square is the critical value of the 1-df chi-square tests,
// qchisq(alpha, 1, lower.tail = FALSE) (tails_test.go).
// ZAlpha panics if alpha is not in (0, 1) or sides is not 1 or 2.
func ZAlpha(alpha float64, sides int) float64 {
	if !(alpha > 0 && alpha < 1) {
		panic("power: alpha out of range")
	}
	if sides != 1 && sides != 2 {
		panic("power: sides must be 1 or 2")
	}
	// The upper quantile as minus the lower one keeps tiny alphas exact.
	return -distuv.UnitNormal.Quantile(alpha / float64(sides))
}

// ZPower returns Φ⁻¹(power), the normal deviate for the target power.
// ZPower panics if power is not in (0, 1).
func ZPower(power float64) float64 {
	if !(power > 0 && power < 1) {
		panic("power: power out of range")
	}
	return distuv.UnitNormal.Quantile(power)
}

// normCDF is Φ, the standard normal distribution function.
func normCDF(x float64) float64 { return distuv.UnitNormal.CDF(x) }
