package power

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// byName returns the member of ms whose String is id.
func byName[M fmt.Stringer](t *testing.T, id string, ms ...M) M {
	t.Helper()
	for _, m := range ms {
		if m.String() == id {
			return m
		}
	}
	t.Fatalf("unknown method %q", id)
	var zero M
	return zero
}

func methodOf(t *testing.T, id string) Method {
	t.Helper()
	return byName(t, id, Fleiss, FleissCC, Kelsey, Schlesselman)
}

// relClose reports whether got is within a relative tolerance of want.
func relClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// TestNReference checks the unrounded first-group size of every method
// against binary_n.tsv: independent R implementations of the published
// formulas and R stats::power.prop.test (the call is in each row's source).
func TestNReference(t *testing.T) {
	const tol = 1e-9 // the references print 15 significant digits
	for _, row := range reftable.Load(t, "binary_n.tsv") {
		m := methodOf(t, row["method"])
		tp := TwoProportions{P1: row.F(t, "p1"), P2: row.F(t, "p2"), Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides")}
		got, err := m.N(tp, row.F(t, "ratio"), row.F(t, "power"))
		want := row.F(t, "n_star")
		if err != nil || !relClose(got, want, tol) {
			t.Errorf("%s: %v.N = %.10g, %v; want %.10g (%s)", row["id"], m, got, err, want, row["source"])
		}
		// The rounded size is exact, whatever the noise.
		if err == nil && math.Ceil(got) != math.Ceil(want) {
			t.Errorf("%s: ceil(n) = %v, want %v", row["id"], math.Ceil(got), math.Ceil(want))
		}
	}
}

// TestPowerReference checks power at given sizes against binary_power.tsv
// (independent R implementations; R stats::power.prop.test), including the
// small-n region where the continuity-corrected inversion is held at n' = 0.
func TestPowerReference(t *testing.T) {
	const tol = 1e-10
	for _, row := range reftable.Load(t, "binary_power.tsv") {
		m := methodOf(t, row["method"])
		tp := TwoProportions{P1: row.F(t, "p1"), P2: row.F(t, "p2"), Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides")}
		got := m.Power(tp, row.F(t, "n1"), row.F(t, "n2"))
		want := row.F(t, "power")
		if math.Abs(got-want) > tol {
			t.Errorf("%s: %v.Power = %.12g, want %.12g (%s)", row["id"], m, got, want, row["source"])
		}
	}
}

// TestDetectableReference checks the smallest detectable first-group risk
// against binary_effect.tsv (uniroot on independent R implementations);
// NA there means unreachable.
func TestDetectableReference(t *testing.T) {
	const tol = 1e-9
	for _, row := range reftable.Load(t, "binary_effect.tsv") {
		m := methodOf(t, row["method"])
		tp := TwoProportions{P2: row.F(t, "p2"), Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides")}
		n1 := row.F(t, "n1")
		n2 := n1 * row.F(t, "ratio")
		for _, c := range []struct {
			dir int
			col string
		}{{-1, "p1_lower"}, {1, "p1_upper"}} {
			want := row.F(t, c.col)
			got, err := m.Detectable(tp, n1, n2, row.F(t, "power"), c.dir)
			switch {
			case math.IsNaN(want):
				if err != ErrUnreachable {
					t.Errorf("%s %s: got %v, %v; want ErrUnreachable (%s)", row["id"], c.col, got, err, row["source"])
				}
			case err != nil || math.Abs(got-want) > tol:
				t.Errorf("%s %s: got %.12g, %v; want %.12g (%s)", row["id"], c.col, got, err, want, row["source"])
			}
		}
	}
}

// TestStatsmodelsReference checks the uncorrected Fleiss formula with
// unequal allocation against statsmodels 0.13.5
// (samplesize_proportions_2indep_onetail and power_proportions_2indep, one
// tail; the exact calls are in statsmodels_binary.tsv). The alpha column is
// the one-tail level passed, so the comparison uses sides = 1.
func TestStatsmodelsReference(t *testing.T) {
	for _, row := range reftable.Load(t, "statsmodels_binary.tsv") {
		tp := TwoProportions{P1: row.F(t, "p1"), P2: row.F(t, "p2"), Alpha: row.F(t, "alpha"), Sides: 1}
		r := row.F(t, "ratio")
		if strings.HasPrefix(row["id"], "sm_n_") {
			got, err := Fleiss.N(tp, r, row.F(t, "power"))
			if want := row.F(t, "n_star"); err != nil || !relClose(got, want, 1e-9) {
				t.Errorf("%s: N = %.10g, %v; want %.10g (%s)", row["id"], got, err, want, row["source"])
			}
			continue
		}
		n1 := row.F(t, "n_star")
		got := Fleiss.Power(tp, n1, r*n1)
		if want := row.F(t, "power"); math.Abs(got-want) > 1e-10 {
			t.Errorf("%s: Power = %.12g, want %.12g (%s)", row["id"], got, want, row["source"])
		}
	}
}

// TestPrecisionReference checks n0 and the unrounded size after the design
// effect and finite population correction against precision.tsv
// (independent R implementation of Cochran 1977).
func TestPrecisionReference(t *testing.T) {
	for _, row := range reftable.Load(t, "precision.tsv") {
		pr := Precision{P: row.F(t, "p"), Confidence: row.F(t, "confidence"),
			DesignEffect: row.F(t, "deff"), Population: row.F(t, "population")}
		n0, n := PrecisionN(pr, row.F(t, "margin"))
		if want := row.F(t, "n0"); !relClose(n0, want, 1e-9) {
			t.Errorf("%s: n0 = %.10g, want %.10g (%s)", row["id"], n0, want, row["source"])
		}
		// n_final = ceil(ceil(n)/(1 - nonresponse)) per the reference script.
		final := math.Ceil(math.Ceil(n) / (1 - row.F(t, "nonresponse")))
		if want := row.F(t, "n_final"); final != want {
			t.Errorf("%s: final = %v, want %v (%s)", row["id"], final, want, row["source"])
		}
		// Round trip: the margin achieved by the unrounded n is the margin.
		if m := PrecisionMargin(pr, n); !relClose(m, row.F(t, "margin"), 1e-9) {
			t.Errorf("%s: margin round trip = %.12g, want %v", row["id"], m, row["margin"])
		}
	}
}
