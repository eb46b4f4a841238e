package designs

import (
	"errors"
	"strings"
	"testing"
)

const trialBase = "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.8\n"

// TestParseErrors checks that each kind of bad input is one SpecError naming
// the line, the key and what is allowed, and nothing besides (a problem
// derived from it would be a second).
func TestParseErrors(t *testing.T) {
	big := strings.Repeat("# padding\n", MaxSpecBytes/10+1)
	for _, c := range []struct {
		name string
		spec string
		sets []string
		line int
		key  string
		msg  string // a fragment of the message
	}{
		{"empty", "", nil, 0, "", "file is empty"},
		{"only comments", "# nothing\n", nil, 0, "", "no content"},
		{"too large", big, nil, 0, "", "at most 1 MiB"},
		{"syntax", "version: 1\ndesign: trial\npower: : 0.8\n", nil, 3, "", "YAML syntax error"},
		{"tab", "version: 1\ndesign: trial\nsources:\n\tpower: x\n", nil, 4, "", "tab character"},
		{"not a map", "- a\n- b\n", nil, 1, "", "top level must be a map"},
		{"unknown key", trialBase + "alpah: 0.05\n", nil, 6, "alpah", `did you mean "alpha"`},
		{"duplicate", trialBase + "power: 0.9\n", nil, 6, "power", "given twice (first at line 5)"},
		{"missing version", "design: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.8\n", nil, 0, "version", "missing"},
		{"wrong version", "version: 2\ndesign: trial\n", nil, 1, "version", "allowed: 1"},
		{"bad design", "version: 1\ndesign: trail\n", nil, 2, "design", `did you mean "trial"`},
		{"wrong type", trialBase + "alpha: abc\n", nil, 6, "alpha", `"abc" is not a number`},
		{"percentage", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 80%\n", nil, 5, "power", "is a percentage"},
		{"risk at 1", "version: 1\ndesign: trial\ncontrol_risk: 1\nrisk_ratio: 0.75\npower: 0.8\n", nil, 3, "control_risk", "from 1e-9 to 1 − 1e-9"},
		{"risk at 0", "version: 1\ndesign: cohort\nunexposed_risk: 0\nrisk_ratio: 2\npower: 0.8\n", nil, 3, "unexposed_risk", "from 1e-9 to 1 − 1e-9"},
		{"risk negative", "version: 1\ndesign: trial\ncontrol_risk: -0.2\nrisk_ratio: 0.75\npower: 0.8\n", nil, 3, "control_risk", "from 1e-9 to 1 − 1e-9"},
		{"effect past 1", "version: 1\ndesign: cohort\nunexposed_risk: 0.4\nrisk_ratio: 3\npower: 0.8\n", nil, 4, "risk_ratio", "gives a risk of 1.2"},
		{"no effect ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 1\npower: 0.8\n", nil, 4, "risk_ratio", "nothing to detect"},
		{"no effect difference", "version: 1\ndesign: trial\nsolve: power\nn: 100\ncontrol_risk: 0.3\nrisk_difference: 0\n", nil, 6, "risk_difference", "nothing to detect"},
		{"two effects", trialBase + "odds_ratio: 0.7\n", nil, 6, "odds_ratio", "second effect key besides risk_ratio"},
		{"no effect key", "version: 1\ndesign: trial\ncontrol_risk: 0.3\npower: 0.8\n", nil, 0, "", "no effect given"},
		{"power not above alpha", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.04\n", nil, 5, "power", "not above alpha"},
		{"power missing", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\n", nil, 0, "power", "missing"},
		{"alpha too big", trialBase + "alpha: 0.6\n", nil, 6, "alpha", "[1e-20, 0.5]"},
		{"alpha zero", trialBase + "alpha: 0\n", nil, 6, "alpha", "[1e-20, 0.5]"},
		{"sides", trialBase + "sides: 3\n", nil, 6, "sides", "allowed: 1 or 2"},
		{"ratio zero", trialBase + "ratio: 0\n", nil, 6, "ratio", "from 0.001 to 1000"},
		{"ratio negative", trialBase + "ratio: -1\n", nil, 6, "ratio", "from 0.001 to 1000"},
		{"attrition 1", trialBase + "attrition: 1\n", nil, 6, "attrition", "[0, 1)"},
		{"design effect below 1", trialBase + "design_effect: 0.9\n", nil, 6, "design_effect", "a number from 1 to 1000"},
		{"n below 2", "version: 1\ndesign: trial\nsolve: power\nn: 1\ncontrol_risk: 0.3\nrisk_ratio: 0.75\n", nil, 4, "n", "at least 2"},
		{"n not whole", "version: 1\ndesign: trial\nsolve: power\nn: 10.5\ncontrol_risk: 0.3\nrisk_ratio: 0.75\n", nil, 4, "n", "not a whole number"},
		{"method misfit", trialBase + "method: schlesselman\n", nil, 6, "method", "does not fit design trial"},
		{"method wald on trial", trialBase + "method: wald\n", nil, 6, "method", "does not fit"},
		{"method unknown", trialBase + "method: fleis\n", nil, 6, "method", `did you mean "fleiss"`},
		{"margin", "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.5\n", nil, 5, "margin", "(0, 0.5)"},
		{"other design's key", "version: 1\ndesign: cohort\ncontrol_risk: 0.3\nrisk_ratio: 2\npower: 0.8\n", nil, 3, "control_risk", "does not apply to design cohort"},
		{"ratio in cross-sectional", "version: 1\ndesign: cross-sectional\nexposure_prevalence: 0.3\nunexposed_prevalence: 0.1\nprevalence_ratio: 2\npower: 0.8\nratio: 2\n", nil, 7, "ratio", "exposure_prevalence"},
		{"alpha in precision", "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nmargin: 0.05\nalpha: 0.05\n", nil, 6, "alpha", "margin and confidence"},
		{"solve power precision", "version: 1\ndesign: cross-sectional\ngoal: precision\nexpected_prevalence: 0.3\nsolve: power\n", nil, 5, "solve", "does not apply to a precision survey"},
		{"source of nothing", trialBase + "sources:\n  control_rsk: audit\n", nil, 7, "sources.control_rsk", `did you mean "control_risk"`},
		{"outcome unknown", trialBase + "outcome: survival\n", nil, 6, "outcome", "binary, continuous, time-to-event or rate"},
		{"binary key in continuous", "version: 1\ndesign: trial\noutcome: continuous\ncontrol_risk: 0.3\nmean_difference: 2\nsd: 4\npower: 0.8\n", nil, 4, "control_risk", "does not apply to design trial with a continuous outcome"},
		{"set invalid", trialBase, []string{"alpha=2"}, 0, "alpha", "[1e-20, 0.5]"},
		{"set no equals", trialBase, []string{"alpha"}, 0, "", "key=value"},
		{"set unknown", trialBase, []string{"powr=0.9"}, 0, "powr", `did you mean "power"`},
		{"set unknown beside the file's key", trialBase, []string{"Power=0.9"}, 0, "Power", `did you mean "power"`},
		{"set malformed", trialBase, []string{"alpha=[0.05"}, 0, "alpha", "value is not valid YAML: a [ … ] list is not closed"},
		{"set with a colon in its text", trialBase, []string{`title=Ward rounds: "a" trial`}, 0, "title", "value is not valid YAML"},
		{"set with a quote not closed", trialBase, []string{`title="Ward rounds`}, 0, "title", "value is not valid YAML: a quotation mark is not closed"},
		{"set nested into a number", trialBase, []string{"alpha.x=1"}, 0, "alpha", "has no nested keys"},
		{"unknown key in capitals", trialBase + "ALPHA: 0.01\n", nil, 6, "ALPHA", `unknown key; did you mean "alpha"?`},
		{"unknown key in capitals, given already", trialBase + "POWER: 0.9\n", nil, 6, "POWER", `did you mean "power"? (it is given already, at line 5)`},
		{"another design's key in capitals", "version: 1\ndesign: case-control\ncontrol_exposure: 0.2\nodds_ratio: 2\npower: 0.8\nRISK_RATIO: 2\n", nil, 6, "RISK_RATIO", "keys are written in lower case, and risk_ratio does not apply here either"},
		{"synonym of the reference", "version: 1\ndesign: trial\nbaseline_risk: 0.3\nrisk_ratio: 0.75\npower: 0.8\n", nil, 3, "baseline_risk", `did you mean "control_risk"?`},
		{"dropout in a binary plan", trialBase + "dropout: 0.1\n", nil, 6, "dropout", `did you mean "attrition"?`},
		{"icc at the top level", trialBase + "icc: 0.05\n", nil, 6, "icc", "did you mean cluster: {icc: 0.05}? (icc belongs inside the cluster map)"},
		{"goal on a trial, whatever its value", trialBase + "goal: precison\n", nil, 6, "goal", "applies only to designs cross-sectional, cohort and case-control"},
		{"percentage number", "version: 1\ndesign: trial\ncontrol_risk: 30\nrisk_ratio: 0.75\npower: 0.8\n", nil, 3, "control_risk", "did you mean 0.3?"},
		{"percentage of a ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 75%\npower: 0.8\n", nil, 4, "risk_ratio", "a ratio, not a percentage"},
		{"binary file", "version: 1\x00\x00\x00", nil, 0, "", "is not a text file"},
		{"invalid UTF-8", "version: 1\ndesign: \xff\n", nil, 2, "", "is not a text file"},
		{"colon in a title", "version: 1\ndesign: trial\ntitle: Ward rounds: a trial\n", nil, 3, "", `put it in quotes: title: "Ward rounds: a trial"`},
		// These two made Parse panic before: the direction check read the
		// entry of mean_difference when the two means gave it, and the
		// all-pairs check the entry of ratio when n_second gave it.
		{"direction against the two means", "version: 1\ndesign: trial\noutcome: continuous\nintervention_mean: 3\ncontrol_mean: 5\nsd: 2\npower: 0.8\nsides: 1\ndirection: first-higher\n", nil, 9, "direction", "disagrees with mean_difference -2"},
		{"all pairs with n_second", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\nsolve: power\nn: 100\nn_second: 50\narms: 3\ncomparisons: all-pairs\n", nil, 7, "n_second", "allowed: n_second equal to n (100)"},
	} {
		_, err := Parse("s.yaml", []byte(c.spec), c.sets)
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: err = %v, want *SpecError", c.name, err)
			continue
		}
		if _, several := err.(SpecErrors); several {
			t.Errorf("%s: more than the one problem:\n%v", c.name, err)
		}
		if se.Line != c.line || se.Key != c.key || !strings.Contains(se.Msg, c.msg) {
			t.Errorf("%s: got line %d key %q msg %q; want line %d key %q msg containing %q", c.name, se.Line, se.Key, se.Msg, c.line, c.key, c.msg)
		}
		if strings.Contains(se.Error(), "\n") {
			t.Errorf("%s: message has more than one line: %q", c.name, se.Error())
		}
		if len(c.sets) > 0 && !strings.HasPrefix(se.File, "--set") {
			t.Errorf("%s: file %q does not name --set", c.name, se.File)
		}
	}
}

func TestErrorFormat(t *testing.T) {
	e := &SpecError{File: "a.yaml", Line: 4, Key: "alpha", Msg: "0.7 is out of range; allowed: a number in (0, 0.5]"}
	if got, want := e.Error(), "a.yaml:4: alpha: 0.7 is out of range; allowed: a number in (0, 0.5]"; got != want {
		t.Errorf("got %q, want %q", got, want)
	}
}

func TestOverrides(t *testing.T) {
	s, err := Parse("s.yaml", []byte(trialBase), []string{"power=0.9", "sources.control_risk=registry 2024", "ratio=2"})
	if err != nil {
		t.Fatal(err)
	}
	if s.Power != 0.9 || s.Ratio != 2 || s.Sources["control_risk"] != "registry 2024" {
		t.Errorf("overrides not applied: power %v ratio %v sources %v", s.Power, s.Ratio, s.Sources)
	}
	// The digest is of the file as read, and the overrides are recorded.
	if len(s.Overrides) != 3 || len(s.SHA256) != 64 {
		t.Errorf("overrides %v digest %q", s.Overrides, s.SHA256)
	}
}

// sha256Trial is the digest of trialBase from GNU coreutils sha256sum:
// printf 'version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.8\n' | sha256sum
const sha256Trial = "0f6cdc2b671a04057de21e51bee72a6f3d259d3b1b0f6d430cd17e5c7d19b8c3"

func TestSHA256(t *testing.T) {
	s, err := Parse("s.yaml", []byte(trialBase), nil)
	if err != nil {
		t.Fatal(err)
	}
	if s.SHA256 != sha256Trial {
		t.Errorf("digest %s, want %s", s.SHA256, sha256Trial)
	}
}
