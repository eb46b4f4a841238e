package report

import (
	"encoding/json"
	"fmt"
	"io"

	"enough/designs"
)

// Formats lists the output formats.
var Formats = []string{"markdown", "text", "json"}

// Write renders r in the named format ("markdown", "text" or "json").
func Write(w io.Writer, r *designs.Result, format string) error {
	switch format {
	case "markdown", "md":
		return build(r).markdown(w)
	case "text", "txt":
		return build(r).text(w)
	case "json":
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(r)
	}
	return fmt.Errorf("unknown format %q", format)
}
