package power

import (
	"math"
	"strconv"
	"strings"
	"testing"

	"enough/power/reftable"
)

// The reference values of this file come from
// testdata/reference/groupseq_make.py (numpy 1.24.2 and scipy 1.10.1:
// one-look-at-a-time Gauss–Legendre integration of the multivariate
// normal law of (Z_1, …, Z_K), checked against scipy's multivariate normal
// CDF, exact bivariate CDFs and Monte Carlo) and groupseq_sim.R (R 4.2.2,
// set.seed(20240611)); see groupseq_README.md. The published constants of
// Jennison & Turnbull (2000, tables 2.1–2.4), recalled from memory to three
// decimals, are in the from_memory columns and are checked too.

// gsTol is the agreement asked of the integration on the grid r = 16 with
// the reference values (good to 1e-10): the constants and crossing
// probabilities are within about 1e-6 of their limits as the grid grows.
const gsTol = 2e-5

// floats parses a comma-separated list of numbers.
func floats(t *testing.T, s string) []float64 {
	t.Helper()
	var out []float64
	for _, f := range strings.Split(s, ",") {
		x, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		out = append(out, x)
	}
	return out
}

// timingOf reads a timing name of the tables: eqK, or u0.3-0.6-1.
func timingOf(t *testing.T, name string) []float64 {
	t.Helper()
	if k, ok := strings.CutPrefix(name, "eq"); ok {
		n, err := strconv.Atoi(k)
		if err != nil {
			t.Fatal(err)
		}
		return EqualTiming(n)
	}
	return floats(t, strings.ReplaceAll(strings.TrimPrefix(name, "u"), "-", ","))
}

// designOf builds the design a row of the tables names, or reports false
// for the rows of spending conventions the tool does not use (the
// two-sided O'Brien-Fleming-type function spent at alpha/2 a side, and
// the one-sided form 2 − 2Φ(z_{1−α/2}/√t)).
func designOf(t *testing.T, r reftable.Row) (GroupSequential, bool) {
	sides := r.I(t, "sides")
	g := GroupSequential{Alpha: r.F(t, "alpha"), Sides: sides}
	if tn, ok := r["timing"]; ok {
		g.Timing = timingOf(t, tn)
	} else {
		g.Timing = EqualTiming(r.I(t, "K"))
	}
	switch r["family"] {
	case "pocock":
		g.Family = Pocock
	case "obf":
		g.Family = OBrienFleming
	case "sf_obf":
		// Form (a) of the tables: the tool's two-sided function; one-sided,
		// the tool spends 1 − Φ(z_{1−α}/√t) (the tables' alt_c).
		g.Family, g.Function = Spending, OBrienFlemingType
		if sides == 1 {
			return g, false
		}
	case "sf_obf_alt_c":
		g.Family, g.Function = Spending, OBrienFlemingType
		if sides == 2 {
			return g, false
		}
	case "sf_pocock":
		g.Family, g.Function = Spending, PocockType
	case "sf_power":
		g.Family, g.Function, g.Rho = Spending, PowerFamily, r.F(t, "rho")
	default:
		return g, false
	}
	return g, true
}

func TestGroupSequentialConstants(t *testing.T) {
	rows := reftable.Load(t, "groupseq_constants.tsv")
	checked := 0
	for _, r := range rows {
		g, ok := designOf(t, r)
		if !ok {
			continue
		}
		s, err := g.Boundaries()
		if err != nil {
			t.Fatalf("%s: %v", r["id"], err)
		}
		for k, want := range floats(t, r["boundaries"]) {
			if math.Abs(s.Z[k]-want) > gsTol {
				t.Errorf("%s look %d: boundary %.8f, want %.8f (groupseq_make.py)", r["id"], k+1, s.Z[k], want)
			}
		}
		for k, want := range floats(t, r["alpha_cum"]) {
			if math.Abs(s.AlphaSpent[k]-want) > 1e-6 {
				t.Errorf("%s look %d: alpha spent %.8g, want %.8g", r["id"], k+1, s.AlphaSpent[k], want)
			}
		}
		// The published constant (C of the last look, from memory, three
		// decimals).
		if m := r["from_memory"]; m != "" && m != "NA" {
			want, _ := strconv.ParseFloat(m, 64)
			if got := s.Z[len(s.Z)-1]; math.Abs(got-want) > 6e-4 {
				t.Errorf("%s: constant %.4f, the published table has %.3f (%s)", r["id"], got, want, r["memory_source"])
			}
		}
		checked++
	}
	if checked < 60 {
		t.Fatalf("only %d designs checked", checked)
	}
}

func TestGroupSequentialInflation(t *testing.T) {
	rows := reftable.Load(t, "groupseq_inflation.tsv")
	checked := 0
	for _, r := range rows {
		g, ok := designOf(t, r)
		if !ok {
			continue
		}
		s, err := g.Boundaries()
		if err != nil {
			t.Fatal(err)
		}
		pw := r.F(t, "power")
		// R and θ_s of the tables count the power as the first crossing
		// through the boundary on the side of the effect, a crossing of
		// the other first stopping the trial, as Power does.
		got, err := s.Inflation(pw)
		if err != nil {
			t.Fatal(err)
		}
		if want := r.F(t, "R"); math.Abs(got-want) > gsTol {
			t.Errorf("%s: inflation %.7f, want %.7f (groupseq_make.py)", r["id"], got, want)
		}
		if m := r["from_memory"]; m != "" && m != "NA" {
			want, _ := strconv.ParseFloat(m, 64)
			if math.Abs(got-want) > 6e-4 {
				t.Errorf("%s: inflation %.4f, the published table has %.3f (%s)", r["id"], got, want, r["memory_source"])
			}
		}
		th := r.F(t, "theta_s")
		_, e0 := s.Stopping(0)
		_, e1 := s.Stopping(th)
		if want := r.F(t, "en_frac_max_h0"); math.Abs(e0-want) > gsTol {
			t.Errorf("%s: E[N]/N_max under no effect %.7f, want %.7f", r["id"], e0, want)
		}
		if want := r.F(t, "en_frac_max_h1"); math.Abs(e1-want) > gsTol {
			t.Errorf("%s: E[N]/N_max under θ_s %.7f, want %.7f", r["id"], e1, want)
		}
		checked++
	}
	if checked < 60 {
		t.Fatalf("only %d designs checked", checked)
	}
}

func TestGroupSequentialSpending(t *testing.T) {
	rows := reftable.Load(t, "groupseq_spending.tsv")
	byID := map[string][]reftable.Row{}
	var ids []string
	for _, r := range rows {
		if byID[r["id"]] == nil {
			ids = append(ids, r["id"])
		}
		byID[r["id"]] = append(byID[r["id"]], r)
	}
	checked := 0
	for _, id := range ids {
		looks := byID[id]
		g, ok := designOf(t, looks[0])
		if !ok {
			continue
		}
		s, err := g.Boundaries()
		if err != nil {
			t.Fatalf("%s: %v", id, err)
		}
		for k, r := range looks {
			// The closed form of the spending function.
			if got, want := g.Spent(r.F(t, "t")), r.F(t, "alpha_cum"); math.Abs(got-want) > 1e-12*math.Max(1, want/1e-3) {
				t.Errorf("%s look %d: α(t) %.12g, want %.12g", id, k+1, got, want)
			}
			if want := r.F(t, "boundary"); math.Abs(s.Z[k]-want) > gsTol {
				t.Errorf("%s look %d: boundary %.8f, want %.8f", id, k+1, s.Z[k], want)
			}
			if want := r.F(t, "nominal_p"); math.Abs(s.PNominal[k]-want) > 1e-6*math.Max(want, 1e-3)*100 {
				t.Errorf("%s look %d: nominal p %.8g, want %.8g", id, k+1, s.PNominal[k], want)
			}
			if want := r.F(t, "alpha_cum"); math.Abs(s.AlphaSpent[k]-want) > 1e-7 {
				t.Errorf("%s look %d: alpha spent %.10g, want %.10g", id, k+1, s.AlphaSpent[k], want)
			}
		}
		checked++
	}
	if checked < 40 {
		t.Fatalf("only %d designs checked", checked)
	}
}

func TestGroupSequentialPowerAt(t *testing.T) {
	checked := 0
	for _, r := range reftable.Load(t, "groupseq_power_at.tsv") {
		g, ok := designOf(t, r)
		if !ok {
			continue
		}
		s, err := g.Boundaries()
		if err != nil {
			t.Fatal(err)
		}
		th := r.F(t, "theta")
		if got, want := s.Power(th), r.F(t, "power_upper"); math.Abs(got-want) > gsTol {
			t.Errorf("%s: power %.8f, want %.8f", r["id"], got, want)
		}
		up, _ := s.Crossing(th)
		for k, want := range floats(t, r["p_first_upper"]) {
			if math.Abs(up[k]-want) > gsTol {
				t.Errorf("%s look %d: first crossing %.8f, want %.8f", r["id"], k+1, up[k], want)
			}
		}
		if _, e := s.Stopping(th); math.Abs(e-r.F(t, "en_frac_max")) > gsTol {
			t.Errorf("%s: E[N]/N_max %.8f, want %s", r["id"], e, r["en_frac_max"])
		}
		// Solving the drift for that power gives back θ.
		if p := s.Power(th); p > 0.05 && p < 0.999 {
			back, err := s.Drift(p)
			if err != nil || math.Abs(back-th) > 1e-6 {
				t.Errorf("%s: drift for power %.6f is %v (%v), want %v", r["id"], p, back, err, th)
			}
		}
		checked++
	}
	if checked < 30 {
		t.Fatalf("only %d designs checked", checked)
	}
}

// TestGroupSequentialRefused: timing the design cannot use is an error.
func TestGroupSequentialRefused(t *testing.T) {
	for _, g := range []GroupSequential{
		{Timing: []float64{1}, Alpha: 0.05, Sides: 2, Family: Pocock},
		{Timing: []float64{0.3, 0.6, 1}, Alpha: 0.05, Sides: 2, Family: Pocock},
		{Timing: []float64{0.5, 0.4, 1}, Alpha: 0.05, Sides: 2, Family: Spending, Function: PocockType},
		{Timing: []float64{0.5, 0.9}, Alpha: 0.05, Sides: 2, Family: Spending, Function: PocockType},
		{Timing: EqualTiming(11), Alpha: 0.05, Sides: 2, Family: OBrienFleming},
	} {
		if _, err := g.Boundaries(); err == nil {
			t.Errorf("%v: no error", g.Timing)
		}
	}
}
