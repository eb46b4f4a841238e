package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"testing"

	"enough/designs"
)

// specList is a list of specification errors without Go's Unwrap() []error
// method: errorJSON must list its members all the same.
type specList []*designs.SpecError

func (l specList) Error() string {
	var lines []string
	for _, e := range l {
		lines = append(lines, e.Error())
	}
	return strings.Join(lines, "\n")
}

// TestErrorJSON checks the JSON form of errors on standard error: one
// object on one line, {"error": ...} for one error and {"errors": [...]}
// for several, with every field of a specification error (null where not
// known) and only the message (and the file or what is allowed, where
// known) for any other error.
func TestErrorJSON(t *testing.T) {
	spec := []byte("version: 1\ndesign: trial\ncontrol_risk: 0.2   # audit\nrisk_ratio: \"abc\"\nalpha: 0.7\nalpah: 0.05\ncluster: {size: 20, icc: 2}\n")
	rangeErr := &designs.SpecError{File: "s.yaml", Line: 5, Key: "alpha", Msg: "0.7 is out of range; allowed: a number in (0, 0.5]"}
	wordErr := &designs.SpecError{File: "s.yaml", Line: 4, Key: "risk_ratio", Msg: `"abc" is not a number; allowed: a number above 0`}
	keyErr := &designs.SpecError{File: "s.yaml", Line: 6, Key: "alpah", Msg: `unknown key; did you mean "alpha"?`}
	flowErr := &designs.SpecError{File: "s.yaml", Line: 7, Key: "cluster.icc", Msg: "2 is out of range; allowed: [0, 1)"}
	for _, c := range []struct {
		name string
		err  error
		want string
	}{
		{"range error: the value as written, the message and what is allowed apart",
			withSource(rangeErr, "s.yaml", spec),
			`{"error":{"file":"s.yaml","line":5,"key":"alpha","value":"0.7","message":"0.7 is out of range","allowed":"a number in (0, 0.5]"}}`},
		{"quoted value: unquoted in value, as printed in message",
			withSource(wordErr, "s.yaml", spec),
			`{"error":{"file":"s.yaml","line":4,"key":"risk_ratio","value":"abc","message":"\"abc\" is not a number","allowed":"a number above 0"}}`},
		{"a message about the key, not its value: no value, nothing allowed",
			withSource(keyErr, "s.yaml", spec),
			`{"error":{"file":"s.yaml","line":6,"key":"alpah","value":null,"message":"unknown key; did you mean \"alpha\"?","allowed":null}}`},
		{"a nested key in a flow map",
			withSource(flowErr, "s.yaml", spec),
			`{"error":{"file":"s.yaml","line":7,"key":"cluster.icc","value":"2","message":"2 is out of range","allowed":"[0, 1)"}}`},
		{"without the specification's text the value is unknown",
			rangeErr,
			`{"error":{"file":"s.yaml","line":5,"key":"alpha","value":null,"message":"0.7 is out of range","allowed":"a number in (0, 0.5]"}}`},
		{"an override: the value comes from --set key=value",
			&designs.SpecError{File: "--set alpha=2", Key: "alpha", Msg: "2 is out of range; allowed: a number in (0, 0.5]"},
			`{"error":{"file":"--set alpha=2","line":null,"key":"alpha","value":"2","message":"2 is out of range","allowed":"a number in (0, 0.5]"}}`},
		{"a file that cannot be read: no line, no key",
			&designs.SpecError{File: "nope.yaml", Msg: "cannot be read: no such file"},
			`{"error":{"file":"nope.yaml","line":null,"key":null,"value":null,"message":"cannot be read: no such file","allowed":null}}`},
		{"several errors (Go's Unwrap() []error) are listed in order",
			withSource(errors.Join(wordErr, rangeErr), "s.yaml", spec),
			`{"errors":[{"file":"s.yaml","line":4,"key":"risk_ratio","value":"abc","message":"\"abc\" is not a number","allowed":"a number above 0"},` +
				`{"file":"s.yaml","line":5,"key":"alpha","value":"0.7","message":"0.7 is out of range","allowed":"a number in (0, 0.5]"}]}`},
		{"several errors as a slice of errors",
			specList{keyErr, flowErr},
			`{"errors":[{"file":"s.yaml","line":6,"key":"alpah","value":null,"message":"unknown key; did you mean \"alpha\"?","allowed":null},` +
				`{"file":"s.yaml","line":7,"key":"cluster.icc","value":null,"message":"2 is out of range","allowed":"[0, 1)"}]}`},
		{"a flag: its message and what is allowed, no specification fields",
			&flagError{flag: "--replicates", msg: `"x" is not a whole number`, allowed: "a whole number of at least 100"},
			`{"error":{"message":"--replicates: \"x\" is not a whole number","allowed":"a whole number of at least 100"}}`},
		{"an I/O error: the message only",
			fmt.Errorf("cannot write out.md: %s", "no such file"),
			`{"error":{"message":"cannot write out.md: no such file"}}`},
		{"a plan that cannot be computed names its file",
			&designs.PlanError{File: "s.yaml", Msg: "power: 0.051 is so close to alpha that the formula reaches it with no participants; allowed: a target power well above alpha (e.g. 0.8)"},
			`{"error":{"file":"s.yaml","message":"power: 0.051 is so close to alpha that the formula reaches it with no participants","allowed":"a target power well above alpha (e.g. 0.8)"}}`},
		{"a suggestion after what is allowed goes with the message",
			&designs.SpecError{File: "--set alpha=2", Key: "alpha", Msg: "2 is out of range; allowed: a number in (0, 0.5]; did you mean 0.02?"},
			`{"error":{"file":"--set alpha=2","line":null,"key":"alpha","value":"2","message":"2 is out of range; did you mean 0.02?","allowed":"a number in (0, 0.5]"}}`},
		{"a suggested word in parentheses goes with the message too",
			&designs.SpecError{File: "s.yaml", Line: 2, Key: "design", Msg: `"RCT" is not allowed; allowed: cohort, case-control, trial or cross-sectional (did you mean "trial"?)`},
			`{"error":{"file":"s.yaml","line":2,"key":"design","value":null,"message":"\"RCT\" is not allowed; did you mean \"trial\"?","allowed":"cohort, case-control, trial or cross-sectional"}}`},
		{"a missing key: what is allowed apart",
			&designs.SpecError{File: "s.yaml", Key: "power", Msg: "missing; required when solving n; allowed: the target power, a number above alpha and below 1 (e.g. 0.8)"},
			`{"error":{"file":"s.yaml","line":null,"key":"power","value":null,"message":"missing; required when solving n","allowed":"the target power, a number above alpha and below 1 (e.g. 0.8)"}}`},
		{"an output file that cannot be written: its path is the file",
			&outputError{path: "/no/dir/x.json", why: "the directory /no/dir does not exist", allowed: "a file in an existing directory"},
			`{"error":{"file":"/no/dir/x.json","message":"cannot be written: the directory /no/dir does not exist","allowed":"a file in an existing directory"}}`},
		{"a simulation the specification cannot have: the file apart from the message",
			&inputError{file: "s.yaml", msg: "simulate: a precision survey has no test to simulate; allowed: a two-group comparison"},
			`{"error":{"file":"s.yaml","message":"simulate: a precision survey has no test to simulate","allowed":"a two-group comparison"}}`},
		{"a usage problem with no file",
			&inputError{msg: "plan: 2 specifications given; allowed: one"},
			`{"error":{"message":"plan: 2 specifications given","allowed":"one"}}`},
		{"no HTML escaping of < > &",
			errors.New("a <b> & c"),
			`{"error":{"message":"a <b> & c"}}`},
	} {
		t.Run(c.name, func(t *testing.T) {
			got := string(errorJSON(c.err))
			if got != c.want {
				t.Errorf("errorJSON:\n got %s\nwant %s", got, c.want)
			}
			if strings.Contains(got, "\n") || !json.Valid([]byte(got)) {
				t.Errorf("not one line of valid JSON: %q", got)
			}
		})
	}
}

// TestErrorText checks the text form: one "enough: " line per line of the
// message, for a list of errors as for one.
func TestErrorText(t *testing.T) {
	a := &designs.SpecError{File: "s.yaml", Line: 3, Key: "alpha", Msg: "2 is out of range"}
	b := &designs.SpecError{File: "s.yaml", Line: 4, Key: "power", Msg: "1.5 is out of range"}
	for _, c := range []struct {
		err  error
		want string
	}{
		{a, "enough: s.yaml:3: alpha: 2 is out of range\n"},
		{withSource(errors.Join(a, b), "s.yaml", nil), "enough: s.yaml:3: alpha: 2 is out of range\nenough: s.yaml:4: power: 1.5 is out of range\n"},
		{specList{a, b}, "enough: s.yaml:3: alpha: 2 is out of range\nenough: s.yaml:4: power: 1.5 is out of range\n"},
		{errors.New("line one\n\n  line two  \n"), "enough: line one\nenough: line two\n"},
	} {
		var w strings.Builder
		printError(&w, c.err, false)
		if w.String() != c.want {
			t.Errorf("printError(%q):\n got %q\nwant %q", c.err, w.String(), c.want)
		}
	}
}

// TestValueOnLine checks how the value written for a key is read back from
// the specification's line.
func TestValueOnLine(t *testing.T) {
	text := []byte(strings.Join([]string{
		"alpha: 0.05",                        // 1
		"power: 0.8   # the funder's rule",   // 2
		`title: "A: quoted # not a comment"`, // 3
		"first_group: 'it''s'",               // 4
		"cluster: {size: 20, icc: 0.05}",     // 5
		"sources:",                           // 6
		"  alpha: usual practice",            // 7
		"sd:",                                // 8
		"n: 120\r",                           // 9
	}, "\n"))
	for _, c := range []struct {
		line   int
		key    string
		want   string
		wantOK bool
	}{
		{1, "alpha", "0.05", true},
		{2, "power", "0.8", true},
		{3, "title", "A: quoted # not a comment", true},
		{4, "first_group", "it's", true},
		{5, "cluster.size", "20", true},
		{5, "cluster.icc", "0.05", true},
		{7, "sources.alpha", "usual practice", true},
		{8, "sd", "", true},
		{9, "n", "120", true},
		{1, "power", "", false},  // another key's line
		{99, "alpha", "", false}, // past the end
	} {
		got, ok := valueOnLine(text, c.line, c.key)
		if got != c.want || ok != c.wantOK {
			t.Errorf("valueOnLine(line %d, %s) = %q, %v; want %q, %v", c.line, c.key, got, ok, c.want, c.wantOK)
		}
	}
}
