package examples_test

import (
	"os"
	"strings"
	"testing"
)

// readmeBetween returns README.md from the first occurrence of start to
// the first of end after it; the test fails when either is missing.
func readmeBetween(t *testing.T, start, end string) string {
	t.Helper()
	readme, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	doc := string(readme)
	i := strings.Index(doc, start)
	j := strings.Index(doc[max(i, 0):], end)
	if i < 0 || j < 0 {
		t.Fatalf("README has no section from %q to %q", start, end)
	}
	return doc[i : i+j]
}
