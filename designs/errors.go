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

// levenshtein returns the edit distance between a and b.
func levenshtein(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// nearest returns the candidate closest to s, if it is close enough to be a
// plausible typo (at most a third of the word, and at most 3 edits).
func nearest(s string, candidates []string) (string, bool) {
	best, bestD := "", 1<<30
	for _, c := range candidates {
		d := levenshtein(s, c)
		if strings.Contains(c, s) || strings.Contains(s, c) {
			d = min(d, 2)
		}
		if d < bestD || (d == bestD && c < best) {
			best, bestD = c, d
		}
	}
	limit := min(3, max(1, len(s)/3))
	return best, bestD <= limit
}
