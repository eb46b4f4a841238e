package examples_test

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"sort"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/report"
	"enough/designs/sweep"
)

// TestSweepJSONFieldsDocumented checks that every field of a sweep's JSON
// (the objects of -f json and the lines of a shard, with every option that
// adds a field) is documented in README's "Sweeping assumptions". The
// fields inside result, alternatives and simulation are enough plan's,
// which TestJSONFieldsDocumented checks.
func TestSweepJSONFieldsDocumented(t *testing.T) {
	doc := readmeBetween(t, "## Sweeping assumptions", "## Output")
	data, err := os.ReadFile("sweep/falls-visits.yaml")
	if err != nil {
		t.Fatal(err)
	}
	b, err := designs.NewBase("falls-visits.yaml", data, []string{"alpha=0.05"})
	if err != nil {
		t.Fatal(err)
	}
	vary := []string{"control_risk=0.3,0.6", "risk_ratio=0.8,2"}
	var g sweep.Grid
	for _, v := range vary {
		a, err := sweep.ParseVary(v)
		if err != nil {
			t.Fatal(err)
		}
		g.Axes = append(g.Axes, a)
	}
	o := sweep.Options{Full: true, Alternatives: true, Simulate: true, Sim: designs.SimOptions{Replicates: 100}}
	rows, err := sweep.Run(context.Background(), b, g, o)
	if err != nil {
		t.Fatal(err)
	}
	tb := sweep.NewTable(sweep.NewHeader(b.Spec(), g, vary, o), g, rows, func(err error) json.RawMessage {
		m, _ := json.Marshal(map[string]string{"message": err.Error()})
		return m
	})
	if tb.Failed() != 1 {
		t.Fatalf("%d points failed; want 1 (risk ratio 2 at a control risk of 0.6)", tb.Failed())
	}
	var array, lines bytes.Buffer
	if err := report.WriteSweep(&array, tb, "json"); err != nil {
		t.Fatal(err)
	}
	if err := sweep.WriteLines(&lines, tb, sweep.Shard{Index: 1, Count: 1}); err != nil {
		t.Fatal(err)
	}
	keys := map[string]bool{}
	var elements []map[string]json.RawMessage
	if err := json.Unmarshal(array.Bytes(), &elements); err != nil {
		t.Fatal(err)
	}
	for _, el := range elements {
		for k := range el {
			keys[k] = true
		}
	}
	for _, l := range strings.Split(strings.TrimSpace(lines.String()), "\n") {
		var line map[string]json.RawMessage
		if err := json.Unmarshal([]byte(l), &line); err != nil {
			t.Fatal(err)
		}
		for k := range line {
			keys[k] = true
		}
		var sim map[string]json.RawMessage
		if err := json.Unmarshal(line["simulate"], &sim); err != nil || sim == nil {
			t.Fatalf("simulate is %s", line["simulate"])
		}
		for k := range sim {
			keys[k] = true
		}
	}
	if len(keys) < 17 {
		t.Fatalf("only %d fields seen: %v", len(keys), keys)
	}
	var missing []string
	for k := range keys {
		if !strings.Contains(doc, "`"+k+"`") {
			missing = append(missing, k)
		}
	}
	sort.Strings(missing)
	if len(missing) > 0 {
		t.Errorf("sweep JSON fields not documented in README's Sweeping assumptions: %s", strings.Join(missing, ", "))
	}
}
