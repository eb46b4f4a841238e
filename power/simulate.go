package power

import (
	"cmp"
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
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

// LookWorker is a Worker of a sequential study, one analysed at interim
// looks as well as at the end (a group-sequential design): ReplicateLook
// draws one study and returns the look, 1 to K, at which its test first
// crossed the boundary, or 0 when it never did. Replicate must equal
// ReplicateLook(rng) > 0 for the same stream.
type LookWorker interface {
	Worker
	ReplicateLook(rng *rand.Rand) int
}

// SequentialModel is a Model of a sequential study: its workers are
// [LookWorker]s, and Looks returns K, the number of analyses. A run of a
// SequentialModel counts the replicates by the look of their first
// crossing ([SimResult].ByLook).
type SequentialModel interface {
	Model
	Looks() int
}

// MaxReplicates is the most replicates a run may have, 10¹²: a standard
// error of the power below 10⁻⁶, far beyond any use, and small enough that
// no count of replicates or blocks can overflow. Callers check their input
// against it; [NewRun] panics beyond it.
const MaxReplicates int64 = 1_000_000_000_000

// DefaultBlockSize is the number of replicates per block when
// [SimConfig].BlockSize is 0.
const DefaultBlockSize = 8192

// SimConfig controls a simulation run.
type SimConfig struct {
	// Replicates is the number of simulated studies, from 1 to
	// [MaxReplicates].
	Replicates int64
	// Seed fixes every random number of the run.
	Seed uint64
	// Workers is the number of goroutines; 0 means runtime.GOMAXPROCS(0).
	// The result does not depend on it.
	Workers int
	// BlockSize is the number of replicates per block; 0 means
	// [DefaultBlockSize]. Block b draws from its own PCG stream seeded by
	// (Seed, b), so the result for a seed is the same whatever the number
	// of workers.
	BlockSize int64
	// Progress, when set, is called each time a worker finishes a block or
	// puts one aside, with the number of replicates done so far in all
	// blocks. The calls come from the workers' goroutines, one at a time,
	// with increasing counts; the callback must not call the run's methods.
	Progress func(done int64)
}

// SimResult is the outcome of a simulation run.
type SimResult struct {
	// Replicates is the number of replicates done (fewer than asked when
	// Partial).
	Replicates int64
	// Rejections counts the replicates whose test rejected.
	Rejections int64
	// ByLook, for a [SequentialModel], counts the replicates by the look
	// at which their test first crossed the boundary: ByLook[k−1] for
	// look k, K entries summing to Rejections. It is nil for the other
	// models. Like Rejections, it counts the first Replicates of the run.
	ByLook []int64
	// Partial is true when the run was stopped before the end. The
	// replicates counted are then the first Replicates of the run, in the
	// order of blocks and within each block: exactly those of a run of
	// Replicates replicates with the same seed and block size.
	Partial bool
}

// Power is the share of replicates that rejected; NaN when no replicate
// was done.
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

// stopWatcher is a Worker whose single replicate can run long (the
// log-rank model at millions of participants). Before each step the
// runner hands it the step's stop flag; the worker may cut a replicate
// short once the flag is set, and the runner then discards that replicate.
type stopWatcher interface {
	watchStop(stop *atomic.Bool)
}

// scratchSizer is a Model whose workers hold scratch space that grows with
// the size of the study.
type scratchSizer interface {
	workerBytes() int64
}

// WorkerBytes returns the scratch memory, in bytes, that each worker of m
// allocates: 16 bytes per participant for the log-rank model (the packed
// keys and the radix sort's buffer), 0 for the models whose workers hold
// only a few words (those drawn through sufficient statistics or alias
// tables shared by all workers).
func WorkerBytes(m Model) int64 {
	if s, ok := m.(scratchSizer); ok {
		return s.workerBytes()
	}
	return 0
}

// Simulate runs cfg.Replicates replicates of m in parallel, in fixed-size
// blocks each with its own random stream (math/rand/v2 PCG seeded from the
// seed and the block number), so the counts for a seed are identical
// whatever the number of workers. It is NewRun(m, cfg).Finish(ctx): when
// ctx ends, every worker stops within one replicate and Simulate returns
// the first replicates done, marked Partial, with [ErrCanceled].
func Simulate(ctx context.Context, m Model, cfg SimConfig) (SimResult, error) {
	return NewRun(m, cfg).Finish(ctx)
}

// Run is a simulation that can be advanced in steps: a short pilot to time
// the model, then the rest. However the run is cut into steps, and
// whatever the number of workers, each block's replicates draw the same
// numbers from the block's stream in the same order, so a finished run
// gives the same counts as [Simulate].
//
// The methods of a Run, but [Run.Done], must be called from one goroutine
// at a time; its workers (and their scratch space) are kept from one step
// to the next.
type Run struct {
	m      Model
	cfg    SimConfig
	bs     int64
	blocks int64
	looks  int // K for a SequentialModel, else 0
	ws     []Worker

	mu       sync.Mutex
	next     int64               // the first block not yet started
	paused   []*blockRun         // started, not finished and not in a worker's hands, by block number
	frontier int64               // blocks [0, frontier) are finished
	prefix   SimResult           // the replicates and rejections of those blocks
	ahead    map[int64]*blockRun // finished blocks beyond the frontier
	done     int64               // replicates done in all blocks
	broken   bool                // a step was stopped: the run cannot go on
}

// blockRun is the state of a block that has started.
type blockRun struct {
	b, n      int64 // the block's number and its number of replicates
	done, rej int64
	byLook    []int64 // the rejections by look (sequential models)
	rng       *rand.Rand
}

// NewRun prepares a run of m; nothing is simulated until [Run.Step] or
// [Run.Finish]. It panics unless cfg.Replicates is from 1 to
// [MaxReplicates] and cfg.Workers and cfg.BlockSize are not negative, and
// when m is a [SequentialModel] with fewer than one look.
func NewRun(m Model, cfg SimConfig) *Run {
	if cfg.Replicates < 1 || cfg.Replicates > MaxReplicates {
		panic("power: the replicates of a run must be from 1 to MaxReplicates")
	}
	if cfg.Workers < 0 || cfg.BlockSize < 0 {
		panic("power: negative workers or block size")
	}
	bs := cfg.BlockSize
	if bs == 0 {
		bs = DefaultBlockSize
	}
	workers := cfg.Workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	blocks := (cfg.Replicates + bs - 1) / bs
	r := &Run{m: m, cfg: cfg, bs: bs, blocks: blocks, ws: make([]Worker, min(int64(workers), blocks)),
		ahead: map[int64]*blockRun{}}
	if sm, ok := m.(SequentialModel); ok {
		r.looks = sm.Looks()
		if r.looks < 1 {
			panic("power: a sequential model needs at least one look")
		}
		r.prefix.ByLook = make([]int64, r.looks)
	}
	return r
}

// Workers returns the number of goroutines the run uses: cfg.Workers (or
// GOMAXPROCS), at most one per block.
func (r *Run) Workers() int { return len(r.ws) }

// Done returns the number of replicates done so far, in all blocks, as of
// the last block finished or put aside. It may be called from any
// goroutine, also during a step.
func (r *Run) Done() int64 {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.done
}

// Finish runs every replicate left and returns the result: whole, or, when
// ctx ended the run (now or in an earlier step), partial with
// [ErrCanceled].
func (r *Run) Finish(ctx context.Context) (SimResult, error) {
	err := r.Step(ctx, math.MaxInt64)
	res := r.Result()
	if err == nil && res.Partial {
		err = ErrCanceled // cannot happen: a step without a stop ends the blocks
	}
	return res, err
}

// Step advances the run by about n more replicates (n ≥ 1), spread over
// the workers (each takes n/workers, rounded up, or what is left), and
// returns when they are done. When ctx ends, every worker stops within one
// replicate (a replicate cut short is not counted), Step returns
// [ErrCanceled], and the run cannot be advanced any further: [Run.Result]
// then gives the replicates done before the first one missing.
func (r *Run) Step(ctx context.Context, n int64) error {
	if n < 1 {
		panic("power: a step of no replicate")
	}
	if r.broken || ctx.Err() != nil {
		r.broken = true
		return ErrCanceled
	}
	// The flag is set as soon as ctx ends, for the workers that check it
	// inside long replicates; the workers also read ctx.Done() themselves
	// every 64 replicates, so a stop is seen within 64 replicates of the
	// cancellation whenever the goroutine setting the flag runs.
	stop, done := new(atomic.Bool), ctx.Done()
	defer context.AfterFunc(ctx, func() { stop.Store(true) })()
	quota := (n-1)/int64(len(r.ws)) + 1 // n/workers rounded up, without overflow
	var stopped atomic.Bool
	var wg sync.WaitGroup
	for i := range r.ws {
		wg.Add(1)
		go func() {
			defer wg.Done()
			if r.ws[i] == nil {
				r.ws[i] = r.m.NewWorker()
			}
			w := r.ws[i]
			if sw, ok := w.(stopWatcher); ok {
				sw.watchStop(stop)
			}
			var lw LookWorker
			if r.looks > 0 {
				var ok bool
				if lw, ok = w.(LookWorker); !ok {
					panic("power: a sequential model's worker is not a LookWorker")
				}
			}
			for left := quota; left > 0; {
				if stopNow(stop, done) {
					stopped.Store(true)
					return
				}
				b := r.take()
				if b == nil {
					return
				}
				var did, k int64
				var cut bool
				if lw != nil {
					did, k, cut = replicateLooks(lw, b.rng, min(left, b.n-b.done), b.byLook, stop, done)
				} else {
					did, k, cut = replicate(w, b.rng, min(left, b.n-b.done), stop, done)
				}
				left -= did
				r.put(b, did, k)
				if cut {
					stopped.Store(true)
					return
				}
			}
		}()
	}
	wg.Wait()
	if stopped.Load() {
		r.broken = true
		return ErrCanceled
	}
	return nil
}

// replicate runs up to todo replicates of w from rng and returns how many
// were done and how many rejected; cut is true when the stop flag ended the
// loop. The flag is read after each replicate, which is then not counted
// (a [stopWatcher] may have cut it short), and set from done every 64
// replicates.
func replicate(w Worker, rng *rand.Rand, todo int64, stop *atomic.Bool, done <-chan struct{}) (did, k int64, cut bool) {
	for ; did < todo; did++ {
		rej := w.Replicate(rng)
		if did&63 == 63 {
			stopNow(stop, done)
		}
		if stop.Load() {
			return did, k, true
		}
		if rej {
			k++
		}
	}
	return did, k, false
}

// replicateLooks is [replicate] for a [LookWorker]: it also adds each
// counted replicate that crossed at look k to byLook[k−1]. It is apart
// from replicate so that the loop of the other models stays as it was.
func replicateLooks(w LookWorker, rng *rand.Rand, todo int64, byLook []int64, stop *atomic.Bool, done <-chan struct{}) (did, k int64, cut bool) {
	for ; did < todo; did++ {
		look := w.ReplicateLook(rng)
		if did&63 == 63 {
			stopNow(stop, done)
		}
		if stop.Load() {
			return did, k, true
		}
		if look != 0 {
			byLook[look-1]++ // a look outside 1..K is a bug of the model: panic
			k++
		}
	}
	return did, k, false
}

// stopNow sets stop when done is closed, and reports whether stop is set.
func stopNow(stop *atomic.Bool, done <-chan struct{}) bool {
	select {
	case <-done:
		stop.Store(true)
	default:
	}
	return stop.Load()
}

// take hands out the first block put aside, else the next new block, or
// nil when every block has been handed out.
func (r *Run) take() *blockRun {
	r.mu.Lock()
	defer r.mu.Unlock()
	if len(r.paused) > 0 {
		b := r.paused[0]
		r.paused = r.paused[1:]
		return b
	}
	if r.next == r.blocks {
		return nil
	}
	b := &blockRun{b: r.next, n: min(r.bs, r.cfg.Replicates-r.next*r.bs)}
	if r.looks > 0 {
		b.byLook = make([]int64, r.looks)
	}
	s1, s2 := blockSeed(r.cfg.Seed, b.b)
	b.rng = rand.New(rand.NewPCG(s1, s2))
	r.next++
	return b
}

// put takes back a block after did more replicates with k rejections
// (already added to b.byLook by the worker that held it): finished, or put
// aside for a later step.
func (r *Run) put(b *blockRun, did, k int64) {
	r.mu.Lock()
	defer r.mu.Unlock()
	b.done += did
	b.rej += k
	r.done += did
	if b.done < b.n {
		i, _ := slices.BinarySearchFunc(r.paused, b.b, func(x *blockRun, t int64) int { return cmp.Compare(x.b, t) })
		r.paused = slices.Insert(r.paused, i, b)
	} else {
		r.ahead[b.b] = b
		for {
			fb, ok := r.ahead[r.frontier]
			if !ok {
				break
			}
			delete(r.ahead, r.frontier)
			r.prefix.Replicates += fb.n
			r.prefix.Rejections += fb.rej
			addLooks(r.prefix.ByLook, fb.byLook)
			r.frontier++
		}
	}
	if r.cfg.Progress != nil && did > 0 {
		r.cfg.Progress(r.done)
	}
}

// Result returns the replicates done so far that come before the first
// one missing (all of them when the run is finished), so that a partial
// result is exactly that of a shorter run with the same seed. It must not
// be called during a step.
func (r *Run) Result() SimResult {
	r.mu.Lock()
	defer r.mu.Unlock()
	res := r.prefix
	res.ByLook = slices.Clone(r.prefix.ByLook)
	if len(r.paused) > 0 && r.paused[0].b == r.frontier {
		res.Replicates += r.paused[0].done
		res.Rejections += r.paused[0].rej
		addLooks(res.ByLook, r.paused[0].byLook)
	}
	res.Partial = res.Replicates < r.cfg.Replicates
	return res
}

// addLooks adds the counts of src to dst, both nil or of equal length.
func addLooks(dst, src []int64) {
	for i, c := range src {
		dst[i] += c
	}
}
