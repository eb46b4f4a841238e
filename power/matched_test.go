package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

// matchedRowSets returns the design of a row of the matched_*.tsv tables.
func matchedRowSets(t *testing.T, row reftable.Row) MatchedSets {
	t.Helper()
	m := 1
	if _, ok := row["M"]; ok {
		m = row.I(t, "M")
	}
	return MatchedSets{ControlExposure: row.F(t, "p0"), OddsRatio: row.F(t, "psi"), Controls: m, Correlation: row.F(t, "phi")}
}

// matchedClose reports whether got is within a relative tol of want.
func matchedClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// TestMatchedClosedReference checks the closed forms against
// testdata/reference/matched_closed.tsv: Dupont's (1988) sets and power,
// Connor's (1987) and Schlesselman's (1982) pairs and power, the case
// exposure and the conditional exposures of controls, each written out in
// R from the papers' formulas (matched_make.R, section 1; the R call is
// each row's source). All agree to 1e-10 relative; the infeasible rows
// (R: a conditional probability outside [0, 1]) give ErrMatchedInfeasible.
func TestMatchedClosedReference(t *testing.T) {
	const tol = 1e-10
	rows := reftable.Load(t, "matched_closed.tsv")
	var feasible, infeasible, pairs int
	for _, row := range rows {
		id := row["id"]
		s := matchedRowSets(t, row)
		alpha, sides, pw := row.F(t, "alpha"), row.I(t, "sides"), row.F(t, "power")
		if got, want := s.CaseExposure(), row.F(t, "p1"); !matchedClose(got, want, tol) {
			t.Errorf("%s: p1 %.15g, R %.15g", id, got, want)
		}
		if row.I(t, "feasible") == 0 {
			infeasible++
			if _, _, err := s.Conditional(); !errors.Is(err, ErrMatchedInfeasible) {
				t.Errorf("%s: Conditional error %v, want ErrMatchedInfeasible (%s)", id, err, row["source"])
			}
			if _, err := s.DupontSets(alpha, sides, pw); !errors.Is(err, ErrMatchedInfeasible) {
				t.Errorf("%s: DupontSets error %v", id, err)
			}
			if _, err := s.DupontPower(100, alpha, sides); !errors.Is(err, ErrMatchedInfeasible) {
				t.Errorf("%s: DupontPower error %v", id, err)
			}
			if _, err := s.DiscordantPerSet(); !errors.Is(err, ErrMatchedInfeasible) {
				t.Errorf("%s: DiscordantPerSet error %v", id, err)
			}
			if s.Controls == 1 {
				if _, err := s.ConnorPairs(alpha, sides, pw); !errors.Is(err, ErrMatchedInfeasible) {
					t.Errorf("%s: ConnorPairs error %v", id, err)
				}
				if _, err := s.McNemarExactPower(50, alpha, sides, 0); !errors.Is(err, ErrMatchedInfeasible) {
					t.Errorf("%s: McNemarExactPower error %v", id, err)
				}
			}
			if _, err := NewMatchedSim(MatchedSim{MatchedSets: s, Sets: 50, Alpha: alpha, Sides: sides}); !errors.Is(err, ErrMatchedInfeasible) {
				t.Errorf("%s: NewMatchedSim error %v", id, err)
			}
			continue
		}
		feasible++
		pp, pm, err := s.Conditional()
		if err != nil {
			t.Fatalf("%s: %v", id, err)
		}
		if !matchedClose(pp, row.F(t, "pplus"), tol) || !matchedClose(pm, row.F(t, "pminus"), tol) {
			t.Errorf("%s: p0+ %.15g p0- %.15g, R %s %s", id, pp, pm, row["pplus"], row["pminus"])
		}
		if got, err := s.DiscordantPerSet(); err != nil || !matchedClose(got, row.F(t, "discordant"), tol) {
			t.Errorf("%s: discordant per set %.15g (%v), R %s", id, got, err, row["discordant"])
		}
		n, err := s.DupontSets(alpha, sides, pw)
		if err != nil || !matchedClose(n, row.F(t, "dupont_sets"), tol) {
			t.Errorf("%s: Dupont sets %.15g (%v), R %s (%s)", id, n, err, row["dupont_sets"], row["source"])
		}
		nAt := row.F(t, "n_at")
		if got, err := s.DupontPower(nAt, alpha, sides); err != nil || !matchedClose(got, row.F(t, "dupont_power"), tol) {
			t.Errorf("%s: Dupont power at %v sets %.15g (%v), R %s", id, nAt, got, err, row["dupont_power"])
		}
		if s.Controls != 1 {
			continue
		}
		pairs++
		if got, err := s.ConnorPairs(alpha, sides, pw); err != nil || !matchedClose(got, row.F(t, "connor_pairs"), tol) {
			t.Errorf("%s: Connor pairs %.15g (%v), R %s", id, got, err, row["connor_pairs"])
		}
		if got, err := s.ConnorPower(nAt, alpha, sides); err != nil || !matchedClose(got, row.F(t, "connor_power"), tol) {
			t.Errorf("%s: Connor power %.15g (%v), R %s", id, got, err, row["connor_power"])
		}
		np, nd, err := s.SchlesselmanPairs(alpha, sides, pw)
		if err != nil || !matchedClose(np, row.F(t, "schl_pairs"), tol) || !matchedClose(nd, row.F(t, "schl_discordant"), tol) {
			t.Errorf("%s: Schlesselman pairs %.15g discordant %.15g (%v), R %s %s", id, np, nd, err, row["schl_pairs"], row["schl_discordant"])
		}
		if got := s.SchlesselmanPower(nAt, alpha, sides); !matchedClose(got, row.F(t, "schl_power"), tol) {
			t.Errorf("%s: Schlesselman power %.15g, R %s", id, got, row["schl_power"])
		}
		// The discordant-pair probabilities sum to the discordant share
		// (R's discordant column) and differ by p1 − p0 (checked in R).
		p10, p01, err := s.PairProbabilities()
		if err != nil || !matchedClose(p10+p01, row.F(t, "discordant"), tol) || !matchedClose(p10-p01, row.F(t, "p1")-row.F(t, "p0"), tol) {
			t.Errorf("%s: p10 %.15g p01 %.15g (%v)", id, p10, p01, err)
		}
	}
	if feasible < 120 || infeasible < 3 || pairs < 40 {
		t.Errorf("only %d feasible rows (%d pairs) and %d infeasible", feasible, pairs, infeasible)
	}
}

// TestMaxMatchedCorrelation checks the closed form min(√ψ, 1/√ψ) against
// the bound found numerically in R (uniroot on the conditional
// probabilities, matched_maxphi.tsv), and that the bound is feasible while
// a hair above it is not.
func TestMaxMatchedCorrelation(t *testing.T) {
	for _, row := range reftable.Load(t, "matched_maxphi.tsv") {
		psi, want := row.F(t, "psi"), row.F(t, "maxphi")
		got := MaxMatchedCorrelation(psi)
		if !matchedClose(got, want, 1e-9) {
			t.Errorf("%s: ψ = %v: %.15g, R %.15g (%s)", row["id"], psi, got, want, row["source"])
		}
		if got >= 1 {
			continue
		}
		s := MatchedSets{ControlExposure: row.F(t, "p0"), OddsRatio: psi, Controls: 3, Correlation: got}
		pp, pm, err := s.Conditional()
		if err != nil || pp < 0 || pp > 1 || pm < 0 || pm > 1 {
			t.Errorf("%s: at the bound: %v %v %v", row["id"], pp, pm, err)
		}
		s.Correlation = got * (1 + 1e-9)
		if _, _, err := s.Conditional(); !errors.Is(err, ErrMatchedInfeasible) {
			t.Errorf("%s: above the bound: %v", row["id"], err)
		}
	}
}

// TestMatchedIdentities checks relations between the methods that hold
// exactly (derivations in testdata/reference/matched_README.md; the same
// identities are CHECK lines of matched_make.out):
//
//   - with one control and φ = 0, Dupont's t_1 is p_e = p0 q1 + p1 q0,
//     V0 = p_e/4, V1 = p_e P(1 − P) and D = p_e (P − ½), P = ψ/(1 + ψ), so
//     Dupont's sets are Schlesselman's pairs and the powers agree;
//   - Connor's alternative variance p_d − δ² exceeds Dupont's conditional
//     one, 4 V1 = p_d − δ²/p_d, so Connor needs more pairs at any target
//     power above ½ and the same at ½ (where only the null variance
//     counts).
func TestMatchedIdentities(t *testing.T) {
	for _, p0 := range []float64{0.05, 0.2, 0.5, 0.8} {
		for _, psi := range []float64{0.3, 0.8, 1.25, 2, 6} {
			s := MatchedSets{ControlExposure: p0, OddsRatio: psi, Controls: 1}
			for _, pw := range []float64{0.5, 0.8, 0.95} {
				nd, err1 := s.DupontSets(0.05, 2, pw)
				ns, _, err2 := s.SchlesselmanPairs(0.05, 2, pw)
				nc, err3 := s.ConnorPairs(0.05, 2, pw)
				if err1 != nil || err2 != nil || err3 != nil {
					t.Fatal(err1, err2, err3)
				}
				if !matchedClose(nd, ns, 1e-12) {
					t.Errorf("p0 %v ψ %v power %v: Dupont %.15g ≠ Schlesselman %.15g", p0, psi, pw, nd, ns)
				}
				if pw == 0.5 && !matchedClose(nd, nc, 1e-12) || pw > 0.5 && !(nc > nd) {
					t.Errorf("p0 %v ψ %v power %v: Dupont %.15g, Connor %.15g", p0, psi, pw, nd, nc)
				}
			}
			pd, _ := s.DupontPower(300, 0.01, 1)
			if ps := s.SchlesselmanPower(300, 0.01, 1); !matchedClose(pd, ps, 1e-12) {
				t.Errorf("p0 %v ψ %v: Dupont power %.15g ≠ Schlesselman %.15g", p0, psi, pd, ps)
			}
		}
	}
}

// TestMatchedRoundTrip: the power at the solved number of sets or pairs
// is the target, for every method and a few designs.
func TestMatchedRoundTrip(t *testing.T) {
	for _, s := range []MatchedSets{
		{ControlExposure: 0.2, OddsRatio: 2.2, Controls: 1, Correlation: 0.15},
		{ControlExposure: 0.6, OddsRatio: 0.45, Controls: 1},
		{ControlExposure: 0.35, OddsRatio: 1.7, Controls: 3, Correlation: 0.1},
		{ControlExposure: 0.1, OddsRatio: 0.4, Controls: 10, Correlation: 0.3},
	} {
		for _, c := range []struct {
			alpha float64
			sides int
			power float64
		}{{0.05, 2, 0.8}, {0.01, 1, 0.9}, {0.1, 2, 0.6}} {
			n, err := s.DupontSets(c.alpha, c.sides, c.power)
			if err != nil {
				t.Fatal(err)
			}
			if p, _ := s.DupontPower(n, c.alpha, c.sides); math.Abs(p-c.power) > 1e-12 {
				t.Errorf("%+v %+v: Dupont power %.15g at its n %.6f", s, c, p, n)
			}
			if s.Controls != 1 {
				continue
			}
			n, err = s.ConnorPairs(c.alpha, c.sides, c.power)
			if p, _ := s.ConnorPower(n, c.alpha, c.sides); err != nil || math.Abs(p-c.power) > 1e-12 {
				t.Errorf("%+v %+v: Connor power %.15g at its n %.6f (%v)", s, c, p, n, err)
			}
			n, _, err = s.SchlesselmanPairs(c.alpha, c.sides, c.power)
			if p := s.SchlesselmanPower(n, c.alpha, c.sides); err != nil || math.Abs(p-c.power) > 1e-12 {
				t.Errorf("%+v %+v: Schlesselman power %.15g at its n %.6f (%v)", s, c, p, n, err)
			}
		}
	}
}

// TestMatchedMonotone: more sets are needed as the odds ratio nears 1 and
// as the within-set correlation grows (fewer informative sets, in
// Dupont's model), and fewer as controls are added.
func TestMatchedMonotone(t *testing.T) {
	prev := 0.0
	for _, psi := range []float64{4, 3, 2, 1.5, 1.2} {
		n, _ := MatchedSets{ControlExposure: 0.3, OddsRatio: psi, Controls: 2, Correlation: 0.1}.DupontSets(0.05, 2, 0.8)
		if !(n > prev) {
			t.Errorf("ψ %v: %v sets after %v", psi, n, prev)
		}
		prev = n
	}
	prev = 0
	for _, phi := range []float64{0, 0.1, 0.2, 0.4} {
		n, _ := MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 2, Correlation: phi}.DupontSets(0.05, 2, 0.8)
		if !(n > prev) {
			t.Errorf("φ %v: %v sets after %v", phi, n, prev)
		}
		prev = n
	}
	prev = math.Inf(1)
	for m := 1; m <= MaxMatchedControls; m++ {
		n, _ := MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: m, Correlation: 0.1}.DupontSets(0.05, 2, 0.8)
		if !(n < prev) {
			t.Errorf("M %d: %v sets after %v", m, n, prev)
		}
		prev = n
	}
}

// TestMatchedNothingToDetect: at ψ = 1 the solvers return
// ErrNothingToDetect, and the powers are the level's tail α/s (Φ(−z_{1−α/s})
// = α/s by definition of the quantile).
func TestMatchedNothingToDetect(t *testing.T) {
	s := MatchedSets{ControlExposure: 0.3, OddsRatio: 1, Controls: 1, Correlation: 0.2}
	if _, err := s.DupontSets(0.05, 2, 0.8); !errors.Is(err, ErrNothingToDetect) {
		t.Errorf("Dupont: %v", err)
	}
	if _, err := s.ConnorPairs(0.05, 2, 0.8); !errors.Is(err, ErrNothingToDetect) {
		t.Errorf("Connor: %v", err)
	}
	if _, _, err := s.SchlesselmanPairs(0.05, 2, 0.8); !errors.Is(err, ErrNothingToDetect) {
		t.Errorf("Schlesselman: %v", err)
	}
	pd, _ := s.DupontPower(500, 0.05, 2)
	pc, _ := s.ConnorPower(500, 0.05, 2)
	if ps := s.SchlesselmanPower(500, 0.05, 2); !matchedClose(pd, 0.025, 1e-12) || !matchedClose(pc, 0.025, 1e-12) || !matchedClose(ps, 0.025, 1e-12) {
		t.Errorf("powers at ψ = 1: %v %v %v, want 0.025", pd, pc, ps)
	}
	// A target power below the level's tail is reached with no sets.
	s.OddsRatio = 1.5
	if _, err := s.DupontSets(0.05, 1, 0.02); !errors.Is(err, ErrUnreachable) {
		t.Errorf("Dupont at power 0.02: %v", err)
	}
	if _, err := s.ConnorPairs(0.05, 1, 0.02); !errors.Is(err, ErrUnreachable) {
		t.Errorf("Connor at power 0.02: %v", err)
	}
	if _, _, err := s.SchlesselmanPairs(0.05, 1, 0.02); !errors.Is(err, ErrUnreachable) {
		t.Errorf("Schlesselman at power 0.02: %v", err)
	}
}

// TestMcNemarExactReference checks the exact powers of McNemar's z test
// and of the exact binomial test against R's enumeration
// (matched_mcnemar.tsv: the double sum of dbinom(d, n, pd)·dbinom(n10, d,
// p10/pd) over the rejected tables up to 1000 pairs, the sum of dbinom
// times pbinom tails beyond), to 1e-9, from 5 to 10⁶ pairs.
func TestMcNemarExactReference(t *testing.T) {
	for _, row := range reftable.Load(t, "matched_mcnemar.tsv") {
		s := matchedRowSets(t, row)
		n, alpha, sides, dir := row.I(t, "pairs"), row.F(t, "alpha"), row.I(t, "sides"), row.I(t, "dir")
		p10, p01, err := s.PairProbabilities()
		if err != nil || !matchedClose(p10, row.F(t, "p10"), 1e-12) || !matchedClose(p01, row.F(t, "p01"), 1e-12) {
			t.Errorf("%s: p10 %.15g p01 %.15g (%v), R %s %s", row["id"], p10, p01, err, row["p10"], row["p01"])
		}
		z, err := s.McNemarExactPower(n, alpha, sides, dir)
		if err != nil || math.Abs(z-row.F(t, "power_z")) > 1e-9 {
			t.Errorf("%s: z test power %.15g (%v), R %s (%s)", row["id"], z, err, row["power_z"], row["source"])
		}
		b, err := s.McNemarBinomialPower(n, alpha, sides, dir)
		if err != nil || math.Abs(b-row.F(t, "power_exact")) > 1e-9 {
			t.Errorf("%s: exact test power %.15g (%v), R %s (%s)", row["id"], b, err, row["power_exact"], row["source"])
		}
	}
}

// TestMatchedPanics: fields and arguments out of range are programmer
// errors.
func TestMatchedPanics(t *testing.T) {
	ok := MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 1}
	cases := map[string]func(){
		"p0 0":          func() { MatchedSets{ControlExposure: 0, OddsRatio: 2, Controls: 1}.CaseExposure() },
		"p0 1":          func() { MatchedSets{ControlExposure: 1, OddsRatio: 2, Controls: 1}.CaseExposure() },
		"psi 0":         func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 0, Controls: 1}.CaseExposure() },
		"psi inf":       func() { MatchedSets{ControlExposure: 0.3, OddsRatio: math.Inf(1), Controls: 1}.CaseExposure() },
		"psi nan":       func() { MatchedSets{ControlExposure: 0.3, OddsRatio: math.NaN(), Controls: 1}.CaseExposure() },
		"controls 0":    func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 2}.Conditional() },
		"controls 11":   func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 11}.Conditional() },
		"phi 1":         func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 1, Controls: 1, Correlation: 1}.Conditional() },
		"phi negative":  func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 1, Controls: 1, Correlation: -0.1}.Conditional() },
		"connor M 2":    func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 2}.ConnorPairs(0.05, 2, 0.8) },
		"schl M 2":      func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 2}.SchlesselmanPower(10, 0.05, 2) },
		"mcnemar M 2":   func() { MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 2}.McNemarExactPower(10, 0.05, 2, 0) },
		"mcnemar n 0":   func() { ok.McNemarExactPower(0, 0.05, 2, 0) },
		"mcnemar dir 0": func() { ok.McNemarExactPower(10, 0.05, 1, 0) },
		"alpha 0":       func() { ok.DupontSets(0, 2, 0.8) },
		"power 1":       func() { ok.DupontSets(0.05, 2, 1) },
		"sides 3":       func() { ok.ConnorPairs(0.05, 3, 0.8) },
		"sets 0":        func() { ok.DupontPower(0, 0.05, 2) },
		"pairs nan":     func() { ok.ConnorPower(math.NaN(), 0.05, 2) },
		"max psi 0":     func() { MaxMatchedCorrelation(0) },
		"sim sets 0":    func() { NewMatchedSim(MatchedSim{MatchedSets: ok, Sets: 0, Alpha: 0.05, Sides: 2}) },
		"sim alpha 1":   func() { NewMatchedSim(MatchedSim{MatchedSets: ok, Sets: 10, Alpha: 1, Sides: 2}) },
		"sim dir":       func() { NewMatchedSim(MatchedSim{MatchedSets: ok, Sets: 10, Alpha: 0.05, Sides: 1}) },
	}
	for name, f := range cases {
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

// BenchmarkMcNemarExactPower1e6 measures the exact power of McNemar's z
// test at a million pairs (row mcn_14 of matched_mcnemar.tsv).
func BenchmarkMcNemarExactPower1e6(b *testing.B) {
	s := MatchedSets{ControlExposure: 0.4, OddsRatio: 1.01, Controls: 1, Correlation: 0.1}
	var sink float64
	for b.Loop() {
		p, err := s.McNemarExactPower(1_000_000, 0.05, 2, 0)
		if err != nil {
			b.Fatal(err)
		}
		sink += p
	}
	_ = sink
}

// BenchmarkDupontSets measures Dupont's closed form with four controls.
func BenchmarkDupontSets(b *testing.B) {
	s := MatchedSets{ControlExposure: 0.3, OddsRatio: 2, Controls: 4, Correlation: 0.1}
	var sink float64
	for b.Loop() {
		n, err := s.DupontSets(0.05, 2, 0.8)
		if err != nil {
			b.Fatal(err)
		}
		sink += n
	}
	_ = sink
}

// TestMcNemarExactPowerWithinSets checks the exact power of McNemar's z
// test in the within-set reading against R's full double sum of dbinom
// (matched_mcnemar_within.tsv, matched_within_make.R), to 1e-9.
func TestMcNemarExactPowerWithinSets(t *testing.T) {
	rows := reftable.Load(t, "matched_mcnemar_within.tsv")
	for _, row := range rows {
		s := MatchedSets{ControlExposure: row.F(t, "p0"), OddsRatio: row.F(t, "psi"), Controls: 1, Correlation: row.F(t, "phi")}
		got, err := s.McNemarExactPowerWithinSets(row.I(t, "n"), row.F(t, "alpha"), row.I(t, "sides"), row.I(t, "dir"))
		if err != nil {
			t.Fatal(err)
		}
		if want := row.F(t, "power"); math.Abs(got-want) > 1e-9 {
			t.Errorf("%s: %v, want %v (%s)", row["id"], got, want, row["source"])
		}
	}
	if len(rows) < 4 {
		t.Errorf("%d rows", len(rows))
	}
}
