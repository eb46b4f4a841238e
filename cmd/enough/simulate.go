package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"sync/atomic"
	"syscall"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"enough/designs"
	"enough/designs/report"
)

// errInterrupted and errTerminated mark a simulation stopped by SIGINT
// (Ctrl-C) or SIGTERM: the output is still written, marked partial.
var (
	errInterrupted = errors.New("interrupted: the simulation stopped early; the output holds the replicates done, marked partial")
	errTerminated  = errors.New("terminated (SIGTERM): the simulation stopped early; the output holds the replicates done, marked partial")
	// A sweep stopped by a signal writes nothing: a part of a grid is no
	// table (shard it with --shard to keep parts of a long sweep).
	errSweepInterrupted = errors.New("interrupted: the sweep stopped early; nothing was written (shard a long sweep with --shard I/K to keep its parts)")
	errSweepTerminated  = errors.New("terminated (SIGTERM): the sweep stopped early; nothing was written (shard a long sweep with --shard I/K to keep its parts)")
)

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
--quiet). Ctrl-C (SIGINT) or SIGTERM stops the run within about a second:
the output holds the replicates done, marked partial (exactly those of a run
asked for that many), and the exit status is 130 (SIGINT) or 143 (SIGTERM).

Guards, each refused with exit status 2: --max-replicates (at most 1e12);
--max-seconds, checked against the pace of the first replicates, timed for
about 0.2 s and counted in the run; --max-memory, the scratch memory of the
workers together (fewer workers are used to stay within it). --workers is
cut to 4 per core, as said on standard error and in the notes.`,
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
	plotFlag(cmd, &opts.Plot, "the simulated power with its 95% interval beside the closed form")
	return cmd
}

// simulate runs the verification with a progress bar; ctx ends at the
// first SIGINT or SIGTERM, and caught says which came.
func simulate(ctx context.Context, caught func() os.Signal, spec *designs.Spec, res *designs.Result, opts *PlanOptions) error {
	f := opts.Sim
	// Each flag's range was checked as it was read; what is left is
	// between flags.
	if f.ReplicatesGiven && f.Replicates > f.MaxReplicates {
		return &flagError{flag: "--replicates", msg: fmt.Sprintf("%d is more than --max-replicates (%d)", f.Replicates, f.MaxReplicates), allowed: "at most --max-replicates, or raise --max-replicates"}
	}
	o := designs.SimOptions{Workers: f.Workers, MaxSeconds: f.MaxSeconds, MaxReplicates: f.MaxReplicates, MaxMemory: f.MaxMemory << 20,
		Notice: func(msg string) { fmt.Fprintf(opts.IO.ErrOut, "enough: note: %s\n", msg) }}
	if f.ReplicatesGiven {
		o.Replicates = f.Replicates
	}
	if f.SeedGiven {
		o.Seed, o.SeedSet = uint64(f.Seed), true
	}
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
	case errors.Is(err, designs.ErrStopped) && caught() == syscall.SIGTERM:
		return errTerminated
	case errors.Is(err, designs.ErrStopped):
		return errInterrupted
	}
	return err
}

// stopOnSignal returns a context that ends at the first SIGINT or SIGTERM,
// a function telling which came (nil for none), and one that stops
// listening. While it listens, neither signal ends the process: the
// simulation stops and its partial output is still written.
func stopOnSignal() (context.Context, func() os.Signal, func()) {
	ch := make(chan os.Signal, 1)
	signal.Notify(ch, os.Interrupt, syscall.SIGTERM)
	ctx, cancel := context.WithCancel(context.Background())
	var got atomic.Value
	go func() {
		select {
		case s := <-ch:
			got.Store(s)
			cancel()
		case <-ctx.Done():
		}
	}()
	which := func() os.Signal {
		s, _ := got.Load().(os.Signal)
		return s
	}
	return ctx, which, func() { signal.Stop(ch); cancel() }
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
