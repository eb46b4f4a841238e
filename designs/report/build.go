package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"enough/designs"
)

// keyLabels are the human names of the specification's keys that do not
// depend on the groups or the outcome (see keyLabel).
var keyLabels = map[string]string{
	"alpha": "alpha", "sides": "sides", "power": "target power",
	"ratio":     "allocation (second group per first)",
	"attrition": "attrition (fraction lost)", "design_effect": "design effect",
	"odds_ratio": "odds ratio", "expected_prevalence": "expected prevalence",
	"margin": "margin (half-width of the interval)", "confidence": "confidence level",
	"population":      "population size",
	"mean_difference": "difference in means", "sd": "standard deviation",
	"sd_difference": "standard deviation of the differences", "within_correlation": "correlation between the two measurements",
	"baseline_correlation": "correlation with the baseline", "hazard_ratio": "hazard ratio",
	"arms": "arms", "higher_is_better": "higher values of the outcome are better",
	"hypothesis": "hypothesis", "pairing": "pairing", "comparisons": "comparisons",
	"cluster.size": "mean cluster size", "cluster.icc": "intracluster correlation (ICC)",
	"cluster.size_cv":               "coefficient of variation of cluster sizes",
	"adjustment.r_squared":          "R² of the exposure on the adjustment covariates",
	"interim.looks":                 "analyses, interim looks and the final one",
	"interim.timing":                "information fractions of the analyses",
	"interim.rho":                   "ρ of the power spending function",
	"interim.boundary":              "efficacy boundary",
	"interim.spending_function":     "alpha-spending function",
	"matching.controls_per_case":    "controls matched to each case",
	"unexposed_rate":                "rate among the unexposed (events per unit of person-time)",
	"exposure":                      "exposure",
	"sensitivity":                   "expected sensitivity",
	"precision_ratio":               "upper over lower limit of the interval (target)",
	"specificity":                   "expected specificity",
	"condition_prevalence":          "prevalence of the condition among those tested",
	"event_rate":                    "proportion with the outcome at the exposure's mean",
	"odds_ratio_per_sd":             "odds ratio per standard deviation of the exposure",
	"rate_ratio":                    "rate ratio",
	"person_time":                   "person-time per participant",
	"overdispersion":                "overdispersion (negative binomial k)",
	"matching.exposure_correlation": "correlation of exposure within matched sets",
}

// keyLabel returns the human name of a specification key, in the words of
// this result: its group labels and its outcome's measure.
func keyLabel(r *designs.Result, k string) string {
	f, g := groupsOf(r)
	v := vocabOf(r)
	unit := ""
	if r.Spec != nil {
		unit = r.Spec.TimeUnit
	}
	switch k {
	case "attrition":
		if r.Design == "cross-sectional" {
			return "non-response (fraction)"
		}
	case "unexposed_risk", "control_risk", "unexposed_prevalence":
		return v.noun + ", " + g.label
	case "exposed_risk", "intervention_risk", "exposed_prevalence":
		return v.noun + ", " + f.label
	case "control_exposure":
		return "exposure, " + g.label
	case "case_exposure":
		return "exposure, " + f.label
	case "exposure_prevalence":
		return "share of those surveyed, " + f.label
	case "risk_ratio", "prevalence_ratio":
		return v.ratio
	case "risk_difference", "prevalence_difference":
		return v.diff
	case "n":
		if r.Spec != nil && r.Spec.Pairing == "paired" {
			return "pairs enrolled"
		}
		return "enrolment, " + f.label
	case "n_second":
		return "enrolment, " + g.label
	case "total":
		if r.Goal == "precision" {
			return "people invited"
		}
		return "people surveyed"
	case "intervention_mean", "exposed_mean":
		return "mean, " + f.label
	case "control_mean", "unexposed_mean":
		return "mean, " + g.label
	case "sd_first":
		return "standard deviation, " + f.label
	case "sd_second":
		return "standard deviation, " + g.label
	case "control_median":
		return "median survival, " + g.label + " (" + plural(unit) + ")"
	case "control_survival":
		return "survival at the time below, " + g.label
	case "time":
		return "time of that survival (" + plural(unit) + ")"
	case "accrual":
		return "accrual period (" + plural(unit) + ")"
	case "follow_up":
		return "follow-up after the last entry (" + plural(unit) + ")"
	case "dropout":
		return "dropout per " + singular(unit)
	case "non_adherence":
		return "non-adherence, " + f.label
	case "contamination":
		return "contamination, " + g.label
	}
	if l, ok := keyLabels[k]; ok {
		return l
	}
	return k
}

func sidesWord(sides int) string {
	if sides == 1 {
		return "one-sided"
	}
	return "two-sided"
}

// source returns " (source: ...)" for a key with a source, and for a key
// overridden on the command line says so, with what the file gave.
func source(r *designs.Result, key string) string {
	if s := provenance(r, key); s != "" {
		return " (" + s + ")"
	}
	return ""
}

// provenance says where a key's value came from: "source: …", or that it
// was set on the command line in place of the file's value and source.
func provenance(r *designs.Result, key string) string {
	src := r.Spec.Sources[key]
	fv, over := r.Spec.Overridden[key]
	if !over {
		if src != "" {
			return "source: " + src
		}
		return ""
	}
	out := "set on the command line"
	switch {
	case fv.Value != "" && fv.Source != "":
		out += fmt.Sprintf("; the specification gave %s, from %s", fv.Value, fv.Source)
	case fv.Value != "":
		out += fmt.Sprintf("; the specification gave %s", fv.Value)
	}
	if src != "" {
		out += "; source: " + src
	}
	return out
}

// build turns a result into the document shared by Markdown and text.
func build(r *designs.Result) *document {
	d := &document{title: r.Title}
	what := studyKind(r)
	solved := map[string]string{"n": "sample size", "power": "power", "effect": "smallest detectable effect"}[r.Solve]
	if r.Goal == "precision" && r.Solve == "effect" {
		solved = "achievable precision"
	}
	d.subtitle = fmt.Sprintf("%s plan for %s %s, %s", capitalise(solved), article(what), what, outcomeWords(r))

	d.sections = append(d.sections, section{heading: "Justification for the protocol", paras: []string{paragraph(r)}})
	d.sections = append(d.sections, assumptionSection(r))
	d.sections = append(d.sections, answerSection(r))
	if e := effectSection(r); e != nil {
		d.sections = append(d.sections, *e)
	}
	if e := interimSection(r); e != nil {
		d.sections = append(d.sections, *e)
	}
	if len(r.Alternatives) > 0 {
		d.sections = append(d.sections, alternativeSection(r))
	}
	if e := exactSection(r); e != nil {
		d.sections = append(d.sections, *e)
	}
	if v := simulationSection(r); v != nil {
		d.sections = append(d.sections, *v)
	}
	if len(r.Warnings) > 0 {
		d.sections = append(d.sections, section{heading: "Warnings", bullets: sentences(r.Warnings)})
	}
	if len(r.Notes) > 0 {
		d.sections = append(d.sections, section{heading: "Notes", bullets: sentences(r.Notes)})
	}
	d.sections = append(d.sections, stepsSection(r))
	d.sections = append(d.sections, section{heading: "Cautions", bullets: r.Cautions})
	d.sections = append(d.sections, referenceSection(r))

	spec := r.SpecFile
	d.footer = append(d.footer, fmt.Sprintf("%s %s · specification %s · SHA-256 %s", r.Tool, r.Version, spec, r.SpecSHA256))
	if len(r.Overrides) > 0 {
		d.footer = append(d.footer, "overridden on the command line: "+strings.Join(r.Overrides, ", "))
	}
	return d
}

// outcomeWords names the plan's outcome in a subtitle: "binary outcome",
// "events over person-time".
func outcomeWords(r *designs.Result) string {
	switch {
	case r.Goal == "accuracy":
		return "sensitivity and specificity"
	case r.Goal == "precision" && r.Design == "cohort":
		return "a risk ratio to a stated precision"
	case r.Goal == "precision" && r.Design == "case-control":
		return "an odds ratio to a stated precision"
	case r.Outcome == "rate":
		return "events over person-time"
	case r.Spec != nil && r.Spec.ContinuousExposure:
		return "binary outcome and a continuous exposure"
	}
	return r.Outcome + " outcome"
}

// studyKind names the kind of study planned: "parallel-group randomised
// trial", "cluster-randomised trial", "cohort study".
func studyKind(r *designs.Result) string {
	switch {
	case r.Spec.Pairing == "crossover":
		return "two-period crossover trial"
	case r.Spec.Pairing == "paired" && r.Design == "trial":
		return "paired randomised trial"
	case r.Spec.Pairing == "paired":
		return "paired (before-after or matched) study"
	case r.Spec.Matched:
		return fmt.Sprintf("matched case-control study (1:%d matched sets)", r.Spec.Controls)
	case r.Goal == "accuracy":
		return "study of diagnostic accuracy"
	case r.Spec.Cluster != nil:
		return "cluster-randomised trial"
	}
	return designKinds[r.Design]
}

// designKinds names each design as a kind of study.
var designKinds = map[string]string{"cohort": "cohort study", "case-control": "unmatched case-control study",
	"trial": "parallel-group randomised trial", "cross-sectional": "cross-sectional survey"}

// sentences returns warnings or notes as full sentences: a capital first
// and a full stop last. The messages are written so already; this keeps a
// line that is not (such as a reason a key is ignored) from reaching the
// reader as a fragment.
func sentences(lines []string) []string {
	out := make([]string, len(lines))
	for i, l := range lines {
		out[i] = designs.Sentence(l)
	}
	return out
}

// capitalise puts the first letter in upper case (any alphabet).
func capitalise(s string) string {
	if s == "" {
		return s
	}
	c, n := utf8.DecodeRuneInString(s)
	return string(unicode.ToUpper(c)) + s[n:]
}

func assumptionSection(r *designs.Result) section {
	rows := [][]string{{"Assumption", "Key", "Value", "Source"}}
	for _, a := range r.Assumptions {
		src := provenance(r, a.Key)
		src = strings.TrimPrefix(src, "source: ")
		if src == "" {
			src = "not stated"
		}
		label := keyLabel(r, a.Key)
		if a.Key == "margin" && r.Goal != "precision" && r.Goal != "accuracy" {
			label = r.Spec.Hypothesis + " margin"
		}
		rows = append(rows, []string{label, "`" + a.Key + "`", a.Value, src})
	}
	s := section{heading: "Assumptions", table: rows}
	var defaults []string
	has := map[string]bool{}
	for _, a := range r.Assumptions {
		has[a.Key] = true
	}
	if r.Alpha != nil && !has["alpha"] {
		defaults = append(defaults, fmt.Sprintf("alpha %g", *r.Alpha))
	}
	if r.Sides != 0 && !has["sides"] {
		defaults = append(defaults, sidesWord(r.Sides)+" test")
	}
	if r.Ratio != nil && !has["ratio"] && !has["n_second"] && r.Design != "cross-sectional" && !r.Spec.OneGroup() && !r.Spec.Matched {
		defaults = append(defaults, "allocation "+allocation(*r.Ratio))
	}
	if !has["attrition"] && r.Outcome != "time-to-event" {
		if r.Design == "cross-sectional" {
			defaults = append(defaults, "no non-response")
		} else {
			defaults = append(defaults, "no attrition")
		}
	}
	if r.Outcome == "time-to-event" && !has["dropout"] {
		defaults = append(defaults, "no dropout")
	}
	if r.Outcome == "time-to-event" && !has["accrual"] {
		defaults = append(defaults, "no accrual period (everyone starts together)")
	}
	if r.Goal == "precision" && !has["confidence"] {
		defaults = append(defaults, "95% confidence")
	}
	if len(defaults) > 0 {
		s.after = append(s.after, "Defaults in force: "+strings.Join(defaults, "; ")+".")
	}
	return s
}

func answerSection(r *designs.Result) section {
	a := r.Result
	s := section{heading: "Answer"}
	if r.Spec.ContinuousExposure {
		return continuousAnswer(r, s)
	}
	if r.Goal == "precision" && r.Design != "cross-sectional" {
		if r.Solve == "n" {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Analysable: %s, %s in total**", groupSizes(r, a.N), count(a.Total)),
				fmt.Sprintf("**Enrolment target: %s, %s in total**", groupSizes(r, a.Enrol), count(a.EnrolTotal)),
				fmt.Sprintf("Upper over lower limit at these numbers: %s (target %s)", num(*a.PrecisionRatio), num(r.Spec.PrecisionRatio)))
		} else {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Upper over lower limit of the interval: %s**", num(*a.PrecisionRatio)),
				fmt.Sprintf("Enrolled: %s; analysable: %s", groupSizes(r, a.Enrol), groupSizes(r, a.N)))
		}
		if iv := a.ExpectedInterval; len(iv) == 2 {
			s.bullets = append(s.bullets, fmt.Sprintf("Interval expected around the planned ratio: %s to %s", num(iv[0]), num(iv[1])))
		}
		s.afterTable = groupTable(r)
		return s
	}
	if r.Goal == "accuracy" {
		if r.Solve == "n" {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Participants needed: %s** (the larger of %.2f for sensitivity and %.2f for specificity, rounded up)", count(a.Total), *a.NSensitivity, *a.NSpecificity),
				fmt.Sprintf("**People to test: %s**, %s", count(a.EnrolTotal), map[bool]string{true: "no loss expected", false: "allowing for " + pct(r.Attrition) + " loss"}[r.Attrition == 0]),
				fmt.Sprintf("Margin: ±%s percentage points for each, at %s confidence", strings.TrimSuffix(pct(*a.Margin), "%"), pct(r.Spec.Confidence)))
		} else {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Margin for sensitivity: ±%s percentage points**; for specificity: ±%s, at %s confidence", strings.TrimSuffix(pct(*a.MarginSensitivity), "%"), strings.TrimSuffix(pct(*a.MarginSpecificity), "%"), pct(r.Spec.Confidence)),
				fmt.Sprintf("Tested: %s; usable: %s", count(a.EnrolTotal), count(a.Total)))
		}
		return s
	}
	if r.Goal == "precision" {
		nonResponse := fmt.Sprintf("allowing for %s non-response", pct(r.Attrition))
		if r.Attrition == 0 {
			nonResponse = "no non-response expected"
		}
		// A prevalence's margin is in percentage points, a mean's in the
		// measurement's units.
		marginText := strings.TrimSuffix(pct(*a.Margin), "%") + " percentage points"
		if r.Outcome == "continuous" {
			marginText = num(*a.Margin)
		}
		if r.Solve == "n" {
			unrounded := fmt.Sprintf("n₀ = %.2f, rounded up", a.N0)
			if r.Method != "wald" {
				unrounded = fmt.Sprintf("n₀ = %s, the smallest whole number for the margin", count(int(a.N0)))
			}
			if r.DesignEff != 1 || r.Spec.Population > 0 {
				n0 := fmt.Sprintf("%.2f", a.N0)
				if r.Method != "wald" {
					n0 = count(int(a.N0))
				}
				var before []string
				if r.DesignEff != 1 {
					before = append(before, "the design effect")
				}
				if r.Spec.Population > 0 {
					before = append(before, "the finite population correction")
				}
				unrounded = fmt.Sprintf("unrounded %.2f; n₀ = %s before %s", a.NStar, n0, strings.Join(before, " and "))
			}
			if e := a.ExpectedInterval; len(e) == 2 {
				unrounded += fmt.Sprintf("; the interval expected at the expected prevalence: %s to %s", pct(e[0]), pct(e[1]))
			}
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Respondents needed: %s** (%s)", count(a.Total), unrounded),
				fmt.Sprintf("**People to invite: %s**, %s", count(a.EnrolTotal), nonResponse),
				fmt.Sprintf("Margin: ±%s at %s confidence", marginText, pct(r.Spec.Confidence)))
		} else {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Achievable margin: ±%s** at %s confidence", marginText, pct(r.Spec.Confidence)))
			if r.Attrition > 0 {
				s.bullets = append(s.bullets, fmt.Sprintf("Invited: %s; expected respondents after %s non-response: %s", count(a.EnrolTotal), pct(r.Attrition), count(a.Total)))
			} else {
				s.bullets = append(s.bullets, fmt.Sprintf("Invited: %s, all expected to respond", count(a.EnrolTotal)))
			}
		}
		return s
	}
	groups := func(n []int) string { return groupSizes(r, n) }
	// total ends a line of group sizes: ", N in total" (nothing more for
	// pairs, which are their own total).
	total := func(n int) string {
		switch {
		case r.Spec.Pairing == "paired":
			return ""
		case a.Arms > 2:
			return ", " + count(n) + " in total over all arms"
		}
		return ", " + count(n) + " in total"
	}
	per := ""
	if a.Arms > 2 {
		per = " per comparison"
	}
	analysable := "Analysable"
	if r.Attrition > 0 {
		analysable = fmt.Sprintf("Analysable after %s attrition", pct(r.Attrition))
		if r.Design == "cross-sectional" {
			analysable = fmt.Sprintf("Analysable after %s non-response", pct(r.Attrition))
		}
	}
	switch r.Solve {
	case "n":
		s.bullets = append(s.bullets,
			fmt.Sprintf("**Analysable%s: %s%s**", per, groups(a.N), total(a.Total)),
			fmt.Sprintf("**Enrolment target%s: %s%s**", per, groups(a.Enrol), total(a.EnrolTotal)),
			fmt.Sprintf("Achieved power at the analysable sizes: %s (target %s)", pct1(*a.AchievedPower), pct1(*r.Power)))
		if a.NStar > 0 && r.Spec.Cluster == nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Unrounded size of the first group from the method: %.2f", a.NStar))
		}
	case "power":
		s.bullets = append(s.bullets,
			fmt.Sprintf("**Power: %s**", pct1(*a.AchievedPower)),
			fmt.Sprintf("Enrolled%s: %s%s", per, groups(a.Enrol), total(a.EnrolTotal)),
			fmt.Sprintf("%s%s: %s%s", analysable, per, sizeList(a.N, r), total(a.Total)))
	case "effect":
		det := a.Detectable
		var dl, du *float64
		if det.Diluted != nil {
			dl, du = det.Diluted.Lower, det.Diluted.Upper
		}
		name := scaleName(r, det.Scale)
		for _, side := range []struct {
			v    *float64
			e    *designs.Effect
			name string
			dv   *float64
		}{{det.Lower, det.LowerEffect, "below no difference", dl}, {det.Upper, det.UpperEffect, "above no difference", du}} {
			if det.Direction != "" && (det.Direction == "lower") != strings.HasPrefix(side.name, "below") {
				continue // a one-sided test does not look this way
			}
			if side.v == nil {
				s.bullets = append(s.bullets, fmt.Sprintf("%s: cannot be reached with these sizes", capitalise(side.name)))
				continue
			}
			var line string
			if firstRiskScale(det.Scale) && side.e != nil {
				line = fmt.Sprintf("**%s: %s**", capitalise(side.name), effectPhrase(r, det.Scale, []float64{*side.v}, []*designs.Effect{side.e}))
			} else {
				line = fmt.Sprintf("**%s: %s %s**", capitalise(side.name), name, valueOn(det.Scale, *side.v))
				if side.e != nil && (side.e.FirstRisk != nil || side.e.CaseExposure != nil) {
					line += " (" + restateShort(r, side.e) + ")"
				}
			}
			if side.e != nil && side.e.StandardizedDifference != nil {
				line += fmt.Sprintf(" (Cohen's d = %s)", num(*side.e.StandardizedDifference))
			}
			if side.dv != nil {
				line += " for those who receive the intervention; an intention-to-treat analysis sees " + effectPhrase(r, det.Scale, []float64{*side.dv}, nil)
			}
			s.bullets = append(s.bullets, line)
		}
		s.bullets = append(s.bullets,
			fmt.Sprintf("Power: %s; enrolled %s; %s: %s", pct1(*r.Power), groups(a.Enrol), strings.ToLower(analysable[:1])+analysable[1:], sizeList(a.N, r)))
	}
	if a.Sets > 0 {
		line := fmt.Sprintf("Matched sets: %s, each of one case and %s", count(a.Sets), controlsWord(r.Spec.Controls))
		if a.ExpectedDiscordantSets != nil {
			line += fmt.Sprintf("; about %.1f expected to be discordant (to hold both exposed and unexposed members), the sets that inform the analysis", *a.ExpectedDiscordantSets)
		}
		s.bullets = append(s.bullets, line)
		if a.UnmatchedCases > 0 {
			s.bullets = append(s.bullets, matchingCost(r))
		}
		if a.McNemarExactPower != nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Exact power of McNemar's test at %s pairs, by enumeration of the discordant pairs (no normal approximation): %s", count(a.N[0]), pct1(*a.McNemarExactPower)))
		}
	}
	if a.Events > 0 {
		need, rounded := eventsRequired(r)
		s.bullets = append(s.bullets, fmt.Sprintf("Events required%s: %s%s", per, need, rounded))
	}
	if a.ExpectedEvents != nil {
		s.bullets = append(s.bullets, fmt.Sprintf("Events expected at the analysable sizes: %.1f", *a.ExpectedEvents))
	}
	if a.Duration != nil {
		unit := r.Spec.TimeUnit
		s.bullets = append(s.bullets, fmt.Sprintf("Study duration: %s (accrual %s, then follow-up %s)", duration(*a.Duration, unit), duration(r.Spec.Accrual, unit), duration(r.Spec.FollowUp, unit)))
	}
	if a.Clusters != nil {
		s.bullets = append(s.bullets,
			fmt.Sprintf("Design effect: %.4g", *a.DesignEffect),
			fmt.Sprintf("Clusters: %s and %s; whole clusters bring %s and %s participants", count(a.Clusters[0]), count(a.Clusters[1]), count(a.WholeClusters[0]), count(a.WholeClusters[1])))
	}
	if a.Arms > 2 {
		s.bullets = append(s.bullets, fmt.Sprintf("Arms: %d; comparisons: %d, each at alpha %.4g (Bonferroni)", a.Arms, a.Comparisons, *a.AlphaPerComparison))
	}
	if a.UndilutedN != nil {
		s.bullets = append(s.bullets, fmt.Sprintf("Without non-adherence and contamination: %s", groups(a.UndilutedN)))
	}
	s.afterTable = groupTable(r)
	if r.Design == "cross-sectional" && !r.Spec.ContinuousExposure {
		s.after = append(s.after, fmt.Sprintf("The split follows from `exposure_prevalence`, the share of those surveyed expected in the first group (%s).", pct(r.Spec.ExposurePrevalence)))
	}
	return s
}

// groupTable lists each group with its allocation, enrolment and
// analysable size (and clusters): a table survives labels of any length.
func groupTable(r *designs.Result) [][]string {
	a := r.Result
	if r.Spec.Pairing == "paired" || len(a.N) != 2 {
		return nil
	}
	f, g := groupsOf(r)
	enrol := "To enrol"
	if r.Solve != "n" {
		enrol = "Enrolled"
	}
	share := "Allocation"
	alloc := []string{"1", strings.TrimPrefix(allocation(*r.Ratio), "1:")}
	if r.Design == "cross-sectional" {
		share = "Share surveyed"
		alloc = []string{pct(r.Spec.ExposurePrevalence), "the rest"}
	}
	head := []string{"Group", share, enrol, "Analysable"}
	if a.Clusters != nil {
		head = append(head, "Clusters")
	}
	labels := []string{f.label, g.label}
	switch {
	case a.Arms > 2 && r.Spec.Comparisons == "all-pairs":
		labels[0] = fmt.Sprintf("each of the %d arms", a.Arms)
	case a.Arms > 2:
		labels[0] = fmt.Sprintf("%s (each of the %d intervention arms)", f.label, a.Arms-1)
	}
	rows := [][]string{head}
	for i := range 2 {
		if i == 1 && a.Arms > 2 && r.Spec.Comparisons == "all-pairs" {
			break
		}
		row := []string{labels[i], alloc[i], count(a.Enrol[i]), count(a.N[i])}
		if a.Clusters != nil {
			row = append(row, count(a.Clusters[i]))
		}
		rows = append(rows, row)
	}
	totalRow := []string{"Total", "", count(a.EnrolTotal), count(a.Total)}
	if a.Arms > 2 {
		totalRow[0] = "Total over all arms"
	}
	if a.Clusters != nil {
		totalRow = append(totalRow, count(a.Clusters[0]+a.Clusters[1]))
	}
	return append(rows, totalRow)
}

// valueOn formats a value on the scale of an effect key.
func valueOn(key string, v float64) string {
	switch {
	case key == "mean_difference" || key == "hazard_ratio":
		return num(v)
	case strings.HasSuffix(key, "_difference"):
		return pp(v)
	case strings.HasSuffix(key, "_ratio"), strings.HasSuffix(key, "_ratio_per_sd"):
		return num(v)
	}
	return pct(v)
}

// restateShort gives the two groups' risks (or exposures) of an effect:
// "risk 1.65% among the exposed against 5% among the unexposed".
func restateShort(r *designs.Result, e *designs.Effect) string {
	f, g := groupsOf(r)
	f, g = f.bracketed(), g.bracketed() // the restatement is in parentheses
	if e.CaseExposure != nil {
		return fmt.Sprintf("proportion exposed %s %s against %s %s", pct(*e.CaseExposure), f.in(), pct(*e.ControlExposure), g.in())
	}
	return fmt.Sprintf("%s %s %s against %s %s", vocabOf(r).noun, pct(*e.FirstRisk), f.in(), pct(*e.SecondRisk), g.in())
}

func effectSection(r *designs.Result) *section {
	e := r.Result.Effect
	if e == nil {
		return nil
	}
	f, g := groupsOf(r)
	fb, gb := f.bracketed(), g.bracketed() // for labels in parentheses
	s := &section{heading: "The planned effect on every scale"}
	if e.OddsRatioPerSD != nil {
		or, p := *e.OddsRatioPerSD, *e.EventRate
		// The odds at one SD above the mean, restated as a proportion
		// (common practice: p′ = odds′/(1 + odds′)).
		odds := p / (1 - p) * or
		s.bullets = []string{
			fmt.Sprintf("Odds ratio per standard deviation of the exposure: %s", num(or)),
			fmt.Sprintf("Proportion with the outcome at the exposure's mean: %s; one standard deviation above it: %s; two: %s", pct(p), pct(odds/(1+odds)), pct(odds*or/(1+odds*or))),
		}
		return s
	}
	if e.MeanDifference != nil {
		if r.Spec.Pairing != "" && r.Spec.Pairing != "crossover" {
			s.bullets = []string{
				fmt.Sprintf("Mean within-participant difference: %s", num(*e.MeanDifference)),
				fmt.Sprintf("In standard deviations of that difference (d_z): %s", num(*e.StandardizedDifference)),
			}
		} else if r.Spec.Pairing == "crossover" {
			s.bullets = []string{
				fmt.Sprintf("Mean within-participant difference between the treatments: %s", num(*e.MeanDifference)),
				fmt.Sprintf("In standard deviations of the period difference (d_z): %s", num(*e.StandardizedDifference)),
			}
		} else {
			s.bullets = []string{
				fmt.Sprintf("Difference in means (%s minus %s): %s", fb.label, gb.label, num(*e.MeanDifference)),
				fmt.Sprintf("In standard deviations of the outcome (Cohen's d): %s", num(*e.StandardizedDifference)),
			}
		}
		if d := r.Result.DilutedEffect; d != nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Seen by an intention-to-treat analysis after dilution: %s", num(*d.MeanDifference)))
		}
		return s
	}
	if e.RateRatio != nil {
		unit := singular(r.Spec.TimeUnit)
		s.bullets = []string{
			fmt.Sprintf("Rate %s: %s per 100 person-%ss", f.in(), num(100**e.FirstRate), unit),
			fmt.Sprintf("Rate %s: %s per 100 person-%ss", g.in(), num(100**e.SecondRate), unit),
			fmt.Sprintf("Rate ratio (%s over %s): %s", fb.label, gb.label, num(*e.RateRatio)),
			fmt.Sprintf("Rate difference (%s minus %s): %s per 100 person-%ss", fb.label, gb.label, signed(100**e.RateDifference), unit),
		}
		return s
	}
	if e.HazardRatio != nil {
		sp := r.Spec
		s.bullets = []string{
			fmt.Sprintf("Hazard ratio (%s over %s): %s", fb.label, gb.label, num(*e.HazardRatio)),
			fmt.Sprintf("Median survival under exponential hazards: %s %s, %s %s",
				duration(math.Ln2/sp.ControlHazard, sp.TimeUnit), g.in(), duration(math.Ln2/(sp.ControlHazard**e.HazardRatio), sp.TimeUnit), f.in()),
		}
		if d := r.Result.DilutedEffect; d != nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Seen by an intention-to-treat analysis after dilution: %s", num(*d.HazardRatio)))
		}
		return s
	}
	if e.CaseExposure != nil {
		s.bullets = []string{
			fmt.Sprintf("Exposure %s: %s (odds %s)", f.in(), pct(*e.CaseExposure), num(*e.CaseOdds)),
			fmt.Sprintf("Exposure %s: %s (odds %s)", g.in(), pct(*e.ControlExposure), num(*e.ControlOdds)),
			fmt.Sprintf("Odds ratio: %s", num(*e.OddsRatio)),
			"Risks, risk ratio, risk difference and number needed to treat are not estimable: a case-control study samples on the outcome.",
		}
		return s
	}
	v := vocabOf(r)
	s.bullets = []string{
		fmt.Sprintf("%s %s: %s; %s: %s", capitalise(v.noun), f.in(), pct(*e.FirstRisk), g.in(), pct(*e.SecondRisk)),
		fmt.Sprintf("%s (%s over %s): %s", capitalise(v.ratio), fb.label, gb.label, num(*e.RiskRatio)),
		fmt.Sprintf("Odds ratio: %s", num(*e.OddsRatio)),
		fmt.Sprintf("%s (%s minus %s): %s", capitalise(v.diff), fb.label, gb.label, pp(*e.RiskDifference)),
	}
	if e.NNT != nil {
		s.bullets = append(s.bullets, nntLine(r, *e.NNT, *e.RiskDifference))
	}
	return s
}

// nntLine states the number needed to treat, to harm or to be exposed.
// Whether the difference is a benefit or a harm follows from the sign of
// the difference (first group minus second) and from higher_is_better,
// which says whether the outcome is desirable.
func nntLine(r *designs.Result, nnt int, rd float64) string {
	desirable := r.Spec.HigherIsBetter
	benefit := (rd > 0) == desirable
	fb, gb := groupsOf(r)
	fb, gb = fb.bracketed(), gb.bracketed() // the labels are in parentheses
	v := vocabOf(r)
	trial := r.Design == "trial"
	name := "Number needed to harm"
	switch {
	case benefit && trial:
		name = "Number needed to treat"
	case benefit:
		name = "Number needed to be exposed"
	}
	who, person := "people", "person"
	if trial {
		who, person = "participants treated", "participant"
	}
	event := "outcome event"
	if r.Design == "cross-sectional" {
		event = "case"
	}
	var what string
	switch {
	case desirable && rd > 0:
		what = "one more " + person + " with the outcome"
	case desirable:
		what = "one " + person + " fewer with the outcome"
	case rd > 0:
		what = "one " + event + " more"
	default:
		what = "one " + event + " fewer"
	}
	return fmt.Sprintf("%s (%s against %s): %s, that is %s for every %s %s (1/|%s|, rounded up)", name, fb.label, gb.label, count(nnt), what, count(nnt), who, v.diff)
}

func alternativeSection(r *designs.Result) section {
	s := section{heading: "Other applicable methods"}
	s.paras = []string{fmt.Sprintf("The chosen method: %s (%s). The same question answered by the other methods that serve this design:", r.MethodName, r.Short)}
	for _, alt := range r.Alternatives {
		var line string
		switch r.Solve {
		case "n":
			line = fmt.Sprintf("%s (%s): %s analysable, %s in total; %s to enrol; achieved power %s",
				alt.Name, alt.Short, sizeList(alt.N, r), count(alt.Total), count(alt.EnrolTotal), pct1(*alt.AchievedPower))
		case "power":
			line = fmt.Sprintf("%s (%s): power %s", alt.Name, alt.Short, pct1(*alt.AchievedPower))
		case "effect":
			det := alt.Detectable
			var sides []string
			for _, side := range []struct {
				v    *float64
				name string
			}{{det.Lower, "below"}, {det.Upper, "above"}} {
				if det.Direction != "" && (det.Direction == "lower") != (side.name == "below") {
					continue // a one-sided test does not look this way
				}
				v := "not reachable"
				if side.v != nil {
					v = valueOn(det.Scale, *side.v)
				}
				sides = append(sides, v+" "+side.name)
			}
			line = fmt.Sprintf("%s (%s): %s %s no difference", alt.Name, alt.Short, scaleName(r, det.Scale), strings.Join(sides, ", "))
		}
		s.bullets = append(s.bullets, line)
	}
	return s
}

// exactSection reports exact power by enumeration.
func exactSection(r *designs.Result) *section {
	a := r.Result
	if a.ExactPower == nil {
		return nil
	}
	s := &section{heading: "Exact power by enumeration"}
	s.bullets = append(s.bullets, fmt.Sprintf("Exact power of %s at %s: %s (every pair of counts enumerated, as in Suissa & Shuster 1985; no Monte-Carlo error)", r.TestName, sizeList(a.N, r), pct1(*a.ExactPower)))
	if x := a.Exact; x != nil {
		s.bullets = append(s.bullets,
			fmt.Sprintf("Smallest first-group size with exact power at or above the target: %s (the closed form gives %s)", count(x.First), count(x.ClosedForm)),
			fmt.Sprintf("Smallest size beyond which the exact power stays at or above the target: %s (window searched: %s to %s)", count(x.Stable), count(x.Window[0]), count(x.Window[1])))
	}
	return s
}

// stepsSection lists the steps the computation took, in order, with their
// rules, inputs and outputs, so that the answer can be replayed by hand.
func stepsSection(r *designs.Result) section {
	s := section{heading: "How the numbers were reached", ordered: true}
	s.paras = []string{"Each step in the order taken: its rule, the values it used (a name in the rule is the output of the earlier step of that name, or a key of the specification) and its result. Whole-number rounding ignores floating-point noise below one part in 10⁹."}
	for _, st := range r.Steps {
		line := fmt.Sprintf("`%s` = %s", st.Name, st.Rule)
		if len(st.Inputs) > 0 {
			var ins []string
			for _, x := range st.Inputs {
				ins = append(ins, x.Name+" = "+stepNumber(x.Value))
			}
			line += ", with " + strings.Join(ins, ", ")
		}
		s.bullets = append(s.bullets, line+": **"+stepNumber(st.Output)+"**")
	}
	return s
}

// stepNumber prints a step's value with enough digits to replay it: whole
// numbers as they are, others to 10 significant digits.
func stepNumber(x float64) string {
	if x == math.Trunc(x) && math.Abs(x) < 1e15 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', 10, 64)
}

// controlsWord counts the controls of a set: "one control", "2 controls".
func controlsWord(m int) string {
	if m == 1 {
		return "one control"
	}
	return fmt.Sprintf("%d controls", m)
}

// matchingCost compares the matched sets with the unmatched design of as
// many controls per case that the answer records.
func matchingCost(r *designs.Result) string {
	a := r.Result
	m := r.Spec.Controls
	d := a.Sets - a.UnmatchedCases
	line := fmt.Sprintf("An unmatched design with %s per case would need %s cases and %s controls (Fleiss, Levin & Paik 2003, no continuity correction): ",
		controlsWord(m), count(a.UnmatchedCases), count(m*a.UnmatchedCases))
	cases := func(n int) string {
		if n == 1 {
			return "1 case"
		}
		return count(n) + " cases"
	}
	cost := "matching costs"
	if r.Spec.ExposureCorrelation > 0 {
		cost = "matching with this correlation of exposure costs"
	}
	switch {
	case d > 0:
		return line + fmt.Sprintf("%s %s more", cost, cases(d))
	case d < 0:
		return line + fmt.Sprintf("matching saves %s", cases(-d))
	}
	return line + "matching neither costs nor saves cases"
}

// continuousAnswer is the answer of a binary outcome related to a
// continuous exposure: one group, everyone.
func continuousAnswer(r *designs.Result, s section) section {
	a := r.Result
	who, lost := "participants", "attrition"
	if r.Design == "cross-sectional" {
		who, lost = "respondents", "non-response"
	}
	switch r.Solve {
	case "n":
		enrol := fmt.Sprintf("**Enrolment target: %s**, allowing for %s %s", count(a.EnrolTotal), pct(r.Attrition), lost)
		if r.Attrition == 0 {
			enrol = fmt.Sprintf("**Enrolment target: %s**, no %s expected", count(a.EnrolTotal), lost)
		}
		s.bullets = append(s.bullets,
			fmt.Sprintf("**Analysable: %s %s**", count(a.N[0]), who),
			enrol,
			fmt.Sprintf("Achieved power at the analysable size: %s (target %s)", pct1(*a.AchievedPower), pct1(*r.Power)),
			fmt.Sprintf("Unrounded size from the method: %.2f", a.NStar))
	case "power":
		s.bullets = append(s.bullets,
			fmt.Sprintf("**Power: %s**", pct1(*a.AchievedPower)),
			fmt.Sprintf("Enrolled: %s; analysable after %s %s: %s", count(a.EnrolTotal), pct(r.Attrition), lost, count(a.N[0])))
	case "effect":
		d := a.Detectable
		for _, side := range []struct {
			v    *float64
			name string
		}{{d.Lower, "below no relation"}, {d.Upper, "above no relation"}} {
			if d.Direction != "" && (d.Direction == "lower") != strings.HasPrefix(side.name, "below") {
				continue
			}
			if side.v == nil {
				s.bullets = append(s.bullets, fmt.Sprintf("%s: cannot be reached with this size", capitalise(side.name)))
				continue
			}
			s.bullets = append(s.bullets, fmt.Sprintf("**%s: odds ratio %s per standard deviation**", capitalise(side.name), num(*side.v)))
		}
		s.bullets = append(s.bullets, fmt.Sprintf("Power: %s; enrolled %s; analysable: %s", pct1(*r.Power), count(a.EnrolTotal), count(a.N[0])))
	}
	return s
}
