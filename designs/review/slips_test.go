package review_test

import (
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/review"
	"enough/power/reftable"
)

// The slips of issue 10, item 5. Each has one invented protocol under
// testdata/reference/review_slips that commits it on purpose; its stated
// figure was computed outside the project in R from the published formula
// of the protocol's method (slips.R there; the call of each row is its
// source column, the derivations are in its README.md).
var slipIDs = []string{
	"one-sided-alpha", "per-group-as-total", "total-as-per-group",
	"attrition-ignored", "attrition-multiplied", "continuity-omitted",
	"continuity-added", "odds-ratio-as-risk-ratio", "design-effect-ignored",
	"power-90-as-80", "power-80-as-90", "normal-instead-of-t",
	"ratio-ignored", "variance-not-doubled", "relative-as-absolute",
	"absolute-as-relative", "events-as-participants", "multiplicity-ignored",
}

// correctID is the row of the protocol with no slip: its stated figure is
// R's correct figure.
const correctID = "correct"

// powerTol is how far the power the engine gives at the stated figure may
// be from R's (slips.R, column power_at_stated): R evaluates the same
// closed form, so only the split of a stated total into groups (R halves
// it, the engine rounds the first group) can move it, by far less.
const powerTol = 0.005

// TestSlipsDiagnosed: for each slip, the protocol built by committing that
// slip is not consistent, the slip is among the first three diagnoses, and
// the recheck recomputes R's correct figure; the protocol with no slip is
// consistent with no diagnosis.
func TestSlipsDiagnosed(t *testing.T) {
	rows := reftable.Load(t, "review_slips/slips.tsv")
	seen := map[string]bool{}
	for _, row := range rows {
		id := row["id"]
		seen[id] = true
		t.Run(id, func(t *testing.T) {
			// Source of every number in this row: row["source"] (the R call
			// or the published formula evaluated in slips.R).
			stated := int(row.F(t, "stated"))
			correct := int(row.F(t, "correct"))
			figure := row["figure"]
			path := filepath.Join("..", "..", "testdata", "reference", "review_slips", row["file"])
			data, err := os.ReadFile(path)
			if err != nil {
				t.Fatal(err)
			}
			in, err := designs.ParseReview(row["file"], data, nil)
			if err != nil {
				t.Fatalf("ParseReview: %v", err)
			}
			// (c) The protocol states the figure R computed (guards the
			// fixture against an edit of either file alone).
			if got, ok := claimedFigure(in.Claimed, figure); !ok || got != stated {
				t.Fatalf("%s: claimed.%s = %d (stated: %v); slips.tsv has %d", row["file"], figure, got, ok, stated)
			}
			if id == correctID && stated != correct {
				t.Fatalf("the correct protocol states %d, R's correct figure is %d", stated, correct)
			}
			if id != correctID && math.Abs(float64(stated-correct)) <= 0.05*float64(correct) {
				t.Fatalf("fixture: the slip's figure %d is within 5%% of the correct %d", stated, correct)
			}

			rep, err := review.Run(in)
			if err != nil || rep == nil {
				t.Fatalf("review.Run: report %v, error %v", rep, err)
			}

			// (d) The recheck recomputes R's correct figure.
			fig := findFigure(rep.Figures, figure)
			if fig != nil {
				t.Logf("%s: verdict %s; %s stated %d, recomputed %d (R: %d); diagnosis: %s", row["file"], rep.Verdict, figure, fig.Stated, fig.Recomputed, correct, describe(rep.Diagnosis))
			}
			if fig == nil {
				t.Errorf("no judgement of the stated %s among %v", figure, figureNames(rep.Figures))
			} else {
				if fig.Stated != stated {
					t.Errorf("figure %s: stated %d, want %d", figure, fig.Stated, stated)
				}
				if fig.Recomputed != correct {
					t.Errorf("figure %s: recomputed %d, want %d (%s)", figure, fig.Recomputed, correct, row["source"])
				}
				want := row.F(t, "power_at_stated")
				if fig.Power == nil {
					t.Errorf("figure %s: no power at the stated %d (R: %.4f)", figure, stated, want)
				} else if math.Abs(*fig.Power-want) > powerTol {
					t.Errorf("figure %s: power at the stated %d is %.4f, R gives %.4f (%s)", figure, stated, *fig.Power, want, row["source"])
				}
			}

			if id == correctID {
				if rep.Verdict != review.Consistent {
					t.Errorf("verdict %q, want %q (%s)", rep.Verdict, review.Consistent, rep.Sentence)
				}
				if len(rep.Diagnosis) != 0 {
					t.Errorf("a correct protocol got a diagnosis: %+v", rep.Diagnosis)
				}
				return
			}

			// (a) The slip makes the protocol inconsistent.
			if rep.Verdict == review.Consistent {
				t.Errorf("verdict %q for a protocol whose %s is %d where %d is needed (%s)", rep.Verdict, figure, stated, correct, rep.Sentence)
			}
			// (b) The slip is among the first three diagnoses, reproducing
			// the stated figure within max(1%, 2 participants).
			top := rep.Diagnosis[:min(3, len(rep.Diagnosis))]
			var hit *review.Diagnosis
			for i := range top {
				if slices.Contains(top[i].Slips, id) || slices.Contains(top[i].Tied, id) {
					hit = &top[i]
					break
				}
			}
			if hit == nil {
				t.Errorf("slip %s not among the first three diagnoses: %s (note %q)", id, describe(rep.Diagnosis), rep.DiagnosisNote)
				return
			}
			if hit.Figure == figure {
				if d := math.Abs(float64(hit.Reproduces - stated)); d > math.Max(0.01*float64(stated), 2) {
					t.Errorf("slip %s reproduces %d, stated (R's slip figure) %d", id, hit.Reproduces, stated)
				}
			}
		})
	}
	for _, id := range append([]string{correctID}, slipIDs...) {
		if !seen[id] {
			t.Errorf("slips.tsv has no row %q", id)
		}
	}
}

// claimedFigure returns the stated figure by its name in the report.
func claimedFigure(c designs.Claimed, name string) (int, bool) {
	v := map[string]int{
		"n": c.N, "n_second": c.NSecond, "total": c.Total,
		"enrol_total": c.EnrolTotal, "events": c.Events, "clusters": c.Clusters,
	}[name]
	return v, v > 0
}

func findFigure(figs []review.Figure, name string) *review.Figure {
	for i := range figs {
		if figs[i].Name == name {
			return &figs[i]
		}
	}
	return nil
}

func figureNames(figs []review.Figure) []string {
	var out []string
	for _, f := range figs {
		out = append(out, f.Name)
	}
	return out
}

func describe(ds []review.Diagnosis) string {
	if len(ds) == 0 {
		return "none"
	}
	var parts []string
	for i, d := range ds {
		p := strconv.Itoa(i+1) + ". " + strings.Join(d.Slips, "+") + " gives " + d.Figure + " " + strconv.Itoa(d.Reproduces)
		if len(d.Tied) > 0 {
			p += " (tied: " + strings.Join(d.Tied, ", ") + ")"
		}
		parts = append(parts, p)
	}
	return strings.Join(parts, "; ")
}
