package designs

import (
	"errors"
	"strings"
	"testing"
)

const trialBase = "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.8\n"

// TestParseErrors checks that each kind of bad input is one SpecError naming
// the line, the key and what is allowed.
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
		{"risk at 1", "version: 1\ndesign: trial\ncontrol_risk: 1\nrisk_ratio: 0.75\npower: 0.8\n", nil, 3, "control_risk", "strictly between 0 and 1"},
		{"risk at 0", "version: 1\ndesign: cohort\nunexposed_risk: 0\nrisk_ratio: 2\npower: 0.8\n", nil, 3, "unexposed_risk", "strictly between 0 and 1"},
		{"risk negative", "version: 1\ndesign: trial\ncontrol_risk: -0.2\nrisk_ratio: 0.75\npower: 0.8\n", nil, 3, "control_risk", "strictly between 0 and 1"},
		{"effect past 1", "version: 1\ndesign: cohort\nunexposed_risk: 0.4\nrisk_ratio: 3\npower: 0.8\n", nil, 4, "risk_ratio", "gives a risk of 1.2"},
		{"no effect ratio", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 1\npower: 0.8\n", nil, 4, "risk_ratio", "nothing to detect"},
		{"no effect difference", "version: 1\ndesign: trial\nsolve: power\nn: 100\ncontrol_risk: 0.3\nrisk_difference: 0\n", nil, 6, "risk_difference", "nothing to detect"},
		{"two effects", trialBase + "odds_ratio: 0.7\n", nil, 6, "odds_ratio", "second effect key besides risk_ratio"},
		{"no effect key", "version: 1\ndesign: trial\ncontrol_risk: 0.3\npower: 0.8\n", nil, 0, "", "no effect given"},
		{"power not above alpha", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\npower: 0.04\n", nil, 5, "power", "not above alpha"},
		{"power missing", "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.75\n", nil, 0, "power", "missing"},
		{"alpha too big", trialBase + "alpha: 0.6\n", nil, 6, "alpha", "(0, 0.5]"},
		{"alpha zero", trialBase + "alpha: 0\n", nil, 6, "alpha", "(0, 0.5]"},
		{"sides", trialBase + "sides: 3\n", nil, 6, "sides", "allowed: 1 or 2"},
		{"ratio zero", trialBase + "ratio: 0\n", nil, 6, "ratio", "above 0"},
		{"ratio negative", trialBase + "ratio: -1\n", nil, 6, "ratio", "above 0"},
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
		{"outcome unknown", trialBase + "outcome: survival\n", nil, 6, "outcome", "binary, continuous or time-to-event"},
		{"binary key in continuous", trialBase + "outcome: continuous\n", nil, 3, "control_risk", "does not apply to design trial with a continuous outcome"},
		{"set invalid", trialBase, []string{"alpha=2"}, 0, "alpha", "(0, 0.5]"},
		{"set no equals", trialBase, []string{"alpha"}, 0, "", "key=value"},
		{"set unknown", trialBase, []string{"powr=0.9"}, 0, "powr", `did you mean "power"`},
	} {
		_, err := Parse("s.yaml", []byte(c.spec), c.sets)
		var se *SpecError
		if !errors.As(err, &se) {
			t.Errorf("%s: err = %v, want *SpecError", c.name, err)
			continue
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
