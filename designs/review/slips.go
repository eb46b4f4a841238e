package review

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"enough/designs"
)

// Slip is one common slip in a sample-size calculation: a rule that turns
// the correct plan into the figure a protocol would state had it made the
// slip. A slip commits itself either by editing the protocol's
// specification (Edits: the plan is recomputed on the variant), or by
// reading the figures of a plan the wrong way (Read), or both.
//
// To add a slip, add one entry to Slips and one test that builds a
// protocol committing it on purpose, the stated figure computed outside
// the project.
type Slip struct {
	// ID is the slip's fixed id (issue 10, item 5).
	ID string
	// Says names the slip in a sentence: "a one-sided alpha where the plan
	// is two-sided". "{loss}" in it, and in Request, stands for the losses
	// of the design (Protocol.lossWords).
	Says string
	// Group is the conflict group: two slips of one group are opposites,
	// or act on the same figure or key, and are never combined in a pair.
	Group string
	// Request is what the investigators should clarify when the slip is
	// diagnosed.
	Request string
	// Edits returns the edits to the protocol's specification that commit
	// the slip (nil when it only reads the figures differently), and
	// whether the slip applies to the protocol at all.
	Edits func(p *Protocol) ([]designs.Edit, bool)
	// Read, when set, changes the figures read off the (slipped) plan;
	// Stage orders the reads of a pair (losses before totals).
	Read  func(p *Protocol, f figs) figs
	Stage int
}

// SaysFor names the slip in the words of the protocol's design.
func (s *Slip) SaysFor(in *designs.ReviewInput) string {
	return strings.ReplaceAll(s.Says, "{loss}", lossWords(in))
}

// RequestFor is the slip's request in the words of the protocol's design.
func (s *Slip) RequestFor(in *designs.ReviewInput) string {
	return strings.ReplaceAll(s.Request, "{loss}", lossWords(in))
}

// lossWords names the losses an enrolment allows for, in the words of the
// design: non-participation or unusable records for a case-control study
// (which follows no one up), non-response for a survey, loss to follow-up
// otherwise.
func lossWords(in *designs.ReviewInput) string {
	v, _ := in.Value("design")
	switch v {
	case "case-control":
		return "non-participation or unusable records"
	case "cross-sectional":
		return "non-response"
	}
	return "loss to follow-up"
}

// Protocol is what a slip may look at: the protocol's review input and
// its specification as rechecked.
type Protocol struct {
	In   *designs.ReviewInput
	Spec *designs.Spec
}

// value reads a key of the specification as a number.
func (p *Protocol) value(key string) (float64, bool) {
	v, ok := p.In.Value(key)
	if !ok {
		return 0, false
	}
	x, err := strconv.ParseFloat(v, 64)
	return x, err == nil
}

// twoGroups tells whether the plan has two groups of its own (not a
// precision survey or a paired design).
func (p *Protocol) twoGroups() bool {
	return p.Spec.Goal != "precision" && !p.Spec.OneGroup()
}

// superiority tells whether the plan tests for a difference.
func (p *Protocol) superiority() bool {
	return p.Spec.Hypothesis == "" || p.Spec.Hypothesis == "superiority"
}

// firstRiskKey is the key of the first group's risk in the design
// (exposed_risk, intervention_risk, case_exposure, exposed_prevalence).
func (p *Protocol) firstRiskKey() string {
	return map[string]string{"cohort": "exposed_risk", "trial": "intervention_risk",
		"case-control": "case_exposure", "cross-sectional": "exposed_prevalence"}[p.Spec.Design]
}

// validRisk tells whether a risk is one the specification accepts and
// differs from the reference.
func (p *Protocol) validRisk(x float64) bool {
	return x >= 1e-9 && x <= 1-1e-9 && math.Abs(x-p.Spec.P2) > 1e-12
}

// riskEdits replace the effect key by the first group's risk x.
func (p *Protocol) riskEdits(x float64) ([]designs.Edit, bool) {
	k := p.firstRiskKey()
	if k == "" || !p.validRisk(x) {
		return nil, false
	}
	return []designs.Edit{designs.Delete(p.Spec.EffectKey), designs.Set(k, round12(x))}, true
}

// combine is the total of per-group figures: the sum of two groups, or
// with several arms (arms − 1) × first + second, or arms × first when
// every pair of arms is compared.
func (p *Protocol) combine(x []int) int {
	switch {
	case len(x) == 1:
		return x[0]
	case p.Spec.Arms > 2 && p.Spec.Comparisons == "all-pairs":
		return p.Spec.Arms * x[0]
	case p.Spec.Arms > 2:
		return (p.Spec.Arms-1)*x[0] + x[1]
	}
	return x[0] + x[1]
}

// round12 rounds to 12 significant digits, so that an edited value reads
// as the number it stands for (0.3 × 1.1 is 0.33, not 0.33000000000000002).
func round12(x float64) float64 {
	v, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
	if err != nil {
		return x
	}
	return v
}

// Slips are the common slips the diagnosis tries, alone and in pairs.
var Slips = []Slip{
	// one-sided-alpha: the stated alpha used one-sided where the plan is
	// two-sided: z_α = Φ⁻¹(1 − α) in place of Φ⁻¹(1 − α/2) in the method's
	// formula (README "Methods"), every figure recomputed with sides: 1.
	// Superiority plans with a two-sided test.
	{
		ID: "one-sided-alpha", Group: "alpha",
		Says:    "a one-sided alpha where the plan is two-sided",
		Request: "Confirm whether the sample size was computed with a one-sided significance level although the planned test is two-sided; if so, recompute it two-sided or justify a one-sided test.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Sides != 2 || !p.superiority() || p.Spec.Goal == "precision" {
				return nil, false
			}
			return []designs.Edit{designs.Set("sides", 1)}, true
		},
	},
	// per-group-as-total: the recomputed per-group figure reported as the
	// total: the stated total equals the first group's analysable size
	// (and the stated enrolment the first group's enrolment).
	{
		ID: "per-group-as-total", Group: "reading", Stage: 2,
		Says:    "the size of one group reported as the total",
		Request: "Clarify whether the stated total is the number needed in each group; if so, the study needs about twice as many in all.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			return nil, p.twoGroups()
		},
		Read: func(p *Protocol, f figs) figs {
			f.v["total"] = f.n[0]
			f.v["enrol_total"] = f.enrol[0]
			return f
		},
	},
	// total-as-per-group: the reverse: the stated first-group figure
	// equals the recomputed analysable total.
	{
		ID: "total-as-per-group", Group: "reading", Stage: 2,
		Says:    "the total reported as the size of each group",
		Request: "Clarify whether the stated size per group is in fact the total for both groups together.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			return nil, p.twoGroups()
		},
		Read: func(p *Protocol, f figs) figs {
			f.v["n"] = f.v["total"]
			return f
		},
	},
	// attrition-ignored: the stated enrolment equals the analysable size,
	// with no inflation for loss (enrolment per group = analysable per
	// group). For a time-to-event plan, whose losses are the dropout
	// hazard: every figure recomputed with dropout 0.
	{
		ID: "attrition-ignored", Group: "attrition", Stage: 1,
		Says:    "no allowance for {loss}",
		Request: "State the expected {loss} and inflate the enrolment for it: the enrolment target should be the analysable size divided by (1 − the fraction expected to be lost).",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Outcome == "time-to-event" {
				if p.Spec.Dropout > 0 {
					return []designs.Edit{designs.Set("dropout", 0)}, true
				}
				return nil, false
			}
			return nil, p.Spec.Attrition > 0
		},
		Read: func(p *Protocol, f figs) figs {
			if p.Spec.Outcome == "time-to-event" {
				return f
			}
			f.enrol = slices.Clone(f.n)
			f.v["enrol_total"] = f.v["total"]
			return f
		},
	},
	// attrition-multiplied: the enrolment inflated as ⌈n × (1 + a)⌉ per
	// group instead of ⌈n / (1 − a)⌉, which leaves fewer than n after a
	// loss of a.
	{
		ID: "attrition-multiplied", Group: "attrition", Stage: 1,
		Says:    "the enrolment inflated by multiplying by (1 + loss) instead of dividing by (1 − loss)",
		Request: "Recompute the enrolment target as the analysable size divided by (1 − the fraction expected to be lost to {loss}); multiplying by (1 + that fraction) leaves fewer than needed once the loss occurs.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			return nil, p.Spec.Outcome != "time-to-event" && p.Spec.Attrition > 0
		},
		Read: func(p *Protocol, f figs) figs {
			a := p.Spec.Attrition
			f.enrol = make([]int, len(f.n))
			for i, n := range f.n {
				f.enrol[i] = int(math.Ceil(float64(n)*(1+a) - 1e-9))
			}
			f.v["enrol_total"] = p.combine(f.enrol)
			return f
		},
	},
	// continuity-omitted: the size from Fleiss's formula without the
	// continuity correction (method fleiss: Fleiss, Levin & Paik 2003,
	// ch. 4) where the planned test is corrected (method fleiss-cc:
	// Fleiss, Tytun & Ury 1980, Biometrics 36:343–346).
	{
		ID: "continuity-omitted", Group: "method",
		Says:    "the formula without continuity correction where the planned test is corrected",
		Request: "Confirm which formula gave the sample size: the planned test uses a continuity correction, and the formula without it gives too few participants for that test.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Method != "fleiss-cc" {
				return nil, false
			}
			return []designs.Edit{designs.Set("method", "fleiss")}, true
		},
	},
	// continuity-added: the reverse: the continuity-corrected formula
	// (fleiss-cc) where the plan names the uncorrected one (fleiss, or
	// schlesselman, which is the same formula for a case-control study).
	{
		ID: "continuity-added", Group: "method",
		Says:    "the continuity-corrected formula where the plan names the uncorrected one",
		Request: "Confirm which formula gave the sample size: it matches the continuity-corrected formula although the protocol names the uncorrected one.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Method != "fleiss" && p.Spec.Method != "schlesselman" {
				return nil, false
			}
			return []designs.Edit{designs.Set("method", "fleiss-cc")}, true
		},
	},
	// odds-ratio-as-risk-ratio: the stated odds ratio used as if it were a
	// risk ratio: first risk = odds ratio × reference risk (where that is
	// a valid risk), in place of OR p₀ / (1 + p₀ (OR − 1)) (common
	// practice: the odds ratio's definition).
	{
		ID: "odds-ratio-as-risk-ratio", Group: "effect",
		Says:    "the odds ratio used as if it were a risk ratio",
		Request: "Confirm how the stated odds ratio was turned into the first group's risk: it seems to have been multiplied by the reference risk as a risk ratio would be.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.EffectKey != "odds_ratio" || !p.superiority() {
				return nil, false
			}
			return p.riskEdits(p.Spec.EffectValue * p.Spec.P2)
		},
	},
	// design-effect-ignored: the size without the design effect or the
	// clustering (1 + (m − 1) ICC, Donner & Klar 2000): every figure
	// recomputed with the cluster block and the design effect removed. When
	// the protocol has a cluster block, the clusters per arm that slip
	// states are those its enrolment fills: ⌈enrolment per arm / m⌉, as
	// the plan counts clusters. The slip applies only where the protocol
	// states its clustering, so the request asks to confirm that the size
	// allows for it rather than to state it.
	{
		ID: "design-effect-ignored", Group: "clustering", Stage: 2,
		Says:    "no allowance for clustering (the design effect left out)",
		Request: "Confirm that the sample size allows for clustering: the stated figure matches the size without the design effect, although the protocol states its clustering; the size should be multiplied by the design effect, 1 + (m − 1) × ICC for clusters of mean size m.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Cluster == nil && p.Spec.DesignEffect <= 1 {
				return nil, false
			}
			edits := []designs.Edit{designs.Delete("cluster"), designs.Delete("design_effect")}
			if p.Spec.Test == "cluster-t" {
				edits = append(edits, designs.Delete("test"))
			}
			return edits, true
		},
		Read: func(p *Protocol, f figs) figs {
			if cl := p.Spec.Cluster; cl != nil && cl.Size > 0 && len(f.enrol) > 0 && f.enrol[0] > 0 {
				f.v["clusters"] = int(math.Ceil(float64(f.enrol[0])/cl.Size - 1e-9))
			}
			return f
		},
	},
	// power-90-as-80: the z of 90% power used where 80% is stated: every
	// figure recomputed at power 0.9.
	{
		ID: "power-90-as-80", Group: "power",
		Says:    "90% power used where 80% is stated",
		Request: "Confirm the power the sample size was computed for: the stated figure matches 90% power, not the 80% stated.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Goal == "precision" || math.Abs(p.Spec.Power-0.8) > 1e-12 {
				return nil, false
			}
			return []designs.Edit{designs.Set("power", 0.9)}, true
		},
	},
	// power-80-as-90: the reverse: every figure recomputed at power 0.8
	// where 90% is stated.
	{
		ID: "power-80-as-90", Group: "power",
		Says:    "80% power used where 90% is stated",
		Request: "Confirm the power the sample size was computed for: the stated figure matches 80% power, not the 90% stated.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Goal == "precision" || math.Abs(p.Spec.Power-0.9) > 1e-12 {
				return nil, false
			}
			return []designs.Edit{designs.Set("power", 0.8)}, true
		},
	},
	// normal-instead-of-t: the normal approximation (method z) where a t
	// test is planned (method t): n₁ = (z_α + z_β)² (σ₁² + σ₂²/r) / Δ²
	// (Chow, Shao & Wang 2008, ch. 3) in place of the noncentral t.
	{
		ID: "normal-instead-of-t", Group: "method",
		Says:    "the normal approximation where a t test is planned",
		Request: "Confirm which formula gave the sample size: the normal approximation gives slightly too few participants for the planned t test at this size.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Method != "t" {
				return nil, false
			}
			return []designs.Edit{designs.Set("method", "z")}, true
		},
	},
	// ratio-ignored: the allocation taken as 1:1: every figure recomputed
	// with ratio 1 (a survey: exposure_prevalence 0.5, equal groups), so
	// the stated first-group and total figures are compared with those of
	// the 1:1 plan.
	{
		ID: "ratio-ignored", Group: "allocation",
		Says:    "equal groups assumed where the allocation is unequal",
		Request: "Recompute the sample size for the planned unequal allocation; the stated figure matches equal groups.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			switch {
			case !p.twoGroups() || p.Spec.Matched:
				return nil, false
			case p.Spec.Design == "cross-sectional":
				if math.Abs(p.Spec.ExposurePrevalence-0.5) < 1e-12 {
					return nil, false
				}
				return []designs.Edit{designs.Set("exposure_prevalence", 0.5)}, true
			case math.Abs(p.Spec.Ratio-1) < 1e-12:
				return nil, false
			}
			return []designs.Edit{designs.Set("ratio", 1)}, true
		},
	},
	// variance-not-doubled (continuous outcomes, two independent groups):
	// the one-sample formula (z_α + z_β)² σ² / Δ² per group, the variance
	// of the difference counted once: method z with every SD divided by
	// √2, which turns (z_α + z_β)² (σ₁² + σ₂²) / Δ² into it.
	{
		ID: "variance-not-doubled", Group: "method",
		Says:    "the one-sample formula (z_α + z_β)² σ² / Δ² per group, counting the variance of the difference once",
		Request: "Recompute the sample size with the variance of a difference between two independent means (twice the variance of one mean); the stated figure counts it once.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Outcome != "continuous" || p.Spec.Pairing != "" {
				return nil, false
			}
			edits := []designs.Edit{designs.Set("method", "z")}
			for _, k := range []string{"sd", "sd_first", "sd_second"} {
				if x, ok := p.value(k); ok {
					edits = append(edits, designs.Set(k, round12(x/math.Sqrt2)))
				}
			}
			return edits, len(edits) > 1
		},
	},
	// relative-as-absolute: an effect stated as a relative change r (risk
	// ratio x = 1 − r) computed as an absolute difference of r: first risk
	// = reference + (x − 1), where that is a valid risk.
	{
		ID: "relative-as-absolute", Group: "effect",
		Says:    "a relative change computed as an absolute difference",
		Request: "Confirm whether the effect is a relative change or an absolute difference in risk: the stated figure treats the relative change as a difference of that many percentage points.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if (p.Spec.EffectKey != "risk_ratio" && p.Spec.EffectKey != "prevalence_ratio") || !p.superiority() {
				return nil, false
			}
			return p.riskEdits(p.Spec.P2 + (p.Spec.EffectValue - 1))
		},
	},
	// absolute-as-relative: a difference d (first − reference) computed as
	// a relative change of d: first risk = reference × (1 + d).
	{
		ID: "absolute-as-relative", Group: "effect",
		Says:    "an absolute difference computed as a relative change",
		Request: "Confirm whether the effect is an absolute difference in risk or a relative change: the stated figure treats the difference as a relative change of that size.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if (p.Spec.EffectKey != "risk_difference" && p.Spec.EffectKey != "prevalence_difference") || !p.superiority() {
				return nil, false
			}
			return p.riskEdits(p.Spec.P2 * (1 + p.Spec.EffectValue))
		},
	},
	// events-as-participants (time-to-event): the number of events
	// (Schoenfeld 1983, Biometrics 39:499–503, or Freedman 1982) reported
	// as the number of participants: the stated total (and enrolment)
	// equals the recomputed events, the first group
	// round(events / (1 + ratio)).
	{
		ID: "events-as-participants", Group: "reading", Stage: 2,
		Says:    "the number of events reported as the number of participants",
		Request: "Distinguish the number of events the analysis needs from the number of participants to recruit, and state the follow-up, the accrual and the event rate that turn one into the other.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			return nil, p.Spec.Outcome == "time-to-event"
		},
		Read: func(p *Protocol, f figs) figs {
			d := f.v["events"]
			if d == 0 {
				return f
			}
			f.v["n"] = int(math.Round(float64(d) / (1 + p.Spec.Ratio)))
			f.v["total"] = d
			f.v["enrol_total"] = d
			return f
		},
	},
	// multiplicity-ignored: in a trial of several arms with more than one
	// comparison, the alpha not divided among the comparisons: each
	// comparison sized at the stated alpha where the plan tests each at
	// alpha / k, k the number of comparisons (Bonferroni; Dunn 1961, J Am
	// Stat Assoc 56:52–64): every figure recomputed with alpha × k, which
	// makes the alpha of each comparison the stated one (where alpha × k is
	// at most 0.5). It acts on the alpha, as one-sided-alpha does: the two
	// share a conflict group and are never paired.
	{
		ID: "multiplicity-ignored", Group: "alpha",
		Says:    "the alpha not divided among the comparisons of the several arms (no Bonferroni correction)",
		Request: "Confirm how the significance level was shared among the comparisons of the arms: the stated figure matches each comparison tested at the full alpha, where the plan divides it among the comparisons (Bonferroni); recompute the size at alpha divided by the number of comparisons, or justify another correction.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			k := p.comparisons()
			if k < 2 || p.Spec.Goal == "precision" {
				return nil, false
			}
			a := round12(p.Spec.Alpha * float64(k))
			if a > 0.5 {
				return nil, false
			}
			return []designs.Edit{designs.Set("alpha", a)}, true
		},
	},
	// adjustment-ignored: the size computed without the inflation for the
	// adjustment for covariates (Hsieh, Bloch & Larsen 1998): every figure
	// recomputed without the adjustment block.
	{
		ID: "adjustment-ignored", Group: "adjustment",
		Says:    "no inflation for the adjustment for covariates (1/(1 − R²))",
		Request: "Confirm whether the sample size allows for the adjustment for covariates that the analysis makes: with the stated R² of the exposure on the covariates the size is inflated by 1/(1 − R²) (Hsieh, Bloch & Larsen 1998).",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if !p.Spec.Adjusted || p.Spec.AdjustR2 == 0 {
				return nil, false
			}
			return []designs.Edit{designs.Delete("adjustment")}, true
		},
	},
	// interim-ignored: the fixed-sample size stated for a group-sequential
	// trial, without the inflation its boundaries cost: every figure
	// recomputed without the interim block.
	{
		ID: "interim-ignored", Group: "interim",
		Says:    "no inflation for the interim analyses (the fixed-sample size)",
		Request: "Confirm whether the sample size allows for the interim analyses the protocol plans: a group-sequential design's maximum size is the fixed-sample size times the inflation factor of its boundaries (Jennison & Turnbull 2000), or the power falls below the target.",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Interim == nil {
				return nil, false
			}
			return []designs.Edit{designs.Delete("interim")}, true
		},
	},
	// overdispersion-ignored: counts of events planned as Poisson where
	// the protocol states negative-binomial overdispersion: every figure
	// recomputed with overdispersion 0.
	{
		ID: "overdispersion-ignored", Group: "variance",
		Says:    "Poisson counts where the protocol states overdispersion",
		Request: "Confirm whether the sample size allows for the overdispersion of the counts the protocol states: a negative-binomial variance μ + kμ² needs more participants than Poisson counts (Zhu & Lakkis 2014).",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if p.Spec.Outcome != "rate" || p.Spec.Overdispersion == 0 {
				return nil, false
			}
			return []designs.Edit{designs.Set("overdispersion", 0)}, true
		},
	},
	// correlation-ignored: matched sets planned as if exposure were
	// independent within sets: every figure recomputed with
	// exposure_correlation 0.
	{
		ID: "correlation-ignored", Group: "correlation",
		Says:    "the correlation of exposure within matched sets left out",
		Request: "Confirm whether the sample size allows for the correlation of exposure between cases and their matched controls that the protocol states: correlated exposure leaves fewer discordant sets and needs more of them (Dupont 1988).",
		Edits: func(p *Protocol) ([]designs.Edit, bool) {
			if !p.Spec.Matched || p.Spec.ExposureCorrelation == 0 {
				return nil, false
			}
			return []designs.Edit{designs.Set("matching.exposure_correlation", 0)}, true
		},
	},
}

// comparisons is the number of comparisons among the arms, over which the
// plan divides the alpha (Bonferroni): arms − 1 each against the control,
// arms (arms − 1) / 2 for every pair; 1 with two arms.
func (p *Protocol) comparisons() int {
	a := p.Spec.Arms
	switch {
	case a <= 2:
		return 1
	case p.Spec.Comparisons == "all-pairs":
		return a * (a - 1) / 2
	}
	return a - 1
}

// SlipByID returns the slip with the id, or nil.
func SlipByID(id string) *Slip {
	for i := range Slips {
		if Slips[i].ID == id {
			return &Slips[i]
		}
	}
	return nil
}

// candidate is one slip, or a pair, applied to the protocol.
type candidate struct {
	slips []*Slip
	edits []designs.Edit
	// f are the figures it yields (nil: its plan failed).
	f *figs
}

// diagnose recomputes under each applicable slip, alone and then, for
// the figures no single slip reproduces, in pairs that can co-occur (never
// two of one conflict group), and lists those that reproduce a stated
// figure the recheck found inconsistent, the singles first: within max(1%, 2 participants) of it (clusters: 1%; see
// reach), and strictly closer
// to it than the recomputed figure. Best first; slips yielding the same
// figure are listed together as tied.
func (rc *recheck) diagnose() []Diagnosis {
	p := &Protocol{In: rc.in, Spec: rc.spec}
	var singles []candidate
	for i := range Slips {
		s := &Slips[i]
		edits, ok := s.Edits(p)
		if !ok {
			continue
		}
		singles = append(singles, candidate{slips: []*Slip{s}, edits: edits})
	}
	planned := map[string]*figs{}
	yield := func(c *candidate) {
		key := fmt.Sprint(c.edits)
		base, ok := planned[key]
		if !ok {
			if len(c.edits) == 0 {
				f := rc.rec.clone()
				base = &f
			} else if res, err := rc.plan(c.edits...); err == nil {
				f := figsOf(res)
				base = &f
			}
			planned[key] = base
		}
		if base == nil {
			return
		}
		f := base.clone()
		reads := slices.Clone(c.slips)
		sort.SliceStable(reads, func(i, j int) bool { return reads[i].Stage < reads[j].Stage })
		for _, s := range reads {
			if s.Read != nil {
				f = s.Read(p, f)
			}
		}
		c.f = &f
	}
	for i := range singles {
		yield(&singles[i])
	}
	var targets []string
	for _, f := range rc.rep.Figures {
		if f.Judgement != "consistent" {
			targets = append(targets, f.Name)
		}
	}
	rc.explained = map[string]bool{}
	out := rc.matches(singles, targets)
	// Pairs are tried for the figures no single slip reproduces.
	var rest []string
	for _, t := range targets {
		if !rc.explained[t] {
			rest = append(rest, t)
		}
	}
	if len(rest) == 0 {
		return out
	}
	var pairs []candidate
	for i := range singles {
		for j := i + 1; j < len(singles); j++ {
			a, b := singles[i].slips[0], singles[j].slips[0]
			if a.Group == b.Group {
				continue
			}
			c := candidate{slips: []*Slip{a, b}, edits: append(slices.Clone(singles[i].edits), singles[j].edits...)}
			yield(&c)
			pairs = append(pairs, c)
		}
	}
	return append(out, rc.matches(pairs, rest)...)
}

// matches turns the candidates that reproduce one of the target figures
// (stated figures the recheck found inconsistent) into the diagnosis: for
// each candidate its closest figure; best first, ties together. Every
// figure some candidate reproduces is marked in rc.explained.
func (rc *recheck) matches(cands []candidate, targets []string) []Diagnosis {
	stated := rc.stated()
	out := []Diagnosis{}
	for _, c := range cands {
		if c.f == nil {
			continue
		}
		var best *Diagnosis
		var also []string
		for _, t := range targets {
			st, rec := stated[t], rc.rec.v[t]
			got, ok := c.f.v[t]
			if !ok || got == 0 {
				continue
			}
			gap := math.Abs(float64(got - st))
			if gap > reach(t, st)+1e-9 || gap >= math.Abs(float64(rec-st)) {
				continue
			}
			rc.explained[t] = true
			d := Diagnosis{Figure: t, Reproduces: got, Distance: gap / float64(st)}
			for _, s := range c.slips {
				d.Slips = append(d.Slips, s.ID)
			}
			also = append(also, t)
			if best == nil || d.Distance < best.Distance {
				best = &d
			}
		}
		if best != nil {
			best.Explanation = rc.explain(c, *best)
			var others []string
			for _, t := range also {
				if t != best.Figure {
					others = append(others, rc.phrase(t, stated[t]))
				}
			}
			if len(others) > 0 {
				best.Explanation += " It also reproduces the stated " + joinAnd(others) + "."
			}
			out = append(out, *best)
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Distance < out[j].Distance })
	// Slips that yield the same figure are listed together: the first
	// keeps the entry and names the others as tied.
	var grouped []Diagnosis
	for _, d := range out {
		i := slices.IndexFunc(grouped, func(g Diagnosis) bool { return g.Figure == d.Figure && g.Reproduces == d.Reproduces })
		if i < 0 {
			grouped = append(grouped, d)
			continue
		}
		grouped[i].Tied = append(grouped[i].Tied, strings.Join(d.Slips, " + "))
	}
	return grouped
}

// reach is how far a slip's figure may be from the stated one and still
// reproduce it: max(1%, 2 participants) for sizes and events (issue 10,
// item 5); 1% for clusters, where a cluster is many participants.
func reach(figure string, stated int) float64 {
	if figure == "clusters" {
		return 0.01 * float64(stated)
	}
	return math.Max(0.01*float64(stated), 2)
}

// explain says, in one sentence, what the slips give and how close it is.
func (rc *recheck) explain(c candidate, d Diagnosis) string {
	var says []string
	for _, s := range c.slips {
		says = append(says, s.SaysFor(rc.in))
	}
	who := says[0]
	if len(says) > 1 {
		who = "together, " + joinAnd(says)
	}
	st := rc.stated()[d.Figure]
	how := "exactly"
	if d.Reproduces != st {
		how = "within " + DiffPercent(d.Distance) + " of"
	}
	// The distance is relative to the stated figure (Diagnosis.Distance);
	// the recomputed figure's gap is given in units, not as a second
	// percentage on another basis.
	rec := rc.rec.v[d.Figure]
	return designs.Sentence(fmt.Sprintf("%s gives %s, %s the stated %s; the recomputed %s is %s away",
		who, rc.phrase(d.Figure, d.Reproduces), how, count(st), count(rec), rc.units(d.Figure, absInt(rec-st))))
}

// absInt is the absolute value of a whole number.
func absInt(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// units words a gap in the units of a figure: "126", "1 cluster",
// "12 events" (participants and pairs go without a unit, as the figures
// they separate are written).
func (rc *recheck) units(name string, x int) string {
	switch name {
	case "events":
		if x == 1 {
			return "1 event"
		}
		return count(x) + " events"
	case "clusters":
		if x == 1 {
			return "1 cluster"
		}
		return count(x) + " clusters"
	}
	return count(x)
}

// noSlipNote says that no slip reproduces the stated figures.
func (rc *recheck) noSlipNote() string {
	var parts []string
	for _, f := range rc.rep.Figures {
		if f.Judgement != "consistent" {
			parts = append(parts, rc.phrase(f.Name, f.Stated))
		}
	}
	return fmt.Sprintf("No common slip, alone or in pairs, reproduces the stated %s within max(1%%, 2 participants).", joinAnd(parts))
}
