package power_test

import (
	"math"
	"testing"

	"enough/power"
	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// P(T <= q) = E[Phi(q S - ncp)], integrate over y = log V.
func quadCDF(q, df, ncp float64) float64 {
	chi := distuv.ChiSquared{K: df}
	ql := chi.Quantile(1e-30)
	if !(ql > 1e-300) { ql = 1e-300 }
	lo, hi := math.Log(ql), math.Log(chi.Quantile(1-1e-16))
	if math.IsInf(hi, 0) || math.IsNaN(hi) { hi = math.Log(df + 60*math.Sqrt(2*df) + 200) }
	f := func(y float64) float64 {
		v := math.Exp(y)
		s := math.Sqrt(v / df)
		phi := 0.5 * math.Erfc(-(q*s-ncp)/math.Sqrt2)
		return phi * math.Exp(chi.LogProb(v)+y)
	}
	const panels = 400
	h := (hi - lo) / panels
	sum := 0.0
	for i := 0; i < panels; i++ {
		a := lo + float64(i)*h
		sum += quad.Fixed(f, a, a+h, 20, quad.Legendre{}, 0)
	}
	return sum
}

func TestScan3(t *testing.T) {
	// sanity vs table
	t.Logf("pt_22 %.15g want 5.60807226508503e-05", quadCDF(-2, 30, 2))
	t.Logf("pt_10 %.15g want 0.18636970429795", quadCDF(2.5, 5, 3.5))
	t.Logf("pt_43 %.15g want 0.159861103530795", quadCDF(-4, 1000, -3))
	worstAbs, wa := 0.0, ""
	for _, df := range []float64{2, 3, 4, 5, 7, 10, 15, 20, 30, 50, 100, 200, 500, 1000} {
		for ncp := -3.0; ncp <= 10; ncp += 0.5 {
			for q := -6.0; q <= 10; q += 0.25 {
				want := quadCDF(q, df, ncp)
				got := distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
				d := math.Abs(got - want)
				if math.IsNaN(d) { t.Fatalf("NaN df=%g ncp=%g q=%g %v %v", df, ncp, q, got, want) }
				if d > worstAbs { worstAbs = d; wa = "" ; _ = wa; t.Logf("new worst abs %.3g df=%g ncp=%g q=%g want=%.6g", d, df, ncp, q, want)}
			}
		}
	}
}

func TestScan4(t *testing.T) {
	t.Logf("pt_12 lower %.15g want %.15g", quadCDF(8, 5, 10), 1-0.816694884509002)
	for _, df := range []float64{3, 4, 5, 6} {
		for _, q := range []float64{8.75, 9.75, 12, 15} {
			for _, ncp := range []float64{8, 10} {
				w := quadCDF(q, df, ncp)
				g := distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
				t.Logf("df=%g ncp=%g q=%g quad=%.15g gonum=%.15g diff=%.2e", df, ncp, q, w, g, g-w)
			}
		}
	}
}

func TestScan5(t *testing.T) {
	cnt := 0
	for _, n := range []float64{3, 5, 10, 50, 200, 501, 1000, 3000} {
		for d := -3.0; d <= 0; d += 0.01 {
			mc := power.MeanComparison{Diff: d, SD1: 1, Alpha: 0.025, Hypothesis: power.NonInferiority, Bound: -0.1}
			p := power.T.Power(mc, n, n)
			if p < 0 || p > 1 || math.IsNaN(p) {
				cnt++
				if cnt < 10 { t.Logf("n=%g d=%g p=%g", n, d, p) }
			}
		}
	}
	t.Logf("count %d", cnt)
}
