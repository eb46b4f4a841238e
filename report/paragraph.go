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
	s := r.Spec
	var b strings.Builder
	outcome := s.PrimaryOutcome
	if outcome == "" {
		outcome = "the binary primary outcome"
	}
	first, second := r.FirstGroup, r.SecondGroup
	test := fmt.Sprintf("%s at a %s alpha of %g", r.TestName, sidesWord(r.Sides), *r.Alpha)

	// What is compared, and how.
	switch r.Design {
	case "case-control":
		fmt.Fprintf(&b, "The primary analysis compares the proportion exposed between %s and %s, with %s as the outcome that defines a case, using %s. ", first, second, outcome, test)
	case "cross-sectional":
		fmt.Fprintf(&b, "The survey compares the prevalence of %s between %s and %s respondents using %s. ", outcome, first, second, test)
	case "trial":
		fmt.Fprintf(&b, "The primary outcome, %s, will be compared between the %s and the %s using %s. ", outcome, first, second, test)
	default:
		fmt.Fprintf(&b, "The primary outcome, %s, will be compared between the %s and the %s using %s. ", outcome, first, second, test)
	}

	// Assumptions.
	ref := fmt.Sprintf("%s%s", pct(s.P2), source(r, s.ReferenceKey))
	refSrc := source(r, s.ReferenceKey)
	eff := source(r, s.EffectKey)
	if r.Solve == "effect" {
		switch r.Design {
		case "case-control":
			fmt.Fprintf(&b, "We assume that %s of %s are exposed%s. ", pct(s.P2), second, source(r, s.ReferenceKey))
		case "cross-sectional":
			fmt.Fprintf(&b, "We expect %s of those surveyed to be exposed%s and a prevalence of %s among the unexposed. ", pct(s.ExposurePrevalence), source(r, "exposure_prevalence"), ref)
		default:
			fmt.Fprintf(&b, "We assume a %s of %s in the %s%s. ", riskWord(r.Design), pct(s.P2), second, refSrc)
		}
	} else {
		e := r.Result.Effect
		switch r.Design {
		case "case-control":
			fmt.Fprintf(&b, "We assume that %s of %s are exposed%s and plan for an odds ratio of %s%s, which means that %s of %s are exposed. ",
				pct(s.P2), second, source(r, s.ReferenceKey), num(*e.OddsRatio), eff, pct(*e.CaseExposure), first)
		case "cross-sectional":
			fmt.Fprintf(&b, "We expect %s of those surveyed to be exposed%s, a prevalence of %s among the unexposed and of %s among the exposed%s: a prevalence ratio of %s (difference %s; odds ratio %s). ",
				pct(s.ExposurePrevalence), source(r, "exposure_prevalence"), ref, pct(*e.FirstRisk), eff, num(*e.RiskRatio), pp(*e.RiskDifference), num(*e.OddsRatio))
		default:
			fmt.Fprintf(&b, "We assume a risk of %s in the %s%s and plan for a risk of %s in the %s%s: a risk ratio of %s (risk difference %s; odds ratio %s). ",
				pct(s.P2), second, refSrc, pct(*e.FirstRisk), first, eff, num(*e.RiskRatio), pp(*e.RiskDifference), num(*e.OddsRatio))
		}
	}

	a := r.Result
	method := fmt.Sprintf("%s's formula", r.MethodName)
	switch r.Method {
	case "fleiss-cc":
		method = "Fleiss's formula with the continuity correction of Fleiss, Tytun & Ury (1980)"
	case "fleiss":
		method = "Fleiss's formula without continuity correction (Fleiss, Levin & Paik 2003)"
	case "kelsey":
		method = "the formula of Kelsey et al. (1996)"
	case "schlesselman":
		method = "Schlesselman's formula (1982)"
	}
	alloc := fmt.Sprintf("with %s allocation (%s to %s)", allocation(*r.Ratio), first, second)
	if r.Design == "cross-sectional" {
		alloc = "with the groups in proportion to the exposure"
	}
	switch r.Solve {
	case "n":
		if r.Design == "cross-sectional" {
			fmt.Fprintf(&b, "To reach a power of at least %s, %s requires %s analysable respondents, of whom about %s are expected to be exposed and %s unexposed; the achieved power at these numbers is %s. ",
				pct1(*r.Power), method, count(a.Total), count(a.N[0]), count(a.N[1]), pct1(*a.AchievedPower))
		} else {
			fmt.Fprintf(&b, "To reach a power of at least %s %s, %s requires %s and %s, %s analysable in all; the achieved power at these numbers is %s. ",
				pct1(*r.Power), alloc, method, members(a.N[0], first), members(a.N[1], second), count(a.Total), pct1(*a.AchievedPower))
		}
		inflation(&b, r)
	case "power":
		fmt.Fprintf(&b, "The planned enrolment of %s and %s (%s in all) ", members(a.Enrol[0], first), members(a.Enrol[1], second), count(a.EnrolTotal))
		if r.Attrition > 0 {
			fmt.Fprintf(&b, "leaves about %s and %s analysable after %s attrition", count(a.N[0]), count(a.N[1]), pct(r.Attrition))
		} else {
			b.WriteString("is assumed to be fully analysable")
		}
		if r.DesignEff > 1 {
			fmt.Fprintf(&b, ", with a design effect of %g", r.DesignEff)
		}
		fmt.Fprintf(&b, ". Under these assumptions %s gives a power of %s. ", method, pct1(*a.AchievedPower))
	case "effect":
		fmt.Fprintf(&b, "With %s and %s enrolled (%s and %s analysable", members(a.Enrol[0], first), members(a.Enrol[1], second), count(a.N[0]), count(a.N[1]))
		if r.DesignEff > 1 {
			fmt.Fprintf(&b, ", design effect %g", r.DesignEff)
		}
		fmt.Fprintf(&b, "), %s sets the smallest effect detectable with %s power", method, pct1(*r.Power))
		det := a.Detectable
		var sides []string
		if det.Lower != nil {
			sides = append(sides, fmt.Sprintf("a %s of %s (%s)", keyLabel(det.Scale), valueOn(det.Scale, *det.Lower), restateShort(r, det.LowerEffect)))
		}
		if det.Upper != nil {
			sides = append(sides, fmt.Sprintf("a %s of %s (%s)", keyLabel(det.Scale), valueOn(det.Scale, *det.Upper), restateShort(r, det.UpperEffect)))
		}
		if len(sides) == 0 {
			b.WriteString(": no effect in either direction reaches that power. ")
		} else {
			fmt.Fprintf(&b, " at %s. ", strings.Join(sides, " or "))
		}
	}
	return strings.TrimSpace(b.String())
}

// inflation describes the design effect and attrition steps.
func inflation(b *strings.Builder, r *designs.Result) {
	a := r.Result
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
	case r.DesignEff > 1 && r.Attrition > 0:
		fmt.Fprintf(b, "These numbers include a design effect of %g; allowing further for %s attrition, we will enrol %s and %s, %s participants in total.",
			r.DesignEff, pct(r.Attrition), members(a.Enrol[0], r.FirstGroup), members(a.Enrol[1], r.SecondGroup), count(a.EnrolTotal))
	case r.DesignEff > 1:
		fmt.Fprintf(b, "These numbers include a design effect of %g; no attrition is expected, so the enrolment target is %s in total.", r.DesignEff, count(a.EnrolTotal))
	case r.Attrition > 0:
		fmt.Fprintf(b, "Allowing for %s attrition, we will enrol %s and %s, %s participants in total.",
			pct(r.Attrition), members(a.Enrol[0], r.FirstGroup), members(a.Enrol[1], r.SecondGroup), count(a.EnrolTotal))
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
		fmt.Fprintf(&b, "For a margin of ±%s percentage points, simple random sampling needs %.1f respondents", marg, a.N0)
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

// members phrases a group size: "734 in the follow-up arm" for a label that
// names an arm or group, "734 cases" otherwise.
func members(n int, label string) string {
	if strings.HasSuffix(label, " arm") || strings.HasSuffix(label, " group") {
		return count(n) + " in the " + label
	}
	return count(n) + " " + label
}
