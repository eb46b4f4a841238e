package report

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"
)

// document is the content shared by the Markdown and text formats.
type document struct {
	title    string
	subtitle string
	sections []section
	footer   []string
}

// section is a heading followed by paragraphs, a table and a list.
type section struct {
	heading string
	paras   []string
	table   [][]string // first row is the header
	bullets []string
	ordered bool
	// afterTable is a second table, after the list (first row the header).
	afterTable [][]string
	after      []string // paragraphs after the tables and list
}

// markdown writes the document as GitHub-flavoured Markdown.
func (d *document) markdown(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "# %s\n\n", d.title)
	if d.subtitle != "" {
		fmt.Fprintf(&b, "*%s*\n\n", d.subtitle)
	}
	for _, s := range d.sections {
		fmt.Fprintf(&b, "## %s\n\n", s.heading)
		for _, p := range s.paras {
			b.WriteString(p)
			b.WriteString("\n\n")
		}
		markdownTable(&b, s.table)
		for i, item := range s.bullets {
			if s.ordered {
				fmt.Fprintf(&b, "%d. %s\n", i+1, item)
			} else {
				fmt.Fprintf(&b, "- %s\n", item)
			}
		}
		if len(s.bullets) > 0 {
			b.WriteString("\n")
		}
		markdownTable(&b, s.afterTable)
		for _, p := range s.after {
			b.WriteString(p)
			b.WriteString("\n\n")
		}
	}
	if len(d.footer) > 0 {
		b.WriteString("---\n\n")
		for _, f := range d.footer {
			fmt.Fprintf(&b, "<sub>%s</sub>  \n", f)
		}
	}
	_, err := io.WriteString(w, strings.TrimRight(b.String(), "\n ")+"\n")
	return err
}

// markdownTable writes a table whose first row is the header.
func markdownTable(b *strings.Builder, table [][]string) {
	if len(table) == 0 {
		return
	}
	for i, row := range table {
		cells := make([]string, len(row))
		for j, c := range row {
			// A cell is one line: a newline would end the row.
			cells[j] = strings.ReplaceAll(oneLine(c), "|", `\|`)
		}
		fmt.Fprintf(b, "| %s |\n", strings.Join(cells, " | "))
		if i == 0 {
			fmt.Fprintf(b, "|%s\n", strings.Repeat(" --- |", len(row)))
		}
	}
	b.WriteString("\n")
}

// textTable writes a table as aligned columns.
func textTable(b *strings.Builder, table [][]string) {
	if len(table) == 0 {
		return
	}
	tw := tabwriter.NewWriter(b, 0, 0, 2, ' ', 0)
	for _, row := range table {
		cells := make([]string, len(row))
		for j, c := range row {
			cells[j] = plain(oneLine(c))
		}
		fmt.Fprintln(tw, strings.Join(cells, "\t"))
	}
	tw.Flush()
	b.WriteString("\n")
}

// text writes the document as plain text, wrapped at 78 columns.
func (d *document) text(w io.Writer) error {
	var b strings.Builder
	b.WriteString(strings.ToUpper(d.title) + "\n")
	if d.subtitle != "" {
		b.WriteString(d.subtitle + "\n")
	}
	for _, s := range d.sections {
		fmt.Fprintf(&b, "\n%s\n%s\n", s.heading, strings.Repeat("-", len([]rune(s.heading))))
		for _, p := range s.paras {
			b.WriteString(wrap(plain(p), 78, ""))
			b.WriteString("\n\n")
		}
		textTable(&b, s.table)
		for i, item := range s.bullets {
			mark := "  - "
			if s.ordered {
				mark = fmt.Sprintf("  %d. ", i+1)
			}
			b.WriteString(mark + wrap(plain(item), 78-len(mark), strings.Repeat(" ", len(mark))))
			b.WriteString("\n")
		}
		if len(s.bullets) > 0 {
			b.WriteString("\n")
		}
		textTable(&b, s.afterTable)
		for _, p := range s.after {
			b.WriteString(wrap(plain(p), 78, ""))
			b.WriteString("\n\n")
		}
	}
	for _, f := range d.footer {
		b.WriteString(plain(f) + "\n")
	}
	out := b.String()
	for strings.Contains(out, "\n\n\n") {
		out = strings.ReplaceAll(out, "\n\n\n", "\n\n")
	}
	_, err := io.WriteString(w, strings.TrimRight(out, "\n ")+"\n")
	return err
}

// plain strips the Markdown emphasis used in the document.
func plain(s string) string {
	return strings.NewReplacer("**", "", "`", "").Replace(s)
}

// wrap breaks s into lines of at most width runes; later lines get indent.
func wrap(s string, width int, indent string) string {
	var b strings.Builder
	line := 0
	for i, word := range strings.Fields(s) {
		n := len([]rune(word))
		if i > 0 {
			if line+1+n > width {
				b.WriteString("\n" + indent)
				line = 0
			} else {
				b.WriteByte(' ')
				line++
			}
		}
		b.WriteString(word)
		line += n
	}
	return b.String()
}
