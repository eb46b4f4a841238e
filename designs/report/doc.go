// Package report renders a computed plan ([designs.Result]) as a
// protocol-ready Markdown summary, as plain text, as a self-contained HTML
// page (html.go), or as JSON.
//
// Markdown, text and HTML come from one document model, so the formats
// always carry the same content.
package report
