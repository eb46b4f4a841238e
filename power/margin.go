package power

import (
	"fmt"
	"math"
)

// MarginMethod is a closed-form method for non-inferiority and equivalence
// of two proportions on the difference scale, first minus second.
//
// The null hypothesis puts the true difference p1 − p2 at a margin d0 ≠ 0
// instead of at zero. With r = n2/n1, Δ = p1 − p2, q = 1 − p, and the
// difference of the observed proportions standardised as
//
//	Z = (p̂1 − p̂2 − d0) / √(V0/n1)
//
// the two methods differ only in the null variance V0 of the difference.
type MarginMethod int

// The closed-form methods for a non-zero null difference of two proportions.
const (
	// FarringtonManning is the score test: the null variance is taken at
	// the maximum-likelihood risks restricted to p1 − p2 = d0 (see
	// [RestrictedMLE]), the alternative variance at the true risks:
	//
	//	V0 = p̃1 q̃1 + p̃2 q̃2 / r,  V1 = p1 q1 + p2 q2 / r
	//
	// References: Farrington CP, Manning G (1990). Test statistics and
	// sample size formulae for comparative binomial trials with null
	// hypothesis of non-zero risk difference or non-unity relative risk.
	// Stat Med 9:1447–1454.
	FarringtonManning MarginMethod = iota + 1

	// Blackwelder is the Wald test: the unrestricted variance at the true
	// risks serves under both hypotheses, V0 = V1 = p1 q1 + p2 q2 / r.
	//
	// References: Blackwelder WC (1982). "Proving the null hypothesis" in
	// clinical trials. Control Clin Trials 3:345–353.
	Blackwelder
)

// String returns the method's identifier as used in specifications.
func (m MarginMethod) String() string {
	switch m {
	case FarringtonManning:
		return "farrington-manning"
	case Blackwelder:
		return "blackwelder"
	}
	return fmt.Sprintf("MarginMethod(%d)", int(m))
}

// RestrictedMLE returns the maximum-likelihood risks under the constraint
// p1 − p2 = d0, given the expected risks p1, p2 (standing in for the
// observed proportions) and the allocation ratio r = n2/n1. The restricted
// p̃1 maximises the expected log-likelihood per first-group participant
//
//	ℓ(x) = p1 log x + q1 log(1 − x) + r [p2 log(x − d0) + q2 log(1 − x + d0)]
//
// over max(0, d0) < x < min(1, 1 + d0). The score equation ℓ′(x) = 0 is
// the cubic a x³ + b x² + c x + d = 0 with
//
//	a = 1 + r
//	b = −(1 + r + p1 + r p2 + d0 (r + 2))
//	c = d0² + d0 (2 p1 + r + 1) + p1 + r p2
//	d = −p1 d0 (1 + d0)
//
// whose root in the admissible interval is, in trigonometric form,
//
//	v = b³/(27a³) − bc/(6a²) + d/(2a)
//	u = sign(v) √(b²/(9a²) − c/(3a))
//	w = (π + arccos(v/u³)) / 3
//	p̃1 = 2u cos w − b/(3a),  p̃2 = p̃1 − d0
//
// ℓ is strictly concave on the interval and tends to −∞ at both ends, so
// the root is unique and strictly inside (0, 1) for both risks.
// RestrictedMLE panics unless p1 and p2 are in (0, 1), r > 0 and
// −1 < d0 < 1.
//
// References:
//
//	Miettinen O, Nurminen M (1985). Comparative analysis of two rates.
//	Stat Med 4:213–226.
//	Farrington CP, Manning G (1990). Stat Med 9:1447–1454.
func RestrictedMLE(p1, p2, r, d0 float64) (p1t, p2t float64) {
	checkMargin(p1, p2, d0)
	if !(r > 0) || math.IsInf(r, 1) {
		panic("power: ratio must be positive and finite")
	}
	a := 1 + r
	b := -(1 + r + p1 + r*p2 + d0*(r+2))
	c := d0*d0 + d0*(2*p1+r+1) + p1 + r*p2
	d := -p1 * d0 * (1 + d0)
	v := b*b*b/(27*a*a*a) - b*c/(6*a*a) + d/(2*a)
	u2 := b*b/(9*a*a) - c/(3*a)
	x := -b / (3 * a)
	if u2 > 0 {
		u := math.Copysign(math.Sqrt(u2), v)
		// Rounding can push the cosine a hair outside [−1, 1].
		t := math.Max(-1, math.Min(1, v/(u*u*u)))
		w := (math.Pi + math.Acos(t)) / 3
		x += 2 * u * math.Cos(w)
	}
	return x, x - d0
}

// checkMargin panics on risks outside (0, 1) or a margin outside (−1, 1).
func checkMargin(p1, p2, d0 float64) {
	if !(p1 > 0 && p1 < 1) || !(p2 > 0 && p2 < 1) {
		panic(fmt.Sprintf("power: proportions must be in (0, 1), got %v and %v", p1, p2))
	}
	if !(d0 > -1 && d0 < 1) {
		panic(fmt.Sprintf("power: margin must be in (-1, 1), got %v", d0))
	}
}

// marginSlack is how close to the margin a true difference counts as at
// the margin: decimal inputs such as 0.7 − 0.6 miss 0.1 by about 1e-17 in
// floating point, and would otherwise ask for some 1e33 participants.
const marginSlack = 1e-12

// side returns +1 when the alternative to p1 − p2 = d0 lies above d0 and
// −1 when it lies below: d0 < 0 means higher is better and the first group
// must not be worse by more than |d0|; d0 > 0 means lower is better. For
// d0 = 0 (superiority) the side is that of the true difference.
func side(p1, p2, d0 float64) float64 {
	switch {
	case d0 < 0:
		return 1
	case d0 > 0:
		return -1
	case p1 < p2:
		return -1
	}
	return 1
}

// variances returns V0 and V1, the variances of p̂1 − p̂2 per first-group
// participant under the null and the alternative (see [MarginMethod]).
func (m MarginMethod) variances(p1, p2, r, d0 float64) (v0, v1 float64) {
	v1 = p1*(1-p1) + p2*(1-p2)/r
	switch m {
	case FarringtonManning:
		p1t, p2t := RestrictedMLE(p1, p2, r, d0)
		return p1t*(1-p1t) + p2t*(1-p2t)/r, v1
	case Blackwelder:
		return v1, v1
	}
	panic("power: unknown margin method")
}

// NonInferiorityN returns the unrounded size n1 of the first group (the
// second has r·n1 members) for a one-sided test at level alpha of
// H0: p1 − p2 = d0 to reach the target power when the true risks are p1
// and p2:
//
//	n1 = [z_α √V0 + z_β √V1]² / (p1 − p2 − d0)²
//
// with z_α = [ZAlpha](alpha, 1), z_β = [ZPower](power) and V0, V1 as in
// [MarginMethod]; for [Blackwelder] this is (z_α + z_β)² V1 / (p1 − p2 − d0)².
//
// The margin d0 sets the direction: d0 < 0 (higher is better) tests
// against p1 − p2 > d0, d0 > 0 (lower is better) against p1 − p2 < d0, and
// d0 = 0 is a one-sided superiority test in the direction of the true
// difference. NonInferiorityN returns [ErrUnreachable] when the true
// difference is not on the alternative side of d0 (or within 1e-12 of it,
// which decimal rounding cannot tell from d0 itself), or when the target
// power is reached with no participants (a target below alpha), and
// [ErrNothingToDetect] when d0 = 0 and p1 = p2. It panics on risks outside
// (0, 1), d0 outside (−1, 1), r ≤ 0 or alpha, power outside (0, 1).
//
// References: Farrington & Manning (1990); Blackwelder (1982).
func (m MarginMethod) NonInferiorityN(p1, p2, r, d0, alpha, power float64) (float64, error) {
	checkMargin(p1, p2, d0)
	if !(r > 0) || math.IsInf(r, 1) {
		panic("power: ratio must be positive and finite")
	}
	za, zb := ZAlpha(alpha, 1), ZPower(power)
	if d0 == 0 && p1 == p2 {
		return math.NaN(), ErrNothingToDetect
	}
	e := side(p1, p2, d0) * (p1 - p2 - d0)
	if !(e > marginSlack) {
		return math.NaN(), ErrUnreachable
	}
	v0, v1 := m.variances(p1, p2, r, d0)
	s := za*math.Sqrt(v0) + zb*math.Sqrt(v1)
	if s <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return s * s / (e * e), nil
}

// NonInferiorityPower returns the power of the one-sided test at level
// alpha of H0: p1 − p2 = d0 with n1 and n2 members, inverting
// [MarginMethod.NonInferiorityN] with r = n2/n1:
//
//	power = Φ( (s (p1 − p2 − d0) √n1 − z_α √V0) / √V1 )
//
// where s = +1 when the alternative lies above d0 and −1 when below (see
// [MarginMethod.NonInferiorityN]). When the true difference is on the null
// side of d0 the power is at most alpha, as it should be, not the power
// of the mirrored alternative. It panics on sizes that are not positive
// and on the inputs NonInferiorityN panics on.
//
// References: Farrington & Manning (1990); Blackwelder (1982).
func (m MarginMethod) NonInferiorityPower(p1, p2, n1, n2, d0, alpha float64) float64 {
	checkMargin(p1, p2, d0)
	checkSizes(n1, n2)
	za := ZAlpha(alpha, 1)
	return normCDF(m.deviate(p1, p2, n1, n2, d0, side(p1, p2, d0), za))
}

// deviate returns the argument of Φ in the one-sided power towards side s.
func (m MarginMethod) deviate(p1, p2, n1, n2, d0, s, za float64) float64 {
	v0, v1 := m.variances(p1, p2, n2/n1, d0)
	return (s*(p1-p2-d0)*math.Sqrt(n1) - za*math.Sqrt(v0)) / math.Sqrt(v1)
}

func checkSizes(n1, n2 float64) {
	if !(n1 > 0 && n2 > 0) || math.IsInf(n1, 1) || math.IsInf(n2, 1) {
		panic("power: group sizes must be positive and finite")
	}
}

// EquivalencePower returns the power of two one-sided tests, each at level
// alpha, of H0: p1 − p2 ≤ −margin and H0: p1 − p2 ≥ +margin, with n1 and
// n2 members; equivalence is concluded when both reject. For each boundary
// b ∈ {−margin, +margin} the one-sided power of
// [MarginMethod.NonInferiorityPower] towards the inside of the interval is
// Φ(a_b) (for [FarringtonManning] with the restricted MLE at that
// boundary), and
//
//	power = max(0, Φ(a_−) + Φ(a_+) − 1)
//
// Justification: with the normal approximation to the difference of
// proportions, the two tests reject on the events A− and A+, and
// P(A− ∩ A+) = P(A−) + P(A+) − P(A− ∪ A+) ≥ P(A−) + P(A+) − 1 (Bonferroni).
// The bound is the standard closed form for the two one-sided tests; it is
// nearly exact once the power is worth having, because the two rejection
// regions then cover almost the whole distribution of the estimate, and it
// errs on the side of more participants. So the power never exceeds either
// one-sided power. margin must be in (0, 1); when |p1 − p2| ≥ margin the
// result is the (small) probability of wrongly concluding equivalence.
//
// References:
//
//	Schuirmann DJ (1987). A comparison of the two one-sided tests
//	procedure and the power approach for assessing the equivalence of
//	average bioavailability. J Pharmacokinet Biopharm 15:657–680.
//	Farrington & Manning (1990); Blackwelder (1982).
func (m MarginMethod) EquivalencePower(p1, p2, n1, n2, margin, alpha float64) float64 {
	checkEquivalence(p1, p2, margin)
	checkSizes(n1, n2)
	return m.equivalence(p1, p2, n1, n2, margin, ZAlpha(alpha, 1))
}

func (m MarginMethod) equivalence(p1, p2, n1, n2, margin, za float64) float64 {
	return tost(m.deviate(p1, p2, n1, n2, -margin, 1, za), m.deviate(p1, p2, n1, n2, margin, -1, za))
}

// tost returns max(0, Φ(a) + Φ(b) − 1) as Φ(min) − Φ(−max): subtracting
// the small upper tail of the larger deviate keeps the digits that
// 1 + x − 1 would lose, and the result stays below both one-sided powers
// in floating point too.
func tost(a, b float64) float64 {
	a, b = math.Min(a, b), math.Max(a, b)
	return math.Max(0, normCDF(a)-normCDF(-b))
}

func checkEquivalence(p1, p2, margin float64) {
	if !(margin > 0) {
		panic(fmt.Sprintf("power: equivalence margin must be positive, got %v", margin))
	}
	checkMargin(p1, p2, margin)
}

// EquivalenceN returns the unrounded size n1 of the first group (the second
// has r·n1 members) at which [MarginMethod.EquivalencePower] equals the
// target power. The power rises with n1, so the root is unique; it is
// bracketed by the one-sided sizes, since the equivalence power is below
// each one-sided power and above the target once both one-sided powers
// reach (1 + power)/2, and refined with [FindRoot].
//
// EquivalenceN returns [ErrUnreachable] when |p1 − p2| ≥ margin, to within
// 1e-12 for decimal rounding (the power then tends to 0, not 1), or when the target is reached with no
// participants.
func (m MarginMethod) EquivalenceN(p1, p2, r, margin, alpha, power float64) (float64, error) {
	checkEquivalence(p1, p2, margin)
	if !(r > 0) || math.IsInf(r, 1) {
		panic("power: ratio must be positive and finite")
	}
	za := ZAlpha(alpha, 1)
	ZPower(power) // validates power
	if math.Abs(p1-p2) >= margin-marginSlack {
		return math.NaN(), ErrUnreachable
	}
	f := func(n float64) float64 {
		if n <= 0 {
			// The limit n → 0 of the power: the effect term vanishes.
			v0lo, v1 := m.variances(p1, p2, r, -margin)
			v0hi, _ := m.variances(p1, p2, r, margin)
			s := math.Sqrt(v1)
			return tost(-za*math.Sqrt(v0lo)/s, -za*math.Sqrt(v0hi)/s) - power
		}
		return m.equivalence(p1, p2, n, r*n, margin, za) - power
	}
	if f(0) >= 0 {
		return math.NaN(), ErrUnreachable
	}
	bounds := [2]float64{-margin, margin}
	return equivalenceRoot(f, power, func(i int, pw float64) (float64, error) {
		return m.NonInferiorityN(p1, p2, r, bounds[i], alpha, pw)
	})
}
