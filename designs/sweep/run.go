package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"enough/designs"
)

// room is the room of one point's figures (designs.QuickInto): its
// Answer, the sizes the answer's N and Enrol hold and its power.
type room struct {
	answer designs.Answer
	sizes  [4]int
	power  float64
}

// PointSeed is the seed of point index's simulation in a sweep whose seed
// is seed (the specification's simulate.seed, or the one given in
// Options.Sim): SplitMix64's output function (Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA) applied to
// seed + (index + 1) × 0x9E3779B97F4A7C15 (mod 2⁶⁴), keeping its top 53
// bits so that the seed, and the null run's seed + 1, stay within
// designs.MaxSeed. A point's seed depends on nothing but the sweep's seed
// and the point's index in the whole grid: not on the order of the axes'
// values elsewhere, the number of workers or the sharding.
func PointSeed(seed uint64, index int) uint64 {
	z := seed + (uint64(index)+1)*0x9E3779B97F4A7C15
	z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9
	z = (z ^ (z >> 27)) * 0x94D049BB133111EB
	z ^= z >> 31
	return z >> 11
}

// Run solves the specification at every point of the grid (only those of
// the shard when o.Shards > 0: index i with i mod Shards = Shard − 1), on
// o.Workers goroutines, and returns the rows in grid order.
//
// It first checks every axis's key (Base.CheckKey) and refuses a grid of
// more than o.MaxPoints points; those errors stop the sweep before any
// point is solved. A point that cannot be planned is a row with its error
// (a *designs.SpecError for a value the specification does not allow, a
// *designs.PlanError for a target no size reaches), never an abort.
//
// Each point is solved by designs.Quick (the figures of the table), or by
// designs.Plan with o.Full, o.Alternatives or o.Simulate; with o.Simulate
// each point is also verified by simulation (designs.Verify) with the seed
// PointSeed(seed, index), seed being o.Sim's when set, else the point's
// simulate.seed (else 1), so that a point's simulation is the same however
// the grid is ordered, sharded or shared among workers (o.Sim.Workers 0
// means one worker per simulation: the sweep's workers keep the cores
// busy).
//
// o.Progress, when set, is told the points done (of the shard) as they
// finish, from one goroutine at a time. When ctx ends, the workers stop
// after the point at hand and Run returns the rows done, in grid order,
// with ctx.Err().
func Run(ctx context.Context, b *designs.Base, g Grid, o Options) ([]Row, error) {
	keys := make([]string, len(g.Axes))
	for k, a := range g.Axes {
		if err := b.CheckKey(a.Key); err != nil {
			return nil, err
		}
		for _, prev := range keys[:k] {
			if prev == a.Key {
				return nil, &GridError{Msg: fmt.Sprintf("--vary: %s is varied twice; allowed: each key once (put all its values in one --vary)", a.Key)}
			}
		}
		if len(a.Values) != len(a.Texts) || len(a.Values) == 0 {
			return nil, &GridError{Msg: fmt.Sprintf("--vary: %s has %d values and %d texts; allowed: at least one value, each with its text", a.Key, len(a.Values), len(a.Texts))}
		}
		keys[k] = a.Key
	}
	if b.Spec().Cluster == nil {
		// Cluster keys on an individually randomised plan: both the size
		// and the ICC make it a cluster trial; one alone leaves the other
		// missing at every point.
		size, icc := slices.Contains(keys, "cluster.size"), slices.Contains(keys, "cluster.icc")
		for _, k := range keys {
			if strings.HasPrefix(k, "cluster.") && !(size && icc) {
				return nil, &GridError{Msg: fmt.Sprintf("--vary: %s does not apply: the specification has no cluster block; allowed: add cluster: with its size and icc (or vary both cluster.size and cluster.icc)", k)}
			}
		}
	}
	limit := o.MaxPoints
	switch {
	case o.Workers < 0:
		return nil, &GridError{Msg: fmt.Sprintf("%d workers; allowed: 0 (one per core) or more", o.Workers)}
	case o.MaxPoints < 0:
		return nil, &GridError{Msg: fmt.Sprintf("a limit of %d points; allowed: 0 (the default, %s) or more", o.MaxPoints, countText(DefaultMaxPoints))}
	case o.Shards < 0 || (o.Shards > 0 && (o.Shard < 1 || o.Shard > o.Shards)) || (o.Shards == 0 && o.Shard != 0):
		return nil, &GridError{Msg: fmt.Sprintf("shard %d of %d; allowed: a shard from 1 to the number of shards", o.Shard, o.Shards)}
	case limit == 0:
		limit = DefaultMaxPoints
	}
	size := g.Size()
	if size > limit {
		what := countText(float64(size))
		if size == math.MaxInt {
			what = "more than " + countText(float64(size))
		}
		return nil, &GridError{Msg: fmt.Sprintf("the grid has %s points, more than the limit of %s; allowed: fewer values, or raise --max-points", what, countText(float64(limit)))}
	}
	first, stride := 0, 1
	if o.Shards > 0 {
		first, stride = o.Shard-1, o.Shards
	}
	count := 0
	if first < size {
		count = (size - first + stride - 1) / stride
	}
	if o.Simulate && o.Sim.MaxSeconds > 0 && count > 0 {
		// The whole sweep is guarded, as enough simulate guards a run: the
		// first points are simulated one by one (each guarded by the
		// whole limit) until one is timed, and the sweep is refused when
		// its points would take longer together on the workers.
		workers := o.Workers
		if workers == 0 {
			workers = runtime.NumCPU()
		}
		workers = max(1, min(workers, count))
		now := o.Sim.Now
		if now == nil {
			now = time.Now
		}
		for j := 0; j < min(count, 5); j++ {
			start := now()
			rows, err := runBlock(ctx, b, g, o, keys, first, stride, j, j+1, count, nil)
			if err != nil {
				return nil, err
			}
			if len(rows) == 0 || rows[0].Simulation == nil {
				continue
			}
			each := now().Sub(start).Seconds()
			if predicted := each * float64(count) / float64(workers); predicted > o.Sim.MaxSeconds {
				return nil, &GridError{Msg: fmt.Sprintf("the sweep is predicted to take about %s s (%s points, about %.2g s each, on %d workers), more than --max-seconds %g; allowed: fewer points or replicates, or raise --max-seconds (0: no limit)",
					countText(math.Round(predicted)), countText(float64(count)), each, workers, o.Sim.MaxSeconds)}
			}
			// Timed: the points need no guard of their own.
			o.Sim.MaxSeconds = 0
			break
		}
	}
	if o.Emit == nil {
		return runBlock(ctx, b, g, o, keys, first, stride, 0, count, count, nil)
	}
	// Block by block, the rows' memory reused: only a block is held.
	var scratch *blockMemory
	for from := 0; from < count; from += EmitBlock {
		to := min(from+EmitBlock, count)
		if scratch == nil {
			scratch = &blockMemory{}
		}
		rows, err := runBlock(ctx, b, g, o, keys, first, stride, from, to, count, scratch)
		if len(rows) > 0 {
			if eerr := o.Emit(rows); eerr != nil {
				return nil, eerr
			}
		}
		if err != nil {
			return nil, err
		}
	}
	return nil, nil
}

// blockMemory is the memory of one block's rows, reused block to block.
type blockMemory struct {
	rows   []Row
	done   []bool
	points []float64
	rooms  []room
}

// runBlock solves the points j in [from, to) of the shard (of count
// points: point j is grid index first + j × stride) and returns their rows
// in order; mem, when set, holds memory to reuse.
func runBlock(ctx context.Context, b *designs.Base, g Grid, o Options, keys []string, first, stride, from, to, count int, mem *blockMemory) ([]Row, error) {
	n := to - from
	axes := len(g.Axes)
	var rows []Row
	var done []bool
	var points []float64
	var rooms []room
	plan := o.Full || o.Alternatives || o.Simulate
	if mem != nil {
		if cap(mem.rows) < n {
			mem.rows, mem.done, mem.points = make([]Row, n), make([]bool, n), make([]float64, n*axes)
			if !plan {
				mem.rooms = make([]room, n)
			}
		}
		rows, done, points = mem.rows[:n], mem.done[:n], mem.points[:n*axes]
		clear(rows)
		clear(done)
		if !plan {
			rooms = mem.rooms[:n]
			clear(rooms)
		}
	} else {
		rows, done, points = make([]Row, n), make([]bool, n), make([]float64, n*axes)
	}
	workers := o.Workers
	if workers == 0 {
		workers = runtime.NumCPU()
	}
	workers = max(1, min(workers, n))
	chunk := 1
	if !plan {
		// Long enough to make the shared counter cheap, short enough to
		// share the points evenly and to stop soon.
		chunk = max(1, min(256, n/(8*workers)))
	} else if !o.Simulate {
		chunk = max(1, min(16, n/(8*workers)))
	}
	var (
		next     atomic.Int64
		mu       sync.Mutex
		finished = from // the points of the blocks before this one
		wg       sync.WaitGroup
	)
	report := func(k int) {
		if o.Progress == nil || k == 0 {
			return
		}
		mu.Lock()
		finished += k
		o.Progress(finished, count)
		mu.Unlock()
	}
	// solve solves point from + k of the shard into rows[k]; a is the
	// room for its answer (Quick).
	solve := func(sc *designs.Scratch, k int, a *room) bool {
		i := first + (from+k)*stride
		row := &rows[k]
		row.Index = i
		row.Point = g.valuesInto(i, points[k*axes:(k+1)*axes:(k+1)*axes])
		if !plan {
			s, err := b.AtScratch(sc, keys, row.Point)
			err = fromVary(err, keys, g, i)
			if err == nil {
				a.answer.N, a.answer.Enrol, a.answer.AchievedPower = a.sizes[0:0:2], a.sizes[2:2:4], &a.power
				if err = designs.QuickInto(s, &a.answer); err == nil {
					row.Result = &a.answer
				}
			}
			row.Err = err
			return true
		}
		s, err := b.At(keys, row.Point)
		if err != nil {
			row.Err = fromVary(err, keys, g, i)
			return true
		}
		res, err := designs.Plan(s)
		if err != nil {
			row.Err = err
			return true
		}
		row.Result = &res.Result
		if o.Alternatives {
			row.Alternatives = res.Alternatives
		}
		if !o.Simulate {
			return true
		}
		so := o.Sim
		seed := uint64(1)
		if s.Simulate != nil {
			seed = s.Simulate.Seed
		}
		if so.SeedSet {
			seed = so.Seed
		}
		so.Seed, so.SeedSet = PointSeed(seed, i), true
		if so.Workers == 0 {
			so.Workers = 1
		}
		err = designs.Verify(ctx, s, res, so)
		if errors.Is(err, designs.ErrStopped) && ctx.Err() != nil {
			return false // stopped: not done
		}
		// A simulation that fails (a limit of its settings) leaves the
		// plan's figures with the error beside them.
		row.Simulation, row.Err = res.Simulation, err
		return true
	}
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var sc designs.Scratch
			for ctx.Err() == nil {
				lo := int(next.Add(int64(chunk))) - chunk
				if lo >= n {
					return
				}
				hi := min(lo+chunk, n)
				var own []room
				switch {
				case rooms != nil:
					own = rooms[lo:hi]
				case !plan:
					// The chunk's answers, allocated together and filled at
					// once, while their memory is in the cache; the points
					// themselves allocate nothing.
					own = make([]room, hi-lo)
				}
				k := 0
				for j := lo; j < hi; j++ {
					var a *room
					if own != nil {
						a = &own[j-lo]
					}
					// A quick chunk is short: the context is asked once a
					// chunk (asking takes a lock), a planned point at each.
					if (plan && ctx.Err() != nil) || !solve(&sc, j, a) {
						break
					}
					done[j] = true
					k++
				}
				report(k)
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		kept := rows[:0]
		for j := range rows {
			if done[j] {
				kept = append(kept, rows[j])
			}
		}
		if len(kept) < n {
			return kept, err
		}
	}
	return rows, nil
}

// fromVary names the --vary value behind a point's error: a problem with
// a varied key's value names "--vary KEY=VALUE" as its origin (no line),
// as a problem with a --set value names "--set KEY=VALUE".
func fromVary(err error, keys []string, g Grid, i int) error {
	if err == nil {
		return nil
	}
	ses := designs.AllSpecErrors(err)
	if len(ses) == 0 {
		return err
	}
	var texts []string
	out := make(designs.SpecErrors, len(ses))
	changed := false
	for n, se := range ses {
		out[n] = se
		k := slices.Index(keys, se.Key)
		if k < 0 {
			continue
		}
		if texts == nil {
			texts = g.Texts(i)
		}
		c := *se
		c.File, c.Line = "--vary "+keys[k]+"="+texts[k], 0
		out[n], changed = &c, true
	}
	switch {
	case !changed:
		return err
	case len(out) == 1:
		return out[0]
	}
	return out
}
