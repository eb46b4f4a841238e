package report

import (
	"regexp"
	"strings"

	"enough/designs"
)

// A group label is the user's own words, and the summary cannot know what
// they mean: "midwives", "honey-alginate dressing", "arm A", "the Ngöbe
// villages", "office staff at the Łódź depot". The rule is therefore
// neutral: a sentence puts a number or a preposition in front of a label
// only in a form that reads for any noun phrase, and a plan's two groups
// always share one form.
//
//   - A label that names where the members are, by its last word ("follow-up
//     arm", "club schools", "the Ngöbe villages") or as a container and an
//     identifier ("arm A", "group 2", "sequence AB"), takes "in": "734 in the
//     follow-up arm", "a risk of 18% in arm A". A last word after a link
//     word is not the head ("workers at the clinic" are people, not a
//     clinic). A leading "the" is dropped where the sentence adds its own.
//   - The role words of the designs' defaults ("cases", "controls",
//     "exposed", "unexposed") take a number directly: "170 cases", "400
//     exposed", "among cases", "in the exposed".
//   - Any other label, or a plan whose two labels are not of one of those
//     kinds together, is named rather than put in a sentence's grammar: a
//     size is "244 (honey-alginate dressing)", a measure is "a risk of 10%
//     for honey-alginate dressing", two groups are compared "between
//     honey-alginate dressing and standard foam dressing".
//
// Labels are folded to one line (a newline would break a table row), and a
// label's own parentheses become brackets inside the summary's.

// groupForm is how a plan's sentences put a number or a preposition in
// front of its groups' labels. Both groups of a plan share it.
type groupForm int

const (
	// formNamed is the neutral form: "244 (honey-alginate dressing)", "for
	// honey-alginate dressing".
	formNamed groupForm = iota
	// formPlace is for two labels that name where the members are: "734 in
	// the follow-up arm", "24 in sequence AB".
	formPlace
	// formRole is for two role words of the defaults: "170 cases", "400
	// exposed", "among cases", "in the exposed".
	formRole
)

// labelKind is what a single label is, before the plan's form is chosen.
type labelKind int

const (
	kindOther     labelKind = iota
	kindPlaceHead           // the last word names a place: "follow-up arm"
	kindPlaceID             // a container and an identifier: "arm A"
	kindRole                // a role word of the defaults: "cases", "exposed"
)

// group is one study group as the summary names it.
type group struct {
	label string // as given, on one line
	kind  labelKind
	form  groupForm
	ref   string // as a noun phrase: "the follow-up arm", "arm A", "cases", "the exposed", "midwives"
	role  string // the role word of a kindRole label: "cases", "exposed"
}

// placeHeads are the last words of labels that name where the members are:
// "N in the ‹label›" fits them.
var placeHeads = map[string]bool{
	"arm": true, "arms": true, "group": true, "groups": true, "sequence": true,
	"cohort": true, "cohorts": true, "cluster": true, "clusters": true, "stratum": true, "strata": true,
	"sample": true, "clinic": true, "clinics": true, "ward": true, "wards": true, "practices": true,
	"school": true, "schools": true, "class": true, "classes": true, "village": true, "villages": true,
	"site": true, "sites": true, "district": true, "districts": true, "hospital": true, "hospitals": true,
	"centre": true, "centres": true, "center": true, "centers": true, "community": true, "communities": true,
	"unit": true, "units": true, "team": true, "teams": true, "household": true, "households": true,
	"homes": true, "condition": true, "region": true, "regions": true, "population": true,
}

// containers are the first words of labels such as "arm A", "group 2",
// "sequence AB": "N in ‹label›" fits them when an identifier follows.
var containers = map[string]bool{
	"arm": true, "group": true, "sequence": true, "cohort": true, "cluster": true, "stratum": true,
	"sample": true, "clinic": true, "ward": true, "school": true, "village": true, "site": true,
	"district": true, "hospital": true, "centre": true, "center": true, "unit": true, "team": true,
	"condition": true, "region": true, "period": true,
}

// linkWords are words after which a label's last word is no longer its
// head: in "workers at the clinic" or "mothers visited at home" the members
// are not a clinic or a home.
var linkWords = map[string]bool{
	"at": true, "with": true, "without": true, "in": true, "on": true, "of": true, "from": true,
	"for": true, "near": true, "by": true, "under": true, "over": true, "after": true, "before": true,
	"to": true, "into": true, "who": true, "whose": true, "that": true, "which": true, "receiving": true,
	"given": true, "not": true, "than": true, "per": true, "via": true, "outside": true, "inside": true,
	"within": true, "across": true, "versus": true, "vs": true, "plus": true, "minus": true, "like": true,
}

// roleRefs are the role words of the designs' defaults, as noun phrases.
var roleRefs = map[string]string{
	"cases": "cases", "controls": "controls",
	"exposed": "the exposed", "unexposed": "the unexposed", "non-exposed": "the non-exposed",
}

// identifier matches what follows a container word: "A", "2", "3b", "II",
// "AB".
var identifier = regexp.MustCompile(`^([0-9]+[a-z]?|[A-Za-z]|[IVXivx]+|[A-Z0-9]{1,4})$`)

// oneLine folds a label to one line with single spaces.
func oneLine(s string) string {
	return strings.Join(strings.Fields(s), " ")
}

// withoutThe drops a leading "the " (the sentence adds its own).
func withoutThe(s string) string {
	if len(s) > 4 && strings.EqualFold(s[:4], "the ") {
		return s[4:]
	}
	return s
}

// words returns the label's words outside parentheses, without
// surrounding punctuation, in their own case.
func words(label string) []string {
	var b strings.Builder
	depth := 0
	for _, c := range label {
		switch {
		case c == '(' || c == '[':
			depth++
		case (c == ')' || c == ']') && depth > 0:
			depth--
		case depth == 0:
			b.WriteRune(c)
		}
	}
	var out []string
	for _, w := range strings.Fields(b.String()) {
		if w = strings.Trim(w, ".,;:!?'\""); w != "" {
			out = append(out, w)
		}
	}
	return out
}

// kindOf classifies one label; for a role word it also returns the word.
func kindOf(label string) (labelKind, string) {
	ws := words(withoutThe(label))
	if len(ws) == 0 {
		return kindOther, ""
	}
	lower := make([]string, len(ws))
	for i, w := range ws {
		lower[i] = strings.ToLower(w)
	}
	first, last := lower[0], lower[len(ws)-1]
	switch {
	case len(ws) == 1 && roleRefs[first] != "":
		return kindRole, first
	case len(ws) == 2 && containers[first] && (first == "sequence" || identifier.MatchString(ws[1])):
		return kindPlaceID, ""
	case placeHeads[last]:
		for _, w := range lower[:len(lower)-1] {
			if linkWords[w] {
				return kindOther, ""
			}
		}
		return kindPlaceHead, ""
	}
	return kindOther, ""
}

// newGroups names a plan's two groups in one form.
func newGroups(first, second string) (group, group) {
	f := group{label: oneLine(first)}
	g := group{label: oneLine(second)}
	f.kind, f.role = kindOf(f.label)
	g.kind, g.role = kindOf(g.label)
	isPlace := func(k labelKind) bool { return k == kindPlaceHead || k == kindPlaceID }
	form := formNamed
	switch {
	case isPlace(f.kind) && isPlace(g.kind):
		form = formPlace
	case f.kind == kindRole && g.kind == kindRole:
		form = formRole
	}
	for _, x := range []*group{&f, &g} {
		x.form = form
		switch x.kind {
		case kindPlaceHead:
			x.ref = "the " + withoutThe(x.label)
		case kindPlaceID:
			x.ref = withoutThe(x.label)
		case kindRole:
			x.ref = roleRefs[x.role]
		default:
			x.ref = x.label
		}
	}
	return f, g
}

// groupsOf returns the first and second groups of a result.
func groupsOf(r *designs.Result) (group, group) {
	return newGroups(r.FirstGroup, r.SecondGroup)
}

// bracketed returns the group as named inside the summary's parentheses:
// its label's own parentheses become brackets.
func (g group) bracketed() group {
	r := strings.NewReplacer("(", "[", ")", "]")
	g.label, g.ref = r.Replace(g.label), r.Replace(g.ref)
	return g
}

// paren puts a label in the summary's parentheses; its own parentheses
// become brackets: "(workers on the lines [above 85 dBA])".
func paren(label string) string {
	return "(" + group{label: label}.bracketed().label + ")"
}

// size puts a number of members in front of the group: "734 in the
// follow-up arm", "170 cases", "244 (honey-alginate dressing)".
func (g group) size(n int) string {
	return g.quantity(count(n))
}

// quantity puts an amount in front of the group: "29 clusters in the club
// schools", "30% (smokers)", "29 clusters of cases".
func (g group) quantity(q string) string {
	switch g.form {
	case formPlace:
		return q + " in " + g.ref
	case formRole:
		if strings.ContainsAny(q, " ") {
			return q + " of " + g.ref
		}
		return q + " " + g.role
	}
	return q + " " + paren(g.label)
}

// the names the group as a noun phrase: "the follow-up arm", "arm A",
// "cases", "the exposed", "honey-alginate dressing".
func (g group) the() string {
	return g.ref
}

// in places a measure in the group: "in the follow-up arm", "in the
// exposed", "among cases", "for honey-alginate dressing".
func (g group) in() string {
	switch g.form {
	case formPlace:
		return "in " + g.ref
	case formRole:
		if strings.HasPrefix(g.ref, "the ") {
			return "in " + g.ref // "in the exposed"
		}
		return "among " + g.ref // "among cases"
	}
	return "for " + g.ref
}

// has conjugates "to have" for the group as a subject, in the place and
// role forms, whose head noun is known: "the follow-up arm has", "the club
// schools have", "cases have". (The neutral form never makes a label the
// subject of a verb.)
func (g group) has() string {
	head := g.role
	if g.kind == kindPlaceHead {
		ws := words(g.label)
		head = strings.ToLower(ws[len(ws)-1])
	}
	if head == "strata" || head == "exposed" || head == "unexposed" || head == "non-exposed" ||
		(strings.HasSuffix(head, "s") && !strings.HasSuffix(head, "ss")) {
		return "have"
	}
	return "has"
}

// subject names the group as the subject of a sentence about its share:
// "the exposed", "the shift-work group", or for a label of no known kind
// "the first group (night-shift work)".
func (g group) subject(which string) string {
	if g.kind == kindOther {
		return "the " + which + " group " + paren(g.label)
	}
	return g.ref
}

// controlArm names the control arm of a trial with several arms, which a
// sentence puts beside "each of the 2 intervention arms": in the place
// form "the no-reminder arm" or "arm C", in any other "the control arm
// (usual care)".
func (g group) controlArm() string {
	if g.form == formPlace {
		return g.ref
	}
	return "the control arm " + paren(g.label)
}

// between names two groups as the objects of "between": "between the
// follow-up arm and the usual-care arm", "between midwives and GPs".
func between(f, g group) string {
	return "between " + f.the() + " and " + g.the()
}
