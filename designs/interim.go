package designs

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"sync"

	"gopkg.in/yaml.v3"

	"enough/power"
)

// Interim is a trial's interim block: a group-sequential design with
// efficacy boundaries at Looks analyses (the final one included) at the
// information fractions Timing.
type Interim struct {
	// Looks is K, from 2 to 10; Timing the information fractions of the
	// looks, increasing and ending at 1 (k/K by default).
	Looks  int
	Timing []float64
	// Boundary is pocock, obrien-fleming or spending; Spending the
	// spending function of spending (obrien-fleming-type, pocock-type or
	// power) and Rho the power family's exponent.
	Boundary string
	Spending string
	Rho      float64
	// EqualTiming says the timing was left to its default.
	EqualTiming bool

	mu    sync.Mutex
	cache map[interimKey]*interimDesign
}

// interimKey identifies a design's boundaries: its alpha and sides.
type interimKey struct {
	alpha float64
	sides int
}

// interimDesign is a design's boundaries and the inflation factors found
// so far, by target power.
type interimDesign struct {
	seq       *power.Sequential
	inflation map[float64]float64
	drift     map[float64]float64
}

// InterimMethods are the methods whose size the interim block inflates: those
// whose test statistic is a z statistic.
var InterimMethods = []string{"fleiss", "kelsey", "schlesselman", "z", "farrington-manning", "blackwelder", "schoenfeld", "freedman"}

// BoundaryFamily describes a boundary family or spending function of the
// interim block for `enough methods`.
type BoundaryFamily struct {
	ID, Name, Note, Citation string
}

// BoundaryFamilies lists the interim block's boundaries and spending
// functions.
var BoundaryFamilies = []BoundaryFamily{
	{"pocock", "Pocock, constant boundary", "boundary: pocock — |Z_k| ≥ C at every look; equally spaced looks only", "Pocock SJ (1977). Group sequential methods in the design and analysis of clinical trials. Biometrika 64:191-199"},
	{"obrien-fleming", "O'Brien-Fleming, boundary falling as √(K/k)", "boundary: obrien-fleming — |Z_k| ≥ C √(K/k); equally spaced looks only", "O'Brien PC, Fleming TR (1979). A multiple testing procedure for clinical trials. Biometrics 35:549-556"},
	{"obrien-fleming-type", "alpha spending, O'Brien-Fleming type", "boundary: spending, spending_function: obrien-fleming-type — α(t) = 2 − 2Φ(z_{1−α/2}/√t) (one-sided: 1 − Φ(z_{1−α}/√t)); any increasing timing", "Lan KKG, DeMets DL (1983). Discrete sequential boundaries for clinical trials. Biometrika 70:659-663"},
	{"pocock-type", "alpha spending, Pocock type", "boundary: spending, spending_function: pocock-type — α(t) = α ln(1 + (e − 1) t); any increasing timing", "Lan KKG, DeMets DL (1983). Discrete sequential boundaries for clinical trials. Biometrika 70:659-663"},
	{"power", "alpha spending, power family", "boundary: spending, spending_function: power, rho: ρ — α(t) = α t^ρ, ρ > 0; any increasing timing", "Kim K, DeMets DL (1987). Design and analysis of group sequential tests based on the type I error spending rate function. Biometrika 74:149-154"},
}

// interimBoundaries are the boundary families of the interim block.
var interimBoundaries = identifiers(boundaryFamilies)

// boundaryFamilies and spendingFunctions are the engine's families and
// spending functions, in the order of interimBoundaries and
// interimSpending, whose names are theirs.
var (
	boundaryFamilies  = []power.BoundaryFamily{power.Pocock, power.OBrienFleming, power.Spending}
	spendingFunctions = []power.SpendingFunction{power.OBrienFlemingType, power.PocockType, power.PowerFamily}
)

// identifiers are the String forms of xs.
func identifiers[T fmt.Stringer](xs []T) []string {
	out := make([]string, len(xs))
	for i, x := range xs {
		out[i] = x.String()
	}
	return out
}

// interimSpending are the spending functions of boundary: spending.
var interimSpending = identifiers(spendingFunctions)

// interimKeys are the keys of the interim map.
var interimKeys = map[string]string{
	"looks":             "the number of analyses, the final one included, a whole number from 2 to 10",
	"timing":            "the information fractions of the looks, a list of increasing numbers in (0, 1] ending at 1, one per look (default: equally spaced)",
	"boundary":          "pocock, obrien-fleming (equally spaced looks) or spending",
	"spending_function": "with boundary spending: obrien-fleming-type, pocock-type or power",
	"rho":               "the exponent of the power spending function α t^rho, a number above 0 and at most 20",
}

// family returns the engine's description of the block, at alpha and sides.
func (iv *Interim) family(alpha float64, sides int) power.GroupSequential {
	g := power.GroupSequential{Timing: iv.Timing, Alpha: alpha, Sides: sides, Rho: iv.Rho}
	if i := slices.Index(interimBoundaries, iv.Boundary); i >= 0 {
		g.Family = boundaryFamilies[i]
	}
	if i := slices.Index(interimSpending, iv.Spending); i >= 0 && g.Family == power.Spending {
		g.Function = spendingFunctions[i]
	}
	return g
}

// design returns the boundaries at alpha and sides, computed once.
func (iv *Interim) design(alpha float64, sides int) (*interimDesign, error) {
	iv.mu.Lock()
	defer iv.mu.Unlock()
	k := interimKey{alpha, sides}
	if d := iv.cache[k]; d != nil {
		return d, nil
	}
	seq, err := iv.family(alpha, sides).Boundaries()
	if err != nil {
		return nil, err
	}
	if iv.cache == nil {
		iv.cache = map[interimKey]*interimDesign{}
	}
	d := &interimDesign{seq: seq, inflation: map[float64]float64{}, drift: map[float64]float64{}}
	iv.cache[k] = d
	return d, nil
}

// Inflation returns the inflation factor R of the design at alpha and
// sides for a target power (see [power.Sequential.Inflation]).
func (iv *Interim) Inflation(alpha float64, sides int, target float64) (float64, error) {
	d, err := iv.design(alpha, sides)
	if err != nil {
		return math.NaN(), err
	}
	iv.mu.Lock()
	r, ok := d.inflation[target]
	iv.mu.Unlock()
	if ok {
		return r, nil
	}
	r, err = d.seq.Inflation(target)
	if err != nil {
		return math.NaN(), err
	}
	iv.mu.Lock()
	d.inflation[target] = r
	iv.mu.Unlock()
	return r, nil
}

// Sequential returns the boundaries at alpha and sides.
func (iv *Interim) Sequential(alpha float64, sides int) (*power.Sequential, error) {
	d, err := iv.design(alpha, sides)
	if err != nil {
		return nil, err
	}
	return d.seq, nil
}

// driftOf is the drift on the z scale of a test whose fixed-sample power
// (counted on the side of the effect) is p at level alpha with sides
// sides: θ = z_{1−α/sides} + Φ⁻¹(p). For a method whose size is
// proportional to (z_α + z_β)², the group-sequential power at the drift
// of the maximum size is exactly the power that size was planned for.
func driftOf(p, alpha float64, sides int) float64 {
	const edge = 1e-15
	p = math.Min(math.Max(p, edge), 1-edge)
	return power.ZAlpha(alpha, sides) + power.ZPower(p)
}

// sequentialPower is the group-sequential power at the drift of a fixed
// power p.
func (iv *Interim) sequentialPower(p, alpha float64, sides int) float64 {
	seq, err := iv.Sequential(alpha, sides)
	if err != nil {
		return math.NaN()
	}
	return seq.Power(driftOf(p, alpha, sides))
}

// BoundaryWords names the block's boundary in the summary: "Pocock",
// "O'Brien-Fleming", or "alpha spending with the O'Brien-Fleming-type
// function (Lan & DeMets 1983)".
func (iv *Interim) BoundaryWords() string {
	switch iv.Boundary {
	case "pocock":
		return "Pocock (1977)"
	case "obrien-fleming":
		return "O'Brien & Fleming (1979)"
	}
	switch iv.Spending {
	case "pocock-type":
		return "alpha spending with the Pocock-type function α ln(1 + (e − 1) t) (Lan & DeMets 1983)"
	case "power":
		return fmt.Sprintf("alpha spending with the power function α t^%s (Kim & DeMets 1987)", strconv.FormatFloat(iv.Rho, 'g', -1, 64))
	}
	return "alpha spending with the O'Brien-Fleming-type function (Lan & DeMets 1983)"
}

// TimingWords writes the timing as fractions: "0.25, 0.5, 0.75 and 1".
func (iv *Interim) TimingWords() string {
	parts := make([]string, len(iv.Timing))
	for i, t := range iv.Timing {
		parts[i] = strconv.FormatFloat(t, 'g', 4, 64)
		if iv.EqualTiming && i < len(iv.Timing)-1 && len(iv.Timing) != 2 && len(iv.Timing) != 4 && len(iv.Timing) != 5 && len(iv.Timing) != 8 && len(iv.Timing) != 10 {
			// 1/3 rather than 0.3333: the looks' fractions as written.
			parts[i] = fmt.Sprintf("%d/%d", i+1, len(iv.Timing))
		}
	}
	return andList(parts)
}

// buildInterim reads the interim block of a trial.
func (r *reader) buildInterim(s *Spec) {
	ie := r.get("interim")
	if ie == nil || r.refused["interim"] {
		return
	}
	fail := func(e *entry, format string, args ...any) {
		r.refuse(r.errAt(e, format, args...))
		r.refused["interim"] = true
	}
	switch {
	case s.Design != "trial":
		fail(ie, "applies to design trial only; allowed: leave interim out")
		return
	case s.Hypothesis == "equivalence":
		fail(ie, "is not planned for hypothesis equivalence, whose two one-sided tests need boundaries of their own; allowed: hypothesis superiority or non-inferiority, or no interim")
		return
	case s.Pairing != "":
		fail(ie, "is not planned for a %s design yet; allowed: a parallel-group trial, or no interim", s.Pairing)
		return
	case s.Solve == "effect":
		fail(r.get("solve"), "effect is not available with interim analyses: the boundaries and their inflation are planned for a stated effect; allowed: n or power")
		return
	case !slices.Contains(InterimMethods, s.Method):
		fail(r.get("method"), "%s is not available with interim: its test is not a z statistic whose size the inflation factor scales; allowed with interim: %s", s.Method, orList(InterimMethods))
		return
	}
	m := r.nested["interim"]
	iv := &Interim{}
	ok := true
	// A review starter's placeholders, each named at once.
	for _, k := range []string{"boundary", "spending_function"} {
		if e := m[k]; e != nil && isPlaceholder(e.node) {
			r.refuse(r.errAt(e, "%s is a placeholder still to fill in; allowed: %s", show(e.node), interimKeys[k]))
			r.refused["interim"], ok = true, false
		}
	}
	// looks
	if e := m["looks"]; e != nil {
		var k float64
		if !r.nestedNum("interim", ie, "looks", func(x float64) bool { return x >= 2 && x <= power.MaxLooks && x == math.Trunc(x) }, true, &k) {
			ok = false
		}
		iv.Looks = int(k)
	}
	// timing
	if e := m["timing"]; e != nil {
		if e.node.Kind != yaml.SequenceNode {
			fail(e, "%s is not a list; allowed: %s", show(e.node), interimKeys["timing"])
			return
		}
		prev := 0.0
		for i, n := range e.node.Content {
			var t float64
			_, err := fmt.Sscan(strings.ReplaceAll(n.Value, "_", ""), &t)
			if n.Kind != yaml.ScalarNode || (n.Tag != "!!int" && n.Tag != "!!float") || err != nil {
				fail(e, "look %d's fraction %s is not a number; allowed: %s", i+1, show(n), interimKeys["timing"])
				return
			}
			if !(t > prev && t <= 1) {
				fail(e, "look %d's fraction %g does not increase from %g; allowed: %s", i+1, t, prev, interimKeys["timing"])
				return
			}
			iv.Timing = append(iv.Timing, t)
			prev = t
		}
		switch {
		case len(iv.Timing) < 2 || len(iv.Timing) > power.MaxLooks:
			fail(e, "has %d fractions; allowed: 2 to %d, one per look", len(iv.Timing), power.MaxLooks)
			return
		case iv.Timing[len(iv.Timing)-1] != 1:
			fail(e, "ends at %g; allowed: %s", iv.Timing[len(iv.Timing)-1], interimKeys["timing"])
			return
		case iv.Looks != 0 && iv.Looks != len(iv.Timing):
			fail(e, "has %d fractions for %d looks; allowed: one fraction per look", len(iv.Timing), iv.Looks)
			return
		}
		iv.Looks = len(iv.Timing)
	}
	if iv.Looks == 0 {
		if ok {
			fail(ie, "has no looks; allowed: looks (%s), or timing", interimKeys["looks"])
		}
		return
	}
	if iv.Timing == nil {
		iv.Timing, iv.EqualTiming = power.EqualTiming(iv.Looks), true
	} else {
		iv.EqualTiming = true
		for i, t := range iv.Timing {
			if math.Abs(t-float64(i+1)/float64(iv.Looks)) > 1e-9 {
				iv.EqualTiming = false
			}
		}
	}
	if !ok {
		return
	}
	// boundary
	be := m["boundary"]
	if be == nil {
		fail(ie, "has no boundary; allowed: boundary: %s", orList(interimBoundaries))
		return
	}
	// word reads a word of the block among those allowed.
	word := func(e *entry, allowed []string) (string, bool) {
		v := strings.TrimSpace(e.node.Value)
		if e.node.Kind == yaml.ScalarNode && slices.Contains(allowed, v) {
			return v, true
		}
		msg := fmt.Sprintf("%s is not allowed; allowed: %s", show(e.node), orList(allowed))
		if near, ok := nearest(v, allowed); ok {
			msg += fmt.Sprintf(" (did you mean %q?)", near)
		}
		fail(e, "%s", msg)
		return "", false
	}
	if iv.Boundary, ok = word(be, interimBoundaries); !ok {
		return
	}
	se := m["spending_function"]
	switch {
	case iv.Boundary != "spending" && se != nil:
		fail(se, "applies to boundary spending only; allowed: boundary: spending, or leave spending_function out")
		return
	case iv.Boundary != "spending" && !iv.EqualTiming:
		fail(m["timing"], "is not equally spaced, which %s boundaries need; allowed: equally spaced looks, or boundary: spending with a spending_function, which takes any increasing timing", iv.Boundary)
		return
	case iv.Boundary == "spending" && se == nil:
		fail(ie, "has boundary spending but no spending_function; allowed: spending_function: %s", orList(interimSpending))
		return
	case iv.Boundary == "spending":
		if iv.Spending, ok = word(se, interimSpending); !ok {
			return
		}
	}
	re := m["rho"]
	switch {
	case iv.Spending == "power":
		if !r.nestedNum("interim", ie, "rho", func(x float64) bool { return x > 0 && x <= 20 }, true, &iv.Rho) {
			r.refused["interim"] = true
			return
		}
	case re != nil:
		fail(re, "applies to spending_function power only; allowed: spending_function: power, or leave rho out")
		return
	}
	if !ok {
		return
	}
	s.Interim = iv
}

// interimFigures fills result.interim: the boundaries at each look, the
// participants (and events) by then, the probability of stopping there
// under the planned effect, and the expected sizes.
func interimFigures(s *Spec, ans *Answer, sv *solved, tr *trail) error {
	iv := s.Interim
	alpha, sides := sv.e.alpha, s.Sides
	seq, err := iv.Sequential(alpha, sides)
	if err != nil {
		return err
	}
	p := sv.calc.fixedPower(sv.sz.eff[0], sv.sz.eff[1])
	theta := driftOf(p, alpha, sides)
	target := s.Power
	if s.Solve == "power" && ans.AchievedPower != nil {
		target = *ans.AchievedPower
	}
	out := &InterimResult{Boundary: iv.Boundary, Drift: theta}
	if iv.Boundary == "spending" {
		out.SpendingFunction = iv.Spending
		if iv.Spending == "power" {
			out.Rho = ptr(iv.Rho)
		}
	}
	if target > alpha && target < 1 {
		if r, err := iv.Inflation(alpha, sides, target); err == nil {
			out.Inflation = r
		}
	}
	stop, upper, _ := seq.StoppingCrossing(theta)
	stop0, _ := seq.Stopping(0)
	n := ans.N
	var events, expectedEnd float64
	sc, survival := sv.calc.survival()
	if survival {
		expectedEnd = sc.expectedEvents(sv.sz.eff[0], sv.sz.eff[1])
		events = expectedEnd
		if ans.Events > 0 {
			events = float64(ans.Events)
		}
	}
	en0, en1 := make([]float64, len(n)), make([]float64, len(n))
	var ev0, ev1 float64
	for k, t := range iv.Timing {
		look := InterimLook{Information: t, N: make([]int, len(n)), Z: seq.Z[k], PNominal: seq.PNominal[k],
			AlphaSpent: seq.AlphaSpent[k], StopProbability: stop[k], EfficacyProbability: upper[k]}
		frac := t
		if survival {
			d := min(ceilTol(events), ceilTol(t*events))
			look.Events = ptr(d)
			ev0 += stop0[k] * float64(d)
			ev1 += stop[k] * float64(d)
			// When the look's own events are expected (at most the end).
			tau, entered := sc.lookTime(min(1, float64(d)/expectedEnd), sv.sz.eff[0], sv.sz.eff[1])
			look.Time, frac = ptr(tau), entered
		}
		for g := range n {
			look.N[g] = min(n[g], ceilTol(frac*float64(n[g])))
			en0[g] += stop0[k] * float64(look.N[g])
			en1[g] += stop[k] * float64(look.N[g])
		}
		out.Looks = append(out.Looks, look)
	}
	out.ExpectedNNull, out.ExpectedNAlternative = en0, en1
	if survival {
		out.ExpectedEventsNull, out.ExpectedEventsAlternative = ptr(ev0), ptr(ev1)
	}
	ans.Interim = out
	return nil
}

// lookTime returns the calendar time, from the first entry, at which a
// fraction t of the events expected at the end of a time-to-event trial
// (effective sizes n1, n2) are expected, and the fraction of participants
// entered by then. Entry is uniform over the accrual period: by time τ
// within it, a fraction τ/accrual has entered and been followed for up to
// τ; after it, everyone has, followed for up to τ − accrual after the last
// entry (Lachin & Foulkes 1986, as for the events at the end).
func (c *survivalCalc) lookTime(t, n1, n2 float64) (tau, entered float64) {
	a, f := c.s.Accrual, c.s.FollowUp
	end := a + f
	if t >= 1 {
		return end, 1
	}
	by := func(tau float64) (float64, float64) {
		en := c.entry()
		frac := 1.0
		switch {
		case a > 0 && tau <= a:
			frac = tau / a
			en.Accrual, en.FollowUp = tau, 0
		default:
			en.FollowUp = tau - a
		}
		p1, p2 := c.probabilitiesAt(en)
		return frac * (n1*p1 + n2*p2), frac
	}
	total, _ := by(end)
	x, err := power.FindRoot(func(tau float64) float64 {
		d, _ := by(tau)
		return d - t*total
	}, end*1e-9, end, end*1e-9)
	if err != nil {
		return end, 1
	}
	_, frac := by(x)
	return x, frac
}
