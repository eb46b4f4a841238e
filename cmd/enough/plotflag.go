package main

import (
	"errors"

	"github.com/spf13/cobra"

	"enough/designs/plot"
	"enough/designs/sweep"
)

// plotValue is --plot: a file name whose extension names the format.
type plotValue struct{ p *string }

func (v *plotValue) String() string { return *v.p }
func (v *plotValue) Type() string   { return "FILE" }
func (v *plotValue) Allowed() string {
	return "a file name ending in .svg, .png or .pdf"
}

func (v *plotValue) Set(s string) error {
	if _, err := plot.FormatOf(s); err != nil {
		return &flagError{flag: "--plot", msg: err.Error()}
	}
	*v.p = s
	return nil
}

// plotFlag registers --plot on cmd; what says what the plot shows.
func plotFlag(cmd *cobra.Command, p *string, what string) {
	cmd.Flags().Var(&plotValue{p: p}, "plot", "also draw "+what+" to FILE.svg, FILE.png or FILE.pdf (the format from the extension; written atomically)")
}

// writePlot draws a figure with draw and writes it to path atomically (as
// -o writes); nothing is done when path is empty.
func writePlot(path string, draw func() (*plot.Figure, error)) error {
	if path == "" {
		return nil
	}
	f, err := draw()
	var ke *plot.KeysError
	if errors.As(err, &ke) {
		return &flagError{flag: "--plot", msg: ke.Msg}
	}
	if err != nil {
		return &outputError{path: path, why: err.Error()}
	}
	data, err := plot.Bytes(f, path)
	if err != nil {
		return &outputError{path: path, why: err.Error()}
	}
	return emit(nil, path, data)
}

// checkPlotGrid refuses, before any point is solved, a sweep that --plot
// cannot draw (more than three varied keys, or too many panels).
func checkPlotGrid(path string, g sweep.Grid) error {
	if path == "" {
		return nil
	}
	keys := make([]string, len(g.Axes))
	for i, a := range g.Axes {
		keys[i] = a.Key
	}
	curves, panels := 0, 0
	if len(g.Axes) > 1 {
		curves = len(g.Axes[1].Values)
	}
	if len(g.Axes) > 2 {
		panels = len(g.Axes[2].Values)
	}
	if err := plot.CheckKeys(keys, curves, panels); err != nil {
		return &flagError{flag: "--plot", msg: err.Error()}
	}
	return nil
}
