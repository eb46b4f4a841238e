package power

import (
	"fmt"
	"math"
)

// TwoProportions describes the comparison of two independent proportions:
// the risk (or exposure prevalence) P1 in the first group against P2 in the
// second, tested at level Alpha with Sides tails.
type TwoProportions struct {
	// P1 is the proportion in the first group; it must be in (0, 1).
	P1 float64
	// P2 is the proportion in the second group; it must be in (0, 1).
	P2 float64
	// Alpha is the significance level; it must be in (0, 1).
	Alpha float64
	// Sides is 1 or 2.
	Sides int
}

func (tp TwoProportions) check() {
	if !(tp.P1 > 0 && tp.P1 < 1) || !(tp.P2 > 0 && tp.P2 < 1) {
		panic(fmt.Sprintf("power: proportions must be in (0, 1), got %v and %v", tp.P1, tp.P2))
	}
}

// Method is a closed-form method for comparing two independent proportions.
type Method int

// The closed-form methods for two proportions.
const (
	// Fleiss is the normal-approximation formula for unequal groups without
	// continuity correction, with the pooled variance under the null
	// hypothesis and the unpooled variance under the alternative:
	//
	//	n' = [z_α √((r+1) p̄ q̄) + z_β √(r p1 q1 + p2 q2)]² / (r Δ²)
	//	p̄ = (p1 + r p2)/(1 + r),  Δ = |p1 − p2|,  r = n2/n1
	//
	// References: Fleiss JL, Levin B, Paik MC (2003). Statistical Methods
	// for Rates and Proportions, 3rd ed. Wiley, chapter 4.
	Fleiss Method = iota + 1

	// FleissCC is [Fleiss] with the continuity correction of Fleiss, Tytun
	// and Ury, for analysis by the chi-square test with Yates' correction:
	//
	//	n = n'/4 · [1 + √(1 + 2(r+1)/(n' r Δ))]²
	//
	// References: Fleiss JL, Tytun A, Ury HK (1980). A simple approximation
	// for calculating sample sizes for comparing independent proportions.
	// Biometrics 36:343–346.
	FleissCC

	// Kelsey uses the pooled variance p̄ q̄ in both the alpha and the power
	// term, without continuity correction:
	//
	//	n1 = (z_α + z_β)² p̄ q̄ (r+1) / (r Δ²)
	//
	// References: Kelsey JL, Whittemore AS, Evans AS, Thompson WD (1996).
	// Methods in Observational Epidemiology, 2nd ed. Oxford University Press.
	Kelsey

	// Schlesselman is the case-control form: the exposure prevalence among
	// cases p1 follows from that among controls p0 and the odds ratio ψ
	// (see [CaseExposure]), and the number of cases for c controls per case is
	//
	//	n = [z_α √((1 + 1/c) p̄ q̄) + z_β √(p1 q1 + p0 q0/c)]² / (p1 − p0)²
	//
	// which is algebraically the [Fleiss] formula with r = c.
	//
	// References: Schlesselman JJ (1982). Case-Control Studies: Design,
	// Conduct, Analysis. Oxford University Press, chapter 6.
	Schlesselman
)

// String returns the method's identifier as used in specifications.
func (m Method) String() string {
	switch m {
	case Fleiss:
		return "fleiss"
	case FleissCC:
		return "fleiss-cc"
	case Kelsey:
		return "kelsey"
	case Schlesselman:
		return "schlesselman"
	}
	return fmt.Sprintf("Method(%d)", int(m))
}

// pooled returns p̄ q̄ for the allocation ratio r = n2/n1.
func pooled(p1, p2, r float64) float64 {
	pbar := (p1 + r*p2) / (1 + r)
	return pbar * (1 - pbar)
}

// N returns the unrounded size n* of the first group needed for the target
// power with allocation ratio r (the second group has r·n* members).
// It returns [ErrNothingToDetect] when P1 = P2 and [ErrUnreachable] when the
// formula already gives the target power with no participants (a target
// power barely above alpha).
func (m Method) N(tp TwoProportions, r, power float64) (float64, error) {
	tp.check()
	if !(r > 0) {
		panic("power: ratio must be positive")
	}
	d := math.Abs(tp.P1 - tp.P2)
	if d == 0 {
		return math.NaN(), ErrNothingToDetect
	}
	za, zb := ZAlpha(tp.Alpha, tp.Sides), ZPower(power)
	v0 := pooled(tp.P1, tp.P2, r)
	switch m {
	case Kelsey:
		if za+zb <= 0 {
			return math.NaN(), ErrUnreachable
		}
		return (za + zb) * (za + zb) * v0 * (r + 1) / (r * d * d), nil
	case Fleiss, FleissCC, Schlesselman:
		v1 := r*tp.P1*(1-tp.P1) + tp.P2*(1-tp.P2)
		s := za*math.Sqrt((r+1)*v0) + zb*math.Sqrt(v1)
		if s <= 0 {
			return math.NaN(), ErrUnreachable
		}
		n := s * s / (r * d * d)
		if m == FleissCC {
			n = n / 4 * sq(1+math.Sqrt(1+2*(r+1)/(n*r*d)))
		}
		return n, nil
	}
	panic("power: unknown method")
}

// Power returns the power of the method for groups of n1 and n2 members.
// As in the published formulas, it counts rejections in the direction of
// the true effect only; for a two-sided test the other tail adds at most
// alpha/2 and in practice nothing.
//
// For [FleissCC] the corrected size is inverted,
//
//	n' = (n1 − c)² / n1,  c = (r+1)/(2 r Δ),
//
// and for n1 ≤ c, where the correction term exceeds the whole sample and
// the inverted formula would turn back up, n' is held at 0 so that power
// never rises as n falls.
func (m Method) Power(tp TwoProportions, n1, n2 float64) float64 {
	tp.check()
	if !(n1 > 0 && n2 > 0) {
		panic("power: group sizes must be positive")
	}
	za := ZAlpha(tp.Alpha, tp.Sides)
	d := math.Abs(tp.P1 - tp.P2)
	if d == 0 {
		return normCDF(-za)
	}
	r := n2 / n1
	v0 := pooled(tp.P1, tp.P2, r)
	switch m {
	case Kelsey:
		return normCDF(math.Sqrt(n1*r*d*d/((r+1)*v0)) - za)
	case Fleiss, FleissCC, Schlesselman:
		n := n1
		if m == FleissCC {
			c := (r + 1) / (2 * r * d)
			if n1 <= c {
				n = 0
			} else {
				n = sq(n1-c) / n1
			}
		}
		v1 := r*tp.P1*(1-tp.P1) + tp.P2*(1-tp.P2)
		return normCDF((math.Sqrt(n*r*d*d) - za*math.Sqrt((r+1)*v0)) / math.Sqrt(v1))
	}
	panic("power: unknown method")
}

// Detectable returns the first-group proportion p1 at which the method
// reaches the target power with n1 and n2 members, searching below P2
// (dir < 0) or above it (dir > 0); tp.P1 is ignored. It scans outward from
// P2 for the first crossing of the target and refines it with [FindRoot],
// so it returns the smallest detectable effect even where power is not
// monotone. It returns [ErrUnreachable] when the power stays below the
// target all the way to 0 or 1.
func (m Method) Detectable(tp TwoProportions, n1, n2, power float64, dir int) (float64, error) {
	if !(tp.P2 > 0 && tp.P2 < 1) {
		panic("power: P2 must be in (0, 1)")
	}
	const edge = 1e-9
	end := 1 - edge
	if dir < 0 {
		end = edge
	}
	f := func(p1 float64) float64 {
		t := tp
		t.P1 = p1
		return m.Power(t, n1, n2) - power
	}
	const steps = 512
	prev := tp.P2
	for i := 1; i <= steps; i++ {
		x := tp.P2 + (end-tp.P2)*float64(i)/steps
		if f(x) >= 0 {
			lo, hi := prev, x
			if prev == tp.P2 {
				// Power at p1 = P2 is alpha/sides, below any valid target.
				lo = tp.P2
			}
			return FindRoot(f, lo, hi, 1e-13)
		}
		prev = x
	}
	return math.NaN(), ErrUnreachable
}

// CaseExposure returns the exposure prevalence among cases implied by the
// prevalence among controls p0 and the odds ratio psi:
//
//	p1 = ψ p0 / (1 + p0 (ψ − 1))
//
// References: Schlesselman (1982), chapter 6.
func CaseExposure(p0, psi float64) float64 {
	return psi * p0 / (1 + p0*(psi-1))
}

// OddsRatio returns the odds ratio of p1 against p2: p1 q2 / (p2 q1).
func OddsRatio(p1, p2 float64) float64 {
	return p1 * (1 - p2) / (p2 * (1 - p1))
}

func sq(x float64) float64 { return x * x }
