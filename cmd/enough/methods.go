package main

import (
	"fmt"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
)

// NewCmdMethods builds `enough methods`.
func NewCmdMethods(streams *IO) *cobra.Command {
	return &cobra.Command{
		Use:   "methods",
		Short: "List the methods, the designs they serve, their default test and citation",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			var b strings.Builder
			for i, m := range designs.Methods {
				if i > 0 {
					b.WriteString("\n")
				}
				fmt.Fprintf(&b, "%s — %s\n", m.ID, m.Name)
				serves := strings.Join(m.Designs, ", ")
				if m.Goal != "" {
					serves += " (goal: " + m.Goal + ")"
				}
				fmt.Fprintf(&b, "  serves:       %s\n", serves)
				test := "none (an interval, not a test)"
				if m.DefaultTest != "" {
					test = m.DefaultTest + " — " + designs.TestName(m.DefaultTest)
				}
				fmt.Fprintf(&b, "  default test: %s\n", test)
				fmt.Fprintf(&b, "  about:        %s\n", m.Note)
				fmt.Fprintf(&b, "  reference:    %s\n", m.Citation)
			}
			_, err := fmt.Fprint(streams.Out, b.String())
			return err
		},
	}
}
