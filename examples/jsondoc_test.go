package examples_test

import (
	"bytes"
	"context"
	"encoding/json"
	"io/fs"
	"sort"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/report"
	"enough/designs/review"
	"enough/examples"
)

// TestJSONFieldsDocumented checks that every field name the JSON output
// can carry is documented in README's table of JSON fields: it plans every
// example as written and solving each other question, verifies those with a
// simulate block, and collects every key of the JSON.
func TestJSONFieldsDocumented(t *testing.T) {
	doc := readmeBetween(t, "**JSON**", "## Exit status")
	keys := map[string]string{}
	names, _ := fs.Glob(examples.Files, "*.yaml")
	for _, name := range names {
		data, _ := examples.Files.ReadFile(name)
		for _, sets := range [][]string{nil, {"solve=power", "n=200"}, {"solve=effect", "n=200"}} {
			s, err := designs.Parse(name, data, sets)
			if err != nil {
				continue
			}
			res, err := designs.Plan(s)
			if err != nil {
				continue
			}
			if s.Simulate != nil && sets == nil {
				if err := designs.Verify(context.Background(), s, res, designs.SimOptions{Replicates: 200}); err != nil {
					t.Fatalf("%s: %v", name, err)
				}
			}
			var b bytes.Buffer
			if err := report.Write(&b, res, "json"); err != nil {
				t.Fatal(err)
			}
			var v any
			if err := json.Unmarshal(b.Bytes(), &v); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			collectKeys(v, "", name, keys)
		}
	}
	// The review's JSON: every example protocol as written, and every
	// example as a protocol stating a size of 200 (or a total of 600 for a
	// survey), with no power, and with a power that other examples state.
	reviews := 0
	for _, name := range names {
		data, _ := examples.Files.ReadFile(name)
		for _, sets := range [][]string{nil, {"claimed.n=200"}, {"claimed.total=600"}, {"claimed.n=200", "claimed.enrol_total=500", "power=0.9"}} {
			in, err := designs.ParseReview(name, data, sets)
			if err != nil {
				continue
			}
			rep, err := review.Run(in)
			if err != nil {
				continue
			}
			var b bytes.Buffer
			if err := report.WriteReview(&b, rep, in, report.ReviewSource{File: name, Data: data, Sets: sets}, "json"); err != nil {
				t.Fatal(err)
			}
			var v any
			if err := json.Unmarshal(b.Bytes(), &v); err != nil {
				t.Fatalf("%s %v: %v", name, sets, err)
			}
			collectKeys(v, "", name+" reviewed", keys)
			reviews++
		}
	}
	if reviews < 20 {
		t.Fatalf("only %d reviews", reviews)
	}
	if len(keys) < 60 {
		t.Fatalf("only %d keys seen", len(keys))
	}
	var missing []string
	for k, path := range keys {
		// A field is documented by name (`lower`) or as the end or start
		// of a dotted path (`result.n_star`, `result.n`).
		if !strings.Contains(doc, "`"+k+"`") && !strings.Contains(doc, "."+k+"`") && !strings.Contains(doc, "`"+k+".") {
			missing = append(missing, k+" (at "+path+")")
		}
	}
	sort.Strings(missing)
	if len(missing) > 0 {
		t.Errorf("JSON fields not documented in README: %s", strings.Join(missing, "; "))
	}
}

// collectKeys records every object key of v with one path where it occurs.
// The keys of a step's inputs are names of values, not fields, and are
// skipped.
func collectKeys(v any, path, where string, keys map[string]string) {
	switch x := v.(type) {
	case map[string]any:
		for k, c := range x {
			if strings.HasSuffix(path, ".inputs") {
				continue
			}
			p := strings.TrimPrefix(path+"."+k, ".")
			if _, ok := keys[k]; !ok {
				keys[k] = p + " in " + where
			}
			collectKeys(c, p, where, keys)
		}
	case []any:
		for _, c := range x {
			collectKeys(c, path, where, keys)
		}
	}
}
