package designs

import (
	"io/fs"
	"os"
	"path/filepath"
	"testing"
)

// FuzzPlan checks that no specification, however odd, makes Parse or Plan
// panic: every problem must come back as an error.
func FuzzPlan(f *testing.F) {
	paths, _ := filepath.Glob(filepath.Join("..", "examples", "*.yaml"))
	names, _ := fs.Glob(starters, "starters/*.yaml")
	for _, p := range paths {
		if data, err := os.ReadFile(p); err == nil {
			f.Add(data)
		}
	}
	for _, p := range names {
		if data, err := fs.ReadFile(starters, p); err == nil {
			f.Add(data)
		}
	}
	f.Add([]byte("version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\nratio: 1e-9\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := Parse("fuzz.yaml", data, nil)
		if err != nil {
			return
		}
		_, _ = Plan(s)
	})
}
