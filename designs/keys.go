package designs

import (
	"math"
	"slices"
	"sort"
	"strings"

	"enough/power"
)

// kind is the YAML type a key takes.
type kind int

const (
	kindNumber kind = iota
	kindWhole
	kindText
	kindMap
	kindBool
)

// The named limits of a specification: each is stated in the key's
// allowed text, in the README's tables and in the error that refuses a
// value beyond it. They keep every number the engine derives (a hazard,
// a ratio of two risks, a standardised difference) finite and far from
// the edges of float64, and none of them excludes a study that could be
// run: with at most MaxSize participants in a group, a risk below MinRisk
// means less than one expected event.
const (
	// MinRisk bounds every risk, exposure, prevalence and survival
	// probability, given or derived: from MinRisk to 1 − MinRisk.
	MinRisk = 1e-9
	// MaxRatio bounds the allocation ratio and every effect stated as a
	// ratio (risk, prevalence, odds and hazard ratios): from 1/MaxRatio
	// to MaxRatio.
	MaxRatio = 1000.0
	// MinTime and MaxTime bound every time of a time-to-event plan, in
	// its own time unit (accrual and follow-up may also be 0).
	MinTime, MaxTime = 1e-6, 1e6
	// MaxStandardized bounds a difference of means, and a margin, in
	// standard deviations of the outcome.
	MaxStandardized = 100
	// MaxPower bounds the target power: 1 − 1e-9, so that (1 + power)/2,
	// which equivalence tests use, stays below 1.
	MaxPower = 1 - 1e-9
)

// inRisk says whether x is a risk within the named limits.
func inRisk(x float64) bool { return x >= MinRisk && x <= 1-MinRisk }

// inRatio says whether x is a ratio within the named limits.
func inRatio(x float64) bool { return x >= 1/MaxRatio && x <= MaxRatio }

// inTime says whether x is a time within the named limits.
func inTime(x float64) bool { return x >= MinTime && x <= MaxTime }

// inTime0 says whether x is 0 or a time within the named limits.
func inTime0(x float64) bool { return x == 0 || inTime(x) }

// The ranges of the other numeric keys, shared by the reader
// (validate.go) and a sweep's fast path (base.go), so that both accept
// exactly the same values.

// inAlpha is the range of alpha: from power.MinAlpha to 0.5.
func inAlpha(x float64) bool { return x >= power.MinAlpha && x <= 0.5 }

// inFraction0 is [0, 1): attrition, dropout, non_adherence, contamination,
// baseline_correlation and cluster.icc.
func inFraction0(x float64) bool { return x >= 0 && x < 1 }

// inOpen1 is (−1, 1): risk and prevalence differences, within_correlation.
func inOpen1(x float64) bool { return x > -1 && x < 1 }

// inDesignEffect is the range of design_effect: from 1 to 1000.
func inDesignEffect(x float64) bool { return x >= 1 && x <= 1000 }

// inConfidence is the range of a survey's confidence: [0.5, 1).
func inConfidence(x float64) bool { return x >= 0.5 && x < 1 }

// inSurveyMargin is the range of a survey's margin: (0, 0.5).
func inSurveyMargin(x float64) bool { return x > 0 && x < 0.5 }

// inPositive is a finite number above 0: standard deviations.
func inPositive(x float64) bool { return x > 0 && !math.IsInf(x, 0) }

// inClusterSize is the range of cluster.size: from 2 to 1,000,000.
func inClusterSize(x float64) bool { return x >= 2 && x <= 1e6 }

// inSizeCV is the range of cluster.size_cv: from 0 to 10.
func inSizeCV(x float64) bool { return x >= 0 && x <= 10 }

// Allowed texts of the named limits.
const (
	allowedRisk  = "a probability from 1e-9 to 1 − 1e-9"
	allowedRatio = "a number from 0.001 to 1000"
	allowedTime  = "a time from 1e-6 to 1e6"
	allowedTime0 = "0, or a time from 1e-6 to 1e6"
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
	"outcome":         {kindText, "binary, continuous, time-to-event or rate"},
	"goal":            {kindText, "comparison, precision or accuracy"},
	"solve":           {kindText, "n, power or effect"},
	"method":          {kindText, "a method of `enough methods` that serves the design"},
	"test":            {kindText, "chi-square, chi-square-yates, fisher or z-unpooled"},
	"alpha":           {kindNumber, "a number in [1e-20, 0.5]"},
	"sides":           {kindWhole, "1 or 2"},
	"power":           {kindNumber, "a number above alpha and at most 1 − 1e-9"},
	"n":               {kindWhole, "a whole number of at least 2"},
	"total":           {kindWhole, "a whole number of at least 2"},
	"n_second":        {kindWhole, "a whole number of at least 1"},
	"ratio":           {kindNumber, allowedRatio},
	"attrition":       {kindNumber, "a fraction in [0, 1)"},
	"design_effect":   {kindNumber, "a number from 1 to 1000"},
	"sources":         {kindMap, "a map from an assumption's key to where its value came from"},
	"primary_outcome": {kindText, "a line of text"},
	"first_group":     {kindText, "a line of text"},
	"second_group":    {kindText, "a line of text"},

	"unexposed_risk":        {kindNumber, allowedRisk},
	"exposed_risk":          {kindNumber, allowedRisk},
	"control_risk":          {kindNumber, allowedRisk},
	"intervention_risk":     {kindNumber, allowedRisk},
	"control_exposure":      {kindNumber, allowedRisk},
	"case_exposure":         {kindNumber, allowedRisk},
	"exposure_prevalence":   {kindNumber, allowedRisk},
	"unexposed_prevalence":  {kindNumber, allowedRisk},
	"exposed_prevalence":    {kindNumber, allowedRisk},
	"expected_prevalence":   {kindNumber, allowedRisk},
	"risk_ratio":            {kindNumber, allowedRatio},
	"prevalence_ratio":      {kindNumber, allowedRatio},
	"odds_ratio":            {kindNumber, allowedRatio},
	"risk_difference":       {kindNumber, "a number in (-1, 1)"},
	"prevalence_difference": {kindNumber, "a number in (-1, 1)"},
	"margin":                {kindNumber, "a positive number (a precision survey: in (0, 0.5); a trial: see margin in the README for each outcome and margin_scale)"},
	"confidence":            {kindNumber, "a number in [0.5, 1)"},
	"population":            {kindWhole, "a whole number of at least 2"},

	// Trials and continuous and time-to-event outcomes.
	"hypothesis":           {kindText, "superiority, non-inferiority or equivalence"},
	"higher_is_better":     {kindBool, "true or false"},
	"mean_difference":      {kindNumber, "a number (first group minus second), at most 100 standard deviations either way"},
	"intervention_mean":    {kindNumber, "a number"},
	"control_mean":         {kindNumber, "a number"},
	"exposed_mean":         {kindNumber, "a number"},
	"unexposed_mean":       {kindNumber, "a number"},
	"sd":                   {kindNumber, "a number above 0"},
	"sd_first":             {kindNumber, "a number above 0"},
	"sd_second":            {kindNumber, "a number above 0"},
	"sd_difference":        {kindNumber, "a number above 0"},
	"within_correlation":   {kindNumber, "a number in (-1, 1)"},
	"baseline_correlation": {kindNumber, "a number in [0, 1)"},
	"pairing":              {kindText, "paired or crossover"},
	"hazard_ratio":         {kindNumber, allowedRatio},
	"unexposed_rate":       {kindNumber, "events per unit of person-time among the unexposed, a number from 1e-9 to 1e6"},
	"rate_ratio":           {kindNumber, allowedRatio},
	"exposure":             {kindText, "groups or continuous"},
	"precision_ratio":      {kindNumber, "the ratio of the upper to the lower limit of the ratio's confidence interval, a number above 1 and at most 1000 (e.g. 2: the upper limit twice the lower)"},
	"sensitivity":          {kindNumber, allowedRisk},
	"specificity":          {kindNumber, allowedRisk},
	"condition_prevalence": {kindNumber, allowedRisk},
	"odds_ratio_per_sd":    {kindNumber, allowedRatio},
	"event_rate":           {kindNumber, allowedRisk},
	"person_time":          {kindNumber, "the person-time each participant is followed, in time_unit, " + allowedTime},
	"overdispersion":       {kindNumber, "k ≥ 0 of negative-binomial counts (variance μ + kμ²), at most 100; 0 for Poisson counts"},
	"control_median":       {kindNumber, allowedTime},
	"control_survival":     {kindNumber, allowedRisk},
	"time":                 {kindNumber, allowedTime},
	"accrual":              {kindNumber, allowedTime0},
	"follow_up":            {kindNumber, "0, or a time from 1e-6 to 1e6 (not 0 when there is no accrual)"},
	"dropout":              {kindNumber, "a fraction in [0, 1) lost per time unit"},
	"time_unit":            {kindText, "a word such as months or years"},
	"cluster":              {kindMap, "a map with size (mean cluster size, from 2 to 1,000,000), icc (in [0, 1)) and optionally size_cv (from 0 to 10)"},
	"non_adherence":        {kindNumber, "a fraction in [0, 1)"},
	"contamination":        {kindNumber, "a fraction in [0, 1)"},
	"arms":                 {kindWhole, "a whole number from 2 to 20"},
	"comparisons":          {kindText, "each-vs-control or all-pairs"},
	"direction":            {kindText, "first-higher or first-lower"},
	"margin_scale":         {kindText, "difference or ratio"},
	"matching":             {kindMap, "a map with controls_per_case (a whole number from 1 to 10) and optionally exposure_correlation (in [0, 1), default 0)"},
	"interim":              {kindMap, "a map with looks (2 to 10), boundary (pocock, obrien-fleming or spending), and optionally timing (the looks' information fractions), spending_function and rho"},
	"adjustment":           {kindMap, "a map with r_squared: the R² of the exposure regressed on the other covariates of the analysis, in [0, 1)"},
	"claimed":              {kindMap, "a map of what a protocol states, read by enough review: n, n_second or total, enrol_total, power, alpha, sides, method, events, clusters, tolerance_n, tolerance_power"},
	"simulate":             {kindMap, "a map with replicates (100 to 1e9), seed (a whole number from 0 to 2^53) and optionally n (the first group's size to simulate at)"},
}

// simulateKeys are the keys of the simulate map.
var simulateKeys = map[string]string{
	"replicates": "the number of simulated studies, a whole number from 100 to 1,000,000,000",
	"seed":       "the seed of the random numbers, a whole number from 0 to 2^53 (9,007,199,254,740,992)",
	"n":          "the first group's analysable size to simulate at, a whole number of at least 2 (default: the plan's)",
}

// clusterKeys are the keys of the cluster map.
var clusterKeys = map[string]string{
	"size":    "the mean number of participants per cluster, from 2 to 1,000,000",
	"icc":     "the intracluster correlation coefficient, in [0, 1)",
	"size_cv": "the coefficient of variation of cluster sizes, from 0 to 10",
}

// matchingKeys are the keys of the matching map of a matched case-control
// study.
var matchingKeys = map[string]string{
	"controls_per_case":    "the number of controls matched to each case, a whole number from 1 to 10",
	"exposure_correlation": "the correlation of exposure between a case and each of its matched controls, in [0, 1) (default 0)",
}

// adjustmentKeys are the keys of the adjustment map.
var adjustmentKeys = map[string]string{
	"r_squared": "the R² of the exposure regressed on the other covariates of the analysis, in [0, 1)",
}

// nestedKeys are the maps of keys, by the key that holds them (sources,
// whose keys are other keys, aside).
var nestedKeys = map[string]map[string]string{
	"cluster":    clusterKeys,
	"simulate":   simulateKeys,
	"claimed":    claimedKeys,
	"matching":   matchingKeys,
	"adjustment": adjustmentKeys,
	"interim":    interimKeys,
}

// numericMaps are the maps whose keys are numbers of the plan, in the
// order they are listed; a sweep varies them dotted (cluster.icc).
var numericMaps = []string{"adjustment", "cluster", "matching", "simulate"}

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
var commonKeys = []string{"version", "title", "design", "outcome", "solve", "method", "claimed",
	"attrition", "design_effect", "sources", "primary_outcome"}

// comparisonKeys are shared by every two-group comparison.
var comparisonKeys = []string{"test", "alpha", "sides", "power", "first_group", "second_group", "simulate", "direction"}

// designRoles names, for each two-group design, the reference-group key and
// the effect keys of a binary outcome, in the order they are documented.
type designRoles struct {
	reference string   // risk (or exposure) in the second group
	effects   []string // exactly one of these gives the effect
	first     string   // default label of the first group
	second    string   // default label of the second group
	size      string   // "n" or "total"
	extra     []string // further keys of this design
	// means names the first and second groups' mean keys ("" where a
	// continuous outcome does not apply).
	means [2]string
}

var roles = map[string]designRoles{
	"cohort": {
		reference: "unexposed_risk",
		effects:   []string{"risk_ratio", "risk_difference", "odds_ratio", "exposed_risk"},
		first:     "exposed", second: "unexposed", size: "n",
		extra: []string{"ratio"},
		means: [2]string{"exposed_mean", "unexposed_mean"},
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
		means: [2]string{"intervention_mean", "control_mean"},
	},
	"cross-sectional": {
		reference: "unexposed_prevalence",
		effects:   []string{"prevalence_ratio", "prevalence_difference", "odds_ratio", "exposed_prevalence"},
		first:     "exposed", second: "unexposed", size: "total",
		extra: []string{"goal", "exposure_prevalence"},
		means: [2]string{"exposed_mean", "unexposed_mean"},
	},
}

// precisionKeys are the keys of a cross-sectional survey that estimates one
// prevalence.
var precisionKeys = []string{"goal", "total", "expected_prevalence", "margin", "confidence", "population", "simulate"}

// selector is what decides which keys a specification may use.
type selector struct {
	design, goal, outcome, pairing, hypothesis string
	// matched says a case-control study has a matching block.
	matched bool
	// continuous says a binary outcome is related to a continuous
	// exposure (exposure: continuous).
	continuous bool
}

// keysFor returns the keys allowed for a selection of design, goal,
// outcome, pairing and hypothesis.
func keysFor(sel selector) map[string]bool {
	ok := map[string]bool{}
	add := func(ks ...string) {
		for _, k := range ks {
			ok[k] = true
		}
	}
	add(commonKeys...)
	if (sel.design == "cohort" || sel.design == "case-control") && sel.goal == "precision" {
		r := roles[sel.design]
		add("n", "n_second", "ratio", "precision_ratio", "confidence", "first_group", "second_group", "simulate", "goal", r.reference)
		add(r.effects...)
		delete(ok, "design_effect")
		return ok
	}
	if sel.design == "cross-sectional" && sel.goal == "accuracy" {
		add("total", "sensitivity", "specificity", "condition_prevalence", "margin", "confidence", "simulate", "goal")
		delete(ok, "design_effect")
		return ok
	}
	if sel.design == "cross-sectional" && sel.goal == "precision" {
		add(precisionKeys...)
		if sel.outcome == "continuous" {
			// A mean: its standard deviation in place of a prevalence.
			delete(ok, "expected_prevalence")
			add("sd")
		}
		return ok
	}
	r := roles[sel.design]
	add(comparisonKeys...)
	add(r.size)
	add(r.extra...)
	if r.size == "n" && sel.pairing != "paired" {
		add("n_second")
	}
	if sel.pairing == "paired" {
		// Each pair holds one of each group.
		delete(ok, "ratio")
	}
	if sel.matched {
		// Each case has its matched controls, and the sets are analysed
		// conditionally: no design effect.
		delete(ok, "ratio")
		delete(ok, "n_second")
		delete(ok, "design_effect")
	}
	if sel.outcome == "binary" && (sel.design == "cohort" || sel.design == "cross-sectional") {
		add("exposure")
	}
	if sel.continuous {
		// No groups: everyone is measured on the exposure.
		for _, k := range []string{"ratio", "n_second", "first_group", "second_group", "exposure_prevalence", "higher_is_better", r.reference} {
			delete(ok, k)
		}
		for _, k := range r.effects {
			delete(ok, k)
		}
		add("odds_ratio_per_sd", "event_rate", "adjustment")
		return ok
	}
	if sel.design == "trial" {
		add("hypothesis", "non_adherence", "contamination", "arms", "comparisons", "interim")
		if sel.hypothesis == "non-inferiority" || sel.hypothesis == "equivalence" {
			add("margin", "higher_is_better")
			if sel.outcome == "binary" {
				add("margin_scale")
			}
		}
	}
	switch sel.outcome {
	case "binary", "continuous":
		if sel.pairing == "" {
			add("adjustment")
		}
	}
	switch sel.outcome {
	case "binary":
		add(r.reference)
		add(r.effects...)
		if sel.design == "case-control" {
			add("matching")
		}
		if sel.design != "case-control" {
			add("higher_is_better")
		}
		if sel.design == "trial" {
			add("cluster")
		}
	case "continuous":
		add("mean_difference")
		add(r.means[0], r.means[1])
		if sel.design == "trial" || sel.design == "cohort" {
			add("pairing")
		}
		if sel.design == "trial" && sel.pairing == "" {
			add("cluster")
		}
		switch sel.pairing {
		case "":
			add("sd", "sd_first", "sd_second", "baseline_correlation")
		default:
			add("sd", "sd_difference", "within_correlation")
		}
	case "time-to-event":
		add("hazard_ratio", "control_median", "control_survival", "time",
			"accrual", "follow_up", "dropout", "time_unit")
		delete(ok, "attrition")
	case "rate":
		add("unexposed_rate", "rate_ratio", "person_time", "overdispersion", "time_unit")
	}
	return ok
}

// fractionKeys take a fraction (a probability, a proportion or a difference
// of two), so a value such as 20 was probably written as a percentage. A
// margin is a fraction too when it is a risk difference or a precision
// survey's half-width (see reader.isFraction).
var fractionKeys = map[string]bool{
	"alpha": true, "power": true, "attrition": true, "dropout": true,
	"non_adherence": true, "contamination": true, "confidence": true,
	"unexposed_risk": true, "exposed_risk": true, "control_risk": true,
	"intervention_risk": true, "control_exposure": true, "case_exposure": true,
	"exposure_prevalence": true, "unexposed_prevalence": true,
	"exposed_prevalence": true, "expected_prevalence": true,
	"control_survival": true, "risk_difference": true, "prevalence_difference": true,
	// Correlations are no fractions, but 50 is as surely a percentage.
	"baseline_correlation": true, "within_correlation": true, "cluster.icc": true,
}

// fractionRange returns what a fraction key accepts, so that a value read
// as a percentage is suggested only when it would be accepted. alpha is
// the level in force, which power must exceed (0 when not known).
func fractionRange(key string, alpha float64) func(float64) bool {
	switch key {
	case "alpha":
		return inAlpha
	case "power":
		return func(x float64) bool { return x > alpha && x <= MaxPower }
	case "confidence":
		return inConfidence
	case "attrition", "dropout", "non_adherence", "contamination", "baseline_correlation", "cluster.icc":
		return inFraction0
	case "risk_difference", "prevalence_difference", "within_correlation":
		return inOpen1
	}
	return inRisk
}

// ratioKeys take a ratio, which is a plain number and not a percentage.
var ratioKeys = map[string]bool{
	"ratio": true, "risk_ratio": true, "prevalence_ratio": true,
	"odds_ratio": true, "hazard_ratio": true, "rate_ratio": true,
}

// Roles a synonym may stand for; each becomes the key of a selection that
// plays it (see resolveRole).
const (
	roleReference  = "@reference"  // the second group's risk or prevalence
	roleFirst      = "@first"      // the first group's risk or prevalence
	roleRatio      = "@ratio"      // the effect as a ratio
	roleDifference = "@difference" // the effect as a difference
	roleSize       = "@size"       // the enrolment: n or total
	roleLoss       = "@loss"       // attrition, or dropout in time-to-event plans
	roleAllocation = "@allocation" // ratio, or exposure_prevalence in surveys
	roleControls   = "@controls"   // ratio of a case-control study
)

// synonyms maps words of the trade that are not keys of this selection to
// the key, or the role of a key, they usually mean. Keys of one selection
// may be synonyms in another (n in a survey is total).
var synonyms = map[string]string{
	"baseline_risk": roleReference, "p0": roleReference, "reference_risk": roleReference,
	"control_rate": roleReference, "control_event_rate": roleReference,
	"background_risk": roleReference, "baseline_prevalence": roleReference,
	"control_prevalence": roleReference,

	"p1": roleFirst, "treatment_risk": roleFirst, "experimental_risk": roleFirst,
	"exposed_rate": roleFirst, "treatment_rate": roleFirst,

	"relative_risk": roleRatio, "rr": roleRatio, "risk_ratio": roleRatio,
	"prevalence_ratio": roleRatio, "or": "odds_ratio", "hr": "hazard_ratio",

	"difference": roleDifference, "delta": roleDifference,
	"risk_difference": roleDifference, "prevalence_difference": roleDifference,
	"absolute_difference": roleDifference,

	"n": roleSize, "total": roleSize, "sample_size": roleSize,
	"size": roleSize, "n_per_group": roleSize, "group_size": roleSize,

	"dropout": roleLoss, "attrition": roleLoss, "drop_out": roleLoss,
	"loss_to_follow_up": roleLoss, "lost_to_follow_up": roleLoss,
	"non_response": roleLoss, "nonresponse": roleLoss, "withdrawal": roleLoss,

	"allocation": roleAllocation, "allocation_ratio": roleAllocation,

	"controls_per_case": roleControls, "control_case_ratio": roleControls,
	"control_to_case_ratio": roleControls,

	"exposure_in_controls": "control_exposure", "exposure_in_cases": "case_exposure",

	"non_compliance": "non_adherence", "noncompliance": "non_adherence",
	"nonadherence": "non_adherence",

	"seed": "simulate.seed", "random_seed": "simulate.seed",
	"replicates": "simulate.replicates", "replications": "simulate.replicates",
	"simulations": "simulate.replicates", "n_simulations": "simulate.replicates",

	"icc": "cluster.icc", "intracluster_correlation": "cluster.icc",
	"cluster_size": "cluster.size",

	"significance": "alpha", "significance_level": "alpha", "type_i_error": "alpha",

	"deff": "design_effect",

	"precision": "margin", "half_width": "margin", "margin_of_error": "margin",

	"confidence_level": "confidence",

	"prevalence": "expected_prevalence", "expected_proportion": "expected_prevalence",

	"sigma": "sd", "standard_deviation": "sd", "stdev": "sd", "std_dev": "sd",

	"tails": "sides", "sided": "sides", "two_sided": "sides", "one_sided": "sides",
	"twosided": "sides", "onesided": "sides",

	"median_survival": "control_median", "median": "control_median",

	"recruitment_period": "accrual", "accrual_period": "accrual",
}

// resolveRole turns a synonym's role into the key of the selection that
// plays it, or "" when none does.
func resolveRole(role string, sel selector) string {
	if !strings.HasPrefix(role, "@") {
		return role
	}
	precision := sel.design == "cross-sectional" && sel.goal == "precision"
	ro, known := roles[sel.design]
	if !known {
		return ""
	}
	scaled := func(sc Scale) string {
		for _, k := range ro.effects {
			if scaleOf(k) == sc {
				return k
			}
		}
		return ""
	}
	switch role {
	case roleReference:
		switch {
		case precision:
			return "expected_prevalence"
		case sel.outcome == "binary":
			return ro.reference
		}
	case roleFirst:
		if !precision && sel.outcome == "binary" {
			return ro.effects[len(ro.effects)-1]
		}
	case roleRatio:
		switch {
		case precision:
		case sel.outcome == "time-to-event":
			return "hazard_ratio"
		case sel.outcome == "binary" && scaled(ScaleRatio) != "":
			return scaled(ScaleRatio)
		case sel.outcome == "binary":
			return scaled(ScaleOdds)
		}
	case roleDifference:
		switch {
		case precision:
		case sel.outcome == "continuous":
			return "mean_difference"
		case sel.outcome == "binary":
			return scaled(ScaleDifference)
		}
	case roleSize:
		if precision {
			return "total"
		}
		return ro.size
	case roleLoss:
		if sel.outcome == "time-to-event" && !precision {
			return "dropout"
		}
		return "attrition"
	case roleAllocation:
		if sel.design == "cross-sectional" {
			return "exposure_prevalence"
		}
		return "ratio"
	case roleControls:
		if sel.design == "case-control" {
			return "ratio"
		}
	}
	return ""
}

// suggestKey returns the key that word (unknown, or not of this selection)
// most likely stands for: the same key in other letter case, the trade's
// synonym, or the key of this design that plays the same role (typos are
// nearest's). sel is nil when the selection is not known. Only a key that
// allowed accepts and given does not hold yet is suggested (a nested key
// such as cluster.icc when its map is allowed), so that following the
// suggestion never leads to the next refusal. It returns "" when nothing
// fits, or when word is too long to be a typo of a key.
func suggestKey(word string, sel *selector, allowed, given map[string]bool) string {
	if len(word) > maxSuggestLen {
		return ""
	}
	norm := wordKey(word)
	fits := func(k string) bool {
		if k == "" || k == word || given[k] {
			return false
		}
		if head, _, nested := strings.Cut(k, "."); nested {
			return allowed[head]
		}
		return allowed[k]
	}
	if fits(norm) {
		return norm
	}
	if role, ok := synonyms[norm]; ok && sel != nil {
		if k := resolveRole(role, *sel); fits(k) {
			return k
		}
	}
	if sel != nil {
		if k, ok := counterpart(norm, sel.design); ok && fits(k) {
			return k
		}
	}
	return ""
}

// exclusive returns the keys of selection sel that cannot be given together
// with key, and the noun for what either of them gives ("the effect"):
// suggesting key where one of them is given would only lead to the next
// refusal.
func exclusive(key string, sel selector) (noun string, others []string) {
	ro := roles[sel.design]
	without := func(ks []string) []string {
		var out []string
		for _, k := range ks {
			if k != key {
				out = append(out, k)
			}
		}
		return out
	}
	head, _, _ := strings.Cut(key, ".")
	switch {
	case sel.outcome == "binary" && slices.Contains(ro.effects, key):
		return "the effect", without(ro.effects)
	case sel.outcome == "continuous" && key == "mean_difference":
		return "the effect", []string{ro.means[0], ro.means[1]}
	case sel.outcome == "continuous" && (key == ro.means[0] || key == ro.means[1]) && key != "":
		return "the effect", []string{"mean_difference"}
	case sel.outcome == "continuous" && sel.pairing == "" && key == "sd":
		return "the standard deviation", []string{"sd_first", "sd_second"}
	case sel.outcome == "continuous" && sel.pairing == "" && (key == "sd_first" || key == "sd_second"):
		return "the standard deviation", []string{"sd"}
	case sel.outcome == "continuous" && sel.pairing != "" && key == "sd_difference":
		return "the standard deviation", []string{"sd", "within_correlation"}
	case sel.outcome == "continuous" && sel.pairing != "" && (key == "sd" || key == "within_correlation"):
		return "the standard deviation", []string{"sd_difference"}
	case sel.outcome == "time-to-event" && key == "control_median":
		return "the control arm's survival", []string{"control_survival", "time"}
	case sel.outcome == "time-to-event" && (key == "control_survival" || key == "time"):
		return "the control arm's survival", []string{"control_median"}
	case key == "ratio":
		return "the allocation", []string{"n_second"}
	case key == "n_second":
		return "the allocation", []string{"ratio"}
	case head == "cluster":
		return "the design effect", []string{"design_effect"}
	case key == "design_effect":
		return "the design effect", []string{"cluster"}
	}
	return "", nil
}

// valueWords maps the trade's other words for a value of a text key to the
// value enough takes (outcome: survival is time-to-event). The words are
// written in lower case with underscores (see wordKey).
var valueWords = map[string]map[string]string{
	"design": {
		"rct": "trial", "randomised_trial": "trial", "randomized_trial": "trial",
		"randomised_controlled_trial": "trial", "randomized_controlled_trial": "trial",
		"controlled_trial": "trial", "clinical_trial": "trial",
		"cohort_study": "cohort", "prospective_cohort": "cohort",
		"case_control_study": "case-control", "casecontrol": "case-control",
		"cross_sectional_survey": "cross-sectional", "crosssectional": "cross-sectional",
		"prevalence_survey": "cross-sectional",
	},
	"outcome": {
		"survival": "time-to-event", "time_to_event": "time-to-event", "tte": "time-to-event",
		"event_time": "time-to-event", "survival_time": "time-to-event",
		"dichotomous": "binary", "binomial": "binary", "proportion": "binary", "yes_no": "binary",
		"numeric": "continuous", "normal": "continuous", "quantitative": "continuous",
		"mean": "continuous", "means": "continuous",
	},
	"pairing": {"matched": "paired", "pairs": "paired", "cross_over": "crossover"},
	"hypothesis": {
		"noninferiority": "non-inferiority", "non_inferior": "non-inferiority", "ni": "non-inferiority",
		"equivalent": "equivalence", "superior": "superiority",
	},
	"sides": {
		"two": "2", "two_sided": "2", "twosided": "2", "2_sided": "2", "both": "2",
		"one": "1", "one_sided": "1", "onesided": "1", "1_sided": "1",
	},
}

// wordKey writes a word as the keys of valueWords and synonyms are
// written: lower case, with underscores for spaces and hyphens.
func wordKey(word string) string {
	return strings.NewReplacer("-", "_", " ", "_").Replace(strings.ToLower(strings.TrimSpace(word)))
}
