package plot

import (
	"errors"
	"fmt"
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"enough/designs"
)

// Simulation draws a simulated plan: the simulated power with its 95%
// interval beside the closed-form power, the target power dashed. For a
// plan solving n or power, the closed form is drawn as the power curve
// around the plan (see [Plan]) and the simulation as a point with its
// interval at the simulated size; otherwise side by side.
func Simulation(res *designs.Result) (*plot.Plot, error) {
	if res == nil || res.Simulation == nil || res.Simulation.Power == nil {
		return nil, errors.New("the plan has no finished simulation to draw")
	}
	sim := res.Simulation
	lo, hi := *sim.Power, *sim.Power
	if len(sim.CI) == 2 {
		lo, hi = sim.CI[0], sim.CI[1]
	}
	s := res.Spec
	// A cluster trial is simulated in whole clusters, whose design effect
	// differs from the plan's (the closed form beside the simulation is
	// computed on the same clusters): drawn side by side, not on the
	// plan's curve.
	if s != nil && s.Goal != "precision" && s.Solve != "effect" && s.Cluster == nil && len(sim.N) > 0 {
		if p, err := powerCurve(res, false); err == nil {
			x := float64(sim.N[0])
			if s.Design == "cross-sectional" {
				x = 0
				for _, n := range sim.N {
					x += float64(n)
				}
			}
			th, err := interval(p, x, *sim.Power, lo, hi)
			if err != nil {
				return nil, err
			}
			p.Legend.Add(fmt.Sprintf("simulated at n = %s: %s (95%% interval %s to %s)", thousands(int(x)), pct(*sim.Power), pct(lo), pct(hi)), th...)
			p.Title.Text = title(res) + ": simulation"
			return p, nil
		}
	}
	p := newPlot(title(res)+": simulation", "", "power")
	powerAxis(p)
	p.NominalX("closed form", "simulation")
	p.X.Padding = vg.Centimeter
	cf, err := mark(p, 0, sim.ClosedFormPower, draw.CircleGlyph{}, pct(sim.ClosedFormPower))
	if err != nil {
		return nil, err
	}
	p.Legend.Add(withMethod("closed-form power", res), cf)
	th, err := interval(p, 1, *sim.Power, lo, hi)
	if err != nil {
		return nil, err
	}
	p.Legend.Add(fmt.Sprintf("simulated %s (95%% interval %s to %s)", pct(*sim.Power), pct(lo), pct(hi)), th...)
	if s != nil && s.Power > 0 {
		t, err := hline(p, s.Power, -0.4, 1.4)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("target power "+pct(s.Power), t)
	}
	p.Legend.Top = false
	p.Legend.XOffs, p.Legend.YOffs = -vg.Points(6), vg.Points(6)
	return p, nil
}

// interval adds the point (x, y) with a vertical bar from lo to hi.
func interval(p *plot.Plot, x, y, lo, hi float64) ([]plot.Thumbnailer, error) {
	type errXY struct {
		plotter.XYs
		plotter.YErrors
	}
	bars, err := plotter.NewYErrorBars(errXY{plotter.XYs{{X: x, Y: y}}, plotter.YErrors{{Low: y - lo, High: hi - y}}})
	if err != nil {
		return nil, err
	}
	bars.LineStyle.Color = color.Black
	bars.LineStyle.Width = vg.Points(1.2)
	bars.CapWidth = vg.Points(8)
	p.Add(bars)
	s, err := plotter.NewScatter(plotter.XYs{{X: x, Y: y}})
	if err != nil {
		return nil, err
	}
	s.GlyphStyle = draw.GlyphStyle{Color: color.Black, Radius: vg.Points(3.5), Shape: draw.BoxGlyph{}}
	p.Add(s)
	return []plot.Thumbnailer{s}, nil
}
