package report

import (
	"math"
	"strconv"
	"strings"
)

// pct formats a proportion as a percentage with up to two decimals:
// 0.3 → "30%", 0.225 → "22.5%", 0.0125 → "1.25%".
func pct(p float64) string {
	return trimZeros(strconv.FormatFloat(100*p, 'f', 2, 64)) + "%"
}

// pct1 formats a power as a percentage with one decimal: "80.3%".
func pct1(p float64) string {
	return strconv.FormatFloat(100*p, 'f', 1, 64) + "%"
}

// num formats a ratio or other effect with three significant digits, with
// a true minus sign for negative values.
func num(x float64) string {
	return strings.Replace(numASCII(x), "-", "−", 1)
}

func numASCII(x float64) string {
	if x == math.Trunc(x) && math.Abs(x) < 1e15 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	s := strconv.FormatFloat(x, 'g', 3, 64)
	if strings.ContainsAny(s, "e") {
		return strconv.FormatFloat(x, 'f', 4, 64)
	}
	return s
}

// signed formats a difference with three significant digits and its sign:
// +2, −0.5.
func signed(d float64) string {
	d = round12(d)
	if d > 0 {
		return "+" + num(d)
	}
	return num(d)
}

// round12 rounds x to 12 significant digits, so that arithmetic noise
// (100 × 0.2 − 0.00000000000001) is not printed.
func round12(x float64) float64 {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return x
	}
	v, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
	return v
}

// pp formats a risk difference in percentage points with a sign.
func pp(d float64) string {
	v := trimZeros(strconv.FormatFloat(100*d, 'f', 2, 64))
	if d > 0 {
		v = "+" + v
	}
	return strings.Replace(v, "-", "−", 1) + " percentage points"
}

func trimZeros(s string) string {
	if strings.Contains(s, ".") {
		s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
	}
	if s == "-0" {
		s = "0"
	}
	return s
}

// count formats a whole number with thousands separators: 12345 → "12,345".
func count(n int) string {
	s := strconv.Itoa(n)
	neg := strings.HasPrefix(s, "-")
	s = strings.TrimPrefix(s, "-")
	var b strings.Builder
	for i, c := range s {
		if i > 0 && (len(s)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(c)
	}
	if neg {
		return "-" + b.String()
	}
	return b.String()
}

// allocation formats a ratio as "1:2" or "1:0.5".
func allocation(r float64) string {
	return "1:" + trimZeros(strconv.FormatFloat(r, 'f', 3, 64))
}
