package report

import (
	"bytes"
	"context"
	"io/fs"
	"regexp"
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

// awkwardLabels are labels that do not end in "arm" or "group": a
// treatment, people in the plural, and a long label with parentheses.
var awkwardLabels = [][2]string{
	{"honey-alginate dressing", "standard foam dressing"},
	{"smokers", "non-smokers"},
	{"workers on the bottling lines (above 85 dBA)", "office and warehouse workers"},
}

// TestAwkwardLabels plans every design with three awkward pairs of labels,
// solving each question, and reads every sentence for the labels: a size
// never runs into a label that is not a noun for people ("244
// honey-alginate dressing"), no role word of the default labels leaks in
// ("respondents" after a label, "the exposed"), the labels are used as
// given, and the allocation is never "Allocation A:B = 1:2".
func TestAwkwardLabels(t *testing.T) {
	leaks := regexp.MustCompile(`\b(\d[\d,]* exposed|\d[\d,]* unexposed|the exposed|the unexposed|intervention arm|control arm|\d[\d,]* cases|\d[\d,]* controls|between cases|and controls)\b|(smokers|workers) respondents`)
	for name, tmpl := range labelledSpecs {
		for _, l := range awkwardLabels {
			spec := strings.ReplaceAll(strings.ReplaceAll(tmpl, "%[1]s", l[0]), "%[2]s", l[1])
			var variants []string
			variants = append(variants, spec)
			if !strings.Contains(spec, "hypothesis") {
				n := "n: 150\n"
				if strings.Contains(spec, "cross-sectional") {
					n = "total: 600\n"
				}
				variants = append(variants, spec+"solve: power\n"+n, spec+"solve: effect\n"+n)
			}
			for _, v := range variants {
				r := planSpec(t, v)
				f, g := groupsOf(r)
				for _, format := range []string{"markdown", "text"} {
					out := render(t, r, format)
					body := out[:strings.Index(out, "How the numbers were reached")]
					if !strings.Contains(body, l[0]) || !strings.Contains(body, l[1]) {
						t.Errorf("%s %s: a label is missing", name, format)
					}
					if m := leaks.FindString(body); m != "" {
						t.Errorf("%s %s with %q: the default labels leak: %q", name, format, l, m)
					}
					if strings.Contains(body, "Allocation "+l[0]) || regexp.MustCompile(`= 1:`).MatchString(body) {
						t.Errorf("%s %s: allocation written as A:B = 1:r", name, format)
					}
					for i, lab := range l {
						gr := []group{f, g}[i]
						if gr.form == formPeople || gr.form == formAdjective {
							if strings.Contains(body, "the "+lab) || strings.Contains(body, "in the "+lab) {
								t.Errorf("%s %s: %q takes no article", name, format, lab)
							}
							continue
						}
						// A label that is not a noun for people never follows
						// a number directly.
						if m := regexp.MustCompile(`\d ` + regexp.QuoteMeta(lab)).FindString(plain(body)); m != "" {
							t.Errorf("%s %s: a size runs into the label: %q", name, format, m)
						}
					}
				}
			}
		}
	}
}

// TestGroupForms checks how each kind of label takes a size.
func TestGroupForms(t *testing.T) {
	for _, c := range []struct {
		label, design string
		n             int
		want, in      string
	}{
		{"follow-up arm", "trial", 734, "734 in the follow-up arm", "in the follow-up arm"},
		{"club schools", "trial", 29, "29 in the club schools", "in the club schools"},
		{"first sequence", "trial", 24, "24 in the first sequence", "in the first sequence"},
		{"sequence splint-then-none", "trial", 24, "24 in sequence splint-then-none", "in sequence splint-then-none"},
		{"honey-alginate dressing", "trial", 244, "244 participants receiving honey-alginate dressing", "among participants receiving honey-alginate dressing"},
		{"smokers", "cross-sectional", 438, "438 smokers", "among smokers"},
		{"smokers", "trial", 438, "438 smokers", "among smokers"},
		{"workers on the bottling lines (above 85 dBA)", "cohort", 12, "12 workers on the bottling lines (above 85 dBA)", "among workers on the bottling lines (above 85 dBA)"},
		{"cases", "case-control", 170, "170 cases", "among cases"},
		{"exposed", "cohort", 400, "400 exposed", "in the exposed"},
		{"night-shift work", "cohort", 400, "400 in the night-shift work group", "in the night-shift work group"},
	} {
		g := newGroup(c.label, c.design)
		if got := g.size(c.n); got != c.want {
			t.Errorf("%q in a %s: size %q, want %q", c.label, c.design, got, c.want)
		}
		if got := g.in(); got != c.in {
			t.Errorf("%q in a %s: in %q, want %q", c.label, c.design, got, c.in)
		}
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
	for _, c := range [][2]string{{"cohort", ""}, {"case-control", ""}, {"trial", ""}, {"cross-sectional", ""},
		{"cross-sectional", "precision"}, {"trial", "continuous"}, {"trial", "time-to-event"}, {"cohort", "continuous"}} {
		goal, outcome := "", c[1]
		if c[1] == "precision" {
			goal, outcome = "precision", ""
		}
		data, err := designs.Starter(c[0], goal, outcome)
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
	for _, c := range [][3]string{{"cohort", "", ""}, {"case-control", "", ""}, {"trial", "", ""}, {"cross-sectional", "", ""},
		{"cross-sectional", "precision", ""}, {"trial", "", "continuous"}, {"trial", "", "time-to-event"}, {"cohort", "", "continuous"}} {
		data, err := designs.Starter(c[0], c[1], c[2])
		if err != nil {
			t.Fatal(err)
		}
		for _, sets := range [][]string{nil, {"solve=power", "n=300"}, {"solve=effect", "n=300"}, {"attrition=0"}} {
			if c[0] == "cross-sectional" && len(sets) > 1 {
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
			if regexp.MustCompile(`(risk|proportion|prevalence) (in|among) [^,(]+ of [0-9.]+% \((risk|proportion|prevalence) `).MatchString(out) {
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
