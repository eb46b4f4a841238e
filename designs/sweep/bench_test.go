package sweep

import (
	"context"
	"testing"

	"enough/designs"
)

// benchSpec is an invented two-arm trial with a binary outcome, solving n
// by Fleiss' formula without continuity correction.
const benchSpec = `version: 1
title: Benchmark trial (invented)
design: trial
control_risk: 0.2
risk_ratio: 0.75
alpha: 0.05
power: 0.8
attrition: 0.1
method: fleiss
`

// benchMeansSpec is an invented two-arm trial with a continuous outcome,
// solving n for the exact t test.
const benchMeansSpec = `version: 1
title: Benchmark trial, continuous outcome (invented)
design: trial
outcome: continuous
mean_difference: 3
sd: 10
alpha: 0.05
power: 0.8
method: t
`

// axis returns an axis of n values from lo upwards by step.
func axis(key string, lo, step float64, n int) Axis {
	a := Axis{Key: key, Values: make([]float64, n), Texts: make([]string, n)}
	for i := range a.Values {
		a.Values[i] = lo + float64(i)*step
		a.Texts[i] = formatValue(a.Values[i])
	}
	return a
}

func benchRun(b *testing.B, spec string, g Grid, o Options) {
	base, err := designs.NewBase("bench.yaml", []byte(spec), nil)
	if err != nil {
		b.Fatal(err)
	}
	points := g.Size()
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		rows, err := Run(context.Background(), base, g, o)
		if err != nil || len(rows) != points {
			b.Fatal(err, len(rows))
		}
		// One sweep at a time, as a process runs it: the rows of this
		// one are not kept alive while the next is swept.
		rows = nil
		_ = rows
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(points), "ns/point")
}

// BenchmarkSweep100k sweeps 100,000 points solving n for two proportions
// (control_risk 0.05 to 0.5 by about 0.00045, × risk_ratio 0.5 to 0.9 by
// 0.004, Fleiss' formula), in process and without output formatting.
// Issue 11's target: under 50 ms on two cores.
func BenchmarkSweep100k(b *testing.B) {
	g := Grid{Axes: []Axis{axis("control_risk", 0.05, 0.45/1000, 1000), axis("risk_ratio", 0.5, 0.004, 100)}}
	benchRun(b, benchSpec, g, Options{})
}

// BenchmarkSweepTTest10k sweeps 10,000 points solving n for the t test
// (mean_difference × sd): each point searches n on the exact power of the
// t test, an integral over the noncentral t distribution, some thousand
// times the work of a point of two proportions.
func BenchmarkSweepTTest10k(b *testing.B) {
	g := Grid{Axes: []Axis{axis("mean_difference", 1, 0.04, 100), axis("sd", 5, 0.1, 100)}}
	benchRun(b, benchMeansSpec, g, Options{})
}

// BenchmarkSweepFull10k sweeps 10,000 points of the two-proportion grid
// computing each point's whole plan (steps, alternatives, notes), as JSON
// output needs.
func BenchmarkSweepFull10k(b *testing.B) {
	g := Grid{Axes: []Axis{axis("control_risk", 0.05, 0.45/100, 100), axis("risk_ratio", 0.5, 0.004, 100)}}
	benchRun(b, benchSpec, g, Options{Full: true})
}

// BenchmarkPointQuick is one point of BenchmarkSweep100k's grid on one
// goroutine: the specification of the point (Base.AtScratch) and its
// figures (designs.QuickInto), without the rows.
func BenchmarkPointQuick(b *testing.B) {
	base, err := designs.NewBase("bench.yaml", []byte(benchSpec), nil)
	if err != nil {
		b.Fatal(err)
	}
	keys := []string{"control_risk", "risk_ratio"}
	var sc designs.Scratch
	var a designs.Answer
	b.ReportAllocs()
	i := 0
	for b.Loop() {
		i++
		s, err := base.AtScratch(&sc, keys, []float64{0.05 + float64(i%1000)*0.00045, 0.5 + float64(i%100)*0.004})
		if err != nil {
			b.Fatal(err)
		}
		a = designs.Answer{}
		if err := designs.QuickInto(s, &a); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPointRebuild is one point of a key the fast path does not
// serve (sides): the specification rebuilt from the entries read once.
func BenchmarkPointRebuild(b *testing.B) {
	base, err := designs.NewBase("bench.yaml", []byte(benchSpec), nil)
	if err != nil {
		b.Fatal(err)
	}
	keys, values := []string{"sides"}, []float64{1}
	var sc designs.Scratch
	b.ReportAllocs()
	for b.Loop() {
		if _, err := base.AtScratch(&sc, keys, values); err != nil {
			b.Fatal(err)
		}
	}
}
