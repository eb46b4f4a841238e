package designs

import (
	"bytes"
	"errors"
	"fmt"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
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

// SpecErrors is several independent problems of one specification, in file
// order (line, then key), then the file's problems with no line (a missing
// key), then those of the --set overrides in command-line order.
//
// [Parse] returns a [*SpecError] when a specification has exactly one
// problem and SpecErrors when it has several, never an empty SpecErrors.
// Callers that expect one problem keep working: SpecErrors unwraps to its
// members, so errors.As(err, &specErr) with specErr a *SpecError finds the
// first problem. To list them all, use [AllSpecErrors].
type SpecErrors []*SpecError

// Error returns one line per problem, joined by "\n".
func (e SpecErrors) Error() string {
	lines := make([]string, len(e))
	for i, se := range e {
		lines[i] = se.Error()
	}
	return strings.Join(lines, "\n")
}

// Unwrap returns the problems, for errors.As and errors.Is.
func (e SpecErrors) Unwrap() []error {
	out := make([]error, len(e))
	for i, se := range e {
		out[i] = se
	}
	return out
}

// AllSpecErrors returns every problem err holds: the members of a
// SpecErrors, the one *SpecError, or nil when err holds neither.
func AllSpecErrors(err error) []*SpecError {
	var many SpecErrors
	if errors.As(err, &many) {
		return many
	}
	var one *SpecError
	if errors.As(err, &one) {
		return []*SpecError{one}
	}
	return nil
}

// result sorts the problems, drops repeats, and returns nil, the one
// *SpecError, or the SpecErrors. The order is the file's: problems with a
// line by line (then key), then the file's problems with no line (a
// missing key) by key, then those of the --set overrides in the order sets
// gives them, each override's in the order they were found.
func (e SpecErrors) result(sets []string) error {
	setPos := map[string]int{}
	for i, s := range sets {
		if _, seen := setPos[setOrigin(s)]; !seen {
			setPos[setOrigin(s)] = i
		}
	}
	class := func(se *SpecError) (int, int) {
		if i, ok := setPos[se.File]; ok {
			return 2, i
		}
		if se.Line == 0 {
			return 1, 0
		}
		return 0, se.Line
	}
	sort.SliceStable(e, func(i, j int) bool {
		ca, pa := class(e[i])
		cb, pb := class(e[j])
		switch {
		case ca != cb:
			return ca < cb
		case pa != pb:
			return pa < pb
		case ca == 2:
			return false
		}
		return e[i].Key < e[j].Key
	})
	var out SpecErrors
	seen := map[string]bool{}
	for _, se := range e {
		if line := se.Error(); !seen[line] {
			seen[line] = true
			out = append(out, se)
		}
	}
	switch len(out) {
	case 0:
		return nil
	case 1:
		return out[0]
	}
	return out
}

// maxEcho is the number of characters of a value or key a message repeats.
const maxEcho = 60

// clip shortens s to maxEcho characters, marking the cut with "…", so that
// a message about a very long value stays readable.
func clip(s string) string {
	if utf8.RuneCountInString(s) <= maxEcho {
		return s
	}
	r := []rune(s)
	return string(r[:maxEcho]) + "…"
}

// fmtFraction writes a number such as 20/100 without floating-point noise.
func fmtFraction(x float64) string {
	return strconv.FormatFloat(x, 'g', 10, 64)
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

// maxSuggestLen is the longest word for which a suggestion is sought: a
// longer one is not a typo of a key.
const maxSuggestLen = 64

// nearest returns the candidate closest to s, if it is close enough to be a
// plausible typo (at most 2 edits, or a third of a longer word, and at most
// 3). Case is ignored: ALPHA is one edit from nothing but alpha.
func nearest(s string, candidates []string) (string, bool) {
	if len(s) > maxSuggestLen {
		return "", false
	}
	s = strings.ToLower(s)
	best, bestD := "", 1<<30
	for _, c := range candidates {
		lc := strings.ToLower(c)
		d := editDistance(s, lc)
		if min(len(s), len(c)) >= 3 && (strings.Contains(lc, s) || strings.Contains(s, lc)) {
			d = min(d, 2)
		}
		if d < bestD || (d == bestD && c < best) {
			best, bestD = c, d
		}
	}
	// A short word is no typo of a key it shares no letter with ("sd" is
	// two edits from "n").
	limit := min(3, max(2, len(s)/3), len(s)-1, len(best)-1)
	return best, bestD <= limit
}

// checkText refuses data that is not UTF-8 text: a binary file (it holds
// NUL bytes), a UTF-16 one, or one with a byte that is not UTF-8, named by
// its line.
func checkText(file string, data []byte) *SpecError {
	const want = "allowed: a YAML specification"
	if bytes.HasPrefix(data, []byte{0xFF, 0xFE}) || bytes.HasPrefix(data, []byte{0xFE, 0xFF}) {
		return &SpecError{File: file, Msg: "is not a text file enough reads (it is UTF-16; save it as UTF-8); " + want}
	}
	if bytes.IndexByte(data, 0) >= 0 {
		return &SpecError{File: file, Msg: "is not a text file (it contains NUL bytes, as binary files do); " + want}
	}
	if utf8.Valid(data) && !hasControl(data) {
		return nil
	}
	line := 1
	for i := 0; i < len(data); {
		c, size := utf8.DecodeRune(data[i:])
		switch {
		case c == utf8.RuneError && size <= 1:
			return &SpecError{File: file, Line: line, Msg: fmt.Sprintf("is not a text file (byte 0x%02X on this line is not UTF-8; save the file as UTF-8); %s", data[i], want)}
		case c < 0x20 && c != '\t' && c != '\n' && c != '\r', c == 0x7F:
			return &SpecError{File: file, Line: line, Msg: fmt.Sprintf("is not a text file (a control character, 0x%02X, on this line); %s", c, want)}
		}
		if c == '\n' {
			line++
		}
		i += size
	}
	return nil
}

// hasControl says whether data holds a control character other than tab,
// newline and carriage return.
func hasControl(data []byte) bool {
	for _, b := range data {
		if (b < 0x20 && b != '\t' && b != '\n' && b != '\r') || b == 0x7F {
			return true
		}
	}
	return false
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// syntaxError turns a YAML parser error into one line: the line, and in
// plain words what is wrong there and how to mend it. The parser's own
// words are never shown.
func syntaxError(file string, data []byte, err error) *SpecError {
	first := strings.SplitN(err.Error(), "\n", 2)[0]
	m := yamlLine.FindStringSubmatch(first)
	if line := longKeyLine(data); line > 0 && (m == nil || atoi(m[1]) >= line-1) {
		// The parser stops at such a key with words about colons.
		return &SpecError{File: file, Line: line, Msg: fmt.Sprintf("YAML syntax error: a key of more than %d characters; allowed: a key of the specification (see the README), which is far shorter", maxYAMLKey)}
	}
	if m == nil {
		problem := strings.TrimPrefix(first, "yaml: ")
		if a := unknownAnchor.FindStringSubmatch(problem); a != nil {
			return &SpecError{File: file, Line: lineOf(data, "*"+a[1]),
				Msg: fmt.Sprintf("YAML syntax error: the alias *%s needs an anchor &%s on an earlier value (put quotes around a value that starts with *)", clip(a[1]), clip(a[1]))}
		}
		if parserProblem(problem) {
			// A parser error on the first line (0-based 0) has no line.
			return &SpecError{File: file, Line: 1, Msg: "YAML syntax error: " + syntaxHint(problem, lineText(data, 1), "", false)}
		}
		return &SpecError{File: file, Msg: "YAML syntax error: " + syntaxHint(problem, "", "", false)}
	}
	line, _ := strconv.Atoi(m[1])
	if parserProblem(m[2]) {
		// yaml.v3 reports a parser error (not a scanner error) at the
		// 0-based line of the construct it was reading; make it 1-based.
		line++
	}
	if tl := tabLine(data, line); tl > 0 {
		// yaml.v3 may report the line before the tab; point at it.
		return &SpecError{File: file, Line: tl, Msg: "YAML syntax error: a tab character in the indentation; allowed: spaces only"}
	}
	return &SpecError{File: file, Line: line, Msg: "YAML syntax error: " + syntaxHint(m[2], lineText(data, line), lineText(data, line-1), false)}
}

// maxYAMLKey is the longest key YAML reads in the form `key: value` (YAML
// 1.2, section 7.4.2: an implicit key is at most 1024 characters).
const maxYAMLKey = 1024

// longKeyLine returns the first line whose text before its first ": " (or
// its final ":") is longer than maxYAMLKey, a key the parser refuses, or 0.
func longKeyLine(data []byte) int {
	line := 0
	for text := range bytes.Lines(data) {
		line++
		if len(text) <= maxYAMLKey {
			continue
		}
		text = bytes.TrimRight(text, "\r\n")
		key := text
		if i := bytes.Index(text, []byte(": ")); i >= 0 {
			key = text[:i]
		} else if bytes.HasSuffix(text, []byte(":")) {
			key = text[:len(text)-1]
		} else {
			continue
		}
		if key = bytes.TrimLeft(key, " "); len(key) > maxYAMLKey && !bytes.HasPrefix(key, []byte("#")) {
			return line
		}
	}
	return 0
}

// atoi reads a line number the parser wrote.
func atoi(s string) int {
	n, _ := strconv.Atoi(s)
	return n
}

// parserProblem reports whether a YAML problem comes from yaml.v3's
// parser, whose line is 0-based, rather than from its scanner.
func parserProblem(problem string) bool {
	if problem == "found undefined tag handle" {
		return true
	}
	if !strings.HasPrefix(problem, "did not find expected") {
		return false
	}
	for _, scanner := range []string{"alphabetic or numeric", "hexdecimal", "line break"} {
		if strings.Contains(problem, scanner) {
			return false
		}
	}
	return true
}

// setSyntaxError is the message for a --set value that is not YAML.
func setSyntaxError(key, value string, err error) string {
	problem := strings.SplitN(err.Error(), "\n", 2)[0]
	problem = strings.TrimPrefix(problem, "yaml: ")
	problem = linePrefix.ReplaceAllString(problem, "")
	if (strings.HasPrefix(problem, "mapping values are not allowed") || strings.HasPrefix(problem, "did not find expected key")) && strings.Contains(value, ": ") {
		return fmt.Sprintf("value is not valid YAML: it contains \": \"; put it in quotes: --set '%s=%s'", clip(key), clip(strconv.Quote(value)))
	}
	return "value is not valid YAML: " + syntaxHint(problem, "", "", true)
}

// afterQuote matches a line whose quoted value is followed by more text
// (title: "Ward" rounds).
var afterQuote = regexp.MustCompile(`^[^:"']+:\s+("[^"]*"|'[^']*')\s*[^\s#]`)

var linePrefix = regexp.MustCompile(`^line \d+: `)

var unknownAnchor = regexp.MustCompile(`unknown anchor '([^']*)' referenced`)

// syntaxHint says in plain words what is wrong, from the YAML parser's
// problem, the text of its line and of the line before (both "" for a
// --set value, where set is true). It never repeats the parser's words: a
// problem it does not know gets a general sentence.
func syntaxHint(problem, text, before string, set bool) string {
	indent := func(s string) int { return len(s) - len(strings.TrimLeft(s, " ")) }
	opened := " opened on this line"
	if set {
		opened = ""
	}
	has := func(s string) bool { return strings.Contains(problem, s) }
	switch {
	case has("mapping values are not allowed"):
		key, value, ok := strings.Cut(strings.TrimSpace(text), ": ")
		value = strings.TrimSpace(value)
		switch {
		case ok && strings.HasPrefix(value, ":"):
			return "a colon too many: a key is followed by one colon and a space"
		case ok && strings.Contains(value, ": ") && !strings.ContainsAny(value, `"`):
			return fmt.Sprintf("a value contains \": \"; put it in quotes: %s: %s", clip(key), clip(strconv.Quote(value)))
		case ok && strings.Contains(value, ": "):
			return "a value contains \": \"; put the whole value in quotes"
		case strings.TrimSpace(before) != "" && indent(text) > indent(before):
			return "this line is indented more than the line above, whose key already has a value: start keys of the same map in the same column"
		}
		return "a value contains \": \", or a line is indented more than the one above; put such a value in quotes, and start keys of one map in the same column"
	case has("expected ',' or ']'"):
		return "a [ … ] list" + opened + " is not closed (close it with ], or put quotes around a value that starts with [)"
	case has("expected ',' or '}'"):
		return "a { … } map" + opened + " is not closed (close it with }, or put quotes around a value that starts with {)"
	case has("did not find expected key") && !set:
		t := strings.TrimSpace(text)
		switch {
		case strings.HasPrefix(t, "- "):
			return "a list item (- ) stands where a key was expected; check the indentation"
		case strings.Count(t, "]") > strings.Count(t, "[") || strings.Count(t, "}") > strings.Count(t, "{"):
			return "a ] or } on this line closes nothing; remove it, or put the value in quotes"
		case afterQuote.MatchString(t):
			return "text follows the closing quotation mark; put the whole value in quotes"
		}
		return "check the indentation: keys of one map start in the same column, and keys inside sources, cluster or simulate are indented by the same spaces"
	case has("could not find expected ':'"):
		return "a key needs a colon and a space before its value, as in `design: trial`"
	case has("end of stream"):
		if set {
			return "a quotation mark is not closed"
		}
		return "the file ends inside a quoted text: a quotation mark opened on this line is not closed"
	case has("document indicator"):
		if set {
			return "a line --- or ... stands inside a quoted text; close the quotation mark before it"
		}
		return "a quotation mark opened on this line is not closed before a line --- or ... (which ends a document); close it"
	case has("cannot start any token"):
		_, value, _ := strings.Cut(text, ":")
		if value = strings.TrimLeft(value, " "); value != "" && strings.ContainsAny(value[:1], "@`%") {
			return fmt.Sprintf("a value that starts with %s needs quotes around it", value[:1])
		}
		if strings.Contains(text, "\t") {
			return "a tab stands where YAML takes spaces"
		}
		return "a value that starts with a character such as @ or ` needs quotes around it"
	case has("tab character"):
		return "a tab character in the indentation; allowed: spaces only"
	case has("node content"):
		return "a value is missing, or starts with a character YAML keeps for itself (such as ], } or a comma); put quotes around such a value"
	case has("tag"), has("expected '>'"):
		return "a value that starts with ! needs quotes around it (YAML reads ! as a type)"
	case has("escape"), has("hexdecimal"), has("hexadecimal"):
		return `a backslash inside double quotes starts an escape such as \n; write \\ for a backslash, or use single quotes`
	case has("alphabetic or numeric"):
		return "& and * start YAML anchors and aliases and need a name after them; put quotes around a value that starts with & or *"
	case has("directive"), has("document start"), has("incompatible YAML"):
		return "a line that starts with % is read as a YAML directive; remove it (a comment starts with #), or put the value in quotes"
	case has("block sequence entries"):
		return "a list item (- ) cannot follow its key on the same line; start the list on the next line, indented, or put quotes around a value that starts with -"
	case has("'-' indicator"):
		return "the items of one list (- ) start in the same column"
	case has("excessive aliasing"):
		return "aliases (*name) expand to too much text; allowed: a specification without aliases of aliases"
	case has("max depth"):
		return "values are nested too deep; allowed: a specification as `enough new` writes it"
	}
	if set {
		return "check its quotation marks and brackets (a text with special characters goes in quotes)"
	}
	return "the text on this line is not valid YAML; check its colons, quotation marks, brackets and indentation, and those of the line above"
}

// lineText returns the 1-based line of data, or "".
func lineText(data []byte, line int) string {
	lines := strings.Split(string(data), "\n")
	if line < 1 || line > len(lines) {
		return ""
	}
	return strings.TrimRight(lines[line-1], "\r")
}

// lineOf returns the first line of data that contains s, or 0.
func lineOf(data []byte, s string) int {
	i := bytes.Index(data, []byte(s))
	if i < 0 {
		return 0
	}
	return 1 + bytes.Count(data[:i], []byte("\n"))
}

// tabLine returns line or the line after it when its indentation holds a
// tab, and 0 otherwise.
func tabLine(data []byte, line int) int {
	for _, n := range []int{line, line + 1} {
		l := lineText(data, n)
		if strings.Contains(l[:len(l)-len(strings.TrimLeft(l, " \t"))], "\t") {
			return n
		}
	}
	return 0
}
