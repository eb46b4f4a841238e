package power

import "testing"

var gsSink float64

// BenchmarkGroupSequential plans five equally spaced looks: the boundaries
// and the inflation factor for 90% power, as planning a trial with an
// interim block does (the goal: under 20 ms).
func BenchmarkGroupSequential(b *testing.B) {
	for _, g := range []GroupSequential{
		{Timing: EqualTiming(5), Alpha: 0.05, Sides: 2, Family: Pocock},
		{Timing: EqualTiming(5), Alpha: 0.05, Sides: 2, Family: OBrienFleming},
		{Timing: EqualTiming(5), Alpha: 0.05, Sides: 2, Family: Spending, Function: OBrienFlemingType},
		{Timing: EqualTiming(5), Alpha: 0.025, Sides: 1, Family: Spending, Function: PowerFamily, Rho: 2},
	} {
		name := g.Family.String()
		if g.Family == Spending {
			name += "-" + g.Function.String()
		}
		b.Run(name, func(b *testing.B) {
			for b.Loop() {
				s, err := g.Boundaries()
				if err != nil {
					b.Fatal(err)
				}
				r, err := s.Inflation(0.9)
				if err != nil {
					b.Fatal(err)
				}
				gsSink += r
			}
		})
	}
}
