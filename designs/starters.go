package designs

import (
	"embed"
	"fmt"
	"slices"
	"strconv"
	"strings"
)

//go:embed starters/*.yaml
var starters embed.FS

// StarterChoice is one starter of `enough new`: the design, goal and
// outcome that select it, and what it plans, in a few words.
type StarterChoice struct {
	Design, Goal, Outcome, Words string
}

// Starters lists every starter, in the order `enough new` shows them.
var Starters = []StarterChoice{
	{"cohort", "", "", "binary outcome"},
	{"cohort", "", "continuous", "difference in means"},
	{"cohort", "", "rate", "events over person-time"},
	{"cohort", "precision", "", "estimate a risk ratio"},
	{"case-control", "", "", "binary exposure"},
	{"case-control", "precision", "", "estimate an odds ratio"},
	{"trial", "", "", "binary outcome"},
	{"trial", "", "continuous", "difference in means"},
	{"trial", "", "time-to-event", "hazard ratio"},
	{"cross-sectional", "", "", "compare two prevalences"},
	{"cross-sectional", "", "continuous", "compare two means"},
	{"cross-sectional", "precision", "", "estimate one prevalence"},
	{"cross-sectional", "precision", "continuous", "estimate one mean"},
	{"cross-sectional", "accuracy", "", "sensitivity and specificity"},
}

// Command is the `enough new` command line that prints the starter.
func (c StarterChoice) Command() string {
	cmd := "enough new " + c.Design
	if c.Goal != "" {
		cmd += " --goal " + c.Goal
	}
	if c.Outcome != "" {
		cmd += " --outcome " + c.Outcome
	}
	return cmd
}

// Starter returns a commented starter specification for a design; goal
// selects the variant ("comparison"; "precision" for a cross-sectional
// survey, a cohort's risk ratio or a case-control study's odds ratio;
// "accuracy" for a cross-sectional study of a diagnostic test) and outcome
// the variant of a comparison ("binary"; "continuous" for a cohort, a
// trial, a cross-sectional comparison or a survey of a mean;
// "time-to-event" for a trial; "rate" for a cohort).
// The errors name what was given and what is allowed, for `enough new`.
func Starter(design, goal, outcome string) ([]byte, error) {
	name, err := starterName(design, goal, outcome)
	if err != nil {
		return nil, err
	}
	return starters.ReadFile("starters/" + name + ".yaml")
}

// starterName returns the name of the starter for a design, goal and
// outcome: the design, "precision", or the design and the outcome
// ("trial-time-to-event").
func starterName(design, goal, outcome string) (string, error) {
	if !slices.Contains(Designs, design) {
		return "", fmt.Errorf("%q is not a design; allowed: %s", design, orList(Designs))
	}
	name := design
	switch {
	case goal == "" || goal == "comparison":
	case goal == "precision" && design == "cross-sectional":
		name = "precision"
	case goal == "precision" && (design == "cohort" || design == "case-control"):
		name = design + "-precision"
	case goal == "accuracy" && design == "cross-sectional":
		name = "accuracy"
	case goal == "precision" || goal == "accuracy":
		return "", fmt.Errorf("--goal %s does not apply to design %s; allowed: comparison (or leave --goal out)%s", goal, design, map[bool]string{true: "", false: " or precision"}[design == "trial"])
	default:
		return "", fmt.Errorf("--goal %q is not a goal; allowed: comparison, precision (cross-sectional, cohort, case-control) or accuracy (cross-sectional)", goal)
	}
	switch outcome {
	case "", "binary":
	case "continuous", "time-to-event", "rate":
		switch {
		case name == "precision" && outcome == "continuous":
			name += "-" + outcome
		case name == "precision" || name == "accuracy" || strings.HasSuffix(name, "-precision"):
			return "", fmt.Errorf("--outcome %s does not apply to --goal %s with design %s; allowed: %s", outcome, goal, design, starterOutcomes(name))
		case outcome == "continuous" && design != "case-control", outcome == "time-to-event" && design == "trial", outcome == "rate" && design == "cohort":
			name += "-" + outcome
		default:
			return "", fmt.Errorf("--outcome %s does not apply to design %s; allowed: %s", outcome, design, starterOutcomes(name))
		}
	default:
		return "", fmt.Errorf("--outcome %q is not an outcome; allowed: %s", outcome, starterOutcomes(name))
	}
	return name, nil
}

// estimating reports whether the starter named name sizes a study to a
// stated precision (no test, so no power).
func estimating(name string) bool {
	return name == "accuracy" || name == "precision" || strings.HasSuffix(name, "-precision") || strings.HasPrefix(name, "precision-")
}

// starterOutcomes lists the outcomes that have a starter for a design (or
// for "precision", the precision survey).
func starterOutcomes(design string) string {
	switch design {
	case "precision":
		return "binary (one prevalence) or continuous (one mean)"
	case "accuracy":
		return "binary (a study of accuracy estimates sensitivity and specificity)"
	case "cohort-precision":
		return "binary (the risk ratio is estimated)"
	case "case-control-precision":
		return "binary (the odds ratio is estimated)"
	case "trial":
		return "binary, continuous or time-to-event"
	case "case-control":
		return "binary (a case-control study compares exposure between cases and controls)"
	case "cohort":
		return "binary, continuous or rate"
	}
	return "binary or continuous"
}

// ReviewStarter returns a commented starter for `enough review`: the
// starter of the design with a claimed block for what the protocol states
// and a placeholder "[as stated, e.g. …]" in place of every value the
// reviewer copies from the protocol. It does not parse until the
// placeholders are filled in, on purpose: a review of example values would
// be a review of nobody's protocol. The errors are those of Starter.
func ReviewStarter(design, goal, outcome string) ([]byte, error) {
	name, err := starterName(design, goal, outcome)
	if err != nil {
		return nil, err
	}
	data, err := starters.ReadFile("starters/" + name + ".yaml")
	if err != nil {
		return nil, err
	}
	var out []string
	header, interim := true, false
	for _, line := range strings.Split(strings.TrimRight(string(data), "\n"), "\n") {
		// The interim block is offered for what the protocol states.
		if strings.HasPrefix(line, "# Interim analyses") {
			interim = true
			out = append(out, interimLines()...)
			continue
		}
		if interim && strings.HasPrefix(line, "#") {
			continue
		}
		interim = false
		if header {
			switch {
			case strings.HasPrefix(line, "# Starter specification: "):
				out = append(out, "# Review starter: "+strings.TrimPrefix(line, "# Starter specification: "))
				continue
			case strings.HasPrefix(line, "# Replace every value"):
				out = append(out, reviewHeader(name)...)
				continue
			case strings.HasPrefix(line, "#"):
				out = append(out, line)
				continue
			}
			header = false
		}
		key, rest, _ := strings.Cut(line, ":")
		switch {
		case key == "solve":
			// The claimed block comes first, then the assumptions.
			out = append(out, "")
			out = append(out, claimedBlock(name, starterValue(data, "method"))...)
			out = append(out, "", "# The protocol's assumptions, as it states them.")
		case key == "alpha" || key == "sides" || key == "power" || key == "method":
			// Stated in the claimed block.
		case strings.HasPrefix(line, "# n:") || strings.HasPrefix(line, "# total:"):
			// The stated sizes go in the claimed block.
		case key == "design_effect":
			// Given, even as 1, it marks the design effect as stated: it
			// is offered commented out, for the designs it serves.
			out = append(out, designEffectLines(name)...)
		case strings.HasPrefix(line, "# cluster:"):
			out = append(out, clusterLines()...)
		case key == "title":
			out = append(out, `title: "[the protocol's short title]"`)
		case strings.HasPrefix(line, "  ") && !strings.HasPrefix(line, "  #"):
			// A source: what the protocol cites.
			out = append(out, key+`: "[`+strings.TrimSpace(rest)+`, as the protocol cites it]"`)
		case key != "version" && !strings.HasPrefix(line, "#") && isStarterNumber(rest):
			out = append(out, placeholder(key, rest))
		default:
			out = append(out, line)
		}
	}
	return []byte(strings.Join(out, "\n") + "\n"), nil
}

// designEffectLines offer the design effect in a review starter, commented
// out: stating one (even 1) marks the element design_effect as given, which
// only a clustered or complex design has. A trial is offered the cluster
// block beside it.
func designEffectLines(name string) []string {
	if strings.HasPrefix(name, "trial") {
		return append([]string{
			"# Only for a cluster trial that states a design effect alone, without",
			"# the cluster block below; leave it out for an individually randomised",
			"# trial.",
			commented(`# design_effect: "[as stated, e.g. 1.5]"`, "at least 1"),
		}, clusterLines()...)
	}
	return []string{
		"# Only for a clustered or complex design (cluster sampling): the design",
		"# effect the protocol applies; leave it out for a simple random sample.",
		commented(`# design_effect: "[as stated, e.g. 1.5]"`, "at least 1"),
	}
}

// clusterLines offer the cluster block of a cluster trial in a review
// starter, commented out, beside claimed.clusters: the mean cluster size
// and the intracluster correlation the protocol assumes.
func clusterLines() []string {
	return []string{
		"# A cluster trial: the mean cluster size and the intracluster correlation",
		"# (ICC) the protocol assumes; the clusters it states per arm go in",
		"# claimed.clusters.",
		"# cluster:",
		commented(`#   size: "[as stated, e.g. 20]"`, "mean participants per cluster, at least 2"),
		commented(`#   icc: "[as stated, e.g. 0.05]"`, "in [0, 1)"),
	}
}

// interimLines offer the interim block in a review starter, commented
// out, for a protocol that plans interim analyses.
func interimLines() []string {
	return []string{
		"# Interim analyses, when the protocol plans them (a group-sequential",
		"# trial): uncomment and copy its looks and boundary (and its timing and",
		"# spending function when it states them; see the README). Its stated",
		"# sizes are then the maximum.",
		"# interim:",
		commented(`#   looks: "[as stated, e.g. 3]"`, "analyses, the final one included: 2 to 10"),
		commented(`#   boundary: "[as stated, e.g. obrien-fleming]"`, "pocock, obrien-fleming or spending"),
	}
}

// reviewHeader says how to fill in a review starter.
func reviewHeader(name string) []string {
	lines := []string{
		"# For `enough review`, which rechecks the sample size a protocol states.",
		`# Replace each "[…]", brackets and quotes included, with what the protocol`,
		`# states: 0.25, not "0.25" or 25%: proportions, power and alpha are`,
		"# fractions (0.8 for 80%). Delete the line of anything the protocol does",
		"# not state: the review lists it as missing,",
	}
	if estimating(name) {
		return append(lines[:len(lines)-1], "# not state: the review lists it as missing.")
	}
	return append(lines,
		"# and assumes the usual convention where there is one (alpha 0.05, a",
		"# two-sided test, 1:1 allocation).")
}

// starterColumn is the column of the comments in a review starter.
const starterColumn = 40

// commented writes line with comment at starterColumn.
func commented(line, comment string) string {
	return line + strings.Repeat(" ", max(1, starterColumn-len([]rune(line)))) + "# " + comment
}

// claimedBlock is the claimed block of a review starter for the starter
// named name (see starterName); method is the starter's method, shown as an
// example.
func claimedBlock(name, method string) []string {
	lines := []string{
		"# What the protocol states in its sample-size section. The sizes are",
		"# analysable numbers, before any allowance for loss; enrol_total is the",
		"# number it will recruit after that allowance.",
		"claimed:",
	}
	first, second := "needed in the intervention arm", "needed in the control arm, when the arms differ"
	switch {
	case name == "case-control":
		first, second = "cases needed", "controls needed, when their number differs"
	case name == "case-control-precision":
		first, second = "cases needed", "controls needed, when their number differs"
	case strings.HasPrefix(name, "cohort"):
		first, second = "exposed participants needed", "unexposed participants needed, when their number differs"
	}
	if strings.HasPrefix(name, "cross-sectional") || strings.HasPrefix(name, "precision") || name == "accuracy" {
		who, enrol := "the respondents needed", "the number to survey, after allowing for non-response"
		if name == "accuracy" {
			who, enrol = "the participants with a usable result needed", "the number to enrol, after allowing for unusable results"
		}
		lines = append(lines,
			commented(`  total: "[as stated, e.g. 900]"`, who),
			commented(`  enrol_total: "[as stated, e.g. 1000]"`, enrol))
	} else {
		lines = append(lines,
			commented(`  n: "[as stated, e.g. 250]"`, first),
			commented(`  # n_second: "[as stated, e.g. 500]"`, second),
			commented(`  # total: "[as stated, e.g. 500]"`, "or the total alone, in place of n and n_second"),
			commented(`  enrol_total: "[as stated, e.g. 560]"`, "the number it will recruit, after allowing for loss"))
	}
	if name == "trial-time-to-event" {
		lines = append(lines, commented(`  events: "[as stated, e.g. 380]"`, "the events the protocol says are needed"))
	}
	if !estimating(name) {
		lines = append(lines,
			`  power: "[as stated, e.g. 0.8]"`,
			`  alpha: "[as stated, e.g. 0.05]"`,
			commented(`  sides: "[as stated, e.g. 2]"`, "1 or 2"))
	}
	if method != "" {
		lines = append(lines, commented("  # method: "+method, "only when the protocol names its method (see `enough methods`)"))
	}
	if strings.HasPrefix(name, "trial") && name != "trial-time-to-event" {
		lines = append(lines, commented(`  # clusters: "[as stated, e.g. 12]"`, "cluster trials: the clusters per arm (with the cluster block below)"))
	}
	lines = append(lines, commented("  # tolerance_n: 0.05", "a stated size within 5% of the recomputed one is consistent"))
	if estimating(name) {
		// An estimate has no power to be within.
		return lines
	}
	return append(lines, commented("  # tolerance_power: 0.02", "so is one whose power is within 2 points of the stated power"))
}

// starterValue returns the value a starter gives a top-level key ("" when
// it gives none).
func starterValue(data []byte, key string) string {
	for _, line := range strings.Split(string(data), "\n") {
		if k, rest, ok := strings.Cut(line, ":"); ok && k == key {
			v, _, _ := strings.Cut(rest, "#")
			return strings.TrimSpace(v)
		}
	}
	return ""
}

// isStarterNumber reports whether the value part of a starter's line (after
// the colon) is a number.
func isStarterNumber(rest string) bool {
	v, _, _ := strings.Cut(rest, "#")
	_, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
	return err == nil
}

// placeholder writes a starter's line with its value replaced by "[as
// stated, e.g. VALUE]", its comment kept.
func placeholder(key, rest string) string {
	v, comment, hasComment := strings.Cut(rest, "#")
	line := key + `: "[as stated, e.g. ` + strings.TrimSpace(v) + `]"`
	if !hasComment {
		return line
	}
	return commented(line, strings.TrimSpace(comment))
}
