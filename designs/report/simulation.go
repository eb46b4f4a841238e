package report

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"enough/designs"
)

// simDecimals is the number of decimals of a percentage that a Monte-Carlo
// estimate supports: the position of the first significant digit of its
// standard error in points (0.28 points: one decimal), or, when every
// replicate or none rejected and the standard error is 0, of the half-width
// of the score interval. It is then raised until the interval's two ends
// print differently, so that an interval never reads "100.0% to 100.0%".
func simDecimals(se float64, ci []float64) int {
	x := 100 * se
	if !(x > 0) && len(ci) == 2 {
		x = 100 * (ci[1] - ci[0]) / 2
	}
	d := 1
	if x > 0 {
		d = min(3, max(0, int(-math.Floor(math.Log10(x)))))
	}
	for len(ci) == 2 && d < 4 && pctD(ci[0], d) == pctD(ci[1], d) {
		d++
	}
	return d
}

// pctD formats a proportion as a percentage with d decimals.
func pctD(p float64, d int) string {
	return strconv.FormatFloat(100*p, 'f', d, 64) + "%"
}

// unitsD is p in units of the last printed decimal of pctD(p, d).
func unitsD(p float64, d int) int64 {
	v, _ := strconv.ParseFloat(strings.TrimSuffix(pctD(p, d), "%"), 64)
	return int64(math.Round(v * math.Pow10(d)))
}

// printedDifference states how far the first printed percentage lies from
// the second, read from the two figures as printed, so that the difference
// can never disagree with them: "0.2 points above", "the same to the
// precision shown".
func printedDifference(a, b float64, d int) string {
	u := unitsD(a, d) - unitsD(b, d)
	if u == 0 {
		return "the same to the precision shown"
	}
	word := "above"
	if u < 0 {
		word, u = "below", -u
	}
	v := strconv.FormatFloat(float64(u)/math.Pow10(d), 'f', d, 64)
	unit := "points"
	if v == "1" {
		unit = "point"
	}
	return fmt.Sprintf("%s %s %s", v, unit, word)
}

// estimateText states a simulated proportion and what backs it: "81.1%,
// with a 95% score interval of 80.5% to 81.6% and a Monte-Carlo standard
// error of 0.28 points". When every replicate, or none, rejected, the
// standard error is 0 and says nothing: the count is given instead. bold
// sets the figure in bold; cite names the interval's source.
func estimateText(p, se float64, ci []float64, reps int64, d int, bold, cite bool) string {
	value := pctD(p, d)
	if bold {
		value = "**" + value + "**"
	}
	var lead string
	switch {
	case p == 1:
		lead = fmt.Sprintf("every one of the %s replicates rejecting", count(int(reps)))
	case p == 0:
		lead = fmt.Sprintf("none of the %s replicates rejecting", count(int(reps)))
	}
	var with []string
	if len(ci) == 2 {
		source := ""
		if cite {
			source = " (Wilson 1927)"
		}
		with = append(with, fmt.Sprintf("a 95%% score interval%s of %s to %s", source, pctD(ci[0], d), pctD(ci[1], d)))
	}
	if p > 0 && p < 1 {
		with = append(with, fmt.Sprintf("a Monte-Carlo standard error of %s points", strconv.FormatFloat(100*se, 'f', d+1, 64)))
	}
	var parts []string
	if lead != "" {
		parts = append(parts, lead)
	}
	if len(with) > 0 {
		parts = append(parts, "with "+strings.Join(with, " and "))
	}
	if len(parts) == 0 {
		return value
	}
	return value + ", " + strings.Join(parts, ", ")
}

// simulationSection reports the verification by simulation.
func simulationSection(r *designs.Result) *section {
	v := r.Simulation
	if v == nil {
		return nil
	}
	s := &section{heading: "Verification by simulation"}
	if v.WithinMargin != nil || (r.Goal == "precision" && v.Partial) {
		return precisionSimulation(r, s)
	}
	sizes := count(v.N[0])
	if len(v.N) == 2 {
		sizes = fmt.Sprintf("%s and %s", count(v.N[0]), count(v.N[1]))
	}
	switch {
	case v.Partial && v.Power == nil:
		s.paras = append(s.paras, fmt.Sprintf("**Partial:** the simulation was stopped before its first replicate: no replicate finished, so there is no simulated power (seed %d; %s analysable).", v.Seed, sizes))
	case v.Partial:
		s.paras = append(s.paras, fmt.Sprintf("**Partial:** the simulation was stopped after %s replicates; the figures below rest on those alone.", count(int(v.Replicates))))
	}
	if v.Power != nil && len(v.CI) == 2 {
		d := simDecimals(*v.SE, v.CI)
		s.bullets = append(s.bullets, fmt.Sprintf("Simulated power of %s with %s analysable (%s replicates, seed %d): %s",
			v.TestName, sizes, count(int(v.Replicates)), v.Seed, estimateText(*v.Power, *v.SE, v.CI, v.Replicates, d, true, true)))
		agree := "so the two agree (within 3 standard errors or 1 point)"
		if v.Agrees != nil && !*v.Agrees {
			agree = "so the two part ways (more than 3 standard errors and 1 point apart)"
		}
		what := "Closed form"
		if r.Method == "exact" {
			what = "Exact power"
		}
		s.bullets = append(s.bullets, fmt.Sprintf("%s at the same sizes: %s; the simulated power is %s, %s",
			what, pctD(v.ClosedFormPower, d), printedDifference(*v.Power, v.ClosedFormPower, d), agree))
	}
	if v.Type1Error != nil {
		d := simDecimals(*v.Type1SE, v.Type1CI)
		s.bullets = append(s.bullets, fmt.Sprintf("Type I error simulated at %s, against alpha %g: %s",
			v.Type1At, *r.Alpha, estimateText(*v.Type1Error, *v.Type1SE, v.Type1CI, v.Replicates, d, false, len(v.CI) != 2)))
	}
	if q := v.Sequential; q != nil {
		sequentialLines(r, s, q)
	}
	if so := v.Solved; so != nil {
		n := count(so.N[0])
		if len(so.N) == 2 {
			n = fmt.Sprintf("%s and %s", count(so.N[0]), count(so.N[1]))
		}
		d := simDecimals(so.SE, nil)
		line := fmt.Sprintf("Smallest size whose simulated power reaches the target (same random numbers at every candidate size): %s, with power %s", n, pctD(so.Power, d))
		if so.Power > 0 && so.Power < 1 {
			line += fmt.Sprintf(" (standard error %s points)", strconv.FormatFloat(100*so.SE, 'f', d+1, 64))
		}
		if so.NSE > 0 {
			where := " in the first group"
			if len(so.N) == 1 {
				where = ""
			}
			line += fmt.Sprintf("; Monte-Carlo uncertainty about ±%.0f%s", math.Ceil(so.NSE), where)
		}
		s.bullets = append(s.bullets, line)
	}
	s.bullets = append(s.bullets, v.Notes...)
	return s
}

// precisionSimulation reports a precision survey's simulation: how often
// the interval met the margin and how often it covered the truth.
func precisionSimulation(r *designs.Result, s *section) *section {
	v := r.Simulation
	truth := "the true prevalence"
	margin := ""
	if r.Result.Margin != nil {
		margin = strings.TrimSuffix(pct(*r.Result.Margin), "%") + " percentage points"
	}
	ratio := r.Goal == "precision" && r.Design != "cross-sectional"
	switch {
	case ratio:
		truth = "the true ratio"
	case r.Goal == "accuracy":
		truth = "both the true sensitivity and specificity"
	case r.Outcome == "continuous":
		truth, margin = "the true mean", num(*r.Result.Margin)
	}
	if v.Partial {
		s.paras = append(s.paras, fmt.Sprintf("**Partial:** the simulation was stopped after %s replicates; the figures below rest on those alone.", count(int(v.Replicates))))
	}
	if v.WithinMargin != nil {
		d := simDecimals(*v.WithinMarginSE, v.WithinMarginCI)
		what := fmt.Sprintf("Surveys of %s respondents whose %s has half-width within ±%s", count(v.N[0]), v.TestName, margin)
		switch {
		case ratio:
			target := r.Spec.PrecisionRatio
			if r.Solve == "effect" {
				target = *r.Result.PrecisionRatio
			}
			what = fmt.Sprintf("Studies of %s in the first group whose interval's upper limit is at most %s times its lower", count(v.N[0]), num(target))
		case r.Goal == "accuracy":
			what = fmt.Sprintf("Studies of %s participants whose intervals of sensitivity and specificity both have half-width within ±%s", count(v.N[0]), margin)
		}
		s.bullets = append(s.bullets, fmt.Sprintf("%s (%s replicates, seed %d): %s",
			what, count(int(v.Replicates)), v.Seed, estimateText(*v.WithinMargin, *v.WithinMarginSE, v.WithinMarginCI, v.Replicates, d, true, true)))
	}
	if v.Coverage != nil {
		d := simDecimals(*v.CoverageSE, v.CoverageCI)
		s.bullets = append(s.bullets, fmt.Sprintf("Intervals covering %s, against the nominal %s: %s", truth, pct(r.Spec.Confidence),
			estimateText(*v.Coverage, *v.CoverageSE, v.CoverageCI, v.Replicates, d, false, true)))
	}
	s.bullets = append(s.bullets, "The plan is sized at the expected value: about half the surveys give an interval a little wider than the margin and half a little narrower; the share within the margin says how far the plan can be relied on.")
	s.bullets = append(s.bullets, sentences(v.Notes)...)
	return s
}

// sequentialLines report the simulation of a group-sequential trial: the
// whole trial simulated look by look, where it stopped, and the z
// statistic's own check of the boundaries.
func sequentialLines(r *designs.Result, s *section, q *designs.SeqSimulation) {
	v := r.Simulation
	s.paras = append(s.paras, fmt.Sprintf("The whole group-sequential trial is simulated: the data accrue, at each analysis %s is applied to the data so far and its p-value compared with that analysis's nominal p, and the trial stops at the first crossing. The power and type I error below count the trials that crossed at any analysis.", q.DataTestNamed))
	if len(q.StopByLook) > 0 {
		parts := make([]string, len(q.StopByLook))
		reached := 1.0
		for i, p := range q.StopByLook {
			parts[i] = fmt.Sprintf("analysis %d: %s", i+1, pct1(p))
			if i < len(q.StopByLook)-1 {
				reached -= p
			}
		}
		s.bullets = append(s.bullets, fmt.Sprintf("Where the simulated trials stopped for efficacy under the planned effect: %s; %s reached the final analysis", strings.Join(parts, ", "), pct1(reached)))
	}
	if len(q.StopByLookNull) > 0 {
		parts := make([]string, len(q.StopByLookNull))
		for i, p := range q.StopByLookNull {
			parts[i] = fmt.Sprintf("analysis %d: %s", i+1, pctD(p, 2))
		}
		s.bullets = append(s.bullets, fmt.Sprintf("Where the simulated trials crossed under %s: %s", v.Type1At, strings.Join(parts, ", ")))
	}
	if len(q.ExpectedN) > 0 {
		s.bullets = append(s.bullets, fmt.Sprintf("Simulated mean size at stopping under the planned effect: %s", expectedSizes(q.ExpectedN, r)))
	}
	if q.ZType1Error != nil {
		verdict := "within 3 standard errors of alpha, as the boundaries require"
		if q.ZType1Agrees != nil && !*q.ZType1Agrees {
			verdict = "more than 3 standard errors from alpha"
		}
		line := fmt.Sprintf("The z statistic itself, drawn as independent normal increments at the analyses' information (%s replicates, seed %d + 3): type I error %s (standard error %s points), %s", count(int(v.Replicates)), v.Seed, pctD(*q.ZType1Error, 2), strconv.FormatFloat(100**q.ZType1SE, 'f', 2, 64), verdict)
		if q.ZPower != nil {
			line += fmt.Sprintf("; power %s at the plan's drift (seed %d + 2)", pct1(*q.ZPower), v.Seed)
		}
		s.bullets = append(s.bullets, line)
	}
}
