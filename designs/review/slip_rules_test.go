package review

import (
	"fmt"
	"slices"
	"strings"
	"testing"

	"enough/designs"
)

// One test per slip: an invented protocol commits the slip on purpose,
// stating the figure make.R computes from the published formula with the
// slip (testdata/reference/review_engine); the recheck must not find it
// consistent, and must diagnose the slip among the first three, reproducing
// the stated figure.

// expectSlip checks that the slip reproduces the stated figure among the
// first three diagnoses, and returns the report.
func expectSlip(t *testing.T, spec, id, name string, stated int) *Report {
	t.Helper()
	rep := review(t, spec)
	if rep.Verdict == Consistent || rep.Verdict == Incomplete {
		t.Fatalf("verdict %q: %s", rep.Verdict, rep.Sentence)
	}
	for i, d := range rep.Diagnosis {
		if i == 3 {
			break
		}
		if (slices.Contains(d.Slips, id) && len(d.Slips) == 1) || slices.Contains(d.Tied, id) {
			if d.Figure != name || d.Reproduces != stated || d.Explanation == "" {
				t.Errorf("%s reproduces %s %d; want %s %d (%s)", id, d.Figure, d.Reproduces, name, stated, d.Explanation)
			}
			in, err := designs.ParseReview("p.yaml", []byte(spec), nil)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Contains(rep.Requests, SlipByID(id).RequestFor(in)) {
				t.Errorf("no request for %s: %q", id, rep.Requests)
			}
			return rep
		}
	}
	t.Fatalf("%s not among the first three diagnoses: %s; %+v (%s)", id, rep.Sentence, rep.Diagnosis, rep.DiagnosisNote)
	return rep
}

// fleissTrial is an invented binary trial: control risk 0.30, risk ratio
// 0.7 (first risk 0.21), method fleiss.
const fleissTrial = "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nmethod: fleiss\n"

func TestSlipOneSidedAlpha(t *testing.T) {
	// make.R one_sided_alpha_n: ⌈Fleiss n' with qnorm(0.95)⌉ = 289 =
	// ⌈power.prop.test(p1=0.21, p2=0.3, power=0.8, alternative="one.sided")$n⌉.
	n := refInt(t, "one_sided_alpha_n")
	expectSlip(t, fleissTrial+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.8\n  sides: 2\n", n), "one-sided-alpha", "n", n)
}

func TestSlipPerGroupAsTotal(t *testing.T) {
	// make.R per_group_as_total_total: the per-group ⌈Fleiss n'⌉ = 367.
	n := refInt(t, "per_group_as_total_total")
	expectSlip(t, fleissTrial+fmt.Sprintf("claimed:\n  total: %d\n  power: 0.8\n", n), "per-group-as-total", "total", n)
}

func TestSlipTotalAsPerGroup(t *testing.T) {
	// make.R total_as_per_group_n: 2 × ⌈Fleiss n'⌉ = 734.
	n := refInt(t, "total_as_per_group_n")
	expectSlip(t, fleissTrial+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.8\n", n), "total-as-per-group", "n", n)
}

func TestSlipAttritionIgnored(t *testing.T) {
	// make.R attrition_ignored_enrol_total: 2 × 367 = 734 enrolled for 20%
	// loss; the correct enrolment is 2 × ⌈367 / 0.8⌉ = 918.
	n, e := refInt(t, "fleiss_n"), refInt(t, "attrition_ignored_enrol_total")
	rep := expectSlip(t, fleissTrial+fmt.Sprintf("attrition: 0.2\nclaimed:\n  n: %d\n  enrol_total: %d\n  power: 0.8\n", n, e), "attrition-ignored", "enrol_total", e)
	if f := figure(rep, "enrol_total"); f.Recomputed != refInt(t, "attrition_correct_enrol_total") || figure(rep, "n").Judgement != "consistent" {
		t.Errorf("figures %+v", rep.Figures)
	}
}

func TestSlipAttritionMultiplied(t *testing.T) {
	// make.R attrition_multiplied_enrol_total: 2 × ⌈367 × 1.3⌉ = 956 for
	// 30% loss, which leaves 2 × ⌊478 × 0.7⌋ = 668 analysable of 734. (At
	// 20% loss the slip costs 4%, within the tolerance.)
	n, e := refInt(t, "fleiss_n"), refInt(t, "attrition_multiplied_enrol_total")
	expectSlip(t, fleissTrial+fmt.Sprintf("attrition: 0.3\nclaimed:\n  n: %d\n  enrol_total: %d\n  power: 0.8\n", n, e), "attrition-multiplied", "enrol_total", e)
}

func TestSlipContinuityOmitted(t *testing.T) {
	// The default fleiss-cc planned; make.R continuity_omitted_n: Fleiss
	// without correction, 367 (the corrected figure is 389).
	n := refInt(t, "continuity_omitted_n")
	expectSlip(t, "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\n"+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.8\n", n), "continuity-omitted", "n", n)
}

func TestSlipContinuityAdded(t *testing.T) {
	// fleiss named; make.R continuity_added_n: Fleiss-Tytun-Ury 389.
	n := refInt(t, "continuity_added_n")
	expectSlip(t, fleissTrial+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.8\n", n), "continuity-added", "n", n)
}

func TestSlipOddsRatioAsRiskRatio(t *testing.T) {
	// Cohort, unexposed risk 0.2, odds ratio 2; make.R or_as_rr_n: the
	// exposed risk taken as 2 × 0.2 = 0.4: ⌈power.prop.test(p1=0.4,
	// p2=0.2, power=0.8)$n⌉ = 82 (the correct 1/3 gives 172).
	n := refInt(t, "or_as_rr_n")
	rep := expectSlip(t, fmt.Sprintf("version: 1\ndesign: cohort\nunexposed_risk: 0.2\nodds_ratio: 2\nmethod: fleiss\nsources:\n  odds_ratio: a meta-analysis (invented)\nclaimed:\n  n: %d\n  power: 0.8\n", n), "odds-ratio-as-risk-ratio", "n", n)
	if f := figure(rep, "n"); f.Recomputed != refInt(t, "or_correct_n") {
		t.Errorf("recomputed %d; want %d (or_correct_n)", f.Recomputed, refInt(t, "or_correct_n"))
	}
}

func TestSlipDesignEffectIgnored(t *testing.T) {
	// design_effect 2 planned; make.R design_effect_ignored_n: 367 without
	// it (design_effect_correct_n: ⌈366.x × 2⌉ = 734).
	n := refInt(t, "design_effect_ignored_n")
	rep := expectSlip(t, fleissTrial+fmt.Sprintf("design_effect: 2\nclaimed:\n  n: %d\n  power: 0.8\n", n), "design-effect-ignored", "n", n)
	if f := figure(rep, "n"); f.Recomputed != refInt(t, "design_effect_correct_n") {
		t.Errorf("recomputed %d; want %d", f.Recomputed, refInt(t, "design_effect_correct_n"))
	}
	// A cluster trial stated at the individual-level t answer, make.R
	// design_effect_ignored_cluster_n: ⌈power.t.test(delta=5, sd=12)$n⌉ = 92.
	n = refInt(t, "design_effect_ignored_cluster_n")
	expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 5\nsd: 12\ncluster: {size: 20, icc: 0.05}\nsources:\n  cluster.icc: a previous trial in the same clinics (invented)\nclaimed:\n  n: %d\n  power: 0.8\n", n), "design-effect-ignored", "n", n)
	// The same cluster trial stating also the clusters that slip fills,
	// make.R design_effect_ignored_clusters: ⌈92 / 20⌉ = 5 clusters per
	// arm, explained by the same slip (no pair, no request to explain
	// them), whose request does not ask for the clustering the protocol
	// states.
	k := refInt(t, "design_effect_ignored_clusters")
	rep = expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 5\nsd: 12\ncluster: {size: 20, icc: 0.05}\nsources:\n  cluster.icc: a previous trial in the same clinics (invented)\nclaimed:\n  n: %d\n  clusters: %d\n  power: 0.8\n", n, k), "design-effect-ignored", "n", n)
	if !strings.Contains(rep.Diagnosis[0].Explanation, fmt.Sprintf("also reproduces the stated %d clusters per arm", k)) {
		t.Errorf("the clusters are not explained: %+v", rep.Diagnosis)
	}
	for _, d := range rep.Diagnosis {
		if len(d.Slips) > 1 {
			t.Errorf("a pair tried although one slip explains every figure: %+v", d)
		}
	}
	for _, r := range rep.Requests {
		if strings.Contains(r, "state the intracluster correlation") || strings.HasPrefix(r, "Explain how") {
			t.Errorf("the clustering is stated and the clusters explained, yet the request %q", r)
		}
	}
	// A survey without its design effect, make.R
	// survey_design_effect_ignored_total: ⌈1.96² × 0.21 / 0.05²⌉ = 323.
	n = refInt(t, "survey_design_effect_ignored_total")
	expectSlip(t, fmt.Sprintf("version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\ndesign_effect: 1.5\nclaimed:\n  total: %d\n", n), "design-effect-ignored", "total", n)
}

func TestSlipPower90As80(t *testing.T) {
	// 80% stated; make.R power_90_as_80_n: ⌈power.prop.test(p1=0.21,
	// p2=0.3, power=0.9)$n⌉ = 491.
	n := refInt(t, "power_90_as_80_n")
	expectSlip(t, fleissTrial+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.8\n", n), "power-90-as-80", "n", n)
}

func TestSlipPower80As90(t *testing.T) {
	// 90% stated; make.R power_80_as_90_n: the 80% figure, 367.
	n := refInt(t, "power_80_as_90_n")
	expectSlip(t, fleissTrial+fmt.Sprintf("claimed:\n  n: %d\n  power: 0.9\n", n), "power-80-as-90", "n", n)
}

func TestSlipNormalInsteadOfT(t *testing.T) {
	// Difference 15, SD 10, method t; make.R normal_instead_of_t_n:
	// ⌈2 (z_α + z_β)² 10²/15²⌉ = 7, where power.t.test needs 9 (t_n_15_10)
	// and gives 73.1% at 7 (t_power_at_7_15_10).
	n := refInt(t, "normal_instead_of_t_n")
	rep := expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 15\nsd: 10\nmethod: t\nclaimed:\n  n: %d\n  power: 0.8\n", n), "normal-instead-of-t", "n", n)
	f := figure(rep, "n")
	if f.Recomputed != refInt(t, "t_n_15_10") || f.Power == nil || *f.Power-ref(t, "t_power_at_7_15_10") > 1e-6 || ref(t, "t_power_at_7_15_10")-*f.Power > 1e-6 {
		t.Errorf("figure %+v; want recomputed %d, power %v", f, refInt(t, "t_n_15_10"), ref(t, "t_power_at_7_15_10"))
	}
}

func TestSlipRatioIgnored(t *testing.T) {
	// Ratio 2 planned; make.R ratio_ignored_n: the 1:1 figure 367, where
	// the 1:2 plan needs 280 in the first group (ratio_correct_n).
	n := refInt(t, "ratio_ignored_n")
	rep := expectSlip(t, fleissTrial+fmt.Sprintf("ratio: 2\nclaimed:\n  n: %d\n  power: 0.8\n", n), "ratio-ignored", "n", n)
	if rep.Verdict != LargerThanNeeded || figure(rep, "n").Recomputed != refInt(t, "ratio_correct_n") {
		t.Errorf("verdict %q, figures %+v", rep.Verdict, rep.Figures)
	}
}

func TestSlipVarianceNotDoubled(t *testing.T) {
	// Difference 5, SD 12, method t; make.R variance_not_doubled_n:
	// ⌈(z_α + z_β)² 12²/5²⌉ = 46.
	n := refInt(t, "variance_not_doubled_n")
	expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 5\nsd: 12\nclaimed:\n  n: %d\n  power: 0.8\n", n), "variance-not-doubled", "n", n)
}

func TestSlipRelativeAsAbsolute(t *testing.T) {
	// Control risk 0.4, risk ratio 0.75; make.R relative_as_absolute_n:
	// first risk 0.4 − 0.25 = 0.15, ⌈power.prop.test(p1=0.15, p2=0.4)$n⌉ = 49.
	n := refInt(t, "relative_as_absolute_n")
	expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\ncontrol_risk: 0.4\nrisk_ratio: 0.75\nmethod: fleiss\nclaimed:\n  n: %d\n  power: 0.8\n", n), "relative-as-absolute", "n", n)
}

func TestSlipAbsoluteAsRelative(t *testing.T) {
	// Control risk 0.4, risk difference −0.1; make.R absolute_as_relative_n:
	// first risk 0.4 × 0.9 = 0.36, ⌈power.prop.test(p1=0.36, p2=0.4)$n⌉ = 2311.
	n := refInt(t, "absolute_as_relative_n")
	expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\ncontrol_risk: 0.4\nrisk_difference: -0.1\nmethod: fleiss\nclaimed:\n  n: %d\n  power: 0.8\n", n), "absolute-as-relative", "n", n)
}

func TestSlipEventsAsParticipants(t *testing.T) {
	// Hazard ratio 0.7, control median 12, accrual 12, follow-up 12;
	// make.R events_as_participants_total: Schoenfeld's ⌈D⌉ = 247 stated
	// as the participants, where 430 are needed (events_correct_total).
	d := refInt(t, "events_as_participants_total")
	rep := expectSlip(t, fmt.Sprintf("version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_median: 12\naccrual: 12\nfollow_up: 12\nclaimed:\n  events: %d\n  total: %d\n  power: 0.8\n", d, d), "events-as-participants", "total", d)
	if figure(rep, "events").Judgement != "consistent" || figure(rep, "total").Recomputed != refInt(t, "events_correct_total") {
		t.Errorf("figures %+v", rep.Figures)
	}
}

// TestSlipMultiplicityIgnored: a trial of three arms, each against the
// control, whose n sizes each comparison at the stated alpha 0.05 (make.R
// multiplicity_ignored_n, 389) where the plan divides it between the two
// comparisons (multiplicity_correct_n, 467 at 0.025). A one-sided 0.05
// divided by two gives the same z (multiplicity_one_sided_n, 389): the two
// slips are listed together, as tied, and never as a pair.
func TestSlipMultiplicityIgnored(t *testing.T) {
	n := refInt(t, "multiplicity_ignored_n")
	if refInt(t, "multiplicity_one_sided_n") != n {
		t.Fatal("the fixture no longer ties")
	}
	spec := fmt.Sprintf("version: 1\ndesign: trial\narms: 3\ncomparisons: each-vs-control\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nclaimed:\n  n: %d\n  power: 0.8\n  alpha: 0.05\n  sides: 2\n", n)
	rep := expectSlip(t, spec, "multiplicity-ignored", "n", n)
	if f := figure(rep, "n"); f.Recomputed != refInt(t, "multiplicity_correct_n") {
		t.Errorf("recomputed %d; want %d (multiplicity_correct_n)", f.Recomputed, refInt(t, "multiplicity_correct_n"))
	}
	var tied bool
	for _, d := range rep.Diagnosis {
		ids := append(slices.Clone(d.Slips), d.Tied...)
		if slices.Contains(ids, "one-sided-alpha") && slices.Contains(ids, "multiplicity-ignored") {
			tied = len(d.Slips) == 1 && d.Reproduces == n
		}
		for _, tie := range d.Tied {
			if strings.Contains(tie, " + ") && strings.Contains(tie, "one-sided-alpha") && strings.Contains(tie, "multiplicity-ignored") {
				t.Errorf("paired: %+v", d)
			}
		}
	}
	if !tied {
		t.Errorf("one-sided-alpha and multiplicity-ignored are not listed as tied: %+v", rep.Diagnosis)
	}
	// Two arms: one comparison, the slip does not apply.
	two := review(t, fleissTrial+"claimed:\n  n: 300\n  power: 0.8\n")
	for _, d := range two.Diagnosis {
		if slices.Contains(d.Slips, "multiplicity-ignored") || slices.Contains(d.Tied, "multiplicity-ignored") {
			t.Errorf("multiplicity-ignored diagnosed with two arms: %+v", d)
		}
	}
}

// TestSlipPair: no single slip gives 289 as a total; a one-sided alpha
// with the per-group figure reported as the total does (make.R
// pair_one_sided_per_group_total).
func TestSlipPair(t *testing.T) {
	n := refInt(t, "pair_one_sided_per_group_total")
	rep := review(t, fleissTrial+fmt.Sprintf("claimed:\n  total: %d\n  power: 0.8\n", n))
	if len(rep.Diagnosis) == 0 {
		t.Fatalf("no diagnosis: %s", rep.DiagnosisNote)
	}
	d := rep.Diagnosis[0]
	if !slices.Equal(d.Slips, []string{"one-sided-alpha", "per-group-as-total"}) || d.Reproduces != n || d.Figure != "total" {
		t.Errorf("diagnosis %+v", rep.Diagnosis)
	}
	for _, d := range rep.Diagnosis {
		if len(d.Slips) != 2 {
			t.Errorf("a single slip listed among the pairs: %+v", d)
		}
	}
}

// TestSlipTies: with a difference of 5 and an SD of 12, the per-group t
// answer reported as the total (92, make.R t_n_5_12) and the one-sample
// formula (46 a group, 92 in all, variance_not_doubled_n) give the same
// figure: both are listed together, in one entry, the second as tied.
func TestSlipTies(t *testing.T) {
	n := refInt(t, "t_n_5_12")
	if 2*refInt(t, "variance_not_doubled_n") != n {
		t.Fatal("the fixture no longer ties")
	}
	rep := review(t, fmt.Sprintf("version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 5\nsd: 12\nclaimed:\n  total: %d\n  power: 0.8\n", n))
	got := map[string][]string{}
	for _, d := range rep.Diagnosis {
		if d.Reproduces == n {
			got[strings.Join(d.Slips, "+")] = d.Tied
		}
	}
	if len(got) != 1 || !(slices.Contains(got["per-group-as-total"], "variance-not-doubled") || slices.Contains(got["variance-not-doubled"], "per-group-as-total")) {
		t.Errorf("ties %v in %+v", got, rep.Diagnosis)
	}
}

// TestNoSlip: a figure no slip reproduces is reported as such.
func TestNoSlip(t *testing.T) {
	rep := review(t, baseTrial+"claimed:\n  n: 250\n  power: 0.8\n")
	if rep.Verdict != UnderPowered || len(rep.Diagnosis) != 0 || !strings.HasPrefix(rep.DiagnosisNote, "No common slip, alone or in pairs, reproduces") {
		t.Errorf("verdict %q, diagnosis %+v, note %q", rep.Verdict, rep.Diagnosis, rep.DiagnosisNote)
	}
}

// TestSlipList: the list holds the ids, each once, documented,
// with opposites in one conflict group.
func TestSlipList(t *testing.T) {
	want := []string{"one-sided-alpha", "per-group-as-total", "total-as-per-group", "attrition-ignored", "attrition-multiplied",
		"continuity-omitted", "continuity-added", "odds-ratio-as-risk-ratio", "design-effect-ignored", "power-90-as-80",
		"power-80-as-90", "normal-instead-of-t", "ratio-ignored", "variance-not-doubled", "relative-as-absolute",
		"absolute-as-relative", "events-as-participants", "multiplicity-ignored", "adjustment-ignored", "interim-ignored", "overdispersion-ignored",
		"correlation-ignored"}
	var got []string
	for _, s := range Slips {
		got = append(got, s.ID)
		if s.Says == "" || s.Request == "" || s.Group == "" || s.Edits == nil {
			t.Errorf("%s is not complete", s.ID)
		}
	}
	if !slices.Equal(got, want) {
		t.Errorf("slips %q; want %q", got, want)
	}
	for _, pair := range [][2]string{{"continuity-omitted", "continuity-added"}, {"power-90-as-80", "power-80-as-90"},
		{"attrition-ignored", "attrition-multiplied"}, {"per-group-as-total", "total-as-per-group"},
		{"relative-as-absolute", "absolute-as-relative"}, {"one-sided-alpha", "multiplicity-ignored"}} {
		if SlipByID(pair[0]).Group != SlipByID(pair[1]).Group {
			t.Errorf("%s and %s can be combined", pair[0], pair[1])
		}
	}
}
