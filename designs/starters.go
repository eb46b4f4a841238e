package designs

import (
	"embed"
	"fmt"
)

//go:embed starters/*.yaml
var starters embed.FS

// Starter returns a commented starter specification for a design; goal
// selects the cross-sectional variant ("comparison" or "precision").
func Starter(design, goal string) ([]byte, error) {
	name := design
	switch {
	case design == "cross-sectional" && goal == "precision":
		name = "precision"
	case goal != "" && goal != "comparison":
		return nil, fmt.Errorf("goal %q; allowed: comparison, or precision with design cross-sectional", goal)
	}
	data, err := starters.ReadFile("starters/" + name + ".yaml")
	if err != nil {
		return nil, fmt.Errorf("design %q; allowed: %s", design, orList(Designs))
	}
	return data, nil
}
