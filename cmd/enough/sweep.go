package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"

	"enough/designs"
	"enough/designs/plot"
	"enough/designs/report"
	"enough/designs/sweep"
)

// SweepOptions are the inputs of `enough sweep`.
type SweepOptions struct {
	IO *IO

	// Spec is the specification's path ("-" reads standard input).
	Spec string
	// Vary holds the --vary arguments, in order.
	Vary []string
	// Format is -f as given ("" when not given: an aligned table on a
	// terminal, CSV otherwise).
	Format string
	Output string
	Sets   []string

	Verify       bool
	Alternatives bool
	MaxPoints    int
	// Shard is --shard as given ("I/K" or "auto"), ShardGiven whether it
	// was given; Shards is --shards.
	Shard      string
	ShardGiven bool
	Shards     int
	Sim        SimFlags
	// Plot is --plot: the file to draw the sweep to ("" for none).
	Plot string

	// LookupEnv reads the environment for --shard auto (os.LookupEnv).
	LookupEnv func(string) (string, bool)
}

// NewCmdSweep builds `enough sweep`.
func NewCmdSweep(streams *IO) *cobra.Command {
	opts := &SweepOptions{IO: streams, LookupEnv: os.LookupEnv}
	cmd := &cobra.Command{
		Use:   "sweep SPEC.yaml --vary KEY=LIST|FROM:TO:STEP [--vary ...]",
		Short: "Solve a specification over a grid of assumptions",
		Long: `Solve the specification at every point of a grid of assumptions, as enough
plan would, and write one row per point: the varied keys, then the figures
(sizes, enrolment, achieved power or detectable effect, events, clusters,
simulated power) and the error of a point that could not be planned.

--vary KEY=LIST (0.6,0.7,0.8) or KEY=FROM:TO:STEP (0.6:0.8:0.05, TO included
when it lies on the grid) varies any numeric key, nested ones by dotted path
(cluster.icc, simulate.n). The grid is the Cartesian product, the last
--vary varying fastest; points are solved in parallel and written in grid
order.

The default output is an aligned table on a terminal and CSV otherwise.
A point that cannot be planned is a row with its error, never an abort:
the exit status is then 6.

--shard I/K computes only the points whose index i (from 0) has
i mod K = I - 1 and writes JSON lines for enough merge; --shard auto reads
I and K from a Slurm array task or a Kubernetes indexed Job (with
--shards K).`,
		Example: `  enough sweep study.yaml --vary risk_ratio=0.6:0.8:0.05
  enough sweep study.yaml --vary risk_ratio=0.6,0.7,0.8 --vary control_risk=0.2,0.3 -f markdown
  enough sweep study.yaml --vary cluster.icc=0.01:0.05:0.01 -f json -o sweep.json
  enough sweep study.yaml --vary risk_ratio=0.5:0.9:0.01 --shard 3/8 -o shard-3.jsonl`,
		Args: specArgs("sweep", true),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Spec = args[0]
			opts.ShardGiven = cmd.Flags().Changed("shard")
			return sweepRun(opts)
		},
	}
	sweepFormatFlag(cmd, &opts.Format, "html")
	outputFlag(cmd, &opts.Output)
	cmd.Flags().StringArrayVar(&opts.Vary, "vary", nil, "vary one numeric key: KEY=LIST (comma-separated) or KEY=FROM:TO:STEP (repeatable; the last varies fastest)")
	cmd.Flags().StringArrayVar(&opts.Sets, "set", nil, "override one key, key=value (repeatable; dotted keys reach nested keys)")
	switchFlag(cmd, &opts.Verify, "verify", "", "also simulate every point (automatic when the specification has a simulate block)")
	switchFlag(cmd, &opts.Alternatives, "alternatives", "", "add the other applicable methods' figures, in columns METHOD.FIGURE")
	wholeFlag(cmd, &opts.MaxPoints, nil, "max-points", sweep.DefaultMaxPoints, 1, sweep.MaxGridPoints,
		"refuse a grid of more points than this", "a whole number from 1 to 1e9")
	cmd.Flags().StringVar(&opts.Shard, "shard", "", "compute one shard, I/K (the points i with i mod K = I - 1), or auto (a Slurm array task or a Kubernetes indexed Job), and write JSON lines for enough merge")
	wholeFlag(cmd, &opts.Shards, nil, "shards", 0, 1, sweep.MaxShards,
		"with --shard auto in a Kubernetes indexed Job: the number of shards (the Job's completions)", "a whole number from 1 to 1000000")
	addSimFlags(cmd, &opts.Sim)
	cmd.Flags().Lookup("workers").Usage = "points solved at once, each by one goroutine (0: one per core); the result does not depend on it"
	cmd.Flags().Lookup("quiet").Usage = "no progress bar on standard error"
	plotFlag(cmd, &opts.Plot, "the solved quantity against the first --vary key, one curve for each value of the second")
	return cmd
}

// sweepFormatFlag registers -f for sweep and merge: no default value, so
// that the default can follow standard output. formats are the formats
// besides report.SweepFormats (sweep's html).
func sweepFormatFlag(cmd *cobra.Command, p *string, formats ...string) {
	all := append(slices.Clone(report.SweepFormats), formats...)
	cmd.Flags().VarP(&choiceValue{p: p, name: "format", what: "a format", choices: all}, "format", "f",
		"output format: "+orWords(all)+" (default: an aligned table on a terminal, csv otherwise)")
}

// sweepFormat is the format to write: -f, else an aligned table when the
// output is a terminal, else CSV.
func sweepFormat(format, output string, out io.Writer) string {
	switch {
	case format != "":
		return format
	case output == "" && isTerminal(out):
		return "table"
	}
	return "csv"
}

func sweepRun(opts *SweepOptions) error {
	if len(opts.Vary) == 0 {
		return &inputError{msg: "sweep: needs at least one --vary; allowed: --vary KEY=LIST (--vary risk_ratio=0.6,0.7,0.8) or --vary KEY=FROM:TO:STEP (--vary risk_ratio=0.6:0.8:0.05), repeated for a grid"}
	}
	if opts.Shards != 0 && opts.Shard != "auto" {
		return &flagError{flag: fmt.Sprintf("--shards %d", opts.Shards), msg: "is read only with --shard auto (a Kubernetes indexed Job's count)",
			allowed: "--shard auto --shards K, or --shard I/K alone"}
	}
	if opts.ShardGiven && opts.Plot != "" {
		return &flagError{flag: "--plot", msg: "a shard holds part of the grid", allowed: "--plot on enough merge, which joins the shards"}
	}
	if opts.ShardGiven && opts.Format != "" && opts.Format != "json" {
		return &flagError{flag: "--format " + opts.Format, msg: "a shard is written as JSON lines, for enough merge",
			allowed: "-f left out with --shard (or -f json); enough merge -f " + opts.Format + " writes the whole sweep as " + opts.Format}
	}
	if err := outputIsInput(opts.Output, opts.Spec, opts.IO.In); err != nil {
		return err
	}
	if err := plotIsInput(opts.Plot, opts.Output, opts.Spec, opts.IO.In); err != nil {
		return err
	}
	name, data, err := loadSpec(opts.Spec, opts.IO.In)
	if err != nil {
		return err
	}
	base, err := designs.NewBase(name, data, opts.Sets)
	if err != nil {
		return withSource(err, name, data)
	}
	spec := base.Spec()
	grid, err := sweepGrid(base, opts.Vary, opts.MaxPoints)
	if err != nil {
		return err
	}
	if err := checkPlotGrid(opts.Plot, grid); err != nil {
		return err
	}
	var shard sweep.Shard
	switch {
	case !opts.ShardGiven:
	case opts.Shard == "auto":
		shard, err = sweep.ShardFromEnv(opts.LookupEnv, opts.Shards)
	default:
		shard, err = sweep.ParseShard(opts.Shard)
	}
	if err != nil {
		return shardProblem(err)
	}
	format := sweepFormat(opts.Format, opts.Output, opts.IO.Out)

	o := sweep.Options{Workers: opts.Sim.Workers, Full: opts.ShardGiven || format == "json",
		Alternatives: opts.Alternatives, Simulate: opts.Verify || spec.Simulate != nil,
		Shard: shard.Index, Shards: shard.Count, MaxPoints: opts.MaxPoints}
	if o.Simulate {
		if o.Sim, err = sweepSimOptions(opts); err != nil {
			return err
		}
	}
	var bar *pointsBar
	if !opts.Sim.Quiet && isTerminal(opts.IO.ErrOut) {
		bar = &pointsBar{w: opts.IO.ErrOut}
		o.Progress = bar.set
	}
	ctx, caught, stop := stopOnSignal()
	defer stop()
	stopped := func(err error) error {
		if ctx.Err() == nil || !errors.Is(err, context.Canceled) {
			return err
		}
		if caught() == syscall.SIGTERM {
			return errSweepTerminated
		}
		return errSweepInterrupted
	}
	if format == "csv" && !opts.ShardGiven && !o.Simulate && opts.Plot == "" {
		// Written block by block as the grid is solved: a large sweep
		// holds one block of answers, not all of them.
		err := sweepCSVStream(ctx, opts, base, grid, o)
		bar.finish()
		return stopped(err)
	}
	rows, err := sweep.Run(ctx, base, grid, o)
	bar.finish()
	if err != nil {
		return stopped(sweepProblem(err, spec.File))
	}
	if err := allRefused(rows); err != nil {
		return sweepProblem(err, spec.File)
	}
	t := sweep.NewTable(sweep.NewHeader(spec, grid, opts.Vary, o), grid, rows, pointError)
	var buf bytes.Buffer
	if opts.ShardGiven {
		err = sweep.WriteLines(&buf, t, shard)
	} else if format == "html" {
		err = sweepHTML(&buf, opts.IO.ErrOut, t)
	} else {
		err = report.WriteSweep(&buf, t, format)
	}
	if err != nil {
		return err
	}
	if err := emit(opts.IO.Out, opts.Output, buf.Bytes()); err != nil {
		return err
	}
	if err := writePlot(opts.Plot, func() (*plot.Figure, error) { return plot.Sweep(t) }); err != nil {
		return err
	}
	return incomplete(opts.IO.ErrOut, t)
}

// sweepCSVStream runs a sweep written as CSV block by block (see
// sweep.Options.Emit); the bytes are those of the whole table at once.
func sweepCSVStream(ctx context.Context, opts *SweepOptions, base *designs.Base, grid sweep.Grid, o sweep.Options) error {
	spec := base.Spec()
	h := sweep.NewHeader(spec, grid, opts.Vary, o)
	var buf bytes.Buffer
	// About a dozen bytes a cell: grown once, not doubled and copied.
	buf.Grow(min(grid.Size(), 1<<20) * len(h.Columns) * 12)
	w, err := report.NewSweepCSV(&buf, &h)
	if err != nil {
		return err
	}
	failed, total := 0, 0
	o.Emit = func(rows []sweep.Row) error {
		t := sweep.NewTable(h, grid, rows, pointError)
		failed += t.Failed()
		total += len(t.Records)
		return w.Write(t)
	}
	if _, err := sweep.Run(ctx, base, grid, o); err != nil {
		return sweepProblem(err, spec.File)
	}
	if err := emit(opts.IO.Out, opts.Output, buf.Bytes()); err != nil {
		return err
	}
	return incompleteCount(opts.IO.ErrOut, failed, total)
}

// sweepGrid reads the --vary arguments into a grid: each a key the
// specification takes as a number, each key once, and no more points
// than maxPoints.
func sweepGrid(base *designs.Base, vary []string, maxPoints int) (sweep.Grid, error) {
	var g sweep.Grid
	seen := map[string]string{}
	points := 1
	for _, arg := range vary {
		a, err := sweep.ParseVary(arg)
		if err != nil {
			return g, varyProblem(arg, err)
		}
		if err := base.CheckKey(a.Key); err != nil {
			return g, varyProblem(arg, err)
		}
		if prev, ok := seen[a.Key]; ok {
			return g, &flagError{flag: "--vary " + arg, msg: fmt.Sprintf("varies %s a second time (after --vary %s)", a.Key, prev),
				allowed: "each key in one --vary, with all its values"}
		}
		seen[a.Key] = arg
		for _, set := range base.Spec().Overrides {
			if k, _, _ := strings.Cut(set, "="); strings.TrimSpace(k) == a.Key {
				return g, &flagError{flag: "--vary " + arg, msg: fmt.Sprintf("varies %s, which --set %s also sets", a.Key, set),
					allowed: "one of them: --vary for a grid of values, --set for one value"}
			}
		}
		g.Axes = append(g.Axes, a)
		if n := len(a.Values); points > math.MaxInt/max(n, 1) {
			points = math.MaxInt
		} else {
			points *= n
		}
	}
	if points > maxPoints {
		size := thousands(points)
		if points == math.MaxInt {
			size = "more than " + size
		}
		return g, &flagError{flag: "--vary", msg: fmt.Sprintf("the grid has %s points, more than --max-points %s", size, thousands(maxPoints)),
			allowed: "fewer values, or --max-points raised (up to 1e9; a grid that large is better sharded with --shard)"}
	}
	return g, nil
}

// thousands writes n with thousands separators: 1,000,000.
func thousands(n int) string {
	s := strconv.Itoa(n)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// varyProblem words a --vary argument that cannot be used as one line
// naming the argument.
func varyProblem(arg string, err error) error {
	var se *designs.SpecError
	var ge *sweep.GridError
	msg := err.Error()
	switch {
	case errors.As(err, &ge):
		msg = ge.Msg
	case errors.As(err, &se):
		msg = se.Msg
		if se.Key != "" {
			msg = se.Key + ": " + msg
		}
	}
	msg = strings.TrimPrefix(msg, "--vary "+arg+": ")
	msg = strings.TrimPrefix(msg, "--vary: ")
	m, allowed := splitAllowed(msg)
	return &flagError{flag: "--vary " + arg, msg: m, allowed: allowed}
}

// shardProblem words a shard that cannot be used.
func shardProblem(err error) error {
	var se *sweep.ShardError
	if errors.As(err, &se) {
		return &flagError{flag: se.Flag, msg: se.Msg, allowed: se.Allowed}
	}
	return err
}

// sweepProblem maps an error of the sweep's run: a simulation's setting
// or a grid the sweep refuses is bad input (exit status 2).
func sweepProblem(err error, file string) error {
	var ie *designs.InputError
	var ge *sweep.GridError
	switch {
	case errors.As(err, &ie):
		if rest, ok := strings.CutPrefix(ie.Msg, file+": "); ok && file != "" {
			return &inputError{file: file, msg: rest}
		}
		return &inputError{msg: err.Error()}
	case errors.As(err, &ge):
		return &inputError{msg: err.Error()}
	}
	return err
}

// allRefused returns the error of a sweep whose every point's simulation
// was refused for its settings (a precision survey, which has no test, or
// a limit of the flags): bad input of the whole sweep, not of its points.
func allRefused(rows []sweep.Row) error {
	var first error
	for _, r := range rows {
		var ie *designs.InputError
		if !errors.As(r.Err, &ie) {
			return nil
		}
		if first == nil {
			first = r.Err
		}
	}
	return first
}

// sweepSimOptions are the simulation's settings from the flags.
func sweepSimOptions(opts *SweepOptions) (designs.SimOptions, error) {
	f := opts.Sim
	if f.ReplicatesGiven && f.Replicates > f.MaxReplicates {
		return designs.SimOptions{}, &flagError{flag: "--replicates", msg: fmt.Sprintf("%d is more than --max-replicates (%d)", f.Replicates, f.MaxReplicates), allowed: "at most --max-replicates, or raise --max-replicates"}
	}
	o := designs.SimOptions{MaxSeconds: f.MaxSeconds, MaxReplicates: f.MaxReplicates, MaxMemory: f.MaxMemory << 20}
	if f.ReplicatesGiven {
		o.Replicates = f.Replicates
	}
	if f.SeedGiven {
		o.Seed, o.SeedSet = uint64(f.Seed), true
	}
	return o, nil
}

// pointError is the JSON error object of a point that could not be
// planned: the object -f json writes for the error (the first, when
// there are several).
func pointError(err error) json.RawMessage {
	objs := errorObjects(err, nil)
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if len(objs) == 0 || enc.Encode(objs[0]) != nil {
		return json.RawMessage(`{"message":"internal error: the error cannot be written as JSON"}`)
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n"))
}

// incomplete ends a sweep or a merge whose table has points that could not
// be planned: a note on standard error and exit status 6.
func incomplete(w io.Writer, t *sweep.Table) error {
	return incompleteCount(w, t.Failed(), len(t.Records))
}

// incompleteCount is incomplete for failed of total points.
func incompleteCount(w io.Writer, failed, total int) error {
	if failed == 0 {
		return nil
	}
	what := fmt.Sprintf("%d of %d points", failed, total)
	if total == 1 {
		what = "the only point"
	}
	fmt.Fprintf(w, "enough: note: %s could not be planned; the error column says why (exit status %d)\n",
		what, ExitSweepIncomplete)
	return &verdictStatus{verdict: "sweep incomplete", code: ExitSweepIncomplete}
}

// pointsBar draws the points done on a terminal: done, total and the time
// left.
type pointsBar struct {
	w   io.Writer
	mu  sync.Mutex
	bar *progressbar.ProgressBar
}

func (p *pointsBar) set(done, total int) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar == nil {
		p.bar = progressbar.NewOptions(total,
			progressbar.OptionSetWriter(p.w),
			progressbar.OptionSetDescription("points"),
			progressbar.OptionShowCount(),
			progressbar.OptionSetPredictTime(true),
			progressbar.OptionThrottle(100*time.Millisecond),
			progressbar.OptionSetWidth(30),
		)
	}
	_ = p.bar.Set(done)
}

// finish ends the bar's line (nothing when no bar was drawn).
func (p *pointsBar) finish() {
	if p == nil {
		return
	}
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.bar != nil {
		_ = p.bar.Finish()
		fmt.Fprintln(p.w)
	}
}
