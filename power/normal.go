package power

import (
	"sync/atomic"

	"gonum.org/v1/gonum/stat/distuv"
)

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
	return -alphaQuantile.of(alpha / float64(sides))
}

// ZPower returns Φ⁻¹(power), the normal deviate for the target power.
// ZPower panics if power is not in (0, 1).
func ZPower(power float64) float64 {
	if !(power > 0 && power < 1) {
		panic("power: power out of range")
	}
	return powerQuantile.of(power)
}

// normalMemo remembers the last standard normal quantile computed, so
// that a sweep whose alpha and power do not vary (enough sweep) computes
// each once rather than at every point. It is safe for concurrent use,
// and gives exactly the quantile computed: it only saves the computing.
type normalMemo struct{ last atomic.Pointer[[2]float64] }

// The memos of the level's quantile and the power's, kept apart so that
// each stays put while the other varies.
var alphaQuantile, powerQuantile normalMemo

// of returns Φ⁻¹(p).
func (m *normalMemo) of(p float64) float64 {
	if last := m.last.Load(); last != nil && last[0] == p {
		return last[1]
	}
	z := distuv.UnitNormal.Quantile(p)
	m.last.Store(&[2]float64{p, z})
	return z
}

// normCDF is Φ, the standard normal distribution function.
func normCDF(x float64) float64 { return distuv.UnitNormal.CDF(x) }
