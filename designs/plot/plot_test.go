package plot

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"errors"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/sweep"
)

// planOf plans one of the examples and returns it with its source.
func planOf(t *testing.T, name string, sets ...string) (*designs.Result, *Source) {
	t.Helper()
	file := filepath.Join("..", "..", "examples", name)
	data, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	s, err := designs.Parse(file, data, sets)
	if err != nil {
		t.Fatal(err)
	}
	res, err := designs.Plan(s)
	if err != nil {
		t.Fatal(err)
	}
	return res, &Source{File: file, Data: data, Sets: sets}
}

// checkFigure renders f in every format and checks each file's kind, and
// that the SVG is well-formed XML holding every one of labels as text.
func checkFigure(t *testing.T, f *Figure, labels ...string) {
	t.Helper()
	magic := map[string]string{"svg": "<?xml", "png": "\x89PNG\r\n\x1a\n", "pdf": "%PDF-"}
	for _, format := range Formats {
		data, err := Bytes(f, "figure."+format)
		if err != nil {
			t.Fatalf("%s: %v", format, err)
		}
		if len(data) < 1000 || !bytes.HasPrefix(data, []byte(magic[format])) {
			t.Errorf("%s: %d bytes starting %q", format, len(data), data[:min(8, len(data))])
		}
		if format != "svg" {
			continue
		}
		text := wellFormed(t, data)
		for _, l := range labels {
			if !strings.Contains(text, l) {
				t.Errorf("the SVG has no text %q; its text is %q", l, text)
			}
		}
	}
}

// wellFormed parses an SVG document as XML and returns the text of its
// <text> elements, one per line.
func wellFormed(t *testing.T, data []byte) string {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(data))
	var texts []string
	inText, root := false, ""
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("the SVG is not well-formed XML: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = e.Name.Local
			}
			inText = e.Name.Local == "text"
		case xml.EndElement:
			inText = false
		case xml.CharData:
			if inText {
				texts = append(texts, string(e))
			}
		}
	}
	if root != "svg" {
		t.Fatalf("the document's root is %q, not svg", root)
	}
	return strings.Join(texts, "\n")
}

func TestPlan(t *testing.T) {
	tests := []struct {
		example string
		sets    []string
		labels  []string
	}{
		{"demo-trial.yaml", nil, []string{"participants per group", "power", "target power 80%", "the plan"}},
		{"trial-power-check.yaml", nil, []string{"participants per group", "power", "the plan"}},
		{"cohort-detectable.yaml", nil, []string{"risk ratio", "power", "target power 80%", "detectable risk ratio"}},
		{"survey-booster-coverage.yaml", nil, []string{"respondents", "margin"}},
		{"cross-sectional-noise.yaml", nil, []string{"participants in all", "power"}},
		{"cohort-paired-sleep.yaml", nil, []string{"pairs", "power"}},
		{"trial-walking-blood-pressure.yaml", []string{"solve=effect", "n=80"}, []string{"difference in means", "power"}},
		{"cohort-precision-ratio.yaml", nil, []string{"hand milkers", "upper ÷ lower limit of the risk ratio's interval", "stated precision 2", "the plan"}},
		{"cohort-precision-ratio.yaml", []string{"solve=effect", "n=400"}, []string{"hand milkers", "risk ratio's interval", "the plan"}},
		{"accuracy-rapid-test.yaml", nil, []string{"participants tested", "sensitivity's margin", "specificity's margin", "stated margin ±0.07", "the plan"}},
		{"accuracy-rapid-test.yaml", []string{"solve=effect", "total=300"}, []string{"participants tested", "sensitivity's margin", "the plan"}},
	}
	for _, tt := range tests {
		t.Run(tt.example, func(t *testing.T) {
			res, src := planOf(t, tt.example, tt.sets...)
			p, err := PlanFrom(res, src)
			if err != nil {
				t.Fatal(err)
			}
			checkFigure(t, Of(p), tt.labels...)
			svg, err := SVG(p)
			if err != nil {
				t.Fatal(err)
			}
			for _, w := range strings.Fields(res.Title) { // a long title wraps
				if !bytes.Contains(svg, []byte(w)) {
					t.Errorf("SVG: the title %q is missing its word %q", res.Title, w)
				}
			}
		})
	}
}

// A plan solving effect needs its source; Plan without it says so.
func TestPlanEffectNeedsSource(t *testing.T) {
	res, _ := planOf(t, "cohort-detectable.yaml")
	if _, err := Plan(res); err == nil || !strings.Contains(err.Error(), "PlanFrom") {
		t.Errorf("Plan of a plan solving effect: %v, want an error naming PlanFrom", err)
	}
	if _, err := Plan(nil); err == nil {
		t.Error("Plan(nil): no error")
	}
}

func TestSimulation(t *testing.T) {
	f := func(x float64) *float64 { return &x }
	tests := []struct {
		example string
		sets    []string
		labels  []string
	}{
		{"demo-trial.yaml", nil, []string{"participants per group", "power", "simulated at n = 734", "95% interval 77% to 81%"}},
		{"cohort-detectable.yaml", nil, []string{"closed form", "simulation", "95% interval 77% to 81%"}},
	}
	for _, tt := range tests {
		t.Run(tt.example, func(t *testing.T) {
			res, _ := planOf(t, tt.example, tt.sets...)
			if _, err := Simulation(res); err == nil {
				t.Error("a plan without a simulation was drawn")
			}
			// An invented simulation: 7,900 of 10,000 replicates rejected.
			res.Simulation = &designs.Simulation{N: res.Result.N, Power: f(0.79), CI: []float64{0.77, 0.81}, ClosedFormPower: 0.8}
			p, err := Simulation(res)
			if err != nil {
				t.Fatal(err)
			}
			checkFigure(t, Of(p), tt.labels...)
		})
	}
}

// table is an invented sweep over keys with values[k] for each, whose
// points have the answer answer(point index).
func table(keys []string, values [][]string, cols []string, answer func(i int) *designs.Answer) *sweep.Table {
	t := &sweep.Table{Header: sweep.Header{Vary: keys, Columns: append(append([]string{}, keys...), cols...)}}
	n := 1
	for _, v := range values {
		n *= len(v)
	}
	for i := range n {
		point := make([]string, len(keys))
		rest := i
		for k := len(keys) - 1; k >= 0; k-- {
			point[k] = values[k][rest%len(values[k])]
			rest /= len(values[k])
		}
		t.Records = append(t.Records, sweep.Record{Index: i, Point: point, Result: answer(i)})
	}
	return t
}

func TestSweep(t *testing.T) {
	pw := func(x float64) *float64 { return &x }
	sizeCols := []string{sweep.ColAnalysableFirst, sweep.ColAnalysableSecond, sweep.ColAnalysableTotal, sweep.ColEnrolTotal, sweep.ColAchievedPower, sweep.ColError}
	byN := func(i int) *designs.Answer {
		return &designs.Answer{NStar: float64(100 + 10*i), N: []int{101 + 10*i, 101 + 10*i}, AchievedPower: pw(0.8)}
	}
	byPower := func(i int) *designs.Answer {
		return &designs.Answer{N: []int{200, 200}, AchievedPower: pw(0.5 + 0.01*float64(i))}
	}
	byEffect := func(i int) *designs.Answer {
		return &designs.Answer{N: []int{200, 200}, Detectable: &designs.Detectable{Scale: "hazard_ratio", Lower: pw(0.6 + 0.001*float64(i)), Upper: pw(1.6 - 0.001*float64(i))}}
	}
	rr := []string{"0.6", "0.7", "0.8"}
	tests := []struct {
		name   string
		t      *sweep.Table
		labels []string
	}{
		{"one key", table([]string{"risk_ratio"}, [][]string{rr}, sizeCols, byN), []string{"risk ratio", "participants per group"}},
		{"two keys", table([]string{"risk_ratio", "power"}, [][]string{rr, {"0.8", "0.9"}}, sizeCols, byN),
			[]string{"risk ratio", "participants per group", "target power:", "0.8", "0.9"}},
		{"power", table([]string{"n", "alpha"}, [][]string{{"100", "200", "300"}, {"0.01", "0.05"}}, sizeCols, byPower),
			[]string{"participants enrolled (first group)", "power", "significance level (alpha):", "0.05"}},
		{"effect", table([]string{"n"}, [][]string{{"100", "200"}}, []string{sweep.ColAnalysableFirst, sweep.ColDetectableLower, sweep.ColDetectableUpper, sweep.ColError}, byEffect),
			[]string{"detectable hazard ratio (above no difference)"}},
		{"enrolled", table([]string{"risk_ratio", "attrition"}, [][]string{rr, {"0", "0.2"}}, sizeCols, func(i int) *designs.Answer {
			a := byN(i)
			a.Enrol = []int{a.N[0] + 10*(i%2), a.N[1] + 10*(i%2)}
			return a
		}), []string{"participants to enrol (first group)", "attrition (proportion lost)"}},
		{"panels", table([]string{"risk_ratio", "power", "attrition"}, [][]string{rr, {"0.8", "0.9"}, {"0.1", "0.2", "0.3", "0.4", "0.5"}}, sizeCols, byN),
			[]string{"Invented sweep", "attrition = 0.1", "attrition = 0.5", "risk ratio", "power:"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tt.t.Header.Title = "Invented sweep"
			f, err := Sweep(tt.t)
			if err != nil {
				t.Fatal(err)
			}
			checkFigure(t, f, tt.labels...)
		})
	}
}

// Sweeps a plot cannot show are refused in one line naming the keys to
// fix.
func TestSweepRefused(t *testing.T) {
	tests := []struct {
		name  string
		keys  []string
		vals  [][]string
		words []string
	}{
		{"four keys", []string{"risk_ratio", "power", "alpha", "attrition"}, [][]string{{"0.7"}, {"0.8"}, {"0.05"}, {"0.1"}}, []string{"fix attrition"}},
		{"thirty-six curves", []string{"risk_ratio", "control_risk"}, [][]string{{"0.7"}, func() []string {
			var v []string
			for i := range 36 {
				v = append(v, strconv.Itoa(i))
			}
			return v
		}()}, []string{"control_risk", "at most 35", "it has 36"}},
		{"thirteen panels", []string{"risk_ratio", "power", "attrition"},
			[][]string{{"0.7"}, {"0.8"}, {"0.01", "0.02", "0.03", "0.04", "0.05", "0.06", "0.07", "0.08", "0.09", "0.1", "0.11", "0.12", "0.13"}},
			[]string{"attrition", "at most 12", "it has 13"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tab := table(tt.keys, tt.vals, []string{sweep.ColAchievedPower}, func(int) *designs.Answer { return &designs.Answer{} })
			_, err := Sweep(tab)
			var ke *KeysError
			if !errors.As(err, &ke) {
				t.Fatalf("error %v, want a *KeysError", err)
			}
			msg := err.Error()
			for _, w := range tt.words {
				if !strings.Contains(msg, w) || strings.Contains(msg, "\n") {
					t.Errorf("message %q: want one line containing %q", msg, w)
				}
			}
		})
	}
}

// A sweep read back from JSON lines, as enough merge reads it, is drawn
// as well (the answers' n_star says it solved n).
func TestSweepFromJSON(t *testing.T) {
	var a designs.Answer
	if err := json.Unmarshal([]byte(`{"n_star":399.4,"n":[400,400],"total":800,"achieved_power":0.8}`), &a); err != nil {
		t.Fatal(err)
	}
	tab := table([]string{"risk_ratio"}, [][]string{{"0.6", "0.7"}}, []string{sweep.ColAnalysableFirst, sweep.ColAchievedPower}, func(int) *designs.Answer { return &a })
	f, err := Sweep(tab)
	if err != nil {
		t.Fatal(err)
	}
	checkFigure(t, f, "participants per group (analysable, first group)")
}

// A sweep solving effect draws the side of no difference its header
// names (the planned effect's), and the size to enrol when attrition
// makes it differ from the analysable size.
func TestSolvedFigure(t *testing.T) {
	pw := func(x float64) *float64 { return &x }
	a := &designs.Answer{N: []int{200, 200}, Enrol: []int{250, 250}, EnrolTotal: 500, NStar: 199.2,
		Detectable: &designs.Detectable{Scale: "risk_ratio", Lower: pw(0.55), Upper: pw(1.7)}}
	effectCols := []string{sweep.ColAnalysableFirst, sweep.ColDetectableLower, sweep.ColDetectableUpper}
	tests := []struct {
		name, side string
		cols       []string
		want       float64
		label      string
	}{
		{"protective", "lower", effectCols, 0.55, "detectable risk ratio (below no difference)"},
		{"harmful", "upper", effectCols, 1.7, "detectable risk ratio (above no difference)"},
		{"no side recorded", "", effectCols, 1.7, "detectable risk ratio (above no difference)"},
		{"enrolled", "", []string{sweep.ColAnalysableFirst, sweep.ColEnrolTotal}, 250, "participants to enrol (first group)"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			tab := table([]string{"n"}, [][]string{{"200"}}, tt.cols, func(int) *designs.Answer { return a })
			tab.Header.DetectableSide = tt.side
			f := solvedFigure(tab)
			got, ok := f.value(a)
			if !ok || got != tt.want || f.label != tt.label {
				t.Errorf("got %v %v %q, want %v %q", got, ok, f.label, tt.want, tt.label)
			}
		})
	}
}

// Many curves put the legend beside the plot, and panels share one
// legend; a long title is wrapped; an SVG names fallback faces.
func TestFigureLayout(t *testing.T) {
	pw := func(x float64) *float64 { return &x }
	ans := func(i int) *designs.Answer {
		return &designs.Answer{NStar: float64(100 + i), N: []int{101 + i, 101 + i}, AchievedPower: pw(0.8)}
	}
	var many []string
	for i := range 11 {
		many = append(many, strconv.Itoa(10+i))
	}
	f, err := Sweep(table([]string{"risk_ratio", "control_risk"}, [][]string{{"0.6", "0.7"}, many}, []string{sweep.ColAnalysableFirst}, ans))
	if err != nil {
		t.Fatal(err)
	}
	if !f.LegendRight {
		t.Error("11 curves: the legend is not beside the plot")
	}
	f, err = Sweep(table([]string{"risk_ratio", "control_risk"}, [][]string{{"0.6", "0.7"}, many[:3]}, []string{sweep.ColAnalysableFirst}, ans))
	if err != nil || f.LegendRight {
		t.Errorf("3 curves: legend beside the plot %v (%v), want inside", f.LegendRight, err)
	}
	svg, err := Render(f, "svg")
	if err != nil || !strings.Contains(string(svg), "font-family:'Liberation Sans',Arial,Helvetica,sans-serif;") {
		t.Errorf("the SVG names no fallback faces (%v)", err)
	}
	for _, tt := range []struct {
		in   string
		w    int
		want string
	}{
		{"short title", 20, "short title"},
		{"a much longer title of a study", 12, "a much\nlonger title\nof a study"},
		{"unbreakable-word-longer-than-width x", 5, "unbreakable-word-longer-than-width\nx"},
	} {
		if got := wrap(tt.in, tt.w); got != tt.want {
			t.Errorf("wrap(%q, %d) = %q, want %q", tt.in, tt.w, got, tt.want)
		}
	}
}

func TestFormatOf(t *testing.T) {
	tests := []struct {
		path, want string
		ok         bool
	}{
		{"curve.svg", "svg", true},
		{"dir/Curve.PNG", "png", true},
		{"c.pdf", "pdf", true},
		{"c.gif", "", false},
		{"curve", "", false},
		{"svg", "", false},
	}
	for _, tt := range tests {
		got, err := FormatOf(tt.path)
		if got != tt.want || (err == nil) != tt.ok {
			t.Errorf("FormatOf(%q) = %q, %v; want %q (ok %v)", tt.path, got, err, tt.want, tt.ok)
		}
		if err != nil && !strings.Contains(err.Error(), ".svg, .png or .pdf") {
			t.Errorf("FormatOf(%q): %v does not say what is allowed", tt.path, err)
		}
	}
}

func TestNiceTicks(t *testing.T) {
	tests := []struct {
		lo, hi float64
		want   []string
	}{
		{0, 2500, []string{"0", "500", "1000", "1500", "2000", "2500"}},
		{0.6, 0.8, []string{"0.60", "0.65", "0.70", "0.75", "0.80"}},
		{1.05, 3.2, []string{"1.5", "2.0", "2.5", "3.0"}},
	}
	for _, tt := range tests {
		var got []string
		for _, tk := range (niceTicks{}).Ticks(tt.lo, tt.hi) {
			if tk.Label != "" {
				got = append(got, tk.Label)
			}
		}
		if strings.Join(got, " ") != strings.Join(tt.want, " ") {
			t.Errorf("ticks from %g to %g: %q, want %q", tt.lo, tt.hi, got, tt.want)
		}
	}
}

func TestWords(t *testing.T) {
	tests := []struct{ key, want string }{
		{"risk_ratio", "risk ratio"},
		{"n", "participants enrolled (first group)"},
		{"cluster.icc", "intracluster correlation"},
		{"control_risk", "control risk (proportion)"},
		{"some_new.key", "some new key"},
	}
	for _, tt := range tests {
		if got := Words(tt.key); got != tt.want {
			t.Errorf("Words(%q) = %q, want %q", tt.key, got, tt.want)
		}
	}
}
