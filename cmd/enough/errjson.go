package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"reflect"
	"regexp"
	"strconv"
	"strings"

	"enough/designs"
)

// With -f json, an error is written to standard error as one JSON object on
// one line: {"error": {...}} for one error, {"errors": [{...}, ...]} for
// several. An error in a specification (or a --set override) has every
// field of specErrorObject; any other error (a flag, an argument, a file
// that cannot be written) has a message and, where known, the file and
// what is allowed.

// specErrorObject is the JSON form of a designs.SpecError. A field that is
// not known or does not apply is null.
type specErrorObject struct {
	// File is the specification's path, or "--set key=value".
	File string `json:"file"`
	// Line is the 1-based line of the key in the file.
	Line *int `json:"line"`
	// Key is the offending key, dotted for nested keys.
	Key *string `json:"key"`
	// Value is the value as written, when the message is about it.
	Value *string `json:"value"`
	// Message says what is wrong (the text line without the file, the
	// line, the key and what is allowed).
	Message string `json:"message"`
	// Allowed says what is allowed.
	Allowed *string `json:"allowed"`
}

// otherErrorObject is the JSON form of any other error.
type otherErrorObject struct {
	File    string `json:"file,omitempty"`
	Message string `json:"message"`
	Allowed string `json:"allowed,omitempty"`
}

// sourced attaches the text of a specification to the errors found in it,
// so that their JSON form can give the value written on the offending line.
type sourced struct {
	err  error
	file string
	data []byte
}

func (s *sourced) Error() string { return s.err.Error() }
func (s *sourced) Unwrap() error { return s.err }

// withSource wraps a non-nil err with the specification it was found in.
func withSource(err error, file string, data []byte) error {
	if err == nil {
		return nil
	}
	return &sourced{err: err, file: file, data: data}
}

// errorJSON renders err as one line of JSON (without the newline).
func errorJSON(err error) []byte {
	var src *sourced
	errors.As(err, &src)
	objs := errorObjects(err, src)
	var doc any = map[string]any{"errors": objs}
	if len(objs) == 1 {
		doc = map[string]any{"error": objs[0]}
	}
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if e := enc.Encode(doc); e != nil {
		// Every field is a string or an int: this cannot happen.
		return []byte(`{"error": {"message": "internal error: the error cannot be written as JSON"}}`)
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n"))
}

// errorObjects returns the JSON objects of err: one for each error it holds.
func errorObjects(err error, src *sourced) []any {
	for e := err; e != nil; e = errors.Unwrap(e) {
		if list, ok := errorList(e); ok {
			var objs []any
			for _, x := range list {
				objs = append(objs, errorObjects(x, src)...)
			}
			return objs
		}
		switch x := e.(type) {
		case *designs.SpecError:
			return []any{specObject(x, src)}
		case *designs.PlanError:
			msg, allowed := splitAllowed(x.Msg)
			return []any{otherErrorObject{File: x.File, Message: msg, Allowed: allowed}}
		case *inputError:
			msg, allowed := splitAllowed(x.msg)
			return []any{otherErrorObject{File: x.file, Message: msg, Allowed: allowed}}
		case *outputError:
			return []any{otherErrorObject{File: x.path, Message: "cannot be written: " + x.why, Allowed: x.allowed}}
		}
	}
	msg, allowed := splitAllowed(strings.TrimSpace(err.Error()))
	return []any{otherErrorObject{Message: msg, Allowed: allowed}}
}

// errorList returns the errors that err holds when it is a list of errors:
// Go's convention (an Unwrap() []error method, as errors.Join gives), or a
// slice whose elements are errors (such as designs.SpecErrors).
func errorList(err error) ([]error, bool) {
	if m, ok := err.(interface{ Unwrap() []error }); ok {
		return m.Unwrap(), true
	}
	v := reflect.ValueOf(err)
	if v.Kind() != reflect.Slice || !v.Type().Elem().Implements(reflect.TypeFor[error]()) {
		return nil, false
	}
	var list []error
	for i := range v.Len() {
		if e, ok := v.Index(i).Interface().(error); ok && e != nil {
			list = append(list, e)
		}
	}
	return list, true
}

// specObject is the JSON form of a specification error.
func specObject(se *designs.SpecError, src *sourced) specErrorObject {
	msg, allowed := splitAllowed(se.Msg)
	o := specErrorObject{File: se.File, Message: msg}
	if se.Line > 0 {
		o.Line = &se.Line
	}
	if se.Key != "" {
		o.Key = &se.Key
	}
	if allowed != "" {
		o.Allowed = &allowed
	}
	if v, ok := writtenValue(se, src); ok {
		o.Value = &v
	}
	return o
}

// splitAllowed splits a message "what is wrong; allowed: what is". A
// suggestion after what is allowed ("; did you mean 0.2?", or ` (did you
// mean "trial"?)`) says what is wrong, not what is allowed: it goes with
// the message, as "; did you mean …?".
func splitAllowed(msg string) (string, string) {
	m, allowed, _ := strings.Cut(msg, "; allowed: ")
	if i := strings.Index(allowed, "; did you mean "); i >= 0 {
		return m + allowed[i:], allowed[:i]
	}
	if i := strings.LastIndex(allowed, " (did you mean "); i >= 0 && strings.HasSuffix(allowed, ")") {
		return m + "; " + allowed[i+2:len(allowed)-1], allowed[:i]
	}
	return m, allowed
}

// writtenValue returns the value the specification gives the error's key,
// as written, when the error's message is about it (the message starts with
// the value, bare or quoted).
func writtenValue(se *designs.SpecError, src *sourced) (string, bool) {
	var v string
	var ok bool
	switch {
	case strings.HasPrefix(se.File, "--set "), strings.HasPrefix(se.File, "--vary "):
		_, v, ok = strings.Cut(se.File, "=")
	case src != nil && se.File == src.file && se.Line > 0 && se.Key != "":
		v, ok = valueOnLine(src.data, se.Line, se.Key)
	}
	if !ok || v == "" {
		return "", false
	}
	m := se.Msg
	if strings.HasPrefix(m, strconv.Quote(v)) {
		return v, true
	}
	if strings.HasPrefix(m, v) && (len(m) == len(v) || strings.ContainsRune(" ;:,", rune(m[len(v)]))) {
		return v, true
	}
	return "", false
}

// valueOnLine reads the scalar written for key (its last dotted part) on
// the 1-based line of a YAML text, in block (key: value) or flow ({key:
// value}) style, without its comment and quotes.
func valueOnLine(data []byte, line int, key string) (string, bool) {
	lines := strings.Split(string(data), "\n")
	if line > len(lines) {
		return "", false
	}
	text := strings.TrimRight(lines[line-1], "\r")
	key = key[strings.LastIndex(key, ".")+1:]
	re, err := regexp.Compile(`(^|[\s{,])["']?` + regexp.QuoteMeta(key) + `["']?\s*:(\s+|$)`)
	if err != nil {
		return "", false
	}
	loc := re.FindStringSubmatchIndex(text)
	if loc == nil {
		return "", false
	}
	inFlow := strings.Count(text[:loc[1]], "{") > strings.Count(text[:loc[1]], "}")
	rest := text[loc[1]:]
	switch {
	case strings.HasPrefix(rest, `"`):
		q, err := strconv.QuotedPrefix(rest)
		if err != nil {
			return "", false
		}
		s, err := strconv.Unquote(q)
		return s, err == nil
	case strings.HasPrefix(rest, "'"):
		// A single-quoted scalar writes a quote as two.
		var b strings.Builder
		for i := 1; i < len(rest); i++ {
			switch {
			case rest[i] != '\'':
				b.WriteByte(rest[i])
			case i+1 < len(rest) && rest[i+1] == '\'':
				b.WriteByte('\'')
				i++
			default:
				return b.String(), true
			}
		}
		return "", false
	}
	if i := strings.Index(rest, " #"); i >= 0 {
		rest = rest[:i]
	}
	if inFlow {
		if i := strings.IndexAny(rest, ",}"); i >= 0 {
			rest = rest[:i]
		}
	}
	return strings.TrimSpace(rest), true
}
