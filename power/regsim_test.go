package power

import (
	"math"
	"math/rand/v2"
	"testing"

	"enough/power/reftable"
)

// regData are the small data sets typed by hand in logistic_make.R (the
// same numbers), fitted there by glm and lm (logistic_fits.tsv).
var regData = map[string]struct{ x, z, y []float64 }{
	"small2x2": {
		x: []float64{1, 1, 1, 1, 1, 1, 1, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0},
		y: []float64{1, 1, 0, 1, 0, 1, 1, 0, 1, 0, 0, 1, 0, 0, 0, 1, 0, 0, 1, 0},
	},
	"cont": {
		x: []float64{-1.62, -0.94, 0.31, 1.05, -0.27, 0.88, -2.10, 0.45, 1.73, -0.56, 0.02, 1.21,
			-1.33, 0.67, -0.08, 2.04, -0.71, 0.19, 1.46, -1.01, 0.53, -0.39, 0.96, -1.88},
		y: []float64{0, 0, 1, 1, 0, 0, 0, 1, 1, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1, 1, 0, 0, 1, 0},
	},
	"adj": {
		x: []float64{0.12, -0.85, 1.34, -0.47, 0.76, -1.52, 0.33, 1.08, -0.21, -0.99, 0.58, 2.11, -1.27, 0.04, 0.91,
			-0.66, 1.49, -0.13, -1.85, 0.27, 0.69, -0.38, 1.22, -0.74, 0.45, -1.06, 0.83, -0.29, 1.67, -0.52},
		z: []float64{0.40, -0.31, 1.02, -0.95, 1.21, -1.10, -0.22, 1.45, 0.38, -1.40, 0.11, 1.60, -0.75, 0.52, 0.44,
			-1.03, 1.88, 0.29, -1.36, -0.15, 1.10, -0.81, 0.70, -0.20, 0.97, -1.49, 0.36, 0.23, 1.30, -0.88},
		y: []float64{0, 0, 1, 0, 1, 0, 1, 1, 0, 0, 1, 1, 0, 1, 0, 0, 1, 0, 0, 1, 0, 1, 1, 0, 0, 0, 1, 0, 1, 1},
	},
	"adjbin": {
		x: []float64{1, 1, 1, 1, 1, 1, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0},
		z: []float64{1.35, 0.62, 1.90, 0.88, 1.12, 0.41, 1.57, 0.95, 1.23,
			-0.44, 0.31, -0.87, 0.15, -0.29, 0.58, -1.12, 0.06, -0.63, 0.92, -0.18},
		y: []float64{1, 0, 1, 1, 0, 1, 1, 0, 1, 0, 0, 1, 0, 0, 1, 0, 0, 0, 1, 0},
	},
	"sep": {
		x: []float64{0.5, 1.1, 1.6, 2.3, 2.9, 3.4, 4.0, 4.8},
		y: []float64{0, 0, 0, 0, 1, 1, 1, 1},
	},
	"ols1": {
		x: []float64{-1.62, -0.94, 0.31, 1.05, -0.27, 0.88, -2.10, 0.45, 1.73, -0.56, 0.02, 1.21},
		y: []float64{1.8, 2.9, 3.1, 4.4, 2.2, 3.0, 0.9, 3.7, 4.9, 2.4, 3.3, 3.8},
	},
	"ols2": {
		x: []float64{1, 1, 1, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0},
		z: []float64{1.20, 0.35, 1.71, 0.88, 0.52, 1.44, -0.30, 0.61, -0.95, 0.12, -0.48, 0.27, 0.80},
		y: []float64{5.3, 4.1, 6.2, 4.8, 3.9, 5.7, 3.2, 4.4, 2.5, 3.9, 3.0, 3.6, 4.7},
	},
}

var regTerms = map[string]int{"(Intercept)": 0, "x": 1, "z": 2}

// TestRegressionFitsAgainstR checks the Newton–Raphson logistic fit and the
// least-squares fit on the typed data sets against R (logistic_fits.tsv:
// summary(glm(..., family = binomial, control = glm.control(epsilon =
// 1e-14, maxit = 100)))$coefficients and summary(lm(...))$coefficients):
// estimates to 1e-8, standard errors and statistics to 1e-7 relative (the
// logistic standard errors come from the information at the last step's
// start, within 1e-8 of the estimate). On "sep", completely separated,
// glm stops with a slope of about 103 and a Wald p-value of 0.999995; the
// fit must report failure (which the simulation counts as not rejecting,
// as glm's p-value does).
func TestRegressionFitsAgainstR(t *testing.T) {
	fits := map[string]regFit{}
	for _, row := range reftable.Load(t, "logistic_fits.tsv") {
		name := row["dataset"]
		d, ok := regData[name]
		if !ok {
			t.Fatalf("%s: no typed data set %q", row["id"], name)
		}
		f, done := fits[name]
		if !done {
			if row["model"] == "glm" {
				f = fitLogistic(d.x, d.z, d.y)
			} else {
				f = fitOLS(d.x, d.z, d.y)
			}
			fits[name] = f
		}
		if name == "sep" {
			if f.ok {
				t.Errorf("sep: the fit converged to %v; want failure", f.coef)
			}
			if p := row.F(t, "p_value"); !(p > 0.99) {
				t.Errorf("sep: R's p-value %v, expected near 1", p)
			}
			continue
		}
		if !f.ok {
			t.Errorf("%s: the fit failed", row["id"])
			continue
		}
		j := regTerms[row["term"]]
		est, se := f.coef[j], f.se[j]
		if want := row.F(t, "estimate"); math.Abs(est-want) > 1e-8 {
			t.Errorf("%s: estimate %.15g, want %.15g (%s)", row["id"], est, want, row["source"])
		}
		if want := row.F(t, "se"); !relClose(se, want, 1e-7) {
			t.Errorf("%s: se %.15g, want %.15g (%s)", row["id"], se, want, row["source"])
		}
		if want := row.F(t, "stat"); !relClose(est/se, want, 1e-7) {
			t.Errorf("%s: statistic %.15g, want %.15g (%s)", row["id"], est/se, want, row["source"])
		}
	}
	if len(fits) != len(regData) {
		t.Errorf("%d data sets fitted, %d typed", len(fits), len(regData))
	}
	if f := fits["cont"]; f.iter > 8 {
		t.Errorf("cont: %d Newton steps; expected a handful", f.iter)
	}
}

// TestWoolfIsGlm checks the 2×2 shortcut of the binary exposure without
// confounder against glm on the same table (small2x2: 6 of 10 and 3 of 10
// events; logistic_fits.tsv row small2x2_x, R glm).
func TestWoolfIsGlm(t *testing.T) {
	var row reftable.Row
	for _, r := range reftable.Load(t, "logistic_fits.tsv") {
		if r["id"] == "small2x2_x" {
			row = r
		}
	}
	est, v, ok := woolf(6, 4, 3, 7)
	if !ok || math.Abs(est-row.F(t, "estimate")) > 1e-12 || !relClose(math.Sqrt(v), row.F(t, "se"), 1e-9) {
		t.Errorf("woolf(6, 4, 3, 7) = %v, se %v, %v; glm %s, se %s", est, math.Sqrt(v), ok, row["estimate"], row["se"])
	}
	for _, c := range [][4]int{{0, 5, 3, 7}, {5, 0, 3, 7}, {6, 4, 0, 7}, {6, 4, 3, 0}} {
		if _, _, ok := woolf(c[0], c[1], c[2], c[3]); ok {
			t.Errorf("woolf%v: ok with an empty cell", c)
		}
	}
}

// TestLogisticNoEvents checks that an outcome with no event, or only
// events, fails at once (no finite maximum).
func TestLogisticNoEvents(t *testing.T) {
	x := []float64{-1, 0, 1, 2}
	for _, y := range [][]float64{{0, 0, 0, 0}, {1, 1, 1, 1}} {
		if f := fitLogistic(x, nil, y); f.ok || f.iter != 0 {
			t.Errorf("y %v: ok %v after %d steps; want an immediate failure", y, f.ok, f.iter)
		}
	}
	// Collinear x and z: the information is singular.
	if f := fitLogistic(x, []float64{-2, 0, 2, 4}, []float64{0, 1, 0, 1}); f.ok {
		t.Errorf("collinear: ok, coefficients %v", f.coef)
	}
	if f := fitOLS(x, []float64{-2, 0, 2, 4}, []float64{0, 1, 0, 1}); f.ok {
		t.Errorf("collinear least squares: ok, coefficients %v", f.coef)
	}
}

// regSim builds the model of a row of logistic_sim.tsv.
func regSim(t *testing.T, row reftable.Row) Model {
	t.Helper()
	c := RegressionSim{N: row.I(t, "n"), N1: row.I(t, "n1"), N2: row.I(t, "n2"),
		Intercept: row.F(t, "intercept"), Effect: row.F(t, "effect"), SD: row.F(t, "sd"), R2: row.F(t, "r2"),
		Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides"), Dir: row.I(t, "dir")}
	var ok1, ok2 bool
	c.Outcome, ok1 = map[string]RegressionOutcome{"binary": OutcomeBinary, "continuous": OutcomeContinuous}[row["outcome"]]
	c.Exposure, ok2 = map[string]RegressionExposure{"binary": ExposureBinary, "normal": ExposureNormal}[row["exposure"]]
	if !ok1 || !ok2 {
		t.Fatalf("%s: outcome %q, exposure %q", row["id"], row["outcome"], row["exposure"])
	}
	return NewRegressionSim(c)
}

// agreeMC reports whether two Monte-Carlo shares k1/n1 and k2/n2 agree
// within 4 standard errors of their difference, √(p(1 − p)(1/n1 + 1/n2))
// with p the pooled share, and returns the tolerance.
func agreeMC(k1, n1, k2, n2 float64) (bool, float64) {
	p := (k1 + k2) / (n1 + n2)
	tol := 4 * math.Sqrt(p*(1-p)*(1/n1+1/n2))
	return math.Abs(k1/n1-k2/n2) <= tol, tol
}

// TestRegressionSimAgainstR compares the simulation with an independent
// one in R (logistic_sim.tsv, script logistic_make.R; each row's source
// gives the seed): the same designs drawn with rnorm and rbinom, analysed
// by glm(y ~ x (+ z), family = binomial) and its Wald z value, or lm and
// its t value. Go runs as many replicates as R; the tolerance is 4
// standard errors of the difference of the two shares.
func TestRegressionSimAgainstR(t *testing.T) {
	for i, row := range reftable.Load(t, "logistic_sim.tsv") {
		m := regSim(t, row)
		rr := row.F(t, "reps")
		res := simulate(t, m, int64(rr), 700+uint64(i), 0)
		ok, tol := agreeMC(float64(res.Rejections), float64(res.Replicates), row.F(t, "rejections"), rr)
		t.Logf("%s: Go %.5f, R %.5f, tolerance %.5f", row["id"], res.Power(), row.F(t, "share"), tol)
		if !ok {
			t.Errorf("%s: Go %.5f, R %.5f; tolerance %.5f (%s)", row["id"], res.Power(), row.F(t, "share"), tol, row["source"])
		}
	}
}

// TestRegressionSimFormulaPoints compares the simulated power of the
// unadjusted logistic regression on a normal exposure at the sizes given
// by the two formulas with R's simulation of the same
// (logistic_formula_sim.tsv: glm Wald test, 4,000 replicates each, seeds
// in the table); Go runs as many.
func TestRegressionSimFormulaPoints(t *testing.T) {
	if testing.Short() {
		t.Skip("long simulation")
	}
	for i, row := range reftable.Load(t, "logistic_formula_sim.tsv") {
		for j, f := range []string{"hsieh1998", "hsieh1989"} {
			m := NewRegressionSim(RegressionSim{Outcome: OutcomeBinary, Exposure: ExposureNormal,
				N: row.I(t, "n_"+f), Intercept: logit(row.F(t, "event_rate")), Effect: math.Log(row.F(t, "or")),
				Alpha: row.F(t, "alpha"), Sides: row.I(t, "sides")})
			rr := row.F(t, "reps")
			res := simulate(t, m, int64(rr), 800+uint64(10*i+j), 0)
			want := row.F(t, "sim_"+f)
			ok, tol := agreeMC(float64(res.Rejections), float64(res.Replicates), math.Round(want*rr), rr)
			t.Logf("%s n_%s %s: Go %.4f, R %.4f, tolerance %.4f", row["id"], f, row["n_"+f], res.Power(), want, tol)
			if !ok {
				t.Errorf("%s n_%s: Go %.4f, R %.4f; tolerance %.4f (%s)", row["id"], f, res.Power(), want, tol, row["source"])
			}
		}
	}
}

func logit(p float64) float64 { return math.Log(p / (1 - p)) }

// TestRegressionSimWorkers checks that the result for a seed does not
// depend on the number of workers, for each kind of model, and that
// another seed changes it.
func TestRegressionSimWorkers(t *testing.T) {
	base := RegressionSim{Alpha: 0.05, Sides: 2}
	for name, c := range map[string]RegressionSim{
		"logistic normal":         {Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 80, Intercept: -1, Effect: 0.3},
		"logistic normal with Z":  {Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 80, Intercept: -1, Effect: 0.3, R2: 0.4},
		"logistic binary (table)": {Outcome: OutcomeBinary, Exposure: ExposureBinary, N1: 30, N2: 50, Intercept: -1, Effect: 0.6},
		"logistic binary with Z":  {Outcome: OutcomeBinary, Exposure: ExposureBinary, N1: 30, N2: 50, Intercept: -1, Effect: 0.6, R2: 0.2},
		"linear binary with Z":    {Outcome: OutcomeContinuous, Exposure: ExposureBinary, N1: 20, N2: 25, Effect: 0.5, SD: 1, R2: 0.3},
		"linear normal":           {Outcome: OutcomeContinuous, Exposure: ExposureNormal, N: 30, Effect: 0.3, SD: 1},
		"linear binary 1 and 3":   {Outcome: OutcomeContinuous, Exposure: ExposureBinary, N1: 1, N2: 3, Effect: 3, SD: 1},
	} {
		c.Alpha, c.Sides = base.Alpha, base.Sides
		m := NewRegressionSim(c)
		const reps = 2*2048 + 700 // several blocks and a short one
		cfg := func(seed uint64, workers int) SimResult {
			res, err := Simulate(t.Context(), m, SimConfig{Replicates: reps, Seed: seed, Workers: workers, BlockSize: 2048})
			if err != nil {
				t.Fatal(err)
			}
			return res
		}
		a, b := cfg(5, 1), cfg(5, 2)
		if !sameResult(a, b) {
			t.Errorf("%s: 1 worker %+v, 2 workers %+v", name, a, b)
		}
		if c := cfg(6, 2); sameResult(c, a) {
			t.Errorf("%s: seeds 5 and 6 gave the same result %+v", name, c)
		}
	}
}

// TestRegressionSimConfounder checks the drawn confounder: over one large
// data set, the squared sample correlation of X and Z is R² (the design's
// definition) within 4 of its large-sample standard errors,
// 2 √R² (1 − R²)/√n (the delta method on the correlation, whose standard
// error is (1 − ρ²)/√n for normal data; Fisher 1915, Biometrika 10:507–521).
func TestRegressionSimConfounder(t *testing.T) {
	const n = 200000
	rng := rand.New(rand.NewPCG(11, 12))
	for _, c := range []RegressionSim{
		{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: n, R2: 0.3},
		{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: n, R2: 0.8},
		{Outcome: OutcomeContinuous, Exposure: ExposureBinary, N1: n / 4, N2: 3 * n / 4, SD: 1, R2: 0.3},
		{Outcome: OutcomeBinary, Exposure: ExposureBinary, N1: n / 2, N2: n / 2, R2: 0.6},
	} {
		c.Alpha, c.Sides = 0.05, 2
		w := NewRegressionSim(c).NewWorker().(*regWorker)
		w.draw(rng)
		var mx, mz float64
		for i := range w.x {
			mx += w.x[i]
			mz += w.z[i]
		}
		mx, mz = mx/n, mz/n
		var sxx, szz, sxz float64
		for i := range w.x {
			dx, dz := w.x[i]-mx, w.z[i]-mz
			sxx += dx * dx
			szz += dz * dz
			sxz += dx * dz
		}
		r2 := sxz * sxz / (sxx * szz)
		tol := 4 * 2 * math.Sqrt(c.R2) * (1 - c.R2) / math.Sqrt(n)
		if math.Abs(r2-c.R2) > tol {
			t.Errorf("%+v: sample R² %.5f, want %v ± %.5f", c, r2, c.R2, tol)
		}
	}
}

// TestRegressionSimTinyR2 checks that a confounder with a vanishing R²
// (1e-12, or 1e-300 where Z = X + e would have a variance of 1e300) leaves
// the power of the unadjusted analysis: the inflation 1/(1 − R²) is 1
// (Hsieh, Bloch & Larsen 1998). Both are simulated; the tolerance is 4
// standard errors of the difference.
func TestRegressionSimTinyR2(t *testing.T) {
	const reps = 4000
	c := RegressionSim{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 150, Intercept: logit(0.3), Effect: 0.3,
		Alpha: 0.05, Sides: 2}
	base := simulate(t, NewRegressionSim(c), reps, 41, 0)
	for _, r2 := range []float64{1e-12, 1e-300} {
		c.R2 = r2
		res := simulate(t, NewRegressionSim(c), reps, 42, 0)
		if ok, tol := agreeMC(float64(res.Rejections), reps, float64(base.Rejections), reps); !ok {
			t.Errorf("R² %v: power %.4f, without confounder %.4f (tolerance %.4f)", r2, res.Power(), base.Power(), tol)
		}
	}
}

// TestRegressionSimNoAlloc checks that a replicate allocates nothing.
func TestRegressionSimNoAlloc(t *testing.T) {
	for _, c := range []RegressionSim{
		{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 200, Intercept: -1, Effect: 0.3, R2: 0.3},
		{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 200, Intercept: -1, Effect: 0.3},
		{Outcome: OutcomeBinary, Exposure: ExposureBinary, N1: 50, N2: 60, Intercept: -1, Effect: 0.3},
		{Outcome: OutcomeContinuous, Exposure: ExposureBinary, N1: 50, N2: 60, Effect: 0.3, SD: 1, R2: 0.3},
	} {
		c.Alpha, c.Sides = 0.05, 2
		w := NewRegressionSim(c).NewWorker()
		rng := rand.New(rand.NewPCG(1, 2))
		if a := testing.AllocsPerRun(50, func() { w.Replicate(rng) }); a != 0 {
			t.Errorf("%+v: %v allocations per replicate", c, a)
		}
	}
}

func TestRegressionSimPanics(t *testing.T) {
	ok := RegressionSim{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 50, Effect: 0.3, SD: 1, Alpha: 0.05, Sides: 2}
	for name, edit := range map[string]func(*RegressionSim){
		"outcome":        func(c *RegressionSim) { c.Outcome = 0 },
		"exposure":       func(c *RegressionSim) { c.Exposure = 3 },
		"n small":        func(c *RegressionSim) { c.N = 2 },
		"n small with Z": func(c *RegressionSim) { c.N, c.R2 = 3, 0.5 },
		"n1":             func(c *RegressionSim) { c.Exposure, c.N1, c.N2 = ExposureBinary, 0, 10 },
		"n2":             func(c *RegressionSim) { c.Exposure, c.N1, c.N2 = ExposureBinary, 10, 0 },
		"r2 one":         func(c *RegressionSim) { c.R2 = 1 },
		"r2 negative":    func(c *RegressionSim) { c.R2 = -0.1 },
		"effect":         func(c *RegressionSim) { c.Effect = math.Inf(1) },
		"intercept":      func(c *RegressionSim) { c.Intercept = math.NaN() },
		"sd":             func(c *RegressionSim) { c.Outcome, c.SD = OutcomeContinuous, 0 },
		"alpha":          func(c *RegressionSim) { c.Alpha = 0 },
		"sides":          func(c *RegressionSim) { c.Sides = 3 },
		"dir":            func(c *RegressionSim) { c.Sides, c.Dir = 1, 0 },
	} {
		c := ok
		edit(&c)
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", name)
				}
			}()
			NewRegressionSim(c)
		}()
	}
	NewRegressionSim(ok) // the base case is valid
}

// BenchmarkRegressionLogistic500 measures one replicate of logistic
// regression on a normal exposure, 500 participants, no confounder.
func BenchmarkRegressionLogistic500(b *testing.B) {
	benchReplicates(b, NewRegressionSim(RegressionSim{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 500,
		Intercept: logit(0.2), Effect: math.Log(1.5), Alpha: 0.05, Sides: 2}))
}

// BenchmarkRegressionLogistic500Z is BenchmarkRegressionLogistic500 with
// a confounder (R² = 0.3) in the data and the fit.
func BenchmarkRegressionLogistic500Z(b *testing.B) {
	benchReplicates(b, NewRegressionSim(RegressionSim{Outcome: OutcomeBinary, Exposure: ExposureNormal, N: 500,
		Intercept: logit(0.2), Effect: math.Log(1.5), R2: 0.3, Alpha: 0.05, Sides: 2}))
}

// BenchmarkRegressionLinear500Z measures least squares on a binary
// exposure and a confounder, 250 per group.
func BenchmarkRegressionLinear500Z(b *testing.B) {
	benchReplicates(b, NewRegressionSim(RegressionSim{Outcome: OutcomeContinuous, Exposure: ExposureBinary,
		N1: 250, N2: 250, Effect: 0.2, SD: 1, R2: 0.3, Alpha: 0.05, Sides: 2}))
}
