package power

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"enough/power/reftable"
	"gonum.org/v1/gonum/stat/distuv"
)

// simRun runs R replicates of m with a fixed seed and fails the test on
// an error.
func simRun(t *testing.T, m Model, R int64, seed uint64) SimResult {
	t.Helper()
	res, err := Simulate(context.Background(), m, SimConfig{Replicates: R, Seed: seed})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

// simWithinSE reports whether the simulated share got from R replicates is
// within k Monte-Carlo standard errors of want: |p̂ − p| < k √(p(1 − p)/R),
// with extraVar added to the variance for a reference that is itself a
// simulation. With k = 4 a correct model fails with probability about
// 6e-5 (normal approximation), with k = 5 about 6e-7; the seeds are fixed,
// so the outcome is reproducible.
func simWithinSE(k, got, want float64, R int64, extraVar float64) (bool, float64) {
	se := math.Sqrt(want*(1-want)/float64(R) + extraVar)
	return math.Abs(got-want) < k*se, se
}

// simWithin4SE is simWithinSE with k = 4, for single comparisons.
func simWithin4SE(got, want float64, R int64, extraVar float64) (bool, float64) {
	return simWithinSE(4, got, want, R, extraVar)
}

// TestTwoBinomialsReference checks the simulated power (10⁶ replicates) of
// every row of sim_binary.tsv against R's exact power, enumerated over all
// tables with dbinom and the decisions of chisq.test, prop.test and
// fisher.test (or an independent R Wald test), within 4 Monte-Carlo SE.
func TestTwoBinomialsReference(t *testing.T) {
	const R = 1_000_000
	for i, row := range reftable.Load(t, "sim_binary.tsv") {
		c := TwoBinomials{
			N1: row.I(t, "n1"), N2: row.I(t, "n2"), P1: row.F(t, "p1"), P2: row.F(t, "p2"),
			Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir"),
			Test: exactTestOf(t, row["test"]),
		}
		res := simRun(t, NewTwoBinomials(c), R, uint64(100+i))
		want := row.F(t, "power")
		t.Logf("%s: simulated %.5f, R %.5f, z = %+.2f", row["id"], res.Power(), want, (res.Power()-want)/math.Sqrt(want*(1-want)/R))
		if ok, se := simWithin4SE(res.Power(), want, R, 0); !ok {
			t.Errorf("%s: simulated %.5f, R exact %.5f, beyond 4 SE (%.2g) (%s)", row["id"], res.Power(), want, se, row["source"])
		}
	}
}

// TestTwoBinomialsVsExactPower compares the simulation with the package's
// own enumeration, ExactPower, over a grid of tests, sizes (n = 1
// included), risks (0 and 1 included), sides and directions: 300
// comparisons, each within 5 Monte-Carlo SE so that the family fails by
// chance with probability below 2e-4. This checks the two implementations against each
// other (the samplers and the table lookup here, the binomial
// probabilities there); both are checked against R elsewhere.
func TestTwoBinomialsVsExactPower(t *testing.T) {
	const R = 200_000
	seed := uint64(500)
	for _, test := range []BinaryTest{ChiSquare, ChiSquareYates, Fisher, ZUnpooled} {
		for _, sz := range [][2]int{{1, 1}, {3, 8}, {25, 25}, {60, 35}, {200, 200}} {
			for _, pp := range [][2]float64{{0.5, 0.5}, {0.3, 0.1}, {0.02, 0.15}, {0, 0.4}, {1, 0.7}} {
				for _, sd := range [][2]int{{2, 1}, {1, 1}, {1, -1}} {
					c := TwoBinomials{N1: sz[0], N2: sz[1], P1: pp[0], P2: pp[1], Alpha: 0.05, Sides: sd[0], Dir: sd[1], Test: test}
					seed++
					res := simRun(t, NewTwoBinomials(c), R, seed)
					want := ExactPower(test, c.N1, c.N2, c.P1, c.P2, c.Alpha, c.Sides, c.Dir)
					if want == 0 || want == 1 {
						if res.Power() != want {
							t.Errorf("%+v: simulated %v, exact %v", c, res.Power(), want)
						}
						continue
					}
					if ok, se := simWithinSE(5, res.Power(), want, R, 0); !ok {
						t.Errorf("%+v: simulated %.5f, exact %.5f, beyond 5 SE (%.2g)", c, res.Power(), want, se)
					}
				}
			}
		}
	}
}

// TestBinaryTypeIError: under the null hypothesis the uncorrected
// chi-square test at 200 per group keeps its nominal level closely (R's
// exact size at p = 0.3 is 0.05018, row b_06 of sim_binary.tsv), and
// Fisher's exact test at 15 per group is conservative (exact size 0.0170,
// row b_07). With 10⁶ replicates the simulated chi-square level must lie
// within 4 SE of R's value and within 0.005 of alpha; Fisher's, with its
// 4-SE upper bound, below alpha.
func TestBinaryTypeIError(t *testing.T) {
	const R = 1_000_000
	rows := map[string]reftable.Row{}
	for _, row := range reftable.Load(t, "sim_binary.tsv") {
		rows[row["id"]] = row
	}
	chi := simRun(t, NewTwoBinomials(TwoBinomials{N1: 200, N2: 200, P1: 0.3, P2: 0.3, Alpha: 0.05, Sides: 2, Test: ChiSquare}), R, 1)
	if ok, _ := simWithin4SE(chi.Power(), rows["b_06"].F(t, "power"), R, 0); !ok || math.Abs(chi.Power()-0.05) > 0.005 {
		t.Errorf("chi-square size at 200/200: %.5f, R exact %s", chi.Power(), rows["b_06"]["power"])
	}
	fis := simRun(t, NewTwoBinomials(TwoBinomials{N1: 15, N2: 15, P1: 0.3, P2: 0.3, Alpha: 0.05, Sides: 2, Test: Fisher}), R, 2)
	if ok, _ := simWithin4SE(fis.Power(), rows["b_07"].F(t, "power"), R, 0); !ok || fis.Power()+4*fis.SE() >= 0.05 {
		t.Errorf("Fisher size at 15/15: %.5f, R exact %s", fis.Power(), rows["b_07"]["power"])
	}
}

// simMeansModel builds the model of a sim_means.tsv row.
func simMeansModel(t *testing.T, row reftable.Row) Model {
	t.Helper()
	alpha, sides, dir := row.F(t, "alpha"), row.I(t, "sides"), row.I(t, "dir")
	switch row["model"] {
	case "student", "welch":
		return NewTwoMeans(TwoMeans{
			N1: row.I(t, "n1"), N2: row.I(t, "n2"), Diff: row.F(t, "diff"),
			SD1: row.F(t, "sd1"), SD2: row.F(t, "sd2"), Welch: row["model"] == "welch",
			Alpha: alpha, Sides: sides, Dir: dir, Bound: row.F(t, "bound"),
		})
	case "paired":
		return NewPairedMeans(PairedMeans{N: row.I(t, "n1"), Diff: row.F(t, "diff"), SD: row.F(t, "sd1"),
			Alpha: alpha, Sides: sides, Dir: dir, Bound: row.F(t, "bound")})
	case "cluster_means":
		return NewClusterMeans(ClusterMeans{K1: row.I(t, "n1"), K2: row.I(t, "n2"), M: row.I(t, "m"),
			Diff: row.F(t, "diff"), SD: row.F(t, "sd1"), ICC: row.F(t, "icc"), Alpha: alpha, Sides: sides, Dir: dir})
	}
	t.Fatalf("unknown model %q", row["model"])
	return nil
}

// TestMeansReference checks the simulated power (10⁶ replicates) of every
// row of sim_means.tsv within 4 Monte-Carlo SE: Student's test against R
// power.t.test(strict = TRUE) or R's noncentral t, the paired test against
// power.t.test(type = "paired"), the cluster t test on cluster means
// against power.t.test with the SD of a cluster mean, and Welch's test
// (and Student's with unequal SDs, whose level is far from alpha) against
// R numerical integration over both sample variances, itself checked by an
// R simulation. One-sided rows, a mirror-image row (negative difference,
// dir −1) and a non-inferiority row (Bound −0.6) are included.
func TestMeansReference(t *testing.T) {
	const R = 1_000_000
	for i, row := range reftable.Load(t, "sim_means.tsv") {
		res := simRun(t, simMeansModel(t, row), R, uint64(900+i))
		want := row.F(t, "power")
		t.Logf("%s: simulated %.5f, R %.5f, z = %+.2f", row["id"], res.Power(), want, (res.Power()-want)/math.Sqrt(want*(1-want)/R))
		if ok, se := simWithin4SE(res.Power(), want, R, 0); !ok {
			t.Errorf("%s (%s): simulated %.5f, reference %.5f, beyond 4 SE (%.2g) (%s)", row["id"], row["model"], res.Power(), want, se, row["source"])
		}
	}
}

// TestClusterBinaryReference checks the simulated power (10⁶ replicates)
// against an independent R simulation (sim_cluster.tsv, 10⁶ replicates of
// rbeta + rbinom and the pooled t test on cluster proportions); both are
// noisy, so the tolerance is 4 SE of the difference,
// 4 √(p(1 − p)(1/R + 1/R_R)).
func TestClusterBinaryReference(t *testing.T) {
	const R = 1_000_000
	for i, row := range reftable.Load(t, "sim_cluster.tsv") {
		c := ClusterBinary{K1: row.I(t, "k1"), K2: row.I(t, "k2"), M: row.I(t, "m"), P1: row.F(t, "p1"), P2: row.F(t, "p2"),
			ICC: row.F(t, "icc"), Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir")}
		res := simRun(t, NewClusterBinary(c), R, uint64(1300+i))
		want := row.F(t, "power")
		t.Logf("%s: simulated %.5f, R simulation %.5f, z = %+.2f", row["id"], res.Power(), want, (res.Power()-want)/math.Sqrt(want*(1-want)*(1/float64(R)+1/row.F(t, "replicates"))))
		if ok, se := simWithin4SE(res.Power(), want, R, want*(1-want)/row.F(t, "replicates")); !ok {
			t.Errorf("%s: simulated %.5f, R simulation %.5f, beyond 4 SE (%.2g) (%s)", row["id"], res.Power(), want, se, row["source"])
		}
	}
}

// TestClusterDesignEffect checks the cluster sampling against the design
// effect of Donner & Klar (2000, chapter 2; Kish 1965): the variance of the
// difference between the arms' mean cluster proportions is the individual
// variance p1 q1/(K1 M) + p2 q2/(K2 M) times 1 + (M − 1) ICC. The variance
// of 200,000 simulated differences must lie within 4 SE of that value,
// the SE of a sample variance being √((m₄ − s⁴)/R) with m₄ the sample
// fourth central moment (Kendall & Stuart, The Advanced Theory of
// Statistics, vol. 1, §10.5). M = 1 and ICC = 0 give no design effect.
func TestClusterDesignEffect(t *testing.T) {
	const R = 200_000
	for i, c := range []ClusterBinary{
		{K1: 5, K2: 7, M: 30, P1: 0.3, P2: 0.1, ICC: 0.05},
		{K1: 10, K2: 10, M: 100, P1: 0.5, P2: 0.5, ICC: 0.01},
		{K1: 4, K2: 4, M: 12, P1: 0.2, P2: 0.6, ICC: 0.3},
		{K1: 6, K2: 3, M: 1, P1: 0.4, P2: 0.25, ICC: 0.2},
		{K1: 8, K2: 8, M: 40, P1: 0.15, P2: 0.15, ICC: 0},
		{K1: 3, K2: 5, M: 500, P1: 0.05, P2: 0.08, ICC: 0.002},
	} {
		c.Alpha, c.Sides = 0.05, 2
		m := NewClusterBinary(c).(*clusterBinary)
		r := rand.New(rand.NewPCG(uint64(i), 77))
		mean := func(tab *BetaBinomialTable, k int) float64 {
			s := 0
			for range k {
				s += tab.Draw(r)
			}
			return float64(s) / float64(k*c.M)
		}
		d := make([]float64, R)
		avg := 0.0
		for j := range d {
			d[j] = mean(m.t1, c.K1) - mean(m.t2, c.K2)
			avg += d[j] / R
		}
		m2, m4 := 0.0, 0.0
		for _, x := range d {
			e := sq(x - avg)
			m2 += e / R
			m4 += e * e / R
		}
		de := 1 + float64(c.M-1)*c.ICC
		want := (c.P1*(1-c.P1)/float64(c.K1*c.M) + c.P2*(1-c.P2)/float64(c.K2*c.M)) * de
		if se := math.Sqrt((m4 - m2*m2) / R); math.Abs(m2-want) > 4*se {
			t.Errorf("%+v: variance of the difference %.6g, want %.6g (design effect %.4g) within 4 SE %.2g; simulated design effect %.4f",
				c, m2, want, de, se, m2/want*de)
		}
	}
}

// TestClusterBinaryDegenerate: identical proportions everywhere (0/0) do
// not reject; arms constant but different (d/0) reject in their
// direction only.
func TestClusterBinaryDegenerate(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 3))
	for _, c := range []struct {
		cb   ClusterBinary
		want bool
	}{
		{ClusterBinary{K1: 3, K2: 4, M: 5, P1: 0, P2: 0, ICC: 0.1, Alpha: 0.05, Sides: 2}, false},
		{ClusterBinary{K1: 3, K2: 4, M: 5, P1: 1, P2: 1, ICC: 0.1, Alpha: 0.05, Sides: 2}, false},
		{ClusterBinary{K1: 3, K2: 4, M: 5, P1: 1, P2: 0, ICC: 0.1, Alpha: 0.05, Sides: 2}, true},
		{ClusterBinary{K1: 3, K2: 4, M: 5, P1: 1, P2: 0, ICC: 0.1, Alpha: 0.05, Sides: 1, Dir: 1}, true},
		{ClusterBinary{K1: 3, K2: 4, M: 5, P1: 1, P2: 0, ICC: 0.1, Alpha: 0.05, Sides: 1, Dir: -1}, false},
	} {
		w := NewClusterBinary(c.cb).NewWorker()
		for range 10 {
			if got := w.Replicate(r); got != c.want {
				t.Fatalf("%+v: rejects %v", c.cb, got)
			}
		}
	}
}

// TestTCritTable checks the interpolated squared critical values of
// Welch's test against gonum's t quantile (distuv.StudentsT, an
// independent implementation) at 2,000 degrees of freedom spread over each
// table's range, including ranges that reach down to 1 degree of freedom:
// relative error below 1e-8.
func TestTCritTable(t *testing.T) {
	for _, c := range []struct {
		dfMin, dfMax, alpha float64
		sides               int
	}{
		{1, 10, 0.05, 2}, {1, 998, 0.05, 2}, {1, 998, 0.001, 2}, {4, 40, 0.025, 1},
		{9, 1e5, 0.05, 2}, {29, 60, 0.01, 1}, {1, 2, 0.05, 2},
	} {
		tab := newTCritTable(c.dfMin, c.dfMax, c.alpha, c.sides)
		worst, at := 0.0, 0.0
		for j := 0; j <= 2000; j++ {
			x := 1/c.dfMax + (1/c.dfMin-1/c.dfMax)*float64(j)/2000
			q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: 1 / x}.Quantile(1 - c.alpha/float64(c.sides))
			if e := math.Abs(tab.at(x)/(q*q) - 1); e > worst {
				worst, at = e, 1/x
			}
		}
		if worst > 1e-8 {
			t.Errorf("%+v: relative error %.3g at df %.4g", c, worst, at)
		}
	}
}

// TestModelsPanic checks that invalid specifications panic.
func TestModelsPanic(t *testing.T) {
	for name, f := range map[string]func(){
		"binomials n1 = 0": func() {
			NewTwoBinomials(TwoBinomials{N1: 0, N2: 5, P1: 0.1, P2: 0.2, Alpha: 0.05, Sides: 2, Test: ChiSquare})
		},
		"binomials sides 3": func() {
			NewTwoBinomials(TwoBinomials{N1: 5, N2: 5, P1: 0.1, P2: 0.2, Alpha: 0.05, Sides: 3, Test: ChiSquare})
		},
		"binomials dir 0": func() {
			NewTwoBinomials(TwoBinomials{N1: 5, N2: 5, P1: 0.1, P2: 0.2, Alpha: 0.05, Sides: 1, Test: ChiSquare})
		},
		"binomials alpha": func() {
			NewTwoBinomials(TwoBinomials{N1: 5, N2: 5, P1: 0.1, P2: 0.2, Alpha: 1, Sides: 2, Test: ChiSquare})
		},
		"binomials p": func() {
			NewTwoBinomials(TwoBinomials{N1: 5, N2: 5, P1: 1.1, P2: 0.2, Alpha: 0.05, Sides: 2, Test: ChiSquare})
		},
		"means n = 1":           func() { NewTwoMeans(TwoMeans{N1: 1, N2: 5, Diff: 1, SD1: 1, Alpha: 0.05, Sides: 2}) },
		"means sd = 0":          func() { NewTwoMeans(TwoMeans{N1: 5, N2: 5, Diff: 1, SD1: 0, Alpha: 0.05, Sides: 2}) },
		"means sd2 < 0":         func() { NewTwoMeans(TwoMeans{N1: 5, N2: 5, Diff: 1, SD1: 1, SD2: -1, Alpha: 0.05, Sides: 2}) },
		"paired n = 1":          func() { NewPairedMeans(PairedMeans{N: 1, Diff: 1, SD: 1, Alpha: 0.05, Sides: 2}) },
		"paired one side dir 0": func() { NewPairedMeans(PairedMeans{N: 5, Diff: 1, SD: 1, Alpha: 0.05, Sides: 1}) },
		"cluster means k = 1":   func() { NewClusterMeans(ClusterMeans{K1: 1, K2: 5, M: 3, Diff: 1, SD: 1, Alpha: 0.05, Sides: 2}) },
		"cluster means icc": func() {
			NewClusterMeans(ClusterMeans{K1: 4, K2: 5, M: 3, Diff: 1, SD: 1, ICC: -0.1, Alpha: 0.05, Sides: 2})
		},
		"cluster binary icc 1": func() {
			NewClusterBinary(ClusterBinary{K1: 4, K2: 4, M: 3, P1: 0.2, P2: 0.3, ICC: 1, Alpha: 0.05, Sides: 2})
		},
		"cluster binary m = 0": func() { NewClusterBinary(ClusterBinary{K1: 4, K2: 4, M: 0, P1: 0.2, P2: 0.3, Alpha: 0.05, Sides: 2}) },
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

// benchSimReplicates runs b.N replicates of m on one goroutine, in a plain
// loop like Simulate's (b.Loop's bookkeeping would cost a few ns a
// replicate), and reports replicates per second.
func benchSimReplicates(b *testing.B, m Model) {
	w := m.NewWorker()
	r := rand.New(rand.NewPCG(1, 2))
	k := 0
	b.ResetTimer()
	start := time.Now()
	for i := 0; i < b.N; i++ {
		if w.Replicate(r) {
			k++
		}
	}
	b.ReportMetric(float64(b.N)/time.Since(start).Seconds(), "replicates/s")
	if k < 0 {
		b.Log(k)
	}
}

func BenchmarkTwoBinomialsChiSquare200(b *testing.B) {
	benchSimReplicates(b, NewTwoBinomials(TwoBinomials{N1: 200, N2: 200, P1: 0.3, P2: 0.2, Alpha: 0.05, Sides: 2, Test: ChiSquare}))
}

func BenchmarkTwoBinomialsFisher5000(b *testing.B) {
	benchSimReplicates(b, NewTwoBinomials(TwoBinomials{N1: 5000, N2: 5000, P1: 0.03, P2: 0.02, Alpha: 0.05, Sides: 2, Test: Fisher}))
}

func BenchmarkTwoMeansStudent(b *testing.B) {
	benchSimReplicates(b, NewTwoMeans(TwoMeans{N1: 64, N2: 64, Diff: 0.5, SD1: 1, Alpha: 0.05, Sides: 2}))
}

func BenchmarkTwoMeansStudentUnequalSD(b *testing.B) {
	benchSimReplicates(b, NewTwoMeans(TwoMeans{N1: 64, N2: 64, Diff: 0.5, SD1: 1, SD2: 1.5, Alpha: 0.05, Sides: 2}))
}

func BenchmarkTwoMeansWelch(b *testing.B) {
	benchSimReplicates(b, NewTwoMeans(TwoMeans{N1: 40, N2: 80, Diff: 0.5, SD1: 1, SD2: 1.5, Welch: true, Alpha: 0.05, Sides: 2}))
}

func BenchmarkPairedMeans(b *testing.B) {
	benchSimReplicates(b, NewPairedMeans(PairedMeans{N: 30, Diff: 0.5, SD: 1, Alpha: 0.05, Sides: 2}))
}

func BenchmarkClusterBinary(b *testing.B) {
	for _, k := range []int{5, 20} {
		b.Run(fmt.Sprintf("K=%d", k), func(b *testing.B) {
			benchSimReplicates(b, NewClusterBinary(ClusterBinary{K1: k, K2: k, M: 50, P1: 0.3, P2: 0.2, ICC: 0.05, Alpha: 0.05, Sides: 2}))
		})
	}
}

// TestTwoBinomialsDirect checks that the direct decision (used beyond
// MaxTableCells) gives the same counts as the table on the same stream.
func TestTwoBinomialsDirect(t *testing.T) {
	for _, test := range []BinaryTest{ChiSquare, ChiSquareYates, ZUnpooled} {
		c := TwoBinomials{N1: 300, N2: 450, P1: 0.3, P2: 0.4, Alpha: 0.05, Sides: 2, Test: test}
		table := NewTwoBinomials(c)
		direct := &twoBinomialsDirect{t1: NewBinomialTable(c.N1, c.P1), t2: NewBinomialTable(c.N2, c.P2),
			rule: newCellRule(c.Test, c.N1, c.N2, c.Alpha, c.Sides, c.Dir)}
		cfg := SimConfig{Replicates: 50000, Seed: 9}
		a, _ := Simulate(context.Background(), table, cfg)
		b, _ := Simulate(context.Background(), direct, cfg)
		if !sameResult(a, b) {
			t.Errorf("%v: table %+v, direct %+v", test, a, b)
		}
	}
	if !TooLargeForTable(Fisher, 5000, 5000) || TooLargeForTable(ChiSquare, 5000, 5000) {
		t.Error("TooLargeForTable")
	}
}
