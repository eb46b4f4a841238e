package designs

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode"

	"gopkg.in/yaml.v3"
)

// MaxSpecBytes is the largest specification file accepted (1 MiB).
const MaxSpecBytes = 1 << 20

// MaxSize bounds every size read or computed: a plan that needs more than a
// billion participants in a group has assumptions to revisit.
const MaxSize = 1_000_000_000

// Spec is a validated study specification (version 1).
type Spec struct {
	// File is where the specification came from, for messages.
	File string
	// SHA256 is the hex SHA-256 digest of the specification's bytes as read.
	SHA256 string
	// Overrides lists the --set assignments applied, in order.
	Overrides []string

	Title          string
	Design         string // cohort, case-control, trial, cross-sectional
	Goal           string // comparison or precision (cross-sectional only)
	Outcome        string // binary
	Solve          string // n, power or effect
	Method         string
	Test           string // planned analysis; "" for a precision survey
	Alpha          float64
	Sides          int
	Power          float64 // target power; 0 when solving power
	N              int     // enrolment of the first group, when solving power or effect
	NSecond        int     // enrolment of the second group, when given (else ceil(ratio × N))
	Total          int     // enrolment of a cross-sectional survey, when solving power or effect
	Ratio          float64 // second group per member of the first
	Attrition      float64
	DesignEffect   float64
	Sources        map[string]string
	PrimaryOutcome string
	FirstGroup     string
	SecondGroup    string

	// Two-group comparisons.

	// P2 is the risk (or exposure prevalence) in the second group.
	P2 float64
	// ReferenceKey is the key that gave P2.
	ReferenceKey string
	// EffectKey is the key that gave the effect; EffectValue its value.
	EffectKey   string
	EffectValue float64
	// P1 is the risk in the first group implied by the effect (unused when
	// solving effect, where EffectKey only names the scale).
	P1 float64
	// ExposurePrevalence splits a cross-sectional total into groups.
	ExposurePrevalence float64
	// Adjusted says the analysis adjusts for other covariates (the
	// adjustment block); AdjustR2 is the R² of the exposure regressed on
	// them, which inflates the size by 1/(1 − R²) (Hsieh, Bloch & Larsen
	// 1998, Stat Med 17:1623–1634).
	Adjusted bool
	AdjustR2 float64
	// Interim is the interim block of a group-sequential trial (nil: a
	// fixed-sample design).
	Interim *Interim

	// Matched case-control studies (the matching block): Controls
	// controls per case, exposure correlated ExposureCorrelation within
	// sets (Dupont 1988, Biometrics 44:1157–1168); Ratio is then Controls.
	Matched             bool
	Controls            int
	ExposureCorrelation float64

	// A continuous exposure (exposure: continuous, binary outcome, cohort
	// or cross-sectional): logistic regression with the event rate at the
	// exposure's mean and the odds ratio per standard deviation (Hsieh,
	// Bloch & Larsen 1998). The sizes are then one group, everyone.
	ContinuousExposure bool
	EventRate          float64
	ORPerSD            float64

	// A ratio to a stated precision (goal: precision on a cohort or
	// case-control study): the ratio of the upper to the lower limit of its
	// interval.
	PrecisionRatio float64

	// Diagnostic accuracy (goal: accuracy): the expected sensitivity and
	// specificity and the prevalence of the condition in the sample.
	Sensitivity, Specificity, ConditionPrevalence float64

	// Precision surveys.
	ExpectedPrevalence float64
	// Margin is the half-width of a precision survey's interval, or the
	// non-inferiority or equivalence margin of a trial (positive).
	Margin     float64
	Confidence float64
	Population int

	// Trials.
	Hypothesis     string // superiority, non-inferiority, equivalence
	HigherIsBetter bool
	// MarginScale is the scale of a binary outcome's margin: difference
	// (risk difference) or ratio (risk ratio); time-to-event margins are
	// hazard ratios.
	MarginScale string
	// Direction is the side a one-sided superiority test looks: +1 when the
	// first group's risk, mean or hazard is higher than the second's under
	// the alternative, −1 when lower; 0 for a two-sided test.
	Direction     int
	NonAdherence  float64
	Contamination float64
	Arms          int
	Comparisons   string // each-vs-control or all-pairs
	Cluster       *Cluster
	// Simulate is the simulate block, or nil.
	Simulate *SimulateSpec
	// Claimed is what a protocol states (the claimed block), read by
	// enough review; nil when absent.
	Claimed *Claimed

	// Continuous outcomes.
	Pairing string // "", paired or crossover
	// MeanDiff is the true difference in means, first minus second (paired:
	// the mean within-pair difference).
	MeanDiff float64
	// SD1 and SD2 are the standard deviations per observation (paired and
	// crossover: SD1 is the SD of a participant's difference), after any
	// baseline adjustment.
	SD1, SD2            float64
	BaselineCorrelation float64
	// RawSD1 and RawSD2 are the outcome's standard deviations as given,
	// before any baseline adjustment (paired: the SD of one measurement when
	// given with WithinCorrelation, else 0).
	RawSD1, RawSD2    float64
	WithinCorrelation float64
	Welch             bool

	// Person-time outcomes (outcome: rate, cohort): the unexposed group's
	// events per unit of person-time, the rate ratio (exposed over
	// unexposed), the person-time per participant and the overdispersion
	// k of negative-binomial counts (variance μ + kμ²; 0 for Poisson).
	UnexposedRate, RateRatio, PersonTime, Overdispersion float64

	// Time-to-event outcomes.
	HazardRatio   float64
	ControlHazard float64 // per time unit
	// ControlMedian, or ControlSurvival at SurvivalTime, as given.
	ControlMedian, ControlSurvival, SurvivalTime float64
	Accrual                                      float64
	FollowUp                                     float64
	Dropout                                      float64 // fraction lost per time unit
	TimeUnit                                     string

	// Given lists the keys the specification set (after overrides), in file
	// order, with the values as written.
	Given []Given

	// Ignored lists keys given but not used by this solve, with the reason.
	Ignored []string

	// Overridden holds, for each key --set changed, what the specification
	// file said of it (empty when the file did not set the key).
	Overridden map[string]FileValue
}

// OneGroup says the plan has one group of participants: pairs, or
// everyone measured on a continuous exposure.
func (s *Spec) OneGroup() bool { return s.Pairing == "paired" || s.ContinuousExposure }

// FileValue is what the specification file gave for a key that the
// command line overrode: its value as written and its source.
type FileValue struct {
	Value  string `json:"value,omitempty"`
	Source string `json:"source,omitempty"`
}

// SimulateSpec is the simulate block: how to verify the plan by simulation.
type SimulateSpec struct {
	// Replicates is the number of simulated studies (default 10,000).
	Replicates int64
	// Seed fixes the random numbers (default 1).
	Seed uint64
	// N, when positive, is the first group's analysable size to simulate at
	// in place of the plan's.
	N int
}

// Cluster describes cluster randomisation.
type Cluster struct {
	// Size is the mean number of participants per cluster.
	Size float64
	// ICC is the intracluster correlation coefficient.
	ICC float64
	// SizeCV is the coefficient of variation of cluster sizes.
	SizeCV float64
}

// DesignEffect is 1 + (m − 1) ICC for equal clusters (Donner & Klar 2000)
// and 1 + ((cv² + 1) m − 1) ICC for unequal ones (Eldridge, Ashby & Kerry
// 2006, Int J Epidemiol 35:1292–1300).
func (c *Cluster) DesignEffect() float64 {
	return 1 + ((c.SizeCV*c.SizeCV+1)*c.Size-1)*c.ICC
}

// Given is one key of the specification as written.
type Given struct {
	Key   string
	Value string
}

// entry is one raw key of the specification.
type entry struct {
	key    string
	node   *yaml.Node
	file   string // file name or "--set k=v"
	line   int
	keyPos int  // order in the document
	set    bool // from a --set override
	// alias is the key a problem names when it differs from key: a value
	// of the claimed block taken as the plan's (claimed.power for power).
	alias string
}

type reader struct {
	file    string
	entries map[string]*entry
	order   []*entry
	// nested holds the keys of map-valued keys (sources, cluster).
	nested map[string]map[string]*entry
	// orig holds the file's entry of each key a --set replaced, and
	// setKeys the keys --set gave, in order (dotted for nested keys).
	orig    map[string]*entry
	setKeys []string

	// errs collects every problem found; the reader carries on after one
	// wherever the next check still means something.
	errs SpecErrors
	// unknown holds the keys no specification knows, reported once the
	// design and outcome are known so that suggestions fit them.
	unknown []*entry
	// refused holds the keys already reported (unknown, not of this
	// selection, or with a bad value): checks that depend on them stay
	// silent instead of repeating the problem.
	refused map[string]bool
	// standsFor holds the keys suggested in place of an unknown or
	// misplaced one: their absence is not reported besides.
	standsFor map[string]bool
	// outcomeDoubt is set when keys of another outcome are given: the
	// outcome itself may be wrong, so the keys it would require are not
	// reported missing.
	outcomeDoubt bool
	// design is the design once read, and precision says that it is a
	// precision survey, for the values suggested (see fits).
	design    string
	precision bool
	// alpha is the level in force once read (0 before), which power must
	// exceed.
	alpha float64
	// absent holds the problems that say a key is missing.
	absent map[*SpecError]bool
	// solveBad is set when solve has a bad value: the keys it would
	// require are then not reported missing.
	solveBad bool
	// marginKind says what margin takes once known: "fraction" (a risk
	// difference, a survey's half-width), "ratio", or "" (a difference in
	// means, or not yet known).
	marginKind string
	// marginOK and effectOK say that the margin and the effect were read
	// without a problem, so that the checks combining them may run.
	marginOK, effectOK bool
}

func newReader(file string) *reader {
	return &reader{file: file, entries: map[string]*entry{}, nested: map[string]map[string]*entry{}, refused: map[string]bool{}, standsFor: map[string]bool{}, absent: map[*SpecError]bool{}}
}

func (r *reader) errAt(e *entry, format string, args ...any) *SpecError {
	key := e.key
	if e.alias != "" {
		key = e.alias
	}
	return &SpecError{File: e.file, Line: e.line, Key: key, Msg: fmt.Sprintf(format, args...)}
}

func (r *reader) errFile(key, format string, args ...any) *SpecError {
	return &SpecError{File: r.file, Key: key, Msg: fmt.Sprintf(format, args...)}
}

// fail records a problem that leaves its key usable (a key given twice
// keeps its first value).
func (r *reader) fail(err *SpecError) {
	if err != nil {
		r.errs = append(r.errs, err)
	}
}

// refuse records a problem with a key's value or place: the key counts as
// refused from then on.
func (r *reader) refuse(err *SpecError) {
	if err != nil {
		r.errs = append(r.errs, err)
		r.refused[err.Key] = true
		if k, ok := strings.CutPrefix(err.Key, "claimed."); ok {
			// A claimed value taken as the plan's: the plan's key too.
			r.refused[k] = true
		}
	}
}

// missing records that a required key is absent: "missing; WHY;
// allowed: ALLOWED" (why may be ""), unless the key was suggested in place
// of an unknown or misplaced one (fixing that one supplies it; see
// dropSupplied for a suggestion made later).
func (r *reader) missing(key, why, allowed string) {
	switch {
	case r.standsFor[key]:
	case r.outcomeDoubt && outcomeNeeds(key):
	default:
		msg := "missing; allowed: " + allowed
		if why != "" {
			msg = "missing; " + why + "; allowed: " + allowed
		}
		se := r.errFile(key, "%s", msg)
		r.absent[se] = true
		r.refuse(se)
	}
}

// dropSupplied removes the missing keys that were suggested, after they
// were found missing, in place of an unknown key (Version: 1 stands for
// the missing version): one line says it.
func (r *reader) dropSupplied() {
	kept := r.errs[:0]
	for _, se := range r.errs {
		if !(r.absent[se] && r.standsFor[se.Key]) {
			kept = append(kept, se)
		}
	}
	r.errs = kept
}

// outcomeNeeds reports whether key ("" for the effect) is required by the
// outcome rather than by every comparison.
func outcomeNeeds(key string) bool {
	switch key {
	case "version", "design", "power", "n", "total", "margin", "higher_is_better", "direction":
		return false
	}
	return true
}

// keep records err, if any, and reports whether there was none.
func (r *reader) keep(err *SpecError) bool {
	r.refuse(err)
	return err == nil
}

// Parse reads a specification from data. file names it in messages; sets
// are "key=value" overrides applied before validation (dotted keys such as
// sources.control_risk reach nested maps).
//
// Every independent problem is reported: the error is a *SpecError when
// there is exactly one and a [SpecErrors] (one line each, in file order)
// when there are several. Checking stops early only where one problem makes
// the next meaningless: a file that is not YAML, an unsupported version, or
// a design, goal, outcome, pairing or hypothesis that cannot be read (which
// keys belong then is unknowable, so only keys no specification knows are
// reported besides).
func Parse(file string, data []byte, sets []string) (*Spec, error) {
	r, err := readSpec(file, data, sets)
	if err != nil {
		return nil, err
	}
	spec, err := r.finish(sets)
	if err != nil {
		return nil, err
	}
	sum := sha256.Sum256(data)
	spec.SHA256 = hex.EncodeToString(sum[:])
	return spec, nil
}

// readDoc checks the text of a specification and returns its top-level
// map: problems of the text itself (too large, not UTF-8, empty, not YAML,
// a second document, not a map) are reported here.
func readDoc(file string, data []byte) (*yaml.Node, error) {
	if len(data) > MaxSpecBytes {
		return nil, &SpecError{File: file, Msg: fmt.Sprintf("file is larger than 1 MiB; allowed: at most 1 MiB (%d bytes)", MaxSpecBytes)}
	}
	if err := checkText(file, data); err != nil {
		return nil, err
	}
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &SpecError{File: file, Msg: "file is empty; allowed: a YAML study specification (start from `enough new trial`)"}
	}
	var doc yaml.Node
	dec := yaml.NewDecoder(bytes.NewReader(data))
	err := dec.Decode(&doc)
	if errors.Is(err, io.EOF) {
		return nil, &SpecError{File: file, Msg: "file has no content; allowed: a YAML study specification (start from `enough new trial`)"}
	}
	if err != nil {
		return nil, syntaxError(file, data, err)
	}
	// A stream of several documents is refused whatever the later ones
	// hold: read or not, valid or not, they would be silently ignored.
	var second yaml.Node
	if err := dec.Decode(&second); !errors.Is(err, io.EOF) {
		// Name the line that ends the first document.
		line := second.Line
		if len(doc.Content) > 0 {
			if m := documentMarker(data, doc.Content[0].Line); m > 0 {
				line = m
			}
		}
		return nil, secondDocument(file, line)
	}
	if len(doc.Content) == 0 {
		return nil, &SpecError{File: file, Msg: "file has no content; allowed: a YAML study specification (start from `enough new trial`)"}
	}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		return nil, &SpecError{File: file, Line: root.Line, Msg: "the top level must be a map of keys to values, such as `design: cohort`"}
	}
	return root, nil
}

// secondDocument is the refusal of a file holding more than one YAML
// document; line is that of the --- or ... that ends the first (0 when
// unknown).
func secondDocument(file string, line int) *SpecError {
	return &SpecError{File: file, Line: line, Msg: "a second YAML document (after a line --- or ...); allowed: one specification per file (remove this line and what follows, or move it to a file of its own)"}
}

// documentMarker returns the 1-based number of the first line after line
// after that starts with the document marker --- or ... (followed by a
// space, a tab or the end of the line), or 0 when there is none. At the
// start of a line such a marker always ends a document: YAML allows it in
// no value.
func documentMarker(data []byte, after int) int {
	line := 0
	for text := range bytes.Lines(data) {
		line++
		text = bytes.TrimRight(text, "\r\n")
		if line <= after || len(text) < 3 {
			continue
		}
		if m := string(text[:3]); (m == "---" || m == "...") && (len(text) == 3 || text[3] == ' ' || text[3] == '\t') {
			return line
		}
	}
	return 0
}

// resolveAlias follows a YAML alias (*name) to the anchored node.
func resolveAlias(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && n.Alias != nil && i < 16; i++ {
		n = n.Alias
	}
	return n
}

// collect records the top-level keys of root; unknown keys wait for the
// selection (see reportUnknown), and a repeated key keeps its first value.
func (r *reader) collect(root *yaml.Node, file string) {
	for i := 0; i+1 < len(root.Content); i += 2 {
		k, v := root.Content[i], resolveAlias(root.Content[i+1])
		if k.Kind != yaml.ScalarNode {
			r.fail(&SpecError{File: file, Line: k.Line, Msg: "a key must be a plain word, such as `alpha`"})
			continue
		}
		r.add(&entry{key: k.Value, node: v, file: file, line: k.Line})
	}
}

func (r *reader) add(e *entry) {
	if _, ok := specKeys[e.key]; !ok {
		r.unknown = append(r.unknown, e)
		return
	}
	if prev, ok := r.entries[e.key]; ok && !e.set {
		r.fail(r.errAt(e, "given twice (first at line %d); allowed: each key once", prev.line))
		return
	}
	if e.set {
		r.noteSet(e.key, r.entries[e.key])
	}
	old := r.nested[e.key]
	r.place(e)
	if specKeys[e.key].kind == kindMap {
		if e.set && e.key != "sources" {
			// A whole map set on the command line overrides each of its
			// keys, and those the file gave.
			subs := map[string]bool{}
			for k := range old {
				subs[k] = true
			}
			for k := range r.nested[e.key] {
				subs[k] = true
			}
			names := make([]string, 0, len(subs))
			for k := range subs {
				names = append(names, k)
			}
			sort.Strings(names)
			for _, k := range names {
				r.noteSet(e.key+"."+k, old[k])
			}
		}
	}
}

// place puts e in the specification: in place of the key's entry, where
// there is one (an override), else after the others; a map's keys are
// read.
func (r *reader) place(e *entry) {
	if prev, ok := r.entries[e.key]; ok {
		e.keyPos = prev.keyPos
		if e.line == 0 && e.file == prev.file {
			e.line = prev.line
		}
		r.order[prev.keyPos] = e
	} else {
		e.keyPos = len(r.order)
		r.order = append(r.order, e)
	}
	r.entries[e.key] = e
	if specKeys[e.key].kind == kindMap {
		r.collectNested(e)
	}
}

// collectNested records the keys of a map-valued key (sources, cluster)
// into r.nested[e.key].
func (r *reader) collectNested(e *entry) {
	m := map[string]*entry{}
	r.nested[e.key] = m
	if e.node.Kind == yaml.ScalarNode && e.node.Tag == "!!null" {
		return
	}
	if e.node.Kind != yaml.MappingNode {
		r.refuse(r.errAt(e, "is not a map; allowed: %s", specKeys[e.key].allowed))
		return
	}
	for i := 0; i+1 < len(e.node.Content); i += 2 {
		k, v := e.node.Content[i], resolveAlias(e.node.Content[i+1])
		se := &entry{key: e.key + "." + clip(k.Value), node: v, file: e.file, line: k.Line}
		if e.file != r.file {
			se.line = 0
		}
		if _, dup := m[k.Value]; dup {
			r.fail(r.errAt(se, "given twice; allowed: each key once"))
			continue
		}
		if err := r.checkNested(e.key, k.Value, se); err != nil {
			r.refuse(err)
			continue
		}
		m[k.Value] = se
	}
}

// checkNested checks one key of a nested map.
func (r *reader) checkNested(head, sub string, e *entry) *SpecError {
	switch head {
	case "sources":
		if e.node.Kind != yaml.ScalarNode || e.node.Tag == "!!null" {
			return r.errAt(e, "is not text; allowed: a line saying where the value came from (put quotes around text that contains \": \")")
		}
	case "simulate", "cluster", "claimed", "matching", "adjustment", "interim":
		known := nestedKeys[head]
		if _, ok := known[sub]; !ok {
			names := make([]string, 0, len(known))
			for k := range known {
				names = append(names, k)
			}
			sort.Strings(names)
			msg := "unknown key; allowed: " + orList(names)
			if s, ok := nearest(sub, names); ok {
				msg = fmt.Sprintf("unknown key; did you mean %q?", s)
			}
			return r.errAt(e, "%s", msg)
		}
	}
	return nil
}

// setOrigin names a --set override as the file of its problems. An
// override that holds a line break or another control character is quoted,
// with escapes, so that the problem stays on one line.
func setOrigin(s string) string {
	if strings.IndexFunc(s, unicode.IsControl) >= 0 {
		return "--set " + strconv.Quote(clip(s))
	}
	return "--set " + clip(s)
}

// applySet applies one --set key=value override.
func (r *reader) applySet(s string) {
	origin := setOrigin(s)
	key, val, ok := strings.Cut(s, "=")
	key = strings.TrimSpace(key)
	if !ok || key == "" {
		r.fail(&SpecError{File: origin, Msg: "is not of the form key=value (e.g. --set alpha=0.01)"})
		return
	}
	var doc yaml.Node
	dec := yaml.NewDecoder(strings.NewReader(val))
	if err := dec.Decode(&doc); err != nil && !errors.Is(err, io.EOF) {
		r.fail(&SpecError{File: origin, Key: clip(key), Msg: setSyntaxError(key, val, err)})
		return
	}
	if err := dec.Decode(new(yaml.Node)); !errors.Is(err, io.EOF) {
		// A second document, readable or not, would be silently dropped.
		r.fail(&SpecError{File: origin, Key: clip(key), Msg: "the value holds a second YAML document (after a line --- or ...); allowed: one value (put quotes around text that holds such a line)"})
		return
	}
	node := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!null", Value: ""}
	if len(doc.Content) > 0 {
		node = doc.Content[0]
	}
	head, rest, nested := strings.Cut(key, ".")
	if !nested {
		r.add(&entry{key: key, node: node, file: origin, set: true})
		return
	}
	if info, ok := specKeys[head]; !ok {
		r.add(&entry{key: head, node: node, file: origin, set: true})
		return
	} else if info.kind != kindMap {
		r.fail(&SpecError{File: origin, Key: head, Msg: "has no nested keys; allowed dotted keys: sources.KEY and cluster.KEY"})
		return
	}
	r.ensureNested(head, origin, true)
	e := &entry{key: clip(key), node: node, file: origin, set: true}
	if err := r.checkNested(head, rest, e); err != nil {
		r.refuse(err)
		return
	}
	r.noteSet(key, r.nested[head][rest])
	r.nested[head][rest] = e
}

// ensureNested makes room for the keys of the map head (cluster,
// simulate, sources) when the specification has none: an empty map, and
// the map's own entry, after the others, as given in file (set for a
// --set override).
func (r *reader) ensureNested(head, file string, set bool) {
	if r.nested[head] != nil {
		return
	}
	r.nested[head] = map[string]*entry{}
	if _, ok := r.entries[head]; !ok {
		e := &entry{key: head, node: &yaml.Node{Kind: yaml.MappingNode}, file: file, keyPos: len(r.order), set: set}
		r.order = append(r.order, e)
		r.entries[head] = e
	}
}

// noteSet records that --set gave key, and the file's entry it replaces.
func (r *reader) noteSet(key string, prev *entry) {
	if r.orig == nil {
		r.orig = map[string]*entry{}
	}
	if _, seen := r.orig[key]; !seen {
		r.setKeys = append(r.setKeys, key)
		if prev != nil && prev.file == r.file {
			r.orig[key] = prev
		} else {
			r.orig[key] = nil
		}
	}
}

// overridden lists what the file said of each key --set changed, and
// removes the file's source of such a key from sources: a source speaks of
// the file's value, not of the command line's (unless --set gave a source
// too).
func (r *reader) overridden(sources map[string]string) map[string]FileValue {
	out := map[string]FileValue{}
	for _, k := range r.setKeys {
		if strings.HasPrefix(k, "sources.") || strings.HasPrefix(k, "simulate.") {
			continue
		}
		var fv FileValue
		if e := r.orig[k]; e != nil && e.node.Kind == yaml.ScalarNode {
			fv.Value = e.node.Value
		}
		if se := r.nested["sources"][k]; se != nil && se.file == r.file {
			fv.Source = strings.TrimSpace(se.node.Value)
			delete(sources, k)
		} else if se := r.orig["sources."+k]; se != nil {
			// --set gave a new source too; keep the file's beside it.
			fv.Source = strings.TrimSpace(se.node.Value)
		}
		out[k] = fv
	}
	return out
}

// get returns the entry for key, or nil when absent or null.
func (r *reader) get(key string) *entry {
	e := r.entries[key]
	if e == nil || (e.node.Kind == yaml.ScalarNode && e.node.Tag == "!!null") {
		return nil
	}
	return e
}

// givenKeys returns the keys the specification holds, nested ones dotted
// (cluster.icc).
func (r *reader) givenKeys() map[string]bool {
	out := map[string]bool{}
	for k := range r.entries {
		out[k] = true
	}
	for head, m := range r.nested {
		for sub := range m {
			out[head+"."+sub] = true
		}
	}
	return out
}

var percentLike = regexp.MustCompile(`^\s*-?[0-9.]+\s*%\s*$`)

// isFraction reports whether key takes a fraction, so that a percentage
// converts to it.
func (r *reader) isFraction(key string) bool {
	if key == "margin" {
		return r.marginKind == "fraction"
	}
	return fractionKeys[key]
}

// isRatio reports whether key takes a ratio.
func (r *reader) isRatio(key string) bool {
	if key == "margin" {
		return r.marginKind == "ratio"
	}
	return ratioKeys[key]
}

// percentMsg explains a value written as a percentage ("20%"): a key that
// takes a fraction is told the fraction, when that would be accepted; a
// ratio that it is no percentage.
func (r *reader) percentMsg(key string, n *yaml.Node) string {
	allowed := allowedOf(key)
	written := clip(strings.TrimSpace(n.Value))
	switch {
	case r.isFraction(key):
		asFraction := ", written as a fraction"
		if strings.Contains(allowed, "fraction") {
			asFraction = ""
		}
		p, err := strconv.ParseFloat(strings.TrimSpace(strings.TrimSuffix(written, "%")), 64)
		if err != nil {
			return fmt.Sprintf("%s is a percentage; allowed: %s%s", show(n), allowed, asFraction)
		}
		x := p / 100
		if r.fractionAccepts(key, x) {
			return fmt.Sprintf("%s is a percentage; allowed: %s%s; did you mean %s?", show(n), allowed, asFraction, fmtFraction(x))
		}
		return fmt.Sprintf("%s is a percentage, and the fraction it stands for, %s, is out of range too; allowed: %s%s", show(n), fmtFraction(x), r.allowedNow(key), asFraction)
	case r.isRatio(key):
		return fmt.Sprintf("%s is a percentage, but %s is a ratio, not a percentage; allowed: %s", show(n), key, allowed)
	}
	return fmt.Sprintf("%s is a percentage; allowed: %s", show(n), allowed)
}

// allowedOf says what key allows; a nested key (cluster.icc) too.
func allowedOf(key string) string {
	if head, sub, ok := strings.Cut(key, "."); ok && head != "claimed" {
		return nestedKeys[head][sub]
	}
	return specKeys[key].allowed
}

// allowedNow says what key allows, with the level in force for power.
func (r *reader) allowedNow(key string) string {
	if key == "power" && r.alpha > 0 {
		return fmt.Sprintf("a number above alpha (%g) and at most 1 − 1e-9", r.alpha)
	}
	return allowedOf(key)
}

// fractionAccepts reports whether the fraction x would be accepted for key.
func (r *reader) fractionAccepts(key string, x float64) bool {
	if key == "margin" && r.precision {
		return x > 0 && x < 0.5
	}
	return fractionRange(key, r.alpha)(x)
}

// rangeErr is the error for a number outside the range in allows. When
// the key takes a fraction and the value reads as a percentage of an
// allowed one (control_risk: 20), it asks whether the fraction was meant.
func (r *reader) rangeErr(e *entry, x float64, allowed string, in func(float64) bool) *SpecError {
	msg := fmt.Sprintf("%s is out of range; allowed: %s", show(e.node), allowed)
	if r.isFraction(e.key) && math.Abs(x) > 1 && math.Abs(x) <= 100 && in(x/100) {
		msg += fmt.Sprintf("; did you mean %s?", fmtFraction(x/100))
	}
	return r.errAt(e, "%s", msg)
}

// number reads a numeric key; e is nil when the key is absent. On a
// problem e is the key's entry and err says what is wrong.
func (r *reader) number(key string) (v float64, e *entry, err *SpecError) {
	e = r.get(key)
	if e == nil {
		if raw := r.entries[key]; raw != nil {
			return 0, raw, r.errAt(raw, "has no value; allowed: %s", specKeys[key].allowed)
		}
		return 0, nil, nil
	}
	n := e.node
	if n.Kind != yaml.ScalarNode || (n.Tag != "!!int" && n.Tag != "!!float") {
		if n.Kind == yaml.ScalarNode && percentLike.MatchString(n.Value) {
			return 0, e, r.errAt(e, "%s", r.percentMsg(key, n))
		}
		if isPlaceholder(n) {
			return 0, e, r.errAt(e, "%s is a placeholder still to fill in; allowed: %s", show(n), specKeys[key].allowed)
		}
		return 0, e, r.errAt(e, "%s is not a number; allowed: %s%s", show(n), specKeys[key].allowed, ratioHint(key, n))
	}
	f, perr := strconv.ParseFloat(strings.ReplaceAll(n.Value, "_", ""), 64)
	if perr != nil || math.IsNaN(f) || math.IsInf(f, 0) {
		if n.Tag == "!!int" {
			if i, ierr := strconv.ParseInt(n.Value, 0, 64); ierr == nil {
				return float64(i), e, nil
			}
		}
		return 0, e, r.errAt(e, "%s is not a finite number; allowed: %s", show(n), specKeys[key].allowed)
	}
	return f, e, nil
}

// isPlaceholder reports whether a value is a starter's placeholder,
// "[…]", not yet filled in.
func isPlaceholder(n *yaml.Node) bool {
	v := strings.TrimSpace(n.Value)
	return n.Kind == yaml.ScalarNode && strings.HasPrefix(v, "[") && strings.HasSuffix(v, "]")
}

var colonRatio = regexp.MustCompile(`^\s*([0-9]+(?:\.[0-9]+)?)\s*:\s*([0-9]+(?:\.[0-9]+)?)\s*$`)

// ratioHint reads an allocation written as a:b (ratio: 1:2, as summaries
// print it) as the number ratio takes, the second group per member of the
// first: "; did you mean ratio: 2?".
func ratioHint(key string, n *yaml.Node) string {
	m := colonRatio.FindStringSubmatch(n.Value)
	if key != "ratio" || n.Kind != yaml.ScalarNode || m == nil {
		return ""
	}
	a, _ := strconv.ParseFloat(m[1], 64)
	b, _ := strconv.ParseFloat(m[2], 64)
	if !(a > 0 && b > 0) {
		return ""
	}
	return fmt.Sprintf("; did you mean ratio: %s? (the second group's size per member of the first)", fmtFraction(b/a))
}

// whole reads a whole-number key.
func (r *reader) whole(key string) (int, *entry, *SpecError) {
	f, e, err := r.number(key)
	if err != nil || e == nil {
		if err != nil && strings.Contains(err.Msg, "is not a number") {
			err = r.errAt(e, "%s is not a whole number; allowed: %s", show(e.node), specKeys[key].allowed)
		}
		return 0, e, err
	}
	if f != math.Trunc(f) {
		return 0, e, r.errAt(e, "%s is not a whole number; allowed: %s", show(e.node), specKeys[key].allowed)
	}
	if math.Abs(f) > MaxSize {
		return 0, e, r.errAt(e, "%s is too large; allowed: %s, at most %.0e", show(e.node), specKeys[key].allowed, float64(MaxSize))
	}
	return int(f), e, nil
}

// text reads a text key.
func (r *reader) text(key string) (string, *entry, *SpecError) {
	e := r.get(key)
	if e == nil {
		if raw := r.entries[key]; raw != nil {
			return "", raw, r.errAt(raw, "has no value; allowed: %s", specKeys[key].allowed)
		}
		return "", nil, nil
	}
	if e.node.Kind != yaml.ScalarNode {
		return "", e, r.errAt(e, "is not a single value; allowed: %s (put quotes around text that contains \": \")", specKeys[key].allowed)
	}
	return strings.TrimSpace(e.node.Value), e, nil
}

// choice reads a text key that must be one of the allowed words.
func (r *reader) choice(key, def string, allowed ...string) (string, *entry, *SpecError) {
	v, e, err := r.text(key)
	if err != nil {
		return "", e, err
	}
	if e == nil {
		return def, nil, nil
	}
	for _, a := range allowed {
		if v == a {
			return v, e, nil
		}
	}
	msg := fmt.Sprintf("%s is not allowed; allowed: %s", show(e.node), orList(allowed))
	s, ok := valueWords[key][wordKey(v)]
	if !ok || !slices.Contains(allowed, s) {
		s, ok = nearest(v, allowed)
	}
	if ok && r.fits(key, s) {
		msg += fmt.Sprintf(" (did you mean %q?)", s)
	}
	return "", e, r.errAt(e, "%s", msg)
}

// fits reports whether value, suggested for key, is accepted by the design
// read so far (a cohort has no time-to-event outcome).
func (r *reader) fits(key, value string) bool {
	if key != "outcome" {
		return true
	}
	switch {
	case r.design == "":
		return true
	case r.design == "case-control" || r.precision:
		return value == "binary"
	case r.design != "trial":
		return value != "time-to-event"
	}
	return true
}

// show renders a YAML value for a message.
func show(n *yaml.Node) string {
	if n == nil {
		return "(nothing)"
	}
	switch n.Kind {
	case yaml.MappingNode:
		return "a map"
	case yaml.SequenceNode:
		return "a list"
	}
	if n.Tag == "!!str" {
		return strconv.Quote(clip(n.Value))
	}
	return clip(n.Value)
}

// orList joins words as "a, b or c".
func orList(words []string) string { return joinWords(words, "or") }

// andList joins words as "a, b and c".
func andList(words []string) string { return joinWords(words, "and") }

func joinWords(words []string, conj string) string {
	if len(words) <= 1 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " " + conj + " " + words[len(words)-1]
}

// assumptionMaps are the maps whose keys are assumptions of the plan, with
// their keys in the order they are listed.
var assumptionMaps = map[string][]string{
	"cluster":    {"size", "icc", "size_cv"},
	"matching":   {"controls_per_case", "exposure_correlation"},
	"adjustment": {"r_squared"},
	"interim":    {"looks", "timing", "boundary", "spending_function", "rho"},
}

// given returns the keys the specification sets, in document order.
func (r *reader) given() []Given {
	var out []Given
	for _, e := range r.order {
		if subs, ok := assumptionMaps[e.key]; ok {
			// The settings of these maps are assumptions too.
			for _, sub := range subs {
				se := r.nested[e.key][sub]
				if se == nil {
					continue
				}
				switch se.node.Kind {
				case yaml.ScalarNode:
					out = append(out, Given{Key: e.key + "." + sub, Value: se.node.Value})
				case yaml.SequenceNode:
					// A list of numbers (interim.timing) reads as written.
					var vs []string
					for _, c := range se.node.Content {
						vs = append(vs, c.Value)
					}
					out = append(out, Given{Key: e.key + "." + sub, Value: strings.Join(vs, ", ")})
				}
			}
			continue
		}
		if e.node.Kind != yaml.ScalarNode || specKeys[e.key].kind == kindMap {
			continue
		}
		out = append(out, Given{Key: e.key, Value: e.node.Value})
	}
	return out
}

// sourceMap returns the sources as plain text.
func (r *reader) sourceMap() map[string]string {
	out := map[string]string{}
	for k, e := range r.nested["sources"] {
		out[k] = strings.TrimSpace(e.node.Value)
	}
	return out
}

// sortedSourceKeys returns the source keys in order.
func (r *reader) sortedSourceKeys() []string {
	keys := make([]string, 0, len(r.nested["sources"]))
	for k := range r.nested["sources"] {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
