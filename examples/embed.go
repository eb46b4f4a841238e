// Package examples holds the example study specifications, embedded so that
// `enough plan` without a file can plan the demonstration study.
package examples

import "embed"

// Files holds every example specification.
//
//go:embed *.yaml
var Files embed.FS

// Demo is the file name of the embedded demonstration study.
const Demo = "demo-trial.yaml"
