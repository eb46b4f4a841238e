// Package power is the statistical engine of enough: normal quantiles,
// closed-form sample-size and power formulas, and root finding.
//
// The package does no input parsing and no printing. Functions take plain
// numbers, panic on programmer errors (a probability outside (0, 1) that the
// caller should have validated), and return exported sentinel errors
// ([ErrNoBracket], [ErrNoConvergence], [ErrNothingToDetect]) when a
// calculation has no answer. No function returns a silent NaN.
//
// All functions are safe for concurrent use: they keep no state.
package power
