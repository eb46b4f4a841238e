package sweep

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"testing"

	"enough/designs"
)

func ptr[T any](x T) *T { return &x }

// invented is a table of 6 invented points (2 × 3), simulated, with one
// other method's answers and one point that could not be planned: its
// numbers are made up to exercise the formats (values with many digits,
// a rounded effect, an empty alternative), not computed.
func invented() *Table {
	h := Header{
		Version: designs.Version, SpecSHA256: strings.Repeat("ab", 32), Overrides: []string{"alpha=0.025"},
		Vary:     []string{"attrition=0,0.1", "risk_ratio=0.5:0.7:0.1"},
		Simulate: &SimSettings{Replicates: 200, Seed: 7},
		Methods:  []string{"fleiss"},
		Columns: []string{"attrition", "risk_ratio", ColAnalysableFirst, ColAnalysableSecond, ColAnalysableTotal, ColEnrolTotal, ColAchievedPower,
			ColSimulatedPower, ColSimulatedSE, "fleiss." + ColAnalysableTotal, "fleiss." + ColEnrolTotal, "fleiss." + ColAchievedPower, ColError},
		GridSize: 6,
	}
	t := &Table{Header: h}
	for i := range 6 {
		r := Record{Index: i, Point: []string{[]string{"0", "0.1"}[i/3], []string{"0.5", "0.6", "0.7"}[i%3]}}
		if i == 4 {
			r.Error = json.RawMessage(`{"file":"study.yaml","line":null,"key":"risk_ratio","value":null,"message":"a \"made-up\" problem, with a comma | and a pipe","allowed":"something else"}`)
			t.Records = append(t.Records, r)
			continue
		}
		n := 100 + 17*i
		r.Result = &designs.Answer{NStar: float64(n) - 0.123456789012345, N: []int{n, n}, Total: 2 * n,
			AchievedPower: ptr(0.8 + float64(i)/3e4), Enrol: []int{n + i, n + i}, EnrolTotal: 2 * (n + i),
			Effect: &designs.Effect{RiskRatio: ptr(0.1 * 3), FirstRisk: ptr(0.15 * 0.7)}}
		r.Simulation = &designs.Simulation{Test: "chi-square", TestName: "a test", Replicates: 200, Seed: uint64(1000 + i), N: []int{n, n},
			Power: ptr(0.785 + float64(i)/200), SE: ptr(0.0290495266742850 + float64(i)*1e-17), CI: []float64{0.72, 0.83},
			Type1At: "no difference", ClosedFormPower: 0.8, Agrees: ptr(true)}
		r.Alternatives = []designs.Alternative{{Method: "fleiss", Name: "Fleiss", Citation: "A & B", N: []int{n - 3, n - 3}, Total: 2 * (n - 3), EnrolTotal: 2 * (n - 2), AchievedPower: ptr(0.8 + 1e-7)}}
		if i == 5 {
			r.Alternatives = []designs.Alternative{}
		}
		if i == 3 {
			// A plan whose simulation failed: its figures and the error.
			r.Simulation = nil
			r.Error = json.RawMessage(`{"message":"simulate: too many replicates","allowed":"fewer"}`)
		}
		t.Records = append(t.Records, r)
	}
	return t
}

// shardFiles writes t as k shards and returns them as merge inputs.
func shardFiles(t *testing.T, full *Table, k int) []Input {
	t.Helper()
	var in []Input
	for s := 1; s <= k; s++ {
		sh := Shard{s, k}
		part := &Table{Header: full.Header}
		for _, r := range full.Records {
			if sh.Holds(r.Index) {
				part.Records = append(part.Records, r)
			}
		}
		var b bytes.Buffer
		if err := WriteLines(&b, part, sh); err != nil {
			t.Fatal(err)
		}
		in = append(in, Input{Name: fmt.Sprintf("shard-%d-of-%d.jsonl", s, k), R: bytes.NewReader(b.Bytes())})
	}
	return in
}

// elements writes every record as the JSON array's objects.
func elements(t *testing.T, tb *Table) string {
	t.Helper()
	var b []byte
	for i := range tb.Records {
		var err error
		if b, err = AppendElement(b, &tb.Header, &tb.Records[i]); err != nil {
			t.Fatal(err)
		}
		b = append(b, '\n')
	}
	return string(b)
}

// cells writes every cell of every record.
func cells(t *testing.T, tb *Table) string {
	t.Helper()
	l, err := NewLayout(&tb.Header)
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	for i := range tb.Records {
		for c := range l.Width() {
			fmt.Fprintf(&b, "%v|", l.Value(c, &tb.Records[i]))
		}
		b.WriteByte('\n')
	}
	return b.String()
}

// TestMergeRebuildsTable shards the invented table in every way from 1 to 8
// shards (more shards than points leave some empty), merges the shards
// given in reverse order, and checks that the merged table carries exactly
// what the whole one does: the same JSON objects and the same cells.
func TestMergeRebuildsTable(t *testing.T) {
	full := invented()
	wantJSON, wantCells := elements(t, full), cells(t, full)
	for k := 1; k <= 8; k++ {
		in := shardFiles(t, full, k)
		for i, j := 0, len(in)-1; i < j; i, j = i+1, j-1 {
			in[i], in[j] = in[j], in[i]
		}
		got, err := Merge(in)
		if err != nil {
			t.Fatalf("%d shards: %v", k, err)
		}
		if g := elements(t, got); g != wantJSON {
			t.Errorf("%d shards: merged JSON\n%s\nwant\n%s", k, g, wantJSON)
		}
		if g := cells(t, got); g != wantCells {
			t.Errorf("%d shards: merged cells\n%s\nwant\n%s", k, g, wantCells)
		}
		if got.Failed() != 2 {
			t.Errorf("%d shards: %d points failed; want 2", k, got.Failed())
		}
	}
}

// TestShardLine checks the fields of a shard's line and their order.
func TestShardLine(t *testing.T) {
	in := shardFiles(t, invented(), 2)
	var b bytes.Buffer
	b.ReadFrom(in[1].R)
	lines := strings.Split(strings.TrimSuffix(b.String(), "\n"), "\n")
	if len(lines) != 3 {
		t.Fatalf("shard 2/2 of 6 points has %d lines; want 3 (points 1, 3, 5)", len(lines))
	}
	dec := json.NewDecoder(strings.NewReader(lines[0]))
	if tok, err := dec.Token(); err != nil || tok != json.Delim('{') {
		t.Fatalf("line %s is not an object", lines[0])
	}
	var keys []string
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			t.Fatal(err)
		}
		keys = append(keys, tok.(string))
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			t.Fatal(err)
		}
	}
	want := "version spec_sha256 overrides vary simulate methods columns grid_size title shard index point result error alternatives simulation"
	if strings.Join(keys, " ") != want {
		t.Errorf("fields %v; want %s", keys, want)
	}
	for _, part := range []string{`"shard":"2/2","index":1,"point":{"attrition":0,"risk_ratio":0.6},`, `"grid_size":6,`, `"simulate":{"replicates":200,"seed":7},`, `"overrides":["alpha=0.025"],`} {
		if !strings.Contains(lines[0], part) {
			t.Errorf("line %s\nlacks %s", lines[0], part)
		}
	}
}

// TestMergeRefuses checks each refusal: one line, naming the files.
func TestMergeRefuses(t *testing.T) {
	full := invented()
	lines := func(mod func(h *Header), shard Shard) Input {
		tb := &Table{Header: full.Header}
		mod(&tb.Header)
		for _, r := range full.Records {
			if shard.Holds(r.Index) {
				tb.Records = append(tb.Records, r)
			}
		}
		var b bytes.Buffer
		if err := WriteLines(&b, tb, shard); err != nil {
			t.Fatal(err)
		}
		return Input{Name: "other-" + shard.String() + ".jsonl", R: &b}
	}
	text := func(name, s string) Input { return Input{Name: name, R: strings.NewReader(s)} }
	valid := func() []Input { return shardFiles(t, full, 3) }
	for _, c := range []struct {
		name string
		in   func() []Input
		want []string
	}{
		{"missing shard", func() []Input { return valid()[:2] }, []string{"2 of the 6 points are missing from shard-1-of-3.jsonl and shard-2-of-3.jsonl (indices 2, 5)"}},
		{"a shard twice", func() []Input { v := valid(); return append(v, shardFiles(t, full, 3)[1]) }, []string{"shard-2-of-3.jsonl is given twice"}},
		{"shards of two cuts", func() []Input { return append(shardFiles(t, full, 2), shardFiles(t, full, 3)[0]) }, []string{"point 0 is given twice, in shard-1-of-2.jsonl:1 and in shard-1-of-3.jsonl:1"}},
		{"another specification", func() []Input {
			return append(valid()[:2], lines(func(h *Header) { h.SpecSHA256 = strings.Repeat("cd", 32) }, Shard{3, 3}))
		}, []string{"shard-1-of-3.jsonl:1 and other-3/3.jsonl:1 are not shards of one sweep", "spec_sha256"}},
		{"other overrides", func() []Input {
			return append(valid()[:2], lines(func(h *Header) { h.Overrides = []string{} }, Shard{3, 3}))
		}, []string{"overrides (--set) differ"}},
		{"another grid", func() []Input {
			return append(valid()[:2], lines(func(h *Header) { h.Vary = []string{"attrition=0,0.1", "risk_ratio=0.5,0.6,0.7"} }, Shard{3, 3}))
		}, []string{"vary (--vary) differ"}},
		{"another seed", func() []Input {
			return append(valid()[:2], lines(func(h *Header) { h.Simulate = &SimSettings{Replicates: 200, Seed: 8} }, Shard{3, 3}))
		}, []string{"simulate (the simulation's settings) differ", `{"replicates":200,"seed":7} and {"replicates":200,"seed":8}`}},
		{"without alternatives", func() []Input { return append(valid()[:2], lines(func(h *Header) { h.Methods = nil }, Shard{3, 3})) }, []string{"methods (--alternatives) differ"}},
		{"another version", func() []Input {
			return append(valid()[:2], lines(func(h *Header) { h.Version = "0.0.9" }, Shard{3, 3}))
		}, []string{"version differ"}},
		{"not JSON", func() []Input { return append(valid(), text("notes.txt", "shard 4 was lost\n")) }, []string{"notes.txt:1: not a line of enough sweep --shard"}},
		{"a CSV file", func() []Input { return []Input{text("sweep.csv", "risk_ratio,analysable_first\n0.5,100\n")} }, []string{"sweep.csv:1: not a line of enough sweep --shard"}},
		{"an unknown field", func() []Input {
			var b bytes.Buffer
			b.ReadFrom(valid()[0].R)
			return []Input{text("edited.jsonl", strings.Replace(b.String(), `"index":`, `"comment":"x","index":`, 1))}
		}, []string{"edited.jsonl:1", `unknown field "comment"`}},
		{"an index outside the grid", func() []Input {
			var b bytes.Buffer
			b.ReadFrom(valid()[0].R)
			return []Input{text("edited.jsonl", strings.Replace(b.String(), `"index":3,`, `"index":6,`, 1))}
		}, []string{"edited.jsonl:2: index 6 is outside the grid of 6 points"}},
		{"a point of other keys", func() []Input {
			var b bytes.Buffer
			b.ReadFrom(valid()[0].R)
			return []Input{text("edited.jsonl", strings.Replace(b.String(), `"point":{"attrition":0,`, `"point":{"ratio":0,`, 1))}
		}, []string{"edited.jsonl:1: point 0: its keys are not the varied keys attrition, risk_ratio"}},
		{"no points at all", func() []Input { return []Input{text("a.jsonl", ""), text("b.jsonl", "\n")} }, []string{"a.jsonl and b.jsonl hold no points"}},
		{"no files", func() []Input { return nil }, []string{"no shard files given"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := Merge(c.in())
			var me *MergeError
			if !errors.As(err, &me) {
				t.Fatalf("error %v; want a MergeError", err)
			}
			for _, w := range c.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("error %q\nlacks %q", err, w)
				}
			}
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("error %q is not one line", err)
			}
		})
	}
}
