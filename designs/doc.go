// Package designs reads and validates study specifications (YAML, version 1)
// and maps each design onto the closed-form methods of package power.
//
// Parse turns a specification into a validated [Spec]; a problem with the
// input is a [*SpecError] naming the file, the line, the key, the value and
// what is allowed, and several independent problems come together as
// [SpecErrors] (one line each). [Plan] computes the answer as a [Result],
// the data behind every output format, with the [Step]s it took.
package designs
