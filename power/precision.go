package power

import "math"

// Precision describes a survey that estimates one proportion with a Wald
// (normal-approximation) confidence interval.
type Precision struct {
	// P is the expected proportion; it must be in (0, 1).
	P float64
	// Confidence is the confidence level; it must be in (0, 1).
	Confidence float64
	// DesignEffect multiplies the simple-random-sampling size; at least 1.
	DesignEffect float64
	// Population is the size of the finite population sampled, or 0 (or
	// +Inf) when it is large enough to ignore.
	Population float64
}

func (pr Precision) z() float64 {
	if !(pr.P > 0 && pr.P < 1) || !(pr.Confidence > 0 && pr.Confidence < 1) {
		panic("power: precision parameters out of range")
	}
	// From the upper tail (1 − confidence)/2 itself, as [ZAlpha] takes it.
	return ZAlpha(1-pr.Confidence, 2)
}

func (pr Precision) finite() bool {
	return pr.Population > 0 && !math.IsInf(pr.Population, 1)
}

func (pr Precision) deff() float64 {
	if pr.DesignEffect == 0 {
		return 1
	}
	return pr.DesignEffect
}

// PrecisionN returns the simple-random-sampling size n0 and the size n after
// the design effect and the finite population correction, both unrounded:
//
//	n0 = z² p (1 − p) / d²
//	n  = n0 · deff / (1 + (n0 · deff − 1)/N)
//
// where d is the margin (the half-width of the interval) and z the normal
// quantile for the confidence level.
//
// References: Cochran WG (1977). Sampling Techniques, 3rd ed. Wiley,
// chapter 4 (sample size for proportions: n0 = t²PQ/d² and its finite
// population correction n0/(1 + (n0 − 1)/N)).
func PrecisionN(pr Precision, margin float64) (n0, n float64) {
	z := pr.z()
	n0 = z * z * pr.P * (1 - pr.P) / (margin * margin)
	n = n0 * pr.deff()
	if pr.finite() {
		n = n / (1 + (n-1)/pr.Population)
	}
	return n0, n
}

// PrecisionMargin returns the margin (half-width of the Wald interval)
// achieved by n analysable respondents; it inverts [PrecisionN]. With a
// finite population N it requires n < N, and returns 0 for n ≥ N (a census).
func PrecisionMargin(pr Precision, n float64) float64 {
	z := pr.z()
	if pr.finite() {
		if n >= pr.Population {
			return 0
		}
		n = n * (pr.Population - 1) / (pr.Population - n)
	}
	n0 := n / pr.deff()
	return z * math.Sqrt(pr.P*(1-pr.P)/n0)
}
