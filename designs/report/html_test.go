package report

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/sweep"
	"enough/examples"
)

// htmlPage is one HTML page of the tests: a plan, a review or a sweep.
type htmlPage struct {
	name  string // golden file, without .html
	write func(t *testing.T, b *bytes.Buffer, fig *Figure) error
}

// planPage, reviewPage and sweepPage render an example as HTML.
func planPage(name string) htmlPage {
	return htmlPage{strings.TrimSuffix(name, ".yaml"), func(t *testing.T, b *bytes.Buffer, fig *Figure) error {
		return WriteHTML(b, planExample(t, name), fig)
	}}
}

func reviewPage(name string) htmlPage {
	return htmlPage{strings.TrimSuffix(name, ".yaml"), func(t *testing.T, b *bytes.Buffer, fig *Figure) error {
		rep, in, src := reviewExample(t, name)
		return WriteReviewHTML(b, rep, in, src, fig)
	}}
}

func sweepPage(name string, vary ...string) htmlPage {
	return htmlPage{strings.TrimSuffix(name, ".yaml") + "-sweep", func(t *testing.T, b *bytes.Buffer, fig *Figure) error {
		tab, _ := sweepExample(t, name, vary...)
		return WriteSweepHTML(b, tab, fig)
	}}
}

// sweepExample sweeps an example over the --vary arguments given.
func sweepExample(t *testing.T, name string, vary ...string) (*sweep.Table, *designs.Spec) {
	t.Helper()
	data, err := examples.Files.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	base, err := designs.NewBase("examples/"+name, data, nil)
	if err != nil {
		t.Fatal(err)
	}
	var g sweep.Grid
	for _, v := range vary {
		a, err := sweep.ParseVary(v)
		if err != nil {
			t.Fatal(err)
		}
		g.Axes = append(g.Axes, a)
	}
	var o sweep.Options
	rows, err := sweep.Run(context.Background(), base, g, o)
	if err != nil {
		t.Fatal(err)
	}
	errObject := func(err error) json.RawMessage {
		m, _ := json.Marshal(map[string]string{"message": err.Error()})
		return m
	}
	return sweep.NewTable(sweep.NewHeader(base.Spec(), g, vary, o), g, rows, errObject), base.Spec()
}

// htmlPages are the pages of the golden files and the browser test.
var htmlPages = []htmlPage{
	planPage("demo-trial.yaml"),
	planPage("trial-verified-fisher.yaml"),
	planPage("cohort-detectable.yaml"),
	reviewPage("review-under-powered-wound-dressing.yaml"),
	sweepPage("demo-trial.yaml", "risk_ratio=0.6,0.7,0.8", "control_risk=0.15,0.2"),
}

// TestHTMLGolden compares whole HTML pages (without a plot) with golden
// files; regenerate with go test ./designs/report -update.
func TestHTMLGolden(t *testing.T) {
	for _, p := range htmlPages {
		var b bytes.Buffer
		if err := p.write(t, &b, nil); err != nil {
			t.Fatal(err)
		}
		path := filepath.Join("testdata", p.name+".html")
		if *update {
			if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		want, err := os.ReadFile(path)
		if err != nil {
			t.Fatalf("%v (run go test ./designs/report -update)", err)
		}
		if !bytes.Equal(b.Bytes(), want) {
			t.Errorf("%s differs from the golden file; run go test ./designs/report -update and review the diff", path)
		}
	}
}

// inventedSVG is a small SVG document written by hand, as a plotting
// library writes one: a declaration, a comment and namespaces first.
const inventedSVG = `<?xml version="1.0"?>
<!-- made by hand -->
<svg width="100pt" height="50pt" viewBox="0 0 100 50"
	xmlns="http://www.w3.org/2000/svg"
	xmlns:xlink="http://www.w3.org/1999/xlink">
<text x="10" y="40">participants per group</text>
</svg>
`

// TestHTMLSelfContained checks that every page carries nothing from
// outside (no script, no URL, no import), is well formed, and has the
// study's title as its own.
func TestHTMLSelfContained(t *testing.T) {
	fig := &Figure{SVG: []byte(inventedSVG), Caption: "An invented figure"}
	for _, p := range htmlPages {
		for _, f := range []*Figure{nil, fig} {
			var b bytes.Buffer
			if err := p.write(t, &b, f); err != nil {
				t.Fatal(err)
			}
			page := b.String()
			low := strings.ToLower(page)
			for _, bad := range []string{"<script", "http://", "https://", "@import", "url(", "<link", "<img", "<iframe", "<object", "src="} {
				if strings.Contains(low, bad) {
					t.Errorf("%s: the page holds %q", p.name, bad)
				}
			}
			if err := wellFormed(page); err != nil {
				t.Errorf("%s: %v", p.name, err)
			}
			if !strings.HasPrefix(page, "<!DOCTYPE html>\n<html lang=\"en\">") {
				t.Errorf("%s: no HTML5 doctype first", p.name)
			}
			for _, want := range []string{`<meta charset="utf-8">`, "@page", "break-inside: avoid", "max-width: 100%", "<h2>Cautions</h2>"} {
				if !strings.Contains(page, want) {
					t.Errorf("%s: the page lacks %q", p.name, want)
				}
			}
			hasSVG := strings.Contains(page, "<svg") && strings.Contains(page, "participants per group") &&
				strings.Contains(page, "<figcaption>An invented figure</figcaption>")
			if hasSVG != (f != nil) {
				t.Errorf("%s: figure %v, but the page has the SVG: %v", p.name, f != nil, hasSVG)
			}
		}
	}
}

// TestHTMLTitle checks the page's title on an example whose title is
// known (examples/demo-trial.yaml).
func TestHTMLTitle(t *testing.T) {
	var b bytes.Buffer
	if err := WriteHTML(&b, planExample(t, "demo-trial.yaml"), nil); err != nil {
		t.Fatal(err)
	}
	want := "<title>Pharmacist follow-up calls after discharge (demonstration)</title>"
	if !strings.Contains(b.String(), want) {
		t.Errorf("the page lacks %s", want)
	}
}

// TestHTMLEscaping checks that text is escaped and the document's
// Markdown emphasis becomes elements.
func TestHTMLEscaping(t *testing.T) {
	d := &document{
		title:    `Fish & <chips> "study"`,
		subtitle: "a **bold** claim about `key`",
		sections: []section{{
			heading: "A <b>heading</b>",
			paras:   []string{"2 < 3 & 4 > 1, an odd ** mark"},
			table:   [][]string{{"Key", "Value"}, {"`alpha`", "0.05"}, {"<i>", "−5.4%"}},
			bullets: []string{"one", "two <script>alert(1)</script>"},
			ordered: true,
		}},
		footer: []string{"tool & version"},
	}
	var b bytes.Buffer
	if err := d.html(&b, nil); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	for _, want := range []string{
		"<title>Fish &amp; &lt;chips&gt; &#34;study&#34;</title>",
		"<h1>Fish &amp; &lt;chips&gt; &#34;study&#34;</h1>",
		`<p class="subtitle">a <strong>bold</strong> claim about <code>key</code></p>`,
		"<h2>A &lt;b&gt;heading&lt;/b&gt;</h2>",
		"<p>2 &lt; 3 &amp; 4 &gt; 1, an odd ** mark</p>",
		"<tr><td><code>alpha</code></td><td class=\"num\">0.05</td></tr>",
		"<tr><td>&lt;i&gt;</td><td class=\"num\">−5.4%</td></tr>",
		"<ol>\n<li>one</li>\n<li>two &lt;script&gt;alert(1)&lt;/script&gt;</li>\n</ol>",
		"<footer>\n<p>tool &amp; version</p>\n</footer>",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
	if err := wellFormed(page); err != nil {
		t.Error(err)
	}
}

// TestInlineSVG checks what an SVG document becomes inside the page, and
// what is refused.
func TestInlineSVG(t *testing.T) {
	for _, c := range []struct{ in, want, err string }{
		{inventedSVG, "<svg width=\"100pt\" height=\"50pt\" viewBox=\"0 0 100 50\">\n<text x=\"10\" y=\"40\">participants per group</text>\n</svg>", ""},
		{"<svg><script>x</script></svg>", "", "<script"},
		{`<svg><image href="x.png"/></svg>`, "", "href="},
		{`<svg style="fill:url(#a)"></svg>`, "", "url("},
		{"no plot", "", "no SVG"},
	} {
		got, err := inlineSVG([]byte(c.in))
		switch {
		case c.err != "" && (err == nil || !strings.Contains(err.Error(), c.err)):
			t.Errorf("inlineSVG(%q): error %v, want one saying %q", c.in, err, c.err)
		case c.err == "" && err != nil:
			t.Errorf("inlineSVG(%q): %v", c.in, err)
		case string(got) != c.want:
			t.Errorf("inlineSVG(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// TestWellFormed checks the checker itself on pages that are not.
func TestWellFormed(t *testing.T) {
	for _, c := range []struct {
		page string
		ok   bool
	}{
		{"<!DOCTYPE html><html><head><meta charset=\"utf-8\"><title>x</title></head><body><p>a<br>b</p></body></html>", true},
		{"<!DOCTYPE html><html><head><title>x</title></head><body><p>a</body></html>", false},
		{"<!DOCTYPE html><html><head><title>x</title></head><body></p></body></html>", false},
		{"<!DOCTYPE html><html><head></head><body></body></html>", false},
		{"<html><head><title>x</title></head><body></body></html>", false},
	} {
		if err := wellFormed(c.page); (err == nil) != c.ok {
			t.Errorf("wellFormed(%q) = %v, want ok %v", c.page, err, c.ok)
		}
	}
}

// tag matches a start or end tag; text within <style> is skipped before.
var tag = regexp.MustCompile(`<(/?)([a-zA-Z][a-zA-Z0-9:-]*)(?:\s[^<>]*?)?(/?)>`)

// voids are the HTML elements without an end tag.
var voids = map[string]bool{"meta": true, "br": true, "hr": true, "img": true, "link": true, "input": true, "wbr": true}

// wellFormed checks a page's structure: a doctype, every element closed
// in order, one html with a head (one title) and a body, no stray < or >
// in text.
func wellFormed(page string) error {
	rest, ok := strings.CutPrefix(page, "<!DOCTYPE html>")
	if !ok {
		return fmt.Errorf("no doctype")
	}
	// The style sheet is text, not markup.
	if i := strings.Index(rest, "<style>"); i >= 0 {
		j := strings.Index(rest, "</style>")
		if j < i {
			return fmt.Errorf("an unclosed <style>")
		}
		rest = rest[:i] + "<style></style>" + rest[j+len("</style>"):]
	}
	var stack []string
	count := map[string]int{}
	last := 0
	for _, m := range tag.FindAllStringSubmatchIndex(rest, -1) {
		if text := rest[last:m[0]]; strings.ContainsAny(text, "<>") {
			return fmt.Errorf("a stray < or > in the text %q", text)
		}
		last = m[1]
		end, name, self := rest[m[2]:m[3]] == "/", strings.ToLower(rest[m[4]:m[5]]), rest[m[6]:m[7]] == "/"
		switch {
		case end:
			if len(stack) == 0 || stack[len(stack)-1] != name {
				return fmt.Errorf("</%s> closes %v", name, stack)
			}
			stack = stack[:len(stack)-1]
		case self || voids[name]:
			count[name]++
		default:
			if len(stack) == 0 && name != "html" {
				return fmt.Errorf("<%s> outside <html>", name)
			}
			count[name]++
			stack = append(stack, name)
		}
	}
	if strings.ContainsAny(rest[last:], "<>") {
		return fmt.Errorf("a stray < or > at the end")
	}
	if len(stack) > 0 {
		return fmt.Errorf("unclosed %v", stack)
	}
	for _, one := range []string{"html", "head", "title", "body"} {
		if count[one] != 1 {
			return fmt.Errorf("%d <%s> elements, want 1", count[one], one)
		}
	}
	return nil
}
