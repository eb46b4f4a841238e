package main

import (
	"bytes"
	"encoding/json"
	"slices"
	"testing"

	"enough/designs"
)

// TestMethodsJSON checks `enough methods -f json`: one object per method of
// the catalogue, in its order, with exactly the documented fields, the
// outcome spelled out, the hypotheses listed and a null test for a method
// that has none.
func TestMethodsJSON(t *testing.T) {
	var b bytes.Buffer
	if err := writeMethodsJSON(&b); err != nil {
		t.Fatal(err)
	}
	var got []map[string]any
	if err := json.Unmarshal(b.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	if len(got) != len(designs.Methods) {
		t.Fatalf("%d methods, want %d", len(got), len(designs.Methods))
	}
	fields := []string{"id", "name", "citation", "designs", "outcome", "hypotheses", "default_test", "note", "interim"}
	for i, o := range got {
		if o["id"] != designs.Methods[i].ID {
			t.Errorf("method %d is %v, want %s (the catalogue's order)", i, o["id"], designs.Methods[i].ID)
		}
		for _, f := range fields {
			if _, ok := o[f]; !ok {
				t.Errorf("%v: no field %s", o["id"], f)
			}
		}
		if _, ok := o["hypotheses"].([]any); !ok {
			t.Errorf("%v: hypotheses %v is not a list", o["id"], o["hypotheses"])
		}
		for f := range o {
			if !slices.Contains(fields, f) && f != "goal" && f != "matching" && f != "exposure" {
				t.Errorf("%v: field %s is not documented", o["id"], f)
			}
		}
	}
	// Expected entries, read from the catalogue's documentation (README,
	// Methods): the outcome, the hypotheses, the default test, the goal.
	for _, c := range []struct {
		id, outcome string
		hypotheses  []any
		test        any
		goal        any
	}{
		{"fleiss-cc", "binary", []any{"superiority"}, "chi-square-yates", "comparison"},
		{"schlesselman", "binary", []any{"superiority"}, "chi-square", nil},
		{"farrington-manning", "binary", []any{"non-inferiority", "equivalence"}, "score", nil},
		{"t", "continuous", []any{"superiority", "non-inferiority", "equivalence"}, "t-student", "comparison"},
		{"freedman", "time-to-event", []any{"superiority"}, "log-rank", nil},
		{"wald", "binary", []any{}, nil, "precision"},
	} {
		i := slices.IndexFunc(got, func(o map[string]any) bool { return o["id"] == c.id })
		if i < 0 {
			t.Errorf("no method %s", c.id)
			continue
		}
		o := got[i]
		if o["outcome"] != c.outcome || o["default_test"] != c.test || o["goal"] != c.goal {
			t.Errorf("%s: outcome %v, default_test %v, goal %v; want %v, %v, %v", c.id, o["outcome"], o["default_test"], o["goal"], c.outcome, c.test, c.goal)
		}
		if h, _ := o["hypotheses"].([]any); !slices.Equal(h, c.hypotheses) {
			t.Errorf("%s: hypotheses %v, want %v", c.id, o["hypotheses"], c.hypotheses)
		}
	}
}
