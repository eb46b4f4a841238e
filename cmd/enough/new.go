package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
)

// newDesigns says what `enough new` accepts, for its help and its errors.
const newDesigns = "cohort, case-control, trial or cross-sectional"

// starterList is the table of starters in the help of enough new, one a
// line, from designs.Starters.
func starterList() string {
	var b strings.Builder
	for _, c := range designs.Starters {
		cmd := "  " + c.Command()
		if len(cmd) > 52 {
			fmt.Fprintf(&b, "%s\n%53s%s\n", cmd, "", c.Words)
			continue
		}
		fmt.Fprintf(&b, "%-53s%s\n", cmd, c.Words)
	}
	return strings.TrimSuffix(b.String(), "\n")
}

// NewCmdNew builds `enough new DESIGN`.
func NewCmdNew(streams *IO) *cobra.Command {
	var goal, outcome string
	var forReview bool
	cmd := &cobra.Command{
		Use:   "new DESIGN",
		Short: "Print a commented starter specification for a design",
		Long: `Print a commented starter specification for DESIGN (cohort,
case-control, trial or cross-sectional), to save and edit. Every starter
plans as it stands. The starters are:

` + starterList() + `

--outcome continuous applies to cohort, trial and cross-sectional;
--outcome time-to-event to trial; --outcome rate to cohort; --goal precision
to cross-sectional, cohort and case-control; --goal accuracy to
cross-sectional.

With --review, any of these becomes a starter for enough review: a claimed:
block for the figures the protocol states, and a placeholder "[as stated,
e.g. …]" for every value to copy from the protocol. It is refused until the
placeholders are filled in.`,
		Example: "  enough new trial > my-trial.yaml\n  enough new cohort --outcome continuous > my-cohort.yaml\n  enough new trial --review > protocol.yaml",
		Args: func(_ *cobra.Command, args []string) error {
			switch {
			case len(args) == 0:
				return &inputError{msg: "new: name a design; allowed: " + newDesigns + " (for example enough new trial > study.yaml)"}
			case len(args) > 1:
				return &inputError{msg: fmt.Sprintf("new: %d designs given (%s); allowed: one design: %s", len(args), strings.Join(args, ", "), newDesigns)}
			}
			return nil
		},
		ValidArgs: designs.Designs,
		RunE: func(cmd *cobra.Command, args []string) error {
			starter := designs.Starter
			if forReview {
				starter = designs.ReviewStarter
			}
			data, err := starter(args[0], goal, outcome)
			if err != nil {
				return &inputError{msg: "new: " + err.Error()}
			}
			_, err = streams.Out.Write(data)
			return err
		},
	}
	cmd.Flags().StringVar(&goal, "goal", "", "comparison (default); precision (cross-sectional: one prevalence or mean; cohort: a risk ratio; case-control: an odds ratio); accuracy (cross-sectional: sensitivity and specificity)")
	cmd.Flags().StringVar(&outcome, "outcome", "", "binary (default); continuous (cohort, trial, cross-sectional); time-to-event (trial); rate (cohort)")
	switchFlag(cmd, &forReview, "review", "", "a starter for enough review: a claimed: block for what the protocol states, and placeholders for its assumptions")
	return cmd
}
