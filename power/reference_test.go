package power

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// refRow is one row of a reference table under testdata/reference, keyed by
// column name. Every table there was computed outside this project (R and
// statsmodels; see testdata/reference/README.md), and every row names its
// source in the column "source".
type refRow map[string]string

func loadRef(t *testing.T, name string) []refRow {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", "reference", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<16), 1<<20)
	var header []string
	var rows []refRow
	for sc.Scan() {
		fields := strings.Split(sc.Text(), "\t")
		if header == nil {
			header = fields
			continue
		}
		row := refRow{}
		for i, h := range header {
			if i < len(fields) {
				row[h] = fields[i]
			}
		}
		rows = append(rows, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(rows) == 0 {
		t.Fatalf("%s: no rows", name)
	}
	return rows
}

func (r refRow) f(t *testing.T, col string) float64 {
	t.Helper()
	v := r[col]
	switch v {
	case "NA":
		return math.NaN()
	case "Inf":
		return math.Inf(1)
	}
	x, err := strconv.ParseFloat(v, 64)
	if err != nil {
		t.Fatalf("%s: column %s: %v", r["id"], col, err)
	}
	return x
}

func (r refRow) i(t *testing.T, col string) int {
	t.Helper()
	return int(r.f(t, col))
}

func methodOf(t *testing.T, id string) Method {
	t.Helper()
	for _, m := range []Method{Fleiss, FleissCC, Kelsey, Schlesselman} {
		if m.String() == id {
			return m
		}
	}
	t.Fatalf("unknown method %q", id)
	return 0
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
	for _, row := range loadRef(t, "binary_n.tsv") {
		m := methodOf(t, row["method"])
		tp := TwoProportions{P1: row.f(t, "p1"), P2: row.f(t, "p2"), Alpha: row.f(t, "alpha"), Sides: row.i(t, "sides")}
		got, err := m.N(tp, row.f(t, "ratio"), row.f(t, "power"))
		want := row.f(t, "n_star")
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
	for _, row := range loadRef(t, "binary_power.tsv") {
		m := methodOf(t, row["method"])
		tp := TwoProportions{P1: row.f(t, "p1"), P2: row.f(t, "p2"), Alpha: row.f(t, "alpha"), Sides: row.i(t, "sides")}
		got := m.Power(tp, row.f(t, "n1"), row.f(t, "n2"))
		want := row.f(t, "power")
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
	for _, row := range loadRef(t, "binary_effect.tsv") {
		m := methodOf(t, row["method"])
		tp := TwoProportions{P2: row.f(t, "p2"), Alpha: row.f(t, "alpha"), Sides: row.i(t, "sides")}
		n1 := row.f(t, "n1")
		n2 := n1 * row.f(t, "ratio")
		for _, c := range []struct {
			dir int
			col string
		}{{-1, "p1_lower"}, {1, "p1_upper"}} {
			want := row.f(t, c.col)
			got, err := m.Detectable(tp, n1, n2, row.f(t, "power"), c.dir)
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
	for _, row := range loadRef(t, "statsmodels_binary.tsv") {
		tp := TwoProportions{P1: row.f(t, "p1"), P2: row.f(t, "p2"), Alpha: row.f(t, "alpha"), Sides: 1}
		r := row.f(t, "ratio")
		if strings.HasPrefix(row["id"], "sm_n_") {
			got, err := Fleiss.N(tp, r, row.f(t, "power"))
			if want := row.f(t, "n_star"); err != nil || !relClose(got, want, 1e-9) {
				t.Errorf("%s: N = %.10g, %v; want %.10g (%s)", row["id"], got, err, want, row["source"])
			}
			continue
		}
		n1 := row.f(t, "n_star")
		got := Fleiss.Power(tp, n1, r*n1)
		if want := row.f(t, "power"); math.Abs(got-want) > 1e-10 {
			t.Errorf("%s: Power = %.12g, want %.12g (%s)", row["id"], got, want, row["source"])
		}
	}
}

// TestPrecisionReference checks n0 and the unrounded size after the design
// effect and finite population correction against precision.tsv
// (independent R implementation of Cochran 1977).
func TestPrecisionReference(t *testing.T) {
	for _, row := range loadRef(t, "precision.tsv") {
		pr := Precision{P: row.f(t, "p"), Confidence: row.f(t, "confidence"),
			DesignEffect: row.f(t, "deff"), Population: row.f(t, "population")}
		n0, n := PrecisionN(pr, row.f(t, "margin"))
		if want := row.f(t, "n0"); !relClose(n0, want, 1e-9) {
			t.Errorf("%s: n0 = %.10g, want %.10g (%s)", row["id"], n0, want, row["source"])
		}
		// n_final = ceil(ceil(n)/(1 - nonresponse)) per the reference script.
		final := math.Ceil(math.Ceil(n) / (1 - row.f(t, "nonresponse")))
		if want := row.f(t, "n_final"); final != want {
			t.Errorf("%s: final = %v, want %v (%s)", row["id"], final, want, row["source"])
		}
		// Round trip: the margin achieved by the unrounded n is the margin.
		if m := PrecisionMargin(pr, n); !relClose(m, row.f(t, "margin"), 1e-9) {
			t.Errorf("%s: margin round trip = %.12g, want %v", row["id"], m, row["margin"])
		}
	}
}
