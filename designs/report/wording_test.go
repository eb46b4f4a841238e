package report

import (
	"bytes"
	"context"
	"fmt"
	"io/fs"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"testing"

	"enough/designs"
	"enough/examples"
)

// planSpec plans a specification written out in the test.
func planSpec(t *testing.T, spec string) *designs.Result {
	t.Helper()
	s, err := designs.Parse("test.yaml", []byte(spec), nil)
	if err != nil {
		t.Fatalf("%v\n%s", err, spec)
	}
	r, err := designs.Plan(s)
	if err != nil {
		t.Fatalf("%v\n%s", err, spec)
	}
	return r
}

// render writes r in a format.
func render(t *testing.T, r *designs.Result, format string) string {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, r, format); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// labelledSpecs are one plan of each design and outcome, with the group
// labels left to fill in (%[1]s first, %[2]s second).
var labelledSpecs = map[string]string{
	"cohort": `version: 1
design: cohort
primary_outcome: hearing loss at 5 years
first_group: %[1]s
second_group: %[2]s
unexposed_risk: 0.1
risk_ratio: 1.5
power: 0.8
ratio: 2
attrition: 0.1
`,
	"cohort-continuous": `version: 1
design: cohort
outcome: continuous
primary_outcome: forced expiratory volume in 1 s (ml)
first_group: %[1]s
second_group: %[2]s
mean_difference: -80
sd: 300
power: 0.8
`,
	"case-control": `version: 1
design: case-control
primary_outcome: laryngeal cancer
first_group: %[1]s
second_group: %[2]s
control_exposure: 0.2
odds_ratio: 2
power: 0.8
ratio: 2
`,
	"cross-sectional": `version: 1
design: cross-sectional
primary_outcome: tinnitus
first_group: %[1]s
second_group: %[2]s
exposure_prevalence: 0.3
unexposed_prevalence: 0.1
prevalence_ratio: 1.8
power: 0.8
attrition: 0.2
`,
	"cross-sectional-continuous": `version: 1
design: cross-sectional
outcome: continuous
primary_outcome: hearing threshold at 4 kHz (dB)
first_group: %[1]s
second_group: %[2]s
exposure_prevalence: 0.4
mean_difference: 5
sd: 12
power: 0.8
`,
	"trial": `version: 1
design: trial
primary_outcome: complete healing at 12 weeks
higher_is_better: true
first_group: %[1]s
second_group: %[2]s
control_risk: 0.4
risk_ratio: 1.3
power: 0.8
ratio: 2
non_adherence: 0.1
contamination: 0.05
attrition: 0.1
`,
	"trial-continuous": `version: 1
design: trial
outcome: continuous
hypothesis: non-inferiority
higher_is_better: false
margin: 2
primary_outcome: pain score at 6 weeks
first_group: %[1]s
second_group: %[2]s
mean_difference: 0
sd: 5
baseline_correlation: 0.5
power: 0.8
`,
	"crossover": `version: 1
design: trial
outcome: continuous
pairing: crossover
primary_outcome: minutes of morning stiffness
first_group: %[1]s
second_group: %[2]s
mean_difference: -10
sd_difference: 24
power: 0.8
`,
	"time-to-event": `version: 1
design: trial
outcome: time-to-event
primary_outcome: time to relapse
first_group: %[1]s
second_group: %[2]s
hazard_ratio: 0.7
control_median: 12
accrual: 6
follow_up: 24
time_unit: month
power: 0.8
`,
	"cluster": `version: 1
design: trial
primary_outcome: wound infection within 30 days
first_group: %[1]s
second_group: %[2]s
control_risk: 0.2
risk_ratio: 0.6
cluster: {size: 20, icc: 0.05}
power: 0.8
`,
	"paired": `version: 1
design: trial
outcome: continuous
pairing: paired
primary_outcome: systolic blood pressure (mmHg)
first_group: %[1]s
second_group: %[2]s
mean_difference: -4
sd: 10
within_correlation: 0.6
power: 0.8
attrition: 0.1
`,
	"three-arms": `version: 1
design: trial
primary_outcome: kit returned within 8 weeks
higher_is_better: true
first_group: %[1]s
second_group: %[2]s
arms: 3
control_risk: 0.5
intervention_risk: 0.6
power: 0.8
attrition: 0.05
`,
	"one-sided": `version: 1
design: cohort
primary_outcome: asthma admission within 2 years
first_group: %[1]s
second_group: %[2]s
unexposed_risk: 0.1
exposed_risk: 0.15
sides: 1
power: 0.8
`,
	"equivalence-ratio": `version: 1
design: trial
hypothesis: equivalence
margin_scale: ratio
margin: 1.15
higher_is_better: true
primary_outcome: seroprotection at day 28
first_group: %[1]s
second_group: %[2]s
control_risk: 0.8
power: 0.8
`,
	"non-inferiority": `version: 1
design: trial
hypothesis: non-inferiority
higher_is_better: true
margin: 0.08
primary_outcome: complete healing at 12 weeks
first_group: %[1]s
second_group: %[2]s
control_risk: 0.7
power: 0.9
`,
}

// awkwardLabels are pairs of labels the summary cannot know the grammar
// of: plural people, places, treatments, an identifier after a container
// word, labels that start with "the", letters outside Latin, parentheses,
// a newline, and mixtures of a place and something else.
var awkwardLabels = [][2]string{
	{"midwives", "GPs"},
	{"teenagers", "adults"},
	{"couples", "single parents"},
	{"staff", "managers"},
	{"Roma families", "non-Roma families"},
	{"quitline callers", "leaflet recipients"},
	{"factories with stations", "factories without stations"},
	{"arm A", "arm B"},
	{"group 2", "group 1"},
	{"office staff at the Łódź depot", "drivers at the Łódź depot"},
	{"the Ngöbe villages", "mestizo villages"},
	{"mothers visited at home", "mothers not visited"},
	{"workers with sit-stand desks", "workers with standard desks"},
	{"honey-alginate dressing", "standard foam dressing"},
	{"workers on the bottling lines (above 85 dBA)", "office and warehouse workers"},
	{"smokers", "non-smokers"},
	{"night-shift work", "day work"},
	{"quitline\ncallers", "leaflet recipients"},
	{"家庭访视", "常规护理"},
	{"Ελληνικά σχολεία", "άλλα σχολεία"},
	{"The Hague residents", "Rotterdam residents"},
	{"placebo", "10 mg daily"},
	{"usual care", "usual care plus text reminders"},
	{"workers at the clinic", "workers at the depot"},
	{"arm slings", "no sling"},
	{"sequence AB", "sequence BA"},
	{"first sequence", "second sequence"},
	{"intervention arm", "usual care"},
	{"exposed", "unexposed"},
	{"cases", "controls"},
	{"smokers", "unexposed"},
	{"children (under 5)", "children (5 to 14)"},
	{"HIV-positive adults", "HIV-negative adults"},
	{"Māori whānau", "non-Māori households"},
	{"12 weeks of physiotherapy", "advice only"},
	{"care homes", "private homes"},
	{"the intervention", "the control"},
	{"Arm 1 (yoga)", "Arm 2"},
}

// fillLabels writes two labels into a template, quoted for YAML.
func fillLabels(tmpl, first, second string) string {
	return strings.ReplaceAll(strings.ReplaceAll(tmpl, "%[1]s", strconv.Quote(first)), "%[2]s", strconv.Quote(second))
}

// sizeForms finds how the summary puts a number in front of a label:
// "244 (honey-alginate dressing)", "734 in the follow-up arm", "170 cases".
func sizeForms(text, label string) map[string]bool {
	l := oneLine(label)
	bracketed := strings.NewReplacer("(", "[", ")", "]").Replace(l)
	forms := map[string]bool{}
	for form, re := range map[string]string{
		"named": `\d[\d,]*(?: clusters)? \(` + regexp.QuoteMeta(bracketed) + `\)`,
		"place": `\d[\d,]*(?: clusters)? in (?:the )?` + regexp.QuoteMeta(withoutThe(l)) + `\b`,
		"bare":  `\d[\d,]* (?:clusters of )?(?:the )?` + regexp.QuoteMeta(withoutThe(l)) + `\b`,
	} {
		if regexp.MustCompile(re).MatchString(text) {
			forms[form] = true
		}
	}
	return forms
}

// TestAwkwardLabels plans every design with labels it cannot know the
// grammar of, solving each question, and reads the summary: the labels are
// there on one line, one plan puts its sizes in one form for both groups,
// no size runs into a label that is not a role word, and nothing of the
// old rule comes back ("participants receiving midwives", "in the arm A
// group", "in the the Ngöbe villages", "those allocated to workers with
// …").
func TestAwkwardLabels(t *testing.T) {
	forbidden := []string{"participants receiving", " group group", "the the ", "The the ", "those allocated to",
		"in the arm ", "in the group ", "in the sequence ", "  "}
	repeats := []*regexp.Regexp{
		regexp.MustCompile(`of [−+]?[\d.,]+%?(?: percentage points)? or an? `), // "of −1.94 or a difference in means of 1.94"
		regexp.MustCompile(`pairs \([\d,]+ in all\)`),                          // "60 pairs (60 in all)"
		regexp.MustCompile(`of those surveyed[^.]*, an? (prevalence|proportion|risk) of`),
	}
	names := make([]string, 0, len(labelledSpecs))
	for name := range labelledSpecs {
		names = append(names, name)
	}
	sort.Strings(names)
	plans := 0
	for _, name := range names {
		tmpl := labelledSpecs[name]
		for _, l := range awkwardLabels {
			spec := fillLabels(tmpl, l[0], l[1])
			variants := []string{spec}
			if !strings.Contains(spec, "hypothesis") {
				n := "n: 150\n"
				if strings.Contains(spec, "cross-sectional") {
					n = "total: 600\n"
				}
				variants = append(variants, spec+"solve: power\n"+n, spec+"solve: effect\n"+n)
			}
			for _, v := range variants {
				r := planSpec(t, v)
				plans++
				f, g := groupsOf(r)
				if f.form != g.form {
					t.Fatalf("%s %q: the groups have forms %d and %d", name, l, f.form, g.form)
				}
				where := fmt.Sprintf("%s %q solve %s", name, l, r.Solve)
				for _, format := range []string{"markdown", "text"} {
					out := render(t, r, format)
					raw := out[:strings.Index(out, "How the numbers were reached")]
					// The prose, without the tables (whose cells put a
					// number beside a label by design), on one line.
					var prose []string
					for _, line := range strings.Split(raw, "\n") {
						if strings.HasPrefix(line, "|") && !strings.HasSuffix(line, "|") {
							t.Errorf("%s %s: a table row is broken: %q", where, format, line)
						}
						if !strings.HasPrefix(line, "|") && !strings.Contains(strings.TrimLeft(line, " "), "  ") {
							prose = append(prose, line)
						}
					}
					body := strings.Join(strings.Fields(plain(strings.Join(prose, "\n"))), " ")
					for _, lab := range l {
						if r.Spec.Pairing != "paired" && !strings.Contains(body, oneLine(lab)) && !strings.Contains(body, paren(lab)) {
							t.Errorf("%s %s: the label %q is missing", where, format, lab)
						}
						if m := regexp.MustCompile(`in the ` + regexp.QuoteMeta(oneLine(lab)) + ` group`).FindString(body); m != "" {
							t.Errorf("%s %s: %q", where, format, m)
						}
					}
					for _, bad := range forbidden {
						if i := strings.Index(body, bad); i >= 0 {
							t.Errorf("%s %s: %q in …%s…", where, format, bad, body[max(0, i-60):min(len(body), i+60)])
						}
					}
					for _, re := range repeats {
						if m := re.FindString(body); m != "" {
							t.Errorf("%s %s: a repetition: %q", where, format, m)
						}
					}
					// One form of size for the whole plan; a bare number runs
					// into a label only in the role form ("170 cases").
					forms := map[string]bool{}
					// A trial with several arms names its intervention arms
					// and control arm in words of its own.
					sizes := regexp.MustCompile(`each of the \d+ (intervention )?arms|in the control arm`).ReplaceAllString(body, "")
					for _, lab := range l {
						for k := range sizeForms(sizes, lab) {
							forms[k] = true
						}
					}
					if forms["bare"] && f.form != formRole {
						t.Errorf("%s %s: a size runs into a label:\n%s", where, format, paragraph(r))
					}
					if len(forms) > 1 {
						t.Errorf("%s %s: sizes in more than one form %v:\n%s", where, format, forms, paragraph(r))
					}
				}
				// In a sentence, a parenthesised remark is never said twice
				// (the labels' own parentheses aside), and a label's own
				// parentheses never sit inside the summary's.
				para := paragraph(r)
				for i, lab := range l {
					for _, at := range regexp.MustCompile(regexp.QuoteMeta(oneLine(lab))).FindAllStringIndex(para, -1) {
						if strings.Contains(lab, "(") && strings.Count(para[:at[0]], "(") > strings.Count(para[:at[0]], ")") {
							t.Errorf("%s: %q inside parentheses in\n%s", where, lab, para)
						}
					}
					para = strings.ReplaceAll(para, oneLine(lab), fmt.Sprintf("‹label %d›", i+1))
				}
				for _, sentence := range strings.Split(para, ". ") {
					seen := map[string]bool{}
					for _, p := range regexp.MustCompile(`\([^()]*\)`).FindAllString(sentence, -1) {
						if seen[p] && !strings.HasPrefix(p, "(source") {
							t.Errorf("%s: %q twice in %q", where, p, sentence)
						}
						seen[p] = true
					}
				}
			}
		}
	}
	if plans < 30*len(labelledSpecs) {
		t.Errorf("only %d plans", plans)
	}
}

// TestLabelForms checks the form each pair of labels takes, and that both
// groups of a plan share it.
func TestLabelForms(t *testing.T) {
	for _, c := range []struct {
		first, second string
		size1, size2  string // sizes of 20 and 30
		in1, the1     string
	}{
		{"follow-up arm", "usual-care arm", "20 in the follow-up arm", "30 in the usual-care arm", "in the follow-up arm", "the follow-up arm"},
		{"arm A", "arm B", "20 in arm A", "30 in arm B", "in arm A", "arm A"},
		{"group 2", "group 1", "20 in group 2", "30 in group 1", "in group 2", "group 2"},
		{"sequence splint-then-none", "sequence none-then-splint", "20 in sequence splint-then-none", "30 in sequence none-then-splint", "in sequence splint-then-none", "sequence splint-then-none"},
		{"the Ngöbe villages", "mestizo villages", "20 in the Ngöbe villages", "30 in the mestizo villages", "in the Ngöbe villages", "the Ngöbe villages"},
		{"club schools", "control schools", "20 in the club schools", "30 in the control schools", "in the club schools", "the club schools"},
		{"cases", "controls", "20 cases", "30 controls", "among cases", "cases"},
		{"exposed", "unexposed", "20 exposed", "30 unexposed", "in the exposed", "the exposed"},
		{"midwives", "GPs", "20 (midwives)", "30 (GPs)", "for midwives", "midwives"},
		{"honey-alginate dressing", "standard foam dressing", "20 (honey-alginate dressing)", "30 (standard foam dressing)", "for honey-alginate dressing", "honey-alginate dressing"},
		{"mothers visited at home", "mothers not visited", "20 (mothers visited at home)", "30 (mothers not visited)", "for mothers visited at home", "mothers visited at home"},
		{"workers at the clinic", "workers at the depot", "20 (workers at the clinic)", "30 (workers at the depot)", "for workers at the clinic", "workers at the clinic"},
		{"office staff at the Łódź depot", "drivers", "20 (office staff at the Łódź depot)", "30 (drivers)", "for office staff at the Łódź depot", "office staff at the Łódź depot"},
		{"arm slings", "no sling", "20 (arm slings)", "30 (no sling)", "for arm slings", "arm slings"},
		// A place and something else: both take the neutral form, and the
		// place keeps its article where the sentence names it.
		{"intervention arm", "usual care", "20 (intervention arm)", "30 (usual care)", "for the intervention arm", "the intervention arm"},
		{"smokers", "unexposed", "20 (smokers)", "30 (unexposed)", "for smokers", "smokers"},
		{"workers on the bottling lines (above 85 dBA)", "office workers", "20 (workers on the bottling lines [above 85 dBA])", "30 (office workers)", "for workers on the bottling lines (above 85 dBA)", "workers on the bottling lines (above 85 dBA)"},
		{"quitline\ncallers", "leaflet\r\n  recipients", "20 (quitline callers)", "30 (leaflet recipients)", "for quitline callers", "quitline callers"},
		{"The Hague residents", "Rotterdam residents", "20 (The Hague residents)", "30 (Rotterdam residents)", "for The Hague residents", "The Hague residents"},
		{"家庭访视", "常规护理", "20 (家庭访视)", "30 (常规护理)", "for 家庭访视", "家庭访视"},
	} {
		f, g := newGroups(c.first, c.second)
		if f.form != g.form {
			t.Errorf("%q, %q: two forms", c.first, c.second)
		}
		if got := f.size(20); got != c.size1 {
			t.Errorf("%q: size %q, want %q", c.first, got, c.size1)
		}
		if got := g.size(30); got != c.size2 {
			t.Errorf("%q: size %q, want %q", c.second, got, c.size2)
		}
		if got := f.in(); got != c.in1 {
			t.Errorf("%q: in %q, want %q", c.first, got, c.in1)
		}
		if got := f.the(); got != c.the1 {
			t.Errorf("%q: the %q, want %q", c.first, got, c.the1)
		}
	}
}

// TestNoRepetition: a symmetric pair of detectable effects is said once
// with ±, the reference risk of two detectable risks once, a paired plan's
// enrolment without "(60 in all)", and the cross-sectional assumptions
// with a verb in each sentence.
func TestNoRepetition(t *testing.T) {
	for _, c := range []struct {
		scale string
		vs    []float64
		want  string
	}{
		{"mean_difference", []float64{-1.94, 1.94}, "±1.94"},
		{"risk_difference", []float64{-0.05, 0.05}, "±5 percentage points"},
		{"risk_ratio", []float64{0.33, 1.91}, "0.33 or 1.91"},
		{"mean_difference", []float64{-1.9, 2.1}, "−1.9 or 2.1"},
		{"mean_difference", []float64{2.1}, "2.1"},
	} {
		if got := orValues(c.scale, c.vs); got != c.want {
			t.Errorf("%s %v: %q, want %q", c.scale, c.vs, got, c.want)
		}
	}
	cases := []struct{ spec, want, not string }{
		{fillLabels(labelledSpecs["cross-sectional-continuous"], "smokers", "non-smokers") + "solve: effect\ntotal: 600\n",
			"at a difference in means of ±", "or a difference in means"},
		{"version: 1\ndesign: trial\nfirst_group: leaflet and calls\nsecond_group: leaflet recipients\ncontrol_risk: 0.1\nintervention_risk: 0.06\nsolve: effect\nn: 400\npower: 0.8\n",
			"for leaflet and calls, against 10% for leaflet recipients", ""},
		{fillLabels(labelledSpecs["paired"], "after", "before") + "solve: power\nn: 60\n",
			"The planned enrolment of 60 pairs leaves", "(60 in all)"},
		{fillLabels(labelledSpecs["cross-sectional"], "smokers", "non-smokers"),
			"We expect the first group (smokers) to make up 30% of those surveyed. We assume a prevalence of 10% for non-smokers and plan for a prevalence of 18% for smokers", ""},
	}
	for _, c := range cases {
		r := planSpec(t, c.spec)
		p := paragraph(r)
		if !strings.Contains(p, c.want) || (c.not != "" && strings.Contains(p, c.not)) {
			t.Errorf("want %q, not %q, in\n%s", c.want, c.not, p)
		}
		if strings.Count(p, "against 10%") > 1 {
			t.Errorf("the reference risk twice in\n%s", p)
		}
	}
}

// TestEventsRequired: a time-to-event plan states the unrounded events D*
// that the sizes convert, with the events rounded up beside them, so that
// the expected events never read as falling short of the requirement.
func TestEventsRequired(t *testing.T) {
	for _, spec := range []string{
		fillLabels(labelledSpecs["time-to-event"], "home visits", "usual care"),
		fillLabels(labelledSpecs["time-to-event"], "home visits", "usual care") + "ratio: 1.5\n",
	} {
		r := planSpec(t, spec)
		star, ok1 := stepOutput(r, "events_star")
		events, ok2 := stepOutput(r, "events")
		if !ok1 || !ok2 || star == events {
			t.Fatalf("steps events_star %v and events %v", star, events)
		}
		dstar := strconv.FormatFloat(star, 'f', 1, 64)
		p := paragraph(r)
		for _, want := range []string{
			"requires " + dstar + " events (" + count(int(events)) + " when rounded up)",
			"the smallest sizes expected to yield " + dstar + " events are",
		} {
			if !strings.Contains(p, want) {
				t.Errorf("no %q in\n%s", want, p)
			}
		}
		if *r.Result.ExpectedEvents < star-1e-9 {
			t.Errorf("expected events %v below D* %v", *r.Result.ExpectedEvents, star)
		}
		out := render(t, r, "markdown")
		if want := "Events required: " + dstar + " (" + count(int(events)) + " when rounded up)"; !strings.Contains(out, want) {
			t.Errorf("no %q in the answer", want)
		}
	}
	// D* just below a whole number is printed with the digits that show it
	// is below.
	r := &designs.Result{Steps: []designs.Step{{Name: "events_star", Output: 379.96}, {Name: "events", Output: 380}}}
	if need, rounded := eventsRequired(r); need != "379.96" || rounded != " (380 when rounded up)" {
		t.Errorf("%q %q", need, rounded)
	}
}

// TestHigherIsBetterWording: higher_is_better says whether the outcome is
// adverse (a risk; a prevalence in a survey) or desirable (a proportion);
// with the sign of the difference it says benefit or harm, so the number
// needed to treat or to harm, with no hedge.
func TestHigherIsBetterWording(t *testing.T) {
	for _, c := range []struct {
		design, keys string
		hib          bool
		noun, nn     string
	}{
		{"trial", "control_risk: 0.4\nintervention_risk: 0.3\n", false, "risk", "Number needed to treat"},
		{"trial", "control_risk: 0.4\nintervention_risk: 0.5\n", false, "risk", "Number needed to harm"},
		{"trial", "control_risk: 0.4\nintervention_risk: 0.5\n", true, "proportion", "Number needed to treat"},
		{"trial", "control_risk: 0.4\nintervention_risk: 0.3\n", true, "proportion", "Number needed to harm"},
		{"cohort", "unexposed_risk: 0.1\nexposed_risk: 0.15\n", false, "risk", "Number needed to harm"},
		{"cohort", "unexposed_risk: 0.1\nexposed_risk: 0.15\n", true, "proportion", "Number needed to be exposed"},
		{"cohort", "unexposed_risk: 0.15\nexposed_risk: 0.1\n", true, "proportion", "Number needed to harm"},
		{"cross-sectional", "exposure_prevalence: 0.3\nunexposed_prevalence: 0.1\nexposed_prevalence: 0.15\n", false, "prevalence", "Number needed to harm"},
		{"cross-sectional", "exposure_prevalence: 0.3\nunexposed_prevalence: 0.6\nexposed_prevalence: 0.7\n", true, "proportion", "Number needed to be exposed"},
	} {
		spec := "version: 1\ndesign: " + c.design + "\npower: 0.8\n" + c.keys
		if c.hib {
			spec += "higher_is_better: true\n"
		}
		r := planSpec(t, spec)
		out := render(t, r, "markdown")
		eff := out[strings.Index(out, "## The planned effect"):strings.Index(out, "## Other applicable")]
		para := out[:strings.Index(out, "## Assumptions")]
		if !strings.Contains(eff, c.nn+" (") {
			t.Errorf("%s %q hib=%v: no %q in\n%s", c.design, c.keys, c.hib, c.nn, eff)
		}
		if strings.Contains(out, "or to harm") || strings.Contains(out, "if the outcome is adverse") {
			t.Errorf("%s: the hedge is back", c.design)
		}
		if !strings.Contains(para, " "+c.noun+" of ") || !strings.Contains(eff, strings.ToUpper(c.noun[:1])+c.noun[1:]+" ") {
			t.Errorf("%s hib=%v: the measure is not called a %s:\n%s\n%s", c.design, c.hib, c.noun, para, eff)
		}
		for _, other := range []string{"risk", "proportion", "prevalence"} {
			if other != c.noun && regexp.MustCompile(`\b`+other+`\b`).MatchString(para+eff) {
				t.Errorf("%s hib=%v: a %s is also called a %s", c.design, c.hib, c.noun, other)
			}
		}
	}
}

// citation finds a citation by author and year in a summary's text:
// "Lachin & Foulkes 1986", "Fleiss, Tytun & Ury (1980)", "Kelsey et al.
// (1996)", "Schlesselman's formula (1982)".
var citation = regexp.MustCompile(`\b([A-Z][A-Za-z-]+)((?:, [A-Z][A-Za-z-]+)*(?: & [A-Z][A-Za-z-]+)?(?: et al\.)?)(?:'s formula)? \(?((?:1[89]|20)\d\d)\)?`)

// TestReferences: every citation by author and year in a summary has its
// full entry in the References section, and every entry is cited, for
// every example and starter and for plans that use each cited rule.
func TestReferences(t *testing.T) {
	var results []*designs.Result
	names, _ := fs.Glob(examples.Files, "*.yaml")
	for _, name := range names {
		results = append(results, planExample(t, name))
	}
	for _, c := range designs.Starters {
		data, err := designs.Starter(c.Design, c.Goal, c.Outcome)
		if err != nil {
			t.Fatal(err)
		}
		s, err := designs.Parse("starter.yaml", data, nil)
		if err != nil {
			t.Fatal(err)
		}
		r, err := designs.Plan(s)
		if err != nil {
			t.Fatal(err)
		}
		results = append(results, r)
	}
	for _, spec := range labelledSpecs {
		results = append(results, planSpec(t, strings.ReplaceAll(strings.ReplaceAll(spec, "%[1]s", "first arm"), "%[2]s", "second arm")))
	}
	// Cluster plans: the method starts the search only when solving n.
	for _, method := range []string{"fleiss", "fleiss-cc", "kelsey"} {
		cl := fillLabels(labelledSpecs["cluster"], "club schools", "control schools") + "method: " + method + "\n"
		results = append(results, planSpec(t, cl), planSpec(t, cl+"solve: power\nn: 400\n"), planSpec(t, cl+"solve: effect\nn: 400\n"))
	}
	for _, method := range []string{"t", "z"} {
		results = append(results, planSpec(t, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 3\nsd: 10\ncluster: {size: 20, icc: 0.05, size_cv: 0.5}\npower: 0.8\nmethod: "+method+"\n"))
	}
	results = append(results,
		planSpec(t, "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 3\nsd_first: 8\nsd_second: 12\npower: 0.8\n"),
		planSpec(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: effect\nn: 300\nnon_adherence: 0.1\npower: 0.8\n"),
		planSpec(t, "version: 1\ndesign: trial\nhypothesis: non-inferiority\nhigher_is_better: false\nmargin_scale: ratio\nmargin: 1.25\ncontrol_risk: 0.2\npower: 0.8\n"),
	)
	for _, r := range results {
		out := render(t, r, "markdown")
		i := strings.Index(out, "## References")
		if i < 0 {
			t.Errorf("%s: no References section", r.SpecFile)
			continue
		}
		text, refs := out[:i], out[i:]
		if j := strings.Index(refs, "\n---"); j >= 0 {
			refs = refs[:j]
		}
		// Sources are the user's words, not citations.
		for _, src := range r.Spec.Sources {
			text = strings.ReplaceAll(text, src, "")
		}
		var entries []string
		for _, l := range strings.Split(refs, "\n") {
			if strings.HasPrefix(l, "- ") {
				entries = append(entries, l[2:])
			}
		}
		cited := map[string]bool{}
		for _, m := range citation.FindAllStringSubmatch(text, -1) {
			key := m[1] + " " + m[3]
			cited[key] = true
			found := false
			for _, e := range entries {
				found = found || (strings.HasPrefix(e, m[1]+" ") && strings.Contains(e, "("+m[3]+")"))
			}
			if !found {
				t.Errorf("%s: %q is cited but has no full reference in\n%s", r.SpecFile, m[0], refs)
			}
		}
		for _, e := range entries {
			author, year := strings.Fields(e)[0], regexp.MustCompile(`\((\d{4})\)`).FindStringSubmatch(e)
			if year == nil || !cited[author+" "+year[1]] {
				t.Errorf("%s: the reference %q is not cited in the summary", r.SpecFile, e)
			}
			if !strings.HasSuffix(e, ".") {
				t.Errorf("%s: the reference %q does not end with a full stop", r.SpecFile, e)
			}
		}
		// A cluster plan cites its cluster-level test, and the formula of
		// its starting size exactly when it names that formula.
		if r.Spec.Cluster != nil {
			method := designs.MethodByID(r.Method)
			named := strings.Contains(text, "starts from the individual-level size given by")
			first := splitCitation(method.Citation)[0]
			if named != (r.Solve == "n") || named != strings.Contains(refs, first[:20]) {
				t.Errorf("cluster plan solving %s with %s: named %v, in References %v", r.Solve, r.Method, named, strings.Contains(refs, first[:20]))
			}
			if !strings.Contains(text, "cluster summaries (") || !strings.Contains(text, "Donner & Klar 2000)") {
				t.Errorf("cluster plan solving %s: the cluster-level test has no source", r.Solve)
			}
		}
	}
}

// warningSpecs make plans with warnings and notes of every kind.
var warningSpecs = []string{
	"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 100\npower: 0.9\n",                                       // power ignored; low power
	"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nn: 100\nn_second: 120\npower: 0.8\n",                                      // n and n_second ignored
	"version: 1\ndesign: cross-sectional\nexposure_prevalence: 0.3\nunexposed_prevalence: 0.1\nprevalence_ratio: 2\ntotal: 500\npower: 0.8\n", // total ignored
	"version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.04\nmargin: 0.05\nsolve: effect\ntotal: 60\n",               // margin ignored; Wald warnings
	"version: 1\ndesign: cohort\nsolve: effect\nn: 20\nunexposed_risk: 0.9\nexposed_risk: 0.5\nmethod: fleiss\npower: 0.8\n",                  // unreachable side
	"version: 1\ndesign: trial\ncontrol_risk: 0.05\nrisk_ratio: 0.2\npower: 0.8\nmethod: fleiss\n",                                            // small cells; test mismatch
	"version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 10\nsd: 10\nmethod: z\npower: 0.8\n",                                    // z below the t test
	"version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 3\nsd: 5\ncluster: {size: 30, icc: 0.05}\npower: 0.8\n",                 // few clusters
	"version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 10\nfollow_up: 12\nratio: 2\npower: 0.8\n",         // unequal allocation of events
}

// TestWarningsAreSentences: every warning and note, in JSON and in the
// summary, is a full sentence, with a capital first and a full stop last.
func TestWarningsAreSentences(t *testing.T) {
	var results []*designs.Result
	names, _ := fs.Glob(examples.Files, "*.yaml")
	for _, name := range names {
		results = append(results, planExample(t, name))
	}
	for _, spec := range warningSpecs {
		results = append(results, planSpec(t, spec))
	}
	seenWarning := 0
	for _, r := range results {
		seenWarning += len(r.Warnings)
		for _, l := range append(append([]string{}, r.Warnings...), r.Notes...) {
			if l == "" || l[0] < 'A' || l[0] > 'Z' || !strings.HasSuffix(l, ".") {
				t.Errorf("%s: not a full sentence: %q", r.SpecFile, l)
			}
			if strings.Contains(l, "choice of formula matters") {
				t.Errorf("%s: %q", r.SpecFile, l)
			}
		}
		for _, w := range r.Warnings {
			if strings.Contains(w, "methods differ") {
				t.Errorf("%s: a difference between methods is a warning: %q", r.SpecFile, w)
			}
		}
	}
	if seenWarning < len(warningSpecs) {
		t.Errorf("only %d warnings from %d plans made to warn", seenWarning, len(warningSpecs))
	}
}

// TestProtocolEditor reads every example's and starter's summary in both
// formats for what a protocol editor would strike out.
func TestProtocolEditor(t *testing.T) {
	var results []*designs.Result
	names, _ := fs.Glob(examples.Files, "*.yaml")
	for _, name := range names {
		results = append(results, planExample(t, name))
	}
	for _, c := range designs.Starters {
		data, err := designs.Starter(c.Design, c.Goal, c.Outcome)
		if err != nil {
			t.Fatal(err)
		}
		for _, sets := range [][]string{nil, {"solve=power", "n=300"}, {"solve=effect", "n=300"}, {"attrition=0"}} {
			if c.Design == "cross-sectional" && len(sets) > 1 {
				sets = []string{sets[0], "total=600"}
			}
			s, err := designs.Parse("starter.yaml", data, sets)
			if err != nil {
				continue
			}
			if r, err := designs.Plan(s); err == nil {
				results = append(results, r)
			}
		}
	}
	results = append(results, planSpec(t, strings.ReplaceAll(strings.ReplaceAll(labelledSpecs["trial-continuous"], "%[1]s", "a"), "%[2]s", "b")))
	forbidden := []string{
		"as the outcome that defines a case",
		"the prevalence of the condition whose prevalence",
		"(unrounded), to",
		"; we assume no true difference",
		"after 0% attrition", "after 0% non-response", "allowing for 0% non-response",
		"enrolment, whole survey",
		"design effect 1.", "design effect 1;",
		"month …", " 12 month ", " 24 month ", " 1 months",
		"(or to harm",
		"+0.00 points", "100.0% to 100.0%",
	}
	for _, r := range results {
		for _, format := range []string{"markdown", "text"} {
			out := render(t, r, format)
			for _, f := range forbidden {
				if strings.Contains(out, f) {
					i := strings.Index(out, f)
					t.Errorf("%s %s: %q in …%s…", r.SpecFile, format, f, out[max(0, i-80):min(len(out), i+80)])
				}
			}
			// A sizing sentence never says the risk on the first group's
			// scale twice ("a risk in the exposed of 9% (risk 9% in …").
			if regexp.MustCompile(`(risk|proportion|prevalence) (in|among|for) [^,(]+ of [0-9.]+% \((risk|proportion|prevalence) `).MatchString(out) {
				t.Errorf("%s %s: the risk is stated twice", r.SpecFile, format)
			}
			if format == "markdown" {
				para := paragraph(r)
				for _, f := range []string{"  ", " ,", " .", "..", ",,", "( ", " )"} {
					if strings.Contains(para, f) {
						t.Errorf("%s: %q in the paragraph: %s", r.SpecFile, f, para)
					}
				}
			}
			if r.Spec.BaselineCorrelation > 0 && strings.Contains(out, "Student's t test") {
				t.Errorf("%s %s: the baseline-adjusted analysis is also called Student's t test", r.SpecFile, format)
			}
		}
	}
}

// TestSimulationDisplay: the simulated power is printed to the precision
// its Monte-Carlo error supports, its score interval never collapses to a
// point, and the difference from the closed form agrees with the two
// printed figures.
func TestSimulationDisplay(t *testing.T) {
	for _, c := range []struct {
		p, se  float64
		ci     []float64
		want   int
		lo, hi string
	}{
		{0.811, 0.0028, []float64{0.8055, 0.8163}, 1, "80.5%", "81.6%"},
		{0.87, 0.000336, []float64{0.8693, 0.8707}, 2, "86.93%", "87.07%"},
		// 10,000 of 10,000 rejected: the interval from statsmodels'
		// proportion_confint(10000, 10000, method="wilson"), wilson_statsmodels.tsv.
		{1, 0, []float64{0.999616001629323, 1}, 2, "99.96%", "100.00%"},
		{0, 0, []float64{0, 0.000383998370676596}, 2, "0.00%", "0.04%"},
		{0.3, 0.046, []float64{0.219, 0.396}, 0, "22%", "40%"},
	} {
		d := simDecimals(c.se, c.ci)
		if d != c.want || pctD(c.ci[0], d) != c.lo || pctD(c.ci[1], d) != c.hi {
			t.Errorf("p %v se %v: %d decimals, %s to %s; want %d, %s to %s", c.p, c.se, d, pctD(c.ci[0], d), pctD(c.ci[1], d), c.want, c.lo, c.hi)
		}
	}
	for _, c := range []struct {
		a, b float64
		d    int
		want string
	}{
		{0.87004, 0.86996, 1, "the same to the precision shown"}, // not "+0.00 points"
		{0.8706, 0.8694, 1, "0.2 points above"},                  // 87.1% against 86.9%
		{0.8104, 0.8116, 1, "0.2 points below"},                  // 81.0% against 81.2%
		{0.811, 0.801, 1, "1.0 points above"},
		{0.5, 0.49, 0, "1 point above"},
		{0.95, 0.80, 0, "15 points above"},
	} {
		if got := printedDifference(c.a, c.b, c.d); got != c.want {
			t.Errorf("%v against %v: %q, want %q", c.a, c.b, got, c.want)
		}
	}
	// The whole section, on a plan whose power is all but 1.
	r := planSpec(t, "version: 1\ndesign: trial\ncontrol_risk: 0.5\nrisk_ratio: 0.4\nsolve: power\nn: 200\n")
	if err := designs.Verify(context.Background(), r.Spec, r, designs.SimOptions{Replicates: 10000, Seed: 1, SeedSet: true}); err != nil {
		t.Fatal(err)
	}
	out := render(t, r, "markdown")
	for _, want := range []string{"every one of the 10,000 replicates rejecting", "99.96% to 100.00%", "score interval (Wilson 1927)", "Wilson EB (1927)"} {
		if !strings.Contains(out, want) {
			t.Errorf("simulation at power 1: no %q in\n%s", want, out[strings.Index(out, "## Verification"):])
		}
	}
	if v := r.Simulation; len(v.Type1CI) != 2 || !(v.Type1CI[0] < *v.Type1Error && *v.Type1Error < v.Type1CI[1]) {
		t.Errorf("type I error %v, interval %v", *v.Type1Error, v.Type1CI)
	}
}

// TestInterimWording: a superiority trial's interim sentences speak of
// efficacy and no effect; a non-inferiority trial's of declaring
// non-inferiority and of a true effect at the margin, where its z
// statistic has mean 0.
func TestInterimWording(t *testing.T) {
	for _, c := range []struct {
		name, spec string
		want, not  []string
	}{
		{"superiority", "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\ninterim: {looks: 3, boundary: pocock}\n",
			[]string{"the trial stops early only for efficacy,", "At each analysis the trial stops when |Z| reaches the boundary, that is when the planned test's two-sided p-value is at or below the nominal p: for efficacy when Z lies on the side of the planned effect (a crossing on the other side would show harm).", " under no effect."},
			[]string{"non-inferiority"}},
		{"unequal groups", "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\nratio: 2\ninterim: {looks: 3, boundary: pocock}\n",
			[]string{"the fixed-sample size without interim analyses, ", " participants in the first group (unrounded)"},
			[]string{"participants in each group (unrounded)"}},
		{"non-inferiority", "version: 1\ndesign: trial\nhypothesis: non-inferiority\ncontrol_risk: 0.85\nintervention_risk: 0.85\nmargin: 0.08\nhigher_is_better: true\npower: 0.9\nmethod: farrington-manning\ninterim: {looks: 2, boundary: obrien-fleming}\n",
			[]string{"the trial stops early only to declare non-inferiority,", "At each analysis the trial stops to declare non-inferiority when Z (in the direction of benefit) reaches", " under a true effect at the non-inferiority margin (the null hypothesis)."},
			[]string{"under no effect", "stops early only for efficacy"}},
	} {
		out := render(t, planSpec(t, c.spec), "markdown")
		for _, w := range c.want {
			if !strings.Contains(out, w) {
				t.Errorf("%s: no %q", c.name, w)
			}
		}
		for _, w := range c.not {
			if strings.Contains(out, w) {
				t.Errorf("%s: says %q", c.name, w)
			}
		}
	}
}
