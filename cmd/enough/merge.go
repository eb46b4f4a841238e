package main

import (
	"bytes"
	"errors"
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"enough/designs/plot"
	"enough/designs/report"
	"enough/designs/sweep"
)

// MergeOptions are the inputs of `enough merge`.
type MergeOptions struct {
	IO *IO
	// Files are the shard files, in any order ("-" reads standard input).
	Files []string
	// Format is -f as given ("" when not given: an aligned table on a
	// terminal, CSV otherwise).
	Format string
	Output string
	// Plot is --plot: the file to draw the sweep to ("" for none).
	Plot string
}

// NewCmdMerge builds `enough merge`.
func NewCmdMerge(streams *IO) *cobra.Command {
	opts := &MergeOptions{IO: streams}
	cmd := &cobra.Command{
		Use:   "merge SHARD_FILE...",
		Short: "Join the shards of a sweep into its whole output",
		Long: `Join the JSON-lines files that enough sweep --shard wrote into the whole
sweep's output, in grid order: byte for byte what the unsharded sweep writes
in the same format. The files may come in any order, and the shards need not
have been cut alike; "-" reads one from standard input.

Refused (exit status 2), naming the files: shards of different sweeps (the
specification, --set, --vary, the simulation's settings, --alternatives or
the version differ), a point given twice, and points missing. As with enough
sweep, the exit status is 6 when some points could not be planned.`,
		Example: `  enough merge shards/shard-*.jsonl -o sweep.csv
  enough merge shards/*.jsonl -f markdown`,
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) == 0 {
				return &inputError{msg: "merge: needs the shard files; allowed: enough merge SHARD_FILE... (the files enough sweep --shard wrote)"}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Files = args
			return mergeRun(opts)
		},
	}
	sweepFormatFlag(cmd, &opts.Format, "html")
	outputFlag(cmd, &opts.Output)
	plotFlag(cmd, &opts.Plot, "the solved quantity against the first --vary key, one curve for each value of the second")
	return cmd
}

func mergeRun(opts *MergeOptions) error {
	if err := outputIsShard("--output", opts.Output, opts.Files); err != nil {
		return err
	}
	if err := outputIsShard("--plot", opts.Plot, opts.Files); err != nil {
		return err
	}
	if err := plotIsInput(opts.Plot, opts.Output, "", nil); err != nil {
		return err
	}
	var inputs []sweep.Input
	stdin := false
	for _, name := range opts.Files {
		if name == "-" {
			if stdin {
				return &inputError{msg: "merge: - (standard input) is given twice; allowed: - once"}
			}
			stdin = true
			inputs = append(inputs, sweep.Input{Name: "(standard input)", R: opts.IO.In})
			continue
		}
		f, err := os.Open(name)
		if err != nil {
			return &inputError{file: name, msg: "cannot be read: " + describe(err)}
		}
		defer f.Close()
		if st, err := f.Stat(); err == nil && st.IsDir() {
			return &inputError{file: name, msg: "is a directory; allowed: the shard files enough sweep --shard wrote"}
		}
		inputs = append(inputs, sweep.Input{Name: name, R: f})
	}
	t, err := sweep.Merge(inputs)
	var me *sweep.MergeError
	if errors.As(err, &me) {
		return &inputError{msg: "merge: " + me.Msg}
	}
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if format := sweepFormat(opts.Format, opts.Output, opts.IO.Out); format == "html" {
		err = sweepHTML(&buf, opts.IO.ErrOut, t)
	} else {
		err = report.WriteSweep(&buf, t, format)
	}
	if err != nil {
		return err
	}
	if err := writePlot(opts.Plot, func() (*plot.Figure, error) { return plot.Sweep(t) }); err != nil {
		return err
	}
	if err := emit(opts.IO.Out, opts.Output, buf.Bytes()); err != nil {
		return err
	}
	return incomplete(opts.IO.ErrOut, t)
}

// outputIsShard refuses an output file that is one of the shard files
// being merged (the same file by any name), which the merge would
// replace.
func outputIsShard(flag, output string, files []string) error {
	if output == "" {
		return nil
	}
	out, err := os.Stat(output)
	if err != nil || !out.Mode().IsRegular() {
		return nil
	}
	for _, name := range files {
		if in, err := os.Stat(name); err == nil && os.SameFile(in, out) {
			return &flagError{flag: flag + " " + output, msg: fmt.Sprintf("is the shard file %s: the output would replace it", name),
				allowed: "another file name"}
		}
	}
	return nil
}
