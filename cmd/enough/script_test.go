package main

import (
	"encoding/json"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"
)

// TestMain lets the test binary stand in for the enough command: when a
// script runs `exec enough ...`, testscript starts this binary under the
// name "enough", and it runs Execute with the process's own streams and
// exits with its status, exactly as cmd/enough does.
func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"enough": func() { os.Exit(Execute(os.Args[1:], DefaultIO())) },
	})
}

// TestScripts runs the command-line sessions in testdata/script/*.txtar.
func TestScripts(t *testing.T) {
	testscript.Run(t, testscript.Params{
		Dir:                 filepath.Join("testdata", "script"),
		RequireExplicitExec: true,
		RequireUniqueNames:  true,
		Cmds: map[string]func(ts *testscript.TestScript, neg bool, args []string){
			"exitcode":  cmdExitcode,
			"oneline":   cmdOneline,
			"noglob":    cmdNoglob,
			"pad":       cmdPad,
			"jsonvalid": cmdJSONValid,
		},
	})
}

// cmdExitcode runs a program and checks its exact exit status:
//
//	exitcode 2 enough plan bad.yaml
//
// A comma-separated list accepts any of the statuses listed (exitcode 1,2).
// The program's stdout and stderr stay available to the stdout and stderr
// commands that follow, as after exec. (`! exec` only checks that the status
// is not zero; a Go panic also exits with 2, which is why the scripts check
// stderr for a stack trace as well.)
func cmdExitcode(ts *testscript.TestScript, neg bool, args []string) {
	if neg {
		ts.Fatalf("unsupported: ! exitcode (give the expected status instead)")
	}
	if len(args) < 2 {
		ts.Fatalf("usage: exitcode STATUS program [args...]")
	}
	var want []int
	for _, f := range strings.Split(args[0], ",") {
		n, err := strconv.Atoi(f)
		if err != nil {
			ts.Fatalf("exitcode: %q is not a status", f)
		}
		want = append(want, n)
	}
	got := 0
	if err := ts.Exec(args[1], args[2:]...); err != nil {
		var ee *exec.ExitError
		if !errors.As(err, &ee) {
			ts.Fatalf("exitcode: cannot run %s: %v", args[1], err)
		}
		got = ee.ExitCode()
	}
	if !slices.Contains(want, got) {
		ts.Fatalf("%s exited with status %d; want %s", args[1], got, args[0])
	}
}

// cmdOneline checks that the last command's stderr is exactly one line
// ending in a newline (`! oneline` checks that it is not).
func cmdOneline(ts *testscript.TestScript, neg bool, args []string) {
	if len(args) != 0 {
		ts.Fatalf("usage: oneline")
	}
	s := ts.ReadFile("stderr")
	ok := strings.HasSuffix(s, "\n") && strings.Count(s, "\n") == 1 && len(strings.TrimSpace(s)) > 0
	switch {
	case ok && neg:
		ts.Fatalf("stderr is a single line")
	case !ok && !neg:
		ts.Fatalf("stderr is not a single non-empty line: %q", s)
	}
}

// cmdNoglob fails if any file in the script's directory matches one of the
// glob patterns, such as the temporary file an atomic write leaves behind:
//
//	noglob '.out.md.tmp-*'
//
// `! noglob PATTERN` checks that some file matches.
func cmdNoglob(ts *testscript.TestScript, neg bool, args []string) {
	if len(args) == 0 {
		ts.Fatalf("usage: noglob pattern...")
	}
	for _, p := range args {
		matches, err := filepath.Glob(ts.MkAbs(p))
		ts.Check(err)
		switch {
		case len(matches) > 0 && !neg:
			ts.Fatalf("files left behind matching %s: %v", p, matches)
		case len(matches) == 0 && neg:
			ts.Fatalf("no file matches %s", p)
		}
	}
}

// cmdPad copies SRC to DST and appends YAML comment lines until DST is
// exactly SIZE bytes:
//
//	pad spec.yaml big.yaml 1048577
func cmdPad(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 3 {
		ts.Fatalf("usage: pad SRC DST SIZE")
	}
	size, err := strconv.Atoi(args[2])
	if err != nil {
		ts.Fatalf("pad: %q is not a size", args[2])
	}
	data := []byte(ts.ReadFile(args[0]))
	if len(data) > size {
		ts.Fatalf("pad: %s is already %d bytes, more than %d", args[0], len(data), size)
	}
	if len(data) > 0 && data[len(data)-1] != '\n' {
		ts.Fatalf("pad: %s must end with a newline", args[0])
	}
	for rest := size - len(data); rest > 0; rest = size - len(data) {
		switch {
		case rest == 1:
			data = append(data, '\n')
		default:
			w := min(rest, 80)
			data = append(data, '#')
			data = append(data, strings.Repeat("x", w-2)...)
			data = append(data, '\n')
		}
	}
	ts.Check(os.WriteFile(ts.MkAbs(args[1]), data, 0o644))
}

// cmdJSONValid checks that a file (or stdout) is one well-formed JSON value.
func cmdJSONValid(ts *testscript.TestScript, neg bool, args []string) {
	if len(args) != 1 {
		ts.Fatalf("usage: jsonvalid FILE")
	}
	valid := json.Valid([]byte(ts.ReadFile(args[0])))
	switch {
	case valid && neg:
		ts.Fatalf("%s is valid JSON", args[0])
	case !valid && !neg:
		ts.Fatalf("%s is not valid JSON", args[0])
	}
}
