package main

import (
	"bytes"
	"fmt"
	"io"

	"enough/designs"
	"enough/designs/plot"
	"enough/designs/report"
	"enough/designs/review"
	"enough/designs/sweep"
)

// -f html writes one self-contained page (designs/report, html.go) with
// the plot of what was computed inline. A plot that cannot be drawn (a
// design the plots do not cover) leaves the page without one, with a note
// on standard error: the page's content does not depend on it.

// planFigure draws the plot of a plan for its HTML page, as --plot draws
// it (plot.ForPlan); src is the specification as read, which a plan
// solving effect needs.
func planFigure(res *designs.Result, src *plot.Source) (*report.Figure, error) {
	f, err := plot.ForPlan(res, src)
	if err != nil {
		return nil, err
	}
	svg, err := plot.Render(f, "svg")
	return &report.Figure{SVG: svg, Caption: plot.Caption(res)}, err
}

// reviewFigure draws the recomputed plan, with the protocol's stated size
// and the power it gives marked when the plan is a power curve over the
// first group's size.
func reviewFigure(rep *review.Report, src *plot.Source) (*report.Figure, error) {
	res := rep.Plan
	f, err := plot.ForPlan(res, src)
	if err != nil {
		return nil, err
	}
	caption := plot.Caption(res)
	c := rep.Claimed
	if res.Solve == "n" && res.Simulation == nil && res.Spec != nil && res.Spec.Design != "cross-sectional" && res.Spec.Goal != "precision" &&
		c.N != nil && rep.ClaimedPowerActual != nil {
		if err := plot.MarkStated(f, *c.N, *rep.ClaimedPowerActual); err != nil {
			return nil, err
		}
		caption += " The square marks the size the protocol states, at the power it gives under the protocol's assumptions."
	}
	svg, err := plot.Render(f, "svg")
	return &report.Figure{SVG: svg, Caption: caption}, err
}

// sweepFigure draws the plot of a sweep for its HTML page.
func sweepFigure(t *sweep.Table) (*report.Figure, error) {
	f, err := plot.Sweep(t)
	if err != nil {
		return nil, err
	}
	svg, err := plot.Render(f, "svg")
	return &report.Figure{SVG: svg, Caption: "The solved quantity across the grid of the sweep."}, err
}

// figureOrNote returns fig, or nil after a note on errOut when err says
// the plot could not be drawn.
func figureOrNote(errOut io.Writer, fig *report.Figure, err error) *report.Figure {
	if err != nil {
		fmt.Fprintf(errOut, "enough: note: the HTML page has no plot: %v\n", err)
		return nil
	}
	return fig
}

// planHTML writes a plan as an HTML page with its plot.
func planHTML(buf *bytes.Buffer, errOut io.Writer, res *designs.Result, src *plot.Source) error {
	fig, err := planFigure(res, src)
	return report.WriteHTML(buf, res, figureOrNote(errOut, fig, err))
}

// reviewHTML writes a recheck as an HTML page, with the plot of the
// recomputed plan when there is one.
func reviewHTML(buf *bytes.Buffer, errOut io.Writer, rep *review.Report, in *designs.ReviewInput, src report.ReviewSource) error {
	var fig *report.Figure
	if rep.Plan != nil {
		f, err := reviewFigure(rep, &plot.Source{File: src.File, Data: src.Data, Sets: src.Sets})
		fig = figureOrNote(errOut, f, err)
	}
	return report.WriteReviewHTML(buf, rep, in, src, fig)
}

// sweepHTML writes a sweep as an HTML page with its plot.
func sweepHTML(buf *bytes.Buffer, errOut io.Writer, t *sweep.Table) error {
	fig, err := sweepFigure(t)
	return report.WriteSweepHTML(buf, t, figureOrNote(errOut, fig, err))
}
