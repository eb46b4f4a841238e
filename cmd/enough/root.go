// The cobra commands of enough are thin: they parse flags, call designs and
// designs/report, and map errors to the exit statuses below.

package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"regexp"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
)

// Exit statuses of enough: one table, documented in README.md ("Exit
// status") and in the root command's help, which every command follows.
// Statuses 3 to 5 are the verdicts of `enough review`; 6 is that of
// `enough sweep` and `enough merge`. No command may give them another
// meaning.
const (
	ExitOK              = 0   // success
	ExitFailure         = 1   // a failure that is not the input's: I/O, an internal error, a plan that cannot be computed
	ExitInput           = 2   // bad input: the specification, a flag or an argument
	ExitUnderPowered    = 3   // a review finds the stated size under-powered
	ExitOversized       = 4   // a review finds the stated size larger than needed
	ExitNoVerdict       = 5   // a review cannot reach a verdict: the protocol leaves out what it needs
	ExitSweepIncomplete = 6   // a sweep finished with some points that could not be planned
	ExitInterrupted     = 130 // interrupted (SIGINT, 128 + 2); a simulation's output holds what was done, marked partial
	ExitTerminated      = 143 // terminated (SIGTERM, 128 + 15); a simulation's output holds what was done, marked partial
)

// exitTable is the root command's help for the exit statuses; it says what
// the constants above say.
const exitTable = `Exit status:
  0    success
  1    a failure that is not the input's (the output cannot be written, the
       plan cannot be computed, an internal error)
  2    bad input: the specification, a flag or an argument
  3    a review finds the stated size under-powered
  4    a review finds the stated size larger than needed
  5    a review cannot reach a verdict: the protocol leaves out what it needs
  6    a sweep finished with some points that could not be planned
  130  interrupted (Ctrl-C, SIGINT); a simulation's output holds the
       replicates done, marked partial
  143  terminated (SIGTERM); a simulation's output holds the replicates
       done, marked partial
Statuses 3 to 5 are the verdicts of enough review; 6 is that of enough
sweep and enough merge.`

// IO holds the streams of a command.
type IO struct {
	In     io.Reader
	Out    io.Writer
	ErrOut io.Writer
}

// inputError marks a usage problem (exit status 2). file, when set, is
// the specification the problem is about: the text line starts with it,
// and the JSON form gives it as its file.
type inputError struct{ file, msg string }

func (e *inputError) Error() string {
	if e.file != "" {
		return e.file + ": " + e.msg
	}
	return e.msg
}

// commands names the documented commands, for the message on an unknown one.
var commands = []string{"plan", "simulate", "review", "sweep", "merge", "new", "methods"}

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

Errors are written to standard error, one line each ("enough: ..."); with
-f json, as one JSON object on one line.

` + exitTable,
		SilenceUsage:  true,
		SilenceErrors: true,
		Version:       designs.Version,
	}
	root.SetOut(streams.Out)
	root.SetErr(streams.ErrOut)
	root.SetFlagErrorFunc(flagProblem)
	root.AddCommand(NewCmdPlan(streams, nil), NewCmdSimulate(streams), NewCmdReview(streams, nil),
		NewCmdSweep(streams), NewCmdMerge(streams), NewCmdNew(streams), NewCmdMethods(streams))
	return root
}

// Execute runs the command line args and returns the exit status. An error
// is printed once on ErrOut: one line "enough: ..." per error, or, when the
// command was asked for JSON (-f json), one JSON object on one line.
func Execute(args []string, streams *IO) (code int) {
	root := NewRootCmd(streams)
	defer func() {
		// A bug must still end in one line and a documented status.
		if p := recover(); p != nil {
			err := fmt.Errorf("internal error: %v (please report this with the specification)", p)
			printError(streams.ErrOut, err, wantsJSON(root, args))
			code = ExitFailure
		}
	}()
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return ExitOK
	}
	var verdict *verdictStatus
	if errors.As(err, &verdict) {
		// A review's verdict: the review is written, nothing to report.
		return verdict.code
	}
	err = unknownCommand(root, err)
	printError(streams.ErrOut, err, wantsJSON(root, args))
	return exitCode(err)
}

// printError writes err to w: as JSON, or as one "enough: " line for each line
// of its message.
func printError(w io.Writer, err error, asJSON bool) {
	if asJSON {
		fmt.Fprintf(w, "%s\n", errorJSON(err))
		return
	}
	for _, l := range strings.Split(err.Error(), "\n") {
		if l = strings.TrimSpace(l); l != "" {
			fmt.Fprintf(w, "enough: %s\n", l)
		}
	}
}

// reUnknownCommand reads the name out of cobra's message for a command it
// does not know.
var reUnknownCommand = regexp.MustCompile(`^unknown command "(.*)" for "`)

// unknownCommand rewrites cobra's message for an unknown command (several
// lines, with its own suggestions) as one line in enough's words.
func unknownCommand(root *cobra.Command, err error) error {
	m := reUnknownCommand.FindStringSubmatch(err.Error())
	if m == nil {
		return err
	}
	if s := root.SuggestionsFor(m[1]); len(s) > 0 {
		return &inputError{msg: fmt.Sprintf("%s: unknown command; did you mean %s?", m[1], orWords(s))}
	}
	return &inputError{msg: fmt.Sprintf("%s: unknown command; allowed: %s (enough --help describes them)", m[1], orWords(commands))}
}

// wantsJSON reports whether the command line asks its command for JSON
// output (-f json, --format json, --format=json, -fjson; the last one
// given counts), reading the arguments as the flag parser does. Errors of a
// command without a --format flag are always text.
func wantsJSON(root *cobra.Command, args []string) bool {
	cmd, _, err := root.Find(args)
	if err != nil || cmd.Flags().Lookup("format") == nil {
		return false
	}
	fs := cmd.Flags()
	format := ""
	for i := 0; i < len(args); i++ {
		a := args[i]
		switch {
		case a == "--":
			return format == "json"
		case strings.HasPrefix(a, "--"):
			name, val, inline := strings.Cut(a[2:], "=")
			f := fs.Lookup(name)
			if f == nil || (!inline && f.NoOptDefVal != "") {
				continue
			}
			if !inline && i+1 < len(args) {
				i++
				val = args[i]
			}
			if f.Name == "format" {
				format = val
			}
		case strings.HasPrefix(a, "-") && len(a) > 1:
			// A group of shorthands (-qf json): the first that takes a
			// value takes the rest of the group, or the next argument.
			for j := 1; j < len(a); j++ {
				f := fs.ShorthandLookup(a[j : j+1])
				if f == nil || f.NoOptDefVal != "" {
					continue
				}
				val := strings.TrimPrefix(a[j+1:], "=")
				if j+1 == len(a) && i+1 < len(args) {
					i++
					val = args[i]
				}
				if f.Name == "format" {
					format = val
				}
				break
			}
		}
	}
	return format == "json"
}

// exitCode maps an error to its exit status; a list of errors has the
// status of its first.
func exitCode(err error) int {
	for e := err; e != nil; e = errors.Unwrap(e) {
		if list, ok := errorList(e); ok && len(list) > 0 {
			return exitCode(list[0])
		}
	}
	var (
		se *designs.SpecError
		ie *inputError
		fe *flagError
		de *designs.InputError
		vs *verdictStatus
	)
	switch {
	case errors.As(err, &vs):
		return vs.code
	case errors.Is(err, errInterrupted), errors.Is(err, errSweepInterrupted):
		return ExitInterrupted
	case errors.Is(err, errTerminated), errors.Is(err, errSweepTerminated):
		return ExitTerminated
	case errors.As(err, &se), errors.As(err, &ie), errors.As(err, &fe), errors.As(err, &de):
		return ExitInput
	case isCobraUsage(err):
		return ExitInput
	}
	return ExitFailure
}

// isCobraUsage recognises cobra's own usage errors that reach Execute in
// its words (an unknown help topic, a bad flag syntax).
func isCobraUsage(err error) bool {
	msg := err.Error()
	for _, p := range []string{"unknown command", "unknown help topic", "bad flag syntax", "accepts ", "requires "} {
		if strings.HasPrefix(msg, p) {
			return true
		}
	}
	return false
}

// DefaultIO returns the process's streams.
func DefaultIO() *IO {
	return &IO{In: os.Stdin, Out: os.Stdout, ErrOut: os.Stderr}
}
