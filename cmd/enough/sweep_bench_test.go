package main

import (
	"os"
	"path/filepath"
	"testing"
)

// BenchmarkSweepCSV100k is issue 11's end-to-end goal inside the process:
// a sweep of 100,651 points (401 control risks × 251 risk ratios) solving
// n for two proportions, written as CSV to a file. README, "Sweeping
// assumptions", gives the figure of the whole process.
func BenchmarkSweepCSV100k(b *testing.B) {
	dir := b.TempDir()
	spec := filepath.Join(dir, "sweep.yaml")
	if err := os.WriteFile(spec, []byte("version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.8\nmethod: fleiss\n"), 0o644); err != nil {
		b.Fatal(err)
	}
	out := filepath.Join(dir, "sweep.csv")
	for b.Loop() {
		streams := DefaultIO()
		if code := Execute([]string{"sweep", spec, "--vary", "control_risk=0.1:0.5:0.001", "--vary", "risk_ratio=0.5:0.9:0.0016", "-o", out, "-q"}, streams); code != 0 {
			b.Fatalf("exit status %d", code)
		}
	}
}
