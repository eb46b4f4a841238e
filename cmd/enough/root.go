// Package cli builds the cobra commands of enough. Commands are thin: they
// parse flags, call designs and report, and map errors to exit codes.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
)

// Exit codes of enough.
const (
	ExitOK      = 0 // success
	ExitFailure = 1 // the plan could not be computed or written
	ExitInput   = 2 // bad input: the specification, a flag or an argument
)

// IO holds the streams and the file system access of a command.
type IO struct {
	In     io.Reader
	Out    io.Writer
	ErrOut io.Writer
}

// inputError marks a usage problem (exit status 2).
type inputError struct{ msg string }

func (e *inputError) Error() string { return e.msg }

// NewRootCmd builds the root command with all verbs.
func NewRootCmd(streams *IO) *cobra.Command {
	root := &cobra.Command{
		Use:   "enough",
		Short: "Plan and check the sample size and power of health studies",
		Long: `enough plans and checks the sample size and power of health studies:
cohort, case-control, randomised trial and cross-sectional designs. A study
is a YAML specification; enough computes the sample size, the power or the
smallest detectable effect with published closed-form methods and writes a
protocol-ready summary.

Exit status: 0 success; 1 the plan could not be computed or written;
2 bad input (specification, flag or argument); 130 a simulation stopped by
Ctrl-C (the output holds what was done, marked partial).`,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       designs.Version,
	}
	root.SetOut(streams.Out)
	root.SetErr(streams.ErrOut)
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error {
		return &inputError{msg: err.Error()}
	})
	root.AddCommand(NewCmdPlan(streams, nil), NewCmdSimulate(streams), NewCmdNew(streams), NewCmdMethods(streams))
	return root
}

// Execute runs the command line args and returns the exit status. Errors
// are printed once, as one line on ErrOut.
func Execute(args []string, streams *IO) (code int) {
	defer func() {
		// A bug must still end in one line and a documented status.
		if p := recover(); p != nil {
			fmt.Fprintf(streams.ErrOut, "enough: internal error: %v (please report this with the specification)\n", p)
			code = ExitFailure
		}
	}()
	root := NewRootCmd(streams)
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return ExitOK
	}
	fmt.Fprintf(streams.ErrOut, "enough: %s\n", oneLine(err.Error()))
	return exitCode(err)
}

// oneLine folds a multi-line message (cobra's suggestions) onto one line.
func oneLine(msg string) string {
	var parts []string
	for _, l := range strings.Split(msg, "\n") {
		if l = strings.TrimSpace(l); l != "" {
			parts = append(parts, l)
		}
	}
	out := strings.Join(parts, "; ")
	if i := strings.Index(out, "; Did you mean this?; "); i >= 0 {
		out = out[:i] + "; did you mean " + strings.ReplaceAll(out[i+len("; Did you mean this?; "):], "; ", " or ") + "?"
	}
	return out
}

func exitCode(err error) int {
	var se *designs.SpecError
	var ie *inputError
	var de *designs.InputError
	switch {
	case errors.As(err, &se), errors.As(err, &ie), errors.As(err, &de):
		return ExitInput
	case errors.Is(err, errInterrupted):
		return ExitInterrupted
	}
	if isCobraUsage(err) {
		return ExitInput
	}
	return ExitFailure
}

// isCobraUsage recognises cobra's own argument errors ("unknown command",
// "accepts at most 1 arg(s)").
func isCobraUsage(err error) bool {
	msg := err.Error()
	for _, p := range []string{"unknown command", "accepts ", "requires ", "unknown flag", "unknown shorthand flag", "invalid argument"} {
		if strings.Contains(msg, p) {
			return true
		}
	}
	return false
}

// DefaultIO returns the process's streams.
func DefaultIO() *IO {
	return &IO{In: os.Stdin, Out: os.Stdout, ErrOut: os.Stderr}
}
