package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

// TestHRMarginEventsReference checks the unrounded events of the
// non-inferiority and equivalence forms against every row of
// survmargin_events.tsv: independent R implementations of Schoenfeld
// (1983, eq. 1) with a log margin, and of two one-sided tests (Schuirmann
// 1987) by uniroot, script survmargin_make.R. NA rows must give
// ErrUnreachable. The rounded number of events must match exactly.
func TestHRMarginEventsReference(t *testing.T) {
	const (
		tolNI = 1e-12 // closed form; the table keeps every digit
		tolEq = 1e-12 // two root finders; they agree to 1e-14
	)
	var ni, eq, na int
	for _, row := range reftable.Load(t, "survmargin_events.tsv") {
		hr, margin, r := row.F(t, "hr"), row.F(t, "margin"), row.F(t, "ratio")
		alpha, pw := row.F(t, "alpha"), row.F(t, "power")
		var got float64
		var err error
		tol := tolNI
		switch row["test"] {
		case "ni":
			got, err = Schoenfeld.NonInferiorityEvents(hr, margin, r, alpha, pw)
			ni++
		case "eq":
			got, err = Schoenfeld.EquivalenceEvents(hr, margin, r, alpha, pw)
			tol = tolEq
			eq++
		default:
			t.Fatalf("%s: unknown test %q", row["id"], row["test"])
		}
		want := row.F(t, "events")
		if math.IsNaN(want) {
			na++
			if !errors.Is(err, ErrUnreachable) || !math.IsNaN(got) {
				t.Errorf("%s: %v, %v; want NaN, ErrUnreachable (%s; %s)", row["id"], got, err, row["note"], row["source"])
			}
			continue
		}
		if err != nil || !relClose(got, want, tol) {
			t.Errorf("%s: events %.15g, %v; want %.15g (%s)", row["id"], got, err, want, row["source"])
			continue
		}
		if math.Ceil(got) != math.Ceil(want) {
			t.Errorf("%s: rounded up %v, want %v", row["id"], math.Ceil(got), math.Ceil(want))
		}
	}
	if ni < 12 || eq < 10 || na < 8 {
		t.Errorf("table too small: %d non-inferiority, %d equivalence, %d unreachable rows", ni, eq, na)
	}
}

// TestHRMarginPowerReference checks the power for a number of events against
// survmargin_power.tsv (independent R implementations, script
// survmargin_make.R), at and beyond the margin included.
func TestHRMarginPowerReference(t *testing.T) {
	for _, row := range reftable.Load(t, "survmargin_power.tsv") {
		hr, margin, r := row.F(t, "hr"), row.F(t, "margin"), row.F(t, "ratio")
		alpha, d := row.F(t, "alpha"), row.F(t, "events")
		var got float64
		switch row["test"] {
		case "ni":
			got = Schoenfeld.NonInferiorityEventsPower(hr, margin, r, alpha, d)
		case "eq":
			got = Schoenfeld.EquivalenceEventsPower(hr, margin, r, alpha, d)
		default:
			t.Fatalf("%s: unknown test %q", row["id"], row["test"])
		}
		// R adds Φ(a) + Φ(b) − 1 as written; Go computes 1 − Φ(−a) − Φ(−b):
		// they agree to a few units of 1e-16 absolute.
		want := row.F(t, "power")
		if !(math.Abs(got-want) <= 1e-14 || relClose(got, want, 1e-12)) {
			t.Errorf("%s: power %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
		}
	}
}

// TestHRMarginEventsInvariants checks, over a grid of invented scenarios:
// the power at the solved events is the target; swapping the groups
// (hr → 1/hr, M → 1/M, r → 1/r) gives the same events; events fall as the
// margin moves away from hr; the equivalence events lie between the
// one-sided events toward the nearer margin and the bound
// (z_α + z_{(1+power)/2})²/(π1 π2 δ²), δ the distance to the nearer margin.
func TestHRMarginEventsInvariants(t *testing.T) {
	for _, hr := range []float64{0.8, 0.95, 1, 1.1} {
		for _, r := range []float64{0.5, 1, 3} {
			for _, ap := range [][2]float64{{0.025, 0.8}, {0.05, 0.9}, {0.01, 0.5}} {
				alpha, pw := ap[0], ap[1]
				// Non-inferiority, both sides of 1.
				for _, margin := range []float64{1.2, 1.4, 0.7, 0.6} {
					if (margin > 1 && !(hr < margin)) || (margin < 1 && !(hr > margin)) {
						continue
					}
					d, err := Schoenfeld.NonInferiorityEvents(hr, margin, r, alpha, pw)
					if err != nil {
						t.Fatalf("hr %v M %v r %v: %v", hr, margin, r, err)
					}
					if p := Schoenfeld.NonInferiorityEventsPower(hr, margin, r, alpha, d); math.Abs(p-pw) > 1e-12 {
						t.Errorf("hr %v M %v r %v: power at %v events %.15g, want %v", hr, margin, r, d, p, pw)
					}
					sw, err := Schoenfeld.NonInferiorityEvents(1/hr, 1/margin, 1/r, alpha, pw)
					if err != nil || !relClose(sw, d, 1e-12) {
						t.Errorf("hr %v M %v r %v: swapped groups %v, %v; want %v", hr, margin, r, sw, err, d)
					}
					wider := math.Pow(margin, 1.5)
					if dw, _ := Schoenfeld.NonInferiorityEvents(hr, wider, r, alpha, pw); !(dw < d) {
						t.Errorf("hr %v r %v: margin %v needs %v events, margin %v needs %v", hr, r, wider, dw, margin, d)
					}
				}
				// Equivalence.
				for _, margin := range []float64{1.15, 1.3, 1.6} {
					delta := math.Log(margin) - math.Abs(math.Log(hr))
					if !(delta > 0) {
						continue
					}
					d, err := Schoenfeld.EquivalenceEvents(hr, margin, r, alpha, pw)
					if err != nil {
						t.Fatalf("equivalence hr %v M %v r %v: %v", hr, margin, r, err)
					}
					if p := Schoenfeld.EquivalenceEventsPower(hr, margin, r, alpha, d); math.Abs(p-pw) > 1e-11 {
						t.Errorf("equivalence hr %v M %v r %v: power at %v events %.15g, want %v", hr, margin, r, d, p, pw)
					}
					sw, err := Schoenfeld.EquivalenceEvents(1/hr, margin, 1/r, alpha, pw)
					if err != nil || !relClose(sw, d, 1e-10) {
						t.Errorf("equivalence hr %v M %v r %v: swapped groups %v, %v; want %v", hr, margin, r, sw, err, d)
					}
					k := r / sq(1+r)
					near := margin // the margin on hr's side of 1
					if hr < 1 {
						near = 1 / margin
					}
					lower, _ := Schoenfeld.NonInferiorityEvents(hr, near, r, alpha, pw)
					upper := sq(ZAlpha(alpha, 1)+ZPower((1+pw)/2)) / (k * delta * delta)
					if !(d >= lower*(1-1e-12) && d <= upper*(1+1e-12)) {
						t.Errorf("equivalence hr %v M %v r %v: %v events not in [%v, %v]", hr, margin, r, d, lower, upper)
					}
				}
			}
		}
	}
}

// TestHRMarginPowerShape checks the shape of the power curves: the
// non-inferiority power is alpha at the margin and at 0 events, below alpha
// beyond the margin, and rises with the events on the alternative side;
// the equivalence power is 0 at 0 events (alpha < 1/2), at most each
// one-sided power, and at most alpha at either end of the interval.
func TestHRMarginPowerShape(t *testing.T) {
	const alpha = 0.025
	for _, margin := range []float64{1.3, 0.75} {
		if p := Schoenfeld.NonInferiorityEventsPower(margin, margin, 1.5, alpha, 700); math.Abs(p-alpha) > 1e-15 {
			t.Errorf("M %v: power at the margin %v, want alpha", margin, p)
		}
		if p := Schoenfeld.NonInferiorityEventsPower(1, margin, 1.5, alpha, 0); math.Abs(p-alpha) > 1e-15 {
			t.Errorf("M %v: power with no events %v, want alpha", margin, p)
		}
		beyond := margin * margin
		if p := Schoenfeld.NonInferiorityEventsPower(beyond, margin, 1.5, alpha, 700); !(p < alpha) {
			t.Errorf("M %v: power at hr %v beyond the margin %v, want below alpha", margin, beyond, p)
		}
		prev := alpha
		for _, d := range []float64{10, 100, 300, 1000} {
			p := Schoenfeld.NonInferiorityEventsPower(1, margin, 1.5, alpha, d)
			if !(p > prev) {
				t.Errorf("M %v: power %v at %v events, not above %v", margin, p, d, prev)
			}
			prev = p
		}
	}
	const margin = 1.25
	if p := Schoenfeld.EquivalenceEventsPower(1, margin, 1, alpha, 0); p != 0 {
		t.Errorf("equivalence power with no events %v, want 0", p)
	}
	for _, hr := range []float64{0.85, 1, 1.2} {
		for _, d := range []float64{50, 500, 2000} {
			p := Schoenfeld.EquivalenceEventsPower(hr, margin, 2, alpha, d)
			hi := Schoenfeld.NonInferiorityEventsPower(hr, margin, 2, alpha, d)
			lo := Schoenfeld.NonInferiorityEventsPower(hr, 1/margin, 2, alpha, d)
			if !(p <= math.Min(hi, lo)+1e-15) {
				t.Errorf("hr %v d %v: equivalence power %v above a one-sided power (%v, %v)", hr, d, p, hi, lo)
			}
		}
	}
	for _, hr := range []float64{margin, 1 / margin} {
		if p := Schoenfeld.EquivalenceEventsPower(hr, margin, 1, alpha, 1e4); !(p <= alpha+1e-15) {
			t.Errorf("equivalence at hr %v: power %v, want at most alpha", hr, p)
		}
	}
}

// TestHREquivalenceClosedForm checks the root at hr = 1 against the
// closed form (z_α + z_{(1+power)/2})²/(π1 π2 (ln M)²) evaluated with scipy
// 1.10.1 and numpy 1.24.2 at alpha 0.05, power 0.8, M 1.25, r 1:
//
//	za, z = scipy.stats.norm.ppf(0.95), scipy.stats.norm.ppf(0.9)  # 1.6448536269514722, 1.2815515655446004
//	(za + z)**2 / (0.25 * numpy.log(1.25)**2)                       # 8.563847350667974 / 0.012448261123279342
//	= 687.9553108548491
//
// which R's uniroot (row eq_01 of survmargin_events.tsv) gives as
// 687.9553108548496.
func TestHREquivalenceClosedForm(t *testing.T) {
	const want = 687.9553108548491 // scipy, above
	got, err := Schoenfeld.EquivalenceEvents(1, 1.25, 1, 0.05, 0.8)
	if err != nil || !relClose(got, want, 1e-12) {
		t.Errorf("EquivalenceEvents(1, 1.25, 1, 0.05, 0.8) = %.16g, %v; want %.16g (scipy)", got, err, want)
	}
}

// TestHRMarginUnreachableEdges checks the ErrUnreachable cases not in the
// table: an alpha above 1/2 with a target the equivalence tests already
// reach at 0 events, and a hazard ratio within the log-scale slack of
// 1/M.
func TestHRMarginUnreachableEdges(t *testing.T) {
	if _, err := Schoenfeld.EquivalenceEvents(1, 1.3, 1, 0.7, 0.3); !errors.Is(err, ErrUnreachable) {
		t.Errorf("alpha 0.7, power 0.3 (below 2α − 1 = 0.4): %v, want ErrUnreachable", err)
	}
	if _, err := Schoenfeld.EquivalenceEvents(1/1.3*(1+1e-15), 1.3, 1, 0.05, 0.8); !errors.Is(err, ErrUnreachable) {
		t.Errorf("hr a hair inside 1/M: %v, want ErrUnreachable", err)
	}
	if _, err := Schoenfeld.NonInferiorityEvents(1.3-1e-9, 1.3, 1, 0.025, 0.8); err != nil {
		t.Errorf("hr 1e-9 inside the margin: %v, want a (large) number of events", err)
	}
}

func TestHRMarginPanics(t *testing.T) {
	for name, f := range map[string]func(){
		"freedman ni":        func() { Freedman.NonInferiorityEvents(1, 1.3, 1, 0.025, 0.8) },
		"freedman ni power":  func() { Freedman.NonInferiorityEventsPower(1, 1.3, 1, 0.025, 100) },
		"freedman eq":        func() { Freedman.EquivalenceEvents(1, 1.3, 1, 0.05, 0.8) },
		"freedman eq power":  func() { Freedman.EquivalenceEventsPower(1, 1.3, 1, 0.05, 100) },
		"margin 1":           func() { Schoenfeld.NonInferiorityEvents(0.9, 1, 1, 0.025, 0.8) },
		"margin 0":           func() { Schoenfeld.NonInferiorityEvents(0.9, 0, 1, 0.025, 0.8) },
		"margin inf":         func() { Schoenfeld.NonInferiorityEventsPower(0.9, math.Inf(1), 1, 0.025, 10) },
		"margin nan":         func() { Schoenfeld.NonInferiorityEvents(0.9, math.NaN(), 1, 0.025, 0.8) },
		"hr 0":               func() { Schoenfeld.NonInferiorityEvents(0, 1.3, 1, 0.025, 0.8) },
		"ratio 0":            func() { Schoenfeld.NonInferiorityEvents(1, 1.3, 0, 0.025, 0.8) },
		"alpha":              func() { Schoenfeld.NonInferiorityEvents(1, 1.3, 1, 0, 0.8) },
		"power":              func() { Schoenfeld.NonInferiorityEvents(1, 1.3, 1, 0.025, 1) },
		"events":             func() { Schoenfeld.NonInferiorityEventsPower(1, 1.3, 1, 0.025, -1) },
		"eq margin below 1":  func() { Schoenfeld.EquivalenceEvents(1, 0.8, 1, 0.05, 0.8) },
		"eq margin 1":        func() { Schoenfeld.EquivalenceEventsPower(1, 1, 1, 0.05, 100) },
		"eq power":           func() { Schoenfeld.EquivalenceEvents(1, 1.3, 1, 0.05, -0.5) },
		"eq events nan":      func() { Schoenfeld.EquivalenceEventsPower(1, 1.3, 1, 0.05, math.NaN()) },
		"eq hr inf":          func() { Schoenfeld.EquivalenceEvents(math.Inf(1), 1.3, 1, 0.05, 0.8) },
		"unknown method":     func() { EventsMethod(0).NonInferiorityEvents(1, 1.3, 1, 0.025, 0.8) },
		"eq unknown method":  func() { EventsMethod(9).EquivalenceEventsPower(1, 1.3, 1, 0.05, 10) },
		"ni power margin 1":  func() { Schoenfeld.NonInferiorityEventsPower(1, 1, 1, 0.025, 10) },
		"eq margin negative": func() { Schoenfeld.EquivalenceEvents(1, -2, 1, 0.05, 0.8) },
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
