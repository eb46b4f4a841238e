package power

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// MatchedSim is the Monte-Carlo model of a matched case-control study of
// Sets sets of one case and Controls controls, exposures drawn as in
// [MatchedSets] (the case exposed with probability p1, its controls
// exposed independently with p₀₊ or p₀₋ given the case's exposure), and
// analysed by the Mantel–Haenszel test stratified by set (McNemar's test
// for pairs):
//
//	z = Σ_i (a_i − m_i/(M + 1)) / √(Σ_i m_i (M + 1 − m_i)/(M + 1)²)
//
// over the sets, a_i = 1 when set i's case is exposed and m_i the exposed
// members of set i (a set with m_i = 0 or M + 1 adds nothing to either
// sum). A two-sided test rejects when |z| > z_{1−α/2}, a one-sided one
// when Dir·z > z_{1−α} (Dir = +1 when ψ > 1 is the alternative); a study
// with no informative set does not reject. With one control, z is
// McNemar's (n10 − n01)/√(n10 + n01).
//
// The same model with OddsRatio 1 (and the same ControlExposure and
// Correlation) gives the test's size.
//
// References: Mantel N, Haenszel W (1959). Statistical aspects of the
// analysis of data from retrospective studies of disease. J Natl Cancer
// Inst 22:719–748; Dupont WD (1988). Biometrics 44:1157–1168 (the model).
type MatchedSim struct {
	MatchedSets
	// WithinSets reads the odds ratio as the within-set (conditional)
	// odds ratio, as Dupont's (1988) formula does: a set has m exposed
	// members with the model's probability t_m, and its case is the
	// exposed one with the probability e_m = mψ/(mψ + M − m + 1) that an
	// odds ratio ψ within sets gives. Without it, every member is drawn
	// from the model (case exposed with p1, controls with p₀₊ or p₀₋),
	// whose within-set odds ratio differs from ψ once Correlation > 0
	// (for pairs it is p10/p01, the reading of Connor 1987). The two
	// coincide at Correlation 0.
	WithinSets bool
	// Sets is the number of matched sets, from 1 to 2³¹ − 1.
	Sets int
	// Alpha is the level, in (0, 1).
	Alpha float64
	// Sides is 1 or 2; Dir is +1 or −1 for a one-sided test.
	Sides, Dir int
}

// matchedModel holds the read-only tables of a [MatchedSim]: the cells of
// a set (the case exposed or not × the number of exposed controls) drawn
// as a multinomial by sequential binomials. The two uninformative cells
// (nobody exposed, everybody exposed) are merged into cell 0, drawn first.
type matchedModel struct {
	n     int
	cond  []float64 // P(cell c | not in cells before c); the last is 1
	score []int64   // (M + 1) a − m: (M + 1) times the cell's term of z's numerator
	info  []int64   // m (M + 1 − m): (M + 1)² times its term of the variance
	crit  float64   // z_{1−α/s}
	sign  float64   // 0 two-sided, else Dir
}

// NewMatchedSim returns the model. A replicate draws the counts of sets
// in the 2M + 1 cells (the two uninformative cells merged) as a
// multinomial by sequential binomials, each from [drawBinomial], so it
// costs O(M) whatever the number of sets; the statistic is computed on
// whole numbers, (M + 1) times its numerator and (M + 1)² times its
// variance. It returns [ErrMatchedInfeasible] as [MatchedSets.Conditional]
// and panics unless 1 ≤ Sets ≤ 2³¹ − 1, the fields of MatchedSets are in
// range and the test is valid.
func NewMatchedSim(c MatchedSim) (Model, error) {
	if c.Sets < 1 || c.Sets > math.MaxInt32 {
		panic(fmt.Sprintf("power: %d matched sets out of 1..2³¹ − 1", c.Sets))
	}
	checkTest(c.Alpha, c.Sides, c.Dir)
	pp, pm, err := c.Conditional()
	if err != nil {
		return nil, err
	}
	p1 := CaseExposure(c.ControlExposure, c.OddsRatio)
	M := c.Controls
	plus := binomPMF(M, pp, nil)
	minus := binomPMF(M, pm, nil)
	// Cell 0: uninformative; then (case exposed, j = 0..M−1 exposed
	// controls) and (case unexposed, j = 1..M).
	probs := []float64{(1-p1)*minus[0] + p1*plus[M]}
	score := []int64{0}
	info := []int64{0}
	for a := 1; a >= 0; a-- {
		for j := 1 - a; j <= M-a; j++ {
			m := int64(a + j)
			pr := (1 - p1) * minus[j]
			if a == 1 {
				pr = p1 * plus[j]
			}
			if c.WithinSets {
				// t_m split by e_m, the case's share of the exposure
				// that an odds ratio ψ within the set gives.
				mm := float64(m)
				t := p1*plus[m-1] + (1-p1)*minus[m]
				e := mm * c.OddsRatio / (mm*c.OddsRatio + float64(M) - mm + 1)
				if a == 1 {
					pr = t * e
				} else {
					pr = t * (1 - e)
				}
			}
			probs = append(probs, pr)
			score = append(score, int64(M+1)*int64(a)-m)
			info = append(info, m*(int64(M+1)-m))
		}
	}
	// Conditional probabilities from suffix sums, so that rounding never
	// leaves a cell with a probability above 1 or the last below 1.
	cond := make([]float64, len(probs))
	rest := 0.0
	for i := len(probs) - 1; i >= 0; i-- {
		rest += probs[i]
		if rest > 0 {
			cond[i] = math.Min(1, probs[i]/rest)
		}
	}
	cond[len(cond)-1] = 1
	return &matchedModel{
		n:     c.Sets,
		cond:  cond,
		score: score,
		info:  info,
		crit:  ZAlpha(c.Alpha, c.Sides),
		sign:  signOf(c.Sides, c.Dir),
	}, nil
}

// NewWorker returns a worker; it needs no scratch beyond the model's
// read-only tables.
func (m *matchedModel) NewWorker() Worker { return matchedWorker{m} }

type matchedWorker struct{ m *matchedModel }

// Replicate draws the cell counts and applies the test.
func (w matchedWorker) Replicate(r *rand.Rand) bool {
	m := w.m
	left := m.n
	var s, v int64
	for c, p := range m.cond {
		if left == 0 {
			break
		}
		x := left
		if p < 1 {
			x = drawBinomial(r, left, p)
		}
		left -= x
		s += int64(x) * m.score[c]
		v += int64(x) * m.info[c]
	}
	if v == 0 {
		return false
	}
	z := float64(s) / math.Sqrt(float64(v))
	if m.sign == 0 {
		return math.Abs(z) > m.crit
	}
	return m.sign*z > m.crit
}

// drawBinomial returns one Binomial(n, p) variate for any n ≥ 0 and p in
// [0, 1], in constant expected time: by inversion (a sequential search
// from 0) when n·min(p, 1 − p) < 10, where it takes at most about eleven
// steps on average, and otherwise by Hörmann's transformed rejection with
// decomposition (algorithm BTRD), about 1.1 uniform pairs a variate. For
// p > ½ it returns n minus a Binomial(n, 1 − p) variate.
//
// References: Hörmann W (1993). The generation of binomial random
// variates. J Stat Comput Simul 46:101–110; Devroye L (1986).
// Non-Uniform Random Variate Generation. Springer, chapter X (inversion).
func drawBinomial(r *rand.Rand, n int, p float64) int {
	switch {
	case n <= 0 || p <= 0:
		return 0
	case p >= 1:
		return n
	case p > 0.5:
		return n - drawBinomial(r, n, 1-p)
	case float64(n)*p < 10:
		return binomialInversion(r, n, p)
	}
	t := newBTRD(n, p)
	return t.draw(r)
}

// binomialInversion draws Binomial(n, p), n p < 10 and p ≤ ½, by the
// sequential search of the distribution function from 0, the
// probabilities by the ratio recursion f(k)/f(k−1) = (n − k + 1)/k · p/q.
// A uniform beyond the sum of the probabilities (possible only by
// rounding, at most a few 1e-16) is drawn again.
func binomialInversion(r *rand.Rand, n int, p float64) int {
	q := 1 - p
	odds := p / q
	f0 := math.Pow(q, float64(n)) // at least e^−15 since n p < 10 and p ≤ ½
	for {
		u := r.Float64()
		f := f0
		for k := 0; k <= n; k++ {
			if u < f {
				return k
			}
			u -= f
			f *= odds * float64(n-k) / float64(k+1)
			if f == 0 {
				break
			}
		}
	}
}

// btrd holds the set-up of Hörmann's algorithm BTRD for one (n, p), with
// p ≤ ½ and n p ≥ 10; the names are the paper's.
type btrd struct {
	n, p, m, r, nr          float64
	b, a, c, alpha, vr, urv float64
}

func newBTRD(n int, p float64) btrd {
	nf := float64(n)
	q := 1 - p
	spq := math.Sqrt(nf * p * q)
	b := 1.15 + 2.53*spq
	vr := 0.92 - 4.2/b
	return btrd{
		n:     nf,
		p:     p,
		m:     math.Floor((nf + 1) * p),
		r:     p / q,
		nr:    (nf + 1) * p / q,
		b:     b,
		a:     -0.0873 + 0.0248*b + 0.01*p,
		c:     nf*p + 0.5,
		alpha: (2.83 + 5.1/b) * spq,
		vr:    vr,
		urv:   0.86 * vr,
	}
}

// transform is the map from u in (−½, ½) to the real line whose floor
// is the variate: (2a/(½ − |u|) + b) u + c.
func (t *btrd) transform(u float64) float64 {
	return (2*t.a/(0.5-math.Abs(u))+t.b)*u + t.c
}

// hat is the rejection hat at u relative to the mode, α/(a/us² + b), us
// = ½ − |u|: the height that f(k)/f(m) must stay under.
func (t *btrd) hat(u float64) float64 {
	us := 0.5 - math.Abs(u)
	return t.alpha / (t.a/(us*us) + t.b)
}

// logRatio returns log f(k)/f(m), the binomial probability of k relative
// to the mode, from Stirling's formula with the remainders of
// [stirlingTail], log j! = (j + ½) log(j + 1) − (j + 1) + ½ log 2π + fc(j):
//
//	log f(k)/f(m) = (n − m + ½) log1p((k − m)/nk) − (m + ½) log1p((k − m)/(m + 1))
//	              + (k − m) log(nk r/(k + 1)) + fc(m) − fc(k) + fc(n − m) − fc(n − k)
//
// with nk = n − k + 1 and r = p/q. It is Hörmann's step 3.3, arranged so
// that no term is much larger than |k − m| (his form subtracts terms of
// order n log n, which loses 1e-7 at n = 2³¹): the error stays near
// 1e-16 |k − m|.
func (t *btrd) logRatio(k float64) float64 {
	nk := t.n - k + 1
	d := k - t.m
	return (t.n-t.m+0.5)*math.Log1p(d/nk) - (t.m+0.5)*math.Log1p(d/(t.m+1)) +
		d*math.Log(nk*t.r/(k+1)) +
		stirlingTail(t.m) - stirlingTail(k) + stirlingTail(t.n-t.m) - stirlingTail(t.n-k)
}

// draw returns one variate (Hörmann 1993, algorithm BTRD, steps 1–3.3
// without the squeeze of step 3.2).
func (t *btrd) draw(r *rand.Rand) int {
	for {
		// Step 1: the central box, accepted at once.
		v := r.Float64()
		if v <= t.urv {
			u := v/t.vr - 0.43
			return int(math.Floor(t.transform(u)))
		}
		// Step 2: a point of the rest of the rectangle.
		var u float64
		if v >= t.vr {
			u = r.Float64() - 0.5
		} else {
			u = v/t.vr - 0.93
			u = math.Copysign(0.5, u) - u
			v = r.Float64() * t.vr
		}
		// Step 3.0.
		k := math.Floor(t.transform(u))
		if k < 0 || k > t.n {
			continue
		}
		v *= t.hat(u)
		km := math.Abs(k - t.m)
		if km <= 15 {
			// Step 3.1: f(k)/f(m) by the recursion f(i)/f(i−1) = nr/i − r.
			f := 1.0
			if t.m < k {
				for i := t.m + 1; i <= k; i++ {
					f *= t.nr/i - t.r
				}
			} else {
				for i := k + 1; i <= t.m; i++ {
					v *= t.nr/i - t.r
				}
			}
			if v <= f {
				return int(k)
			}
			continue
		}
		// Step 3.3: the exact test. (Hörmann's squeeze, step 3.2, is left
		// out: as written here it does not bracket log f(k)/f(m) in the far
		// left tail when n p is near 30 to 40, and the exact test costs only
		// a few logarithms on this rare path.)
		if math.Log(v) <= t.logRatio(k) {
			return int(k)
		}
	}
}

// stirlingTail returns log k! − [(k + ½) log(k + 1) − (k + 1) + ½ log 2π],
// the remainder of Stirling's formula: from math.Lgamma for k < 10 and
// from Stirling's series, 1/12z − 1/360z³ + 1/1260z⁵ − 1/1680z⁷ at
// z = k + 1 (error below 4e-13), beyond.
func stirlingTail(k float64) float64 {
	if k < 10 {
		lg, _ := math.Lgamma(k + 1)
		return lg - ((k+0.5)*math.Log(k+1) - (k + 1) + 0.5*math.Log(2*math.Pi))
	}
	z := k + 1
	z2 := z * z
	return (1.0/12 - (1.0/360-(1.0/1260-1.0/(1680*z2))/z2)/z2) / z
}
