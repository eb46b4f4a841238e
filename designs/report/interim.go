package report

import (
	"fmt"
	"strconv"
	"strings"

	"enough/designs"
)

// interimSentences say, in the justification, what the interim analyses
// are and what they cost, from result.interim and the recorded steps.
func interimSentences(b *strings.Builder, r *designs.Result) {
	s, iv := r.Spec, r.Result.Interim
	if s == nil || s.Interim == nil || iv == nil {
		return
	}
	if t := b.String(); t != "" && !strings.HasSuffix(t, " ") {
		b.WriteString(" ")
	}
	k := len(iv.Looks)
	timing := "equally spaced"
	if !s.Interim.EqualTiming {
		timing = "unequally spaced"
	}
	null, stopFor := interimWords(r)
	fmt.Fprintf(b, "The trial is group-sequential: %s analyses, %s at %s of the maximum information (the last at the end), with efficacy boundaries by %s, so that the overall alpha stays %s; the trial stops early only %s, and these boundaries make no provision for stopping for futility. ",
		strconv.Itoa(k), timing, s.Interim.TimingWords(), s.Interim.BoundaryWords(), numASCII(iv.Looks[k-1].AlphaSpent), stopFor)
	switch {
	case r.Solve == "n":
		if fixed, ok := fixedSize(r); ok {
			fmt.Fprintf(b, "The sizes above are the maximum: the fixed-sample size without interim analyses, %s (unrounded), multiplied by the inflation factor %s that the boundaries cost at this power (Jennison & Turnbull 2000). ",
				fixed, strconv.FormatFloat(iv.Inflation, 'f', 4, 64))
		}
	case r.Solve == "power":
		fmt.Fprintf(b, "The power is the probability of crossing a boundary on the side of the effect at some analysis, at the stated maximum size; a fixed design of that size would have the same power with %s fewer participants (inflation factor %s). ",
			pctFewer(iv.Inflation), strconv.FormatFloat(iv.Inflation, 'f', 4, 64))
	}
	if r.Outcome == "time-to-event" && iv.ExpectedEventsAlternative != nil {
		fmt.Fprintf(b, "Under the planned effect the trial is expected to stop after %s events on average, and after %s under %s. ",
			oneDecimal(*iv.ExpectedEventsAlternative), oneDecimal(*iv.ExpectedEventsNull), null)
		return
	}
	fmt.Fprintf(b, "On average the trial is expected to stop after %s under the planned effect, and after %s under %s. ",
		expectedSizes(iv.ExpectedNAlternative, r), expectedSizes(iv.ExpectedNNull, r), null)
}

// interimWords name, for the interim sentences, the null hypothesis under
// which the expected sizes are computed and what an early stop shows: no
// effect and efficacy for superiority; a true difference at the margin and
// non-inferiority for a non-inferiority trial, whose z statistic has mean
// 0 at the margin.
func interimWords(r *designs.Result) (null, stopFor string) {
	if r.Spec != nil && r.Spec.Hypothesis == "non-inferiority" {
		return "a true effect at the non-inferiority margin (the null hypothesis)", "to declare non-inferiority"
	}
	return "no effect", "for efficacy"
}

// fixedSize writes the fixed-sample size behind a group-sequential
// maximum, from the recorded steps: the events of a time-to-event plan,
// else the first group's participants (each group's when the groups are
// equal), unrounded.
func fixedSize(r *designs.Result) (string, bool) {
	name, unit := "n_star_fixed", "participants in each group"
	switch {
	case r.Outcome == "time-to-event":
		name, unit = "events_star_fixed", "events"
	case r.Spec != nil && r.Spec.Ratio != 1:
		unit = "participants in the first group"
	}
	fixed, ok := stepOutput(r, name)
	return strconv.FormatFloat(fixed, 'f', 2, 64) + " " + unit, ok
}

// pctFewer is the share of the maximum size a fixed design of the same
// power saves: 1 − 1/R.
func pctFewer(r float64) string {
	if r <= 0 {
		return "no"
	}
	return pct1(1 - 1/r)
}

// oneDecimal writes x with one decimal and thousands separators.
func oneDecimal(x float64) string {
	whole := int(x)
	frac := int((x-float64(whole))*10 + 0.5)
	if frac == 10 {
		whole, frac = whole+1, 0
	}
	return fmt.Sprintf("%s.%d", count(whole), frac)
}

// expectedSizes writes the expected sizes of the groups: "377.0 per
// group" when they are equal, else "377.0 and 754.1".
func expectedSizes(n []float64, r *designs.Result) string {
	noun := "analysable participants"
	if len(n) > 0 && r.Outcome == "time-to-event" {
		noun = "participants"
	}
	if len(n) == 2 && n[0] == n[1] {
		return oneDecimal(n[0]) + " " + noun + " per group"
	}
	if len(n) == 1 {
		return oneDecimal(n[0]) + " " + noun
	}
	parts := make([]string, len(n))
	for i, x := range n {
		parts[i] = oneDecimal(x)
	}
	f, g := groupsOf(r)
	if len(parts) == 2 {
		return noun + ": " + f.quantity(parts[0]) + " and " + g.quantity(parts[1])
	}
	return strings.Join(parts, " and ")
}

// interimSection is the table of looks: the information, the participants
// (and events) by then, the boundary, its nominal p, the alpha spent and
// the probability of stopping there under the planned effect.
func interimSection(r *designs.Result) *section {
	iv := r.Result.Interim
	if iv == nil {
		return nil
	}
	s := &section{heading: "Interim analyses: boundaries look by look"}
	null, stopFor := interimWords(r)
	rule := fmt.Sprintf("At each analysis the trial stops when |Z| reaches the boundary, that is when the planned test's two-sided p-value is at or below the nominal p: %s when Z lies on the side of the planned effect (a crossing on the other side would show harm). There is no futility boundary.", stopFor)
	if r.Spec != nil && r.Spec.Sides == 1 {
		rule = fmt.Sprintf("At each analysis the trial stops %s when Z (in the direction of benefit) reaches the boundary, that is when the planned test's one-sided p-value is at or below the nominal p. Efficacy only: there is no futility boundary.", stopFor)
	}
	s.paras = []string{rule + " The chance of stopping is under the planned effect; at the last analysis it is the chance of reaching it, with the chance of crossing its boundary there in brackets."}
	f, g := groupsOf(r)
	surv := len(iv.Looks) > 0 && iv.Looks[0].Events != nil
	who := "Analysable: "
	head := []string{"Analysis", "Information"}
	if surv {
		who = "Entered: "
		unit := "time"
		if r.Spec != nil && r.Spec.TimeUnit != "" {
			unit = r.Spec.TimeUnit
		}
		head = append(head, "Time ("+unit+")")
	}
	head = append(head, who+f.label, who+g.label)
	oneArm := len(r.Result.N) < 2
	if oneArm {
		head = head[:len(head)-1]
	}
	if surv {
		head = append(head, "Events")
	}
	head = append(head, "Boundary z", "Nominal p", "Alpha spent", "Chance of stopping here")
	s.table = [][]string{head}
	for i, l := range iv.Looks {
		row := []string{strconv.Itoa(i + 1), strconv.FormatFloat(l.Information, 'g', 4, 64)}
		if surv {
			row = append(row, strconv.FormatFloat(*l.Time, 'f', 1, 64))
		}
		row = append(row, count(l.N[0]))
		if !oneArm {
			row = append(row, count(l.N[1]))
		}
		if surv {
			row = append(row, count(*l.Events))
		}
		chance := pct1(l.StopProbability)
		if i == len(iv.Looks)-1 {
			chance += " (" + pct1(l.EfficacyProbability) + " crossing)"
		}
		row = append(row, strconv.FormatFloat(l.Z, 'f', 3, 64), pValue(l.PNominal), pValue(l.AlphaSpent), chance)
		s.table = append(s.table, row)
	}
	infl := fmt.Sprintf("Inflation factor of the maximum size over the fixed-sample size: %s.", strconv.FormatFloat(iv.Inflation, 'f', 4, 64))
	s.after = []string{infl}
	if iv.ExpectedEventsAlternative != nil {
		s.after = append(s.after,
			fmt.Sprintf("Expected events at stopping: %s under the planned effect, %s under %s.", oneDecimal(*iv.ExpectedEventsAlternative), oneDecimal(*iv.ExpectedEventsNull), null),
			fmt.Sprintf("Expected participants entered by the time of stopping: %s under the planned effect, %s under %s (the looks' times assume the planned hazards and uniform entry).", expectedSizes(iv.ExpectedNAlternative, r), expectedSizes(iv.ExpectedNNull, r), null))
	} else {
		s.after = append(s.after, fmt.Sprintf("Expected size at stopping: %s under the planned effect, %s under %s.", expectedSizes(iv.ExpectedNAlternative, r), expectedSizes(iv.ExpectedNNull, r), null))
	}
	return s
}

// pValue writes a small probability with four significant digits,
// in scientific notation below 0.0001.
func pValue(p float64) string {
	if p < 1e-4 {
		m := strconv.FormatFloat(p, 'e', 2, 64)
		mant, exp, _ := strings.Cut(m, "e")
		e, _ := strconv.Atoi(exp)
		return mant + " × 10^" + strconv.Itoa(e)
	}
	return strconv.FormatFloat(p, 'f', 4, 64)
}
