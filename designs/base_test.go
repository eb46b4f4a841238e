package designs

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"math/rand/v2"
	"reflect"
	"slices"
	"strings"
	"testing"

	"enough/examples"
)

// sweepBase is one specification a sweep may start from.
type sweepBase struct {
	name string
	b    *Base
}

// sweepBases returns Bases built from every example (not the review
// protocols) and starter, each as given and with variants that solve n,
// power and effect, look one way, carry a simulate block or adjust for a
// baseline; and from random plans of every outcome, design and hypothesis
// (genPlan), solving n and power.
func sweepBases(t testing.TB, random int) []sweepBase {
	t.Helper()
	type file struct{ name, data string }
	var files []file
	names, _ := fs.Glob(examples.Files, "*.yaml")
	for _, n := range names {
		if strings.HasPrefix(n, "review-") {
			continue
		}
		b, _ := examples.Files.ReadFile(n)
		files = append(files, file{"examples/" + n, string(b)})
	}
	starterFiles, _ := fs.Glob(starters, "starters/*.yaml")
	for _, p := range starterFiles {
		b, _ := starters.ReadFile(p)
		files = append(files, file{p, string(b)})
	}
	if len(files) < 20 {
		t.Fatalf("only %d specifications", len(files))
	}
	// Invented specifications for the effect keys and standard
	// deviations the examples and starters do not use.
	for i, text := range []string{
		"version: 1\ndesign: cohort\nunexposed_risk: 0.1\nexposed_risk: 0.15\npower: 0.8\n",
		"version: 1\ndesign: case-control\ncontrol_exposure: 0.2\ncase_exposure: 0.3\nratio: 2\npower: 0.9\n",
		"version: 1\ndesign: cross-sectional\nunexposed_prevalence: 0.2\nexposed_prevalence: 0.3\nexposure_prevalence: 0.4\npower: 0.8\n",
		"version: 1\ndesign: cross-sectional\nunexposed_prevalence: 0.2\nprevalence_difference: -0.08\nexposure_prevalence: 0.3\npower: 0.8\n",
		"version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 2\nsd_first: 5\nsd_second: 7\npower: 0.8\n",
		"version: 1\ndesign: cohort\noutcome: continuous\nexposed_mean: 12\nunexposed_mean: 10\nsd_first: 4\nsd_second: 4\ntest: t-student\npower: 0.8\n",
		"version: 1\ndesign: trial\noutcome: time-to-event\nhazard_ratio: 0.7\ncontrol_survival: 0.6\ntime: 12\nfollow_up: 12\npower: 0.8\nsides: 1\ndirection: first-lower\n",
		"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.8\narms: 3\ncomparisons: all-pairs\npower: 0.8\n",
	} {
		files = append(files, file{fmt.Sprintf("invented-%d.yaml", i), text})
	}
	r := rand.New(rand.NewPCG(11, 2026))
	for i := 0; i < random; i++ {
		files = append(files, file{fmt.Sprintf("random-%d.yaml", i), genPlan(r).spec})
	}
	var out []sweepBase
	for _, f := range files {
		size := "n=150"
		if strings.Contains(f.data, "design: cross-sectional") {
			size = "total=600"
		}
		for _, sets := range [][]string{
			nil, {"solve=n"}, {"solve=power", size}, {"solve=effect", size},
			{"sides=1"}, {"solve=effect", size, "sides=1"}, {"simulate.replicates=1000", "simulate.n=40"},
			{"baseline_correlation=0.4"}, {"solve=power", size, "n_second=90"}, {"solve=power", size, "n_second=150"}, {"test=t-student"},
		} {
			b, err := NewBase(f.name, []byte(f.data), sets)
			if err != nil {
				continue
			}
			out = append(out, sweepBase{fmt.Sprintf("%s %v", f.name, sets), b})
		}
	}
	return out
}

// fastKeys returns the keys the fast path serves for b, sorted.
func (b *Base) fastKeys() []string {
	keys := make([]string, 0, len(b.fast))
	for k := range b.fast {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}

// trialValues draws values for a key whose specification value is x0:
// near it, within the ranges most keys share, at and beyond the named
// limits and the edges of the whole numbers, whole and not.
func trialValues(r *rand.Rand, x0 float64, k int) []float64 {
	all := []float64{
		x0, x0 * (0.5 + r.Float64()), x0 * (1 + 0.05*r.NormFloat64()), x0 + 1, x0 - 1,
		math.Nextafter(x0, math.Inf(1)), math.Nextafter(x0, math.Inf(-1)), math.Round(x0 * (0.5 + r.Float64())),
		r.Float64(), -r.Float64(), 1 + 3*r.Float64(), 1000 * r.Float64(), 2*r.Float64() - 1,
		0, 1, -1, 0.5, 2, 3, 10, 100, 1e-9, 1 - 1e-9, 1e-10, 1e-6, 1e-6 / 2, 1 - 1e-6, 0.999,
		1000, 1000.5, 1001, 1e6, 1e6 + 1, 1e9, 1e9 + 1, 1e12, 1e300, -1e300, 1 << 53, 1<<53 + 2,
		float64(1 + r.IntN(400)), float64(r.IntN(5)), float64(r.IntN(20000)), math.Ln2, 0.3, 0.05, 0.01, 0.025, 0.8, 0.9,
	}
	out := []float64{x0}
	for len(out) < k {
		out = append(out, all[r.IntN(len(all))])
	}
	return out
}

// planningView is a specification with what does not affect planning
// cleared: the values as written, the overrides and the file's digest.
func planningView(s *Spec) Spec {
	c := *s
	c.Given, c.Overrides, c.Overridden, c.SHA256 = nil, nil, nil, ""
	return c
}

// TestAtFastPathIsRebuild is the property that makes the fast path of At
// one truth with the reader's validation: for specifications built from
// every example and starter (and random plans), and values of each key the
// fast path serves within and beyond its range, alone and several at once,
// the fast path gives exactly the specification the rebuild gives (every
// field that affects planning) and refuses exactly the points the rebuild
// refuses, which then fail with a *SpecError.
func TestAtFastPathIsRebuild(t *testing.T) {
	random, per := 60, 10
	if testing.Short() {
		random, per = 20, 6
	}
	bases := sweepBases(t, random)
	r := rand.New(rand.NewPCG(3, 11))
	valid, invalid := 0, 0
	served := map[string]bool{}
	check := func(sb sweepBase, keys []string, values []float64) {
		t.Helper()
		if fastIsRebuild(t, sb, keys, values) {
			valid++
		} else {
			invalid++
		}
	}
	for _, sb := range bases {
		keys := sb.b.fastKeys()
		for _, k := range keys {
			served[k] = true
			x0 := sb.b.nums[sb.b.fast[k]]
			for _, x := range trialValues(r, x0, per) {
				check(sb, []string{k}, []float64{x})
			}
		}
		// Several keys at once.
		for range per {
			if len(keys) < 2 {
				break
			}
			perm := r.Perm(len(keys))[:min(len(keys), 2+r.IntN(2))]
			var ks []string
			var xs []float64
			for _, j := range perm {
				ks = append(ks, keys[j])
				xs = append(xs, trialValues(r, sb.b.nums[sb.b.fast[keys[j]]], 3)[1+r.IntN(2)])
			}
			check(sb, ks, xs)
		}
	}
	t.Logf("%d specifications; %d valid and %d invalid points; keys served: %d", len(bases), valid, invalid, len(served))
	// Every key the brief lists is served by some specification.
	for _, k := range []string{"risk_ratio", "odds_ratio", "risk_difference", "intervention_risk", "exposed_risk", "case_exposure",
		"exposed_prevalence", "prevalence_ratio", "prevalence_difference", "unexposed_risk", "control_risk", "control_exposure",
		"unexposed_prevalence", "exposure_prevalence", "alpha", "power", "ratio", "attrition", "design_effect",
		"mean_difference", "sd", "sd_first", "sd_second", "sd_difference", "within_correlation", "baseline_correlation",
		"hazard_ratio", "control_median", "accrual", "follow_up", "dropout", "margin", "non_adherence", "contamination",
		"cluster.size", "cluster.icc", "cluster.size_cv", "n", "n_second", "total", "expected_prevalence", "confidence",
		"population", "simulate.n", "simulate.replicates", "simulate.seed"} {
		if !served[k] {
			t.Errorf("no specification has %s served by the fast path", k)
		}
	}
	if valid < 1000 || invalid < 1000 {
		t.Fatalf("only %d valid and %d invalid points checked", valid, invalid)
	}
}

// demoBase is the Base of the demonstration trial, and its text.
func demoBase(t *testing.T) (*Base, []byte) {
	t.Helper()
	data, err := examples.Files.ReadFile("demo-trial.yaml")
	if err != nil {
		t.Fatal(err)
	}
	b, err := NewBase("demo-trial.yaml", data, nil)
	if err != nil {
		t.Fatal(err)
	}
	return b, data
}

// fastIsRebuild checks that the fast path of At gives exactly what the
// rebuild gives for keys set to values (finite values of keys the fast path
// serves), and reports whether the point is valid.
func fastIsRebuild(t testing.TB, sb sweepBase, keys []string, values []float64) bool {
	t.Helper()
	b := sb.b
	var sc Scratch
	got := b.fastAt(&sc, keys, values)
	want, err := b.rebuild(keys, values)
	if got == fastNo {
		t.Fatalf("%s: the fast path does not serve %v = %v", sb.name, keys, values)
	}
	if (got == fastValid) != (err == nil) {
		t.Fatalf("%s: %v = %v: fast path valid %v, rebuild error %v", sb.name, keys, values, got == fastValid, err)
	}
	if err != nil {
		if len(AllSpecErrors(err)) == 0 {
			t.Fatalf("%s: %v = %v: the error is not a *SpecError: %v", sb.name, keys, values, err)
		}
		return false
	}
	if g, w := planningView(&sc.spec), planningView(want); !reflect.DeepEqual(g, w) {
		t.Fatalf("%s: %v = %v: the fast path gives\n%+v\nthe rebuild\n%+v", sb.name, keys, values, g, w)
	}
	return true
}

// FuzzAt is TestAtFastPathIsRebuild for any value of one or two keys the
// fast path serves, in any of the specifications of sweepBases.
func FuzzAt(f *testing.F) {
	bases := sweepBases(f, 20)
	f.Add(uint16(0), uint8(0), 0.5, uint8(1), 0.3)
	f.Add(uint16(7), uint8(3), 1e-9, uint8(3), 2.0)
	f.Add(uint16(400), uint8(5), -1.0, uint8(2), 1000.0)
	f.Fuzz(func(t *testing.T, base uint16, k1 uint8, x1 float64, k2 uint8, x2 float64) {
		sb := bases[int(base)%len(bases)]
		keys := sb.b.fastKeys()
		if len(keys) == 0 || math.IsNaN(x1) || math.IsInf(x1, 0) || math.IsNaN(x2) || math.IsInf(x2, 0) {
			return
		}
		ks, xs := []string{keys[int(k1)%len(keys)]}, []float64{x1}
		if k := keys[int(k2)%len(keys)]; k != ks[0] {
			ks, xs = append(ks, k), append(xs, x2)
		}
		fastIsRebuild(t, sb, ks, xs)
	})
}

// TestAtServesOtherKeys: a key the fast path does not serve (sides, arms)
// is rebuilt, with the reader's answer. (A second effect key takes the
// place of the first: TestAtDisplaces.)
func TestAtServesOtherKeys(t *testing.T) {
	b, data := demoBase(t)
	for _, tc := range []struct {
		key     string
		value   float64
		wantErr string // "" when the point is valid
	}{
		{"sides", 1, ""},
		{"sides", 3, "sides: 3 is not allowed; allowed: 1 or 2"},
		{"arms", 3, ""},
		{"risk_ratio", math.NaN(), "risk_ratio: .nan is not a finite number"},
	} {
		t.Run(tc.key, func(t *testing.T) {
			if _, fast := b.fast[tc.key]; fast && !math.IsNaN(tc.value) {
				t.Fatalf("%s is served by the fast path", tc.key)
			}
			s, err := b.At([]string{tc.key}, []float64{tc.value})
			want, werr := Parse("demo-trial.yaml", data, []string{fmt.Sprintf("%s=%v", tc.key, tc.value)})
			switch {
			case tc.wantErr == "" && err != nil:
				t.Fatalf("error %v", err)
			case tc.wantErr == "":
				if werr != nil {
					t.Fatal(werr)
				}
				if g, w := planningView(s), planningView(want); !reflect.DeepEqual(g, w) {
					t.Fatalf("At gives %+v, Parse with --set %+v", g, w)
				}
			case err == nil || !strings.Contains(err.Error(), tc.wantErr):
				t.Fatalf("error %v, want one containing %q", err, tc.wantErr)
			}
		})
	}
}

// TestAtErrors: an invalid point fails as Parse fails: the same *SpecError,
// naming the key's line in the file.
func TestAtErrors(t *testing.T) {
	b, _ := demoBase(t)
	for _, tc := range []struct {
		keys   []string
		values []float64
		want   string
	}{
		// control_risk 0.18 (demo-trial.yaml) × 6 = 1.08: a risk past 1.
		{[]string{"risk_ratio"}, []float64{6}, "risk_ratio: 6 with control_risk 0.18 gives a risk of 1.08 in the intervention arm"},
		{[]string{"power"}, []float64{0.04}, "power: 0.04 is not above alpha (0.05)"},
		{[]string{"alpha", "power"}, []float64{0.2, 0.15}, "power: 0.15 is not above alpha (0.2)"},
		{[]string{"control_risk"}, []float64{1.5}, "control_risk: 1.5 is out of range"},
		{[]string{"attrition"}, []float64{1}, "attrition: 1 is out of range; allowed: a fraction in [0, 1)"},
	} {
		_, err := b.At(tc.keys, tc.values)
		var se *SpecError
		if !errors.As(err, &se) || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%v = %v: error %v, want a *SpecError containing %q", tc.keys, tc.values, err, tc.want)
		}
		if se != nil && se.Line == 0 {
			t.Errorf("%v: the error names no line: %v", tc.keys, err)
		}
	}
}

// TestCheckKey: a key that does not exist, does not apply or is not
// numeric is refused in one line naming it.
func TestCheckKey(t *testing.T) {
	b, _ := demoBase(t)
	for _, tc := range []struct {
		key  string
		want string // "" when accepted
	}{
		{"risk_ratio", ""},
		{"control_risk", ""},
		{"cluster.icc", ""},
		{"cluster.size", ""},
		{"simulate.n", "simulate.n: does not apply: the specification has no simulate block"},
		{"odds_ratio", ""},
		{"n", "n: does not change the plan: n is what the plan solves"},
		{"risk_ratoi", `risk_ratoi: unknown key; did you mean "risk_ratio"?`},
		{"cluster.iccc", `unknown key; did you mean "cluster.icc"?`},
		{"sd", "sd: does not apply to design trial; it belongs to a continuous outcome"},
		{"expected_prevalence", "expected_prevalence: does not apply to design trial"},
		{"unexposed_risk", `unexposed_risk: does not apply to design trial; it belongs to design cohort; did you mean "control_risk"?`},
		{"margin", "margin: does not apply to design trial; it belongs to hypothesis non-inferiority or equivalence"},
		{"method", "method: is not a number"},
		{"higher_is_better", "higher_is_better: is not a number"},
		{"cluster", "cluster: is not a number"},
		{"sources.control_risk", "sources.control_risk: is not a number"},
		{"alpha.x", "alpha.x: has no nested keys"},
		{"claimed.n", "claimed.n: is read by enough review"},
		{"version", "version: is the version of the specification's format"},
		{"", "no key given"},
	} {
		err := b.CheckKey(tc.key)
		switch {
		case tc.want == "" && err != nil:
			t.Errorf("%q: %v", tc.key, err)
		case tc.want == "":
		case err == nil || !strings.Contains(err.Error(), tc.want):
			t.Errorf("%q: error %v, want one containing %q", tc.key, err, tc.want)
		case strings.Contains(err.Error(), "\n"):
			t.Errorf("%q: the error is not one line: %q", tc.key, err)
		default:
			var se *SpecError
			if !errors.As(err, &se) {
				t.Errorf("%q: %T is not a *SpecError", tc.key, err)
			}
		}
	}
}

// TestScratchReuse: a Scratch reused from point to point, as a sweep's
// worker reuses it (valid and invalid points in turn, then other keys),
// gives every point exactly the specification a new Scratch gives.
func TestScratchReuse(t *testing.T) {
	bases := sweepBases(t, 10)
	r := rand.New(rand.NewPCG(9, 9))
	points := 0
	for _, sb := range bases {
		b := sb.b
		keys := b.fastKeys()
		if len(keys) == 0 {
			continue
		}
		var sc Scratch
		for range 3 {
			ks := []string{keys[r.IntN(len(keys))]}
			if k := keys[r.IntN(len(keys))]; k != ks[0] {
				ks = append(ks, k)
			}
			for range 12 {
				xs := make([]float64, len(ks))
				for i, k := range ks {
					xs[i] = trialValues(r, b.nums[b.fast[k]], 4)[r.IntN(4)]
				}
				got := b.fastAt(&sc, ks, xs)
				var fresh Scratch
				want := b.fastAt(&fresh, ks, xs)
				if got != want {
					t.Fatalf("%s %v=%v: reused scratch %d, new scratch %d", sb.name, ks, xs, got, want)
				}
				if got == fastValid && !reflect.DeepEqual(sc.spec, fresh.spec) {
					t.Fatalf("%s %v=%v: the reused scratch gives\n%+v\na new one\n%+v", sb.name, ks, xs, sc.spec, fresh.spec)
				}
				points++
			}
		}
	}
	if points < 1000 {
		t.Fatalf("only %d points", points)
	}
}

// TestAtDisplaces: a varied key takes the place of the keys that state the
// same assumption another way, as if the file had given it instead.
func TestAtDisplaces(t *testing.T) {
	for _, c := range []struct{ spec, key, instead string }{
		{"version: 1\ndesign: trial\ncontrol_risk: 0.3\nintervention_risk: 0.21\npower: 0.8\nsources:\n  intervention_risk: a pilot\n", "risk_ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.6\npower: 0.8\n"},
		{"version: 1\ndesign: trial\noutcome: continuous\nintervention_mean: 12\ncontrol_mean: 10\nsd: 4\npower: 0.8\n", "mean_difference", "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 0.6\nsd: 4\npower: 0.8\n"},
		{"version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 2\nsd_first: 4\nsd_second: 5\npower: 0.8\n", "sd", "version: 1\ndesign: trial\noutcome: continuous\nmean_difference: 2\nsd: 0.6\npower: 0.8\n"},
		{"version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 200\nn_second: 300\n", "ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 200\nratio: 0.6\n"},
	} {
		b, err := NewBase("s.yaml", []byte(c.spec), nil)
		if err != nil {
			t.Fatal(err)
		}
		got, err := b.At([]string{c.key}, []float64{0.6})
		if err != nil {
			t.Errorf("%s: %v", c.key, err)
			continue
		}
		want, err := Parse("s.yaml", []byte(c.instead), nil)
		if err != nil {
			t.Fatal(err)
		}
		g, _ := Plan(got)
		w, _ := Plan(want)
		if !reflect.DeepEqual(g.Result.N, w.Result.N) || got.EffectKey != want.EffectKey {
			t.Errorf("%s: n %v (%s); want %v (%s)", c.key, g.Result.N, got.EffectKey, w.Result.N, want.EffectKey)
		}
	}
}
