package main

import (
	"bytes"
	"errors"
	"io"
	"os"
	"testing"

	"enough/designs"
	"enough/designs/sweep"
)

// TestSweepFormat checks the format chosen: -f when given, else CSV for
// anything that is not a terminal (a pipe, a buffer, a file given by -o).
func TestSweepFormat(t *testing.T) {
	devnull, err := os.Open(os.DevNull)
	if err != nil {
		t.Fatal(err)
	}
	defer devnull.Close()
	for _, c := range []struct {
		format, output string
		out            io.Writer
		want           string
	}{
		{"", "", &bytes.Buffer{}, "csv"},
		{"", "", devnull, "csv"},
		{"", "out.csv", &bytes.Buffer{}, "csv"},
		{"markdown", "", &bytes.Buffer{}, "markdown"},
		{"json", "out.json", devnull, "json"},
	} {
		if got := sweepFormat(c.format, c.output, c.out); got != c.want {
			t.Errorf("sweepFormat(%q, %q, %T) = %q; want %q", c.format, c.output, c.out, got, c.want)
		}
	}
}

func TestThousands(t *testing.T) {
	for n, want := range map[int]string{0: "0", 999: "999", 1000: "1,000", 1000000: "1,000,000", 8006001: "8,006,001", 12345678901: "12,345,678,901"} {
		if got := thousands(n); got != want {
			t.Errorf("thousands(%d) = %q; want %q", n, got, want)
		}
	}
}

// TestAllRefused checks that a sweep is refused as a whole only when
// every point's simulation was refused for its settings.
func TestAllRefused(t *testing.T) {
	refused := &designs.InputError{Msg: "s.yaml: simulate: a precision survey has no test to simulate"}
	for _, c := range []struct {
		name string
		rows []sweep.Row
		want error
	}{
		{"no rows", nil, nil},
		{"all planned", []sweep.Row{{}, {}}, nil},
		{"all refused", []sweep.Row{{Err: refused}, {Err: refused}}, refused},
		{"some refused", []sweep.Row{{Err: refused}, {}}, nil},
		{"other errors", []sweep.Row{{Err: refused}, {Err: &designs.SpecError{Msg: "x"}}}, nil},
	} {
		if got := allRefused(c.rows); !errors.Is(got, c.want) {
			t.Errorf("%s: %v; want %v", c.name, got, c.want)
		}
	}
}
