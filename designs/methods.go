package designs

import "enough/power"

// MethodInfo describes a closed-form method as users see it.
type MethodInfo struct {
	// ID is the method's name in specifications (`method:`).
	ID string
	// Name spells the method out for people.
	Name string
	// Citation is the published reference; Short is its author-year form.
	Citation string
	Short    string
	// Designs lists the designs the method serves; Goal, when set, restricts
	// cross-sectional use to that goal.
	Designs []string
	Goal    string
	// DefaultTest is the planned analysis assumed unless `test:` says
	// otherwise ("" when there is no test).
	DefaultTest string
	// Note is a line for `enough methods`.
	Note string

	engine power.Method
}

// Methods is the catalogue of closed-form methods, in the order listed by
// `enough methods`.
var Methods = []MethodInfo{
	{
		ID: "fleiss-cc", Short: "Fleiss, Tytun & Ury 1980", Name: "Fleiss with continuity correction",
		Citation:    "Fleiss JL, Tytun A, Ury HK (1980). A simple approximation for calculating sample sizes for comparing independent proportions. Biometrics 36:343-346",
		Designs:     []string{"cohort", "case-control", "trial", "cross-sectional"},
		Goal:        "comparison",
		DefaultTest: "chi-square-yates",
		Note:        "the default for two-group binary comparisons; matches an analysis with Yates' correction",
		engine:      power.FleissCC,
	},
	{
		ID: "fleiss", Short: "Fleiss, Levin & Paik 2003", Name: "Fleiss, no continuity correction",
		Citation:    "Fleiss JL, Levin B, Paik MC (2003). Statistical Methods for Rates and Proportions, 3rd ed. Wiley, chapter 4",
		Designs:     []string{"cohort", "case-control", "trial", "cross-sectional"},
		Goal:        "comparison",
		DefaultTest: "chi-square",
		Note:        "pooled variance under no difference, separate variances under the effect",
		engine:      power.Fleiss,
	},
	{
		ID: "kelsey", Short: "Kelsey et al. 1996", Name: "Kelsey",
		Citation:    "Kelsey JL, Whittemore AS, Evans AS, Thompson WD (1996). Methods in Observational Epidemiology, 2nd ed. Oxford University Press",
		Designs:     []string{"cohort", "case-control", "trial", "cross-sectional"},
		Goal:        "comparison",
		DefaultTest: "chi-square",
		Note:        "pooled variance in both terms, no continuity correction",
		engine:      power.Kelsey,
	},
	{
		ID: "schlesselman", Short: "Schlesselman 1982", Name: "Schlesselman",
		Citation:    "Schlesselman JJ (1982). Case-Control Studies: Design, Conduct, Analysis. Oxford University Press, chapter 6",
		Designs:     []string{"case-control"},
		DefaultTest: "chi-square",
		Note:        "case exposure derived from the control exposure and the odds ratio; no continuity correction",
		engine:      power.Schlesselman,
	},
	{
		ID: "wald", Short: "Cochran 1977", Name: "Wald interval (normal approximation)",
		Citation:    "Cochran WG (1977). Sampling Techniques, 3rd ed. Wiley, chapter 4",
		Designs:     []string{"cross-sectional"},
		Goal:        "precision",
		DefaultTest: "",
		Note:        "size to estimate one prevalence within a margin; finite population correction and design effect",
	},
}

func (m MethodInfo) serves(design, goal string) bool {
	if m.Goal != "" && design == "cross-sectional" && goal != m.Goal {
		return false
	}
	if m.Goal == "precision" && design != "cross-sectional" {
		return false
	}
	for _, d := range m.Designs {
		if d == design {
			return true
		}
	}
	return false
}

// MethodByID returns the method with that ID, or nil.
func MethodByID(id string) *MethodInfo {
	for i := range Methods {
		if Methods[i].ID == id {
			return &Methods[i]
		}
	}
	return nil
}

// TestName spells out a planned analysis.
func TestName(test string) string {
	switch test {
	case "chi-square":
		return "Pearson's chi-square test without continuity correction"
	case "chi-square-yates":
		return "Pearson's chi-square test with Yates' continuity correction"
	case "fisher":
		return "Fisher's exact test"
	case "z-unpooled":
		return "the z test with unpooled variance"
	}
	return test
}
