package designs

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"gopkg.in/yaml.v3"
)

// Base is a specification read and validated once, from which a sweep
// (enough sweep, issue 11) derives the specification of every point of a
// grid without reading the YAML again: [Base.At] sets the varied keys to
// the point's values.
//
// The commonly varied numeric keys take a fast path: the point's copy of
// the validated specification has those values set in code, what depends
// on them derived again (the first group's risk from the effect and the
// reference risk, the allocation from exposure_prevalence or n_second, the
// standard deviations after a baseline adjustment, the control hazard
// from a median or a survival, the design effect of the clusters, the
// side of a one-sided test, the default test), and only those values and
// the checks that involve them validated again, with the same ranges as
// the reader (the named limits of keys.go). Any other key, and every
// point the fast path finds invalid, is rebuilt from the entries read
// once, with the values replaced, by the reader's own validation: a
// point's error is exactly the one Parse would give.
//
// A Base is safe for use by several goroutines at once.
type Base struct {
	file string
	sets []string
	sum  string
	// raw is the reader after the file and the overrides were collected
	// and before validation, which each rebuild clones.
	raw  *reader
	spec *Spec
	sel  selector
	// allowed holds the keys of this selection.
	allowed map[string]bool
	// fast holds the keys the fast path serves for this specification.
	fast map[string]fastKey
	// nums are the specification's numeric inputs as the fast path reads
	// them; given the fast keys the specification gives.
	nums  numbers
	given keySet
	// Text settings the fast path needs: the direction given (+1, −1 or
	// 0) and whether the test was given.
	dirGiven  int
	testGiven bool
}

// fastKey names a key the fast path serves.
type fastKey uint8

const (
	fkNone fastKey = iota
	fkAlpha
	fkPower
	fkRatio
	fkAttrition
	fkDesignEffect
	fkN
	fkNSecond
	fkTotal
	fkReference // the second group's risk (unexposed_risk, control_risk, …)
	fkEffect    // a binary effect key (risk_ratio, odds_ratio, exposed_risk, …)
	fkExposurePrevalence
	fkMeanDifference
	fkFirstMean
	fkSecondMean
	fkSD
	fkSDFirst
	fkSDSecond
	fkSDDifference
	fkWithinCorrelation
	fkBaselineCorrelation
	fkHazardRatio
	fkControlMedian
	fkControlSurvival
	fkTime
	fkAccrual
	fkFollowUp
	fkDropout
	fkMargin
	fkNonAdherence
	fkContamination
	fkClusterSize
	fkClusterICC
	fkClusterSizeCV
	fkExpectedPrevalence
	fkConfidence
	fkPopulation
	fkSimN
	fkSimReplicates
	fkSimSeed
	fkCount
)

// keySet is a set of fast keys.
type keySet uint64

func (k keySet) has(f fastKey) bool { return k&(1<<f) != 0 }

// numbers are the numeric inputs of a specification as given (before any
// derivation), indexed by fast key.
type numbers [fkCount]float64

// Groups of checks: a key marks those its value takes part in.
type group uint16

const (
	gLevel     group = 1 << iota // alpha and power
	gLoss                        // attrition and design_effect
	gAlloc                       // sizes and allocation
	gMargin                      // a trial's margin
	gCluster                     // the cluster block
	gAdherence                   // non-adherence and contamination
	gOutcome                     // the effect, reference values, SDs, survival; direction and test
	gSurvey                      // a precision survey
	gSimulate                    // the simulate block
)

// fastGroups are the groups of checks each fast key takes part in.
var fastGroups = [fkCount]group{
	fkAlpha: gLevel, fkPower: gLevel,
	fkAttrition: gLoss, fkDesignEffect: gLoss,
	fkRatio: gAlloc, fkN: gAlloc, fkNSecond: gAlloc, fkTotal: gAlloc | gSurvey, fkExposurePrevalence: gAlloc,
	fkReference: gOutcome, fkEffect: gOutcome,
	fkMeanDifference: gOutcome, fkFirstMean: gOutcome, fkSecondMean: gOutcome,
	fkSD: gOutcome, fkSDFirst: gOutcome, fkSDSecond: gOutcome, fkSDDifference: gOutcome,
	fkWithinCorrelation: gOutcome, fkBaselineCorrelation: gOutcome,
	fkHazardRatio: gOutcome, fkControlMedian: gOutcome, fkControlSurvival: gOutcome, fkTime: gOutcome,
	fkAccrual: gOutcome, fkFollowUp: gOutcome, fkDropout: gOutcome,
	fkMargin:       gMargin | gOutcome | gSurvey,
	fkNonAdherence: gAdherence, fkContamination: gAdherence,
	fkClusterSize: gCluster, fkClusterICC: gCluster, fkClusterSizeCV: gCluster,
	fkExpectedPrevalence: gSurvey, fkConfidence: gSurvey, fkPopulation: gSurvey,
	fkSimN: gSimulate, fkSimReplicates: gSimulate, fkSimSeed: gSimulate,
}

// fastKeyOf returns the fast key that name is in a specification of
// design ro, or fkNone.
func fastKeyOf(name string, ro designRoles) fastKey {
	switch name {
	case "alpha":
		return fkAlpha
	case "power":
		return fkPower
	case "ratio":
		return fkRatio
	case "attrition":
		return fkAttrition
	case "design_effect":
		return fkDesignEffect
	case "n":
		return fkN
	case "n_second":
		return fkNSecond
	case "total":
		return fkTotal
	case "exposure_prevalence":
		return fkExposurePrevalence
	case "mean_difference":
		return fkMeanDifference
	case "sd":
		return fkSD
	case "sd_first":
		return fkSDFirst
	case "sd_second":
		return fkSDSecond
	case "sd_difference":
		return fkSDDifference
	case "within_correlation":
		return fkWithinCorrelation
	case "baseline_correlation":
		return fkBaselineCorrelation
	case "hazard_ratio":
		return fkHazardRatio
	case "control_median":
		return fkControlMedian
	case "control_survival":
		return fkControlSurvival
	case "time":
		return fkTime
	case "accrual":
		return fkAccrual
	case "follow_up":
		return fkFollowUp
	case "dropout":
		return fkDropout
	case "margin":
		return fkMargin
	case "non_adherence":
		return fkNonAdherence
	case "contamination":
		return fkContamination
	case "cluster.size":
		return fkClusterSize
	case "cluster.icc":
		return fkClusterICC
	case "cluster.size_cv":
		return fkClusterSizeCV
	case "expected_prevalence":
		return fkExpectedPrevalence
	case "confidence":
		return fkConfidence
	case "population":
		return fkPopulation
	case "simulate.n":
		return fkSimN
	case "simulate.replicates":
		return fkSimReplicates
	case "simulate.seed":
		return fkSimSeed
	case ro.reference:
		return fkReference
	case ro.means[0]:
		if name != "" {
			return fkFirstMean
		}
	case ro.means[1]:
		if name != "" {
			return fkSecondMean
		}
	}
	if slices.Contains(ro.effects, name) {
		return fkEffect
	}
	return fkNone
}

// absentOK are the fast keys that may be varied when the specification
// does not give them: a value given changes no other key's meaning, no
// ignored key and no choice between keys.
var absentOK = map[fastKey]bool{
	fkAlpha: true, fkAttrition: true, fkNonAdherence: true, fkContamination: true,
	fkBaselineCorrelation: true, fkDropout: true, fkAccrual: true,
	fkConfidence: true, fkPopulation: true,
}

// NewBase reads and validates a specification exactly as [Parse] does
// (the same errors), keeping what a sweep needs to derive each point's
// specification without reading the YAML again.
func NewBase(file string, data []byte, sets []string) (*Base, error) {
	r, err := readSpec(file, data, sets)
	if err != nil {
		return nil, err
	}
	raw := r.clone()
	spec, err := r.finish(sets)
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(data)
	spec.SHA256 = hex.EncodeToString(sum[:])
	b := &Base{file: file, sets: slices.Clone(sets), sum: spec.SHA256, raw: raw, spec: spec}
	b.sel = selector{design: spec.Design, goal: orDefault(spec.Goal, "comparison"), outcome: spec.Outcome, pairing: spec.Pairing, hypothesis: spec.Hypothesis, matched: spec.Matched, continuous: spec.ContinuousExposure}
	b.allowed = keysFor(b.sel)
	b.prepareFast()
	return b, nil
}

// readSpec reads the YAML of a specification and applies the overrides,
// without validating the values (see finish).
func readSpec(file string, data []byte, sets []string) (*reader, error) {
	root, err := readDoc(file, data)
	if err != nil {
		return nil, err
	}
	r := newReader(file)
	r.collect(root, file)
	for _, s := range sets {
		r.applySet(s)
	}
	return r, nil
}

// finish validates the collected keys into a specification, as Parse
// does (all but the digest of the file).
func (r *reader) finish(sets []string) (*Spec, error) {
	spec := r.build()
	r.dropSupplied()
	if err := r.errs.result(sets); err != nil {
		return nil, err
	}
	spec.File = r.file
	spec.Overridden = r.overridden(spec.Sources)
	spec.Overrides = append([]string(nil), sets...)
	return spec, nil
}

// clone copies a reader before validation, so that a rebuild can replace
// entries and validate without touching the original. The entries and
// their YAML nodes are shared: validation only reads them.
func (r *reader) clone() *reader {
	c := newReader(r.file)
	c.entries = maps.Clone(r.entries)
	c.order = slices.Clone(r.order)
	for k, m := range r.nested {
		c.nested[k] = maps.Clone(m)
	}
	c.orig, c.setKeys = r.orig, r.setKeys
	c.errs = slices.Clone(r.errs)
	c.unknown = slices.Clone(r.unknown)
	maps.Copy(c.refused, r.refused)
	return c
}

// Spec returns the validated specification (shared: do not change it).
func (b *Base) Spec() *Spec { return b.spec }

// isGiven says whether the specification gives key (dotted for nested
// keys).
func (b *Base) isGiven(key string) bool {
	if head, sub, ok := strings.Cut(key, "."); ok {
		return b.raw.nested[head][sub] != nil
	}
	return b.raw.get(key) != nil
}

// prepareFast decides which keys the fast path serves and reads the
// numeric inputs it starts from.
func (b *Base) prepareFast() {
	s := b.spec
	b.fast = map[string]fastKey{}
	if s.Claimed != nil {
		// The claimed block lends values to the plan: rebuild always.
		return
	}
	ro := roles[s.Design]
	precision := s.Goal == "precision"
	for _, name := range b.numericKeys() {
		f := fastKeyOf(name, ro)
		if f == fkNone {
			continue
		}
		given := b.isGiven(name)
		head, _, nested := strings.Cut(name, ".")
		ok := given || absentOK[f]
		switch {
		case s.Matched, s.Outcome == "rate", s.ContinuousExposure, s.Goal == "precision" && (s.Outcome == "continuous" || s.Design != "cross-sectional"), s.Goal == "accuracy":
			// The within-set correlation's bound follows the odds ratio
			// and the controls per case set the sizes; a rate's effect is
			// no risk: every key of these plans is rebuilt.
			ok = false
		case f == fkEffect && name != s.EffectKey:
			ok = false
		case f == fkReference && (s.Outcome != "binary" || precision):
			ok = false
		case f == fkDesignEffect:
			ok = s.Cluster == nil
		case f == fkRatio:
			ok = !b.isGiven("n_second") && s.Design != "cross-sectional"
		case nested && head == "cluster":
			ok = s.Cluster != nil && (given || f == fkClusterSizeCV)
		case nested && head == "simulate":
			ok = s.Simulate != nil && s.Goal != "precision"
		}
		if ok {
			b.fast[name] = f
			if given {
				b.given |= 1 << f
			}
		}
	}
	b.dirGiven = map[string]int{"first-higher": 1, "first-lower": -1}[strings.TrimSpace(valueOf(b.raw.get("direction")))]
	b.testGiven = b.raw.get("test") != nil

	v := &b.nums
	v[fkAlpha], v[fkPower], v[fkRatio], v[fkAttrition], v[fkDesignEffect] = s.Alpha, s.Power, s.Ratio, s.Attrition, s.DesignEffect
	v[fkN], v[fkNSecond], v[fkTotal] = float64(s.N), float64(s.NSecond), float64(s.Total)
	if b.given.has(fkNSecond) && s.Solve == "n" {
		// Ignored when solving n, but checked to be a whole number.
		v[fkNSecond], _, _ = b.raw.number("n_second")
	}
	v[fkReference], v[fkEffect], v[fkExposurePrevalence] = s.P2, s.EffectValue, s.ExposurePrevalence
	v[fkMeanDifference] = s.MeanDiff
	if b.given.has(fkFirstMean) {
		v[fkFirstMean], _, _ = b.raw.number(ro.means[0])
		v[fkSecondMean], _, _ = b.raw.number(ro.means[1])
	}
	v[fkSD], v[fkSDFirst], v[fkSDSecond] = s.RawSD1, s.RawSD1, s.RawSD2
	v[fkSDDifference], v[fkWithinCorrelation], v[fkBaselineCorrelation] = s.SD1, s.WithinCorrelation, s.BaselineCorrelation
	v[fkHazardRatio], v[fkControlMedian], v[fkControlSurvival], v[fkTime] = s.HazardRatio, s.ControlMedian, s.ControlSurvival, s.SurvivalTime
	v[fkAccrual], v[fkFollowUp], v[fkDropout] = s.Accrual, s.FollowUp, s.Dropout
	v[fkMargin], v[fkNonAdherence], v[fkContamination] = s.Margin, s.NonAdherence, s.Contamination
	if c := s.Cluster; c != nil {
		v[fkClusterSize], v[fkClusterICC], v[fkClusterSizeCV] = c.Size, c.ICC, c.SizeCV
	}
	v[fkExpectedPrevalence], v[fkConfidence], v[fkPopulation] = s.ExpectedPrevalence, s.Confidence, float64(s.Population)
	if m := s.Simulate; m != nil {
		v[fkSimN], v[fkSimReplicates], v[fkSimSeed] = float64(m.N), float64(m.Replicates), float64(m.Seed)
	}
}

// valueOf is the text of a scalar entry ("" for none).
func valueOf(e *entry) string {
	if e == nil || e.node.Kind != yaml.ScalarNode {
		return ""
	}
	return e.node.Value
}

// CheckKey refuses, with a one-line *SpecError naming it, a key that a
// sweep cannot vary in this specification: a key no specification knows,
// one that does not apply to its design, goal, outcome, pairing or
// hypothesis (the keys of designs/keys.go, keysFor), or one that is not
// numeric (text, true or false, a map). Nested keys are dotted:
// cluster.icc, simulate.n.
func (b *Base) CheckKey(key string) error {
	fail := func(format string, args ...any) error {
		return &SpecError{File: b.file, Key: clip(key), Msg: fmt.Sprintf(format, args...)}
	}
	numeric := b.numericKeys()
	head, sub, nested := strings.Cut(key, ".")
	info, known := specKeys[head]
	subs := nestedKeys[head]
	switch {
	case key == "":
		return fail("no key given; allowed: a numeric key of the specification, such as %s", orList(exampleKeys(numeric)))
	case !known || (nested && info.kind == kindMap && subs != nil && subs[sub] == "" && head != "sources"):
		msg := "unknown key; allowed: a numeric key of the specification (dotted for nested keys: cluster.icc)"
		if s, ok := nearest(key, numeric); ok {
			msg = fmt.Sprintf("unknown key; did you mean %q?", s)
		}
		return fail("%s", msg)
	case head == "claimed":
		return fail("is read by enough review, which rechecks a protocol's stated figures; a plan does not use it; allowed: a numeric key of the plan, such as %s", orList(exampleKeys(numeric)))
	case nested && info.kind != kindMap:
		return fail("has no nested keys; allowed dotted keys: the keys of adjustment, cluster, matching and simulate (cluster.icc)")
	case head == "sources" || (info.kind == kindMap && !nested):
		return fail("is not a number (%s); allowed: a numeric key, such as %s", info.allowed, orList(exampleKeys(numeric)))
	case !b.allowed[head] && b.sel.matched && (head == "ratio" || head == "n_second" || head == "design_effect"):
		return fail("does not apply with matching, where each case has matching.controls_per_case controls; allowed: matching.controls_per_case")
	case !b.allowed[head]:
		where, _ := belongsTo(head, b.sel)
		if head == "margin" && b.spec.Design == "trial" {
			where = "; it belongs to hypothesis non-inferiority or equivalence"
		}
		if k, ok := counterpart(head, b.spec.Design); ok && b.allowed[k] && k != head {
			where += fmt.Sprintf("; did you mean %q?", k)
		}
		return fail("does not apply to %s%s", b.selectionWords(), where)
	case head == "version":
		return fail("is the version of the specification's format, not an assumption; allowed: a numeric key of the plan, such as %s", orList(exampleKeys(numeric)))
	case info.kind != kindNumber && info.kind != kindWhole && !nested:
		return fail("is not a number (%s); allowed: a numeric key, such as %s", info.allowed, orList(exampleKeys(numeric)))
	case head == "simulate" && b.spec.Simulate == nil:
		return fail("does not apply: the specification has no simulate block; allowed: add a simulate: block to the specification, then vary its keys")
	}
	// A key this solve ignores would give the same row at every value.
	for _, why := range b.spec.Ignored {
		if strings.HasPrefix(why, head+" is ignored") {
			return fail("does not change the plan: %s; allowed: a key the plan uses, such as %s", why, orList(exampleKeys(numeric)))
		}
	}
	if ignored := map[string]string{"n": "n", "n_second": "n", "total": "n", "power": "power"}[head]; ignored != "" && b.spec.Solve == ignored && !nested {
		return fail("does not change the plan: %s is what the plan solves, or is ignored when solving %s; allowed: solve: power or effect to vary the sizes (solve: n or effect to vary power)", head, ignored)
	}
	return nil
}

// selectionWords names the selection in messages: "design trial with a
// continuous outcome (paired)".
func (b *Base) selectionWords() string {
	s := b.spec
	what := "design " + s.Design
	switch {
	case s.Design == "cross-sectional":
		what += " with goal " + s.Goal
	case s.Outcome != "binary":
		what += " with a " + s.Outcome + " outcome"
	}
	if s.Pairing != "" {
		what += " (" + s.Pairing + ")"
	}
	if s.Hypothesis != "superiority" && s.Hypothesis != "" {
		what += " and hypothesis " + s.Hypothesis
	}
	return what
}

// numericKeys lists the numeric keys of this specification's selection,
// nested ones dotted, sorted.
func (b *Base) numericKeys() []string {
	var out []string
	for k := range b.allowed {
		switch info := specKeys[k]; {
		case k == "version":
		case info.kind == kindNumber || info.kind == kindWhole:
			out = append(out, k)
		case slices.Contains(numericMaps, k):
			for sub := range nestedKeys[k] {
				out = append(out, k+"."+sub)
			}
		}
	}
	sort.Strings(out)
	return out
}

// exampleKeys picks up to three of keys, for a message.
func exampleKeys(keys []string) []string {
	var out []string
	for _, k := range []string{"power", "alpha", "control_risk", "risk_ratio", "mean_difference", "sd", "hazard_ratio", "expected_prevalence", "margin", "cluster.icc"} {
		if slices.Contains(keys, k) && len(out) < 3 {
			out = append(out, k)
		}
	}
	if len(out) == 0 && len(keys) > 0 {
		out = keys[:min(3, len(keys))]
	}
	return out
}

// At returns the specification with each of keys set to the value of the
// same index, validated: exactly what Parse gives for the file with those
// values written in place of the file's (the sweep's values are no --set
// overrides: Overrides and Overridden stay the file's). A point that
// cannot be planned fails with the error Parse would give, a *SpecError
// (or SpecErrors) naming the key's line.
func (b *Base) At(keys []string, values []float64) (*Spec, error) {
	var sc Scratch
	s, err := b.AtScratch(&sc, keys, values)
	if err != nil {
		return nil, err
	}
	if s != &sc.spec {
		return s, nil // rebuilt: a specification of its own
	}
	out := new(Spec)
	*out = sc.spec
	if out.Cluster != nil {
		c := sc.cluster
		out.Cluster = &c
	}
	if out.Simulate != nil {
		m := sc.sim
		out.Simulate = &m
	}
	out.Given = b.givenAt(keys, values)
	return out, nil
}

// givenAt is the specification's Given with the values of keys replaced
// (and those it did not give added), as a rebuild lists them.
func (b *Base) givenAt(keys []string, values []float64) []Given {
	out := slices.Clone(b.spec.Given)
	for i, k := range keys {
		text := strconv.FormatFloat(values[i], 'g', -1, 64)
		j := slices.IndexFunc(out, func(g Given) bool { return g.Key == k })
		switch {
		case j >= 0:
			out[j].Value = text
		case !strings.HasPrefix(k, "simulate."):
			out = append(out, Given{Key: k, Value: text})
		}
	}
	return out
}

// Scratch is one worker's room for [Base.AtScratch]: the point's
// specification and its cluster and simulate blocks, reused from point to
// point so that the fast path allocates nothing.
type Scratch struct {
	spec    Spec
	cluster Cluster
	sim     SimulateSpec
	// The keys of the last call and their fast keys (fkNone: not served),
	// so that a sweep, which passes the same keys at every point, looks
	// them up once.
	base  *Base
	keys  []string
	fasts []fastKey
	// ready says that spec holds the base's specification apart from the
	// fields the keys' groups of checks write, which every valid point
	// writes again: the next point need not copy the whole specification.
	ready bool
}

// fastKeys returns the fast keys of keys, looked up once for a sweep.
func (sc *Scratch) fastKeys(b *Base, keys []string) []fastKey {
	if sc.base == b && len(sc.keys) == len(keys) {
		same := true
		for i, k := range keys {
			// Equal strings of the same bytes compare at once.
			if sc.keys[i] != k {
				same = false
				break
			}
		}
		if same {
			return sc.fasts
		}
	}
	sc.base, sc.keys, sc.fasts, sc.ready = b, slices.Clone(keys), sc.fasts[:0], false
	for _, k := range keys {
		sc.fasts = append(sc.fasts, b.fast[k])
	}
	return sc.fasts
}

// AtScratch is [Base.At] into sc: on the fast path the specification
// returned is sc's own, valid until the next call with sc, and its Given
// lists the file's values (not the point's). A point the fast path does
// not serve, or finds invalid, is rebuilt into a specification of its own.
func (b *Base) AtScratch(sc *Scratch, keys []string, values []float64) (*Spec, error) {
	if len(keys) != len(values) {
		return nil, &SpecError{File: b.file, Msg: fmt.Sprintf("%d keys and %d values; allowed: one value for each key", len(keys), len(values))}
	}
	switch b.fastAt(sc, keys, values) {
	case fastValid:
		return &sc.spec, nil
	}
	return b.rebuild(keys, values)
}

// The answers of the fast path.
const (
	fastValid   = iota // the point is valid: sc.spec is its specification
	fastInvalid        // the point is invalid: rebuild it for the error
	fastNo             // the fast path does not serve these keys
)

// fastAt derives the point's specification into sc on the fast path.
func (b *Base) fastAt(sc *Scratch, keys []string, values []float64) int {
	var dirty group
	var seen keySet
	v := b.nums
	for i, f := range sc.fastKeys(b, keys) {
		x := values[i]
		if f == fkNone || seen.has(f) || math.IsNaN(x) || math.IsInf(x, 0) {
			return fastNo
		}
		seen |= 1 << f
		v[f] = x
		dirty |= fastGroups[f]
	}
	if !sc.ready {
		// The first point of these keys: a copy of the specification. The
		// checks of a group write the same fields at every valid point
		// (which fields follows from the keys given and varied, the same
		// at every point), so later points only write those again; an
		// invalid point, which may have written some of them, is followed
		// by a copy.
		sc.spec = *b.spec
		if b.spec.Cluster != nil {
			sc.cluster = *b.spec.Cluster
			sc.spec.Cluster = &sc.cluster
		}
		if b.spec.Simulate != nil {
			sc.sim = *b.spec.Simulate
			sc.spec.Simulate = &sc.sim
		}
	}
	sc.ready = b.derive(&sc.spec, &v, dirty, b.given|seen)
	if !sc.ready {
		return fastInvalid
	}
	return fastValid
}

// wholeOK says whether x reads as a whole-number key: whole, and at most
// MaxSize in size.
func wholeOK(x float64) bool { return x == math.Trunc(x) && math.Abs(x) <= MaxSize }

// derive sets the values v of the fast keys into s, a copy of the valid
// specification, derives what depends on them and runs the checks of the
// groups dirty (those the changed keys take part in), as the reader does
// (validate.go, validate_comparison.go); present holds the keys given or
// varied. It reports whether the point is valid.
func (b *Base) derive(s *Spec, v *numbers, dirty group, present keySet) bool {
	if s.Goal == "precision" {
		return dirty&(gSurvey|gLoss) == 0 || deriveSurvey(s, v, present)
	}
	if dirty&gLevel != 0 {
		if !inAlpha(v[fkAlpha]) {
			return false
		}
		s.Alpha = v[fkAlpha]
		if s.Solve != "power" {
			if pw := v[fkPower]; !(pw > s.Alpha && pw <= MaxPower) {
				return false
			}
			s.Power = v[fkPower]
		}
	}
	if dirty&gLoss != 0 {
		if !inFraction0(v[fkAttrition]) {
			return false
		}
		s.Attrition = v[fkAttrition]
		if s.Cluster == nil {
			if !inDesignEffect(v[fkDesignEffect]) {
				return false
			}
			s.DesignEffect = v[fkDesignEffect]
		}
	}
	if dirty&gAlloc != 0 && !deriveAlloc(s, v, present) {
		return false
	}
	if dirty&gMargin != 0 && s.Hypothesis != "superiority" && !deriveMargin(s, v[fkMargin]) {
		return false
	}
	if dirty&gCluster != 0 {
		c := s.Cluster
		c.Size, c.ICC, c.SizeCV = v[fkClusterSize], v[fkClusterICC], v[fkClusterSizeCV]
		if !inClusterSize(c.Size) || !inFraction0(c.ICC) || !inSizeCV(c.SizeCV) {
			return false
		}
		s.DesignEffect = c.DesignEffect()
	}
	if dirty&gAdherence != 0 {
		na, co := v[fkNonAdherence], v[fkContamination]
		if !inFraction0(na) || !inFraction0(co) || na+co >= 1 {
			return false
		}
		s.NonAdherence, s.Contamination = na, co
	}
	if dirty&gOutcome != 0 {
		var ok bool
		switch s.Outcome {
		case "continuous":
			ok = b.deriveContinuous(s, v, present)
		case "time-to-event":
			ok = deriveSurvival(s, v, present)
		default:
			ok = deriveBinary(s, v)
		}
		if !ok || !b.deriveDirection(s) {
			return false
		}
	}
	if dirty&gSimulate != 0 {
		m := s.Simulate
		in := func(x, lo, hi float64) bool { return x == math.Trunc(x) && x >= lo && x <= hi }
		if !in(v[fkSimReplicates], 100, 1e9) || !in(v[fkSimSeed], 0, 1<<53) || (present.has(fkSimN) && !in(v[fkSimN], 2, MaxSize)) {
			return false
		}
		m.Replicates, m.Seed, m.N = int64(v[fkSimReplicates]), uint64(v[fkSimSeed]), int(v[fkSimN])
	}
	return true
}

// deriveAlloc checks the sizes and derives the allocation, as
// buildComparison and buildTrial do.
func deriveAlloc(s *Spec, v *numbers, present keySet) bool {
	if s.Design == "cross-sectional" {
		e := v[fkExposurePrevalence]
		if !inRisk(e) || e < 1e-6 || e > 1-1e-6 {
			return false
		}
		s.ExposurePrevalence, s.Ratio = e, (1-e)/e
		if s.Solve != "n" {
			if t := v[fkTotal]; !wholeOK(t) || t < 2 {
				return false
			}
			s.Total = int(v[fkTotal])
		}
		return true
	}
	if s.Solve != "n" {
		if n := v[fkN]; !wholeOK(n) || n < 2 {
			return false
		}
		s.N = int(v[fkN])
	}
	if present.has(fkRatio) {
		if !inRatio(v[fkRatio]) {
			return false
		}
		s.Ratio = v[fkRatio]
	}
	if present.has(fkNSecond) {
		n2 := v[fkNSecond]
		if !wholeOK(n2) {
			return false
		}
		if s.Solve != "n" {
			if n2 < 1 || n2 > MaxSize {
				return false
			}
			s.NSecond = int(n2)
			s.Ratio = float64(s.NSecond) / float64(s.N)
		}
	}
	return !(s.Comparisons == "all-pairs" && s.Ratio != 1 && (present.has(fkRatio) || present.has(fkNSecond)))
}

// deriveMargin checks a trial's margin, as buildMargin does.
func deriveMargin(s *Spec, m float64) bool {
	switch {
	case s.MarginScale == "ratio" && s.Hypothesis == "non-inferiority" && s.HigherIsBetter:
		if !(m >= 1/MaxRatio && m < 1) {
			return false
		}
	case s.MarginScale == "ratio":
		if !(m > 1 && m <= MaxRatio) {
			return false
		}
	case !(m > 0), s.Outcome == "binary" && !(m < 1), math.IsInf(m, 1):
		return false
	}
	s.Margin = m
	return true
}

// deriveBinary derives the first group's risk from the effect and the
// reference risk and checks them with the margin, as buildBinary does.
func deriveBinary(s *Spec, v *numbers) bool {
	if !inRisk(v[fkReference]) {
		return false
	}
	s.P2 = v[fkReference]
	if s.Hypothesis != "superiority" {
		if _, bad := nullRiskOutside(s); bad {
			return false
		}
	}
	if s.EffectKey == "" {
		// Non-inferiority and equivalence: no true difference.
		s.P1 = s.P2
		return marginSideOK(s, marginEffect(s))
	}
	s.EffectValue = v[fkEffect]
	p1, ok := effectP1(s.EffectKey, s.EffectValue, s.P2)
	switch {
	case !ok:
		return false
	case s.Solve == "effect":
		// The value only names the scale (and a one-sided test's side).
		s.P1 = 0
		if in01(p1) {
			s.P1 = p1
		}
		return true
	case !inRisk(p1):
		return false
	case math.Abs(p1-s.P2) < 1e-12:
		if s.Hypothesis == "superiority" {
			return false
		}
		s.P1 = s.P2
	default:
		s.P1 = p1
	}
	return marginSideOK(s, marginEffect(s))
}

// deriveContinuous derives the difference in means and the standard
// deviations and checks them, as buildContinuous does, with the default
// test, which follows the standard deviations.
func (b *Base) deriveContinuous(s *Spec, v *numbers, present keySet) bool {
	md := 0.0
	switch {
	case present.has(fkFirstMean):
		md = v[fkFirstMean] - v[fkSecondMean]
	case present.has(fkMeanDifference):
		md = v[fkMeanDifference]
	}
	s.MeanDiff, s.EffectValue = md, md
	if s.Hypothesis == "superiority" {
		if md == 0 && s.Solve != "effect" {
			return false
		}
	} else if !marginSideOK(s, md) {
		return false
	}
	if s.Pairing != "" {
		if present.has(fkSDDifference) {
			if !inPositive(v[fkSDDifference]) {
				return false
			}
			s.SD1 = v[fkSDDifference]
		} else {
			sd, rho := v[fkSD], v[fkWithinCorrelation]
			if !inPositive(sd) || !inOpen1(rho) {
				return false
			}
			s.SD1 = sd * math.Sqrt(2*(1-rho))
			s.RawSD1, s.WithinCorrelation = sd, rho
		}
		s.SD2 = s.SD1
	} else {
		if present.has(fkSD) {
			if !inPositive(v[fkSD]) {
				return false
			}
			s.SD1, s.SD2 = v[fkSD], v[fkSD]
		} else {
			if !inPositive(v[fkSDFirst]) || !inPositive(v[fkSDSecond]) {
				return false
			}
			s.SD1, s.SD2 = v[fkSDFirst], v[fkSDSecond]
		}
		s.RawSD1, s.RawSD2 = s.SD1, s.SD2
		rho := v[fkBaselineCorrelation]
		if !inFraction0(rho) {
			return false
		}
		s.BaselineCorrelation = rho
		if rho > 0 {
			f := math.Sqrt(1 - rho*rho)
			s.SD1, s.SD2 = s.SD1*f, s.SD2*f
		}
	}
	if (present.has(fkFirstMean) || present.has(fkMeanDifference)) && !withinStandardized(s, s.MeanDiff) {
		return false
	}
	if s.Hypothesis != "superiority" && s.Margin > 0 && !withinStandardized(s, s.Margin) {
		return false
	}
	if !b.testGiven {
		s.Test = defaultTest(s)
	} else if s.Test == "t-student" && s.SD1 != s.SD2 {
		return false
	}
	return true
}

// deriveSurvival derives the control hazard and checks the hazard ratio
// and the timing, as buildSurvival does.
func deriveSurvival(s *Spec, v *numbers, present keySet) bool {
	if present.has(fkHazardRatio) {
		hr := v[fkHazardRatio]
		if !inRatio(hr) || (hr == 1 && s.Solve != "effect" && s.Hypothesis == "superiority") {
			return false
		}
		s.HazardRatio, s.EffectValue = hr, hr
	}
	if s.Hypothesis != "superiority" && !marginSideOK(s, s.HazardRatio) {
		return false
	}
	if present.has(fkControlMedian) {
		med := v[fkControlMedian]
		if !inTime(med) {
			return false
		}
		s.ControlHazard, s.ControlMedian = math.Ln2/med, med
	} else {
		surv, t := v[fkControlSurvival], v[fkTime]
		if !inRisk(surv) || !inTime(t) {
			return false
		}
		s.ControlHazard, s.ControlSurvival, s.SurvivalTime = -math.Log(surv)/t, surv, t
	}
	acc, fu, do := v[fkAccrual], v[fkFollowUp], v[fkDropout]
	if !inTime0(acc) || !inTime0(fu) || (fu == 0 && acc == 0) || !inFraction0(do) {
		return false
	}
	s.Accrual, s.FollowUp, s.Dropout = acc, fu, do
	return true
}

// deriveDirection derives the side of a one-sided superiority test from
// the effect, as buildDirection does.
func (b *Base) deriveDirection(s *Spec) bool {
	if s.Sides != 1 || s.Hypothesis != "superiority" {
		return true
	}
	implied, given := impliedDirection(s), b.dirGiven
	switch {
	case given != 0 && implied != 0 && given != implied:
		return false
	case given == 0 && implied == 0:
		return false
	case given != 0:
		s.Direction = given
	default:
		s.Direction = implied
	}
	return true
}

// deriveSurvey checks a precision survey's values, as buildPrecision does.
func deriveSurvey(s *Spec, v *numbers, present keySet) bool {
	if !inRisk(v[fkExpectedPrevalence]) || !inConfidence(v[fkConfidence]) || !inFraction0(v[fkAttrition]) || !inDesignEffect(v[fkDesignEffect]) {
		return false
	}
	s.ExpectedPrevalence, s.Confidence, s.Attrition, s.DesignEffect = v[fkExpectedPrevalence], v[fkConfidence], v[fkAttrition], v[fkDesignEffect]
	if present.has(fkPopulation) {
		if p := v[fkPopulation]; !wholeOK(p) || p < 2 {
			return false
		}
		s.Population = int(v[fkPopulation])
	}
	switch s.Solve {
	case "n":
		if !inSurveyMargin(v[fkMargin]) {
			return false
		}
		s.Margin = v[fkMargin]
	case "effect":
		if t := v[fkTotal]; !wholeOK(t) || t < 2 {
			return false
		}
		s.Total = int(v[fkTotal])
		if s.Population > 0 && s.Total > s.Population {
			return false
		}
	}
	return true
}

// rebuild validates the specification read once with each of keys set to
// its value, by the reader's own validation: the fallback of At, and the
// source of every point's error.
func (b *Base) rebuild(keys []string, values []float64) (*Spec, error) {
	r := b.raw.clone()
	for _, k := range keys {
		// A varied key takes the place of the keys that state the same
		// thing another way (risk_ratio for intervention_risk).
		for _, d := range displaced(b.spec, k) {
			if !slices.Contains(keys, d) {
				r.applyEdit(Delete(d))
			}
		}
	}
	for i, k := range keys {
		r.setNumber(k, values[i])
	}
	spec, err := r.finish(b.sets)
	if err != nil {
		return nil, err
	}
	spec.SHA256 = b.sum
	return spec, nil
}

// numberNode is the YAML node of a number, as the file would hold it: a
// whole number as an integer, else the shortest form that reads back as
// x (.nan and ±.inf for the values that are not finite).
func numberNode(x float64) *yaml.Node {
	n := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!float"}
	switch {
	case math.IsNaN(x):
		n.Value = ".nan"
	case math.IsInf(x, 1):
		n.Value = ".inf"
	case math.IsInf(x, -1):
		n.Value = "-.inf"
	case x == math.Trunc(x) && math.Abs(x) < 1e15:
		n.Tag, n.Value = "!!int", strconv.FormatFloat(x, 'f', -1, 64)
	default:
		n.Value = strconv.FormatFloat(x, 'g', -1, 64)
	}
	return n
}

// setNumber puts the number x in place of key's entry (dotted for a
// nested key), keeping the entry's place, file and line; a key the
// specification did not give is added after the others. A key no
// specification knows is reported by the validation, as in a file.
func (r *reader) setNumber(key string, x float64) {
	node := numberNode(x)
	head, sub, nested := strings.Cut(key, ".")
	if !nested {
		e := &entry{key: key, node: node, file: r.file}
		if _, ok := specKeys[key]; !ok {
			r.unknown = append(r.unknown, e)
			return
		}
		if prev := r.entries[key]; prev != nil {
			e.file, e.line, e.set, e.alias = prev.file, prev.line, prev.set, prev.alias
		}
		r.place(e)
		return
	}
	if info, ok := specKeys[head]; !ok || info.kind != kindMap {
		r.fail(&SpecError{File: r.file, Key: clip(key), Msg: "has no nested keys; allowed dotted keys: cluster.KEY and simulate.KEY"})
		return
	}
	e := &entry{key: clip(key), node: node, file: r.file}
	if err := r.checkNested(head, sub, e); err != nil {
		r.refuse(err)
		return
	}
	r.ensureNested(head, r.file, false)
	if prev := r.nested[head][sub]; prev != nil {
		e.file, e.line = prev.file, prev.line
	}
	r.nested[head][sub] = e
}

// displaced returns the keys a varied key takes the place of: those that
// state the same assumption another way, of which a specification gives
// one (the effect keys of a binary outcome; mean_difference or the two
// means; sd or sd_first and sd_second; sd_difference or sd with
// within_correlation; control_median or control_survival with time; ratio
// or n_second).
func displaced(s *Spec, key string) []string {
	ro := roles[s.Design]
	switch {
	case s.Outcome == "binary" && slices.Contains(ro.effects, key):
		return slices.DeleteFunc(slices.Clone(ro.effects), func(k string) bool { return k == key })
	}
	groups := [][2][]string{
		{{"mean_difference"}, {ro.means[0], ro.means[1]}},
		{{"sd_difference"}, {"sd", "within_correlation"}},
		{{"sd"}, {"sd_first", "sd_second"}},
		{{"control_median"}, {"control_survival", "time"}},
		{{"ratio"}, {"n_second"}},
	}
	var out []string
	for _, g := range groups {
		switch {
		case slices.Contains(g[0], key):
			out = append(out, g[1]...)
		case slices.Contains(g[1], key):
			out = append(out, g[0]...)
		}
	}
	if s.Pairing == "" && key == "sd" {
		return []string{"sd_first", "sd_second"}
	}
	return slices.DeleteFunc(out, func(k string) bool { return k == "" })
}
