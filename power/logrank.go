package power

import (
	"cmp"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sync/atomic"
)

// LogRankResult is the two-group log-rank comparison, seen from group 1.
type LogRankResult struct {
	// Observed is the number of events observed in group 1.
	Observed float64
	// Expected is the number of events expected in group 1 under the null
	// hypothesis of equal hazards: the sum over the distinct event times of
	// d·n1/n (d events among n at risk, n1 of them in group 1).
	Expected float64
	// Variance is the hypergeometric variance of Observed − Expected, with
	// the factor (n − d)/(n − 1) for tied event times:
	// Σ d (n1/n)(1 − n1/n)(n − d)/(n − 1).
	Variance float64
}

// ChiSquare returns the log-rank chi-square on one degree of freedom,
// (O − E)²/V, or 0 when V is 0 (no event time with both groups at risk:
// the data carry no information on the difference).
func (r LogRankResult) ChiSquare() float64 {
	if !(r.Variance > 0) {
		return 0
	}
	u := r.Observed - r.Expected
	return u * u / r.Variance
}

// Z returns the signed statistic (O − E)/√V for group 1, or 0 when V is 0.
// It is negative when group 1 has fewer events than expected, that is when
// its hazard looks lower (hazard ratio group 1 over group 2 below 1).
func (r LogRankResult) Z() float64 {
	if !(r.Variance > 0) {
		return 0
	}
	return (r.Observed - r.Expected) / math.Sqrt(r.Variance)
}

// LogRankTest compares the survival of two groups with the log-rank test.
// Participant i has follow-up time time[i], event[i] true for an event
// and false for a censoring, and group[i] 1 or 2. Only the order of the
// times matters; equal times are ties. A participant censored at an event
// time counts as at risk at that time. The variance is the hypergeometric
// one with the ties correction, as in R survival::survdiff (rho = 0), so
// the chi-square equals survdiff's for two groups.
//
// It panics if the slices differ in length, a time is not finite, or a
// group is not 1 or 2.
//
// References: Mantel N (1966). Evaluation of survival data and two new
// rank order statistics arising in its consideration. Cancer Chemother Rep
// 50:163–170. Peto R, Peto J (1972). Asymptotically efficient rank
// invariant test procedures. J R Stat Soc A 135:185–207.
func LogRankTest(time []float64, event []bool, group []int) LogRankResult {
	if len(event) != len(time) || len(group) != len(time) {
		panic(fmt.Sprintf("power: log-rank needs as many events and groups as times, got %d, %d and %d",
			len(time), len(event), len(group)))
	}
	n := len(time)
	idx := make([]int, n)
	n1, n2 := 0, 0
	for i := range n {
		if math.IsNaN(time[i]) || math.IsInf(time[i], 0) {
			panic(fmt.Sprintf("power: log-rank time must be finite, got %v", time[i]))
		}
		switch group[i] {
		case 1:
			n1++
		case 2:
			n2++
		default:
			panic(fmt.Sprintf("power: log-rank group must be 1 or 2, got %d", group[i]))
		}
		idx[i] = i
	}
	slices.SortFunc(idx, func(a, b int) int { return cmp.Compare(time[a], time[b]) })
	// Replace each time by its rank among the distinct times, so that the
	// simulation's packed-key pass does the counting.
	keys := make([]uint64, n)
	var rank uint64
	for j, i := range idx {
		if j > 0 && time[i] != time[idx[j-1]] {
			rank++
		}
		keys[j] = lrKey(rank, event[i], group[i] == 2)
	}
	o, e, v := logRankSorted(keys, n1, n2)
	return LogRankResult{Observed: o, Expected: e, Variance: v}
}

// LogRank returns the two-group log-rank chi-square of [LogRankTest].
func LogRank(time []float64, event []bool, group []int) float64 {
	return LogRankTest(time, event, group).ChiSquare()
}

// A packed key holds a participant's time in its high 32 bits (a rank, or
// a fixed-point time in the simulation) and flags in its low bits. Keys
// sorted as integers are sorted by time; the flags do not matter within a
// tie.
const (
	lrEvent  = 1 // bit 0: the time is an event
	lrGroup2 = 2 // bit 1: the participant is in group 2
)

func lrKey(t uint64, event, group2 bool) uint64 {
	k := t << 32
	if event {
		k |= lrEvent
	}
	if group2 {
		k |= lrGroup2
	}
	return k
}

// logRankSorted returns O1, E1 and V of the log-rank test for keys sorted
// by their high 32 bits, n1 of them in group 1 and n2 in group 2. Untied
// times, the rule in simulated continuous data, take a branch-free path.
func logRankSorted(keys []uint64, n1, n2 int) (o1, e1, v float64) {
	r1, r2 := float64(n1), float64(n2) // at risk
	n := len(keys)
	for i := 0; i < n; {
		k := keys[i]
		t := k >> 32
		j := i + 1
		if j == n || keys[j]>>32 != t {
			ev := float64(k & lrEvent)
			g2 := float64(k >> 1 & 1)
			p := r1 / (r1 + r2)
			e1 += ev * p
			v += ev * p * (1 - p)
			o1 += ev * (1 - g2)
			r1 -= 1 - g2
			r2 -= g2
			i = j
			continue
		}
		for j < n && keys[j]>>32 == t {
			j++
		}
		var d, d1, c2 float64 // events, events in group 1, members of group 2
		for _, k := range keys[i:j] {
			ev := float64(k & lrEvent)
			g2 := float64(k >> 1 & 1)
			d += ev
			d1 += ev * (1 - g2)
			c2 += g2
		}
		if s := r1 + r2; d > 0 {
			p := r1 / s
			e1 += d * p
			if s > 1 { // with one at risk, p is 0 or 1: no variance
				v += d * p * (1 - p) * (s - d) / (s - 1)
			}
		}
		o1 += d1
		r1 -= float64(j-i) - c2
		r2 -= c2
		i = j
	}
	return o1, e1, v
}

// radixSortHigh32 sorts keys by their high 32 bits with a least significant
// digit radix sort, one pass per byte (Knuth DE (1998). The Art of
// Computer Programming, vol. 3, 2nd ed., §5.2.5), using tmp (as long as
// keys) as scratch. count holds the histogram of each byte, count[p] for
// bits 32+8p to 39+8p; it is overwritten. Passes whose byte is the same
// for every key are skipped. It returns whichever of keys and tmp holds
// the sorted keys.
//
// When stop is not nil and is set between two passes, it returns nil.
func radixSortHigh32(keys, tmp []uint64, count *[4][256]uint32, stop *atomic.Bool) []uint64 {
	n := uint32(len(keys))
	if n < 2 {
		return keys
	}
	src, dst := keys, tmp[:len(keys)]
	for p := range 4 {
		if stop != nil && stop.Load() {
			return nil
		}
		shift := uint(32 + 8*p)
		c := &count[p]
		if c[uint8(src[0]>>shift)] == n {
			continue
		}
		var sum uint32
		for b := range c {
			c[b], sum = sum, sum+c[b]
		}
		for _, k := range src {
			b := uint8(k >> shift)
			dst[c[b]] = k
			c[b]++
		}
		src, dst = dst, src
	}
	return src
}

// logRankModel simulates a two-arm study with exponential survival,
// uniform entry, exponential loss to follow-up and administrative
// censoring, analysed with the log-rank test.
type logRankModel struct {
	n1, n2     int
	mean1      float64 // 1/h1
	mean2      float64 // 1/h2
	cross1     float64 // share of group 1 with hazard h2
	cross2     float64 // share of group 2 with hazard h1
	meanDrop   float64 // 1/dropout hazard, 0 for none
	accrual    float64
	end        float64 // accrual + follow-up
	scale      float64 // fixed-point time units per time unit
	crit2      float64 // squared critical value (superiority)
	sides, dir int
	test       lrTest
	z          float64 // one-sided critical value (margin tests)
	lnM        float64 // ln Margin (margin tests)
}

// lrTest is the hypothesis a simulated log-rank analysis tests.
type lrTest int

const (
	lrSuperiority    lrTest = iota // H0: HR = 1
	lrNonInferiority               // H0: HR = Margin, one-sided
	lrEquivalence                  // two one-sided tests at 1/Margin and Margin
)

// SurvivalSim describes a simulated two-arm survival study analysed with
// the log-rank test; see [NewSurvivalSim].
type SurvivalSim struct {
	// N1 and N2 are the group sizes; each at least 1.
	N1, N2 int
	// H1 and H2 are the hazards of each arm's own treatment, positive and
	// finite; the hazard ratio is H1/H2.
	H1, H2 float64
	// Cross1 is the fraction of group 1 whose hazard is H2 (non-adherence),
	// Cross2 the fraction of group 2 whose hazard is H1 (contamination).
	// Each participant crosses independently with that probability. Both
	// must be in [0, 1]; 0 for none.
	Cross1, Cross2 float64
	// Entry is recruitment, follow-up and loss to follow-up.
	Entry Entry
	// Alpha is the level in (0, 1): of the test with Sides sides for
	// superiority, of each one-sided test with a margin.
	Alpha float64
	// Sides (1 or 2) and Dir (−1 or +1 when one-sided) set a superiority
	// test as in [NewSurvivalModel]. With a margin, Sides must be 1 and
	// Dir 0 or the margin's side (−1 when Margin > 1, +1 when Margin < 1);
	// with Equivalence, Dir must be 0.
	Sides, Dir int
	// Margin, when not 0 or 1, makes the test one of H0: HR = Margin,
	// positive and finite, on the Peto log-hazard-ratio estimate U/V (U =
	// O1 − E1, V the log-rank variance):
	//
	//	Z = (U − V ln M)/√V
	//
	// one-sided at level Alpha, rejecting for Z < −z when M > 1 (a lower
	// hazard is better) and Z > z when M < 1, z = [ZAlpha](Alpha, 1).
	Margin float64
	// Equivalence, with Margin M > 1, rejects when both
	// (U − V ln(1/M))/√V > z and (U − V ln M)/√V < −z: two one-sided tests
	// of the interval (1/M, M), each at level Alpha.
	Equivalence bool
}

// NewSurvivalModel returns the Monte-Carlo model of a two-arm survival
// study analysed with the log-rank test, the setting of Schoenfeld's
// events formula: [NewSurvivalSim] with no crossing-over and no margin,
//
//	NewSurvivalSim(SurvivalSim{N1: n1, N2: n2, H1: h1, H2: h2, Entry: e, Alpha: alpha, Sides: sides, Dir: dir})
//
// It panics as NewSurvivalSim does.
func NewSurvivalModel(n1, n2 int, h1, h2 float64, e Entry, alpha float64, sides, dir int) Model {
	return NewSurvivalSim(SurvivalSim{N1: n1, N2: n2, H1: h1, H2: h2, Entry: e, Alpha: alpha, Sides: sides, Dir: dir})
}

// NewSurvivalSim returns the Monte-Carlo model of a two-arm survival
// study analysed with the log-rank test. Each replicate draws, for each of
// c.N1 participants of group 1 and c.N2 of group 2, whether the
// participant crosses over (a uniform, drawn only when the group's
// crossing fraction is above 0), an entry time uniform on
// [0, Entry.Accrual), an exponential event time with the hazard of the
// treatment received (group 1: H1, or H2 after crossing; group 2: H2, or
// H1), and an exponential dropout time with hazard Entry.Dropout (none
// when 0). It observes the earliest of the event, the dropout and the
// administrative end Entry.Accrual + Entry.FollowUp − entry, an event only
// when the event comes first. Participants are analysed in the group they
// were randomised to (intention to treat), so crossing-over dilutes the
// hazard ratio, and hazards are no longer proportional. Exponentials use
// [rand.Rand.ExpFloat64], the ziggurat method of Marsaglia G, Tsang WW
// (2000), J Stat Softw 5(8).
//
// The superiority test (Margin 0 or 1) is the log-rank test of
// [LogRankTest]. Two-sided (Sides 2), it rejects when the chi-square
// exceeds qchisq(1 − Alpha, 1) = z², z = [ZAlpha](Alpha, 2), and Dir is
// ignored. One-sided (Sides 1), it rejects when the signed statistic Z =
// (O − E)/√V of group 1 is beyond z = [ZAlpha](Alpha, 1) in direction Dir:
// Dir −1 rejects for Z < −z (group 1 has fewer events than expected:
// hazard ratio H1/H2 below 1), Dir +1 for Z > z.
//
// With a margin M (see [SurvivalSim]) the statistic is the Peto one-step
// estimate of the log hazard ratio, U/V, whose standard error is taken as
// 1/√V, tested against ln M. It is the test whose power Schoenfeld's
// formula with a log margin ([EventsMethod.NonInferiorityEvents])
// approximates. It is approximate: U/V is close to the log hazard ratio
// only near HR = 1 and with balanced groups, so at HR = M its size departs
// from Alpha as |ln M| and the imbalance grow. For a nominal 0.025 with
// some 230 events: 0.0257 (R) at M = 1.3 and 0.0225 at M = 2 with equal
// groups, but 0.057 (R) with 200 against 100 at M = 2 and 0.0096 with 100
// against 200 (testdata/reference/survmargin_README.md).
//
// For speed, the observed times are recorded as 32-bit fixed-point
// fractions of the study length (a resolution of 2⁻³² of accrual plus
// follow-up, far below any meaningful time) and sorted by a radix sort; two
// times that fall in the same step are a tie, handled exactly as
// [LogRankTest] handles ties.
//
// It panics if N1 or N2 is below 1, H1 or H2 is not positive and finite,
// Cross1 or Cross2 is not in [0, 1], Entry is invalid (see [Entry]),
// Alpha is not in (0, 1), Sides is not 1 or 2, Sides is 1 and Dir is 0
// for superiority, Margin is negative, infinite or NaN, or Sides and Dir
// do not fit a margin test as stated in [SurvivalSim], or Equivalence is
// set without a Margin above 1.
//
// References: Schoenfeld DA (1983). Sample-size formula for the
// proportional-hazards regression model. Biometrics 39:499–503. Berry G,
// Kitchin RM, Mock PA (1991). A comparison of two simple hazard ratio
// estimators based on the logrank test. Statistics in Medicine 10:749–755
// (the bias of the Peto one-step estimate U/V as the hazard ratio grows).
// Schuirmann DJ (1987). A comparison of the two one-sided tests procedure
// and the power approach for assessing the equivalence of average
// bioavailability. J Pharmacokinet Biopharm 15:657–680.
func NewSurvivalSim(c SurvivalSim) Model {
	if c.N1 < 1 || c.N2 < 1 {
		panic(fmt.Sprintf("power: group sizes must be at least 1, got %d and %d", c.N1, c.N2))
	}
	checkHazard(c.H1)
	checkHazard(c.H2)
	for _, x := range []float64{c.Cross1, c.Cross2} {
		if !(x >= 0 && x <= 1) {
			panic(fmt.Sprintf("power: crossing-over fraction must be in [0, 1], got %v", x))
		}
	}
	c.Entry.check()
	z := ZAlpha(c.Alpha, c.Sides)
	m := &logRankModel{
		n1: c.N1, n2: c.N2,
		mean1: 1 / c.H1, mean2: 1 / c.H2,
		cross1: c.Cross1, cross2: c.Cross2,
		accrual: c.Entry.Accrual,
		end:     c.Entry.Accrual + c.Entry.FollowUp,
		crit2:   z * z,
		sides:   c.Sides, dir: c.Dir,
	}
	switch {
	case !(c.Margin >= 0) || math.IsInf(c.Margin, 1):
		panic(fmt.Sprintf("power: hazard-ratio margin must be non-negative and finite, got %v", c.Margin))
	case c.Equivalence:
		if !(c.Margin > 1) {
			panic(fmt.Sprintf("power: equivalence needs a hazard-ratio margin above 1, got %v", c.Margin))
		}
		if c.Sides != 1 || c.Dir != 0 {
			panic(fmt.Sprintf("power: equivalence takes sides 1 and dir 0, got %d and %d", c.Sides, c.Dir))
		}
		m.test = lrEquivalence
	case c.Margin != 0 && c.Margin != 1:
		side := 1 // the alternative HR > M
		if c.Margin > 1 {
			side = -1
		}
		if c.Sides != 1 || (c.Dir != 0 && c.Dir != side) {
			panic(fmt.Sprintf("power: margin %v takes sides 1 and dir 0 or %+d, got %d and %d",
				c.Margin, side, c.Sides, c.Dir))
		}
		m.test = lrNonInferiority
	case c.Sides == 1 && c.Dir == 0:
		panic("power: a one-sided test needs dir −1 or +1")
	}
	if m.test != lrSuperiority {
		m.z, m.lnM = z, math.Log(c.Margin)
	}
	if c.Entry.Dropout > 0 {
		m.meanDrop = 1 / c.Entry.Dropout
	}
	m.scale = math.MaxUint32 / m.end
	return m
}

// NewWorker returns a worker with its own scratch buffers.
func (m *logRankModel) NewWorker() Worker {
	n := m.n1 + m.n2
	return &logRankWorker{m: m, keys: make([]uint64, n), tmp: make([]uint64, n)}
}

// workerBytes is the scratch of a worker: keys and tmp, 16 bytes a
// participant, and the histograms.
func (m *logRankModel) workerBytes() int64 {
	return 16*(int64(m.n1)+int64(m.n2)) + int64(len(logRankWorker{}.count))*256*4
}

// logRankWorker holds one goroutine's scratch space.
type logRankWorker struct {
	m         *logRankModel
	keys, tmp []uint64
	count     [4][256]uint32
	// stop, when set by the runner, cuts a replicate short: it is checked
	// every 16,384 participants drawn and between the passes of the sort,
	// so that a study of millions stops within a fraction of a second.
	stop *atomic.Bool
}

func (w *logRankWorker) watchStop(stop *atomic.Bool) { w.stop = stop }

// draw fills w.keys with one simulated data set (group 1 first) and
// w.count with the histograms of its time bytes; it returns false when
// the stop flag cut it short.
func (w *logRankWorker) draw(rng *rand.Rand) bool {
	m := w.m
	w.count = [4][256]uint32{}
	c := &w.count
	keys := w.keys
	for i := range keys {
		if i&(1<<14-1) == 0 && w.stop != nil && w.stop.Load() {
			return false
		}
		mean, other, cross, flag := m.mean1, m.mean2, m.cross1, uint64(0)
		if i >= m.n1 {
			mean, other, cross, flag = m.mean2, m.mean1, m.cross2, lrGroup2
		}
		if cross > 0 && rng.Float64() < cross {
			mean = other
		}
		left := m.end
		if m.accrual > 0 {
			left -= m.accrual * rng.Float64()
		}
		if m.meanDrop > 0 {
			left = min(left, rng.ExpFloat64()*m.meanDrop)
		}
		t := rng.ExpFloat64() * mean
		var ev uint64
		if t <= left {
			ev = lrEvent
		}
		left = min(left, t)
		// left ≤ end and scale = (2³² − 1)/end, so left·scale exceeds
		// 2³² − 1 by rounding at most, and truncation keeps q below 2³².
		q := uint64(int64(left * m.scale))
		keys[i] = q<<32 | flag | ev
		c[0][uint8(q)]++
		c[1][uint8(q>>8)]++
		c[2][uint8(q>>16)]++
		c[3][uint8(q>>24)]++
	}
	return true
}

// stat returns O1 − E1 and V for the data set in w.keys; V is 0 when the
// stop flag cut the sort short.
func (w *logRankWorker) stat() (u, v float64) {
	sorted := radixSortHigh32(w.keys, w.tmp, &w.count, w.stop)
	if sorted == nil {
		return 0, 0
	}
	o, e, v := logRankSorted(sorted, w.m.n1, w.m.n2)
	return o - e, v
}

// Replicate simulates one study and reports whether the planned test
// rejects. A replicate cut short by the stop flag reports false; the
// runner does not count it.
func (w *logRankWorker) Replicate(rng *rand.Rand) bool {
	if !w.draw(rng) {
		return false
	}
	u, v := w.stat()
	return w.m.rejects(u, v, w.m.z, w.m.crit2)
}

// rejects decides the planned test from U = O1 − E1 and V at the
// one-sided critical value z (margin tests) or the squared critical value
// crit2 (superiority); no data (V = 0) never reject.
func (m *logRankModel) rejects(u, v, z, crit2 float64) bool {
	if !(v > 0) {
		return false
	}
	switch m.test {
	case lrNonInferiority:
		// Z = (U − V ln M)/√V against ∓z.
		s := u - v*m.lnM
		if m.lnM > 0 {
			return s < -z*math.Sqrt(v)
		}
		return s > z*math.Sqrt(v)
	case lrEquivalence:
		// Both (U + V ln M)/√V > z and (U − V ln M)/√V < −z.
		zv, vl := z*math.Sqrt(v), v*m.lnM
		return u+vl > zv && u-vl < -zv
	}
	if m.sides == 1 && (u < 0) != (m.dir < 0) {
		return false
	}
	return u*u > crit2*v
}
