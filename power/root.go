package power

import "math"

// FindRoot returns x in [a, b] with f(x) = 0, to within the absolute
// tolerance tol, by Brent's method: inverse quadratic interpolation and
// the secant step, safeguarded by bisection, so that the bracket always
// shrinks.
//
// f(a) and f(b) must have opposite signs (or one of them be zero);
// otherwise FindRoot returns [ErrNoBracket]. It returns [ErrNoConvergence]
// after 200 iterations without meeting tol.
//
// References:
//
//	Brent RP (1973). Algorithms for Minimization without Derivatives.
//	Prentice-Hall, chapter 4 (procedure zero).
func FindRoot(f func(float64) float64, a, b, tol float64) (float64, error) {
	fa, fb := f(a), f(b)
	if math.IsNaN(fa) || math.IsNaN(fb) {
		return math.NaN(), ErrNoBracket
	}
	if fa == 0 {
		return a, nil
	}
	if fb == 0 {
		return b, nil
	}
	if (fa > 0) == (fb > 0) {
		return math.NaN(), ErrNoBracket
	}
	c, fc := a, fa
	d := b - a
	e := d
	const eps = 2.220446049250313e-16
	for iter := 0; iter < 200; iter++ {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol1 := 2*eps*math.Abs(b) + 0.5*tol
		m := 0.5 * (c - b)
		if math.Abs(m) <= tol1 || fb == 0 {
			return b, nil
		}
		if math.Abs(e) >= tol1 && math.Abs(fa) > math.Abs(fb) {
			// Attempt interpolation.
			var p, q float64
			s := fb / fa
			if a == c {
				// Secant step.
				p = 2 * m * s
				q = 1 - s
			} else {
				// Inverse quadratic interpolation.
				q = fa / fc
				r := fb / fc
				p = s * (2*m*q*(q-r) - (b-a)*(r-1))
				q = (q - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			} else {
				p = -p
			}
			if 2*p < math.Min(3*m*q-math.Abs(tol1*q), math.Abs(e*q)) {
				e = d
				d = p / q
			} else {
				d = m
				e = m
			}
		} else {
			d = m
			e = m
		}
		a, fa = b, fb
		if math.Abs(d) > tol1 {
			b += d
		} else if m > 0 {
			b += tol1
		} else {
			b -= tol1
		}
		fb = f(b)
		if math.IsNaN(fb) {
			return math.NaN(), ErrNoConvergence
		}
	}
	return b, ErrNoConvergence
}
