package power

import (
	"fmt"
	"math"
)

// This file holds non-inferiority and equivalence of two risks on the ratio
// scale, first over second, by the score method of Farrington & Manning
// (1990). The null hypothesis puts the risk ratio p1/p2 at a margin ρ0 ≠ 1.
// With r = n2/n1 and q = 1 − p the test statistic is
//
//	Z = (p̂1 − ρ0 p̂2) / √(p̃1 q̃1/n1 + ρ0² p̃2 q̃2/n2)
//
// with p̃1 = ρ0 p̃2 the maximum-likelihood risks restricted to p1/p2 = ρ0
// (see [RestrictedMLERatio]). Per first-group participant the variances of
// p̂1 − ρ0 p̂2 under the null and under the alternative are
//
//	V0 = p̃1 q̃1 + ρ0² p̃2 q̃2 / r,  V1 = p1 q1 + ρ0² p2 q2 / r
//
// ρ0 > 1 means a higher risk is worse (H0: p1/p2 ≥ ρ0, the alternative
// lies below); ρ0 < 1 means a higher risk is better (H0: p1/p2 ≤ ρ0, the
// alternative lies above).

// RestrictedMLERatio returns the maximum-likelihood risks under the
// constraint p1 = ρ0 p2, given the risks p1, p2 (expected risks, or the
// observed proportions x1/n1 and x2/n2) and the allocation ratio
// r = n2/n1. With x = p̃2, the log-likelihood per first-group participant
//
//	ℓ(x) = p1 log(ρ0 x) + q1 log(1 − ρ0 x) + r [p2 log x + q2 log(1 − x)]
//
// is maximised over 0 ≤ x ≤ min(1, 1/ρ0). Multiplying the score ℓ′(x) by
// x (1 − x)(1 − ρ0 x), positive inside the interval, gives the quadratic
//
//	f(x) = a x² + b x + c
//	a = ρ0 (1 + r)
//	b = −(ρ0 + p1 + r + r ρ0 p2)
//	c = p1 + r p2
//
// f(0) = c ≥ 0, f(1) = r q2 (ρ0 − 1) and f(1/ρ0) = q1 (1 − ρ0)/ρ0, so f is
// not positive at the upper end of the interval and, f being convex, ℓ
// rises up to the smaller root and falls after it. The restricted MLE is
// that root, taken in the form that loses no digits when c is small:
//
//	p̃2 = 2c / (−b + √(b² − 4ac)),  p̃1 = ρ0 p̃2
//
// (the form −(b + √(b² − 4ac))/(2a) of the papers, rationalised; with N1,
// N2 and counts x11, x21 in place of 1, r, p1 and r p2 it is Farrington &
// Manning's). It holds on the boundary too: zero counts in both groups
// give p̃1 = p̃2 = 0, and when the maximum is at the end of the interval
// (say p1 = 1 and ρ0 > 1) the root is that end. At ρ0 = 1 it is the pooled
// risk (p1 + r p2)/(1 + r). When the two roots nearly coincide, as at some
// boundary counts, b² − 4ac cancels and would cost half the digits; the
// root is then found from the end of the interval instead (see
// ratioRootBelow).
//
// RestrictedMLERatio panics unless p1 and p2 are in [0, 1], r > 0 and
// ρ0 > 0, both finite.
//
// References:
//
//	Miettinen O, Nurminen M (1985). Comparative analysis of two rates.
//	Stat Med 4:213–226 (restricted estimates for the risk ratio).
//	Farrington CP, Manning G (1990). Test statistics and sample size
//	formulae for comparative binomial trials with null hypothesis of
//	non-zero risk difference or non-unity relative risk. Stat Med
//	9:1447–1454 (the quadratic for the relative risk).
func RestrictedMLERatio(p1, p2, r, rho0 float64) (p1t, p2t float64) {
	if !(p1 >= 0 && p1 <= 1) || !(p2 >= 0 && p2 <= 1) {
		panic(fmt.Sprintf("power: proportions must be in [0, 1], got %v and %v", p1, p2))
	}
	checkRatioAllocation(r)
	if !(rho0 > 0) || math.IsInf(rho0, 1) {
		panic(fmt.Sprintf("power: ratio margin must be positive and finite, got %v", rho0))
	}
	a := rho0 * (1 + r)
	b := -(rho0 + p1 + r + r*rho0*p2)
	c := p1 + r*p2
	e := math.Min(1, 1/rho0)
	var x float64
	if disc := b*b - 4*a*c; disc >= 0.01*b*b {
		x = 2 * c / (-b + math.Sqrt(disc))
	} else {
		x = e - ratioRootBelow(a, b, p1, p2, r, rho0, e)
	}
	x = math.Max(0, math.Min(x, e))
	return math.Min(1, rho0*x), x
}

// ratioRootBelow returns how far below the end e of the interval the
// smaller root of f lies, for roots so close together that b² − 4ac has
// cancelled (a double root, as at x1 = n1 and x2/n2 = ((1 + r)/ρ0 − 1)/r,
// would come out some 1e-8 off). Both roots straddle e, since f(e) ≤ 0.
// With x = e − y, f is
//
//	a y² − f′(e) y + f(e) = 0,  f′(e) = 2ae + b
//	f(1) = r q2 (ρ0 − 1) for ρ0 ≤ 1,  f(1/ρ0) = q1 (1 − ρ0)/ρ0 for ρ0 > 1
//
// whose discriminant f′(e)² − 4a f(e) is a sum of non-negative terms; the
// wanted root is y = (f′(e) + √D)/(2a), taken in whichever of its two
// algebraic forms avoids cancellation.
func ratioRootBelow(a, b, p1, p2, r, rho0, e float64) float64 {
	var fe float64
	if rho0 <= 1 {
		fe = r * (1 - p2) * (rho0 - 1)
	} else {
		fe = (1 - p1) * (1 - rho0) / rho0
	}
	d1 := 2*a*e + b
	sd := math.Sqrt(d1*d1 - 4*a*fe)
	if d1 >= 0 {
		return (d1 + sd) / (2 * a)
	}
	return -2 * fe / (sd - d1)
}

// checkRatioAllocation panics on an allocation ratio r = n2/n1 that is not
// positive and finite.
func checkRatioAllocation(r float64) {
	if !(r > 0) || math.IsInf(r, 1) {
		panic("power: ratio must be positive and finite")
	}
}

// checkRatioMargin panics on risks outside (0, 1) or a ratio margin that is
// not positive and finite or is 1.
func checkRatioMargin(p1, p2, rho0 float64) {
	if !(p1 > 0 && p1 < 1) || !(p2 > 0 && p2 < 1) {
		panic(fmt.Sprintf("power: proportions must be in (0, 1), got %v and %v", p1, p2))
	}
	checkRatioRho0(rho0)
}

func checkRatioRho0(rho0 float64) {
	if !(rho0 > 0) || math.IsInf(rho0, 1) || rho0 == 1 {
		panic(fmt.Sprintf("power: ratio margin must be positive, finite and not 1, got %v", rho0))
	}
}

// ratioSide returns −1 when the alternative to p1/p2 = ρ0 lies below ρ0
// (ρ0 > 1: a higher risk is worse) and +1 when it lies above (ρ0 < 1).
func ratioSide(rho0 float64) float64 {
	if rho0 > 1 {
		return -1
	}
	return 1
}

// ratioGap returns s (p1 − ρ0 p2), positive when the true ratio lies on
// the alternative side of ρ0, or 0 when the ratio is within a relative
// marginSlack of ρ0: decimal inputs such as 0.15 and 0.1 against ρ0 = 1.5
// miss the margin by about 3e-17 in floating point, and would otherwise
// ask for some 1e33 participants.
func ratioGap(p1, p2, rho0 float64) float64 {
	e := ratioSide(rho0) * (p1 - rho0*p2)
	if math.Abs(e) <= marginSlack*rho0*p2 {
		return 0
	}
	return e
}

// ratioVariances returns V0 and V1, the variances of p̂1 − ρ0 p̂2 per
// first-group participant under the null (at the restricted MLE) and under
// the alternative (at the true risks); r = n2/n1.
func ratioVariances(p1, p2, r, rho0 float64) (v0, v1 float64) {
	p1t, p2t := RestrictedMLERatio(p1, p2, r, rho0)
	k := rho0 * rho0 / r
	return p1t*(1-p1t) + k*p2t*(1-p2t), p1*(1-p1) + k*p2*(1-p2)
}

// RatioNonInferiorityN returns the unrounded size n1 of the first group
// (the second has r·n1 members) for the one-sided score test at level
// alpha of H0: p1/p2 = ρ0 to reach the target power when the true risks
// are p1 and p2 (Farrington & Manning 1990, the sample size for the
// relative risk):
//
//	n1 = [z_α √(p̃1 q̃1 + ρ0² p̃2 q̃2 / r) + z_β √(p1 q1 + ρ0² p2 q2 / r)]² / (p1 − ρ0 p2)²
//
// with p̃ the restricted MLE of [RestrictedMLERatio] at the true risks,
// z_α = [ZAlpha](alpha, 1) and z_β = [ZPower](power).
//
// ρ0 sets the direction: ρ0 > 1 (a higher risk is worse) tests against
// p1/p2 < ρ0, ρ0 < 1 (a higher risk is better) against p1/p2 > ρ0. Equal
// true risks (a true ratio of 1) are the usual case. RatioNonInferiorityN
// returns [ErrUnreachable] when the true ratio p1/p2 is not strictly on the
// alternative side of ρ0 (or within a relative 1e-12 of it, which decimal
// rounding cannot tell from ρ0 itself), or when the target power is
// reached with no participants (a target below alpha). It panics on risks
// outside (0, 1), ρ0 ≤ 0 or ρ0 = 1, r ≤ 0, or alpha and power outside
// (0, 1).
//
// References: Farrington CP, Manning G (1990). Stat Med 9:1447–1454;
// Miettinen O, Nurminen M (1985). Stat Med 4:213–226.
func RatioNonInferiorityN(p1, p2, r, rho0, alpha, power float64) (float64, error) {
	checkRatioMargin(p1, p2, rho0)
	checkRatioAllocation(r)
	za, zb := ZAlpha(alpha, 1), ZPower(power)
	e := ratioGap(p1, p2, rho0)
	if !(e > 0) {
		return math.NaN(), ErrUnreachable
	}
	v0, v1 := ratioVariances(p1, p2, r, rho0)
	s := za*math.Sqrt(v0) + zb*math.Sqrt(v1)
	if s <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return s * s / (e * e), nil
}

// RatioNonInferiorityPower returns the power of the one-sided score test
// at level alpha of H0: p1/p2 = ρ0 with n1 and n2 members, inverting
// [RatioNonInferiorityN] with r = n2/n1:
//
//	power = Φ( (s (p1 − ρ0 p2) √n1 − z_α √V0) / √V1 )
//
// with V0 and V1 per first-group participant as in [RatioNonInferiorityN],
// and s = −1 for ρ0 > 1, +1 for ρ0 < 1. The side is fixed by ρ0, so a
// true ratio beyond the margin never gets the power of the mirrored
// alternative: the effect term is then negative. At the margin the
// restricted MLE is the truth, V0 = V1, and the power is alpha. Beyond it
// the power is below alpha once
//
//	n1 ≥ [z_α (√V1 − √V0) / (p1 − ρ0 p2)]²
//
// which is every n1 when V0 ≥ V1, the usual case. With extreme risks V1
// can exceed V0 (p1 = 0.14, p2 = 0.005, r = 5, ρ0 = 1.05: V1 ≈ 3.6 V0), and
// at a handful of participants the approximation then gives more than
// alpha (0.044 at n1 = 3, n2 = 15, alpha 0.025); the result is not capped.
// It panics on sizes that are not positive and on the inputs
// RatioNonInferiorityN panics on.
//
// References: Farrington CP, Manning G (1990). Stat Med 9:1447–1454.
func RatioNonInferiorityPower(p1, p2, n1, n2, rho0, alpha float64) float64 {
	checkRatioMargin(p1, p2, rho0)
	checkSizes(n1, n2)
	return normCDF(ratioDeviate(p1, p2, n1, n2, rho0, ZAlpha(alpha, 1)))
}

// ratioDeviate returns the argument of Φ in the one-sided power against ρ0.
func ratioDeviate(p1, p2, n1, n2, rho0, za float64) float64 {
	v0, v1 := ratioVariances(p1, p2, n2/n1, rho0)
	return (ratioSide(rho0)*(p1-rho0*p2)*math.Sqrt(n1) - za*math.Sqrt(v0)) / math.Sqrt(v1)
}

// RatioEquivalencePower returns the power of two one-sided score tests,
// each at level alpha, of H0: p1/p2 ≤ 1/M and H0: p1/p2 ≥ M, with n1 and n2
// members; equivalence (a ratio inside (1/M, M)) is concluded when both
// reject. With Φ(a_lo) and Φ(a_hi) the one-sided powers of
// [RatioNonInferiorityPower] at ρ0 = 1/M and ρ0 = M,
//
//	power = max(0, Φ(a_lo) + Φ(a_hi) − 1)
//
// the Bonferroni lower bound on the probability that both tests reject,
// as for [MarginMethod.EquivalencePower] on the difference scale (see
// there for the justification). The power never exceeds either one-sided
// power; when p1/p2 is outside (1/M, M) it is the (small) probability of
// wrongly concluding equivalence. It panics unless M > 1 is finite, the
// risks are in (0, 1), the sizes are positive and alpha is in (0, 1).
//
// References:
//
//	Schuirmann DJ (1987). A comparison of the two one-sided tests
//	procedure and the power approach for assessing the equivalence of
//	average bioavailability. J Pharmacokinet Biopharm 15:657–680.
//	Farrington CP, Manning G (1990). Stat Med 9:1447–1454.
func RatioEquivalencePower(p1, p2, n1, n2, margin, alpha float64) float64 {
	checkRatioEquivalence(p1, p2, margin)
	checkSizes(n1, n2)
	return ratioEquivalence(p1, p2, n1, n2, margin, ZAlpha(alpha, 1))
}

func ratioEquivalence(p1, p2, n1, n2, margin, za float64) float64 {
	return tost(ratioDeviate(p1, p2, n1, n2, 1/margin, za), ratioDeviate(p1, p2, n1, n2, margin, za))
}

func checkRatioEquivalence(p1, p2, margin float64) {
	if !(margin > 1) || math.IsInf(margin, 1) {
		panic(fmt.Sprintf("power: ratio equivalence margin must be above 1 and finite, got %v", margin))
	}
	checkRatioMargin(p1, p2, margin)
}

// RatioEquivalenceN returns the unrounded size n1 of the first group (the
// second has r·n1 members) at which [RatioEquivalencePower] equals the
// target power, by [FindRoot]. The power rises with n1 while the true
// ratio is inside (1/M, M), so the root is unique. It is at least each
// one-sided size at the target power (the equivalence power is below each
// one-sided power), and at most the larger one-sided size at power
// (1 + power)/2 (where both one-sided powers make the bound reach the
// target); that upper end is doubled until the power there reaches the
// target, in case rounding leaves it a hair short.
//
// RatioEquivalenceN returns [ErrUnreachable] when p1/p2 is not strictly
// inside (1/M, M), to within a relative 1e-12 for decimal rounding (the
// power then tends to 0, not 1). The target is never reached with no
// participants: as n1 → 0 both deviates tend to −z_α √(V0/V1) < 0, and the
// bound to 0. It panics on the inputs [RatioEquivalencePower] panics on,
// r ≤ 0 and power outside (0, 1).
//
// References: Farrington CP, Manning G (1990). Stat Med 9:1447–1454;
// Schuirmann DJ (1987). J Pharmacokinet Biopharm 15:657–680.
func RatioEquivalenceN(p1, p2, r, margin, alpha, power float64) (float64, error) {
	checkRatioEquivalence(p1, p2, margin)
	checkRatioAllocation(r)
	za := ZAlpha(alpha, 1)
	ZPower(power) // validates power
	if !(ratioGap(p1, p2, 1/margin) > 0 && ratioGap(p1, p2, margin) > 0) {
		return math.NaN(), ErrUnreachable
	}
	f := func(n float64) float64 {
		if n <= 0 {
			return -power // the n → 0 limit of the power is 0
		}
		return ratioEquivalence(p1, p2, n, r*n, margin, za) - power
	}
	bounds := [2]float64{1 / margin, margin}
	return equivalenceRoot(f, power, func(i int, pw float64) (float64, error) {
		return RatioNonInferiorityN(p1, p2, r, bounds[i], alpha, pw)
	})
}

// equivalenceRoot returns the n at which f(n) = power(n) − target crosses
// zero, for two one-sided tests whose power is max(0, P1 + P2 − 1) and
// rises with n; oneSided(i, pw) is the one-sided size at which test i
// (0 or 1) has power pw. The bracket: f(0) < 0; the equivalence power is
// below each one-sided power, so the larger one-sided size at the target
// is a lower end; it reaches the target once both one-sided powers reach
// (1 + target)/2, so the larger one-sided size at that power is an upper
// end, doubled while rounding leaves f a hair below zero there. It returns
// [ErrUnreachable] if 64 doublings do not reach the target. The same
// bracket serves [MarginMethod.EquivalenceN] on the difference scale.
func equivalenceRoot(f func(n float64) float64, target float64, oneSided func(i int, pw float64) (float64, error)) (float64, error) {
	hi := 0.0
	for i := 0; i < 2; i++ {
		if n, err := oneSided(i, (1+target)/2); err == nil {
			hi = math.Max(hi, n)
		}
	}
	if hi == 0 {
		hi = 1
	}
	for i := 0; f(hi) < 0; i++ {
		if i == 64 {
			return math.NaN(), ErrUnreachable
		}
		hi *= 2
	}
	lo := 0.0
	for i := 0; i < 2; i++ {
		if n, err := oneSided(i, target); err == nil && n < hi && f(n) < 0 {
			lo = math.Max(lo, n)
		}
	}
	return FindRoot(f, lo, hi, 1e-12*hi)
}
