package fit

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"matgate/checks/plastic"
	"matgate/convert"
)

// Model is the form of the card to fit: the back-stress terms and the
// isotropic law.
type Model struct {
	Terms  int  // back-stress terms, 1..plastic.MaxTerms
	Linear bool // the one term is linear (Prager); otherwise every term is Armstrong-Frederick
	Voce   bool // add Voce isotropic hardening R(p) = Q (1 - exp(-b p)), Q > 0
}

// ParseModel reads the kinematic model "prager", "af" or "chaboche:N" and
// the isotropic law "" (or "none") or "voce".
func ParseModel(kinematic, isotropic string) (Model, error) {
	var m Model
	switch {
	case kinematic == "prager":
		m = Model{Terms: 1, Linear: true}
	case kinematic == "af":
		m = Model{Terms: 1}
	case strings.HasPrefix(kinematic, "chaboche:"):
		n, err := strconv.Atoi(strings.TrimPrefix(kinematic, "chaboche:"))
		if err != nil || n < 1 || n > plastic.MaxTerms {
			return m, fmt.Errorf("model %q: want chaboche:N with N from 1 to %d", kinematic, plastic.MaxTerms)
		}
		m = Model{Terms: n}
	default:
		return m, fmt.Errorf("model %q: want prager, af or chaboche:N", kinematic)
	}
	switch isotropic {
	case "", "none":
	case "voce":
		m.Voce = true
	default:
		return m, fmt.Errorf("isotropic law %q: want voce or none", isotropic)
	}
	return m, nil
}

// String returns the model as ParseModel reads it.
func (m Model) String() string {
	s := "af"
	switch {
	case m.Linear:
		s = "prager"
	case m.Terms > 1:
		s = fmt.Sprintf("chaboche:%d", m.Terms)
	}
	if m.Voce {
		s += " + voce"
	}
	return s
}

// NumParams returns the number of fitted parameters: the yield stress, one
// (Prager) or two (C, gamma) per term, two for Voce (Q, b).
func (m Model) NumParams() int {
	n := 1 + 2*m.Terms
	if m.Linear {
		n = 2
	}
	if m.Voce {
		n += 2
	}
	return n
}

// Data is one uniaxial test: [strain, stress Pa] in recorded order, from
// the virgin state (zero strain, zero stress), true values.
type Data struct {
	Name   string
	Points [][2]float64
}

// Options tune Fit. A nil *Options is not allowed: the model is required.
type Options struct {
	Model Model
	// E is Young's modulus in Pa. Zero: estimated from the initial slope of
	// the first file (see InitialSlope) and not fitted.
	E float64
	// Nu is the Poisson ratio written to the card; uniaxial data cannot
	// determine it. Zero: 0.3 (a metal's usual value; common practice, no
	// source).
	Nu float64
	// MaxIterations bounds the Gauss-Newton iterations. Zero: 200.
	MaxIterations int
}

// Params are fitted material parameters, SI units.
type Params struct {
	E, SigmaY float64
	Terms     []plastic.Term
	Iso       plastic.Isotropic
}

// Names returns the names of the fitted parameters in the order of
// Result.RelStdErr: sigma_y, then H or c_i and gamma_i, then q and b.
func (m Model) Names() []string {
	names := []string{"yield_stress"}
	if m.Linear {
		names = append(names, "plastic_modulus")
	} else {
		for i := 1; i <= m.Terms; i++ {
			names = append(names, fmt.Sprintf("c%d", i), fmt.Sprintf("gamma%d", i))
		}
	}
	if m.Voce {
		names = append(names, "q", "b")
	}
	return names
}

// FileStats is the fit's error on one data file.
type FileStats struct {
	Name      string
	Points    int
	Cyclic    bool    // the strain history reverses
	Amplitude float64 // half the strain range
	RMS, Max  float64 // stress errors, Pa
}

// Result is a fit.
type Result struct {
	Model  Model
	Params Params
	Start  Params // the closed-form start values
	Nu     float64

	EEstimated bool // E came from the initial slope
	EPoints    int  // points of the initial slope

	RMS, Max float64 // stress errors over every point, Pa
	Peak     float64 // largest |recorded stress|, Pa
	Files    []FileStats

	// Cond is the condition number of the Jacobian of the residuals with
	// respect to the logarithms of the parameters at the fit: the ratio of
	// the largest to the smallest relative sensitivity of the response.
	Cond float64
	// RelStdErr estimates each parameter's relative standard error, in the
	// order of Model.Names: sqrt(s^2 (J^T J)^-1_ii) in log parameters, s^2
	// the residual variance (linearized least squares; Seber and Wild,
	// Nonlinear Regression, 1989, sec. 2.1, from memory). Inf when J is
	// rank deficient.
	RelStdErr []float64

	Warnings    []string
	Iterations  int
	Evaluations int // integrator passes over the data
	Status      string
	Runtime     time.Duration
}

// Errors of Fit.
var (
	// ErrBadData is wrapped by every error about the data themselves.
	ErrBadData = errors.New("fit: bad data")
	// ErrNoFit is wrapped when the optimizer cannot reduce the objective
	// from the start values (the integrator refused every trial).
	ErrNoFit = errors.New("fit: no fit")
)

// CondWarn is the Jacobian condition above which Fit warns that the data
// cannot determine the parameters: with stress errors of 1e-3 of the peak
// (a good test), a direction 1e6 times less sensitive than the best one
// moves its parameters by order one without changing the fit. Common
// practice, no source.
const CondWarn = 1e6

// Fit fits opts.Model to the data files by least squares: the reference
// integrator (exact 1D return mapping, plastic.Exact, increment-independent
// under strain control) is driven from the virgin state along each file's
// recorded strains, one step from point to point, and
//
//	F(x) = 1/2 sum_files sum_points ((sigma(eps_k; x) - sigma_k) / peak)^2
//
// is minimized over x = the logarithms of the parameters (so every
// parameter stays positive) by Gauss-Newton directions with a backtracking
// line search (optimize.Newton with the Hessian J^T J, which it regularizes
// by a multiple of the identity when singular, like Levenberg-Marquardt).
// J is by central differences in x, step 1e-6 (truncation 1e-12, round-off
// 1e-10 relative to the peak stress). ctx is checked at every evaluation.
//
// References:
//   - J. Nocedal and S. J. Wright, Numerical Optimization, 2nd ed., 2006,
//     sec. 10.3 (Gauss-Newton), algorithm 3.3 (the identity shift, as
//     gonum's Newton implements it).
func Fit(ctx context.Context, data []Data, opts Options) (*Result, error) {
	m := opts.Model
	if m.Terms < 1 || m.Terms > plastic.MaxTerms || (m.Linear && m.Terms != 1) {
		return nil, fmt.Errorf("fit: model with %d terms: want 1 to %d (Prager: 1)", m.Terms, plastic.MaxTerms)
	}
	if len(data) == 0 {
		return nil, fmt.Errorf("%w: no data files", ErrBadData)
	}
	total := 0
	for _, d := range data {
		if err := checkHistory(d); err != nil {
			return nil, err
		}
		total += len(d.Points)
	}
	if total <= m.NumParams() {
		return nil, fmt.Errorf("%w: %d points cannot determine the %d parameters of %s", ErrBadData, total, m.NumParams(), m)
	}
	start := time.Now()
	res := &Result{Model: m, Nu: opts.Nu}
	if res.Nu == 0 {
		res.Nu = 0.3
	}
	E := opts.E
	if E == 0 {
		var n int
		// Pool the initial slopes of every file: one least-squares slope
		// through the origin over all their elastic points.
		var sxy, sxx float64
		var firstErr error
		for _, d := range data {
			a, b, k, err := initialSlopeSums(d)
			if err != nil {
				if firstErr == nil {
					firstErr = err
				}
				continue
			}
			sxy, sxx, n = sxy+a, sxx+b, n+k
		}
		if n < 2 {
			return nil, firstErr
		}
		E = sxy / sxx
		res.EEstimated, res.EPoints = true, n
		if n < 3 {
			res.Warnings = append(res.Warnings, fmt.Sprintf("Young's modulus %.4g Pa from only %d points of the initial slopes: give --youngs-modulus", E, n))
		}
	} else if !(E > 0) || math.IsInf(E, 0) {
		return nil, fmt.Errorf("fit: Young's modulus %g: must be positive and finite", E)
	}
	if E < convert.MinMetalE || E > convert.MaxMetalE {
		how := "given"
		if res.EEstimated {
			how = "estimated from the initial slope"
		}
		return nil, fmt.Errorf("%w: Young's modulus %.4g Pa (%s) is outside the range of metals (%g to %g GPa): are the stresses in the stated unit?", ErrBadData, E, how, convert.MinMetalE/1e9, convert.MaxMetalE/1e9)
	}
	p := newProblem(ctx, m, E, res.Nu, data)
	res.Peak = p.scale
	x0 := startValues(m, E, data)
	res.Start = p.params(x0)
	if _, err := p.material(x0); errors.Is(err, errImplausible) {
		return nil, fmt.Errorf("%w: the data's yield stress of about %.4g Pa is above 0.02 E = %.4g Pa, beyond the strongest metals: is E or the stress unit right?", ErrBadData, res.Start.SigmaY, 0.02*E)
	}
	if !p.residuals(x0, p.r) {
		return nil, fmt.Errorf("%w: the integrator refuses the start values %+v", ErrNoFit, res.Start)
	}
	iters := opts.MaxIterations
	if iters == 0 {
		iters = 200
	}
	prob := optimize.Problem{
		Func: p.f,
		Grad: p.grad,
		Hess: p.hess,
		Status: func() (optimize.Status, error) {
			if err := ctx.Err(); err != nil {
				return optimize.Failure, err
			}
			return optimize.NotTerminated, nil
		},
	}
	set := &optimize.Settings{
		MajorIterations:   iters,
		GradientThreshold: 1e-20,
		// F is relative: 1e-24 is a residual of 1e-12 of the peak stress,
		// round-off of the integrator; a relative change below 1e-12 over 5
		// iterations is a converged noisy fit.
		Converger: &optimize.FunctionConverge{Absolute: 1e-24, Relative: 1e-12, Iterations: 5},
	}
	method := &optimize.Newton{Linesearcher: &optimize.Backtracking{}}
	out, err := optimize.Minimize(prob, x0, set, method)
	if cerr := ctx.Err(); cerr != nil {
		return nil, fmt.Errorf("fit: %w", cerr)
	}
	x := x0
	if out != nil {
		x = out.X
		res.Iterations = out.MajorIterations
		res.Status = out.Status.String()
	}
	if out != nil && out.Status == optimize.IterationLimit {
		res.Warnings = append(res.Warnings, fmt.Sprintf("no convergence in %d iterations", iters))
	}
	if !p.jacobian(x) {
		return nil, fmt.Errorf("%w: the integrator refuses the fitted parameters", ErrNoFit)
	}
	if err != nil {
		// The optimizer stopped outside its convergence test, usually a
		// line search that cannot decrease F at round-off. That is a
		// converged fit when the Gauss-Newton step would gain nothing:
		// its predicted decrease 1/2 g^T (J^T J)^-1 g is below 1e-9 of F
		// (Nocedal and Wright 2006, sec. 10.3). Otherwise say so.
		if dec, ok := p.predictedDecrease(); ok && dec <= 1e-9*0.5*dot(p.r, p.r)+1e-30 {
			res.Status = "converged (no further decrease at round-off)"
		} else {
			res.Warnings = append(res.Warnings, fmt.Sprintf("optimizer stopped: %v (status %s); the best point found is reported", err, res.Status))
		}
	}
	res.Params = p.params(x)
	if h, hMax := saturation(res.Params.Terms, res.Params.Iso), convert.MaxHardening(E, res.Params.SigmaY); h > hMax*(1-1e-3) {
		res.Warnings = append(res.Warnings, fmt.Sprintf("the saturations (sum c/gamma + q = %.4g Pa) are held at the plausible bound %.4g Pa (yield stress + saturation at most 0.02 E, saturation at most 20 times the yield stress): the data ask for hardening that does not saturate within them; a prager term describes such data", h, hMax))
	}
	res.Evaluations = p.evals
	p.stats(res)
	res.Warnings = append(res.Warnings, determinacy(m, data, res)...)
	res.Runtime = time.Since(start)
	return res, nil
}

// checkHistory refuses data the objective cannot use, naming the file and
// the data row (1-based, after the header).
func checkHistory(d Data) error {
	pts := d.Points
	if len(pts) < 2 {
		return fmt.Errorf("%w: %s: %d point(s): a test needs at least 2", ErrBadData, d.Name, len(pts))
	}
	rev := 0
	for i, p := range pts {
		for j, v := range p {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("%w: %s: data row %d: %s %g is not a finite number", ErrBadData, d.Name, i+1, [2]string{"strain", "stress"}[j], v)
			}
		}
		if math.Abs(p[0]) > 1 {
			return fmt.Errorf("%w: %s: data row %d: strain %g: strains are dimensionless (not percent) and below 1 in size", ErrBadData, d.Name, i+1, p[0])
		}
		if i > 0 && p[0] == pts[i-1][0] && p[1] != pts[i-1][1] {
			return fmt.Errorf("%w: %s: data rows %d and %d have the same strain %g and different stresses: not a strain history in recorded order", ErrBadData, d.Name, i, i+1, p[0])
		}
		if i > 1 && (p[0]-pts[i-1][0])*(pts[i-1][0]-pts[i-2][0]) < 0 {
			rev++
		}
	}
	// A test history reverses at its cycle tips, a few times in many
	// points; reversals at a quarter of the rows or more are rows out of
	// order (common practice, no source).
	if len(pts) >= 8 && rev*4 >= len(pts) {
		return fmt.Errorf("%w: %s: the strain reverses at %d of %d rows: the rows look unsorted (a file is one test in recorded order)", ErrBadData, d.Name, rev, len(pts))
	}
	return nil
}

// InitialSlope estimates Young's modulus from the first loading branch of
// d: the least-squares slope through the origin of the leading points that
// lie on one line. A point ends the line when it falls below the line of
// the points before it by more than 0.2% of the line's stress plus three
// times their residual RMS (the 0.2% is the usual proportional-limit
// sensitivity of a tension test; common practice, no source). n is the
// number of points used; at least 2 are needed.
func InitialSlope(d Data) (E float64, n int, err error) {
	sxy, sxx, n, err := initialSlopeSums(d)
	if err != nil {
		return 0, n, err
	}
	return sxy / sxx, n, nil
}

// initialSlopeSums returns the sums sum eps sigma and sum eps^2 over the
// points of d's initial slope (see InitialSlope) and their number.
func initialSlopeSums(d Data) (sxy, sxx float64, n int, err error) {
	var sres float64
	for i, p := range d.Points {
		if i > 0 && p[0] < d.Points[i-1][0] {
			break
		}
		if p[0] <= 0 {
			continue
		}
		if n >= 2 {
			slope := sxy / sxx
			pred := slope * p[0]
			rms := math.Sqrt(sres / float64(n))
			if pred-p[1] > 0.002*math.Abs(pred)+3*rms {
				break
			}
		}
		sxy += p[0] * p[1]
		sxx += p[0] * p[0]
		n++
		slope := sxy / sxx
		sres = 0
		for _, q := range d.Points[:i+1] {
			if q[0] > 0 {
				r := q[1] - slope*q[0]
				sres += r * r
			}
		}
	}
	if n < 2 || !(sxy > 0) {
		return 0, 0, n, fmt.Errorf("%w: %s: cannot estimate Young's modulus from the initial slope (%d rising point(s) on a line); give it", ErrBadData, d.Name, n)
	}
	return sxy, sxx, n, nil
}

// startValues returns x0 from closed forms. With sigma_y0 the stress at the
// end of the initial slope and eps_p = eps - sigma/E:
//
//   - the hardening headroom S = max |sigma| - sigma_y0 and the largest
//     plastic strain measure X (the plastic strain at the end of a
//     monotonic file, half the plastic strain range of a cyclic one);
//   - Prager: H = S / X (the secant of sigma = sigma_y + H eps_p);
//   - N Armstrong-Frederick terms: rates gamma_i = 2/X 10^(N-1-i) (spread
//     by decades, the slowest reaching 1 - exp(-2) = 86% of its saturation
//     at X), saturations C_i/gamma_i = S/N (back-stress saturation: the
//     loop-tip curve sigma_a = sigma_y + sum (C_i/gamma_i) tanh(gamma_i
//     dEpsP/2) and the monotonic curve both tend to sigma_y + sum
//     C_i/gamma_i);
//   - Voce: Q = 0.3 S taken from the kinematic share, b = 3/P with P the
//     largest accumulated plastic strain of a file.
//
// References: Lemaitre and Chaboche, Mechanics of Solid Materials, 1990,
// ch. 5 (the saturation and the cyclic curve; from memory).
func startValues(m Model, E float64, data []Data) []float64 {
	sy := math.Inf(1)
	peak, X, P := 0.0, 0.0, 0.0
	for _, d := range data {
		first := yieldOnSlope(d, E)
		sy = math.Min(sy, first)
		lo, hi, acc := math.Inf(1), math.Inf(-1), 0.0
		prev := 0.0
		for _, p := range d.Points {
			peak = math.Max(peak, math.Abs(p[1]))
			ep := p[0] - p[1]/E
			lo, hi = math.Min(lo, ep), math.Max(hi, ep)
			acc += math.Abs(ep - prev)
			prev = ep
		}
		x := math.Max(math.Abs(lo), math.Abs(hi))
		if isCyclic(d) {
			x = (hi - lo) / 2
		}
		X, P = math.Max(X, x), math.Max(P, acc)
	}
	if math.IsInf(sy, 1) || sy <= 0 || sy >= peak {
		sy = 0.7 * peak
	}
	S := math.Max(peak-sy, 0.05*sy)
	// Start inside the plausible bound of the saturations (see
	// clampSaturation), where the objective is not flat in their scale.
	if hMax := convert.MaxHardening(E, sy); S > 0.9*hMax && hMax > 0 {
		S = 0.9 * hMax
	}
	X = math.Max(X, 1e-5)
	P = math.Max(P, X)
	x0 := []float64{math.Log(sy)}
	kin := S
	if m.Voce {
		kin = 0.7 * S
	}
	if m.Linear {
		x0 = append(x0, math.Log(kin/X))
	} else {
		for i := 0; i < m.Terms; i++ {
			g := 2 / X * math.Pow(10, float64(m.Terms-1-i))
			x0 = append(x0, math.Log(g*kin/float64(m.Terms)), math.Log(g))
		}
	}
	if m.Voce {
		x0 = append(x0, math.Log(0.3*S), math.Log(3/P))
	}
	return x0
}

// yieldOnSlope returns the stress at the last point of d's first branch on
// the elastic line of slope E (within 0.2% of its stress; see InitialSlope).
func yieldOnSlope(d Data, E float64) float64 {
	last := math.Inf(1)
	for i, p := range d.Points {
		if i > 0 && p[0] < d.Points[i-1][0] {
			break
		}
		if p[0] <= 0 {
			continue
		}
		if E*p[0]-p[1] > 0.002*E*p[0] {
			break
		}
		last = p[1]
	}
	return last
}

func isCyclic(d Data) bool {
	for i := 2; i < len(d.Points); i++ {
		if (d.Points[i][0]-d.Points[i-1][0])*(d.Points[i-1][0]-d.Points[i-2][0]) < 0 {
			return true
		}
	}
	return false
}

// determinacy returns the warnings about what the data cannot determine.
func determinacy(m Model, data []Data, res *Result) []string {
	var w []string
	amps := map[string]bool{}
	cyclic := 0
	mono := 0
	for _, f := range res.Files {
		if f.Cyclic {
			cyclic++
			amps[strconv.FormatFloat(f.Amplitude, 'g', 2, 64)] = true
		} else {
			mono++
		}
	}
	levels := len(amps)
	if mono > 0 {
		levels++
	}
	if !m.Linear && m.Terms > levels {
		w = append(w, fmt.Sprintf("under-determined: %d back-stress terms from %d strain level(s) (%d cyclic amplitude(s), %s): each term's saturation needs its own amplitude; add amplitudes or use fewer terms",
			m.Terms, levels, len(amps), plural(mono, "monotonic curve")))
	}
	if m.Voce && cyclic == 0 {
		w = append(w, "under-determined: Voce isotropic and kinematic hardening give the same monotonic curve; isotropic hardening needs cyclic data")
	}
	if res.Cond > CondWarn {
		w = append(w, fmt.Sprintf("under-determined: the Jacobian's condition number is %.3g (above %.0g): some parameter combinations barely change the response", res.Cond, CondWarn))
	}
	return w
}

func plural(n int, s string) string {
	if n == 1 {
		return "1 " + s
	}
	return fmt.Sprintf("%d %ss", n, s)
}

// problem is the least-squares objective. Its buffers are allocated once;
// an evaluation drives the integrator without allocating.
type problem struct {
	ctx   context.Context
	m     Model
	E, nu float64
	data  []Data
	n     int
	scale float64
	set   plastic.Settings

	r, rp, rm []float64
	J         *mat.Dense
	xJ        []float64 // where r and J were computed; nil: nowhere
	xt        []float64
	evals     int
}

func newProblem(ctx context.Context, m Model, E, nu float64, data []Data) *problem {
	p := &problem{ctx: ctx, m: m, E: E, nu: nu, data: data}
	for _, d := range data {
		p.n += len(d.Points)
		for _, q := range d.Points {
			p.scale = math.Max(p.scale, math.Abs(q[1]))
		}
	}
	if p.scale == 0 {
		p.scale = 1
	}
	k := m.NumParams()
	p.r, p.rp, p.rm = make([]float64, p.n), make([]float64, p.n), make([]float64, p.n)
	p.J = mat.NewDense(p.n, k, nil)
	p.xt = make([]float64, k)
	return p
}

// material builds the integrator's material at x.
func (p *problem) material(x []float64) (plastic.Material, error) {
	var terms [plastic.MaxTerms]plastic.Term
	k := 1
	if p.m.Linear {
		terms[0] = plastic.Term{C: math.Exp(x[1])}
		k = 2
	} else {
		for i := 0; i < p.m.Terms; i++ {
			terms[i] = plastic.Term{C: math.Exp(x[k]), Gamma: math.Exp(x[k+1])}
			k += 2
		}
	}
	var iso plastic.Isotropic
	if p.m.Voce {
		iso = plastic.Isotropic{Kind: plastic.IsoVoce, Q: math.Exp(x[k]), B: math.Exp(x[k+1])}
	}
	sy := math.Exp(x[0])
	if !clampSaturation(p.E, sy, terms[:p.m.Terms], &iso) {
		return plastic.Material{}, errImplausible
	}
	return plastic.NewMaterial(p.E, p.nu, sy, terms[:p.m.Terms], iso)
}

// errImplausible: the yield stress alone is beyond convert.MaxHardening's
// bound, so no saturation fits under it.
var errImplausible = errors.New("yield stress above the plausible bound")

// boundMargin keeps fitted saturations this far (relative) inside
// convert.MaxHardening, so that the card, written with 6 significant
// digits (5e-7 relative per value), stays inside it too.
const boundMargin = 1e-4

// clampSaturation keeps the parameters' saturating hardening h = sum
// C_i/gamma_i + Q inside convert.MaxHardening(E, sy) (less boundMargin):
// above it, every saturation is scaled by the same factor down to the
// bound (gamma_i up, C_i kept, so each term's initial slope stays; Q
// down). Without it a term that does not saturate within the data runs
// to gamma -> 0 with C/gamma far beyond any metal's strength: a card that
// check refuses and whose verification cases are sized to match (issue
// 9). The map from the fitted logarithms to the parameters stays
// continuous; beyond the bound the objective is flat in the overall scale
// of the saturations. It returns false when sy alone leaves no room.
func clampSaturation(E, sy float64, terms []plastic.Term, iso *plastic.Isotropic) bool {
	hMax := convert.MaxHardening(E, sy) * (1 - boundMargin)
	if !(hMax > 0) {
		return false
	}
	h := saturation(terms, *iso)
	if h <= hMax {
		return true
	}
	f := hMax / h
	for i := range terms {
		if !terms[i].Linear() {
			terms[i].Gamma /= f
		}
	}
	if iso.Kind == plastic.IsoVoce {
		iso.Q *= f
	}
	return true
}

// saturation returns sum C_i/gamma_i + Q over the Armstrong-Frederick
// terms and Voce's law.
func saturation(terms []plastic.Term, iso plastic.Isotropic) float64 {
	h := 0.0
	for _, t := range terms {
		if !t.Linear() {
			h += t.C / t.Gamma
		}
	}
	if iso.Kind == plastic.IsoVoce {
		h += iso.Q
	}
	return h
}

func (p *problem) params(x []float64) Params {
	m, err := p.material(x)
	pr := Params{E: p.E, SigmaY: math.Exp(x[0])}
	if err != nil {
		return pr
	}
	pr.Terms = append([]plastic.Term(nil), m.Terms[:m.N]...)
	pr.Iso = m.Iso
	return pr
}

// residuals writes (sigma_model - sigma_data)/scale for every point into r;
// false when the integrator refuses x.
func (p *problem) residuals(x, r []float64) bool {
	p.evals++
	mm, err := p.material(x)
	if err != nil {
		return false
	}
	k := 0
	for _, d := range p.data {
		var s plastic.State1D
		for _, q := range d.Points {
			if _, err := mm.Step1D(&s, &s, q[0]-s.Eps, &p.set); err != nil {
				return false
			}
			r[k] = (s.Sigma - q[1]) / p.scale
			k++
		}
	}
	return true
}

// failed is the objective value of a point the integrator refuses: far
// above any real residual (every relative residual of order 1 gives n/2),
// finite so that the line search compares it.
const failed = 1e100

func (p *problem) f(x []float64) float64 {
	if p.ctx.Err() != nil || !p.residuals(x, p.rp) {
		return failed
	}
	return 0.5 * dot(p.rp, p.rp)
}

// jacobian computes r and J at x (central differences), cached by x.
func (p *problem) jacobian(x []float64) bool {
	if p.xJ != nil && equal(p.xJ, x) {
		return true
	}
	if !p.residuals(x, p.r) {
		return false
	}
	const h = 1e-6
	copy(p.xt, x)
	for j := range x {
		p.xt[j] = x[j] + h
		okp := p.residuals(p.xt, p.rp)
		p.xt[j] = x[j] - h
		okm := p.residuals(p.xt, p.rm)
		p.xt[j] = x[j]
		for i := 0; i < p.n; i++ {
			var v float64
			switch {
			case okp && okm:
				v = (p.rp[i] - p.rm[i]) / (2 * h)
			case okp:
				v = (p.rp[i] - p.r[i]) / h
			case okm:
				v = (p.r[i] - p.rm[i]) / h
			}
			p.J.Set(i, j, v)
		}
	}
	p.xJ = append(p.xJ[:0], x...)
	return true
}

// predictedDecrease returns 1/2 g^T (J^T J)^-1 g at the cached J; false
// when J^T J is singular.
func (p *problem) predictedDecrease() (float64, bool) {
	k := p.m.NumParams()
	g := make([]float64, k)
	gv := mat.NewVecDense(k, g)
	gv.MulVec(p.J.T(), mat.NewVecDense(p.n, p.r))
	h := mat.NewSymDense(k, nil)
	h.SymOuterK(1, p.J.T())
	var ch mat.Cholesky
	if !ch.Factorize(h) {
		return 0, false
	}
	var d mat.VecDense
	if err := ch.SolveVecTo(&d, gv); err != nil {
		return 0, false
	}
	return 0.5 * mat.Dot(gv, &d), true
}

func (p *problem) grad(g, x []float64) {
	if !p.jacobian(x) {
		for i := range g {
			g[i] = 0
		}
		return
	}
	gv := mat.NewVecDense(len(g), g)
	gv.MulVec(p.J.T(), mat.NewVecDense(p.n, p.r))
}

func (p *problem) hess(h *mat.SymDense, x []float64) {
	if !p.jacobian(x) {
		h.Zero()
		return
	}
	h.SymOuterK(1, p.J.T())
}

// stats fills the errors, the condition and the standard errors from r and
// J at the fit.
func (p *problem) stats(res *Result) {
	k := 0
	var sq float64
	for _, d := range p.data {
		fs := FileStats{Name: d.Name, Points: len(d.Points), Cyclic: isCyclic(d)}
		lo, hi := math.Inf(1), math.Inf(-1)
		var fsq float64
		for _, q := range d.Points {
			e := math.Abs(p.r[k]) * p.scale
			fsq += e * e
			fs.Max = math.Max(fs.Max, e)
			lo, hi = math.Min(lo, q[0]), math.Max(hi, q[0])
			k++
		}
		sq += fsq
		fs.RMS = math.Sqrt(fsq / float64(len(d.Points)))
		fs.Amplitude = (hi - lo) / 2
		res.Max = math.Max(res.Max, fs.Max)
		res.Files = append(res.Files, fs)
	}
	res.RMS = math.Sqrt(sq / float64(p.n))
	var svd mat.SVD
	np := p.m.NumParams()
	res.RelStdErr = make([]float64, np)
	if !svd.Factorize(p.J, mat.SVDThin) {
		res.Cond = math.Inf(1)
		for i := range res.RelStdErr {
			res.RelStdErr[i] = math.Inf(1)
		}
		return
	}
	s := svd.Values(nil)
	res.Cond = s[0] / s[len(s)-1]
	if s[len(s)-1] == 0 {
		res.Cond = math.Inf(1)
	}
	var v mat.Dense
	svd.VTo(&v)
	s2 := dot(p.r, p.r) / float64(max(p.n-np, 1))
	for i := 0; i < np; i++ {
		var c float64
		for j := range s {
			c += v.At(i, j) * v.At(i, j) / (s[j] * s[j])
		}
		res.RelStdErr[i] = math.Sqrt(s2 * c)
	}
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func equal(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}
