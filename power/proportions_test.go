package power

import (
	"errors"
	"math"
	"testing"
)

// grid is a spread of scenarios for the invariant tests.
var grid = []struct{ p1, p2, r float64 }{
	{0.2, 0.3, 1}, {0.3, 0.2, 2}, {0.05, 0.1, 0.5}, {0.6, 0.45, 3},
	{0.02, 0.04, 1}, {0.9, 0.8, 1.5}, {0.5, 0.3, 0.25},
}

var allMethods = []Method{Fleiss, FleissCC, Kelsey, Schlesselman}

// TestPowerAtSolvedN checks that the power at the rounded-up solution
// reaches the target and the power at the unrounded solution equals it.
func TestPowerAtSolvedN(t *testing.T) {
	for _, m := range allMethods {
		for _, g := range grid {
			for _, target := range []float64{0.8, 0.9} {
				tp := TwoProportions{P1: g.p1, P2: g.p2, Alpha: 0.05, Sides: 2}
				n, err := m.N(tp, g.r, target)
				if err != nil {
					t.Fatal(err)
				}
				if got := m.Power(tp, n, g.r*n); math.Abs(got-target) > 1e-9 {
					t.Errorf("%v %+v: power at n* = %.12g, want %v", m, g, got, target)
				}
				n1, n2 := math.Ceil(n), math.Ceil(g.r*n)
				if got := m.Power(tp, n1, n2); got < target {
					t.Errorf("%v %+v: power at ceil = %.6g below %v", m, g, got, target)
				}
			}
		}
	}
}

// TestNFallsAsEffectGrows checks that the required size falls as the first
// group's risk moves away from the second's.
func TestNFallsAsEffectGrows(t *testing.T) {
	for _, m := range allMethods {
		for _, r := range []float64{0.5, 1, 2} {
			prev := math.Inf(1)
			for p1 := 0.31; p1 < 0.95; p1 += 0.02 {
				n, err := m.N(TwoProportions{P1: p1, P2: 0.3, Alpha: 0.05, Sides: 2}, r, 0.8)
				if err != nil {
					t.Fatal(err)
				}
				if n >= prev {
					t.Errorf("%v r=%v: n rose from %v to %v at p1=%v", m, r, prev, n, p1)
				}
				prev = n
			}
		}
	}
}

// TestSwapGroups checks that swapping the groups and inverting the ratio
// gives the same groups: the first group of the swapped problem is the
// second group of the original.
func TestSwapGroups(t *testing.T) {
	for _, m := range allMethods {
		for _, g := range grid {
			a, _ := m.N(TwoProportions{P1: g.p1, P2: g.p2, Alpha: 0.05, Sides: 2}, g.r, 0.8)
			b, _ := m.N(TwoProportions{P1: g.p2, P2: g.p1, Alpha: 0.05, Sides: 2}, 1/g.r, 0.8)
			if !relClose(b, g.r*a, 1e-10) {
				t.Errorf("%v %+v: swapped first group %v, want %v", m, g, b, g.r*a)
			}
		}
	}
}

// TestCorrectedPowerMonotone checks that the continuity-corrected power
// never rises as n falls, through the small-n region where the inverted
// formula would turn back up (n1 ≤ (r+1)/(2rΔ)).
func TestCorrectedPowerMonotone(t *testing.T) {
	for _, g := range grid {
		tp := TwoProportions{P1: g.p1, P2: g.p2, Alpha: 0.05, Sides: 2}
		c := (g.r + 1) / (2 * g.r * math.Abs(g.p1-g.p2))
		prev := -1.0
		for n1 := 0.5; n1 < 3*c+50; n1 += 0.25 {
			p := FleissCC.Power(tp, n1, g.r*n1)
			if p < prev-1e-15 {
				t.Errorf("%+v: power fell from %v to %v as n1 rose to %v", g, prev, p, n1)
			}
			prev = p
		}
		// Inside the region the power is the n' = 0 value, the same as the
		// uncorrected formula's power with no participants.
		inside := FleissCC.Power(tp, c/2, g.r*c/2)
		v0 := pooled(g.p1, g.p2, g.r)
		v1 := g.r*g.p1*(1-g.p1) + g.p2*(1-g.p2)
		want := normCDF(-ZAlpha(0.05, 2) * math.Sqrt((g.r+1)*v0) / math.Sqrt(v1))
		if math.Abs(inside-want) > 1e-15 {
			t.Errorf("%+v: power inside the region %v, want %v", g, inside, want)
		}
	}
}

func TestNErrors(t *testing.T) {
	tp := TwoProportions{P1: 0.3, P2: 0.3, Alpha: 0.05, Sides: 2}
	for _, m := range allMethods {
		if _, err := m.N(tp, 1, 0.8); !errors.Is(err, ErrNothingToDetect) {
			t.Errorf("%v: equal risks: err = %v, want ErrNothingToDetect", m, err)
		}
	}
	// A target power below alpha/2 is met by the formula with no one at all:
	// 1.96 √(2 · 0.25 · 0.75) < 2.326 √(0.16 + 0.21) (hand calculation).
	tp = TwoProportions{P1: 0.2, P2: 0.3, Alpha: 0.05, Sides: 2}
	if _, err := Fleiss.N(tp, 1, 0.01); !errors.Is(err, ErrUnreachable) {
		t.Errorf("near-alpha target: err = %v, want ErrUnreachable", err)
	}
}

// TestEffectRoundTrip checks that solving for the detectable effect at the
// unrounded solved n gives back the planned risk.
func TestEffectRoundTrip(t *testing.T) {
	for _, m := range allMethods {
		for _, g := range grid {
			tp := TwoProportions{P1: g.p1, P2: g.p2, Alpha: 0.05, Sides: 2}
			n, _ := m.N(tp, g.r, 0.8)
			dir := 1
			if g.p1 < g.p2 {
				dir = -1
			}
			p1, err := m.Detectable(tp, n, g.r*n, 0.8, dir)
			if err != nil || math.Abs(p1-g.p1) > 1e-9 {
				t.Errorf("%v %+v: detectable %v, %v; want %v", m, g, p1, err, g.p1)
			}
		}
	}
}

func TestEffectConversions(t *testing.T) {
	// Common practice: the odds ratio of a 2x2 table is ad/bc. With 30 of
	// 100 exposed cases and 20 of 100 exposed controls, a=30, b=70 (cases),
	// c=20, d=80 (controls): OR = (30*80)/(70*20) = 2400/1400.
	if got, want := OddsRatio(0.3, 0.2), 2400.0/1400.0; math.Abs(got-want) > 1e-14 {
		t.Errorf("OddsRatio = %v, want %v", got, want)
	}
	// Schlesselman (1982, ch. 6): p1 = ψ p0 / (1 + p0(ψ − 1)); with p0 = 0.2
	// and ψ = 2, p1 = 0.4/1.2 = 1/3 (hand calculation).
	if got := CaseExposure(0.2, 2); math.Abs(got-1.0/3) > 1e-15 {
		t.Errorf("CaseExposure = %v, want 1/3", got)
	}
	// The conversion inverts the odds ratio.
	for _, p0 := range []float64{0.01, 0.2, 0.7} {
		for _, psi := range []float64{0.3, 1, 2.5} {
			if got := OddsRatio(CaseExposure(p0, psi), p0); math.Abs(got-psi) > 1e-12 {
				t.Errorf("OddsRatio(CaseExposure(%v, %v)) = %v", p0, psi, got)
			}
		}
	}
}
