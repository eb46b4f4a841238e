package power

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"sync"
	"sync/atomic"
)

// Model is a Monte-Carlo model of a study and its planned analysis.
//
// A Model is shared by all workers and must be safe for concurrent use
// (typically it holds only read-only tables built once); each worker calls
// NewWorker once and then uses its Worker from one goroutine only.
type Model interface {
	NewWorker() Worker
}

// Worker simulates studies with the scratch space of one goroutine.
type Worker interface {
	// Replicate draws one data set from rng, applies the planned test and
	// reports whether it rejects the null hypothesis (in either direction
	// for a two-sided test).
	Replicate(rng *rand.Rand) bool
}

// SimConfig controls a simulation run.
type SimConfig struct {
	// Replicates is the number of simulated studies; at least 1.
	Replicates int64
	// Seed fixes every random number of the run.
	Seed uint64
	// Workers is the number of goroutines; 0 means runtime.GOMAXPROCS(0).
	// The result does not depend on it.
	Workers int
	// BlockSize is the number of replicates per block; 0 means 8192. Block
	// b draws from its own PCG stream seeded by (Seed, b), so the result for
	// a seed is the same whatever the number of workers.
	BlockSize int64
	// Progress, when set, is called after each finished block with the
	// number of replicates done so far. It is called from the workers'
	// goroutines, one call at a time.
	Progress func(done int64)
}

// SimResult is the outcome of a simulation run.
type SimResult struct {
	// Replicates is the number of replicates done (fewer than asked when
	// Partial).
	Replicates int64
	// Rejections counts the replicates whose test rejected.
	Rejections int64
	// Partial is true when the run was stopped before the end; only whole
	// blocks are counted.
	Partial bool
}

// Power is the share of replicates that rejected.
func (r SimResult) Power() float64 {
	if r.Replicates == 0 {
		return math.NaN()
	}
	return float64(r.Rejections) / float64(r.Replicates)
}

// SE is the Monte-Carlo standard error of Power, √(p(1 − p)/R).
func (r SimResult) SE() float64 {
	p := r.Power()
	return math.Sqrt(p * (1 - p) / float64(r.Replicates))
}

// CI is the 95% Wilson score interval for the power, p̂ = k/R:
//
//	(p̂ + z²/2R ∓ z √(p̂(1 − p̂)/R + z²/4R²)) / (1 + z²/R),  z = Φ⁻¹(0.975)
//
// Unlike the Wald interval p̂ ∓ z SE it does not shrink to a point when
// every replicate, or none, rejects: with k = R it is [R/(R + z²), 1].
//
// References: Wilson EB (1927). Probable inference, the law of succession,
// and statistical inference. J Am Stat Assoc 22:209–212.
func (r SimResult) CI() (lo, hi float64) {
	n := float64(r.Replicates)
	p := r.Power()
	z := 1.959963984540054
	den := 1 + z*z/n
	c := (p + z*z/(2*n)) / den
	h := z * math.Sqrt(p*(1-p)/n+z*z/(4*n*n)) / den
	lo, hi = math.Max(0, c-h), math.Min(1, c+h)
	// At p̂ = 0 the lower end is exactly 0, and at p̂ = 1 the upper end
	// exactly 1; rounding would otherwise leave the interval a hair away
	// from the estimate it surrounds.
	if r.Rejections == 0 {
		lo = 0
	}
	if r.Rejections == r.Replicates {
		hi = 1
	}
	return lo, hi
}

// ErrCanceled is returned with a partial result when the context ends a
// simulation early.
var ErrCanceled = errors.New("power: simulation stopped before the end")

// blockSeed derives the stream of block b from the run's seed with the
// SplitMix64 finaliser (Steele, Lea & Flood 2014), so that neighbouring
// blocks get unrelated PCG states.
func blockSeed(seed uint64, b int64) (uint64, uint64) {
	mix := func(z uint64) uint64 {
		z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
		z = (z ^ (z >> 27)) * 0x94d049bb133111eb
		return z ^ (z >> 31)
	}
	x := mix(seed + 0x9e3779b97f4a7c15*uint64(b+1))
	return x, mix(x ^ uint64(b))
}

// Simulate runs cfg.Replicates replicates of m in parallel, in fixed-size
// blocks each with its own random stream (math/rand/v2 PCG seeded from the
// seed and the block number), so the counts for a seed are identical
// whatever the number of workers. When ctx ends, the workers stop after
// their current block and Simulate returns the whole blocks done, marked
// Partial, with ErrCanceled.
func Simulate(ctx context.Context, m Model, cfg SimConfig) (SimResult, error) {
	if cfg.Replicates < 1 {
		panic("power: at least one replicate")
	}
	bs := cfg.BlockSize
	if bs <= 0 {
		bs = 8192
	}
	workers := cfg.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	blocks := (cfg.Replicates + bs - 1) / bs
	if int64(workers) > blocks {
		workers = int(blocks)
	}
	var next, done, rejections atomic.Int64
	var progressMu sync.Mutex
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			worker := m.NewWorker()
			for {
				if ctx.Err() != nil {
					return
				}
				b := next.Add(1) - 1
				if b >= blocks {
					return
				}
				n := min(bs, cfg.Replicates-b*bs)
				s1, s2 := blockSeed(cfg.Seed, b)
				r := rand.New(rand.NewPCG(s1, s2))
				var k int64
				for i := int64(0); i < n; i++ {
					if worker.Replicate(r) {
						k++
					}
				}
				rejections.Add(k)
				d := done.Add(n)
				if cfg.Progress != nil {
					progressMu.Lock()
					cfg.Progress(d)
					progressMu.Unlock()
				}
			}
		}()
	}
	wg.Wait()
	res := SimResult{Replicates: done.Load(), Rejections: rejections.Load()}
	if res.Replicates < cfg.Replicates {
		res.Partial = true
		return res, ErrCanceled
	}
	return res, nil
}
