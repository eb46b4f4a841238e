package designs

import (
	"context"
	"errors"
	"fmt"
	"math"
	"time"

	"enough/power"
)

// SimOptions control the verification of a plan by simulation. Zero
// values take the specification's simulate block, then the defaults
// (10,000 replicates, seed 1).
type SimOptions struct {
	Replicates int64
	Seed       uint64
	SeedSet    bool
	Workers    int
	// MaxSeconds refuses a run predicted to take longer (0: no limit).
	MaxSeconds float64
	// MaxReplicates refuses more replicates (0: 1e9).
	MaxReplicates int64
	// Progress, when set, is told the replicates done in each run.
	Progress func(label string, done, total int64)
	// Now is the clock used to predict the run time (time.Now when nil).
	Now func() time.Time
}

// InputError is a simulation setting out of range (exit status 2).
type InputError struct{ Msg string }

func (e *InputError) Error() string { return e.Msg }

// ErrStopped is returned, with the partial simulation filled in, when the
// context ended the run early.
var ErrStopped = errors.New("simulation stopped early")

// Simulation is the verification of a plan by simulation; its JSON form is
// the `simulation` object.
type Simulation struct {
	Test       string  `json:"test"`
	TestName   string  `json:"test_name"`
	Replicates int64   `json:"replicates"`
	Seed       uint64  `json:"seed"`
	N          []int   `json:"n"`
	Power      float64 `json:"power"`
	SE         float64 `json:"se"`
	// CI is the 95% score (Wilson 1927) interval of Power [low, high]: it
	// stays a true interval when every replicate, or none, rejects.
	CI []float64 `json:"ci"`
	// Type1Error is the simulated type I error, Type1SE its standard error
	// and Type1CI its 95% score interval; all three are null when the null
	// run did not happen (a run stopped early).
	Type1Error *float64  `json:"type1_error"`
	Type1SE    *float64  `json:"type1_se"`
	Type1CI    []float64 `json:"type1_ci"`
	// Type1At says where the null run sits (no difference, or the margin).
	Type1At         string  `json:"type1_at"`
	ClosedFormPower float64 `json:"closed_form_power"`
	Difference      float64 `json:"difference"`
	Agrees          bool    `json:"agrees"`
	Partial         bool    `json:"partial"`
	// Notes explain what the simulation assumes.
	Notes []string `json:"notes,omitempty"`
	// Solved is the sample size found by simulation (solving n).
	Solved *SimSolved `json:"solved,omitempty"`
}

// SimSolved is the smallest first-group size whose simulated power reaches
// the target, found with common random numbers across candidate sizes.
type SimSolved struct {
	N     []int   `json:"n"`
	Power float64 `json:"power"`
	SE    float64 `json:"se"`
	// NSE is the Monte-Carlo uncertainty of the first group's size: the
	// power's standard error divided by the slope of power in n.
	NSE float64 `json:"n_se"`
}

// simSetup is one simulation's model and what it is compared with.
type simSetup struct {
	model  power.Model
	sizes  [2]int
	closed float64 // closed-form power at the same sizes
	notes  []string
	null   string // where the null run sits, when more precise than the default
}

// Verify simulates the study at the plan's analysable sizes (or simulate.n)
// with the planned test, under the planned effect and under the null, and
// fills res.Simulation. With solve: n it also searches the size at which the
// simulated power reaches the target.
func Verify(ctx context.Context, s *Spec, res *Result, o SimOptions) error {
	if s.Goal == "precision" {
		return &InputError{Msg: s.File + ": simulate: a precision survey has no test to simulate; allowed: a two-group comparison"}
	}
	if s.Solve == "effect" {
		return &InputError{Msg: s.File + ": simulate: solve effect gives two detectable effects, not one to simulate; allowed: solve n or power (set the effect key to the detectable effect and solve: power to verify it)"}
	}
	reps, seed := int64(10000), uint64(1)
	n1 := 0
	if s.Simulate != nil {
		reps, seed, n1 = s.Simulate.Replicates, s.Simulate.Seed, s.Simulate.N
	}
	if o.Replicates > 0 {
		reps = o.Replicates
	}
	if o.SeedSet {
		seed = o.Seed
	}
	maxReps := o.MaxReplicates
	if maxReps <= 0 {
		maxReps = 1_000_000_000
	}
	if reps > maxReps {
		return &InputError{Msg: fmt.Sprintf("%s: simulate: %d replicates are more than the limit of %d; allowed: fewer, or raise --max-replicates", s.File, reps, maxReps)}
	}
	if reps < 100 {
		return &InputError{Msg: fmt.Sprintf("%s: simulate: %d replicates are too few; allowed: at least 100", s.File, reps)}
	}
	now := o.Now
	if now == nil {
		now = time.Now
	}

	sizes := [2]int{res.Result.N[0], res.Result.N[0]}
	if len(res.Result.N) == 2 {
		sizes[1] = res.Result.N[1]
	}
	if n1 > 0 {
		sizes = simSizes(s, n1)
	}
	t0 := now()
	alt, err := simModel(s, res, sizes, false)
	if err != nil {
		return err
	}
	build := now().Sub(t0).Seconds()
	null, err := simModel(s, res, sizes, true)
	if err != nil {
		return err
	}

	// Predict the run time from the model's build and a pilot of two
	// blocks: two runs, and for solve n a search of about 2 log₂ n + 4 more
	// runs, each building its own model.
	if o.MaxSeconds > 0 {
		pilot := min(reps, 2*8192)
		t1 := now()
		if _, err := power.Simulate(ctx, alt.model, power.SimConfig{Replicates: pilot, Seed: seed ^ 0x5eed, Workers: o.Workers}); err != nil {
			res.Simulation = &Simulation{Test: s.Test, TestName: TestName(s.Test), Seed: seed, N: sizes[:], Partial: true}
			return ErrStopped
		}
		run := now().Sub(t1).Seconds() * float64(reps) / float64(pilot)
		predicted := 2*run + 2*build
		if s.Solve == "n" && s.Cluster == nil {
			searches := 2*math.Log2(float64(max(2, sizes[0]))) + 4
			predicted += searches * (run + 2*build)
		}
		if predicted > o.MaxSeconds {
			return &InputError{Msg: fmt.Sprintf("%s: simulate: the run is predicted to take about %.0f s, more than --max-seconds %g; allowed: fewer replicates, or raise --max-seconds", s.File, predicted, o.MaxSeconds)}
		}
	}

	cfg := func(label string) power.SimConfig {
		c := power.SimConfig{Replicates: reps, Seed: seed, Workers: o.Workers}
		if o.Progress != nil {
			c.Progress = func(done int64) { o.Progress(label, done, reps) }
		}
		return c
	}
	sizes = alt.sizes
	sim := &Simulation{Test: s.Test, TestName: TestName(s.Test), Replicates: reps, Seed: seed,
		N: sizes[:], ClosedFormPower: alt.closed, Notes: alt.notes}
	if s.Pairing == "paired" {
		sim.N = sizes[:1]
	}
	res.Simulation = sim
	r1, err1 := power.Simulate(ctx, alt.model, cfg("planned effect"))
	fill := func(r power.SimResult) {
		sim.Replicates = r.Replicates
		if r.Replicates > 0 {
			sim.Power, sim.SE = r.Power(), r.SE()
			lo, hi := r.CI()
			sim.CI = []float64{lo, hi}
		}
	}
	fill(r1)
	if r1.Replicates > 0 {
		sim.Difference = sim.Power - sim.ClosedFormPower
		sim.Agrees = !(math.Abs(sim.Difference) > 3*sim.SE && math.Abs(sim.Difference) > 0.01)
	}
	if err1 != nil {
		sim.Partial = true
		return ErrStopped
	}
	sim.Type1At = "no difference"
	switch {
	case null.null != "":
		sim.Type1At = null.null
	case s.Hypothesis == "non-inferiority":
		sim.Type1At = "the non-inferiority margin"
	case s.Hypothesis == "equivalence" && s.MarginScale == "ratio":
		sim.Type1At = "the upper equivalence margin (a true risk ratio equal to the margin)"
	case s.Hypothesis == "equivalence":
		sim.Type1At = "the upper equivalence margin (a true difference of +margin)"
	}
	r0, err0 := power.Simulate(ctx, null.model, power.SimConfig{Replicates: reps, Seed: seed + 1, Workers: o.Workers, Progress: cfg("null (type I error)").Progress})
	if r0.Replicates > 0 {
		sim.Type1Error, sim.Type1SE = ptr(r0.Power()), ptr(r0.SE())
		lo, hi := r0.CI()
		sim.Type1CI = []float64{lo, hi}
	}
	if !sim.Agrees {
		res.Warnings = append(res.Warnings, fmt.Sprintf(
			"The simulated power of %s (%.1f%%, standard error %.1f points) and the closed form (%.1f%%) part ways here by more than 3 standard errors and 1 point: the formula is only an approximation to the planned test at these sizes; trust the simulation of the test you will run.",
			TestName(s.Test), 100*sim.Power, 100*sim.SE, 100*sim.ClosedFormPower))
	}
	if err0 != nil {
		sim.Partial = true
		return ErrStopped
	}
	if s.Solve == "n" && s.Power > 0 && s.Cluster == nil {
		solved, err := solveBySimulation(ctx, s, res, sizes, reps, seed, o)
		if err != nil {
			if errors.Is(err, ErrStopped) {
				sim.Partial = true
			}
			return err
		}
		sim.Solved = solved
	}
	return nil
}

// solveBySimulation finds the smallest first-group size whose simulated
// power reaches the target, using the same seed (common random numbers) at
// every candidate so that the comparison between sizes is sharp.
func solveBySimulation(ctx context.Context, s *Spec, res *Result, start [2]int, reps int64, seed uint64, o SimOptions) (*SimSolved, error) {
	at := func(n1 int) ([2]int, power.SimResult, simSetup, error) {
		sz := simSizes(s, n1)
		st, err := simModel(s, res, sz, false)
		if err != nil {
			return sz, power.SimResult{}, st, err
		}
		r, err := power.Simulate(ctx, st.model, power.SimConfig{Replicates: reps, Seed: seed, Workers: o.Workers})
		if err != nil {
			return sz, r, st, ErrStopped
		}
		return sz, r, st, nil
	}
	reach := func(n1 int) (bool, error) {
		_, r, _, err := at(n1)
		return r.Power() >= s.Power, err
	}
	lo, hi := max(2, start[0]/2), max(3, start[0])
	if ok, err := reach(hi); err != nil {
		return nil, err
	} else if !ok {
		for step := max(1, start[0]/4); ; step *= 2 {
			lo, hi = hi, hi+step
			ok, err := reach(hi)
			if err != nil {
				return nil, err
			}
			if ok {
				break
			}
			if hi > 64*start[0]+1000 {
				return nil, &PlanError{File: s.File, Msg: "simulate: no size up to 64 times the closed form reaches the target power by simulation"}
			}
		}
	} else if ok, err := reach(lo); err != nil {
		return nil, err
	} else if ok {
		lo = 1
	}
	for hi-lo > 1 {
		mid := lo + (hi-lo)/2
		ok, err := reach(mid)
		if err != nil {
			return nil, err
		}
		if ok {
			hi = mid
		} else {
			lo = mid
		}
	}
	sz, r, st, err := at(hi)
	if err != nil {
		return nil, err
	}
	out := &SimSolved{N: sz[:], Power: r.Power(), SE: r.SE()}
	if s.Pairing == "paired" {
		out.N = sz[:1]
	}
	// Slope of the closed-form power in n near the answer.
	if up, err := simModel(s, res, simSizes(s, hi+max(1, hi/20)), false); err == nil {
		if slope := (up.closed - st.closed) / float64(max(1, hi/20)); slope > 0 {
			out.NSE = r.SE() / slope
		}
	}
	return out, nil
}

// simSizes returns the group sizes for a first group of n1: the second
// follows the ratio (at least one member, two for a t test).
func simSizes(s *Spec, n1 int) [2]int {
	if s.Pairing == "paired" {
		return [2]int{n1, n1}
	}
	least := 1
	if s.Outcome == "continuous" {
		least = 2
	}
	return [2]int{n1, max(least, ceilTol(s.Ratio*float64(n1)))}
}
