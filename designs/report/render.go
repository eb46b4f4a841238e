package report

import (
	"encoding/json"
	"fmt"
	"io"

	"enough/designs"
)

// Formats lists the output formats.
var Formats = []string{"markdown", "text", "json", "html"}

// Write renders r in the named format ("markdown", "text", "json" or
// "html"; HTML without a plot: see WriteHTML).
func Write(w io.Writer, r *designs.Result, format string) error {
	switch format {
	case "markdown", "md":
		return build(r).markdown(w)
	case "text", "txt":
		return build(r).text(w)
	case "html":
		return WriteHTML(w, r, nil)
	case "json":
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(r)
	}
	return fmt.Errorf("unknown format %q", format)
}
