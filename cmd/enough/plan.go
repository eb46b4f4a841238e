package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
	"enough/designs/plot"
	"enough/designs/report"
	"enough/examples"
)

// PlanOptions are the inputs of `enough plan`.
type PlanOptions struct {
	IO *IO
	// Command is the verb that runs (plan or simulate), for messages.
	Command string

	// Spec is the specification's path; "" plans the embedded demo and "-"
	// reads standard input.
	Spec   string
	Format string
	Output string
	Sets   []string

	// Verify adds the simulation check; Exact adds exact power by
	// enumeration (two binomial groups).
	Verify bool
	Exact  bool
	Sim    SimFlags
	// Plot is --plot: the file to draw the plan to ("" for none).
	Plot string
}

// SimFlags are the flags of a simulation.
type SimFlags struct {
	Workers       int
	Quiet         bool
	MaxSeconds    float64
	MaxMemory     int64 // MiB
	Replicates    int64
	Seed          int64
	MaxReplicates int64
	// ReplicatesGiven and SeedGiven say whether --replicates and --seed
	// were given: otherwise the specification's (or the default) holds.
	ReplicatesGiven, SeedGiven bool
}

// The ranges of the simulation's counts, checked as each flag is read
// (README: "Flags of the simulation").
const (
	maxWorkersFlag = 10_000  // more than MaxWorkersPerCore per core are cut anyway
	maxMemoryFlag  = 1 << 20 // MiB: 1 TiB
	minReplicates  = 100     // fewer give a standard error of 5 points
	defMemoryMiB   = designs.DefaultMaxMemory >> 20
)

// addSimFlags registers the simulation flags on cmd.
func addSimFlags(cmd *cobra.Command, f *SimFlags) {
	wholeFlag(cmd, &f.Workers, nil, "workers", 0, 0, maxWorkersFlag,
		fmt.Sprintf("goroutines for the simulation (0: one per core; more than %d per core are cut to %d per core); the result does not depend on it",
			designs.MaxWorkersPerCore, designs.MaxWorkersPerCore),
		fmt.Sprintf("a whole number from 0 (one per core) to %d", maxWorkersFlag))
	switchFlag(cmd, &f.Quiet, "quiet", "q", "no progress bar on standard error")
	decimalFlag(cmd, &f.MaxSeconds, "max-seconds", 600, 0, "refuse a simulation predicted to take longer than this many seconds (0: no limit)",
		"a number of seconds: 0 (no limit) or more")
	wholeFlag(cmd, &f.MaxMemory, nil, "max-memory", defMemoryMiB, 1, maxMemoryFlag,
		"scratch memory the simulation's workers may hold together, in MiB (1 to 1048576): fewer workers are used to stay within it, and a study whose single worker needs more is refused",
		fmt.Sprintf("a whole number of MiB from 1 to %d", maxMemoryFlag))
	wholeFlag(cmd, &f.Replicates, &f.ReplicatesGiven, "replicates", 0, minReplicates, designs.MaxReplicates,
		"override simulate.replicates: from 100 to --max-replicates (default: the specification's, else 10000)",
		fmt.Sprintf("a whole number from %d to %s, and at most --max-replicates (1e6 is read as 1000000)", minReplicates, "1e12"))
	wholeFlag(cmd, &f.Seed, &f.SeedGiven, "seed", 0, 0, designs.MaxSeed,
		"override simulate.seed: from 0 to 2^53 (default: the specification's, else 1)",
		fmt.Sprintf("a whole number from 0 to %d (2^53)", int64(designs.MaxSeed)))
	wholeFlag(cmd, &f.MaxReplicates, nil, "max-replicates", designs.DefaultMaxReplicates, minReplicates, designs.MaxReplicates,
		"refuse more replicates than this; at most 1e12",
		fmt.Sprintf("a whole number from %d to %s (1e9 is read as 1000000000)", minReplicates, "1e12"))
}

// specArgs checks the arguments of a command that reads one specification:
// at most one, or (required) exactly one.
func specArgs(verb string, required bool) cobra.PositionalArgs {
	return func(_ *cobra.Command, args []string) error {
		switch {
		case len(args) > 1:
			return &inputError{msg: fmt.Sprintf("%s: %d specifications given (%s); allowed: one specification at most (run enough %s once per file)",
				verb, len(args), strings.Join(args, ", "), verb)}
		case len(args) == 0 && required:
			return &inputError{msg: fmt.Sprintf("%s: needs a specification file; allowed: enough %s SPEC.yaml, or - to read it from standard input (enough plan --verify simulates the built-in demonstration study)",
				verb, verb)}
		}
		return nil
	}
}

// NewCmdPlan builds `enough plan`. runF replaces the run step in tests.
func NewCmdPlan(streams *IO, runF func(*PlanOptions) error) *cobra.Command {
	opts := &PlanOptions{IO: streams, Command: "plan"}
	cmd := &cobra.Command{
		Use:   "plan [SPEC.yaml]",
		Short: "Compute the sample size, power or detectable effect of a study",
		Long: `Compute what the specification asks (solve: n, power or effect) with the
chosen closed-form method, and write a protocol-ready summary.

Without a file, plans the embedded demonstration study. With "-", reads the
specification from standard input. One specification at most.`,
		Example: `  enough plan study.yaml
  enough plan study.yaml --format json -o plan.json
  enough plan study.yaml --set power=0.9 --set sources.power="funder's requirement"`,
		Args: specArgs("plan", false),
		RunE: func(cmd *cobra.Command, args []string) error {
			if len(args) == 1 {
				opts.Spec = args[0]
			}
			if runF != nil {
				return runF(opts)
			}
			return planRun(opts)
		},
	}
	formatFlag(cmd, &opts.Format, report.Formats)
	outputFlag(cmd, &opts.Output)
	cmd.Flags().StringArrayVar(&opts.Sets, "set", nil, "override one key, key=value (repeatable; dotted keys such as sources.alpha reach nested keys)")
	switchFlag(cmd, &opts.Verify, "verify", "", "verify the plan by simulating the study and its planned test (also when the specification has a simulate block)")
	switchFlag(cmd, &opts.Exact, "exact", "", "exact power by enumeration of both binomial counts (two-group binary outcomes)")
	addSimFlags(cmd, &opts.Sim)
	plotFlag(cmd, &opts.Plot, "power against the size around the plan (against the effect when solving effect)")
	return cmd
}

func planRun(opts *PlanOptions) error {
	if err := setsNeedFile(opts.Command, opts.Spec, opts.Sets); err != nil {
		return err
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
	spec, err := designs.Parse(name, data, opts.Sets)
	if err != nil {
		return withSource(err, name, data)
	}
	res, err := designs.Plan(spec)
	if err != nil {
		return withSource(err, name, data)
	}
	if opts.Exact && spec.Method != "exact" {
		// --exact is method: exact on top of the chosen closed form.
		if err := designs.Exact(spec, res); err != nil {
			return err
		}
	}
	var stopped error
	if opts.Verify || spec.Simulate != nil {
		// Listen for SIGINT and SIGTERM until the output is written, so
		// that neither cuts it short.
		ctx, caught, stop := stopOnSignal()
		defer stop()
		stopped = simulate(ctx, caught, spec, res, opts)
		if stopped != nil && !errors.Is(stopped, errInterrupted) && !errors.Is(stopped, errTerminated) {
			return stopped
		}
	}
	var buf bytes.Buffer
	if opts.Format == "html" {
		err = planHTML(&buf, opts.IO.ErrOut, res, &plot.Source{File: name, Data: data, Sets: opts.Sets})
	} else {
		err = report.Write(&buf, res, opts.Format)
	}
	if err != nil {
		return err
	}
	if err := emit(opts.IO.Out, opts.Output, buf.Bytes()); err != nil {
		return err
	}
	if err := writePlot(opts.Plot, func() (*plot.Figure, error) {
		return plot.ForPlan(res, &plot.Source{File: name, Data: data, Sets: opts.Sets})
	}); err != nil {
		return err
	}
	return stopped
}

// outputError is an output file that cannot be written: a failure that is
// not the input's (exit status 1). It reads "cannot write PATH: why;
// allowed: what is"; its JSON form gives the path as its file.
type outputError struct {
	path, why, allowed string
}

func (e *outputError) Error() string {
	msg := "cannot write " + e.path + ": " + e.why
	if e.allowed != "" {
		msg += "; allowed: " + e.allowed
	}
	return msg
}

// emit writes data to path atomically, or to out when path is empty.
func emit(out io.Writer, path string, data []byte) error {
	if path == "" {
		_, err := out.Write(data)
		return err
	}
	st, err := os.Stat(path)
	switch {
	case err == nil && st.IsDir():
		return &outputError{path: path, why: "it is a directory", allowed: "a file name"}
	case err == nil && !st.Mode().IsRegular():
		// A device or a pipe (such as /dev/stdout): write to it as it is.
		f, err := os.OpenFile(path, os.O_WRONLY, 0)
		if err != nil {
			return &outputError{path: path, why: describe(err)}
		}
		_, werr := f.Write(data)
		if cerr := f.Close(); werr == nil {
			werr = cerr
		}
		if werr != nil {
			return &outputError{path: path, why: describe(werr)}
		}
		return nil
	}
	// Replace the file a symbolic link points to, not the link itself.
	if real, err := filepath.EvalSymlinks(path); err == nil {
		path = real
	}
	if err := writeAtomic(path, data); err != nil {
		dir := filepath.Dir(path)
		if _, derr := os.Stat(dir); errors.Is(derr, fs.ErrNotExist) {
			return &outputError{path: path, why: "the directory " + dir + " does not exist", allowed: "a file in an existing directory"}
		}
		return &outputError{path: path, why: describe(err)}
	}
	return nil
}

// setsNeedFile refuses --set without a specification: it would change the
// built-in demonstration study and report a number for a study nobody
// wrote.
func setsNeedFile(command, spec string, sets []string) error {
	if spec == "" && len(sets) > 0 {
		return &inputError{msg: fmt.Sprintf("--set %s: needs a specification file; without one the built-in demonstration study is planned as it stands; allowed: a file (start one with `enough new DESIGN > study.yaml`, then `enough %s study.yaml --set %s`)", sets[0], command, sets[0])}
	}
	return nil
}

// loadSpec reads the specification named by path ("" for the embedded demo,
// "-" for standard input), refusing files over designs.MaxSpecBytes.
func loadSpec(path string, stdin io.Reader) (string, []byte, error) {
	var r io.Reader
	name := path
	switch path {
	case "":
		data, err := examples.Files.ReadFile(examples.Demo)
		if err != nil {
			return "", nil, err
		}
		return "examples/" + examples.Demo + " (embedded demo)", data, nil
	case "-":
		name, r = "(standard input)", stdin
	default:
		f, err := os.Open(path)
		if err != nil {
			return "", nil, &designs.SpecError{File: path, Msg: "cannot be read: " + describe(err)}
		}
		defer f.Close()
		if st, err := f.Stat(); err == nil && st.IsDir() {
			return "", nil, &designs.SpecError{File: path, Msg: "is a directory; allowed: a YAML specification file"}
		}
		r = f
	}
	data, err := io.ReadAll(io.LimitReader(r, designs.MaxSpecBytes+1))
	if err != nil {
		return "", nil, &designs.SpecError{File: name, Msg: "cannot be read: " + describe(err)}
	}
	return name, data, nil
}

func describe(err error) string {
	switch {
	case errors.Is(err, fs.ErrNotExist):
		return "no such file"
	case errors.Is(err, fs.ErrPermission):
		return "permission denied"
	}
	if pe, ok := err.(*fs.PathError); ok {
		return pe.Err.Error()
	}
	return err.Error()
}
