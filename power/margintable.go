package power

import "math"

// MarginRejectionTable returns, for every pair of counts (x1 in 0..n1, x2
// in 0..n2, index x1*(n2+1)+x2), whether the one-sided test of
// non-inferiority at level alpha rejects H0: p1 − p2 = d0 in favour of the
// side away from d0 (above it when d0 < 0, below when d0 > 0):
//
//	z = (p̂1 − p̂2 − d0) / √(p̃1 q̃1/n1 + p̃2 q̃2/n2)
//
// with p̃ the restricted maximum-likelihood risks under p1 − p2 = d0 for
// [FarringtonManning] (score test) and the observed risks for
// [Blackwelder] (Wald test). A zero standard error rejects when the
// estimate lies strictly on the alternative side.
//
// References: Farrington CP, Manning G (1990). Stat Med 9:1447–1454;
// Blackwelder WC (1982). Control Clin Trials 3:345–353.
func MarginRejectionTable(m MarginMethod, n1, n2 int, d0, alpha float64) []bool {
	if n1 < 1 || n2 < 1 {
		panic("power: each group needs at least one participant")
	}
	if !(d0 > -1 && d0 < 1) || d0 == 0 {
		panic("power: the margin boundary must be in (-1, 1) and not 0")
	}
	za := ZAlpha(alpha, 1)
	out := make([]bool, (n1+1)*(n2+1))
	for x1 := 0; x1 <= n1; x1++ {
		for x2 := 0; x2 <= n2; x2++ {
			out[x1*(n2+1)+x2] = marginReject(m, x1, n1, x2, n2, d0, za)
		}
	}
	return out
}

// marginStat returns the numerator s (p̂1 − p̂2 − d0) of the statistic of
// [MarginRejectionTable] for x1 events of n1 against x2 of n2, signed
// towards the alternative (s = +1 for d0 < 0, −1 for d0 > 0), and its
// variance, at the restricted MLE ([FarringtonManning], the observed
// proportions kept 10⁻¹² inside (0, 1)) or at the observed proportions
// ([Blackwelder]).
func marginStat(m MarginMethod, x1, n1, x2, n2 int, d0 float64) (num, v float64) {
	sign := 1.0
	if d0 > 0 {
		sign = -1
	}
	p1, p2 := float64(x1)/float64(n1), float64(x2)/float64(n2)
	num = sign * (p1 - p2 - d0)
	if m == FarringtonManning {
		const eps = 1e-12
		clamp := func(p float64) float64 { return math.Min(1-eps, math.Max(eps, p)) }
		t1, t2 := RestrictedMLE(clamp(p1), clamp(p2), float64(n2)/float64(n1), d0)
		return num, t1*(1-t1)/float64(n1) + t2*(1-t2)/float64(n2)
	}
	return num, p1*(1-p1)/float64(n1) + p2*(1-p2)/float64(n2)
}

// marginReject decides the table of [MarginRejectionTable] at the
// one-sided critical value za: z = num/√v > za, or, when v is 0,
// num > 0.
func marginReject(m MarginMethod, x1, n1, x2, n2 int, d0, za float64) bool {
	num, v := marginStat(m, x1, n1, x2, n2, d0)
	if v <= 0 {
		return num > 0
	}
	return num/math.Sqrt(v) > za
}

// EquivalenceRejectionTable returns the decisions of two one-sided tests
// at level alpha each against the margins −margin and +margin: equivalence
// is shown when both reject (Schuirmann 1987, J Pharmacokinet Biopharm
// 15:657–680).
func EquivalenceRejectionTable(m MarginMethod, n1, n2 int, margin, alpha float64) []bool {
	lo := MarginRejectionTable(m, n1, n2, -margin, alpha)
	hi := MarginRejectionTable(m, n1, n2, margin, alpha)
	for i := range lo {
		lo[i] = lo[i] && hi[i]
	}
	return lo
}

// NewTableBinomials returns the Monte-Carlo model of two binomial counts
// (n1, p1) and (n2, p2) analysed by a precomputed rejection table (index
// x1*(n2+1)+x2), such as [MarginRejectionTable] builds.
func NewTableBinomials(n1, n2 int, p1, p2 float64, reject []bool) Model {
	if len(reject) != (n1+1)*(n2+1) {
		panic("power: rejection table of the wrong size")
	}
	bits := make([]uint64, (len(reject)+63)/64)
	for i, r := range reject {
		if r {
			bits[i>>6] |= 1 << (i & 63)
		}
	}
	return &twoBinomials{t1: NewBinomialTable(n1, p1), t2: NewBinomialTable(n2, p2), reject: bits, stride: n2 + 1}
}

// RatioMarginRejectionTable returns, for every pair of counts (x1 in
// 0..n1, x2 in 0..n2, index x1*(n2+1)+x2, as [MarginRejectionTable] lays
// them out), whether the one-sided score test at level alpha rejects
// H0: p1/p2 = ρ0 in favour of the side away from ρ0 (below it when ρ0 > 1,
// above it when ρ0 < 1):
//
//	z = s (p̂1 − ρ0 p̂2) / √(p̃1 q̃1/n1 + ρ0² p̃2 q̃2/n2) > z_α
//
// with s = −1 for ρ0 > 1 and +1 for ρ0 < 1, and p̃ the restricted MLE of
// [RestrictedMLERatio] at the observed proportions and r = n2/n1.
//
// Boundary counts need no special case: the restricted MLE is the
// maximiser over the closed interval, and exists for every table. Only
// x1 = x2 = 0 gives a zero standard error (p̃1 = p̃2 = 0); its estimate
// p̂1 − ρ0 p̂2 = 0 lies on the margin, so that table never rejects. Every
// other table has a positive standard error, also when all participants
// had the event (with ρ0 > 1, p̃1 = 1 and p̃2 = 1/ρ0 there, and
// z = √(n2 (ρ0 − 1)), which rejects once n2 is large enough). It panics
// unless n1, n2 ≥ 1, ρ0 is positive, finite and not 1, and alpha is in
// (0, 1).
//
// References: Farrington CP, Manning G (1990). Stat Med 9:1447–1454;
// Miettinen O, Nurminen M (1985). Stat Med 4:213–226.
func RatioMarginRejectionTable(n1, n2 int, rho0, alpha float64) []bool {
	if n1 < 1 || n2 < 1 {
		panic("power: each group needs at least one participant")
	}
	checkRatioRho0(rho0)
	za := ZAlpha(alpha, 1)
	s := ratioSide(rho0)
	out := make([]bool, (n1+1)*(n2+1))
	for x1 := 0; x1 <= n1; x1++ {
		for x2 := 0; x2 <= n2; x2++ {
			num, v := ratioScore(x1, n1, x2, n2, rho0)
			if v <= 0 {
				out[x1*(n2+1)+x2] = s*num > 0
				continue
			}
			out[x1*(n2+1)+x2] = s*num/math.Sqrt(v) > za
		}
	}
	return out
}

// ratioScore returns the numerator p̂1 − ρ0 p̂2 of the score statistic and
// its variance at the restricted MLE of the observed proportions.
func ratioScore(x1, n1, x2, n2 int, rho0 float64) (num, v float64) {
	m1, m2 := float64(n1), float64(n2)
	a1, a2 := float64(x1)/m1, float64(x2)/m2
	p1t, p2t := RestrictedMLERatio(a1, a2, m2/m1, rho0)
	return a1 - rho0*a2, p1t*(1-p1t)/m1 + rho0*rho0*p2t*(1-p2t)/m2
}

// RatioEquivalenceRejectionTable returns the decisions of two one-sided
// score tests at level alpha each against the ratio margins 1/margin and
// margin (see [RatioMarginRejectionTable]): equivalence is shown when both
// reject (Schuirmann 1987, J Pharmacokinet Biopharm 15:657–680). It panics
// unless margin > 1 is finite, and on the inputs
// RatioMarginRejectionTable panics on.
func RatioEquivalenceRejectionTable(n1, n2 int, margin, alpha float64) []bool {
	if !(margin > 1) || math.IsInf(margin, 1) {
		panic("power: ratio equivalence margin must be above 1 and finite")
	}
	lo := RatioMarginRejectionTable(n1, n2, 1/margin, alpha)
	hi := RatioMarginRejectionTable(n1, n2, margin, alpha)
	for i := range lo {
		lo[i] = lo[i] && hi[i]
	}
	return lo
}
