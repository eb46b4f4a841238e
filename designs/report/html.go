package report

import (
	"bytes"
	"fmt"
	"html"
	"io"
	"regexp"
	"strings"

	"enough/designs"
	"enough/designs/review"
	"enough/designs/sweep"
)

// How the HTML report looks (README, "HTML and PDF"):
//
//   - One self-contained HTML5 file: the style sheet inline, the plot as
//     inline SVG, no scripts, and nothing fetched from anywhere (no fonts,
//     images or style sheets by URL), so that it opens and prints the same
//     offline, years later.
//   - The same content as the Markdown summary, from the same document
//     model, every piece of text escaped; the plot, when there is one,
//     follows the section that gives the answer.
//   - Plain and printable: black on white, serif text, hairline table
//     rules. In print, the page margins suit A4 and Letter alike (the
//     paper is the printer's), a table row is never cut across pages, a
//     heading stays with what follows it, a section moves whole to the
//     next page when it fits on one, and nothing is wider than the
//     printable width (table cells and long words wrap, the plot scales
//     down).

// Figure is a plot to embed in an HTML report.
type Figure struct {
	// SVG is the plot as an SVG document (an XML declaration or comments
	// before the <svg> element are dropped).
	SVG []byte
	// Caption says what the plot shows, in one sentence.
	Caption string
}

// WriteHTML writes r as a self-contained HTML page, with fig (if not nil)
// as its plot.
func WriteHTML(w io.Writer, r *designs.Result, fig *Figure) error {
	return build(r).html(w, fig)
}

// WriteReviewHTML writes a recheck (see WriteReview) as a self-contained
// HTML page, with fig (if not nil) as its plot.
func WriteReviewHTML(w io.Writer, rep *review.Report, in *designs.ReviewInput, src ReviewSource, fig *Figure) error {
	if rep == nil || in == nil {
		return fmt.Errorf("no review to write")
	}
	return buildReview(rep, in, src).html(w, fig)
}

// WriteSweepHTML writes a sweep's table (the figures as the Markdown
// table rounds them) as a self-contained HTML page with the plot and the
// cautions.
// Everything on the page comes from the table, so that enough merge
// writes byte for byte the page enough sweep writes; fig is the plot of
// the sweep, or nil.
func WriteSweepHTML(w io.Writer, t *sweep.Table, fig *Figure) error {
	l, err := sweep.NewLayout(&t.Header)
	if err != nil {
		return err
	}
	d := &document{title: t.Header.Title}
	d.subtitle = "Sweep of the assumptions: " + strings.Join(t.Header.Vary, "; ")
	intro := fmt.Sprintf("Each row is one point of the grid of %s, planned under the specification's other assumptions.", pointsWord(len(t.Records)))
	if t.Header.Simulate != nil {
		intro += fmt.Sprintf(" Each point was also simulated with %s replicates (seed %d).", count(int(t.Header.Simulate.Replicates)), t.Header.Simulate.Seed)
	}
	intro += " Figures are rounded to 4 significant digits; an empty cell does not apply to the point, or the point could not be planned (its error column says why)."
	table := [][]string{t.Header.Columns}
	for i := range t.Records {
		row := make([]string, len(t.Header.Columns))
		for c := range t.Header.Columns {
			row[c] = rounded(l.Value(c, &t.Records[i]))
		}
		table = append(table, row)
	}
	d.sections = append(d.sections, section{heading: "The grid", paras: []string{intro}, table: table})
	d.sections = append(d.sections, section{heading: "Cautions", bullets: designs.Cautions})
	foot := fmt.Sprintf("%s %s · sweep of the specification with SHA-256 %s", designs.Tool, t.Header.Version, t.Header.SpecSHA256)
	d.footer = append(d.footer, foot)
	if len(t.Header.Overrides) > 0 {
		d.footer = append(d.footer, "overridden on the command line: "+strings.Join(t.Header.Overrides, ", "))
	}
	return d.html(w, fig)
}

func pointsWord(n int) string {
	if n == 1 {
		return "1 point"
	}
	return count(n) + " points"
}

// htmlStyle is the page's whole style sheet.
const htmlStyle = `
:root { color: #000; background: #fff; }
body { font-family: Georgia, "Times New Roman", Times, serif; font-size: 11pt; line-height: 1.45;
  max-width: 46rem; margin: 2rem auto; padding: 0 1.25rem; overflow-wrap: break-word; }
h1 { font-size: 1.55em; line-height: 1.2; margin: 0 0 0.3em; }
.subtitle { font-style: italic; margin: 0 0 1.5em; color: #333; }
h2 { font-size: 1.15em; margin: 1.8em 0 0.6em; padding-bottom: 0.15em; border-bottom: 1px solid #000; }
p, li { max-width: 100%; }
ul, ol { padding-left: 1.6em; }
li { margin: 0.2em 0; }
code { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 0.88em; overflow-wrap: break-word; }
table { border-collapse: separate; border-spacing: 0; border-top: 1px solid #888; border-left: 1px solid #888;
  width: 100%; margin: 0.8em 0 1.2em; font-size: 0.92em; }
th, td { border-right: 1px solid #888; border-bottom: 1px solid #888; padding: 0.25em 0.45em; text-align: left; vertical-align: top; overflow-wrap: break-word; }
th { background: #eee; font-weight: bold; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
figure { margin: 1em 0; }
figure svg { display: block; max-width: 100%; height: auto; margin: 0 auto; }
figcaption { font-size: 0.92em; font-style: italic; margin-top: 0.4em; }
footer { margin-top: 2.5em; padding-top: 0.5em; border-top: 1px solid #888; font-size: 0.8em; color: #333; overflow-wrap: anywhere; }
footer p { margin: 0.2em 0; }
@page { margin: 18mm 16mm 20mm; }
@media print {
  body { max-width: none; margin: 0; padding: 0 2px 0 0; font-size: 10.5pt; }
  h1, h2 { break-after: avoid-page; }
  section { break-inside: avoid-page; }
  section.long { break-inside: auto; }
  table { break-inside: auto; }
  thead { display: table-header-group; }
  tr, li, figure, p { break-inside: avoid-page; }
  figure svg { max-height: 215mm; width: auto; }
  footer { break-before: avoid-page; }
  th { background: #eee; -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
`

// html writes the document as a self-contained HTML page, with fig (if
// not nil) after the answer.
func (d *document) html(w io.Writer, fig *Figure) error {
	var b strings.Builder
	b.WriteString("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
	b.WriteString("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
	fmt.Fprintf(&b, "<title>%s</title>\n", html.EscapeString(plain(d.title)))
	fmt.Fprintf(&b, "<style>%s</style>\n</head>\n<body>\n<header>\n", htmlStyle)
	fmt.Fprintf(&b, "<h1>%s</h1>\n", inline(d.title))
	if d.subtitle != "" {
		fmt.Fprintf(&b, "<p class=\"subtitle\">%s</p>\n", inline(d.subtitle))
	}
	b.WriteString("</header>\n<main>\n")
	at := figureAt(d)
	if fig != nil && len(fig.SVG) > 0 && at < 0 {
		if err := htmlFigure(&b, fig); err != nil {
			return err
		}
	}
	for i, s := range d.sections {
		if long(s) || (i == at && fig != nil && len(fig.SVG) > 0) {
			// A long section, or one with the plot, may run on to the
			// next page rather than leave this one nearly empty.
			b.WriteString("<section class=\"long\">\n")
		} else {
			b.WriteString("<section>\n")
		}
		fmt.Fprintf(&b, "<h2>%s</h2>\n", inline(s.heading))
		for _, p := range s.paras {
			fmt.Fprintf(&b, "<p>%s</p>\n", inline(p))
		}
		// A long table (a sweep's grid) comes after the plot, which
		// would otherwise be pages away from the section's heading.
		early := fig != nil && len(fig.SVG) > 0 && i == at && len(s.table) > longRows
		if early {
			if err := htmlFigure(&b, fig); err != nil {
				return err
			}
		}
		htmlTable(&b, s.table)
		if len(s.bullets) > 0 {
			tag := "ul"
			if s.ordered {
				tag = "ol"
			}
			fmt.Fprintf(&b, "<%s>\n", tag)
			for _, item := range s.bullets {
				fmt.Fprintf(&b, "<li>%s</li>\n", inline(item))
			}
			fmt.Fprintf(&b, "</%s>\n", tag)
		}
		htmlTable(&b, s.afterTable)
		for _, p := range s.after {
			fmt.Fprintf(&b, "<p>%s</p>\n", inline(p))
		}
		if fig != nil && len(fig.SVG) > 0 && i == at && !early {
			if err := htmlFigure(&b, fig); err != nil {
				return err
			}
		}
		b.WriteString("</section>\n")
	}
	b.WriteString("</main>\n")
	if len(d.footer) > 0 {
		b.WriteString("<footer>\n")
		for _, f := range d.footer {
			fmt.Fprintf(&b, "<p>%s</p>\n", inline(f))
		}
		b.WriteString("</footer>\n")
	}
	b.WriteString("</body>\n</html>\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// longRows is the number of rows (table rows or list items) above which
// a section is long: printed across pages if need be, where a short one
// is kept whole on one page.
const longRows = 12

// long says whether a section is long (see longRows).
func long(s section) bool {
	return len(s.table)+len(s.afterTable) > longRows || len(s.bullets) > longRows
}

// figureAt is the index of the section the plot ends: the simulation's
// (of a simulated plan), else the answer (of a plan), the conclusion (of
// a review) or the grid (of a sweep); -1 puts it before the first
// section.
func figureAt(d *document) int {
	for _, heading := range []string{"Verification by simulation", "Answer", "Conclusion", "The grid"} {
		for i, s := range d.sections {
			if s.heading == heading {
				return i
			}
		}
	}
	return -1
}

// htmlFigure writes fig as a figure with the SVG inline.
func htmlFigure(b *strings.Builder, fig *Figure) error {
	svg, err := inlineSVG(fig.SVG)
	if err != nil {
		return err
	}
	b.WriteString("<figure>\n")
	b.Write(svg)
	b.WriteString("\n")
	if fig.Caption != "" {
		fmt.Fprintf(b, "<figcaption>%s</figcaption>\n", inline(fig.Caption))
	}
	b.WriteString("</figure>\n")
	return nil
}

// xmlns matches the namespace declarations of an SVG document, which an
// SVG inside HTML does without (the HTML parser puts it in the SVG
// namespace).
var xmlns = regexp.MustCompile(`\s+xmlns(:[a-z]+)?="[^"]*"`)

// inlineSVG returns the <svg> element of an SVG document, without what
// precedes it (the XML declaration, comments) and without its namespace
// declarations, so that the page names no URL at all. A document with a
// script, or one that loads anything by URL, is refused.
func inlineSVG(doc []byte) ([]byte, error) {
	i := bytes.Index(doc, []byte("<svg"))
	if i < 0 {
		return nil, fmt.Errorf("the plot is no SVG document")
	}
	svg := bytes.TrimSpace(doc[i:])
	if j := bytes.IndexByte(svg, '>'); j > 0 {
		svg = append(xmlns.ReplaceAll(svg[:j:j], nil), svg[j:]...)
	}
	low := bytes.ToLower(svg)
	for _, bad := range []string{"<script", "url(", "@import", "http:", "https:", "href="} {
		if bytes.Contains(low, []byte(bad)) {
			return nil, fmt.Errorf("the plot's SVG holds %q, which a self-contained page cannot carry", bad)
		}
	}
	return svg, nil
}

// inline escapes text for HTML and turns the Markdown emphasis the
// document uses (**strong**, `code`) into elements.
func inline(s string) string {
	s = html.EscapeString(s)
	s = pairs(s, "**", "<strong>", "</strong>")
	s = pairs(s, "`", "<code>", "</code>")
	return breakable(s)
}

// codeSpan finds a code element's text.
var codeSpan = regexp.MustCompile(`<code>[^<]*</code>`)

// breakable lets the keys in code elements break after an underscore
// (<wbr>), never inside a word, so that narrow columns wrap at the parts
// of a key.
func breakable(s string) string {
	return codeSpan.ReplaceAllStringFunc(s, func(c string) string {
		return strings.ReplaceAll(c, "_", "_<wbr>")
	})
}

// pairs replaces each pair of marks in s by open and close; an unpaired
// last mark stays as it is.
func pairs(s, mark, open, close string) string {
	parts := strings.Split(s, mark)
	if len(parts) < 3 {
		return s
	}
	var b strings.Builder
	for i, p := range parts {
		switch {
		case i == 0:
		case i%2 == 1 && i == len(parts)-1:
			b.WriteString(mark)
		case i%2 == 1:
			b.WriteString(open)
		default:
			b.WriteString(close)
		}
		b.WriteString(p)
	}
	return b.String()
}

// numeric matches a cell that is a figure, aligned right: digits with
// separators, a sign, a percent sign.
var numeric = regexp.MustCompile(`^[−+-]?[0-9][0-9,.]*%?$`)

// htmlTable writes a table whose first row is the header.
func htmlTable(b *strings.Builder, table [][]string) {
	if len(table) == 0 {
		return
	}
	b.WriteString("<table>\n<thead>\n<tr>")
	for _, c := range table[0] {
		// A header may be a key (a sweep's columns): breakable after its
		// underscores.
		fmt.Fprintf(b, "<th scope=\"col\">%s</th>", strings.ReplaceAll(inline(oneLine(c)), "_", "_<wbr>"))
	}
	b.WriteString("</tr>\n</thead>\n<tbody>\n")
	for _, row := range table[1:] {
		b.WriteString("<tr>")
		for _, c := range row {
			c = oneLine(c)
			if numeric.MatchString(c) {
				fmt.Fprintf(b, "<td class=\"num\">%s</td>", inline(c))
			} else {
				fmt.Fprintf(b, "<td>%s</td>", inline(c))
			}
		}
		b.WriteString("</tr>\n")
	}
	b.WriteString("</tbody>\n</table>\n")
}
