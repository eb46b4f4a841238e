package sweep

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"enough/designs"
)

// A sweep's output, in every format, is a Table: a Header and one Record
// per point. A Record holds exactly what the JSON of a point carries
// (point, result, error, and the alternatives and the simulation when
// asked for), and every format is written from the Table alone, so that
// enough merge, which reads the Table back from the shards' JSON lines,
// writes byte for byte what the unsharded sweep writes.

// Header is what every line of a shard carries besides its point: what
// enough merge checks the shards agree on, and what it needs to write
// every format (README, "Sweeping assumptions").
type Header struct {
	// Version is the version of enough that swept.
	Version string `json:"version"`
	// SpecSHA256 is the SHA-256 of the specification's bytes; Overrides
	// the --set overrides, in order (empty, not null, when none).
	SpecSHA256 string   `json:"spec_sha256"`
	Overrides  []string `json:"overrides"`
	// Vary holds the --vary arguments as given, in order.
	Vary []string `json:"vary"`
	// Simulate holds the simulation's settings in force, or nil when the
	// sweep does not simulate.
	Simulate *SimSettings `json:"simulate"`
	// Methods lists the other methods whose answers each point carries
	// (--alternatives), or nil without --alternatives.
	Methods []string `json:"methods"`
	// Columns is the table's header: one column per varied key, named as
	// given, then the figures (see Columns).
	Columns []string `json:"columns"`
	// GridSize is the number of points in the whole grid.
	GridSize int `json:"grid_size"`
	// Title is the study's title, for the plot and page merge writes.
	Title string `json:"title"`
	// DetectableSide is, for a plan solving effect, the side of no
	// difference a plot draws (designs.DetectableSide); empty otherwise.
	DetectableSide string `json:"detectable_side,omitempty"`
}

// SimSettings are the settings of a simulated sweep: the replicates per
// point and the seed from which each point's seed is derived (from the
// flags, else the specification's simulate block, else 10,000 and 1).
type SimSettings struct {
	Replicates int64  `json:"replicates"`
	Seed       uint64 `json:"seed"`
}

// MaxGridPoints is the largest grid --max-points can allow.
const MaxGridPoints = 1_000_000_000

// Keys returns the varied keys, as given, in order.
func (h *Header) Keys() []string {
	if len(h.Vary) > len(h.Columns) {
		return nil
	}
	return h.Columns[:len(h.Vary)]
}

// Record is one point of a sweep's output: exactly what its JSON carries.
type Record struct {
	// Index is the point's index in the grid, from 0.
	Index int
	// Point holds the point's value of each varied key, in order, as
	// written in every output (a JSON number).
	Point []string
	// Result is the point's answer (the result object of enough plan's
	// JSON), nil when it could not be planned. A point whose plan was
	// computed but whose simulation failed has both a Result and an Error.
	Result *designs.Answer
	// Alternatives are the other methods' answers (with --alternatives).
	Alternatives []designs.Alternative
	// Simulation is the point's simulation (simulated sweeps).
	Simulation *designs.Simulation
	// Error is the JSON error object of why the point could not be
	// planned (as -f json writes errors), nil when it was.
	Error json.RawMessage
}

// Table is a sweep's output: its header and its records in grid order
// (for a shard, only the shard's points).
type Table struct {
	Header  Header
	Records []Record
}

// Failed counts the points that could not be planned.
func (t *Table) Failed() int {
	n := 0
	for i := range t.Records {
		if t.Records[i].Error != nil {
			n++
		}
	}
	return n
}

// NewHeader returns the header of a sweep of the specification s over g,
// with the --vary arguments vary as given and the options o.
func NewHeader(s *designs.Spec, g Grid, vary []string, o Options) Header {
	keys := make([]string, len(g.Axes))
	for i, a := range g.Axes {
		keys[i] = a.Key
	}
	h := Header{Version: designs.Version, SpecSHA256: s.SHA256, Overrides: append([]string{}, s.Overrides...),
		Vary: append([]string{}, vary...), GridSize: gridSize(g), Title: s.Title}
	if s.Solve == "effect" {
		h.DetectableSide = designs.DetectableSide(s)
	}
	if o.Simulate {
		st := SimSettings{Replicates: 10000, Seed: 1}
		if s.Simulate != nil {
			st.Replicates, st.Seed = s.Simulate.Replicates, s.Simulate.Seed
		}
		if o.Sim.Replicates > 0 {
			st.Replicates = o.Sim.Replicates
		}
		if o.Sim.SeedSet {
			st.Seed = o.Sim.Seed
		}
		h.Simulate = &st
	}
	if o.Alternatives {
		h.Methods = OtherMethods(s)
	}
	h.Columns = Columns(s, keys, o.Simulate, h.Methods)
	return h
}

// gridSize is the number of points of g (saturating at math.MaxInt).
func gridSize(g Grid) int {
	n := 1
	for _, a := range g.Axes {
		l := len(a.Values)
		if l != 0 && n > math.MaxInt/l {
			return math.MaxInt
		}
		n *= l
	}
	return n
}

// The figure columns of a sweep's table (README, "Sweeping assumptions").
const (
	ColAnalysable        = "analysable"                  // one group (a precision survey, a paired design): analysable size
	ColAnalysableFirst   = "analysable_first"            // analysable size of the first group
	ColAnalysableSecond  = "analysable_second"           // analysable size of the second group
	ColAnalysableTotal   = "analysable_total"            // analysable total (every arm)
	ColEnrolTotal        = "enrol_total"                 // enrolment total, after attrition
	ColAchievedPower     = "achieved_power"              // power at the analysable sizes (solve n or power)
	ColDetectableLower   = "detectable_lower"            // smallest detectable effect below no difference (solve effect)
	ColDetectableUpper   = "detectable_upper"            // smallest detectable effect above no difference (solve effect)
	ColAchievedMargin    = "achieved_margin"             // a precision survey's margin at its size (solve effect)
	ColEventsRequired    = "events_required"             // time-to-event, solve n: events required
	ColClustersFirst     = "clusters_first"              // cluster trials: clusters in the first arm
	ColClustersSecond    = "clusters_second"             // cluster trials: clusters in the second arm
	ColSimulatedPower    = "simulated_power"             // simulated sweeps: simulated power
	ColSimulatedSE       = "simulated_se"                // simulated sweeps: its Monte-Carlo standard error
	ColPrecisionRatio    = "precision_ratio"             // a ratio to a stated precision: the upper over the lower limit reached
	ColInflation         = "inflation"                   // interim analyses: the inflation factor of the maximum size
	ColExpectedTotalAlt  = "expected_total_alternative"  // interim analyses: expected analysable total at stopping under the planned effect
	ColExpectedTotalH0   = "expected_total_null"         // interim analyses: the same under no effect
	ColExpectedEventsAlt = "expected_events_alternative" // interim time-to-event: expected events at stopping under the planned effect
	ColExpectedEventsH0  = "expected_events_null"        // interim time-to-event: the same under no effect
	ColWithinMargin      = "simulated_within_margin"     // simulated precision sweeps: the share of surveys whose interval meets the margin
	ColCoverage          = "simulated_coverage"          // simulated precision sweeps: the share of intervals covering the truth
	ColError             = "error"                       // why the point could not be planned (empty when planned)
)

// Columns returns the table's columns for a sweep of s: the varied keys as
// given, then the figures that apply to the design and the solve, the
// simulation's (when simulated), those of each other method (named
// METHOD.FIGURE), and the error.
func Columns(s *designs.Spec, keys []string, simulated bool, methods []string) []string {
	cols := append([]string{}, keys...)
	ratioPrecision := s.Goal == "precision" && s.Design != "cross-sectional"
	if (s.Goal == "precision" && !ratioPrecision) || s.Goal == "accuracy" || s.OneGroup() {
		cols = append(cols, ColAnalysable)
	} else {
		cols = append(cols, ColAnalysableFirst, ColAnalysableSecond, ColAnalysableTotal)
	}
	cols = append(cols, ColEnrolTotal)
	switch {
	case ratioPrecision:
		cols = append(cols, ColPrecisionRatio)
	case s.Goal == "precision" || s.Goal == "accuracy":
		if s.Solve == "effect" {
			cols = append(cols, ColAchievedMargin)
		}
	case s.Solve == "effect":
		cols = append(cols, ColDetectableLower, ColDetectableUpper)
	default:
		cols = append(cols, ColAchievedPower)
	}
	if s.Outcome == "time-to-event" && s.Solve == "n" {
		cols = append(cols, ColEventsRequired)
	}
	if s.Cluster != nil {
		cols = append(cols, ColClustersFirst, ColClustersSecond)
	}
	if s.Interim != nil {
		cols = append(cols, ColInflation, ColExpectedTotalAlt, ColExpectedTotalH0)
		if s.Outcome == "time-to-event" {
			cols = append(cols, ColExpectedEventsAlt, ColExpectedEventsH0)
		}
	}
	switch {
	case simulated && (s.Goal == "precision" || s.Goal == "accuracy"):
		cols = append(cols, ColWithinMargin, ColCoverage)
	case simulated:
		cols = append(cols, ColSimulatedPower, ColSimulatedSE)
	}
	for _, m := range methods {
		for _, f := range methodFigures(s.Solve) {
			cols = append(cols, m+"."+f)
		}
	}
	return append(cols, ColError)
}

// methodFigures are the figures given for each other method.
func methodFigures(solve string) []string {
	switch solve {
	case "n":
		return []string{ColAnalysableTotal, ColEnrolTotal, ColAchievedPower}
	case "power":
		return []string{ColAchievedPower}
	}
	return []string{ColDetectableLower, ColDetectableUpper}
}

// OtherMethods lists, in the catalogue's order, the methods other than
// the chosen one whose answers enough plan gives beside it for s: those
// that serve its design, goal, outcome and hypothesis (none for a cluster
// trial, whose cluster-level analysis is the same whatever the method,
// nor for a precision survey). A point where one of them cannot answer
// leaves its columns empty.
func OtherMethods(s *designs.Spec) []string {
	out := []string{}
	for _, m := range designs.OtherMethods(s) {
		out = append(out, m.ID)
	}
	return out
}

// NewTable gathers the rows of a sweep into its table. errObject gives the
// JSON error object of a point's error (the object -f json writes for it).
func NewTable(h Header, g Grid, rows []Row, errObject func(error) json.RawMessage) *Table {
	t := &Table{Header: h, Records: make([]Record, len(rows))}
	texts := make([][]string, len(g.Axes))
	for k, a := range g.Axes {
		texts[k] = make([]string, len(a.Values))
		for j, v := range a.Values {
			if j < len(a.Texts) && isJSONNumber(a.Texts[j]) {
				texts[k][j] = a.Texts[j]
			} else {
				texts[k][j] = strconv.FormatFloat(v, 'g', -1, 64)
			}
		}
	}
	n := len(g.Axes)
	points := make([]string, len(rows)*n)
	for i := range rows {
		r := &rows[i]
		rec := &t.Records[i]
		rec.Index, rec.Result, rec.Simulation = r.Index, r.Result, r.Simulation
		if h.Methods != nil && r.Result != nil {
			rec.Alternatives = r.Alternatives
			if rec.Alternatives == nil {
				rec.Alternatives = []designs.Alternative{}
			}
		}
		rec.Point = pointTexts(texts, r.Index, points[i*n:(i+1)*n:(i+1)*n])
		if r.Err != nil {
			// A point whose simulation failed keeps its plan's figures,
			// with the error beside them.
			rec.Error = errObject(r.Err)
		}
	}
	return t
}

// pointTexts fills out with the texts of point i: for axis k, the value
// of index (i / stride_k) mod len_k, stride_k the product of the lengths
// after k.
func pointTexts(texts [][]string, i int, out []string) []string {
	for k := len(texts) - 1; k >= 0; k-- {
		l := len(texts[k])
		if l == 0 {
			continue
		}
		out[k] = texts[k][i%l]
		i /= l
	}
	return out
}

// isJSONNumber reports whether s is a number in JSON's grammar.
func isJSONNumber(s string) bool {
	i := 0
	digits := func() int {
		j := i
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
		return i - j
	}
	if i < len(s) && s[i] == '-' {
		i++
	}
	switch {
	case i < len(s) && s[i] == '0':
		i++
	case digits() == 0:
		return false
	}
	if i < len(s) && s[i] == '.' {
		i++
		if digits() == 0 {
			return false
		}
	}
	if i < len(s) && (s[i] == 'e' || s[i] == 'E') {
		i++
		if i < len(s) && (s[i] == '+' || s[i] == '-') {
			i++
		}
		if digits() == 0 {
			return false
		}
	}
	return i == len(s)
}

// AppendElement appends the JSON object of r as the sweep's JSON array
// holds it: {"point", "result", "error"}, then "alternatives" (with
// --alternatives) and "simulation" (simulated sweeps), on one line.
func AppendElement(dst []byte, h *Header, r *Record) ([]byte, error) {
	keys := h.Keys()
	if len(keys) != len(r.Point) {
		return dst, fmt.Errorf("point %d has %d values for %d varied keys", r.Index, len(r.Point), len(keys))
	}
	dst = append(dst, `{"point":{`...)
	for k, key := range keys {
		if k > 0 {
			dst = append(dst, ',')
		}
		q, err := marshal(key)
		if err != nil {
			return dst, err
		}
		dst = append(dst, q...)
		dst = append(dst, ':')
		dst = append(dst, r.Point[k]...)
	}
	dst = append(dst, `},"result":`...)
	if r.Result == nil {
		dst = append(dst, "null"...)
	} else {
		b, err := marshal(r.Result)
		if err != nil {
			return dst, err
		}
		dst = append(dst, b...)
	}
	dst = append(dst, `,"error":`...)
	if r.Error == nil {
		dst = append(dst, "null"...)
	} else {
		dst = append(dst, r.Error...)
	}
	if h.Methods != nil {
		b, err := marshal(r.Alternatives)
		if err != nil {
			return dst, err
		}
		dst = append(dst, `,"alternatives":`...)
		dst = append(dst, b...)
	}
	if h.Simulate != nil {
		b, err := marshal(r.Simulation)
		if err != nil {
			return dst, err
		}
		dst = append(dst, `,"simulation":`...)
		dst = append(dst, b...)
	}
	return append(dst, '}'), nil
}

// marshal writes v as compact JSON, as encoding/json's Marshal does
// (HTML characters escaped, as in enough plan's JSON).
func marshal(v any) ([]byte, error) {
	return json.Marshal(v)
}

// WriteLines writes the table as a shard's JSON lines: one line per
// record, each the header's fields, then "shard" and "index", then the
// record's fields as AppendElement writes them.
func WriteLines(w io.Writer, t *Table, sh Shard) error {
	head, err := json.Marshal(t.Header)
	if err != nil {
		return err
	}
	head = head[:len(head)-1] // without its closing brace
	var line []byte
	for i := range t.Records {
		r := &t.Records[i]
		line = append(line[:0], head...)
		line = append(line, `,"shard":`...)
		line = strconv.AppendQuote(line, sh.String())
		line = append(line, `,"index":`...)
		line = strconv.AppendInt(line, int64(r.Index), 10)
		line = append(line, ',')
		el := len(line)
		line, err = AppendElement(line, &t.Header, r)
		if err != nil {
			return err
		}
		// The element's opening brace is dropped: its fields continue the
		// line's object.
		line = append(line[:el], line[el+1:]...)
		line = append(line, '\n')
		if _, err := w.Write(line); err != nil {
			return err
		}
	}
	return nil
}

// Value is one cell of a sweep's table before it is formatted.
type Value struct {
	Kind Kind
	Int  int
	Num  float64
	Text string
}

// Kind says what a cell holds.
type Kind int

// The kinds of cell.
const (
	Empty   Kind = iota // nothing: the figure does not apply, or the point could not be planned
	Whole               // a whole number (a size, a count)
	Number              // a number (a power, an effect)
	Text                // text (an error)
	Literal             // a varied key's value as given: a number, written as it stands
)

// Layout reads the cells of a table's records.
type Layout struct {
	cells []func(r *Record) Value
}

// NewLayout returns the layout of h's columns, or an error naming a
// column it does not know (a shard from another version of enough).
func NewLayout(h *Header) (*Layout, error) {
	l := &Layout{}
	nk := len(h.Vary)
	if nk > len(h.Columns) {
		return nil, fmt.Errorf("%d varied keys but %d columns", nk, len(h.Columns))
	}
	for c, name := range h.Columns {
		if c < nk {
			k := c
			l.cells = append(l.cells, func(r *Record) Value {
				if k >= len(r.Point) {
					return Value{}
				}
				return Value{Kind: Literal, Text: r.Point[k]}
			})
			continue
		}
		f, ok := figure(name)
		if !ok {
			return nil, fmt.Errorf("unknown column %q", name)
		}
		l.cells = append(l.cells, f)
	}
	return l, nil
}

// Value returns the cell of column c for r.
func (l *Layout) Value(c int, r *Record) Value { return l.cells[c](r) }

// Width is the number of columns.
func (l *Layout) Width() int { return len(l.cells) }

func whole(n int) Value { return Value{Kind: Whole, Int: n} }

func number(p *float64) Value {
	if p == nil {
		return Value{}
	}
	return Value{Kind: Number, Num: *p}
}

func nth(xs []int, i int) Value {
	if i >= len(xs) {
		return Value{}
	}
	return whole(xs[i])
}

// expectedTotal is the expected analysable total at stopping: the groups'
// expected sizes e scaled as the maximum's groups are to its total (every
// arm of a trial of several arms stops with its comparison).
func expectedTotal(a *designs.Answer, e []float64) Value {
	if len(e) == 0 || len(a.N) != len(e) {
		return Value{}
	}
	var sum, nsum float64
	for i := range e {
		sum += e[i]
		nsum += float64(a.N[i])
	}
	if nsum == 0 {
		return Value{}
	}
	x := sum * float64(a.Total) / nsum
	return number(&x)
}

// figure returns how to read a figure column.
func figure(name string) (func(r *Record) Value, bool) {
	answer := func(f func(a *designs.Answer) Value) func(r *Record) Value {
		return func(r *Record) Value {
			if r.Result == nil {
				return Value{}
			}
			return f(r.Result)
		}
	}
	switch name {
	case ColAnalysable, ColAnalysableFirst:
		return answer(func(a *designs.Answer) Value { return nth(a.N, 0) }), true
	case ColAnalysableSecond:
		return answer(func(a *designs.Answer) Value { return nth(a.N, 1) }), true
	case ColAnalysableTotal:
		return answer(func(a *designs.Answer) Value { return whole(a.Total) }), true
	case ColEnrolTotal:
		return answer(func(a *designs.Answer) Value { return whole(a.EnrolTotal) }), true
	case ColAchievedPower:
		return answer(func(a *designs.Answer) Value { return number(a.AchievedPower) }), true
	case ColDetectableLower, ColDetectableUpper:
		upper := name == ColDetectableUpper
		return answer(func(a *designs.Answer) Value { return bound(a.Detectable, upper) }), true
	case ColAchievedMargin:
		return answer(func(a *designs.Answer) Value { return number(a.Margin) }), true
	case ColEventsRequired:
		return answer(func(a *designs.Answer) Value {
			if a.Events == 0 {
				return Value{}
			}
			return whole(a.Events)
		}), true
	case ColClustersFirst:
		return answer(func(a *designs.Answer) Value { return nth(a.Clusters, 0) }), true
	case ColClustersSecond:
		return answer(func(a *designs.Answer) Value { return nth(a.Clusters, 1) }), true
	case ColPrecisionRatio:
		return answer(func(a *designs.Answer) Value { return number(a.PrecisionRatio) }), true
	case ColInflation:
		return answer(func(a *designs.Answer) Value {
			if a.Interim == nil {
				return Value{}
			}
			return number(&a.Interim.Inflation)
		}), true
	case ColExpectedTotalAlt, ColExpectedTotalH0:
		null := name == ColExpectedTotalH0
		return answer(func(a *designs.Answer) Value {
			if a.Interim == nil {
				return Value{}
			}
			e := a.Interim.ExpectedNAlternative
			if null {
				e = a.Interim.ExpectedNNull
			}
			return expectedTotal(a, e)
		}), true
	case ColExpectedEventsAlt, ColExpectedEventsH0:
		null := name == ColExpectedEventsH0
		return answer(func(a *designs.Answer) Value {
			if a.Interim == nil {
				return Value{}
			}
			if null {
				return number(a.Interim.ExpectedEventsNull)
			}
			return number(a.Interim.ExpectedEventsAlternative)
		}), true
	case ColWithinMargin, ColCoverage:
		cover := name == ColCoverage
		return func(r *Record) Value {
			if r.Simulation == nil {
				return Value{}
			}
			if cover {
				return number(r.Simulation.Coverage)
			}
			return number(r.Simulation.WithinMargin)
		}, true
	case ColSimulatedPower, ColSimulatedSE:
		se := name == ColSimulatedSE
		return func(r *Record) Value {
			if r.Simulation == nil {
				return Value{}
			}
			if se {
				return number(r.Simulation.SE)
			}
			return number(r.Simulation.Power)
		}, true
	case ColError:
		return func(r *Record) Value {
			if r.Error == nil {
				return Value{}
			}
			return Value{Kind: Text, Text: ErrorText(r.Error)}
		}, true
	}
	method, fig, ok := strings.Cut(name, ".")
	if !ok || designs.MethodByID(method) == nil {
		return nil, false
	}
	alt := func(f func(a *designs.Alternative) Value) func(r *Record) Value {
		return func(r *Record) Value {
			for i := range r.Alternatives {
				if r.Alternatives[i].Method == method {
					return f(&r.Alternatives[i])
				}
			}
			return Value{}
		}
	}
	switch fig {
	case ColAnalysableTotal:
		return alt(func(a *designs.Alternative) Value {
			if a.N == nil {
				return Value{}
			}
			return whole(a.Total)
		}), true
	case ColEnrolTotal:
		return alt(func(a *designs.Alternative) Value {
			if a.N == nil {
				return Value{}
			}
			return whole(a.EnrolTotal)
		}), true
	case ColAchievedPower:
		return alt(func(a *designs.Alternative) Value { return number(a.AchievedPower) }), true
	case ColDetectableLower, ColDetectableUpper:
		upper := fig == ColDetectableUpper
		return alt(func(a *designs.Alternative) Value { return bound(a.Detectable, upper) }), true
	}
	return nil, false
}

// bound is one side of a detectable effect.
func bound(d *designs.Detectable, upper bool) Value {
	if d == nil {
		return Value{}
	}
	if upper {
		return number(d.Upper)
	}
	return number(d.Lower)
}

// ErrorText is the error column's text for a JSON error object: "KEY:
// MESSAGE; allowed: ALLOWED", without the key when there is none and
// without what is allowed when nothing is said.
func ErrorText(obj json.RawMessage) string {
	var e struct {
		Key     *string `json:"key"`
		Message string  `json:"message"`
		Allowed *string `json:"allowed"`
	}
	if err := json.Unmarshal(obj, &e); err != nil {
		return string(obj)
	}
	s := e.Message
	if e.Key != nil && *e.Key != "" {
		s = *e.Key + ": " + s
	}
	if e.Allowed != nil && *e.Allowed != "" {
		s += "; allowed: " + *e.Allowed
	}
	return s
}
