package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"enough/designs"
	"enough/designs/report"
)

// errInterrupted marks a simulation stopped by an interrupt.
var errInterrupted = errors.New("interrupted: the simulation stopped early; the output holds the replicates done, marked partial")

// NewCmdSimulate builds `enough simulate`.
func NewCmdSimulate(streams *IO) *cobra.Command {
	opts := &PlanOptions{IO: streams, Verify: true, Command: "simulate"}
	cmd := &cobra.Command{
		Use:   "simulate SPEC.yaml",
		Short: "Verify a plan by simulating the study and its planned analysis",
		Long: `Simulate the study at the planned sizes from the design's own model, apply
the planned test (the specification's test key), and report the empirical
power with its Monte-Carlo standard error and 95% interval, the empirical
type I error from a second run under the null, and the agreement with the
closed form. Settings come from the specification's simulate block
(replicates, seed, n) or the flags. The result for a seed is identical
whatever the number of workers.

The specification file is required ("-" reads it from standard input);
"enough plan --verify" without a file simulates the built-in demonstration
study.

A progress bar is shown on standard error when it is a terminal (not with
--quiet). Ctrl-C stops cleanly: the output holds the replicates done, marked
partial, and the exit status is 130.`,
		Example: `  enough simulate study.yaml
  enough simulate study.yaml --replicates 100000 --seed 7 --format json`,
		Args: specArgs("simulate", true),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Spec = args[0]
			return planRun(opts)
		},
	}
	formatFlag(cmd, &opts.Format, report.Formats)
	outputFlag(cmd, &opts.Output)
	cmd.Flags().StringArrayVar(&opts.Sets, "set", nil, "override one key, key=value (repeatable)")
	switchFlag(cmd, &opts.Exact, "exact", "", "also compute exact power by enumeration (two-group binary outcomes)")
	addSimFlags(cmd, &opts.Sim)
	return cmd
}

// simulate runs the verification with a progress bar and Ctrl-C handling.
func simulate(spec *designs.Spec, res *designs.Result, opts *PlanOptions) error {
	f := opts.Sim
	o := designs.SimOptions{Workers: f.Workers, MaxSeconds: f.MaxSeconds, MaxReplicates: f.MaxReplicates}
	if f.Replicates > 0 {
		o.Replicates = f.Replicates
	}
	switch {
	case f.Seed >= 0:
		o.Seed = uint64(f.Seed)
		o.SeedSet = true
	case f.Seed != -1:
		return &inputError{msg: fmt.Sprintf("--seed: %d is out of range; allowed: a whole number of at least 0", f.Seed)}
	}
	if f.Workers < 0 {
		return &inputError{msg: "--workers: allowed: 0 (one per core) or more"}
	}
	if f.MaxSeconds < 0 {
		return &inputError{msg: fmt.Sprintf("--max-seconds: %g is out of range; allowed: 0 (no limit) or more", f.MaxSeconds)}
	}
	switch {
	case f.Replicates < 0:
		return &inputError{msg: fmt.Sprintf("--replicates: %d is out of range; allowed: at least 100 (0 keeps the specification's)", f.Replicates)}
	case f.Replicates > 0 && f.Replicates < 100:
		// The flag's value is the problem, not the specification.
		return &flagError{flag: "--replicates", msg: fmt.Sprintf("%d is too few", f.Replicates), allowed: "at least 100"}
	case f.Replicates > 0 && f.MaxReplicates > 0 && f.Replicates > f.MaxReplicates:
		return &flagError{flag: "--replicates", msg: fmt.Sprintf("%d is more than --max-replicates (%d)", f.Replicates, f.MaxReplicates), allowed: "at most --max-replicates, or raise --max-replicates"}
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	if !f.Quiet && isTerminal(opts.IO.ErrOut) {
		o.Progress = progress(opts.IO.ErrOut)
	}
	err := designs.Verify(ctx, spec, res, o)
	if o.Progress != nil {
		fmt.Fprintln(opts.IO.ErrOut)
	}
	var ie *designs.InputError
	switch {
	case errors.As(err, &ie):
		// The specification's name comes first: it goes in the file of
		// the JSON form, not in its message.
		if rest, ok := strings.CutPrefix(ie.Msg, spec.File+": "); ok && spec.File != "" {
			return &inputError{file: spec.File, msg: rest}
		}
		return &inputError{msg: err.Error()}
	case errors.Is(err, designs.ErrStopped):
		return errInterrupted
	}
	return err
}

// isTerminal reports whether w is a terminal.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// progress returns a callback that draws a progress bar on w for each run
// of a simulation (the planned effect, then the null).
func progress(w io.Writer) func(label string, done, total int64) {
	var bar *progressbar.ProgressBar
	var current string
	return func(label string, done, total int64) {
		if bar == nil || label != current {
			if bar != nil {
				_ = bar.Finish()
				fmt.Fprintln(w)
			}
			current = label
			bar = progressbar.NewOptions64(total,
				progressbar.OptionSetWriter(w),
				progressbar.OptionSetDescription(label),
				progressbar.OptionShowCount(),
				progressbar.OptionSetPredictTime(true),
				progressbar.OptionThrottle(100*time.Millisecond),
				progressbar.OptionSetWidth(30),
			)
		}
		_ = bar.Set64(done)
	}
}
