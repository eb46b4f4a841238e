package designs

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

func verify(t *testing.T, spec string, o SimOptions, sets ...string) (*Result, error) {
	t.Helper()
	res := mustPlan(t, spec, sets...)
	return res, Verify(context.Background(), res.Spec, res, o)
}

// TestVerifyWorkers checks that a seed gives the same simulation whatever
// the number of workers, for every kind of model.
func TestVerifyWorkers(t *testing.T) {
	for _, spec := range []string{
		"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\n",
		"version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 0.5\nsd: 1\npower: 0.8\n",
		"version: 1\ndesign: trial\noutcome: continuous\npairing: paired\nmean_difference: 0.5\nsd_difference: 1\npower: 0.8\n",
		"version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.6\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\npower: 0.8\n",
		"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\ncluster: {size: 10, icc: 0.02}\n",
		"version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: true\nmargin: 0.1\ncontrol_risk: 0.8\npower: 0.8\n",
	} {
		var first *Simulation
		for _, w := range []int{1, 2, 3} {
			res, err := verify(t, spec, SimOptions{Replicates: 3000, Seed: 11, SeedSet: true, Workers: w})
			if err != nil {
				t.Fatalf("%v\n%s", err, spec)
			}
			sim := res.Simulation
			sim.Solved = nil
			if first == nil {
				first = sim
				continue
			}
			if sim.Power != first.Power || *sim.Type1Error != *first.Type1Error {
				t.Errorf("workers %d: power %v type I %v; 1 worker: %v %v\n%s", w, sim.Power, *sim.Type1Error, first.Power, *first.Type1Error, spec)
			}
		}
	}
}

// TestVerifyAgainstExact compares the simulated power of the chi-square
// test with the exact power from testdata/reference/exact_power.tsv (R
// enumeration with chisq.test decisions; see exact_README.md), within 4
// Monte-Carlo standard errors.
func TestVerifyAgainstExact(t *testing.T) {
	var row reftable.Row
	for _, r := range reftable.Load(t, "exact_power.tsv") {
		if r["test"] == "chi-square" && r["n1"] == r["n2"] && r["sides"] == "2" && r.F(t, "n1") >= 50 && r.F(t, "power") > 0.3 && r.F(t, "power") < 0.95 {
			row = r
			break
		}
	}
	if row == nil {
		t.Fatal("no suitable row in exact_power.tsv")
	}
	spec := "version: 1\ndesign: trial\nsolve: power\nmethod: fleiss\ntest: chi-square\n" +
		"n: " + row["n1"] + "\nintervention_risk: " + row["p1"] + "\ncontrol_risk: " + row["p2"] + "\nalpha: " + row["alpha"] + "\n"
	const reps = 40000
	res, err := verify(t, spec, SimOptions{Replicates: reps, Seed: 5, SeedSet: true})
	if err != nil {
		t.Fatal(err)
	}
	want := row.F(t, "power")
	se := math.Sqrt(want * (1 - want) / reps)
	if got := res.Simulation.Power; math.Abs(got-want) > 4*se {
		t.Errorf("simulated %v, exact %v (row %s), 4 SE = %v", got, want, row["id"], 4*se)
	}
	// The exact power of the same plan, by enumeration, equals R's.
	if err := Exact(res.Spec, res); err != nil {
		t.Fatal(err)
	}
	if got := *res.Result.ExactPower; math.Abs(got-want) > 1e-10 {
		t.Errorf("exact power %v, R %v (row %s)", got, want, row["id"])
	}
}

// TestVerifyTypeI checks the null run: near alpha for the uncorrected
// chi-square test at 200 per group, and at the margin for non-inferiority.
func TestVerifyTypeI(t *testing.T) {
	const reps = 20000
	res, err := verify(t, "version: 1\ndesign: trial\nsolve: power\nn: 200\ncontrol_risk: 0.5\nrisk_difference: 0.12\nmethod: fleiss\ntest: chi-square\n",
		SimOptions{Replicates: reps, Seed: 2, SeedSet: true})
	if err != nil {
		t.Fatal(err)
	}
	// The exact size of this test is near 0.05 (exact_README.md gives 0.0560
	// at 100 per group; at 200 it is closer); allow 4 SE plus 0.007.
	se := math.Sqrt(0.05 * 0.95 / reps)
	if got := *res.Simulation.Type1Error; math.Abs(got-0.05) > 4*se+0.007 {
		t.Errorf("type I error %v", got)
	}
	res, err = verify(t, "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: true\nmargin: 0.1\ncontrol_risk: 0.8\npower: 0.8\n",
		SimOptions{Replicates: reps, Seed: 2, SeedSet: true})
	if err != nil {
		t.Fatal(err)
	}
	if res.Simulation.Type1At != "the non-inferiority margin" {
		t.Errorf("type I at %q", res.Simulation.Type1At)
	}
	se = math.Sqrt(0.025 * 0.975 / reps)
	if got := *res.Simulation.Type1Error; math.Abs(got-0.025) > 4*se+0.005 {
		t.Errorf("non-inferiority type I error %v, want about 0.025", got)
	}
}

// TestVerifyStopped checks that a cancelled run reports a partial result.
func TestVerifyStopped(t *testing.T) {
	res := mustPlan(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\n")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	err := Verify(ctx, res.Spec, res, SimOptions{Replicates: 100000})
	if !errors.Is(err, ErrStopped) {
		t.Fatalf("err = %v, want ErrStopped", err)
	}
	if res.Simulation == nil || !res.Simulation.Partial {
		t.Errorf("simulation %+v not marked partial", res.Simulation)
	}
}

// TestVerifyLimits checks the refusals of too many replicates and too long
// a predicted run.
func TestVerifyLimits(t *testing.T) {
	spec := "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\n"
	var ie *InputError
	if _, err := verify(t, spec, SimOptions{Replicates: 5000, MaxReplicates: 1000}); !errors.As(err, &ie) || !strings.Contains(err.Error(), "max-replicates") {
		t.Errorf("err = %v", err)
	}
	if _, err := verify(t, spec, SimOptions{Replicates: 1e8, MaxSeconds: 0.001}); !errors.As(err, &ie) || !strings.Contains(err.Error(), "max-seconds") {
		t.Errorf("err = %v", err)
	}
	if _, err := verify(t, "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\n", SimOptions{}); !errors.As(err, &ie) {
		t.Errorf("precision: err = %v", err)
	}
}

// TestExactSawTooth runs the saw-tooth cases recorded from R
// (exact_sawtooth.tsv: exact power by enumeration with R's own test
// decisions) through method: exact. The first size reaching the target does
// not depend on the window; the stable one does, so only First is compared
// with R.
func TestExactSawTooth(t *testing.T) {
	seen := map[string]bool{}
	compared := 0
	defer func() {
		if compared == 0 {
			t.Error("no saw-tooth case compared")
		}
	}()
	for _, row := range reftable.Load(t, "exact_sawtooth.tsv") {
		if row["sides"] != "2" || seen[row["case"]] {
			continue
		}
		seen[row["case"]] = true
		spec := "version: 1\ndesign: trial\nmethod: exact\ntest: " + row["test"] + "\nintervention_risk: " + row["p1"] +
			"\ncontrol_risk: " + row["p2"] + "\nalpha: " + row["alpha"] + "\npower: " + row["target"] + "\nratio: " + row["ratio"] + "\n"
		s, err := Parse("s.yaml", []byte(spec), nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Plan(s)
		if err != nil {
			t.Fatalf("%s: %v", row["id"], err)
		}
		x := res.Result.Exact
		if x.Window[0] > int(row.F(t, "first")) {
			continue // our window starts above R's answer
		}
		compared++
		if x.First != int(row.F(t, "first")) || x.Stable < x.First {
			t.Errorf("%s: first %d stable %d, want first %s (%s)", row["id"], x.First, x.Stable, row["first"], row["source"])
		}
		if res.Result.N[0] != x.First {
			t.Errorf("%s: method exact n %v, want first %d", row["id"], res.Result.N, x.First)
		}
	}
}
