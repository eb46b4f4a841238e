package designs

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"
)

// This file reads what `enough review` needs of a specification: the
// claimed block (what a protocol states), which reporting elements the
// protocol stated, and the plan to recheck under the protocol's own
// assumptions, with variants of it for the diagnosis and the sensitivity.

// claimedKeys are the keys of the claimed block, with what each allows.
var claimedKeys = map[string]string{
	"n":               "the first group's analysable size the protocol states as needed (before inflation for loss), a whole number from 2 to 10⁹",
	"n_second":        "the second group's analysable size the protocol states, a whole number from 1 to 10⁹",
	"total":           "the analysable total the protocol states as needed (before inflation for loss), a whole number from 2 to 10⁹",
	"enrol_total":     "the number the protocol will recruit, after inflation for loss, a whole number from 2 to 10⁹",
	"power":           "the power the protocol states, a number above alpha and at most 1 − 1e-9",
	"alpha":           "the alpha the protocol states, a number in [1e-20, 0.5]",
	"sides":           "the sides of the test the protocol states, 1 or 2",
	"method":          "the method the protocol names, a method of `enough methods` that serves the design",
	"events":          "the events the protocol states as needed (time-to-event), a whole number from 1 to 10⁹",
	"clusters":        "the clusters per arm the protocol states (cluster trials), a whole number from 1 to 10⁹",
	"tolerance_n":     "the relative difference from the recomputed size still judged consistent, a number in (0, 1) (default 0.05)",
	"tolerance_power": "the difference from the stated power still judged consistent, a number in (0, 1) (default 0.02)",
}

// claimedIgnored is what plan says of the claimed block.
const claimedIgnored = "claimed is read by enough review, which rechecks the figures a protocol states; plan does not use it"

// Default tolerances of a recheck (issue 10).
const (
	DefaultToleranceN     = 0.05
	DefaultTolerancePower = 0.02
)

// Claimed is the claimed block of a specification: what a protocol states.
// A zero value means "not stated".
type Claimed struct {
	// N and NSecond are the analysable sizes of the two groups; Total the
	// analysable total (in place of N).
	N, NSecond, Total int
	// EnrolTotal is the number the protocol will recruit, after inflation
	// for loss.
	EnrolTotal int
	// Power, Alpha and Sides as stated (0 when not stated).
	Power, Alpha float64
	Sides        int
	// Method is the method the protocol names ("" when none).
	Method string
	// Events (time-to-event) and Clusters (per arm, cluster trials).
	Events, Clusters int
	// ToleranceN and TolerancePower decide what counts as consistent.
	ToleranceN, TolerancePower float64
}

// Reporting elements of a sample-size justification, by fixed id (issue
// 10), in the order a report lists them.
var ReportingElements = []string{
	"primary_outcome", "reference_value", "effect", "effect_source", "alpha",
	"sides", "power", "method", "allocation", "attrition", "design_effect",
	"sample_size",
}

// Edit is one change to a specification made by a recheck: Key (dotted
// for a nested key, cluster.icc) set to Value, YAML text, or removed when
// Delete is set.
type Edit struct {
	Key    string
	Value  string
	Delete bool
}

// Set returns the edit that sets key to the YAML text of v.
func Set(key string, v any) Edit {
	switch x := v.(type) {
	case float64:
		return Edit{Key: key, Value: strconv.FormatFloat(x, 'g', -1, 64)}
	case int:
		return Edit{Key: key, Value: strconv.Itoa(x)}
	case string:
		return Edit{Key: key, Value: x}
	}
	return Edit{Key: key, Value: fmt.Sprint(v)}
}

// Delete returns the edit that removes key, with the sources that speak
// of it (sources.KEY, and sources.KEY.SUB for a map such as cluster).
func Delete(key string) Edit { return Edit{Key: key, Delete: true} }

// Review modes: what the recheck can compute from what the protocol
// stated.
const (
	// ReviewN: the effect, power and a size are stated: recompute n.
	ReviewN = "n"
	// ReviewPower: no power stated: the power the stated size gives.
	ReviewPower = "power"
	// ReviewEffect: no effect stated: the effect the stated size detects.
	ReviewEffect = "effect"
	// ReviewNone: no reference value (or no size and no effect): nothing
	// can be recomputed.
	ReviewNone = "none"
)

// ReviewInput is a specification read for `enough review`.
type ReviewInput struct {
	Claimed Claimed
	// Given and Missing are the reporting elements the protocol stated
	// and those it did not, in the order of ReportingElements; elements
	// that do not apply to the design are in neither.
	Given, Missing []string
	// Assumed lists the conventions the recheck assumed for elements not
	// stated ("alpha 0.05", "a two-sided test", "1:1 allocation").
	Assumed []string
	// Mode is what the recheck computes (ReviewN, ReviewPower,
	// ReviewEffect or ReviewNone).
	Mode string
	// Spec is the plan to recheck, as the mode asks (solve n, power or
	// effect); nil when Mode is ReviewNone.
	Spec *Spec

	file string
	data []byte
	sets []string
	base []Edit
	// unstated holds the conventions the recheck must assume (alpha,
	// sides, allocation); hypothesis is the protocol's.
	unstated   map[string]bool
	hypothesis string
}

// assume words the conventions the recheck assumed, from the plan to
// recheck (nil: the defaults of the hypothesis).
func (in *ReviewInput) assume(s *Spec) {
	ni := in.hypothesis == "non-inferiority" || in.hypothesis == "equivalence"
	alpha, sides := 0.05, 2
	if ni {
		alpha, sides = 0.025, 1
	}
	if s != nil {
		alpha, sides = s.Alpha, s.Sides
	}
	why := "(the usual convention)"
	if ni {
		why = "(the usual convention for " + in.hypothesis + ")"
	}
	if in.unstated["alpha"] {
		in.Assumed = append(in.Assumed, fmt.Sprintf("alpha %s %s", strconv.FormatFloat(alpha, 'g', -1, 64), why))
	}
	if in.unstated["sides"] {
		word := map[int]string{1: "a one-sided test", 2: "a two-sided test"}[sides]
		in.Assumed = append(in.Assumed, word+" "+why)
	}
	if in.unstated["allocation"] {
		in.Assumed = append(in.Assumed, "1:1 allocation (the usual convention)")
	}
}

// ParseReview reads a specification for `enough review`: like Parse, with
// a claimed block (required). Power, alpha, sides and method may be given
// at the top level, in the claimed block or in both, where they must
// agree. The plan to recheck solves n; or, when no power is stated, the
// power at the stated size; or, when no effect is stated, the effect the
// stated size detects at 80% power (see Variant for others). A missing
// reference value leaves nothing to recompute (Mode ReviewNone), which is
// not an error: the review reports it.
func ParseReview(file string, data []byte, sets []string) (*ReviewInput, error) {
	in := &ReviewInput{file: file, data: data, sets: sets}
	r, err := readRaw(file, data, sets)
	if err != nil {
		return nil, err
	}
	if r.get("claimed") == nil {
		e := r.entries["claimed"]
		se := &SpecError{File: file, Key: "claimed", Msg: "missing; enough review rechecks what a protocol states; allowed: a claimed: block with the stated sizes (n, n_second or total, enrol_total), power, alpha and sides (start from `enough new trial --review`)"}
		if e != nil {
			se = r.errAt(e, "is empty; allowed: a map with the stated sizes (n, n_second or total, enrol_total), power, alpha and sides")
		}
		return nil, se
	}
	c, errs := r.readClaimed()
	if len(errs) > 0 {
		// Report every problem of the specification, the claimed block's
		// among them, as plan would.
		if _, err := Parse(file, data, sets); err != nil {
			return nil, err
		}
		return nil, errs.result(sets)
	}
	in.Claimed = c
	in.elements(r)
	in.base = in.baseEdits(r)
	if in.Mode == ReviewNone {
		// Check the rest of the specification all the same: only the
		// missing reference value is tolerated.
		s, err := in.Variant()
		in.assume(s)
		if err == nil {
			in.Spec = s
			return in, nil
		}
		var kept SpecErrors
		for _, se := range AllSpecErrors(err) {
			if !strings.HasPrefix(se.Msg, "missing") && !strings.HasPrefix(se.Msg, "no effect given") {
				kept = append(kept, se)
			}
		}
		if len(kept) > 0 {
			return nil, kept.result(sets)
		}
		return in, nil
	}
	s, err := in.Variant()
	if err != nil {
		return nil, err
	}
	in.Spec = s
	in.assume(s)
	return in, nil
}

// Variant parses the specification again with the recheck's own edits and
// then edits, in order (later ones win), as the diagnosis and the
// sensitivity analysis do.
func (in *ReviewInput) Variant(edits ...Edit) (*Spec, error) {
	r, err := readRaw(in.file, in.data, in.sets)
	if err != nil {
		return nil, err
	}
	all := append(slices.Clone(in.base), edits...)
	for _, e := range all {
		r.applyEdit(e)
	}
	// The claimed block lends the plan only the power, alpha, sides and
	// method the edits leave alone; its other figures were read already.
	for k := range claimedKeys {
		if !slices.Contains([]string{"power", "alpha", "sides", "method"}, k) || slices.ContainsFunc(all, func(e Edit) bool { return e.Key == k }) {
			r.applyEdit(Delete("claimed." + k))
		}
	}
	spec := r.build()
	r.dropSupplied()
	if err := r.errs.result(in.sets); err != nil {
		return nil, err
	}
	spec.File = in.file
	spec.Overridden = r.overridden(spec.Sources)
	spec.Overrides = append([]string(nil), in.sets...)
	spec.Ignored = slices.DeleteFunc(spec.Ignored, func(s string) bool { return s == claimedIgnored })
	spec.Claimed = &in.Claimed
	return spec, nil
}

// Value returns the value as written of key (dotted for nested keys) in
// the specification as the user gave it (file and --set), and whether it
// is there.
func (in *ReviewInput) Value(key string) (string, bool) {
	r, err := readRaw(in.file, in.data, in.sets)
	if err != nil {
		return "", false
	}
	e := r.lookup(key)
	if e == nil || e.node.Kind != yaml.ScalarNode {
		return "", false
	}
	return e.node.Value, true
}

// readRaw reads the YAML of a specification and applies the overrides,
// without validating the values.
func readRaw(file string, data []byte, sets []string) (*reader, error) {
	r, err := readSpec(file, data, sets)
	if err != nil {
		return nil, err
	}
	if len(r.errs) > 0 {
		// Report every problem of the specification, as plan would.
		if _, err := Parse(file, data, sets); err != nil {
			return nil, err
		}
		return nil, r.errs.result(sets)
	}
	return r, nil
}

// lookup returns the entry of key, dotted for a nested key, or nil.
func (r *reader) lookup(key string) *entry {
	if head, sub, ok := strings.Cut(key, "."); ok {
		return r.nested[head][sub]
	}
	return r.get(key)
}

// applyEdit applies one edit of a recheck to the raw specification.
func (r *reader) applyEdit(ed Edit) {
	head, sub, nested := strings.Cut(ed.Key, ".")
	if ed.Delete && head != "sources" {
		// The sources of a removed key would name a key the
		// specification no longer sets.
		for k := range r.nested["sources"] {
			if k == ed.Key || strings.HasPrefix(k, ed.Key+".") {
				delete(r.nested["sources"], k)
			}
		}
	}
	if ed.Delete {
		if nested {
			delete(r.nested[head], sub)
			return
		}
		e := r.entries[ed.Key]
		if e == nil {
			return
		}
		delete(r.entries, ed.Key)
		delete(r.nested, ed.Key)
		r.order = slices.DeleteFunc(r.order, func(x *entry) bool { return x == e })
		for i, x := range r.order {
			x.keyPos = i
		}
		return
	}
	var doc yaml.Node
	node := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: ed.Value}
	if err := yaml.Unmarshal([]byte(ed.Value), &doc); err == nil && len(doc.Content) > 0 {
		node = doc.Content[0]
	}
	if nested {
		r.ensureNested(head, r.file, false)
		r.nested[head][sub] = &entry{key: ed.Key, node: node, file: r.file}
		return
	}
	r.place(&entry{key: ed.Key, node: node, file: r.file})
}

// readClaimed reads and checks the claimed block, and that power, alpha,
// sides and method agree where both it and the top level give them.
func (r *reader) readClaimed() (Claimed, SpecErrors) {
	c := Claimed{ToleranceN: DefaultToleranceN, TolerancePower: DefaultTolerancePower}
	var errs SpecErrors
	m := r.nested["claimed"]
	num := func(sub string, whole bool, in func(float64) bool) (float64, bool) {
		e := m[sub]
		if e == nil {
			return 0, false
		}
		var x float64
		_, err := fmt.Sscan(strings.ReplaceAll(e.node.Value, "_", ""), &x)
		switch {
		case isPlaceholder(e.node):
			errs = append(errs, r.errAt(e, "%s is a placeholder still to fill in with what the protocol states (or delete the line); allowed: %s", show(e.node), claimedKeys[sub]))
		case e.node.Kind != yaml.ScalarNode || (e.node.Tag != "!!int" && e.node.Tag != "!!float") || err != nil || math.IsNaN(x) || math.IsInf(x, 0):
			what := "a number"
			if whole {
				what = "a whole number"
			}
			errs = append(errs, r.errAt(e, "%s is not %s; allowed: %s", show(e.node), what, claimedKeys[sub]))
		case whole && x != math.Trunc(x):
			errs = append(errs, r.errAt(e, "%s is not a whole number; allowed: %s", show(e.node), claimedKeys[sub]))
		case !in(x):
			hint := ""
			if !whole && x > 1 && x <= 100 && in(x/100) {
				hint = fmt.Sprintf("; did you mean %s?", fmtFraction(x/100))
			}
			errs = append(errs, r.errAt(e, "%s is out of range; allowed: %s%s", show(e.node), claimedKeys[sub], hint))
		default:
			return x, true
		}
		return 0, false
	}
	size := func(lo float64) func(float64) bool {
		return func(x float64) bool { return x >= lo && x <= MaxSize }
	}
	for sub, lo := range map[string]float64{"n": 2, "n_second": 1, "total": 2, "enrol_total": 2, "events": 1, "clusters": 1} {
		if x, ok := num(sub, true, size(lo)); ok {
			v := int(x)
			switch sub {
			case "n":
				c.N = v
			case "n_second":
				c.NSecond = v
			case "total":
				c.Total = v
			case "enrol_total":
				c.EnrolTotal = v
			case "events":
				c.Events = v
			case "clusters":
				c.Clusters = v
			}
		}
	}
	if x, ok := num("alpha", false, func(x float64) bool { return x >= 1e-20 && x <= 0.5 }); ok {
		c.Alpha = x
	}
	if x, ok := num("power", false, func(x float64) bool { return x > 0 && x <= MaxPower }); ok {
		c.Power = x
	}
	if x, ok := num("sides", true, func(x float64) bool { return x == 1 || x == 2 }); ok {
		c.Sides = int(x)
	}
	if x, ok := num("tolerance_n", false, func(x float64) bool { return x > 0 && x < 1 }); ok {
		c.ToleranceN = x
	}
	if x, ok := num("tolerance_power", false, func(x float64) bool { return x > 0 && x < 1 }); ok {
		c.TolerancePower = x
	}
	if e := m["method"]; e != nil {
		if e.node.Kind != yaml.ScalarNode || MethodByID(e.node.Value) == nil {
			errs = append(errs, r.errAt(e, "%s is not a method; allowed: %s", show(e.node), claimedKeys["method"]))
		} else {
			c.Method = e.node.Value
		}
	}
	if m["n"] != nil && m["total"] != nil {
		errs = append(errs, r.errAt(m["total"], "given together with claimed.n; allowed: n (with n_second when the groups differ) or total"))
	}
	if m["n_second"] != nil && m["n"] == nil {
		errs = append(errs, r.errAt(m["n_second"], "given without claimed.n; allowed: n_second together with n"))
	}
	// Figures that only some designs have.
	if e := m["events"]; e != nil && c.Events > 0 {
		if o := r.get("outcome"); o == nil || strings.TrimSpace(o.node.Value) != "time-to-event" {
			errs = append(errs, r.errAt(e, "%s does not apply: events are stated for a time-to-event outcome; allowed: leave events out", show(e.node)))
			c.Events = 0
		}
	}
	if e := m["clusters"]; e != nil && c.Clusters > 0 && r.get("cluster") == nil {
		errs = append(errs, r.errAt(e, "%s cannot be judged without the cluster block; allowed: add cluster: with the size and icc the protocol assumes (leave clusters out when the protocol does not say them)", show(e.node)))
		c.Clusters = 0
	}
	// Stated twice: the two must agree.
	for _, k := range []string{"power", "alpha", "sides", "method"} {
		top, in := r.get(k), m[k]
		if top == nil || in == nil || top.node.Kind != yaml.ScalarNode {
			continue
		}
		same := top.node.Value == in.node.Value
		if a, err1 := strconv.ParseFloat(top.node.Value, 64); err1 == nil {
			if b, err2 := strconv.ParseFloat(in.node.Value, 64); err2 == nil {
				same = a == b
			}
		}
		if !same {
			where := "line " + strconv.Itoa(top.line)
			if top.file != r.file {
				where = top.file
			}
			errs = append(errs, r.errAt(in, "%s disagrees with %s: %s (%s); allowed: the same value in both, or one of them", show(in.node), k, show(top.node), where))
		}
	}
	return c, errs
}

// promoteClaimed gives power, alpha, sides and method stated only in the
// claimed block to the plan, as if given at the top level (at the claimed
// block's line, so that a problem with the value points there).
// bad holds the keys whose claimed value was refused: they are not taken,
// and not reported missing besides.
func (r *reader) promoteClaimed(bad map[string]bool) {
	for _, k := range []string{"power", "alpha", "sides", "method"} {
		e := r.nested["claimed"][k]
		if e == nil || r.entries[k] != nil {
			continue
		}
		if bad[k] {
			r.standsFor[k] = true
			continue
		}
		r.add(&entry{key: k, node: e.node, file: e.file, line: e.line, alias: "claimed." + k})
	}
}

// elements decides which reporting elements the protocol stated, what the
// recheck assumes and what it can compute (the mode).
func (in *ReviewInput) elements(r *reader) {
	val := func(k string) string {
		if e := r.get(k); e != nil && e.node.Kind == yaml.ScalarNode {
			return strings.TrimSpace(e.node.Value)
		}
		return ""
	}
	has := func(keys ...string) bool {
		for _, k := range keys {
			if r.lookup(k) != nil {
				return true
			}
		}
		return false
	}
	c := in.Claimed
	design, outcome, goal := val("design"), val("outcome"), val("goal")
	if outcome == "" {
		outcome = "binary"
	}
	// A survey, a ratio to a stated precision or a study of accuracy is
	// sized for an interval, not a test: no power, alpha or sides.
	precision := goal == "precision" || goal == "accuracy"
	hyp := val("hypothesis")
	ro := roles[design]

	var reference, effects []string
	switch {
	case goal == "accuracy":
		reference, effects = []string{"sensitivity", "specificity", "condition_prevalence"}, []string{"margin"}
	case goal == "precision" && design != "cross-sectional":
		reference, effects = []string{ro.reference}, append([]string{"precision_ratio"}, ro.effects...)
	case precision && outcome == "continuous":
		reference, effects = []string{"sd"}, []string{"margin"}
	case precision:
		reference, effects = []string{"expected_prevalence"}, []string{"margin"}
	case outcome == "continuous":
		reference = []string{"sd", "sd_first", "sd_second", "sd_difference"}
		effects = []string{"mean_difference", ro.means[0], ro.means[1]}
	case outcome == "time-to-event":
		reference, effects = []string{"control_median", "control_survival"}, []string{"hazard_ratio"}
	case outcome == "rate":
		reference, effects = []string{"unexposed_rate"}, []string{"rate_ratio"}
	case val("exposure") == "continuous":
		reference, effects = []string{"event_rate"}, []string{"odds_ratio_per_sd"}
	default:
		reference, effects = []string{ro.reference}, ro.effects
	}
	if hyp == "non-inferiority" || hyp == "equivalence" {
		// The margin is the effect such trials are sized on; the true
		// difference defaults to none.
		effects = append(slices.Clone(effects), "margin")
	}
	stated := map[string]bool{
		"primary_outcome": has("primary_outcome"),
		"reference_value": has(reference...),
		"effect":          has(effects...),
		"alpha":           has("alpha") || c.Alpha > 0,
		"sides":           has("sides") || c.Sides > 0,
		"power":           has("power") || c.Power > 0,
		"method":          has("method") || c.Method != "",
		"allocation":      has("ratio", "n_second", "exposure_prevalence", "matching") || c.NSecond > 0,
		"attrition":       has("attrition", "dropout"),
		"sample_size":     c.N > 0 || c.Total > 0 || c.EnrolTotal > 0 || c.Events > 0 || c.Clusters > 0,
	}
	for _, k := range effects {
		if has("sources." + k) {
			stated["effect_source"] = true
		}
	}
	applies := map[string]bool{}
	for _, id := range ReportingElements {
		applies[id] = true
	}
	if precision {
		applies["alpha"], applies["sides"], applies["power"], applies["allocation"] = false, false, false, false
		stated["effect_source"] = has("sources.margin")
	}
	if val("pairing") == "paired" || val("exposure") == "continuous" {
		// One group: nothing to allocate.
		applies["allocation"] = false
	}
	if hyp == "equivalence" {
		// Two one-sided tests, each at alpha: there is no side to state.
		applies["sides"] = false
	}
	// The design effect applies to clustered designs: a cluster block or
	// design effect given, or clusters stated.
	stated["design_effect"] = has("cluster", "design_effect")
	applies["design_effect"] = stated["design_effect"] || c.Clusters > 0
	for _, id := range ReportingElements {
		switch {
		case !applies[id]:
		case stated[id]:
			in.Given = append(in.Given, id)
		default:
			in.Missing = append(in.Missing, id)
		}
	}

	in.unstated = map[string]bool{}
	for _, id := range []string{"alpha", "sides", "allocation"} {
		in.unstated[id] = applies[id] && !stated[id] && !(id == "allocation" && design == "cross-sectional")
	}
	in.hypothesis = hyp
	sized := c.N > 0 || c.Total > 0 || c.EnrolTotal > 0 || (c.Clusters > 0 && has("cluster"))
	switch {
	case !stated["reference_value"]:
		in.Mode = ReviewNone
	case !stated["effect"] && (!sized || hyp == "non-inferiority" || hyp == "equivalence"):
		in.Mode = ReviewNone
	case !stated["effect"]:
		in.Mode = ReviewEffect
	case !stated["power"] && !precision && sized:
		in.Mode = ReviewPower
	default:
		in.Mode = ReviewN
	}
}

// baseEdits are the edits that turn the protocol's specification into the
// plan to recheck: power, alpha, sides and method moved up from the claimed
// block, the solve its mode asks for, and the stated sizes where a solve
// needs them.
func (in *ReviewInput) baseEdits(r *reader) []Edit {
	c := in.Claimed
	var out []Edit
	// The claimed block stays: the plan takes power, alpha, sides and
	// method from it (a problem then names claimed.KEY and its line).
	out = append(out, Delete("simulate"))
	precision := r.get("goal") != nil && (r.get("goal").node.Value == "precision" || r.get("goal").node.Value == "accuracy")
	// No power stated: the usual 80% (a precision survey has no power).
	noPower := c.Power == 0 && r.get("power") == nil && !precision
	switch in.Mode {
	case ReviewPower:
		out = append(out, Set("solve", "power"))
		out = append(out, in.SizeEdits()...)
	case ReviewEffect:
		out = append(out, Set("solve", "effect"))
		if noPower {
			out = append(out, Set("power", 0.8))
		}
		out = append(out, in.SizeEdits()...)
		out = append(out, in.scaleEdit(r)...)
	default:
		out = append(out, Set("solve", "n"), Delete("n"), Delete("n_second"))
		if c.N > 0 && c.NSecond > 0 && r.get("ratio") == nil && !precision && in.matchedSets() == 0 && !in.oneGroup() {
			// The stated sizes give the allocation.
			out = append(out, Set("ratio", impliedRatio(c.N, c.NSecond)))
		}
		if !precision {
			out = append(out, Delete("total"))
		}
		if noPower {
			// No power stated: the recomputed n at the usual 80%.
			out = append(out, Set("power", 0.8))
		}
	}
	return out
}

// SizeEdits returns the edits that put the stated analysable sizes into a
// plan that solves power or effect: n and n_second (or total for a
// survey) with no attrition, so that the analysable sizes are the stated
// ones (a cluster trial with attrition enrols ⌈n / (1 − attrition)⌉, since
// its clusters are filled by the enrolment); or, when only the
// recruitment is stated, that enrolment with the assumed attrition, split
// by the allocation (EnrolmentEdits).
func (in *ReviewInput) SizeEdits() []Edit {
	c := in.Claimed
	survey := in.survey()
	out := []Edit{Delete("n"), Delete("n_second"), Delete("total")}
	switch {
	case survey && (c.Total > 0 || c.N > 0):
		t := c.Total
		if t == 0 {
			t = c.N + c.NSecond
		}
		out = append(out, Set("total", t))
		out = append(out, in.noLoss()...)
	case c.N > 0 && in.clusterLoss() > 0:
		// Clusters are filled by the enrolment, and attrition loses
		// participants, not clusters: the stated analysable sizes are
		// enrolled as ⌈n / (1 − attrition)⌉, which leaves at least n.
		a := in.clusterLoss()
		up := func(n int) int { return int(math.Ceil(float64(n)/(1-a) - 1e-9)) }
		out = append(out, Set("n", up(c.N)))
		if c.NSecond > 0 {
			out = append(out, Delete("ratio"), Set("n_second", up(c.NSecond)))
		}
	case c.N > 0:
		out = append(out, Set("n", c.N))
		if c.NSecond > 0 && in.matchedSets() == 0 && !in.oneGroup() {
			// Matched sets take their controls from the cases (the stated
			// controls are judged against M × sets).
			out = append(out, Delete("ratio"), Set("n_second", c.NSecond))
		}
		out = append(out, in.noLoss()...)
	case c.Total > 0:
		out = append(out, in.SplitEdits(c.Total)...)
		out = append(out, in.noLoss()...)
	case c.EnrolTotal > 0:
		return in.EnrolmentEdits(c.EnrolTotal)
	case c.Clusters > 0:
		// Only the clusters per arm: each arm enrols its clusters full.
		if v, ok := in.Value("cluster.size"); ok {
			if m, err := strconv.ParseFloat(v, 64); err == nil && m > 0 {
				n := int(math.Round(float64(c.Clusters) * m))
				out = append(out, Set("n", n), Delete("ratio"), Set("n_second", n))
			}
		}
	}
	return out
}

// impliedRatio is the allocation the stated sizes imply, n_second / n,
// taken as the nearest simple ratio a/b (a, b up to 10) when it lies within
// 2% of one (sizes rounded up separately rarely give the ratio exactly).
func impliedRatio(n, nSecond int) float64 {
	x := float64(nSecond) / float64(n)
	best, gap := x, math.Inf(1)
	for a := 1; a <= 10; a++ {
		for b := 1; b <= 10; b++ {
			q := float64(a) / float64(b)
			if g := math.Abs(q-x) / x; g < gap {
				best, gap = q, g
			}
		}
	}
	if gap <= 0.02 {
		return best
	}
	return x
}

// EnrolmentEdits returns the edits that put an enrolment into a plan that
// solves power or effect, with the assumed attrition kept: the plan's
// analysable sizes are then ⌊enrolment × (1 − attrition)⌋ per group, the
// enrolment split by the allocation (SplitEdits).
func (in *ReviewInput) EnrolmentEdits(enrol int) []Edit {
	out := []Edit{Delete("n"), Delete("n_second"), Delete("total")}
	if in.survey() {
		return append(out, Set("total", enrol))
	}
	return append(out, in.SplitEdits(enrol)...)
}

// SplitEdits returns the edits that split a total over the groups by the
// allocation: the first group round(total / (1 + ratio)) and the second
// the rest (with several arms, each intervention arm
// round(total / (arms − 1 + ratio)) and the control arm the rest; every
// pair of arms compared: total / arms each); a paired design counts pairs;
// a survey takes the total as it is.
func (in *ReviewInput) SplitEdits(total int) []Edit {
	if in.survey() {
		return []Edit{Set("total", total)}
	}
	if in.oneGroup() {
		return []Edit{Set("n", total)}
	}
	if m := in.matchedSets(); m > 0 {
		// A set is a case and its m controls.
		return []Edit{Set("n", max(int(math.Round(float64(total)/float64(1+m))), 1))}
	}
	num := func(key string, def float64) float64 {
		if v, ok := in.Value(key); ok {
			if x, err := strconv.ParseFloat(v, 64); err == nil && x > 0 {
				return x
			}
		}
		return def
	}
	rv, arms := num("ratio", 1), int(num("arms", 2))
	if cmp, _ := in.Value("comparisons"); cmp == "all-pairs" && arms > 2 {
		return []Edit{Set("n", max(int(math.Round(float64(total)/float64(arms))), 2))}
	}
	others := float64(max(arms-1, 1))
	n1 := max(int(math.Round(float64(total)/(others+rv))), 2)
	n2 := max(total-int(others)*n1, 1)
	return []Edit{Set("n", n1), Delete("ratio"), Set("n_second", n2)}
}

// clusterLoss is the attrition of a cluster trial (0 for other designs,
// or when not given).
func (in *ReviewInput) clusterLoss() float64 {
	if _, ok := in.Value("cluster.size"); !ok {
		return 0
	}
	v, ok := in.Value("attrition")
	if !ok {
		return 0
	}
	a, err := strconv.ParseFloat(v, 64)
	if err != nil || a <= 0 || a >= 1 {
		return 0
	}
	return a
}

// survey tells whether the specification is a cross-sectional survey,
// whose size is a total.
func (in *ReviewInput) survey() bool {
	v, ok := in.Value("design")
	return ok && v == "cross-sectional"
}

// matchedSets returns the controls per case of a matched case-control
// study, or 0 when it is not one.
func (in *ReviewInput) matchedSets() int {
	if v, ok := in.Value("design"); !ok || v != "case-control" {
		return 0
	}
	v, ok := in.Value("matching.controls_per_case")
	if !ok {
		return 0
	}
	m, err := strconv.Atoi(v)
	if err != nil || m < 1 {
		return 0
	}
	return m
}

// oneGroup says the stated size is of one group: pairs, or everyone
// measured on a continuous exposure.
func (in *ReviewInput) oneGroup() bool {
	p, _ := in.Value("pairing")
	e, _ := in.Value("exposure")
	return p == "paired" || e == "continuous"
}

// noLoss is the edit that makes the stated sizes the analysable ones: no
// attrition (a time-to-event plan has dropout in place of attrition, which
// acts on the events, not on the sizes).
func (in *ReviewInput) noLoss() []Edit {
	if _, ok := in.Value("dropout"); ok {
		return nil
	}
	if v, ok := in.Value("outcome"); ok && v == "time-to-event" {
		return nil
	}
	return []Edit{Set("attrition", 0)}
}

// scaleEdit names the scale of the detectable effect when the protocol
// gave no effect: the design's first effect key at no difference.
func (in *ReviewInput) scaleEdit(r *reader) []Edit {
	if r.get("hypothesis") != nil && r.get("hypothesis").node.Value != "superiority" {
		return nil
	}
	outcome := "binary"
	if e := r.get("outcome"); e != nil {
		outcome = e.node.Value
	}
	design := ""
	if e := r.get("design"); e != nil {
		design = e.node.Value
	}
	switch outcome {
	case "continuous":
		return []Edit{Delete(roles[design].means[0]), Delete(roles[design].means[1]), Set("mean_difference", 0)}
	case "time-to-event":
		return []Edit{Set("hazard_ratio", 1)}
	}
	if ro, ok := roles[design]; ok {
		return []Edit{Set(ro.effects[0], 1)}
	}
	return nil
}
