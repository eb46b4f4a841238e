package designs

import (
	"encoding/json"
	"math"
	"strconv"
	"strings"
)

// Tool and Version identify this program in every output.
const (
	Tool    = "enough"
	Version = "0.1.0"
)

// Cautions are printed with every plan.
var Cautions = []string{
	"A sample size is a planning aid: the answer is only as good as the assumptions behind it (the reference risk, the effect, the attrition). Vary them and see how much the number moves.",
	"Have the plan reviewed by a qualified statistician before it is relied on.",
	"The ethics committee, the regulators and local rules decide what is acceptable; an under-powered study can expose participants to risk without answering its question, and an oversized one exposes more people than needed.",
}

// Result is a computed plan: everything every output format shows. Its JSON
// form is a stable contract for scripts.
type Result struct {
	Tool        string   `json:"tool"`
	Version     string   `json:"version"`
	SpecFile    string   `json:"spec_file"`
	SpecSHA256  string   `json:"spec_sha256"`
	Overrides   []string `json:"overrides,omitempty"`
	Title       string   `json:"title"`
	Design      string   `json:"design"`
	Goal        string   `json:"goal,omitempty"`
	Outcome     string   `json:"outcome"`
	Solve       string   `json:"solve"`
	Method      string   `json:"method"`
	MethodName  string   `json:"method_name"`
	Citation    string   `json:"citation"`
	Short       string   `json:"-"`
	Test        string   `json:"test,omitempty"`
	TestName    string   `json:"test_name,omitempty"`
	Alpha       *float64 `json:"alpha,omitempty"`
	Sides       int      `json:"sides,omitempty"`
	Power       *float64 `json:"power"`
	Ratio       *float64 `json:"ratio,omitempty"`
	Attrition   float64  `json:"attrition"`
	DesignEff   float64  `json:"design_effect"`
	FirstGroup  string   `json:"first_group,omitempty"`
	SecondGroup string   `json:"second_group,omitempty"`

	Assumptions  []Assumption  `json:"assumptions"`
	Result       Answer        `json:"result"`
	Alternatives []Alternative `json:"alternatives"`
	// Steps are the steps the computation took, in order: replaying them
	// by hand gives the answer.
	Steps    []Step   `json:"steps"`
	Notes    []string `json:"notes"`
	Warnings []string `json:"warnings"`
	Cautions []string `json:"cautions"`

	// Simulation is the verification by simulation, when asked for.
	Simulation *Simulation `json:"simulation,omitempty"`

	// Spec is the validated specification behind the result.
	Spec *Spec `json:"-"`
}

// Assumption is one input of the plan with where it came from.
type Assumption struct {
	Key    string `json:"key"`
	Value  string `json:"value"`
	Source string `json:"source,omitempty"`
	// SetOnCommandLine marks a value that --set gave in place of the
	// file's; File then holds what the file gave (nil when it gave none).
	SetOnCommandLine bool       `json:"set_on_command_line,omitempty"`
	File             *FileValue `json:"file,omitempty"`
}

// Answer is the computed answer.
type Answer struct {
	// NStar is the unrounded size of the first group (solving n; for a
	// precision survey, the size after design effect and finite population
	// correction).
	NStar float64 `json:"n_star,omitempty"`
	// N is the analysable size per group [first, second] (one element for a
	// precision survey).
	N []int `json:"n"`
	// Total is the sum of N.
	Total int `json:"total"`
	// AchievedPower is the power at the analysable sizes (two-group plans).
	AchievedPower *float64 `json:"achieved_power,omitempty"`
	// Enrol is the enrolment per group, inflated for attrition.
	Enrol      []int `json:"enrol"`
	EnrolTotal int   `json:"enrol_total"`
	// Effect restates the planned effect (solving n or power).
	Effect *Effect `json:"effect,omitempty"`
	// Detectable is the smallest detectable effect (solving effect).
	Detectable *Detectable `json:"detectable,omitempty"`

	// Precision surveys: the simple-random-sampling size, the margin, and
	// the interval expected at the plan (the method's limits at the
	// expected count), a planning value, not a guarantee for the observed
	// prevalence.
	N0               float64   `json:"n0,omitempty"`
	Margin           *float64  `json:"margin,omitempty"`
	ExpectedInterval []float64 `json:"expected_interval,omitempty"`

	// Diagnostic accuracy: the unrounded sizes for sensitivity and for
	// specificity (solving n; the larger drives the total), or the margins
	// each reaches (solving effect; Margin is then the larger).
	// A ratio to a stated precision: the upper over the lower limit of its
	// interval at the analysable sizes (ExpectedInterval holds the limits
	// around the planned ratio).
	PrecisionRatio *float64 `json:"precision_ratio,omitempty"`

	NSensitivity      *float64 `json:"n_sensitivity,omitempty"`
	NSpecificity      *float64 `json:"n_specificity,omitempty"`
	MarginSensitivity *float64 `json:"margin_sensitivity,omitempty"`
	MarginSpecificity *float64 `json:"margin_specificity,omitempty"`

	// Person-time cohorts: the person-time of each group and the events
	// expected in each (the total in ExpectedEvents), at the analysable
	// sizes.
	PersonTime  []float64 `json:"person_time,omitempty"`
	GroupEvents []float64 `json:"expected_events_by_group,omitempty"`

	// Time-to-event: the events required (solving n), the events expected
	// at the analysable sizes, and the study's duration (accrual plus
	// follow-up).
	Events         int      `json:"events,omitempty"`
	ExpectedEvents *float64 `json:"expected_events,omitempty"`
	Duration       *float64 `json:"duration,omitempty"`

	// Paired designs: the number of pairs.
	Pairs int `json:"pairs,omitempty"`

	// Interim is the group-sequential design of a trial with interim
	// analyses: its boundaries look by look and what they cost.
	Interim *InterimResult `json:"interim,omitempty"`

	// Matched case-control sets: the number of sets (one case each; N is
	// then [cases, controls]), the sets expected to be discordant (those
	// that inform the conditional analysis) and the cases an unmatched
	// design with as many controls per case would need at the same
	// target (Fleiss, no continuity correction; solving n).
	Sets                   int      `json:"sets,omitempty"`
	ExpectedDiscordantSets *float64 `json:"expected_discordant_sets,omitempty"`
	UnmatchedCases         int      `json:"unmatched_cases,omitempty"`
	// McNemarExactPower is, for one control per case, the exact power of
	// McNemar's test at the analysable pairs by enumeration of the
	// discordant pairs, in the method's reading of the odds ratio (within
	// pairs for dupont, member by member for connor and
	// schlesselman-pairs).
	McNemarExactPower *float64 `json:"mcnemar_exact_power,omitempty"`

	// Cluster designs: the design effect, the clusters per arm and the
	// participants whole clusters bring.
	DesignEffect  *float64 `json:"design_effect,omitempty"`
	Clusters      []int    `json:"clusters,omitempty"`
	WholeClusters []int    `json:"whole_cluster_participants,omitempty"`

	// Several arms: the number of arms, the comparisons and the alpha of
	// each comparison (Bonferroni). N and Enrol are then per comparison
	// (each intervention arm, control arm) and the totals cover all arms.
	Arms               int      `json:"arms,omitempty"`
	Comparisons        int      `json:"comparisons,omitempty"`
	AlphaPerComparison *float64 `json:"alpha_per_comparison,omitempty"`

	// Exact power by enumeration of both binomial counts, and the
	// saw-tooth of the exact search for n.
	ExactPower *float64     `json:"exact_power,omitempty"`
	Exact      *ExactSearch `json:"exact,omitempty"`

	// Non-adherence and contamination: the effect an intention-to-treat
	// analysis sees, and the analysable sizes without dilution.
	DilutedEffect *Effect `json:"diluted_effect,omitempty"`
	UndilutedN    []int   `json:"undiluted_n,omitempty"`
}

// Effect restates an effect on every meaningful scale. Risk-based measures
// are absent for a case-control study, which samples on the outcome.
type Effect struct {
	FirstRisk      *float64 `json:"first_risk,omitempty"`
	SecondRisk     *float64 `json:"second_risk,omitempty"`
	RiskRatio      *float64 `json:"risk_ratio,omitempty"`
	RiskDifference *float64 `json:"risk_difference,omitempty"`
	NNT            *int     `json:"nnt,omitempty"`
	OddsRatio      *float64 `json:"odds_ratio,omitempty"`

	// Continuous outcomes: the difference in means and in standard
	// deviations (Cohen's d); time-to-event: the hazard ratio.
	MeanDifference         *float64 `json:"mean_difference,omitempty"`
	StandardizedDifference *float64 `json:"standardized_difference,omitempty"`
	HazardRatio            *float64 `json:"hazard_ratio,omitempty"`

	// Person-time outcomes: the rate ratio, each group's rate (events per
	// unit of person-time) and their difference (first minus second).
	RateRatio      *float64 `json:"rate_ratio,omitempty"`
	FirstRate      *float64 `json:"first_rate,omitempty"`
	SecondRate     *float64 `json:"second_rate,omitempty"`
	RateDifference *float64 `json:"rate_difference,omitempty"`

	// A continuous exposure: the odds ratio per standard deviation of the
	// exposure and the event rate at its mean.
	OddsRatioPerSD *float64 `json:"odds_ratio_per_sd,omitempty"`
	EventRate      *float64 `json:"event_rate,omitempty"`

	CaseExposure    *float64 `json:"case_exposure,omitempty"`
	ControlExposure *float64 `json:"control_exposure,omitempty"`
	CaseOdds        *float64 `json:"case_odds,omitempty"`
	ControlOdds     *float64 `json:"control_odds,omitempty"`
}

// Detectable is the smallest effect detectable in each direction, on the
// scale of the specification's effect key. A nil side cannot be reached.
type Detectable struct {
	Scale string `json:"scale"`
	// Direction is "lower" or "upper" for a one-sided test, which detects
	// effects on its own side only; empty for a two-sided test.
	Direction   string   `json:"direction,omitempty"`
	Lower       *float64 `json:"lower"`
	Upper       *float64 `json:"upper"`
	LowerEffect *Effect  `json:"lower_effect,omitempty"`
	UpperEffect *Effect  `json:"upper_effect,omitempty"`
	// Diluted holds, with non-adherence or contamination, the effects an
	// intention-to-treat analysis sees when the detectable effects (those
	// of receiving the intervention) are diluted; nil without dilution.
	Diluted *DilutedBounds `json:"diluted,omitempty"`
}

// DilutedBounds are the detectable effects after dilution, on the same
// scale.
type DilutedBounds struct {
	Lower       *float64 `json:"lower"`
	Upper       *float64 `json:"upper"`
	LowerEffect *Effect  `json:"lower_effect,omitempty"`
	UpperEffect *Effect  `json:"upper_effect,omitempty"`
}

// Alternative is another applicable method's answer to the same question.
type Alternative struct {
	Method        string      `json:"method"`
	Name          string      `json:"name"`
	Citation      string      `json:"citation"`
	Short         string      `json:"-"`
	N             []int       `json:"n,omitempty"`
	Total         int         `json:"total,omitempty"`
	EnrolTotal    int         `json:"enrol_total,omitempty"`
	AchievedPower *float64    `json:"achieved_power,omitempty"`
	Detectable    *Detectable `json:"detectable,omitempty"`
}

// ExactSearch describes the search for the smallest n by exact power: the
// power of an exact or discrete test is a saw-tooth in n.
type ExactSearch struct {
	// First is the smallest first-group size in the window with exact power
	// at or above the target.
	First int `json:"first"`
	// Stable is the smallest size beyond which the exact power never drops
	// below the target within the window.
	Stable int `json:"stable"`
	// Window is the range of first-group sizes searched [low, high].
	Window []int `json:"window"`
	// ClosedForm is the first-group size from the closed form.
	ClosedForm int `json:"closed_form"`
}

// round12 rounds x to 12 significant digits: values derived from the
// inputs by arithmetic (0.15 × 0.7 = 0.10499999999999998) are written as
// the numbers they stand for, while computed results keep full precision.
func round12(x float64) float64 {
	if x == 0 || math.IsNaN(x) || math.IsInf(x, 0) {
		return x
	}
	v, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
	if err != nil {
		return x
	}
	return v
}

// round12p rounds a pointed-to value, keeping nil.
func round12p(p *float64) *float64 {
	if p == nil {
		return nil
	}
	return ptr(round12(*p))
}

// MarshalJSON writes the effect with every value rounded to 12 significant
// digits: an effect restates the inputs (or a computed effect) on other
// scales, and the rounding only removes floating-point noise.
func (e Effect) MarshalJSON() ([]byte, error) {
	type plain Effect
	c := plain(e)
	for _, p := range []**float64{&c.FirstRisk, &c.SecondRisk, &c.RiskRatio, &c.RiskDifference, &c.OddsRatio,
		&c.MeanDifference, &c.StandardizedDifference, &c.HazardRatio, &c.CaseExposure, &c.ControlExposure, &c.CaseOdds, &c.ControlOdds,
		&c.RateRatio, &c.FirstRate, &c.SecondRate, &c.RateDifference, &c.OddsRatioPerSD, &c.EventRate} {
		*p = round12p(*p)
	}
	return json.Marshal(c)
}

// MarshalJSON writes the result with the settings derived from the inputs
// (alpha per comparison, allocation from two enrolments, a cluster design
// effect) rounded to 12 significant digits.
func (r Result) MarshalJSON() ([]byte, error) {
	type plain Result
	c := plain(r)
	c.Alpha, c.Ratio = round12p(c.Alpha), round12p(c.Ratio)
	c.DesignEff = round12(c.DesignEff)
	return json.Marshal(c)
}

// MarshalJSON writes the answer with the settings derived from the inputs
// (the design effect, the alpha per comparison) rounded to 12 significant
// digits, as the plan's JSON writes them wherever the answer stands (a
// sweep's rows too).
func (a Answer) MarshalJSON() ([]byte, error) {
	type plain Answer
	c := plain(a)
	c.DesignEffect = round12p(c.DesignEffect)
	c.AlphaPerComparison = round12p(c.AlphaPerComparison)
	if c.PersonTime != nil {
		// Products of the inputs: rounded as the restated effects are.
		c.PersonTime = []float64{round12(c.PersonTime[0]), round12(c.PersonTime[1])}
		c.GroupEvents = []float64{round12(c.GroupEvents[0]), round12(c.GroupEvents[1])}
		c.ExpectedEvents = round12p(c.ExpectedEvents)
	}
	return json.Marshal(c)
}

// MarshalJSON writes the assumption's value typed: a number or a boolean as
// such, text as a string, the interim timing as a list; the effect key of a plan that solves the effect,
// whose value only names the scale, has a null value and "solved": true.
func (a Assumption) MarshalJSON() ([]byte, error) {
	type plain struct {
		Key              string     `json:"key"`
		Value            any        `json:"value"`
		Solved           bool       `json:"solved,omitempty"`
		Source           string     `json:"source,omitempty"`
		SetOnCommandLine bool       `json:"set_on_command_line,omitempty"`
		File             *FileValue `json:"file,omitempty"`
	}
	c := plain{Key: a.Key, Value: typedValue(a.Value), Source: a.Source, SetOnCommandLine: a.SetOnCommandLine, File: a.File}
	if strings.HasPrefix(a.Value, "solved") {
		c.Value, c.Solved = nil, true
	}
	if a.Key == "interim.timing" {
		// A list of fractions, written "0.4, 0.7, 1" in the summary.
		var xs []any
		for _, v := range strings.Split(a.Value, ", ") {
			xs = append(xs, typedValue(v))
		}
		c.Value = xs
	}
	return json.Marshal(c)
}

// typedValue reads a value as written in YAML: a number, a boolean, or
// text.
func typedValue(s string) any {
	if f, err := strconv.ParseFloat(strings.ReplaceAll(s, "_", ""), 64); err == nil && !math.IsInf(f, 0) && !math.IsNaN(f) {
		return f
	}
	switch strings.ToLower(s) {
	case "true":
		return true
	case "false":
		return false
	}
	return s
}

// MarshalJSON writes what the file gave with its value typed, as the
// assumption's own value is.
func (f FileValue) MarshalJSON() ([]byte, error) {
	type plain struct {
		Value  any    `json:"value,omitempty"`
		Source string `json:"source,omitempty"`
	}
	c := plain{Source: f.Source}
	if f.Value != "" {
		c.Value = typedValue(f.Value)
	}
	return json.Marshal(c)
}

// InterimResult is a group-sequential design's figures: the JSON object
// result.interim.
type InterimResult struct {
	// Boundary is pocock, obrien-fleming or spending; SpendingFunction
	// and Rho say which spending function.
	Boundary         string   `json:"boundary"`
	SpendingFunction string   `json:"spending_function,omitempty"`
	Rho              *float64 `json:"rho,omitempty"`
	// Inflation is the maximum-information inflation factor R for the
	// target power (solving n) or the power reached (solving power).
	Inflation float64 `json:"inflation"`
	// Drift is θ, the expected z statistic at full information under the
	// planned effect at the plan's maximum size.
	Drift float64       `json:"drift"`
	Looks []InterimLook `json:"looks"`
	// ExpectedNNull and ExpectedNAlternative are the expected analysable
	// participants in each group when the trial stops at its first
	// crossing, under no effect and under the planned effect; the events
	// likewise for a time-to-event plan.
	ExpectedNNull             []float64 `json:"expected_n_null"`
	ExpectedNAlternative      []float64 `json:"expected_n_alternative"`
	ExpectedEventsNull        *float64  `json:"expected_events_null,omitempty"`
	ExpectedEventsAlternative *float64  `json:"expected_events_alternative,omitempty"`
}

// InterimLook is one analysis of a group-sequential design.
type InterimLook struct {
	// Information is the look's information fraction; N the analysable
	// participants in each group by then; Events the events by then
	// (time-to-event plans, whose information is their events).
	Information float64 `json:"information"`
	N           []int   `json:"n"`
	Events      *int    `json:"events,omitempty"`
	// Time is when a time-to-event trial expects the look's events, from
	// the first entry, in time_unit; N is then the participants entered by
	// that time.
	Time *float64 `json:"time,omitempty"`
	// Z is the critical value for |Z| (one-sided: Z in the direction of
	// benefit), PNominal its nominal p (two-sided for a two-sided design),
	// AlphaSpent the cumulative alpha by this look.
	Z          float64 `json:"z"`
	PNominal   float64 `json:"p_nominal"`
	AlphaSpent float64 `json:"alpha_spent"`
	// StopProbability is the probability of stopping here under the
	// planned effect (crossing here first; at the last look, reaching it).
	StopProbability float64 `json:"stop_probability"`
	// EfficacyProbability is the probability of crossing the boundary on
	// the side of the effect here first, under the planned effect; the
	// looks' values add up to the power.
	EfficacyProbability float64 `json:"efficacy_probability"`
}
