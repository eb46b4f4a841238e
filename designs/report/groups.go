package report

import (
	"strings"

	"enough/designs"
)

// groupForm is the grammatical form of a group's label, which decides how
// a sentence can put a number or a preposition in front of it.
type groupForm int

const (
	// formPlace names an arm, a group or a set of clusters: "follow-up
	// arm", "club schools", "first sequence". Sizes read "734 in the
	// follow-up arm".
	formPlace groupForm = iota
	// formSequence names a crossover sequence by its order: "sequence
	// splint-then-none". Sizes read "24 in sequence splint-then-none".
	formSequence
	// formTreatment names what a trial arm receives: "honey-alginate
	// dressing". Sizes read "244 participants receiving honey-alginate
	// dressing".
	formTreatment
	// formPeople names the members themselves, in the plural: "smokers",
	// "cases", "workers on the bottling lines (above 85 dBA)". Sizes read
	// "438 smokers".
	formPeople
	// formAdjective is an adjective used as a noun: "exposed",
	// "unexposed". Sizes read "400 exposed"; "in the exposed".
	formAdjective
	// formNamed is any other label of an observational study, such as an
	// exposure: "night-shift work". Sizes read "400 in the night-shift work
	// group".
	formNamed
)

// group is one study group as the summary names it.
type group struct {
	label  string
	form   groupForm
	plural bool // the label's head noun is plural ("club schools")
}

// placeNouns are the head nouns of labels that name an arm, a group or the
// clusters it is made of: "N in the ‹label›" fits them.
var placeNouns = map[string]bool{
	"arm": true, "arms": true, "group": true, "groups": true, "sequence": true,
	"cohort": true, "cohorts": true, "sample": true, "stratum": true, "strata": true,
	"cluster": true, "clusters": true, "school": true, "schools": true, "class": true, "classes": true,
	"ward": true, "wards": true, "clinic": true, "clinics": true, "practice": true, "practices": true,
	"site": true, "sites": true, "village": true, "villages": true, "district": true, "districts": true,
	"hospital": true, "hospitals": true, "centre": true, "centres": true, "center": true, "centers": true,
	"community": true, "communities": true, "team": true, "teams": true, "unit": true, "units": true,
	"household": true, "households": true, "home": true, "homes": true, "region": true, "regions": true,
	"population": true, "condition": true, "series": true,
}

// peopleNouns are nouns for people: a label that starts or ends with one
// names the members themselves ("workers on the bottling lines", "night-
// shift workers"), so "N ‹label›" fits it in any design.
var peopleNouns = map[string]bool{
	"people": true, "persons": true, "participants": true, "patients": true, "cases": true,
	"controls": true, "workers": true, "smokers": true, "non-smokers": true, "ex-smokers": true,
	"nonsmokers": true, "drinkers": true, "non-drinkers": true, "users": true, "non-users": true,
	"women": true, "men": true, "girls": true, "boys": true, "children": true, "infants": true,
	"babies": true, "adolescents": true, "adults": true, "mothers": true, "fathers": true,
	"parents": true, "pupils": true, "students": true, "residents": true, "employees": true,
	"nurses": true, "doctors": true, "physicians": true, "clinicians": true, "respondents": true,
	"volunteers": true, "survivors": true, "carers": true, "caregivers": true, "members": true,
	"athletes": true, "farmers": true, "miners": true, "drivers": true, "veterans": true,
	"retirees": true, "pensioners": true, "migrants": true, "refugees": true, "twins": true,
	"newborns": true, "neonates": true, "recipients": true, "donors": true, "individuals": true,
}

// words returns the label's words outside parentheses, lower-cased and
// without surrounding punctuation.
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
	for _, w := range strings.Fields(strings.ToLower(b.String())) {
		if w = strings.Trim(w, ".,;:!?'\""); w != "" {
			out = append(out, w)
		}
	}
	return out
}

// newGroup classifies a label. The design matters only for labels that
// name neither a place nor people: in a trial they name what the arm
// receives, in an observational study the group's defining feature.
func newGroup(label, design string) group {
	g := group{label: label}
	ws := words(label)
	if len(ws) == 0 {
		g.form = formNamed
		return g
	}
	first, last := ws[0], ws[len(ws)-1]
	isPlural := func(w string) bool {
		return strings.HasSuffix(w, "s") && !strings.HasSuffix(w, "ss") && w != "series"
	}
	switch {
	case first == "sequence" && len(ws) > 1:
		g.form = formSequence
	case placeNouns[last]:
		g.form, g.plural = formPlace, isPlural(last) || last == "strata"
	case peopleNouns[first] || peopleNouns[last]:
		g.form, g.plural = formPeople, true
	case design == "trial":
		g.form, g.plural = formTreatment, true
	case strings.HasSuffix(last, "ed"):
		g.form, g.plural = formAdjective, true
	case isPlural(last):
		g.form, g.plural = formPeople, true
	default:
		g.form = formNamed
	}
	return g
}

// groupsOf returns the first and second groups of a result.
func groupsOf(r *designs.Result) (group, group) {
	return newGroup(r.FirstGroup, r.Design), newGroup(r.SecondGroup, r.Design)
}

// size puts a number of members in front of the group: "734 in the
// follow-up arm", "244 participants receiving honey-alginate dressing",
// "438 smokers", "400 exposed", "400 in the night-shift work group".
func (g group) size(n int) string {
	return g.sizeText(count(n), n == 1)
}

func (g group) sizeText(n string, one bool) string {
	switch g.form {
	case formPlace:
		return n + " in the " + g.label
	case formSequence:
		return n + " in " + g.label
	case formTreatment:
		if one {
			return n + " participant receiving " + g.label
		}
		return n + " participants receiving " + g.label
	case formPeople, formAdjective:
		return n + " " + g.label
	}
	return n + " in the " + g.label + " group"
}

// the names the group's members as a noun phrase: "the follow-up arm",
// "participants receiving honey-alginate dressing", "smokers", "the
// exposed".
func (g group) the() string {
	switch g.form {
	case formPlace, formAdjective:
		return "the " + g.label
	case formSequence, formPeople:
		return g.label
	case formTreatment:
		return "participants receiving " + g.label
	}
	return "the " + g.label + " group"
}

// in places something in the group: "in the follow-up arm", "among
// participants receiving honey-alginate dressing", "among smokers", "in
// the exposed".
func (g group) in() string {
	switch g.form {
	case formPlace, formAdjective:
		return "in the " + g.label
	case formSequence:
		return "in " + g.label
	case formTreatment:
		return "among participants receiving " + g.label
	case formPeople:
		return "among " + g.label
	}
	return "in the " + g.label + " group"
}

// allocatedTo names what participants are allocated to: "the follow-up
// arm", "honey-alginate dressing", "sequence splint-then-none".
func (g group) allocatedTo() string {
	switch g.form {
	case formTreatment, formSequence:
		return g.label
	case formPlace:
		return "the " + g.label
	}
	return g.the()
}

// has conjugates "to have" for the group as a subject.
func (g group) has() string {
	if g.plural {
		return "have"
	}
	return "has"
}

// doesNot conjugates "not to have" for the group as a subject.
func (g group) doesNot() string {
	if g.plural {
		return "do not"
	}
	return "does not"
}

// between names two groups as the objects of "between": "between the
// follow-up arm and the usual-care arm", "between participants receiving
// honey-alginate dressing and those receiving standard foam dressing".
func between(f, g group) string {
	if f.form == formTreatment && g.form == formTreatment {
		return "between " + f.the() + " and those receiving " + g.label
	}
	return "between " + f.the() + " and " + g.the()
}
