package power

import (
	"context"
	"errors"
	"math"
	"sync/atomic"
	"testing"
	"time"

	"enough/power/reftable"
)

// simTestModels is one model of every kind, for the invariants of Simulate.
func simTestModels() map[string]Model {
	return map[string]Model{
		"two binomials chi-square": NewTwoBinomials(TwoBinomials{N1: 80, N2: 60, P1: 0.3, P2: 0.15, Alpha: 0.05, Sides: 2, Test: ChiSquare}),
		"two binomials fisher 1s":  NewTwoBinomials(TwoBinomials{N1: 20, N2: 30, P1: 0.1, P2: 0.35, Alpha: 0.05, Sides: 1, Dir: -1, Test: Fisher}),
		"student":                  NewTwoMeans(TwoMeans{N1: 20, N2: 25, Diff: 0.6, SD1: 1, Alpha: 0.05, Sides: 2}),
		"student unequal SDs":      NewTwoMeans(TwoMeans{N1: 20, N2: 25, Diff: 0.6, SD1: 1, SD2: 2, Alpha: 0.05, Sides: 2}),
		"welch":                    NewTwoMeans(TwoMeans{N1: 8, N2: 25, Diff: 0.8, SD1: 1.5, SD2: 1, Welch: true, Alpha: 0.05, Sides: 1, Dir: 1}),
		"non-inferiority":          NewTwoMeans(TwoMeans{N1: 50, N2: 50, Diff: 0, SD1: 1, Alpha: 0.025, Sides: 1, Dir: 1, Bound: -0.4}),
		"paired":                   NewPairedMeans(PairedMeans{N: 15, Diff: 0.5, SD: 1, Alpha: 0.05, Sides: 2}),
		"cluster means":            NewClusterMeans(ClusterMeans{K1: 6, K2: 6, M: 15, Diff: 0.5, SD: 1, ICC: 0.05, Alpha: 0.05, Sides: 2}),
		"cluster binary":           NewClusterBinary(ClusterBinary{K1: 6, K2: 8, M: 25, P1: 0.3, P2: 0.15, ICC: 0.05, Alpha: 0.05, Sides: 2}),
	}
}

// TestSimulateWorkersInvariant: with the same seed, 1, 2, 3 and 7 workers
// give identical counts for every model (a number of replicates that is not
// a multiple of the block size included), and another seed gives other
// counts.
func TestSimulateWorkersInvariant(t *testing.T) {
	for name, m := range simTestModels() {
		var first SimResult
		for i, w := range []int{1, 2, 3, 7} {
			res, err := Simulate(context.Background(), m, SimConfig{Replicates: 50_003, Seed: 2025, Workers: w, BlockSize: 4096})
			if err != nil {
				t.Fatalf("%s, %d workers: %v", name, w, err)
			}
			if res.Replicates != 50_003 || res.Partial {
				t.Errorf("%s, %d workers: %+v", name, w, res)
			}
			if i == 0 {
				first = res
			} else if res != first {
				t.Errorf("%s: %d workers give %+v, 1 worker %+v", name, w, res, first)
			}
		}
		other, _ := Simulate(context.Background(), m, SimConfig{Replicates: 50_003, Seed: 2026, Workers: 2, BlockSize: 4096})
		if other.Rejections == first.Rejections {
			t.Errorf("%s: seeds 2025 and 2026 give the same count %d", name, first.Rejections)
		}
	}
}

// TestSimulateDefaults: the default block size and worker count give the
// same result as explicit ones.
func TestSimulateDefaults(t *testing.T) {
	m := simTestModels()["student"]
	a, errA := Simulate(context.Background(), m, SimConfig{Replicates: 30_000, Seed: 5})
	b, errB := Simulate(context.Background(), m, SimConfig{Replicates: 30_000, Seed: 5, Workers: 1, BlockSize: 8192})
	if errA != nil || errB != nil || a != b {
		t.Errorf("defaults %+v, %v; explicit %+v, %v", a, errA, b, errB)
	}
}

// TestSimulateCancel: a context cancelled after the first block has been
// reported stops the run; the result counts whole blocks only (a multiple
// of the block size), is marked Partial and comes with ErrCanceled. A
// context cancelled before the start gives no replicates.
func TestSimulateCancel(t *testing.T) {
	const bs = 1024
	for name, m := range simTestModels() {
		for _, w := range []int{1, 2} {
			ctx, cancel := context.WithCancel(context.Background())
			var calls atomic.Int64
			cfg := SimConfig{Replicates: 1000 * bs, Seed: 1, Workers: w, BlockSize: bs, Progress: func(done int64) {
				if calls.Add(1) == 1 {
					cancel()
				}
			}}
			res, err := Simulate(ctx, m, cfg)
			cancel()
			if !errors.Is(err, ErrCanceled) || !res.Partial {
				t.Errorf("%s, %d workers: %+v, %v; want partial, ErrCanceled", name, w, res, err)
			}
			if res.Replicates%bs != 0 || res.Replicates < bs || res.Replicates >= cfg.Replicates {
				t.Errorf("%s, %d workers: %d replicates, want a multiple of %d between 1 block and the total", name, w, res.Replicates, bs)
			}
			if res.Rejections < 0 || res.Rejections > res.Replicates {
				t.Errorf("%s: %d rejections of %d", name, res.Rejections, res.Replicates)
			}
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	res, err := Simulate(ctx, simTestModels()["paired"], SimConfig{Replicates: 10_000, Seed: 1})
	if !errors.Is(err, ErrCanceled) || !res.Partial || res.Replicates != 0 || !math.IsNaN(res.Power()) {
		t.Errorf("cancelled before the start: %+v, %v", res, err)
	}
}

// TestSimulateProgress: progress is reported once per block, increasing,
// ending at the number of replicates.
func TestSimulateProgress(t *testing.T) {
	var seen []int64
	res, err := Simulate(context.Background(), simTestModels()["welch"], SimConfig{Replicates: 10_000, Seed: 3, Workers: 2, BlockSize: 1000,
		Progress: func(done int64) { seen = append(seen, done) }})
	if err != nil || res.Replicates != 10_000 {
		t.Fatalf("%+v, %v", res, err)
	}
	if len(seen) != 10 || seen[len(seen)-1] != 10_000 {
		t.Errorf("progress %v", seen)
	}
	for i := 1; i < len(seen); i++ {
		if seen[i] <= seen[i-1] {
			t.Errorf("progress not increasing: %v", seen)
		}
	}
}

// TestSimResultCI checks the Wilson interval against R's
// prop.test(x, n, correct = FALSE)$conf.int (sim_wilson.tsv) and against
// statsmodels' proportion_confint(x, n, method="wilson")
// (wilson_statsmodels.tsv, which holds the extremes a simulation reaches:
// every replicate or none rejecting out of 10,000 and 20,000), and the
// standard error against √(p(1 − p)/n) written out. At the extremes the
// interval keeps a width of about z²/n: it never shrinks to a point.
func TestSimResultCI(t *testing.T) {
	for _, file := range []string{"sim_wilson.tsv", "wilson_statsmodels.tsv"} {
		for _, row := range reftable.Load(t, file) {
			r := SimResult{Rejections: int64(row.I(t, "x")), Replicates: int64(row.I(t, "n"))}
			lo, hi := r.CI()
			if math.Abs(lo-row.F(t, "lo")) > 1e-12 || math.Abs(hi-row.F(t, "hi")) > 1e-12 {
				t.Errorf("%s: CI = [%.15g, %.15g], want [%s, %s]", row["source"], lo, hi, row["lo"], row["hi"])
			}
			if p := r.Power(); !(lo < hi && lo <= p && p <= hi) {
				t.Errorf("%s: CI [%g, %g] is a point or misses %g", row["source"], lo, hi, p)
			}
		}
	}
	r := SimResult{Rejections: 30, Replicates: 100}
	if math.Abs(r.SE()-math.Sqrt(0.3*0.7/100)) > 1e-15 || r.Power() != 0.3 {
		t.Errorf("power %v, SE %v", r.Power(), r.SE())
	}
}

// benchSimWorkers runs Simulate on the n = 200 chi-square model with the
// given number of workers, 2²² replicates per iteration, and reports
// replicates per second.
func benchSimWorkers(b *testing.B, workers int) {
	m := NewTwoBinomials(TwoBinomials{N1: 200, N2: 200, P1: 0.3, P2: 0.2, Alpha: 0.05, Sides: 2, Test: ChiSquare})
	const reps = 1 << 22
	start := time.Now()
	seed := uint64(0)
	for b.Loop() {
		seed++
		if _, err := Simulate(context.Background(), m, SimConfig{Replicates: reps, Seed: seed, Workers: workers}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)*reps/time.Since(start).Seconds(), "replicates/s")
}

func BenchmarkSimulateWorkers1(b *testing.B) { benchSimWorkers(b, 1) }
func BenchmarkSimulateWorkers2(b *testing.B) { benchSimWorkers(b, 2) }
