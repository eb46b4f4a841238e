package power

import "testing"

func BenchmarkTN(b *testing.B) {
	mc := MeanComparison{Diff: 5, SD1: 12, Alpha: 0.05, Sides: 2}
	var sink float64
	for b.Loop() {
		n, err := T.N(mc, 1, 0.9)
		if err != nil {
			b.Fatal(err)
		}
		sink += n
	}
	_ = sink
}
