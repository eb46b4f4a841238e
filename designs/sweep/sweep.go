// Package sweep solves a specification over a grid of assumptions (enough
// sweep): the Cartesian product of the values given to each varied key,
// solved in parallel as the specification says (n, power or effect), each
// point by the same engine as enough plan, in grid order whatever the
// number of workers or the sharding.
//
// A point does not re-parse the specification: the validated
// specification is changed in code and only what the point changes is
// validated again (designs.Base.At).
package sweep

import "enough/designs"

// Axis is one varied key (--vary KEY=LIST or KEY=FROM:TO:STEP): the key as
// given (dotted for nested keys: cluster.icc) and its values in order.
type Axis struct {
	Key string
	// Values are the key's values; Texts the same values as they are
	// written in every output (the shortest form that reads back as the
	// value: 0.1, not 0.10000000000000001).
	Values []float64
	Texts  []string
}

// Grid is the Cartesian product of its axes, the last varying fastest:
// point i has, for axis k, the value of index (i / stride_k) mod len_k,
// with stride_k the product of the lengths of the axes after k.
type Grid struct {
	Axes []Axis
}

// Row is the outcome of one point.
type Row struct {
	// Index is the point's index in the grid, from 0.
	Index int
	// Point holds the point's value of each axis, in axis order.
	Point []float64
	// Result is the point's answer: the result object of enough plan for
	// that point (nil when the point could not be planned).
	Result *designs.Answer
	// Alternatives are the other applicable methods' answers (only with
	// Options.Alternatives).
	Alternatives []designs.Alternative
	// Simulation is the point's simulation (only with Options.Simulate).
	Simulation *designs.Simulation
	// Err is why the point could not be planned: a *designs.SpecError (a
	// value the specification does not allow) or a *designs.PlanError.
	Err error
}

// Options are the settings of a sweep.
type Options struct {
	// Workers is the number of goroutines (0: one per core).
	Workers int
	// Full computes every point's whole plan (what JSON output shows);
	// otherwise only the figures of the table (the sizes, enrolment,
	// achieved power or detectable effect, events and clusters), which is
	// faster and gives the same figures.
	Full bool
	// Alternatives adds the other applicable methods' answers.
	Alternatives bool
	// Simulate simulates every point (its seed derived from the
	// specification's seed and the point's index), with these settings.
	Simulate bool
	Sim      designs.SimOptions
	// Shard and Shards select the points i with i mod Shards = Shard − 1
	// (Shards 0: every point).
	Shard, Shards int
	// MaxPoints refuses a larger grid (0: DefaultMaxPoints).
	MaxPoints int
	// Progress, when set, is told the points done.
	Progress func(done, total int)
	// Emit, when set, receives the rows block by block, in grid order, and
	// Run returns no rows: the memory of a block's rows and answers is
	// reused for the next, so a large grid is written as it is solved.
	// The rows passed are valid only until Emit returns.
	Emit func(rows []Row) error
}

// EmitBlock is the number of points Run solves between calls of
// Options.Emit.
const EmitBlock = 8192

// DefaultMaxPoints is the largest grid swept unless --max-points says
// otherwise.
const DefaultMaxPoints = 1_000_000
