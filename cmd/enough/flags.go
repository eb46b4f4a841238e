package main

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
)

// flagError is a flag whose value cannot be used. It renders as one line in
// the words of the specification's errors: "--FLAG: what is wrong; allowed:
// what is". It is bad input (exit status 2).
type flagError struct {
	flag    string // "--replicates"
	msg     string // `"1.5" is not a whole number`
	allowed string
}

func (e *flagError) Error() string {
	if e.allowed == "" {
		return e.flag + ": " + e.msg
	}
	return e.flag + ": " + e.msg + "; allowed: " + e.allowed
}

// allowedValue is a flag value that can say what it accepts.
type allowedValue interface{ Allowed() string }

// wholeValue is a flag holding a whole number from lo to hi. Besides the
// usual digits it accepts a whole number in decimal or exponent notation
// (1e6 is 1,000,000); anything else, or a number out of range, is refused
// in plain words where it enters, with the value given. given, when set,
// records that the flag was given (a default of 0 can then stand for "not
// given" without a sentinel value).
type wholeValue[T int | int64] struct {
	p       *T
	name    string
	lo, hi  int64
	allowed string
	given   *bool
}

func (v *wholeValue[T]) String() string  { return strconv.FormatInt(int64(*v.p), 10) }
func (v *wholeValue[T]) Type() string    { return "int" }
func (v *wholeValue[T]) Allowed() string { return v.allowed }

func (v *wholeValue[T]) Set(s string) error {
	n, why := parseWhole(strings.TrimSpace(s))
	switch {
	case why != "":
	case n < v.lo || n > v.hi:
		why = "is out of range"
	case int64(T(n)) != n:
		why = tooFar(s) // an int of 32 bits
	}
	if why != "" {
		return &flagError{flag: "--" + v.name, msg: strconv.Quote(s) + " " + why, allowed: v.allowed}
	}
	*v.p = T(n)
	if v.given != nil {
		*v.given = true
	}
	return nil
}

// parseWhole reads a whole number, or says why s is not one.
func parseWhole(s string) (int64, string) {
	n, err := strconv.ParseInt(s, 10, 64)
	if err == nil {
		return n, ""
	}
	if errors.Is(err, strconv.ErrRange) {
		return 0, tooFar(s)
	}
	f, err := strconv.ParseFloat(s, 64)
	mantissa, _, _ := strings.Cut(strings.ToLower(s), "e")
	switch {
	case errors.Is(err, strconv.ErrRange):
		return 0, tooFar(s)
	case err != nil || math.IsNaN(f) || math.IsInf(f, 0) || strings.ContainsAny(s, "xXpP_"):
		return 0, "is not a whole number"
	case f != math.Trunc(f):
		return 0, "is not a whole number"
	case f == 0 && strings.ContainsAny(mantissa, "123456789"):
		// Too small to be told from 0 (1e-400): not 0 as written.
		return 0, "is not a whole number"
	case f >= math.MaxInt64 || f < math.MinInt64:
		// 2^63 itself is out of range; every float below it converts exactly.
		return 0, tooFar(s)
	}
	return int64(f), ""
}

func tooFar(s string) string {
	if strings.HasPrefix(s, "-") {
		return "is too far below zero"
	}
	return "is too large"
}

// decimalValue is a flag holding a finite number of at least lo.
type decimalValue struct {
	p       *float64
	name    string
	lo      float64
	allowed string
}

func (v *decimalValue) String() string  { return strconv.FormatFloat(*v.p, 'g', -1, 64) }
func (v *decimalValue) Type() string    { return "number" }
func (v *decimalValue) Allowed() string { return v.allowed }

func (v *decimalValue) Set(s string) error {
	t := strings.TrimSpace(s)
	f, err := strconv.ParseFloat(t, 64)
	why := ""
	switch {
	case errors.Is(err, strconv.ErrRange) && math.IsInf(f, 0):
		why = "is too large"
	case err != nil && strings.Count(t, ",") == 1 && parses(strings.Replace(t, ",", ".", 1)):
		why = "is not a number (write the decimal point as a point: " + strings.Replace(t, ",", ".", 1) + ")"
	case err != nil || math.IsNaN(f) || math.IsInf(f, 0) || strings.ContainsAny(t, "xXpP_"):
		why = "is not a number"
	case f < v.lo:
		why = "is out of range"
	}
	if why != "" {
		return &flagError{flag: "--" + v.name, msg: strconv.Quote(s) + " " + why, allowed: v.allowed}
	}
	*v.p = f
	return nil
}

func parses(s string) bool {
	f, err := strconv.ParseFloat(s, 64)
	return err == nil && !math.IsNaN(f) && !math.IsInf(f, 0)
}

// switchValue is an on/off flag: the flag alone means true, and
// --flag=true or --flag=false may be written out.
type switchValue struct {
	p    *bool
	name string
}

func (v *switchValue) String() string   { return strconv.FormatBool(*v.p) }
func (v *switchValue) Type() string     { return "bool" }
func (v *switchValue) IsBoolFlag() bool { return true }
func (v *switchValue) Allowed() string {
	return "the flag alone, or --" + v.name + "=true or --" + v.name + "=false"
}

func (v *switchValue) Set(s string) error {
	b, err := strconv.ParseBool(strings.TrimSpace(s))
	if err != nil {
		return &flagError{flag: "--" + v.name, msg: strconv.Quote(s) + " is not true or false", allowed: v.Allowed()}
	}
	*v.p = b
	return nil
}

// choiceValue is a flag holding one word of a fixed list.
type choiceValue struct {
	p       *string
	name    string
	what    string // "a format"
	choices []string
}

func (v *choiceValue) String() string  { return *v.p }
func (v *choiceValue) Type() string    { return "string" }
func (v *choiceValue) Allowed() string { return strings.Join(v.choices, ", ") }

func (v *choiceValue) Set(s string) error {
	for _, c := range v.choices {
		if s == c {
			*v.p = s
			return nil
		}
	}
	return &flagError{flag: "--" + v.name, msg: fmt.Sprintf("%q is not %s", s, v.what), allowed: v.Allowed()}
}

// pathValue is a flag holding a file name, which may not be empty.
type pathValue struct {
	p       *string
	name    string
	allowed string
}

func (v *pathValue) String() string  { return *v.p }
func (v *pathValue) Type() string    { return "string" }
func (v *pathValue) Allowed() string { return v.allowed }

func (v *pathValue) Set(s string) error {
	if strings.TrimSpace(s) == "" {
		return &flagError{flag: "--" + v.name, msg: fmt.Sprintf("%q is an empty file name", s), allowed: v.allowed}
	}
	*v.p = s
	return nil
}

// The registration helpers give each flag its value type and its name.

// wholeFlag registers a whole-number flag from lo to hi; given, when not
// nil, records whether it was given. A default of 0 is not shown in the
// help (the usage says what it means).
func wholeFlag[T int | int64](cmd *cobra.Command, p *T, given *bool, name string, def T, lo, hi int64, usage, allowed string) {
	*p = def
	cmd.Flags().Var(&wholeValue[T]{p: p, name: name, lo: lo, hi: hi, allowed: allowed, given: given}, name, usage)
}

// decimalFlag registers a flag holding a finite number of at least lo.
func decimalFlag(cmd *cobra.Command, p *float64, name string, def, lo float64, usage, allowed string) {
	*p = def
	cmd.Flags().Var(&decimalValue{p: p, name: name, lo: lo, allowed: allowed}, name, usage)
}

func switchFlag(cmd *cobra.Command, p *bool, name, short, usage string) {
	cmd.Flags().VarPF(&switchValue{p: p, name: name}, name, short, usage).NoOptDefVal = "true"
}

func formatFlag(cmd *cobra.Command, p *string, formats []string) {
	*p = formats[0]
	cmd.Flags().VarP(&choiceValue{p: p, name: "format", what: "a format", choices: formats}, "format", "f",
		"output format: "+orWords(formats))
}

func outputFlag(cmd *cobra.Command, p *string) {
	cmd.Flags().VarP(&pathValue{p: p, name: "output", allowed: "a file name (leave -o out to write to standard output)"},
		"output", "o", "write to this file (atomically) instead of standard output")
}

// orWords joins words as "a, b or c".
func orWords(words []string) string {
	if len(words) <= 1 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " or " + words[len(words)-1]
}

// flagProblem turns the flag parser's errors into enough's words: what was
// given and what is allowed. cmd is the command whose flags were parsed.
func flagProblem(cmd *cobra.Command, err error) error {
	var (
		fe       *flagError
		missing  *pflag.ValueRequiredError
		unknown  *pflag.NotExistError
		badValue *pflag.InvalidValueError
	)
	switch {
	case errors.As(err, &fe):
		return fe
	case errors.As(err, &missing):
		f := missing.GetFlag()
		allowed := "a value"
		if a, ok := f.Value.(allowedValue); ok {
			allowed = a.Allowed()
		}
		return &flagError{flag: "--" + f.Name, msg: "needs a value", allowed: allowed}
	case errors.As(err, &unknown):
		given := "--" + unknown.GetSpecifiedName()
		if unknown.GetSpecifiedShortnames() != "" {
			given = "-" + unknown.GetSpecifiedName()
		}
		return &flagError{flag: given, msg: "unknown flag", allowed: flagList(cmd)}
	case errors.As(err, &badValue):
		// A flag of cobra's own (--help, --version): on or off.
		f := badValue.GetFlag()
		if f.Value.Type() == "bool" {
			name := "--" + f.Name
			return &flagError{flag: name, msg: strconv.Quote(badValue.GetValue()) + " is not true or false",
				allowed: "the flag alone, or " + name + "=true or " + name + "=false"}
		}
		return &flagError{flag: "--" + f.Name, msg: strconv.Quote(badValue.GetValue()) + " cannot be used", allowed: f.Usage}
	}
	return &inputError{msg: err.Error()}
}

// flagList lists the flags of cmd, as "the flags of enough plan: -f/--format, --set, ...".
func flagList(cmd *cobra.Command) string {
	var names []string
	seen := map[string]bool{}
	add := func(f *pflag.Flag) {
		if seen[f.Name] || f.Hidden {
			return
		}
		seen[f.Name] = true
		if f.Shorthand != "" {
			names = append(names, "-"+f.Shorthand+"/--"+f.Name)
		} else {
			names = append(names, "--"+f.Name)
		}
	}
	cmd.Flags().VisitAll(add)
	cmd.InheritedFlags().VisitAll(add)
	return "the flags of " + cmd.CommandPath() + ": " + strings.Join(names, ", ")
}
