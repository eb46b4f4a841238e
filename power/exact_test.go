package power

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"testing"

	"enough/power/reftable"
)

func exactTestOf(t *testing.T, id string) BinaryTest {
	t.Helper()
	bt, ok := ParseBinaryTest(id)
	if !ok {
		t.Fatalf("unknown binary test %q", id)
	}
	return bt
}

// relErrClose reports whether got is within a relative tolerance of want,
// however small want is (for p-values far in the tail).
func relErrClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Abs(want)
}

func TestBinaryTestNames(t *testing.T) {
	for _, c := range []struct {
		test BinaryTest
		name string
	}{{ChiSquare, "chi-square"}, {ChiSquareYates, "chi-square-yates"}, {Fisher, "fisher"}, {ZUnpooled, "z-unpooled"}} {
		if got := c.test.String(); got != c.name {
			t.Errorf("%d.String() = %q, want %q", int(c.test), got, c.name)
		}
		if got, ok := ParseBinaryTest(c.name); !ok || got != c.test {
			t.Errorf("ParseBinaryTest(%q) = %v, %v", c.name, got, ok)
		}
	}
	for _, s := range []string{"", "chisq", "Fisher", "z", "chi-square "} {
		if got, ok := ParseBinaryTest(s); ok {
			t.Errorf("ParseBinaryTest(%q) = %v, want not ok", s, got)
		}
	}
	if got := BinaryTest(9).String(); got != "BinaryTest(9)" {
		t.Errorf("BinaryTest(9).String() = %q", got)
	}
}

// TestFisherPValueReference checks Fisher's p-values, two-sided by R's
// summed-probabilities rule and one-sided, against R 4.2.2
// fisher.test(matrix(c(x1, n1-x1, x2, n2-x2), 2))$p.value, rows of
// exact_fisher.tsv (the exact call is in each row's source). The rows
// include exact ties (4/10 against 6/10, where the two tails are mirror
// images), zero cells, a table with no events and one with events only.
func TestFisherPValueReference(t *testing.T) {
	const tol = 1e-11 // R prints 15 digits; both sides are accurate to ~1e-13
	rows := reftable.Load(t, "exact_fisher.tsv")
	if len(rows) < 20 {
		t.Fatalf("%d Fisher tables, want at least 20", len(rows))
	}
	for _, row := range rows {
		x1, n1, x2, n2 := row.I(t, "x1"), row.I(t, "n1"), row.I(t, "x2"), row.I(t, "n2")
		for _, c := range []struct {
			col string
			dir int
		}{{"p_two", 0}, {"p_greater", 1}, {"p_less", -1}} {
			got, want := fisherP(x1, n1, x2, n2, c.dir), row.F(t, c.col)
			if !relErrClose(got, want, tol) {
				t.Errorf("%s %d/%d vs %d/%d %s: got %.15g, want %.15g (%s)", row["id"], x1, n1, x2, n2, c.col, got, want, row["source"])
			}
		}
	}
}

// TestChiSquareReference checks Pearson's X² with and without Yates'
// correction, and the two- and one-sided p-values that follow from it,
// against R 4.2.2 chisq.test(m, correct = FALSE/TRUE) and
// prop.test(c(x1, x2), c(n1, n2), alternative, correct), rows of
// exact_chisq.tsv. NA in R (no events, or events only) is the undefined
// statistic.
func TestChiSquareReference(t *testing.T) {
	for _, row := range reftable.Load(t, "exact_chisq.tsv") {
		x1, n1, x2, n2 := row.I(t, "x1"), row.I(t, "n1"), row.I(t, "x2"), row.I(t, "n2")
		sign := math.Copysign(1, float64(x1*n2-x2*n1))
		for _, c := range []struct {
			yates             bool
			stat, p, pGt, pLt string
		}{{false, "stat", "p", "p_greater", "p_less"}, {true, "stat_yates", "p_yates", "p_greater_yates", "p_less_yates"}} {
			want := row.F(t, c.stat)
			got, ok := chiSquareStat(x1, n1, x2, n2, c.yates)
			if math.IsNaN(want) {
				if ok {
					t.Errorf("%s %s: got %v, want undefined (R: NaN) (%s)", row["id"], c.stat, got, row["source"])
				}
				continue
			}
			if !ok || !relClose(got, want, 1e-12) {
				t.Errorf("%s %s: got %.15g, %v; want %.15g (%s)", row["id"], c.stat, got, ok, want, row["source"])
				continue
			}
			z := sign * math.Sqrt(got)
			for _, pc := range []struct {
				col string
				got float64
			}{{c.p, 2 * normCDF(-math.Abs(z))}, {c.pGt, normCDF(-z)}, {c.pLt, normCDF(z)}} {
				if want := row.F(t, pc.col); !relErrClose(pc.got, want, 1e-9) {
					t.Errorf("%s %s: got %.15g, want %.15g (%s)", row["id"], pc.col, pc.got, want, row["source"])
				}
			}
		}
	}
}

// TestZUnpooledByHand checks the Wald z with the unpooled variance on
// tables whose arithmetic is done by hand beside each case.
func TestZUnpooledByHand(t *testing.T) {
	for _, c := range []struct {
		x1, n1, x2, n2 int
		want           float64
		hand           string
	}{
		{2, 10, 6, 10, -2, "0.2 − 0.6 = −0.4; var = 0.16/10 + 0.24/10 = 0.04; z = −0.4/0.2"},
		{3, 4, 1, 4, math.Sqrt(8.0 / 3), "0.5; var = 2·0.1875/4 = 0.09375; z² = 0.25/0.09375 = 8/3"},
		{1, 2, 0, 5, math.Sqrt2, "0.5; var = 0.25/2 = 0.125; z² = 0.25/0.125 = 2"},
		{0, 5, 1, 2, -math.Sqrt2, "the same table, groups swapped"},
		{5, 10, 2, 4, 0, "0.5 = 0.5: z = 0"},
		{0, 3, 0, 7, 0, "both proportions 0: z = 0 by definition"},
		{3, 3, 7, 7, 0, "both proportions 1: z = 0 by definition"},
		{0, 3, 3, 3, math.Inf(-1), "0 against 1: zero variance, z = −∞"},
		{4, 4, 0, 9, math.Inf(1), "1 against 0: zero variance, z = +∞"},
		{9, 10, 10, 10, -1 / math.Sqrt(0.9), "var = 0.09/10 = 0.009; z² = 0.01/0.009 = 10/9"},
	} {
		got := zUnpooledStat(c.x1, c.n1, c.x2, c.n2)
		if !(got == c.want || relClose(got, c.want, 1e-14)) {
			t.Errorf("z(%d/%d, %d/%d) = %v, want %v (by hand: %s)", c.x1, c.n1, c.x2, c.n2, got, c.want, c.hand)
		}
	}
}

// refTableBits parses a 0/1 string of exact_reject.tsv.
func refTableBits(t *testing.T, s string) []bool {
	t.Helper()
	out := make([]bool, len(s))
	for i, ch := range s {
		switch ch {
		case '0':
		case '1':
			out[i] = true
		default:
			t.Fatalf("bad table character %q", ch)
		}
	}
	return out
}

// TestRejectionTableReference compares whole rejection tables, cell by
// cell, with the decisions of R's own tests (exact_reject.tsv: fisher.test,
// chisq.test and prop.test; an independent R Wald z), for n1 = n2 = 3, 10,
// 20, 35 and the unequal 15/30, 7/12 and 12/9, two-sided and both
// one-sided directions. The 3/3 tables at alpha 0.05 one-sided and 0.1
// two-sided hold the exact ties p = alpha (R's p is 0.050000000000000024
// and 0.10000000000000003): both reject.
func TestRejectionTableReference(t *testing.T) {
	rows := reftable.Load(t, "exact_reject.tsv")
	for _, row := range rows {
		test := exactTestOf(t, row["test"])
		n1, n2 := row.I(t, "n1"), row.I(t, "n2")
		got := RejectionTable(test, n1, n2, row.F(t, "alpha"), row.I(t, "sides"), row.I(t, "dir"))
		want := refTableBits(t, row["table"])
		if len(got) != len(want) || len(got) != (n1+1)*(n2+1) {
			t.Fatalf("%s: %d cells, want %d", row["id"], len(got), len(want))
		}
		count := 0
		for i := range got {
			if got[i] {
				count++
			}
			if got[i] != want[i] {
				t.Errorf("%s %v n %d/%d alpha %s sides %s dir %s: (x1, x2) = (%d, %d) rejects %v, R says %v (%s)",
					row["id"], test, n1, n2, row["alpha"], row["sides"], row["dir"], i/(n2+1), i%(n2+1), got[i], want[i], row["source"])
			}
		}
		if count != row.I(t, "count") {
			t.Errorf("%s: %d rejections, R %d", row["id"], count, row.I(t, "count"))
		}
	}
	// Guard the reference itself: the exact ties must be in it, as rejections.
	tie := map[string]bool{}
	for _, row := range rows {
		if row["test"] == "fisher" && row["n1"] == "3" && row["n2"] == "3" {
			bits := refTableBits(t, row["table"])
			tie[row["alpha"]+"/"+row["sides"]+"/"+row["dir"]] = bits[3*4+0] // x1 = 3, x2 = 0
		}
	}
	if !tie["0.05/1/1"] || !tie["0.1/2/0"] {
		t.Errorf("exact_reject.tsv lacks the p = alpha rejections of 3/3 vs 0/3: %v", tie)
	}
}

// TestExactPowerReference checks exact power against independent R
// enumerations, sum(outer(dbinom(...), dbinom(...))[R]) with R's own test
// decisions (exact_power.tsv), from n = 3 to n = 500 per group.
func TestExactPowerReference(t *testing.T) {
	const tol = 1e-12
	for _, row := range reftable.Load(t, "exact_power.tsv") {
		test := exactTestOf(t, row["test"])
		got := ExactPower(test, row.I(t, "n1"), row.I(t, "n2"), row.F(t, "p1"), row.F(t, "p2"),
			row.F(t, "alpha"), row.I(t, "sides"), row.I(t, "dir"))
		if want := row.F(t, "power"); math.Abs(got-want) > tol {
			t.Errorf("%s %v n %s/%s p %s/%s sides %s dir %s: got %.15g, want %.15g (%s)", row["id"], test,
				row["n1"], row["n2"], row["p1"], row["p2"], row["sides"], row["dir"], got, want, row["source"])
		}
	}
}

// TestExactSolveNReference checks the saw-tooth search against exact
// power for every n1 of each window computed in R (exact_sawtooth.tsv),
// with the first and stable sizes R found. Cases 1–3 have a tooth: a size
// reaches the target and the next falls below it again; case 5 never
// reaches it.
func TestExactSolveNReference(t *testing.T) {
	rows := reftable.Load(t, "exact_sawtooth.tsv")
	cases := map[string][]reftable.Row{}
	var order []string
	for _, row := range rows {
		if _, ok := cases[row["case"]]; !ok {
			order = append(order, row["case"])
		}
		cases[row["case"]] = append(cases[row["case"]], row)
	}
	teeth := 0
	for _, id := range order {
		rs := cases[id]
		r0 := rs[0]
		test := exactTestOf(t, r0["test"])
		low, high := r0.I(t, "low"), r0.I(t, "high")
		st, err := ExactSolveN(test, r0.F(t, "ratio"), r0.F(t, "p1"), r0.F(t, "p2"), r0.F(t, "alpha"),
			r0.I(t, "sides"), r0.I(t, "dir"), r0.F(t, "target"), low, high)
		first, stable := r0.I(t, "first"), r0.I(t, "stable")
		if first == 0 {
			if !errors.Is(err, ErrUnreachable) {
				t.Errorf("case %s: err %v, want ErrUnreachable (R: no n1 reaches the target)", id, err)
			}
		} else if err != nil {
			t.Errorf("case %s: %v", id, err)
		}
		if st.First != first || st.Stable != stable || st.Low != low || st.High != high {
			t.Errorf("case %s %v: First %d Stable %d window [%d, %d]; R: %d %d [%d, %d] (%s)", id, test,
				st.First, st.Stable, st.Low, st.High, first, stable, low, high, r0["source"])
		}
		if first < stable {
			teeth++
		}
		if len(st.Powers) != len(rs) || len(st.Powers) != high-low+1 {
			t.Fatalf("case %s: %d powers, want %d", id, len(st.Powers), len(rs))
		}
		for i, row := range rs {
			if n1 := row.I(t, "n1"); n1 != low+i {
				t.Fatalf("case %s: row %d has n1 %d", id, i, n1)
			}
			if got, want := st.Powers[i], row.F(t, "power"); math.Abs(got-want) > 1e-12 {
				t.Errorf("%s: power %.15g, want %.15g (%s)", row["id"], got, want, row["source"])
			}
			// The second group's size rule.
			n2 := max(1, int(math.Ceil(row.F(t, "ratio")*float64(row.I(t, "n1"))-1e-9)))
			if n2 != row.I(t, "n2") {
				t.Errorf("%s: n2 %d, R %d", row["id"], n2, row.I(t, "n2"))
			}
		}
	}
	if teeth < 3 {
		t.Errorf("only %d saw-tooth cases with First < Stable, want 3", teeth)
	}
}

// TestExactSize checks the exact size (power at p1 = p2). Fisher's test is
// conditional and exact, so its size never exceeds alpha at any n and any
// common p, and at small n it is well below; the uncorrected chi-square at
// 100 per group is close to alpha, within 0.01 (R: pow_big_1 of
// exact_power.tsv, size 0.0560 at p = 0.5, and pow_big_2, 0.0513 at
// p = 0.2, both checked there).
func TestExactSize(t *testing.T) {
	for _, alpha := range []float64{0.01, 0.05, 0.1} {
		for n1 := 1; n1 <= 25; n1 += 3 {
			for n2 := 1; n2 <= 25; n2 += 4 {
				for _, p := range []float64{0.05, 0.3, 0.5, 0.8} {
					for _, sd := range [][2]int{{2, 0}, {1, 1}, {1, -1}} {
						if size := ExactPower(Fisher, n1, n2, p, p, alpha, sd[0], sd[1]); size > alpha {
							t.Errorf("Fisher n %d/%d p %v alpha %v sides %d dir %d: size %v > alpha", n1, n2, p, alpha, sd[0], sd[1], size)
						}
					}
				}
			}
		}
	}
	if size := ExactPower(Fisher, 10, 10, 0.3, 0.3, 0.05, 2, 0); !(size < 0.025) {
		t.Errorf("Fisher 10/10 size %v, want well below 0.05 (R: pow_019_1 = 0.0119)", size)
	}
	for _, p := range []float64{0.5, 0.2, 0.35} {
		if size := ExactPower(ChiSquare, 100, 100, p, p, 0.05, 2, 0); math.Abs(size-0.05) > 0.01 {
			t.Errorf("chi-square 100/100 p %v: size %v, want within 0.01 of 0.05", p, size)
		}
	}
}

// TestRejectionTableSymmetry checks that swapping the groups (and the
// direction) and swapping events with non-events (which flips the
// direction) leave every decision unchanged; with n1 = n2 the table is
// symmetric under x1 ↔ x2.
func TestRejectionTableSymmetry(t *testing.T) {
	for _, test := range []BinaryTest{ChiSquare, ChiSquareYates, Fisher, ZUnpooled} {
		for _, n := range [][2]int{{10, 10}, {17, 17}, {6, 13}, {40, 25}} {
			n1, n2 := n[0], n[1]
			for _, sd := range [][2]int{{2, 0}, {1, 1}, {1, -1}} {
				a := RejectionTable(test, n1, n2, 0.05, sd[0], sd[1])
				b := RejectionTable(test, n2, n1, 0.05, sd[0], -sd[1])
				c := RejectionTable(test, n1, n2, 0.05, sd[0], -sd[1])
				for x1 := 0; x1 <= n1; x1++ {
					for x2 := 0; x2 <= n2; x2++ {
						v := a[x1*(n2+1)+x2]
						if w := b[x2*(n1+1)+x1]; w != v {
							t.Errorf("%v %d/%d sides %d dir %d: (%d, %d) %v but swapped groups %v", test, n1, n2, sd[0], sd[1], x1, x2, v, w)
						}
						if w := c[(n1-x1)*(n2+1)+n2-x2]; w != v {
							t.Errorf("%v %d/%d sides %d dir %d: (%d, %d) %v but swapped outcomes %v", test, n1, n2, sd[0], sd[1], x1, x2, v, w)
						}
						if n1 == n2 && sd[0] == 2 {
							if w := a[x2*(n2+1)+x1]; w != v {
								t.Errorf("%v %d/%d: (%d, %d) %v but (%d, %d) %v", test, n1, n2, x1, x2, v, x2, x1, w)
							}
						}
					}
				}
			}
		}
	}
}

// TestRejectionTableMatchesStatistics checks the fast tables against the
// decisions taken one table at a time from the statistics (themselves
// checked against R above): for the chi-square family and the z test,
// the two-sided region at alpha is the union of the one-sided regions at
// alpha/2. The sizes run over every pair up to 14, where ties and
// degenerate cells abound.
func TestRejectionTableMatchesStatistics(t *testing.T) {
	const alpha = 0.05
	z2, z1 := ZAlpha(alpha, 2), ZAlpha(alpha, 1)
	for n1 := 1; n1 <= 14; n1++ {
		for n2 := 1; n2 <= 14; n2++ {
			for _, test := range []BinaryTest{ChiSquare, ChiSquareYates, Fisher, ZUnpooled} {
				two := RejectionTable(test, n1, n2, alpha, 2, 0)
				up := RejectionTable(test, n1, n2, alpha, 1, 1)
				down := RejectionTable(test, n1, n2, alpha, 1, -1)
				var halfUp, halfDown []bool
				if test != Fisher {
					halfUp = RejectionTable(test, n1, n2, alpha/2, 1, 1)
					halfDown = RejectionTable(test, n1, n2, alpha/2, 1, -1)
				}
				for x1 := 0; x1 <= n1; x1++ {
					for x2 := 0; x2 <= n2; x2++ {
						i := x1*(n2+1) + x2
						var w2, wUp, wDown bool
						switch test {
						case Fisher:
							w2 = fisherP(x1, n1, x2, n2, 0) <= alpha*(1+1e-7)
							wUp = fisherP(x1, n1, x2, n2, 1) <= alpha*(1+1e-7)
							wDown = fisherP(x1, n1, x2, n2, -1) <= alpha*(1+1e-7)
						case ZUnpooled:
							z := zUnpooledStat(x1, n1, x2, n2)
							w2, wUp, wDown = math.Abs(z) > z2, z > z1, -z > z1
						default:
							s, ok := chiSquareStat(x1, n1, x2, n2, test == ChiSquareYates)
							z := math.Copysign(math.Sqrt(s), float64(x1*n2-x2*n1))
							w2, wUp, wDown = ok && s > z2*z2, ok && z > z1, ok && -z > z1
						}
						if two[i] != w2 || up[i] != wUp || down[i] != wDown {
							t.Fatalf("%v %d/%d (%d, %d): table %v %v %v, statistic %v %v %v",
								test, n1, n2, x1, x2, two[i], up[i], down[i], w2, wUp, wDown)
						}
						if test != Fisher && two[i] != (halfUp[i] || halfDown[i]) {
							t.Fatalf("%v %d/%d (%d, %d): two-sided %v, one-sided at alpha/2 %v %v", test, n1, n2, x1, x2, two[i], halfUp[i], halfDown[i])
						}
						if up[i] && down[i] {
							t.Fatalf("%v %d/%d (%d, %d) rejects in both directions", test, n1, n2, x1, x2)
						}
					}
				}
			}
		}
	}
}

// TestExactPowerCorners checks hand-computable powers. With p1 = 0 and
// p2 = 1 the outcome is certain, (0, n2): Fisher's two-sided p for 0/5
// against 5/5 is 2/C(10, 5) = 2/252 ≈ 0.0079, so the power is 1, and 0 in
// the wrong direction. With n1 = n2 = 1 the Wald z rejects exactly the
// tables 0/1 against 1/1 and 1/1 against 0/1 (zero variance, |z| = ∞), so
// its power is p1 q2 + q1 p2: 0.3·0.4 + 0.7·0.6 = 0.54 for p = 0.3, 0.6;
// the chi-square tests never reject there (X² = 2 < 3.84). At n1 = n2 = 4,
// X² = 8 (x1 − x2)²/(t (8 − t)) exceeds 3.84 for (4, 0) and (0, 4) (X² = 8)
// and (3, 0), (4, 1), (0, 3), (1, 4) (X² = 4.8) only, so the size at p = ½
// is (1 + 1 + 4·4)/256 = 18/256.
func TestExactPowerCorners(t *testing.T) {
	for _, c := range []struct {
		test          BinaryTest
		n1, n2        int
		p1, p2, alpha float64
		sides, dir    int
		want          float64
	}{
		{Fisher, 5, 5, 0, 1, 0.05, 2, 0, 1},
		{Fisher, 5, 5, 0, 1, 0.05, 1, -1, 1},
		{Fisher, 5, 5, 0, 1, 0.05, 1, 1, 0},
		{Fisher, 5, 5, 0, 1, 0.005, 2, 0, 0}, // 0.0079 > 0.005
		{ZUnpooled, 1, 1, 0.3, 0.6, 0.05, 2, 0, 0.54},
		{ZUnpooled, 1, 1, 0.3, 0.6, 0.05, 1, -1, 0.42},
		{ChiSquare, 1, 1, 0.3, 0.6, 0.05, 2, 0, 0},
		{ChiSquareYates, 1, 1, 0.3, 0.6, 0.05, 2, 0, 0},
		{ChiSquare, 4, 4, 0.5, 0.5, 0.05, 2, 0, 18.0 / 256},
	} {
		got := ExactPower(c.test, c.n1, c.n2, c.p1, c.p2, c.alpha, c.sides, c.dir)
		if math.Abs(got-c.want) > 1e-15 {
			t.Errorf("%v n %d/%d p %v/%v alpha %v sides %d dir %d: %v, want %v", c.test, c.n1, c.n2, c.p1, c.p2, c.alpha, c.sides, c.dir, got, c.want)
		}
	}
}

// TestExactSolveNShape checks the invariants of the search on windows
// without a reference: First ≤ Stable, one power per size, powers in
// [0, 1], First the first crossing and Stable the start of the last run.
func TestExactSolveNShape(t *testing.T) {
	for _, test := range []BinaryTest{ChiSquare, ChiSquareYates, Fisher, ZUnpooled} {
		st, err := ExactSolveN(test, 1.3, 0.25, 0.55, 0.05, 2, 0, 0.8, 5, 70)
		if err != nil {
			t.Fatalf("%v: %v", test, err)
		}
		if len(st.Powers) != st.High-st.Low+1 || st.Low != 5 || st.High != 70 {
			t.Fatalf("%v: %d powers for [%d, %d]", test, len(st.Powers), st.Low, st.High)
		}
		if !(st.First >= st.Low && st.First <= st.Stable && st.Stable <= st.High) {
			t.Errorf("%v: First %d Stable %d in [%d, %d]", test, st.First, st.Stable, st.Low, st.High)
		}
		for i, p := range st.Powers {
			n1 := st.Low + i
			if !(p >= 0 && p <= 1) {
				t.Errorf("%v n1 %d: power %v", test, n1, p)
			}
			if (n1 < st.First || n1 == st.Stable-1) && p >= 0.8 {
				t.Errorf("%v n1 %d: power %v reaches the target before First %d / Stable %d", test, n1, p, st.First, st.Stable)
			}
			if (n1 == st.First || n1 >= st.Stable) && p < 0.8 {
				t.Errorf("%v n1 %d: power %v below the target", test, n1, p)
			}
			n2 := int(math.Ceil(1.3*float64(n1) - 1e-9))
			if want := ExactPower(test, n1, n2, 0.25, 0.55, 0.05, 2, 0); p != want {
				t.Errorf("%v n1 %d: search power %v, ExactPower %v", test, n1, p, want)
			}
		}
	}
	if _, err := ExactSolveN(Fisher, 1, 0.4, 0.4, 0.05, 2, 0, 0.8, 1, 10); !errors.Is(err, ErrNothingToDetect) {
		t.Errorf("p1 = p2: err %v, want ErrNothingToDetect", err)
	}
	st, err := ExactSolveN(ChiSquare, 1, 0.4, 0.45, 0.05, 2, 0, 0.9, 1, 12)
	if !errors.Is(err, ErrUnreachable) || st.First != 0 || st.Stable != 0 || len(st.Powers) != 12 {
		t.Errorf("unreachable: %+v, %v", st, err)
	}
}

// TestBinomPMFLarge checks the recursion where the tails underflow: the
// probabilities sum to 1 and are symmetric at p = 0.5, and the mode of
// binomial(5000, 0.5) is C(5000, 2500)/2^5000 ≈ 0.011283 (Stirling,
// 1/√(π n/2) (1 − 1/(4n)) = 0.0112834, by hand).
func TestBinomPMFLarge(t *testing.T) {
	b := binomPMF(5000, 0.5, nil)
	s := 0.0
	for _, v := range b {
		s += v
	}
	if math.Abs(s-1) > 1e-12 {
		t.Errorf("sum %v", s)
	}
	for x := range b {
		if !relClose(b[x], b[5000-x], 1e-12) {
			t.Fatalf("b(%d) = %v, b(%d) = %v", x, b[x], 5000-x, b[5000-x])
		}
	}
	want := 1 / math.Sqrt(math.Pi*2500) * (1 - 1.0/20000)
	if !relErrClose(b[2500], want, 1e-7) {
		t.Errorf("b(2500) = %.10g, want %.10g", b[2500], want)
	}
}

func TestExactPanics(t *testing.T) {
	for i, f := range []func(){
		func() { RejectionTable(0, 5, 5, 0.05, 2, 0) },
		func() { RejectionTable(Fisher, 0, 5, 0.05, 2, 0) },
		func() { RejectionTable(Fisher, 5, 5, 0, 2, 0) },
		func() { RejectionTable(Fisher, 5, 5, 0.6, 1, 1) },
		func() { RejectionTable(Fisher, 5, 5, 0.05, 1, 0) },
		func() { RejectionTable(Fisher, 5, 5, 0.05, 3, 0) },
		func() { ExactPower(ChiSquare, 5, 5, -0.1, 0.5, 0.05, 2, 0) },
		func() { ExactPower(ChiSquare, 5, 5, 0.5, math.NaN(), 0.05, 2, 0) },
		func() { ExactSolveN(ChiSquare, 0, 0.2, 0.5, 0.05, 2, 0, 0.8, 1, 10) },
		func() { ExactSolveN(ChiSquare, 1, 0.2, 0.5, 0.05, 2, 0, 1, 1, 10) },
		func() { ExactSolveN(ChiSquare, 1, 0.2, 0.5, 0.05, 2, 0, 0.8, 0, 10) },
		func() { ExactSolveN(ChiSquare, 1, 0.2, 0.5, 0.05, 2, 0, 0.8, 10, 9) },
	} {
		t.Run(strconv.Itoa(i), func(t *testing.T) {
			defer func() {
				if recover() == nil {
					t.Error("no panic")
				}
			}()
			f()
		})
	}
}

func BenchmarkExactPowerChiSquare500(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		ExactPower(ChiSquare, 500, 500, 0.3, 0.38, 0.05, 2, 0)
	}
}

func BenchmarkRejectionTableFisher500(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		RejectionTable(Fisher, 500, 500, 0.05, 2, 0)
	}
}

func BenchmarkExactSolveNFisher(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		if _, err := ExactSolveN(Fisher, 1, 0.3, 0.45, 0.05, 2, 0, 0.8, 100, 200); err != nil {
			b.Fatal(fmt.Sprint(err))
		}
	}
}
