package report

import (
	"bytes"
	"encoding/json"
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/review"
	"enough/examples"
)

// reviewExample rechecks one example protocol.
func reviewExample(t *testing.T, name string) (*review.Report, *designs.ReviewInput, ReviewSource) {
	t.Helper()
	data, err := examples.Files.ReadFile(name)
	if err != nil {
		t.Fatal(err)
	}
	src := ReviewSource{File: "examples/" + name, Data: data}
	in, err := designs.ParseReview(src.File, data, nil)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := review.Run(in)
	if err != nil {
		t.Fatal(err)
	}
	return rep, in, src
}

// TestReviewGolden compares whole reviews of the example protocols with
// golden files; a change in wording or layout is a visible decision
// (regenerate with go test ./designs/report -update).
func TestReviewGolden(t *testing.T) {
	names, _ := fs.Glob(examples.Files, "review-*.yaml")
	if len(names) < 4 {
		t.Fatalf("only %d review examples", len(names))
	}
	for _, name := range names {
		rep, in, src := reviewExample(t, name)
		for _, f := range []struct{ format, ext string }{{"markdown", "md"}, {"text", "txt"}, {"json", "json"}} {
			var b bytes.Buffer
			if err := WriteReview(&b, rep, in, src, f.format); err != nil {
				t.Fatal(err)
			}
			path := filepath.Join("testdata", strings.TrimSuffix(name, ".yaml")+"."+f.ext)
			if *update {
				if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
					t.Fatal(err)
				}
				continue
			}
			want, err := os.ReadFile(path)
			if err != nil {
				t.Fatalf("%v (run go test ./designs/report -update)", err)
			}
			if !bytes.Equal(b.Bytes(), want) {
				t.Errorf("%s differs from the golden file; run go test ./designs/report -update and review the diff", path)
			}
		}
	}
}

// handReport is a review written by hand, so that the layout is tested
// apart from the engine: every part filled, a tie, a pair, a sensitivity
// row that cannot be planned and a stated enrolment with what it yields.
func handReport(t *testing.T) (*review.Report, *designs.ReviewInput, ReviewSource) {
	t.Helper()
	spec := "version: 1\ntitle: Hand-written review (invented)\ndesign: trial\nfirst_group: reminder arm\nsecond_group: usual-care arm\ncontrol_risk: 0.4\nrisk_ratio: 0.75\nattrition: 0.1\nclaimed:\n  n: 250\n  enrol_total: 560\n  power: 0.8\n"
	src := ReviewSource{File: "hand.yaml", Data: []byte(spec)}
	in, err := designs.ParseReview(src.File, src.Data, nil)
	if err != nil {
		t.Fatal(err)
	}
	plan, err := designs.Plan(in.Spec)
	if err != nil {
		t.Fatal(err)
	}
	n, enrol, power, p := 250, 560, 0.8, 0.7
	yields := 500
	n1, t1, e1 := 400, 800, 890
	rep := &review.Report{
		Plan: plan, Mode: designs.ReviewN, Verdict: review.UnderPowered,
		Sentence:   "Under-powered: the protocol states 250 (hand-written figures).",
		Tolerance:  review.Tolerance{N: 0.05, Power: 0.02},
		Recomputed: &plan.Result,
		Claimed:    review.Claimed{N: &n, EnrolTotal: &enrol, Power: &power},
		Figures: []review.Figure{
			{Name: "n", Stated: 250, Recomputed: 300, Difference: -1.0 / 6, Power: &p, Judgement: "too small", Why: "hand-written reason one"},
			{Name: "enrol_total", Stated: 560, Recomputed: 668, Difference: -0.1667, Analysable: &yields, Judgement: "too small", Why: "hand-written reason two"},
		},
		ClaimedPowerActual: &p,
		DetectableEffect:   []review.Detectable{{Power: 0.8, Scale: "risk_ratio", Lower: &p}},
		Methods:            []review.MethodN{{Method: "fleiss-cc", Name: "Fleiss with continuity correction", N: []int{300, 300}, Total: 600, EnrolTotal: 668, Named: true}, {Method: "kelsey", Name: "Kelsey", N: []int{280, 280}, Total: 560, EnrolTotal: 624}},
		Diagnosis: []review.Diagnosis{
			{Slips: []string{"slip-a"}, Figure: "n", Reproduces: 251, Distance: 0.004, Tied: []string{"slip-b", "slip-c"}, Explanation: "hand-written explanation"},
			{Slips: []string{"slip-d", "slip-e"}, Figure: "n", Reproduces: 252, Distance: 0.008},
		},
		Sensitivity: []review.Sensitivity{
			{Key: "risk_ratio", Change: 0.2, From: 0.75, To: 0.8, N: &n1, Total: &t1, EnrolTotal: &e1},
			{Key: "control_risk", Change: 0.2, From: 0.4, To: 0.32, Error: "hand-written failure"},
		},
		Reporting: review.Reporting{Given: []string{"reference_value", "effect", "power", "attrition", "sample_size"}, Missing: []string{"primary_outcome", "effect_source", "alpha"},
			Guidelines: []string{"hand-written guideline item"}},
		Assumed:  []string{"hand-written convention"},
		Requests: []string{"hand-written request"},
	}
	return rep, in, src
}

// TestReviewLayout checks the order of a reviewer's letter (conclusion,
// evidence, requests, cautions) and that each part of the report reaches
// it, in Markdown and in text.
func TestReviewLayout(t *testing.T) {
	rep, in, src := handReport(t)
	for _, format := range []string{"markdown", "text"} {
		var b bytes.Buffer
		if err := WriteReview(&b, rep, in, src, format); err != nil {
			t.Fatal(err)
		}
		out := b.String()
		order := []string{"Conclusion", "The stated figures against the recomputation", "The recomputed size, method by method",
			"What the stated size achieves", "Where the difference may come from", "Which assumption carries the plan",
			"Reporting completeness", "Requests to the investigators", "Cautions"}
		at := -1
		for _, h := range order {
			i := strings.Index(out, "\n"+h+"\n")
			if format == "markdown" {
				i = strings.Index(out, "\n## "+h+"\n")
			}
			if i <= at {
				t.Errorf("%s: %q missing or out of order", format, h)
			}
			at = i
		}
		for _, want := range []string{
			"Under-powered. The protocol states 250 (hand-written figures).", // the verdict first, not said twice
			"hand-written convention", "hand-written reason one", "hand-written reason two",
			"560 (500 analysable)", "−16.7%", "70.0%",
			"slip-a", "tied with slip-b or slip-c (the same figure, 0.4% from the stated figure)", "hand-written explanation",
			"slip-d with slip-e", "gives 252 for analysable, reminder arm against 250 stated",
			"cannot be planned: hand-written failure", "890",
			"hand-written guideline item", "1. hand-written request.",
			"used for the verdict (the default: the protocol names no method)",
			"qualified statistician", "ethics committee",
			"SHA-256 ",
		} {
			if !strings.Contains(strings.ToLower(strings.Join(strings.Fields(plain(out)), " ")), strings.ToLower(want)) {
				t.Errorf("%s: no %q in\n%s", format, want, out)
			}
		}
		if strings.Count(out, "Under-powered") != 1 {
			t.Errorf("%s: the verdict is said %d times", format, strings.Count(out, "Under-powered"))
		}
		if strings.Contains(out, "\n|  |") || strings.Contains(out, "NaN") {
			t.Errorf("%s: an empty first cell or a NaN", format)
		}
		if strings.Contains(out, ") (") {
			t.Errorf("%s: a double parenthesis", format)
		}
	}
}

// TestReviewCautionsAlways: a report without cautions of its own still
// carries the tool's.
func TestReviewCautionsAlways(t *testing.T) {
	rep, in, src := handReport(t)
	rep.Cautions = nil
	var b bytes.Buffer
	if err := WriteReview(&b, rep, in, src, "text"); err != nil {
		t.Fatal(err)
	}
	for _, c := range designs.Cautions {
		if !strings.Contains(strings.Join(strings.Fields(b.String()), " "), c) {
			t.Errorf("caution %q missing", c)
		}
	}
}

// TestReviewJSONPlanFields: the JSON of a review is the recomputed plan's
// JSON, field for field as plan writes it, with the review after it.
func TestReviewJSONPlanFields(t *testing.T) {
	rep, in, src := reviewExample(t, "review-under-powered-wound-dressing.yaml")
	var b, p bytes.Buffer
	if err := WriteReview(&b, rep, in, src, "json"); err != nil {
		t.Fatal(err)
	}
	if err := Write(&p, rep.Plan, "json"); err != nil {
		t.Fatal(err)
	}
	var got, plan map[string]any
	if err := json.Unmarshal(b.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(p.Bytes(), &plan); err != nil {
		t.Fatal(err)
	}
	rv, ok := got["review"].(map[string]any)
	if !ok {
		t.Fatal("no review object")
	}
	delete(got, "review")
	// sha256sum examples/review-under-powered-wound-dressing.yaml
	if got["spec_sha256"] != "ad6518f1fb84a286158b513a85adaceb9d5ca3f227a8563d2c76b7a721e855a6" {
		t.Errorf("spec_sha256 %v", got["spec_sha256"])
	}
	delete(got, "spec_sha256")
	delete(plan, "spec_sha256")
	if !reflect.DeepEqual(got, plan) {
		t.Errorf("the plan fields differ from plan's JSON:\n%v\n%v", got, plan)
	}
	for _, k := range []string{"mode", "verdict", "sentence", "tolerance", "recomputed", "claimed", "figures", "claimed_power_actual",
		"detectable_effect", "methods", "diagnosis", "diagnosis_note", "sensitivity", "reporting", "assumed", "requests", "cautions"} {
		if _, ok := rv[k]; !ok {
			t.Errorf("review.%s missing", k)
		}
	}
	if !reflect.DeepEqual(rv["recomputed"], plan["result"]) {
		t.Error("review.recomputed is not the plan's result")
	}
}

// TestReviewNothingRecomputed: with no reference value nothing can be
// recomputed; the review still renders, and its JSON has the plan fields
// that exist and the review.
func TestReviewNothingRecomputed(t *testing.T) {
	spec := "version: 1\ntitle: No reference value (invented)\ndesign: trial\nrisk_ratio: 0.75\npower: 0.8\nclaimed:\n  n: 300\n"
	src := ReviewSource{File: "none.yaml", Data: []byte(spec), Sets: []string{"claimed.n=300"}}
	in, err := designs.ParseReview(src.File, src.Data, src.Sets)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := review.Run(in)
	if err != nil {
		t.Fatal(err)
	}
	if rep.Plan != nil {
		t.Fatal("a plan was recomputed without a reference value")
	}
	for _, format := range []string{"markdown", "text"} {
		var b bytes.Buffer
		if err := WriteReview(&b, rep, in, src, format); err != nil {
			t.Fatal(err)
		}
		for _, want := range []string{"Incomplete.", "Nothing could be recomputed", "qualified statistician", "overridden on the command line: claimed.n=300"} {
			if !strings.Contains(b.String(), want) {
				t.Errorf("%s: no %q", format, want)
			}
		}
	}
	var b bytes.Buffer
	if err := WriteReview(&b, rep, in, src, "json"); err != nil {
		t.Fatal(err)
	}
	var got map[string]any
	if err := json.Unmarshal(b.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	want := map[string]any{"tool": "enough", "version": designs.Version, "spec_file": "none.yaml",
		// printf '…' | sha256sum, of the specification above
		"spec_sha256": "8e0ea0914a903efdfa176c849e59ff03d61993cb77b81c6f4f654c1922b39acc",
		"overrides":   []any{"claimed.n=300"}, "title": "No reference value (invented)", "design": "trial", "outcome": "binary"}
	for k, v := range want {
		if !reflect.DeepEqual(got[k], v) {
			t.Errorf("%s = %v, want %v", k, got[k], v)
		}
	}
	if rv, ok := got["review"].(map[string]any); !ok || rv["verdict"] != review.Incomplete || rv["recomputed"] != nil {
		t.Errorf("review = %v", got["review"])
	}
}

func TestReviewFormatting(t *testing.T) {
	for _, c := range []struct{ got, want string }{
		{signedPct(-0.19936), "−19.9%"}, {signedPct(0.31144), "+31.1%"}, {signedPct(0.0001), "0%"},
		// One writer for the table and the sentences: 6.25% is 6.3%, and
		// 2046.6% keeps its decimal.
		{signedPct(-1.0 / 16), "−6.3%"}, {signedPct(20.466), "+2046.6%"}, {distance(2.0 / 30), "6.7%"},
		{plainNumber(1.6749999999999998), "1.675"}, {plainNumber(0.11000000000000001), "0.11"}, {plainNumber(-4.8), "−4.8"},
		{percentagePoints(0.02), "2 percentage points"}, {percentagePoints(0.01), "1 percentage point"},
		{withoutVerdict("Larger than needed: the protocol states", "Larger than needed"), "The protocol states"},
		{withoutVerdict("Under-powered: x", "Under-powered"), "X"},
		{withoutVerdict("Something else: x", "Consistent"), "Something else: x"},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

// renderReview rechecks a protocol and renders it in Markdown.
func renderReview(t *testing.T, spec string) string {
	t.Helper()
	src := ReviewSource{File: "p.yaml", Data: []byte(spec)}
	in, err := designs.ParseReview(src.File, src.Data, nil)
	if err != nil {
		t.Fatalf("%v\n%s", err, spec)
	}
	rep, err := review.Run(in)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteReview(&b, rep, in, src, "markdown"); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// TestReviewWording: the words of the letter for designs whose groups,
// effects or sizes differ from two groups compared on a ratio. Only the
// wording is checked here; the figures are the engine's, tested there.
func TestReviewWording(t *testing.T) {
	for _, c := range []struct {
		name, spec string
		want, not  []string
	}{
		{
			name: "non-inferiority margin and no detectable effect",
			spec: "version: 1\ndesign: trial\noutcome: time-to-event\nhypothesis: non-inferiority\nhigher_is_better: false\nmargin: 1.3\ncontrol_median: 30\naccrual: 18\nfollow_up: 24\ntime_unit: months\nclaimed:\n  n: 300\n  power: 0.85\n",
			want: []string{"| non-inferiority margin (`margin`) |", "- The smallest detectable effect is not computed: a non-inferiority trial is sized on its margin"},
			not:  []string{"half-width"},
		},
		{
			name: "survival at a time",
			spec: "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_survival: 0.6\ntime: 12\ntime_unit: months\naccrual: 12\nfollow_up: 12\nclaimed:\n  n: 150\n  power: 0.8\n",
			want: []string{"| survival at 12 months, control arm (`control_survival`) |"},
			not:  []string{"| survival at the time below, control arm (`control_survival`) |"},
		},
		{
			name: "a risk as the detectable effect",
			spec: "version: 1\ndesign: trial\ncontrol_risk: 0.1\nintervention_risk: 0.05\nclaimed:\n  n: 300\n  power: 0.8\n",
			want: []string{"Smallest effect detectable with 80% power: a risk of ", " in the intervention arm (below the 10% in the control arm), or of "},
			not:  []string{"below no difference"},
		},
		{
			name: "pairs",
			spec: "version: 1\ndesign: trial\noutcome: continuous\npairing: paired\nmean_difference: 2\nsd_difference: 5\nclaimed:\n  n: 40\n  power: 0.8\n",
			want: []string{"| Method | Analysable pairs | To recruit | Note |", "| Pairs needed | To recruit |"},
			not:  []string{"per group", "First group needs"},
		},
		{
			name: "three arms",
			spec: "version: 1\ndesign: trial\narms: 3\ncomparisons: each-vs-control\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nclaimed:\n  n: 450\n  power: 0.8\n",
			want: []string{"| Analysable per arm |", " in each of 3 arms |", "| Each intervention arm needs |"},
			not:  []string{"per group"},
		},
		{
			// The fixed events and the maximum are R's
			// (testdata/reference/interim_plans.out: schoenfeld_fixed,
			// schoenfeld_obf4; 337.700092387 / 330.377913964 = 1.02216).
			name: "a group-sequential trial's maximum",
			spec: "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\ninterim: {looks: 4, boundary: obrien-fleming}\nclaimed:\n  n: 400\n  power: 0.9\n",
			want: []string{"- Group-sequential: 4 analyses with efficacy boundaries by O'Brien & Fleming (1979); the recomputed size is the maximum, the fixed-sample size without interim analyses (330.38 events, unrounded) × the inflation factor 1.0222"},
		},
		{
			name: "a survey's n",
			spec: "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\nclaimed:\n  n: 300\n",
			want: []string{"| respondents (`n`) |"},
			not:  []string{"(`total`)", "tolerance_power"},
		},
		{
			name: "nothing recomputed",
			spec: "version: 1\ndesign: trial\nrisk_ratio: 0.7\nclaimed:\n  n: 300\n  power: 0.8\n",
			want: []string{"Nothing the stated size achieves could be computed: the protocol does not state the reference value"},
			not:  []string{"states no size"},
		},
		{
			name: "time to event enrolment, no loss",
			spec: "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\nclaimed:\n  enrol_total: 247\n  power: 0.8\n",
			want: []string{"| to recruit, in total (`enrol_total`) | 247 |"},
			not:  []string{"assumed loss", "247 analysable"},
		},
	} {
		t.Run(c.name, func(t *testing.T) {
			out := renderReview(t, c.spec)
			for _, w := range c.want {
				if !strings.Contains(out, w) {
					t.Errorf("no %q in\n%s", w, out)
				}
			}
			for _, w := range c.not {
				if strings.Contains(out, w) {
					t.Errorf("%q in\n%s", w, out)
				}
			}
		})
	}
}
