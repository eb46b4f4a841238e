// Package report renders a computed plan ([designs.Result]) as a
// protocol-ready Markdown summary, as plain text, or as JSON.
//
// Markdown and text come from one document model, so the two formats
// always carry the same content.
package report
