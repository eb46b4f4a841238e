package sweep

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// MaxAxisValues is the most values one --vary may give (a list or a
// range): ten million, ten times the default limit of a whole grid
// (DefaultMaxPoints), so that a range typed by mistake (0:1:1e-12) is
// refused before its values are made.
const MaxAxisValues = 10_000_000

// GridError is a --vary argument that cannot be read, or a grid a sweep
// refuses: one plain line naming the argument (when there is one) and what
// is allowed.
type GridError struct {
	// Arg is the --vary argument as given, when Vary is set.
	Arg  string
	Vary bool
	// Msg says what is wrong and what is allowed.
	Msg string
}

// Error is the message, after the --vary argument it is about.
func (e *GridError) Error() string {
	if !e.Vary {
		return e.Msg
	}
	return "--vary " + strconv.Quote(e.Arg) + ": " + e.Msg
}

// allowedVary is what a --vary argument allows.
const allowedVary = "allowed: KEY=LIST, numbers separated by commas (risk_ratio=0.6,0.7,0.8), or KEY=FROM:TO:STEP, the range FROM, FROM + STEP, … up to TO (risk_ratio=0.5:0.9:0.1)"

// ParseVary reads one --vary argument (enough sweep, issue 11): KEY=LIST,
// comma-separated numbers, or KEY=FROM:TO:STEP, the range whose value i is
// FROM + i·STEP, computed from i directly (no sum that drifts), up to TO,
// which is included when it lies on the range within rounding (within
// 1e-9 of STEP). A value that misses the decimal the user plainly meant by
// rounding (0.1 + 2 × 0.1 is 0.30000000000000004) is snapped to it: FROM
// + i·STEP is rounded to as many decimals as FROM and STEP have (the more
// of the two) when that moves it by at most 1e-9 of its size. Texts hold
// each value's shortest form that reads back as the value (0.3).
//
// The key is checked against the specification by Run (Base.CheckKey).
// Errors are a *GridError: an empty list or value, a number that is not
// one or is not finite, a STEP of 0 or of the sign that never reaches TO,
// or more than MaxAxisValues values.
func ParseVary(arg string) (Axis, error) {
	bad := func(format string, args ...any) (Axis, error) {
		return Axis{}, &GridError{Arg: arg, Vary: true, Msg: fmt.Sprintf(format, args...)}
	}
	key, list, ok := strings.Cut(arg, "=")
	key = strings.TrimSpace(key)
	switch {
	case !ok:
		return bad("has no =; %s", allowedVary)
	case key == "":
		return bad("names no key before =; %s", allowedVary)
	case strings.ContainsAny(key, " \t,:="):
		return bad("%q is not a key; %s", key, allowedVary)
	case strings.TrimSpace(list) == "":
		return bad("gives no value; %s", allowedVary)
	}
	number := func(what, text string) (float64, string, error) {
		t := strings.TrimSpace(text)
		if t == "" {
			return 0, "", &GridError{Arg: arg, Vary: true, Msg: fmt.Sprintf("%s is empty; %s", what, allowedVary)}
		}
		x, err := strconv.ParseFloat(t, 64)
		lower := strings.ToLower(t)
		switch {
		case strings.Contains(lower, "x") || strings.Contains(t, "_"):
			return 0, "", &GridError{Arg: arg, Vary: true, Msg: fmt.Sprintf("%s %q is not a decimal number; %s", what, t, allowedVary)}
		case err == nil && (math.IsNaN(x) || math.IsInf(x, 0)):
			return 0, "", &GridError{Arg: arg, Vary: true, Msg: fmt.Sprintf("%s %q is not a finite number; %s", what, t, allowedVary)}
		case err != nil:
			msg := fmt.Sprintf("%s %q is not a number; %s", what, t, allowedVary)
			if strings.HasSuffix(t, "%") {
				msg = fmt.Sprintf("%s %q is a percentage; allowed: the number itself (a fraction for a risk: 0.2, not 20%%)", what, t)
			}
			return 0, "", &GridError{Arg: arg, Vary: true, Msg: msg}
		}
		return x, t, nil
	}
	a := Axis{Key: key}
	if parts := strings.Split(list, ":"); len(parts) > 1 {
		if len(parts) != 3 {
			return bad("a range has three parts, FROM:TO:STEP, not %d; %s", len(parts), allowedVary)
		}
		from, ft, err := number("FROM", parts[0])
		if err != nil {
			return Axis{}, err
		}
		to, _, err := number("TO", parts[1])
		if err != nil {
			return Axis{}, err
		}
		step, st, err := number("STEP", parts[2])
		if err != nil {
			return Axis{}, err
		}
		switch {
		case step == 0:
			return bad("STEP is 0; allowed: a STEP other than 0, positive when TO is above FROM and negative when below")
		case (to-from)*step < 0:
			dir := map[bool]string{true: "above", false: "below"}[to > from]
			return bad("STEP %s never reaches TO %s from FROM %s; allowed: a %s STEP when TO is %s FROM", st, strings.TrimSpace(parts[1]), ft, map[bool]string{true: "positive", false: "negative"}[to > from], dir)
		}
		// k, the last index, is (TO − FROM) / STEP, taken down to a whole
		// number unless it lies within 1e-9 of the next one up.
		last := math.Floor((to-from)/step + 1e-9)
		if !(last+1 <= MaxAxisValues) {
			return bad("gives %s values, more than %s; allowed: at most %s values for one key (a larger STEP)", countText(last+1), countText(MaxAxisValues), countText(MaxAxisValues))
		}
		n := int(last) + 1
		places := max(decimals(ft), decimals(st))
		a.Values = make([]float64, n)
		a.Texts = make([]string, n)
		for i := range n {
			x := snap(from+float64(i)*step, places)
			a.Values[i], a.Texts[i] = x, formatValue(x)
		}
		return a, nil
	}
	items := strings.Split(list, ",")
	if len(items) > MaxAxisValues {
		return bad("gives %s values, more than %s; allowed: at most %s values for one key", countText(float64(len(items))), countText(MaxAxisValues), countText(MaxAxisValues))
	}
	a.Values = make([]float64, len(items))
	a.Texts = make([]string, len(items))
	for i, item := range items {
		x, _, err := number(fmt.Sprintf("value %d", i+1), item)
		if err != nil {
			return Axis{}, err
		}
		a.Values[i], a.Texts[i] = x, formatValue(x)
	}
	return a, nil
}

// countText writes a count with thousands separators.
func countText(x float64) string {
	if x >= 1e15 {
		return strconv.FormatFloat(x, 'g', 3, 64)
	}
	s := strconv.FormatFloat(x, 'f', 0, 64)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// decimals is the number of decimal places a number written as text has:
// the digits after its point, less its exponent (2.5e-2 has 3; 1e2 none).
func decimals(text string) int {
	mant, exp, _ := strings.Cut(strings.ToLower(text), "e")
	d := 0
	if _, frac, ok := strings.Cut(mant, "."); ok {
		d = len(frac)
	}
	if exp != "" {
		e, err := strconv.Atoi(exp)
		if err != nil {
			return d
		}
		d -= e
	}
	return max(0, d)
}

// snap rounds x to places decimals when that moves it by at most 1e-9 of
// its size (rounding noise of FROM + i·STEP), else returns x.
func snap(x float64, places int) float64 {
	if places > 17 {
		return x
	}
	y, err := strconv.ParseFloat(strconv.FormatFloat(x, 'f', places, 64), 64)
	if err != nil || math.Abs(y-x) > 1e-9*math.Abs(x) {
		return x
	}
	return y
}

// formatValue writes a value as every output shows it: the shortest form
// that reads back as the value, in plain digits from 1e-6 to below 1e21
// (1000000, 0.000001) and with an exponent beyond (1e-09).
func formatValue(x float64) string {
	if ax := math.Abs(x); x == 0 || (ax >= 1e-6 && ax < 1e21) {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// Size is the number of points of the grid: the product of the axes'
// lengths (1 for a grid without axes). A product that does not fit in an
// int is refused by saturating at math.MaxInt, which every limit on the
// points refuses.
func (g Grid) Size() int {
	n := 1
	for _, a := range g.Axes {
		l := len(a.Values)
		if l == 0 {
			return 0
		}
		if n > math.MaxInt/l {
			return math.MaxInt
		}
		n *= l
	}
	return n
}

// Values returns point i's value of each axis, in axis order: for axis k
// the value of index (i / stride_k) mod len_k, the last axis varying
// fastest.
func (g Grid) Values(i int) []float64 {
	return g.valuesInto(i, make([]float64, len(g.Axes)))
}

// Texts returns point i's value of each axis as written in the outputs.
func (g Grid) Texts(i int) []string {
	out := make([]string, len(g.Axes))
	for k := len(g.Axes) - 1; k >= 0; k-- {
		l := len(g.Axes[k].Values)
		out[k] = g.Axes[k].Texts[i%l]
		i /= l
	}
	return out
}

// valuesInto writes point i's values into dst (of the axes' length).
func (g Grid) valuesInto(i int, dst []float64) []float64 {
	for k := len(g.Axes) - 1; k >= 0; k-- {
		l := len(g.Axes[k].Values)
		dst[k] = g.Axes[k].Values[i%l]
		i /= l
	}
	return dst
}
