package sweep

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"
	"sync/atomic"

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
	rows := make([]Row, count)
	done := make([]bool, count)
	axes := len(g.Axes)
	points := make([]float64, count*axes)
	plan := o.Full || o.Alternatives || o.Simulate
	workers := o.Workers
	if workers == 0 {
		workers = runtime.NumCPU()
	}
	workers = max(1, min(workers, count))
	chunk := 1
	if !plan {
		// Long enough to make the shared counter cheap, short enough to
		// share the points evenly and to stop soon.
		chunk = max(1, min(256, count/(8*workers)))
	} else if !o.Simulate {
		chunk = max(1, min(16, count/(8*workers)))
	}
	var (
		next     atomic.Int64
		mu       sync.Mutex
		finished int
		wg       sync.WaitGroup
	)
	report := func(n int) {
		if o.Progress == nil || n == 0 {
			return
		}
		mu.Lock()
		finished += n
		o.Progress(finished, count)
		mu.Unlock()
	}
	// solve solves point j of the shard; a is the room for its answer
	// (Quick).
	solve := func(sc *designs.Scratch, j int, a *room) bool {
		i := first + j*stride
		row := &rows[j]
		row.Index = i
		row.Point = g.valuesInto(i, points[j*axes:(j+1)*axes:(j+1)*axes])
		if !plan {
			s, err := b.AtScratch(sc, keys, row.Point)
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
			row.Err = err
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
				from := int(next.Add(int64(chunk))) - chunk
				if from >= count {
					return
				}
				to := min(from+chunk, count)
				var rooms []room
				if !plan {
					// The chunk's answers, allocated together and filled at
					// once, while their memory is in the cache; the points
					// themselves allocate nothing.
					rooms = make([]room, to-from)
				}
				n := 0
				for j := from; j < to; j++ {
					var a *room
					if rooms != nil {
						a = &rooms[j-from]
					}
					// A quick chunk is short: the context is asked once a
					// chunk (asking takes a lock), a planned point at each.
					if (plan && ctx.Err() != nil) || !solve(&sc, j, a) {
						break
					}
					done[j] = true
					n++
				}
				report(n)
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
		if len(kept) < count {
			return kept, err
		}
	}
	return rows, nil
}
