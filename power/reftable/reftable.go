// Package reftable reads the reference tables under testdata/reference:
// tab-separated values computed outside this project (R, scipy,
// statsmodels), one case per row, each row naming its source. It is for
// tests only.
package reftable

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
)

// Row is one row of a reference table, keyed by column name.
type Row map[string]string

// Load reads testdata/reference/name from the repository root. It fails the
// test when the table is missing or empty.
func Load(t testing.TB, name string) []Row {
	t.Helper()
	_, here, _, _ := runtime.Caller(0)
	path := filepath.Join(filepath.Dir(here), "..", "..", "testdata", "reference", name)
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(make([]byte, 1<<16), 1<<20)
	var header []string
	var rows []Row
	for sc.Scan() {
		fields := strings.Split(sc.Text(), "\t")
		if header == nil {
			header = fields
			continue
		}
		row := Row{}
		for i, h := range header {
			if i < len(fields) {
				row[h] = fields[i]
			}
		}
		rows = append(rows, row)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(rows) == 0 {
		t.Fatalf("%s: no rows", name)
	}
	return rows
}

// F returns a numeric column; "NA" is NaN and "Inf" is +Inf.
func (r Row) F(t testing.TB, col string) float64 {
	t.Helper()
	v, ok := r[col]
	if !ok {
		t.Fatalf("%s: no column %q", r["id"], col)
	}
	switch v {
	case "NA":
		return math.NaN()
	case "Inf":
		return math.Inf(1)
	case "-Inf":
		return math.Inf(-1)
	}
	x, err := strconv.ParseFloat(v, 64)
	if err != nil {
		t.Fatalf("%s: column %s: %v", r["id"], col, err)
	}
	return x
}

// I returns a whole-number column.
func (r Row) I(t testing.TB, col string) int {
	t.Helper()
	return int(r.F(t, col))
}
