package power

import "errors"

var (
	// ErrNothingToDetect is returned when the two groups are assumed to have
	// the same risk, so no sample size can detect a difference.
	ErrNothingToDetect = errors.New("power: the groups do not differ: nothing to detect")

	// ErrNoBracket is returned by [FindRoot] when the function has the same
	// sign at both ends of the interval.
	ErrNoBracket = errors.New("power: root not bracketed")

	// ErrNoConvergence is returned when an iterative solver stops before
	// reaching its tolerance.
	ErrNoConvergence = errors.New("power: solver did not converge")

	// ErrUnreachable is returned when a target (a power, an effect) cannot be
	// reached inside the admissible range.
	ErrUnreachable = errors.New("power: target cannot be reached")
)
