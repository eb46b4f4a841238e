package power

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// RegressionOutcome is the outcome of a [RegressionSim] and with it the
// planned analysis.
type RegressionOutcome int

// Outcomes of a regression simulation.
const (
	// OutcomeBinary is a binary outcome with
	//
	//	logit P(Y = 1 | X) = Intercept + Effect·X
	//
	// analysed by logistic regression (maximum likelihood by
	// Newton–Raphson) and the Wald z test of the exposure's coefficient.
	OutcomeBinary RegressionOutcome = iota + 1
	// OutcomeContinuous is a normal outcome
	//
	//	Y = Intercept + Effect·X + ε,  ε ~ N(0, SD²)
	//
	// analysed by ordinary least squares and the t test of the exposure's
	// coefficient with n − p degrees of freedom (p = 2 without the
	// confounder, 3 with it).
	OutcomeContinuous
)

// RegressionExposure is the distribution of the exposure X of a
// [RegressionSim].
type RegressionExposure int

// Exposures of a regression simulation.
const (
	// ExposureBinary is two groups of fixed sizes N1 and N2: X = 1 for the
	// first group, 0 for the second. For a binary outcome Intercept is
	// then logit(second group's risk) and Effect the log odds ratio; for a
	// continuous one, the second group's mean and the difference in means
	// (first minus second).
	ExposureBinary RegressionExposure = iota + 1
	// ExposureNormal is a standard normal exposure for each of N
	// participants: Effect is the log odds ratio (or the difference in
	// mean) per standard deviation, Intercept the log odds (or the mean)
	// at the mean of the exposure.
	ExposureNormal
)

// RegressionSim is the Monte-Carlo model of a regression of an outcome on
// one exposure X, adjusted or not for a confounder Z, to verify a sample
// size planned with [VarianceInflation].
//
// When R2 > 0 the data hold a confounder
//
//	Z = X + e,  e ~ N(0, σ²),  σ² = Var(X) (1 − R²)/R²
//
// with Var(X) = N1 N2/(N1 + N2)² for the binary exposure (the variance of
// the fixed design) and 1 for the normal one, so that the squared
// correlation of X and Z, the R² of X regressed on Z, is R2 (exactly in
// the population of Z given the design). Z has no effect of its own on
// the outcome (its true coefficient is 0) but is adjusted for: the
// analysis regresses the outcome on an intercept, X and Z. The variance
// of the exposure's coefficient is then inflated by 1/(1 − R²), exactly
// for the linear model and approximately for the logistic one; that is the
// prediction of [VarianceInflation] that the simulation puts to the test.
// With R2 = 0 there is no confounder and the analysis has an intercept and
// X.
//
// A two-sided test rejects when |b/se| > c, a one-sided one when
// Dir·b/se > c, with c = z_{1−α/sides} (Wald test) or t_{1−α/sides}(n − p)
// (t test).
//
// A logistic fit that has no finite maximum or does not converge counts
// as not rejecting: an outcome with no event or all events, a separation
// (a coefficient diverges, so Newton's steps never shrink), an information
// matrix that is not positive definite, or 25 iterations without a step
// below 1e-8 in every coefficient. This is also what R's glm gives in
// effect there: it stops with a huge coefficient whose Wald p-value is
// near 1.
//
// References: Hsieh FY, Bloch DA, Larsen MD (1998). A simple method of
// sample size calculation for linear and logistic regression. Stat Med
// 17:1623–1634 (the inflation 1/(1 − R²)); McCullagh P, Nelder JA (1989).
// Generalized Linear Models, 2nd ed. Chapman and Hall, sections 4.4
// (iteratively reweighted least squares) and 4.5 (Wald tests); Wald A
// (1943). Tests of statistical hypotheses concerning several parameters
// when the number of observations is large. Trans Am Math Soc 54:426–482.
type RegressionSim struct {
	Outcome  RegressionOutcome
	Exposure RegressionExposure
	// N1 and N2 are the group sizes of a binary exposure, each at least 1
	// (and N1 + N2 above the number of coefficients).
	N1, N2 int
	// N is the number of participants with a normal exposure, above the
	// number of coefficients.
	N int
	// Intercept and Effect are the regression's coefficients (see the
	// outcomes and exposures); they must be finite.
	Intercept, Effect float64
	// SD is the residual standard deviation of a continuous outcome
	// (positive); it is ignored for a binary one.
	SD float64
	// R2 is the squared multiple correlation of the exposure with the
	// confounder, in [0, 1); 0 means no confounder.
	R2 float64
	// Alpha, Sides and Dir (+1 when Effect > 0 is the alternative, −1
	// otherwise; needed for one-sided tests) describe the test.
	Alpha      float64
	Sides, Dir int
}

// maxRegressionN is the most participants a regression simulation takes.
const maxRegressionN = 1 << 30

// NewRegressionSim returns the model. Two cases need no data of
// participants and are drawn through sufficient statistics, in O(1) per
// replicate: a binary outcome on a binary exposure without confounder,
// whose logistic fit is the 2×2 table (b = log(ad/bc), se² = 1/a + 1/b +
// 1/c + 1/d, the maximum likelihood estimate and its inverse information,
// Woolf 1955), drawn as two binomial counts ([BinomialTable]); and a
// continuous outcome on a binary exposure without confounder, whose least
// squares t test is Student's pooled t test ([NewTwoMeans]; with at least
// two participants per group). Otherwise each replicate draws every
// participant's X, Z and Y into the worker's scratch space and fits the
// regression there without allocating. Z is drawn rescaled to unit
// variance, √(R²/Var(X)) X + √(1 − R²) N(0, 1), which changes neither the
// estimate of X's coefficient nor its test and keeps the fit well scaled
// whatever R2.
//
// It panics unless the outcome and exposure are known, the sizes, SD,
// coefficients and R2 are valid as documented on [RegressionSim], and the
// test is valid.
//
// References: Woolf B (1955). On estimating the relation between blood
// group and disease. Ann Hum Genet 19:251–253.
func NewRegressionSim(c RegressionSim) Model {
	checkTest(c.Alpha, c.Sides, c.Dir)
	if c.Outcome != OutcomeBinary && c.Outcome != OutcomeContinuous {
		panic(fmt.Sprintf("power: unknown regression outcome %d", c.Outcome))
	}
	if math.IsNaN(c.Intercept) || math.IsInf(c.Intercept, 0) || math.IsNaN(c.Effect) || math.IsInf(c.Effect, 0) {
		panic("power: regression coefficients must be finite")
	}
	if !(c.R2 >= 0 && c.R2 < 1) {
		panic(fmt.Sprintf("power: squared multiple correlation %v out of [0, 1)", c.R2))
	}
	continuous := c.Outcome == OutcomeContinuous
	if continuous && !(c.SD > 0 && !math.IsInf(c.SD, 1)) {
		panic("power: the residual standard deviation must be positive and finite")
	}
	p := 2
	if c.R2 > 0 {
		p = 3
	}
	m := &regModel{
		logistic: !continuous,
		b0:       c.Intercept,
		b1:       c.Effect,
		sd:       c.SD,
		sign:     signOf(c.Sides, c.Dir),
	}
	var varX float64
	switch c.Exposure {
	case ExposureBinary:
		if c.N1 < 1 || c.N2 < 1 || c.N1 > maxRegressionN || c.N2 > maxRegressionN || c.N1+c.N2 <= p {
			panic("power: a binary exposure needs at least one participant per group and more participants than coefficients")
		}
		m.n, m.n1 = c.N1+c.N2, c.N1
		n1, n2 := float64(c.N1), float64(c.N2)
		varX = n1 * n2 / sq(n1+n2)
		if p == 2 && continuous && c.N1 >= 2 && c.N2 >= 2 {
			return NewTwoMeans(TwoMeans{N1: c.N1, N2: c.N2, Diff: c.Effect, SD1: c.SD,
				Alpha: c.Alpha, Sides: c.Sides, Dir: c.Dir})
		}
		m.p1, m.p2 = expit(c.Intercept+c.Effect), expit(c.Intercept)
		if p == 2 && !continuous {
			return &regTable{t1: NewBinomialTable(c.N1, m.p1), t2: NewBinomialTable(c.N2, m.p2),
				n1: c.N1, n2: c.N2, crit2: sq(ZAlpha(c.Alpha, c.Sides)), sign: m.sign}
		}
	case ExposureNormal:
		if c.N <= p || c.N > maxRegressionN {
			panic("power: a normal exposure needs more participants than coefficients")
		}
		m.n, m.normal, varX = c.N, true, 1
	default:
		panic(fmt.Sprintf("power: unknown regression exposure %d", c.Exposure))
	}
	if p == 3 {
		m.zx, m.ze = math.Sqrt(c.R2/varX), math.Sqrt(1-c.R2)
	}
	if continuous {
		m.crit2 = sq(tCrit(float64(m.n-p), c.Alpha, c.Sides))
	} else {
		m.crit2 = sq(ZAlpha(c.Alpha, c.Sides))
	}
	return m
}

// expit is the inverse logit, 1/(1 + e^{−x}).
func expit(x float64) float64 { return 1 / (1 + math.Exp(-x)) }

// regTable is the logistic regression on a binary exposure without
// confounder: two binomial counts and the Wald test of the log odds ratio.
type regTable struct {
	t1, t2 *BinomialTable
	n1, n2 int
	crit2  float64
	sign   float64
}

func (m *regTable) NewWorker() Worker { return m }

// Replicate draws the events a of N1 and c of N2 and tests
// b = log(a d/(b c)) with se² = 1/a + 1/b + 1/c + 1/d (b = N1 − a,
// d = N2 − c); a table with an empty cell has no finite estimate and does
// not reject.
func (m *regTable) Replicate(r *rand.Rand) bool {
	a, c := m.t1.Draw(r), m.t2.Draw(r)
	est, v, ok := woolf(a, m.n1-a, c, m.n2-c)
	if !ok || m.sign*est < 0 {
		return false
	}
	return est*est > m.crit2*v
}

// woolf returns the log odds ratio log(a d/(b c)) of a 2×2 table (a
// events and b non-events in the first group, c and d in the second) and
// its variance 1/a + 1/b + 1/c + 1/d: the maximum likelihood estimate of
// the exposure's coefficient in the logistic regression on a binary
// exposure and its inverse information. ok is false when a cell is empty
// (no finite estimate).
//
// References: Woolf B (1955). Ann Hum Genet 19:251–253.
func woolf(a, b, c, d int) (est, v float64, ok bool) {
	if a == 0 || b == 0 || c == 0 || d == 0 {
		return 0, 0, false
	}
	fa, fb, fc, fd := float64(a), float64(b), float64(c), float64(d)
	return math.Log(fa * fd / (fb * fc)), 1/fa + 1/fb + 1/fc + 1/fd, true
}

// regModel is the general case: participants drawn one by one and the
// regression fitted on them.
type regModel struct {
	n, n1    int  // participants; with a binary exposure X = 1 for the first n1
	normal   bool // X ~ N(0, 1), else binary
	logistic bool
	b0, b1   float64 // intercept and effect
	p1, p2   float64 // binary outcome and exposure: the two risks
	sd       float64 // residual SD of a continuous outcome
	zx, ze   float64 // Z = zx X + ze N(0, 1); 0: no confounder
	crit2    float64 // squared critical value
	sign     float64
}

// workerBytes is the scratch of a worker: X, Y and, with a confounder, Z.
func (m *regModel) workerBytes() int64 {
	k := int64(2)
	if m.zx > 0 {
		k = 3
	}
	return 8 * k * int64(m.n)
}

// regWorker holds a data set; x is filled once for a binary exposure.
type regWorker struct {
	m       *regModel
	x, z, y []float64
}

func (m *regModel) NewWorker() Worker {
	w := &regWorker{m: m, x: make([]float64, m.n), y: make([]float64, m.n)}
	if m.zx > 0 {
		w.z = make([]float64, m.n)
	}
	if !m.normal {
		for i := range m.n1 {
			w.x[i] = 1
		}
	}
	return w
}

// draw fills one data set, participant by participant: X (normal
// exposure), then e (confounder), then Y.
func (w *regWorker) draw(r *rand.Rand) {
	m := w.m
	x, y := w.x, w.y[:len(w.x)]
	for i := range x {
		xi := x[i]
		if m.normal {
			xi = r.NormFloat64()
			x[i] = xi
		}
		if w.z != nil {
			w.z[i] = m.zx*xi + m.ze*r.NormFloat64()
		}
		switch {
		case !m.logistic:
			y[i] = m.b0 + m.b1*xi + m.sd*r.NormFloat64()
		case m.normal:
			y[i] = bern(r.Float64() < expit(m.b0+m.b1*xi))
		case i < m.n1:
			y[i] = bern(r.Float64() < m.p1)
		default:
			y[i] = bern(r.Float64() < m.p2)
		}
	}
}

func bern(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// Replicate draws a data set, fits the planned regression and tests the
// exposure's coefficient.
func (w *regWorker) Replicate(r *rand.Rand) bool {
	w.draw(r)
	var f regFit
	if w.m.logistic {
		f = fitLogistic(w.x, w.z, w.y)
	} else {
		f = fitOLS(w.x, w.z, w.y)
	}
	if !f.ok {
		return false
	}
	b := f.coef[1]
	if w.m.sign*b < 0 {
		return false
	}
	return b*b > w.m.crit2*f.se[1]*f.se[1]
}

// regFit is a fitted regression of y on an intercept, x and, when given,
// z: coef and se in that order (p = 2 or 3 used). ok is false when the fit
// failed (see [RegressionSim]); iter counts Newton's steps.
type regFit struct {
	coef, se [3]float64
	p        int
	iter     int
	ok       bool
}

// Logistic fits stop after logitMaxIter Newton steps, and converge when
// every coefficient moves by less than logitTol in a step.
const (
	logitMaxIter = 25
	logitTol     = 1e-8
)

// fitLogistic fits logit P(y = 1) = b0 + b1 x (+ b2 z when z is not nil)
// by maximum likelihood with Newton–Raphson (for the canonical logit link
// the same as Fisher scoring and iteratively reweighted least squares):
//
//	b ← b + I(b)⁻¹ U(b),  U = Σ (yᵢ − μᵢ) vᵢ,  I = Σ μᵢ(1 − μᵢ) vᵢ vᵢᵀ
//
// with vᵢ = (1, xᵢ, zᵢ) and μᵢ = expit(vᵢᵀ b), starting from
// b = (logit ȳ, 0, 0). The standard errors are the square roots of the
// diagonal of I⁻¹ at the last step's start, within a step of 1e-8 of the
// estimate. It allocates nothing.
//
// References: McCullagh P, Nelder JA (1989). Generalized Linear Models,
// 2nd ed. Chapman and Hall, section 4.4.
func fitLogistic(x, z, y []float64) (f regFit) {
	n := len(x)
	y = y[:n]
	f.p = 2
	if z != nil {
		z = z[:n]
		f.p = 3
	}
	var events float64
	for _, v := range y {
		events += v
	}
	if events == 0 || events == float64(n) {
		return f // no finite maximum
	}
	f.coef[0] = math.Log(events / (float64(n) - events))
	var h [3][3]float64
	for f.iter = 1; f.iter <= logitMaxIter; f.iter++ {
		var g [3]float64
		h = [3][3]float64{}
		b0, b1, b2 := f.coef[0], f.coef[1], f.coef[2]
		if z == nil {
			for i, xi := range x {
				mu := expit(b0 + b1*xi)
				wt := mu * (1 - mu)
				res := y[i] - mu
				g[0] += res
				g[1] += res * xi
				h[0][0] += wt
				h[0][1] += wt * xi
				h[1][1] += wt * xi * xi
			}
		} else {
			for i, xi := range x {
				zi := z[i]
				mu := expit(b0 + b1*xi + b2*zi)
				wt := mu * (1 - mu)
				res := y[i] - mu
				g[0] += res
				g[1] += res * xi
				g[2] += res * zi
				h[0][0] += wt
				h[0][1] += wt * xi
				h[0][2] += wt * zi
				h[1][1] += wt * xi * xi
				h[1][2] += wt * xi * zi
				h[2][2] += wt * zi * zi
			}
		}
		var l [3][3]float64
		if !cholesky(&h, &l, f.p) {
			return f
		}
		d := cholSolve(&l, g, f.p)
		small := true
		for j := range f.p {
			f.coef[j] += d[j]
			if !(math.Abs(d[j]) < logitTol) {
				small = false
			}
		}
		if small {
			inv := cholInvDiag(&l, f.p)
			for j := range f.p {
				f.se[j] = math.Sqrt(inv[j])
			}
			f.ok = true
			return f
		}
	}
	return f
}

// fitOLS fits y = b0 + b1 x (+ b2 z when z is not nil) + ε by least
// squares, from the centred cross-products S of the regressors:
//
//	(b1, b2) = S⁻¹ s_y,  b0 = ȳ − b1 x̄ − b2 z̄,
//	s² = (S_yy − (b1, b2)·s_y)/(n − p),  Cov(b1, b2) = s² S⁻¹,
//	Var(b0) = s²/n + m Cov mᵀ,  m = (x̄, z̄)
//
// ok is false when S is singular or the residual sum of squares is not
// positive. It allocates nothing.
//
// References: Seber GAF, Lee AJ (2003). Linear Regression Analysis, 2nd
// ed. Wiley, chapter 3.
func fitOLS(x, z, y []float64) (f regFit) {
	n := len(x)
	y = y[:n]
	nf := float64(n)
	f.p = 2
	var mx, mz, my float64
	for i, xi := range x {
		mx += xi
		my += y[i]
	}
	mx /= nf
	my /= nf
	if z != nil {
		z = z[:n]
		f.p = 3
		for _, zi := range z {
			mz += zi
		}
		mz /= nf
	}
	var s [3][3]float64 // over (x, z, y) centred
	for i, xi := range x {
		dx, dy := xi-mx, y[i]-my
		s[0][0] += dx * dx
		s[0][2] += dx * dy
		s[2][2] += dy * dy
		if z != nil {
			dz := z[i] - mz
			s[0][1] += dx * dz
			s[1][1] += dz * dz
			s[1][2] += dz * dy
		}
	}
	k := f.p - 1 // slopes
	var a, l [3][3]float64
	a[0][0], a[0][1], a[1][1] = s[0][0], s[0][1], s[1][1]
	if !cholesky(&a, &l, k) {
		return f
	}
	b := cholSolve(&l, [3]float64{s[0][2], s[1][2]}, k)
	rss := s[2][2] - b[0]*s[0][2] - b[1]*s[1][2]
	if !(rss > 0) {
		return f
	}
	s2 := rss / float64(n-f.p)
	// The covariance of the slopes is s² S⁻¹: its columns solve S c = eⱼ.
	c0 := cholSolve(&l, [3]float64{1, 0}, k)
	c1 := cholSolve(&l, [3]float64{0, 1}, k)
	f.coef = [3]float64{my - b[0]*mx - b[1]*mz, b[0], b[1]}
	mcm := mx*mx*c0[0] + 2*mx*mz*c0[1] + mz*mz*c1[1]
	f.se = [3]float64{math.Sqrt(s2 * (1/nf + mcm)), math.Sqrt(s2 * c0[0]), math.Sqrt(s2 * c1[1])}
	f.ok = true
	return f
}

// cholesky writes into l the lower Cholesky factor of the leading p×p
// block of the symmetric matrix a (its upper triangle is read), and
// reports whether that block is positive definite.
func cholesky(a, l *[3][3]float64, p int) bool {
	for j := range p {
		d := a[j][j]
		for k := range j {
			d -= l[j][k] * l[j][k]
		}
		if !(d > 0) {
			return false
		}
		l[j][j] = math.Sqrt(d)
		for i := j + 1; i < p; i++ {
			v := a[j][i]
			for k := range j {
				v -= l[i][k] * l[j][k]
			}
			l[i][j] = v / l[j][j]
		}
	}
	return true
}

// cholSolve returns the solution of L Lᵀ x = b for the leading p entries.
func cholSolve(l *[3][3]float64, b [3]float64, p int) (x [3]float64) {
	for i := range p {
		v := b[i]
		for k := range i {
			v -= l[i][k] * x[k]
		}
		x[i] = v / l[i][i]
	}
	for i := p - 1; i >= 0; i-- {
		v := x[i]
		for k := i + 1; k < p; k++ {
			v -= l[k][i] * x[k]
		}
		x[i] = v / l[i][i]
	}
	return x
}

// cholInvDiag returns the diagonal of (L Lᵀ)⁻¹ for the leading p entries.
func cholInvDiag(l *[3][3]float64, p int) (d [3]float64) {
	for j := range p {
		var e [3]float64
		e[j] = 1
		d[j] = cholSolve(l, e, p)[j]
	}
	return d
}
