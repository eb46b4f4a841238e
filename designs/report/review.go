package report

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"

	"enough/designs"
	"enough/designs/review"
)

// This file renders a recheck of a protocol's stated sample size (enough
// review) as a reviewer's letter: the conclusion first, then the evidence,
// then the requests to the investigators, then the cautions. Every number
// it prints comes from the review.Report; none is computed here.

// ReviewSource is the specification a review read, for the footer and for
// the plan fields of the JSON when nothing could be recomputed.
type ReviewSource struct {
	// File is the specification's name as shown ("(standard input)" for
	// standard input).
	File string
	// Data is the specification's bytes as read.
	Data []byte
	// Sets are the --set overrides, in the order given.
	Sets []string
}

// WriteReview renders a recheck in the named format ("markdown", "text",
// "json" or "html"; HTML without a plot: see WriteReviewHTML). in is the
// specification as read for the review; src says where it came from.
func WriteReview(w io.Writer, rep *review.Report, in *designs.ReviewInput, src ReviewSource, format string) error {
	if rep == nil || in == nil {
		return fmt.Errorf("no review to write")
	}
	switch format {
	case "markdown", "md":
		return buildReview(rep, in, src).markdown(w)
	case "text", "txt":
		return buildReview(rep, in, src).text(w)
	case "html":
		return buildReview(rep, in, src).html(w, nil)
	case "json":
		data, err := reviewJSON(rep, in, src)
		if err != nil {
			return err
		}
		_, err = w.Write(data)
		return err
	}
	return fmt.Errorf("unknown format %q", format)
}

// planHead holds the plan fields of the JSON that exist without a
// recomputed plan: what was read and from where.
type planHead struct {
	Tool       string   `json:"tool"`
	Version    string   `json:"version"`
	SpecFile   string   `json:"spec_file"`
	SpecSHA256 string   `json:"spec_sha256"`
	Overrides  []string `json:"overrides,omitempty"`
	Title      string   `json:"title"`
	Design     string   `json:"design"`
	Goal       string   `json:"goal,omitempty"`
	Outcome    string   `json:"outcome"`
}

// reviewJSON writes the plan fields of the recomputed plan (as `enough
// plan -f json` writes them) with the review object after them; when
// nothing could be recomputed, the plan fields that exist and the review.
func reviewJSON(rep *review.Report, in *designs.ReviewInput, src ReviewSource) ([]byte, error) {
	sum := sha256.Sum256(src.Data)
	digest := hex.EncodeToString(sum[:])
	var head []byte
	var err error
	if rep.Plan != nil {
		res := *rep.Plan
		if res.SpecFile == "" {
			res.SpecFile = src.File
		}
		if res.SpecSHA256 == "" {
			res.SpecSHA256 = digest
		}
		head, err = json.Marshal(res)
	} else {
		h := planHead{Tool: designs.Tool, Version: designs.Version, SpecFile: src.File, SpecSHA256: digest,
			Overrides: src.Sets, Title: reviewTitle(rep, in), Design: inValue(in, "design"),
			Goal: inValue(in, "goal"), Outcome: inValue(in, "outcome")}
		if h.Outcome == "" {
			h.Outcome = "binary"
		}
		if h.Goal == "" && h.Design == "cross-sectional" {
			h.Goal = "comparison"
		}
		head, err = json.Marshal(h)
	}
	if err != nil {
		return nil, err
	}
	body, err := json.Marshal(rep)
	if err != nil {
		return nil, err
	}
	if len(head) < 2 || head[len(head)-1] != '}' {
		return nil, fmt.Errorf("the plan fields are not a JSON object")
	}
	doc := slices.Concat(head[:len(head)-1], []byte(`,"review":`), body, []byte("}"))
	var b bytes.Buffer
	if err := json.Indent(&b, doc, "", "  "); err != nil {
		return nil, err
	}
	b.WriteByte('\n')
	return b.Bytes(), nil
}

// inValue is the value of key as the specification gives it ("" when
// absent).
func inValue(in *designs.ReviewInput, key string) string {
	v, _ := in.Value(key)
	return strings.TrimSpace(v)
}

// verdictWords are the verdicts as the letter's first words.
var verdictWords = map[string]string{
	review.Consistent:       "Consistent",
	review.UnderPowered:     "Under-powered",
	review.LargerThanNeeded: "Larger than needed",
	review.Incomplete:       "Incomplete",
}

// elementWords say what each reporting element is.
var elementWords = map[string]string{
	"primary_outcome": "the primary outcome",
	"reference_value": "the reference value: the control or unexposed risk, mean or standard deviation",
	"effect":          "the effect the study is sized to detect",
	"effect_source":   "where the effect comes from (a source for it)",
	"alpha":           "the significance level (alpha)",
	"sides":           "one- or two-sided test",
	"power":           "the power",
	"method":          "the method or formula used",
	"allocation":      "the allocation between the groups",
	"attrition":       "the expected loss to follow-up or non-response",
	"design_effect":   "the design effect or intracluster correlation",
	"sample_size":     "the sample size itself",
}

// buildReview turns a recheck into the document shared by Markdown and
// text.
func buildReview(rep *review.Report, in *designs.ReviewInput, src ReviewSource) *document {
	r := rep.Plan
	title := reviewTitle(rep, in)
	d := &document{title: "Sample-size recheck: " + title}
	d.subtitle = "The figures a protocol states, recomputed under its own assumptions: " + reviewSubject(r, in)

	d.sections = append(d.sections, conclusionSection(rep, r != nil && intervalGoal(r.Goal) || intervalGoal(inValue(in, "goal"))))
	d.sections = append(d.sections, figuresSection(rep, r))
	d.sections = append(d.sections, methodsSection(rep, r))
	d.sections = append(d.sections, achievesSection(rep, r))
	d.sections = append(d.sections, diagnosisSection(rep, r))
	d.sections = append(d.sections, sensitivitySection(rep, r))
	if r != nil && r.Solve == "n" && r.Spec != nil {
		a := assumptionSection(r)
		a.heading = "The protocol's assumptions, as used"
		for _, row := range a.table[1:] {
			// "not stated" would read as a missing element: the value is
			// stated, its source is not.
			if row[3] == "not stated" {
				row[3] = "no source given"
			}
		}
		d.sections = append(d.sections, a)
	}
	d.sections = append(d.sections, reportingSection(rep))
	if r != nil && len(r.Warnings) > 0 {
		d.sections = append(d.sections, section{heading: "Warnings from the recomputation", bullets: sentences(r.Warnings)})
	}
	d.sections = append(d.sections, requestsSection(rep))
	d.sections = append(d.sections, section{heading: "Cautions", bullets: reviewCautions(rep)})
	if r != nil && r.Spec != nil {
		if refs := references(r); len(refs) > 0 {
			d.sections = append(d.sections, section{heading: "References", bullets: refs})
		}
	}

	sum := sha256.Sum256(src.Data)
	d.footer = append(d.footer, fmt.Sprintf("%s %s · review of specification %s · SHA-256 %s", designs.Tool, designs.Version, src.File, hex.EncodeToString(sum[:])))
	if len(src.Sets) > 0 {
		d.footer = append(d.footer, "overridden on the command line: "+strings.Join(src.Sets, ", "))
	}
	return d
}

// reviewCautions are the tool's cautions, which every output carries,
// followed by the review's own.
func reviewCautions(rep *review.Report) []string {
	out := slices.Clone(designs.Cautions)
	for _, c := range rep.Cautions {
		if !slices.Contains(out, c) {
			out = append(out, c)
		}
	}
	return out
}

// untitled is the title of a study whose specification gives none, as
// plan titles it.
const untitled = "Untitled study"

// reviewTitle is the title of the study reviewed: the recomputed plan's,
// else the specification's, else the title plan gives an untitled study.
func reviewTitle(rep *review.Report, in *designs.ReviewInput) string {
	if rep.Plan != nil && rep.Plan.Title != "" {
		return rep.Plan.Title
	}
	if t := inValue(in, "title"); t != "" {
		return t
	}
	return untitled
}

// reviewSubject names the study reviewed: "a parallel-group randomised
// trial, binary outcome".
func reviewSubject(r *designs.Result, in *designs.ReviewInput) string {
	if r != nil && r.Spec != nil {
		what := studyKind(r)
		switch {
		case r.Goal == "precision" && r.Design != "cross-sectional", r.Goal == "accuracy":
			return article(what) + " " + what + ", " + outcomeWords(r)
		case r.Goal == "precision":
			return article(what) + " " + what + " estimating " + map[bool]string{true: "a mean", false: "a prevalence"}[r.Outcome == "continuous"]
		}
		return article(what) + " " + what + ", " + outcomeWords(r)
	}
	what := designKinds[inValue(in, "design")]
	if what == "" {
		what = "study"
	}
	outcome := inValue(in, "outcome")
	if outcome == "" {
		outcome = "binary"
	}
	if inValue(in, "goal") == "precision" {
		return article(what) + " " + what + " estimating " + map[bool]string{true: "a mean", false: "a prevalence"}[outcome == "continuous"]
	}
	return article(what) + " " + what + ", " + outcome + " outcome"
}

// conclusionSection puts the verdict first, with the rule behind it;
// precision says that the study is a precision survey, which has no power.
func conclusionSection(rep *review.Report, precision bool) section {
	s := section{heading: "Conclusion"}
	word := verdictWords[rep.Verdict]
	if word == "" {
		word = rep.Verdict
	}
	lead := "**" + word + ".**"
	if sentence := withoutVerdict(rep.Sentence, word); sentence != "" {
		lead += " " + designs.Sentence(sentence)
	}
	s.paras = append(s.paras, lead)
	rule := fmt.Sprintf("A stated size is judged consistent when it lies within %s of the recomputed size, or when the power it gives lies within %s of the stated power.",
		pct(rep.Tolerance.N), percentagePoints(rep.Tolerance.Power))
	if precision {
		rule = fmt.Sprintf("A stated size is judged consistent when it lies within %s of the recomputed size.", pct(rep.Tolerance.N))
	}
	s.paras = append(s.paras, rule)
	if len(rep.Assumed) > 0 {
		s.paras = append(s.paras, "Where the protocol is silent, the recheck assumes "+strings.Join(rep.Assumed, "; ")+".")
	}
	return s
}

// withoutVerdict drops a leading "Verdict: " from the verdict's sentence,
// which the letter puts in bold before it.
func withoutVerdict(sentence, word string) string {
	head, rest, ok := strings.Cut(sentence, ": ")
	if ok && strings.EqualFold(strings.ReplaceAll(head, "-", " "), strings.ReplaceAll(word, "-", " ")) {
		return capitalise(rest)
	}
	return sentence
}

// percentagePoints writes a difference of proportions as "2 percentage
// points" (no sign).
func percentagePoints(p float64) string {
	v := trimZeros(strconv.FormatFloat(100*p, 'f', 2, 64))
	if v == "1" {
		return "1 percentage point"
	}
	return v + " percentage points"
}

// figureLabel names a stated figure in the words of the plan.
func figureLabel(r *designs.Result, name string) string {
	first, second := "first group", "second group"
	paired, everyone := false, false
	if r != nil && r.Spec != nil {
		f, g := groupsOf(r)
		first, second = f.label, g.label
		paired, everyone = r.Spec.Pairing == "paired", r.Spec.ContinuousExposure
	}
	switch name {
	case "n":
		switch {
		case paired:
			return "analysable pairs"
		case everyone:
			return "analysable participants"
		case r != nil && r.Spec != nil && r.Spec.Matched:
			return "analysable sets (cases)"
		}
		return "analysable, " + first
	case "n_second":
		return "analysable, " + second
	case "total":
		if r != nil && intervalGoal(r.Goal) {
			return "respondents"
		}
		return "analysable, in total"
	case "enrol_total":
		if r != nil && intervalGoal(r.Goal) {
			return "to invite"
		}
		return "to recruit, in total"
	case "events":
		return "events"
	case "clusters":
		return "clusters per arm"
	}
	return name
}

// statedKey is the key of the claimed block that stated a judged figure: a
// survey's respondents are judged as its total, though the protocol may
// state them as n.
func statedKey(c review.Claimed, name string) string {
	if name == "total" && c.Total == nil && c.N != nil {
		return "n"
	}
	return name
}

// signedPct writes a relative difference with its sign: "−19.9%",
// "+31.2%", with the digits the engine's sentences use
// (review.SignedPercent).
func signedPct(d float64) string { return review.SignedPercent(d) }

// claimedLine lists what the claimed block states, key by key.
func claimedLine(c review.Claimed) string {
	var parts []string
	whole := func(key string, v *int) {
		if v != nil {
			parts = append(parts, "`"+key+"` "+count(*v))
		}
	}
	whole("n", c.N)
	whole("n_second", c.NSecond)
	whole("total", c.Total)
	whole("enrol_total", c.EnrolTotal)
	whole("events", c.Events)
	whole("clusters", c.Clusters)
	if c.Power != nil {
		parts = append(parts, "`power` "+pct(*c.Power))
	}
	if c.Alpha != nil {
		parts = append(parts, "`alpha` "+strconv.FormatFloat(*c.Alpha, 'g', -1, 64))
	}
	if c.Sides != nil {
		parts = append(parts, "`sides` "+strconv.Itoa(*c.Sides))
	}
	if c.Method != nil {
		parts = append(parts, "`method` "+*c.Method)
	}
	return strings.Join(parts, "; ")
}

func figuresSection(rep *review.Report, r *designs.Result) section {
	s := section{heading: "The stated figures against the recomputation"}
	if line := claimedLine(rep.Claimed); line != "" {
		s.paras = append(s.paras, "Stated in the protocol (the claimed block): "+line+".")
	} else {
		s.paras = append(s.paras, "The protocol states no figure of its sample-size calculation.")
	}
	if len(rep.Figures) == 0 {
		s.paras = append(s.paras, "No stated size could be set against a recomputed one.")
		return s
	}
	withPower := slices.ContainsFunc(rep.Figures, func(f review.Figure) bool { return f.Power != nil })
	rows := [][]string{{"Figure", "Stated", "Recomputed", "Difference", "Power it gives", "Judgement"}}
	for _, f := range rep.Figures {
		power := "—"
		if f.Power != nil {
			power = pct1(*f.Power)
		}
		judgement := f.Judgement
		if judgement != "consistent" {
			judgement = "**" + judgement + "**"
		}
		stated := count(f.Stated)
		if f.Analysable != nil && *f.Analysable != f.Stated {
			// What the enrolment yields after the assumed loss (none
			// when nothing is lost: a time-to-event plan, or no attrition).
			stated += " (" + count(*f.Analysable) + " analysable)"
		}
		rows = append(rows, []string{figureLabel(r, f.Name) + " (`" + statedKey(rep.Claimed, f.Name) + "`)", stated, count(f.Recomputed), signedPct(f.Difference), power, judgement})
	}
	if !withPower {
		// A precision survey: no power to show.
		for i, row := range rows {
			rows[i] = slices.Delete(row, 4, 5)
		}
	}
	s.table = rows
	for _, f := range rep.Figures {
		if f.Why != "" {
			s.bullets = append(s.bullets, designs.Sentence(f.Why))
		}
	}
	return s
}

func methodsSection(rep *review.Report, r *designs.Result) section {
	s := section{heading: "The recomputed size, method by method"}
	if r == nil {
		s.paras = append(s.paras, "Nothing could be recomputed: the protocol leaves out what the calculation needs (see the reporting completeness below).")
		return s
	}
	if r.Solve != "n" || len(rep.Methods) == 0 {
		s.paras = append(s.paras, "No size was recomputed: without a stated power, or without a stated effect, there is no size to solve for. What the stated size achieves follows.")
		return s
	}
	settings := []string{}
	if r.Power != nil {
		settings = append(settings, "power "+pct(*r.Power))
	}
	if r.Alpha != nil {
		settings = append(settings, "alpha "+strconv.FormatFloat(*r.Alpha, 'g', -1, 64))
	}
	if r.Sides != 0 {
		settings = append(settings, sidesWord(r.Sides))
	}
	if len(settings) > 0 {
		loss := "The size is the analysable size, before any allowance for loss; the last column allows for the assumed loss."
		switch {
		case r.Outcome == "time-to-event" && r.Spec.Dropout > 0:
			loss = "The size is the number of participants to recruit; the dropout is allowed for in the events they are expected to give."
		case r.Outcome == "time-to-event":
			loss = "The size is the number of participants to recruit, with no loss to follow-up assumed."
		case r.Result.EnrolTotal == r.Result.Total:
			loss = "The size is the analysable size; with no loss assumed, it is also the number to recruit."
		}
		s.paras = append(s.paras, "Recomputed at "+strings.Join(settings, ", ")+", with the protocol's assumptions (listed below). "+loss)
	}
	named := "used for the verdict (the default: the protocol names no method)"
	if slices.Contains(rep.Reporting.Given, "method") {
		named = "used for the verdict (the method the protocol names)"
	}
	per := "Analysable per group"
	if r.Result.Arms > 2 {
		per = "Analysable per arm"
	}
	rows := [][]string{{"Method", per, "Analysable in total", "To recruit", "Note"}}
	for _, m := range rep.Methods {
		mark := ""
		if m.Named {
			mark = "**" + named + "**"
		}
		rows = append(rows, []string{m.Name + " (`" + m.Method + "`)", armSizes(r, m.N), count(m.Total), count(m.EnrolTotal), mark})
	}
	switch unit := oneGroupUnit(r); {
	case r.Goal == "precision" && r.Design == "cross-sectional", r.Goal == "accuracy":
		// One group: its size is the total.
		for i, row := range rows {
			rows[i] = slices.Delete(row, 1, 2)
		}
	case unit != "":
		// Pairs, or the participants of a crossover trial: one count,
		// which is the total.
		rows[0][1] = "Analysable " + unit
		for i, row := range rows {
			rows[i] = slices.Delete(row, 2, 3)
		}
	}
	s.table = rows
	if a := rep.Recomputed; a != nil {
		if a.Events > 0 {
			s.bullets = append(s.bullets, "Events required: "+count(a.Events))
		}
		if a.Clusters != nil && a.DesignEffect != nil {
			s.bullets = append(s.bullets, fmt.Sprintf("Clusters per arm: %s (design effect %.4g)", sizeJoin(a.Clusters), *a.DesignEffect))
		}
		if a.AchievedPower != nil {
			s.bullets = append(s.bullets, "Power at the recomputed size: "+pct1(*a.AchievedPower))
		}
		if b := interimBullet(r); b != "" {
			s.bullets = append(s.bullets, b)
		}
	}
	return s
}

// interimBullet says, in a review, that the recomputed size of a
// group-sequential trial is its maximum, and what the inflation added to
// the fixed-sample size, from the recorded steps.
func interimBullet(r *designs.Result) string {
	iv := r.Result.Interim
	if r.Spec == nil || r.Spec.Interim == nil || iv == nil {
		return ""
	}
	fixed, ok := fixedSize(r)
	if !ok {
		return ""
	}
	return fmt.Sprintf("Group-sequential: %d analyses with efficacy boundaries by %s; the recomputed size is the maximum, the fixed-sample size without interim analyses (%s, unrounded) × the inflation factor %s",
		len(iv.Looks), r.Spec.Interim.BoundaryWords(), fixed, strconv.FormatFloat(iv.Inflation, 'f', 4, 64))
}

// oneGroupUnit is what a design of one group of units counts: "pairs" for
// a paired design, "participants" for a crossover trial (each receives
// both treatments); "" for a design of groups.
func oneGroupUnit(r *designs.Result) string {
	if r == nil || r.Spec == nil {
		return ""
	}
	switch {
	case r.Spec.Pairing == "paired":
		return "pairs"
	case r.Spec.Pairing == "crossover", r.Spec.ContinuousExposure:
		return "participants"
	}
	return ""
}

// armSizes writes the analysable sizes of a method: "632 and 632" for two
// groups; with several arms, the size of each with the number of arms,
// "323 in each of 3 arms", or "300 in each of 2 intervention arms, 450
// in the control arm".
func armSizes(r *designs.Result, n []int) string {
	a := r.Result
	switch {
	case a.Arms <= 2 || len(n) == 0:
		return sizeJoin(n)
	case len(n) == 1 || n[0] == n[1] || r.Spec.Comparisons == "all-pairs":
		return fmt.Sprintf("%s in each of %d arms", count(n[0]), a.Arms)
	}
	return fmt.Sprintf("%s in each of %d intervention arms, %s in the control arm", count(n[0]), a.Arms-1, count(n[1]))
}

// sizeJoin writes sizes as "12 and 12".
func sizeJoin(n []int) string {
	out := make([]string, len(n))
	for i, x := range n {
		out[i] = count(x)
	}
	return strings.Join(out, " and ")
}

func achievesSection(rep *review.Report, r *designs.Result) section {
	s := section{heading: "What the stated size achieves"}
	if p := rep.ClaimedPowerActual; p != nil {
		at := "the stated analysable size"
		if c := rep.Claimed; c.N == nil && c.Total == nil && c.EnrolTotal == nil && c.Events != nil {
			at = "the stated number of events"
		}
		line := "Power at " + at + ": **" + pct1(*p) + "**"
		switch {
		case rep.Claimed.Power != nil:
			line += " (the protocol states " + pct1(*rep.Claimed.Power) + ")"
		case r != nil && r.Power != nil && slices.Contains(rep.Reporting.Given, "power"):
			line += " (the protocol states " + pct1(*r.Power) + ")"
		default:
			line += " (the protocol states no power)"
		}
		s.bullets = append(s.bullets, line)
	}
	for _, det := range rep.DetectableEffect {
		if det.Scale == "precision_ratio" {
			if det.Upper != nil {
				s.bullets = append(s.bullets, fmt.Sprintf("Upper over lower limit of the interval the stated sizes reach: %s (the protocol's target %s)", num(*det.Upper), num(r.Spec.PrecisionRatio)))
			}
			continue
		}
		if det.Scale == "margin" {
			// A precision survey: the margin the stated size achieves.
			if det.Upper != nil {
				margin := strings.TrimSuffix(pct(*det.Upper), "%") + " percentage points"
				if r != nil && r.Outcome == "continuous" {
					margin = num(*det.Upper)
				}
				line := "Margin the stated size achieves: ±" + margin
				if r != nil && r.Spec != nil {
					line += " at " + pct(r.Spec.Confidence) + " confidence"
				}
				s.bullets = append(s.bullets, line)
			}
			continue
		}
		s.bullets = append(s.bullets, fmt.Sprintf("Smallest effect detectable with %s power: %s", pct(det.Power), detectablePhrase(r, det)))
	}
	switch {
	case len(s.bullets) == 0 && rep.DetectableNote != "":
		s.paras = append(s.paras, designs.Sentence(rep.DetectableNote))
	case len(s.bullets) == 0:
		s.paras = append(s.paras, "Not computed: the protocol states too little to compute what its size achieves.")
	case len(rep.DetectableEffect) == 0 && rep.DetectableNote != "":
		// The power is shown; the effect could not be solved: one line
		// says so.
		s.bullets = append(s.bullets, strings.TrimSuffix(rep.DetectableNote, "."))
	}
	return s
}

// detectablePhrase writes a detectable effect in each direction: "risk
// ratio 0.71 below no difference, 1.36 above".
func detectablePhrase(r *designs.Result, det review.Detectable) string {
	name := strings.ReplaceAll(det.Scale, "_", " ")
	if r != nil && r.Spec != nil {
		name = scaleName(r, det.Scale)
		if firstRiskScale(det.Scale) {
			return riskPhrase(r, det)
		}
	}
	side := func(v *float64, where string) string {
		if v == nil {
			return "not reachable " + where
		}
		return valueOn(det.Scale, *v) + " " + where
	}
	switch {
	case det.Lower != nil && det.Upper == nil:
		return name + " " + side(det.Lower, "(below no difference)")
	case det.Upper != nil && det.Lower == nil:
		return name + " " + side(det.Upper, "(above no difference)")
	}
	return name + " " + side(det.Lower, "below no difference") + ", " + side(det.Upper, "above")
}

// riskPhrase writes a detectable effect on the scale of the first group's
// own risk (or exposure) as that risk, set against the second group's:
// "a risk of 4.81% in the intervention arm (below the 10% in the control
// arm), or of 17.3% (above it)".
func riskPhrase(r *designs.Result, det review.Detectable) string {
	f, g := groupsOf(r)
	noun := vocabOf(r).noun
	ref := pct(r.Spec.P2) + " " + g.in()
	switch {
	case det.Lower != nil && det.Upper != nil:
		return fmt.Sprintf("%s %s of %s %s (below the %s), or of %s (above it)", article(noun), noun, pct(*det.Lower), f.in(), ref, pct(*det.Upper))
	case det.Lower != nil:
		return fmt.Sprintf("%s %s of %s %s (below the %s); none above it is reachable", article(noun), noun, pct(*det.Lower), f.in(), ref)
	case det.Upper != nil:
		return fmt.Sprintf("%s %s of %s %s (above the %s); none below it is reachable", article(noun), noun, pct(*det.Upper), f.in(), ref)
	}
	return "none reachable"
}

func diagnosisSection(rep *review.Report, r *designs.Result) section {
	s := section{heading: "Where the difference may come from"}
	if len(rep.Diagnosis) == 0 {
		note := rep.DiagnosisNote
		if note == "" {
			note = "no diagnosis"
		}
		s.paras = append(s.paras, designs.Sentence(note))
		return s
	}
	s.paras = append(s.paras, "The common slips of a sample-size calculation were each recomputed, and in pairs when none alone matched. These reproduce a stated figure, the closest first:")
	s.ordered = true
	stated := map[string]int{}
	for _, f := range rep.Figures {
		stated[f.Name] = f.Stated
	}
	for _, dg := range rep.Diagnosis {
		s.bullets = append(s.bullets, diagnosisLine(dg, r, stated))
	}
	return s
}

// diagnosisLine writes one diagnosis: the slips, how close they come, and
// the explanation (or, without one, the figures).
func diagnosisLine(dg review.Diagnosis, r *designs.Result, stated map[string]int) string {
	code := func(ids []string) []string {
		out := make([]string, len(ids))
		for i, id := range ids {
			out[i] = "`" + id + "`"
		}
		return out
	}
	line := "**" + strings.Join(code(dg.Slips), " with ") + "**"
	how := distance(dg.Distance) + " from the stated figure"
	if len(dg.Tied) > 0 {
		// One parenthesis: the tie and the distance together.
		line += ", tied with " + orWords(code(dg.Tied))
		how = "the same figure, " + how
	}
	line += " (" + how + "). "
	if dg.Explanation != "" {
		return line + designs.Sentence(dg.Explanation)
	}
	line += fmt.Sprintf("gives %s for %s", count(dg.Reproduces), figureLabel(r, dg.Figure))
	if v, ok := stated[dg.Figure]; ok {
		line += fmt.Sprintf(" against %s stated", count(v))
	}
	return line + "."
}

// orWords joins words as "a, b or c".
func orWords(words []string) string {
	if len(words) <= 1 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " or " + words[len(words)-1]
}

// distance writes how close a reproduced figure is: "exact, 0%", "0.4%",
// with the digits of the engine's explanation (review.DiffPercent).
func distance(d float64) string {
	if d == 0 {
		return "exact, 0%"
	}
	return review.DiffPercent(d)
}

func sensitivitySection(rep *review.Report, r *designs.Result) section {
	s := section{heading: "Which assumption carries the plan"}
	if len(rep.Sensitivity) == 0 {
		s.paras = append(s.paras, "Not computed: no size was recomputed.")
		return s
	}
	s.paras = append(s.paras, "The size required when one assumption at a time is made 10% and 20% less favourable (an effect moved towards no effect, a standard deviation, intracluster correlation or attrition made larger, a reference risk moved the way that needs more participants), the largest first:")
	needs := "First group needs"
	unit := oneGroupUnit(r)
	switch {
	case unit != "":
		needs = capitalise(unit) + " needed"
	case r != nil && r.Result.Arms > 2 && r.Spec.Comparisons == "all-pairs":
		needs = "Each arm needs"
	case r != nil && r.Result.Arms > 2:
		needs = "Each intervention arm needs"
	}
	rows := [][]string{{"Assumption", "Less favourable by", "From", "To", needs, "Analysable in total", "To recruit"}}
	for _, x := range rep.Sensitivity {
		label := x.Key
		if r != nil && r.Spec != nil {
			label = reviewKeyLabel(r, x.Key)
		}
		row := []string{label + " (`" + x.Key + "`)", review.Percent(x.Change), plainNumber(x.From), plainNumber(x.To)}
		if x.N == nil {
			why := "cannot be planned"
			if x.Error != "" {
				why += ": " + x.Error
			}
			rows = append(rows, append(row, why, "—", "—"))
			continue
		}
		row = append(row, count(*x.N), orDash(x.Total), orDash(x.EnrolTotal))
		rows = append(rows, row)
	}
	switch {
	case r != nil && intervalGoal(r.Goal):
		// One group: its size is the total.
		for i, row := range rows {
			rows[i] = slices.Delete(row, 4, 5)
		}
	case unit != "":
		// Pairs (or crossover participants): the count is the total.
		for i, row := range rows {
			rows[i] = slices.Delete(row, 5, 6)
		}
	}
	s.table = rows
	return s
}

// reviewKeyLabel names an assumption in the review's tables, which show it
// alone, without the plan's table of assumptions around it: a trial's
// margin is its non-inferiority or equivalence margin (a survey's, the
// half-width of its interval), and a survival is named with its time.
func reviewKeyLabel(r *designs.Result, key string) string {
	switch {
	case key == "margin" && r.Goal != "precision" && r.Spec.Hypothesis != "":
		return r.Spec.Hypothesis + " margin"
	case key == "control_survival" && r.Spec.SurvivalTime > 0:
		_, g := groupsOf(r)
		return "survival at " + duration(r.Spec.SurvivalTime, r.Spec.TimeUnit) + ", " + g.label
	}
	return keyLabel(r, key)
}

// orDash writes a count, or a dash when there is none.
func orDash(n *int) string {
	if n == nil {
		return "—"
	}
	return count(*n)
}

// plainNumber writes an assumption's value with up to six significant
// digits and no floating-point noise: 1.675, 0.11, −4.
func plainNumber(x float64) string {
	return strings.Replace(trimZeros(strconv.FormatFloat(x, 'g', 6, 64)), "-", "−", 1)
}

func reportingSection(rep *review.Report) section {
	s := section{heading: "Reporting completeness"}
	state := map[string]string{}
	for _, id := range rep.Reporting.Given {
		state[id] = "given"
	}
	for _, id := range rep.Reporting.Missing {
		state[id] = "**missing**"
	}
	rows := [][]string{{"Element", "What it is", "In the protocol"}}
	for _, id := range designs.ReportingElements {
		if st, ok := state[id]; ok {
			rows = append(rows, []string{"`" + id + "`", elementWords[id], st})
		}
	}
	if len(rows) > 1 {
		s.table = rows
	}
	if len(rep.Reporting.Guidelines) > 0 {
		s.after = append(s.after, "These elements serve the sample-size items of the reporting guidelines: "+strings.Join(rep.Reporting.Guidelines, "; ")+".")
	}
	return s
}

func requestsSection(rep *review.Report) section {
	s := section{heading: "Requests to the investigators"}
	if len(rep.Requests) == 0 {
		s.paras = append(s.paras, "None: the protocol states what the recheck needs, and its figures hold.")
		return s
	}
	s.ordered = true
	s.bullets = sentences(rep.Requests)
	return s
}

// intervalGoal says a plan is sized for the width of an interval, not for
// a test: a precision survey, a ratio to a stated precision, a study of
// diagnostic accuracy.
func intervalGoal(goal string) bool { return goal == "precision" || goal == "accuracy" }
