package designs

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"strconv"
	"time"

	"enough/power"
)

// Limits of a simulation (README: "Flags of the simulation").
const (
	// MaxReplicates is the hard cap on replicates, 10¹² (that of
	// power.MaxReplicates): no limit can be raised beyond it.
	MaxReplicates = power.MaxReplicates
	// DefaultMaxReplicates is the limit on replicates when
	// SimOptions.MaxReplicates is 0; it can be raised up to MaxReplicates.
	DefaultMaxReplicates = 1_000_000_000
	// MaxWorkersPerCore caps the workers at this many per core
	// (runtime.GOMAXPROCS): more add scratch memory and slow a stop,
	// never speed.
	MaxWorkersPerCore = 4
	// DefaultMaxMemory is the scratch memory, in bytes, that the workers
	// may hold together when SimOptions.MaxMemory is 0: 1 GiB.
	DefaultMaxMemory = 1 << 30
	// pilotSeconds is how long the time guard's pilot runs before it
	// predicts the whole run.
	pilotSeconds = 0.2
)

// SimOptions control the verification of a plan by simulation. Zero
// values take the specification's simulate block, then the defaults
// (10,000 replicates, seed 1).
type SimOptions struct {
	// Replicates, when above 0, replaces simulate.replicates: from 100
	// to the limit o.MaxReplicates.
	Replicates int64
	// Seed replaces simulate.seed when SeedSet.
	Seed    uint64
	SeedSet bool
	// Workers is the number of goroutines (0: one per core), capped at
	// MaxWorkersPerCore per core and by MaxMemory; the result does not
	// depend on it.
	Workers int
	// MaxSeconds refuses a run predicted to take longer (0: no limit);
	// the prediction comes from the first replicates of the run itself,
	// timed for about 0.2 s, which count towards the run.
	MaxSeconds float64
	// MaxReplicates refuses more replicates (0: DefaultMaxReplicates; at
	// most the hard cap MaxReplicates).
	MaxReplicates int64
	// MaxMemory bounds the scratch memory of all workers together, in
	// bytes (0: DefaultMaxMemory): fewer workers are used when theirs
	// would exceed it, and a simulation whose single worker would is
	// refused.
	MaxMemory int64
	// Progress, when set, is told the replicates done in each run.
	Progress func(label string, done, total int64)
	// Notice, when set, is told each limit applied to the settings (fewer
	// workers than asked); the same sentences go in the simulation's
	// notes.
	Notice func(msg string)
	// Now is the clock used to time the pilot (time.Now when nil).
	Now func() time.Time
}

// check refuses options out of range: the caller's input, checked where
// it enters (the flags of enough are checked before, in their words).
func (o SimOptions) check(file string) error {
	bad := func(format string, a ...any) error {
		return &InputError{Msg: fmt.Sprintf("%s: simulate: ", file) + fmt.Sprintf(format, a...)}
	}
	switch {
	case o.Replicates < 0 || o.Replicates > MaxReplicates:
		return bad("%d replicates are out of range; allowed: 0 (the specification's) or 100 to %d", o.Replicates, MaxReplicates)
	case o.MaxReplicates < 0 || o.MaxReplicates > MaxReplicates:
		return bad("a limit of %d replicates is out of range; allowed: 0 (the default, %d) to %d", o.MaxReplicates, DefaultMaxReplicates, MaxReplicates)
	case o.Workers < 0:
		return bad("%d workers are out of range; allowed: 0 (one per core) or more", o.Workers)
	case !(o.MaxSeconds >= 0) || math.IsInf(o.MaxSeconds, 1):
		return bad("a limit of %g seconds is out of range; allowed: 0 (no limit) or a finite number of seconds", o.MaxSeconds)
	case o.MaxMemory < 0:
		return bad("a memory limit of %d bytes is out of range; allowed: 0 (the default) or more", o.MaxMemory)
	case o.SeedSet && o.Seed > MaxSeed:
		return bad("seed %d is out of range; allowed: 0 to %d", o.Seed, uint64(MaxSeed))
	}
	return nil
}

// MaxSeed is the largest seed, 2⁵³: every seed up to it is exact in a
// JSON number read as a double, as the output's seed is.
const MaxSeed = 1 << 53

// InputError is a simulation setting out of range (exit status 2).
type InputError struct{ Msg string }

func (e *InputError) Error() string { return e.Msg }

// ErrStopped is returned, with the partial simulation filled in, when the
// context ended the run early.
var ErrStopped = errors.New("simulation stopped early")

// Simulation is the verification of a plan by simulation; its JSON form is
// the `simulation` object.
type Simulation struct {
	Test       string `json:"test"`
	TestName   string `json:"test_name"`
	Replicates int64  `json:"replicates"`
	Seed       uint64 `json:"seed"`
	N          []int  `json:"n"`
	// Power is the simulated power and SE its standard error; both are
	// null when no replicate finished (a run stopped at once).
	Power *float64 `json:"power"`
	SE    *float64 `json:"se"`
	// CI is the 95% score (Wilson 1927) interval of Power [low, high]: it
	// stays a true interval when every replicate, or none, rejects; null
	// with Power.
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
	// Difference is Power minus ClosedFormPower, and Agrees says whether
	// they lie within 3 standard errors or 1 point of each other; both
	// are null with Power.
	Difference *float64 `json:"difference"`
	Agrees     *bool    `json:"agrees"`
	Partial    bool     `json:"partial"`
	// Notes explain what the simulation assumes.
	Notes []string `json:"notes,omitempty"`
	// Solved is the sample size found by simulation (solving n).
	Solved *SimSolved `json:"solved,omitempty"`

	// A precision survey's simulation: how often the interval's
	// half-width is within the margin, and how often it covers the true
	// value, each with its standard error and 95% score interval (the
	// power fields are then null).
	WithinMargin   *float64  `json:"within_margin,omitempty"`
	WithinMarginSE *float64  `json:"within_margin_se,omitempty"`
	WithinMarginCI []float64 `json:"within_margin_ci,omitempty"`
	Coverage       *float64  `json:"coverage,omitempty"`
	CoverageSE     *float64  `json:"coverage_se,omitempty"`
	CoverageCI     []float64 `json:"coverage_ci,omitempty"`

	// Sequential is the simulation of a group-sequential trial (a plan
	// with interim analyses).
	Sequential *SeqSimulation `json:"sequential,omitempty"`
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
//
// When ctx ends, the runs stop within a replicate or so, and Verify
// returns ErrStopped with res.Simulation holding the replicates done
// (marked partial): the first ones of the run, exactly those of a run
// asked for that many.
func Verify(ctx context.Context, s *Spec, res *Result, o SimOptions) error {
	if s.Goal == "precision" || s.Goal == "accuracy" {
		return verifyPrecision(ctx, s, res, o)
	}
	if s.Interim != nil {
		return verifySequential(ctx, s, res, o)
	}
	if s.Solve == "effect" {
		return &InputError{Msg: s.File + ": simulate: solve effect gives two detectable effects, not one to simulate; allowed: solve n or power (set the effect key to the detectable effect and solve: power to verify it)"}
	}
	if err := o.check(s.File); err != nil {
		return err
	}
	reps, seed, n1, err := simSettings(s, o)
	if err != nil {
		return err
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
	if o.MaxSeconds > 0 && build > o.MaxSeconds {
		return &InputError{Msg: fmt.Sprintf("%s: simulate: building the model alone took %s, more than --max-seconds %g; allowed: a smaller study, or raise --max-seconds (0: no limit)", s.File, seconds(build), o.MaxSeconds)}
	}
	null, err := simModel(s, res, sizes, true)
	if err != nil {
		return err
	}
	workers, capNotes, err := o.workerCount(s.File, max(power.WorkerBytes(alt.model), power.WorkerBytes(null.model)), alt.sizes)
	if err != nil {
		return err
	}

	cfg := func(label string) power.SimConfig {
		c := power.SimConfig{Replicates: reps, Seed: seed, Workers: workers}
		if o.Progress != nil {
			c.Progress = func(done int64) { o.Progress(label, done, reps) }
		}
		return c
	}
	sizes = alt.sizes
	sim := &Simulation{Test: s.Test, TestName: TestName(s.Test), Replicates: reps, Seed: seed,
		N: sizes[:], ClosedFormPower: alt.closed, Notes: slices.Concat(alt.notes, capNotes)}
	if s.OneGroup() {
		sim.N = sizes[:1]
	}
	res.Simulation = sim
	run := power.NewRun(alt.model, cfg("planned effect"))
	if o.MaxSeconds > 0 {
		if err := o.guard(ctx, run, s, reps, build, now().Sub(t0).Seconds(), sizes, now); err != nil {
			if errors.Is(err, ErrStopped) {
				sim.setPower(run.Result())
				sim.Partial = true
			} else {
				res.Simulation = nil
			}
			return err
		}
	}
	r1, err1 := run.Finish(ctx)
	sim.setPower(r1)
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
	c0 := cfg("null (type I error)")
	c0.Seed = seed + 1
	r0, err0 := power.Simulate(ctx, null.model, c0)
	if r0.Replicates > 0 {
		sim.Type1Error, sim.Type1SE, sim.Type1CI = estimate(r0)
	}
	if !*sim.Agrees {
		res.Warnings = append(res.Warnings, fmt.Sprintf(
			"The simulated power of %s (%.1f%%, standard error %.1f points) and the closed form (%.1f%%) part ways here by more than 3 standard errors and 1 point: the formula is only an approximation to the planned test at these sizes; trust the simulation of the test you will run.",
			TestName(s.Test), 100**sim.Power, 100**sim.SE, 100*sim.ClosedFormPower))
	}
	if err0 != nil {
		sim.Partial = true
		return ErrStopped
	}
	if s.Solve == "n" && s.Power > 0 && s.Cluster == nil {
		solved, err := solveBySimulation(ctx, s, res, sizes, reps, seed, workers, o)
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

// guard is the time guard. It runs the first replicates of run as a
// pilot, growing from one replicate per worker until about pilotSeconds
// (never past o.MaxSeconds), predicts the whole simulation from their
// pace, and refuses it when the prediction exceeds o.MaxSeconds. The
// pilot's replicates are the run's own: they are not done again. build is
// the time one model took to build, spent the time already taken (building
// both); it returns ErrStopped when ctx ended during the pilot.
func (o SimOptions) guard(ctx context.Context, run *power.Run, s *Spec, reps int64, build, spent float64, sizes [2]int, now func() time.Time) error {
	limit := o.MaxSeconds
	// The pilot gives up at the limit: a replicate slower than the whole
	// allowance is refused within about --max-seconds.
	pctx, cancel := context.WithTimeout(ctx, time.Duration(math.Min(limit-spent, 1e6)*float64(time.Second)))
	defer cancel()
	start := now()
	step := int64(run.Workers())
	var took, lastTook float64 // the pilot's time, and its last step's
	var lastDone int64         // the replicates of the last step
	for {
		before, doneBefore := took, run.Done()
		err := run.Step(pctx, step)
		took = now().Sub(start).Seconds()
		lastTook, lastDone = took-before, run.Done()-doneBefore
		if err != nil {
			if ctx.Err() != nil {
				return ErrStopped
			}
			return &InputError{Msg: fmt.Sprintf("%s: simulate: the run would take longer than --max-seconds %g: after %s, %d of its %d replicates were done; allowed: fewer replicates, a smaller study, or raise --max-seconds (0: no limit)",
				s.File, limit, seconds(spent+took), run.Done(), reps)}
		}
		done := run.Done()
		if done >= reps || took >= pilotSeconds {
			break
		}
		// Aim at the end of the pilot, growing at most eightfold: few
		// steps, since each waits for its slowest worker.
		next := 8 * step
		if took > 0 {
			next = min(next, int64(float64(done)/took*(pilotSeconds-took))+1)
		}
		step = next
	}
	// The rest of the planned-effect run, the null run, and for solve n a
	// search of about 2 log₂ n + 4 more runs, each building its own model.
	// Seconds a replicate, all workers at work, from the last step, the
	// longest, when it can be timed: the first steps also pay for the
	// workers' scratch and cold caches.
	per := took / float64(run.Done())
	if lastTook > 0 && lastDone > 0 {
		per = lastTook / float64(lastDone)
	}
	predicted := spent + took + per*float64(reps-run.Done()) + per*float64(reps)
	if s.Solve == "n" && s.Power > 0 && s.Cluster == nil {
		searches := 2*math.Log2(float64(max(2, sizes[0]))) + 4
		predicted += searches * (per*float64(reps) + 2*build)
	}
	if predicted > limit {
		return &InputError{Msg: fmt.Sprintf("%s: simulate: the run is predicted to take about %s, more than --max-seconds %g; allowed: fewer replicates, or raise --max-seconds (0: no limit)", s.File, seconds(predicted), limit)}
	}
	return nil
}

// seconds writes a duration in seconds to two significant digits below
// 10 s ("0.0031 s", "2.4 s") and whole seconds above ("823 s").
func seconds(x float64) string {
	if x >= 10 {
		return fmt.Sprintf("%.0f s", x)
	}
	return strconv.FormatFloat(x, 'g', 2, 64) + " s"
}

// workerCount returns the number of workers of a simulation whose workers
// need bytes of scratch memory each: the workers asked for (one per core
// by default), capped at MaxWorkersPerCore per core and at what the memory
// limit holds, with a sentence for each cap applied (also told to
// o.Notice). It refuses a simulation whose single worker needs more than
// the memory limit.
func (o SimOptions) workerCount(file string, bytes int64, sizes [2]int) (int, []string, error) {
	cores := runtime.GOMAXPROCS(0)
	w := o.Workers
	if w == 0 {
		w = cores
	}
	var notes []string
	if most := MaxWorkersPerCore * cores; w > most {
		notes = append(notes, fmt.Sprintf("%d workers were asked for, more than %d per core (%d cores here); %d were used, with the same result.",
			w, MaxWorkersPerCore, cores, most))
		w = most
	}
	limit := o.MaxMemory
	if limit == 0 {
		limit = DefaultMaxMemory
	}
	if bytes > 0 && int64(w)*bytes > limit {
		fit := limit / bytes
		if fit < 1 {
			return 0, nil, &InputError{Msg: fmt.Sprintf("%s: simulate: each worker needs %s of scratch memory for %s participants, more than the memory limit of %s; allowed: a smaller study (simulate.n), or raise --max-memory",
				file, mib(bytes), thousands(sizes[0]+sizes[1]), mib(limit))}
		}
		notes = append(notes, fmt.Sprintf("%d workers would need %s of scratch memory (%s each for %s participants), more than the limit of %s; %d were used, with the same result.",
			w, mib(int64(w)*bytes), mib(bytes), thousands(sizes[0]+sizes[1]), mib(limit), fit))
		w = int(fit)
	}
	if o.Notice != nil {
		for _, n := range notes {
			o.Notice(n)
		}
	}
	return w, notes, nil
}

// mib writes a number of bytes in MiB: whole from 10 MiB ("1,024 MiB"),
// with one decimal below ("3.1 MiB") and two below 1 MiB ("0.31 MiB"); a
// whole number of MiB has no decimals ("8 MiB").
func mib(b int64) string {
	x := float64(b) / (1 << 20)
	switch {
	case x == math.Trunc(x) || x >= 10:
		return thousands(int(math.Round(x))) + " MiB"
	case x < 1:
		return strconv.FormatFloat(x, 'f', 2, 64) + " MiB"
	}
	return strconv.FormatFloat(x, 'f', 1, 64) + " MiB"
}

// solveBySimulation finds the smallest first-group size whose simulated
// power reaches the target, using the same seed (common random numbers) at
// every candidate so that the comparison between sizes is sharp.
func solveBySimulation(ctx context.Context, s *Spec, res *Result, start [2]int, reps int64, seed uint64, workers int, o SimOptions) (*SimSolved, error) {
	at := func(n1 int) ([2]int, power.SimResult, simSetup, error) {
		sz := simSizes(s, n1)
		st, err := simModel(s, res, sz, false)
		if err != nil {
			return sz, power.SimResult{}, st, err
		}
		// Larger candidates need more scratch: fewer workers, silently
		// (the result is the same), or a refusal.
		w, _, err := SimOptions{Workers: workers, MaxMemory: o.MaxMemory}.workerCount(s.File, power.WorkerBytes(st.model), st.sizes)
		if err != nil {
			return sz, power.SimResult{}, st, err
		}
		r, err := power.Simulate(ctx, st.model, power.SimConfig{Replicates: reps, Seed: seed, Workers: w})
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
	if s.OneGroup() {
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
	if s.OneGroup() {
		return [2]int{n1, n1}
	}
	least := 1
	if s.Outcome == "continuous" {
		least = 2
	}
	return [2]int{n1, max(least, ceilTol(s.Ratio*float64(n1)))}
}

// verifyPrecision verifies a precision survey by simulation: it draws the
// survey's data at the effective respondents (the analysable ones over the
// design effect, a simple random sample; or simulate.n) many times,
// computes the planned interval each time, and counts how often its
// half-width is within the plan's margin and how often it covers the true
// prevalence or mean. Both runs use the same seed, so they see the same
// data sets.
func verifyPrecision(ctx context.Context, s *Spec, res *Result, o SimOptions) error {
	if err := o.check(s.File); err != nil {
		return err
	}
	// The simple random sample the plan is worth: n0 solving n; solving
	// effect, the respondents with the finite population correction
	// undone and divided by the design effect.
	worth := res.Result.N0
	if s.Goal == "accuracy" || (s.Goal == "precision" && s.Design != "cross-sectional") {
		worth = float64(res.Result.N[0])
	} else if s.Solve == "effect" {
		worth = float64(res.Result.Total)
		if N := float64(s.Population); N > 0 && worth < N {
			worth = worth * (N - 1) / (N - worth)
		}
		worth /= s.DesignEffect
	}
	n := int(math.Round(worth))
	reps, seed, simN, err := simSettings(s, o)
	if err != nil {
		return err
	}
	if simN > 0 {
		n = simN
	}
	switch {
	case (s.Design == "cross-sectional" || s.Goal != "precision") && (res.Result.Margin == nil || *res.Result.Margin <= 0):
		return &InputError{Msg: s.File + ": simulate: a census has no sampling error to simulate; allowed: a survey of part of the population"}
	case n < 2:
		return &InputError{Msg: s.File + ": simulate: fewer than two effective respondents; allowed: a larger survey"}
	}
	margin := 0.0
	if res.Result.Margin != nil {
		margin = *res.Result.Margin
	}
	notes := []string{}
	if s.Goal == "accuracy" {
		notes = append(notes, "Each simulated study draws those with the condition, then the true positives and true negatives; it counts as within the margin when both Wald intervals are, and as covering when both cover (a study with nobody, or everybody, with the condition fails both).")
	} else if s.DesignEffect != 1 || s.Population > 0 {
		notes = append(notes, fmt.Sprintf("The design effect and the finite population correction are simulated through the simple random sample from an infinite population that the plan is worth, %s respondents.", thousands(n)))
	}
	ratioModel := s.Design != "cross-sectional" && s.Goal == "precision"
	if ratioModel {
		n = res.Result.N[0]
		if simN > 0 {
			n = simN
		}
		notes = append(notes, "Each simulated study draws the two groups' counts and computes the log-scale interval; a table with an empty cell gives no interval and counts as neither within the target nor covering.")
	}
	model := func(cover bool) power.Model {
		if ratioModel {
			rp := power.RatioPrecision{Measure: power.MeasureRiskRatio, P1: s.P1, P2: s.P2, Confidence: s.Confidence}
			if s.Design == "case-control" {
				rp.Measure = power.MeasureOddsRatio
			}
			target := s.PrecisionRatio
			if s.Solve == "effect" {
				target = *res.Result.PrecisionRatio
			}
			n2 := max(1, int(math.Ceil(s.Ratio*float64(n)-1e-9)))
			if simN == 0 {
				n2 = res.Result.N[1]
			}
			return power.NewRatioPrecisionSim(power.RatioPrecisionSim{RatioPrecision: rp, N1: n, N2: n2, Rho: target, Coverage: cover})
		}
		if s.Goal == "accuracy" {
			return power.NewDiagnosticPrecisionSim(power.DiagnosticPrecisionSim{DiagnosticAccuracy: power.DiagnosticAccuracy{Sensitivity: s.Sensitivity,
				Specificity: s.Specificity, Prevalence: s.ConditionPrevalence, Confidence: s.Confidence}, N: n, Margin: margin, Coverage: cover})
		}
		if s.Outcome == "continuous" {
			return power.NewMeanPrecisionSim(power.MeanPrecisionSim{N: n, SD: s.SD1, Confidence: s.Confidence, Margin: margin, Coverage: cover})
		}
		m, _ := power.ParseIntervalMethod(s.Method)
		return power.NewProportionPrecisionSim(power.ProportionPrecisionSim{N: n, P: s.ExpectedPrevalence, Confidence: s.Confidence, Interval: m, Margin: margin, Coverage: cover})
	}
	workers, capNotes, err := o.workerCount(s.File, power.WorkerBytes(model(false)), [2]int{n, n})
	if err != nil {
		return err
	}
	simN2 := []int{n}
	if ratioModel {
		n2 := max(1, int(math.Ceil(s.Ratio*float64(n)-1e-9)))
		if simN == 0 {
			n2 = res.Result.N[1]
		}
		simN2 = []int{n, n2}
	}
	sim := &Simulation{Test: s.Method, TestName: MethodByID(s.Method).Name, Replicates: reps, Seed: seed, N: simN2,
		Notes: slices.Concat(notes, capNotes)}
	res.Simulation = sim
	run := func(label string, cover bool) (power.SimResult, error) {
		c := power.SimConfig{Replicates: reps, Seed: seed, Workers: workers}
		if o.Progress != nil {
			c.Progress = func(done int64) { o.Progress(label, done, reps) }
		}
		return power.Simulate(ctx, model(cover), c)
	}
	r1, err1 := run("within the margin", false)
	sim.Replicates = r1.Replicates
	if r1.Replicates > 0 {
		sim.WithinMargin, sim.WithinMarginSE, sim.WithinMarginCI = estimate(r1)
	}
	if err1 != nil {
		sim.Partial = true
		return ErrStopped
	}
	r2, err2 := run("coverage", true)
	if r2.Replicates > 0 {
		sim.Coverage, sim.CoverageSE, sim.CoverageCI = estimate(r2)
	}
	if err2 != nil {
		sim.Partial = true
		return ErrStopped
	}
	return nil
}

// simSettings returns the replicates and seed of a simulation (the flags,
// else the simulate block, else 10,000 and 1) and the size to simulate at
// (simulate.n, 0 for the plan's), refusing replicates beyond the limit or
// below 100.
func simSettings(s *Spec, o SimOptions) (reps int64, seed uint64, n int, err error) {
	reps, seed = 10000, 1
	if s.Simulate != nil {
		reps, seed, n = s.Simulate.Replicates, s.Simulate.Seed, s.Simulate.N
	}
	if o.Replicates > 0 {
		reps = o.Replicates
	}
	if o.SeedSet {
		seed = o.Seed
	}
	maxReps := o.MaxReplicates
	if maxReps == 0 {
		maxReps = DefaultMaxReplicates
	}
	switch {
	case reps > maxReps:
		return 0, 0, 0, &InputError{Msg: fmt.Sprintf("%s: simulate: %d replicates are more than the limit of %d; allowed: fewer, or raise --max-replicates", s.File, reps, maxReps)}
	case reps < 100:
		return 0, 0, 0, &InputError{Msg: fmt.Sprintf("%s: simulate: %d replicates are too few; allowed: at least 100", s.File, reps)}
	}
	return reps, seed, n, nil
}

// estimate is a simulated share with its Monte-Carlo standard error and
// its 95% score interval (Wilson 1927).
func estimate(r power.SimResult) (share, se *float64, ci []float64) {
	lo, hi := r.CI()
	return ptr(r.Power()), ptr(r.SE()), []float64{lo, hi}
}

// setPower records the simulated power of r, when it has replicates, and
// whether it agrees with the closed form: within 3 Monte-Carlo standard
// errors or 1 point.
func (sim *Simulation) setPower(r power.SimResult) {
	sim.Replicates = r.Replicates
	if r.Replicates == 0 {
		return
	}
	sim.Power, sim.SE, sim.CI = estimate(r)
	d := *sim.Power - sim.ClosedFormPower
	sim.Difference = &d
	sim.Agrees = ptr(!(math.Abs(d) > 3**sim.SE && math.Abs(d) > 0.01))
}
