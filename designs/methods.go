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
	// Outcome is the outcome the method serves ("" means binary).
	Outcome string
	// Hypotheses lists the hypotheses it serves (nil means superiority).
	Hypotheses []string
	// DefaultTest is the planned analysis assumed unless `test:` says
	// otherwise ("" when there is no test).
	DefaultTest string
	// Note is a line for `enough methods`.
	Note string
	// Matched says the method serves matched case-control sets (the
	// matching block) and only them; PairsOnly that it serves one control
	// per case only.
	Matched, PairsOnly bool
	// Continuous says the method serves a binary outcome related to a
	// continuous exposure (exposure: continuous), and only that.
	Continuous bool

	engine power.Method
	margin power.MarginMethod
	means  power.MeansMethod
	events power.EventsMethod
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
		ID: "dupont", Short: "Dupont 1988", Name: "Dupont, matched sets",
		Citation:    "Dupont WD (1988). Power calculations for matched case-control studies. Biometrics 44:1157-1168",
		Designs:     []string{"case-control"},
		Matched:     true,
		DefaultTest: "mantel-haenszel",
		Note:        "the default for matched case-control studies: one case and 1 to 10 controls per set, exposure correlated within sets; the conditional (Mantel-Haenszel) test stratified by set, which for one control per case is McNemar's test (test mcnemar)",
	},
	{
		ID: "connor", Short: "Connor 1987", Name: "Connor, matched pairs",
		Citation:    "Connor RJ (1987). Sample size for testing differences in proportions for the paired-sample design. Biometrics 43:207-211",
		Designs:     []string{"case-control"},
		Matched:     true,
		PairsOnly:   true,
		DefaultTest: "mcnemar",
		Note:        "one control per case: McNemar's test, unconditional on the number of discordant pairs",
	},
	{
		ID: "schlesselman-pairs", Short: "Schlesselman 1982", Name: "Schlesselman, discordant pairs",
		Citation:    "Schlesselman JJ (1982). Case-Control Studies: Design, Conduct, Analysis. Oxford University Press, chapter 6",
		Designs:     []string{"case-control"},
		Matched:     true,
		PairsOnly:   true,
		DefaultTest: "mcnemar",
		Note:        "one control per case: the discordant pairs McNemar's test needs, divided by the probability of discordance with exposures independent within pairs (ignores exposure_correlation)",
	},
	{
		ID: "exact", Short: "exact enumeration", Name: "exact power by enumeration of both binomial counts",
		Citation:    "Suissa S, Shuster JJ (1985). Exact unconditional sample sizes for the 2x2 binomial trial. J R Stat Soc A 148:317-327 (enumeration of both binomial counts for a given test)",
		Designs:     []string{"cohort", "case-control", "trial", "cross-sectional"},
		Goal:        "comparison",
		DefaultTest: "fisher",
		Note:        "no approximation: the power of the planned test summed over every pair of counts; n searched around the closed form (saw-tooth reported)",
		engine:      power.FleissCC,
	},
	{
		ID: "farrington-manning", Short: "Farrington & Manning 1990", Name: "Farrington-Manning score method",
		Citation:    "Farrington CP, Manning G (1990). Test statistics and sample size formulae for comparative binomial trials with null hypothesis of non-zero risk difference or non-unity relative risk. Stat Med 9:1447-1454",
		Designs:     []string{"trial"},
		Hypotheses:  []string{"non-inferiority", "equivalence"},
		DefaultTest: "score",
		Note:        "non-inferiority and equivalence of two risks, with a margin on the difference or the ratio scale; variance under the margin from the restricted maximum-likelihood risks",
		margin:      power.FarringtonManning,
	},
	{
		ID: "blackwelder", Short: "Blackwelder 1982", Name: "Blackwelder (Wald)",
		Citation:    "Blackwelder WC (1982). \"Proving the null hypothesis\" in clinical trials. Control Clin Trials 3:345-353",
		Designs:     []string{"trial"},
		Hypotheses:  []string{"non-inferiority", "equivalence"},
		DefaultTest: "z-unpooled",
		Note:        "non-inferiority and equivalence of two risks with the unpooled (Wald) variance",
		margin:      power.Blackwelder,
	},
	{
		ID: "t", Short: "Lenth 1989", Name: "t test, exact power from the noncentral t distribution",
		Citation:    "Owen DB (1965). A special case of a bivariate non-central t-distribution. Biometrika 52:437-446; Lenth RV (1989). Algorithm AS 243: cumulative distribution function of the non-central t distribution. Appl Stat 38:185-189",
		Designs:     []string{"cohort", "trial", "cross-sectional"},
		Goal:        "comparison",
		Outcome:     "continuous",
		Hypotheses:  []string{"superiority", "non-inferiority", "equivalence"},
		DefaultTest: "t-student",
		Note:        "the default for means; both tails of a two-sided test; two one-sided tests integrated exactly for equivalence",
		means:       power.T,
	},
	{
		ID: "z", Short: "Chow, Shao & Wang 2008", Name: "normal approximation for means",
		Citation:    "Chow SC, Shao J, Wang H (2008). Sample Size Calculations in Clinical Research, 2nd ed. Chapman & Hall, chapter 3",
		Designs:     []string{"cohort", "trial", "cross-sectional"},
		Goal:        "comparison",
		Outcome:     "continuous",
		Hypotheses:  []string{"superiority", "non-inferiority", "equivalence"},
		DefaultTest: "t-student",
		Note:        "z in place of t: slightly smaller than the t answer at small sizes",
		means:       power.Z,
	},
	{
		ID: "schoenfeld", Short: "Schoenfeld 1983", Name: "Schoenfeld",
		Citation:    "Schoenfeld DA (1983). Sample-size formula for the proportional-hazards regression model. Biometrics 39:499-503",
		Designs:     []string{"trial"},
		Outcome:     "time-to-event",
		Hypotheses:  []string{"superiority", "non-inferiority", "equivalence"},
		DefaultTest: "log-rank",
		Note:        "events for a hazard ratio under proportional hazards (non-inferiority and equivalence with a log hazard-ratio margin); the default for time-to-event outcomes",
		events:      power.Schoenfeld,
	},
	{
		ID: "freedman", Short: "Freedman 1982", Name: "Freedman",
		Citation:    "Freedman LS (1982). Tables of the number of patients required in clinical trials using the logrank test. Stat Med 1:121-129",
		Designs:     []string{"trial"},
		Outcome:     "time-to-event",
		DefaultTest: "log-rank",
		Note:        "events from the expected log-rank statistic; a few more than Schoenfeld",
		events:      power.Freedman,
	},
	{
		ID: "hsieh", Short: "Hsieh, Bloch & Larsen 1998", Name: "Hsieh, logistic regression with a continuous exposure",
		Citation:    "Hsieh FY, Bloch DA, Larsen MD (1998). A simple method of sample size calculation for linear and logistic regression. Stat Med 17:1623-1634; Hsieh FY (1989). Sample size tables for logistic regression. Stat Med 8:795-802",
		Designs:     []string{"cohort", "cross-sectional"},
		Goal:        "comparison",
		Continuous:  true,
		DefaultTest: "logistic-wald",
		Note:        "a binary outcome and one normally distributed exposure (exposure: continuous): n = (z_α + z_β)² / (P(1 − P) β²), β the log odds ratio per SD, P the event rate at the exposure's mean; with adjustment, divided by 1 − R²",
	},
	{
		ID: "log-rate-ratio", Short: "Breslow & Day 1987", Name: "Wald test on the log rate ratio",
		Citation:    "Breslow NE, Day NE (1987). Statistical Methods in Cancer Research, vol. II: The Design and Analysis of Cohort Studies. IARC Scientific Publications 82, Lyon, chapter 7; Zhu H, Lakkis H (2014). Sample size calculation for comparing two negative binomial rates. Stat Med 33:376-387",
		Designs:     []string{"cohort"},
		Outcome:     "rate",
		DefaultTest: "wald-rate",
		Note:        "events over person-time: Poisson counts, or negative-binomial with overdispersion (the Wald variance under the null and the alternative alike)",
	},
	{
		ID: "wald", Short: "Cochran 1977", Name: "Wald interval (normal approximation)",
		Citation:    "Cochran WG (1977). Sampling Techniques, 3rd ed. Wiley, chapter 4",
		Designs:     []string{"cross-sectional"},
		Goal:        "precision",
		DefaultTest: "",
		Note:        "size to estimate one prevalence within a margin; finite population correction and design effect",
	},
	{
		ID: "katz", Short: "Katz et al. 1978", Name: "Katz, log risk ratio interval",
		Citation:    "Katz D, Baptista J, Azen SP, Pike MC (1978). Obtaining confidence intervals for the risk ratio in cohort studies. Biometrics 34:469-474",
		Designs:     []string{"cohort"},
		Goal:        "precision",
		DefaultTest: "",
		Note:        "a risk ratio estimated to a stated precision (upper over lower limit of its log-scale Wald interval): n1 = z² ((1 − p1)/p1 + (1 − p2)/(r p2)) / (ln ρ / 2)²",
	},
	{
		ID: "woolf", Short: "Woolf 1955", Name: "Woolf, log odds ratio interval",
		Citation:    "Woolf B (1955). On estimating the relation between blood group and disease. Ann Hum Genet 19:251-253",
		Designs:     []string{"case-control"},
		Goal:        "precision",
		DefaultTest: "",
		Note:        "an odds ratio estimated to a stated precision (upper over lower limit of its log-scale Wald interval): n1 = z² (1/(p1 q1) + 1/(r p0 q0)) / (ln ρ / 2)²",
	},
	{
		ID: "buderer", Short: "Buderer 1996", Name: "Buderer, sensitivity and specificity to a margin",
		Citation:    "Buderer NMF (1996). Statistical methodology: I. Incorporating the prevalence of disease into the sample size calculation for sensitivity and specificity. Acad Emerg Med 3:895-900",
		Designs:     []string{"cross-sectional"},
		Goal:        "accuracy",
		DefaultTest: "",
		Note:        "the participants to estimate sensitivity and specificity within a margin (Wald intervals), given the prevalence of the condition: the larger of z² Se(1 − Se)/(margin² prevalence) and z² Sp(1 − Sp)/(margin² (1 − prevalence))",
	},
	{
		ID: "t-interval", Short: "Student 1908", Name: "t interval for a mean",
		Citation:    "Student (1908). The probable error of a mean. Biometrika 6:1-25",
		Designs:     []string{"cross-sectional"},
		Goal:        "precision",
		Outcome:     "continuous",
		DefaultTest: "",
		Note:        "the smallest n ≥ 2 with t(1 − α/2, n − 1) × sd / √n at most the margin, found by iterating on n from the normal answer",
	},
	{
		ID: "wilson", Short: "Wilson 1927", Name: "Wilson score interval",
		Citation:    "Wilson EB (1927). Probable inference, the law of succession, and statistical inference. J Am Stat Assoc 22:209-212",
		Designs:     []string{"cross-sectional"},
		Goal:        "precision",
		DefaultTest: "",
		Note:        "the smallest n whose Wilson interval at the expected count n × p has half-width at most the margin; sound near 0 and 1, where the Wald interval is not",
	},
	{
		ID: "clopper-pearson", Short: "Clopper & Pearson 1934", Name: "Clopper-Pearson (exact) interval",
		Citation:    "Clopper CJ, Pearson ES (1934). The use of confidence or fiducial limits illustrated in the case of the binomial. Biometrika 26:404-413",
		Designs:     []string{"cross-sectional"},
		Goal:        "precision",
		DefaultTest: "",
		Note:        "the smallest n whose Clopper-Pearson interval (beta quantiles, the expected count n × p need not be whole) has half-width at most the margin; conservative",
	},
}

// servesSpec says whether the method serves the specification: its
// design, goal, outcome and hypothesis, and its matching.
func (m MethodInfo) servesSpec(s *Spec) bool {
	if m.Matched != s.Matched || (m.PairsOnly && s.Controls != 1) || m.Continuous != s.ContinuousExposure {
		return false
	}
	return m.serves(s.Design, s.Goal, s.Outcome, s.Hypothesis)
}

func (m MethodInfo) serves(design, goal, outcome, hypothesis string) bool {
	if orDefault(m.Goal, "comparison") != orDefault(goal, "comparison") {
		return false
	}
	if orDefault(m.Outcome, "binary") != orDefault(outcome, "binary") {
		return false
	}
	hyps := m.Hypotheses
	if hyps == nil {
		hyps = []string{"superiority"}
	}
	ok := false
	for _, h := range hyps {
		ok = ok || h == orDefault(hypothesis, "superiority")
	}
	if !ok {
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
	case "score":
		return "the Farrington-Manning score test"
	case "t-student":
		return "Student's t test"
	case "t-welch":
		return "Welch's t test"
	case "t-paired":
		return "the paired t test"
	case "log-rank":
		return "the log-rank test"
	case "cluster-t":
		return "a t test on cluster summaries"
	case "wald-rate":
		return "the Wald test of the log rate ratio"
	case "mcnemar":
		return "McNemar's test"
	case "mantel-haenszel":
		return "the Mantel-Haenszel test stratified by matched set"
	case "logistic-wald":
		return "the Wald test of the exposure's coefficient in a logistic regression"
	case "t-regression":
		return "the t test of the exposure's coefficient in a linear regression"
	}
	return test
}
