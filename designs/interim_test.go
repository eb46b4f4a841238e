package designs

import (
	"context"
	"math"
	"os"
	"slices"
	"strings"
	"testing"
)

// TestInterimPlans checks group-sequential plans against the fixed-sample
// sizes written out in R (testdata/reference/interim_plans.R and .out)
// times the inflation factors of testdata/reference/groupseq_inflation.tsv.
func TestInterimPlans(t *testing.T) {
	tests := []struct {
		name, spec string
		// fixed is the unrounded fixed-sample size (or events), inflated
		// the maximum, and n the rounded maximum: per group, or events.
		fixed, inflated float64
		n               int
		events          bool
	}{
		{"means, z, Pocock K=5", "design: trial\noutcome: continuous\nmean_difference: 3\nsd: 10\npower: 0.8\ninterim: {looks: 5, boundary: pocock}\n",
			174.419549652, 214.290569786, 215, false}, // interim_plans.out: means_z_fixed, means_z_pocock5
		{"log-rank, Schoenfeld, O'Brien-Fleming K=4", "design: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\npower: 0.9\ninterim: {looks: 4, boundary: obrien-fleming}\n",
			330.377913964, 337.700092387, 338, true}, // interim_plans.out: schoenfeld_fixed, schoenfeld_obf4
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s, err := Parse("interim.yaml", []byte("version: 1\n"+tt.spec), nil)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Plan(s)
			if err != nil {
				t.Fatal(err)
			}
			fixedName, maxName := "n_star_fixed", "n_star"
			if tt.events {
				fixedName, maxName = "events_star_fixed", "events_star"
			}
			if got := stepOut(res, fixedName); math.Abs(got-tt.fixed) > 1e-6*tt.fixed {
				t.Errorf("%s = %.9f, want %.9f", fixedName, got, tt.fixed)
			}
			if got := stepOut(res, maxName); math.Abs(got-tt.inflated) > 2e-5*tt.inflated {
				t.Errorf("%s = %.9f, want %.9f", maxName, got, tt.inflated)
			}
			got := res.Result.N[0]
			if tt.events {
				got = res.Result.Events
			}
			if got != tt.n {
				t.Errorf("maximum %d, want %d", got, tt.n)
			}
			iv := res.Result.Interim
			if iv == nil || len(iv.Looks) != s.Interim.Looks {
				t.Fatalf("result.interim %+v", iv)
			}
			last := iv.Looks[len(iv.Looks)-1]
			if last.N[0] != res.Result.N[0] || math.Abs(last.AlphaSpent-0.05) > 1e-6 {
				t.Errorf("the last look has %v and alpha spent %v", last.N, last.AlphaSpent)
			}
			sum, eff := 0.0, 0.0
			for _, l := range iv.Looks {
				sum += l.StopProbability
				eff += l.EfficacyProbability
				if l.EfficacyProbability > l.StopProbability+1e-12 {
					t.Errorf("crossing for efficacy %v above stopping %v", l.EfficacyProbability, l.StopProbability)
				}
			}
			if math.Abs(sum-1) > 1e-9 {
				t.Errorf("the stopping probabilities add to %v", sum)
			}
			// The crossings for efficacy add up to the power.
			if math.Abs(eff-*res.Result.AchievedPower) > 1e-9 {
				t.Errorf("the crossings for efficacy add to %v, the power is %v", eff, *res.Result.AchievedPower)
			}
			// Power at the maximum size reaches the target, and solving
			// power there agrees.
			if *res.Result.AchievedPower < *res.Power {
				t.Errorf("power %v at the maximum, below the target", *res.Result.AchievedPower)
			}
		})
	}
}

// TestInterimLookTimes: a time-to-event look is expected when the events
// it lists are, under uniform entry (testdata/reference/interim_looktime.R
// and .out, R integrate and uniroot): the example's looks at 136 and 238
// events.
func TestInterimLookTimes(t *testing.T) {
	data, err := os.ReadFile("../examples/trial-interim-foot-ulcer.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s, err := Parse("foot-ulcer.yaml", data, nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Plan(s)
	if err != nil {
		t.Fatal(err)
	}
	looks := res.Result.Interim.Looks
	for i, want := range []struct {
		events  int
		tau     float64
		entered float64
	}{
		{136, 19.195206952, 0.799800290}, // interim_looktime.out: foot_ulcer_look1
		{238, 26.689234180, 1},           // interim_looktime.out: foot_ulcer_look2
	} {
		l := looks[i]
		if *l.Events != want.events || math.Abs(*l.Time-want.tau) > 1e-6 {
			t.Errorf("look %d: %d events at %v, want %d at %v", i+1, *l.Events, *l.Time, want.events, want.tau)
		}
		if n := int(math.Ceil(want.entered*383 - 1e-9)); l.N[0] != n {
			t.Errorf("look %d: %d entered, want %d", i+1, l.N[0], n)
		}
	}
	if last := looks[len(looks)-1]; *last.Time != 36 {
		t.Errorf("the last look at %v, want the end (36)", *last.Time)
	}
}

// TestInterimAssumptions: the interim block's settings are assumptions
// of the plan, the timing as written and, in JSON, as a list of numbers.
func TestInterimAssumptions(t *testing.T) {
	spec := "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\n" +
		"interim:\n  looks: 3\n  timing: [0.4, 0.7, 1]\n  boundary: spending\n  spending_function: power\n  rho: 2\n" +
		"sources:\n  interim.timing: the monitoring committee's charter\n"
	s, err := Parse("interim.yaml", []byte(spec), nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Plan(s)
	if err != nil {
		t.Fatal(err)
	}
	var keys []string
	for _, a := range res.Assumptions {
		if strings.HasPrefix(a.Key, "interim.") {
			keys = append(keys, a.Key+"="+a.Value)
		}
		if a.Key == "interim.timing" {
			if a.Source != "the monitoring committee's charter" {
				t.Errorf("timing's source %q", a.Source)
			}
			b, err := a.MarshalJSON()
			if err != nil || !strings.Contains(string(b), `"value":[0.4,0.7,1]`) {
				t.Errorf("timing in JSON: %s %v", b, err)
			}
		}
	}
	want := []string{"interim.looks=3", "interim.timing=0.4, 0.7, 1", "interim.boundary=spending", "interim.spending_function=power", "interim.rho=2"}
	if !slices.Equal(keys, want) {
		t.Errorf("interim assumptions %q, want %q", keys, want)
	}
}

// TestInterimRefused: every misuse of the interim block is refused in one
// line naming the key.
func TestInterimRefused(t *testing.T) {
	base := "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\n"
	tests := []struct{ extra, key, want string }{
		{"interim: {looks: 11, boundary: pocock}\n", "interim.looks", "2 to 10"},
		{"interim: {looks: 1, boundary: pocock}\n", "interim.looks", "2 to 10"},
		{"interim: {looks: 3, boundary: pocock, timing: [0.3, 0.6, 1]}\n", "interim.timing", "equally spaced"},
		{"interim: {boundary: spending, spending_function: pocock-type, timing: [0.5, 0.4, 1]}\n", "interim.timing", "does not increase"},
		{"interim: {boundary: spending, spending_function: pocock-type, timing: [0.5, 0.9]}\n", "interim.timing", "ends at 0.9"},
		{"interim: {looks: 4, boundary: spending, spending_function: pocock-type, timing: [0.5, 1]}\n", "interim.timing", "2 fractions for 4 looks"},
		{"interim: {looks: 3, boundary: pocock, spending_function: pocock-type}\n", "interim.spending_function", "boundary spending only"},
		{"interim: {looks: 3, boundary: spending}\n", "interim", "no spending_function"},
		{"interim: {looks: 3, boundary: spending, spending_function: power, rho: 0}\n", "interim.rho", "above 0"},
		{"interim: {looks: 3, boundary: spending, spending_function: power}\n", "interim.rho", "missing"},
		{"interim: {looks: 3, boundary: pocock, rho: 2}\n", "interim.rho", "spending_function power only"},
		{"interim: {looks: 3, boundary: haybittle}\n", "interim.boundary", "pocock, obrien-fleming or spending"},
		{"interim: {looks: 3}\n", "interim", "no boundary"},
		{"interim: {looks: 3, boundary: pocock}\nmethod: fleiss-cc\n", "method", "allowed with interim"},
		{"interim: {looks: 3, boundary: pocock}\nsolve: effect\nn: 300\n", "solve", "not available with interim"},
	}
	for _, tt := range tests {
		_, err := Parse("interim.yaml", []byte(base+tt.extra), nil)
		if err == nil {
			t.Errorf("%q: accepted", tt.extra)
			continue
		}
		msg := err.Error()
		if strings.Contains(msg, "\n") || !strings.Contains(msg, tt.key+":") || !strings.Contains(msg, tt.want) {
			t.Errorf("%q: %q, want one line naming %s and saying %q", tt.extra, msg, tt.key, tt.want)
		}
	}
	if _, err := Parse("interim.yaml", []byte("version: 1\ndesign: cohort\nunexposed_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ninterim: {looks: 3, boundary: pocock}\n"), nil); err == nil || !strings.Contains(err.Error(), "interim") {
		t.Errorf("interim on a cohort: %v", err)
	}
}

// TestInterimSimulation simulates group-sequential plans of each outcome:
// the z statistic's type I error lies within 3 Monte-Carlo standard errors
// of alpha (the boundaries of groupseq_make.py hold their level), the
// planned test's power agrees with the closed form, the stopping shares
// follow the closed form's probabilities within 4 standard errors, and the
// result does not depend on the number of workers.
func TestInterimSimulation(t *testing.T) {
	specs := map[string]string{
		"binary": "design: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.9\ninterim: {looks: 4, boundary: obrien-fleming}\n",
		"means":  "design: trial\noutcome: continuous\nmean_difference: 3\nsd: 10\npower: 0.8\ninterim: {looks: 3, boundary: spending, spending_function: pocock-type, timing: [0.3, 0.6, 1]}\n",
		"survival": "design: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\npower: 0.85\n" +
			"interim: {looks: 2, boundary: spending, spending_function: power, rho: 2}\n",
	}
	const reps = 4000
	for name, spec := range specs {
		t.Run(name, func(t *testing.T) {
			var first *Simulation
			for _, workers := range []int{1, 3} {
				s, err := Parse("interim.yaml", []byte("version: 1\n"+spec), nil)
				if err != nil {
					t.Fatal(err)
				}
				res, err := Plan(s)
				if err != nil {
					t.Fatal(err)
				}
				if err := Verify(context.Background(), s, res, SimOptions{Replicates: reps, Seed: 11, SeedSet: true, Workers: workers}); err != nil {
					t.Fatal(err)
				}
				sim, q := res.Simulation, res.Simulation.Sequential
				if first == nil {
					first = sim
					if !*q.ZType1Agrees {
						t.Errorf("z type I error %v (se %v) not within 3 SE of alpha", *q.ZType1Error, *q.ZType1SE)
					}
					if !*sim.Agrees {
						t.Errorf("simulated power %v, closed form %v", *sim.Power, sim.ClosedFormPower)
					}
					for k, p := range q.StopByLook {
						want := res.Result.Interim.Looks[k].StopProbability
						if k == len(q.StopByLook)-1 {
							continue // the closed form's last entry is reaching the look
						}
						if se := math.Sqrt(want * (1 - want) / reps); math.Abs(p-want) > 4*se+1e-3 {
							t.Errorf("look %d: stopped in %.4f of the trials, the closed form says %.4f", k+1, p, want)
						}
					}
					continue
				}
				if *sim.Power != *first.Power || *sim.Type1Error != *first.Type1Error || !slices.Equal(q.StopByLook, first.Sequential.StopByLook) {
					t.Errorf("workers %d: %v/%v, not %v/%v", workers, *sim.Power, q.StopByLook, *first.Power, first.Sequential.StopByLook)
				}
			}
		})
	}
}
