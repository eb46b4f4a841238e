package sweep_test

// Sweeps checked against the outside world: every point of each grid below
// is compared with a value computed outside the project, in R (stats) and
// again in Python (statsmodels, scipy), recorded in
// testdata/reference/sweep_*.tsv by sweep_make.R and sweep_make.py (see
// testdata/reference/sweep_README.md). Each row of those tables names the
// exact call that produced it in its n_source and power_source columns, and
// every failure message below repeats them.

import (
	"context"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"gopkg.in/yaml.v3"

	"enough/designs"
	"enough/designs/sweep"
	"enough/power/reftable"
)

// refGrid is one grid of the reference tables: the specification swept (a
// YAML literal; the varied keys hold a value that every point replaces),
// the --vary arguments as a user types them, and the table that holds the
// expected row of every point.
type refGrid struct {
	grid  string
	table string
	spec  string
	vary  []string
}

const propBase = `version: 1
title: Invented sweep, two risks
design: trial
outcome: binary
method: fleiss
control_risk: 0.2
risk_ratio: 0.7
power: 0.8
alpha: 0.05
`

const meansBase = `version: 1
title: Invented sweep, two means
design: trial
outcome: continuous
method: t
sd: 10
mean_difference: 3
alpha: 0.05
`

var refGrids = []refGrid{
	{
		// power.prop.test(p1=, p2=, power=0.8, sig.level=0.05, tol=1e-10)$n
		// and power.prop.test(n=, ...)$power, row by row in sweep_prop.tsv.
		grid:  "prop_n",
		table: "sweep_prop.tsv",
		spec:  propBase,
		vary:  []string{"control_risk=0.1,0.2,0.3,0.4", "risk_ratio=0.5,0.6,0.7,0.8"},
	},
	{
		// power.prop.test(p1=0.25*RR, p2=0.25, power=, sig.level=, tol=1e-10)$n
		grid:  "prop_alpha",
		table: "sweep_prop.tsv",
		spec:  strings.Replace(propBase, "control_risk: 0.2\n", "control_risk: 0.25\n", 1),
		vary:  []string{"risk_ratio=0.6,0.75", "power=0.8,0.9", "alpha=0.01,0.05"},
	},
	{
		// Ranges: the values must be the decimals 0.1, 0.2, 0.3 and 0.5,
		// 0.55, ..., 0.8 (7 values); power.prop.test at those decimals.
		grid:  "prop_range",
		table: "sweep_prop.tsv",
		spec:  propBase,
		vary:  []string{"control_risk=0.1:0.3:0.1", "risk_ratio=0.5:0.8:0.05"},
	},
	{
		// Point 3 (risk 0.6 x ratio 2 = 1.2) cannot be planned: its row
		// carries an error; the others are power.prop.test's.
		grid:  "prop_infeasible",
		table: "sweep_prop.tsv",
		spec:  propBase,
		vary:  []string{"control_risk=0.3,0.6", "risk_ratio=1.5,2"},
	},
	{
		// power.t.test(delta=, sd=, power=0.8, strict=TRUE, tol=1e-10)$n
		// and power.t.test(n=, ..., strict=TRUE)$power.
		grid:  "means_n",
		table: "sweep_means.tsv",
		spec:  meansBase + "power: 0.8\n",
		vary:  []string{"sd=8,10,12", "mean_difference=2,3,4,5"},
	},
	{
		// power.t.test(n=, delta=, sd=, sig.level=0.05, strict=TRUE)$power
		grid:  "means_power",
		table: "sweep_means.tsv",
		spec:  meansBase + "solve: power\nn: 50\n",
		vary:  []string{"sd=8,10,12", "mean_difference=2,3,4,5", "n=30,60,120"},
	},
	{
		// Unequal groups: Fleiss, Levin & Paik 2003 ch. 4 written out in
		// sweep_make.R, checked again by statsmodels
		// samplesize_proportions_2indep_onetail and power_proportions_2indep.
		grid:  "ratio",
		table: "sweep_ratio.tsv",
		spec:  propBase + "design_effect: 1\nattrition: 0\nratio: 1\n",
		vary:  []string{"control_risk=0.1,0.2,0.3", "risk_ratio=0.5,0.7", "ratio=1,2,3"},
	},
	{
		// Rounding and inflation: ceil(n* x de), ceil(ratio x n* x de),
		// ceil(n / (1 - attrition)) per group, on the same formula.
		grid:  "inflate",
		table: "sweep_ratio.tsv",
		spec: strings.NewReplacer("risk_ratio: 0.7\n", "risk_ratio: 0.6\n", "power: 0.8\n", "power: 0.9\n").Replace(propBase) +
			"ratio: 1\ndesign_effect: 1\nattrition: 0\n",
		vary: []string{"ratio=1,2", "design_effect=1,1.5,2", "attrition=0,0.1,0.15"},
	},
}

// Tolerances. Sizes are compared exactly (sweep_make.R refuses any scenario
// whose unrounded size lies within 1e-6 of a whole number). Power: R's
// pnorm and pt(ncp) are accurate to about 1e-12 absolute
// (trials_README.md, finding 1) and statsmodels agrees with every row to
// 1e-12 (proportions) and 4.4e-10 (t, scipy's Boost noncentral t; an R
// quadrature sides with R), so 1e-9 absolute. n*: R's uniroot stops within
// 1e-10 in n and the project's root finder within its own tolerance, so
// 1e-7 relative, as power/means_test.go does.
const (
	powerTol = 1e-9
	nStarTol = 1e-7
)

// parseGrid builds the grid from --vary arguments as the command does: one
// axis per argument, in the order given.
func parseGrid(t *testing.T, vary []string) sweep.Grid {
	t.Helper()
	var g sweep.Grid
	for _, arg := range vary {
		a, err := sweep.ParseVary(arg)
		if err != nil {
			t.Fatalf("ParseVary(%q): %v", arg, err)
		}
		g.Axes = append(g.Axes, a)
	}
	return g
}

// tableRows returns the rows of one grid, in index order, failing when the
// indices are not 0, 1, 2, ... (the order the scripts enumerate: the last
// axis fastest).
func tableRows(t *testing.T, table, grid string) []reftable.Row {
	t.Helper()
	var rows []reftable.Row
	for _, r := range reftable.Load(t, table) {
		if r["grid"] != grid {
			continue
		}
		if r["index"] != strconv.Itoa(len(rows)) {
			t.Fatalf("%s: grid %s: row index %s out of order (want %d)", table, grid, r["index"], len(rows))
		}
		rows = append(rows, r)
	}
	if len(rows) == 0 {
		t.Fatalf("%s: no rows for grid %s", table, grid)
	}
	return rows
}

// pairs splits "k=v;k=v" into its keys and texts, in order.
func pairs(t *testing.T, s string) (keys, texts []string) {
	t.Helper()
	for _, part := range strings.Split(s, ";") {
		k, v, ok := strings.Cut(part, "=")
		if !ok {
			t.Fatalf("malformed pair %q in %q", part, s)
		}
		keys, texts = append(keys, k), append(texts, v)
	}
	return keys, texts
}

// checkSpecMatchesTable fails when the test's YAML literal does not hold the
// values the reference script fixed for the grid (the table's fixed column):
// a drift between the two would compare the engine with another scenario.
func checkSpecMatchesTable(t *testing.T, rg refGrid, row reftable.Row) {
	t.Helper()
	var m map[string]any
	if err := yaml.Unmarshal([]byte(rg.spec), &m); err != nil {
		t.Fatalf("spec of %s: %v", rg.grid, err)
	}
	keys, texts := pairs(t, row["fixed"])
	for i, k := range keys {
		v, ok := m[k]
		if !ok {
			t.Fatalf("spec of %s lacks %s (the reference fixes %s=%s)", rg.grid, k, k, texts[i])
		}
		want, _ := strconv.ParseFloat(texts[i], 64)
		if got, err := strconv.ParseFloat(fmt.Sprint(v), 64); err != nil || got != want {
			t.Fatalf("spec of %s has %s: %v, the reference fixes %s", rg.grid, k, v, texts[i])
		}
	}
}

// optional reads a numeric column that may be NA.
func optional(t *testing.T, r reftable.Row, col string) (float64, bool) {
	t.Helper()
	x := r.F(t, col)
	return x, !math.IsNaN(x)
}

func whole(t *testing.T, r reftable.Row, col string) int {
	t.Helper()
	n, err := strconv.Atoi(r[col])
	if err != nil {
		t.Fatalf("grid %s row %s: column %s: %v", r["grid"], r["index"], col, err)
	}
	return n
}

func TestSweepAgainstReference(t *testing.T) {
	for _, rg := range refGrids {
		for _, full := range []bool{false, true} {
			name := rg.grid + "/table"
			if full {
				name = rg.grid + "/full"
			}
			t.Run(name, func(t *testing.T) {
				checkGrid(t, rg, full)
			})
		}
	}
}

func checkGrid(t *testing.T, rg refGrid, full bool) {
	want := tableRows(t, rg.table, rg.grid)
	checkSpecMatchesTable(t, rg, want[0])

	g := parseGrid(t, rg.vary)
	keys, _ := pairs(t, want[0]["point"])
	if len(g.Axes) != len(keys) {
		t.Fatalf("--vary %q: %d axes, want %d (%v)", rg.vary, len(g.Axes), len(keys), keys)
	}
	size := 1
	for k, ax := range g.Axes {
		if ax.Key != keys[k] {
			t.Errorf("axis %d: key %q, want %q", k, ax.Key, keys[k])
		}
		if len(ax.Values) != len(ax.Texts) {
			t.Fatalf("axis %s: %d values but %d texts", ax.Key, len(ax.Values), len(ax.Texts))
		}
		size *= len(ax.Values)
	}
	if size != len(want) {
		t.Fatalf("--vary %q: grid of %d points, the reference has %d", rg.vary, size, len(want))
	}

	b, err := designs.NewBase(rg.grid+".yaml", []byte(rg.spec), nil)
	if err != nil {
		t.Fatalf("NewBase: %v", err)
	}
	rows, err := sweep.Run(context.Background(), b, g, sweep.Options{Full: full})
	if err != nil {
		t.Fatalf("Run: %v", err)
	}
	if len(rows) != len(want) {
		t.Fatalf("%d rows, want %d", len(rows), len(want))
	}

	for i, w := range want {
		row := rows[i]
		at := fmt.Sprintf("point %d (%s)", i, w["point"])
		if row.Index != i {
			t.Errorf("%s: Index = %d, want %d (grid order)", at, row.Index, i)
		}
		// The point's values: exactly the decimals of the reference (the
		// last axis fastest), in every axis's Values and Texts.
		_, texts := pairs(t, w["point"])
		if len(row.Point) != len(texts) {
			t.Errorf("%s: Point = %v, want %d values", at, row.Point, len(texts))
			continue
		}
		stride := 1
		for k := len(g.Axes) - 1; k >= 0; k-- {
			ax := g.Axes[k]
			j := (i / stride) % len(ax.Values)
			stride *= len(ax.Values)
			dec, _ := strconv.ParseFloat(texts[k], 64)
			if row.Point[k] != dec {
				t.Errorf("%s: %s = %v (%s), want exactly the decimal %s", at, ax.Key, row.Point[k],
					strconv.FormatFloat(row.Point[k], 'g', 17, 64), texts[k])
			}
			if ax.Values[j] != dec || ax.Texts[j] != texts[k] {
				t.Errorf("%s: axis %s value %d = %s (text %q), want exactly %s",
					at, ax.Key, j, strconv.FormatFloat(ax.Values[j], 'g', 17, 64), ax.Texts[j], texts[k])
			}
		}

		if w["n1"] == "NA" {
			// A point that cannot be planned is a row with its error.
			if row.Err == nil || row.Result != nil {
				t.Errorf("%s: Err = %v, Result = %+v; want an error and no result (%s)", at, row.Err, row.Result, w["n_source"])
			}
			continue
		}
		if row.Err != nil || row.Result == nil {
			t.Errorf("%s: Err = %v, Result = %v; want a plan (%s)", at, row.Err, row.Result, w["n_source"])
			continue
		}
		res := row.Result
		n1, n2 := whole(t, w, "n1"), whole(t, w, "n2")
		e1, e2 := whole(t, w, "enrol1"), whole(t, w, "enrol2")
		if len(res.N) != 2 || res.N[0] != n1 || res.N[1] != n2 {
			t.Errorf("%s: n = %v, want [%d %d] (%s)", at, res.N, n1, n2, w["n_source"])
		}
		if len(res.Enrol) != 2 || res.Enrol[0] != e1 || res.Enrol[1] != e2 {
			t.Errorf("%s: enrol = %v, want [%d %d] (%s)", at, res.Enrol, e1, e2, w["n_source"])
		}
		// Totals are the sums of the groups (README "Rounding and inflation").
		if res.Total != n1+n2 || res.EnrolTotal != e1+e2 {
			t.Errorf("%s: totals = %d, %d; want %d, %d", at, res.Total, res.EnrolTotal, n1+n2, e1+e2)
		}
		if wantP, ok := optional(t, w, "power"); ok {
			if res.AchievedPower == nil {
				t.Errorf("%s: no achieved power, want %.15g (%s)", at, wantP, w["power_source"])
			} else if got := *res.AchievedPower; !(math.Abs(got-wantP) <= powerTol) {
				t.Errorf("%s: power = %.15g, want %.15g (diff %.2g; %s)", at, got, wantP, got-wantP, w["power_source"])
			}
		}
		// n* is part of the full plan (the table's figures need not carry it).
		if wantN, ok := optional(t, w, "n_star"); ok && (full || res.NStar != 0) {
			if got := res.NStar; !(math.Abs(got-wantN) <= nStarTol*wantN) {
				t.Errorf("%s: n* = %.12g, want %.12g (%s)", at, got, wantN, w["n_source"])
			}
		}
	}
}
