package designs

import "sort"

// kind is the YAML type a key takes.
type kind int

const (
	kindNumber kind = iota
	kindWhole
	kindText
	kindMap
)

// keyInfo describes one specification key.
type keyInfo struct {
	kind    kind
	allowed string // what values are allowed, for error messages
}

// specKeys lists every key of specification version 1.
var specKeys = map[string]keyInfo{
	"version":         {kindWhole, "1"},
	"title":           {kindText, "a line of text"},
	"design":          {kindText, "cohort, case-control, trial or cross-sectional"},
	"outcome":         {kindText, "binary"},
	"goal":            {kindText, "comparison or precision"},
	"solve":           {kindText, "n, power or effect"},
	"method":          {kindText, "a method of `enough methods` that serves the design"},
	"test":            {kindText, "chi-square, chi-square-yates, fisher or z-unpooled"},
	"alpha":           {kindNumber, "a number in (0, 0.5]"},
	"sides":           {kindWhole, "1 or 2"},
	"power":           {kindNumber, "a number above alpha and below 1"},
	"n":               {kindWhole, "a whole number of at least 2"},
	"total":           {kindWhole, "a whole number of at least 2"},
	"ratio":           {kindNumber, "a number above 0"},
	"attrition":       {kindNumber, "a fraction in [0, 1)"},
	"design_effect":   {kindNumber, "a number from 1 to 1000"},
	"sources":         {kindMap, "a map from an assumption's key to where its value came from"},
	"primary_outcome": {kindText, "a line of text"},
	"first_group":     {kindText, "a line of text"},
	"second_group":    {kindText, "a line of text"},

	"unexposed_risk":        {kindNumber, "a probability in (0, 1)"},
	"exposed_risk":          {kindNumber, "a probability in (0, 1)"},
	"control_risk":          {kindNumber, "a probability in (0, 1)"},
	"intervention_risk":     {kindNumber, "a probability in (0, 1)"},
	"control_exposure":      {kindNumber, "a probability in (0, 1)"},
	"case_exposure":         {kindNumber, "a probability in (0, 1)"},
	"exposure_prevalence":   {kindNumber, "a probability in (0, 1)"},
	"unexposed_prevalence":  {kindNumber, "a probability in (0, 1)"},
	"exposed_prevalence":    {kindNumber, "a probability in (0, 1)"},
	"expected_prevalence":   {kindNumber, "a probability in (0, 1)"},
	"risk_ratio":            {kindNumber, "a number above 0"},
	"prevalence_ratio":      {kindNumber, "a number above 0"},
	"odds_ratio":            {kindNumber, "a number above 0"},
	"risk_difference":       {kindNumber, "a number in (-1, 1)"},
	"prevalence_difference": {kindNumber, "a number in (-1, 1)"},
	"margin":                {kindNumber, "a number in (0, 0.5)"},
	"confidence":            {kindNumber, "a number in [0.5, 1)"},
	"population":            {kindWhole, "a whole number of at least 2"},
}

// allKeys returns the specification keys in sorted order.
func allKeys() []string {
	keys := make([]string, 0, len(specKeys))
	for k := range specKeys {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

// Shared keys of every design and goal.
var commonKeys = []string{"version", "title", "design", "outcome", "solve", "method",
	"attrition", "design_effect", "sources", "primary_outcome"}

// comparisonKeys are shared by every two-group comparison.
var comparisonKeys = []string{"test", "alpha", "sides", "power", "first_group", "second_group"}

// designRoles names, for each two-group design, the reference-group key and
// the effect keys, in the order they are documented.
type designRoles struct {
	reference string   // risk (or exposure) in the second group
	effects   []string // exactly one of these gives the effect
	first     string   // default label of the first group
	second    string   // default label of the second group
	size      string   // "n" or "total"
	extra     []string // further keys of this design
}

var roles = map[string]designRoles{
	"cohort": {
		reference: "unexposed_risk",
		effects:   []string{"risk_ratio", "risk_difference", "odds_ratio", "exposed_risk"},
		first:     "exposed", second: "unexposed", size: "n",
		extra: []string{"ratio"},
	},
	"case-control": {
		reference: "control_exposure",
		effects:   []string{"odds_ratio", "case_exposure"},
		first:     "cases", second: "controls", size: "n",
		extra: []string{"ratio"},
	},
	"trial": {
		reference: "control_risk",
		effects:   []string{"risk_ratio", "risk_difference", "odds_ratio", "intervention_risk"},
		first:     "intervention arm", second: "control arm", size: "n",
		extra: []string{"ratio"},
	},
	"cross-sectional": {
		reference: "unexposed_prevalence",
		effects:   []string{"prevalence_ratio", "prevalence_difference", "odds_ratio", "exposed_prevalence"},
		first:     "exposed", second: "unexposed", size: "total",
		extra: []string{"goal", "exposure_prevalence"},
	},
}

// precisionKeys are the keys of a cross-sectional survey that estimates one
// prevalence.
var precisionKeys = []string{"goal", "total", "expected_prevalence", "margin", "confidence", "population"}

// keysFor returns the keys allowed for a design (and goal).
func keysFor(design, goal string) map[string]bool {
	ok := map[string]bool{}
	add := func(ks ...string) {
		for _, k := range ks {
			ok[k] = true
		}
	}
	add(commonKeys...)
	if design == "cross-sectional" && goal == "precision" {
		add(precisionKeys...)
		return ok
	}
	r := roles[design]
	add(comparisonKeys...)
	add(r.reference, r.size)
	add(r.effects...)
	add(r.extra...)
	return ok
}
