package designs

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"enough/power/reftable"
)

// TestDetectableAgainstReference solves the smallest detectable effect for
// every row of consistency_detect.tsv: the undiluted effect whose diluted
// version reaches the target power at the stated sizes, for t tests, the
// Fleiss formulas, cluster-level t tests and Schoenfeld's formula with
// mixed event probabilities. The values come from an independent R
// implementation (consistency_make.R; each row's source column holds the
// call, e.g. power.t.test(n=80, sd=10, sig.level=0.05, power=0.9,
// strict=TRUE, tol=1e-12)$delta / (1 - na - c)), cross-checked with scipy
// (consistency_check.py).
func TestDetectableAgainstReference(t *testing.T) {
	checked := 0
	for _, row := range reftable.Load(t, "consistency_detect.tsv") {
		id := row["case"]
		dil := fmt.Sprintf("non_adherence: %s\ncontamination: %s\n", row["na"], row["c"])
		var spec string
		switch {
		case strings.HasPrefix(id, "cont-"):
			spec = fmt.Sprintf("outcome: continuous\nmean_difference: 0\nsd: %s\nn: %s\n", row["sd"], row["n1"])
			if row["sides"] == "1" {
				spec += "sides: 1\ndirection: first-higher\n"
			}
		case strings.HasPrefix(id, "rr"):
			method := "fleiss"
			if strings.HasPrefix(id, "rrcc") {
				method = "fleiss-cc"
			}
			spec = fmt.Sprintf("control_risk: %s\nrisk_ratio: 1\nmethod: %s\nn: %s\nn_second: %s\n", row["p2"], method, row["n1"], row["n2"])
		case strings.HasPrefix(id, "crr-"):
			spec = fmt.Sprintf("control_risk: %s\nrisk_ratio: 1\nmethod: fleiss\nn: %s\ncluster: {size: %s, icc: %s}\n", row["p2"], row["N_arm"], row["m"], row["icc"])
		case strings.HasPrefix(id, "cmean-"):
			spec = fmt.Sprintf("outcome: continuous\nmean_difference: 0\nsd: %s\nn: %s\ncluster: {size: %s, icc: %s}\n", row["sd"], row["N_arm"], row["m"], row["icc"])
		case strings.HasPrefix(id, "hr-"):
			spec = fmt.Sprintf("outcome: time-to-event\nhazard_ratio: 1\ncontrol_median: %s\naccrual: %s\nfollow_up: %s\ndropout: %s\nn: %s\nn_second: %s\n",
				row["median"], row["A"], row["F"], row["d"], row["n1"], row["n2"])
		default:
			t.Fatalf("unknown case %s", id)
		}
		spec = fmt.Sprintf("version: 1\ndesign: trial\nsolve: effect\nalpha: %s\npower: %s\n", row["alpha"], row["power"]) + dil + spec
		res := mustPlan(t, spec)
		det := res.Result.Detectable
		for _, side := range []struct {
			col string
			got *float64
		}{{"lower", det.Lower}, {"upper", det.Upper}} {
			if row[side.col] == "NA" {
				continue
			}
			want := row.F(t, side.col)
			if side.got == nil {
				t.Errorf("%s %s: unreachable, want %v (%s)", id, side.col, want, row["source"])
				continue
			}
			checked++
			if math.Abs(*side.got-want) > 1e-6*math.Max(1, math.Abs(want)) {
				t.Errorf("%s %s = %.10g, want %.10g (%s)", id, side.col, *side.got, want, row["source"])
			}
		}
		// The diluted effect is what the analysis sees: for a mean, the
		// undiluted one times 1 − na − c (Lachin & Foulkes 1986).
		if na, c := row.F(t, "na"), row.F(t, "c"); na+c > 0 {
			if det.Diluted == nil {
				t.Errorf("%s: no diluted effects", id)
			} else if res.Outcome == "continuous" && det.Upper != nil {
				if want := *det.Upper * (1 - na - c); math.Abs(*det.Diluted.Upper-want) > 1e-9*math.Abs(want) {
					t.Errorf("%s: diluted upper %v, want %v", id, *det.Diluted.Upper, want)
				}
			}
		} else if det.Diluted != nil {
			t.Errorf("%s: diluted effects without dilution", id)
		}
	}
	if checked < 40 {
		t.Fatalf("only %d values checked", checked)
	}
}

// TestSurvivalMixture checks solving n for time-to-event trials with
// non-adherence and contamination: each arm's event probability is the
// mixture of those receiving the intervention and those not. Expected
// values from consistency_events.tsv (independent R implementation; the
// source column holds the formulas).
func TestSurvivalMixture(t *testing.T) {
	for _, row := range reftable.Load(t, "consistency_events.tsv") {
		spec := fmt.Sprintf("version: 1\ndesign: trial\noutcome: time-to-event\nmethod: schoenfeld\nhazard_ratio: %s\ncontrol_median: %s\naccrual: %s\nfollow_up: %s\ndropout: %s\nratio: %s\nalpha: %s\npower: %s\nnon_adherence: %s\ncontamination: %s\n",
			row["HR"], row["median"], row["A"], row["F"], row["d"], row["r"], row["alpha"], row["power"], row["na"], row["c"])
		res := mustPlan(t, spec)
		a := res.Result
		// The table converts ceiling(D*); the plan converts D* itself, so
		// that its size is the smallest whose power reaches the target:
		// n1* = D* / (P1 + r P2) with the table's D* and mixed P1, P2.
		r := row.F(t, "r")
		n1 := row.F(t, "D_star") / (row.F(t, "P1") + r*row.F(t, "P2"))
		if want := []int{int(math.Ceil(n1)), int(math.Ceil(r * n1))}; a.N[0] != want[0] || a.N[1] != want[1] {
			t.Errorf("%s: n = %v, want %v (%s)", row["case"], a.N, want, row["source"])
		}
		if want := row.I(t, "D"); a.Events != want {
			t.Errorf("%s: events = %d, want %d", row["case"], a.Events, want)
		}
		if math.Abs(a.NStar-n1) > 1e-6 {
			t.Errorf("%s: n* = %.10g, want %.10g", row["case"], a.NStar, n1)
		}
	}
}

// TestDirection checks the direction key of one-sided tests: required when
// the effect key states no difference, refused when it disagrees with the
// effect, and the side solved is the one it names.
func TestDirection(t *testing.T) {
	base := "version: 1\ndesign: trial\noutcome: continuous\nsd: 5\nn: 60\npower: 0.8\nsolve: effect\nsides: 1\nalpha: 0.025\n"
	for _, c := range []struct {
		extra, err string
	}{
		{"mean_difference: 0\n", "test.yaml: direction: missing; required with sides: 1 when mean_difference states no difference"},
		{"mean_difference: 2\ndirection: first-lower\n", "test.yaml:11: direction: first-lower disagrees with mean_difference 2, which puts the first group higher; allowed: first-higher"},
		{"mean_difference: 0\ndirection: up\n", "direction: \"up\" is not allowed; allowed: first-higher or first-lower"},
		{"mean_difference: 0\ndirection: first-lower\nhypothesis: equivalence\nmargin: 1\n", "does not apply to hypothesis equivalence"},
	} {
		_, err := Parse("test.yaml", []byte(base+c.extra), nil)
		if err == nil || !strings.Contains(err.Error(), c.err) {
			t.Errorf("%q: error %v, want %q", c.extra, err, c.err)
		}
	}
	_, err := Parse("test.yaml", []byte(strings.Replace(base, "sides: 1\n", "", 1)+"mean_difference: 0\ndirection: first-lower\n"), nil)
	if err == nil || !strings.Contains(err.Error(), "applies to a one-sided test") {
		t.Errorf("two-sided with direction: %v", err)
	}
	// Row cont-1s-na10 of consistency_detect.tsv holds
	// power.t.test(n=60, sd=5, sig.level=0.025, power=0.8,
	// alternative="one.sided", strict=TRUE, tol=1e-12)$delta / (1 − 0.1);
	// without the dilution the answer is 0.9 times that.
	want := math.NaN()
	for _, row := range reftable.Load(t, "consistency_detect.tsv") {
		if row["case"] == "cont-1s-na10" {
			want = 0.9 * row.F(t, "upper")
		}
	}
	for _, c := range []struct {
		dir  string
		sign float64
	}{{"first-lower", -1}, {"first-higher", 1}} {
		res := mustPlan(t, base+"mean_difference: 0\ndirection: "+c.dir+"\n")
		d := res.Result.Detectable
		v := d.Upper
		if c.sign < 0 {
			v = d.Lower
			if d.Upper != nil {
				t.Errorf("%s: a one-sided test detected above no difference too", c.dir)
			}
		} else if d.Lower != nil {
			t.Errorf("%s: a one-sided test detected below no difference too", c.dir)
		}
		if v == nil || math.Abs(*v-c.sign*want) > 1e-6 {
			t.Errorf("%s: detectable %v, want %v", c.dir, v, c.sign*want)
		}
	}
}

// TestOverriddenSource checks that a value set on the command line no
// longer carries the file's source, which spoke of another value, and that
// both the file's value and source are kept beside it.
func TestOverriddenSource(t *testing.T) {
	spec := "version: 1\ndesign: cohort\nunexposed_risk: 0.08\nrisk_ratio: 1.5\npower: 0.8\nsources:\n  unexposed_risk: occupational register\n  risk_ratio: pilot study\n"
	res := mustPlan(t, spec, "unexposed_risk=0.12")
	s := res.Spec
	if _, ok := s.Sources["unexposed_risk"]; ok {
		t.Errorf("the file's source still follows the overridden value: %v", s.Sources)
	}
	if s.Sources["risk_ratio"] != "pilot study" {
		t.Errorf("the source of a key not overridden is lost: %v", s.Sources)
	}
	if fv := s.Overridden["unexposed_risk"]; fv.Value != "0.08" || fv.Source != "occupational register" {
		t.Errorf("overridden = %+v, want the file's 0.08 and its source", fv)
	}
	var a Assumption
	for _, x := range res.Assumptions {
		if x.Key == "unexposed_risk" {
			a = x
		}
	}
	if !a.SetOnCommandLine || a.Value != "0.12" || a.Source != "" || a.File == nil || a.File.Value != "0.08" {
		t.Errorf("assumption %+v", a)
	}
	// A new source given with the new value is kept.
	res = mustPlan(t, spec, "unexposed_risk=0.12", "sources.unexposed_risk=national survey")
	if res.Spec.Sources["unexposed_risk"] != "national survey" || res.Spec.Overridden["unexposed_risk"].Source != "occupational register" {
		t.Errorf("sources %v, overridden %+v", res.Spec.Sources, res.Spec.Overridden)
	}
	// A key the file did not set: marked, with no file value.
	res = mustPlan(t, spec, "attrition=0.1")
	if fv, ok := res.Spec.Overridden["attrition"]; !ok || fv != (FileValue{}) {
		t.Errorf("attrition: %+v %v", fv, ok)
	}
}
