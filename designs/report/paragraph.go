package report

import (
	"fmt"
	"strings"

	"enough/designs"
)

// paragraph writes the justification paragraph in the voice of a protocol.
func paragraph(r *designs.Result) string {
	if r.Goal == "precision" {
		return precisionParagraph(r)
	}
	var b strings.Builder
	intro(&b, r)
	assume(&b, r)
	conclude(&b, r)
	return strings.TrimSpace(b.String())
}

// methodPhrase names the chosen method in a sentence.
func methodPhrase(id, name string) string {
	switch id {
	case "fleiss-cc":
		return "Fleiss's formula with the continuity correction of Fleiss, Tytun & Ury (1980)"
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
		return "the exact power of the t test from the noncentral t distribution (Lenth 1989)"
	case "z":
		return "the normal approximation for means (Chow, Shao & Wang 2008)"
	case "schoenfeld":
		return "Schoenfeld's formula (1983)"
	case "freedman":
		return "Freedman's formula (1982)"
	case "exact":
		return "exact enumeration of the test's power over every pair of counts (Suissa & Shuster 1985)"
	}
	return name
}

// intro says what is compared and by which test.
func intro(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	outcome := s.PrimaryOutcome
	subject := "The primary outcome, " + outcome + ","
	if outcome == "" {
		outcome = "the " + r.Outcome + " primary outcome"
		subject = "The " + r.Outcome + " primary outcome"
	}
	first, second := r.FirstGroup, r.SecondGroup
	alpha := *r.Alpha
	var test string
	switch s.Hypothesis {
	case "non-inferiority":
		test = fmt.Sprintf("%s at a one-sided alpha of %g", r.TestName, alpha)
	case "equivalence":
		test = fmt.Sprintf("two one-sided tests (%s), each at an alpha of %g, which amounts to a %s confidence interval", r.TestName, alpha, pct(1-2*alpha))
	default:
		name := r.TestName
		if s.BaselineCorrelation > 0 {
			name = "analysis of covariance adjusting for the baseline value"
		}
		test = fmt.Sprintf("%s at a %s alpha of %g", name, sidesWord(r.Sides), alpha)
		if r.Sides == 1 {
			test += fmt.Sprintf(" (rejecting only when the %s %s)", first, directionWord(r))
		}
	}
	switch {
	case r.Design == "case-control":
		defines := outcome + " as the outcome that defines a case"
		if s.PrimaryOutcome == "" {
			defines = "cases defined by the outcome under study"
		}
		fmt.Fprintf(b, "The primary analysis compares the proportion exposed between %s and %s, with %s, using %s. ", first, second, defines, test)
	case r.Design == "cross-sectional":
		fmt.Fprintf(b, "The survey compares %s between %s and %s respondents using %s. ", meanOrPrevalence(r, outcome), first, second, test)
	case s.Pairing == "paired":
		fmt.Fprintf(b, "%s will be compared within pairs (matched pairs, or the same participants before and after) using %s. ", subject, test)
	case s.Pairing == "crossover":
		fmt.Fprintf(b, "In a two-period AB/BA crossover, %s will be compared by contrasting the period differences between the two sequences (Senn 2002), using %s. ", strings.ToLower(subject[:1])+subject[1:], test)
	default:
		fmt.Fprintf(b, "%s will be compared between the %s and the %s using %s. ", subject, first, second, test)
	}
	switch {
	case s.Hypothesis == "non-inferiority" && s.MarginScale == "ratio":
		fmt.Fprintf(b, "The question is whether the %s is not worse than the %s beyond a non-inferiority margin of %s on the %s scale%s: %s, and the null hypothesis is that the %s, %s over %s, is %s %s. ",
			first, second, num(s.Margin), ratioWord(s), source(r, "margin"), betterText(s), ratioWord(s), first, second, map[bool]string{true: "at most", false: "at least"}[s.HigherIsBetter], num(s.Margin))
	case s.Hypothesis == "non-inferiority":
		fmt.Fprintf(b, "The question is whether the %s is not worse than the %s by more than the non-inferiority margin of %s (%s)%s. ", first, second, marginText(s), betterText(s), source(r, "margin"))
	case s.Hypothesis == "equivalence" && s.MarginScale == "ratio":
		fmt.Fprintf(b, "The question is whether the %s between the arms lies within the equivalence margins of %s and %s%s. ", ratioWord(s), num(1/s.Margin), num(s.Margin), source(r, "margin"))
	case s.Hypothesis == "equivalence":
		fmt.Fprintf(b, "The question is whether the difference between the arms lies within the equivalence margin of ±%s%s. ", marginText(s), source(r, "margin"))
	}
	if a := r.Result; a.Arms > 2 {
		what := "each intervention arm against the control arm"
		if s.Comparisons == "all-pairs" {
			what = "every pair of arms"
		}
		fmt.Fprintf(b, "The trial has %d arms; the %d comparisons (%s) each use alpha %g/%d = %.4g (Bonferroni), and the analysis will use Holm's procedure, which keeps the same family-wise error and is at least as powerful. ",
			a.Arms, a.Comparisons, what, alpha, a.Comparisons, *a.AlphaPerComparison)
	}
}

// directionWord says which way a one-sided superiority test looks.
func directionWord(r *designs.Result) string {
	lower := r.Spec.Direction < 0
	what := "risk"
	switch {
	case r.Outcome == "continuous":
		what = "mean"
	case r.Outcome == "time-to-event":
		what = "hazard"
	case r.Design == "case-control":
		what = "exposure"
	case r.Design == "cross-sectional":
		what = "prevalence"
	}
	if lower {
		return "has the lower " + what
	}
	return "has the higher " + what
}

func meanOrPrevalence(r *designs.Result, outcome string) string {
	if r.Outcome == "continuous" {
		return "the mean of " + outcome
	}
	return "the prevalence of " + outcome
}

// marginText states the margin on the outcome's scale.
func marginText(s *designs.Spec) string {
	if s.Outcome == "binary" {
		return strings.TrimPrefix(pp(s.Margin), "+")
	}
	return num(s.Margin)
}

func betterText(s *designs.Spec) string {
	if s.Outcome == "time-to-event" {
		if s.HigherIsBetter {
			return "the event is desirable, so a higher hazard is better"
		}
		return "the event is harmful, so a lower hazard is better"
	}
	if s.HigherIsBetter {
		return "a higher value of the outcome is better"
	}
	return "a lower value of the outcome is better"
}

// ratioWord names the ratio of a ratio margin.
func ratioWord(s *designs.Spec) string {
	if s.Outcome == "time-to-event" {
		return "hazard ratio"
	}
	return "risk ratio"
}

// assume states the assumptions behind the effect.
func assume(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	first, second := r.FirstGroup, r.SecondGroup
	refSrc := source(r, s.ReferenceKey)
	eff := source(r, s.EffectKey)
	e := r.Result.Effect
	switch r.Outcome {
	case "continuous":
		assumeMeans(b, r)
		return
	case "time-to-event":
		fmt.Fprintf(b, "We assume exponential survival in the %s with %s (a hazard of %.4g per %s%s)",
			second, survivalText(s), s.ControlHazard, singular(s.TimeUnit), srcSemi(r, controlKey(s)))
		switch {
		case r.Solve == "effect":
		case s.Hypothesis != "superiority" && s.HazardRatio == 1:
			b.WriteString(" and assume the same hazard in both arms")
		default:
			fmt.Fprintf(b, " and plan for a hazard ratio of %s%s", num(s.HazardRatio), eff)
		}
		fmt.Fprintf(b, ". Participants enter uniformly over %s %s and are followed for %s %s after the last one enters (%s %s in all)",
			num(s.Accrual), s.TimeUnit, num(s.FollowUp), s.TimeUnit, num(s.Accrual+s.FollowUp), s.TimeUnit)
		if s.Dropout > 0 {
			fmt.Fprintf(b, ", with %s lost to follow-up per %s%s", pct(s.Dropout), singular(s.TimeUnit), source(r, "dropout"))
		}
		b.WriteString(". ")
		dilution(b, r)
		return
	}
	if r.Solve == "effect" {
		switch r.Design {
		case "case-control":
			fmt.Fprintf(b, "We assume that %s of %s are exposed%s. ", pct(s.P2), second, refSrc)
		case "cross-sectional":
			fmt.Fprintf(b, "We expect %s of those surveyed to be exposed%s and a prevalence of %s among the unexposed%s. ", pct(s.ExposurePrevalence), source(r, "exposure_prevalence"), pct(s.P2), refSrc)
		default:
			fmt.Fprintf(b, "We assume a %s of %s in the %s%s. ", riskWord(r.Design), pct(s.P2), second, refSrc)
		}
		return
	}
	switch {
	case r.Design == "case-control":
		fmt.Fprintf(b, "We assume that %s of %s are exposed%s and plan for an odds ratio of %s%s, which means that %s of %s are exposed. ",
			pct(s.P2), second, refSrc, num(*e.OddsRatio), eff, pct(*e.CaseExposure), first)
	case r.Design == "cross-sectional":
		fmt.Fprintf(b, "We expect %s of those surveyed to be exposed%s, a prevalence of %s among the unexposed%s and of %s among the exposed%s: a prevalence ratio of %s (difference %s; odds ratio %s). ",
			pct(s.ExposurePrevalence), source(r, "exposure_prevalence"), pct(s.P2), refSrc, pct(*e.FirstRisk), eff, num(*e.RiskRatio), pp(*e.RiskDifference), num(*e.OddsRatio))
	case s.Hypothesis != "superiority" && s.P1 == s.P2:
		fmt.Fprintf(b, "We assume the same risk of %s in both arms%s. ", pct(s.P2), refSrc)
	default:
		fmt.Fprintf(b, "We assume a risk of %s in the %s%s and plan for a risk of %s in the %s%s: a risk ratio of %s (risk difference %s; odds ratio %s). ",
			pct(s.P2), second, refSrc, pct(*e.FirstRisk), first, eff, num(*e.RiskRatio), pp(*e.RiskDifference), num(*e.OddsRatio))
	}
	dilution(b, r)
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
			return fmt.Sprintf("a median survival of %s %s", g.Value, s.TimeUnit)
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
	return fmt.Sprintf("a survival of %s at %s %s", surv, t, s.TimeUnit)
}

// singular drops a plural s from a time unit: months → month.
func singular(unit string) string {
	if unit == "" {
		return unit
	}
	if strings.HasSuffix(unit, "s") && unit != "time units" {
		return strings.TrimSuffix(unit, "s")
	}
	if unit == "time units" {
		return "time unit"
	}
	return unit
}

// assumeMeans states the assumptions of a continuous outcome.
func assumeMeans(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	sdSrc := source(r, "sd")
	switch {
	case s.Pairing != "" && s.WithinCorrelation != 0:
		fmt.Fprintf(b, "We assume a standard deviation of %s for one measurement%s and a correlation of %s between a participant's two measurements, which give a standard deviation of %s for the difference (sd √(2(1 − ρ)))",
			num(s.RawSD1), source(r, "sd"), num(s.WithinCorrelation), num(s.SD1))
	case s.Pairing != "":
		fmt.Fprintf(b, "We assume a standard deviation of %s for a participant's difference between the two measurements%s", num(s.SD1), orSource(r, "sd_difference", "sd"))
	case s.RawSD1 != s.RawSD2:
		fmt.Fprintf(b, "We assume standard deviations of %s in the %s and %s in the %s%s", num(s.RawSD1), r.FirstGroup, num(s.RawSD2), r.SecondGroup, orSource(r, "sd_first", "sd_second"))
	default:
		fmt.Fprintf(b, "We assume a standard deviation of %s%s", num(s.RawSD1), sdSrc)
	}
	if s.BaselineCorrelation > 0 {
		fmt.Fprintf(b, "; adjusting for the baseline measurement by analysis of covariance (correlation %s with the outcome%s) shrinks the variance by the factor 1 − ρ² = %.4g, to a residual standard deviation of %s (Borm, Fransen & Lemmens 2007)",
			num(s.BaselineCorrelation), srcSemi(r, "baseline_correlation"), 1-s.BaselineCorrelation*s.BaselineCorrelation, num(s.SD1))
	}
	if r.Solve != "effect" {
		if s.Hypothesis != "superiority" && s.MeanDiff == 0 {
			b.WriteString("; we assume no true difference between the arms")
		} else {
			d := *r.Result.Effect.StandardizedDifference
			label := "Cohen's d"
			if s.Pairing != "" {
				label = "d_z, in standard deviations of the difference"
			}
			fmt.Fprintf(b, "; we plan for a difference in means of %s (%s = %s%s)", num(s.MeanDiff), label, num(d), srcSemi(r, "mean_difference"))
		}
	}
	b.WriteString(". ")
	if s.Test == "t-welch" {
		b.WriteString("The analysis uses Welch's test, whose degrees of freedom follow the Welch–Satterthwaite approximation. ")
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
		seen = "a difference in means of " + num(*d.MeanDifference)
	case d.HazardRatio != nil:
		seen = "a hazard ratio of " + num(*d.HazardRatio)
	default:
		seen = fmt.Sprintf("risks of %s and %s (risk ratio %s; Lachin & Foulkes 1986)", pct(*d.FirstRisk), pct(*d.SecondRisk), num(*d.RiskRatio))
	}
	if !strings.Contains(seen, "Lachin") {
		seen += " (Lachin & Foulkes 1986)"
	}
	fmt.Fprintf(b, "With %s, an intention-to-treat analysis sees %s. ", strings.Join(parts, " and "), seen)
}

// dilutionParts names the non-adherence and contamination assumed.
func dilutionParts(r *designs.Result) []string {
	s := r.Spec
	var parts []string
	if s.NonAdherence > 0 {
		parts = append(parts, fmt.Sprintf("%s of the %s not receiving the intervention%s", pct(s.NonAdherence), r.FirstGroup, source(r, "non_adherence")))
	}
	if s.Contamination > 0 {
		parts = append(parts, fmt.Sprintf("%s of the %s receiving the intervention nonetheless%s", pct(s.Contamination), r.SecondGroup, source(r, "contamination")))
	}
	return parts
}

// conclude states the answer.
func conclude(b *strings.Builder, r *designs.Result) {
	s := r.Spec
	a := r.Result
	first, second := r.FirstGroup, r.SecondGroup
	method := methodPhrase(r.Method, r.MethodName)
	alloc := fmt.Sprintf("with %s allocation (%s to %s)", allocation(*r.Ratio), first, second)
	switch {
	case r.Design == "cross-sectional":
		alloc = "with the groups in proportion to the exposure"
	case s.Pairing == "paired":
		alloc = ""
	case s.Pairing == "crossover":
		alloc = fmt.Sprintf("with %s allocation between the sequences", allocation(*r.Ratio))
	}
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
			fmt.Fprintf(b, "%s, %s requires %s events%s; with the expected probabilities of an observed event, that is %s and %s, %s, who are expected to yield %.1f events between them; the achieved power is %s. ",
				target, method, count(a.Events), per, members(a.N[0], first), members(a.N[1], second), all, *a.ExpectedEvents, pct1(*a.AchievedPower))
		case s.Pairing == "paired":
			fmt.Fprintf(b, "%s, %s requires %s pairs; the achieved power is %s. ", target, method, count(a.N[0]), pct1(*a.AchievedPower))
		case r.Design == "cross-sectional":
			fmt.Fprintf(b, "%s, %s requires %s analysable respondents, of whom about %s are expected to be exposed and %s unexposed; the achieved power at these numbers is %s. ",
				target, method, count(a.Total), count(a.N[0]), count(a.N[1]), pct1(*a.AchievedPower))
		case a.Arms > 2:
			fmt.Fprintf(b, "%s, %s requires, for each comparison, %s and %s; the achieved power at these numbers is %s. ",
				target, method, members(a.N[0], first), members(a.N[1], second), pct1(*a.AchievedPower))
		case s.Cluster != nil && a.Clusters != nil:
			fmt.Fprintf(b, "%s, a t test on the cluster summaries (%d degrees of freedom), with the design effect below, requires %s participants in the %s and %s in the %s, %s analysable in all; the achieved power at these numbers is %s. ",
				target, a.Clusters[0]+a.Clusters[1]-2, count(a.N[0]), first, count(a.N[1]), second, count(a.Total), pct1(*a.AchievedPower))
		default:
			fmt.Fprintf(b, "%s, %s requires %s and %s, %s analysable in all; the achieved power at these numbers is %s. ",
				target, method, members(a.N[0], first), members(a.N[1], second), count(a.Total), pct1(*a.AchievedPower))
		}
		clusterSentence(b, r)
		armsSentence(b, r)
		if a.UndilutedN != nil && fmt.Sprint(a.UndilutedN) != fmt.Sprint(a.N) {
			fmt.Fprintf(b, "Without the dilution, %s would have sufficed. ", sizeList(a.UndilutedN, r))
		}
		inflation(b, r)
	case "power":
		fmt.Fprintf(b, "The planned enrolment of %s (%s in all) ", enrolList(r), count(a.EnrolTotal))
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
		if s.Cluster != nil && a.Clusters != nil {
			fmt.Fprintf(b, ". Under these assumptions a t test on the cluster summaries (%d degrees of freedom) has a power of %s. ", a.Clusters[0]+a.Clusters[1]-2, pct1(*a.AchievedPower))
		} else {
			fmt.Fprintf(b, ". Under these assumptions %s gives a power of %s. ", method, pct1(*a.AchievedPower))
		}
		clusterSentence(b, r)
	case "effect":
		fmt.Fprintf(b, "With %s enrolled (%s analysable", enrolList(r), sizeList(a.N, r))
		if r.DesignEff > 1 {
			fmt.Fprintf(b, ", design effect %.4g", r.DesignEff)
		}
		if s.Cluster != nil && a.Clusters != nil {
			method = fmt.Sprintf("a t test on the cluster summaries (%d and %d clusters, %d degrees of freedom)", a.Clusters[0], a.Clusters[1], a.Clusters[0]+a.Clusters[1]-2)
		}
		fmt.Fprintf(b, "), %s sets the smallest effect detectable with %s power", method, pct1(*r.Power))
		det := a.Detectable
		var sides []string
		for _, side := range []struct {
			v *float64
			e *designs.Effect
		}{{det.Lower, det.LowerEffect}, {det.Upper, det.UpperEffect}} {
			if side.v == nil {
				continue
			}
			text := fmt.Sprintf("%s %s of %s", article(keyLabel(det.Scale)), keyLabel(det.Scale), valueOn(det.Scale, *side.v))
			if side.e != nil && (side.e.FirstRisk != nil || side.e.CaseExposure != nil) {
				text += " (" + restateShort(r, side.e) + ")"
			}
			sides = append(sides, text)
		}
		if len(sides) == 0 {
			b.WriteString(": no effect in either direction reaches that power. ")
		} else {
			fmt.Fprintf(b, " at %s. ", strings.Join(sides, " or "))
		}
		if dd := det.Diluted; dd != nil && len(sides) > 0 {
			var seen []string
			for _, v := range []*float64{dd.Lower, dd.Upper} {
				if v != nil {
					seen = append(seen, valueOn(det.Scale, *v))
				}
			}
			fmt.Fprintf(b, "These are the effects of receiving the intervention; with %s, an intention-to-treat analysis sees %s %s of %s (Lachin & Foulkes 1986). ",
				strings.Join(dilutionParts(r), " and "), article(keyLabel(det.Scale)), keyLabel(det.Scale), strings.Join(seen, " or "))
		}
	}
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
	switch {
	case a.Arms > 2 && r.Spec.Comparisons == "all-pairs":
		return fmt.Sprintf("%s in each of the %d arms", count(n[0]), a.Arms)
	case a.Arms > 2:
		arms := fmt.Sprintf("%d arms compared with the %s", a.Arms-1, r.SecondGroup)
		if l := r.FirstGroup; strings.HasSuffix(l, " arm") || strings.HasSuffix(l, " group") {
			arms = fmt.Sprintf("%d %ss", a.Arms-1, l)
		}
		return fmt.Sprintf("%s in each of the %s and %s", count(n[0]), arms, members(n[1], r.SecondGroup))
	}
	return members(n[0], r.FirstGroup) + " and " + members(n[1], r.SecondGroup)
}

// enrolList phrases the enrolment per group.
func enrolList(r *designs.Result) string {
	a := r.Result
	if len(a.Enrol) == 1 {
		return sizeList(a.Enrol, r)
	}
	return groupSizes(r, a.Enrol)
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
		deff = fmt.Sprintf("1 + ((cv² + 1) m − 1) ICC with a cluster-size coefficient of variation of %s (Eldridge, Ashby & Kerry 2006)", num(c.SizeCV))
	}
	fmt.Fprintf(b, "Clusters of %s participants on average with an intracluster correlation of %s%s give a design effect of %.4g, from %s. The arms need %s and %s clusters to enrol them, which bring %s and %s participants; the analysis is a t test on cluster summaries with %d degrees of freedom. ",
		num(c.Size), num(c.ICC), source(r, "cluster.icc"), *a.DesignEffect, deff, count(a.Clusters[0]), count(a.Clusters[1]),
		count(a.WholeClusters[0]), count(a.WholeClusters[1]), a.Clusters[0]+a.Clusters[1]-2)
}

// armsSentence gives the totals of a trial with several arms.
func armsSentence(b *strings.Builder, r *designs.Result) {
	a := r.Result
	if a.Arms <= 2 {
		return
	}
	if r.Spec.Comparisons == "all-pairs" {
		fmt.Fprintf(b, "Each of the %d arms has %s analysable participants, %s in all. ", a.Arms, count(a.N[0]), count(a.Total))
		return
	}
	fmt.Fprintf(b, "Each of the %d intervention arms has %s analysable participants and the control arm %s, %s in all. ", a.Arms-1, count(a.N[0]), count(a.N[1]), count(a.Total))
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
		if r.DesignEff > 1 {
			fmt.Fprintf(b, "These numbers include a design effect of %g. ", r.DesignEff)
		}
		if r.Attrition > 0 {
			fmt.Fprintf(b, "Allowing for %s non-response, we will invite %s people (about %s exposed and %s unexposed).",
				pct(r.Attrition), count(a.EnrolTotal), count(a.Enrol[0]), count(a.Enrol[1]))
		} else {
			fmt.Fprintf(b, "No non-response is expected, so we will survey %s people.", count(a.EnrolTotal))
		}
		return
	}
	switch {
	case r.Spec.Cluster != nil && r.Attrition > 0:
		fmt.Fprintf(b, "Allowing for %s attrition, we will enrol %s participants in the %s and %s in the %s, %s in total.",
			pct(r.Attrition), count(a.Enrol[0]), r.FirstGroup, count(a.Enrol[1]), r.SecondGroup, count(a.EnrolTotal))
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
	outcome := s.PrimaryOutcome
	if outcome == "" {
		outcome = "the outcome"
	}
	fmt.Fprintf(&b, "The survey will estimate the prevalence of %s, expected to be about %s%s, with a %s confidence interval (Wald, normal approximation; Cochran 1977). ",
		outcome, pct(s.ExpectedPrevalence), source(r, "expected_prevalence"), pct(s.Confidence))
	marg := strings.TrimSuffix(pct(*a.Margin), "%")
	if r.Solve == "n" {
		fmt.Fprintf(&b, "For a margin of ±%s percentage points, simple random sampling needs n₀ = %.2f respondents (unrounded)", marg, a.N0)
		if r.DesignEff > 1 {
			fmt.Fprintf(&b, "; the design effect of %g%s raises this", r.DesignEff, source(r, "design_effect"))
		}
		if s.Population > 0 {
			fmt.Fprintf(&b, "; the finite population of %s lowers it", count(s.Population))
		}
		fmt.Fprintf(&b, ", to %s respondents. ", count(a.Total))
		if r.Attrition > 0 {
			fmt.Fprintf(&b, "Allowing for %s non-response%s, %s people will be invited.", pct(r.Attrition), source(r, "attrition"), count(a.EnrolTotal))
		} else {
			fmt.Fprintf(&b, "No non-response is expected, so %s people will be invited.", count(a.EnrolTotal))
		}
	} else {
		fmt.Fprintf(&b, "Inviting %s people", count(a.EnrolTotal))
		if r.Attrition > 0 {
			fmt.Fprintf(&b, " and expecting %s non-response (%s respondents)", pct(r.Attrition), count(a.Total))
		}
		if r.DesignEff > 1 {
			fmt.Fprintf(&b, ", with a design effect of %g", r.DesignEff)
		}
		fmt.Fprintf(&b, ", the estimate will lie within ±%s percentage points of the true prevalence at that confidence level.", marg)
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

// members phrases a group size: "734 in the follow-up arm" for a label that
// names an arm or group, "734 cases" otherwise.
func members(n int, label string) string {
	if strings.HasSuffix(label, " arm") || strings.HasSuffix(label, " group") || strings.HasSuffix(label, " sequence") {
		return count(n) + " in the " + label
	}
	return count(n) + " " + label
}
