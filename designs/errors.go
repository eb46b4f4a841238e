package designs

import (
	"fmt"
	"strings"
)

// SpecError is a problem with a study specification. It renders as one
// line: "FILE:LINE: KEY: VALUE is ...; allowed: ...".
type SpecError struct {
	// File is the specification's path, or "--set k=v" for a command-line
	// override.
	File string
	// Line is the 1-based line of the offending key, or 0 when unknown.
	Line int
	// Key is the offending key (dotted for nested keys), or "".
	Key string
	// Msg says what is wrong and what is allowed.
	Msg string
}

func (e *SpecError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Key != "" {
		b.WriteString(e.Key)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// editDistance returns the optimal-string-alignment distance between a and
// b: insertions, deletions, substitutions and transpositions of adjacent
// letters each count one (Damerau 1964).
func editDistance(a, b string) int {
	d := make([][]int, len(a)+1)
	for i := range d {
		d[i] = make([]int, len(b)+1)
		d[i][0] = i
	}
	for j := range d[0] {
		d[0][j] = j
	}
	for i := 1; i <= len(a); i++ {
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			d[i][j] = min(d[i-1][j]+1, d[i][j-1]+1, d[i-1][j-1]+cost)
			if i > 1 && j > 1 && a[i-1] == b[j-2] && a[i-2] == b[j-1] {
				d[i][j] = min(d[i][j], d[i-2][j-2]+1)
			}
		}
	}
	return d[len(a)][len(b)]
}

// nearest returns the candidate closest to s, if it is close enough to be a
// plausible typo (at most 2 edits, or a third of a longer word, and at most 3).
func nearest(s string, candidates []string) (string, bool) {
	best, bestD := "", 1<<30
	for _, c := range candidates {
		d := editDistance(s, c)
		if min(len(s), len(c)) >= 3 && (strings.Contains(c, s) || strings.Contains(s, c)) {
			d = min(d, 2)
		}
		if d < bestD || (d == bestD && c < best) {
			best, bestD = c, d
		}
	}
	limit := min(3, max(2, len(s)/3))
	return best, bestD <= limit
}
