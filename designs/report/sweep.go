package report

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"unicode"
	"unicode/utf8"

	"enough/designs/sweep"
)

// SweepFormats lists the formats of enough sweep and enough merge that -f
// names; "table", the aligned table for a terminal, is their default on
// one.
var SweepFormats = []string{"csv", "json", "markdown"}

// How a sweep's figures are written (README, "Sweeping assumptions"):
//
//   - CSV: whole numbers in digits; other numbers in full precision, the
//     shortest decimal that reads back as the same double (strconv's 'g'
//     with precision −1: 0.8036497339225312, 1e-05); a varied key's value
//     as given to --vary.
//   - Markdown and the terminal's table: whole numbers in digits; other
//     numbers to 4 significant digits, never in exponent notation unless
//     below 1e-9 (0.8036, 123.5, 12346); a varied key's value as given.
//   - JSON: numbers as encoding/json writes them (full precision).
//
// An empty cell is a figure that does not apply to the point, or a point
// that could not be planned (its error column says why).

// WriteSweep writes a sweep's table in the named format: "csv", "json"
// (an array, one point's object per line), "markdown" (a table) or
// "table" (aligned columns for a terminal).
func WriteSweep(w io.Writer, t *sweep.Table, format string) error {
	l, err := sweep.NewLayout(&t.Header)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	switch format {
	case "csv":
		err = sweepCSV(bw, t, l)
	case "json":
		err = sweepJSON(bw, t)
	case "markdown", "md":
		err = sweepAligned(bw, t, l, true)
	case "table":
		err = sweepAligned(bw, t, l, false)
	default:
		err = fmt.Errorf("unknown format %q", format)
	}
	if err != nil {
		return err
	}
	return bw.Flush()
}

// sweepCSV writes the header row and one row per point, quoting a field
// as encoding/csv does (RFC 4180, lines ended by \n).
func sweepCSV(w io.Writer, t *sweep.Table, l *sweep.Layout) error {
	c, err := newSweepCSV(w, &t.Header, l)
	if err != nil {
		return err
	}
	return c.Write(t)
}

// SweepCSV writes a sweep as CSV table by table, as the blocks of a large
// sweep are solved (sweep.Options.Emit): the header row once, then the
// rows of each table in turn; the bytes are those WriteSweep writes for the
// whole sweep at once.
type SweepCSV struct {
	w    io.Writer
	l    *sweep.Layout
	bufs [][]byte
}

// NewSweepCSV writes the header row of a sweep with header h.
func NewSweepCSV(w io.Writer, h *sweep.Header) (*SweepCSV, error) {
	l, err := sweep.NewLayout(h)
	if err != nil {
		return nil, err
	}
	return newSweepCSV(w, h, l)
}

func newSweepCSV(w io.Writer, h *sweep.Header, l *sweep.Layout) (*SweepCSV, error) {
	var b []byte
	for c, name := range h.Columns {
		if c > 0 {
			b = append(b, ',')
		}
		b = appendCSVField(b, name)
	}
	b = append(b, '\n')
	if _, err := w.Write(b); err != nil {
		return nil, err
	}
	return &SweepCSV{w: w, l: l, bufs: make([][]byte, runtime.GOMAXPROCS(0))}, nil
}

// Write writes the rows of t. Rows are formatted in chunks on every core
// and written in order: the bytes are those of one row after the other,
// whatever the cores.
func (c *SweepCSV) Write(t *sweep.Table) error {
	const chunk = 2048
	workers := len(c.bufs)
	for start := 0; start < len(t.Records); start += workers * chunk {
		var wg sync.WaitGroup
		for k := range workers {
			lo := start + k*chunk
			hi := min(lo+chunk, len(t.Records))
			c.bufs[k] = c.bufs[k][:0]
			if lo >= hi {
				continue
			}
			wg.Add(1)
			go func() {
				defer wg.Done()
				c.bufs[k] = appendCSVRows(c.bufs[k], t.Records[lo:hi], c.l)
			}()
		}
		wg.Wait()
		for _, buf := range c.bufs {
			if _, err := c.w.Write(buf); err != nil {
				return err
			}
		}
	}
	return nil
}

// appendCSVRows appends the CSV lines of records.
func appendCSVRows(b []byte, records []sweep.Record, l *sweep.Layout) []byte {
	for i := range records {
		r := &records[i]
		for c := range l.Width() {
			if c > 0 {
				b = append(b, ',')
			}
			v := l.Value(c, r)
			switch v.Kind {
			case sweep.Whole:
				b = strconv.AppendInt(b, int64(v.Int), 10)
			case sweep.Number:
				b = strconv.AppendFloat(b, v.Num, 'g', -1, 64)
			case sweep.Text:
				b = appendCSVField(b, v.Text)
			case sweep.Literal:
				b = append(b, v.Text...)
			}
		}
		b = append(b, '\n')
	}
	return b
}

// appendCSVField appends a field, quoted when encoding/csv's Writer would
// quote it: when it holds a comma, a quote, a carriage return or a line
// feed, begins with a space, or is \. (a quote inside is doubled).
func appendCSVField(b []byte, s string) []byte {
	r, _ := utf8.DecodeRuneInString(s)
	quote := s != "" && (s == `\.` || strings.ContainsAny(s, ",\"\r\n") || unicode.IsSpace(r))
	if !quote {
		return append(b, s...)
	}
	b = append(b, '"')
	for i := 0; i < len(s); i++ {
		if s[i] == '"' {
			b = append(b, '"')
		}
		b = append(b, s[i])
	}
	return append(b, '"')
}

// sweepJSON writes the array of the points' objects, one per line.
func sweepJSON(w io.Writer, t *sweep.Table) error {
	if _, err := io.WriteString(w, "[\n"); err != nil {
		return err
	}
	var b []byte
	for i := range t.Records {
		var err error
		b, err = sweep.AppendElement(b[:0], &t.Header, &t.Records[i])
		if err != nil {
			return err
		}
		if i < len(t.Records)-1 {
			b = append(b, ',')
		}
		b = append(b, '\n')
		if _, err := w.Write(b); err != nil {
			return err
		}
	}
	_, err := io.WriteString(w, "]\n")
	return err
}

// sweepAligned writes the table with its columns aligned: as Markdown
// (pipes, a header rule with the alignment) or for a terminal (columns
// two spaces apart, a rule of dashes under the header). Figures are right
// aligned, the error column left aligned.
func sweepAligned(w io.Writer, t *sweep.Table, l *sweep.Layout, markdown bool) error {
	cols := t.Header.Columns
	cells := make([][]string, len(t.Records))
	width := make([]int, len(cols))
	for c, name := range cols {
		width[c] = utf8.RuneCountInString(cellText(name, markdown))
	}
	for i := range t.Records {
		row := make([]string, len(cols))
		for c := range cols {
			row[c] = cellText(rounded(l.Value(c, &t.Records[i])), markdown)
			width[c] = max(width[c], utf8.RuneCountInString(row[c]))
		}
		cells[i] = row
	}
	left := func(c int) bool { return cols[c] == sweep.ColError }
	pad := func(s string, c int) string {
		n := width[c] - utf8.RuneCountInString(s)
		if left(c) {
			return s + strings.Repeat(" ", n)
		}
		return strings.Repeat(" ", n) + s
	}
	var b strings.Builder
	line := func(row []string) error {
		b.Reset()
		for c, s := range row {
			switch {
			case markdown:
				b.WriteString("| ")
				b.WriteString(pad(s, c))
				b.WriteString(" ")
			case c > 0:
				b.WriteString("  ")
				fallthrough
			default:
				b.WriteString(pad(s, c))
			}
		}
		out := b.String()
		if markdown {
			out += "|"
		} else {
			out = strings.TrimRight(out, " ")
		}
		_, err := io.WriteString(w, out+"\n")
		return err
	}
	if markdown {
		// A Markdown rule needs a dash and the colon of its alignment.
		for c := range width {
			width[c] = max(width[c], 3)
		}
	}
	head := make([]string, len(cols))
	rule := make([]string, len(cols))
	for c, name := range cols {
		head[c] = cellText(name, markdown)
		switch {
		case !markdown:
			rule[c] = strings.Repeat("-", width[c])
		case left(c):
			rule[c] = ":" + strings.Repeat("-", width[c]-1)
		default:
			rule[c] = strings.Repeat("-", width[c]-1) + ":"
		}
	}
	if err := line(head); err != nil {
		return err
	}
	if err := line(rule); err != nil {
		return err
	}
	for _, row := range cells {
		if err := line(row); err != nil {
			return err
		}
	}
	return nil
}

// cellText escapes a cell for Markdown (a pipe would end the cell, a
// newline the row); for a terminal only newlines become spaces.
func cellText(s string, markdown bool) string {
	s = strings.ReplaceAll(strings.ReplaceAll(s, "\r", " "), "\n", " ")
	if markdown {
		s = strings.ReplaceAll(s, "|", `\|`)
	}
	return s
}

// rounded writes a cell for Markdown and the terminal: numbers to 4
// significant digits.
func rounded(v sweep.Value) string {
	switch v.Kind {
	case sweep.Whole:
		return strconv.Itoa(v.Int)
	case sweep.Number:
		return sig4(v.Num)
	case sweep.Text, sweep.Literal:
		return v.Text
	}
	return ""
}

// sig4 writes x to 4 significant digits in fixed notation (0.8036, 123.5,
// 12346); below 1e-9 in exponent notation.
func sig4(x float64) string {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	// The exponent of x once rounded to 4 digits (0.99996 is 1.000).
	r, _ := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 4, 64), 64)
	e := int(math.Floor(math.Log10(math.Abs(r))))
	if e < -9 {
		return strconv.FormatFloat(x, 'g', 4, 64)
	}
	return strconv.FormatFloat(x, 'f', max(0, 3-e), 64)
}
