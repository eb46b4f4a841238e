package report

import (
	"strconv"
	"strings"

	"enough/designs"
)

// vocab holds the words for a binary outcome's measures. An adverse
// outcome (higher_is_better false, the default) has a risk, or a
// prevalence in a cross-sectional survey; a desirable one (healing,
// quitting, coverage) has a proportion.
type vocab struct {
	noun  string // "risk", "prevalence", "proportion"
	ratio string // "risk ratio", "prevalence ratio", "ratio of proportions"
	diff  string // "risk difference", "prevalence difference", "difference in proportions"
}

func vocabOf(r *designs.Result) vocab {
	switch {
	case r.Design == "case-control":
		return vocab{"exposure", "odds ratio", "difference in exposure"}
	case r.Spec.HigherIsBetter && r.Outcome == "binary":
		return vocab{"proportion", "ratio of proportions", "difference in proportions"}
	case r.Design == "cross-sectional":
		return vocab{"prevalence", "prevalence ratio", "prevalence difference"}
	}
	return vocab{"risk", "risk ratio", "risk difference"}
}

// the effect keys whose scale is the first group's own risk (or exposure).
func firstRiskScale(key string) bool {
	switch key {
	case "exposed_risk", "intervention_risk", "exposed_prevalence", "case_exposure":
		return true
	}
	return false
}

// scaleName names the scale of an effect key in a sentence: "risk ratio",
// "difference in proportions", "risk among smokers".
func scaleName(r *designs.Result, key string) string {
	v := vocabOf(r)
	f, _ := groupsOf(r)
	switch key {
	case "risk_ratio", "prevalence_ratio":
		return v.ratio
	case "risk_difference", "prevalence_difference":
		return v.diff
	case "odds_ratio":
		return "odds ratio"
	case "mean_difference":
		return "difference in means"
	case "hazard_ratio":
		return "hazard ratio"
	}
	if firstRiskScale(key) {
		return v.noun + " " + f.in()
	}
	return keyLabel(r, key)
}

// singular drops the plural of a time unit: months → month, time units →
// time unit.
func singular(unit string) string {
	switch {
	case unit == "":
		return unit
	case strings.HasSuffix(unit, "ss"):
		return unit
	case strings.HasSuffix(unit, "s"):
		return strings.TrimSuffix(unit, "s")
	}
	return unit
}

// plural gives the plural of a time unit: month → months; a unit already
// plural stays as it is.
func plural(unit string) string {
	if unit == "" || (strings.HasSuffix(unit, "s") && !strings.HasSuffix(unit, "ss")) {
		return unit
	}
	return unit + "s"
}

// duration writes an amount of time with its unit in the right number:
// "1 month", "12 months", "0.5 months".
func duration(x float64, unit string) string {
	if x == 1 {
		return "1 " + singular(unit)
	}
	return num(x) + " " + plural(unit)
}

// durationText is duration for a value as written in the specification.
func durationText(v, unit string) string {
	if x, err := strconv.ParseFloat(v, 64); err == nil && x == 1 {
		return v + " " + singular(unit)
	}
	return v + " " + plural(unit)
}
