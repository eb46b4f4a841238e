package designs_test

import (
	"os"
	"path/filepath"
	"testing"

	"enough/designs"
)

// The fuzz targets run briefly in CI (.ci/run, 20 s each) and for longer
// by hand (DEVELOPERS.md, "Checks"). A failing input is written under
// testdata/fuzz/NAME and replayed by every later go test.

// seedSpecs returns the examples and the starters, the seeds of both fuzz
// targets.
func seedSpecs(f *testing.F) [][]byte {
	var out [][]byte
	for _, pattern := range []string{filepath.Join("..", "examples", "*.yaml"), filepath.Join("starters", "*.yaml")} {
		paths, err := filepath.Glob(pattern)
		if err != nil {
			f.Fatal(err)
		}
		for _, p := range paths {
			data, err := os.ReadFile(p)
			if err != nil {
				f.Fatal(err)
			}
			out = append(out, data)
		}
	}
	if len(out) == 0 {
		f.Fatal("no seed specification found")
	}
	return out
}

// FuzzPlan checks that no specification, however odd, makes Parse or Plan
// panic: every problem must come back as an error.
func FuzzPlan(f *testing.F) {
	for _, data := range seedSpecs(f) {
		f.Add(data)
	}
	f.Add([]byte("version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\nratio: 1e-9\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := designs.Parse("fuzz.yaml", data, nil)
		if err != nil {
			return
		}
		_, _ = designs.Plan(s)
	})
}

// FuzzRender parses a specification with one --set override (none when
// set is empty), plans it and renders every format, and checks each step's
// contract: a refusal is a *SpecError or SpecErrors, a plan's failure a
// *PlanError, a plan holds no NaN or infinity and renders in every format
// without error or a NaN or Inf in the text, and the whole takes less than
// pipelineBudget.
func FuzzRender(f *testing.F) {
	for _, data := range seedSpecs(f) {
		f.Add(data, "")
	}
	const trial = "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
	for _, set := range []string{"alpha=1e-20", "power=0.999999", "ratio=1e-9", "ratio=1e9", "attrition=0.999999",
		"design_effect=1000", "cluster={size: 1000000, icc: 0.999}", "sides=1", "method=exact", "solve=effect", "n=1e9",
		"power=0.9\n---\n0.8", "alpha=.nan", "control_risk=1e-300"} {
		f.Add([]byte(trial), set)
	}
	f.Fuzz(func(t *testing.T, data []byte, set string) {
		var sets []string
		if set != "" {
			sets = []string{set}
		}
		checkPipeline(t, string(data)+"\x00"+set, func() (*designs.Spec, error) {
			return designs.Parse("fuzz.yaml", data, sets)
		})
	})
}
