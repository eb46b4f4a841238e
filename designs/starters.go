package designs

import (
	"embed"
	"fmt"
	"slices"
)

//go:embed starters/*.yaml
var starters embed.FS

// Starter returns a commented starter specification for a design; goal
// selects the cross-sectional variant ("comparison" or "precision") and
// outcome the variant of a comparison ("binary"; "continuous" for a cohort,
// a trial or a cross-sectional comparison; "time-to-event" for a trial).
// The errors name what was given and what is allowed, for `enough new`.
func Starter(design, goal, outcome string) ([]byte, error) {
	if !slices.Contains(Designs, design) {
		return nil, fmt.Errorf("%q is not a design; allowed: %s", design, orList(Designs))
	}
	name := design
	switch {
	case goal == "" || goal == "comparison":
	case goal == "precision" && design == "cross-sectional":
		name = "precision"
	case goal == "precision":
		return nil, fmt.Errorf("--goal precision applies to design cross-sectional only (design %s always compares two groups); allowed: comparison, or leave --goal out", design)
	default:
		return nil, fmt.Errorf("--goal %q is not a goal; allowed: comparison or precision (cross-sectional only)", goal)
	}
	switch outcome {
	case "", "binary":
	case "continuous", "time-to-event":
		switch {
		case name == "precision":
			return nil, fmt.Errorf("--outcome %s does not apply to a precision survey, which estimates one prevalence; allowed: binary", outcome)
		case outcome == "continuous" && design != "case-control", outcome == "time-to-event" && design == "trial":
			name += "-" + outcome
		default:
			return nil, fmt.Errorf("--outcome %s does not apply to design %s; allowed: %s", outcome, design, starterOutcomes(name))
		}
	default:
		return nil, fmt.Errorf("--outcome %q is not an outcome; allowed: %s", outcome, starterOutcomes(name))
	}
	return starters.ReadFile("starters/" + name + ".yaml")
}

// starterOutcomes lists the outcomes that have a starter for a design (or
// for "precision", the precision survey).
func starterOutcomes(design string) string {
	switch design {
	case "precision":
		return "binary (a precision survey estimates one prevalence)"
	case "trial":
		return "binary, continuous or time-to-event"
	case "case-control":
		return "binary (a case-control study compares exposure between cases and controls)"
	}
	return "binary or continuous"
}
