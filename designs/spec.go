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
	"sort"
	"strconv"
	"strings"

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
}

func (r *reader) errAt(e *entry, format string, args ...any) *SpecError {
	return &SpecError{File: e.file, Line: e.line, Key: e.key, Msg: fmt.Sprintf(format, args...)}
}

func (r *reader) errFile(key, format string, args ...any) *SpecError {
	return &SpecError{File: r.file, Key: key, Msg: fmt.Sprintf(format, args...)}
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// Parse reads a specification from data. file names it in messages; sets
// are "key=value" overrides applied before validation (dotted keys such as
// sources.control_risk reach nested maps). Every problem is a *SpecError.
func Parse(file string, data []byte, sets []string) (*Spec, error) {
	if len(data) > MaxSpecBytes {
		return nil, &SpecError{File: file, Msg: fmt.Sprintf("file is larger than 1 MiB; allowed: at most 1 MiB (%d bytes)", MaxSpecBytes)}
	}
	sum := sha256.Sum256(data)
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &SpecError{File: file, Msg: "file is empty; allowed: a YAML study specification (start from `enough new trial`)"}
	}
	var doc yaml.Node
	dec := yaml.NewDecoder(bytes.NewReader(data))
	err := dec.Decode(&doc)
	if errors.Is(err, io.EOF) {
		return nil, &SpecError{File: file, Msg: "file has no content; allowed: a YAML study specification (start from `enough new trial`)"}
	}
	if err == nil {
		var second yaml.Node
		if dec.Decode(&second) == nil {
			return nil, &SpecError{File: file, Line: second.Line, Msg: "a second YAML document (after ---); allowed: one specification per file"}
		}
	}
	if err != nil {
		msg := err.Error()
		if m := yamlLine.FindStringSubmatch(strings.SplitN(msg, "\n", 2)[0]); m != nil {
			line, _ := strconv.Atoi(m[1])
			if strings.HasPrefix(m[2], "did not find expected") {
				// yaml.v3 reports a parser error at the 0-based line of the
				// construct it was reading; make it 1-based.
				line++
			}
			if tl := tabLine(data, line); tl > 0 {
				// yaml.v3 may report the line before the tab; point at it.
				line = tl
				return nil, &SpecError{File: file, Line: line, Msg: "YAML syntax error: a tab character in the indentation; allowed: spaces only"}
			}
			return nil, &SpecError{File: file, Line: line, Msg: "YAML syntax error: " + m[2]}
		}
		msg = strings.TrimPrefix(strings.ReplaceAll(msg, "\n", "; "), "yaml: ")
		return nil, &SpecError{File: file, Msg: "YAML syntax error: " + msg}
	}
	if len(doc.Content) == 0 {
		return nil, &SpecError{File: file, Msg: "file has no content; allowed: a YAML study specification (start from `enough new trial`)"}
	}
	root := doc.Content[0]
	if root.Kind != yaml.MappingNode {
		return nil, &SpecError{File: file, Line: root.Line, Msg: "the top level must be a map of keys to values, such as `design: cohort`"}
	}
	r := &reader{file: file, entries: map[string]*entry{}, nested: map[string]map[string]*entry{}}
	if err := r.collect(root, file); err != nil {
		return nil, err
	}
	for _, s := range sets {
		if err := r.applySet(s); err != nil {
			return nil, err
		}
	}
	spec, err := r.build()
	if err != nil {
		return nil, err
	}
	spec.File = file
	spec.Overridden = r.overridden(spec.Sources)
	spec.SHA256 = hex.EncodeToString(sum[:])
	spec.Overrides = append([]string(nil), sets...)
	return spec, nil
}

// resolveAlias follows a YAML alias (*name) to the anchored node.
func resolveAlias(n *yaml.Node) *yaml.Node {
	for i := 0; n != nil && n.Kind == yaml.AliasNode && n.Alias != nil && i < 16; i++ {
		n = n.Alias
	}
	return n
}

// tabLine returns line or the line after it when its indentation holds a
// tab, and 0 otherwise.
func tabLine(data []byte, line int) int {
	lines := strings.Split(string(data), "\n")
	for _, n := range []int{line, line + 1} {
		if n < 1 || n > len(lines) {
			continue
		}
		l := lines[n-1]
		if strings.Contains(l[:len(l)-len(strings.TrimLeft(l, " \t"))], "\t") {
			return n
		}
	}
	return 0
}

// collect records the top-level keys of root, rejecting unknown and repeated
// keys.
func (r *reader) collect(root *yaml.Node, file string) error {
	for i := 0; i+1 < len(root.Content); i += 2 {
		k, v := root.Content[i], resolveAlias(root.Content[i+1])
		e := &entry{key: k.Value, node: v, file: file, line: k.Line}
		if k.Kind != yaml.ScalarNode {
			return &SpecError{File: file, Line: k.Line, Msg: "a key must be a plain word, such as `alpha`"}
		}
		if err := r.add(e); err != nil {
			return err
		}
	}
	return nil
}

func (r *reader) add(e *entry) error {
	if _, ok := specKeys[e.key]; !ok {
		if s, ok := nearest(e.key, allKeys()); ok {
			return r.errAt(e, "unknown key; did you mean %q?", s)
		}
		return r.errAt(e, "unknown key; allowed keys are listed in the README (or start from `enough new DESIGN`)")
	}
	if prev, ok := r.entries[e.key]; ok && !e.set {
		return r.errAt(e, "given twice (first at line %d); allowed: each key once", prev.line)
	}
	if e.set {
		r.noteSet(e.key, r.entries[e.key])
	}
	if prev, ok := r.entries[e.key]; ok {
		// A --set override replaces the value in place.
		e.keyPos = prev.keyPos
		r.order[prev.keyPos] = e
	} else {
		e.keyPos = len(r.order)
		r.order = append(r.order, e)
	}
	r.entries[e.key] = e
	if specKeys[e.key].kind == kindMap {
		old := r.nested[e.key]
		if err := r.collectNested(e); err != nil {
			return err
		}
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
	return nil
}

// collectNested records the keys of a map-valued key (sources, cluster)
// into r.nested[e.key].
func (r *reader) collectNested(e *entry) error {
	m := map[string]*entry{}
	r.nested[e.key] = m
	if e.node.Kind == yaml.ScalarNode && e.node.Tag == "!!null" {
		return nil
	}
	if e.node.Kind != yaml.MappingNode {
		return r.errAt(e, "is not a map; allowed: %s", specKeys[e.key].allowed)
	}
	for i := 0; i+1 < len(e.node.Content); i += 2 {
		k, v := e.node.Content[i], resolveAlias(e.node.Content[i+1])
		se := &entry{key: e.key + "." + k.Value, node: v, file: e.file, line: k.Line}
		if e.file != r.file {
			se.line = 0
		}
		if _, dup := m[k.Value]; dup {
			return r.errAt(se, "given twice; allowed: each key once")
		}
		if err := r.checkNested(e.key, k.Value, se); err != nil {
			return err
		}
		m[k.Value] = se
	}
	return nil
}

// checkNested checks one key of a nested map.
func (r *reader) checkNested(head, sub string, e *entry) error {
	switch head {
	case "sources":
		if e.node.Kind != yaml.ScalarNode || e.node.Tag == "!!null" {
			return r.errAt(e, "is not text; allowed: a line saying where the value came from (put quotes around text that contains \": \")")
		}
	case "simulate", "cluster":
		known := clusterKeys
		if head == "simulate" {
			known = simulateKeys
		}
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

// applySet applies one --set key=value override.
func (r *reader) applySet(s string) error {
	origin := "--set " + s
	key, val, ok := strings.Cut(s, "=")
	key = strings.TrimSpace(key)
	if !ok || key == "" {
		return &SpecError{File: origin, Msg: "is not of the form key=value (e.g. --set alpha=0.01)"}
	}
	var doc yaml.Node
	if err := yaml.Unmarshal([]byte(val), &doc); err != nil {
		return &SpecError{File: origin, Key: key, Msg: "value is not valid YAML: " + strings.TrimPrefix(err.Error(), "yaml: ")}
	}
	node := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!null", Value: ""}
	if len(doc.Content) > 0 {
		node = doc.Content[0]
	}
	head, rest, nested := strings.Cut(key, ".")
	if !nested {
		return r.add(&entry{key: key, node: node, file: origin, set: true})
	}
	if info, ok := specKeys[head]; !ok {
		return r.add(&entry{key: head, node: node, file: origin, set: true})
	} else if info.kind != kindMap {
		return &SpecError{File: origin, Key: head, Msg: "has no nested keys; allowed dotted keys: sources.KEY and cluster.KEY"}
	}
	if r.nested[head] == nil {
		r.nested[head] = map[string]*entry{}
		if _, ok := r.entries[head]; !ok {
			e := &entry{key: head, node: &yaml.Node{Kind: yaml.MappingNode}, file: origin, keyPos: len(r.order), set: true}
			r.order = append(r.order, e)
			r.entries[head] = e
		}
	}
	e := &entry{key: key, node: node, file: origin, set: true}
	if err := r.checkNested(head, rest, e); err != nil {
		return err
	}
	r.noteSet(key, r.nested[head][rest])
	r.nested[head][rest] = e
	return nil
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

var percentLike = regexp.MustCompile(`^\s*-?[0-9.]+\s*%\s*$`)

// number reads a numeric key; ok is false when the key is absent.
func (r *reader) number(key string) (v float64, e *entry, err error) {
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
			return 0, e, r.errAt(e, "%q is a percentage; allowed: %s (write 0.05 for 5%%)", n.Value, specKeys[key].allowed)
		}
		return 0, e, r.errAt(e, "%s is not a number; allowed: %s", show(n), specKeys[key].allowed)
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

// whole reads a whole-number key.
func (r *reader) whole(key string) (int, *entry, error) {
	f, e, err := r.number(key)
	if err != nil || e == nil {
		if err != nil && strings.Contains(err.Error(), "is not a number") {
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
func (r *reader) text(key string) (string, *entry, error) {
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
func (r *reader) choice(key, def string, allowed ...string) (string, *entry, error) {
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
	if s, ok := nearest(v, allowed); ok {
		msg += fmt.Sprintf(" (did you mean %q?)", s)
	}
	return "", e, r.errAt(e, "%s", msg)
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
		return strconv.Quote(n.Value)
	}
	return n.Value
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

// given returns the keys the specification sets, in document order.
func (r *reader) given() []Given {
	var out []Given
	for _, e := range r.order {
		if e.key == "cluster" {
			// The cluster settings are assumptions too.
			for _, sub := range []string{"size", "icc", "size_cv"} {
				if se := r.nested["cluster"][sub]; se != nil && se.node.Kind == yaml.ScalarNode {
					out = append(out, Given{Key: "cluster." + sub, Value: se.node.Value})
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
