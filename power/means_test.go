package power_test

import (
	"math"
	"testing"

	"enough/internal/reftable"
	"enough/power"

	"gonum.org/v1/gonum/stat/distuv"
)

func TestScratch(t *testing.T) {
	for _, row := range reftable.Load(t, "trials_pt.tsv") {
		q, df, ncp := row.F(t, "q"), row.F(t, "df"), row.F(t, "ncp")
		want := row.F(t, "value_quad")
		var got, got2 float64
		if row["lower_tail"] == "TRUE" {
			got = distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
			got2 = got
		} else {
			got = distuv.NoncentralT{Nu: df, Mu: -ncp}.CDF(-q)
			got2 = 1 - distuv.NoncentralT{Nu: df, Mu: ncp}.CDF(q)
		}
		t.Logf("%s %s q=%g df=%g ncp=%g want=%.6g got=%.6g rel=%.2e abs=%.2e  complement rel=%.2e", row["id"], row["lower_tail"], q, df, ncp, want, got, math.Abs(got-want)/want, math.Abs(got-want), math.Abs(got2-want)/want)
	}
	for _, ncp := range []float64{30, 38, 38.5, 38.7, 40, 50} {
		t.Logf("ncp %g: one-sided %g two-sided %g", ncp, power.TTestPower(ncp, 398, 0.05, 1), power.TTestPower(ncp, 398, 0.05, 2))
	}
	mc := power.MeanComparison{Diff: 2, SD1: 1, Layout: power.Paired, Alpha: 0.05, Sides: 1}
	for _, n := range []float64{100, 300, 372, 373, 400} {
		t.Logf("paired n=%g T=%g Z=%g", n, power.T.Power(mc, n, n), power.Z.Power(mc, n, n))
	}
}
