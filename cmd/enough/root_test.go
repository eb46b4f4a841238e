package main

import (
	"errors"
	"fmt"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"enough/designs"
)

// TestExitCodes checks the documented exit statuses.
func TestExitCodes(t *testing.T) {
	for _, c := range []struct {
		err  error
		want int
	}{
		{&designs.SpecError{File: "a.yaml", Msg: "x"}, ExitInput},
		{withSource(&designs.SpecError{File: "a.yaml", Msg: "x"}, "a.yaml", nil), ExitInput},
		{errors.Join(&designs.SpecError{File: "a.yaml", Msg: "x"}, &designs.SpecError{File: "a.yaml", Msg: "y"}), ExitInput},
		{specList{{File: "a.yaml", Msg: "x"}, {File: "a.yaml", Msg: "y"}}, ExitInput},
		{&inputError{msg: "x"}, ExitInput},
		{&flagError{flag: "--seed", msg: "x"}, ExitInput},
		{&designs.InputError{Msg: "x"}, ExitInput},
		{errors.New("bad flag syntax: ---x"), ExitInput},
		{fmt.Errorf("wrapped: %w", errInterrupted), ExitInterrupted},
		{fmt.Errorf("wrapped: %w", errTerminated), ExitTerminated},
		{&designs.PlanError{File: "a.yaml", Msg: "x"}, ExitFailure},
		{errors.New("disk full"), ExitFailure},
	} {
		if got := exitCode(c.err); got != c.want {
			t.Errorf("exitCode(%v) = %d, want %d", c.err, got, c.want)
		}
	}
}

// exitStatuses is the table every command follows (issue 8, item 12);
// 130 and 143 are 128 + the signal's number (SIGINT 2, SIGTERM 15; common
// practice of POSIX shells).
var exitStatuses = map[int]int{
	0: ExitOK, 1: ExitFailure, 2: ExitInput, 3: ExitUnderPowered, 4: ExitOversized,
	5: ExitNoVerdict, 6: ExitSweepIncomplete, 130: ExitInterrupted, 143: ExitTerminated,
}

// TestExitStatusTable checks that the constants, the root command's help
// and README's table list the same statuses.
func TestExitStatusTable(t *testing.T) {
	for want, got := range exitStatuses {
		if got != want {
			t.Errorf("exit status constant %d, want %d", got, want)
		}
	}
	help := map[int]bool{}
	for _, m := range regexp.MustCompile(`(?m)^  (\d+) +\S`).FindAllStringSubmatch(exitTable, -1) {
		n, _ := strconv.Atoi(m[1])
		help[n] = true
	}
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	_, section, ok := strings.Cut(string(readme), "\n## Exit status\n")
	if !ok {
		t.Fatal("README.md has no section ## Exit status")
	}
	section, _, _ = strings.Cut(section, "\n## ")
	documented := map[int]bool{}
	for _, m := range regexp.MustCompile(`(?m)^\| (\d+) \|`).FindAllStringSubmatch(section, -1) {
		n, _ := strconv.Atoi(m[1])
		documented[n] = true
	}
	for status := range exitStatuses {
		if !help[status] {
			t.Errorf("status %d is missing from the root command's help", status)
		}
		if !documented[status] {
			t.Errorf("status %d is missing from README's table of exit statuses", status)
		}
	}
	for status := range help {
		if _, ok := exitStatuses[status]; !ok {
			t.Errorf("the root command's help lists status %d, which is not in the table", status)
		}
	}
	for status := range documented {
		if _, ok := exitStatuses[status]; !ok {
			t.Errorf("README lists status %d, which is not in the table", status)
		}
	}
	root := NewRootCmd(&IO{})
	if !strings.Contains(root.Long, exitTable) {
		t.Error("the root command's help does not carry the table of exit statuses")
	}
}

// TestWantsJSON checks that errors are JSON exactly when the command line
// asks its command for JSON, read as the flag parser reads it.
func TestWantsJSON(t *testing.T) {
	for _, c := range []struct {
		args []string
		want bool
	}{
		{[]string{"plan", "-f", "json"}, true},
		{[]string{"plan", "--format", "json", "s.yaml"}, true},
		{[]string{"plan", "--format=json"}, true},
		{[]string{"plan", "-fjson"}, true},
		{[]string{"plan", "-f=json"}, true},
		{[]string{"plan", "-qf", "json"}, true},
		{[]string{"simulate", "s.yaml", "--replicates", "x", "-f", "json"}, true},
		{[]string{"methods", "-f", "json", "extra"}, true},
		{[]string{"plan", "-f", "json", "-f", "text"}, false}, // the last one counts
		{[]string{"plan", "-f", "text", "--format", "json"}, true},
		{[]string{"plan", "--set", "-f", "json"}, false},  // -f is the value of --set
		{[]string{"plan", "-o", "-f", "s.yaml"}, false},   // -f is the value of -o
		{[]string{"plan", "--", "-f", "json"}, false},     // after --, arguments
		{[]string{"plan", "--exact", "-f", "json"}, true}, // a switch takes no value
		{[]string{"plan", "--format", "jsonl"}, false},    // not a format
		{[]string{"new", "trial", "-f", "json"}, false},   // new has no --format
		{[]string{"frobnicate", "-f", "json"}, false},     // no such command
		{[]string{"plan", "s.yaml"}, false},
		{[]string{"plan", "-f"}, false},
	} {
		root := NewRootCmd(&IO{})
		if got := wantsJSON(root, c.args); got != c.want {
			t.Errorf("wantsJSON(%q) = %v, want %v", c.args, got, c.want)
		}
	}
}
