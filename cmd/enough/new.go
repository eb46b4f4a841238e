package main

import (
	"github.com/spf13/cobra"

	"enough/designs"
)

// NewCmdNew builds `enough new DESIGN`.
func NewCmdNew(streams *IO) *cobra.Command {
	var goal, outcome string
	cmd := &cobra.Command{
		Use:   "new DESIGN",
		Short: "Print a commented starter specification for a design",
		Long: `Print a commented starter specification for DESIGN (cohort, case-control,
trial or cross-sectional). For a survey that estimates one prevalence, use
"enough new cross-sectional --goal precision"; for a trial with a continuous
or time-to-event outcome, "enough new trial --outcome continuous".`,
		Example:   "  enough new trial > my-trial.yaml",
		Args:      cobra.ExactArgs(1),
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
	cmd.Flags().StringVar(&goal, "goal", "", "comparison (default) or precision, for cross-sectional")
	cmd.Flags().StringVar(&outcome, "outcome", "", "binary (default), or continuous or time-to-event for a trial")
	return cmd
}
