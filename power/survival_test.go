package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

// survClose reports whether got is within the relative tolerance tol of want.
func survClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Abs(want)
}

func eventsMethodOf(t *testing.T, id string) EventsMethod {
	t.Helper()
	return byName(t, id, Schoenfeld, Freedman)
}

// survRow is one scenario of trials_survival.tsv with its inputs decoded.
type survRow struct {
	reftable.Row
	m            EventsMethod
	hr, r, alpha float64
	sides        int
	power        float64
	withEntry    bool // the row has participants (accrual given)
	h2           float64
	e            Entry
}

func loadSurvival(t *testing.T) []survRow {
	t.Helper()
	var out []survRow
	for _, row := range reftable.Load(t, "trials_survival.tsv") {
		s := survRow{
			Row: row, m: eventsMethodOf(t, row["method"]),
			hr: row.F(t, "hr"), r: row.F(t, "ratio"), alpha: row.F(t, "alpha"),
			sides: row.I(t, "sides"), power: row.F(t, "power"),
		}
		if a := row.F(t, "accrual"); !math.IsNaN(a) {
			s.withEntry = true
			if med := row.F(t, "control_median"); !math.IsNaN(med) {
				s.h2 = HazardFromMedian(med)
			} else {
				s.h2 = HazardFromSurvival(row.F(t, "control_survival"), row.F(t, "time"))
			}
			s.e = Entry{Accrual: a, FollowUp: row.F(t, "follow_up"), Dropout: DropoutHazard(row.F(t, "dropout"))}
		}
		out = append(out, s)
	}
	return out
}

// TestEventsReference checks the unrounded number of events of both methods
// against every row of trials_survival.tsv: independent R implementations
// of Schoenfeld (1983) and Freedman (1982), script trials_make.R.
func TestEventsReference(t *testing.T) {
	const tol = 1e-12 // the table prints 15 significant digits
	for _, s := range loadSurvival(t) {
		want := s.F(t, "events")
		got, err := s.m.Events(s.hr, s.r, s.alpha, s.sides, s.power)
		if err != nil || !survClose(got, want, tol) {
			t.Errorf("%s: %v.Events = %.15g, %v; want %.15g (%s)", s.Row["id"], s.m, got, err, want, s.Row["source"])
		}
		if err == nil && math.Ceil(got) != math.Ceil(want) {
			t.Errorf("%s: ceil(events) = %v, want %v", s.Row["id"], math.Ceil(got), math.Ceil(want))
		}
	}
}

// TestEventProbabilityReference checks the event probabilities of the rows
// of trials_survival.tsv that have participants: the R closed form
// (p_event_*), the R integrate() double integral of the defining density
// (p_event_*_int; trials_README.md reports it within 6.7e-16 absolute of
// the closed form, so 1e-12 absolute is asked here), and Schoenfeld's (1983) Simpson shortcut (p_simpson_*,
// given when there is no dropout). The control group is the second group
// (hazard h2); the intervention group the first (hazard hr·h2).
func TestEventProbabilityReference(t *testing.T) {
	const tol = 1e-12
	n := 0
	for _, s := range loadSurvival(t) {
		if !s.withEntry {
			continue
		}
		n++
		for _, g := range []struct {
			name string
			h    float64
		}{{"control", s.h2}, {"intervention", s.hr * s.h2}} {
			got := EventProbability(g.h, s.e)
			if want := s.F(t, "p_event_"+g.name); !survClose(got, want, tol) {
				t.Errorf("%s: P(event) %s = %.15g, want %.15g (R closed form, %s)", s.Row["id"], g.name, got, want, s.Row["source"])
			}
			if want := s.F(t, "p_event_"+g.name+"_int"); !(math.Abs(got-want) <= 1e-12) {
				t.Errorf("%s: P(event) %s = %.15g, want %.15g (R integrate(), %s)", s.Row["id"], g.name, got, want, s.Row["source"])
			}
			want := s.F(t, "p_simpson_"+g.name)
			if math.IsNaN(want) {
				if s.e.Dropout == 0 {
					t.Errorf("%s: no Simpson value in the table for a row without dropout", s.Row["id"])
				}
				continue
			}
			if got := EventProbabilitySimpson(g.h, s.e); !survClose(got, want, tol) {
				t.Errorf("%s: Simpson %s = %.15g, want %.15g (Schoenfeld 1983, %s)", s.Row["id"], g.name, got, want, s.Row["source"])
			}
		}
	}
	if n < 10 {
		t.Errorf("only %d rows with participants in trials_survival.tsv", n)
	}
}

// TestParticipantsReference combines Events and EventProbability into the
// total number of participants, N* = D / (π1 P_first + π2 P_second), and
// checks it and n1* = π1 N* against trials_survival.tsv (n_total_star,
// n1_star; independent R implementation, script trials_make.R).
func TestParticipantsReference(t *testing.T) {
	const tol = 1e-11
	for _, s := range loadSurvival(t) {
		if !s.withEntry {
			continue
		}
		d, err := s.m.Events(s.hr, s.r, s.alpha, s.sides, s.power)
		if err != nil {
			t.Fatalf("%s: %v", s.Row["id"], err)
		}
		pi1, pi2 := 1/(1+s.r), s.r/(1+s.r)
		total := d / (pi1*EventProbability(s.hr*s.h2, s.e) + pi2*EventProbability(s.h2, s.e))
		if want := s.F(t, "n_total_star"); !survClose(total, want, tol) {
			t.Errorf("%s: N* = %.15g, want %.15g (%s)", s.Row["id"], total, want, s.Row["source"])
		}
		if want := s.F(t, "n1_star"); !survClose(pi1*total, want, tol) {
			t.Errorf("%s: n1* = %.15g, want %.15g (%s)", s.Row["id"], pi1*total, want, s.Row["source"])
		}
	}
}

// TestDetectableHazardRatioReference gives DetectableHazardRatio the
// unrounded participants of each row of trials_survival.tsv (n1_star and
// n_total_star − n1_star) and expects the row's planned hazard ratio back.
func TestDetectableHazardRatioReference(t *testing.T) {
	const tol = 1e-9
	for _, s := range loadSurvival(t) {
		if !s.withEntry {
			continue
		}
		n1 := s.F(t, "n1_star")
		n2 := s.F(t, "n_total_star") - n1
		dir := -1
		if s.hr > 1 {
			dir = 1
		}
		got, err := s.m.DetectableHazardRatio(s.h2, s.e, n1, n2, s.alpha, s.sides, s.power, dir)
		if err != nil || !survClose(got, s.hr, tol) {
			t.Errorf("%s: %v.DetectableHazardRatio = %.12g, %v; want %v (%s)", s.Row["id"], s.m, got, err, s.hr, s.Row["source"])
		}
	}
}

// TestEventsCommonPractice: hazard ratio 0.75, two-sided alpha 0.05, 80%
// power, 1:1 needs about 380 events (common practice; Schoenfeld's formula
// gives 379.4, rounded up to 380).
func TestEventsCommonPractice(t *testing.T) {
	d, err := Schoenfeld.Events(0.75, 1, 0.05, 2, 0.8)
	if err != nil || math.Ceil(d) != 380 {
		t.Errorf("Schoenfeld.Events(0.75, 1:1) = %v, %v; want 379.4, rounded up to 380 (common practice)", d, err)
	}
}

// TestEventsPowerRoundTrip checks that the power at the unrounded events
// is the target, and that one event fewer (rounded down) falls short.
func TestEventsPowerRoundTrip(t *testing.T) {
	for _, m := range []EventsMethod{Schoenfeld, Freedman} {
		for _, hr := range []float64{0.3, 0.6, 0.8, 0.95, 1.05, 1.4, 2.5} {
			for _, r := range []float64{0.25, 1, 3} {
				for _, c := range []struct {
					alpha float64
					sides int
					power float64
				}{{0.05, 2, 0.8}, {0.025, 1, 0.9}, {0.01, 2, 0.95}, {0.1, 2, 0.5}} {
					d, err := m.Events(hr, r, c.alpha, c.sides, c.power)
					if err != nil {
						t.Fatalf("%v hr=%v r=%v %+v: %v", m, hr, r, c, err)
					}
					if got := m.EventsPower(hr, r, c.alpha, c.sides, d); math.Abs(got-c.power) > 1e-10 {
						t.Errorf("%v hr=%v r=%v %+v: power at D = %.14g, want %v", m, hr, r, c, got, c.power)
					}
					if got := m.EventsPower(hr, r, c.alpha, c.sides, math.Floor(d)); got >= c.power {
						t.Errorf("%v hr=%v r=%v %+v: power at floor(D) = %v, not below %v", m, hr, r, c, got, c.power)
					}
				}
			}
		}
	}
}

// TestEventsSwapGroups: relabelling the groups inverts both the hazard ratio
// and the allocation, and must not change the number of events (both
// formulas are symmetric under the exchange; see their definitions).
func TestEventsSwapGroups(t *testing.T) {
	for _, m := range []EventsMethod{Schoenfeld, Freedman} {
		for _, hr := range []float64{0.5, 0.75, 1.3} {
			for _, r := range []float64{0.5, 1, 2, 3} {
				a, err1 := m.Events(hr, r, 0.05, 2, 0.8)
				b, err2 := m.Events(1/hr, 1/r, 0.05, 2, 0.8)
				if err1 != nil || err2 != nil || !survClose(a, b, 1e-12) {
					t.Errorf("%v hr=%v r=%v: %v, %v against swapped %v, %v", m, hr, r, a, err1, b, err2)
				}
			}
		}
	}
}

// TestEventsErrors checks the sentinel errors.
func TestEventsErrors(t *testing.T) {
	for _, m := range []EventsMethod{Schoenfeld, Freedman} {
		if d, err := m.Events(1, 1, 0.05, 2, 0.8); !errors.Is(err, ErrNothingToDetect) || !math.IsNaN(d) {
			t.Errorf("%v hr=1: %v, %v; want NaN, ErrNothingToDetect", m, d, err)
		}
		// One-sided alpha 0.05 (z = 1.645) with power 0.04 (z = −1.751).
		if d, err := m.Events(0.7, 1, 0.05, 1, 0.04); !errors.Is(err, ErrUnreachable) || !math.IsNaN(d) {
			t.Errorf("%v power below alpha: %v, %v; want NaN, ErrUnreachable", m, d, err)
		}
		// At hr = 1 the power is alpha/sides whatever the events.
		if got := m.EventsPower(1, 2, 0.05, 2, 500); math.Abs(got-0.025) > 1e-15 {
			t.Errorf("%v: power at hr = 1 is %v, want 0.025", m, got)
		}
	}
}

func TestEventsMethodString(t *testing.T) {
	for m, want := range map[EventsMethod]string{Schoenfeld: "schoenfeld", Freedman: "freedman", 7: "EventsMethod(7)"} {
		if got := m.String(); got != want {
			t.Errorf("String(%d) = %q, want %q", int(m), got, want)
		}
	}
}

// TestHazardConversions checks the conversions against their definitions
// on values whose answers are known exactly: half survive to the median;
// a fraction s survives to t; a fraction q is lost per time unit.
func TestHazardConversions(t *testing.T) {
	for _, med := range []float64{0.5, 3, 24} {
		if got := math.Exp(-HazardFromMedian(med) * med); math.Abs(got-0.5) > 1e-15 {
			t.Errorf("survival at median %v = %v, want 0.5", med, got)
		}
	}
	for _, c := range []struct{ s, t float64 }{{0.6, 2}, {0.9, 1}, {0.01, 10}} {
		if got := math.Exp(-HazardFromSurvival(c.s, c.t) * c.t); !survClose(got, c.s, 1e-14) {
			t.Errorf("survival at %v = %v, want %v", c.t, got, c.s)
		}
	}
	for _, q := range []float64{0, 0.05, 0.5} {
		if got := 1 - math.Exp(-DropoutHazard(q)); math.Abs(got-q) > 1e-15 {
			t.Errorf("fraction lost = %v, want %v", got, q)
		}
	}
	// ln 2 = 0.693147180559945309417 (to 21 digits), so the median 1 gives it.
	if got := HazardFromMedian(1); got != 0.6931471805599453 {
		t.Errorf("HazardFromMedian(1) = %v", got)
	}
	// A tiny fraction: −ln(1 − q) = q + q²/2 + q³/3 + … = 1e-12 + 5e-25.
	if got := DropoutHazard(1e-12); !survClose(got, 1e-12+5e-25, 1e-15) {
		t.Errorf("DropoutHazard(1e-12) = %.17g", got)
	}
}

// TestEventProbabilityContinuity: as the accrual shrinks to 0 the
// probability tends to the simultaneous-entry value
// P0 = λ/h (1 − e^(−h f)), h = λ + η. Differentiating the closed form at
// a = 0 (the mean of 1 − e^(−h t) over [f, f+a] moves by
// h e^(−h f) a/2 to first order) gives P(a) = P0 + λ e^(−h f) a/2 + O(a²).
func TestEventProbabilityContinuity(t *testing.T) {
	for _, c := range []struct{ lambda, eta, f float64 }{{0.2, 0, 3}, {0.2, 0.05, 3}, {1.5, 0.3, 0.5}, {0.01, 0.1, 10}} {
		h := c.lambda + c.eta
		p0 := c.lambda / h * -math.Expm1(-h*c.f)
		if got := EventProbability(c.lambda, Entry{FollowUp: c.f, Dropout: c.eta}); !survClose(got, p0, 1e-14) {
			t.Errorf("%+v a=0: %.16g, want %.16g", c, got, p0)
		}
		slope := c.lambda * math.Exp(-h*c.f) / 2
		for _, a := range []float64{1e-2, 1e-4, 1e-6, 1e-9, 1e-12} {
			got := EventProbability(c.lambda, Entry{Accrual: a, FollowUp: c.f, Dropout: c.eta})
			// The O(a²) term is below h²·a² in size.
			if err := math.Abs(got - p0 - slope*a); err > h*h*a*a+1e-15*p0 {
				t.Errorf("%+v a=%v: P = %.16g, P0 + slope·a = %.16g", c, a, got, p0+slope*a)
			}
		}
	}
}

// TestEventProbabilityTinyAccrual checks full relative accuracy for an
// accrual of 1e-9, where the textbook form (e^(−h f) − e^(−h(a+f)))/(h a)
// loses about 7 digits. Expanding 1 − e^(−h t) about the mid-entry time
// m = f + a/2, its mean over [f, f + a] is
//
//	1 − e^(−h m) (1 + h² a²/24 + h⁴ a⁴/1920 + …)
//
// (the mean of a function over an interval of width a is its midpoint value
// plus φ”·a²/24 + φ””·a⁴/1920 + …), so
//
//	P = λ/h [1 − e^(−h m) (1 + h² a²/24)] + O(a⁴).
//
// With f = 0 the mean is (1 − (1 − e^(−h a))/(h a)), whose series is
// h a/2 − (h a)²/6 + (h a)³/24 − …, so P = λ a/2 (1 − h a/3 + (h a)²/12).
func TestEventProbabilityTinyAccrual(t *testing.T) {
	const a = 1e-9
	for _, c := range []struct{ lambda, eta, f float64 }{{0.2, 0, 3}, {0.2, 0.05, 3}, {2, 0.5, 0.1}, {0.05, 0, 0}, {3, 0.2, 0}} {
		h := c.lambda + c.eta
		var want float64
		if c.f == 0 {
			x := h * a
			want = c.lambda * a / 2 * (1 - x/3 + x*x/12)
		} else {
			m := c.f + a/2
			want = c.lambda / h * (-math.Expm1(-h*m) - math.Exp(-h*m)*h*h*a*a/24)
		}
		got := EventProbability(c.lambda, Entry{Accrual: a, FollowUp: c.f, Dropout: c.eta})
		if !survClose(got, want, 1e-12) {
			t.Errorf("%+v: P = %.17g, series %.17g (rel %.2g)", c, got, want, (got-want)/want)
		}
	}
}

// TestEventProbabilityTinyHazard checks full relative accuracy for a hazard
// of 1e-8 without dropout, where 1 − e^(−λ f)·g(λ a) cancels. Integrating
// 1 − e^(−λ t) = λ t − λ² t²/2 + λ³ t³/6 − … over entry gives
//
//	P = λ (f + a/2) − λ²/2 · (f² + f a + a²/3) + λ³/24 · ((f+a)⁴ − f⁴)/a − …
//
// (the mean of t^k over [f, f+a] is ((f+a)^(k+1) − f^(k+1)) / ((k+1) a)),
// and P = λ f − λ² f²/2 + λ³ f³/6 when a = 0.
func TestEventProbabilityTinyHazard(t *testing.T) {
	const l = 1e-8
	for _, c := range []struct{ a, f float64 }{{2, 3}, {36, 0}, {0, 3}, {18, 12}, {1e-9, 0}, {1e-9, 2}} {
		a, f := c.a, c.f
		var want float64
		if a == 0 {
			want = l*f - l*l*f*f/2 + l*l*l*f*f*f/6
		} else {
			want = l*(f+a/2) - l*l/2*(f*f+f*a+a*a/3) + l*l*l/24*(math.Pow(f+a, 4)-math.Pow(f, 4))/a
		}
		got := EventProbability(l, Entry{Accrual: a, FollowUp: f})
		if !survClose(got, want, 1e-12) {
			t.Errorf("%+v: P = %.17g, series %.17g (rel %.2g)", c, got, want, (got-want)/want)
		}
	}
	// With dropout η and λ tiny, the bracket no longer cancels:
	// P = λ/(λ+η) · (1 − e^(−(λ+η) f)), here with η = 0.1, f = 3, a = 0,
	// and (λ+η) f = 0.3 + 3e-8.
	got := EventProbability(l, Entry{FollowUp: 3, Dropout: 0.1})
	want := l / (l + 0.1) * -math.Expm1(-(l+0.1)*3)
	if !survClose(got, want, 1e-12) {
		t.Errorf("tiny hazard with dropout: P = %.17g, want %.17g", got, want)
	}
}

// TestOneMinusGSeam checks that the series and the direct form of
// 1 − (1 − e^(−x))/x agree where both are accurate, around the switch at
// 0.5, and match the series x/2 − x²/6 + x³/24 − x⁴/120 + x⁵/720 − … summed
// here to 12 terms.
func TestOneMinusGSeam(t *testing.T) {
	for _, x := range []float64{0.1, 0.3, 0.4999999, 0.5, 0.5000001, 0.7} {
		want, term := 0.0, 1.0
		for k := 1; k <= 25; k++ {
			term *= x / float64(k+1) // x^k/(k+1)!
			want += math.Pow(-1, float64(k+1)) * term
		}
		if got := oneMinusG(x); !survClose(got, want, 1e-14) {
			t.Errorf("oneMinusG(%v) = %.17g, series %.17g", x, got, want)
		}
	}
}

// TestDetectableHazardRatioRoundTrip plans a study (events, then
// participants from the event probabilities), gives DetectableHazardRatio
// the unrounded participants and expects the planned hazard ratio back, in
// both directions and for both methods.
func TestDetectableHazardRatioRoundTrip(t *testing.T) {
	entries := []Entry{{Accrual: 2, FollowUp: 3}, {FollowUp: 1, Dropout: 0.1}, {Accrual: 24, FollowUp: 0.5, Dropout: 0.01}}
	for _, m := range []EventsMethod{Schoenfeld, Freedman} {
		for _, hr := range []float64{0.4, 0.7, 0.9, 1.2, 2} {
			for _, r := range []float64{0.5, 1, 2} {
				for _, e := range entries {
					h2 := 0.3
					d, err := m.Events(hr, r, 0.05, 2, 0.85)
					if err != nil {
						t.Fatal(err)
					}
					n1 := d / (EventProbability(hr*h2, e) + r*EventProbability(h2, e))
					dir := 1
					if hr < 1 {
						dir = -1
					}
					got, err := m.DetectableHazardRatio(h2, e, n1, r*n1, 0.05, 2, 0.85, dir)
					if err != nil || !survClose(got, hr, 1e-9) {
						t.Errorf("%v hr=%v r=%v %+v: detectable %.12g, %v", m, hr, r, e, got, err)
					}
				}
			}
		}
	}
}

// TestDetectableHazardRatioUnreachable: 0.1 participant per group (sizes
// are continuous) with a 0.1% event probability in the second group expect
// at most 0.1 + 0.0001 events, so even at the search limits Δ = 1e-6 or 1e6
// the Schoenfeld power is below Φ(√0.1001 · ½ ln 1e6 − 1.96) = Φ(0.22) and
// the Freedman power below Φ(√0.1001 − 1.96), far from 80%. Nor can a
// target below alpha/sides be met.
func TestDetectableHazardRatioUnreachable(t *testing.T) {
	e := Entry{FollowUp: 1}
	for _, m := range []EventsMethod{Schoenfeld, Freedman} {
		for _, dir := range []int{-1, 1} {
			if hr, err := m.DetectableHazardRatio(0.001, e, 0.1, 0.1, 0.05, 2, 0.8, dir); !errors.Is(err, ErrUnreachable) || !math.IsNaN(hr) {
				t.Errorf("%v dir=%d: %v, %v; want ErrUnreachable", m, dir, hr, err)
			}
			if hr, err := m.DetectableHazardRatio(0.3, e, 100, 100, 0.05, 1, 0.04, dir); !errors.Is(err, ErrUnreachable) || !math.IsNaN(hr) {
				t.Errorf("%v dir=%d target below alpha: %v, %v; want ErrUnreachable", m, dir, hr, err)
			}
		}
	}
	// Freedman's effect √r |1 − Δ|/(r + Δ) is bounded by 1/√r as Δ → 0.
	// With n1 = n2 = 2 there are at most 4 events, so with r = 1 the power
	// below 1 is at most Φ(√4 · 1 − 1.96) = Φ(0.04) ≈ 0.52 and 80% is
	// unreachable, whereas Schoenfeld's |ln Δ| grows without bound and
	// reaches it (everyone in the second group has an event by time 1000).
	sure := Entry{FollowUp: 1e3}
	if _, err := Freedman.DetectableHazardRatio(1, sure, 2, 2, 0.05, 2, 0.8, -1); !errors.Is(err, ErrUnreachable) {
		t.Errorf("Freedman with 4 events: %v, want ErrUnreachable", err)
	}
	if _, err := Schoenfeld.DetectableHazardRatio(1, sure, 2, 2, 0.05, 2, 0.8, -1); err != nil {
		t.Errorf("Schoenfeld with 4 events: %v, want a hazard ratio", err)
	}
}

// TestSurvivalPanics checks the documented programmer errors.
func TestSurvivalPanics(t *testing.T) {
	ok := Entry{Accrual: 1, FollowUp: 1}
	for name, f := range map[string]func(){
		"Events hr=0":            func() { Schoenfeld.Events(0, 1, 0.05, 2, 0.8) },
		"Events hr<0":            func() { Freedman.Events(-0.5, 1, 0.05, 2, 0.8) },
		"Events hr=NaN":          func() { Schoenfeld.Events(math.NaN(), 1, 0.05, 2, 0.8) },
		"Events hr=Inf":          func() { Schoenfeld.Events(math.Inf(1), 1, 0.05, 2, 0.8) },
		"Events r=0":             func() { Schoenfeld.Events(0.7, 0, 0.05, 2, 0.8) },
		"Events power=1":         func() { Schoenfeld.Events(0.7, 1, 0.05, 2, 1) },
		"Events sides=3":         func() { Freedman.Events(0.7, 1, 0.05, 3, 0.8) },
		"Events unknown method":  func() { EventsMethod(0).Events(0.7, 1, 0.05, 2, 0.8) },
		"EventsPower hr=0":       func() { Schoenfeld.EventsPower(0, 1, 0.05, 2, 100) },
		"EventsPower d<0":        func() { Schoenfeld.EventsPower(0.7, 1, 0.05, 2, -1) },
		"EventsPower d=NaN":      func() { Freedman.EventsPower(0.7, 1, 0.05, 2, math.NaN()) },
		"P hazard=0":             func() { EventProbability(0, ok) },
		"P hazard<0":             func() { EventProbability(-1, ok) },
		"P follow-up<0":          func() { EventProbability(0.1, Entry{Accrual: 1, FollowUp: -1}) },
		"P follow-up=0, a=0":     func() { EventProbability(0.1, Entry{}) },
		"P accrual<0":            func() { EventProbability(0.1, Entry{Accrual: -1, FollowUp: 1}) },
		"P dropout<0":            func() { EventProbability(0.1, Entry{FollowUp: 1, Dropout: -0.1}) },
		"P follow-up=NaN":        func() { EventProbability(0.1, Entry{FollowUp: math.NaN()}) },
		"Simpson dropout":        func() { EventProbabilitySimpson(0.1, Entry{FollowUp: 1, Dropout: 0.1}) },
		"Simpson follow-up<=0":   func() { EventProbabilitySimpson(0.1, Entry{FollowUp: 0}) },
		"DropoutHazard(1)":       func() { DropoutHazard(1) },
		"DropoutHazard(-0.1)":    func() { DropoutHazard(-0.1) },
		"HazardFromMedian(0)":    func() { HazardFromMedian(0) },
		"HazardFromSurvival s=1": func() { HazardFromSurvival(1, 2) },
		"HazardFromSurvival t=0": func() { HazardFromSurvival(0.5, 0) },
		"Detectable dir=0":       func() { Schoenfeld.DetectableHazardRatio(0.1, ok, 100, 100, 0.05, 2, 0.8, 0) },
		"Detectable n1=0":        func() { Schoenfeld.DetectableHazardRatio(0.1, ok, 0, 100, 0.05, 2, 0.8, -1) },
		"Detectable h2=0":        func() { Schoenfeld.DetectableHazardRatio(0, ok, 100, 100, 0.05, 2, 0.8, -1) },
		"Detectable follow-up<0": func() { Freedman.DetectableHazardRatio(0.1, Entry{FollowUp: -1}, 100, 100, 0.05, 2, 0.8, 1) },
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
