package main

import (
	"strings"
	"testing"
)

// TestParseWhole checks how a whole-number flag reads its value: digits,
// or a whole number in decimal or exponent notation; anything else is
// refused with a reason in plain words.
func TestParseWhole(t *testing.T) {
	for _, c := range []struct {
		in   string
		want int64
		why  string
	}{
		{"1000", 1000, ""},
		{"+7", 7, ""},
		{"-1", -1, ""},
		{"0", 0, ""},
		{"1e6", 1_000_000, ""},
		{"1E6", 1_000_000, ""},
		{"2.5e3", 2500, ""},
		{"100.0", 100, ""},
		{"9223372036854775807", 9223372036854775807, ""},
		{"9.2e18", 9_200_000_000_000_000_000, ""},
		{"1.5", 0, "is not a whole number"},
		{"1e-3", 0, "is not a whole number"},
		{"1e-400", 0, "is not a whole number"},
		{"abc", 0, "is not a whole number"},
		{"", 0, "is not a whole number"},
		{"1_000", 0, "is not a whole number"},
		{"0x10", 0, "is not a whole number"},
		{"0x1p4", 0, "is not a whole number"},
		{"NaN", 0, "is not a whole number"},
		{"Inf", 0, "is not a whole number"},
		{"1,000", 0, "is not a whole number"},
		{"99999999999999999999", 0, "is too large"},
		{"9223372036854775808", 0, "is too large"},
		{"9.3e18", 0, "is too large"},
		{"1e400", 0, "is too large"},
		{"-99999999999999999999", 0, "is too far below zero"},
	} {
		got, why := parseWhole(c.in)
		if got != c.want || why != c.why {
			t.Errorf("parseWhole(%q) = %d, %q; want %d, %q", c.in, got, why, c.want, c.why)
		}
	}
}

// TestFlagValues runs `enough plan` and `enough simulate` with a fake run
// step and checks what the flags hold, and that a bad value is refused
// with the flag's name, the value given and what is allowed.
func TestFlagValues(t *testing.T) {
	type want struct {
		workers                                    int
		replicates, seed, maxReplicates, maxMemory int64
		replicatesGiven, seedGiven                 bool
		maxSeconds                                 float64
		quiet, verify, exact                       bool
		format, output                             string
	}
	defaults := want{maxReplicates: 1_000_000_000, maxMemory: 1024, maxSeconds: 600, format: "markdown"}
	const replicatesAllowed = "a whole number from 100 to 1e12, and at most --max-replicates (1e6 is read as 1000000)"
	const workersAllowed = "a whole number from 0 (one per core) to 10000"
	const seedAllowed = "a whole number from 0 to 9007199254740992 (2^53)"
	const maxReplicatesAllowed = "a whole number from 100 to 1e12 (1e9 is read as 1000000000)"
	const flagList = "--exact, -f/--format, -h/--help, --max-memory, --max-replicates, --max-seconds, -o/--output, --plot, -q/--quiet, --replicates, --seed, --set, --verify, --workers"
	for _, c := range []struct {
		args []string
		edit func(*want)
		err  string // the error's line, when the flags are refused
	}{
		{args: nil, edit: func(*want) {}},
		{args: []string{"--replicates", "1e6", "--seed", "7", "--workers", "3"},
			edit: func(w *want) {
				w.replicates, w.seed, w.workers, w.replicatesGiven, w.seedGiven = 1_000_000, 7, 3, true, true
			}},
		// 0 is a seed like any other, told from "not given" by the flag
		// being given; the limits of each range are taken.
		{args: []string{"--seed", "0", "--replicates", "100"},
			edit: func(w *want) { w.seed, w.seedGiven, w.replicates, w.replicatesGiven = 0, true, 100, true }},
		{args: []string{"--seed", "9007199254740992", "--replicates", "1e12", "--max-replicates", "1e12", "--workers", "10000", "--max-memory", "1048576"},
			edit: func(w *want) {
				w.seed, w.seedGiven, w.replicates, w.replicatesGiven = 9007199254740992, true, 1e12, true
				w.maxReplicates, w.workers, w.maxMemory = 1e12, 10000, 1048576
			}},
		{args: []string{"--max-seconds", "2.5", "--max-replicates", "2e9", "--max-memory", "64"},
			edit: func(w *want) { w.maxSeconds, w.maxReplicates, w.maxMemory = 2.5, 2_000_000_000, 64 }},
		{args: []string{"--max-seconds", "0"}, edit: func(w *want) { w.maxSeconds = 0 }},
		{args: []string{"-q", "--exact", "--verify", "-f", "json", "-o", "out.json"},
			edit: func(w *want) { w.quiet, w.exact, w.verify, w.format, w.output = true, true, true, "json", "out.json" }},
		{args: []string{"--exact=false", "--quiet=true", "--verify=0"},
			edit: func(w *want) { w.quiet = true }},
		{args: []string{"--replicates", "1e6x"},
			err: `--replicates: "1e6x" is not a whole number; allowed: ` + replicatesAllowed},
		{args: []string{"--replicates", "99999999999999999999"},
			err: `--replicates: "99999999999999999999" is too large; allowed: ` + replicatesAllowed},
		// Each count is checked as it enters, with the value given.
		{args: []string{"--replicates", "9223372036854775807", "--max-replicates", "9223372036854775807"},
			err: `--replicates: "9223372036854775807" is out of range; allowed: ` + replicatesAllowed},
		{args: []string{"--replicates", "1000000000001"},
			err: `--replicates: "1000000000001" is out of range; allowed: ` + replicatesAllowed},
		{args: []string{"--replicates", "0"},
			err: `--replicates: "0" is out of range; allowed: ` + replicatesAllowed},
		{args: []string{"--replicates", "99"},
			err: `--replicates: "99" is out of range; allowed: ` + replicatesAllowed},
		{args: []string{"--max-replicates", "0"},
			err: `--max-replicates: "0" is out of range; allowed: ` + maxReplicatesAllowed},
		{args: []string{"--max-replicates", "-1"},
			err: `--max-replicates: "-1" is out of range; allowed: ` + maxReplicatesAllowed},
		{args: []string{"--max-replicates", "9223372036854775807"},
			err: `--max-replicates: "9223372036854775807" is out of range; allowed: ` + maxReplicatesAllowed},
		{args: []string{"--workers", "x"},
			err: `--workers: "x" is not a whole number; allowed: ` + workersAllowed},
		{args: []string{"--workers", "-1"},
			err: `--workers: "-1" is out of range; allowed: ` + workersAllowed},
		{args: []string{"--workers", "10001"},
			err: `--workers: "10001" is out of range; allowed: ` + workersAllowed},
		{args: []string{"--seed", "1.5"},
			err: `--seed: "1.5" is not a whole number; allowed: ` + seedAllowed},
		{args: []string{"--seed", "-1"},
			err: `--seed: "-1" is out of range; allowed: ` + seedAllowed},
		{args: []string{"--seed", "9007199254740993"},
			err: `--seed: "9007199254740993" is out of range; allowed: ` + seedAllowed},
		{args: []string{"--max-memory", "0"},
			err: `--max-memory: "0" is out of range; allowed: a whole number of MiB from 1 to 1048576`},
		{args: []string{"--max-seconds", "-1"},
			err: `--max-seconds: "-1" is out of range; allowed: a number of seconds: 0 (no limit) or more`},
		{args: []string{"--max-seconds", "abc"},
			err: `--max-seconds: "abc" is not a number; allowed: a number of seconds: 0 (no limit) or more`},
		{args: []string{"--max-seconds", "NaN"},
			err: `--max-seconds: "NaN" is not a number; allowed: a number of seconds: 0 (no limit) or more`},
		{args: []string{"--max-seconds", "0,5"},
			err: `--max-seconds: "0,5" is not a number (write the decimal point as a point: 0.5); allowed: a number of seconds: 0 (no limit) or more`},
		{args: []string{"--max-seconds", "1e999"},
			err: `--max-seconds: "1e999" is too large; allowed: a number of seconds: 0 (no limit) or more`},
		{args: []string{"--exact=maybe"},
			err: `--exact: "maybe" is not true or false; allowed: the flag alone, or --exact=true or --exact=false`},
		{args: []string{"-f", "pdf"},
			err: `--format: "pdf" is not a format; allowed: markdown, text, json, html`},
		{args: []string{"-o", ""},
			err: `--output: "" is an empty file name; allowed: a file name (leave -o out to write to standard output)`},
		{args: []string{"--output", " "},
			err: `--output: " " is an empty file name; allowed: a file name (leave -o out to write to standard output)`},
		{args: []string{"-o"},
			err: `--output: needs a value; allowed: a file name (leave -o out to write to standard output)`},
		{args: []string{"--replicates"},
			err: `--replicates: needs a value; allowed: ` + replicatesAllowed},
		{args: []string{"--bogus"},
			err: `--bogus: unknown flag; allowed: the flags of plan: ` + flagList},
		{args: []string{"-qx"},
			err: `-x: unknown flag; allowed: the flags of plan: ` + flagList},
		{args: []string{"--help=maybe"},
			err: `--help: "maybe" is not true or false; allowed: the flag alone, or --help=true or --help=false`},
	} {
		t.Run(strings.Join(c.args, " "), func(t *testing.T) {
			var got *PlanOptions
			cmd := NewCmdPlan(&IO{}, func(o *PlanOptions) error { got = o; return nil })
			cmd.SetFlagErrorFunc(flagProblem)
			cmd.SetArgs(append([]string{"s.yaml"}, c.args...))
			cmd.SilenceErrors, cmd.SilenceUsage = true, true
			err := cmd.Execute()
			if c.err != "" {
				if err == nil || err.Error() != c.err {
					t.Fatalf("error %v\nwant %s", err, c.err)
				}
				if exitCode(err) != ExitInput {
					t.Errorf("exit status %d, want %d", exitCode(err), ExitInput)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			w := defaults
			c.edit(&w)
			s := got.Sim
			have := want{s.Workers, s.Replicates, s.Seed, s.MaxReplicates, s.MaxMemory, s.ReplicatesGiven, s.SeedGiven, s.MaxSeconds, s.Quiet, got.Verify, got.Exact, got.Format, got.Output}
			if have != w {
				t.Errorf("flags hold %+v\nwant %+v", have, w)
			}
			if got.Spec != "s.yaml" {
				t.Errorf("spec %q, want s.yaml", got.Spec)
			}
		})
	}
}

// TestArguments checks the messages for the wrong number of arguments.
func TestArguments(t *testing.T) {
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{"plan", "a.yaml", "b.yaml"}, "plan: 2 specifications given (a.yaml, b.yaml); allowed: one specification at most (run enough plan once per file)"},
		{[]string{"simulate"}, "simulate: needs a specification file; allowed: enough simulate SPEC.yaml, or - to read it from standard input (enough plan --verify simulates the built-in demonstration study)"},
		{[]string{"simulate", "a.yaml", "b.yaml"}, "simulate: 2 specifications given (a.yaml, b.yaml); allowed: one specification at most (run enough simulate once per file)"},
		{[]string{"new"}, "new: name a design; allowed: cohort, case-control, trial or cross-sectional (for example enough new trial > study.yaml)"},
		{[]string{"new", "trial", "cohort"}, "new: 2 designs given (trial, cohort); allowed: one design: cohort, case-control, trial or cross-sectional"},
		{[]string{"methods", "all"}, "methods: takes no argument, given all; allowed: enough methods [-f markdown|text|json]"},
		{[]string{"frobnicate"}, "frobnicate: unknown command; allowed: plan, simulate, review, sweep, merge, new or methods (enough --help describes them)"},
		{[]string{"plna"}, "plna: unknown command; did you mean plan?"},
	} {
		var out, errOut strings.Builder
		code := Execute(c.args, &IO{In: strings.NewReader(""), Out: &out, ErrOut: &errOut})
		if code != ExitInput {
			t.Errorf("%q: exit status %d, want %d", c.args, code, ExitInput)
		}
		if got := errOut.String(); got != "enough: "+c.want+"\n" {
			t.Errorf("%q:\n got %q\nwant %q", c.args, got, "enough: "+c.want+"\n")
		}
		if out.Len() > 0 {
			t.Errorf("%q: wrote %q to standard output", c.args, out.String())
		}
	}
}
