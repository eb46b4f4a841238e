package power_test

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
	"gonum.org/v1/gonum/stat/distuv"
)

// P(T <= q) = E[Phi(q S - ncp)], integrate over y = log V.
func quadCDF(q, df, ncp float64) float64 {
	chi := distuv.ChiSquared{K: df}
	lo, hi := math.Log(chi.Quantile(1e-30)), math.Log(chi.Quantile(1-1e-16))
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
				if d > worstAbs { worstAbs = d; wa = "" ; _ = wa; t.Logf("new worst abs %.3g df=%g ncp=%g q=%g want=%.6g", d, df, ncp, q, want)}
			}
		}
	}
}
