package review

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"enough/designs"
)

// Run rechecks the sample size a protocol states (issue 10): it recomputes
// the plan under the protocol's own assumptions with designs.Plan, judges
// each stated figure against the recomputed one, computes the power the
// stated sizes give and the effect they detect, diagnoses the common slips
// that reproduce a stated figure, measures how the size moves with each
// assumption, and lists what the protocol left out with what the
// investigators should clarify. It is deterministic and does no I/O.
//
// A stated figure is consistent when it is within tolerance_n of the
// recomputed one, or when the power it gives is within tolerance_power of
// the stated power (the rule of issue 10, item 3). The error is that of
// the recomputed plan (a *designs.SpecError or *designs.PlanError); the
// variants of the diagnosis and the sensitivity analysis never abort it.
func Run(in *designs.ReviewInput) (*Report, error) {
	rc := &recheck{in: in, c: in.Claimed}
	rep := &Report{
		Mode:      in.Mode,
		Tolerance: Tolerance{N: in.Claimed.ToleranceN, Power: in.Claimed.TolerancePower},
		Claimed:   claimedOf(in.Claimed),
		Figures:   []Figure{},
		Methods:   []MethodN{},
		Diagnosis: []Diagnosis{},
		Reporting: reporting(in),
		Assumed:   append([]string{}, in.Assumed...),
		Requests:  []string{},
		Cautions:  cautions(),
	}
	rc.rep = rep
	if in.Mode == designs.ReviewNone || in.Spec == nil {
		rep.Verdict = Incomplete
		rep.Sentence = incompleteSentence(in, "nothing could be recomputed")
		rep.DiagnosisNote = "Nothing could be recomputed, so there is no diagnosis."
		rep.Sensitivity = []Sensitivity{}
		rep.DetectableEffect = []Detectable{}
		rep.DetectableNote = noneNote(in)
		rep.Requests = requests(rc)
		return rep, nil
	}
	res, err := designs.Plan(in.Spec)
	if err != nil {
		return nil, err
	}
	rc.spec, rc.res = in.Spec, res
	rep.Plan = res
	rep.Recomputed = &res.Result
	rep.DetectableEffect, rep.DetectableNote = rc.detectable()
	rep.Sensitivity = []Sensitivity{}

	switch in.Mode {
	case designs.ReviewPower:
		rep.ClaimedPowerActual = res.Result.AchievedPower
		rep.Verdict = Incomplete
		rep.Sentence = incompleteSentence(in, rc.powerClause())
		rep.DiagnosisNote = "No power was stated, so there is no required size to compare with and no diagnosis."
	case designs.ReviewEffect:
		rep.Verdict = Incomplete
		rep.Sentence = incompleteSentence(in, rc.effectClause())
		rep.DiagnosisNote = "No effect was stated, so there is no required size to compare with and no diagnosis."
	default:
		rep.Methods = methods(res)
		rep.ClaimedPowerActual = rc.claimedPower()
		rc.rec = figsOf(res)
		rep.Figures = rc.figures()
		if f := figureOf(rep.Figures, "events"); rep.ClaimedPowerActual == nil && f != nil {
			// Only the events stated: the power they give.
			rep.ClaimedPowerActual = f.Power
		}
		rep.Verdict, rep.Sentence = rc.verdict()
		rep.Sensitivity = rc.sensitivity()
		switch {
		case rep.Verdict == Consistent:
			rep.DiagnosisNote = "The stated figures hold under the protocol's own assumptions: no diagnosis is needed."
		case len(rep.Figures) == 0:
			rep.DiagnosisNote = "The protocol states no size to compare, so there is no diagnosis."
		default:
			rep.Diagnosis = rc.diagnose()
			if len(rep.Diagnosis) == 0 {
				rep.DiagnosisNote = rc.noSlipNote()
			}
		}
	}
	rep.Requests = requests(rc)
	return rep, nil
}

// recheck holds what the parts of a review share.
type recheck struct {
	in   *designs.ReviewInput
	c    designs.Claimed
	spec *designs.Spec
	res  *designs.Result
	rep  *Report
	// rec are the recomputed figures (mode n).
	rec figs
	// explained marks the stated figures a diagnosed slip reproduces.
	explained map[string]bool
}

// figs are the figures of a plan that a protocol may state: the
// analysable and enrolled sizes per group (per comparison with several
// arms), and the totals, events and clusters per arm.
type figs struct {
	n, enrol []int
	v        map[string]int
}

// figureNames are the stated figures in the order a review judges them.
var figureNames = []string{"n", "n_second", "total", "enrol_total", "events", "clusters"}

// figsOf reads the figures of a plan solving n.
func figsOf(res *designs.Result) figs {
	a := res.Result
	f := figs{n: slices.Clone(a.N), enrol: slices.Clone(a.Enrol), v: map[string]int{}}
	if len(a.N) > 0 {
		f.v["n"] = a.N[0]
	}
	if len(a.N) > 1 {
		f.v["n_second"] = a.N[1]
	}
	f.v["total"] = a.Total
	f.v["enrol_total"] = a.EnrolTotal
	if a.Events > 0 {
		f.v["events"] = a.Events
	}
	if len(a.Clusters) > 0 {
		f.v["clusters"] = a.Clusters[0]
	}
	return f
}

// clone copies the figures, so that a slip can change them.
func (f figs) clone() figs {
	g := figs{n: slices.Clone(f.n), enrol: slices.Clone(f.enrol), v: map[string]int{}}
	for k, x := range f.v {
		g.v[k] = x
	}
	return g
}

// stated returns the stated figures by name.
func (rc *recheck) stated() map[string]int {
	c := rc.c
	out := map[string]int{}
	for name, v := range map[string]int{"n": c.N, "n_second": c.NSecond, "total": c.Total,
		"enrol_total": c.EnrolTotal, "events": c.Events, "clusters": c.Clusters} {
		if v > 0 {
			out[name] = v
		}
	}
	if rc.spec != nil && ((rc.spec.Goal == "precision" && rc.spec.Design == "cross-sectional") || rc.spec.Goal == "accuracy") {
		// A survey states one size: n and total are the same figure.
		if _, ok := out["total"]; !ok && c.N > 0 {
			out["total"] = c.N + c.NSecond
		}
		delete(out, "n")
		delete(out, "n_second")
	}
	return out
}

// claimedOf restates the claimed block with nil for what was not stated.
func claimedOf(c designs.Claimed) Claimed {
	pi := func(x int) *int {
		if x == 0 {
			return nil
		}
		return &x
	}
	pf := func(x float64) *float64 {
		if x == 0 {
			return nil
		}
		return &x
	}
	out := Claimed{N: pi(c.N), NSecond: pi(c.NSecond), Total: pi(c.Total), EnrolTotal: pi(c.EnrolTotal),
		Power: pf(c.Power), Alpha: pf(c.Alpha), Sides: pi(c.Sides), Events: pi(c.Events), Clusters: pi(c.Clusters)}
	if c.Method != "" {
		m := c.Method
		out.Method = &m
	}
	return out
}

// methods lists the recomputed size by the named (or default) method and
// by every other applicable method.
func methods(res *designs.Result) []MethodN {
	a := res.Result
	out := []MethodN{{Method: res.Method, Name: res.MethodName, N: slices.Clone(a.N), Total: a.Total, EnrolTotal: a.EnrolTotal, Named: true}}
	for _, alt := range res.Alternatives {
		if len(alt.N) == 0 {
			continue
		}
		out = append(out, MethodN{Method: alt.Method, Name: alt.Name, N: slices.Clone(alt.N), Total: alt.Total, EnrolTotal: alt.EnrolTotal})
	}
	return out
}

// plan plans a variant of the protocol; nil when it cannot be planned.
func (rc *recheck) plan(edits ...designs.Edit) (*designs.Result, error) {
	s, err := rc.in.Variant(edits...)
	if err != nil {
		return nil, err
	}
	return designs.Plan(s)
}

// powerAt returns the power a variant solving power gives (nil when it
// cannot be computed, or for a precision survey, which has no power),
// with the analysable total of that variant.
func (rc *recheck) powerAt(edits ...designs.Edit) (*float64, int) {
	if rc.spec.Goal == "precision" || rc.spec.Goal == "accuracy" {
		return nil, 0
	}
	res, err := rc.plan(append(edits, designs.Set("solve", "power"))...)
	if err != nil || res.Result.AchievedPower == nil {
		return nil, 0
	}
	return res.Result.AchievedPower, res.Result.Total
}

// claimedPower is the power the stated analysable sizes give (or the
// stated enrolment after the assumed attrition, when only that is stated).
func (rc *recheck) claimedPower() *float64 {
	if rc.c.N == 0 && rc.c.Total == 0 && rc.c.EnrolTotal == 0 {
		return nil
	}
	p, _ := rc.powerAt(rc.in.SizeEdits()...)
	return p
}

// statedPower is the power the recheck judges against: the stated one.
func (rc *recheck) statedPower() float64 {
	if rc.spec == nil {
		return 0
	}
	return rc.spec.Power
}

// detectable is the smallest effect the stated sizes detect at the stated
// power, or at 80% and 90% when no power was stated. A precision survey
// gives the margin its stated size achieves (Upper, with Power 0). When
// none can be computed, the note says why in one sentence.
func (rc *recheck) detectable() ([]Detectable, string) {
	out := []Detectable{}
	c := rc.c
	if c.N == 0 && c.Total == 0 && c.EnrolTotal == 0 {
		if c.Events > 0 {
			return out, "The smallest detectable effect is not computed: it is solved from the numbers of participants, and the protocol states only the events."
		}
		return out, "Nothing is computed here: the protocol states no size."
	}
	if rc.spec.Goal == "precision" || rc.spec.Goal == "accuracy" {
		res, err := rc.plan(append(rc.in.SizeEdits(), designs.Set("solve", "effect"))...)
		if err == nil && res.Result.PrecisionRatio != nil {
			out = append(out, Detectable{Scale: "precision_ratio", Upper: res.Result.PrecisionRatio})
			return out, ""
		}
		if err == nil && res.Result.Margin != nil {
			out = append(out, Detectable{Scale: "margin", Upper: res.Result.Margin})
			return out, ""
		}
		return out, "The margin the stated size achieves could not be computed."
	}
	if h := rc.spec.Hypothesis; h == "non-inferiority" || h == "equivalence" {
		// Such a trial is sized on its margin, which the protocol fixes;
		// the plan solves its size or its power, not an effect.
		return out, fmt.Sprintf("The smallest detectable effect is not computed: %s trial is sized on its margin, which the protocol fixes, and the recheck solves its size and power only.", map[string]string{"non-inferiority": "a non-inferiority", "equivalence": "an equivalence"}[h])
	}
	powers := []float64{0.8, 0.9}
	if rc.in.Mode == designs.ReviewN || rc.in.Mode == designs.ReviewEffect {
		if p := rc.spec.Power; p > 0 && (c.Power > 0 || hasKey(rc.in, "power")) {
			powers = []float64{p}
		}
	}
	if rc.spec.Interim != nil {
		return out, "The smallest detectable effect is not computed for a group-sequential design, whose boundaries and inflation are planned for a stated effect."
	}
	var firstErr error
	for _, p := range powers {
		edits := append(rc.in.SizeEdits(), designs.Set("solve", "effect"), designs.Set("power", p))
		res, err := rc.plan(edits...)
		if err != nil || res.Result.Detectable == nil {
			if firstErr == nil {
				firstErr = err
			}
			continue
		}
		d := res.Result.Detectable
		out = append(out, Detectable{Power: p, Scale: d.Scale, Lower: d.Lower, Upper: d.Upper})
	}
	if len(out) == 0 {
		if firstErr != nil {
			return out, "The smallest detectable effect could not be computed: " + firstErr.Error() + "."
		}
		return out, "The smallest detectable effect could not be computed."
	}
	return out, ""
}

// noneNote says why nothing the stated size achieves is computed when
// nothing could be recomputed: the elements the recomputation needs that
// the protocol left out.
func noneNote(in *designs.ReviewInput) string {
	var miss []string
	for _, id := range []string{"reference_value", "effect", "sample_size"} {
		if slices.Contains(in.Missing, id) {
			miss = append(miss, elementNames[id])
		}
	}
	if len(miss) == 0 {
		return "Nothing the stated size achieves could be computed."
	}
	return "Nothing the stated size achieves could be computed: the protocol does not state " + joinAnd(miss) + "."
}

// hasKey tells whether the protocol's specification gives key.
func hasKey(in *designs.ReviewInput, key string) bool {
	_, ok := in.Value(key)
	return ok
}

// within tells whether a relative difference is within a tolerance,
// ignoring floating-point noise.
func within(d, tol float64) bool { return math.Abs(d) <= tol+1e-12 }

// figures judges each stated figure against the recomputed one.
func (rc *recheck) figures() []Figure {
	stated := rc.stated()
	out := []Figure{}
	for _, name := range figureNames {
		st, ok := stated[name]
		if !ok {
			continue
		}
		rec, ok := rc.rec.v[name]
		if !ok || rec == 0 {
			continue
		}
		f := Figure{Name: name, Stated: st, Recomputed: rec, Difference: float64(st-rec) / float64(rec)}
		switch name {
		case "n", "n_second", "total":
			if name == "total" && rc.spec.Goal == "precision" {
				break
			}
			if rc.c.N > 0 || rc.c.Total > 0 {
				f.Power, _ = rc.powerAt(rc.in.SizeEdits()...)
			}
		case "enrol_total":
			p, analysable := rc.powerAt(rc.in.EnrolmentEdits(st)...)
			f.Power = p
			if rc.spec.Goal == "precision" {
				analysable = rc.surveyRespondents(st)
			}
			if analysable > 0 {
				f.Analysable = &analysable
				f.Difference = float64(analysable-rc.rec.v["total"]) / float64(rc.rec.v["total"])
			}
		case "clusters":
			f.Power = rc.clusterPower(st)
		case "events":
			f.Power = rc.eventsPower(st)
		}
		rc.judge(&f)
		out = append(out, f)
	}
	return out
}

// figureOf returns the judged figure with the name, or nil.
func figureOf(fs []Figure, name string) *Figure {
	for i := range fs {
		if fs[i].Name == name {
			return &fs[i]
		}
	}
	return nil
}

// surveyRespondents is the number of respondents an invitation of enrol
// yields after the assumed non-response: ⌊enrol × (1 − attrition)⌋.
func (rc *recheck) surveyRespondents(enrol int) int {
	return int(math.Floor(float64(enrol)*(1-rc.spec.Attrition) + 1e-9))
}

// clusterPower is the power with k clusters per arm (the second arm
// ⌈ratio × k⌉) of the mean size, attrition kept.
func (rc *recheck) clusterPower(k int) *float64 {
	cl := rc.spec.Cluster
	if cl == nil {
		return nil
	}
	n1 := int(math.Floor(float64(k)*cl.Size + 1e-9))
	k2 := int(math.Ceil(rc.spec.Ratio*float64(k) - 1e-9))
	n2 := int(math.Floor(float64(k2)*cl.Size + 1e-9))
	p, _ := rc.powerAt(designs.Delete("n"), designs.Delete("total"), designs.Set("n", n1), designs.Delete("ratio"), designs.Set("n_second", n2))
	return p
}

// eventsPower is the power at the sizes that expect d events: the
// recomputed sizes scaled by d over the events they expect, rounded to
// whole participants (the expected events of exponential survival are
// proportional to the sizes, Lachin & Foulkes 1986).
func (rc *recheck) eventsPower(d int) *float64 {
	a := rc.res.Result
	if a.ExpectedEvents == nil || *a.ExpectedEvents <= 0 || len(a.N) != 2 {
		return nil
	}
	k := float64(d) / *a.ExpectedEvents
	n1 := max(int(math.Round(float64(a.N[0])*k)), 2)
	n2 := max(int(math.Round(float64(a.N[1])*k)), 1)
	p, _ := rc.powerAt(designs.Delete("total"), designs.Set("n", n1), designs.Delete("ratio"), designs.Set("n_second", n2))
	return p
}

// judge decides whether a figure is consistent, too small or too large,
// and says why in one sentence.
func (rc *recheck) judge(f *Figure) {
	tn, tp := rc.c.ToleranceN, rc.c.TolerancePower
	sp := rc.statedPower()
	byN := within(f.Difference, tn)
	byPower := f.Power != nil && sp > 0 && math.Abs(*f.Power-sp) <= tp+1e-12
	head := fmt.Sprintf("%s: %s stated, %s recomputed (%s)", rc.noun(f.Name), count(f.Stated), count(f.Recomputed), signedPct(float64(f.Stated-f.Recomputed)/float64(f.Recomputed)))
	if rc.lossApplied(f) {
		head = fmt.Sprintf("%s: %s stated, %s recomputed; after the assumed loss it yields %s analysable against %s needed (%s)", rc.noun(f.Name), count(f.Stated), count(f.Recomputed), count(*f.Analysable), count(rc.rec.v["total"]), signedPct(f.Difference))
	}
	pw := ""
	if f.Power != nil && sp > 0 {
		pw = fmt.Sprintf("; it gives %s power against the %s stated", pct(*f.Power), pct(sp))
	}
	switch {
	case byN:
		f.Judgement = "consistent"
		f.Why = designs.Sentence(fmt.Sprintf("%s, within the %s tolerance%s.", head, pct(tn), pw))
	case byPower:
		f.Judgement = "consistent"
		f.Why = designs.Sentence(fmt.Sprintf("%s, beyond the %s tolerance, but it gives %s power, within %s points of the %s stated.", head, pct(tn), pct(*f.Power), trim(tp*100), pct(sp)))
	case f.Difference < 0:
		f.Judgement = "too small"
		f.Why = designs.Sentence(fmt.Sprintf("%s, more than %s short%s.", head, pct(tn), pw))
	default:
		f.Judgement = "too large"
		f.Why = designs.Sentence(fmt.Sprintf("%s, more than %s over%s.", head, pct(tn), pw))
	}
}

// verdict decides the verdict from the figures' judgements and words it.
func (rc *recheck) verdict() (string, string) {
	figsJ := rc.rep.Figures
	tol := rc.tolText()
	if miss := rc.incompleteFor(); len(miss) > 0 || len(figsJ) == 0 {
		what := "the recomputed size is " + rc.recText()
		return Incomplete, incompleteSentence(rc.in, what)
	}
	var worst *Figure
	for i := range figsJ {
		f := &figsJ[i]
		if f.Judgement == "consistent" {
			continue
		}
		if worst == nil || math.Abs(f.Difference) > math.Abs(worst.Difference) {
			worst = f
		}
	}
	if worst == nil {
		var parts []string
		for _, f := range figsJ {
			parts = append(parts, fmt.Sprintf("%s %s stated, %s recomputed", rc.noun(f.Name), count(f.Stated), count(f.Recomputed)))
		}
		return Consistent, fmt.Sprintf("Consistent: every stated figure holds under the protocol's own assumptions (%s); %s.", strings.Join(parts, "; "), tol)
	}
	v, word := UnderPowered, "Under-powered"
	if worst.Judgement == "too large" {
		v, word = LargerThanNeeded, "Larger than needed"
	}
	// The difference is Figure.Difference, relative to the recomputed
	// figure: the sentence says so ("below it"), so that it cannot be read
	// as relative to the stated figure.
	need := fmt.Sprintf("its own assumptions need %s: the stated figure is %s", count(worst.Recomputed), relation(worst.Difference, "it"))
	if rc.lossApplied(worst) {
		need = fmt.Sprintf("after the assumed loss it yields %s analysable, where its own assumptions need %s: the analysable figure is %s",
			count(*worst.Analysable), count(rc.rec.v["total"]), relation(worst.Difference, "that"))
	}
	pw := ""
	if worst.Power != nil && rc.statedPower() > 0 {
		pw = fmt.Sprintf("; at the stated figure the power is %s, not the %s stated", pct(*worst.Power), pct(rc.statedPower()))
	}
	return v, fmt.Sprintf("%s: the protocol states %s, but %s%s; %s.", word, rc.phrase(worst.Name, worst.Stated), need, pw, tol)
}

// relation words a relative difference against a reference named ref:
// "19.9% below it", "31.2% above it", "the same as it".
func relation(d float64, ref string) string {
	v := DiffPercent(d)
	switch {
	case v == "0%":
		return "the same as " + ref
	case d < 0:
		return v + " below " + ref
	}
	return v + " above " + ref
}

// lossApplied tells whether a judged enrolment loses participants to the
// assumed attrition: the analysable figure it yields differs from the
// enrolment. (A time-to-event plan, whose losses are a dropout hazard
// acting on the events, or a plan with no attrition, enrols its
// analysable participants.)
func (rc *recheck) lossApplied(f *Figure) bool {
	return f.Analysable != nil && *f.Analysable != f.Stated
}

// incompleteFor lists the elements whose absence leaves the verdict
// incomplete: the power, the effect, the sample size and the reference
// value.
func (rc *recheck) incompleteFor() []string {
	var out []string
	for _, id := range []string{"reference_value", "effect", "power", "sample_size"} {
		if slices.Contains(rc.in.Missing, id) {
			out = append(out, id)
		}
	}
	return out
}

// recText words the recomputed size.
func (rc *recheck) recText() string {
	a := rc.res.Result
	switch {
	case len(a.N) == 2 && a.Arms > 2 && (a.N[0] == a.N[1] || rc.spec.Comparisons == "all-pairs"):
		return fmt.Sprintf("%s analysable in each of %d arms (%s in all, %s to enrol)", count(a.N[0]), a.Arms, count(a.Total), count(a.EnrolTotal))
	case len(a.N) == 2 && a.Arms > 2:
		return fmt.Sprintf("%s analysable in each of %d intervention arms and %s in the control arm (%s in all, %s to enrol)", count(a.N[0]), a.Arms-1, count(a.N[1]), count(a.Total), count(a.EnrolTotal))
	case len(a.N) == 2:
		return fmt.Sprintf("%s and %s analysable (%s in all, %s to enrol)", count(a.N[0]), count(a.N[1]), count(a.Total), count(a.EnrolTotal))
	}
	return fmt.Sprintf("%s analysable (%s to enrol)", count(a.Total), count(a.EnrolTotal))
}

// powerClause words the power the stated size gives (no power stated).
func (rc *recheck) powerClause() string {
	p := rc.res.Result.AchievedPower
	s := "the power of the stated size could not be computed"
	if p != nil {
		s = fmt.Sprintf("the stated size gives %s power at the stated effect", pct(*p))
	}
	return s + rc.detectClause()
}

// effectClause words the effect the stated size detects (no effect
// stated).
func (rc *recheck) effectClause() string {
	s := rc.detectClause()
	if s == "" {
		return "the detectable effect could not be computed"
	}
	return strings.TrimPrefix(s, "; ")
}

// detectClause words the detectable effects.
func (rc *recheck) detectClause() string {
	var parts []string
	for _, d := range rc.rep.DetectableEffect {
		var sides []string
		for _, x := range []*float64{d.Lower, d.Upper} {
			if x != nil {
				sides = append(sides, trim(*x))
			}
		}
		if len(sides) == 0 {
			continue
		}
		if d.Power == 0 {
			parts = append(parts, fmt.Sprintf("the stated size achieves a %s of %s", d.Scale, strings.Join(sides, " or ")))
			continue
		}
		parts = append(parts, fmt.Sprintf("it detects a %s of %s at %s power", strings.ReplaceAll(d.Scale, "_", " "), strings.Join(sides, " or "), pct(d.Power)))
	}
	if len(parts) == 0 {
		return ""
	}
	return "; " + strings.Join(parts, ", and ")
}

// incompleteSentence words an incomplete verdict: what is missing, then
// what could be computed.
func incompleteSentence(in *designs.ReviewInput, what string) string {
	var miss []string
	for _, id := range []string{"reference_value", "effect", "power", "sample_size"} {
		if slices.Contains(in.Missing, id) {
			miss = append(miss, elementNames[id])
		}
	}
	why := "the protocol states no figure to judge"
	if len(miss) > 0 {
		why = "the protocol does not state " + joinAnd(miss)
	}
	so := "so the stated size cannot be judged"
	if slices.Contains(in.Missing, "sample_size") {
		so = "so there is no stated size to judge"
	}
	return fmt.Sprintf("Incomplete: %s, %s; %s.", why, so, what)
}

// tolText words the tolerances.
func (rc *recheck) tolText() string {
	if rc.spec != nil && (rc.spec.Goal == "precision" || rc.spec.Goal == "accuracy") {
		return fmt.Sprintf("tolerance %s of the size", pct(rc.c.ToleranceN))
	}
	return fmt.Sprintf("tolerances: %s of the size, or %s points of power", pct(rc.c.ToleranceN), trim(rc.c.TolerancePower*100))
}

// noun names a stated figure: "first group (analysable)".
func (rc *recheck) noun(name string) string {
	paired := rc.spec != nil && rc.spec.Pairing == "paired"
	survey := rc.spec != nil && rc.spec.Goal == "precision"
	switch {
	case name == "n" && paired:
		return "pairs (analysable)"
	case name == "n" && rc.spec != nil && rc.spec.ContinuousExposure:
		return "participants (analysable)"
	case name == "n" && rc.spec != nil && rc.spec.Matched:
		return "matched sets (analysable)"
	case name == "n_second" && rc.spec != nil && rc.spec.Matched:
		return "controls (analysable)"
	case name == "n":
		return "first group (analysable)"
	case name == "n_second":
		return "second group (analysable)"
	case name == "total" && survey:
		return "respondents"
	case name == "total":
		return "total (analysable)"
	case name == "enrol_total" && survey:
		return "number to invite"
	case name == "enrol_total":
		return "enrolment"
	case name == "clusters":
		return "clusters per arm"
	}
	return name
}

// phrase words a figure of the named kind: "389 analysable in the first
// group".
func (rc *recheck) phrase(name string, x int) string {
	paired := rc.spec != nil && rc.spec.Pairing == "paired"
	survey := rc.spec != nil && rc.spec.Goal == "precision"
	n := count(x)
	switch {
	case name == "n" && paired:
		return n + " analysable pairs"
	case name == "n":
		return n + " analysable in the first group"
	case name == "n_second":
		return n + " analysable in the second group"
	case name == "total" && survey:
		return n + " respondents"
	case name == "total":
		return n + " analysable in all"
	case name == "enrol_total" && survey:
		return n + " to invite"
	case name == "enrol_total":
		return n + " enrolled"
	case name == "events":
		return n + " events"
	case name == "clusters":
		return n + " clusters per arm"
	}
	return n + " " + name
}
