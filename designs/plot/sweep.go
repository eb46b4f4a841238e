package plot

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"

	"enough/designs"
	"enough/designs/sweep"
)

// MaxPanels is the largest number of panels a sweep's figure has: one for
// each value of the third varied key.
const MaxPanels = 12

// figure is what a sweep's plot shows on its vertical axis.
type figure struct {
	// label is the axis label; short the same for a panel of a tiled
	// figure, whose axis is shorter.
	label, short string
	value        func(a *designs.Answer) (float64, bool)
	power        bool
}

// solvedFigure chooses the vertical axis of a sweep's plot from its
// columns and answers: when it solved n, the size to enrol if attrition
// makes it differ from the analysable size at any point, else the
// analysable size; the margin or the detectable effect (on the side the
// header names) when it solved effect; the power otherwise.
func solvedFigure(t *sweep.Table) figure {
	has := func(c string) bool { return slices.Contains(t.Header.Columns, c) }
	solvedN, enrolled := false, false
	scale := ""
	lower, upper := false, false
	for i := range t.Records {
		a := t.Records[i].Result
		if a == nil {
			continue
		}
		solvedN = solvedN || a.NStar > 0
		enrolled = enrolled || (len(a.Enrol) > 0 && len(a.N) > 0 && a.Enrol[0] != a.N[0])
		if d := a.Detectable; d != nil {
			if scale == "" {
				scale = d.Scale
			}
			lower, upper = lower || d.Lower != nil, upper || d.Upper != nil
		}
	}
	first := func(a *designs.Answer) (float64, bool) {
		if len(a.N) == 0 {
			return 0, false
		}
		return float64(a.N[0]), true
	}
	enrol := func(a *designs.Answer) (float64, bool) {
		if len(a.Enrol) == 0 {
			return 0, false
		}
		return float64(a.Enrol[0]), true
	}
	ptr := func(p *float64) (float64, bool) {
		if p == nil {
			return 0, false
		}
		return *p, true
	}
	switch {
	case has(sweep.ColPrecisionRatio):
		return figure{label: "upper over lower limit of the interval", short: "upper / lower limit", value: func(a *designs.Answer) (float64, bool) { return ptr(a.PrecisionRatio) }}
	case has(sweep.ColAchievedMargin):
		return figure{label: "margin of the interval (± proportion)", short: "margin (± proportion)", value: func(a *designs.Answer) (float64, bool) { return ptr(a.Margin) }}
	case has(sweep.ColDetectableUpper):
		side := t.Header.DetectableSide
		if side == "" || (side == "lower" && !lower) || (side == "upper" && !upper) {
			side = map[bool]string{true: "upper", false: "lower"}[upper]
		}
		word := map[string]string{"lower": "below", "upper": "above"}[side]
		return figure{label: "detectable " + Words(scale) + " (" + word + " no difference)", short: "detectable " + Words(scale), value: func(a *designs.Answer) (float64, bool) {
			if a.Detectable == nil {
				return 0, false
			}
			if side == "lower" {
				return ptr(a.Detectable.Lower)
			}
			return ptr(a.Detectable.Upper)
		}}
	case solvedN && has(sweep.ColAnalysable) && enrolled:
		return figure{label: "participants to enrol", short: "to enrol", value: func(a *designs.Answer) (float64, bool) { return float64(a.EnrolTotal), a.EnrolTotal > 0 }}
	case solvedN && has(sweep.ColAnalysable):
		return figure{label: "participants (analysable)", short: "participants (analysable)", value: first}
	case solvedN && enrolled:
		return figure{label: "participants to enrol (first group)", short: "to enrol (first group)", value: enrol}
	case solvedN:
		return figure{label: "participants per group (analysable, first group)", short: "per group (analysable)", value: first}
	}
	return figure{label: "power", short: "power", power: true, value: func(a *designs.Answer) (float64, bool) { return ptr(a.AchievedPower) }}
}

// KeysError is a sweep a plot cannot show: more than three varied keys,
// or a third with more than [MaxPanels] values. Its message names the
// keys to fix.
type KeysError struct{ Msg string }

func (e *KeysError) Error() string { return e.Msg }

// MaxCurves is the largest number of curves a sweep's figure draws: one
// for each value of the second varied key (no two of them share both
// dash pattern and marker).
const MaxCurves = 35

// CheckKeys says whether a sweep over keys (the --vary keys, in order),
// whose third key has panels values, can be drawn: nil, or a *KeysError
// naming the keys to fix. A sweep checks it before computing its grid.
func CheckKeys(keys []string, curves, panels int) error {
	switch {
	case len(keys) > 3:
		return &KeysError{fmt.Sprintf("a plot shows at most three varied keys (%s on the axis, %s as curves, %s as panels); fix %s to one value (--set) or leave --plot out",
			keys[0], keys[1], keys[2], strings.Join(keys[3:], ", "))}
	case len(keys) >= 2 && curves > MaxCurves:
		return &KeysError{fmt.Sprintf("a plot draws one curve for each value of the second varied key, %s, at most %d (it has %d); give %s fewer values, or fix it to one value (--set)",
			keys[1], MaxCurves, curves, keys[1])}
	case len(keys) == 3 && panels > MaxPanels:
		return &KeysError{fmt.Sprintf("a plot shows one panel for each value of the third varied key, %s, at most %d (it has %d); give %s fewer values, or fix it to one value (--set)",
			keys[2], MaxPanels, panels, keys[2])}
	}
	return nil
}

// Sweep draws a sweep's table: the first varied key on the horizontal
// axis, one curve for each value of the second (each with its own line
// style, marker and colour), and the solved quantity (the size, the power
// or the detectable effect; see solvedFigure) on the vertical axis; a third
// varied key gives one panel for each of its values, up to [MaxPanels],
// under the study's title from the header. More than three varied keys, or a third
// with more than MaxPanels values, is an error naming the keys to fix.
// Points that could not be planned are left out of their curve.
func Sweep(t *sweep.Table) (*Figure, error) {
	title := t.Header.Title
	keys := t.Header.Keys()
	if len(keys) == 0 {
		return nil, fmt.Errorf("the sweep has no varied key to draw")
	}
	fig := solvedFigure(t)
	var panels, series []string
	for i := range t.Records {
		r := &t.Records[i]
		if len(keys) > 1 && len(r.Point) > 1 && !slices.Contains(series, r.Point[1]) {
			series = append(series, r.Point[1])
		}
		if len(keys) > 2 && len(r.Point) > 2 && !slices.Contains(panels, r.Point[2]) {
			panels = append(panels, r.Point[2])
		}
	}
	if err := CheckKeys(keys, len(series), len(panels)); err != nil {
		return nil, err
	}
	if len(panels) == 0 {
		panels = []string{""}
	}
	if len(series) == 0 {
		series = []string{""}
	}
	var plots []*plot.Plot
	for _, pv := range panels {
		name := title
		switch {
		case pv != "" && len(panels) == 1 && title != "":
			name = title + ": " + Words(keys[2]) + " " + pv
		case pv != "":
			// A panel is narrow: the key as written, and its value.
			name = keys[2] + " = " + pv
		}
		ylabel := fig.label
		if len(panels) > 1 {
			ylabel = fig.short
		}
		p := newPlot(name, Words(keys[0]), ylabel)
		if fig.power {
			powerAxis(p)
		}
		drawn, rising := 0, true
		for si, sv := range series {
			var pts plotter.XYs
			for i := range t.Records {
				r := &t.Records[i]
				if r.Result == nil || len(r.Point) < len(keys) ||
					(len(keys) > 1 && r.Point[1] != sv) || (len(keys) > 2 && r.Point[2] != pv) {
					continue
				}
				x, err := strconv.ParseFloat(r.Point[0], 64)
				y, ok := fig.value(r.Result)
				if err != nil || !ok || math.IsNaN(y) || math.IsInf(y, 0) {
					continue
				}
				pts = append(pts, plotter.XY{X: x, Y: y})
			}
			if len(pts) == 0 {
				continue
			}
			slices.SortStableFunc(pts, func(a, b plotter.XY) int { return cmpFloat(a.X, b.X) })
			th, err := curve(p, pts, si, true)
			if err != nil {
				return nil, err
			}
			if drawn == 0 {
				rising = pts[len(pts)-1].Y >= pts[0].Y
			}
			drawn++
			if sv != "" {
				if drawn == 1 {
					// The key once, as the legend's heading: as written
					// when the legend stands in its narrow column.
					heading := Words(keys[1]) + ":"
					if len(panels) > 1 || len(series) > legendInside {
						heading = keys[1] + ":"
					}
					p.Legend.Add(heading)
				}
				p.Legend.Add(sv, th...)
			}
		}
		if drawn == 0 {
			return nil, fmt.Errorf("no point of the sweep could be planned: nothing to draw")
		}
		if !fig.power {
			// Room above the curves for the legend.
			p.Y.Min = math.Min(0, p.Y.Min)
			p.Y.Max += 0.25 * (p.Y.Max - p.Y.Min)
		}
		legendClear(p, rising)
		if len(panels) > 1 {
			p.X.Tick.Marker = niceTicks{labels: 3}
			p.Title.TextStyle.Font = sans(9)
		}
		plots = append(plots, p)
	}
	if len(plots) == 1 {
		f := Of(plots[0])
		// Many curves: the legend beside the plot, not over its curves.
		f.LegendRight = len(series) > legendInside
		return f, nil
	}
	// One vertical scale for every panel, so that panels compare at a
	// glance.
	lo, hi := plots[0].Y.Min, plots[0].Y.Max
	for _, p := range plots {
		lo, hi = math.Min(lo, p.Y.Min), math.Max(hi, p.Y.Max)
	}
	for _, p := range plots {
		p.Y.Min, p.Y.Max = lo, hi
	}
	cols := min(maxCols, len(plots))
	if len(plots) <= 4 {
		cols = min(2, len(plots))
	}
	var rows [][]*plot.Plot
	for i := 0; i < len(plots); i += cols {
		row := make([]*plot.Plot, cols)
		copy(row, plots[i:min(i+cols, len(plots))])
		rows = append(rows, row)
	}
	// Every panel has the same curves: one legend beside them all.
	return &Figure{Title: title, Panels: rows, LegendRight: len(series) > 1}, nil
}
