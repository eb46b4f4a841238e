package power

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"enough/power/reftable"
)

// TestRestrictedMLERatioReference checks the closed form against every
// non-inferiority row of ratio_n.tsv: the restricted MLE there is R's
// optimize() on the log-likelihood polished by uniroot() on the score,
// which knows nothing of the quadratic (script ratio_make.R; it agrees with
// the quadratic to 5.7e-15 on a 450-case grid and 1.9e-15 at boundary
// counts, ratio_make.out).
func TestRestrictedMLERatioReference(t *testing.T) {
	const tol = 1e-12
	count := 0
	for _, row := range reftable.Load(t, "ratio_n.tsv") {
		if row["kind"] != "noninferiority" {
			continue
		}
		p1t, p2t := RestrictedMLERatio(row.F(t, "p1"), row.F(t, "p2"), row.F(t, "ratio"), row.F(t, "bound"))
		w1, w2 := row.F(t, "p1_tilde"), row.F(t, "p2_tilde")
		if math.Abs(p1t-w1) > tol || math.Abs(p2t-w2) > tol {
			t.Errorf("%s: RestrictedMLERatio = (%.15g, %.15g), want (%.15g, %.15g) (%s)",
				row["id"], p1t, p2t, w1, w2, row["source"])
		}
		count++
	}
	if count != 11 {
		t.Errorf("checked %d restricted MLEs, want 11", count)
	}
}

// TestRestrictedMLERatioNearDoubleRoot checks the restricted MLE where the
// two roots of the quadratic (nearly) coincide, against ratio_mle.tsv: R's
// optimize() and uniroot() on the log-likelihood (script ratio_make.R),
// re-checked by ratio_statsmodels.py against the quadratic solved in
// 60-digit decimal arithmetic. Solved through the discriminant, these
// cases lose half their digits (R's closed form is 1.2e-8 off at mle_05,
// column closed_form_error) or step outside the interval (mle_10).
func TestRestrictedMLERatioNearDoubleRoot(t *testing.T) {
	const tol = 1e-13
	rows := reftable.Load(t, "ratio_mle.tsv")
	for _, row := range rows {
		p1t, p2t := RestrictedMLERatio(row.F(t, "p1"), row.F(t, "p2"), row.F(t, "r"), row.F(t, "rho0"))
		w1, w2 := row.F(t, "p1_tilde"), row.F(t, "p2_tilde")
		if math.Abs(p1t-w1) > tol || math.Abs(p2t-w2) > tol {
			t.Errorf("%s: RestrictedMLERatio = (%.17g, %.17g), want (%.15g, %.15g) (%s)",
				row["id"], p1t, p2t, w1, w2, row["source"])
		}
	}
	if len(rows) != 11 {
		t.Errorf("ratio_mle.tsv has %d rows, want 11", len(rows))
	}
}

// ratioLogLik is the log-likelihood per first-group participant at p2 = x,
// p1 = rho0 x, with 0 log 0 = 0 (Miettinen & Nurminen 1985).
func ratioLogLik(x, p1, p2, r, rho0 float64) float64 {
	xlogy := func(a, y float64) float64 {
		if a == 0 {
			return 0
		}
		return a * math.Log(y)
	}
	return xlogy(p1, rho0*x) + xlogy(1-p1, 1-rho0*x) + r*(xlogy(p2, x)+xlogy(1-p2, 1-x))
}

// TestRestrictedMLERatioMaximises checks the closed form over a grid of
// risks (boundary values 0 and 1 included), ratios and margins: the result
// satisfies the constraint, lies in the admissible interval, and no point
// of a fine grid over the interval has a higher log-likelihood; inside the
// interval it also matches a zooming grid search (gridArgmax).
func TestRestrictedMLERatioMaximises(t *testing.T) {
	ps := []float64{0, 0.01, 0.2, 0.5, 0.8, 0.99, 1}
	n := 0
	for _, p1 := range ps {
		for _, p2 := range ps {
			for _, r := range []float64{0.2, 1, 3} {
				for _, rho0 := range []float64{0.3, 0.8, 1, 1.25, 4} {
					p1t, p2t := RestrictedMLERatio(p1, p2, r, rho0)
					hi := math.Min(1, 1/rho0)
					if !(p2t >= 0 && p2t <= hi) || math.Abs(p1t-rho0*p2t) > 1e-15 {
						t.Errorf("(%v,%v,%v,%v): (%v, %v) breaks the constraint or the interval", p1, p2, r, rho0, p1t, p2t)
						continue
					}
					ell := func(x float64) float64 { return ratioLogLik(x, p1, p2, r, rho0) }
					top := ell(p2t)
					for i := 0; i <= 2000; i++ {
						x := hi * float64(i) / 2000
						if v := ell(x); v > top+1e-12*math.Max(1, math.Abs(top)) {
							t.Errorf("(%v,%v,%v,%v): ell(%v) = %v > ell(p2t = %v) = %v", p1, p2, r, rho0, x, v, p2t, top)
							break
						}
					}
					if p2t > 1e-6 && p2t < hi-1e-6 {
						if g := gridArgmax(ell, 0, hi); math.Abs(g-p2t) > 1e-6 {
							t.Errorf("(%v,%v,%v,%v): closed form p2t = %.12g, grid search %.12g", p1, p2, r, rho0, p2t, g)
						}
					}
					n++
				}
			}
		}
	}
	if n != 7*7*3*5 {
		t.Errorf("%d scenarios", n)
	}
}

// TestRestrictedMLERatioHand: values worked by hand from the score
// (p1 + r p2)/x − ρ0 q1/(1 − ρ0 x) − r q2/(1 − x).
//
//   - ρ0 = 1: the score vanishes at the pooled risk (p1 + r p2)/(1 + r):
//     (0.2 + 0.3)/2 = 0.25, (0.2 + 2·0.5)/3 = 0.4, and 1 when every
//     participant had the event (a double root of the quadratic at 1).
//   - Risks that satisfy the constraint are their own MLE: at x = p2 the
//     score is ρ0 + r − ρ0 − r = 0 (0.25 = 0.5·0.5, 0.3 = 1.5·0.2).
//   - p1 = 1, p2 = 0, r = 1: ℓ = log(ρ0 x) + log(1 − x) peaks at x = 1/2;
//     for ρ0 = 1.5 that is inside [0, 2/3], so (0.75, 0.5); for ρ0 = 4 the
//     interval is [0, 1/4] and the maximum is its end, (1, 0.25).
//   - No events: ℓ = log(1 − ρ0 x) + r log(1 − x) falls from x = 0: (0, 0).
//   - All events, ρ0 = 2: ℓ = log(2x) + r log x rises to x = 1/2: (1, 0.5);
//     ρ0 = 0.5: it rises to x = 1, (0.5, 1).
func TestRestrictedMLERatioHand(t *testing.T) {
	for _, c := range []struct{ p1, p2, r, rho0, w1, w2 float64 }{
		{0.2, 0.3, 1, 1, 0.25, 0.25},
		{0.2, 0.5, 2, 1, 0.4, 0.4},
		{1, 1, 0.2, 1, 1, 1},
		{0.25, 0.5, 0.7, 0.5, 0.25, 0.5},
		{0.3, 0.2, 3, 1.5, 0.3, 0.2},
		{1, 0, 1, 1.5, 0.75, 0.5},
		{1, 0, 1, 4, 1, 0.25},
		{0, 0, 2, 1.25, 0, 0},
		{1, 1, 0.5, 2, 1, 0.5},
		{1, 1, 3, 0.5, 0.5, 1},
	} {
		p1t, p2t := RestrictedMLERatio(c.p1, c.p2, c.r, c.rho0)
		if math.Abs(p1t-c.w1) > 1e-14 || math.Abs(p2t-c.w2) > 1e-14 {
			t.Errorf("RestrictedMLERatio(%v, %v, %v, %v) = (%v, %v), want (%v, %v)", c.p1, c.p2, c.r, c.rho0, p1t, p2t, c.w1, c.w2)
		}
	}
}

// TestRatioNReference checks the unrounded n1 against every row of
// ratio_n.tsv: independent R implementations of Farrington & Manning 1990
// (non-inferiority: the closed form with a numerical restricted MLE;
// equivalence: uniroot() on the two one-sided powers), script
// ratio_make.R. The script keeps n1* and r n1* away from integers, so the
// rounded sizes are exact.
func TestRatioNReference(t *testing.T) {
	const tol = 1e-9
	rows := reftable.Load(t, "ratio_n.tsv")
	for _, row := range rows {
		p1, p2, r, b := row.F(t, "p1"), row.F(t, "p2"), row.F(t, "ratio"), row.F(t, "bound")
		alpha, pw := row.F(t, "alpha"), row.F(t, "power")
		var got float64
		var err error
		switch row["kind"] {
		case "noninferiority":
			got, err = RatioNonInferiorityN(p1, p2, r, b, alpha, pw)
		case "equivalence":
			got, err = RatioEquivalenceN(p1, p2, r, b, alpha, pw)
		default:
			t.Fatalf("%s: unknown kind %q", row["id"], row["kind"])
		}
		want := row.F(t, "n1_star")
		if err != nil || !marginRelClose(got, want, tol) {
			t.Errorf("%s: n1 = %.15g, %v; want %.15g (%s)", row["id"], got, err, want, row["source"])
			continue
		}
		if math.Ceil(got) != math.Ceil(want) || math.Ceil(r*got) != math.Ceil(r*want) {
			t.Errorf("%s: ceil(n1, n2) = (%v, %v), want (%v, %v)", row["id"],
				math.Ceil(got), math.Ceil(r*got), math.Ceil(want), math.Ceil(r*want))
		}
	}
	if len(rows) != 17 {
		t.Errorf("ratio_n.tsv has %d rows, want 17", len(rows))
	}
}

// TestRatioPowerReference checks the power at given sizes against every
// row of ratio_power.tsv (independent R implementation, script
// ratio_make.R): one-sided rows at the margin (alpha), beyond it, at tiny
// n, and equivalence rows inside and outside the interval and floored at 0.
func TestRatioPowerReference(t *testing.T) {
	const tol = 1e-10
	rows := reftable.Load(t, "ratio_power.tsv")
	for _, row := range rows {
		p1, p2, n1, n2, b, alpha := row.F(t, "p1"), row.F(t, "p2"), row.F(t, "n1"), row.F(t, "n2"), row.F(t, "bound"), row.F(t, "alpha")
		var got float64
		if row["kind"] == "equivalence" {
			got = RatioEquivalencePower(p1, p2, n1, n2, b, alpha)
		} else {
			got = RatioNonInferiorityPower(p1, p2, n1, n2, b, alpha)
		}
		want := row.F(t, "power")
		if math.Abs(got-want) > tol {
			t.Errorf("%s (%s): power = %.15g, want %.15g (%s)", row["id"], row["note"], got, want, row["source"])
		}
	}
	if len(rows) != 19 {
		t.Errorf("ratio_power.tsv has %d rows, want 19", len(rows))
	}
}

var ratioScenarios = []struct{ p1, p2, r, rho0, alpha, power float64 }{
	{0.1, 0.1, 1, 1.5, 0.025, 0.8},
	{0.3, 0.2, 2, 2, 0.05, 0.9},
	{0.05, 0.06, 0.5, 1.3, 0.025, 0.8},
	{0.8, 0.8, 1, 0.9, 0.025, 0.9},
	{0.55, 0.5, 3, 0.8, 0.01, 0.85},
	{0.97, 0.99, 1.5, 0.95, 0.05, 0.8},
}

// TestRatioRoundTrip: the power at the solved (unrounded) sizes is the
// target; one participant fewer in each group loses power; swapping the
// groups with the inverse margin and allocation gives the same sizes and
// powers (the statistic only changes sign).
func TestRatioRoundTrip(t *testing.T) {
	for _, c := range ratioScenarios {
		n, err := RatioNonInferiorityN(c.p1, c.p2, c.r, c.rho0, c.alpha, c.power)
		if err != nil {
			t.Errorf("%+v: %v", c, err)
			continue
		}
		if got := RatioNonInferiorityPower(c.p1, c.p2, n, c.r*n, c.rho0, c.alpha); math.Abs(got-c.power) > 1e-12 {
			t.Errorf("%+v: power at n1 = %v is %.15g", c, n, got)
		}
		if got := RatioNonInferiorityPower(c.p1, c.p2, n-1, c.r*(n-1), c.rho0, c.alpha); !(got < c.power) {
			t.Errorf("%+v: power at n1-1 = %v, not below target", c, got)
		}
		sw, err := RatioNonInferiorityN(c.p2, c.p1, 1/c.r, 1/c.rho0, c.alpha, c.power)
		if err != nil || math.Abs(sw-c.r*n) > 1e-10*c.r*n {
			t.Errorf("%+v: swapped groups give n1 = %v, %v; want n2 = %v", c, sw, err, c.r*n)
		}
		a := RatioNonInferiorityPower(c.p1, c.p2, 100, 150, c.rho0, c.alpha)
		b := RatioNonInferiorityPower(c.p2, c.p1, 150, 100, 1/c.rho0, c.alpha)
		if math.Abs(a-b) > 1e-12 {
			t.Errorf("%+v: power %v, swapped %v", c, a, b)
		}
	}
}

// TestRatioNMonotone: n falls as the true ratio moves away from the margin
// (ρ0 = 1.5, higher risk worse: p1/p2 from 1.4 down to 0.6; ρ0 = 0.8:
// p1/p2 from 0.85 up to 1.3).
func TestRatioNMonotone(t *testing.T) {
	for _, c := range []struct {
		rho0 float64
		p1s  []float64
	}{
		{1.5, []float64{0.14, 0.12, 0.1, 0.08, 0.06}},
		{0.8, []float64{0.085, 0.09, 0.1, 0.11, 0.13}},
	} {
		prev := math.Inf(1)
		for _, p1 := range c.p1s {
			n, err := RatioNonInferiorityN(p1, 0.1, 1, c.rho0, 0.025, 0.8)
			if err != nil || !(n < prev) {
				t.Errorf("rho0 %v, p1 %v: n1 = %v, %v; previous %v", c.rho0, p1, n, err, prev)
			}
			prev = n
		}
	}
}

// TestRatioErrors: the true ratio must lie strictly on the alternative
// side of ρ0 (decimal inputs that hit the margin count as on it), and the
// target must need participants.
func TestRatioErrors(t *testing.T) {
	for _, c := range []struct {
		p1, p2, rho0, alpha, power float64
		noise                      bool // p1 - rho0 p2 is off zero by rounding only
	}{
		{0.15, 0.1, 1.5, 0.025, 0.8, true}, // 1.5*0.1 = 0.15000000000000002
		{0.3, 0.2, 1.5, 0.025, 0.8, true},  // 1.5*0.2 = 0.30000000000000004
		{0.2, 0.1, 1.5, 0.025, 0.8, false}, // beyond the margin (ratio 2)
		{0.6, 0.8, 0.85, 0.025, 0.8, false},
		{0.7, 0.875, 0.8, 0.025, 0.8, false}, // exactly at the margin
		{0.1, 0.1, 1.5, 0.05, 0.01, false},   // target power below alpha
	} {
		if c.noise && !(ratioSide(c.rho0)*(c.p1-c.rho0*c.p2) > 0) {
			t.Fatalf("%+v: rounding does not put the ratio on the alternative side; the case tests nothing", c)
		}
		n, err := RatioNonInferiorityN(c.p1, c.p2, 1, c.rho0, c.alpha, c.power)
		if !errors.Is(err, ErrUnreachable) || !math.IsNaN(n) {
			t.Errorf("%+v: got %v, %v; want ErrUnreachable", c, n, err)
		}
	}
	for _, c := range []struct{ p1, p2, margin float64 }{
		{0.12, 0.1, 1.2},  // at M: 1.2*0.1 = 0.12
		{0.08, 0.1, 1.25}, // at 1/M: 0.8*0.1 = 0.08000000000000002
		{0.2, 0.3, 1.25},  // outside (ratio 0.667)
		{0.3, 0.2, 1.25},  // outside (ratio 1.5)
	} {
		if n, err := RatioEquivalenceN(c.p1, c.p2, 1, c.margin, 0.05, 0.8); !errors.Is(err, ErrUnreachable) || !math.IsNaN(n) {
			t.Errorf("equivalence %+v: got %v, %v; want ErrUnreachable", c, n, err)
		}
	}
}

// TestRatioPowerNullSide: at the margin the restricted MLE is the truth,
// so V0 = V1 and the power is alpha at every n (exact in binary: 0.25/0.5
// and 0.375/0.25); beyond the margin it falls below alpha and towards 0 as
// n grows. (The exception at tiny n with V1 > V0 is row nip_12 of
// ratio_power.tsv.)
func TestRatioPowerNullSide(t *testing.T) {
	for _, c := range []struct{ p1, p2, rho0 float64 }{{0.25, 0.5, 0.5}, {0.375, 0.25, 1.5}} {
		for _, n := range []float64{3, 50, 1e4} {
			if got := RatioNonInferiorityPower(c.p1, c.p2, n, 2*n, c.rho0, 0.05); math.Abs(got-0.05) > 1e-14 {
				t.Errorf("%+v n1 %v: power at the margin %v, want alpha", c, n, got)
			}
		}
	}
	for _, c := range []struct{ p1, p2, rho0 float64 }{{0.2, 0.1, 1.5}, {0.6, 0.8, 0.85}, {0.05, 0.5, 0.3}, {0.9, 0.3, 2}} {
		prev := 0.05
		for _, n := range []float64{20, 100, 500, 2000} {
			got := RatioNonInferiorityPower(c.p1, c.p2, n, n, c.rho0, 0.05)
			if !(got < prev) {
				t.Errorf("%+v n %v: power %v, not below %v", c, n, got, prev)
			}
			prev = got
		}
	}
}

var ratioEquivalenceScenarios = []struct{ p1, p2, n1, n2, margin, alpha float64 }{
	{0.3, 0.3, 500, 500, 1.25, 0.05},
	{0.5, 0.48, 300, 600, 1.2, 0.025},
	{0.12, 0.1, 800, 400, 1.5, 0.05},
	{0.05, 0.05, 300, 300, 2, 0.1},
	{0.2, 0.3, 400, 400, 1.25, 0.05}, // outside
	{0.12, 0.1, 400, 400, 1.2, 0.05}, // at M
}

// TestRatioEquivalenceInvariants: the power is in [0, 1], unchanged when
// the groups are swapped, never above either one-sided power, rising with
// n inside the interval and below alpha outside it.
func TestRatioEquivalenceInvariants(t *testing.T) {
	for _, c := range ratioEquivalenceScenarios {
		pw := RatioEquivalencePower(c.p1, c.p2, c.n1, c.n2, c.margin, c.alpha)
		if !(pw >= 0 && pw <= 1) {
			t.Errorf("%+v: power %v outside [0, 1]", c, pw)
		}
		if sw := RatioEquivalencePower(c.p2, c.p1, c.n2, c.n1, c.margin, c.alpha); math.Abs(pw-sw) > 1e-14 {
			t.Errorf("%+v: swapping the groups changes power %v to %v", c, pw, sw)
		}
		lo := RatioNonInferiorityPower(c.p1, c.p2, c.n1, c.n2, 1/c.margin, c.alpha)
		hi := RatioNonInferiorityPower(c.p1, c.p2, c.n1, c.n2, c.margin, c.alpha)
		if pw > lo || pw > hi {
			t.Errorf("%+v: power %v above a one-sided power (%v, %v)", c, pw, lo, hi)
		}
		inside := ratioGap(c.p1, c.p2, 1/c.margin) > 0 && ratioGap(c.p1, c.p2, c.margin) > 0
		big := RatioEquivalencePower(c.p1, c.p2, 2*c.n1, 2*c.n2, c.margin, c.alpha)
		if inside && !(big > pw) {
			t.Errorf("%+v: power %v does not rise when n doubles (%v)", c, pw, big)
		}
		if !inside && !(pw < c.alpha) {
			t.Errorf("%+v: power %v not below alpha outside the interval", c, pw)
		}
	}
}

// TestRatioEquivalenceNRoundTrip: the power at the solved n1 is the
// target, and n1 is at least the one-sided size at either margin.
func TestRatioEquivalenceNRoundTrip(t *testing.T) {
	for _, c := range []struct{ p1, p2, r, margin, alpha, power float64 }{
		{0.3, 0.3, 1, 1.25, 0.05, 0.8},
		{0.5, 0.48, 2, 1.2, 0.025, 0.9},
		{0.9, 0.95, 0.5, 1.1, 0.05, 0.8},
		{0.02, 0.025, 1, 2, 0.05, 0.85},
		{0.3, 0.3, 1, 1.5, 0.05, 0.03}, // a target below alpha still needs participants
	} {
		n, err := RatioEquivalenceN(c.p1, c.p2, c.r, c.margin, c.alpha, c.power)
		if err != nil {
			t.Errorf("%+v: %v", c, err)
			continue
		}
		if got := RatioEquivalencePower(c.p1, c.p2, n, c.r*n, c.margin, c.alpha); math.Abs(got-c.power) > 1e-10 {
			t.Errorf("%+v: power at n1 = %v is %.15g", c, n, got)
		}
		for _, b := range []float64{1 / c.margin, c.margin} {
			if one, err := RatioNonInferiorityN(c.p1, c.p2, c.r, b, c.alpha, c.power); err == nil && one > n*(1+1e-12) {
				t.Errorf("%+v: equivalence n1 %v below one-sided n1 %v at %v", c, n, one, b)
			}
		}
	}
}

// scoreTable identifies one table of ratio_score.tsv.
type scoreTable struct {
	kind          string
	n1, n2        int
	bound, alpha  float64
	rejects, rows int
}

// TestRatioScoreReference compares the score statistic of every count pair
// and the decisions of both rejection tables with statsmodels 0.13.5
// (ratio_score.tsv, script ratio_statsmodels.py; each row's source is the
// exact call): test_proportions_2indep(..., method='score',
// compare='ratio', correction=False) for the one-sided test and the two
// one-sided p-values of tost_proportions_2indep for equivalence. At
// x1 = x2 = 0 statsmodels' statistic is nan (0/0) and neither side
// rejects.
func TestRatioScoreReference(t *testing.T) {
	rows := reftable.Load(t, "ratio_score.tsv")
	tables := map[string]*scoreTable{}
	cache := map[string][]bool{}
	zclose := func(got, want float64) bool {
		if math.IsNaN(want) {
			return math.IsNaN(got)
		}
		return math.Abs(got-want) <= 1e-11*math.Max(1, math.Abs(want))
	}
	z := func(x1, n1, x2, n2 int, rho0 float64) float64 {
		num, v := ratioScore(x1, n1, x2, n2, rho0)
		if v <= 0 {
			return math.NaN()
		}
		return num / math.Sqrt(v)
	}
	for _, row := range rows {
		n1, n2, x1, x2 := row.I(t, "n1"), row.I(t, "n2"), row.I(t, "x1"), row.I(t, "x2")
		b, alpha := row.F(t, "bound"), row.F(t, "alpha")
		key := fmt.Sprintf("%s/%d/%d/%v/%v", row["kind"], n1, n2, b, alpha)
		tab, ok := cache[key]
		if !ok {
			if row["kind"] == "equivalence" {
				tab = RatioEquivalenceRejectionTable(n1, n2, b, alpha)
			} else {
				tab = RatioMarginRejectionTable(n1, n2, b, alpha)
			}
			cache[key] = tab
			tables[key] = &scoreTable{kind: row["kind"], n1: n1, n2: n2, bound: b, alpha: alpha}
		}
		want := row["reject"] == "TRUE"
		tables[key].rows++
		if want {
			tables[key].rejects++
		}
		if got := tab[x1*(n2+1)+x2]; got != want {
			t.Errorf("%s: rejects %v, statsmodels %v (p = %s; %s)", row["id"], got, want, row["pvalue"], row["source"])
		}
		if row["kind"] == "equivalence" {
			lo, hi := z(x1, n1, x2, n2, 1/b), z(x1, n1, x2, n2, b)
			if !zclose(lo, row.F(t, "statistic")) || !zclose(hi, row.F(t, "statistic2")) {
				t.Errorf("%s: z = (%.15g, %.15g), statsmodels (%s, %s)", row["id"], lo, hi, row["statistic"], row["statistic2"])
			}
			continue
		}
		if got := z(x1, n1, x2, n2, b); !zclose(got, row.F(t, "statistic")) {
			t.Errorf("%s: z = %.15g, statsmodels %s (%s)", row["id"], got, row["statistic"], row["source"])
		}
	}
	// Each table is complete, and every decision was compared.
	if len(tables) != 6 || len(rows) != 1957 {
		t.Errorf("%d tables, %d rows; want 6 and 1957", len(tables), len(rows))
	}
	for key, s := range tables {
		if s.rows != (s.n1+1)*(s.n2+1) {
			t.Errorf("%s: %d rows, want %d", key, s.rows, (s.n1+1)*(s.n2+1))
		}
		if s.rejects == 0 || s.rejects == s.rows {
			t.Errorf("%s: %d of %d reject; the table tests nothing", key, s.rejects, s.rows)
		}
	}
}

// TestRatioTablePowerReference: the exact power of the whole rejection
// table, Σ P(x1) P(x2) [reject], against ratio_table_power.tsv (R dbinom
// with an independent R score test, restricted MLE by optimize(); script
// ratio_make.R), at sizes beyond the statsmodels tables. The binomial
// probabilities here are gonum's distuv.Binomial.Prob.
func TestRatioTablePowerReference(t *testing.T) {
	rows := reftable.Load(t, "ratio_table_power.tsv")
	for _, row := range rows {
		n1, n2 := row.I(t, "n1"), row.I(t, "n2")
		b, alpha := row.F(t, "bound"), row.F(t, "alpha")
		var tab []bool
		if row["kind"] == "equivalence" {
			tab = RatioEquivalenceRejectionTable(n1, n2, b, alpha)
		} else {
			tab = RatioMarginRejectionTable(n1, n2, b, alpha)
		}
		b1 := distuv.Binomial{N: float64(n1), P: row.F(t, "p1")}
		b2 := distuv.Binomial{N: float64(n2), P: row.F(t, "p2")}
		pw, count := 0.0, 0
		for x1 := 0; x1 <= n1; x1++ {
			for x2 := 0; x2 <= n2; x2++ {
				if tab[x1*(n2+1)+x2] {
					count++
					pw += b1.Prob(float64(x1)) * b2.Prob(float64(x2))
				}
			}
		}
		if count != row.I(t, "count") || math.Abs(pw-row.F(t, "power")) > 1e-12 {
			t.Errorf("%s: %d rejecting tables, exact power %.15g; want %s, %s (%s)",
				row["id"], count, pw, row["count"], row["power"], row["source"])
		}
	}
	if len(rows) != 6 {
		t.Errorf("ratio_table_power.tsv has %d rows, want 6", len(rows))
	}
}

// TestRatioRejectionTableSymmetry: swapping the groups with the inverse
// margin mirrors the table (the statistic only changes sign); the empty
// table (0, 0) never rejects; and the all-events table rejects exactly
// when z = √(n2 (ρ0 − 1)) > z_α for ρ0 > 1 (by hand from the restricted
// MLE (1, 1/ρ0)): 15·0.5 = 7.5 and 5·0.2 = 1 against
// z_0.05² = 1.6448536269514722² = 2.706 (scipy.stats.norm.isf(0.05)).
func TestRatioRejectionTableSymmetry(t *testing.T) {
	for _, c := range []struct {
		n1, n2      int
		rho0, alpha float64
	}{{10, 10, 1.5, 0.025}, {12, 20, 0.8, 0.05}, {25, 15, 2, 0.05}, {30, 45, 0.7, 0.1}} {
		a := RatioMarginRejectionTable(c.n1, c.n2, c.rho0, c.alpha)
		b := RatioMarginRejectionTable(c.n2, c.n1, 1/c.rho0, c.alpha)
		for x1 := 0; x1 <= c.n1; x1++ {
			for x2 := 0; x2 <= c.n2; x2++ {
				if a[x1*(c.n2+1)+x2] != b[x2*(c.n1+1)+x1] {
					t.Errorf("%+v: (%d, %d) rejects %v, swapped %v", c, x1, x2, a[x1*(c.n2+1)+x2], b[x2*(c.n1+1)+x1])
				}
			}
		}
		if a[0] {
			t.Errorf("%+v: the empty table rejects", c)
		}
	}
	for _, c := range []struct {
		n2   int
		rho0 float64
		want bool
	}{{15, 1.5, true}, {5, 1.2, false}} {
		tab := RatioMarginRejectionTable(7, c.n2, c.rho0, 0.05)
		if got := tab[len(tab)-1]; got != c.want {
			t.Errorf("all events, n2 %d, rho0 %v: rejects %v, want %v", c.n2, c.rho0, got, c.want)
		}
	}
}

func TestRatioPanics(t *testing.T) {
	for name, f := range map[string]func(){
		"mle p1 > 1":          func() { RestrictedMLERatio(1.1, 0.5, 1, 1.5) },
		"mle rho0 = 0":        func() { RestrictedMLERatio(0.5, 0.5, 1, 0) },
		"mle r = 0":           func() { RestrictedMLERatio(0.5, 0.5, 0, 1.5) },
		"n p1 = 0":            func() { RatioNonInferiorityN(0, 0.5, 1, 1.5, 0.05, 0.8) },
		"n rho0 = 1":          func() { RatioNonInferiorityN(0.5, 0.5, 1, 1, 0.05, 0.8) },
		"n alpha = 0":         func() { RatioNonInferiorityN(0.5, 0.5, 1, 1.5, 0, 0.8) },
		"power n1 = 0":        func() { RatioNonInferiorityPower(0.5, 0.5, 0, 10, 1.5, 0.05) },
		"equivalence M = 1":   func() { RatioEquivalencePower(0.5, 0.5, 10, 10, 1, 0.05) },
		"equivalence M < 1":   func() { RatioEquivalenceN(0.5, 0.5, 1, 0.8, 0.05, 0.8) },
		"equivalence power 1": func() { RatioEquivalenceN(0.5, 0.5, 1, 1.2, 0.05, 1) },
		"table n1 = 0":        func() { RatioMarginRejectionTable(0, 5, 1.5, 0.05) },
		"table rho0 = 1":      func() { RatioMarginRejectionTable(5, 5, 1, 0.05) },
		"table margin = 0.8":  func() { RatioEquivalenceRejectionTable(5, 5, 0.8, 0.05) },
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
