package main

import (
	"errors"
	"fmt"
	"testing"

	"enough/designs"
)

// TestExitCodes checks the documented exit statuses.
func TestExitCodes(t *testing.T) {
	for _, c := range []struct {
		err  error
		want int
	}{
		{&designs.SpecError{File: "a.yaml", Msg: "x"}, ExitInput},
		{&inputError{msg: "x"}, ExitInput},
		{&designs.InputError{Msg: "x"}, ExitInput},
		{fmt.Errorf("wrapped: %w", errInterrupted), ExitInterrupted},
		{&designs.PlanError{File: "a.yaml", Msg: "x"}, ExitFailure},
		{errors.New("disk full"), ExitFailure},
	} {
		if got := exitCode(c.err); got != c.want {
			t.Errorf("exitCode(%v) = %d, want %d", c.err, got, c.want)
		}
	}
	if ExitInterrupted != 130 {
		t.Errorf("ExitInterrupted = %d, want 130 (128 + SIGINT, common practice)", ExitInterrupted)
	}
}
