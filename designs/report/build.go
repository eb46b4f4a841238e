package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"enough/designs"
)

// label returns the human name of a specification key.
var keyLabels = map[string]string{
	"alpha": "alpha", "sides": "sides", "power": "target power", "n": "enrolment, first group",
	"total": "enrolment, whole survey", "ratio": "allocation (second per first)",
	"attrition": "attrition (fraction lost)", "design_effect": "design effect",
	"unexposed_risk": "risk among the unexposed", "exposed_risk": "risk among the exposed",
	"control_risk": "risk in the control arm", "intervention_risk": "risk in the intervention arm",
	"control_exposure": "exposure among controls", "case_exposure": "exposure among cases",
	"exposure_prevalence":  "share of the surveyed who are exposed",
	"unexposed_prevalence": "prevalence among the unexposed", "exposed_prevalence": "prevalence among the exposed",
	"expected_prevalence": "expected prevalence", "risk_ratio": "risk ratio",
	"prevalence_ratio": "prevalence ratio", "odds_ratio": "odds ratio",
	"risk_difference": "risk difference", "prevalence_difference": "prevalence difference",
	"margin": "margin (half-width of the interval)", "confidence": "confidence level",
	"population":      "population size",
	"mean_difference": "difference in means", "intervention_mean": "mean in the intervention arm",
	"control_mean": "mean in the control arm", "exposed_mean": "mean among the exposed",
	"unexposed_mean": "mean among the unexposed", "sd": "standard deviation",
	"sd_first": "standard deviation, first group", "sd_second": "standard deviation, second group",
	"sd_difference": "standard deviation of the differences", "within_correlation": "correlation between the two measurements",
	"baseline_correlation": "correlation with the baseline", "hazard_ratio": "hazard ratio",
	"control_median": "median survival, control arm", "control_survival": "survival in the control arm",
	"time": "time of that survival", "accrual": "accrual period", "follow_up": "follow-up after the last entry",
	"dropout": "dropout per time unit", "non_adherence": "non-adherence (intervention arm)",
	"contamination": "contamination (control arm)", "arms": "arms", "higher_is_better": "higher is better",
	"hypothesis": "hypothesis", "pairing": "pairing", "comparisons": "comparisons",
	"cluster.size": "mean cluster size", "cluster.icc": "intracluster correlation (ICC)",
	"cluster.size_cv": "coefficient of variation of cluster sizes", "n_second": "enrolment, second group",
}

func keyLabel(k string) string {
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

// riskWord is "prevalence" for a cross-sectional study and "risk" otherwise.
func riskWord(design string) string {
	if design == "cross-sectional" {
		return "prevalence"
	}
	return "risk"
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
	what := map[string]string{"cohort": "cohort study", "case-control": "unmatched case-control study",
		"trial": "parallel-group randomised trial", "cross-sectional": "cross-sectional survey"}[r.Design]
	switch {
	case r.Spec.Pairing == "crossover":
		what = "two-period crossover trial"
	case r.Spec.Pairing == "paired" && r.Design == "trial":
		what = "paired randomised trial"
	case r.Spec.Pairing == "paired":
		what = "paired (before-after or matched) study"
	case r.Spec.Cluster != nil:
		what = "cluster-randomised trial"
	}
	solved := map[string]string{"n": "sample size", "power": "power", "effect": "smallest detectable effect"}[r.Solve]
	if r.Goal == "precision" && r.Solve == "effect" {
		solved = "achievable precision"
	}
	article := "a"
	if strings.ContainsAny(what[:1], "aeiou") {
		article = "an"
	}
	d.subtitle = fmt.Sprintf("%s plan for %s %s, %s outcome", capitalise(solved), article, what, r.Outcome)

	d.sections = append(d.sections, section{heading: "Justification for the protocol", paras: []string{paragraph(r)}})
	d.sections = append(d.sections, assumptionSection(r))
	d.sections = append(d.sections, answerSection(r))
	if e := effectSection(r); e != nil {
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
		d.sections = append(d.sections, section{heading: "Warnings", bullets: r.Warnings})
	}
	if len(r.Notes) > 0 {
		d.sections = append(d.sections, section{heading: "Notes", bullets: r.Notes})
	}
	d.sections = append(d.sections, stepsSection(r))
	d.sections = append(d.sections, section{heading: "Cautions", bullets: r.Cautions})

	spec := r.SpecFile
	d.footer = append(d.footer, fmt.Sprintf("%s %s · specification %s · SHA-256 %s", r.Tool, r.Version, spec, r.SpecSHA256))
	if len(r.Overrides) > 0 {
		d.footer = append(d.footer, "overridden on the command line: "+strings.Join(r.Overrides, ", "))
	}
	return d
}

func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func assumptionSection(r *designs.Result) section {
	rows := [][]string{{"Assumption", "Key", "Value", "Source"}}
	for _, a := range r.Assumptions {
		src := provenance(r, a.Key)
		src = strings.TrimPrefix(src, "source: ")
		if src == "" {
			src = "not stated"
		}
		label := keyLabel(a.Key)
		if a.Key == "margin" && r.Goal != "precision" {
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
	if r.Ratio != nil && !has["ratio"] && r.Design != "cross-sectional" {
		defaults = append(defaults, "allocation "+allocation(*r.Ratio))
	}
	if !has["attrition"] && r.Outcome != "time-to-event" {
		defaults = append(defaults, "no attrition")
	}
	if r.Outcome == "time-to-event" && !has["dropout"] {
		defaults = append(defaults, "no dropout")
	}
	if r.Outcome == "time-to-event" && !has["accrual"] {
		defaults = append(defaults, "no accrual period (everyone starts together)")
	}
	if !has["design_effect"] && r.Spec.Cluster == nil {
		defaults = append(defaults, "design effect 1")
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
	if r.Goal == "precision" {
		if r.Solve == "n" {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Respondents needed: %s** (unrounded %.2f; n₀ = %.2f before design effect and finite population correction)", count(a.Total), a.NStar, a.N0),
				fmt.Sprintf("**People to invite: %s**, allowing for %s non-response", count(a.EnrolTotal), pct(r.Attrition)),
				fmt.Sprintf("Margin: ±%s at %s confidence", strings.TrimSuffix(pct(*a.Margin), "%")+" percentage points", pct(r.Spec.Confidence)))
		} else {
			s.bullets = append(s.bullets,
				fmt.Sprintf("**Achievable margin: ±%s percentage points** at %s confidence", strings.TrimSuffix(pct(*a.Margin), "%"), pct(r.Spec.Confidence)),
				fmt.Sprintf("Invited: %s; expected respondents after %s non-response: %s", count(a.EnrolTotal), pct(r.Attrition), count(a.Total)))
		}
		return s
	}
	first, second := r.FirstGroup, r.SecondGroup
	groups := func(n []int) string {
		switch {
		case len(n) == 1:
			return sizeList(n, r)
		case r.Spec.Cluster != nil:
			return fmt.Sprintf("%s participants in the %s and %s in the %s", count(n[0]), first, count(n[1]), second)
		}
		return members(n[0], first) + " and " + members(n[1], second)
	}
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
			fmt.Sprintf("Analysable after %s attrition: %s%s", pct(r.Attrition), sizeList(a.N, r), total(a.Total)))
	case "effect":
		det := a.Detectable
		scale := keyLabel(det.Scale)
		var dl, du *float64
		if det.Diluted != nil {
			dl, du = det.Diluted.Lower, det.Diluted.Upper
		}
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
			line := fmt.Sprintf("**%s: %s %s**", capitalise(side.name), scale, valueOn(det.Scale, *side.v))
			if side.e != nil && (side.e.FirstRisk != nil || side.e.CaseExposure != nil) {
				line += " (" + restateShort(r, side.e) + ")"
			}
			if side.e != nil && side.e.StandardizedDifference != nil {
				line += fmt.Sprintf(" (Cohen's d = %s)", num(*side.e.StandardizedDifference))
			}
			if side.dv != nil {
				line += fmt.Sprintf(" for those who receive the intervention; an intention-to-treat analysis sees %s %s of %s", article(scale), scale, valueOn(det.Scale, *side.dv))
			}
			s.bullets = append(s.bullets, line)
		}
		s.bullets = append(s.bullets,
			fmt.Sprintf("Power: %s; enrolled %s; analysable %s", pct1(*r.Power), groups(a.Enrol), sizeList(a.N, r)))
	}
	if a.Events > 0 {
		s.bullets = append(s.bullets, fmt.Sprintf("Events required: %s", count(a.Events)))
	}
	if a.ExpectedEvents != nil {
		s.bullets = append(s.bullets, fmt.Sprintf("Events expected at the analysable sizes: %.1f", *a.ExpectedEvents))
	}
	if a.Duration != nil {
		s.bullets = append(s.bullets, fmt.Sprintf("Study duration: %s %s (accrual %s, then follow-up %s)", num(*a.Duration), r.Spec.TimeUnit, num(r.Spec.Accrual), num(r.Spec.FollowUp)))
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
	if r.Spec.Pairing != "paired" {
		line := fmt.Sprintf("Allocation %s:%s = %s", first, second, allocation(*r.Ratio))
		if r.Design == "cross-sectional" {
			line += fmt.Sprintf(" (follows from %s of those surveyed being exposed)", pct(r.Spec.ExposurePrevalence))
		}
		s.bullets = append(s.bullets, line)
	}
	return s
}

// valueOn formats a value on the scale of an effect key.
func valueOn(key string, v float64) string {
	switch {
	case key == "mean_difference" || key == "hazard_ratio":
		return num(v)
	case strings.HasSuffix(key, "_difference"):
		return pp(v)
	case strings.HasSuffix(key, "_ratio"):
		return num(v)
	}
	return pct(v)
}

// restateShort gives the two groups' risks (or exposures) of an effect.
func restateShort(r *designs.Result, e *designs.Effect) string {
	if e.CaseExposure != nil {
		return fmt.Sprintf("%s of %s exposed against %s of %s", pct(*e.CaseExposure), r.FirstGroup, pct(*e.ControlExposure), r.SecondGroup)
	}
	return fmt.Sprintf("%s %s in the %s against %s in the %s", riskWord(r.Design), pct(*e.FirstRisk), r.FirstGroup, pct(*e.SecondRisk), r.SecondGroup)
}

func effectSection(r *designs.Result) *section {
	e := r.Result.Effect
	if e == nil {
		return nil
	}
	s := &section{heading: "The planned effect on every scale"}
	if e.MeanDifference != nil {
		if r.Spec.Pairing != "" {
			s.bullets = []string{
				fmt.Sprintf("Mean within-participant difference: %s", num(*e.MeanDifference)),
				fmt.Sprintf("In standard deviations of that difference (d_z): %s", num(*e.StandardizedDifference)),
			}
		} else {
			s.bullets = []string{
				fmt.Sprintf("Difference in means (%s minus %s): %s", r.FirstGroup, r.SecondGroup, num(*e.MeanDifference)),
				fmt.Sprintf("In standard deviations of the outcome (Cohen's d): %s", num(*e.StandardizedDifference)),
			}
		}
		if d := r.Result.DilutedEffect; d != nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Seen by an intention-to-treat analysis after dilution: %s", num(*d.MeanDifference)))
		}
		return s
	}
	if e.HazardRatio != nil {
		sp := r.Spec
		s.bullets = []string{
			fmt.Sprintf("Hazard ratio (%s over %s): %s", r.FirstGroup, r.SecondGroup, num(*e.HazardRatio)),
			fmt.Sprintf("Median survival under exponential hazards: %s %s in the %s, %s %s in the %s",
				num(math.Ln2/sp.ControlHazard), sp.TimeUnit, r.SecondGroup, num(math.Ln2/(sp.ControlHazard**e.HazardRatio)), sp.TimeUnit, r.FirstGroup),
		}
		if d := r.Result.DilutedEffect; d != nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Seen by an intention-to-treat analysis after dilution: %s", num(*d.HazardRatio)))
		}
		return s
	}
	if e.CaseExposure != nil {
		s.bullets = []string{
			fmt.Sprintf("Exposure among %s: %s (odds %s)", r.FirstGroup, pct(*e.CaseExposure), num(*e.CaseOdds)),
			fmt.Sprintf("Exposure among %s: %s (odds %s)", r.SecondGroup, pct(*e.ControlExposure), num(*e.ControlOdds)),
			fmt.Sprintf("Odds ratio: %s", num(*e.OddsRatio)),
			"Risks, risk ratio, risk difference and number needed to treat are not estimable: a case-control study samples on the outcome.",
		}
		return s
	}
	rw := riskWord(r.Design)
	s.bullets = []string{
		fmt.Sprintf("%s in the %s: %s; in the %s: %s", capitalise(rw), r.FirstGroup, pct(*e.FirstRisk), r.SecondGroup, pct(*e.SecondRisk)),
		fmt.Sprintf("%s ratio: %s", capitalise(rw), num(*e.RiskRatio)),
		fmt.Sprintf("Odds ratio: %s", num(*e.OddsRatio)),
		fmt.Sprintf("%s difference: %s", capitalise(rw), pp(*e.RiskDifference)),
	}
	if e.NNT != nil {
		var what string
		switch {
		case r.Design == "trial" && *e.RiskDifference < 0:
			what = fmt.Sprintf("Number needed to treat: %s in the %s for one outcome event fewer", count(*e.NNT), r.FirstGroup)
		case r.Design == "trial":
			what = fmt.Sprintf("Number needed to treat (or to harm, if the outcome is adverse): %s in the %s for one outcome event more", count(*e.NNT), r.FirstGroup)
		case *e.RiskDifference > 0:
			what = fmt.Sprintf("Number needed to harm: %s exposed for one additional case", count(*e.NNT))
		default:
			what = fmt.Sprintf("Number needed to be exposed for one case fewer: %s", count(*e.NNT))
		}
		s.bullets = append(s.bullets, what+" (1/|difference|, rounded up)")
	}
	return s
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
			line = fmt.Sprintf("%s (%s): %s %s no difference", alt.Name, alt.Short, keyLabel(det.Scale), strings.Join(sides, ", "))
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
	s.bullets = append(s.bullets, fmt.Sprintf("Exact power of %s at %s: %s (every pair of counts enumerated; no Monte-Carlo error)", r.TestName, sizeList(a.N, r), pct1(*a.ExactPower)))
	if x := a.Exact; x != nil {
		s.bullets = append(s.bullets,
			fmt.Sprintf("Smallest first-group size with exact power at or above the target: %s (the closed form gives %s)", count(x.First), count(x.ClosedForm)),
			fmt.Sprintf("Smallest size beyond which the exact power stays at or above the target: %s (window searched: %s to %s)", count(x.Stable), count(x.Window[0]), count(x.Window[1])))
	}
	return s
}

// simulationSection reports the verification by simulation.
func simulationSection(r *designs.Result) *section {
	v := r.Simulation
	if v == nil {
		return nil
	}
	s := &section{heading: "Verification by simulation"}
	sizes := count(v.N[0])
	if len(v.N) == 2 {
		sizes = fmt.Sprintf("%s and %s", count(v.N[0]), count(v.N[1]))
	}
	if v.Partial {
		s.paras = append(s.paras, fmt.Sprintf("**Partial:** the simulation was stopped after %s replicates; the figures below rest on those alone.", count(int(v.Replicates))))
	}
	if len(v.CI) == 2 {
		s.bullets = append(s.bullets, fmt.Sprintf("Simulated power of %s with %s analysable: **%s** (Monte-Carlo standard error %.2f points; 95%% interval %s to %s; %s replicates, seed %d)",
			v.TestName, sizes, pct1(v.Power), 100*v.SE, pct1(v.CI[0]), pct1(v.CI[1]), count(int(v.Replicates)), v.Seed))
		agree := "agrees with it"
		if !v.Agrees {
			agree = "parts ways with it (more than 3 standard errors and 1 point)"
		}
		what := "Closed form"
		if r.Method == "exact" {
			what = "Exact power"
		}

		s.bullets = append(s.bullets, fmt.Sprintf("%s at the same sizes: %s; the simulation differs by %s points and %s", what, pct1(v.ClosedFormPower), signed2(100*v.Difference), agree))
	}
	if v.Type1Error != nil {
		s.bullets = append(s.bullets, fmt.Sprintf("Type I error simulated at %s: %s (standard error %.2f points), against alpha %g", v.Type1At, pct1(*v.Type1Error), 100**v.Type1SE, *r.Alpha))
	}
	if so := v.Solved; so != nil {
		n := count(so.N[0])
		if len(so.N) == 2 {
			n = fmt.Sprintf("%s and %s", count(so.N[0]), count(so.N[1]))
		}
		line := fmt.Sprintf("Smallest size whose simulated power reaches the target (same random numbers at every candidate size): %s, with power %s (standard error %.2f points)", n, pct1(so.Power), 100*so.SE)
		if so.NSE > 0 {
			line += fmt.Sprintf("; Monte-Carlo uncertainty about ±%.0f in the first group", math.Ceil(so.NSE))
		}
		s.bullets = append(s.bullets, line)
	}
	s.bullets = append(s.bullets, v.Notes...)
	return s
}

// signed2 formats a signed number with two decimals, never "-0.00".
func signed2(x float64) string {
	v := fmt.Sprintf("%+.2f", x)
	if v == "-0.00" {
		v = "+0.00"
	}
	return strings.Replace(v, "-", "−", 1)
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
