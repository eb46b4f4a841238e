package designs

import (
	"math/rand/v2"
	"reflect"
	"testing"
)

// quickFigures are the figures Quick gives, taken from an Answer.
type quickFigures struct {
	NStar         float64
	N, Enrol      []int
	Total, Enrol1 int
	AchievedPower *float64
	Detectable    *Detectable
	Events, Pairs int
	Clusters      []int
	N0            float64
	Margin        *float64
	Interim       *InterimResult
}

func figuresOf(a *Answer) quickFigures {
	return quickFigures{a.NStar, a.N, a.Enrol, a.Total, a.EnrolTotal, a.AchievedPower, a.Detectable, a.Events, a.Pairs, a.Clusters, a.N0, a.Margin, a.Interim}
}

// TestQuickIsPlan is the property that Quick and Plan share one truth: for
// random points of every example and starter (and random plans), solving
// n, power and effect, Quick's figures equal those of Plan's Result.Result
// exactly, and a point Plan cannot plan fails in Quick with the same
// error.
func TestQuickIsPlan(t *testing.T) {
	random, per := 60, 4
	if testing.Short() {
		random, per = 10, 2
	}
	bases := sweepBases(t, random)
	r := rand.New(rand.NewPCG(5, 8))
	planned, failed := 0, 0
	solves := map[string]int{}
	for _, sb := range bases {
		b := sb.b
		keys := b.fastKeys()
		for range per {
			var ks []string
			var xs []float64
			if len(keys) > 0 {
				for _, j := range r.Perm(len(keys))[:min(len(keys), 1+r.IntN(2))] {
					k := keys[j]
					x0 := b.nums[b.fast[k]]
					x := x0 * (0.7 + 0.6*r.Float64())
					if b.spec.Method == "exact" {
						x = x0 // enumeration is slow: the specification's own point
					}
					if k == "n" || k == "total" || k == "n_second" || k == "population" || k == "simulate.n" || k == "simulate.replicates" || k == "simulate.seed" {
						x = float64(int(x))
					}
					ks, xs = append(ks, k), append(xs, x)
				}
			}
			s, err := b.At(ks, xs)
			if err != nil {
				continue
			}
			res, perr := Plan(s)
			a, qerr := Quick(s)
			switch {
			case (perr == nil) != (qerr == nil):
				t.Fatalf("%s %v=%v: Plan error %v, Quick error %v", sb.name, ks, xs, perr, qerr)
			case perr != nil:
				if perr.Error() != qerr.Error() || reflect.TypeOf(perr) != reflect.TypeOf(qerr) {
					t.Fatalf("%s %v=%v: Plan error %v, Quick error %v", sb.name, ks, xs, perr, qerr)
				}
				failed++
				continue
			}
			if g, w := figuresOf(a), figuresOf(&res.Result); !reflect.DeepEqual(g, w) {
				t.Fatalf("%s %v=%v: Quick gives\n%+v\nPlan\n%+v", sb.name, ks, xs, g, w)
			}
			planned++
			solves[s.Solve]++
		}
	}
	t.Logf("%d points planned alike, %d failed alike; by solve %v", planned, failed, solves)
	if planned < 500 || failed < 5 || solves["power"] < 100 || solves["effect"] < 50 {
		t.Fatalf("only %d points planned (%v) and %d failed", planned, solves, failed)
	}
}
