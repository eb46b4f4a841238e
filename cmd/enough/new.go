package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
)

// newDesigns says what `enough new` accepts, for its help and its errors.
const newDesigns = "cohort, case-control, trial or cross-sectional"

// NewCmdNew builds `enough new DESIGN`.
func NewCmdNew(streams *IO) *cobra.Command {
	var goal, outcome string
	cmd := &cobra.Command{
		Use:   "new DESIGN",
		Short: "Print a commented starter specification for a design",
		Long: `Print a commented starter specification for DESIGN (cohort,
case-control, trial or cross-sectional), to save and edit. Every starter
plans as it stands. The starters are:

  enough new cohort                                  binary outcome
  enough new cohort --outcome continuous             difference in means
  enough new case-control                            binary exposure
  enough new trial                                   binary outcome
  enough new trial --outcome continuous              difference in means
  enough new trial --outcome time-to-event           hazard ratio
  enough new cross-sectional                         compare two prevalences
  enough new cross-sectional --outcome continuous    compare two means
  enough new cross-sectional --goal precision        estimate one prevalence

--outcome continuous applies to cohort, trial and cross-sectional;
--outcome time-to-event to trial; --goal precision to cross-sectional.`,
		Example: "  enough new trial > my-trial.yaml\n  enough new cohort --outcome continuous > my-cohort.yaml",
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
			data, err := designs.Starter(args[0], goal, outcome)
			if err != nil {
				return &inputError{msg: "new: " + err.Error()}
			}
			_, err = streams.Out.Write(data)
			return err
		},
	}
	cmd.Flags().StringVar(&goal, "goal", "", "comparison (default) or precision (cross-sectional only: estimate one prevalence)")
	cmd.Flags().StringVar(&outcome, "outcome", "", "binary (default); continuous (cohort, trial, cross-sectional); time-to-event (trial)")
	return cmd
}
