package designs

import (
	"embed"
	"fmt"
)

//go:embed starters/*.yaml
var starters embed.FS

// Starter returns a commented starter specification for a design; goal
// selects the cross-sectional variant ("comparison" or "precision") and
// outcome the trial variant ("binary", "continuous", "time-to-event").
func Starter(design, goal, outcome string) ([]byte, error) {
	name := design
	switch {
	case design == "cross-sectional" && goal == "precision":
		name = "precision"
	case goal != "" && goal != "comparison":
		return nil, fmt.Errorf("goal %q; allowed: comparison, or precision with design cross-sectional", goal)
	}
	switch {
	case outcome == "" || outcome == "binary":
	case design == "trial" && (outcome == "continuous" || outcome == "time-to-event"):
		name = "trial-" + outcome
	case design == "cohort" && outcome == "continuous":
		name = "cohort-continuous"
	default:
		return nil, fmt.Errorf("outcome %q; allowed: binary, continuous (trial or cohort) or time-to-event (trial)", outcome)
	}
	data, err := starters.ReadFile("starters/" + name + ".yaml")
	if err != nil {
		return nil, fmt.Errorf("design %q; allowed: %s", design, orList(Designs))
	}
	return data, nil
}
