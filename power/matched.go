package power

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mathext"
)

// This file holds the closed forms and exact powers of matched
// case-control designs: Dupont's power for 1:M matched sets analysed by
// the Mantel–Haenszel (conditional) test, Connor's and Schlesselman's
// formulas for 1:1 pairs, and the exact power of McNemar's tests by
// enumeration. The simulation model is in matchedsim.go.

// MaxMatchedControls is the largest number of controls per case that
// [MatchedSets] accepts.
const MaxMatchedControls = 10

// ErrMatchedInfeasible is returned when the correlation of exposure within
// matched sets is too large for the control exposure and odds ratio: the
// probability that a control is exposed given that the case is exposed
// would exceed 1, or given that the case is unexposed would fall below 0.
// The largest feasible correlation is [MaxMatchedCorrelation](ψ) =
// min(√ψ, 1/√ψ), whatever the control exposure.
var ErrMatchedInfeasible = errors.New("power: the exposure correlation within matched sets is too large for this odds ratio")

// MatchedSets describes a matched case-control study of sets of one case
// and Controls controls, in Dupont's (1988) model of exposure within sets:
// a case is exposed with probability
//
//	p1 = p0 ψ / (1 + p0 (ψ − 1))
//
// and, given the case's exposure, the set's controls are exposed
// independently, with the probabilities ([MatchedSets.Conditional])
//
//	p₀₊ = (p0 p1 + φ √(p1 q1 p0 q0)) / p1   (the case is exposed)
//	p₀₋ = (p0 q1 − φ √(p1 q1 p0 q0)) / q1   (the case is unexposed)
//
// (q = 1 − p): the 2 × 2 joint distribution of the exposures of the case
// and one control with margins p1 and p0 and correlation φ. Each control is
// exposed with probability p0 overall.
//
// References: Dupont WD (1988). Power calculations for matched case-control
// studies. Biometrics 44:1157–1168.
type MatchedSets struct {
	// ControlExposure is p0, the probability that a control is exposed; it
	// must be in (0, 1).
	ControlExposure float64
	// OddsRatio is ψ, the odds ratio of exposure between cases and
	// controls; it must be positive and finite.
	OddsRatio float64
	// Controls is M, the number of controls per case, from 1 to
	// [MaxMatchedControls].
	Controls int
	// Correlation is φ, the correlation between the exposures of the case
	// and of each control of a set; it must be in [0, 1). Values above
	// [MaxMatchedCorrelation] are infeasible ([ErrMatchedInfeasible]).
	Correlation float64
}

// check panics unless the fields are in range.
func (s MatchedSets) check() {
	if !(s.ControlExposure > 0 && s.ControlExposure < 1) {
		panic(fmt.Sprintf("power: control exposure %v out of (0, 1)", s.ControlExposure))
	}
	if !(s.OddsRatio > 0) || math.IsInf(s.OddsRatio, 1) {
		panic(fmt.Sprintf("power: odds ratio %v must be positive and finite", s.OddsRatio))
	}
	if s.Controls < 1 || s.Controls > MaxMatchedControls {
		panic(fmt.Sprintf("power: %d controls per case out of 1..%d", s.Controls, MaxMatchedControls))
	}
	if !(s.Correlation >= 0 && s.Correlation < 1) {
		panic(fmt.Sprintf("power: within-set correlation %v out of [0, 1)", s.Correlation))
	}
}

// checkPairs panics unless the sets are valid pairs (one control per case).
func (s MatchedSets) checkPairs() {
	s.check()
	if s.Controls != 1 {
		panic("power: a method for matched pairs needs Controls = 1")
	}
}

// MaxMatchedCorrelation returns the largest within-set correlation φ of
// exposure that [MatchedSets] allows at odds ratio psi:
//
//	φ_max = min(√ψ, 1/√ψ)
//
// Setting p₀₊ ≤ 1 gives φ ≤ √(p1 q0 / (p0 q1)) and p₀₋ ≥ 0 gives
// φ ≤ √(p0 q1 / (p1 q0)), and p1 q0 / (p0 q1) = ψ, so the bound does not
// depend on the control exposure. (At ψ = 1 it is 1, which the
// correlation itself must stay below.) It panics unless psi is positive and
// finite.
func MaxMatchedCorrelation(psi float64) float64 {
	if !(psi > 0) || math.IsInf(psi, 1) {
		panic(fmt.Sprintf("power: odds ratio %v must be positive and finite", psi))
	}
	r := math.Sqrt(psi)
	return math.Min(r, 1/r)
}

// CaseExposure returns p1, the probability that a case is exposed (see
// [CaseExposure]).
func (s MatchedSets) CaseExposure() float64 {
	s.check()
	return CaseExposure(s.ControlExposure, s.OddsRatio)
}

// matchedTol is the rounding slack allowed when a conditional probability
// lands just outside [0, 1] at the largest feasible correlation.
const matchedTol = 1e-12

// Conditional returns the probabilities that a control is exposed given
// that the case of its set is exposed (pPlus) or unexposed (pMinus):
//
//	p₀₊ = (p0 p1 + φ √(p1 q1 p0 q0)) / p1
//	p₀₋ = (p0 q1 − φ √(p1 q1 p0 q0)) / q1
//
// It returns [ErrMatchedInfeasible] when either falls outside [0, 1]
// (beyond a rounding slack of 1e-12, which is clamped). It panics on
// fields out of range.
//
// References: Dupont (1988), section 2.
func (s MatchedSets) Conditional() (pPlus, pMinus float64, err error) {
	s.check()
	p0, phi := s.ControlExposure, s.Correlation
	p1 := CaseExposure(p0, s.OddsRatio)
	q0, q1 := 1-p0, 1-p1
	cov := phi * math.Sqrt(p1*q1*p0*q0)
	pPlus = (p0*p1 + cov) / p1
	pMinus = (p0*q1 - cov) / q1
	if pPlus > 1+matchedTol || pMinus < -matchedTol {
		return math.NaN(), math.NaN(), ErrMatchedInfeasible
	}
	return math.Min(pPlus, 1), math.Max(pMinus, 0), nil
}

// setProbs returns, for m = 1..M exposed members of a set, t[m−1], the
// probability that a set has m exposed members (Dupont 1988):
//
//	t_m = p1 C(M, m−1) p₀₊^(m−1) q₀₊^(M−m+1) + q1 C(M, m) p₀₋^m q₀₋^(M−m)
func (s MatchedSets) setProbs() ([]float64, error) {
	pp, pm, err := s.Conditional()
	if err != nil {
		return nil, err
	}
	p1 := CaseExposure(s.ControlExposure, s.OddsRatio)
	M := s.Controls
	plus := binomPMF(M, pp, nil)  // exposed controls when the case is exposed
	minus := binomPMF(M, pm, nil) // ... when it is not
	t := make([]float64, M)
	for m := 1; m <= M; m++ {
		t[m-1] = p1*plus[m-1] + (1-p1)*minus[m]
	}
	return t, nil
}

// DiscordantPerSet returns the probability that a set is informative for
// the conditional analysis (at least one member exposed and one not),
//
//	Σ_{m=1..M} t_m = 1 − q1 q₀₋^M − p1 p₀₊^M
//
// that is, the expected number of informative sets per set; for pairs it
// is the probability of a discordant pair, p10 + p01. It returns
// [ErrMatchedInfeasible] as [MatchedSets.Conditional].
//
// References: Dupont (1988).
func (s MatchedSets) DiscordantPerSet() (float64, error) {
	t, err := s.setProbs()
	if err != nil {
		return math.NaN(), err
	}
	sum := 0.0
	for _, v := range t {
		sum += v
	}
	return sum, nil
}

// dupontMoments returns D, V0 and V1 of [MatchedSets.DupontSets].
func (s MatchedSets) dupontMoments() (d, v0, v1 float64, err error) {
	t, err := s.setProbs()
	if err != nil {
		return math.NaN(), math.NaN(), math.NaN(), err
	}
	M := float64(s.Controls)
	psi := s.OddsRatio
	for i, tm := range t {
		m := float64(i + 1)
		e := m * psi / (m*psi + M - m + 1)
		e0 := m / (M + 1)
		d += tm * (e - e0)
		v0 += tm * e0 * (1 - e0)
		v1 += tm * e * (1 - e)
	}
	return d, v0, v1, nil
}

// DupontSets returns the unrounded number of matched sets needed for the
// target power when the sets are analysed by the Mantel–Haenszel test
// stratified by set (the conditional score test), at level alpha with
// sides tails:
//
//	n = (z_{1−α/s} √V0 + z_power √V1)² / D²
//	D  = Σ_{m=1..M} t_m (e_m − e⁰_m)
//	V0 = Σ t_m e⁰_m (1 − e⁰_m),   V1 = Σ t_m e_m (1 − e_m)
//	e_m = m ψ / (m ψ + M − m + 1),   e⁰_m = m / (M + 1)
//
// where t_m is the probability that a set has m exposed members (see
// [MatchedSets.DiscordantPerSet]) and e_m the probability that the case is
// one of them under the conditional logistic model with odds ratio ψ (e⁰_m
// under ψ = 1). V1 is the variance conditional on the sets' numbers of
// exposed members, as in Dupont's derivation.
//
// With φ > 0 the e_m are not the probabilities that the data model of
// [MatchedSets] itself implies: for pairs the model's matched odds ratio
// p10/p01 = (ψ p0 q1 − φ s)/(p0 q1 − φ s), s = √(p1 q1 p0 q0), lies
// further from 1 than ψ. The formula then keeps the conditional odds ratio
// ψ and lets the correlation only thin the informative sets; a simulation
// of the data model ([NewMatchedSim]) gives a higher power in every case of
// testdata/reference/matched_README.md. At φ = 0 the two agree, and with
// one control the formula equals [MatchedSets.SchlesselmanPairs].
//
// It returns [ErrNothingToDetect] when ψ = 1, [ErrUnreachable] when the
// target power is reached with no sets (a power barely above alpha), and
// [ErrMatchedInfeasible] as [MatchedSets.Conditional]. It panics on fields
// or arguments out of range.
//
// References: Dupont WD (1988). Power calculations for matched case-control
// studies. Biometrics 44:1157–1168.
func (s MatchedSets) DupontSets(alpha float64, sides int, power float64) (float64, error) {
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	d, v0, v1, err := s.dupontMoments()
	if err != nil {
		return math.NaN(), err
	}
	if d == 0 {
		return math.NaN(), ErrNothingToDetect
	}
	num := za*math.Sqrt(v0) + zb*math.Sqrt(v1)
	if num <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return num * num / (d * d), nil
}

// DupontPower returns the power of the Mantel–Haenszel test with the given
// number of matched sets, the inverse of [MatchedSets.DupontSets]:
//
//	power = Φ((√n |D| − z_{1−α/s} √V0) / √V1)
//
// As in the published formula, it counts rejections in the direction of
// the true effect only; at ψ = 1 it is α/s. It returns
// [ErrMatchedInfeasible] as [MatchedSets.Conditional] and panics unless
// sets > 0 and the other arguments are in range.
//
// References: Dupont (1988).
func (s MatchedSets) DupontPower(sets, alpha float64, sides int) (float64, error) {
	if !(sets > 0) {
		panic("power: the number of sets must be positive")
	}
	za := ZAlpha(alpha, sides)
	d, v0, v1, err := s.dupontMoments()
	if err != nil {
		return math.NaN(), err
	}
	return normCDF((math.Sqrt(sets)*math.Abs(d) - za*math.Sqrt(v0)) / math.Sqrt(v1)), nil
}

// PairProbabilities returns, for matched pairs, the probabilities of the
// two kinds of discordant pair:
//
//	p10 = P(case exposed, control not) = p1 q₀₊
//	p01 = P(case not, control exposed) = q1 p₀₋
//
// Their difference is p1 − p0 whatever the correlation. It returns
// [ErrMatchedInfeasible] as [MatchedSets.Conditional] and panics unless
// Controls = 1.
func (s MatchedSets) PairProbabilities() (p10, p01 float64, err error) {
	s.checkPairs()
	pp, pm, err := s.Conditional()
	if err != nil {
		return math.NaN(), math.NaN(), err
	}
	p1 := CaseExposure(s.ControlExposure, s.OddsRatio)
	return p1 * (1 - pp), (1 - p1) * pm, nil
}

// ConnorPairs returns the unrounded number of matched pairs needed for the
// target power with McNemar's test, unconditionally on the number of
// discordant pairs:
//
//	n = (z_{1−α/s} √p_d + z_power √(p_d − δ²))² / δ²
//	p_d = p10 + p01,   δ = p10 − p01
//
// with p10 and p01 from [MatchedSets.PairProbabilities]. For φ = 0 it
// exceeds [MatchedSets.DupontSets] at any target power above ½ (they agree
// at ½): Dupont's alternative variance, conditional on the number of
// discordant pairs, is p_d − δ²/p_d, Connor's is p_d − δ²; Connor's is
// Dupont's formula with V1 replaced by the unconditional variance.
//
// It returns [ErrNothingToDetect] when ψ = 1, [ErrUnreachable] when the
// target is reached with no pairs, and [ErrMatchedInfeasible] as
// [MatchedSets.Conditional]. It panics unless Controls = 1 and the
// arguments are in range.
//
// References: Connor RJ (1987). Sample size for testing differences in
// proportions for the paired-sample design. Biometrics 43:207–211.
func (s MatchedSets) ConnorPairs(alpha float64, sides int, power float64) (float64, error) {
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	p10, p01, err := s.PairProbabilities()
	if err != nil {
		return math.NaN(), err
	}
	pd, delta := p10+p01, p10-p01
	if delta == 0 {
		return math.NaN(), ErrNothingToDetect
	}
	num := za*math.Sqrt(pd) + zb*math.Sqrt(pd-delta*delta)
	if num <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return num * num / (delta * delta), nil
}

// ConnorPower returns the power of McNemar's test with the given number of
// pairs, the inverse of [MatchedSets.ConnorPairs]:
//
//	power = Φ((√n |δ| − z_{1−α/s} √p_d) / √(p_d − δ²))
//
// counting rejections in the direction of the true effect only. It returns
// [ErrMatchedInfeasible] as [MatchedSets.Conditional] and panics unless
// Controls = 1, pairs > 0 and the other arguments are in range.
//
// References: Connor (1987).
func (s MatchedSets) ConnorPower(pairs, alpha float64, sides int) (float64, error) {
	if !(pairs > 0) {
		panic("power: the number of pairs must be positive")
	}
	za := ZAlpha(alpha, sides)
	p10, p01, err := s.PairProbabilities()
	if err != nil {
		return math.NaN(), err
	}
	pd, delta := p10+p01, p10-p01
	return normCDF((math.Sqrt(pairs)*math.Abs(delta) - za*math.Sqrt(pd)) / math.Sqrt(pd-delta*delta)), nil
}

// SchlesselmanPairs returns Schlesselman's number of discordant pairs and
// the unrounded total number of matched pairs needed for the target
// power:
//
//	P = ψ / (1 + ψ)
//	discordant = (z_{1−α/s}/2 + z_power √(P (1 − P)))² / (P − ½)²
//	pairs = discordant / p_e,   p_e = p0 q1 + p1 q0
//
// p_e is the probability of a discordant pair when the exposures of a
// case and its control are independent: the approximation ignores the
// correlation, and Correlation is not used. (It is
// [MatchedSets.DupontSets] with one control and φ = 0.)
//
// It returns [ErrNothingToDetect] when ψ = 1 and [ErrUnreachable] when the
// target is reached with no pairs. It panics unless Controls = 1 and the
// arguments are in range.
//
// References: Schlesselman JJ (1982). Case-Control Studies: Design,
// Conduct, Analysis. Oxford University Press, chapter 6.
func (s MatchedSets) SchlesselmanPairs(alpha float64, sides int, power float64) (pairs, discordant float64, err error) {
	s.checkPairs()
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	P := s.OddsRatio / (1 + s.OddsRatio)
	if P == 0.5 {
		return math.NaN(), math.NaN(), ErrNothingToDetect
	}
	num := za/2 + zb*math.Sqrt(P*(1-P))
	if num <= 0 {
		return math.NaN(), math.NaN(), ErrUnreachable
	}
	discordant = num * num / sq(P-0.5)
	return discordant / s.discordantIndependent(), discordant, nil
}

// discordantIndependent is p_e = p0 q1 + p1 q0.
func (s MatchedSets) discordantIndependent() float64 {
	p0 := s.ControlExposure
	p1 := CaseExposure(p0, s.OddsRatio)
	return p0*(1-p1) + p1*(1-p0)
}

// SchlesselmanPower returns the power with the given number of pairs, the
// inverse of [MatchedSets.SchlesselmanPairs] with n p_e discordant pairs
// expected:
//
//	power = Φ((√(n p_e) |P − ½| − z_{1−α/s}/2) / √(P (1 − P)))
//
// counting rejections in the direction of the true effect only;
// Correlation is not used. It panics unless Controls = 1, pairs > 0 and
// the other arguments are in range.
//
// References: Schlesselman (1982), chapter 6.
func (s MatchedSets) SchlesselmanPower(pairs, alpha float64, sides int) float64 {
	s.checkPairs()
	if !(pairs > 0) {
		panic("power: the number of pairs must be positive")
	}
	za := ZAlpha(alpha, sides)
	P := s.OddsRatio / (1 + s.OddsRatio)
	m := pairs * s.discordantIndependent()
	return normCDF((math.Sqrt(m)*math.Abs(P-0.5) - za/2) / math.Sqrt(P*(1-P)))
}

// mcnemarTailCut bounds the probability of the discordant counts that the
// exact powers leave out.
const mcnemarTailCut = 1e-16

// McNemarExactPower returns the exact power of McNemar's z test without
// continuity correction,
//
//	z = (n10 − n01) / √(n10 + n01)
//
// with the given number of pairs: two-sided it rejects when
// |z| > z_{1−α/2}, one-sided when dir·z > z_{1−α} (dir = +1 for ψ > 1,
// −1 for ψ < 1); no discordant pair never rejects. The power is summed
// over the number of discordant pairs d ~ Binomial(n, p_d) and
// n10 | d ~ Binomial(d, p10/p_d):
//
//	power = Σ_d b(d; n, p_d) P(n10 rejects | d)
//
// The inner sums are binomial tails, from the regularised incomplete beta
// function; the outer one runs outward from the mode of d and stops where
// the probability left out is below 1e-16, so the work grows as √n: about
// 17,000 incomplete beta functions, a few tens of milliseconds, at a
// million pairs. At ψ = 1 it is the exact size of the test.
//
// It returns [ErrMatchedInfeasible] as [MatchedSets.Conditional] and panics
// unless Controls = 1, pairs ≥ 1 and the test is valid.
//
// References: McNemar Q (1947). Note on the sampling error of the
// difference between correlated proportions or percentages.
// Psychometrika 12:153–157.
func (s MatchedSets) McNemarExactPower(pairs int, alpha float64, sides, dir int) (float64, error) {
	return s.mcnemarPower(pairs, alpha, sides, dir, false, false)
}

// McNemarExactPowerWithinSets is [MatchedSets.McNemarExactPower] in the
// within-set reading of the odds ratio that Dupont's (1988) formula takes
// (see [MatchedSim]): a pair is discordant with the model's probability
// p_d = t_1 ([MatchedSets.DiscordantPerSet]), and a discordant pair's case
// is the exposed member with probability ψ/(1 + ψ):
//
//	power = Σ_d b(d; n, t_1) P(n10 rejects | d),  n10 | d ~ Binomial(d, ψ/(1 + ψ))
//
// At Correlation 0 the two readings coincide.
func (s MatchedSets) McNemarExactPowerWithinSets(pairs int, alpha float64, sides, dir int) (float64, error) {
	return s.mcnemarPower(pairs, alpha, sides, dir, false, true)
}

// McNemarBinomialPower is [MatchedSets.McNemarExactPower] for the exact
// (conditional) McNemar test: given d discordant pairs, n10 is tested
// against Binomial(d, ½). With U(k) = P(Binomial(d, ½) ≥ k), a one-sided
// test with dir = +1 rejects when U(n10) ≤ α (dir = −1: when
// U(d − n10) ≤ α), and a two-sided test when U(max(n10, n01)) ≤ α/2 with
// n10 ≠ n01, the binomial test's p-value 2U being at most α.
//
// References: McNemar (1947); the binomial (sign) test of the discordant
// pairs given their number is common practice.
func (s MatchedSets) McNemarBinomialPower(pairs int, alpha float64, sides, dir int) (float64, error) {
	return s.mcnemarPower(pairs, alpha, sides, dir, true, false)
}

func (s MatchedSets) mcnemarPower(pairs int, alpha float64, sides, dir int, binomial, within bool) (float64, error) {
	checkTest(alpha, sides, dir)
	if pairs < 1 {
		panic("power: McNemar's test needs at least one pair")
	}
	p10, p01, err := s.PairProbabilities()
	if err != nil {
		return math.NaN(), err
	}
	pd := p10 + p01
	pi := p10 / pd
	if within {
		pi = s.OddsRatio / (1 + s.OddsRatio)
	}
	var crit func(d int) int
	if binomial {
		crit = binomialCrit(alpha / float64(sides))
	} else {
		crit = zCrit(ZAlpha(alpha, sides))
	}
	// reject returns P(the test rejects | d): ku is the smallest n10 the
	// upper tail rejects, and by symmetry d − ku the largest the lower
	// tail rejects.
	reject := func(d int) float64 {
		if d == 0 {
			return 0
		}
		ku := crit(d)
		if ku > d {
			return 0
		}
		up, lo := 0.0, 0.0
		if sides == 2 || dir > 0 {
			up = binomUpper(d, pi, ku)
		}
		if sides == 2 || dir < 0 {
			lo = binomUpper(d, 1-pi, ku) // P(n01 ≥ ku) = P(n10 ≤ d − ku)
		}
		return up + lo
	}
	return sumBinomialOutward(pairs, pd, reject), nil
}

// zCrit returns, for McNemar's z test with critical value c, the function
// giving the smallest n10 of d discordant pairs with (2 n10 − d)/√d > c,
// as that inequality is evaluated in floating point.
func zCrit(c float64) func(d int) int {
	return func(d int) int {
		sd := math.Sqrt(float64(d))
		z := func(k int) float64 { return float64(2*k-d) / sd }
		k := int(math.Floor((float64(d)+c*sd)/2)) + 1
		k = max(k, 0)
		for k > 0 && z(k-1) > c {
			k--
		}
		for k <= d && !(z(k) > c) {
			k++
		}
		return k
	}
}

// binomialCrit returns, for the exact McNemar test with tail level a, the
// function giving the smallest k with P(Binomial(d, ½) ≥ k) ≤ a.
func binomialCrit(a float64) func(d int) int {
	z := ZAlpha(math.Min(a, 0.5), 1) // the normal approximation's start
	return func(d int) int {
		u := func(k int) float64 { return binomUpper(d, 0.5, k) }
		k := int(math.Ceil(float64(d)/2 + z*math.Sqrt(float64(d))/2))
		k = min(max(k, 0), d+1)
		for k > 0 && u(k-1) <= a {
			k--
		}
		for k <= d && !(u(k) <= a) {
			k++
		}
		return k
	}
}

// binomUpper returns P(X ≥ k) for X ~ Binomial(n, p): the regularised
// incomplete beta function I_p(k, n − k + 1).
func binomUpper(n int, p float64, k int) float64 {
	switch {
	case k <= 0:
		return 1
	case k > n:
		return 0
	case p <= 0:
		return 0
	case p >= 1:
		return 1
	}
	return mathext.RegIncBeta(float64(k), float64(n-k+1), p)
}

// sumBinomialOutward returns Σ_d b(d; n, p) g(d) over the d that carry all
// but mcnemarTailCut of the probability: the weights are built by the
// ratio recursion outward from the mode (relative to 1 there) and
// normalised by their sum. Past the mode the ratios fall, so the weight
// left beyond d is below w_d ρ/(1 − ρ), ρ the next ratio; the walk stops
// when that bound is below the cut.
func sumBinomialOutward(n int, p float64, g func(d int) float64) float64 {
	switch {
	case p <= 0:
		return g(0)
	case p >= 1:
		return g(n)
	}
	odds := p / (1 - p)
	mode := min(n, int(float64(n+1)*p))
	total, acc := 1.0, g(mode)
	w := 1.0
	for d := mode; d < n; d++ {
		rho := float64(n-d) / float64(d+1) * odds
		if rho < 1 && w*rho/(1-rho) < mcnemarTailCut {
			break
		}
		w *= rho
		total += w
		acc += w * g(d+1)
	}
	w = 1.0
	for d := mode; d > 0; d-- {
		rho := float64(d) / (float64(n-d+1) * odds)
		if rho < 1 && w*rho/(1-rho) < mcnemarTailCut {
			break
		}
		w *= rho
		total += w
		acc += w * g(d-1)
	}
	return math.Min(1, acc/total)
}
