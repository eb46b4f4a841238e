package sweep

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"reflect"
	"strconv"
	"strings"

	"enough/designs"
)

// Input is one shard file for Merge: its name, for messages, and its
// lines.
type Input struct {
	Name string
	R    io.Reader
}

// MergeError is shard files that cannot be merged: a line that is not a
// shard's, shards of different sweeps, points missing or given twice. It
// names the files; it is bad input.
type MergeError struct{ Msg string }

func (e *MergeError) Error() string { return e.Msg }

// line is one JSON line of a shard, as WriteLines writes it.
type line struct {
	Header
	Shard        string                `json:"shard"`
	Index        *int                  `json:"index"`
	Point        json.RawMessage       `json:"point"`
	Result       *designs.Answer       `json:"result"`
	Error        json.RawMessage       `json:"error"`
	Alternatives []designs.Alternative `json:"alternatives"`
	Simulation   *designs.Simulation   `json:"simulation"`
}

// where a point was read: the file and the line.
type where struct {
	file string
	line int
}

func (w where) String() string { return w.file + ":" + strconv.Itoa(w.line) }

// Merge reads the JSON lines of shard files (WriteLines) and returns the
// whole sweep's table, its records in grid order. It refuses (a
// *MergeError naming the files) lines that are not a shard's, shards whose
// headers differ (another version of enough, specification, --set
// overrides, --vary, simulation settings, --alternatives, columns or grid
// size), a point given twice, and points missing. Shards need not have
// been cut alike: any files that hold every point once merge.
func Merge(inputs []Input) (*Table, error) {
	if len(inputs) == 0 {
		return nil, &MergeError{Msg: "no shard files given; allowed: the JSON-lines files that enough sweep --shard wrote"}
	}
	given := map[string]bool{}
	for _, in := range inputs {
		if given[in.Name] {
			return nil, &MergeError{Msg: fmt.Sprintf("%s is given twice; allowed: each shard file once", in.Name)}
		}
		given[in.Name] = true
	}
	var (
		t       *Table
		first   where
		seen    []where // by index: where the point was read
		byIndex []Record
	)
	for _, in := range inputs {
		br := bufio.NewReader(in.R)
		n := 0
		for {
			raw, err := br.ReadBytes('\n')
			if len(raw) == 0 && err != nil {
				if err != io.EOF {
					return nil, &MergeError{Msg: fmt.Sprintf("%s cannot be read: %v", in.Name, err)}
				}
				break
			}
			n++
			at := where{in.Name, n}
			raw = bytes.TrimSpace(raw)
			if len(raw) == 0 {
				continue
			}
			l, err := decodeLine(raw)
			if err != nil {
				return nil, &MergeError{Msg: fmt.Sprintf("%s: not a line of enough sweep --shard: %v; allowed: the JSON-lines files that enough sweep --shard wrote", at, err)}
			}
			if t == nil {
				t, first = &Table{Header: l.Header}, at
				if _, err := NewLayout(&t.Header); err != nil {
					return nil, &MergeError{Msg: fmt.Sprintf("%s: %v; allowed: shards written by this version of enough (%s)", at, err, designs.Version)}
				}
				if t.Header.GridSize < 1 || t.Header.GridSize > MaxGridPoints {
					return nil, &MergeError{Msg: fmt.Sprintf("%s: grid_size %d is out of range", at, t.Header.GridSize)}
				}
				seen = make([]where, t.Header.GridSize)
				byIndex = make([]Record, t.Header.GridSize)
			} else if field, a, b := headerDiff(&t.Header, &l.Header); field != "" {
				return nil, &MergeError{Msg: fmt.Sprintf("%s and %s are not shards of one sweep: their %s differ (%s and %s); allowed: the shards of one run of enough sweep (the same specification, --set, --vary, simulation settings and version)",
					first, at, field, a, b)}
			}
			rec, err := l.record(&t.Header)
			if err != nil {
				return nil, &MergeError{Msg: fmt.Sprintf("%s: %v", at, err)}
			}
			if prev := seen[rec.Index]; prev.file != "" {
				return nil, &MergeError{Msg: fmt.Sprintf("point %d is given twice, in %s and in %s; allowed: each point in one shard file only (was a file given twice, or shards of two runs mixed?)", rec.Index, prev, at)}
			}
			seen[rec.Index] = at
			byIndex[rec.Index] = rec
		}
	}
	if t == nil {
		verb := "hold"
		if len(inputs) == 1 {
			verb = "holds"
		}
		return nil, &MergeError{Msg: fmt.Sprintf("%s %s no points; allowed: the JSON-lines files that enough sweep --shard wrote", files(inputs), verb)}
	}
	var missing []int
	for i, w := range seen {
		if w.file == "" {
			missing = append(missing, i)
		}
	}
	if len(missing) > 0 {
		verb := "are"
		if len(missing) == 1 {
			verb = "is"
		}
		return nil, &MergeError{Msg: fmt.Sprintf("%d of the %d points %s missing from %s (%s); allowed: every shard of the sweep (a shard still running, or one that failed?)",
			len(missing), t.Header.GridSize, verb, files(inputs), indexList(missing))}
	}
	t.Records = byIndex
	return t, nil
}

// decodeLine reads one shard line, refusing fields it does not know.
func decodeLine(raw []byte) (*line, error) {
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	var l line
	if err := dec.Decode(&l); err != nil {
		return nil, err
	}
	if dec.More() {
		return nil, errors.New("more than one JSON value on the line")
	}
	switch {
	case l.Version == "" || l.SpecSHA256 == "" || l.Vary == nil || l.Columns == nil:
		return nil, errors.New("version, spec_sha256, vary or columns missing")
	case l.Index == nil:
		return nil, errors.New("index missing")
	case l.Point == nil:
		return nil, errors.New("point missing")
	}
	if l.Overrides == nil {
		l.Overrides = []string{}
	}
	return &l, nil
}

// record returns the line's point as a record of the sweep h.
func (l *line) record(h *Header) (Record, error) {
	i := *l.Index
	if i < 0 || i >= h.GridSize {
		return Record{}, fmt.Errorf("index %d is outside the grid of %d points", i, h.GridSize)
	}
	keys := h.Keys()
	point, err := readPoint(l.Point, keys)
	if err != nil {
		return Record{}, fmt.Errorf("point %d: %v", i, err)
	}
	r := Record{Index: i, Point: point, Result: l.Result, Alternatives: l.Alternatives, Simulation: l.Simulation}
	if e := bytes.TrimSpace(l.Error); len(e) > 0 && !bytes.Equal(e, []byte("null")) {
		var b bytes.Buffer
		if err := json.Compact(&b, e); err != nil {
			return Record{}, err
		}
		r.Error = b.Bytes()
	}
	if r.Error == nil && r.Result == nil {
		return Record{}, fmt.Errorf("point %d has neither a result nor an error", i)
	}
	if h.Methods != nil && r.Result != nil && r.Alternatives == nil {
		return Record{}, fmt.Errorf("point %d has no alternatives although the sweep lists methods", i)
	}
	return r, nil
}

// readPoint reads a point object, keeping its numbers as written and
// checking that its keys are the varied keys, in order.
func readPoint(raw json.RawMessage, keys []string) ([]string, error) {
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.UseNumber()
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		return nil, errors.New("not an object")
	}
	var out []string
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return nil, err
		}
		key, _ := tok.(string)
		if len(out) >= len(keys) || key != keys[len(out)] {
			return nil, fmt.Errorf("its keys are not the varied keys %s", strings.Join(keys, ", "))
		}
		tok, err = dec.Token()
		if err != nil {
			return nil, err
		}
		num, ok := tok.(json.Number)
		if !ok {
			return nil, fmt.Errorf("%s is not a number", key)
		}
		out = append(out, num.String())
	}
	if len(out) != len(keys) {
		return nil, fmt.Errorf("its keys are not the varied keys %s", strings.Join(keys, ", "))
	}
	return out, nil
}

// headerDiff names the first field in which two headers differ and the
// two values, or returns "" when they agree.
func headerDiff(a, b *Header) (field, va, vb string) {
	show := func(v any) string {
		j, _ := json.Marshal(v)
		s := string(j)
		if len(s) > 80 {
			s = s[:77] + "..."
		}
		return s
	}
	for _, f := range []struct {
		name string
		x, y any
	}{
		{"version", a.Version, b.Version},
		{"spec_sha256 (the specification's bytes)", a.SpecSHA256, b.SpecSHA256},
		{"overrides (--set)", a.Overrides, b.Overrides},
		{"vary (--vary)", a.Vary, b.Vary},
		{"grid_size", a.GridSize, b.GridSize},
		{"simulate (the simulation's settings)", a.Simulate, b.Simulate},
		{"methods (--alternatives)", a.Methods, b.Methods},
		{"columns", a.Columns, b.Columns},
	} {
		if !reflect.DeepEqual(f.x, f.y) {
			return f.name, show(f.x), show(f.y)
		}
	}
	return "", "", ""
}

// files lists the inputs' names.
func files(inputs []Input) string {
	names := make([]string, len(inputs))
	for i, in := range inputs {
		names[i] = in.Name
	}
	if len(names) == 1 {
		return names[0]
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
}

// indexList lists point indices: the first ten and how many more.
func indexList(xs []int) string {
	const show = 10
	var parts []string
	for i, x := range xs {
		if i == show {
			parts = append(parts, fmt.Sprintf("and %d more", len(xs)-show))
			break
		}
		parts = append(parts, strconv.Itoa(x))
	}
	return "indices " + strings.Join(parts, ", ")
}
