package sweep

import (
	"context"
	"errors"
	"fmt"
	"reflect"
	"slices"
	"strings"
	"sync"
	"testing"

	"enough/designs"
)

// trialSpec is an invented two-arm trial with a binary outcome, solving n.
const trialSpec = `version: 1
title: Home visits after discharge (invented)
design: trial
control_risk: 0.2
risk_ratio: 0.75
alpha: 0.05
power: 0.8
attrition: 0.1
method: fleiss-cc
`

// grid builds a grid from --vary arguments.
func grid(t testing.TB, args ...string) Grid {
	t.Helper()
	var g Grid
	for _, a := range args {
		ax, err := ParseVary(a)
		if err != nil {
			t.Fatal(err)
		}
		g.Axes = append(g.Axes, ax)
	}
	return g
}

func newBase(t testing.TB, spec string, sets ...string) *designs.Base {
	t.Helper()
	b, err := designs.NewBase("spec.yaml", []byte(spec), sets)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// rowText is a row as text, for comparing runs.
func rowText(r Row) string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d %v ", r.Index, r.Point)
	if r.Result != nil {
		a := r.Result
		fmt.Fprintf(&b, "n=%v enrol=%v nstar=%v events=%d clusters=%v pairs=%d", a.N, a.Enrol, a.NStar, a.Events, a.Clusters, a.Pairs)
		if a.AchievedPower != nil {
			fmt.Fprintf(&b, " power=%v", *a.AchievedPower)
		}
		if d := a.Detectable; d != nil {
			if d.Lower != nil {
				fmt.Fprintf(&b, " lower=%v", *d.Lower)
			}
			if d.Upper != nil {
				fmt.Fprintf(&b, " upper=%v", *d.Upper)
			}
		}
	}
	if r.Simulation != nil && r.Simulation.Power != nil {
		fmt.Fprintf(&b, " sim=%v seed=%d type1=%v", *r.Simulation.Power, r.Simulation.Seed, *r.Simulation.Type1Error)
	}
	if r.Err != nil {
		fmt.Fprintf(&b, " err=%v", r.Err)
	}
	return b.String()
}

func run(t testing.TB, b *designs.Base, g Grid, o Options) []Row {
	t.Helper()
	rows, err := Run(context.Background(), b, g, o)
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

// TestRunIsPlan: every row of a sweep holds what enough plan gives for
// that point, the specification read again with the point's values as
// --set overrides and planned by designs.Plan (the path of one plan
// against the path of the sweep: fast path and Quick), and a point plan
// refuses is a row with the same error.
func TestRunIsPlan(t *testing.T) {
	for _, tc := range []struct {
		name string
		spec string
		sets []string
		vary []string
	}{
		{"binary n", trialSpec, nil, []string{"control_risk=0.05:0.95:0.15", "risk_ratio=0.5,0.75,1,1.5,3,6"}},
		{"binary power", trialSpec, []string{"solve=power", "n=300"}, []string{"n=50:500:150", "attrition=0,0.3,1"}},
		{"binary effect", trialSpec, []string{"solve=effect", "n=300", "sides=1"}, []string{"risk_ratio=0.8,1.25", "power=0.04,0.8,0.9"}},
		{"cluster", trialSpec, nil, []string{"cluster.icc=0,0.02,0.05", "cluster.size=5,20", "alpha=0.01,0.05"}},
		{"continuous", "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 4\nsd: 12\npower: 0.9\nmethod: z\n", nil,
			[]string{"sd=0:20:5", "baseline_correlation=0,0.5", "mean_difference=-2,0,2"}},
		{"survival", "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\npower: 0.8\n", nil,
			[]string{"hazard_ratio=0.5,0.8,1", "follow_up=0,6"}},
		{"survey", "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\n", nil,
			[]string{"expected_prevalence=0.1:0.5:0.2", "margin=0.01,0.05,0.6"}},
		{"sides, rebuilt", trialSpec, nil, []string{"sides=1,2,3"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			b := newBase(t, tc.spec, tc.sets...)
			g := grid(t, tc.vary...)
			rows := run(t, b, g, Options{Workers: 2})
			if len(rows) != g.Size() {
				t.Fatalf("%d rows, want %d", len(rows), g.Size())
			}
			failed := 0
			for i, r := range rows {
				if r.Index != i {
					t.Fatalf("row %d has index %d", i, r.Index)
				}
				sets := append([]string(nil), tc.sets...)
				for k, ax := range g.Axes {
					sets = append(sets, ax.Key+"="+g.Texts(i)[k])
				}
				want := Row{Index: i, Point: g.Values(i)}
				s, err := designs.Parse("spec.yaml", []byte(tc.spec), sets)
				if err == nil {
					var res *designs.Result
					res, err = designs.Plan(s)
					if err == nil {
						want.Result = &res.Result
					}
				}
				if err != nil {
					// A --set names its own origin where the sweep names the
					// file's line: compare what is wrong.
					want.Err = err
					failed++
					if r.Err == nil || tail(r.Err) != tail(err) {
						t.Fatalf("point %v: error %v, plan's %v", sets, r.Err, err)
					}
					continue
				}
				if got, w := rowText(r), rowText(want); got != w {
					t.Fatalf("point %v:\n got %s\nwant %s", sets, got, w)
				}
			}
			t.Logf("%d points, %d refused", len(rows), failed)
		})
	}
}

// tail is an error's messages after the keys they name, sorted (a
// --set names its own origin, and its problems come in the order of the
// overrides, where the sweep names the file's lines in file order).
func tail(err error) string {
	var lines []string
	for _, se := range designs.AllSpecErrors(err) {
		lines = append(lines, se.Key+": "+se.Msg)
	}
	if lines == nil {
		return err.Error()
	}
	slices.Sort(lines)
	return strings.Join(lines, "\n")
}

// TestRunInfeasible: points that cannot be planned are rows with their
// errors, the others are planned, and the sweep goes on.
func TestRunInfeasible(t *testing.T) {
	for _, tc := range []struct {
		name, spec string
		sets       []string
		vary       string
		bad        int    // the index of the infeasible point
		want       string // in its error
		plan       bool   // a *designs.PlanError, else a *designs.SpecError
	}{
		// control_risk 0.2 × 6 = 1.2.
		{"risk past 1", trialSpec, nil, "risk_ratio=0.5,6,0.8", 1, "risk_ratio: 6 with control_risk 0.2 gives a risk of 1.2", false},
		{"power not above alpha", trialSpec, nil, "power=0.8,0.05,0.9", 1, "power: 0.05 is not above alpha (0.05)", false},
		{"no difference", trialSpec, nil, "risk_ratio=0.9,1", 1, "means no difference between the groups", false},
		{"beyond the margin", "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: true\ncontrol_risk: 0.8\nrisk_difference: -0.02\nmargin: 0.1\npower: 0.8\n",
			nil, "risk_difference=-0.05,-0.12,0.02", 1, "no sample size can show non-inferiority", false},
		{"too many participants", trialSpec, nil, "risk_ratio=0.75,0.99999", 1, "more than 1,000,000,000 participants", true},
		{"no respondent left", "version: 1\ndesign: cross-sectional\ngoal: precision\nsolve: effect\nexpected_prevalence: 0.3\ntotal: 2\n",
			nil, "attrition=0,0.6", 1, "no respondent is left", false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			b := newBase(t, tc.spec, tc.sets...)
			g := grid(t, tc.vary)
			rows, err := Run(context.Background(), b, g, Options{})
			if err != nil {
				t.Fatalf("the sweep stopped: %v", err)
			}
			for i, r := range rows {
				if i != tc.bad {
					if r.Err != nil || r.Result == nil {
						t.Errorf("point %d: %v", i, r.Err)
					}
					continue
				}
				var se *designs.SpecError
				var pe *designs.PlanError
				switch {
				case r.Err == nil || r.Result != nil:
					t.Fatalf("point %d: no error (%v)", i, r.Result)
				case !strings.Contains(r.Err.Error(), tc.want):
					t.Errorf("point %d: error %v, want one containing %q", i, r.Err, tc.want)
				case tc.plan && !errors.As(r.Err, &pe):
					t.Errorf("point %d: %T is not a *designs.PlanError", i, r.Err)
				case !tc.plan && !errors.As(r.Err, &se):
					t.Errorf("point %d: %T is not a *designs.SpecError", i, r.Err)
				}
			}
		})
	}
}

// TestRunWorkers: the rows are the same, in grid order, whatever the
// number of workers.
func TestRunWorkers(t *testing.T) {
	b := newBase(t, trialSpec)
	g := grid(t, "control_risk=0.02:0.98:0.04", "risk_ratio=0.4:1.6:0.1", "attrition=0,0.2")
	var want []string
	for _, w := range []int{1, 2, 3, 7, 0} {
		rows := run(t, b, g, Options{Workers: w})
		var got []string
		for _, r := range rows {
			got = append(got, rowText(r))
		}
		if want == nil {
			want = got
			continue
		}
		if !reflect.DeepEqual(got, want) {
			t.Fatalf("%d workers give other rows", w)
		}
	}
	if len(want) != g.Size() {
		t.Fatalf("%d rows, want %d", len(want), g.Size())
	}
}

// TestRunShards: each shard holds the points i with i mod K = I − 1, in
// grid order, and the shards together are the whole sweep.
func TestRunShards(t *testing.T) {
	b := newBase(t, trialSpec)
	g := grid(t, "control_risk=0.1:0.5:0.1", "risk_ratio=0.5,0.75,2,6")
	all := run(t, b, g, Options{})
	for _, k := range []int{1, 3, 7, 25, 40} {
		seen := make([]string, len(all))
		for i := 1; i <= k; i++ {
			rows := run(t, b, g, Options{Shard: i, Shards: k, Workers: 2})
			want := (len(all) - (i - 1) + k - 1) / k
			if len(rows) != max(0, want) {
				t.Fatalf("shard %d/%d: %d rows, want %d", i, k, len(rows), want)
			}
			for j, r := range rows {
				if r.Index%k != i-1 || (j > 0 && r.Index <= rows[j-1].Index) {
					t.Fatalf("shard %d/%d: row %d has index %d", i, k, j, r.Index)
				}
				if seen[r.Index] != "" {
					t.Fatalf("shard %d/%d: point %d twice", i, k, r.Index)
				}
				seen[r.Index] = rowText(r)
			}
		}
		for i, r := range all {
			if seen[i] != rowText(r) {
				t.Fatalf("%d shards: point %d is %q, unsharded %q", k, i, seen[i], rowText(r))
			}
		}
	}
}

// TestRunRefuses: a key that cannot be varied, a grid beyond the limit on
// points and bad settings stop the sweep before any point is solved.
func TestRunRefuses(t *testing.T) {
	b := newBase(t, trialSpec)
	big := grid(t, "control_risk=0.1:0.5:0.0004", "risk_ratio=0.5:0.9:0.0004")
	for _, tc := range []struct {
		name string
		g    Grid
		o    Options
		want string
	}{
		{"unknown key", grid(t, "risk_ratoi=0.5,0.6"), Options{}, `risk_ratoi: unknown key; did you mean "risk_ratio"?`},
		{"key of another outcome", grid(t, "sd=1,2"), Options{}, "sd: does not apply to design trial"},
		{"text key", grid(t, "method=1,2"), Options{}, "method: is not a number"},
		{"a key twice", grid(t, "alpha=0.01", "alpha=0.05"), Options{}, "alpha is varied twice"},
		{"default limit", big, Options{}, "the grid has 1,002,001 points, more than the limit of 1,000,000; allowed: fewer values, or raise --max-points"},
		{"limit", grid(t, "risk_ratio=0.5:0.9:0.1"), Options{MaxPoints: 4}, "the grid has 5 points, more than the limit of 4; allowed: fewer values, or raise --max-points"},
		{"shard", grid(t, "risk_ratio=0.5"), Options{Shard: 3, Shards: 2}, "shard 3 of 2"},
		{"workers", grid(t, "risk_ratio=0.5"), Options{Workers: -1}, "-1 workers"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			called := false
			tc.o.Progress = func(int, int) { called = true }
			rows, err := Run(context.Background(), b, tc.g, tc.o)
			if err == nil || !strings.Contains(err.Error(), tc.want) || strings.Contains(err.Error(), "\n") {
				t.Fatalf("error %v, want one line containing %q", err, tc.want)
			}
			if rows != nil || called {
				t.Fatal("points were solved")
			}
		})
	}
	if big.Size() != 1001*1001 { // 0.4 / 0.0004 + 1 values each
		t.Fatalf("the big grid has %d points", big.Size())
	}
	// Raised, the limit lets a grid through.
	if _, err := Run(context.Background(), b, grid(t, "risk_ratio=0.5:0.9:0.1"), Options{MaxPoints: 5}); err != nil {
		t.Fatal(err)
	}
}

// TestRunProgressAndCancel: progress counts the points done up to the
// total; a cancelled sweep stops early and returns the rows done, in grid
// order, with the context's error.
func TestRunProgressAndCancel(t *testing.T) {
	b := newBase(t, trialSpec)
	g := grid(t, "control_risk=0.01:0.99:0.0005", "risk_ratio=0.5,0.75")
	var mu sync.Mutex
	var dones []int
	rows := run(t, b, g, Options{Progress: func(done, total int) {
		mu.Lock()
		defer mu.Unlock()
		if total != g.Size() {
			t.Errorf("total %d, want %d", total, g.Size())
		}
		dones = append(dones, done)
	}})
	if len(rows) != g.Size() || len(dones) == 0 || dones[len(dones)-1] != g.Size() {
		t.Fatalf("%d rows; progress %v", len(rows), dones[max(0, len(dones)-3):])
	}
	for i := 1; i < len(dones); i++ {
		if dones[i] <= dones[i-1] {
			t.Fatalf("progress goes back: %d after %d", dones[i], dones[i-1])
		}
	}

	ctx, cancel := context.WithCancel(context.Background())
	rows, err := Run(ctx, b, g, Options{Workers: 2, Progress: func(done, total int) {
		if done >= 500 {
			cancel()
		}
	}})
	if !errors.Is(err, context.Canceled) {
		t.Fatalf("error %v, want context.Canceled", err)
	}
	if len(rows) == 0 || len(rows) >= g.Size() {
		t.Fatalf("%d rows of %d done", len(rows), g.Size())
	}
	full := run(t, b, g, Options{})
	for j, r := range rows {
		if j > 0 && r.Index <= rows[j-1].Index {
			t.Fatalf("rows out of order: %d after %d", r.Index, rows[j-1].Index)
		}
		if rowText(r) != rowText(full[r.Index]) {
			t.Fatalf("row %d of the stopped sweep differs", r.Index)
		}
	}
}

// TestRunFull: Options.Full gives each point's whole plan, whose figures
// are those of the table; Options.Alternatives the other methods'.
func TestRunFull(t *testing.T) {
	b := newBase(t, trialSpec)
	g := grid(t, "risk_ratio=0.5,0.75,6")
	quick := run(t, b, g, Options{})
	full := run(t, b, g, Options{Full: true, Alternatives: true})
	for i := range quick {
		if rowText(quick[i]) != rowText(full[i]) {
			t.Fatalf("point %d: %s, full %s", i, rowText(quick[i]), rowText(full[i]))
		}
		if full[i].Err != nil {
			continue
		}
		if full[i].Result.Effect == nil || len(full[i].Alternatives) == 0 || quick[i].Alternatives != nil {
			t.Fatalf("point %d: the full plan or its alternatives are missing", i)
		}
	}
}

// TestPointSeed checks the mixing function against SplitMix64's reference
// outputs. From memory: SplitMix64 seeded with 1234567 (Steele, Lea &
// Flood 2014; Vigna's splitmix64.c) first gives 6457827717110365317,
// 3203168211198807973 and 9817491932198370423; cross-checked here by
// running that generator step by step, as splitmix64.c writes it.
func TestPointSeed(t *testing.T) {
	for i, want := range []uint64{6457827717110365317, 3203168211198807973, 9817491932198370423} {
		if got := PointSeed(1234567, i); got != want>>11 {
			t.Errorf("PointSeed(1234567, %d) = %d, want %d >> 11", i, got, want)
		}
	}
	for _, seed := range []uint64{0, 1, 42, designs.MaxSeed} {
		x := seed // splitmix64.c: x += 0x9e3779b97f4a7c15, then mix
		seen := map[uint64]bool{}
		for i := range 10000 {
			x += 0x9E3779B97F4A7C15
			z := x
			z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9
			z = (z ^ (z >> 27)) * 0x94D049BB133111EB
			z ^= z >> 31
			got := PointSeed(seed, i)
			if got != z>>11 {
				t.Fatalf("PointSeed(%d, %d) = %d, want %d", seed, i, got, z>>11)
			}
			if got >= designs.MaxSeed || seen[got] {
				t.Fatalf("PointSeed(%d, %d) = %d is out of range or repeated", seed, i, got)
			}
			seen[got] = true
		}
	}
}

// simSpec is an invented trial with a simulate block: few replicates, for
// speed.
const simSpec = `version: 1
title: Simulated sweep (invented)
design: trial
solve: power
n: 120
control_risk: 0.3
risk_ratio: 0.6
power: 0.8
method: fleiss
test: chi-square
simulate:
  replicates: 200
  seed: 7
`

// TestRunSimulateSeeds: each point's simulation is fixed by the seed and
// its index: the same whatever the workers and the sharding, and the same
// as the point simulated alone with PointSeed's seed.
func TestRunSimulateSeeds(t *testing.T) {
	b := newBase(t, simSpec)
	g := grid(t, "n=60,120,240", "risk_ratio=0.5,0.7")
	o := Options{Simulate: true, Workers: 1}
	base := run(t, b, g, o)
	for _, r := range base {
		if r.Err != nil || r.Simulation == nil || r.Simulation.Power == nil {
			t.Fatalf("point %d: %v", r.Index, r.Err)
		}
		if r.Simulation.Seed != PointSeed(7, r.Index) {
			t.Fatalf("point %d: seed %d, want PointSeed(7, %d)", r.Index, r.Simulation.Seed, r.Index)
		}
	}
	o.Workers = 3
	for i, r := range run(t, b, g, o) {
		if rowText(r) != rowText(base[i]) {
			t.Fatalf("3 workers: %s, 1 worker: %s", rowText(r), rowText(base[i]))
		}
	}
	for _, shard := range []int{1, 2} {
		o.Shard, o.Shards = shard, 2
		for _, r := range run(t, b, g, o) {
			if rowText(r) != rowText(base[r.Index]) {
				t.Fatalf("shard %d/2: %s, unsharded: %s", shard, rowText(r), rowText(base[r.Index]))
			}
		}
	}
	// Point 3 (n=120, risk_ratio=0.7) simulated on its own.
	s, err := designs.Parse("spec.yaml", []byte(simSpec), []string{"n=120", "risk_ratio=0.7"})
	if err != nil {
		t.Fatal(err)
	}
	res, err := designs.Plan(s)
	if err != nil {
		t.Fatal(err)
	}
	if err := designs.Verify(context.Background(), s, res, designs.SimOptions{Seed: PointSeed(7, 3), SeedSet: true}); err != nil {
		t.Fatal(err)
	}
	if *res.Simulation.Power != *base[3].Simulation.Power || *res.Simulation.Type1Error != *base[3].Simulation.Type1Error {
		t.Fatalf("point 3 alone: %v, in the sweep: %v", *res.Simulation.Power, *base[3].Simulation.Power)
	}
	// A seed given in the options replaces the specification's.
	o = Options{Simulate: true, Sim: designs.SimOptions{Seed: 99, SeedSet: true}}
	for _, r := range run(t, b, grid(t, "n=60,120"), o) {
		if r.Simulation.Seed != PointSeed(99, r.Index) {
			t.Fatalf("point %d: seed %d, want PointSeed(99, %d)", r.Index, r.Simulation.Seed, r.Index)
		}
	}
}

// TestRunEmit: rows emitted block by block (Options.Emit), the memory of
// each block reused for the next, are the rows of the whole run, in order,
// over more than one block and with a shard.
func TestRunEmit(t *testing.T) {
	b := newBase(t, trialSpec)
	g := grid(t, "control_risk=0.02:0.98:0.01", "risk_ratio=0.4:1.6:0.01", "attrition=0,0.2")
	if g.Size() <= 2*EmitBlock {
		t.Fatalf("%d points: the grid does not span three blocks", g.Size())
	}
	for _, o := range []Options{{Workers: 2}, {Workers: 3, Shard: 2, Shards: 3}} {
		var want []string
		for _, r := range run(t, b, g, o) {
			want = append(want, rowText(r))
		}
		var got []string
		blocks := 0
		o.Emit = func(rows []Row) error {
			blocks++
			for _, r := range rows {
				got = append(got, rowText(r))
			}
			return nil
		}
		rows, err := Run(context.Background(), b, g, o)
		if err != nil || rows != nil {
			t.Fatalf("Run with Emit: %d rows, %v; want none and no error", len(rows), err)
		}
		if blocks != (len(want)+EmitBlock-1)/EmitBlock || !reflect.DeepEqual(got, want) {
			t.Errorf("shard %d/%d: %d blocks emitted %d rows that differ from the %d of one run", o.Shard, o.Shards, blocks, len(got), len(want))
		}
	}
}
