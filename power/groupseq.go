package power

import (
	"errors"
	"fmt"
	"math"
)

// BoundaryFamily is the family of efficacy boundaries of a group-sequential
// design.
type BoundaryFamily int

const (
	// Pocock is the constant boundary |Z_k| ≥ C for every look, equally
	// spaced looks only (Pocock 1977).
	Pocock BoundaryFamily = iota + 1
	// OBrienFleming is the boundary |Z_k| ≥ C √(K/k), equally spaced looks
	// only (O'Brien & Fleming 1979).
	OBrienFleming
	// Spending is the boundary that spends the alpha of a [SpendingFunction]
	// at the information fraction of each look (Lan & DeMets 1983).
	Spending
)

// String returns the family's identifier: "pocock", "obrien-fleming" or
// "spending".
func (b BoundaryFamily) String() string {
	switch b {
	case Pocock:
		return "pocock"
	case OBrienFleming:
		return "obrien-fleming"
	case Spending:
		return "spending"
	}
	return fmt.Sprintf("BoundaryFamily(%d)", int(b))
}

// SpendingFunction is an alpha-spending function α(t): the alpha spent by
// information fraction t, increasing from α(0) = 0 to α(1) = α.
type SpendingFunction int

const (
	// OBrienFlemingType spends, for a two-sided design,
	//
	//	α(t) = 2 − 2Φ(z_{1−α/2} / √t)
	//
	// over both sides; a one-sided design at level α is the upper half of
	// the two-sided design at 2α, spending on its one side
	//
	//	α(t) = 1 − Φ(z_{1−α} / √t).
	//
	// References: Lan KKG, DeMets DL (1983). Discrete sequential boundaries
	// for clinical trials. Biometrika 70:659–663, eq. (2.3).
	OBrienFlemingType SpendingFunction = iota + 1
	// PocockType spends α(t) = α ln(1 + (e − 1) t).
	//
	// References: Lan & DeMets (1983), eq. (2.4).
	PocockType
	// PowerFamily spends α(t) = α t^ρ, ρ > 0.
	//
	// References: Kim K, DeMets DL (1987). Design and analysis of group
	// sequential tests based on the type I error spending rate function.
	// Biometrika 74:149–154 (the family α t^ρ; citation from memory — the
	// issue that asked for it cites the same authors and year in
	// Biometrics 43:857).
	PowerFamily
)

// String returns the spending function's identifier.
func (f SpendingFunction) String() string {
	switch f {
	case OBrienFlemingType:
		return "obrien-fleming-type"
	case PocockType:
		return "pocock-type"
	case PowerFamily:
		return "power"
	}
	return fmt.Sprintf("SpendingFunction(%d)", int(f))
}

// GroupSequential describes the efficacy boundaries of a group-sequential
// test with K = len(Timing) analyses.
type GroupSequential struct {
	// Timing holds the information fractions of the looks, increasing in
	// (0, 1] and ending at 1; 2 to [MaxLooks] looks. Pocock and
	// OBrienFleming need them equally spaced (k/K).
	Timing []float64
	// Alpha is the overall level in (0, 1); Sides 1 or 2. Two-sided
	// designs have symmetric boundaries and Alpha is spent over both
	// sides; one-sided designs stop for Z_k ≥ c_k.
	Alpha float64
	Sides int
	// Family is the boundary family; Function and Rho (> 0, for
	// PowerFamily) the spending function of Spending.
	Family   BoundaryFamily
	Function SpendingFunction
	Rho      float64
}

// MaxLooks is the most analyses a group-sequential design may have.
const MaxLooks = 10

// Sequential is a group-sequential design's boundaries: at look k the
// trial stops for efficacy when |Z_k| ≥ Z[k] (one-sided: Z_k ≥ Z[k], Z
// signed in the direction of benefit).
type Sequential struct {
	GroupSequential
	// Z is the critical value at each look, PNominal its nominal p-value
	// (two-sided for two-sided designs), and AlphaSpent the cumulative
	// probability of crossing by each look under no effect.
	Z, PNominal, AlphaSpent []float64
}

// ErrBadTiming is returned when the looks' information fractions are not
// increasing in (0, 1] ending at 1, or not equally spaced where the
// family requires it.
var ErrBadTiming = errors.New("power: the looks' timing is not usable")

// EqualTiming returns the fractions k/K, k = 1..K.
func EqualTiming(k int) []float64 {
	t := make([]float64, k)
	for i := range t {
		t[i] = float64(i+1) / float64(k)
	}
	t[k-1] = 1
	return t
}

// Spent returns the cumulative alpha the design's spending function
// allows by information fraction t in [0, 1].
func (g GroupSequential) Spent(t float64) float64 {
	switch {
	case t <= 0:
		return 0
	case t >= 1:
		return g.Alpha
	}
	switch g.Function {
	case OBrienFlemingType:
		if g.Sides == 1 {
			return normUpper(ZAlpha(g.Alpha, 1) / math.Sqrt(t))
		}
		return 2 * normUpper(ZAlpha(g.Alpha, 2)/math.Sqrt(t))
	case PocockType:
		return g.Alpha * math.Log1p((math.E-1)*t)
	case PowerFamily:
		return g.Alpha * math.Pow(t, g.Rho)
	}
	panic("power: unknown spending function")
}

func (g GroupSequential) check() error {
	k := len(g.Timing)
	if k < 2 || k > MaxLooks {
		return fmt.Errorf("%w: %d looks; allowed: 2 to %d", ErrBadTiming, k, MaxLooks)
	}
	prev := 0.0
	for i, t := range g.Timing {
		if !(t > prev && t <= 1) {
			return fmt.Errorf("%w: look %d at %g does not follow %g", ErrBadTiming, i+1, t, prev)
		}
		prev = t
	}
	if g.Timing[k-1] != 1 {
		return fmt.Errorf("%w: the last look is at %g, not 1", ErrBadTiming, g.Timing[k-1])
	}
	if g.Family == Pocock || g.Family == OBrienFleming {
		for i, t := range g.Timing {
			if math.Abs(t-float64(i+1)/float64(k)) > 1e-9 {
				return fmt.Errorf("%w: %s boundaries need equally spaced looks", ErrBadTiming, g.Family)
			}
		}
	}
	if !(g.Alpha > 0 && g.Alpha < 1) || (g.Sides != 1 && g.Sides != 2) {
		panic("power: group-sequential alpha or sides out of range")
	}
	if g.Family == Spending && g.Function == PowerFamily && !(g.Rho > 0 && g.Rho < math.Inf(1)) {
		panic("power: the power spending function needs rho > 0")
	}
	return nil
}

// Boundaries computes the design's critical values. Probabilities of
// crossing are computed by the recursive numerical integration of
// Armitage, McPherson & Rowe (1969) on the grid of Jennison & Turnbull
// (2000, chapter 19): at look k, Z_k √t_k − Z_{k−1} √t_{k−1} is normal with
// mean θ(t_k − t_{k−1}) and variance t_k − t_{k−1}, independent of the
// past, and the density of Z_k on the continuation region is carried from
// look to look by Simpson's rule. Pocock's and O'Brien & Fleming's
// constant C is the root of the total crossing probability under θ = 0
// equal to Alpha; a spending boundary's c_k is the root of the crossing
// probability at look k equal to α(t_k) − α(t_{k−1}).
//
// It returns [ErrBadTiming] for unusable timing and panics on other
// out-of-range fields.
//
// References: Armitage P, McPherson CK, Rowe BC (1969). Repeated
// significance tests on accumulating data. J R Stat Soc A 132:235–244.
// Jennison C, Turnbull BW (2000). Group Sequential Methods with
// Applications to Clinical Trials. Chapman & Hall/CRC, chapter 19.
// Pocock SJ (1977). Group sequential methods in the design and analysis
// of clinical trials. Biometrika 64:191–199. O'Brien PC, Fleming TR
// (1979). A multiple testing procedure for clinical trials. Biometrics
// 35:549–556. Lan & DeMets (1983).
func (g GroupSequential) Boundaries() (*Sequential, error) {
	if err := g.check(); err != nil {
		return nil, err
	}
	k := len(g.Timing)
	s := &Sequential{GroupSequential: g, Z: make([]float64, k)}
	var in integrator
	switch g.Family {
	case Pocock, OBrienFleming:
		shape := func(c float64) {
			for i := range s.Z {
				s.Z[i] = c
				if g.Family == OBrienFleming {
					s.Z[i] = c * math.Sqrt(float64(k)/float64(i+1))
				}
			}
		}
		// The last look's critical value lies between the fixed design's
		// (crossing there alone) and the Bonferroni bound's (no boundary
		// below it, each look at alpha/K).
		lo := ZAlpha(g.Alpha, g.Sides) - 1e-9
		hi := ZAlpha(g.Alpha/float64(k), g.Sides) + 1e-9
		c, err := refine(func(r int) func(float64) float64 {
			in.r = r
			return func(c float64) float64 {
				shape(c)
				return in.total(s.Timing, s.Z, g.Sides, 0) - g.Alpha
			}
		}, lo, hi, 1e-10)
		if err != nil {
			return nil, err
		}
		shape(c)
	case Spending:
		in.start(g.Timing, 0)
		prev := 0.0
		for i := range k {
			target := g.Spent(g.Timing[i]) - prev
			prev += target
			if i == 0 {
				s.Z[0] = ZAlpha(target, g.Sides)
				in.cross(0, s.Z[0], g.Sides)
				continue
			}
			f := func(c float64) float64 {
				up, lo := in.crossAt(i, c, g.Sides)
				return up + lo - target
			}
			hi := ZAlpha(target, g.Sides) + 1 // crossing now alone, plus room
			c, err := FindRoot(f, 0, math.Max(hi, 40), 1e-10)
			if err != nil {
				return nil, err
			}
			s.Z[i] = c
			in.cross(i, c, g.Sides)
		}
	default:
		panic("power: unknown boundary family")
	}
	s.PNominal = make([]float64, k)
	for i, z := range s.Z {
		s.PNominal[i] = float64(g.Sides) * normUpper(z)
	}
	s.AlphaSpent = make([]float64, k)
	up, lo := s.Crossing(0)
	sum := 0.0
	for i := range up {
		sum += up[i] + lo[i]
		s.AlphaSpent[i] = sum
	}
	return s, nil
}

// Crossing returns, at drift θ (the mean of Z at full information, so that
// Z_k has mean θ √t_k), the probability that the first crossing is at look
// k through the upper boundary (Z_k ≥ c_k) and through the lower one
// (Z_k ≤ −c_k, two-sided designs only; zero for one-sided designs).
func (s *Sequential) Crossing(theta float64) (upper, lower []float64) {
	return s.crossing(theta, gridR)
}

// crossing is [Sequential.Crossing] on the grid of density r.
func (s *Sequential) crossing(theta float64, r int) (upper, lower []float64) {
	in := integrator{r: r}
	in.start(s.Timing, theta)
	k := len(s.Timing)
	upper, lower = make([]float64, k), make([]float64, k)
	for i := range k {
		upper[i], lower[i] = in.crossAt(i, s.Z[i], s.Sides)
		if i < k-1 {
			in.cross(i, s.Z[i], s.Sides)
		}
	}
	return upper, lower
}

// Power is the probability of crossing the upper boundary (the side of
// the effect, θ > 0) at some look under drift θ.
func (s *Sequential) Power(theta float64) float64 { return s.power(theta, gridR) }

// power is [Sequential.Power] on the grid of density r.
func (s *Sequential) power(theta float64, r int) float64 {
	up, _ := s.crossing(theta, r)
	sum := 0.0
	for _, p := range up {
		sum += p
	}
	return sum
}

// Drift returns the drift θ at which [Sequential.Power] equals power, in
// (0, 1).
func (s *Sequential) Drift(power float64) (float64, error) {
	if !(power > 0 && power < 1) {
		panic("power: power out of range")
	}
	// The sequential design needs at least the fixed design's drift when
	// the power is above one half; below, search from 0.
	lo := 0.0
	if power > 0.5 {
		lo = ZAlpha(s.Alpha, s.Sides) + ZPower(power)
	}
	hi := math.Max(1.2*lo, 1)
	for s.power(hi, coarseR) < power {
		lo, hi = hi, 1.2*hi
		if hi > 100 {
			return math.NaN(), ErrUnreachable
		}
	}
	return refine(func(r int) func(float64) float64 {
		return func(th float64) float64 { return s.power(th, r) - power }
	}, lo, hi, 1e-9)
}

// refine finds the root of f(gridR) in [lo, hi] in two steps: on the
// coarse grid over the whole bracket, then on the fine grid in a narrow
// bracket around the coarse root (widened back to the whole bracket if
// the root is not inside it). The coarse and fine roots differ by about
// 1e-5, so the fine grid is evaluated a few times only.
func refine(f func(r int) func(float64) float64, lo, hi, tol float64) (float64, error) {
	x0, err := FindRoot(f(coarseR), lo, hi, 1e-7)
	if err != nil {
		return math.NaN(), err
	}
	fine := f(gridR)
	for _, d := range []float64{2e-4, 1e-2} {
		a, b := math.Max(lo, x0-d), math.Min(hi, x0+d)
		if x, err := FindRoot(fine, a, b, tol); err == nil {
			return x, nil
		}
	}
	return FindRoot(fine, lo, hi, tol)
}

// Inflation returns the maximum-information inflation factor
//
//	R = (θ_s / θ_f)²,  θ_f = z_{1−α/sides} + z_{power}
//
// the ratio of the maximum sample size of the sequential design to the
// fixed-sample size with the same power (counted on the side of the
// effect), θ_s its [Sequential.Drift].
//
// References: Jennison & Turnbull (2000), section 2.3 (tables 2.2, 2.4).
func (s *Sequential) Inflation(power float64) (float64, error) {
	th, err := s.Drift(power)
	if err != nil {
		return math.NaN(), err
	}
	f := ZAlpha(s.Alpha, s.Sides) + ZPower(power)
	return (th / f) * (th / f), nil
}

// Stopping returns, at drift θ, the probability of stopping at each look
// (crossing either boundary there first) — the last look's entry is the
// probability of reaching it, whatever its outcome — and the expected
// information as a fraction of the maximum, Σ t_k P(stop at k).
func (s *Sequential) Stopping(theta float64) (stop []float64, expected float64) {
	stop, _, expected = s.StoppingCrossing(theta)
	return stop, expected
}

// StoppingCrossing is [Sequential.Stopping] with the probabilities of
// crossing the upper boundary (the side of the effect) at each look, from
// the same integration: at the last look, where stop is the probability of
// reaching it, upper is that of crossing there.
func (s *Sequential) StoppingCrossing(theta float64) (stop, upper []float64, expected float64) {
	up, lo := s.Crossing(theta)
	k := len(up)
	stop = make([]float64, k)
	left := 1.0
	for i := range k - 1 {
		stop[i] = up[i] + lo[i]
		left -= stop[i]
		expected += s.Timing[i] * stop[i]
	}
	stop[k-1] = math.Max(0, left)
	expected += stop[k-1]
	return stop, up, expected
}

// gridR is the density of the integration grid, r of Jennison & Turnbull
// (2000, section 19.2.1): 6r − 1 base points, with midpoints for
// Simpson's rule. At r = 16 the constants and inflation factors are
// within about 1e-6 of their limits as r grows (groupseq_test.go), far
// below the 1e-3 of the published tables.
const gridR = 16

// coarseR is the grid of the first, coarse search for a root; its roots
// are within about 1e-4 of the fine grid's.
const coarseR = 6

// integrator carries the sub-density of Z_k on the continuation region
// from look to look.
type integrator struct {
	r     int // the grid's density (gridR when 0)
	pts   []float64
	t     []float64
	theta float64
	z, w  []float64 // the grid of the current look and Simpson weights
	h     []float64 // the sub-density of Z_k at z (times nothing: weights apart)
	k     int       // the look the grid belongs to (−1 before the first)
	nz    []float64
	nw    []float64
	nh    []float64
}

// start sets the integrator before the first look at drift theta.
func (in *integrator) start(t []float64, theta float64) {
	in.t, in.theta, in.k = t, theta, -1
	in.z, in.w, in.h = in.z[:0], in.w[:0], in.h[:0]
}

// total is the total crossing probability of boundaries c at drift theta.
func (in *integrator) total(t, c []float64, sides int, theta float64) float64 {
	in.start(t, theta)
	sum := 0.0
	for i := range t {
		up, lo := in.crossAt(i, c[i], sides)
		sum += up + lo
		if i < len(t)-1 {
			in.cross(i, c[i], sides)
		}
	}
	return sum
}

// crossAt returns the probabilities of continuing to look i and crossing
// there, above c and (two-sided) below −c.
func (in *integrator) crossAt(i int, c float64, sides int) (up, lo float64) {
	mean := in.theta * math.Sqrt(in.t[i])
	if i == 0 {
		up = normUpper(c - mean)
		if sides == 2 {
			lo = normUpper(c + mean)
		}
		return up, lo
	}
	if in.k != i-1 {
		panic("power: integrator out of step")
	}
	sk, sp := math.Sqrt(in.t[i]), math.Sqrt(in.t[i-1])
	d := in.t[i] - in.t[i-1]
	sd := math.Sqrt(d)
	drift := in.theta * d
	for j, u := range in.z {
		m := u*sp + drift
		wh := in.w[j] * in.h[j]
		up += wh * normUpper((c*sk-m)/sd)
		if sides == 2 {
			lo += wh * normUpper((c*sk+m)/sd)
		}
	}
	return up, lo
}

// cross moves the density to look i's continuation region, (−c, c) for
// two-sided designs and (−∞, c) for one-sided ones.
func (in *integrator) cross(i int, c float64, sides int) {
	mean := in.theta * math.Sqrt(in.t[i])
	lo := math.Inf(-1)
	if sides == 2 {
		lo = -c
	}
	in.nz, in.nw = in.simpsonGrid(in.nz[:0], in.nw[:0], mean, lo, c)
	in.nh = in.nh[:0]
	if i == 0 {
		for _, z := range in.nz {
			in.nh = append(in.nh, phi(z-mean))
		}
	} else {
		if in.k != i-1 {
			panic("power: integrator out of step")
		}
		sk, sp := math.Sqrt(in.t[i]), math.Sqrt(in.t[i-1])
		d := in.t[i] - in.t[i-1]
		sd := math.Sqrt(d)
		drift := in.theta * d
		scale := sk / sd
		// Only the previous points within kernelReach standard deviations
		// of the increment count; both grids increase, so the window
		// slides.
		a, b := 0, 0
		for _, z := range in.nz {
			x := z * sk
			for a < len(in.z) && (x-in.z[a]*sp-drift)/sd > kernelReach {
				a++
			}
			for b < len(in.z) && (x-in.z[b]*sp-drift)/sd >= -kernelReach {
				b++
			}
			sum := 0.0
			for j := a; j < b; j++ {
				e := (x - in.z[j]*sp - drift) / sd
				sum += in.w[j] * in.h[j] * math.Exp(-0.5*e*e)
			}
			in.nh = append(in.nh, sum*scale/math.Sqrt(2*math.Pi))
		}
	}
	in.z, in.nz = in.nz, in.z
	in.w, in.nw = in.nw, in.w
	in.h, in.nh = in.nh, in.h
	in.k = i
}

// kernelReach is how many standard deviations of an increment the
// transition kernel is summed over: exp(−8.5²/2) ≈ 2e-16 of its peak.
const kernelReach = 8.5

// phi is the standard normal density.
func phi(x float64) float64 { return math.Exp(-0.5*x*x) / math.Sqrt(2*math.Pi) }

// simpsonGrid returns the grid of Jennison & Turnbull (2000, section
// 19.2.1) for a normal density centred at mu, cut to (lo, hi) with the
// ends added, and with midpoints between successive points so that the
// weights are Simpson's rule's on each pair of intervals.
func (in *integrator) simpsonGrid(z, w []float64, mu, lo, hi float64) ([]float64, []float64) {
	ri := in.r
	if ri == 0 {
		ri = gridR
	}
	r := float64(ri)
	m := 6*ri - 1
	base := func(i int) float64 { // i = 1..m
		fi := float64(i)
		switch {
		case i <= ri-1:
			return mu - 3 - 4*math.Log(r/fi)
		case i <= 5*ri:
			return mu - 3 + 3*(fi-r)/(2*r)
		}
		return mu + 3 + 4*math.Log(r/(6*r-fi))
	}
	// The cut points, increasing.
	if cap(in.pts) < 6*ri+1 {
		in.pts = make([]float64, 6*ri+1)
	}
	pts := in.pts[:6*ri+1]
	n := 0
	if lo > base(1) {
		pts[n] = lo
		n++
	}
	for i := 1; i <= m; i++ {
		x := base(i)
		if x > lo && x < hi {
			pts[n] = x
			n++
		}
	}
	if hi < base(m) {
		pts[n] = hi
		n++
	}
	if n < 2 {
		// The region is far in a tail: one Simpson panel across it.
		a, b := math.Max(lo, mu-20), math.Min(hi, mu+20)
		if !(b > a) {
			return z[:0], w[:0]
		}
		pts[0], pts[1], n = a, b, 2
	}
	z, w = z[:0], w[:0]
	for i := range n {
		if i > 0 {
			z = append(z, (pts[i-1]+pts[i])/2)
		}
		z = append(z, pts[i])
	}
	for range z {
		w = append(w, 0)
	}
	for i := 0; i+2 < len(z); i += 2 {
		h := z[i+2] - z[i]
		w[i] += h / 6
		w[i+1] += 4 * h / 6
		w[i+2] += h / 6
	}
	return z, w
}
