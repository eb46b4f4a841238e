package report

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"enough/designs"
	"enough/examples"
)

var update = flag.Bool("update", false, "rewrite the golden files")

func planExample(t *testing.T, name string) *designs.Result {
	t.Helper()
	data, err := examples.Files.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	s, err := designs.Parse("examples/"+name, data, nil)
	if err != nil {
		t.Fatal(err)
	}
	r, err := designs.Plan(s)
	if err != nil {
		t.Fatal(err)
	}
	if s.Simulate != nil {
		// The simulation is fixed by its seed whatever the number of workers.
		if err := designs.Verify(context.Background(), s, r, designs.SimOptions{}); err != nil {
			t.Fatal(err)
		}
	}
	return r
}

// TestGolden compares whole outputs with golden files; a change in wording
// or layout is a visible decision (regenerate with go test -update).
func TestGolden(t *testing.T) {
	for _, name := range []string{"demo-trial.yaml", "case-control-well-water.yaml", "survey-booster-coverage.yaml", "cohort-detectable.yaml", "trial-power-check.yaml", "cross-sectional-noise.yaml",
		"trial-walking-blood-pressure.yaml", "trial-survival-home-dialysis.yaml", "trial-noninferiority-short-course.yaml",
		"trial-cluster-schools.yaml", "trial-crossover-night-splint.yaml", "trial-equivalence-physio.yaml", "trial-three-arms.yaml", "cohort-paired-sleep.yaml", "trial-verified-fisher.yaml",
		"trial-noninferiority-relapse.yaml", "trial-equivalence-ratio-vaccine.yaml"} {
		r := planExample(t, name)
		for _, f := range []struct{ format, ext string }{{"markdown", "md"}, {"text", "txt"}, {"json", "json"}} {
			var b bytes.Buffer
			if err := Write(&b, r, f.format); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join("testdata", strings.TrimSuffix(name, ".yaml")+"."+f.ext)
			if *update {
				if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
				continue
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test ./designs/report -update)", err)
			}
			if !bytes.Equal(b.Bytes(), want) {
				t.Errorf("%s differs from the golden file; run go test ./designs/report -update and review the diff", path)
			}
		}
	}
}

// TestJSONContract checks the field names that scripts rely on.
func TestJSONContract(t *testing.T) {
	var b bytes.Buffer
	if err := Write(&b, planExample(t, "demo-trial.yaml"), "json"); err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b.Bytes(), &m); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"tool", "version", "spec_sha256", "design", "outcome", "solve", "method", "test", "alpha", "sides", "power", "ratio", "result", "alternatives", "warnings"} {
		if _, ok := m[k]; !ok {
			t.Errorf("missing top-level %q", k)
		}
	}
	res := m["result"].(map[string]any)
	for _, k := range []string{"n", "total", "achieved_power", "enrol", "enrol_total", "effect"} {
		if _, ok := res[k]; !ok {
			t.Errorf("missing result.%s", k)
		}
	}
	eff := res["effect"].(map[string]any)
	for _, k := range []string{"risk_ratio", "odds_ratio", "risk_difference", "nnt"} {
		if _, ok := eff[k]; !ok {
			t.Errorf("missing result.effect.%s", k)
		}
	}
	alt := m["alternatives"].([]any)[0].(map[string]any)
	for _, k := range []string{"method", "n", "total"} {
		if _, ok := alt[k]; !ok {
			t.Errorf("missing alternatives[0].%s", k)
		}
	}

	// A case-control plan has no risk-based measures at all (absent, not 0).
	b.Reset()
	if err := Write(&b, planExample(t, "case-control-well-water.yaml"), "json"); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{`"risk_ratio"`, `"risk_difference"`, `"nnt"`} {
		if bytes.Contains(b.Bytes(), []byte(k)) {
			t.Errorf("case-control JSON has %s", k)
		}
	}
	// Solving effect reports detectable {lower, upper}.
	b.Reset()
	if err := Write(&b, planExample(t, "cohort-detectable.yaml"), "json"); err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(b.Bytes(), []byte(`"detectable"`)) || !bytes.Contains(b.Bytes(), []byte(`"lower"`)) {
		t.Error("effect JSON lacks detectable.lower")
	}
}

func TestFormatting(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{pct(0.3), "30%"}, {pct(0.225), "22.5%"}, {pct(0.0125), "1.25%"},
		{pct1(0.8), "80.0%"}, {count(1234567), "1,234,567"}, {count(999), "999"},
		{pp(-0.054), "−5.4 percentage points"}, {pp(0.03), "+3 percentage points"},
		{num(0.6806), "0.681"}, {num(2), "2"}, {allocation(2), "1:2"}, {allocation(0.5), "1:0.5"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}
