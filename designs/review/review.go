// Package review rechecks the sample size a protocol states (enough
// review): it recomputes the plan under the protocol's own assumptions,
// judges each stated figure against the recomputed one, diagnoses the
// common slips that reproduce a stated figure, measures how the size moves
// with each assumption, and lists what the protocol failed to state.
//
// Everything is computed by the engine that plans (designs.Plan) on
// variants of the protocol's specification (designs.ReviewInput.Variant),
// so a review serves every design, outcome, hypothesis and method that
// plan serves.
package review

import "enough/designs"

// Verdicts of a recheck (JSON review.verdict; exit statuses 0, 3, 4, 5).
const (
	Consistent       = "consistent"
	UnderPowered     = "under-powered"
	LargerThanNeeded = "larger-than-needed"
	Incomplete       = "incomplete"
)

// Report is a recheck: the recomputed plan and the review of the stated
// figures. Its JSON form is the review object of `enough review -f json`.
type Report struct {
	// Plan is the recomputed plan (solving n; or power, or effect, when
	// the protocol stated no power, or no effect); nil when nothing could
	// be recomputed (no reference value).
	Plan *designs.Result `json:"-"`

	// Mode is what the recheck could compute (designs.ReviewN, ReviewPower,
	// ReviewEffect or ReviewNone): a required size only in mode n.
	Mode    string `json:"mode"`
	Verdict string `json:"verdict"`
	// Sentence is the verdict in one plain sentence with the figures
	// behind it.
	Sentence  string    `json:"sentence"`
	Tolerance Tolerance `json:"tolerance"`
	// Recomputed is the recomputed plan's result object (nil when nothing
	// could be recomputed).
	Recomputed *designs.Answer `json:"recomputed"`
	Claimed    Claimed         `json:"claimed"`
	// Figures judges each stated figure against its recomputed value.
	Figures []Figure `json:"figures"`
	// ClaimedPowerActual is the power the stated analysable sizes give
	// under the protocol's assumptions (or the stated enrolment after the
	// assumed attrition when only that is stated, or the stated events
	// when only those are; nil when it cannot be computed).
	ClaimedPowerActual *float64 `json:"claimed_power_actual"`
	// DetectableEffect is the smallest effect the stated sizes detect at
	// the stated power (or at 80% and 90% when no power is stated).
	DetectableEffect []Detectable `json:"detectable_effect"`
	// DetectableNote says, in one sentence, why DetectableEffect is empty
	// ("" when it is not): nothing recomputed, no size stated, only the
	// events stated, or a plan that cannot solve its effect (a
	// non-inferiority or equivalence trial, sized on its margin). The
	// letter prints it; the JSON keeps detectable_effect empty.
	DetectableNote string `json:"-"`
	// Methods is the recomputed n by every applicable method, the named
	// (or default) one first.
	Methods []MethodN `json:"methods"`
	// Diagnosis lists the slips that reproduce an inconsistent stated
	// figure: the single slips, best first, then the pairs tried for the
	// figures no single slip reproduces (Slips in slips.go).
	Diagnosis []Diagnosis `json:"diagnosis"`
	// DiagnosisNote says what the diagnosis found when it lists nothing
	// ("the stated figures hold: no diagnosis", "no common slip, alone or
	// in pairs, reproduces the stated figure").
	DiagnosisNote string        `json:"diagnosis_note"`
	Sensitivity   []Sensitivity `json:"sensitivity"`
	Reporting     Reporting     `json:"reporting"`
	// Assumed lists the conventions assumed for elements not stated.
	Assumed  []string `json:"assumed"`
	Requests []string `json:"requests"`
	Cautions []string `json:"cautions"`
}

// Tolerance is what counts as consistent.
type Tolerance struct {
	// N is the relative difference in size (0.05: within 5%).
	N float64 `json:"n"`
	// Power is the difference in power (0.02: within 2 points).
	Power float64 `json:"power"`
}

// Claimed is what the protocol states, as read from the claimed block
// (nil or 0: not stated).
type Claimed struct {
	N          *int     `json:"n"`
	NSecond    *int     `json:"n_second"`
	Total      *int     `json:"total"`
	EnrolTotal *int     `json:"enrol_total"`
	Power      *float64 `json:"power"`
	Alpha      *float64 `json:"alpha"`
	Sides      *int     `json:"sides"`
	Method     *string  `json:"method"`
	Events     *int     `json:"events"`
	Clusters   *int     `json:"clusters"`
}

// Figure is the judgement of one stated figure.
type Figure struct {
	// Name is the stated figure: "n", "n_second", "total", "enrol_total",
	// "events" or "clusters".
	Name   string `json:"name"`
	Stated int    `json:"stated"`
	// Recomputed is the figure the recheck gives.
	Recomputed int `json:"recomputed"`
	// Difference is (stated − recomputed) / recomputed; for enrol_total,
	// (Analysable − recomputed analysable total) / recomputed analysable
	// total, since an enrolment is judged by what it yields.
	Difference float64 `json:"difference"`
	// Analysable is, for enrol_total only, the analysable total the stated
	// enrolment yields after the assumed attrition: ⌊enrolment × (1 −
	// attrition)⌋ per group, the enrolment split by the allocation.
	Analysable *int `json:"analysable,omitempty"`
	// Power is the power the stated figure gives (nil when not computed).
	Power *float64 `json:"power"`
	// Judgement is "consistent", "too small" or "too large".
	Judgement string `json:"judgement"`
	// Why says how the judgement was reached, in one sentence.
	Why string `json:"why"`
}

// Detectable is the smallest effect detectable at a power. For a
// precision survey it is the margin the stated size achieves: Scale
// "margin", Power 0, the margin in Upper.
type Detectable struct {
	Power float64 `json:"power"`
	// Scale is the effect key the effect is stated on.
	Scale string   `json:"scale"`
	Lower *float64 `json:"lower"`
	Upper *float64 `json:"upper"`
}

// MethodN is the recomputed size by one method.
type MethodN struct {
	Method     string `json:"method"`
	Name       string `json:"name"`
	N          []int  `json:"n"`
	Total      int    `json:"total"`
	EnrolTotal int    `json:"enrol_total"`
	// Named marks the method the protocol named (or the default).
	Named bool `json:"named"`
}

// Diagnosis is a slip, or a pair of slips, that reproduces a stated
// figure.
type Diagnosis struct {
	// Slips are the slip ids (one, or a pair).
	Slips []string `json:"slips"`
	// Figure is the stated figure reproduced ("n", "total", ...).
	Figure string `json:"figure"`
	// Reproduces is the figure the slips yield.
	Reproduces int `json:"reproduces"`
	// Distance is |reproduced − stated| / stated.
	Distance float64 `json:"distance"`
	// Tied lists the other entries that yield the same figure (a pair
	// written "a + b"); each of them has its entry in the diagnosis too.
	Tied        []string `json:"tied,omitempty"`
	Explanation string   `json:"explanation"`
}

// Sensitivity is the size required when one assumption is made less
// favourable.
type Sensitivity struct {
	Key string `json:"key"`
	// Change is the fraction by which the assumption was made less
	// favourable (0.1 or 0.2).
	Change float64 `json:"change"`
	// From and To are the assumption's value before and after.
	From float64 `json:"from"`
	To   float64 `json:"to"`
	// N is the first group's analysable size required; Total the total
	// analysable (nil when the plan fails, with Error saying why).
	// Entries are sorted by EnrolTotal, then Total, largest first.
	N     *int `json:"n"`
	Total *int `json:"total"`
	// EnrolTotal is the enrolment required, after inflation for loss
	// (the attrition moves this figure only).
	EnrolTotal *int   `json:"enrol_total"`
	Error      string `json:"error,omitempty"`
}

// Reporting lists the reporting elements given and missing, with the
// guideline items they serve.
type Reporting struct {
	Given      []string `json:"given"`
	Missing    []string `json:"missing"`
	Guidelines []string `json:"guidelines"`
}
