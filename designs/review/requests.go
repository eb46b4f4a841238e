package review

import (
	"fmt"
	"slices"
	"strings"

	"enough/designs"
)

// Guideline items that ask for the justification of a sample size.
var (
	// TrialGuidelines serve randomised trials: CONSORT 2010 (Schulz KF,
	// Altman DG, Moher D, BMJ 2010;340:c332) item 7a, SPIRIT 2013 (Chan
	// AW et al., Ann Intern Med 2013;158:200-207) item 14, and their 2025
	// updates, CONSORT 2025 (Hopewell S et al., BMJ 2025;389:e081123)
	// item 16a and SPIRIT 2025 (Chan AW et al., BMJ 2025;389:e081477)
	// item 19, each "how sample size was determined, including all
	// assumptions supporting the sample size calculation" (item numbers
	// as the published checklists and www.consort-spirit.org give them).
	TrialGuidelines = []string{"CONSORT 2010 item 7a", "SPIRIT 2013 item 14", "CONSORT 2025 item 16a", "SPIRIT 2025 item 19"}
	// ObservationalGuidelines serve cohort, case-control and
	// cross-sectional studies: STROBE (von Elm E et al., Lancet
	// 2007;370:1453-1457) item 10, "explain how the study size was
	// arrived at".
	ObservationalGuidelines = []string{"STROBE item 10"}
)

// elementNames words the reporting elements in a sentence.
var elementNames = map[string]string{
	"primary_outcome": "the primary outcome",
	"reference_value": "the reference value (the control or unexposed risk, mean or standard deviation)",
	"effect":          "the effect to detect",
	"effect_source":   "the source of the effect",
	"alpha":           "the significance level",
	"sides":           "the sides of the test",
	"power":           "the power",
	"method":          "the method",
	"allocation":      "the allocation ratio",
	"attrition":       "the expected loss to follow-up",
	"design_effect":   "the design effect",
	"sample_size":     "the sample size",
}

// elementRequests are the requests for a missing element: what the
// investigators should clarify.
var elementRequests = map[string]string{
	"primary_outcome": "Name the primary outcome on which the sample size is based, with how and when it is measured.",
	"reference_value": "State the value expected in the reference group (the control or unexposed risk, mean or standard deviation) and where it comes from.",
	"effect":          "State the effect the study is sized to detect, on a named scale (a risk ratio, a difference in risks or in means, a hazard ratio), and why it matters.",
	"effect_source":   "Give the source of the assumed effect: a pilot study, a published study or review, or the smallest difference judged worth detecting and by whom.",
	"alpha":           "State the significance level the sample size was computed for.",
	"sides":           "State whether the planned test is one- or two-sided, and justify a one-sided test.",
	"power":           "State the power the sample size is meant to give.",
	"method":          "Name the formula, method or software procedure that gave the sample size, with its reference.",
	"allocation":      "State the allocation ratio between the groups.",
	"attrition":       "State the expected {loss} and how the enrolment target allows for it.",
	"design_effect":   "State the intracluster correlation and the mean cluster size (or the design effect) used to inflate the sample size, and where they come from.",
	"sample_size":     "State the number of participants needed for the analysis in each group and the number to be enrolled.",
}

// reporting lists the elements given and missing with the guideline
// items they serve.
func reporting(in *designs.ReviewInput) Reporting {
	r := Reporting{Given: append([]string{}, in.Given...), Missing: append([]string{}, in.Missing...)}
	design := ""
	if v, ok := in.Value("design"); ok {
		design = v
	}
	if design == "trial" {
		r.Guidelines = slices.Clone(TrialGuidelines)
	} else {
		r.Guidelines = slices.Clone(ObservationalGuidelines)
	}
	return r
}

// requests lists what the investigators should clarify: one line per
// missing element, per diagnosed slip, and per inconsistent stated figure
// that no slip reproduces.
func requests(rc *recheck) []string {
	out := []string{}
	for _, id := range rc.in.Missing {
		line := strings.ReplaceAll(elementRequests[id], "{loss}", lossWords(rc.in))
		if a := assumedFor(rc.in, id); a != "" {
			line = strings.TrimSuffix(line, ".") + "; the recheck assumed " + a + "."
		}
		out = append(out, line)
	}
	seen := map[string]bool{}
	for _, d := range rc.rep.Diagnosis {
		ids := slices.Clone(d.Slips)
		for _, t := range d.Tied {
			ids = append(ids, strings.Split(t, " + ")...)
		}
		for _, id := range ids {
			if seen[id] {
				continue
			}
			seen[id] = true
			if s := SlipByID(id); s != nil {
				out = append(out, s.RequestFor(rc.in))
			}
		}
	}
	if rc.rep.Verdict == UnderPowered || rc.rep.Verdict == LargerThanNeeded {
		// A figure no slip explains: ask how it was obtained.
		for _, f := range rc.rep.Figures {
			if f.Judgement == "consistent" || rc.explained[f.Name] {
				continue
			}
			line := fmt.Sprintf("Explain how the stated figure, %s, was obtained: under the protocol's own assumptions the recheck gives %s.", rc.phrase(f.Name, f.Stated), count(f.Recomputed))
			if rc.lossApplied(&f) {
				line = fmt.Sprintf("Explain how the enrolment of %s was obtained: after the assumed loss it leaves %s analysable, where the protocol's own assumptions need %s.", count(f.Stated), count(*f.Analysable), count(rc.rec.v["total"]))
			}
			out = append(out, line)
		}
	}
	return out
}

// assumedFor is the convention the recheck assumed for a missing element,
// as ParseReview words it ("" when none).
func assumedFor(in *designs.ReviewInput, id string) string {
	word := map[string]string{"alpha": "alpha", "sides": "-sided", "allocation": "1:1"}[id]
	if word == "" {
		return ""
	}
	for _, a := range in.Assumed {
		if strings.Contains(a, word) {
			if i := strings.Index(a, " (the usual convention"); i > 0 {
				a = a[:i]
			}
			return a
		}
	}
	return ""
}

// cautions are the cautions of every plan and the recheck's own.
func cautions() []string {
	out := slices.Clone(designs.Cautions)
	return append(out, "This recheck is itself a planning aid: it recomputes the stated figures from the assumptions the protocol states and cannot tell whether those assumptions are realistic; the committee decides.")
}
