package power

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"slices"
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

// sameResult reports whether two results are the same in every field,
// the counts by look included.
func sameResult(a, b SimResult) bool {
	return a.Replicates == b.Replicates && a.Rejections == b.Rejections && a.Partial == b.Partial &&
		slices.Equal(a.ByLook, b.ByLook) && (a.ByLook == nil) == (b.ByLook == nil)
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
			} else if !sameResult(res, first) {
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
	if errA != nil || errB != nil || !sameResult(a, b) {
		t.Errorf("defaults %+v, %v; explicit %+v, %v", a, errA, b, errB)
	}
}

// TestSimulateCancel: a context cancelled at the first progress report
// stops the run. With one worker that is after block 0 exactly; with more,
// some replicates of other blocks are done as well, but the result counts
// only the replicates before the first one missing, so it is exactly the
// result of a shorter run with the same seed. A context cancelled before
// the start gives no replicates and a power of NaN.
func TestSimulateCancel(t *testing.T) {
	const bs = 1024
	for name, m := range simTestModels() {
		for _, w := range []int{1, 2, 3} {
			ctx, cancel := context.WithCancel(context.Background())
			var calls atomic.Int64
			cfg := SimConfig{Replicates: 1000 * bs, Seed: 1, Workers: w, BlockSize: bs, Progress: func(done int64) {
				if calls.Add(1) == 1 {
					cancel()
				}
			}}
			res, err := Simulate(ctx, m, cfg)
			cancel()
			if !errors.Is(err, ErrCanceled) || !res.Partial || res.Replicates >= cfg.Replicates {
				t.Errorf("%s, %d workers: %+v, %v; want partial, ErrCanceled", name, w, res, err)
				continue
			}
			if w == 1 && res.Replicates != bs {
				t.Errorf("%s, 1 worker: %d replicates, want the first block, %d", name, res.Replicates, bs)
			}
			if res.Replicates == 0 {
				continue
			}
			again, err := Simulate(context.Background(), m, SimConfig{Replicates: res.Replicates, Seed: 1, Workers: 2, BlockSize: bs})
			if err != nil || again.Rejections != res.Rejections {
				t.Errorf("%s, %d workers: partial %+v, a run of %d replicates %+v, %v", name, w, res, res.Replicates, again, err)
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

// slowModel wraps a model with replicates that take at least a fixed
// time, and cancels a context when the replicate numbered cancelAt starts.
type slowModel struct {
	Model
	pause    time.Duration
	cancelAt int64
	cancel   context.CancelFunc
	calls    *atomic.Int64
}

type slowWorker struct {
	Worker
	m *slowModel
}

func (m *slowModel) NewWorker() Worker { return &slowWorker{Worker: m.Model.NewWorker(), m: m} }

func (w *slowWorker) Replicate(r *rand.Rand) bool {
	if w.m.calls.Add(1) == w.m.cancelAt {
		w.m.cancel()
	}
	time.Sleep(w.m.pause)
	return w.Worker.Replicate(r)
}

// TestSimulateStopsInsideBlock: a stop is seen between two replicates, not
// only between blocks. Replicates of at least 200 µs make a block of 1,024
// last at least 0.2 s; the context is cancelled at the 50th replicate, so
// the run stops inside the first blocks, and what it counts is exactly a
// shorter run with the same seed.
func TestSimulateStopsInsideBlock(t *testing.T) {
	const bs = 1024
	for _, w := range []int{1, 2, 4} {
		ctx, cancel := context.WithCancel(context.Background())
		m := &slowModel{Model: simTestModels()["welch"], pause: 200 * time.Microsecond, cancelAt: 50, cancel: cancel, calls: new(atomic.Int64)}
		res, err := Simulate(ctx, m, SimConfig{Replicates: 100 * bs, Seed: 9, Workers: w, BlockSize: bs})
		cancel()
		if !errors.Is(err, ErrCanceled) || !res.Partial {
			t.Fatalf("%d workers: %+v, %v", w, res, err)
		}
		if calls := m.calls.Load(); calls >= int64(w)*bs {
			t.Errorf("%d workers: %d replicates started; the run did not stop inside its first blocks", w, calls)
		}
		if w == 1 && res.Replicates < 49 {
			t.Errorf("1 worker: %d replicates counted, want the 49 before the cancel at least", res.Replicates)
		}
		if res.Replicates > 0 {
			again, _ := Simulate(context.Background(), simTestModels()["welch"], SimConfig{Replicates: res.Replicates, Seed: 9, Workers: 3, BlockSize: bs})
			if again.Rejections != res.Rejections {
				t.Errorf("%d workers: partial %+v, a run of %d replicates %+v", w, res, res.Replicates, again)
			}
		}
	}
}

// TestRunSteps: a run advanced in uneven steps (a pilot) and then finished
// gives exactly the counts of one call to Simulate, whatever the number of
// workers; the replicates done only grow, and a finished run is whole.
func TestRunSteps(t *testing.T) {
	for name, m := range simTestModels() {
		cfg := SimConfig{Replicates: 20_011, Seed: 77, BlockSize: 1000}
		want, err := Simulate(context.Background(), m, cfg)
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{1, 2, 3, 7} {
			cfg.Workers = w
			r := NewRun(m, cfg)
			prev := int64(0)
			for _, n := range []int64{1, 3, 2, 7, 640, 1500} {
				if err := r.Step(context.Background(), n); err != nil {
					t.Fatal(err)
				}
				if d := r.Done(); d <= prev {
					t.Errorf("%s, %d workers: %d done after a step of %d, %d before", name, w, d, n, prev)
				}
				prev = r.Done()
				if p := r.Result(); !p.Partial || p.Replicates > prev {
					t.Errorf("%s, %d workers: result %+v after %d done", name, w, p, prev)
				}
			}
			got, err := r.Finish(context.Background())
			if err != nil || !sameResult(got, want) || r.Done() != cfg.Replicates {
				t.Errorf("%s, %d workers: stepped %+v (%v), whole %+v", name, w, got, err, want)
			}
		}
	}
}

// TestRunLimits: a run takes from 1 to MaxReplicates replicates; at the cap
// the counts of blocks do not overflow, and a stopped run stays stopped.
func TestRunLimits(t *testing.T) {
	m := simTestModels()["paired"]
	for _, n := range []int64{0, -1, MaxReplicates + 1} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("NewRun with %d replicates did not panic", n)
				}
			}()
			NewRun(m, SimConfig{Replicates: n})
		}()
	}
	r := NewRun(m, SimConfig{Replicates: MaxReplicates, Seed: 3, Workers: 2})
	if err := r.Step(context.Background(), 10_000); err != nil {
		t.Fatal(err)
	}
	res := r.Result()
	if !res.Partial || res.Replicates < 5000 || res.Replicates > r.Done() {
		t.Errorf("a step of a run of MaxReplicates: %+v, %d done", res, r.Done())
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if err := r.Step(ctx, 10); !errors.Is(err, ErrCanceled) {
		t.Errorf("a step with a cancelled context: %v", err)
	}
	if err := r.Step(context.Background(), 10); !errors.Is(err, ErrCanceled) {
		t.Errorf("a step after a stop: %v, want ErrCanceled", err)
	}
	if got := r.Result(); !sameResult(got, res) {
		t.Errorf("a stopped run changed: %+v, was %+v", got, res)
	}
}

// TestWorkerBytes: a log-rank worker holds 16 bytes a participant and the
// 4 KiB of its histograms (4 × 256 counters of 4 bytes); the models drawn
// through sufficient statistics or shared tables hold none.
func TestWorkerBytes(t *testing.T) {
	m := NewSurvivalModel(1000, 500, 0.1, 0.2, Entry{Accrual: 1, FollowUp: 1}, 0.05, 2, 0)
	if got := WorkerBytes(m); got != 16*1500+4096 {
		t.Errorf("log-rank worker: %d bytes, want %d", got, 16*1500+4096)
	}
	for name, m := range simTestModels() {
		if got := WorkerBytes(m); got != 0 {
			t.Errorf("%s: %d bytes, want 0", name, got)
		}
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

// TestLogRankStopInsideReplicate: a log-rank worker handed a stop flag
// that is set draws nothing (the random stream is untouched), its sort
// gives up before a pass, and its replicate reports no rejection; with the
// flag clear it draws and sorts as without one.
func TestLogRankStopInsideReplicate(t *testing.T) {
	m := NewSurvivalModel(3000, 3000, 0.05, 0.1, Entry{Accrual: 2, FollowUp: 3}, 0.05, 2, 0)
	w := m.NewWorker().(*logRankWorker)
	stop := new(atomic.Bool)
	w.watchStop(stop)
	src := rand.NewPCG(1, 2)
	rng, fresh := rand.New(src), rand.New(rand.NewPCG(1, 2))
	if !w.draw(rng) {
		t.Fatal("draw cut short with the flag clear")
	}
	plain := m.NewWorker().(*logRankWorker)
	plain.draw(fresh)
	u, v := w.stat()
	if pu, pv := plain.stat(); u != pu || v != pv || !(v > 0) {
		t.Errorf("with a clear flag: U %v V %v; without a flag: %v %v", u, v, pu, pv)
	}
	stop.Store(true)
	before := *src
	if w.draw(rng) || w.Replicate(rng) {
		t.Error("a worker whose stop flag is set drew a data set or rejected")
	}
	if *src != before {
		t.Error("a worker whose stop flag is set used the random stream")
	}
	if got := radixSortHigh32(w.keys, w.tmp, &w.count, stop); got != nil {
		t.Error("the sort ran with the stop flag set")
	}
	if u, v := w.stat(); u != 0 || v != 0 {
		t.Errorf("stat with the flag set: %v, %v; want 0, 0", u, v)
	}
}

// seqTestModels is one sequential model of every kind, small enough for
// the invariants of the runner.
func seqTestModels() map[string]SequentialModel {
	return map[string]SequentialModel{
		"z": NewSequentialZ(SequentialZ{Times: []float64{0.25, 0.5, 0.75, 1}, Drift: 2.5,
			Nominal: []float64{0.001, 0.01, 0.02, 0.03}, Sides: 2}),
		"binomials": NewSequentialBinomials(SequentialBinomials{N1: []int{20, 40, 60}, N2: []int{25, 50, 75},
			P1: 0.45, P2: 0.25, Nominal: []float64{0.01, 0.02, 0.03}, Sides: 2, Test: ChiSquare}),
		"means welch": NewSequentialMeans(SequentialMeans{N1: []int{10, 20, 30}, N2: []int{10, 20, 30}, Diff: 0.7,
			SD1: 1, SD2: 1.5, Welch: true, Nominal: []float64{0.01, 0.02, 0.03}, Sides: 2}),
		"survival": NewSequentialSurvival(SequentialSurvival{N1: 40, N2: 40, H1: 0.3, H2: 0.6,
			Entry: Entry{Accrual: 1, FollowUp: 2}, Events: []int{15, 30, 45}, Nominal: []float64{0.01, 0.02, 0.03}, Sides: 2}),
	}
}

// TestSequentialRunByLook: a sequential model's counts by look are the
// same for 1, 2 and 7 workers, sum to the rejections, and, for a run
// stopped at its first progress report, equal those of a shorter run with
// the same seed; a run advanced in steps gives those of Simulate. The
// other models report no counts by look.
func TestSequentialRunByLook(t *testing.T) {
	const bs = 512
	for name, m := range seqTestModels() {
		var first SimResult
		for i, w := range []int{1, 2, 7} {
			res, err := Simulate(context.Background(), m, SimConfig{Replicates: 10_007, Seed: 31, Workers: w, BlockSize: bs})
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			if len(res.ByLook) != m.Looks() {
				t.Fatalf("%s: %d counts by look, want %d", name, len(res.ByLook), m.Looks())
			}
			sum := int64(0)
			for _, c := range res.ByLook {
				sum += c
			}
			if sum != res.Rejections {
				t.Errorf("%s: counts by look %v sum to %d, rejections %d", name, res.ByLook, sum, res.Rejections)
			}
			if i == 0 {
				first = res
				if res.Rejections == 0 || res.ByLook[0] == res.Rejections {
					t.Errorf("%s: counts by look %v: the looks are not exercised", name, res.ByLook)
				}
			} else if !sameResult(res, first) {
				t.Errorf("%s: %d workers give %+v, 1 worker %+v", name, w, res, first)
			}
		}
		for _, w := range []int{1, 2, 3} {
			ctx, cancel := context.WithCancel(context.Background())
			var calls atomic.Int64
			cfg := SimConfig{Replicates: 200 * bs, Seed: 32, Workers: w, BlockSize: bs, Progress: func(int64) {
				if calls.Add(1) == 1 {
					cancel()
				}
			}}
			res, err := Simulate(ctx, m, cfg)
			cancel()
			if !errors.Is(err, ErrCanceled) || !res.Partial || len(res.ByLook) != m.Looks() {
				t.Fatalf("%s, %d workers: %+v, %v; want partial, ErrCanceled", name, w, res, err)
			}
			again, err := Simulate(context.Background(), m, SimConfig{Replicates: res.Replicates, Seed: 32, Workers: 2, BlockSize: bs})
			again.Partial = true
			if err != nil || !sameResult(again, res) {
				t.Errorf("%s, %d workers: partial %+v, a run of %d replicates %+v, %v", name, w, res, res.Replicates, again, err)
			}
		}
		cfg := SimConfig{Replicates: 5003, Seed: 33, BlockSize: 400}
		want, _ := Simulate(context.Background(), m, cfg)
		for _, w := range []int{1, 3} {
			cfg.Workers = w
			r := NewRun(m, cfg)
			for _, n := range []int64{1, 7, 300, 1000} {
				if err := r.Step(context.Background(), n); err != nil {
					t.Fatal(err)
				}
				p := r.Result()
				sum := int64(0)
				for _, c := range p.ByLook {
					sum += c
				}
				if len(p.ByLook) != m.Looks() || sum != p.Rejections {
					t.Errorf("%s: a step's result %+v: counts by look do not add up", name, p)
				}
			}
			if got, err := r.Finish(context.Background()); err != nil || !sameResult(got, want) {
				t.Errorf("%s, %d workers: stepped %+v (%v), whole %+v", name, w, got, err, want)
			}
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	res, err := Simulate(ctx, seqTestModels()["z"], SimConfig{Replicates: 100, Seed: 1})
	if !errors.Is(err, ErrCanceled) || res.Replicates != 0 || !slices.Equal(res.ByLook, []int64{0, 0, 0, 0}) {
		t.Errorf("cancelled before the start: %+v, %v", res, err)
	}
	if res, _ := Simulate(context.Background(), simTestModels()["student"], SimConfig{Replicates: 100, Seed: 1}); res.ByLook != nil {
		t.Errorf("a fixed-sample model counts by look: %v", res.ByLook)
	}
}

// TestSequentialResultNotShared: a result's counts by look are its own;
// a later step of the run does not change them.
func TestSequentialResultNotShared(t *testing.T) {
	r := NewRun(seqTestModels()["z"], SimConfig{Replicates: 10_000, Seed: 3, Workers: 1, BlockSize: 100})
	if err := r.Step(context.Background(), 1000); err != nil {
		t.Fatal(err)
	}
	a := r.Result()
	kept := slices.Clone(a.ByLook)
	if _, err := r.Finish(context.Background()); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(a.ByLook, kept) {
		t.Errorf("a result's counts changed from %v to %v", kept, a.ByLook)
	}
}

// TestSequentialModelNeedsLooks: the runner refuses a sequential model
// with no look.
func TestSequentialModelNeedsLooks(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("a sequential model with no look did not panic")
		}
	}()
	NewRun(zeroLooks{seqTestModels()["z"]}, SimConfig{Replicates: 10})
}

type zeroLooks struct{ SequentialModel }

func (zeroLooks) Looks() int { return 0 }
