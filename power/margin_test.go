package power

import (
	"errors"
	"math"
	"testing"

	"enough/power/reftable"
)

func marginMethodOf(t *testing.T, id string) MarginMethod {
	t.Helper()
	return byName(t, id, FarringtonManning, Blackwelder)
}

func marginRelClose(got, want, tol float64) bool {
	return math.Abs(got-want) <= tol*math.Abs(want)
}

func TestMarginMethodString(t *testing.T) {
	for m, want := range map[MarginMethod]string{
		FarringtonManning: "farrington-manning",
		Blackwelder:       "blackwelder",
		MarginMethod(0):   "MarginMethod(0)",
	} {
		if got := m.String(); got != want {
			t.Errorf("String() = %q, want %q", got, want)
		}
	}
}

// TestRestrictedMLEReference checks the restricted MLE against every
// Farrington-Manning row of trials_fm.tsv (r = ratio) and
// trials_fm_power.tsv (r = n2/n1): independent R implementation of the
// Miettinen & Nurminen 1985 closed form, checked there against optimize()
// on the log-likelihood and uniroot() on the score (script trials_make.R;
// trials_README.md, finding 4: the published closed form needed no
// correction, and it matches the score root to 3.2e-15).
func TestRestrictedMLEReference(t *testing.T) {
	const tol = 1e-10
	count := 0
	for _, file := range []string{"trials_fm.tsv", "trials_fm_power.tsv"} {
		for _, row := range reftable.Load(t, file) {
			if row["method"] != "farrington-manning" {
				continue
			}
			var r float64
			if file == "trials_fm.tsv" {
				r = row.F(t, "ratio")
			} else {
				r = row.F(t, "n2") / row.F(t, "n1")
			}
			p1t, p2t := RestrictedMLE(row.F(t, "p1"), row.F(t, "p2"), r, row.F(t, "d0"))
			w1, w2 := row.F(t, "p1_tilde"), row.F(t, "p2_tilde")
			if math.Abs(p1t-w1) > tol || math.Abs(p2t-w2) > tol {
				t.Errorf("%s: RestrictedMLE = (%.15g, %.15g), want (%.15g, %.15g) (%s)",
					row["id"], p1t, p2t, w1, w2, row["source"])
			}
			count++
		}
	}
	if count != 24 {
		t.Errorf("checked %d restricted MLEs, want 24", count)
	}
}

// TestNonInferiorityNReference checks the unrounded n1 of both methods
// against every row of trials_fm.tsv: independent R implementations of
// Farrington & Manning 1990 and Blackwelder 1982 (script trials_make.R).
func TestNonInferiorityNReference(t *testing.T) {
	const tol = 1e-9
	rows := reftable.Load(t, "trials_fm.tsv")
	for _, row := range rows {
		m := marginMethodOf(t, row["method"])
		r := row.F(t, "ratio")
		got, err := m.NonInferiorityN(row.F(t, "p1"), row.F(t, "p2"), r, row.F(t, "d0"),
			row.F(t, "alpha"), row.F(t, "power"))
		want := row.F(t, "n1_star")
		if err != nil || !marginRelClose(got, want, tol) {
			t.Errorf("%s: %v.NonInferiorityN = %.15g, %v; want %.15g (%s)", row["id"], m, got, err, want, row["source"])
			continue
		}
		// The script keeps n1* and r n1* away from integers, so the
		// rounded sizes are exact.
		if math.Ceil(got) != math.Ceil(want) || math.Ceil(r*got) != math.Ceil(r*want) {
			t.Errorf("%s: ceil(n1, n2) = (%v, %v), want (%v, %v)", row["id"],
				math.Ceil(got), math.Ceil(r*got), math.Ceil(want), math.Ceil(r*want))
		}
	}
	if len(rows) != 24 {
		t.Errorf("trials_fm.tsv has %d rows, want 24", len(rows))
	}
}

// TestNonInferiorityPowerReference checks the one-sided power of both
// methods against every row of trials_fm_power.tsv: independent R
// implementations of Farrington & Manning 1990 and Blackwelder 1982
// (script trials_make.R), at integer and unequal group sizes.
func TestNonInferiorityPowerReference(t *testing.T) {
	const tol = 1e-10
	rows := reftable.Load(t, "trials_fm_power.tsv")
	for _, row := range rows {
		m := marginMethodOf(t, row["method"])
		got := m.NonInferiorityPower(row.F(t, "p1"), row.F(t, "p2"), row.F(t, "n1"), row.F(t, "n2"),
			row.F(t, "d0"), row.F(t, "alpha"))
		want := row.F(t, "power")
		if math.Abs(got-want) > tol {
			t.Errorf("%s: %v.NonInferiorityPower = %.15g, want %.15g (%s)", row["id"], m, got, want, row["source"])
		}
	}
	if len(rows) != 24 {
		t.Errorf("trials_fm_power.tsv has %d rows, want 24", len(rows))
	}
}

// expectedLogLik is the expected log-likelihood per first-group
// participant with p1 − p2 = d0 and p1 = x (Miettinen & Nurminen 1985).
func expectedLogLik(x, p1, p2, r, d0 float64) float64 {
	y := x - d0
	return p1*math.Log(x) + (1-p1)*math.Log(1-x) + r*(p2*math.Log(y)+(1-p2)*math.Log(1-y))
}

// gridArgmax maximises f on (lo, hi) by a crude grid that zooms in on the
// best point; valid for the concave log-likelihood. It knows nothing of
// the cubic.
func gridArgmax(f func(float64) float64, lo, hi float64) float64 {
	const k = 100
	best := 0.5 * (lo + hi)
	for hi-lo > 1e-11 {
		h := (hi - lo) / k
		bi, bv := 0, math.Inf(-1)
		for i := 1; i < k; i++ { // interior points only: f is −∞ at the ends
			if v := f(lo + float64(i)*h); v > bv {
				bi, bv = i, v
			}
		}
		best = lo + float64(bi)*h
		lo, hi = best-h, best+h
	}
	return best
}

// TestRestrictedMLEMaximises checks the closed form over a wide grid of
// risks, ratios and margins, including the extremes where the wrong root
// of the cubic would be picked: the result satisfies the constraint, lies
// inside (0, 1), and maximises the expected log-likelihood, compared with a
// grid search.
func TestRestrictedMLEMaximises(t *testing.T) {
	ps := []float64{0.01, 0.2, 0.5, 0.8, 0.99}
	rs := []float64{0.2, 1, 3}
	d0s := []float64{-0.9, -0.3, -0.1, -0.02, 0, 0.05, 0.3, 0.9}
	n := 0
	for _, p1 := range ps {
		for _, p2 := range ps {
			for _, r := range rs {
				for _, d0 := range d0s {
					p1t, p2t := RestrictedMLE(p1, p2, r, d0)
					if math.Abs(p1t-p2t-d0) > 1e-15 {
						t.Errorf("(%v,%v,%v,%v): p1t - p2t = %v, want d0", p1, p2, r, d0, p1t-p2t)
					}
					if !(p1t > 0 && p1t < 1 && p2t > 0 && p2t < 1) {
						t.Errorf("(%v,%v,%v,%v): restricted MLE (%v, %v) outside (0, 1)", p1, p2, r, d0, p1t, p2t)
						continue
					}
					ell := func(x float64) float64 { return expectedLogLik(x, p1, p2, r, d0) }
					lo, hi := math.Max(0, d0), math.Min(1, 1+d0)
					g := gridArgmax(ell, lo, hi)
					if math.Abs(g-p1t) > 1e-6 {
						t.Errorf("(%v,%v,%v,%v): closed form p1t = %.12g, grid search %.12g", p1, p2, r, d0, p1t, g)
					}
					// No point of a fine grid does better.
					top := ell(p1t)
					for i := 1; i < 1000; i++ {
						x := lo + (hi-lo)*float64(i)/1000
						if ell(x) > top+1e-12*math.Abs(top) {
							t.Errorf("(%v,%v,%v,%v): ell(%v) = %v > ell(p1t = %v) = %v", p1, p2, r, d0, x, ell(x), p1t, top)
							break
						}
					}
					n++
				}
			}
		}
	}
	t.Logf("%d scenarios", n)
}

// At d0 = 0 the restricted MLE is the pooled risk (p1 + r p2)/(1 + r):
// by hand, the score p1/x − q1/(1−x) + r(p2/x − q2/(1−x)) vanishes at
// x = (p1 + r p2)/(1 + r). The expected values are worked by hand:
// (0.2 + 0.3)/2, (0.2 + 2·0.5)/3, 0.6.
func TestRestrictedMLEPooled(t *testing.T) {
	for _, c := range []struct{ p1, p2, r, want float64 }{
		{0.2, 0.3, 1, 0.25},
		{0.2, 0.5, 2, 0.4},
		{0.6, 0.6, 0.5, 0.6},
	} {
		p1t, p2t := RestrictedMLE(c.p1, c.p2, c.r, 0)
		if math.Abs(p1t-c.want) > 1e-14 || math.Abs(p2t-c.want) > 1e-14 {
			t.Errorf("RestrictedMLE(%v, %v, %v, 0) = (%v, %v), want %v", c.p1, c.p2, c.r, p1t, p2t, c.want)
		}
	}
}

var marginScenarios = []struct{ p1, p2, r, d0, alpha, power float64 }{
	{0.8, 0.8, 1, -0.1, 0.025, 0.8},
	{0.7, 0.75, 2, -0.15, 0.05, 0.9},
	{0.1, 0.08, 0.5, 0.05, 0.025, 0.8},
	{0.3, 0.2, 1.5, 0, 0.05, 0.85},
	{0.2, 0.3, 1, 0, 0.05, 0.85},
	{0.02, 0.01, 3, 0.03, 0.01, 0.95},
	{0.97, 0.99, 1, -0.05, 0.025, 0.8},
}

// TestNonInferiorityRoundTrip: the power at the solved (unrounded) sizes
// is the target, for both methods; the score test's null variance at the
// restricted MLE makes no difference to this identity.
func TestNonInferiorityRoundTrip(t *testing.T) {
	for _, m := range []MarginMethod{FarringtonManning, Blackwelder} {
		for _, c := range marginScenarios {
			n, err := m.NonInferiorityN(c.p1, c.p2, c.r, c.d0, c.alpha, c.power)
			if err != nil {
				t.Errorf("%v %+v: %v", m, c, err)
				continue
			}
			if got := m.NonInferiorityPower(c.p1, c.p2, n, c.r*n, c.d0, c.alpha); math.Abs(got-c.power) > 1e-12 {
				t.Errorf("%v %+v: power at n1 = %v is %.15g", m, c, n, got)
			}
			// One participant fewer in each group loses power.
			if got := m.NonInferiorityPower(c.p1, c.p2, n-1, c.r*(n-1), c.d0, c.alpha); !(got < c.power) {
				t.Errorf("%v %+v: power at n1-1 = %v, not below target", m, c, got)
			}
		}
	}
}

// TestNonInferiorityErrors: the true difference must lie on the
// alternative side of d0.
func TestNonInferiorityErrors(t *testing.T) {
	for _, m := range []MarginMethod{FarringtonManning, Blackwelder} {
		for _, c := range []struct {
			p1, p2, d0, alpha, power float64
			want                     error
		}{
			{0.7, 0.8, -0.1, 0.025, 0.8, ErrUnreachable}, // exactly at the margin
			{0.6, 0.7, -0.1, 0.025, 0.8, ErrUnreachable}, // at the margin, 0.6 - 0.7 = -0.09999999999999998
			{0.6, 0.8, -0.1, 0.025, 0.8, ErrUnreachable}, // worse than the margin
			{0.2, 0.1, 0.05, 0.025, 0.8, ErrUnreachable}, // lower is better, p1 - p2 above d0
			{0.5, 0.5, 0, 0.05, 0.8, ErrNothingToDetect},
			{0.8, 0.8, -0.1, 0.05, 0.01, ErrUnreachable}, // target power below alpha
		} {
			n, err := m.NonInferiorityN(c.p1, c.p2, 1, c.d0, c.alpha, c.power)
			if !errors.Is(err, c.want) || !math.IsNaN(n) {
				t.Errorf("%v %+v: got %v, %v; want %v", m, c, n, err, c.want)
			}
		}
		// d0 > 0 with p1 = p2: 0 < 0.1 is on the alternative side.
		if _, err := m.NonInferiorityN(0.8, 0.8, 1, 0.1, 0.025, 0.8); err != nil {
			t.Errorf("%v: lower is better, p1 = p2, d0 = 0.1: unexpected %v", m, err)
		}
		// On the null side of the margin the power is at most alpha, and
		// it is exactly alpha at the margin itself for the Wald test.
		if got := m.NonInferiorityPower(0.6, 0.8, 500, 500, -0.1, 0.025); !(got < 0.025) {
			t.Errorf("%v: power on the null side = %v, want < alpha", m, got)
		}
	}
	if got := Blackwelder.NonInferiorityPower(0.7, 0.8, 500, 500, -0.1, 0.025); math.Abs(got-0.025) > 1e-15 {
		t.Errorf("Wald power at the margin = %v, want alpha", got)
	}
}

// TestEquivalenceHand: Wald TOST power worked by hand. p1 = p2 = 0.5,
// n1 = n2 = 200: se = sqrt(0.25/200*2) = 0.05; each side
// a = 0.1/0.05 - z_0.95 = 0.355146373, power = 2 Phi(a) - 1. Phi from
// scipy 1.10.1:
//
//	/usr/bin/python3 -c "from scipy.stats import norm; print(2*norm.cdf(0.1/0.05 - norm.ppf(0.95)) - 1)"
//	0.27752006262467055
//
// Unequal risks, p1 = 0.6, p2 = 0.55, n = 300 each, margin 0.15, alpha
// 0.025: a_lo = 0.2/se - z, a_hi = 0.1/se - z,
//
//	/usr/bin/python3 -c "import math; from scipy.stats import norm; se=math.sqrt(0.6*0.4/300+0.55*0.45/300); z=norm.ppf(0.975); print(norm.cdf(0.2/se-z)+norm.cdf(0.1/se-z)-1)"
//	0.6973792156926577
func TestEquivalenceHand(t *testing.T) {
	for _, c := range []struct{ p1, p2, n, margin, alpha, want float64 }{
		{0.5, 0.5, 200, 0.1, 0.05, 0.27752006262467055},
		{0.6, 0.55, 300, 0.15, 0.025, 0.6973792156926577},
		{0.55, 0.6, 300, 0.15, 0.025, 0.6973792156926577}, // mirrored
	} {
		got := Blackwelder.EquivalencePower(c.p1, c.p2, c.n, c.n, c.margin, c.alpha)
		if math.Abs(got-c.want) > 1e-12 {
			t.Errorf("Blackwelder.EquivalencePower%+v = %.17g, want %.17g", c, got, c.want)
		}
	}
}

// TestEquivalenceFromReference: at p1 = p2 with equal groups the two
// boundaries are mirror images (swap the groups), so each one-sided power
// is the Farrington-Manning power of the trials_fm_power.tsv row and the
// equivalence power is 2 power - 1, floored at 0 (rows fmp_09 and fmp_10
// are below 1/2, so the bound is 0).
func TestEquivalenceFromReference(t *testing.T) {
	want := map[string]bool{"fmp_01_fm": true, "fmp_01_bw": true, "fmp_05_fm": true, "fmp_05_bw": true,
		"fmp_09_fm": true, "fmp_09_bw": true, "fmp_10_fm": true, "fmp_10_bw": true}
	for _, row := range reftable.Load(t, "trials_fm_power.tsv") {
		if !want[row["id"]] {
			continue
		}
		delete(want, row["id"])
		m := marginMethodOf(t, row["method"])
		p1, p2, n1, n2 := row.F(t, "p1"), row.F(t, "p2"), row.F(t, "n1"), row.F(t, "n2")
		if p1 != p2 || n1 != n2 {
			t.Fatalf("%s: not a symmetric row", row["id"])
		}
		e := math.Max(0, 2*row.F(t, "power")-1)
		got := m.EquivalencePower(p1, p2, n1, n2, math.Abs(row.F(t, "d0")), row.F(t, "alpha"))
		if math.Abs(got-e) > 2e-10 {
			t.Errorf("%s: %v.EquivalencePower = %.15g, want %.15g (2*power-1 of %s)", row["id"], m, got, e, row["source"])
		}
	}
	if len(want) != 0 {
		t.Errorf("rows not found: %v", want)
	}
}

var equivalenceScenarios = []struct{ p1, p2, n1, n2, margin, alpha float64 }{
	{0.5, 0.5, 200, 200, 0.1, 0.05},
	{0.8, 0.8, 150, 300, 0.1, 0.025},
	{0.85, 0.8, 400, 400, 0.1, 0.05},
	{0.1, 0.12, 500, 250, 0.05, 0.05},
	{0.3, 0.3, 20, 20, 0.15, 0.05},
	{0.6, 0.72, 1000, 1000, 0.1, 0.05}, // outside the margin
	{0.9, 0.8, 300, 300, 0.1, 0.05},    // at the margin
}

// TestEquivalenceInvariants: equivalence power is symmetric when the
// groups are swapped (the two boundaries exchange roles), equals
// 2 Phi(a) - 1 at p1 = p2 with equal groups, never exceeds either
// one-sided power, and rises with n inside the margin (outside it, it
// falls towards 0).
func TestEquivalenceInvariants(t *testing.T) {
	for _, m := range []MarginMethod{FarringtonManning, Blackwelder} {
		for _, c := range equivalenceScenarios {
			pw := m.EquivalencePower(c.p1, c.p2, c.n1, c.n2, c.margin, c.alpha)
			if !(pw >= 0 && pw <= 1) {
				t.Errorf("%v %+v: power %v outside [0, 1]", m, c, pw)
			}
			sw := m.EquivalencePower(c.p2, c.p1, c.n2, c.n1, c.margin, c.alpha)
			if math.Abs(pw-sw) > 1e-14 {
				t.Errorf("%v %+v: swapping the groups changes power %v to %v", m, c, pw, sw)
			}
			lo := m.NonInferiorityPower(c.p1, c.p2, c.n1, c.n2, -c.margin, c.alpha)
			hi := m.NonInferiorityPower(c.p1, c.p2, c.n1, c.n2, c.margin, c.alpha)
			if pw > lo || pw > hi {
				t.Errorf("%v %+v: equivalence power %v exceeds a one-sided power (%v, %v)", m, c, pw, lo, hi)
			}
			if c.p1 == c.p2 && c.n1 == c.n2 {
				if math.Abs(lo-hi) > 1e-14 {
					t.Errorf("%v %+v: one-sided powers %v and %v differ at p1 = p2", m, c, lo, hi)
				}
				if math.Abs(pw-math.Max(0, 2*lo-1)) > 1e-14 {
					t.Errorf("%v %+v: power %v, want 2*%v - 1", m, c, pw, lo)
				}
			}
			if big := m.EquivalencePower(c.p1, c.p2, 2*c.n1, 2*c.n2, c.margin, c.alpha); big < pw && math.Abs(c.p1-c.p2) < c.margin-1e-12 {
				t.Errorf("%v %+v: power falls from %v to %v when n doubles", m, c, pw, big)
			}
			if math.Abs(c.p1-c.p2) >= c.margin-1e-12 && pw > c.alpha {
				t.Errorf("%v %+v: power %v above alpha outside the margin", m, c, pw)
			}
		}
	}
}

// TestEquivalenceNRoundTrip: the power at the solved n1 is the target, and
// n1 is at least the one-sided size for either boundary (equivalence power
// is below each one-sided power).
func TestEquivalenceNRoundTrip(t *testing.T) {
	for _, m := range []MarginMethod{FarringtonManning, Blackwelder} {
		for _, c := range []struct{ p1, p2, r, margin, alpha, power float64 }{
			{0.5, 0.5, 1, 0.1, 0.05, 0.8},
			{0.8, 0.8, 2, 0.1, 0.025, 0.9},
			{0.85, 0.8, 1, 0.1, 0.05, 0.8},
			{0.1, 0.12, 0.5, 0.05, 0.05, 0.9},
			{0.3, 0.3, 1, 0.15, 0.05, 0.05}, // a target below alpha is still met at some n > 0
			{0.95, 0.97, 3, 0.04, 0.025, 0.8},
		} {
			n, err := m.EquivalenceN(c.p1, c.p2, c.r, c.margin, c.alpha, c.power)
			if err != nil {
				t.Errorf("%v %+v: %v", m, c, err)
				continue
			}
			if got := m.EquivalencePower(c.p1, c.p2, n, c.r*n, c.margin, c.alpha); math.Abs(got-c.power) > 1e-10 {
				t.Errorf("%v %+v: power at n1 = %v is %.15g", m, c, n, got)
			}
			for _, d0 := range []float64{-c.margin, c.margin} {
				if one, err := m.NonInferiorityN(c.p1, c.p2, c.r, d0, c.alpha, c.power); err == nil && one > n*(1+1e-12) {
					t.Errorf("%v %+v: equivalence n1 %v below one-sided n1 %v at d0 = %v", m, c, n, one, d0)
				}
			}
		}
		for _, c := range []struct{ p1, p2 float64 }{{0.6, 0.7}, {0.7, 0.55}} {
			if n, err := m.EquivalenceN(c.p1, c.p2, 1, 0.1, 0.05, 0.8); !errors.Is(err, ErrUnreachable) || !math.IsNaN(n) {
				t.Errorf("%v %+v outside margin 0.1: got %v, %v; want ErrUnreachable", m, c, n, err)
			}
		}
	}
}

// Equivalence N for the hand-checked Wald case: the power
// 0.27752006262467055 (scipy, see TestEquivalenceHand) is reached at
// exactly n1 = n2 = 200.
func TestEquivalenceNHand(t *testing.T) {
	n, err := Blackwelder.EquivalenceN(0.5, 0.5, 1, 0.1, 0.05, 0.27752006262467055)
	if err != nil || math.Abs(n-200) > 1e-8 {
		t.Errorf("EquivalenceN = %v, %v; want 200", n, err)
	}
}

func TestMarginPanics(t *testing.T) {
	for name, f := range map[string]func(){
		"p1 = 0":        func() { RestrictedMLE(0, 0.5, 1, -0.1) },
		"d0 = -1":       func() { RestrictedMLE(0.5, 0.5, 1, -1) },
		"r = 0":         func() { RestrictedMLE(0.5, 0.5, 0, -0.1) },
		"n1 = 0":        func() { Blackwelder.NonInferiorityPower(0.5, 0.5, 0, 10, -0.1, 0.05) },
		"margin = 0":    func() { Blackwelder.EquivalencePower(0.5, 0.5, 10, 10, 0, 0.05) },
		"margin < 0":    func() { FarringtonManning.EquivalenceN(0.5, 0.5, 1, -0.1, 0.05, 0.8) },
		"alpha = 0":     func() { FarringtonManning.NonInferiorityN(0.5, 0.5, 1, -0.1, 0, 0.8) },
		"power = 1":     func() { FarringtonManning.EquivalenceN(0.5, 0.5, 1, 0.1, 0.05, 1) },
		"unknown":       func() { MarginMethod(9).NonInferiorityN(0.5, 0.5, 1, -0.1, 0.05, 0.8) },
		"p2 = 1 (equi)": func() { Blackwelder.EquivalencePower(0.5, 1, 10, 10, 0.1, 0.05) },
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
