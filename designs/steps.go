package designs

import (
	"bytes"
	"encoding/json"
	"math"
	"strconv"
)

// Step is one step the computation took: what it computed (Name), by which
// rule (Rule, the formula in words), from which values (Inputs, in the
// order the rule names them) and with what result (Output). Steps are
// recorded as the computation runs, in the order taken, so that a reviewer
// who replays them by hand reaches the printed answer. An input whose name
// is the name of an earlier step holds that step's output.
type Step struct {
	Name   string  `json:"name"`
	Rule   string  `json:"rule"`
	Inputs Inputs  `json:"inputs"`
	Output float64 `json:"output"`
}

// Input is one named value a step uses.
type Input struct {
	Name  string
	Value float64
}

// Inputs are a step's inputs in the order its rule names them; their JSON
// form is an object with the keys in that order.
type Inputs []Input

// MarshalJSON writes the inputs as an object, keeping their order.
func (in Inputs) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, x := range in {
		if i > 0 {
			b.WriteByte(',')
		}
		k, _ := json.Marshal(x.Name)
		b.Write(k)
		b.WriteByte(':')
		b.WriteString(jsonNumber(x.Value))
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// UnmarshalJSON reads the object form back (in key order as written).
func (in *Inputs) UnmarshalJSON(data []byte) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	if _, err := dec.Token(); err != nil {
		return err
	}
	*in = nil
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return err
		}
		var v float64
		if err := dec.Decode(&v); err != nil {
			return err
		}
		*in = append(*in, Input{Name: t.(string), Value: v})
	}
	return nil
}

// Get returns the input called name and whether it is there.
func (in Inputs) Get(name string) (float64, bool) {
	for _, x := range in {
		if x.Name == name {
			return x.Value, true
		}
	}
	return math.NaN(), false
}

func jsonNumber(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "null"
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// trail records the steps of the main computation; a nil trail records
// nothing (alternatives, searches and checks run the same code silently).
type trail struct {
	steps []Step
	// buf holds the inputs of every step, one allocation for many.
	buf []Input
}

// add records one step and returns its output, so that a computation reads
// as the steps it records: n := tr.add("name", "rule", out, inputs...).
func (t *trail) add(name, rule string, out float64, in ...Input) float64 {
	if t != nil {
		// Copied, so that the caller's inputs do not escape: a nil trail
		// (alternatives, searches) then costs no allocation.
		if t.steps == nil {
			t.steps = make([]Step, 0, 16)
		}
		if cap(t.buf)-len(t.buf) < len(in) {
			t.buf = make([]Input, 0, max(48, 2*len(in)))
		}
		k := len(t.buf)
		t.buf = append(t.buf, in...)
		t.steps = append(t.steps, Step{Name: name, Rule: rule, Inputs: t.buf[k:len(t.buf):len(t.buf)], Output: out})
	}
	return out
}

// rename gives the last step called from the name to (a step computed
// before it is known that another step will take its name).
func (t *trail) rename(from, to string) {
	if t == nil {
		return
	}
	for i := len(t.steps) - 1; i >= 0; i-- {
		if t.steps[i].Name == from {
			t.steps[i].Name = to
			return
		}
	}
}

// addInt records a step whose output is a whole number.
func (t *trail) addInt(name, rule string, out int, in ...Input) int {
	t.add(name, rule, float64(out), in...)
	return out
}

// has says whether a step called name was recorded.
func (t *trail) has(name string) bool {
	if t == nil {
		return false
	}
	for _, s := range t.steps {
		if s.Name == name {
			return true
		}
	}
	return false
}

// in names a value for a step.
func in(name string, v float64) Input { return Input{Name: name, Value: v} }

// inInt names a whole number for a step.
func inInt(name string, v int) Input { return Input{Name: name, Value: float64(v)} }
