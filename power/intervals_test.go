package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

// The reference tables of this file are made by
// testdata/reference/intervals_make.R (R 4.2.2, base stats only); the
// calls are in each row's source column and intervals_README.md.

func parseInterval(t *testing.T, s string) IntervalMethod {
	t.Helper()
	m, ok := ParseIntervalMethod(s)
	if !ok {
		t.Fatalf("unknown interval %q", s)
	}
	return m
}

// relErr is |got − want| / |want| (absolute below |want| = 1e-300).
func relErr(got, want float64) float64 {
	return math.Abs(got-want) / math.Max(math.Abs(want), 1e-300)
}

// intervalTol is the relative tolerance of a half-width (or of a limit,
// relative to the half-width) against R: 1e-12, and for Clopper–Pearson
// 1e-12 · n/1000 beyond n = 1000. gonum's InvRegIncBeta and R's qbeta drift
// apart by about 3e-16 · n of the half-width (2e-12 at n = 10⁴, 4e-11 at
// 10⁵, 5e-10 at 10⁶, measured against qbeta while writing this file).
func intervalTol(m IntervalMethod, n float64) float64 {
	if m == ClopperPearsonInterval {
		return 1e-12 * math.Max(1, n/1000)
	}
	return 1e-12
}

// TestIntervalLimitsReference checks the limits at given (n, x), whole or
// not, against intervals_limits.tsv: Wald from qnorm, Wilson written out
// with qnorm (and equal to prop.test(x, n, conf.level, correct=FALSE) at a
// whole x), Clopper–Pearson from qbeta (equal to binom.test(x, n,
// conf.level)$conf.int at a whole x). Tolerance: [intervalTol] of the
// half-width (at least 10⁻³) for the limits, and relative for the
// half-width of [IntervalMethod.HalfWidth] at p = x/n.
func TestIntervalLimitsReference(t *testing.T) {
	worst := 0.0
	for _, row := range reftable.Load(t, "intervals_limits.tsv") {
		m := parseInterval(t, row["method"])
		n, x, c := row.F(t, "n"), row.F(t, "x"), row.F(t, "confidence")
		wantLo, wantHi, wantHW := row.F(t, "lower"), row.F(t, "upper"), row.F(t, "half_width")
		lo, hi := m.Limits(x, n, c)
		scale := math.Max(wantHW, 1e-3)
		tol := intervalTol(m, n)
		for _, d := range []float64{lo - wantLo, hi - wantHi} {
			worst = math.Max(worst, math.Abs(d)/scale)
			if math.Abs(d) > tol*scale {
				t.Errorf("%s: limits (%.17g, %.17g), want (%.17g, %.17g) (%s)", row["id"], lo, hi, wantLo, wantHi, row["source"])
				break
			}
		}
		if x == 0 || x == n {
			continue
		}
		if hw := m.HalfWidth(x/n, n, c); relErr(hw, wantHW) > tol {
			t.Errorf("%s: half-width %.17g, want %.17g (%s)", row["id"], hw, wantHW, row["source"])
		}
	}
	t.Logf("largest error of a limit: %.3g of the half-width", worst)
}

// TestIntervalEdges checks the limits at x = 0 and x = n by their
// definitions: Clopper–Pearson's lower limit is 0 at x = 0 and its upper
// limit 1 at x = n (Clopper & Pearson 1934); Wilson's are 0 and 1 there
// (the formula of Wilson 1927 gives them exactly; the code sets them so
// rounding cannot move them); the Wald interval is the single point x/n.
func TestIntervalEdges(t *testing.T) {
	for _, m := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		for _, n := range []float64{1, 7, 1000} {
			if lo, _ := m.Limits(0, n, 0.95); lo != 0 {
				t.Errorf("%v n %v x 0: lower %v, want 0", m, n, lo)
			}
			if _, hi := m.Limits(n, n, 0.95); hi != 1 {
				t.Errorf("%v n %v x n: upper %v, want 1", m, n, hi)
			}
		}
	}
	if lo, hi := WaldInterval.Limits(0, 30, 0.9); lo != 0 || hi != 0 {
		t.Errorf("Wald at x = 0: (%v, %v), want the point 0", lo, hi)
	}
}

// TestIntervalNReference checks the smallest n per method against
// intervals_n.tsv: R's brute-force scan of every n from 1 (the first n
// whose half-width at x = n p is ≤ margin), over p ∈ {0.01, 0.05, 0.1,
// 0.3, 0.5}, margin ∈ {0.01, 0.02, 0.05}, confidence 0.95 and 0.9, and a
// few extra points. The n must match exactly; the half-widths at n and
// n − 1 to [intervalTol]. For Wald the n is also ⌈Cochran's n0⌉, whose
// unrounded value (cochran_n0, from qnorm) [PrecisionN] must give.
func TestIntervalNReference(t *testing.T) {
	for _, row := range reftable.Load(t, "intervals_n.tsv") {
		m := parseInterval(t, row["method"])
		p, margin, c := row.F(t, "p"), row.F(t, "margin"), row.F(t, "confidence")
		want := row.I(t, "n")
		n, err := m.N(p, margin, c)
		if err != nil || n != want {
			t.Errorf("%s: n = %d (%v), want %d (%s)", row["id"], n, err, want, row["source"])
			continue
		}
		tol := intervalTol(m, float64(n))
		if hw := m.HalfWidth(p, float64(n), c); relErr(hw, row.F(t, "hw_n")) > tol {
			t.Errorf("%s: half-width at n %.17g, want %s", row["id"], hw, row["hw_n"])
		}
		if n > 1 {
			if hw := m.HalfWidth(p, float64(n-1), c); relErr(hw, row.F(t, "hw_prev")) > tol {
				t.Errorf("%s: half-width at n − 1 %.17g, want %s", row["id"], hw, row["hw_prev"])
			}
		}
		if m == WaldInterval {
			n0, _ := PrecisionN(Precision{P: p, Confidence: c}, margin)
			if relErr(n0, row.F(t, "cochran_n0")) > 1e-12 {
				t.Errorf("%s: Cochran's n0 %.17g, want %s", row["id"], n0, row["cochran_n0"])
			}
		}
	}
}

// TestIntervalNIsSmallest checks, for Clopper–Pearson (the interval whose
// half-width is not proved monotone), that no n below the answer
// qualifies, by evaluating every one of them: an invariant of the
// definition, beside the R scans of TestIntervalNReference. The points
// are off the reference grid.
func TestIntervalNIsSmallest(t *testing.T) {
	for _, c := range []struct{ p, margin, conf float64 }{
		{0.003, 0.01, 0.95}, {0.02, 0.03, 0.99}, {0.45, 0.08, 0.8}, {0.97, 0.04, 0.95}, {0.5, 0.45, 0.95},
	} {
		n, err := ClopperPearsonInterval.N(c.p, c.margin, c.conf)
		if err != nil {
			t.Fatal(err)
		}
		if hw := ClopperPearsonInterval.HalfWidth(c.p, float64(n), c.conf); hw > c.margin {
			t.Errorf("%+v: half-width %v at n %d above the margin", c, hw, n)
		}
		for k := 1; k < n; k++ {
			if hw := ClopperPearsonInterval.HalfWidth(c.p, float64(k), c.conf); hw <= c.margin {
				t.Errorf("%+v: n = %d, but %d already gives %v", c, n, k, hw)
				break
			}
		}
	}
}

// TestSmallestNSearch checks the integer search on predicates whose
// answers are known by construction: a threshold far from the guess in
// either direction, the lower bound itself, a predicate that is never
// true (ErrUnreachable), and a predicate with an isolated true value
// below the threshold, found within the window and missed beyond it (the
// documented limit of the guarantee).
func TestSmallestNSearch(t *testing.T) {
	for _, c := range []struct {
		name    string
		guess   float64
		lo, win int
		ok      func(int) bool
		want    int
		err     error
	}{
		{"up", 3, 1, 0, func(n int) bool { return n >= 123457 }, 123457, nil},
		{"down", 1e6, 1, 0, func(n int) bool { return n >= 17 }, 17, nil},
		{"at guess", 40, 1, 0, func(n int) bool { return n >= 40 }, 40, nil},
		{"lower bound", 1e3, 2, 0, func(n int) bool { return n >= 0 }, 2, nil},
		{"nan guess", math.NaN(), 1, 0, func(n int) bool { return n >= 5 }, 5, nil},
		{"huge guess", 1e30, 1, 0, func(n int) bool { return n >= 99 }, 99, nil},
		{"the maximum", 1, 1, 0, func(n int) bool { return n >= MaxPrecisionN }, MaxPrecisionN, nil},
		{"never", 10, 1, 0, func(n int) bool { return false }, 0, ErrUnreachable},
		{"bump in window", 10, 1, 32, func(n int) bool { return n >= 100 || n == 80 }, 80, nil},
		{"two bumps", 10, 1, 32, func(n int) bool { return n >= 100 || n == 80 || n == 50 }, 50, nil},
		{"bump beyond window", 10, 1, 32, func(n int) bool { return n >= 100 || n == 60 }, 100, nil},
	} {
		got, err := smallestN(c.guess, c.lo, c.win, c.ok)
		if got != c.want || !errors.Is(err, c.err) {
			t.Errorf("%s: %d, %v; want %d, %v", c.name, got, err, c.want, c.err)
		}
	}
}

// TestIntervalNUnreachable: margins so small that n would exceed 10⁹
// (Cochran's n for p = ½, margin 10⁻⁶ is 9.6·10¹¹ by z² p q/d²).
func TestIntervalNUnreachable(t *testing.T) {
	for _, m := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		if n, err := m.N(0.5, 1e-6, 0.95); !errors.Is(err, ErrUnreachable) {
			t.Errorf("%v: n %d, err %v; want ErrUnreachable", m, n, err)
		}
	}
	if n, err := MeanPrecisionN(1, 1e-5, 0.95); !errors.Is(err, ErrUnreachable) {
		t.Errorf("mean: n %d, err %v; want ErrUnreachable", n, err)
	}
}

// TestRatioPrecisionReference checks n1 (closed form, Katz et al. 1978
// for the risk ratio and Woolf 1955 for the odds ratio) and the achieved
// precision ratio at n1 = ⌈n1*⌉, n2 = r n1 against intervals_ratio.tsv,
// to 1e-12 relative; the same ratio from glm's standard error on the
// expected table (rho_glm) to 1e-8. The achieved ratio must be within the
// target there and beyond it at one fewer (R checked both).
func TestRatioPrecisionReference(t *testing.T) {
	for _, row := range reftable.Load(t, "intervals_ratio.tsv") {
		measure := MeasureRiskRatio
		if row["measure"] == "odds-ratio" {
			measure = MeasureOddsRatio
		}
		rp := RatioPrecision{Measure: measure, P1: row.F(t, "p1"), P2: row.F(t, "p2"), Confidence: row.F(t, "confidence")}
		rho, r := row.F(t, "rho"), row.F(t, "r")
		if n1 := rp.N1(rho, r); relErr(n1, row.F(t, "n1")) > 1e-12 {
			t.Errorf("%s: n1 %.17g, want %s (%s)", row["id"], n1, row["n1"], row["source"])
		}
		n1, n2 := row.F(t, "n1_ceil"), row.F(t, "n2_ceil")
		got := rp.Rho(n1, n2)
		if relErr(got, row.F(t, "rho_ceil")) > 1e-12 {
			t.Errorf("%s: rho at (%v, %v) %.17g, want %s", row["id"], n1, n2, got, row["rho_ceil"])
		}
		if relErr(got, row.F(t, "rho_glm")) > 1e-8 {
			t.Errorf("%s: rho at (%v, %v) %.17g, glm gives %s", row["id"], n1, n2, got, row["rho_glm"])
		}
		if got > rho || rp.Rho(n1-1, r*(n1-1)) <= rho {
			t.Errorf("%s: rho %v at ⌈n1⌉ against target %v; one fewer gives %v", row["id"], got, rho, rp.Rho(n1-1, r*(n1-1)))
		}
	}
}

// TestRatioPrecisionRoundTrip: the precision ratio at the unrounded n1 and
// n2 = r n1 is the target (invariant of the closed form), and swapping
// the groups with the inverse allocation gives the same second-group size.
func TestRatioPrecisionRoundTrip(t *testing.T) {
	for _, rp := range []RatioPrecision{
		{Measure: MeasureRiskRatio, P1: 0.12, P2: 0.04, Confidence: 0.95},
		{Measure: MeasureOddsRatio, P1: 0.33, P2: 0.21, Confidence: 0.9},
	} {
		for _, r := range []float64{0.5, 1, 3} {
			n1 := rp.N1(2.2, r)
			if got := rp.Rho(n1, r*n1); relErr(got, 2.2) > 1e-13 {
				t.Errorf("%v r %v: rho at n1* %v", rp.Measure, r, got)
			}
			sw := RatioPrecision{Measure: rp.Measure, P1: rp.P2, P2: rp.P1, Confidence: rp.Confidence}
			if m := sw.N1(2.2, 1/r); relErr(m, r*n1) > 1e-13 {
				t.Errorf("%v r %v: swapped groups need %v, want %v", rp.Measure, r, m, r*n1)
			}
		}
	}
}

// TestMeanPrecisionReference checks the smallest n ≥ 2 for a mean against
// intervals_mean.tsv (R: the first n with qt(1 − α/2, n − 1) sd/√n ≤
// margin, by scanning n), exactly, and the half-widths at n and n − 1 to
// 1e-12 relative.
func TestMeanPrecisionReference(t *testing.T) {
	for _, row := range reftable.Load(t, "intervals_mean.tsv") {
		sd, margin, c := row.F(t, "sd"), row.F(t, "margin"), row.F(t, "confidence")
		want := row.I(t, "n")
		n, err := MeanPrecisionN(sd, margin, c)
		if err != nil || n != want {
			t.Errorf("%s: n = %d (%v), want %d (%s)", row["id"], n, err, want, row["source"])
			continue
		}
		if hw := MeanHalfWidth(sd, float64(n), c); relErr(hw, row.F(t, "hw_n")) > 1e-12 {
			t.Errorf("%s: half-width %.17g, want %s", row["id"], hw, row["hw_n"])
		}
		if n > 2 {
			if hw := MeanHalfWidth(sd, float64(n-1), c); relErr(hw, row.F(t, "hw_prev")) > 1e-12 {
				t.Errorf("%s: half-width at n − 1 %.17g, want %s", row["id"], hw, row["hw_prev"])
			}
		}
	}
}

// TestBudererReference checks both sizes of Buderer (1996) against
// intervals_buderer.tsv (the formula written out in R with qnorm), to
// 1e-12 relative. No worked example of the paper is used: none could be
// quoted with confidence.
func TestBudererReference(t *testing.T) {
	for _, row := range reftable.Load(t, "intervals_buderer.tsv") {
		d := DiagnosticAccuracy{Sensitivity: row.F(t, "sens"), Specificity: row.F(t, "spec"),
			Prevalence: row.F(t, "prevalence"), Confidence: row.F(t, "confidence")}
		ns, nsp := d.N(row.F(t, "margin"))
		if relErr(ns, row.F(t, "n_sens")) > 1e-12 || relErr(nsp, row.F(t, "n_spec")) > 1e-12 {
			t.Errorf("%s: (%.17g, %.17g), want (%s, %s) (%s)", row["id"], ns, nsp, row["n_sens"], row["n_spec"], row["source"])
		}
	}
}

func TestIntervalMethodNames(t *testing.T) {
	for _, m := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		if got, ok := ParseIntervalMethod(m.String()); !ok || got != m {
			t.Errorf("%v: parsed back as %v, %v", m, got, ok)
		}
	}
	if _, ok := ParseIntervalMethod("exact"); ok {
		t.Error(`"exact" parsed as an interval`)
	}
	if s := IntervalMethod(9).String(); s != "IntervalMethod(9)" {
		t.Errorf("unknown method prints %q", s)
	}
	if MeasureRiskRatio.String() != "risk-ratio" || MeasureOddsRatio.String() != "odds-ratio" || RatioMeasure(0).String() != "RatioMeasure(0)" {
		t.Error("ratio measure names")
	}
}

// checkPanics fails the test for each named call that does not panic.
func checkPanics(t *testing.T, calls map[string]func()) {
	t.Helper()
	for name, f := range calls {
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

func TestIntervalPanics(t *testing.T) {
	rp := RatioPrecision{Measure: MeasureRiskRatio, P1: 0.2, P2: 0.1, Confidence: 0.95}
	d := DiagnosticAccuracy{Sensitivity: 0.9, Specificity: 0.8, Prevalence: 0.1, Confidence: 0.95}
	checkPanics(t, map[string]func(){
		"unknown method":  func() { IntervalMethod(0).Limits(1, 10, 0.95) },
		"x above n":       func() { WilsonInterval.Limits(11, 10, 0.95) },
		"negative x":      func() { ClopperPearsonInterval.Limits(-1, 10, 0.95) },
		"zero n":          func() { WaldInterval.Limits(0, 0, 0.95) },
		"infinite n":      func() { WaldInterval.HalfWidth(0.5, math.Inf(1), 0.95) },
		"confidence 1":    func() { WaldInterval.Limits(1, 10, 1) },
		"confidence NaN":  func() { WilsonInterval.N(0.1, 0.05, math.NaN()) },
		"p 0":             func() { WilsonInterval.N(0, 0.05, 0.95) },
		"p 1":             func() { WilsonInterval.HalfWidth(1, 10, 0.95) },
		"margin 0":        func() { ClopperPearsonInterval.N(0.1, 0, 0.95) },
		"mean sd 0":       func() { MeanPrecisionN(0, 1, 0.95) },
		"mean margin NaN": func() { MeanPrecisionN(1, math.NaN(), 0.95) },
		"mean n 1":        func() { MeanHalfWidth(1, 1, 0.95) },
		"ratio rho 1":     func() { rp.N1(1, 1) },
		"ratio r 0":       func() { rp.N1(2, 0) },
		"ratio n 0":       func() { rp.Rho(0, 10) },
		"ratio measure":   func() { RatioPrecision{P1: 0.2, P2: 0.1, Confidence: 0.95}.N1(2, 1) },
		"ratio p 1":       func() { RatioPrecision{Measure: MeasureOddsRatio, P1: 1, P2: 0.1, Confidence: 0.95}.Rho(5, 5) },
		"buderer margin":  func() { d.N(-0.1) },
		"buderer prevalence": func() {
			DiagnosticAccuracy{Sensitivity: 0.9, Specificity: 0.8, Prevalence: 1, Confidence: 0.95}.N(0.05)
		},
	})
}

// BenchmarkIntervalN times the search for the smallest n (p = 0.5,
// margin 0.01, confidence 0.95: n about 9,600 to 9,700).
func BenchmarkIntervalN(b *testing.B) {
	for _, m := range []IntervalMethod{WaldInterval, WilsonInterval, ClopperPearsonInterval} {
		b.Run(m.String(), func(b *testing.B) {
			sink := 0
			for b.Loop() {
				n, _ := m.N(0.5, 0.01, 0.95)
				sink += n
			}
			_ = sink
		})
	}
}
