package power

import (
	"context"
	"encoding/binary"
	"hash/fnv"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"enough/power/reftable"
)

// logRankData is one dataset of a reference table.
type logRankData struct {
	time  []float64
	event []bool
	group []int
}

func (d *logRankData) add(t *testing.T, row reftable.Row) {
	t.Helper()
	d.time = append(d.time, row.F(t, "time"))
	switch s := row.I(t, "status"); s {
	case 0, 1:
		d.event = append(d.event, s == 1)
	default:
		t.Fatalf("status %d", s)
	}
	d.group = append(d.group, row.I(t, "group"))
}

// checkLogRank compares a result with survdiff's chi-square, observed and
// expected events of group 1 and variance of O1 − E1.
func checkLogRank(t *testing.T, id string, got LogRankResult, chisq, obs1, exp1, v float64, source string) {
	t.Helper()
	const tol = 1e-9 // survdiff printed with 15 significant digits
	if c := got.ChiSquare(); !relClose(c, chisq, tol) {
		t.Errorf("%s: chi-square %.15g, want %.15g (%s)", id, c, chisq, source)
	}
	if got.Observed != obs1 {
		t.Errorf("%s: observed %v, want %v (%s)", id, got.Observed, obs1, source)
	}
	if !relClose(got.Expected, exp1, tol) {
		t.Errorf("%s: expected %.15g, want %.15g (%s)", id, got.Expected, exp1, source)
	}
	if !relClose(got.Variance, v, tol) {
		t.Errorf("%s: variance %.15g, want %.15g (%s)", id, got.Variance, v, source)
	}
}

// TestLogRankTrialsReference checks the dataset of trials_logrank_data.tsv
// against R survival::survdiff (trials_logrank.tsv, made by trials_make.R).
func TestLogRankTrialsReference(t *testing.T) {
	var d logRankData
	for _, row := range reftable.Load(t, "trials_logrank_data.tsv") {
		d.add(t, row)
	}
	want := map[string]float64{}
	src := map[string]string{}
	for _, row := range reftable.Load(t, "trials_logrank.tsv") {
		want[row["quantity"]] = row.F(t, "value")
		src[row["quantity"]] = row["source"]
	}
	got := LogRankTest(d.time, d.event, d.group)
	checkLogRank(t, "trials_logrank", got, want["chisq"], want["observed_group1"],
		want["expected_group1"], want["variance_O1_minus_E1"], src["chisq"])
	if c := LogRank(d.time, d.event, d.group); c != got.ChiSquare() {
		t.Errorf("LogRank = %v, LogRankTest(...).ChiSquare() = %v", c, got.ChiSquare())
	}
}

// loadLogRankData reads logrank_data.tsv (datasets made by logrank_make.R).
func loadLogRankData(t *testing.T) map[string]*logRankData {
	sets := map[string]*logRankData{}
	for _, row := range reftable.Load(t, "logrank_data.tsv") {
		name := row["dataset"]
		if sets[name] == nil {
			sets[name] = &logRankData{}
		}
		sets[name].add(t, row)
	}
	return sets
}

// TestLogRankReference checks every dataset of logrank_data.tsv against R
// survival::survdiff (logrank_chisq.tsv; the exact call is in each row's source):
// ties within and across groups, heavy censoring, unequal groups, a
// dataset without ties and one whose last times are all in one group.
func TestLogRankReference(t *testing.T) {
	sets := loadLogRankData(t)
	rows := reftable.Load(t, "logrank_chisq.tsv")
	if len(rows) < 6 {
		t.Fatalf("only %d reference rows", len(rows))
	}
	for _, row := range rows {
		d := sets[row["dataset"]]
		if d == nil {
			t.Fatalf("%s: no dataset %q", row["id"], row["dataset"])
		}
		got := LogRankTest(d.time, d.event, d.group)
		checkLogRank(t, row["id"], got, row.F(t, "chisq"), row.F(t, "obs1"),
			row.F(t, "exp1"), row.F(t, "var"), row["source"])
		// The chi-square's p-value is that of one degree of freedom.
		p := 2 * normCDF(-math.Abs(got.Z()))
		if !relClose(p, row.F(t, "p_value"), 1e-8) && math.Abs(p-row.F(t, "p_value")) > 1e-14 {
			t.Errorf("%s: p = %.15g, want %.15g", row["id"], p, row.F(t, "p_value"))
		}
	}
}

// TestLogRankInvariance checks that the order of the participants does not
// matter and that swapping the groups changes only the sign of Z.
func TestLogRankInvariance(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 11))
	for name, d := range loadLogRankData(t) {
		want := LogRankTest(d.time, d.event, d.group)
		n := len(d.time)
		perm := rng.Perm(n)
		var s logRankData
		for _, i := range perm {
			s.time = append(s.time, d.time[i])
			s.event = append(s.event, d.event[i])
			s.group = append(s.group, d.group[i])
		}
		if got := LogRankTest(s.time, s.event, s.group); got != want {
			t.Errorf("%s shuffled: %+v, want %+v", name, got, want)
		}
		for i := range s.group {
			s.group[i] = 3 - s.group[i]
		}
		sw := LogRankTest(s.time, s.event, s.group)
		if !relClose(sw.Z(), -want.Z(), 1e-12) || !relClose(sw.Variance, want.Variance, 1e-12) {
			t.Errorf("%s swapped: Z %v, V %v; want Z %v, V %v", name, sw.Z(), sw.Variance, -want.Z(), want.Variance)
		}
	}
}

// TestLogRankNoInformation checks that data without an event time at
// which both groups are at risk give 0, not NaN.
func TestLogRankNoInformation(t *testing.T) {
	cases := []logRankData{
		{time: []float64{1, 2, 3}, event: []bool{false, false, false}, group: []int{1, 2, 1}},
		{time: []float64{1, 2, 3}, event: []bool{true, true, false}, group: []int{1, 1, 1}},
		{time: []float64{1, 2, 3}, event: []bool{false, false, true}, group: []int{1, 2, 2}},
		{time: []float64{5}, event: []bool{true}, group: []int{2}},
		{},
	}
	for i, c := range cases {
		r := LogRankTest(c.time, c.event, c.group)
		if r.Variance != 0 || r.ChiSquare() != 0 || r.Z() != 0 {
			t.Errorf("case %d: %+v, chi-square %v, Z %v; want V = chi-square = Z = 0", i, r, r.ChiSquare(), r.Z())
		}
	}
}

func TestLogRankPanics(t *testing.T) {
	for name, f := range map[string]func(){
		"lengths": func() { LogRank([]float64{1, 2}, []bool{true}, []int{1, 2}) },
		"group":   func() { LogRank([]float64{1, 2}, []bool{true, true}, []int{1, 0}) },
		"nan":     func() { LogRank([]float64{1, math.NaN()}, []bool{true, true}, []int{1, 2}) },
		"inf":     func() { LogRank([]float64{1, math.Inf(1)}, []bool{true, true}, []int{1, 2}) },
		"n1":      func() { NewSurvivalModel(0, 5, 1, 1, Entry{FollowUp: 1}, 0.05, 2, 0) },
		"hazard":  func() { NewSurvivalModel(5, 5, 0, 1, Entry{FollowUp: 1}, 0.05, 2, 0) },
		"entry":   func() { NewSurvivalModel(5, 5, 1, 1, Entry{}, 0.05, 2, 0) },
		"alpha":   func() { NewSurvivalModel(5, 5, 1, 1, Entry{FollowUp: 1}, 1, 2, 0) },
		"sides":   func() { NewSurvivalModel(5, 5, 1, 1, Entry{FollowUp: 1}, 0.05, 3, 0) },
		"dir":     func() { NewSurvivalModel(5, 5, 1, 1, Entry{FollowUp: 1}, 0.05, 1, 0) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			f()
		}()
	}
}

// TestRadixSortHigh32 checks the radix sort against slices.Sort, with many
// ties, a constant high byte (skipped pass) and tiny inputs.
func TestRadixSortHigh32(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, c := range []struct {
		n    int
		mask uint64
	}{{0, 0}, {1, 1 << 40}, {2, 1<<32 - 1}, {600, 1<<32 - 1}, {600, 0xff00ff}, {1000, 15}, {5000, 1<<32 - 1}} {
		keys := make([]uint64, c.n)
		var count [4][256]uint32
		for i := range keys {
			q := rng.Uint64() & c.mask
			keys[i] = q<<32 | uint64(rng.IntN(4))
			for p := range 4 {
				count[p][uint8(q>>(8*p))]++
			}
		}
		want := slices.Clone(keys)
		slices.Sort(want)
		got := radixSortHigh32(slices.Clone(keys), make([]uint64, c.n), &count, nil)
		// The sort is stable on the high bits; compare as multisets within
		// each time.
		gotHigh := make([]uint64, len(got))
		for i, k := range got {
			gotHigh[i] = k >> 32
		}
		if !slices.IsSorted(gotHigh) {
			t.Errorf("n %d mask %x: not sorted", c.n, c.mask)
		}
		slices.Sort(got)
		if !slices.Equal(got, want) {
			t.Errorf("n %d mask %x: keys lost or changed", c.n, c.mask)
		}
	}
}

// decode turns the worker's packed keys back into a dataset, with the
// fixed-point time as the time.
func (w *logRankWorker) decode() logRankData {
	var d logRankData
	for _, k := range w.keys {
		d.time = append(d.time, float64(k>>32))
		d.event = append(d.event, k&lrEvent != 0)
		d.group = append(d.group, 1+int(k>>1&1))
	}
	return d
}

// TestSurvivalWorkerMatchesLogRankTest checks the simulation's radix-sort
// path against LogRankTest (sorted with slices.SortFunc) on the same
// simulated data, replicate by replicate; it also checks the group sizes.
func TestSurvivalWorkerMatchesLogRankTest(t *testing.T) {
	for _, c := range []struct {
		n1, n2 int
		e      Entry
	}{
		{300, 300, Entry{Accrual: 2, FollowUp: 3, Dropout: 0.05}},
		{7, 40, Entry{FollowUp: 1}},
		{1, 1, Entry{Accrual: 1, FollowUp: 0}},
	} {
		m := NewSurvivalModel(c.n1, c.n2, 0.3, 0.2, c.e, 0.05, 2, 0)
		w := m.NewWorker().(*logRankWorker)
		rng := rand.New(rand.NewPCG(3, 4))
		for rep := 0; rep < 200; rep++ {
			w.draw(rng)
			d := w.decode()
			want := LogRankTest(d.time, d.event, d.group)
			u, v := w.stat()
			if u != want.Observed-want.Expected || v != want.Variance {
				t.Fatalf("n %d/%d replicate %d: O−E %v, V %v; LogRankTest O−E %v, V %v",
					c.n1, c.n2, rep, u, v, want.Observed-want.Expected, want.Variance)
			}
			n2 := 0
			for _, g := range d.group {
				n2 += g - 1
			}
			if n2 != c.n2 {
				t.Fatalf("group 2 has %d, want %d", n2, c.n2)
			}
		}
	}
}

func simulate(t *testing.T, m Model, reps int64, seed uint64, workers int) SimResult {
	t.Helper()
	res, err := Simulate(context.Background(), m, SimConfig{Replicates: reps, Seed: seed, Workers: workers})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// TestSurvivalEventShare checks the simulated share of participants with
// an observed event against EventProbability (Lachin & Foulkes 1986
// integral) in each group. Participants are independent, so the share of
// n·R of them has the binomial standard error √(P(1 − P)/(nR)); the
// tolerance is 4 of those.
func TestSurvivalEventShare(t *testing.T) {
	for _, c := range []struct {
		h1, h2 float64
		e      Entry
	}{
		{HazardFromMedian(4), HazardFromMedian(3), Entry{Accrual: 2, FollowUp: 3, Dropout: DropoutHazard(0.1)}},
		{0.5, 2, Entry{FollowUp: 1.5}},
		{0.05, 0.1, Entry{Accrual: 4, FollowUp: 0, Dropout: 0.3}},
	} {
		const n1, n2, reps = 150, 250, 2000
		m := NewSurvivalModel(n1, n2, c.h1, c.h2, c.e, 0.05, 2, 0)
		w := m.NewWorker().(*logRankWorker)
		rng := rand.New(rand.NewPCG(2024, 6))
		var ev [2]float64
		for range reps {
			w.draw(rng)
			for i, k := range w.keys {
				g := 0
				if i >= n1 {
					g = 1
				}
				ev[g] += float64(k & lrEvent)
			}
		}
		for g, h := range []float64{c.h1, c.h2} {
			n := float64([]int{n1, n2}[g] * reps)
			p := EventProbability(h, c.e)
			tol := 4 * math.Sqrt(p*(1-p)/n)
			if share := ev[g] / n; math.Abs(share-p) > tol {
				t.Errorf("%+v group %d: event share %.5f, EventProbability %.5f (tolerance %.5f)", c.e, g+1, share, p, tol)
			}
		}
	}
}

// TestSurvivalWorkers checks that the result for a seed does not depend on
// the number of workers.
func TestSurvivalWorkers(t *testing.T) {
	m := NewSurvivalModel(60, 90, 0.2, 0.3, Entry{Accrual: 1, FollowUp: 2, Dropout: 0.1}, 0.05, 2, 0)
	const reps = 3*8192 + 1000 // several blocks and a short one
	a := simulate(t, m, reps, 99, 1)
	b := simulate(t, m, reps, 99, 2)
	if !sameResult(a, b) {
		t.Errorf("1 worker %+v, 2 workers %+v", a, b)
	}
	if c := simulate(t, m, reps, 100, 2); sameResult(c, a) {
		t.Errorf("seeds 99 and 100 gave the same result %+v", c)
	}
}

// TestSurvivalOneSidedSplit checks on identical data (same seed) that the
// two-sided test at alpha rejects exactly when one of the one-sided tests
// at alpha/2 does: the two tails partition the two-sided rejections.
func TestSurvivalOneSidedSplit(t *testing.T) {
	const n1, n2, reps, seed = 80, 120, 20000, 5
	e := Entry{Accrual: 1, FollowUp: 1}
	two := simulate(t, NewSurvivalModel(n1, n2, 0.4, 0.5, e, 0.05, 2, 0), reps, seed, 0)
	lo := simulate(t, NewSurvivalModel(n1, n2, 0.4, 0.5, e, 0.025, 1, -1), reps, seed, 0)
	hi := simulate(t, NewSurvivalModel(n1, n2, 0.4, 0.5, e, 0.025, 1, +1), reps, seed, 0)
	if two.Rejections != lo.Rejections+hi.Rejections {
		t.Errorf("two-sided %d rejections, one-sided %d + %d", two.Rejections, lo.Rejections, hi.Rejections)
	}
	if lo.Rejections <= hi.Rejections {
		t.Errorf("hazard ratio 0.8: %d rejections toward < 1, %d toward > 1", lo.Rejections, hi.Rejections)
	}
}

// TestSurvivalTypeIError checks the two-sided rejection rate under equal
// hazards against the nominal level, within 4 Monte-Carlo standard errors
// √(α(1 − α)/R) at the nominal level. (Each one-sided tail is off the
// nominal level by about 0.0015 with 1:2 allocation and some 200 events,
// in R as in Go; the two tails compensate. See TestSurvivalAgainstR.)
func TestSurvivalTypeIError(t *testing.T) {
	for _, c := range []struct {
		n1, n2 int
		h      float64
		e      Entry
		seed   uint64
	}{
		{200, 200, 0.3, Entry{Accrual: 2, FollowUp: 2, Dropout: 0.05}, 11},
		{150, 300, 0.2, Entry{FollowUp: 3}, 12},
		{500, 100, 1, Entry{Accrual: 1, FollowUp: 0.5, Dropout: 0.5}, 13},
	} {
		const reps, alpha = 40000, 0.05
		m := NewSurvivalModel(c.n1, c.n2, c.h, c.h, c.e, alpha, 2, 0)
		res := simulate(t, m, reps, c.seed, 0)
		tol := 4 * math.Sqrt(alpha*(1-alpha)/reps)
		if math.Abs(res.Power()-alpha) > tol {
			t.Errorf("n %d/%d: type I error %.4f, want %.4f ± %.4f", c.n1, c.n2, res.Power(), alpha, tol)
		}
	}
}

// TestSurvivalPowerSchoenfeld checks simulated power against Schoenfeld's
// closed form EventsPower with the expected events n1·P1 + n2·P2 from
// EventProbability, in large trials with equal allocation. The two are
// approximations of each other: the closed form uses the null variance of
// the log-rank statistic, a fixed number of events and a normal
// distribution. The tolerance is 4 Monte-Carlo standard errors plus an
// allowance of 0.01 for that approximation; in runs of 200,000 replicates
// of these scenarios the gap was at most 0.002.
//
// With unequal allocation the closed form is not this close: at 200 and
// 400 participants, hazard ratio 0.7 and some 240 events, Schoenfeld's
// formula gives 0.743 and Freedman's 0.685 while both R's survdiff and this
// simulation give about 0.71 (logrank_sim.tsv, checked in
// TestSurvivalAgainstR).
func TestSurvivalPowerSchoenfeld(t *testing.T) {
	for _, c := range []struct {
		n      int
		hr, h2 float64
		e      Entry
		sides  int
		dir    int
		alpha  float64
		seed   uint64
	}{
		// The sizes of ExampleEventsMethod_Events: 80% power planned.
		{346, 0.75, HazardFromMedian(3), Entry{Accrual: 2, FollowUp: 3}, 2, 0, 0.05, 21},
		{300, 0.7, 0.25, Entry{Accrual: 1, FollowUp: 2, Dropout: DropoutHazard(0.05)}, 1, -1, 0.025, 22},
		{300, 1.3, 0.4, Entry{FollowUp: 2}, 2, 0, 0.05, 23},
		{250, 1.4, 0.2, Entry{Accrual: 3, FollowUp: 1, Dropout: 0.1}, 1, +1, 0.05, 24},
	} {
		const reps = 20000
		n := float64(c.n)
		d := n*EventProbability(c.hr*c.h2, c.e) + n*EventProbability(c.h2, c.e)
		want := Schoenfeld.EventsPower(c.hr, 1, c.alpha, c.sides, d)
		if want < 0.6 || want > 0.9 {
			t.Fatalf("scenario power %.3f not mid-range", want)
		}
		m := NewSurvivalModel(c.n, c.n, c.hr*c.h2, c.h2, c.e, c.alpha, c.sides, c.dir)
		res := simulate(t, m, reps, c.seed, 0)
		tol := 4*math.Sqrt(want*(1-want)/reps) + 0.01
		t.Logf("n %d hr %v: simulated %.4f (SE %.4f), Schoenfeld %.4f", c.n, c.hr, res.Power(), res.SE(), want)
		if math.Abs(res.Power()-want) > tol {
			t.Errorf("n %d hr %v: simulated power %.4f (SE %.4f), Schoenfeld %.4f with %.1f events; tolerance %.4f",
				c.n, c.hr, res.Power(), res.SE(), want, d, tol)
		}
	}
}

// TestSurvivalAgainstR compares the simulation with an independent one in
// R: base R random numbers and survival::survdiff's log-rank test in the
// same design (logrank_sim.tsv, script logrank_sim.R; each row's source
// gives the seed and parameters). Both shares are Monte-Carlo estimates, so
// the tolerance is 4 standard errors of their difference,
// √(p(1 − p)(1/R_go + 1/R_R)) with p the pooled share.
func TestSurvivalAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "logrank_sim.tsv") {
		e := Entry{Accrual: row.F(t, "accrual"), FollowUp: row.F(t, "followup"), Dropout: row.F(t, "dropout")}
		m := NewSurvivalModel(row.I(t, "n1"), row.I(t, "n2"), row.F(t, "h1"), row.F(t, "h2"), e,
			row.F(t, "alpha"), row.I(t, "sides"), row.I(t, "dir"))
		reps := int64(row.F(t, "reps"))
		res := simulate(t, m, reps, 31+uint64(i), 0)
		rr, rk := row.F(t, "reps"), row.F(t, "rejections")
		p := (float64(res.Rejections) + rk) / (float64(res.Replicates) + rr)
		tol := 4 * math.Sqrt(p*(1-p)*(1/float64(res.Replicates)+1/rr))
		want := row.F(t, "share")
		t.Logf("%s: Go %.5f, R %.5f, tolerance %.5f", row["id"], res.Power(), want, tol)
		if math.Abs(res.Power()-want) > tol {
			t.Errorf("%s: Go %.5f, R %.5f; tolerance %.5f (%s)", row["id"], res.Power(), want, tol, row["source"])
		}
	}
}

// BenchmarkSurvivalLogRank300 measures one worker at 300 participants per
// arm, with uniform entry and dropout (three random numbers each).
func BenchmarkSurvivalLogRank300(b *testing.B) {
	m := NewSurvivalModel(300, 300, 0.75*HazardFromMedian(3), HazardFromMedian(3),
		Entry{Accrual: 2, FollowUp: 3, Dropout: DropoutHazard(0.05)}, 0.05, 2, 0)
	benchReplicates(b, m)
}

// BenchmarkSurvivalSimulate300 measures Simulate with all cores at 300
// participants per arm; replicates/s is for the whole run.
func BenchmarkSurvivalSimulate300(b *testing.B) {
	m := NewSurvivalModel(300, 300, 0.75*HazardFromMedian(3), HazardFromMedian(3),
		Entry{Accrual: 2, FollowUp: 3, Dropout: DropoutHazard(0.05)}, 0.05, 2, 0)
	const reps = 100000
	for b.Loop() {
		if _, err := Simulate(context.Background(), m, SimConfig{Replicates: reps, Seed: 1}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.N)*reps/b.Elapsed().Seconds(), "replicates/s")
}

// TestSurvivalSimStreamGolden checks that the model without crossing-over
// or margin draws the same random stream as before SurvivalSim existed: an
// FNV-1a hash of the packed keys of 100 replicates (seed PCG(8, 9)) and the
// rejections of 5000 replicates of Simulate with seed 4242, both recorded with the code of
// commit 00547ea (NewSurvivalModel before this change). A change here is a
// change in every seeded survival result and must be a decision.
func TestSurvivalSimStreamGolden(t *testing.T) {
	for _, c := range []struct {
		sim        SurvivalSim
		hash       uint64
		rejections int64
	}{
		{SurvivalSim{N1: 60, N2: 90, H1: 0.2, H2: 0.3, Entry: Entry{Accrual: 1, FollowUp: 2, Dropout: 0.1}, Alpha: 0.05, Sides: 2}, 0x48d8c6ba2f7aa808, 1669},
		{SurvivalSim{N1: 40, N2: 25, H1: 0.5, H2: 0.4, Entry: Entry{FollowUp: 1.5}, Alpha: 0.025, Sides: 1, Dir: -1}, 0xc3452fb4c47ca5dc, 19},
	} {
		s := c.sim
		for name, m := range map[string]Model{
			"NewSurvivalModel": NewSurvivalModel(s.N1, s.N2, s.H1, s.H2, s.Entry, s.Alpha, s.Sides, s.Dir),
			"NewSurvivalSim":   NewSurvivalSim(s),
			"margin 1":         NewSurvivalSim(func() SurvivalSim { s := s; s.Margin = 1; return s }()),
		} {
			w := m.NewWorker().(*logRankWorker)
			rng := rand.New(rand.NewPCG(8, 9))
			h := fnv.New64a()
			var b [8]byte
			for range 100 {
				w.draw(rng)
				for _, k := range w.keys {
					binary.LittleEndian.PutUint64(b[:], k)
					h.Write(b[:])
				}
			}
			if got := h.Sum64(); got != c.hash {
				t.Errorf("%s %+v: stream hash %#x, want %#x (commit 00547ea)", name, s, got, c.hash)
			}
			if res := simulate(t, m, 5000, 4242, 0); res.Rejections != c.rejections {
				t.Errorf("%s %+v: %d rejections, want %d (commit 00547ea)", name, s, res.Rejections, c.rejections)
			}
		}
	}
}

// survivalSimModels are small models of each new feature, for the
// invariants.
func survivalSimModels() map[string]SurvivalSim {
	e := Entry{Accrual: 1, FollowUp: 2, Dropout: 0.1}
	return map[string]SurvivalSim{
		"non-inferiority M > 1, crossing": {N1: 70, N2: 90, H1: 0.4, H2: 0.5, Cross1: 0.2, Cross2: 0.1, Entry: e, Alpha: 0.025, Sides: 1, Margin: 1.3},
		"non-inferiority M < 1":           {N1: 80, N2: 60, H1: 0.55, H2: 0.5, Entry: e, Alpha: 0.05, Sides: 1, Dir: 1, Margin: 0.75},
		"equivalence, contamination":      {N1: 90, N2: 90, H1: 0.5, H2: 0.5, Cross2: 0.3, Entry: e, Alpha: 0.05, Sides: 1, Margin: 1.6, Equivalence: true},
		"superiority, non-adherence":      {N1: 70, N2: 70, H1: 0.3, H2: 0.5, Cross1: 0.25, Entry: e, Alpha: 0.05, Sides: 2},
	}
}

// TestSurvivalSimWorkers checks that with crossing-over and margins the
// result for a seed does not depend on the number of workers (blocks of
// 2048, and a short last one), and that another seed gives another result.
func TestSurvivalSimWorkers(t *testing.T) {
	const reps = 2*2048 + 500
	for name, s := range survivalSimModels() {
		m := NewSurvivalSim(s)
		run := func(seed uint64, workers int) SimResult {
			res, err := Simulate(context.Background(), m, SimConfig{Replicates: reps, Seed: seed, Workers: workers, BlockSize: 2048})
			if err != nil {
				t.Fatal(err)
			}
			return res
		}
		a, b := run(17, 1), run(17, 2)
		if !sameResult(a, b) {
			t.Errorf("%s: 1 worker %+v, 2 workers %+v", name, a, b)
		}
		if c := run(18, 2); sameResult(c, a) {
			t.Errorf("%s: seeds 17 and 18 gave the same result %+v", name, c)
		}
		if a.Rejections == 0 || a.Rejections == a.Replicates {
			t.Errorf("%s: %+v, want a power strictly between 0 and 1", name, a)
		}
	}
}

// TestSurvivalSimMarginSize checks the rejection rate of the margin test
// when the true hazard ratio is the margin, against the nominal one-sided
// level alpha = 0.025, within 4 Monte-Carlo standard errors
// √(α(1 − α)/R) at the nominal level (0.0044 at R = 20,000).
//
// The Peto estimate U/V and its standard error 1/√V are approximations
// whose size at the margin is not exactly alpha. The scenario is chosen so
// that the departure is far below the tolerance: equal groups of 150,
// control hazard 0.5, accrual 1, follow-up 2 (some 230 events), margins
// 1.3 and 0.7. There the size is 0.0253 (R survdiff, 100,000 replicates,
// survmargin_sim.tsv row size_equal_margin; the Go simulation with 400,000
// replicates gave 0.02534 ± 0.00025 at M = 1.3 and 0.02499 ± 0.00025 at
// M = 0.7), some 0.3 of the test's standard error of 0.0011. With
// unequal groups and a wide margin the departure is large (200/100 at
// M = 2: 0.055 in R and Go; 100/200 at M = 2: 0.0096 in Go), which is
// why this test does not use them; TestSurvivalSimAgainstR checks that Go
// and R agree there. A wrong critical value (two-sided instead of
// one-sided: 0.0125), a wrong tail (0.975) or ln M with the wrong sign (a
// rate near 0) is many tolerances away.
func TestSurvivalSimMarginSize(t *testing.T) {
	for _, c := range []struct {
		margin float64
		seed   uint64
	}{{1.3, 41}, {0.7, 42}} {
		const reps, alpha, h2 = 20000, 0.025, 0.5
		m := NewSurvivalSim(SurvivalSim{N1: 150, N2: 150, H1: c.margin * h2, H2: h2,
			Entry: Entry{Accrual: 1, FollowUp: 2}, Alpha: alpha, Sides: 1, Margin: c.margin})
		res := simulate(t, m, reps, c.seed, 0)
		tol := 4 * math.Sqrt(alpha*(1-alpha)/reps)
		t.Logf("M %v: size %.5f (SE %.5f), tolerance %.5f", c.margin, res.Power(), res.SE(), tol)
		if math.Abs(res.Power()-alpha) > tol {
			t.Errorf("M %v at HR = M: rejection rate %.5f, want %v ± %.5f", c.margin, res.Power(), alpha, tol)
		}
	}
}

// TestSurvivalSimAgainstR compares the simulation with an independent one in
// R: base R random numbers (crossing-over drawn with runif) and
// survival::survdiff's O − E and variance, tested against the margin as
// NewSurvivalSim does (survmargin_sim.tsv, script survmargin_sim.R; each
// row's source gives the seed, parameters and test). Both shares are
// Monte-Carlo estimates, so the tolerance is 4 standard errors of their
// difference, √(p(1 − p)(1/R_go + 1/R_R)) with p the pooled share.
func TestSurvivalSimAgainstR(t *testing.T) {
	rows := reftable.Load(t, "survmargin_sim.tsv")
	if len(rows) < 6 {
		t.Fatalf("only %d rows", len(rows))
	}
	for i, row := range rows {
		s := SurvivalSim{
			N1: row.I(t, "n1"), N2: row.I(t, "n2"), H1: row.F(t, "h1"), H2: row.F(t, "h2"),
			Cross1: row.F(t, "cross1"), Cross2: row.F(t, "cross2"),
			Entry: Entry{Accrual: row.F(t, "accrual"), FollowUp: row.F(t, "followup"), Dropout: row.F(t, "dropout")},
			Alpha: row.F(t, "alpha"), Sides: 1,
		}
		switch row["test"] {
		case "margin":
			s.Margin = row.F(t, "margin")
		case "equivalence":
			s.Margin, s.Equivalence = row.F(t, "margin"), true
		case "superiority":
			s.Dir = -1
		default:
			t.Fatalf("%s: unknown test %q", row["id"], row["test"])
		}
		const reps = 10000
		res := simulate(t, NewSurvivalSim(s), reps, 51+uint64(i), 0)
		rr, rk := row.F(t, "reps"), row.F(t, "rejections")
		p := (float64(res.Rejections) + rk) / (reps + rr)
		tol := 4 * math.Sqrt(p*(1-p)*(1.0/reps+1/rr))
		want := row.F(t, "share")
		t.Logf("%s: Go %.5f, R %.5f, tolerance %.5f", row["id"], res.Power(), want, tol)
		if math.Abs(res.Power()-want) > tol {
			t.Errorf("%s: Go %.5f, R %.5f; tolerance %.5f (%s)", row["id"], res.Power(), want, tol, row["source"])
		}
	}
}

func TestSurvivalSimPanics(t *testing.T) {
	ok := SurvivalSim{N1: 5, N2: 5, H1: 1, H2: 1, Entry: Entry{FollowUp: 1}, Alpha: 0.05, Sides: 1, Margin: 1.3}
	for name, change := range map[string]func(*SurvivalSim){
		"cross1 negative":      func(s *SurvivalSim) { s.Cross1 = -0.1 },
		"cross2 above 1":       func(s *SurvivalSim) { s.Cross2 = 1.5 },
		"cross NaN":            func(s *SurvivalSim) { s.Cross1 = math.NaN() },
		"margin negative":      func(s *SurvivalSim) { s.Margin = -1.3 },
		"margin inf":           func(s *SurvivalSim) { s.Margin = math.Inf(1) },
		"margin NaN":           func(s *SurvivalSim) { s.Margin = math.NaN() },
		"margin two-sided":     func(s *SurvivalSim) { s.Sides = 2 },
		"margin wrong dir":     func(s *SurvivalSim) { s.Dir = 1 },
		"low margin wrong dir": func(s *SurvivalSim) { s.Margin, s.Dir = 0.8, -1 },
		"equivalence M < 1":    func(s *SurvivalSim) { s.Margin, s.Equivalence = 0.8, true },
		"equivalence M 0":      func(s *SurvivalSim) { s.Margin, s.Equivalence = 0, true },
		"equivalence dir":      func(s *SurvivalSim) { s.Equivalence, s.Dir = true, -1 },
		"equivalence sides":    func(s *SurvivalSim) { s.Equivalence, s.Sides = true, 2 },
		"superiority no dir":   func(s *SurvivalSim) { s.Margin = 0 },
		"n2":                   func(s *SurvivalSim) { s.N2 = 0 },
	} {
		s := ok
		change(&s)
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic for %+v", name, s)
				}
			}()
			NewSurvivalSim(s)
		}()
	}
	// The valid forms do not panic.
	for _, change := range []func(*SurvivalSim){
		func(s *SurvivalSim) {},
		func(s *SurvivalSim) { s.Dir = -1 },
		func(s *SurvivalSim) { s.Margin, s.Dir = 0.8, 1 },
		func(s *SurvivalSim) { s.Equivalence = true },
		func(s *SurvivalSim) { s.Cross1, s.Cross2 = 1, 1 },
		func(s *SurvivalSim) { s.Margin, s.Sides, s.Dir = 0, 2, 0 },
	} {
		s := ok
		change(&s)
		NewSurvivalSim(s)
	}
}

// BenchmarkSurvivalSimCrossMargin300 measures one worker at 300
// participants per arm with crossing-over in both arms (a fourth random
// number each) and the non-inferiority test.
func BenchmarkSurvivalSimCrossMargin300(b *testing.B) {
	m := NewSurvivalSim(SurvivalSim{N1: 300, N2: 300, H1: HazardFromMedian(3), H2: HazardFromMedian(3),
		Cross1: 0.1, Cross2: 0.05, Entry: Entry{Accrual: 2, FollowUp: 3, Dropout: DropoutHazard(0.05)},
		Alpha: 0.025, Sides: 1, Margin: 1.3})
	benchReplicates(b, m)
}

// benchReplicates runs one worker of m for the benchmark and reports the
// replicates per second.
func benchReplicates(b *testing.B, m Model) {
	w := m.NewWorker()
	rng := rand.New(rand.NewPCG(1, 1))
	var k int
	for b.Loop() {
		if w.Replicate(rng) {
			k++
		}
	}
	b.ReportMetric(float64(b.N)/b.Elapsed().Seconds(), "replicates/s")
	_ = k
}
