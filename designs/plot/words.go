package plot

import "strings"

// keyWords are the axis labels of the keys a plot may show, in the
// trade's words with their units.
var keyWords = map[string]string{
	"n":                             "participants enrolled (first group)",
	"n_second":                      "participants enrolled in the second group",
	"total":                         "participants enrolled",
	"power":                         "target power",
	"alpha":                         "significance level (alpha)",
	"ratio":                         "allocation ratio (second : first)",
	"attrition":                     "attrition (proportion lost)",
	"risk_ratio":                    "risk ratio",
	"odds_ratio":                    "odds ratio",
	"hazard_ratio":                  "hazard ratio",
	"rate_ratio":                    "rate ratio",
	"unexposed_rate":                "rate among the unexposed (events per unit of person-time)",
	"person_time":                   "person-time per participant",
	"overdispersion":                "overdispersion (negative binomial k)",
	"odds_ratio_per_sd":             "odds ratio per standard deviation of the exposure",
	"event_rate":                    "proportion with the outcome at the exposure's mean",
	"adjustment.r_squared":          "R² of the exposure on the covariates",
	"interim.looks":                 "analyses (interim looks and the final one)",
	"interim.rho":                   "ρ of the power spending function",
	"matching.controls_per_case":    "controls matched to each case",
	"matching.exposure_correlation": "correlation of exposure within matched sets",
	"risk_difference":               "risk difference",
	"mean_difference":               "difference in means",
	"sd":                            "standard deviation",
	"margin":                        "margin",
	"design_effect":                 "design effect",
	"expected_prevalence":           "expected prevalence (proportion)",
	"confidence":                    "confidence level",
	"exposure_prevalence":           "exposure prevalence (proportion)",
	"non_adherence":                 "non-adherence (proportion)",
	"contamination":                 "contamination (proportion)",
	"cluster.icc":                   "intracluster correlation",
	"cluster.size":                  "participants per cluster",
	"cluster.size_cv":               "cluster size (coefficient of variation)",
	"baseline_correlation":          "baseline correlation",
	"within_correlation":            "within-pair correlation",
	"accrual":                       "accrual (time units)",
	"follow_up":                     "follow-up (time units)",
	"dropout":                       "dropout (proportion per time unit)",
}

// Words names key in the words of an axis label: "risk ratio" for
// risk_ratio, the key with spaces for underscores and dots otherwise.
func Words(key string) string {
	if w, ok := keyWords[key]; ok {
		return w
	}
	w := strings.NewReplacer("_", " ", ".", " ").Replace(key)
	if strings.HasSuffix(key, "_risk") || strings.HasSuffix(key, "_prevalence") {
		w += " (proportion)"
	}
	return w
}
