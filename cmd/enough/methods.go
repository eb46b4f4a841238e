package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"enough/designs"
)

// methodObject is one method in `enough methods -f json`.
type methodObject struct {
	ID       string   `json:"id"`
	Name     string   `json:"name"`
	Citation string   `json:"citation"`
	Designs  []string `json:"designs"`
	// Goal restricts a cross-sectional method to comparison or precision;
	// omitted when the method does not serve cross-sectional surveys.
	Goal       string   `json:"goal,omitempty"`
	Outcome    string   `json:"outcome"`
	Hypotheses []string `json:"hypotheses"`
	// DefaultTest is null for a method with no test (an interval).
	DefaultTest *string `json:"default_test"`
	Note        string  `json:"note"`
	// Matching is "sets" for a method of matched case-control sets
	// (matching.controls_per_case 1 to 10), "pairs" for one control per
	// case only, and omitted for unmatched designs.
	Matching string `json:"matching,omitempty"`
	// Exposure is "continuous" for a method of a binary outcome related to
	// a continuous exposure, and omitted otherwise.
	Exposure string `json:"exposure,omitempty"`
	// Interim says the method plans trials with interim analyses (the
	// interim block): its test is a z statistic.
	Interim bool `json:"interim"`
}

// methodObjects lists the catalogue in its JSON form: the outcome spelled
// out ("binary" for the catalogue's ""), and the hypotheses (superiority
// for the catalogue's nil, none for a precision survey, which tests none).
func methodObjects() []methodObject {
	out := make([]methodObject, 0, len(designs.Methods))
	for _, m := range designs.Methods {
		o := methodObject{
			ID: m.ID, Name: m.Name, Citation: m.Citation, Designs: m.Designs, Goal: m.Goal,
			Outcome: m.Outcome, Hypotheses: m.Hypotheses, Note: m.Note,
		}
		if o.Outcome == "" {
			o.Outcome = "binary"
		}
		switch {
		case m.Goal == "precision" || m.Goal == "accuracy":
			o.Hypotheses = []string{}
		case o.Hypotheses == nil:
			o.Hypotheses = []string{"superiority"}
		}
		if m.DefaultTest != "" {
			o.DefaultTest = &m.DefaultTest
		}
		if m.Continuous {
			o.Exposure = "continuous"
		}
		o.Interim = slices.Contains(designs.InterimMethods, m.ID)
		switch {
		case m.PairsOnly:
			o.Matching = "pairs"
		case m.Matched:
			o.Matching = "sets"
		}
		out = append(out, o)
	}
	return out
}

// NewCmdMethods builds `enough methods`.
func NewCmdMethods(streams *IO) *cobra.Command {
	var format string
	cmd := &cobra.Command{
		Use:   "methods",
		Short: "List the methods, the designs they serve, their default test and citation",
		Long: `List every closed-form method: its name in specifications (method:), the
designs, outcome and hypotheses it serves, its default planned test and its
published reference.

With -f json, an array of objects {id, name, citation, designs, goal,
outcome, hypotheses, default_test, note, interim} for scripts; markdown and
text give the same listing, followed by the boundary families of interim
analyses (interim.boundary and its spending functions).`,
		Example: "  enough methods\n  enough methods -f json",
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) > 0 {
				return &inputError{msg: fmt.Sprintf("methods: takes no argument, given %s; allowed: enough methods [-f markdown|text|json]", strings.Join(args, " "))}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			if format == "json" {
				return writeMethodsJSON(streams.Out)
			}
			return writeMethodsText(streams.Out)
		},
	}
	formatFlag(cmd, &format, []string{"markdown", "text", "json"})
	return cmd
}

func writeMethodsJSON(w io.Writer) error {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	enc.SetIndent("", "  ")
	if err := enc.Encode(methodObjects()); err != nil {
		return err
	}
	_, err := w.Write(b.Bytes())
	return err
}

func writeMethodsText(w io.Writer) error {
	var b strings.Builder
	for i, m := range methodObjects() {
		if i > 0 {
			b.WriteString("\n")
		}
		fmt.Fprintf(&b, "%s — %s\n", m.ID, m.Name)
		serves := strings.Join(m.Designs, ", ")
		if m.Goal != "" {
			serves += " (goal: " + m.Goal + ")"
		}
		if m.Exposure == "continuous" {
			serves += ", a continuous exposure (exposure: continuous)"
		}
		switch m.Matching {
		case "pairs":
			serves += ", matched pairs (matching.controls_per_case 1)"
		case "sets":
			serves += ", matched sets (matching.controls_per_case 1 to 10)"
		}
		fmt.Fprintf(&b, "  serves:       %s\n", serves)
		fmt.Fprintf(&b, "  outcome:      %s\n", m.Outcome)
		if len(m.Hypotheses) > 0 {
			fmt.Fprintf(&b, "  hypotheses:   %s\n", strings.Join(m.Hypotheses, ", "))
		}
		test := "none (an interval, not a test)"
		if m.DefaultTest != nil {
			test = *m.DefaultTest + " — " + designs.TestName(*m.DefaultTest)
		}
		fmt.Fprintf(&b, "  default test: %s\n", test)
		fmt.Fprintf(&b, "  about:        %s\n", m.Note)
		fmt.Fprintf(&b, "  reference:    %s\n", m.Citation)
		if m.Interim {
			b.WriteString("  interim:      yes (interim analyses inflate its size on the z scale)\n")
		}
	}
	b.WriteString("\nBoundary families for interim analyses (design: trial, interim.boundary):\n")
	for _, f := range designs.BoundaryFamilies {
		fmt.Fprintf(&b, "\n%s — %s\n", f.ID, f.Name)
		fmt.Fprintf(&b, "  about:        %s\n", f.Note)
		fmt.Fprintf(&b, "  reference:    %s\n", f.Citation)
	}
	_, err := io.WriteString(w, b.String())
	return err
}
