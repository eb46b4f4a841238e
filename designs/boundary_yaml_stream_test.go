package designs

import (
	"errors"
	"strings"
	"testing"
)

// TestYAMLStreams checks that a specification is one YAML document: any
// second one, valid, invalid or empty, is refused at the line that ends
// the first, in a file and in a --set value alike, while the markers that
// do not start a second document are accepted.
func TestYAMLStreams(t *testing.T) {
	const spec = "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n" // 5 lines
	const second = "second YAML document"
	for _, tc := range []struct {
		name string
		data string
		sets []string
		line int    // of the refusal; 0 with want "" (accepted) or a --set
		want string // in the refusal; "" when accepted
	}{
		// Files.
		{"one document", spec, nil, 0, ""},
		{"a leading ---", "---\n" + spec, nil, 0, ""},
		{"an ending ...", spec + "...\n", nil, 0, ""},
		{"an ending ... and a comment", spec + "...\n# the end\n", nil, 0, ""},
		{"--- inside an indented block", "title: |\n  a\n  --- b\n" + spec, nil, 0, ""},
		{"a valid second document", spec + "---\n" + spec, nil, 6, second},
		{"an invalid second document", spec + "---\nfoo: [\n", nil, 6, second},
		{"a second document of bad syntax", spec + "---\n: : :\n", nil, 6, second},
		{"a second document with an unknown alias", spec + "---\n*x\n", nil, 6, second},
		{"an empty second document", spec + "---\n", nil, 6, second},
		{"a --- with a comment", spec + "--- # more\n", nil, 6, second},
		{"a --- with a value", spec + "--- 0.9\n", nil, 6, second},
		{"text after ...", spec + "...\npower: 0.9\n", nil, 6, second},
		{"... then ---", spec + "...\n---\n", nil, 6, second},
		{"an empty first document", "---\n---\n" + spec, nil, 2, second},
		{"a second document after blank lines", spec + "\n\n---\n\n" + spec, nil, 8, second},
		{"a second document with CRLF", strings.ReplaceAll(spec+"---\r\nfoo: [\r\n", "\n", "\r\n"), nil, 6, second},

		// --set values.
		{"--set one value", spec, []string{"power=0.9"}, 0, ""},
		{"--set a value ending with ...", spec, []string{"power=0.9\n..."}, 0, ""},
		{"--set text holding ---", spec, []string{"title=a --- b"}, 0, ""},
		{"--set a second valid value", spec, []string{"power=0.9\n---\n0.8"}, 0, second},
		{"--set a second invalid value", spec, []string{"power=0.9\n---\n]]"}, 0, second},
		{"--set an empty second value", spec, []string{"power=0.9\n---\n"}, 0, second},
		{"--set a second value of a nested key", spec, []string{"sources.power=a\n---\nb"}, 0, second},
		{"--set a second value after ...", spec, []string{"power=0.9\n...\n0.8"}, 0, second},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("s.yaml", []byte(tc.data), tc.sets)
			if tc.want == "" {
				if err != nil {
					t.Fatalf("refused: %v", err)
				}
				return
			}
			var se *SpecError
			if !errors.As(err, &se) {
				t.Fatalf("got %v, want a *SpecError", err)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error does not say %q: %v", tc.want, err)
			}
			if se.Line != tc.line {
				t.Errorf("line %d, want %d: %v", se.Line, tc.line, err)
			}
			if tc.sets != nil && strings.Contains(se.Error(), "\n") {
				t.Errorf("the problem spans lines: %q", se.Error())
			}
		})
	}
}

// TestDocumentMarker checks the line found for the end of the first
// document when the second cannot be read.
func TestDocumentMarker(t *testing.T) {
	for _, tc := range []struct {
		data  string
		after int
		want  int
	}{
		{"a: 1\n---\n", 1, 2},
		{"---\na: 1\n---\n", 2, 3},
		{"--- a\n--- b\n", 1, 2},
		{"a: 1\n...\n", 1, 2},
		{"a: 1\n...x\n----\n--\n", 1, 0},
		{"a: 1\n --- \n", 1, 0},
		{"a: 1\n---\t\n", 1, 2},
		{"a: 1\r\n---\r\n", 1, 2},
		{"a: 1\n---", 1, 2},
		{"", 0, 0},
	} {
		if got := documentMarker([]byte(tc.data), tc.after); got != tc.want {
			t.Errorf("documentMarker(%q, %d) = %d, want %d", tc.data, tc.after, got, tc.want)
		}
	}
}
