package designs

import (
	"context"
	"fmt"
	"math"
	"slices"

	"enough/power"
)

// SeqSimulation is the simulation of a group-sequential trial: the JSON
// object simulation.sequential.
type SeqSimulation struct {
	// StopByLook is, under the planned effect, the share of the simulated
	// trials whose first crossing was at each look; StopByLookNull the
	// same under no effect (or the margin). The share that reached the
	// final analysis without crossing is 1 minus their sum.
	StopByLook     []float64 `json:"stop_by_look"`
	StopByLookNull []float64 `json:"stop_by_look_null,omitempty"`
	// ExpectedN is the simulated mean size at stopping, per group
	// (participants entered for a time-to-event trial, whose looks are
	// set by events), under the planned effect.
	ExpectedN []float64 `json:"expected_n"`
	// ZType1Error and ZPower are the type I error and the power of the z
	// statistic itself, drawn as independent normal increments at the
	// look's information (the canonical joint distribution of Jennison &
	// Turnbull 2000, §3.1), with their standard errors: a check of the
	// boundaries apart from the planned test's small-sample behaviour.
	ZType1Error   *float64 `json:"z_type1_error"`
	ZType1SE      *float64 `json:"z_type1_se"`
	ZType1Agrees  *bool    `json:"z_type1_within_3se"`
	ZPower        *float64 `json:"z_power"`
	ZPowerSE      *float64 `json:"z_power_se"`
	PlannedType1  float64  `json:"alpha"`
	DataTestNamed string   `json:"data_test"`
}

// sequentialModels builds the Monte-Carlo models of a group-sequential
// trial at the plan's looks: the planned test on data drawn as they
// accrue, under the planned effect and under the null, and the canonical
// z model at the plan's drift and at no drift.
func sequentialModels(s *Spec, res *Result) (alt, null power.SequentialModel, zAlt, zNull power.SequentialModel, notes []string, err error) {
	unavailable := func(why string) error {
		return &InputError{Msg: fmt.Sprintf("%s: simulate: %s", s.File, why)}
	}
	iv, ir := s.Interim, res.Result.Interim
	switch {
	case ir == nil:
		return nil, nil, nil, nil, nil, unavailable("the plan has no interim figures to simulate")
	case s.Cluster != nil:
		return nil, nil, nil, nil, nil, unavailable("a cluster trial with interim analyses is not simulated yet")
	case s.DesignEffect > 1:
		return nil, nil, nil, nil, nil, unavailable("a design effect with interim analyses is not simulated yet")
	case s.Adjusted:
		return nil, nil, nil, nil, nil, unavailable("an adjusted analysis with interim analyses is not simulated yet")
	case s.MarginScale == "ratio" && s.Outcome == "binary":
		return nil, nil, nil, nil, nil, unavailable("a non-inferiority margin on the ratio scale with interim analyses is not simulated yet")
	}
	e := plannedEffects(s)
	seq, err := iv.Sequential(e.alpha, s.Sides)
	if err != nil {
		return nil, nil, nil, nil, nil, err
	}
	nominal := slices.Clone(seq.PNominal)
	sides, dir := s.Sides, 1
	if s.Sides == 1 && s.Direction != 0 {
		dir = s.Direction
	}
	k := len(ir.Looks)
	n1, n2 := make([]int, k), make([]int, k)
	events := make([]int, k)
	for i, l := range ir.Looks {
		n1[i], n2[i] = l.N[0], l.N[len(l.N)-1]
		if l.Events != nil {
			events[i] = *l.Events
		}
	}
	// The canonical model at the plan's drift: the drift of the
	// fixed-sample power at the maximum size, the same drift the closed
	// form's sequential power uses.
	zDir := 1
	if sides == 1 {
		zDir = dir
	}
	zAlt = power.NewSequentialZ(power.SequentialZ{Times: iv.Timing, Drift: float64(zDir) * ir.Drift, Nominal: nominal, Sides: sides, Dir: zDir})
	zNull = power.NewSequentialZ(power.SequentialZ{Times: iv.Timing, Drift: 0, Nominal: nominal, Sides: sides, Dir: zDir})

	switch s.Outcome {
	case "binary":
		c := power.SequentialBinomials{N1: n1, N2: n2, P1: e.p1, P2: e.p2, Nominal: nominal, Sides: sides, Dir: dir}
		if s.Hypothesis == "non-inferiority" {
			d0 := s.Margin
			if s.HigherIsBetter {
				d0 = -s.Margin
			}
			c.Sides, c.Dir, c.Margin, c.MarginTest = 1, 0, d0, power.FarringtonManning
			if s.Test == "z-unpooled" {
				c.MarginTest = power.Blackwelder
			}
			alt = power.NewSequentialBinomials(c)
			c.P1 = e.p2 + d0
			if !(c.P1 > 0 && c.P1 < 1) {
				return nil, nil, nil, nil, nil, unavailable(fmt.Sprintf("the null at the margin puts the first group's risk at %.4g, outside (0, 1)", c.P1))
			}
			null = power.NewSequentialBinomials(c)
			break
		}
		test, ok := power.ParseBinaryTest(s.Test)
		if !ok {
			return nil, nil, nil, nil, nil, unavailable("test " + s.Test + " has no sequential simulation")
		}
		if s.Sides != 1 && e.p1 < e.p2 {
			c.Dir = -1
		}
		c.Test = test
		alt = power.NewSequentialBinomials(c)
		c.P1 = e.p2
		null = power.NewSequentialBinomials(c)
	case "continuous":
		if n1[0] < 2 || n2[0] < 2 {
			return nil, nil, nil, nil, nil, unavailable("the first look has fewer than two participants in a group")
		}
		c := power.SequentialMeans{N1: n1, N2: n2, Diff: e.diff, SD1: s.SD1, SD2: s.SD2, Welch: s.Test == "t-welch", Nominal: nominal, Sides: sides, Dir: dir}
		if s.Hypothesis == "non-inferiority" {
			c.Sides, c.Dir, c.Bound = 1, 1, -s.Margin
			if !s.HigherIsBetter {
				c.Dir, c.Bound = -1, s.Margin
			}
		} else if s.Sides != 1 && e.diff < 0 {
			c.Dir = -1
		}
		alt = power.NewSequentialMeans(c)
		c.Diff = c.Bound
		null = power.NewSequentialMeans(c)
	case "time-to-event":
		hr := e.plannedHR
		c := power.SequentialSurvival{N1: n1[k-1], N2: n2[k-1], Cross1: s.NonAdherence, Cross2: s.Contamination,
			Entry:  power.Entry{Accrual: s.Accrual, FollowUp: s.FollowUp, Dropout: power.DropoutHazard(s.Dropout)},
			Events: events, Nominal: nominal, Sides: sides, Dir: dir}
		if s.Hypothesis == "non-inferiority" {
			c.Sides, c.Dir, c.Margin = 1, 0, s.Margin
		} else if s.Sides != 1 && e.hr < 1 {
			c.Dir = -1
		}
		c.H1, c.H2 = hr*s.ControlHazard, s.ControlHazard
		alt = power.NewSequentialSurvival(c)
		null0 := 1.0
		if s.Hypothesis == "non-inferiority" {
			null0 = math.Exp(math.Log(s.Margin) / (1 - s.NonAdherence - s.Contamination))
		}
		c.H1 = null0 * s.ControlHazard
		null = power.NewSequentialSurvival(c)
		notes = append(notes, "Each look is taken when its number of events has occurred in the simulated trial (at the end of follow-up if it never does), and the log-rank test is applied to the data censored at that time.")
	default:
		return nil, nil, nil, nil, nil, unavailable("this outcome is not simulated with interim analyses")
	}
	if s.Arms > 2 {
		notes = append(notes, "One comparison of an intervention arm with the control arm is simulated, at its share of the alpha.")
	}
	return alt, null, zAlt, zNull, notes, nil
}

// verifySequential simulates a group-sequential trial: the planned test
// applied at each look to the data accrued so far, stopping at the first
// crossing, under the planned effect and under the null; and the
// canonical z statistic drawn as independent increments, whose type I
// error must lie within 3 standard errors of alpha.
func verifySequential(ctx context.Context, s *Spec, res *Result, o SimOptions) error {
	if err := o.check(s.File); err != nil {
		return err
	}
	reps, seed, n1, err := simSettings(s, o)
	if err != nil {
		return err
	}
	if n1 > 0 {
		return &InputError{Msg: s.File + ": simulate: simulate.n does not apply to a plan with interim analyses, which is simulated at its looks' sizes; allowed: leave simulate.n out, and set n with solve: power"}
	}
	alt, null, zAlt, zNull, notes, err := sequentialModels(s, res)
	if err != nil {
		return err
	}
	workers, capNotes, err := o.workerCount(s.File, max(power.WorkerBytes(alt), power.WorkerBytes(null)), [2]int{res.Result.N[0], res.Result.N[len(res.Result.N)-1]})
	if err != nil {
		return err
	}
	cfg := func(label string, sd uint64) power.SimConfig {
		c := power.SimConfig{Replicates: reps, Seed: sd, Workers: workers}
		if o.Progress != nil {
			c.Progress = func(done int64) { o.Progress(label, done, reps) }
		}
		return c
	}
	ir := res.Result.Interim
	sim := &Simulation{Test: s.Test, TestName: TestName(s.Test), Replicates: reps, Seed: seed, N: slices.Clone(res.Result.N),
		ClosedFormPower: *res.Result.AchievedPower, Notes: slices.Concat(notes, capNotes)}
	res.Simulation = sim
	alpha := ir.Looks[len(ir.Looks)-1].AlphaSpent
	sq := &SeqSimulation{PlannedType1: alpha, DataTestNamed: TestName(s.Test)}
	sim.Sequential = sq

	r1, err1 := power.Simulate(ctx, alt, cfg("planned effect", seed))
	sim.setPower(r1)
	if r1.Replicates > 0 {
		sq.StopByLook = shares(r1)
		sq.ExpectedN = expectedAt(ir, sq.StopByLook)
	}
	if err1 != nil {
		sim.Partial = true
		return ErrStopped
	}
	sim.Type1At = "no difference"
	if s.Hypothesis == "non-inferiority" {
		sim.Type1At = "the non-inferiority margin"
	}
	r0, err0 := power.Simulate(ctx, null, cfg("null (type I error)", seed+1))
	if r0.Replicates > 0 {
		sim.Type1Error, sim.Type1SE, sim.Type1CI = estimate(r0)
		sq.StopByLookNull = shares(r0)
	}
	if err0 != nil {
		sim.Partial = true
		return ErrStopped
	}
	z1, errz1 := power.Simulate(ctx, zAlt, cfg("z statistic, planned effect", seed+2))
	if z1.Replicates > 0 {
		sq.ZPower, sq.ZPowerSE = ptr(z1.Power()), ptr(z1.SE())
	}
	if errz1 != nil {
		sim.Partial = true
		return ErrStopped
	}
	z0, errz0 := power.Simulate(ctx, zNull, cfg("z statistic, null", seed+3))
	if z0.Replicates > 0 {
		p, se := z0.Power(), math.Sqrt(alpha*(1-alpha)/float64(z0.Replicates))
		sq.ZType1Error, sq.ZType1SE = ptr(p), ptr(z0.SE())
		sq.ZType1Agrees = ptr(math.Abs(p-alpha) <= 3*se)
		if !*sq.ZType1Agrees {
			res.Warnings = append(res.Warnings, fmt.Sprintf("The simulated type I error of the z statistic, %.4f, lies more than 3 standard errors (%.4f) from the planned alpha %.4g: the boundaries do not hold their level; please report this with the specification.", p, se, alpha))
		}
	}
	if errz0 != nil {
		sim.Partial = true
		return ErrStopped
	}
	if t1 := sim.Type1Error; t1 != nil && *t1-alpha > 3**sim.Type1SE {
		res.Warnings = append(res.Warnings, fmt.Sprintf("The planned test (%s) crossed a boundary in %.2f%% of the trials simulated under the null, above the alpha of %.4g by more than 3 standard errors: at these sizes its p-values at the interim looks are not those of the normal approximation the boundaries assume (small counts or few events at the early looks). Consider later looks, fewer looks, or an exact or simulation-based boundary.", TestName(s.Test), 100**t1, alpha))
	}
	if !*sim.Agrees {
		res.Warnings = append(res.Warnings, fmt.Sprintf(
			"The simulated power of the group-sequential trial with %s (%.1f%%, standard error %.1f points) and the closed form (%.1f%%) part ways by more than 3 standard errors and 1 point: the normal approximation behind the boundaries and the inflation is only approximate for the planned test at these sizes; trust the simulation of the test you will run.",
			TestName(s.Test), 100**sim.Power, 100**sim.SE, 100*sim.ClosedFormPower))
	}
	return nil
}

// shares turns a run's counts by look into shares of its replicates.
func shares(r power.SimResult) []float64 {
	out := make([]float64, len(r.ByLook))
	for i, c := range r.ByLook {
		out[i] = float64(c) / float64(r.Replicates)
	}
	return out
}

// expectedAt is the mean size at stopping per group, the trials that
// never crossed stopping at the last look.
func expectedAt(ir *InterimResult, stop []float64) []float64 {
	k := len(ir.Looks)
	out := make([]float64, len(ir.Looks[0].N))
	left := 1.0
	for i, l := range ir.Looks {
		w := stop[i]
		if i == k-1 {
			w = left
		}
		left -= stop[i]
		for g, n := range l.N {
			out[g] += w * float64(n)
		}
	}
	return out
}
