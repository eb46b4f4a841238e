package power

import (
	"fmt"
	"math"
)

// EventsMethod is a closed-form method for the number of events of a
// log-rank comparison of two groups.
type EventsMethod int

// The closed-form methods for the number of events.
const (
	// Schoenfeld is the events formula for the log-rank test (or the Cox
	// model's score test) under proportional hazards, with hazard ratio Δ
	// and allocation r = n2/n1:
	//
	//	D = (z_α + z_β)² / (π1 π2 (ln Δ)²),  π1 = 1/(1+r),  π2 = r/(1+r)
	//
	// References: Schoenfeld DA (1983). Sample-size formula for the
	// proportional-hazards regression model. Biometrics 39:499–503.
	Schoenfeld EventsMethod = iota + 1

	// Freedman is the events formula for the log-rank test,
	//
	//	D = (z_α + z_β)² (1 + φΔ)² / (φ (1 − Δ)²)
	//
	// with φ = n1/n2 = 1/r, that is D = (z_α + z_β)² (r + Δ)² / (r (1 − Δ)²).
	//
	// References: Freedman LS (1982). Tables of the number of patients
	// required in clinical trials using the logrank test. Statistics in
	// Medicine 1:121–129.
	Freedman
)

// String returns the method's identifier as used in specifications.
func (m EventsMethod) String() string {
	switch m {
	case Schoenfeld:
		return "schoenfeld"
	case Freedman:
		return "freedman"
	}
	return fmt.Sprintf("EventsMethod(%d)", int(m))
}

// checkHR panics unless the hazard ratio and the allocation are positive
// and finite.
func checkHR(hr, r float64) {
	if !(hr > 0) || math.IsInf(hr, 1) {
		panic(fmt.Sprintf("power: hazard ratio must be positive and finite, got %v", hr))
	}
	if !(r > 0) || math.IsInf(r, 1) {
		panic(fmt.Sprintf("power: ratio must be positive and finite, got %v", r))
	}
}

// effect returns the standardised effect per square root of an event:
// the power of d events is Φ(√d · effect − z_α).
func (m EventsMethod) effect(hr, r float64) float64 {
	switch m {
	case Schoenfeld:
		return math.Sqrt(r) / (1 + r) * math.Abs(math.Log(hr))
	case Freedman:
		return math.Sqrt(r) * math.Abs(1-hr) / (r + hr)
	}
	panic("power: unknown events method")
}

// Events returns the unrounded number of events needed to detect the hazard
// ratio hr (the first group's hazard over the second's) with allocation
// r = n2/n1 (second-group members per first-group member), at level alpha
// with sides tails and the target power. See [Schoenfeld] and [Freedman]
// for the formulas; z_α = [ZAlpha](alpha, sides), z_β = [ZPower](power).
//
// It returns [ErrNothingToDetect] when hr = 1 and [ErrUnreachable] when
// z_α + z_β ≤ 0 (a target power at or below alpha/sides). It panics if hr
// or r is not positive and finite, or alpha, sides or power is out of range.
func (m EventsMethod) Events(hr, r, alpha float64, sides int, power float64) (float64, error) {
	checkHR(hr, r)
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	if hr == 1 {
		return math.NaN(), ErrNothingToDetect
	}
	if za+zb <= 0 {
		return math.NaN(), ErrUnreachable
	}
	return sq(za+zb) / sq(m.effect(hr, r)), nil
}

// EventsPower returns the power of the method with d expected events,
// inverting [EventsMethod.Events]:
//
//	power = Φ(√(d π1 π2) |ln Δ| − z_α)             (Schoenfeld)
//	power = Φ(√(d r) |1 − Δ| / (r + Δ) − z_α)       (Freedman)
//
// As in the closed forms, only the tail in the direction of the effect
// counts; at hr = 1 the power is alpha/sides. It panics if hr or r is not
// positive and finite, d is negative or NaN, or alpha or sides is out of
// range.
func (m EventsMethod) EventsPower(hr, r, alpha float64, sides int, d float64) float64 {
	checkHR(hr, r)
	if !(d >= 0) {
		panic(fmt.Sprintf("power: events must be non-negative, got %v", d))
	}
	za := ZAlpha(alpha, sides)
	return normCDF(math.Sqrt(d)*m.effect(hr, r) - za)
}

// Entry describes recruitment and follow-up, all in one time unit.
type Entry struct {
	// Accrual is the length of the uniform recruitment period; 0 means
	// everyone starts together. It must be non-negative.
	Accrual float64
	// FollowUp is the follow-up after the last participant enters. It must
	// be non-negative, and positive when Accrual is 0.
	FollowUp float64
	// Dropout is the hazard of loss to follow-up per time unit (exponential);
	// 0 for none. See [DropoutHazard].
	Dropout float64
}

func (e Entry) check() {
	if !(e.Accrual >= 0) || math.IsInf(e.Accrual, 1) {
		panic(fmt.Sprintf("power: accrual must be non-negative and finite, got %v", e.Accrual))
	}
	if !(e.FollowUp >= 0) || math.IsInf(e.FollowUp, 1) {
		panic(fmt.Sprintf("power: follow-up must be non-negative and finite, got %v", e.FollowUp))
	}
	if e.Accrual == 0 && e.FollowUp == 0 {
		panic("power: follow-up must be positive when there is no accrual period")
	}
	if !(e.Dropout >= 0) || math.IsInf(e.Dropout, 1) {
		panic(fmt.Sprintf("power: dropout hazard must be non-negative and finite, got %v", e.Dropout))
	}
}

// DropoutHazard converts the fraction of participants lost to follow-up
// per time unit into an exponential hazard:
//
//	η = −ln(1 − fraction)
//
// It panics if fraction is not in [0, 1).
func DropoutHazard(fraction float64) float64 {
	if !(fraction >= 0 && fraction < 1) {
		panic(fmt.Sprintf("power: dropout fraction must be in [0, 1), got %v", fraction))
	}
	return -math.Log1p(-fraction)
}

// HazardFromMedian returns the exponential hazard with the given median
// survival time:
//
//	λ = ln 2 / median
//
// It panics if median is not positive and finite.
func HazardFromMedian(median float64) float64 {
	if !(median > 0) || math.IsInf(median, 1) {
		panic(fmt.Sprintf("power: median must be positive and finite, got %v", median))
	}
	return math.Ln2 / median
}

// HazardFromSurvival returns the exponential hazard under which a fraction
// s survives to time t:
//
//	λ = −ln(s) / t
//
// It panics if s is not in (0, 1) or t is not positive and finite.
func HazardFromSurvival(s, t float64) float64 {
	if !(s > 0 && s < 1) {
		panic(fmt.Sprintf("power: survival must be in (0, 1), got %v", s))
	}
	if !(t > 0) || math.IsInf(t, 1) {
		panic(fmt.Sprintf("power: time must be positive and finite, got %v", t))
	}
	return -math.Log(s) / t
}

func checkHazard(h float64) {
	if !(h > 0) || math.IsInf(h, 1) {
		panic(fmt.Sprintf("power: hazard must be positive and finite, got %v", h))
	}
}

// EventProbability returns the probability that a participant's event is
// observed during the study: exponential survival with the given hazard λ,
// exponential loss to follow-up with hazard η = e.Dropout, entry uniform
// over the accrual period a, and administrative end at a + f. Integrating
// over the time of entry gives, with h = λ + η,
//
//	P = λ/h · [1 − (exp(−h f) − exp(−h (a+f))) / (h a)]   (a > 0)
//	P = λ/h · [1 − exp(−h f)]                              (a = 0)
//
// The bracket is evaluated as −expm1(−h f) + exp(−h f)·(1 − g(h a)) with
// g(x) = (1 − e^(−x))/x, and 1 − g(x) by its series for small x, so that
// the result keeps full relative accuracy for tiny h, a or f.
//
// It panics if hazard is not positive and finite or e is invalid (see
// [Entry]).
//
// References: Lachin JM, Foulkes MA (1986). Evaluation of sample size and
// power for analyses of survival with allowance for nonuniform patient
// entry, losses to follow-up, noncompliance, and stratification.
// Biometrics 42:507–519 (uniform entry with exponential losses).
func EventProbability(hazard float64, e Entry) float64 {
	checkHazard(hazard)
	e.check()
	h := hazard + e.Dropout
	b := -math.Expm1(-h * e.FollowUp) // everyone is followed at least f
	if e.Accrual > 0 {
		b += math.Exp(-h*e.FollowUp) * oneMinusG(h*e.Accrual)
	}
	return hazard / h * b
}

// oneMinusG returns 1 − (1 − e^(−x))/x = (x − 1 + e^(−x))/x for x > 0,
// the extra event probability of a uniform spread of entry over x:
//
//	1 − g(x) = Σ_{k≥1} (−1)^(k+1) x^k / (k+1)!  = x/2 − x²/6 + x³/24 − …
//
// The series is used below x = 0.5, where the direct form would cancel;
// its terms fall at least threefold each, so it converges fast.
func oneMinusG(x float64) float64 {
	if x >= 0.5 {
		return (x + math.Expm1(-x)) / x
	}
	term := x / 2 // k = 1
	sum := term
	for k := 1; k < 40 && math.Abs(term) > 1e-17*sum; k++ {
		term *= -x / float64(k+2) // term k+1 = term k · (−x)/(k+2)
		sum += term
	}
	return sum
}

// EventProbabilitySimpson returns Schoenfeld's Simpson's-rule shortcut for
// the probability of an event with uniform entry and no loss to follow-up,
// S(t) = exp(−hazard·t):
//
//	P ≈ 1 − [S(f) + 4 S(f + a/2) + S(f + a)] / 6
//
// It is exact when a = 0. It panics if hazard is not positive and finite,
// e is invalid (see [Entry]) or e.Dropout is not 0.
//
// References: Schoenfeld DA (1983). Sample-size formula for the
// proportional-hazards regression model. Biometrics 39:499–503.
func EventProbabilitySimpson(hazard float64, e Entry) float64 {
	checkHazard(hazard)
	e.check()
	if e.Dropout != 0 {
		panic("power: the Simpson shortcut has no dropout")
	}
	f, a := e.FollowUp, e.Accrual
	// 1 − S(t) = −expm1(−hazard t), summed without cancellation.
	return -(math.Expm1(-hazard*f) + 4*math.Expm1(-hazard*(f+a/2)) + math.Expm1(-hazard*(f+a))) / 6
}

// DetectableHazardRatio returns the hazard ratio Δ (first group's hazard
// over the second's) that n1 and n2 participants detect with the target
// power, the second group's hazard h2 being fixed and the first's Δ·h2.
// The expected number of events is
//
//	d(Δ) = n1 · P(Δ h2) + n2 · P(h2)
//
// with P = [EventProbability] under e, and the power that of
// [EventsMethod.EventsPower] with r = n2/n1. It searches below 1 (dir < 0)
// or above 1 (dir > 0): it scans ln Δ outward from 0 for the first
// crossing of the target and refines it with [FindRoot], so it returns the
// hazard ratio nearest 1 even where power is not monotone (the Freedman
// effect is bounded, and events fall as Δ falls).
//
// It returns [ErrUnreachable] when no hazard ratio between 1 and 1e-6
// (or 1e6) reaches the target, or the target is at or below alpha/sides.
// It panics if h2, n1 or n2 is not positive and finite, e is invalid, dir
// is 0, or alpha, sides or power is out of range.
func (m EventsMethod) DetectableHazardRatio(h2 float64, e Entry, n1, n2, alpha float64, sides int, power float64, dir int) (float64, error) {
	checkHazard(h2)
	e.check()
	if !(n1 > 0 && n2 > 0) || math.IsInf(n1, 1) || math.IsInf(n2, 1) {
		panic(fmt.Sprintf("power: group sizes must be positive and finite, got %v and %v", n1, n2))
	}
	if dir == 0 {
		panic("power: dir must be negative or positive")
	}
	za, zb := ZAlpha(alpha, sides), ZPower(power)
	if za+zb <= 0 {
		return math.NaN(), ErrUnreachable
	}
	r := n2 / n1
	d2 := n2 * EventProbability(h2, e)
	f := func(u float64) float64 {
		hr := math.Exp(u)
		d := n1*EventProbability(hr*h2, e) + d2
		return m.EventsPower(hr, r, alpha, sides, d) - power
	}
	end := math.Log(1e6)
	if dir < 0 {
		end = -end
	}
	const steps = 512
	prev := 0.0
	for i := 1; i <= steps; i++ {
		u := end * float64(i) / steps
		if f(u) >= 0 {
			// At u = 0 the power is alpha/sides, below the target.
			u, err := FindRoot(f, prev, u, 1e-13)
			if err != nil {
				return math.NaN(), err
			}
			return math.Exp(u), nil
		}
		prev = u
	}
	return math.NaN(), ErrUnreachable
}
