package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

// rateCase reads the rates of a row of rates_n.tsv or rates_power.tsv.
func rateCase(t *testing.T, row reftable.Row) TwoRates {
	t.Helper()
	return TwoRates{UnexposedRate: row.F(t, "lambda0"), RateRatio: row.F(t, "rr"),
		PersonTime: row.F(t, "t"), Overdispersion: row.F(t, "kappa")}
}

// rateClose reports whether got is within rel of want, relatively, or
// within abs absolutely.
func rateClose(got, want, rel, abs float64) bool {
	return math.Abs(got-want) <= rel*math.Abs(want)+abs
}

// TestTwoRatesN1AgainstR checks the unrounded size of the exposed group
// and the variance per exposed participant over the invented grid of
// rates_n.tsv: n1 from the formula written out in R (rates_make.R, each
// row's source gives the call), to 1e-11 relative; V = Variance(1, ratio)
// against the same formula to 1e-13 and against the inverse Fisher
// information of R's glm (family poisson() or
// MASS::negative.binomial(1/κ), column v_glm) to 1e-9.
func TestTwoRatesN1AgainstR(t *testing.T) {
	rows := reftable.Load(t, "rates_n.tsv")
	for _, row := range rows {
		c := rateCase(t, row)
		ratio := row.F(t, "ratio")
		got, err := c.N1(ratio, row.F(t, "alpha"), row.I(t, "sides"), row.F(t, "power"))
		if err != nil {
			t.Fatalf("%s: %v", row["id"], err)
		}
		if want := row.F(t, "n1"); !rateClose(got, want, 1e-11, 0) {
			t.Errorf("%s: n1 = %.15g, R %.15g (%s)", row["id"], got, want, row["source"])
		}
		v := c.Variance(1, ratio)
		if want := row.F(t, "v"); !rateClose(v, want, 1e-13, 0) {
			t.Errorf("%s: V = %.15g, R %.15g (%s)", row["id"], v, want, row["source"])
		}
		if want := row.F(t, "v_glm"); !rateClose(v, want, 1e-9, 0) {
			t.Errorf("%s: V = %.15g, glm %.15g (%s)", row["id"], v, want, row["source"])
		}
	}
	if len(rows) < 577 {
		t.Errorf("rates_n.tsv has %d rows, want 577", len(rows))
	}
}

// TestTwoRatesPowerAgainstR checks the power at given sizes (n2 not a
// multiple of n1, fractional sizes, expected events per participant from
// 1e-9 to 1e6 and RR from 0.001 to 1000) against rates_power.tsv (R's
// pnorm of the formula written out, rates_make.R), to 1e-10 relative
// plus 1e-15, and the variance to 1e-13 relative.
func TestTwoRatesPowerAgainstR(t *testing.T) {
	for _, row := range reftable.Load(t, "rates_power.tsv") {
		c := rateCase(t, row)
		n1, n2 := row.F(t, "n1"), row.F(t, "n2")
		got := c.Power(n1, n2, row.F(t, "alpha"), row.I(t, "sides"))
		if want := row.F(t, "power"); !rateClose(got, want, 1e-10, 1e-15) {
			t.Errorf("%s: power = %.15g, R %.15g (%s)", row["id"], got, want, row["source"])
		}
		if v, want := c.Variance(n1, n2), row.F(t, "v"); !rateClose(v, want, 1e-13, 0) {
			t.Errorf("%s: V = %.15g, R %.15g (%s)", row["id"], v, want, row["source"])
		}
	}
}

// TestTwoRatesPeakAgainstR checks PeakRatio against the root of the
// symbolic derivative of x²/V(x) found by R's uniroot and confirmed by
// optimize (rates_peak.tsv, rates_make.R), to 1e-9 relative.
func TestTwoRatesPeakAgainstR(t *testing.T) {
	for _, row := range reftable.Load(t, "rates_peak.tsv") {
		c := TwoRates{UnexposedRate: row.F(t, "mu0"), RateRatio: 0.5, PersonTime: 1, Overdispersion: row.F(t, "kappa")}
		got, err := c.PeakRatio(row.F(t, "n1"), row.F(t, "n2"))
		if err != nil {
			t.Fatalf("%s: %v", row["id"], err)
		}
		if want := row.F(t, "rr"); !rateClose(got, want, 1e-9, 0) {
			t.Errorf("%s: peak RR = %.15g, R %.15g (%s)", row["id"], got, want, row["source"])
		}
	}
}

// TestTwoRatesInvariants checks, over a spread of rates, that the power
// at the solved size reaches the target exactly, that the size falls as
// RR moves away from 1 above 1 (and below 1 down to the peak), and that
// swapping the groups (the unexposed rate λ0 RR, ratio 1/RR, allocation
// 1/ratio) gives the same groups.
func TestTwoRatesInvariants(t *testing.T) {
	for _, lt := range []float64{1e-6, 0.02, 1, 300} {
		for _, k := range []float64{0, 0.3, 4} {
			for _, rr := range []float64{0.2, 0.8, 1.25, 6} {
				for _, ratio := range []float64{0.5, 1, 3} {
					c := TwoRates{UnexposedRate: lt / 2, RateRatio: rr, PersonTime: 2, Overdispersion: k}
					n, err := c.N1(ratio, 0.05, 2, 0.85)
					if err != nil {
						t.Fatal(err)
					}
					if p := c.Power(n, ratio*n, 0.05, 2); math.Abs(p-0.85) > 1e-12 {
						t.Errorf("%+v ratio %v: power at n1* = %.15g, want 0.85", c, ratio, p)
					}
					s := TwoRates{UnexposedRate: lt / 2 * rr, RateRatio: 1 / rr, PersonTime: 2, Overdispersion: k}
					ns, err := s.N1(1/ratio, 0.05, 2, 0.85)
					if err != nil {
						t.Fatal(err)
					}
					if !rateClose(ns, ratio*n, 1e-12, 0) {
						t.Errorf("%+v ratio %v: swapped groups give n1 %.10g, want %.10g", c, ratio, ns, ratio*n)
					}
					if p, q := c.Power(40, 70, 0.025, 1), s.Power(70, 40, 0.025, 1); !rateClose(p, q, 1e-12, 0) {
						t.Errorf("%+v: power %.15g, swapped %.15g", c, p, q)
					}
				}
			}
		}
	}
}

// TestTwoRatesPowerShape walks RR from 1 up to 1000 and from 1 down to
// 0.001 at expected events per participant from 1e-9 to 1e9: power is
// finite, in [alpha/sides, 1], continuous (α/sides at RR = 1 and within
// 1e-6 of it next to 1), rises with RR above 1, rises as RR falls from 1
// to PeakRatio and falls beyond it. The n1 solved for 80% power falls
// with RR above 1.
func TestTwoRatesPowerShape(t *testing.T) {
	const steps = 4000
	for _, lt := range []float64{1e-9, 1e-4, 0.5, 30, 1e9} {
		for _, k := range []float64{0, 0.7, 50} {
			c := TwoRates{UnexposedRate: lt, RateRatio: 1, PersonTime: 1, Overdispersion: k}
			n1, n2 := 500.0, 800.0
			at := func(rr float64) float64 {
				d := c
				d.RateRatio = rr
				p := d.Power(n1, n2, 0.05, 2)
				if math.IsNaN(p) || p < 0.025 || p > 1 {
					t.Fatalf("λ0t %v κ %v RR %v: power %v", lt, k, rr, p)
				}
				return p
			}
			if p := at(1); p != normCDF(-ZAlpha(0.05, 2)) {
				t.Errorf("λ0t %v κ %v: power at RR = 1 is %v, want alpha/2", lt, k, p)
			}
			if p := at(1 + 1e-12); p-0.025 > 1e-6 {
				t.Errorf("λ0t %v κ %v: power jumps to %v next to RR = 1", lt, k, p)
			}
			peak, err := c.PeakRatio(n1, n2)
			if err != nil || !(peak > 0 && peak < 1) {
				t.Fatalf("λ0t %v κ %v: peak %v, %v", lt, k, peak, err)
			}
			prevUp, prevDown := at(1), at(1)
			prevN := math.Inf(1)
			for i := 1; i <= steps; i++ {
				x := 3 * math.Ln10 * float64(i) / steps // RR = e^±x, up to 1000
				up := at(math.Exp(x))
				if up < prevUp {
					t.Errorf("λ0t %v κ %v: power falls from %v to %v at RR %v", lt, k, prevUp, up, math.Exp(x))
				}
				prevUp = up
				d := c
				d.RateRatio = math.Exp(x)
				if n, err := d.N1(1.6, 0.05, 2, 0.8); err != nil || n > prevN {
					t.Errorf("λ0t %v κ %v RR %v: n1 %v after %v (%v)", lt, k, d.RateRatio, n, prevN, err)
				} else {
					prevN = n
				}
				rr := math.Exp(-x)
				down := at(rr)
				// Tolerance: a flat top and power at 1 differ in rounding only.
				if rr >= peak && down < prevDown-1e-15 || rr < peak/1.01 && down > prevDown+1e-15 {
					t.Errorf("λ0t %v κ %v: power %v then %v at RR %v (peak %v)", lt, k, prevDown, down, rr, peak)
				}
				prevDown = down
			}
		}
	}
}

// TestTwoRatesErrors checks the sentinel errors of N1.
func TestTwoRatesErrors(t *testing.T) {
	c := TwoRates{UnexposedRate: 0.1, RateRatio: 1, PersonTime: 2}
	if _, err := c.N1(1, 0.05, 2, 0.8); !errors.Is(err, ErrNothingToDetect) {
		t.Errorf("RR = 1: %v, want ErrNothingToDetect", err)
	}
	c.RateRatio = 2
	// Power 0.02 is below alpha/2: z_α + z_β < 0.
	if _, err := c.N1(1, 0.05, 2, 0.02); !errors.Is(err, ErrUnreachable) {
		t.Errorf("power below alpha/2: %v, want ErrUnreachable", err)
	}
	// 1/(λ0 t) overflows: no finite size.
	tiny := TwoRates{UnexposedRate: 1e-300, RateRatio: 2, PersonTime: 1e-300}
	if _, err := tiny.N1(1, 0.05, 2, 0.8); !errors.Is(err, ErrUnreachable) {
		t.Errorf("vanishing events: %v, want ErrUnreachable", err)
	}
}

// TestTwoRatesPanics checks that invalid input panics.
func TestTwoRatesPanics(t *testing.T) {
	ok := TwoRates{UnexposedRate: 0.1, RateRatio: 2, PersonTime: 1, Overdispersion: 0.5}
	for name, f := range map[string]func(){
		"zero rate":      func() { d := ok; d.UnexposedRate = 0; d.Variance(1, 1) },
		"infinite RR":    func() { d := ok; d.RateRatio = math.Inf(1); d.Variance(1, 1) },
		"NaN time":       func() { d := ok; d.PersonTime = math.NaN(); d.Variance(1, 1) },
		"negative κ":     func() { d := ok; d.Overdispersion = -0.1; d.Variance(1, 1) },
		"zero n2":        func() { ok.Variance(1, 0) },
		"zero ratio":     func() { _, _ = ok.N1(0, 0.05, 2, 0.8) },
		"bad power":      func() { _, _ = ok.N1(1, 0.05, 2, 1) },
		"bad sides":      func() { ok.Power(10, 10, 0.05, 3) },
		"peak zero size": func() { _, _ = ok.PeakRatio(0, 10) },
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
