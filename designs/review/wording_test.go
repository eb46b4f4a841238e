package review

import (
	"fmt"
	"slices"
	"strings"
	"testing"

	"enough/designs"
)

// TestPercentOneWriter: every percentage difference of a review is written
// by one function, so the table and the sentences agree: a stated 15
// against a recomputed 16 is 6.25% fewer, written 6.3% in both; 21,466
// against 1,000 is 2046.6% more, not "2047%" in one place and "2046.6%"
// in the other. (The figures are formatting cases, not computed sizes.)
func TestPercentOneWriter(t *testing.T) {
	for _, c := range []struct {
		d                     float64
		diff, signed, relWord string
	}{
		{-1.0 / 16, "6.3%", "−6.3%", "6.3% fewer"},
		{20.466, "2046.6%", "+2046.6%", "2046.6% more"},
		{-0.19936, "19.9%", "−19.9%", "19.9% fewer"},
		{0.0001, "0%", "0%", "the same"},
		{-0.00049, "0%", "0%", "the same"},
		{0.05, "5%", "+5%", "5% more"},
	} {
		if got := DiffPercent(c.d); got != c.diff {
			t.Errorf("DiffPercent(%v) = %q, want %q", c.d, got, c.diff)
		}
		if got := SignedPercent(c.d); got != c.signed {
			t.Errorf("SignedPercent(%v) = %q, want %q", c.d, got, c.signed)
		}
		if got := signedPct(c.d); got != c.relWord {
			t.Errorf("signedPct(%v) = %q, want %q", c.d, got, c.relWord)
		}
	}
	// The judgement's sentence and the figure's difference, as a table
	// writes it, give the same digits.
	rc := &recheck{c: designs.Claimed{ToleranceN: 0.05, TolerancePower: 0.02}, spec: &designs.Spec{Power: 0.8}}
	for _, c := range []struct{ stated, rec int }{{15, 16}, {21466, 1000}} {
		f := Figure{Name: "n", Stated: c.stated, Recomputed: c.rec, Difference: float64(c.stated-c.rec) / float64(c.rec)}
		rc.judge(&f)
		digits := strings.TrimLeft(SignedPercent(f.Difference), "−+")
		if !strings.Contains(f.Why, "("+digits+" ") {
			t.Errorf("%d against %d: the table's %s is not the sentence's: %q", c.stated, c.rec, SignedPercent(f.Difference), f.Why)
		}
	}
}

// TestOneBasisEach: the conclusion words Figure.Difference as relative to
// the recomputed figure ("the stated figure is … below it"), and the
// diagnosis gives the recomputed figure's gap in participants, not as a
// second percentage on the stated figure's basis.
func TestOneBasisEach(t *testing.T) {
	// make.R base_n: 389 recomputed; 300 stated is (300 − 389)/389 =
	// −22.88%, "22.9% below it".
	rep := review(t, baseTrial+"claimed:\n  n: 300\n  power: 0.8\n")
	want := fmt.Sprintf("its own assumptions need %d: the stated figure is 22.9%% below it", refInt(t, "base_n"))
	if !strings.Contains(rep.Sentence, want) {
		t.Errorf("sentence %q lacks %q", rep.Sentence, want)
	}
	// make.R one_sided_alpha_n 289 stated, fleiss_n 367 recomputed: the
	// recomputed figure is 367 − 289 = 78 away.
	n := refInt(t, "one_sided_alpha_n")
	rep = review(t, fleissTrial+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.8\n", n))
	if len(rep.Diagnosis) == 0 {
		t.Fatalf("no diagnosis: %s", rep.DiagnosisNote)
	}
	e := rep.Diagnosis[0].Explanation
	want = fmt.Sprintf("the recomputed %d is %d away.", refInt(t, "fleiss_n"), refInt(t, "fleiss_n")-n)
	if !strings.Contains(e, want) {
		t.Errorf("explanation %q lacks %q", e, want)
	}
	if _, after, _ := strings.Cut(e, "the recomputed"); strings.Contains(after, "%") {
		t.Errorf("the recomputed figure's gap is a percentage: %q", e)
	}
}

// TestWordingOfTheVerdict: what a sentence says when there is no stated
// size, no loss, or several arms.
func TestWordingOfTheVerdict(t *testing.T) {
	for _, c := range []struct {
		name, spec string
		want, not  []string
	}{
		{
			name: "no size stated",
			spec: baseTrial + "claimed:\n  power: 0.8\n",
			want: []string{"does not state the sample size, so there is no stated size to judge"},
			not:  []string{"cannot be judged"},
		},
		{
			// make.R events_as_participants_total (247, stated as the
			// enrolment) and events_correct_total (430): no dropout, so no
			// loss between the enrolment and the analysis.
			name: "time to event, no loss",
			spec: fmt.Sprintf("version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\nclaimed:\n  enrol_total: %d\n  power: 0.8\n", refInt(t, "events_as_participants_total")),
			want: []string{fmt.Sprintf("states %d enrolled, but its own assumptions need %d: the stated figure is", refInt(t, "events_as_participants_total"), refInt(t, "events_correct_total"))},
			not:  []string{"assumed loss"},
		},
		{
			// make.R multiplicity_correct_n: 467 in each of the 3 arms.
			name: "three arms, no size stated",
			spec: "version: 1\ndesign: trial\narms: 3\ncomparisons: each-vs-control\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nclaimed:\n  power: 0.8\n",
			want: []string{fmt.Sprintf("%d analysable in each of 3 arms", refInt(t, "multiplicity_correct_n"))},
			not:  []string{" and 467"},
		},
	} {
		t.Run(c.name, func(t *testing.T) {
			rep := review(t, c.spec)
			all := rep.Sentence + " " + strings.Join(rep.Requests, " ")
			for _, w := range c.want {
				if !strings.Contains(rep.Sentence, w) {
					t.Errorf("sentence %q lacks %q", rep.Sentence, w)
				}
			}
			for _, w := range c.not {
				if strings.Contains(all, w) {
					t.Errorf("%q in %q", w, all)
				}
			}
		})
	}
}

// TestDetectableNote: where no detectable effect is computed, the report
// says why in one sentence, and detectable_effect stays an empty array.
func TestDetectableNote(t *testing.T) {
	for _, c := range []struct{ name, spec, want string }{
		{"non-inferiority", "version: 1\ndesign: trial\noutcome: time-to-event\nhypothesis: non-inferiority\nhigher_is_better: false\nmargin: 1.3\ncontrol_median: 30\naccrual: 18\nfollow_up: 24\nclaimed:\n  n: 300\n  power: 0.85\n", "a non-inferiority trial is sized on its margin"},
		{"equivalence", "version: 1\ndesign: trial\noutcome: continuous\nhypothesis: equivalence\nmargin: 5\nsd: 10\nclaimed:\n  n: 80\n  power: 0.8\n", "an equivalence trial is sized on its margin"},
		{"events only", "version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\nclaimed:\n  events: 200\n  power: 0.8\n", "the protocol states only the events"},
		{"no reference value", "version: 1\ndesign: trial\nrisk_ratio: 0.7\nclaimed:\n  n: 300\n  power: 0.8\n", "does not state the reference value"},
		{"no size", baseTrial + "claimed:\n  power: 0.8\n", "the protocol states no size"},
	} {
		t.Run(c.name, func(t *testing.T) {
			rep := review(t, c.spec)
			if rep.DetectableEffect == nil || len(rep.DetectableEffect) != 0 {
				t.Errorf("detectable %+v; want an empty array", rep.DetectableEffect)
			}
			if !strings.Contains(rep.DetectableNote, c.want) || !strings.HasSuffix(rep.DetectableNote, ".") {
				t.Errorf("note %q lacks %q", rep.DetectableNote, c.want)
			}
		})
	}
	if rep := review(t, baseTrial+"claimed:\n  n: 300\n  power: 0.8\n"); rep.DetectableNote != "" || len(rep.DetectableEffect) == 0 {
		t.Errorf("a superiority trial: detectable %+v, note %q", rep.DetectableEffect, rep.DetectableNote)
	}
}

// TestLossWords: a case-control study follows no one up: its requests ask
// about non-participation or unusable records; a survey's, about
// non-response.
func TestLossWords(t *testing.T) {
	for _, c := range []struct{ spec, want string }{
		{"version: 1\ndesign: case-control\ncontrol_exposure: 0.3\nodds_ratio: 2\nclaimed:\n  n: 150\n  power: 0.8\n", "non-participation or unusable records"},
		{"version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\nclaimed:\n  total: 300\n", "non-response"},
		{baseTrial + "claimed:\n  n: 389\n  power: 0.8\n", ""},
	} {
		rep := review(t, strings.Replace(c.spec, "attrition: 0.1\n", "", 1))
		i := slices.IndexFunc(rep.Requests, func(r string) bool { return strings.HasPrefix(r, "State the expected ") })
		if i < 0 {
			t.Fatalf("no request about the losses: %q", rep.Requests)
		}
		r := rep.Requests[i]
		switch {
		case c.want == "" && !strings.Contains(r, "loss to follow-up"):
			t.Errorf("a trial's request %q", r)
		case c.want != "" && (!strings.Contains(r, c.want) || strings.Contains(r, "follow-up")):
			t.Errorf("request %q; want %q and no follow-up", r, c.want)
		}
	}
	// The slip's own wording follows the design too.
	in, err := designs.ParseReview("p.yaml", []byte("version: 1\ndesign: case-control\ncontrol_exposure: 0.3\nodds_ratio: 2\nattrition: 0.2\nclaimed:\n  n: 150\n  power: 0.8\n"), nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, id := range []string{"attrition-ignored", "attrition-multiplied"} {
		s := SlipByID(id)
		if got := s.RequestFor(in) + " " + s.SaysFor(in); strings.Contains(got, "follow-up") || strings.Contains(got, "{loss}") {
			t.Errorf("%s for a case-control study: %q", id, got)
		}
	}
}
