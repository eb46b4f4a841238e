package review

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Percent writes a fraction as a percentage with at most one decimal,
// rounded half away from zero: 0.0625 → "6.3%", 20.466 → "2046.6%",
// 0.8 → "80%". Every percentage difference of a review is written by it,
// through DiffPercent and SignedPercent, in the engine's sentences and in
// the report's tables alike, so that one difference reads the same
// wherever it appears.
func Percent(x float64) string {
	v := math.Round(x*1000) / 10
	if v == 0 {
		v = 0 // no "-0"
	}
	return strconv.FormatFloat(v, 'f', -1, 64) + "%"
}

// DiffPercent writes the size of a relative difference, without its sign:
// −0.0625 → "6.3%".
func DiffPercent(d float64) string { return Percent(math.Abs(d)) }

// SignedPercent writes a relative difference with its sign, as a table
// shows it: −0.0625 → "−6.3%", 0.3114 → "+31.1%", and "0%" for a
// difference that rounds to nothing.
func SignedPercent(d float64) string {
	v := DiffPercent(d)
	switch {
	case v == "0%":
		return v
	case d < 0:
		return "−" + v
	}
	return "+" + v
}

// pct writes a fraction (a power, a tolerance) as a percentage with at
// most one decimal.
func pct(x float64) string { return Percent(x) }

// signedPct writes a relative difference as "12.5% fewer" or "3% more",
// with the digits of SignedPercent.
func signedPct(d float64) string {
	v := DiffPercent(d)
	switch {
	case v == "0%":
		return "the same"
	case d < 0:
		return v + " fewer"
	}
	return v + " more"
}

// count writes a whole number with thousands separators.
func count(n int) string {
	s := fmt.Sprint(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	if neg {
		return "-" + s
	}
	return s
}

// trim writes a number with up to four significant decimals and no
// trailing zeros.
func trim(x float64) string {
	s := fmt.Sprintf("%.4g", x)
	if strings.ContainsAny(s, "e") {
		return fmt.Sprint(x)
	}
	return s
}

// joinAnd joins words as "a, b and c".
func joinAnd(xs []string) string {
	switch len(xs) {
	case 0:
		return ""
	case 1:
		return xs[0]
	}
	return strings.Join(xs[:len(xs)-1], ", ") + " and " + xs[len(xs)-1]
}
