package plot

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"enough/designs"
)

// points is the number of sizes or effects a plan's curve is computed at.
const points = 40

// Source is the specification behind a plan as it was read: what a plan
// solving effect needs to compute the power at other effects
// (designs.NewBase reads it again with solve: power).
type Source struct {
	File string
	Data []byte
	Sets []string
}

// Plan draws the plan res: power against the analysable participants per
// group from about half to twice the planned enrolment, with the target
// power as a dashed line and the planned point marked; for a precision
// survey, the margin against the respondents. A plan solving effect needs
// its specification's source: see [PlanFrom].
func Plan(res *designs.Result) (*plot.Plot, error) { return PlanFrom(res, nil) }

// PlanFrom is [Plan] with the specification's source, which a plan
// solving effect needs: it is drawn as power against the effect at the
// planned size. src may be nil for any other plan.
func PlanFrom(res *designs.Result, src *Source) (*plot.Plot, error) {
	if res == nil || res.Spec == nil {
		return nil, errors.New("no plan to draw")
	}
	s := res.Spec
	switch {
	case s.Goal == "accuracy":
		return accuracyCurve(res)
	case s.Goal == "precision" && s.Design != "cross-sectional":
		return ratioCurve(res)
	case s.Goal == "precision":
		return marginCurve(res)
	case s.Solve == "effect":
		if src == nil {
			return nil, errors.New("a plan solving effect is drawn from its specification's source (plot.PlanFrom)")
		}
		return effectCurve(res, src)
	}
	return powerCurve(res, true)
}

// enrolled is the plan's enrolment: the first group's, or the whole
// survey's for a cross-sectional design.
func enrolled(res *designs.Result) int {
	a := &res.Result
	if res.Spec.Design == "cross-sectional" {
		return a.EnrolTotal
	}
	if len(a.Enrol) > 0 {
		return a.Enrol[0]
	}
	return 0
}

// sizes are about points whole enrolments from half to twice e.
func sizes(e int) []int {
	var out []int
	lo, hi := math.Max(2, float64(e)/2), float64(2*e)
	for i := range points {
		v := int(math.Round(lo * math.Pow(hi/lo, float64(i)/float64(points-1))))
		if len(out) == 0 || v > out[len(out)-1] {
			out = append(out, v)
		}
	}
	return out
}

// atEnrolment returns the answer of the plan's specification solving
// power (or, for a precision survey, the margin) at enrolment e, by the
// engine (designs.Quick).
func atEnrolment(s0 *designs.Spec, e int) (*designs.Answer, error) {
	s := *s0
	s.Overrides = slices.Clone(s0.Overrides)
	switch {
	case s.Goal == "precision" && s.Design != "cross-sectional":
		if s.NSecond > 0 && s.N > 0 {
			s.NSecond = int(math.Round(float64(s.NSecond) * float64(e) / float64(s.N)))
		} else {
			s.NSecond = 0
		}
		s.Solve, s.N = "effect", e
	case s.Goal == "precision" || s.Goal == "accuracy":
		s.Solve, s.Total = "effect", e
	case s.Design == "cross-sectional":
		s.Solve, s.Power, s.Total = "power", 0, e
	default:
		if s.NSecond > 0 && s.N > 0 {
			s.NSecond = int(math.Round(float64(s.NSecond) * float64(e) / float64(s.N)))
		} else {
			s.NSecond = 0
		}
		s.Solve, s.Power, s.N = "power", 0, e
	}
	return designs.Quick(&s)
}

// powerWords is the label of a plan's power axis.
func powerWords(s *designs.Spec) string {
	if s.Arms > 2 {
		return "power of each comparison"
	}
	return "power"
}

// thousands writes a whole number with thousands separators, as the
// summary does: 1,319.
func thousands(n int) string {
	s := strconv.Itoa(n)
	for i := len(s) - 3; i > 0 && s[i-1] != '-'; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// sizeWords is the label of the size axis of a plan: the first group in
// the plan's own words when the groups differ in size.
func sizeWords(res *designs.Result) string {
	s := res.Spec
	fg := res.FirstGroup
	switch {
	case s.Goal == "precision" && s.Design == "cross-sectional":
		return "respondents (analysable)"
	case s.Goal == "accuracy":
		return "participants tested (analysable)"
	case s.ContinuousExposure && s.Design == "cross-sectional":
		return "respondents (analysable)"
	case s.ContinuousExposure:
		return "participants (analysable)"
	case s.Design == "cross-sectional":
		return "participants in all (analysable)"
	case s.Pairing == "paired":
		return "pairs (analysable)"
	case s.Pairing == "crossover":
		return "participants per sequence (analysable)"
	case s.Arms > 2:
		return "participants per arm (analysable)"
	case s.Cluster != nil:
		return fmt.Sprintf("participants per arm (analysable, in clusters of %s)", strconv.FormatFloat(s.Cluster.Size, 'g', 4, 64))
	case s.Design == "case-control":
		return "cases (analysable)"
	case s.Ratio == 1 || fg == "":
		return "participants per group (analysable)"
	case strings.HasSuffix(fg, " arm"):
		return "participants in the " + fg + " (analysable)"
	}
	return fg + " (analysable)"
}

// sizeOf is the x value of an answer: the analysable first group, or the
// analysable total of a cross-sectional design.
func sizeOf(s *designs.Spec, a *designs.Answer) float64 {
	if s.Design == "cross-sectional" || len(a.N) == 0 {
		return float64(a.Total)
	}
	return float64(a.N[0])
}

// powerCurve draws power against n around the plan, with the planned
// point marked when planned is true.
func powerCurve(res *designs.Result, planned bool) (*plot.Plot, error) {
	s := res.Spec
	e := enrolled(res)
	if e <= 0 || res.Result.AchievedPower == nil {
		return nil, errors.New("the plan has no size and power to draw")
	}
	var pts plotter.XYs
	for _, n := range sizes(e) {
		a, err := atEnrolment(s, n)
		if err != nil || a.AchievedPower == nil {
			continue // a size the design does not allow (too few)
		}
		pts = append(pts, plotter.XY{X: sizeOf(s, a), Y: *a.AchievedPower})
	}
	if len(pts) < 2 {
		return nil, errors.New("the power could not be computed at the sizes around the plan")
	}
	ylabel := powerWords(s)
	xlabel, what := sizeWords(res), "power at each size"
	if s.Interim != nil {
		xlabel = strings.Replace(xlabel, "(analysable", "(analysable, maximum", 1)
		what = fmt.Sprintf("group-sequential power, %d looks, at each maximum size", s.Interim.Looks)
	}
	p := newPlot(title(res), xlabel, ylabel)
	powerAxis(p)
	line, err := curve(p, pts, 0, false)
	if err != nil {
		return nil, err
	}
	p.Legend.Add(withMethod(what, res), line...)
	if s.Power > 0 && s.Solve == "n" {
		t, err := hline(p, s.Power, pts[0].X, pts[len(pts)-1].X)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("target power "+pct(s.Power), t)
	}
	if planned {
		x, y := sizeOf(s, &res.Result), *res.Result.AchievedPower
		m, err := mark(p, x, y, draw.CircleGlyph{}, fmt.Sprintf("n = %s, power %s", thousands(int(x)), pct(y)))
		if err != nil {
			return nil, err
		}
		p.Legend.Add("the plan", m)
	}
	p.Legend.Top, p.Legend.Left = false, false
	p.Legend.XOffs, p.Legend.YOffs = -vg.Points(6), vg.Points(6)
	return p, nil
}

// marginCurve draws a precision survey's margin against its size.
func marginCurve(res *designs.Result) (*plot.Plot, error) {
	s := res.Spec
	e := enrolled(res)
	if e <= 0 || res.Result.Margin == nil {
		return nil, errors.New("the survey has no size and margin to draw")
	}
	var pts plotter.XYs
	for _, n := range sizes(e) {
		a, err := atEnrolment(s, n)
		if err != nil || a.Margin == nil {
			continue
		}
		if s.Population > 0 && a.Total >= s.Population {
			// A census: no larger survey exists.
			break
		}
		pts = append(pts, plotter.XY{X: sizeOf(s, a), Y: *a.Margin})
	}
	if len(pts) < 2 {
		return nil, errors.New("the margin could not be computed at the sizes around the plan")
	}
	ylabel := "margin of the interval (± proportion)"
	if s.Outcome == "continuous" {
		ylabel = "margin of the interval (± the measurement's units)"
	}
	p := newPlot(title(res), sizeWords(res), ylabel)
	p.Y.Min = 0
	line, err := curve(p, pts, 0, false)
	if err != nil {
		return nil, err
	}
	p.Legend.Add(withMethod("margin at each size", res), line...)
	x, y := sizeOf(s, &res.Result), *res.Result.Margin
	m, err := mark(p, x, y, draw.CircleGlyph{}, fmt.Sprintf("n = %d, margin ±%.3g", int(x), y))
	if err != nil {
		return nil, err
	}
	p.Legend.Add("the plan", m)
	legendClear(p, false)
	return p, nil
}

// ratioCurve draws the precision a ratio's interval reaches, the upper
// over the lower limit, against the size of the first group, with the
// stated precision as a dashed line when the plan was sized for it.
func ratioCurve(res *designs.Result) (*plot.Plot, error) {
	s := res.Spec
	e := enrolled(res)
	if e <= 0 || res.Result.PrecisionRatio == nil {
		return nil, errors.New("the plan has no size and precision to draw")
	}
	var pts plotter.XYs
	for _, n := range sizes(e) {
		a, err := atEnrolment(s, n)
		if err != nil || a.PrecisionRatio == nil {
			continue
		}
		pts = append(pts, plotter.XY{X: sizeOf(s, a), Y: *a.PrecisionRatio})
	}
	if len(pts) < 2 {
		return nil, errors.New("the precision could not be computed at the sizes around the plan")
	}
	measure := "risk ratio"
	if s.Design == "case-control" {
		measure = "odds ratio"
	}
	p := newPlot(title(res), sizeWords(res), "upper ÷ lower limit of the "+measure+"'s interval")
	p.Y.Min = 1
	line, err := curve(p, pts, 0, false)
	if err != nil {
		return nil, err
	}
	p.Legend.Add(withMethod("precision at each size", res), line...)
	if s.Solve == "n" && s.PrecisionRatio > 1 {
		t, err := hline(p, s.PrecisionRatio, pts[0].X, pts[len(pts)-1].X)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("stated precision "+strconv.FormatFloat(s.PrecisionRatio, 'g', 4, 64), t)
	}
	x, y := sizeOf(s, &res.Result), *res.Result.PrecisionRatio
	m, err := mark(p, x, y, draw.CircleGlyph{}, fmt.Sprintf("n = %s, upper ÷ lower %.3g", thousands(int(x)), y))
	if err != nil {
		return nil, err
	}
	p.Legend.Add("the plan", m)
	legendClear(p, false)
	return p, nil
}

// accuracyCurve draws the margins a study of diagnostic accuracy reaches
// for sensitivity and for specificity against its respondents, with the
// stated margin as a dashed line when the plan was sized for it.
func accuracyCurve(res *designs.Result) (*plot.Plot, error) {
	s := res.Spec
	e := enrolled(res)
	if e <= 0 {
		return nil, errors.New("the study has no size to draw")
	}
	var se, sp plotter.XYs
	for _, n := range sizes(e) {
		a, err := atEnrolment(s, n)
		if err != nil || a.MarginSensitivity == nil || a.MarginSpecificity == nil {
			continue
		}
		se = append(se, plotter.XY{X: sizeOf(s, a), Y: *a.MarginSensitivity})
		sp = append(sp, plotter.XY{X: sizeOf(s, a), Y: *a.MarginSpecificity})
	}
	if len(se) < 2 {
		return nil, errors.New("the margins could not be computed at the sizes around the plan")
	}
	p := newPlot(title(res), sizeWords(res), "margin of the interval (± proportion)")
	p.Y.Min = 0
	l1, err := curve(p, se, 0, false)
	if err != nil {
		return nil, err
	}
	p.Legend.Add(withMethod("sensitivity's margin", res), l1...)
	l2, err := curve(p, sp, 1, false)
	if err != nil {
		return nil, err
	}
	p.Legend.Add("specificity's margin", l2...)
	if s.Solve == "n" && s.Margin > 0 {
		t, err := hline(p, s.Margin, se[0].X, se[len(se)-1].X)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("stated margin ±"+strconv.FormatFloat(s.Margin, 'g', 4, 64), t)
	}
	if a, err := atEnrolment(s, e); err == nil && a.MarginSensitivity != nil && a.MarginSpecificity != nil {
		x := sizeOf(s, &res.Result)
		y := math.Max(*a.MarginSensitivity, *a.MarginSpecificity)
		m, err := mark(p, x, y, draw.CircleGlyph{}, fmt.Sprintf("n = %s, margins ±%.3g and ±%.3g", thousands(int(x)), *a.MarginSensitivity, *a.MarginSpecificity))
		if err != nil {
			return nil, err
		}
		p.Legend.Add("the plan", m)
	}
	legendClear(p, false)
	return p, nil
}

// effectCurve draws power against the effect at the planned size.
func effectCurve(res *designs.Result, src *Source) (*plot.Plot, error) {
	s := res.Spec
	d := res.Result.Detectable
	key := s.EffectKey
	if d == nil || key == "" || (d.Scale != "" && d.Scale != key) {
		return nil, errors.New("the plan gives no detectable effect on its effect's scale to draw")
	}
	ratio := strings.HasSuffix(key, "_ratio")
	null := 0.0
	switch {
	case ratio:
		null = 1
	case !strings.HasSuffix(key, "_difference"):
		null = s.P2 // the effect given as the first group's risk
	}
	bound := detectableBound(d, designs.DetectableSide(s))
	if bound == nil {
		return nil, errors.New("the plan gives no detectable effect to draw")
	}
	det := *bound
	sets := append(slices.Clone(src.Sets), "solve=power", key+"="+strconv.FormatFloat(det, 'g', -1, 64))
	base, err := designs.NewBase(src.File, src.Data, sets)
	if err != nil {
		return nil, fmt.Errorf("the power at other effects: %w", err)
	}
	var pts plotter.XYs
	for i := 1; i <= points; i++ {
		f := 1.8 * float64(i) / points
		v := null + f*(det-null)
		if ratio {
			v = math.Exp(f * math.Log(det))
		}
		sp, err := base.At([]string{key}, []float64{v})
		if err != nil {
			continue // an effect the outcome does not allow
		}
		a, err := designs.Quick(sp)
		if err != nil || a.AchievedPower == nil {
			continue
		}
		pts = append(pts, plotter.XY{X: v, Y: *a.AchievedPower})
	}
	if len(pts) < 2 {
		return nil, errors.New("the power could not be computed at the effects around the plan")
	}
	slices.SortFunc(pts, func(a, b plotter.XY) int { return cmpFloat(a.X, b.X) })
	n := 0
	if len(res.Result.N) > 0 {
		n = res.Result.N[0]
	}
	p := newPlot(title(res), Words(key), fmt.Sprintf("%s (%s analysable%s)", powerWords(s), thousands(n), map[bool]string{true: "", false: " in the first group"}[s.OneGroup()]))
	powerAxis(p)
	line, err := curve(p, pts, 0, false)
	if err != nil {
		return nil, err
	}
	p.Legend.Add(withMethod("power at each effect", res), line...)
	if s.Power > 0 {
		t, err := hline(p, s.Power, pts[0].X, pts[len(pts)-1].X)
		if err != nil {
			return nil, err
		}
		p.Legend.Add("target power "+pct(s.Power), t)
		m, err := mark(p, det, s.Power, draw.CircleGlyph{}, fmt.Sprintf("detectable %s %.3g", Words(key), det))
		if err != nil {
			return nil, err
		}
		p.Legend.Add("the plan", m)
	}
	p.Legend.Top, p.Legend.Left = false, det < null
	p.Legend.XOffs, p.Legend.YOffs = vg.Points(6), vg.Points(6)
	if det > null {
		p.Legend.XOffs = -vg.Points(6)
	}
	return p, nil
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// title is the plot's title: the study's.
func title(res *designs.Result) string {
	if res.Title != "" {
		return res.Title
	}
	return "Study plan"
}

// pct writes a proportion as a percentage: 0.8 as "80%".
func pct(x float64) string {
	s := strconv.FormatFloat(100*x, 'f', 1, 64)
	return strings.TrimSuffix(s, ".0") + "%"
}

// ForPlan is the figure of a plan, the one rule that enough plan,
// enough simulate and their HTML pages follow: [Simulation] when the plan
// carries a finished simulation (enough simulate, or enough plan
// --verify), else [PlanFrom]. Caption says in a sentence what it shows.
func ForPlan(res *designs.Result, src *Source) (*Figure, error) {
	var p *plot.Plot
	var err error
	if simulated(res) {
		p, err = Simulation(res)
	} else {
		p, err = PlanFrom(res, src)
	}
	if err != nil {
		return nil, err
	}
	return Of(p), nil
}

// simulated says whether res carries a finished simulation.
func simulated(res *designs.Result) bool {
	return res.Simulation != nil && res.Simulation.Power != nil
}

// Caption is the sentence under the figure [ForPlan] draws for res.
func Caption(res *designs.Result) string {
	switch {
	case res.Spec != nil && res.Spec.Goal == "precision" && res.Spec.Design != "cross-sectional":
		return "The upper over the lower limit of the ratio's interval against the first group's size around the plan; the dashed line is the stated precision."
	case res.Spec != nil && res.Spec.Goal == "precision":
		return "The margin of the interval (half its width) against the respondents around the plan."
	case res.Spec != nil && res.Spec.Goal == "accuracy":
		return "The margins of the intervals for sensitivity and for specificity against the participants tested around the plan; the dashed line is the stated margin."
	case simulated(res):
		return "Simulated power with its 95% interval, beside the closed-form power; the dashed line is the target power."
	case res.Spec != nil && res.Spec.Solve == "effect":
		return "Power against the effect at the planned size, on the side of no difference where the plan's effect lies; the dashed line is the target power."
	}
	if res.Spec != nil && res.Spec.Interim != nil {
		return "Group-sequential power (a boundary crossed on the side of the effect at any analysis) against the maximum number analysable around the planned point; the dashed line is the target power."
	}
	return "Power against the number analysable around the planned point; the dashed line is the target power."
}

// detectableBound is the detectable effect on side ("lower" or "upper"),
// else the other one when the plan has none on that side.
func detectableBound(d *designs.Detectable, side string) *float64 {
	if side == "lower" && d.Lower != nil || d.Upper == nil {
		return d.Lower
	}
	return d.Upper
}

// withMethod names the plan's method after what: "power at each size
// (Fleiss, Tytun & Ury 1980)".
func withMethod(what string, res *designs.Result) string {
	switch {
	case res.Spec != nil && res.Spec.Cluster != nil:
		return what + " (t test on cluster summaries)"
	case res.Short == "":
		return what
	}
	return what + " (" + res.Short + ")"
}

// MarkStated marks on a plan's figure (a power curve, as [ForPlan] draws
// it) the first group's analysable size a protocol states and the power
// it gives under the protocol's assumptions, for enough review.
func MarkStated(f *Figure, n int, power float64) error {
	if f == nil || len(f.Panels) != 1 || len(f.Panels[0]) != 1 {
		return errors.New("no single plot to mark")
	}
	p := f.Panels[0][0]
	m, err := mark(p, float64(n), power, draw.SquareGlyph{}, fmt.Sprintf("stated n = %s, power %s", thousands(n), pct(power)))
	if err != nil {
		return err
	}
	p.Legend.Add("the protocol's stated size", m)
	return nil
}
