// Package plot draws the figures of enough: power against the size of a
// study around its plan (enough plan --plot), the simulated power beside
// the closed form (enough simulate --plot) and the solved quantity across
// a sweep's grid (enough sweep --plot, enough merge --plot).
//
// Every point of a curve is computed by the designs package's engine
// (designs.Quick on the plan's specification with another size or
// effect); this package draws, it does not compute statistics.
//
// The look is plain and printable: black and a few dark colours, each
// curve with its own line style and marker so that a black-and-white copy
// still tells them apart, a light grid, and about 16 × 10 cm, the width of
// a protocol page's text.
package plot

import (
	"bytes"
	"fmt"
	"image/color"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgpdf"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Width and Height are the size of a figure of one panel: about the text
// width of an A4 or Letter page.
const (
	Width  = 16 * vg.Centimeter
	Height = 10 * vg.Centimeter
	// panelHeight is the height of each row of panels in a tiled figure.
	panelHeight = 7 * vg.Centimeter
	// maxCols is the number of panels side by side in a tiled figure.
	maxCols = 3
)

// Formats are the file formats a figure is written in, by extension.
var Formats = []string{"svg", "png", "pdf"}

// Figure is one plot, or several panels drawn on one page (a sweep with a
// third varied key): Panels holds the plots row by row.
type Figure struct {
	// Title is drawn above the panels of a tiled figure (a single plot
	// carries its own).
	Title  string
	Panels [][]*plot.Plot
	// LegendRight draws the first panel's legend in a column of its own
	// at the right (the legends of the panels are left out): for many
	// curves, or for panels that all show the same curves.
	LegendRight bool
}

// legendInside is the largest number of curves whose legend is drawn
// inside a single plot; with more it stands beside it.
const legendInside = 6

// legendWidth is the width of a legend drawn beside the plots.
const legendWidth = 3.6 * vg.Centimeter

// Of is the figure of the single plot p.
func Of(p *plot.Plot) *Figure { return &Figure{Panels: [][]*plot.Plot{{p}}} }

// size is the figure's width and height: a tiled figure's rows share at
// most maxTiledHeight, so that the whole figure fits on a printed page.
func (f *Figure) size() (vg.Length, vg.Length) {
	if len(f.Panels) == 1 && len(f.Panels[0]) == 1 {
		return Width, Height
	}
	rows := vg.Length(len(f.Panels))
	return Width, min(panelHeight, maxTiledHeight/rows)*rows + f.titleHeight()
}

// maxTiledHeight is the most the panels of a tiled figure take together:
// with its title, the figure fits on an A4 or Letter page with its
// caption.
const maxTiledHeight = 19 * vg.Centimeter

// titleHeight is the room the title of a tiled figure takes.
func (f *Figure) titleHeight() vg.Length {
	if f.Title == "" {
		return 0
	}
	return vg.Centimeter * vg.Length(1+strings.Count(wrap(f.Title, titleChars), "\n"))
}

// FormatOf returns the format a path's extension names (svg, png or pdf),
// or an error saying which extensions are allowed.
func FormatOf(path string) (string, error) {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	for _, f := range Formats {
		if ext == f {
			return f, nil
		}
	}
	if ext == "" {
		return "", fmt.Errorf("%q has no extension; allowed: a file name ending in .svg, .png or .pdf", path)
	}
	return "", fmt.Errorf("%q: .%s is not a plot format; allowed: a file name ending in .svg, .png or .pdf", path, ext)
}

// Bytes returns the figure in the format path's extension names.
func Bytes(f *Figure, path string) ([]byte, error) {
	format, err := FormatOf(path)
	if err != nil {
		return nil, err
	}
	return Render(f, format)
}

// SVG returns the plot p as an SVG document of about 16 × 10 cm, ready to
// be written to a file or embedded in an HTML page.
func SVG(p *plot.Plot) ([]byte, error) { return Render(Of(p), "svg") }

// Render returns the figure in format: svg, png (150 dots per inch) or pdf.
func Render(f *Figure, format string) ([]byte, error) {
	w, h := f.size()
	var buf bytes.Buffer
	switch format {
	case "svg":
		sc := vgsvg.New(w, h)
		f.draw(draw.New(sc))
		if _, err := sc.WriteTo(&buf); err != nil {
			return nil, err
		}
		// The face is embedded in PNG and PDF; an SVG names it, so give
		// viewers without it the nearest common faces.
		return bytes.ReplaceAll(buf.Bytes(), []byte("font-family:Liberation Sans;"), []byte("font-family:'Liberation Sans',Arial,Helvetica,sans-serif;")), nil
	case "png":
		ic := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(150), vgimg.UseBackgroundColor(color.White))
		f.draw(draw.New(ic))
		if _, err := (vgimg.PngCanvas{Canvas: ic}).WriteTo(&buf); err != nil {
			return nil, err
		}
	case "pdf":
		pc := vgpdf.New(w, h)
		f.draw(draw.New(pc))
		if _, err := pc.WriteTo(&buf); err != nil {
			return nil, err
		}
	default:
		return nil, fmt.Errorf("%q is not a plot format; allowed: svg, png or pdf", format)
	}
	return buf.Bytes(), nil
}

// draw draws the figure's panels on dc, tiled row by row.
func (f *Figure) draw(dc draw.Canvas) {
	dc.SetColor(color.White)
	dc.Fill(dc.Rectangle.Path())
	if f.LegendRight && len(f.Panels) > 0 && len(f.Panels[0]) > 0 && f.Panels[0][0] != nil {
		// The legend in a column of its own; the panels' own legends are
		// set aside while they are drawn, and put back.
		first := f.Panels[0][0]
		leg := first.Legend
		saved := make([]plot.Legend, 0, 12)
		for _, row := range f.Panels {
			for _, p := range row {
				if p != nil {
					saved = append(saved, p.Legend)
					p.Legend = plot.NewLegend()
				}
			}
		}
		f.drawPanels(draw.Crop(dc, 0, -legendWidth, 0, 0))
		k := 0
		for _, row := range f.Panels {
			for _, p := range row {
				if p != nil {
					p.Legend = saved[k]
					k++
				}
			}
		}
		leg.Top, leg.Left = true, true
		leg.XOffs, leg.YOffs = vg.Millimeter*2, -f.titleHeight()-vg.Centimeter
		leg.Draw(draw.Crop(dc, dc.Size().X-legendWidth, 0, 0, 0))
		return
	}
	f.drawPanels(dc)
}

// drawPanels draws the figure's panels (and a tiled figure's title) on dc.
func (f *Figure) drawPanels(dc draw.Canvas) {
	if len(f.Panels) == 1 && len(f.Panels[0]) == 1 {
		f.Panels[0][0].Draw(dc)
		return
	}
	if h := f.titleHeight(); h > 0 {
		sty := draw.TextStyle{Color: color.Black, Font: sans(11), XAlign: draw.XCenter, YAlign: draw.YCenter}
		sty.Handler = plot.DefaultTextHandler
		mid := vg.Point{X: (dc.Min.X + dc.Max.X) / 2, Y: dc.Max.Y - h/2}
		dc.FillText(sty, mid, wrap(f.Title, titleChars))
		dc = draw.Crop(dc, 0, 0, 0, -h)
	}
	cols := 0
	for _, row := range f.Panels {
		cols = max(cols, len(row))
	}
	t := draw.Tiles{Rows: len(f.Panels), Cols: cols, PadX: vg.Millimeter * 4, PadY: vg.Millimeter * 2,
		PadTop: vg.Millimeter, PadBottom: vg.Millimeter, PadLeft: vg.Millimeter, PadRight: vg.Millimeter * 5}
	for j, row := range f.Panels {
		for i, p := range row {
			if p != nil {
				p.Draw(t.At(dc, i, j))
			}
		}
	}
}

// A style is how one curve is drawn: a colour, a dash pattern and a marker.
type style struct {
	color  color.Color
	dashes []vg.Length
	glyph  draw.GlyphDrawer
}

// The curves' colours, dash patterns and markers: dark colours that stay
// apart in grey, five dash patterns and seven markers. Curve i takes the
// i-th of each list, cycling, so that no two of the first 35 curves share
// both dashes and marker: a black-and-white copy tells them apart.
var (
	palette = []color.Color{
		color.Black,
		color.RGBA{R: 0x1f, G: 0x4e, B: 0x8c, A: 0xff},
		color.RGBA{R: 0xa6, G: 0x3a, B: 0x10, A: 0xff},
		color.RGBA{R: 0x2e, G: 0x6b, B: 0x30, A: 0xff},
		color.RGBA{R: 0x5b, G: 0x2c, B: 0x6f, A: 0xff},
		color.RGBA{R: 0x6b, G: 0x5a, B: 0x1e, A: 0xff},
		color.Gray{Y: 0x55},
		color.RGBA{R: 0x11, G: 0x5e, B: 0x67, A: 0xff},
	}
	dashPatterns = [][]vg.Length{
		nil,
		{vg.Points(6), vg.Points(3)},
		{vg.Points(1.5), vg.Points(2.5)},
		{vg.Points(7), vg.Points(2.5), vg.Points(1.5), vg.Points(2.5)},
		{vg.Points(12), vg.Points(4)},
	}
	glyphs = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{}, draw.RingGlyph{},
		draw.CrossGlyph{}, draw.PlusGlyph{}, draw.PyramidGlyph{}}
)

// styleOf is the style of curve i.
func styleOf(i int) style {
	return style{palette[i%len(palette)], dashPatterns[i%len(dashPatterns)], glyphs[i%len(glyphs)]}
}

// newPlot returns an empty plot in the house style: a title, axis labels
// and a light grid.
func newPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = wrap(title, titleChars)
	p.Title.TextStyle.Font = sans(11)
	p.Title.Padding = vg.Points(8)
	p.X.Label.Text = x
	p.Y.Label.Text = y
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = sans(10)
		a.Tick.Label.Font = sans(9)
		a.Tick.Marker = niceTicks{}
	}
	g := plotter.NewGrid()
	g.Vertical.Color = color.Gray{Y: 0xe0}
	g.Horizontal.Color = color.Gray{Y: 0xe0}
	g.Vertical.Width = vg.Points(0.5)
	g.Horizontal.Width = vg.Points(0.5)
	p.Add(g)
	p.Legend.TextStyle.Font = sans(9)
	p.Legend.Top = true
	p.Legend.Padding = vg.Points(2)
	return p
}

// titleChars is about the number of characters of a title's line at the
// width of a figure.
const titleChars = 78

// wrap breaks text into lines of at most width characters at spaces (a
// longer word stays whole on its own line).
func wrap(text string, width int) string {
	var b strings.Builder
	n := 0
	for i, w := range strings.Fields(text) {
		l := utf8.RuneCountInString(w)
		switch {
		case i == 0:
		case n+1+l > width:
			b.WriteByte('\n')
			n = 0
		default:
			b.WriteByte(' ')
			n++
		}
		b.WriteString(w)
		n += l
	}
	return b.String()
}

// sans is the plain sans-serif face of every text, at size points.
func sans(size float64) font.Font {
	return font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
}

// legendClear puts the legend in the upper corner the curve leaves free:
// the left one when the values rise from left to right, else the right.
func legendClear(p *plot.Plot, rising bool) {
	p.Legend.Top = true
	p.Legend.Left = rising
	p.Legend.XOffs = vg.Points(6)
	if !rising {
		p.Legend.XOffs = -vg.Points(6)
	}
	p.Legend.YOffs = -vg.Points(4)
}

// curve adds a line with markers in style i and returns it for a legend.
func curve(p *plot.Plot, pts plotter.XYs, i int, markers bool) ([]plot.Thumbnailer, error) {
	st := styleOf(i)
	l, err := plotter.NewLine(pts)
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = st.color
	l.LineStyle.Width = vg.Points(1.4)
	l.LineStyle.Dashes = st.dashes
	p.Add(l)
	th := []plot.Thumbnailer{l}
	if markers {
		s, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		s.GlyphStyle = draw.GlyphStyle{Color: st.color, Radius: vg.Points(2.6), Shape: st.glyph}
		p.Add(s)
		th = append(th, s)
	}
	return th, nil
}

// hline adds a dashed grey horizontal line at y from x0 to x1.
func hline(p *plot.Plot, y, x0, x1 float64) (*plotter.Line, error) {
	l, err := plotter.NewLine(plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}})
	if err != nil {
		return nil, err
	}
	l.LineStyle.Color = color.Gray{Y: 0x50}
	l.LineStyle.Width = vg.Points(1)
	l.LineStyle.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
	p.Add(l)
	return l, nil
}

// mark adds a filled marker at (x, y) with a label beside it.
func mark(p *plot.Plot, x, y float64, shape draw.GlyphDrawer, text string) (*plotter.Scatter, error) {
	s, err := plotter.NewScatter(plotter.XYs{{X: x, Y: y}})
	if err != nil {
		return nil, err
	}
	s.GlyphStyle = draw.GlyphStyle{Color: color.Black, Radius: vg.Points(4), Shape: shape}
	p.Add(s)
	if text != "" {
		l, err := plotter.NewLabels(plotter.XYLabels{XYs: plotter.XYs{{X: x, Y: y}}, Labels: []string{text}})
		if err != nil {
			return nil, err
		}
		l.Offset = vg.Point{X: vg.Points(6), Y: vg.Points(-10)}
		for i := range l.TextStyle {
			l.TextStyle[i].Font = sans(9)
		}
		p.Add(l)
	}
	return s, nil
}

// powerAxis shows power from 0 to 1 with ticks every 0.1.
func powerAxis(p *plot.Plot) {
	p.Y.Min, p.Y.Max = 0, 1
	p.Y.Tick.Marker = plot.ConstantTicks(ticks(0, 1, 0.1, 0.2))
}

// ticks are ticks every step from lo to hi, labelled every label.
func ticks(lo, hi, step, label float64) []plot.Tick {
	var out []plot.Tick
	for i := 0; ; i++ {
		v := lo + float64(i)*step
		if v > hi+step/2 {
			break
		}
		t := plot.Tick{Value: v}
		if r := math.Mod(v-lo+label/100, label); r < label/50 {
			t.Label = fmt.Sprintf("%.1f", v)
		}
		out = append(out, t)
	}
	return out
}

// niceTicks marks an axis every 1, 2 or 5 times a power of ten, about
// labels labelled ticks (five when 0), written without needless decimals.
type niceTicks struct{ labels int }

// Ticks returns the ticks from lo to hi.
func (t niceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) {
		return []plot.Tick{{Value: lo, Label: strconv.FormatFloat(lo, 'g', 4, 64)}}
	}
	labels := t.labels
	if labels == 0 {
		labels = 5
	}
	raw := (hi - lo) / float64(labels)
	mag := math.Pow(10, math.Floor(math.Log10(raw)))
	step := 10 * mag
	for _, m := range []float64{1, 2, 5} {
		if m*mag >= raw {
			step = m * mag
			break
		}
	}
	var out []plot.Tick
	for v := math.Ceil(lo/step) * step; v <= hi+step*1e-9; v += step {
		r := math.Round(v/step) * step
		out = append(out, plot.Tick{Value: r, Label: strconv.FormatFloat(r, 'f', decimalsOf(step), 64)})
		if minor := r + step/2; minor < hi {
			out = append(out, plot.Tick{Value: minor})
		}
	}
	return out
}

// decimalsOf is the decimals a tick step needs: 0 for 50, 1 for 0.5.
func decimalsOf(step float64) int {
	return max(0, int(math.Ceil(-math.Log10(step)-1e-9)))
}
