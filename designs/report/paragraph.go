package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"enough/designs"
)

// paragraph writes the justification paragraph in the voice of a protocol.
func paragraph(r *designs.Result) string {
	if r.Goal == "precision" {
		return precisionParagraph(r)
	}
	if r.Goal == "accuracy" {
		return accuracyParagraph(r)
	}
	if r.Spec != nil && r.Spec.ContinuousExposure {
		return logisticParagraph(r)
	}
	var b strings.Builder
	intro(&b, r)
	assume(&b, r)
	adjustment(&b, r)
	conclude(&b, r)
	interimSentences(&b, r)
	matchedSentences(&b, r)
	rateSentences(&b, r)
	return strings.TrimSpace(b.String())
}

// amount writes a quantity such as person-time: a whole number with
// thousands separators, else with three significant digits.
func amount(x float64) string {
	if x == math.Trunc(x) && x < 1e15 {
		return count(int(x))
	}
	if x >= 100 && x < 1e15 {
		// Person-time is a sum: keep its fraction, and the separators.
		whole := math.Floor(x)
		frac := strings.TrimPrefix(trimZeros(strconv.FormatFloat(x-whole, 'f', 2, 64)), "0")
		return count(int(whole)) + frac
	}
	return num(x)
}

// rateText writes a rate per unit of person-time as events per 100.
func rateText(rate float64) string { return num(100 * rate) }

// rateSentences states a person-time cohort's person-time and expected
// events, as the answer records them.
func rateSentences(b *strings.Builder, r *designs.Result) {
	a := r.Result
	if a.GroupEvents == nil {
		return
	}
	f, g := groupsOf(r)
	if t := b.String(); t != "" && !strings.HasSuffix(t, " ") {
		b.WriteString(" ")
	}
	unit := singular(r.Spec.TimeUnit)
	all := fmt.Sprintf(" (%.1f in all)", *a.ExpectedEvents)
	if r.Solve == "power" {
		all = "" // the total is in the sentence before
	}
	fmt.Fprintf(b, "The analysable participants contribute %s person-%ss %s and %s %s, in which %.1f and %.1f events are expected%s.",
		amount(a.PersonTime[0]), unit, f.in(), amount(a.PersonTime[1]), g.in(), a.GroupEvents[0], a.GroupEvents[1], all)
}

// matchedSentences states the matched sets' own figures, as the answer
// records them: the sets, the discordant sets expected, and what matching
// costs or saves against an unmatched design.
func matchedSentences(b *strings.Builder, r *designs.Result) {
	a := r.Result
	if a.Sets == 0 {
		return
	}
	if t := b.String(); t != "" && !strings.HasSuffix(t, " ") {
		b.WriteString(" ")
	}
	fmt.Fprintf(b, "These are %s matched sets", count(a.Sets))
	if a.ExpectedDiscordantSets != nil {
		fmt.Fprintf(b, ", of which about %.1f are expected to hold both exposed and unexposed members, the sets that inform the analysis", *a.ExpectedDiscordantSets)
	}
	b.WriteString(".")
	if a.UnmatchedCases > 0 {
		b.WriteString(" " + matchingCost(r) + ".")
	}
}

// adjustment says how the adjustment for covariates enters the answer,
// from the steps recorded: the inflation of n* when solving n, the
// information kept when solving power or effect.
func adjustment(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	if s == nil || !s.Adjusted {
		return
	}
	fmt.Fprintf(b, "The analysis adjusts for covariates that explain R² = %s of the variance of the exposure%s; ", num(s.AdjustR2), source(r, "adjustment.r_squared"))
	unadj, ok1 := stepOutput(r, "n_star_unadjusted")
	adj, ok2 := stepOutput(r, "n_star")
	if ok1 && ok2 {
		who := ""
		if !s.ContinuousExposure {
			f, _ := groupsOf(r)
			who = " for " + f.ref
		}
		fmt.Fprintf(b, "following Hsieh, Bloch & Larsen (1998), the unadjusted size of %.2f%s is inflated by 1/(1 − R²) = %.4g to %.2f. ",
			unadj, who, 1/(1-s.AdjustR2), adj)
		return
	}
	fmt.Fprintf(b, "following Hsieh, Bloch & Larsen (1998), the power is that of an unadjusted analysis of 1 − R² = %s of the participants. ", pct(1-s.AdjustR2))
}

// methodPhrase names the chosen method in a sentence.
func methodPhrase(id, name string) string {
	switch id {
	case "fleiss-cc":
		return "Fleiss's formula (Fleiss, Levin & Paik 2003) with the continuity correction of Fleiss, Tytun & Ury (1980)"
	case "fleiss":
		return "Fleiss's formula without continuity correction (Fleiss, Levin & Paik 2003)"
	case "kelsey":
		return "the formula of Kelsey et al. (1996)"
	case "schlesselman":
		return "Schlesselman's formula (1982)"
	case "farrington-manning":
		return "the score method of Farrington & Manning (1990)"
	case "blackwelder":
		return "the Wald method of Blackwelder (1982)"
	case "t":
		return "the exact power of the t test from the noncentral t distribution (Owen 1965; Lenth 1989)"
	case "z":
		return "the normal approximation for means (Chow, Shao & Wang 2008)"
	case "schoenfeld":
		return "Schoenfeld's formula (1983)"
	case "freedman":
		return "Freedman's formula (1982)"
	case "exact":
		return "exact enumeration of the test's power over every pair of counts (Suissa & Shuster 1985)"
	case "dupont":
		return "Dupont's method for matched sets (Dupont 1988)"
	case "connor":
		return "Connor's formula for matched pairs (Connor 1987)"
	case "schlesselman-pairs":
		return "Schlesselman's discordant-pairs formula (1982)"
	case "katz":
		return "the log risk ratio interval of Katz et al. (1978)"
	case "woolf":
		return "Woolf's log odds ratio interval (1955)"
	case "hsieh":
		return "the formula of Hsieh, Bloch & Larsen (1998, after Hsieh 1989)"
	case "log-rate-ratio":
		return "the formula for the Wald test on the log rate ratio (Breslow & Day 1987; with overdispersion, Zhu & Lakkis 2014)"
	}
	return name
}

// testPhrase names the planned analysis: analysis of covariance when the
// plan adjusts for the baseline, whatever the hypothesis.
func testPhrase(r *designs.Result) string {
	switch {
	case r.Spec.BaselineCorrelation > 0:
		return "analysis of covariance adjusting for the baseline value"
	case r.Test == "t-welch":
		return "Welch's t test (Welch 1947)"
	}
	return r.TestName
}

// intro says what is compared and by which test.
func intro(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	outcome := s.PrimaryOutcome
	subject := "The primary outcome, " + outcome + ","
	if outcome == "" {
		outcome = "the " + r.Outcome + " primary outcome"
		subject = "The " + r.Outcome + " primary outcome"
		if r.Outcome == "rate" {
			outcome, subject = "the count of events over person-time", "The count of events over person-time"
		}
	}
	f, g := groupsOf(r)
	alpha := *r.Alpha
	var test string
	switch s.Hypothesis {
	case "non-inferiority":
		test = fmt.Sprintf("%s at a one-sided alpha of %g", testPhrase(r), alpha)
	case "equivalence":
		test = fmt.Sprintf("two one-sided tests (%s; Schuirmann 1987), each at an alpha of %g, which amounts to a %s confidence interval", testPhrase(r), alpha, pct(1-2*alpha))
	default:
		test = fmt.Sprintf("%s at a %s alpha of %g", testPhrase(r), sidesWord(r.Sides), alpha)
		if r.Sides == 1 {
			if f.form == formNamed {
				test += fmt.Sprintf(" (rejecting only when the %s is %s %s than %s)", directionNoun(r), directionWord(r), f.bracketed().in(), g.bracketed().in())
			} else {
				test += fmt.Sprintf(" (rejecting only when %s %s the %s %s)", f.bracketed().the(), f.has(), directionWord(r), directionNoun(r))
			}
		}
	}
	switch {
	case r.Design == "case-control" && s.PrimaryOutcome != "":
		fmt.Fprintf(b, "%s have the primary outcome, %s, and %s do not; the primary analysis compares the proportion exposed between them using %s. ",
			capitalise(caseWord(f, "cases")), outcome, caseWord(g, "controls"), test)
	case r.Design == "case-control":
		fmt.Fprintf(b, "The primary analysis compares the proportion exposed between %s and %s using %s. ", caseWord(f, "cases"), caseWord(g, "controls"), test)
	case r.Design == "cross-sectional":
		fmt.Fprintf(b, "The survey compares %s %s using %s. ", strings.ToLower(subject[:1])+subject[1:], between(f, g), test)
	case s.Pairing == "paired":
		fmt.Fprintf(b, "%s will be compared within pairs (matched pairs, or the same participants before and after) using %s. ", subject, test)
	case s.Pairing == "crossover":
		fmt.Fprintf(b, "In a two-period AB/BA crossover, %s will be compared by contrasting the period differences %s (Senn 2002), using %s. ",
			strings.ToLower(subject[:1])+subject[1:], between(f, g), test)
	default:
		fmt.Fprintf(b, "%s will be compared %s using %s. ", subject, between(f, g), test)
	}
	switch {
	case s.Hypothesis == "non-inferiority" && s.MarginScale == "ratio":
		fmt.Fprintf(b, "The question is whether the outcome %s is not worse than %s beyond a non-inferiority margin of %s on the %s scale%s: %s, and the null hypothesis is that the %s, %s over %s, is %s %s%s. ",
			f.in(), g.in(), num(s.Margin), ratioWord(r), source(r, "margin"), betterText(r), ratioWord(r), f.label, g.label,
			map[bool]string{true: "at most", false: "at least"}[s.HigherIsBetter], num(s.Margin), restricted(r))
	case s.Hypothesis == "non-inferiority":
		fmt.Fprintf(b, "The question is whether the outcome %s is not worse than %s by more than the non-inferiority margin of %s (%s%s). ", f.in(), g.in(), marginText(s), betterText(r), srcSemi(r, "margin"))
	case s.Hypothesis == "equivalence" && s.MarginScale == "ratio":
		fmt.Fprintf(b, "The question is whether the %s, %s over %s, lies within the equivalence margins of %s and %s%s%s. ", ratioWord(r), f.label, g.label, num(1/s.Margin), num(s.Margin), source(r, "margin"), restricted(r))
	case s.Hypothesis == "equivalence":
		fmt.Fprintf(b, "The question is whether the difference between the arms lies within the equivalence margin of ±%s%s. ", marginText(s), source(r, "margin"))
	}
	if a := r.Result; a.Arms > 2 {
		what := fmt.Sprintf("each of the %d intervention arms against %s", a.Arms-1, g.controlArm())
		if s.Comparisons == "all-pairs" {
			what = "every pair of arms"
		}
		fmt.Fprintf(b, "The trial has %d arms and %d comparisons, %s; each comparison uses alpha %g/%d = %.4g (Bonferroni; Dunn 1961), and the analysis will use Holm's procedure (Holm 1979), which keeps the same family-wise error and is at least as powerful. ",
			a.Arms, a.Comparisons, what, alpha, a.Comparisons, *a.AlphaPerComparison)
	}
}

// restricted cites the restricted maximum-likelihood risks of a score test
// on a ratio margin.
func restricted(r *designs.Result) string {
	if r.Outcome != "binary" {
		return ""
	}
	return "; the score test uses the " + vocabOf(r).noun + "s restricted to the margin (Miettinen & Nurminen 1985)"
}

// directionWord says which way a one-sided superiority test looks.
func directionWord(r *designs.Result) string {
	if r.Spec.Direction < 0 {
		return "lower"
	}
	return "higher"
}

// directionNoun names what a one-sided superiority test compares.
func directionNoun(r *designs.Result) string {
	switch r.Outcome {
	case "continuous":
		return "mean"
	case "time-to-event":
		return "hazard"
	}
	if r.Design == "case-control" {
		return "proportion exposed"
	}
	return vocabOf(r).noun
}

// caseWord names the cases or the controls of a case-control study: the
// role word alone when it is the label ("cases"), else with the label
// ("cases (women with pre-eclampsia)").
func caseWord(g group, role string) string {
	if g.role == role {
		return role
	}
	return role + " " + paren(g.label)
}

// marginText states the margin on the outcome's scale.
func marginText(s *designs.Spec) string {
	if s.Outcome == "binary" {
		return strings.TrimPrefix(pp(s.Margin), "+")
	}
	return num(s.Margin)
}

// betterText says which values of the outcome are better.
func betterText(r *designs.Result) string {
	s := r.Spec
	switch {
	case s.Outcome == "time-to-event" && s.HigherIsBetter:
		return "the event is desirable, so a higher hazard is better"
	case s.Outcome == "time-to-event":
		return "the event is harmful, so a lower hazard is better"
	case s.Outcome == "binary" && s.HigherIsBetter:
		return "the outcome is desirable, so a higher proportion is better"
	case s.Outcome == "binary":
		return "the outcome is adverse, so a lower risk is better"
	case s.HigherIsBetter:
		return "a higher value of the outcome is better"
	}
	return "a lower value of the outcome is better"
}

// ratioWord names the ratio of a ratio margin.
func ratioWord(r *designs.Result) string {
	if r.Outcome == "time-to-event" {
		return "hazard ratio"
	}
	return vocabOf(r).ratio
}

// assume states the assumptions behind the effect.
func assume(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	f, g := groupsOf(r)
	v := vocabOf(r)
	refSrc := source(r, s.ReferenceKey)
	eff := source(r, s.EffectKey)
	e := r.Result.Effect
	switch r.Outcome {
	case "continuous":
		if r.Design == "cross-sectional" {
			share(b, r)
		}
		assumeMeans(b, r)
		return
	case "rate":
		unit := singular(s.TimeUnit)
		fmt.Fprintf(b, "We assume %s events per 100 person-%ss %s%s", rateText(s.UnexposedRate), unit, g.in(), source(r, "unexposed_rate"))
		if r.Solve != "effect" {
			fmt.Fprintf(b, " and plan for a rate ratio of %s%s (%s per 100 person-%ss %s)", num(s.RateRatio), eff, rateText(s.UnexposedRate*s.RateRatio), unit, f.in())
		}
		fmt.Fprintf(b, "; each participant is followed for %s%s", duration(s.PersonTime, s.TimeUnit), source(r, "person_time"))
		if s.Overdispersion > 0 {
			fmt.Fprintf(b, ", and counts vary between participants beyond Poisson variation, with an overdispersion of k = %s%s: negative-binomial counts with variance μ + kμ² (Zhu & Lakkis 2014)", num(s.Overdispersion), source(r, "overdispersion"))
		} else {
			b.WriteString(", with Poisson counts")
		}
		b.WriteString(". ")
		return
	case "time-to-event":
		fmt.Fprintf(b, "We assume exponential survival %s with %s (a hazard of %.4g per %s%s)",
			g.in(), survivalText(s), s.ControlHazard, singular(s.TimeUnit), srcSemi(r, controlKey(s)))
		switch {
		case r.Solve == "effect":
		case s.Hypothesis != "superiority" && s.HazardRatio == 1:
			b.WriteString(" and the same hazard in both arms")
		default:
			fmt.Fprintf(b, " and plan for a hazard ratio of %s%s", num(s.HazardRatio), eff)
		}
		if s.Accrual > 0 {
			fmt.Fprintf(b, ". Participants enter uniformly over %s and are followed for %s after the last one enters (%s in all)",
				duration(s.Accrual, s.TimeUnit), duration(s.FollowUp, s.TimeUnit), duration(s.Accrual+s.FollowUp, s.TimeUnit))
		} else {
			fmt.Fprintf(b, ". All participants enter together and are followed for %s", duration(s.FollowUp, s.TimeUnit))
		}
		if s.Dropout > 0 {
			fmt.Fprintf(b, ", with %s lost to follow-up per %s%s", pct(s.Dropout), singular(s.TimeUnit), source(r, "dropout"))
		}
		b.WriteString(". ")
		dilution(b, r)
		return
	}
	if r.Design == "cross-sectional" {
		share(b, r)
	}
	switch {
	case r.Design == "case-control" && r.Solve == "effect":
		fmt.Fprintf(b, "We assume a proportion exposed of %s %s%s. ", pct(s.P2), g.in(), refSrc)
	case r.Solve == "effect":
		fmt.Fprintf(b, "We assume a %s of %s %s%s. ", v.noun, pct(s.P2), g.in(), refSrc)
	case r.Design == "case-control":
		fmt.Fprintf(b, "We assume a proportion exposed of %s %s%s and plan for an odds ratio of %s%s, which means a proportion exposed of %s %s. ",
			pct(s.P2), g.in(), refSrc, num(*e.OddsRatio), eff, pct(*e.CaseExposure), f.in())
	case s.Hypothesis != "superiority" && s.P1 == s.P2:
		fmt.Fprintf(b, "We assume the same %s of %s in both arms%s. ", v.noun, pct(s.P2), refSrc)
	default:
		fmt.Fprintf(b, "We assume a %s of %s %s%s and plan for a %s of %s %s%s: a %s of %s (%s %s; odds ratio %s). ",
			v.noun, pct(s.P2), g.in(), refSrc, v.noun, pct(*e.FirstRisk), f.in(), eff, v.ratio, num(*e.RiskRatio), diffWord(v), pp(*e.RiskDifference), num(*e.OddsRatio))
	}
	if r.Solve != "effect" {
		dilution(b, r)
	}
}

// share states the expected share of the first group among those surveyed
// in a cross-sectional comparison.
func share(b *strings.Builder, r *designs.Result) {
	f, _ := groupsOf(r)
	fmt.Fprintf(b, "We expect %s to make up %s of those surveyed%s. ", f.subject("first"), pct(r.Spec.ExposurePrevalence), source(r, "exposure_prevalence"))
}

// diffWord is the difference's name inside parentheses after its ratio:
// "risk difference", or "difference" when the noun is a long phrase.
func diffWord(v vocab) string {
	if v.noun == "proportion" {
		return "difference"
	}
	return v.diff
}

func controlKey(s *designs.Spec) string {
	for _, g := range s.Given {
		if g.Key == "control_median" {
			return "control_median"
		}
	}
	return "control_survival"
}

// survivalText states the control arm's survival as given.
func survivalText(s *designs.Spec) string {
	for _, g := range s.Given {
		if g.Key == "control_median" {
			return "a median survival of " + durationText(g.Value, s.TimeUnit)
		}
	}
	var surv, t string
	for _, g := range s.Given {
		switch g.Key {
		case "control_survival":
			surv = g.Value
		case "time":
			t = g.Value
		}
	}
	return fmt.Sprintf("a survival of %s at %s", surv, durationText(t, s.TimeUnit))
}

// assumeMeans states the assumptions of a continuous outcome.
func assumeMeans(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	f, g := groupsOf(r)
	switch {
	case s.Pairing != "" && s.WithinCorrelation != 0:
		fmt.Fprintf(b, "We assume a standard deviation of %s for one measurement%s and a correlation of %s between a participant's two measurements, which give a standard deviation of %s for the difference (sd √(2(1 − ρ)))",
			num(s.RawSD1), source(r, "sd"), num(s.WithinCorrelation), num(s.SD1))
	case s.Pairing != "":
		fmt.Fprintf(b, "We assume a standard deviation of %s for a participant's difference between the two measurements%s", num(s.SD1), orSource(r, "sd_difference", "sd"))
	case s.RawSD1 != s.RawSD2:
		fmt.Fprintf(b, "We assume standard deviations of %s %s and %s %s%s", num(s.RawSD1), f.in(), num(s.RawSD2), g.in(), orSource(r, "sd_first", "sd_second"))
	default:
		fmt.Fprintf(b, "We assume a standard deviation of %s%s", num(s.RawSD1), source(r, "sd"))
	}
	// The effect joins the first sentence with "and", unless the baseline
	// adjustment or the correlation of a pair has made that sentence long:
	// then it has its own.
	verb, effect := "", ""
	if r.Solve != "effect" {
		if s.Hypothesis != "superiority" && s.MeanDiff == 0 {
			verb, effect = "assume", "no true difference between the arms"
		} else {
			label := "Cohen's d"
			if s.Pairing != "" {
				label = "d_z, in standard deviations of the difference"
			}
			verb, effect = "plan for", fmt.Sprintf("a difference in means of %s (%s = %s%s)", num(s.MeanDiff), label, num(*r.Result.Effect.StandardizedDifference), srcSemi(r, "mean_difference"))
		}
	}
	long := s.Pairing != "" && s.WithinCorrelation != 0
	if s.BaselineCorrelation > 0 {
		long = true
		fmt.Fprintf(b, "; adjusting for the baseline measurement by analysis of covariance (correlation %s with the outcome%s) shrinks the variance by the factor 1 − ρ² = %.4g, to a residual standard deviation of %s (Borm, Fransen & Lemmens 2007)",
			num(s.BaselineCorrelation), srcSemi(r, "baseline_correlation"), 1-s.BaselineCorrelation*s.BaselineCorrelation, num(s.SD1))
	}
	switch {
	case effect == "":
	case long:
		fmt.Fprintf(b, ". We %s %s", verb, effect)
	default:
		if verb == "assume" {
			verb = "" // "We assume a standard deviation of 2.2 and no true difference"
		} else {
			verb += " "
		}
		fmt.Fprintf(b, " and %s%s", verb, effect)
	}
	b.WriteString(". ")
	if s.Test == "t-welch" {
		b.WriteString("Welch's test takes its degrees of freedom from the Welch–Satterthwaite approximation. ")
	}
	dilution(b, r)
}

// srcSemi returns "; source: ..." for use inside parentheses.
func srcSemi(r *designs.Result, key string) string {
	if s := provenance(r, key); s != "" {
		return "; " + s
	}
	return ""
}

func orSource(r *designs.Result, keys ...string) string {
	for _, k := range keys {
		if s := source(r, k); s != "" {
			return s
		}
	}
	return ""
}

// dilution describes non-adherence and contamination.
func dilution(b *strings.Builder, r *designs.Result) {
	d := r.Result.DilutedEffect
	if d == nil {
		return
	}
	parts := dilutionParts(r)
	var seen string
	switch {
	case d.MeanDifference != nil:
		seen = "a difference in means of " + num(*d.MeanDifference) + " (Lachin & Foulkes 1986)"
	case d.HazardRatio != nil:
		seen = "a hazard ratio of " + num(*d.HazardRatio) + " (Lachin & Foulkes 1986)"
	default:
		v := vocabOf(r)
		seen = fmt.Sprintf("%ss of %s and %s (%s %s; Lachin & Foulkes 1986)", v.noun, pct(*d.FirstRisk), pct(*d.SecondRisk), v.ratio, num(*d.RiskRatio))
	}
	fmt.Fprintf(b, "With %s, an intention-to-treat analysis sees %s. ", strings.Join(parts, " and "), seen)
}

// dilutionParts names the non-adherence and contamination assumed.
func dilutionParts(r *designs.Result) []string {
	s := r.Spec
	f, g := groupsOf(r)
	var parts []string
	if s.NonAdherence > 0 {
		parts = append(parts, fmt.Sprintf("non-adherence of %s %s (allocated the intervention but not receiving it%s)", pct(s.NonAdherence), f.in(), srcSemi(r, "non_adherence")))
	}
	if s.Contamination > 0 {
		parts = append(parts, fmt.Sprintf("contamination of %s %s (receiving the intervention without being allocated it%s)", pct(s.Contamination), g.in(), srcSemi(r, "contamination")))
	}
	return parts
}

// allocationPhrase states the allocation without the labels, which the
// sizes that follow it name: "with equal allocation", "with 1:2
// allocation".
func allocationPhrase(r *designs.Result) string {
	s := r.Spec
	switch {
	case r.Design == "cross-sectional":
		return "with the groups in the proportions expected among those surveyed"
	case s.Pairing == "paired":
		return ""
	case s.Matched:
		alloc := "with " + controlsWord(s.Controls) + " matched to each case"
		if s.ExposureCorrelation > 0 {
			alloc += fmt.Sprintf(" and a correlation of exposure of %s within sets%s", num(s.ExposureCorrelation), source(r, "matching.exposure_correlation"))
		}
		return alloc
	}
	alloc := "with " + allocation(*r.Ratio) + " allocation"
	if *r.Ratio == 1 {
		alloc = "with equal allocation"
	}
	if s.Pairing == "crossover" {
		alloc += " between the sequences"
	}
	return alloc
}

// conclude states the answer.
func conclude(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	a := r.Result
	f, g := groupsOf(r)
	method := methodPhrase(r.Method, r.MethodName)
	alloc := allocationPhrase(r)
	switch r.Solve {
	case "n":
		target := "To reach a power of at least " + pct1(*r.Power)
		if alloc != "" {
			target += " " + alloc
		}
		switch {
		case r.Outcome == "time-to-event":
			per, all := "", fmt.Sprintf("%s in all", count(a.Total))
			if a.Arms > 2 {
				per, all = " per comparison", "for each comparison"
			}
			need, rounded := eventsRequired(r)
			if s.Interim != nil {
				per = " at most" + per
				if strings.HasSuffix(rounded, ")") {
					rounded = strings.TrimSuffix(rounded, ")") + "; the group-sequential maximum, below)"
				} else {
					rounded += " (the group-sequential maximum, below)"
				}
			}
			fmt.Fprintf(b, "%s, %s requires %s events%s%s. With the expected probabilities of an observed event (Lachin & Foulkes 1986), the smallest sizes expected to yield %s events are %s and %s, %s (%.1f events expected); the achieved power is %s. ",
				target, method, need, per, rounded, need, f.size(a.N[0]), g.size(a.N[1]), all, *a.ExpectedEvents, pct1(*a.AchievedPower))
		case s.Pairing == "paired":
			fmt.Fprintf(b, "%s, %s requires %s pairs; the achieved power is %s. ", target, method, count(a.N[0]), pct1(*a.AchievedPower))
		case r.Design == "cross-sectional":
			fmt.Fprintf(b, "%s, %s requires %s analysable respondents, expected to divide into about %s and %s; the achieved power at these numbers is %s. ",
				target, method, count(a.Total), f.size(a.N[0]), g.size(a.N[1]), pct1(*a.AchievedPower))
		case a.Arms > 2:
			fmt.Fprintf(b, "%s, %s requires, for each comparison, %s and %s; the achieved power at these numbers is %s. ",
				target, method, f.size(a.N[0]), g.size(a.N[1]), pct1(*a.AchievedPower))
		case s.Cluster != nil && a.Clusters != nil:
			fmt.Fprintf(b, "%s, %s requires %s and %s, %s analysable in all; the achieved power at these numbers is %s. ",
				target, clusterTest(r, ""), f.size(a.N[0]), g.size(a.N[1]), count(a.Total), pct1(*a.AchievedPower))
			if clusterStartNamed(r) {
				fmt.Fprintf(b, "The search for these sizes starts from the individual-level size given by %s, inflated by the design effect. ", method)
			}
		default:
			most, maxNote := "", ""
			if s.Interim != nil {
				most, maxNote = "at most ", " (the group-sequential maximum, below)"
			}
			fmt.Fprintf(b, "%s, %s requires %s%s and %s, %s analysable in all%s; the achieved power at these numbers is %s. ",
				target, method, most, f.size(a.N[0]), g.size(a.N[1]), count(a.Total), maxNote, pct1(*a.AchievedPower))
		}
		clusterSentence(b, r)
		armsSentence(b, r)
		if a.UndilutedN != nil && fmt.Sprint(a.UndilutedN) != fmt.Sprint(a.N) {
			fmt.Fprintf(b, "Without the dilution, %s would have sufficed. ", groupSizes(r, a.UndilutedN))
		}
		inflation(b, r)
	case "power":
		if s.Pairing == "paired" {
			fmt.Fprintf(b, "The planned enrolment of %s ", enrolList(r))
		} else {
			fmt.Fprintf(b, "The planned enrolment of %s, %s in all, ", enrolList(r), count(a.EnrolTotal))
		}
		if r.Attrition > 0 {
			fmt.Fprintf(b, "leaves about %s analysable after %s attrition", sizeList(a.N, r), pct(r.Attrition))
		} else {
			b.WriteString("is assumed to be fully analysable")
		}
		if r.DesignEff > 1 {
			fmt.Fprintf(b, ", with a design effect of %.4g", r.DesignEff)
		}
		if a.ExpectedEvents != nil {
			fmt.Fprintf(b, ", and is expected to yield %.1f events", *a.ExpectedEvents)
		}
		switch fixed, ok := stepOutput(r, "fixed_power"); {
		case ok && s.Interim != nil:
			// The method gives the fixed-sample power; the boundaries
			// take it to the group-sequential power.
			who := method + " gives"
			if s.Cluster != nil && a.Clusters != nil {
				who = clusterTest(r, "") + " has"
			}
			fmt.Fprintf(b, ". Under these assumptions %s a power of %s for a single analysis at these sizes; with the interim analyses below, the power is %s. ", who, pct1(fixed), pct1(*a.AchievedPower))
		case s.Cluster != nil && a.Clusters != nil:
			fmt.Fprintf(b, ". Under these assumptions %s has a power of %s. ", clusterTest(r, ""), pct1(*a.AchievedPower))
		default:
			fmt.Fprintf(b, ". Under these assumptions %s gives a power of %s. ", method, pct1(*a.AchievedPower))
		}
		clusterSentence(b, r)
	case "effect":
		fmt.Fprintf(b, "With %s enrolled (%s analysable", enrolList(r), sizeList(a.N, r))
		if r.DesignEff > 1 {
			fmt.Fprintf(b, ", design effect %.4g", r.DesignEff)
		}
		if s.Cluster != nil && a.Clusters != nil {
			method = clusterTest(r, fmt.Sprintf("%d and %d clusters, ", a.Clusters[0], a.Clusters[1]))
		}
		fmt.Fprintf(b, "), %s sets the smallest effect detectable with %s power", method, pct1(*r.Power))
		det := a.Detectable
		var vs []float64
		var es []*designs.Effect
		for _, side := range []struct {
			v *float64
			e *designs.Effect
		}{{det.Lower, det.LowerEffect}, {det.Upper, det.UpperEffect}} {
			if side.v != nil {
				vs, es = append(vs, *side.v), append(es, side.e)
			}
		}
		if len(vs) == 0 {
			b.WriteString(": no effect in either direction reaches that power. ")
		} else {
			fmt.Fprintf(b, " at %s. ", effectPhrase(r, det.Scale, vs, es))
		}
		if dd := det.Diluted; dd != nil && len(vs) > 0 {
			var seen []float64
			for _, v := range []*float64{dd.Lower, dd.Upper} {
				if v != nil {
					seen = append(seen, *v)
				}
			}
			fmt.Fprintf(b, "These are the effects of receiving the intervention; with %s, an intention-to-treat analysis sees %s (Lachin & Foulkes 1986). ",
				strings.Join(dilutionParts(r), " and "), effectPhrase(r, det.Scale, seen, nil))
		}
	}
}

// eventsRequired states the events a time-to-event plan requires, from
// the steps recorded: the unrounded events D* ("379.4") and, when they are
// not whole, " (380 when rounded up)". The sizes are converted from D*
// itself (README, "Keys of a time-to-event outcome").
func eventsRequired(r *designs.Result) (string, string) {
	star, ok1 := stepOutput(r, "events_star")
	events, ok2 := stepOutput(r, "events")
	if !ok1 || !ok2 {
		return count(r.Result.Events), ""
	}
	if star == events {
		return count(int(events)), ""
	}
	d := 1
	for d < 4 && strconv.FormatFloat(star, 'f', d, 64) == strconv.FormatFloat(events, 'f', d, 64) {
		d++
	}
	return strconv.FormatFloat(star, 'f', d, 64), fmt.Sprintf(" (%s when rounded up)", count(int(events)))
}

// stepOutput returns the output of the first step called name.
func stepOutput(r *designs.Result, name string) (float64, bool) {
	for _, st := range r.Steps {
		if st.Name == name {
			return st.Output, true
		}
	}
	return 0, false
}

// clusterStartNamed reports whether the summary of a cluster plan names
// the formula whose individual-level size starts the search for the
// clusters: it does when the steps record that size (solving n).
func clusterStartNamed(r *designs.Result) bool {
	if r.Spec.Cluster == nil || r.Result.Clusters == nil || r.Solve != "n" {
		return false
	}
	_, ok := stepOutput(r, "n_star")
	return ok
}

// clusterTest names the cluster-level analysis: "a t test on the cluster
// summaries (56 degrees of freedom; Donner & Klar 2000)"; extra goes
// before the degrees of freedom.
func clusterTest(r *designs.Result, extra string) string {
	c := r.Result.Clusters
	return fmt.Sprintf("a t test on the cluster summaries (%s%d degrees of freedom; Donner & Klar 2000)", extra, c[0]+c[1]-2)
}

// effectPhrase states one or two effects on the scale of an effect key, in
// one phrase that says each shared part once: "a difference in means of
// ±1.94", "a risk ratio of 0.33 or 1.91 (risk 1.65% or 9.55% among the
// exposed against 5% among the unexposed)", "a risk of 5.2% or 15.3% for
// leaflet-and-call recipients, against 10% for leaflet recipients". es,
// when given, holds the effect on every scale at each value.
func effectPhrase(r *designs.Result, scale string, vs []float64, es []*designs.Effect) string {
	f, g := groupsOf(r)
	noun := vocabOf(r).noun
	if r.Design == "case-control" {
		noun = "proportion exposed"
	}
	// The risks (or exposures) at each value, when every value has them
	// against one reference.
	var firsts []string
	reference := ""
	for i, e := range es {
		var first, second string
		switch {
		case e != nil && e.CaseExposure != nil:
			first, second = pct(*e.CaseExposure), pct(*e.ControlExposure)
		case e != nil && e.FirstRisk != nil:
			first, second = pct(*e.FirstRisk), pct(*e.SecondRisk)
		}
		if first == "" || (i > 0 && second != reference) {
			firsts = nil
			break
		}
		firsts, reference = append(firsts, first), second
	}
	if firstRiskScale(scale) {
		values := make([]string, len(vs))
		for i, v := range vs {
			values[i] = valueOn(scale, v)
		}
		text := fmt.Sprintf("%s %s of %s %s", article(noun), noun, strings.Join(values, " or "), f.in())
		if len(firsts) == len(vs) {
			text += fmt.Sprintf(", against %s %s", reference, g.in())
		}
		return text
	}
	name := scaleName(r, scale)
	text := fmt.Sprintf("%s %s of %s", article(name), name, orValues(scale, vs))
	if len(firsts) > 0 && len(firsts) == len(vs) {
		fb, gb := f.bracketed(), g.bracketed()
		text += fmt.Sprintf(" (%s %s %s against %s %s)", noun, strings.Join(firsts, " or "), fb.in(), reference, gb.in())
	}
	return text
}

// orValues joins one or two values on a scale: "0.33 or 1.91", or "±1.94"
// and "±5 percentage points" for two values of opposite sign and equal
// size.
func orValues(scale string, vs []float64) string {
	texts := make([]string, len(vs))
	for i, v := range vs {
		texts[i] = valueOn(scale, v)
	}
	if len(texts) == 2 && strings.HasPrefix(texts[0], "−") {
		lo, hi := strings.TrimPrefix(texts[0], "−"), strings.TrimPrefix(texts[1], "+")
		if lo == hi {
			return "±" + lo
		}
	}
	return strings.Join(texts, " or ")
}

// sizeList phrases analysable sizes: "12 pairs" or "20 and 20".
func sizeList(n []int, r *designs.Result) string {
	if len(n) == 1 {
		if r.Spec.Pairing == "paired" {
			return count(n[0]) + " pairs"
		}
		return count(n[0])
	}
	return count(n[0]) + " and " + count(n[1])
}

// groupSizes phrases the sizes of every group: "94 in the intervention
// arm and 94 in the control arm", or with several arms "94 in each of the
// 2 intervention arms and 94 in the control arm".
func groupSizes(r *designs.Result, n []int) string {
	a := r.Result
	f, g := groupsOf(r)
	switch {
	case len(n) == 1:
		return sizeList(n, r)
	case a.Arms > 2 && r.Spec.Comparisons == "all-pairs":
		return fmt.Sprintf("%s in each of the %d arms", count(n[0]), a.Arms)
	case a.Arms > 2:
		return fmt.Sprintf("%s in each of the %d intervention arms and %s in %s", count(n[0]), a.Arms-1, count(n[1]), g.controlArm())
	}
	return f.size(n[0]) + " and " + g.size(n[1])
}

// enrolList phrases the enrolment per group.
func enrolList(r *designs.Result) string {
	return groupSizes(r, r.Result.Enrol)
}

// clusterSentence describes a cluster design.
func clusterSentence(b *strings.Builder, r *designs.Result) {
	c := r.Spec.Cluster
	a := r.Result
	if c == nil || a.Clusters == nil {
		return
	}
	deff := "1 + (m − 1) ICC (Donner & Klar 2000)"
	if c.SizeCV > 0 {
		deff = fmt.Sprintf("1 + ((cv² + 1) m − 1) ICC (Donner & Klar 2000; Eldridge, Ashby & Kerry 2006), with a cluster-size coefficient of variation of %s", num(c.SizeCV))
	}
	f, g := groupsOf(r)
	fmt.Fprintf(b, "Clusters of %s participants on average with an intracluster correlation of %s%s give a design effect of %.4g, from %s. Enrolling them takes %s and %s, which bring %s and %s participants. ",
		num(c.Size), num(c.ICC), source(r, "cluster.icc"), *a.DesignEffect, deff,
		clustersIn(f, a.Clusters[0]), clustersIn(g, a.Clusters[1]),
		count(a.WholeClusters[0]), count(a.WholeClusters[1]))
}

// clustersIn phrases a number of clusters for a group: "29 clusters in
// the club schools", "12 clusters (home visits)".
func clustersIn(g group, k int) string {
	return g.quantity(count(k) + " clusters")
}

// armsSentence gives the totals of a trial with several arms.
func armsSentence(b *strings.Builder, r *designs.Result) {
	a := r.Result
	if a.Arms <= 2 {
		return
	}
	fmt.Fprintf(b, "In all, %s participants are analysable: %s. ", count(a.Total), groupSizes(r, a.N))
}

// inflation describes the design effect and attrition steps.
func inflation(b *strings.Builder, r *designs.Result) {
	a := r.Result
	if r.Spec.Pairing == "paired" {
		if r.Attrition > 0 {
			fmt.Fprintf(b, "Allowing for %s attrition, we will enrol %s pairs.", pct(r.Attrition), count(a.EnrolTotal))
		} else {
			fmt.Fprintf(b, "No attrition is expected, so the enrolment target is %s pairs.", count(a.EnrolTotal))
		}
		return
	}
	if r.Outcome == "time-to-event" {
		if r.Spec.Dropout > 0 {
			fmt.Fprintf(b, "Losses to follow-up are already counted in the event probabilities, so the enrolment target is %s in total.", count(a.EnrolTotal))
		} else {
			fmt.Fprintf(b, "No loss to follow-up is expected, so the enrolment target is %s in total.", count(a.EnrolTotal))
		}
		return
	}
	if r.Design == "cross-sectional" {
		f, g := groupsOf(r)
		if r.DesignEff > 1 {
			fmt.Fprintf(b, "These numbers include a design effect of %g%s. ", r.DesignEff, source(r, "design_effect"))
		}
		if r.Attrition > 0 {
			fmt.Fprintf(b, "Allowing for %s non-response%s, we will invite %s people, about %s and %s.",
				pct(r.Attrition), source(r, "attrition"), count(a.EnrolTotal), f.size(a.Enrol[0]), g.size(a.Enrol[1]))
		} else {
			fmt.Fprintf(b, "No non-response is expected, so we will survey %s people.", count(a.EnrolTotal))
		}
		return
	}
	switch {
	case r.Spec.Cluster != nil && r.Attrition > 0:
		fmt.Fprintf(b, "Allowing for %s attrition, we will enrol %s, %s in total.",
			pct(r.Attrition), groupSizes(r, a.Enrol), count(a.EnrolTotal))
	case r.Spec.Cluster != nil:
		fmt.Fprintf(b, "No attrition is expected, so the enrolment target is %s in total.", count(a.EnrolTotal))
	case r.DesignEff > 1 && r.Attrition > 0:
		fmt.Fprintf(b, "These numbers include a design effect of %g; allowing further for %s attrition, we will enrol %s, %s participants in total.",
			r.DesignEff, pct(r.Attrition), groupSizes(r, a.Enrol), count(a.EnrolTotal))
	case r.DesignEff > 1:
		fmt.Fprintf(b, "These numbers include a design effect of %g; no attrition is expected, so the enrolment target is %s in total.", r.DesignEff, count(a.EnrolTotal))
	case r.Attrition > 0:
		fmt.Fprintf(b, "Allowing for %s attrition, we will enrol %s, %s participants in total.",
			pct(r.Attrition), groupSizes(r, a.Enrol), count(a.EnrolTotal))
	default:
		fmt.Fprintf(b, "No attrition is expected, so the enrolment target is %s in total.", count(a.EnrolTotal))
	}
}

func precisionParagraph(r *designs.Result) string {
	s := r.Spec
	a := r.Result
	var b strings.Builder
	if r.Outcome == "continuous" {
		return meanPrecisionParagraph(r)
	}
	if r.Design != "cross-sectional" {
		return ratioPrecisionParagraph(r)
	}
	outcome := s.PrimaryOutcome
	if outcome == "" {
		outcome = "the binary outcome under study"
	}
	interval := map[string]string{
		"wald":            "Wald, normal approximation; Cochran 1977",
		"wilson":          "the Wilson score interval; Wilson 1927",
		"clopper-pearson": "the Clopper-Pearson interval from beta quantiles; Clopper & Pearson 1934",
	}[r.Method]
	fmt.Fprintf(&b, "The primary outcome is %s, expected in about %s of the population%s; the survey will estimate this proportion with a %s confidence interval (%s). ",
		outcome, pct(s.ExpectedPrevalence), source(r, "expected_prevalence"), pct(s.Confidence), interval)
	marg := strings.TrimSuffix(pct(*a.Margin), "%")
	n0 := fmt.Sprintf("n₀ = %.2f, rounded up to", a.N0)
	if r.Method != "wald" {
		n0 = fmt.Sprintf("n₀ = %s respondents (the smallest whose interval at the expected count has half-width within the margin), hence", count(int(a.N0)))
	}
	if r.Solve == "n" {
		adjusted := r.DesignEff != 1 || s.Population > 0
		if !adjusted {
			fmt.Fprintf(&b, "For a margin of ±%s percentage points, simple random sampling needs %s %s respondents. ", marg, n0, count(a.Total))
		} else {
			if r.Method == "wald" {
				fmt.Fprintf(&b, "For a margin of ±%s percentage points, simple random sampling would need n₀ = %.2f", marg, a.N0)
			} else {
				fmt.Fprintf(&b, "For a margin of ±%s percentage points, simple random sampling would need n₀ = %s respondents (the smallest whose interval at the expected count has half-width within the margin)", marg, count(int(a.N0)))
			}
			var changes []string
			if r.DesignEff != 1 {
				changes = append(changes, fmt.Sprintf("the design effect of %g%s raises this", r.DesignEff, source(r, "design_effect")))
			}
			if s.Population > 0 {
				changes = append(changes, fmt.Sprintf("the finite population of %s lowers it", count(s.Population)))
			}
			fmt.Fprintf(&b, "; %s, to %.2f, rounded up to %s respondents. ", strings.Join(changes, " and "), a.NStar, count(a.Total))
		}
		invitedSentence(&b, r)
	} else {
		invitingClause(&b, r)
		fmt.Fprintf(&b, ", the estimate will lie within ±%s percentage points of the true proportion at that confidence level.", marg)
	}
	if e := a.ExpectedInterval; len(e) == 2 {
		fmt.Fprintf(&b, " At the expected prevalence the interval is expected to run from %s to %s; this is a planning value at the expected prevalence, not a guarantee for the prevalence observed, whose interval will be wider or narrower with it.", pct(e[0]), pct(e[1]))
	}
	return b.String()
}

// article returns "an" before a vowel and "a" otherwise.
func article(word string) string {
	if word != "" && strings.ContainsAny(word[:1], "aeiouAEIOU") {
		return "an"
	}
	return "a"
}

// logisticParagraph writes the justification of a binary outcome related
// to a continuous exposure by logistic regression.
func logisticParagraph(r *designs.Result) string {
	s := r.Spec
	a := r.Result
	var b strings.Builder
	outcome := "the binary primary outcome"
	if s.PrimaryOutcome != "" {
		outcome = "the primary outcome, " + s.PrimaryOutcome + ","
	}
	who := "participants"
	if r.Design == "cross-sectional" {
		who = "respondents"
	}
	fmt.Fprintf(&b, "%s will be related to the exposure, measured on a continuous scale, by logistic regression; the exposure's coefficient will be tested by the Wald test at a %s alpha of %g. ", capitalise(outcome), sidesWord(r.Sides), *r.Alpha)
	fmt.Fprintf(&b, "We assume that %s of %s at the mean of the exposure have the outcome%s", pct(s.EventRate), who, source(r, "event_rate"))
	if r.Solve != "effect" {
		fmt.Fprintf(&b, " and plan for an odds ratio of %s per standard deviation of the exposure%s", num(s.ORPerSD), source(r, "odds_ratio_per_sd"))
	}
	b.WriteString(", the exposure being roughly normally distributed. ")
	adjustment(&b, r)
	method := methodPhrase(r.Method, r.MethodName)
	switch r.Solve {
	case "n":
		fmt.Fprintf(&b, "To reach a power of at least %s, %s requires %s analysable %s; the achieved power is %s. ",
			pct1(*r.Power), method, count(a.N[0]), who, pct1(*a.AchievedPower))
		lost, verb := "attrition", "enrol"
		if r.Design == "cross-sectional" {
			lost, verb = "non-response", "invite"
		}
		if r.Attrition > 0 {
			fmt.Fprintf(&b, "Allowing for %s %s%s, we will %s %s.", pct(r.Attrition), lost, source(r, "attrition"), verb, count(a.EnrolTotal))
		} else {
			fmt.Fprintf(&b, "No %s is expected, so we will %s %s.", lost, verb, count(a.EnrolTotal))
		}
	case "power":
		fmt.Fprintf(&b, "With %s enrolled and %s analysable, %s gives a power of %s.", count(a.EnrolTotal), count(a.N[0]), method, pct1(*a.AchievedPower))
	case "effect":
		fmt.Fprintf(&b, "With %s analysable, %s gives a power of %s for an odds ratio per standard deviation of %s.",
			count(a.N[0]), method, pct1(*r.Power), orValues("odds ratio", detectableValues(a.Detectable)))
	}
	return strings.TrimSpace(b.String())
}

// detectableValues lists the detectable effects that were reached.
func detectableValues(d *designs.Detectable) []float64 {
	var out []float64
	if d == nil {
		return out
	}
	for _, v := range []*float64{d.Lower, d.Upper} {
		if v != nil {
			out = append(out, *v)
		}
	}
	return out
}

// meanPrecisionParagraph is the justification of a survey that estimates
// one mean to within ± margin by the t interval.
func meanPrecisionParagraph(r *designs.Result) string {
	s := r.Spec
	a := r.Result
	var b strings.Builder
	outcome := s.PrimaryOutcome
	if outcome == "" {
		outcome = "the measurement under study"
	}
	fmt.Fprintf(&b, "The primary outcome is %s, with a standard deviation of about %s%s; the survey will estimate its mean with a %s confidence interval (the t interval; Student 1908). ",
		outcome, num(s.SD1), source(r, "sd"), pct(s.Confidence))
	if r.Solve == "n" {
		fmt.Fprintf(&b, "For a margin of ±%s, simple random sampling needs n₀ = %s respondents, the smallest for which t × sd / √n₀ is within the margin", num(s.Margin), count(int(a.N0)))
		var changes []string
		if r.DesignEff != 1 {
			changes = append(changes, fmt.Sprintf("the design effect of %g%s raises this", r.DesignEff, source(r, "design_effect")))
		}
		if s.Population > 0 {
			changes = append(changes, fmt.Sprintf("the finite population of %s lowers it", count(s.Population)))
		}
		if len(changes) > 0 {
			fmt.Fprintf(&b, "; %s, to %.2f, rounded up to %s respondents. ", strings.Join(changes, " and "), a.NStar, count(a.Total))
		} else {
			b.WriteString(". ")
		}
		invitedSentence(&b, r)
	} else {
		invitingClause(&b, r)
		fmt.Fprintf(&b, ", the interval will reach about ±%s around the mean at that confidence level.", num(*a.Margin))
	}
	b.WriteString(" The margin assumes the standard deviation stated; the interval observed will be wider if the spread is larger.")
	return b.String()
}

// accuracyParagraph is the justification of a study of diagnostic
// accuracy sized for its sensitivity and specificity (Buderer 1996).
func accuracyParagraph(r *designs.Result) string {
	s := r.Spec
	a := r.Result
	var b strings.Builder
	test := "the test"
	if s.PrimaryOutcome != "" {
		test = "the test for " + s.PrimaryOutcome
	}
	fmt.Fprintf(&b, "The study will estimate the sensitivity and specificity of %s, expected to be about %s%s and %s%s, each with a %s Wald confidence interval; the condition is expected in %s of those tested%s (Buderer 1996). ",
		test, pct(s.Sensitivity), source(r, "sensitivity"), pct(s.Specificity), source(r, "specificity"), pct(s.Confidence), pct(s.ConditionPrevalence), source(r, "condition_prevalence"))
	marg := strings.TrimSuffix(pct(s.Margin), "%")
	switch r.Solve {
	case "n":
		fmt.Fprintf(&b, "For a margin of ±%s percentage points, the sensitivity needs %.2f participants (enough to include about %.1f with the condition) and the specificity %.2f; the larger, rounded up, is %s participants.",
			marg, *a.NSensitivity, *a.NSensitivity*s.ConditionPrevalence, *a.NSpecificity, count(a.Total))
		if r.Attrition > 0 {
			fmt.Fprintf(&b, " Allowing for %s non-response or unusable results%s, %s people will be tested.", pct(r.Attrition), source(r, "attrition"), count(a.EnrolTotal))
		} else {
			fmt.Fprintf(&b, " No loss is expected, so %s people will be tested.", count(a.EnrolTotal))
		}
	case "effect":
		fmt.Fprintf(&b, "Testing %s people", count(a.EnrolTotal))
		if r.Attrition > 0 {
			fmt.Fprintf(&b, " and expecting %s to be lost (%s with usable results)", pct(r.Attrition), count(a.Total))
		}
		fmt.Fprintf(&b, ", the sensitivity will be estimated within about ±%s percentage points and the specificity within ±%s.",
			strings.TrimSuffix(pct(*a.MarginSensitivity), "%"), strings.TrimSuffix(pct(*a.MarginSpecificity), "%"))
	}
	b.WriteString(" These are planning values at the expected sensitivity, specificity and prevalence, not guarantees for the values observed.")
	return b.String()
}

// ratioPrecisionParagraph is the justification of a risk or odds ratio
// estimated to a stated precision.
func ratioPrecisionParagraph(r *designs.Result) string {
	s := r.Spec
	a := r.Result
	var b strings.Builder
	f, g := groupsOf(r)
	measure, who, what := "risk ratio", "risk", "Katz et al. 1978"
	if r.Design == "case-control" {
		measure, who, what = "odds ratio", "proportion exposed", "Woolf 1955"
	}
	e := a.Effect
	ratio := e.RiskRatio
	if ratio == nil {
		ratio = e.OddsRatio
	}
	fmt.Fprintf(&b, "The study will estimate the %s of %s against %s with a %s confidence interval on the log scale (%s). We assume a %s of %s %s%s and %s %s, %s %s of %s. ",
		measure, f.ref, g.ref, pct(s.Confidence), what, who, pct(s.P2), g.in(), source(r, s.ReferenceKey), pct(s.P1), f.in(), article(measure), measure, num(*ratio))
	switch r.Solve {
	case "n":
		fmt.Fprintf(&b, "For an interval whose upper limit is at most %s times its lower limit, %s requires %s and %s (%.2f in the first group before rounding); at these numbers the upper limit is %s times the lower. ",
			num(s.PrecisionRatio), methodPhrase(r.Method, r.MethodName), f.size(a.N[0]), g.size(a.N[1]), a.NStar, num(*a.PrecisionRatio))
		if r.Attrition > 0 {
			fmt.Fprintf(&b, "Allowing for %s attrition, we will enrol %s, %s in total.", pct(r.Attrition), groupSizes(r, a.Enrol), count(a.EnrolTotal))
		} else {
			fmt.Fprintf(&b, "No attrition is expected, so the enrolment target is %s in total.", count(a.EnrolTotal))
		}
	case "effect":
		fmt.Fprintf(&b, "With %s and %s analysable, the upper limit of the interval is expected to be %s times the lower.", f.size(a.N[0]), g.size(a.N[1]), num(*a.PrecisionRatio))
	}
	if iv := a.ExpectedInterval; len(iv) == 2 {
		fmt.Fprintf(&b, " At the planned %s of %s the interval is expected to run from %s to %s; this is a planning value at the assumed %ss, not a guarantee for the interval observed.", measure, num(*ratio), num(iv[0]), num(iv[1]), map[bool]string{true: "exposure", false: "risk"}[r.Design == "case-control"])
	}
	return b.String()
}

// invitedSentence says how many people a survey sized for its respondents
// will invite, allowing for non-response.
func invitedSentence(b *strings.Builder, r *designs.Result) {
	a := r.Result
	if r.Attrition > 0 {
		fmt.Fprintf(b, "Allowing for %s non-response%s, %s people will be invited.", pct(r.Attrition), source(r, "attrition"), count(a.EnrolTotal))
		return
	}
	fmt.Fprintf(b, "No non-response is expected, so %s people will be invited.", count(a.EnrolTotal))
}

// invitingClause opens the sentence of a survey whose invitations are
// given: the people invited, the respondents expected and the design
// effect; the caller says what the interval reaches.
func invitingClause(b *strings.Builder, r *designs.Result) {
	a := r.Result
	fmt.Fprintf(b, "Inviting %s people", count(a.EnrolTotal))
	if r.Attrition > 0 {
		fmt.Fprintf(b, " and expecting %s non-response%s (%s respondents)", pct(r.Attrition), source(r, "attrition"), count(a.Total))
	}
	if r.DesignEff > 1 {
		fmt.Fprintf(b, ", with a design effect of %g%s", r.DesignEff, source(r, "design_effect"))
	}
}
