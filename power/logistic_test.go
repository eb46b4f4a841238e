package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

// TestHsiehNReference checks the unrounded sizes of both formulas, inflated
// by VarianceInflation, against logistic_n.tsv: R evaluates Hsieh, Bloch &
// Larsen (1998) eq. (1) and Hsieh (1989) from qnorm, typed from the papers
// in logistic_make.R, divided by (1 − R²) (each row's source has the call).
func TestHsiehNReference(t *testing.T) {
	const tol = 1e-12 // the references print 15 significant digits
	for _, row := range reftable.Load(t, "logistic_n.tsv") {
		p, b := row.F(t, "event_rate"), row.F(t, "log_or")
		alpha, sides, pw, r2 := row.F(t, "alpha"), row.I(t, "sides"), row.F(t, "power"), row.F(t, "r2")
		for _, c := range []struct {
			col string
			f   func(float64, float64, float64, int, float64) (float64, error)
		}{{"n_hsieh1998", HsiehN}, {"n_hsieh1989", hsieh1989N}} {
			n, err := c.f(p, b, alpha, sides, pw)
			got := n * VarianceInflation(r2)
			want := row.F(t, c.col)
			if err != nil || !relClose(got, want, tol) {
				t.Errorf("%s %s: got %.15g, %v; want %.15g (%s)", row["id"], c.col, got, err, want, row["source"])
			}
			if err == nil && math.Ceil(got) != math.Ceil(want) {
				t.Errorf("%s %s: ceil %v, want %v", row["id"], c.col, math.Ceil(got), math.Ceil(want))
			}
		}
	}
}

// TestHsiehPowerReference checks the power of both formulas at n (1 − R²)
// against logistic_power.tsv (R: pnorm and qnorm, logistic_make.R).
func TestHsiehPowerReference(t *testing.T) {
	const tol = 1e-13
	for _, row := range reftable.Load(t, "logistic_power.tsv") {
		p, b := row.F(t, "event_rate"), row.F(t, "log_or")
		alpha, sides, r2 := row.F(t, "alpha"), row.I(t, "sides"), row.F(t, "r2")
		n := row.F(t, "n") / VarianceInflation(r2)
		for _, c := range []struct {
			col string
			got float64
		}{
			{"power_hsieh1998", HsiehPower(n, p, b, alpha, sides)},
			{"power_hsieh1989", hsieh1989Power(n, p, b, alpha, sides)},
		} {
			if want := row.F(t, c.col); math.Abs(c.got-want) > tol {
				t.Errorf("%s %s: got %.15g, want %.15g (%s)", row["id"], c.col, c.got, want, row["source"])
			}
		}
	}
}

// TestHsiehInvariants checks the identities that tie the functions
// together: power at the solved n is the target, n is the same for β and
// −β and falls as |β| grows; for Hsieh (1989) only up to β = 0.7, since
// its n rises again beyond its minimum at β from 0.90 (P = 0.9) to 1.45
// (P = 0.01) (R: optimize on the formula, logistic_make.out).
func TestHsiehInvariants(t *testing.T) {
	type solver struct {
		name string
		n    func(float64, float64, float64, int, float64) (float64, error)
		pw   func(float64, float64, float64, float64, int) float64
	}
	for _, s := range []solver{{"hsieh1998", HsiehN, HsiehPower}, {"hsieh1989", hsieh1989N, hsieh1989Power}} {
		for _, p := range []float64{0.01, 0.3, 0.9} {
			prev := math.Inf(1)
			for _, b := range []float64{0.05, 0.2, 0.7, 1.5} {
				for _, target := range []float64{0.5, 0.8, 0.95} {
					n, err := s.n(p, b, 0.05, 2, target)
					if err != nil {
						t.Fatal(err)
					}
					if got := s.pw(n, p, b, 0.05, 2); math.Abs(got-target) > 1e-12 {
						t.Errorf("%s P %v β %v: power at n %v is %v, want %v", s.name, p, b, n, got, target)
					}
					if m, _ := s.n(p, -b, 0.05, 2, target); m != n {
						t.Errorf("%s P %v: n(β = %v) %v, n(−β) %v", s.name, p, b, n, m)
					}
					if target == 0.8 && (s.name == "hsieh1998" || b <= 0.7) {
						if !(n < prev) {
							t.Errorf("%s P %v: n %v at β %v not below %v", s.name, p, n, b, prev)
						}
						prev = n
					}
				}
			}
		}
	}
}

// TestHsiehErrors checks the sentinel errors, and that with β = 0 the power
// is the one-sided level Φ(−z_{1−α/sides}) = alpha/sides (the definition of
// the quantile).
func TestHsiehErrors(t *testing.T) {
	for _, f := range []func(float64, float64, float64, int, float64) (float64, error){HsiehN, hsieh1989N} {
		if _, err := f(0.2, 0, 0.05, 2, 0.8); !errors.Is(err, ErrNothingToDetect) {
			t.Errorf("β = 0: %v, want ErrNothingToDetect", err)
		}
		// z_{0.975} + z_{0.01} e^{−β²/4} < 0 at β = 0.5 (R: qnorm(0.975) +
		// qnorm(0.01) * exp(-0.0625) = -0.2254; without the exponential -0.3664).
		if _, err := f(0.2, 0.5, 0.05, 2, 0.01); !errors.Is(err, ErrUnreachable) {
			t.Errorf("power 0.01: %v, want ErrUnreachable", err)
		}
	}
	for _, got := range []float64{HsiehPower(100, 0.2, 0, 0.05, 2), hsieh1989Power(100, 0.2, 0, 0.05, 2)} {
		if math.Abs(got-0.025) > 1e-15 {
			t.Errorf("β = 0: power %v, want 0.025", got)
		}
	}
}

// TestVarianceInflation checks 1/(1 − R²) (Hsieh, Bloch & Larsen 1998) at
// values whose reciprocals are exact decimals.
func TestVarianceInflation(t *testing.T) {
	for _, c := range []struct{ r2, want float64 }{{0, 1}, {0.5, 2}, {0.75, 4}, {0.8, 5}, {0.9, 10}} {
		if got := VarianceInflation(c.r2); math.Abs(got-c.want) > 1e-13*c.want {
			t.Errorf("VarianceInflation(%v) = %v, want %v", c.r2, got, c.want)
		}
	}
}

func TestLogisticPanics(t *testing.T) {
	for name, f := range map[string]func(){
		"r2 one":       func() { VarianceInflation(1) },
		"r2 negative":  func() { VarianceInflation(-0.1) },
		"r2 nan":       func() { VarianceInflation(math.NaN()) },
		"rate zero":    func() { _, _ = HsiehN(0, 0.5, 0.05, 2, 0.8) },
		"rate one":     func() { _, _ = hsieh1989N(1, 0.5, 0.05, 2, 0.8) },
		"logOR inf":    func() { _, _ = HsiehN(0.2, math.Inf(1), 0.05, 2, 0.8) },
		"logOR nan":    func() { HsiehPower(10, 0.2, math.NaN(), 0.05, 2) },
		"n zero":       func() { HsiehPower(0, 0.2, 0.5, 0.05, 2) },
		"n nan":        func() { hsieh1989Power(math.NaN(), 0.2, 0.5, 0.05, 2) },
		"alpha":        func() { _, _ = HsiehN(0.2, 0.5, 0, 2, 0.8) },
		"sides":        func() { _, _ = hsieh1989N(0.2, 0.5, 0.05, 3, 0.8) },
		"power":        func() { _, _ = HsiehN(0.2, 0.5, 0.05, 2, 1) },
		"power sides":  func() { hsieh1989Power(10, 0.2, 0.5, 0.05, 0) },
		"power rate":   func() { hsieh1989Power(10, 1.2, 0.5, 0.05, 2) },
		"power n neg.": func() { hsieh1989Power(-1, 0.2, 0.5, 0.05, 2) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}
