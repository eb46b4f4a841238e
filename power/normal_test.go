package power

import (
	"math"
	"testing"
)

func TestZAlpha(t *testing.T) {
	// Wanted values from scipy 1.10.1: scipy.stats.norm.ppf(q) for
	// q = 0.975, 0.95, 0.995, 0.8, 0.9. The first is the common-practice
	// 1.96 of a two-sided 95% normal interval.
	for _, c := range []struct {
		alpha float64
		sides int
		want  float64
	}{
		{0.05, 2, 1.959963984540054},
		{0.05, 1, 1.6448536269514722},
		{0.1, 2, 1.6448536269514722},
		{0.01, 2, 2.5758293035489004},
	} {
		if got := ZAlpha(c.alpha, c.sides); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("ZAlpha(%v, %d) = %.16g, want %.16g", c.alpha, c.sides, got, c.want)
		}
	}
	for _, c := range []struct{ p, want float64 }{
		{0.8, 0.8416212335729143},
		{0.9, 1.2815515655446004},
	} {
		if got := ZPower(c.p); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("ZPower(%v) = %.16g, want %.16g", c.p, got, c.want)
		}
	}
}
