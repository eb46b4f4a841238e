package main

import (
	"bytes"
	"fmt"

	"github.com/spf13/cobra"

	"enough/designs"
	"enough/designs/report"
	"enough/designs/review"
)

// ReviewOptions are the inputs of `enough review`.
type ReviewOptions struct {
	IO *IO
	// Spec is the specification's path; "-" reads standard input.
	Spec   string
	Format string
	Output string
	Sets   []string
}

// verdictStatus ends a review whose verdict is not "consistent" with the
// verdict's exit status (3, 4 or 5). The review has been written in full;
// there is nothing to print on standard error.
type verdictStatus struct {
	verdict string
	code    int
}

func (v *verdictStatus) Error() string { return "review verdict: " + v.verdict }

// verdictCodes are the exit statuses of the verdicts (README, "Exit
// status").
var verdictCodes = map[string]int{
	review.Consistent:       ExitOK,
	review.UnderPowered:     ExitUnderPowered,
	review.LargerThanNeeded: ExitOversized,
	review.Incomplete:       ExitNoVerdict,
}

// NewCmdReview builds `enough review`. runF replaces the run step in tests.
func NewCmdReview(streams *IO, runF func(*ReviewOptions) error) *cobra.Command {
	opts := &ReviewOptions{IO: streams}
	cmd := &cobra.Command{
		Use:   "review SPEC.yaml",
		Short: "Recheck the sample size a protocol states and say whether it holds",
		Long: `Recheck the sample size a protocol states. The specification holds the
protocol's assumptions, as for plan, and a claimed: block with the figures the
protocol states (start one with enough new DESIGN --review). The review
recomputes the plan under those assumptions, judges each stated figure,
looks for the common slips that reproduce a figure that does not hold, shows
which assumption carries the plan, lists what the protocol left out, and
writes the requests to the investigators.

The exit status is the verdict: 0 consistent, 3 under-powered, 4 larger than
needed, 5 incomplete (the protocol leaves out what the recheck needs); 2 is
bad input. The review is written for every verdict. With "-", reads the
specification from standard input.`,
		Example: `  enough new trial --review > protocol.yaml
  enough review protocol.yaml
  enough review protocol.yaml -f json -o review.json
  enough review protocol.yaml --set claimed.n=300`,
		Args: reviewArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Spec = args[0]
			if runF != nil {
				return runF(opts)
			}
			return reviewRun(opts)
		},
	}
	formatFlag(cmd, &opts.Format, report.Formats)
	outputFlag(cmd, &opts.Output)
	cmd.Flags().StringArrayVar(&opts.Sets, "set", nil, "override one key, key=value (repeatable; dotted keys such as claimed.n reach nested keys)")
	return cmd
}

// reviewArgs checks the arguments of enough review: exactly one
// specification. Without one, it points to the review starter, from which
// a reviewer writes the specification of the protocol to recheck.
func reviewArgs(cmd *cobra.Command, args []string) error {
	if len(args) == 0 {
		return &inputError{msg: "review: needs a specification file; allowed: enough review SPEC.yaml, or - to read it from standard input (enough new trial --review prints a starter to fill in with what the protocol states; other designs: enough new DESIGN --review)"}
	}
	return specArgs("review", true)(cmd, args)
}

// reviewRun reads the specification, runs the recheck, writes the review
// and returns the verdict's exit status as a verdictStatus (nil when the
// stated figures are consistent).
func reviewRun(opts *ReviewOptions) error {
	if err := outputIsInput(opts.Output, opts.Spec, opts.IO.In); err != nil {
		return err
	}
	name, data, err := loadSpec(opts.Spec, opts.IO.In)
	if err != nil {
		return err
	}
	in, err := designs.ParseReview(name, data, opts.Sets)
	if err != nil {
		return withSource(err, name, data)
	}
	rep, err := review.Run(in)
	if err != nil {
		return withSource(err, name, data)
	}
	code, ok := verdictCodes[rep.Verdict]
	if !ok {
		return fmt.Errorf("internal error: the review gave the verdict %q, which is not one of consistent, under-powered, larger-than-needed or incomplete (please report this with the specification)", rep.Verdict)
	}
	var buf bytes.Buffer
	src := report.ReviewSource{File: name, Data: data, Sets: opts.Sets}
	if opts.Format == "html" {
		err = reviewHTML(&buf, opts.IO.ErrOut, rep, in, src)
	} else {
		err = report.WriteReview(&buf, rep, in, src, opts.Format)
	}
	if err != nil {
		return err
	}
	if err := emit(opts.IO.Out, opts.Output, buf.Bytes()); err != nil {
		return err
	}
	if code != ExitOK {
		return &verdictStatus{verdict: rep.Verdict, code: code}
	}
	return nil
}
