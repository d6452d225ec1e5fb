package plastic

import (
	"context"
	"math"
)

// Control says what a 1D path prescribes.
type Control int

// 1D controls.
const (
	StrainControl Control = iota // targets are strains
	StressControl                // targets are stresses, Pa
)

// String returns "strain" or "stress".
func (c Control) String() string {
	if c == StressControl {
		return "stress"
	}
	return "strain"
}

// Path1D is a uniaxial load path: from the current state, straight segments
// to each target in turn, each subdivided into the fewest equal increments no
// larger than MaxIncrement.
type Path1D struct {
	Control      Control
	Targets      []float64 // segment end values: strains, or stresses in Pa
	MaxIncrement float64   // largest increment (strain, or stress in Pa); must be > 0
}

// Path3D is a 3D load path under mixed control: component k of each target
// is a strain (engineering shear) when StrainControlled[k], else a stress in
// Pa. Each segment is subdivided into the fewest equal increments for which
// no strain-controlled component changes by more than MaxStrainIncrement and
// no stress-controlled one by more than MaxStressIncrement. All components
// strain-controlled is strain control; the stress-controlled components are
// found by Newton on the free strains with the consistent tangent.
type Path3D struct {
	StrainControlled   [6]bool
	Targets            [][6]float64
	MaxStrainIncrement float64 // > 0 when a strain-controlled component changes
	MaxStressIncrement float64 // Pa; > 0 when a stress-controlled component changes
}

// UniaxialStressPath returns the 3D path with the axial strain eps_11
// prescribed at each target and every other stress component zero.
func UniaxialStressPath(axialStrains []float64, maxStrainInc float64) Path3D {
	p := Path3D{MaxStrainIncrement: maxStrainInc, MaxStressIncrement: math.Inf(1)}
	p.StrainControlled[V11] = true
	for _, e := range axialStrains {
		p.Targets = append(p.Targets, [6]float64{V11: e})
	}
	return p
}

// PureShearPath returns the 3D path with the engineering shear strain
// gamma_12 prescribed and every other stress component zero.
func PureShearPath(shearStrains []float64, maxStrainInc float64) Path3D {
	p := Path3D{MaxStrainIncrement: maxStrainInc, MaxStressIncrement: math.Inf(1)}
	p.StrainControlled[V12] = true
	for _, g := range shearStrains {
		p.Targets = append(p.Targets, [6]float64{V12: g})
	}
	return p
}

// TensionTorsionPath returns the 3D path of a thin-walled tube: eps_11 and
// gamma_12 prescribed (points[i] = {eps_11, gamma_12}), every other stress
// component zero.
func TensionTorsionPath(points [][2]float64, maxStrainInc float64) Path3D {
	p := Path3D{MaxStrainIncrement: maxStrainInc, MaxStressIncrement: math.Inf(1)}
	p.StrainControlled[V11] = true
	p.StrainControlled[V12] = true
	for _, q := range points {
		p.Targets = append(p.Targets, [6]float64{V11: q[0], V12: q[1]})
	}
	return p
}

func canceled(done <-chan struct{}) bool {
	select {
	case <-done:
		return true
	default:
		return false
	}
}

func nIncrements(delta, maxInc float64) int {
	if delta == 0 {
		return 0
	}
	n := math.Ceil(math.Abs(delta)/maxInc - 1e-12)
	if n < 1 {
		n = 1
	}
	if n > 1<<40 {
		return -1
	}
	return int(n)
}

// Run1D drives s along path. s is updated in place and holds the last
// converged state when Run1D returns; visit, if not nil, is called after each
// increment with the increment index (over the whole path) and the state,
// which it must not retain. ctx is checked between increments. Errors are
// *PathError values wrapping the Status's sentinel: ErrBeyondSaturation for
// a stress target the material cannot reach (|target| >= SaturationStress),
// ErrNotConverged after MaxCutbacks halvings, ErrCanceled, ErrInvalidInput.
//
// Stress control solves sigma(eps_n + dEps) = target for each increment by
// Newton on dEps with the step's consistent tangent, safeguarded by a
// bracket: the elastic guess (target - sigma_n)/E bounds dEps from the
// near side since the tangent never exceeds E.
func (m *Material) Run1D(ctx context.Context, s *State1D, path *Path1D, set *Settings, visit func(step int, s *State1D)) (Result, error) {
	m.mustBeValid()
	res := Result{}
	if path.Control == StressControl {
		res.MaxStressIncrement = path.MaxIncrement
	} else {
		res.MaxStrainIncrement = path.MaxIncrement
	}
	fail := func(st Status, seg int, detail string, v float64) (Result, error) {
		res.Status = st
		return res, &PathError{Status: st, Segment: seg, Increment: res.Increments, Detail: detail, Value: v}
	}
	if !(path.MaxIncrement > 0) || math.IsInf(path.MaxIncrement, 0) {
		return fail(InvalidInput, 0, "max increment must be positive and finite", path.MaxIncrement)
	}
	sat := m.SaturationStress()
	done := ctx.Done()
	for seg, target := range path.Targets {
		if math.IsNaN(target) || math.IsInf(target, 0) {
			return fail(InvalidInput, seg, "non-finite target", target)
		}
		start := s.Eps
		if path.Control == StressControl {
			start = s.Sigma
			if math.Abs(target) >= sat {
				return fail(BeyondSaturation, seg, "stress target at or above the saturation stress", target)
			}
		}
		n := nIncrements(target-start, path.MaxIncrement)
		if n < 0 {
			return fail(InvalidInput, seg, "too many increments", target)
		}
		for k := 1; k <= n; k++ {
			if canceled(done) {
				return fail(Canceled, seg, "canceled", 0)
			}
			to := start + (target-start)*float64(k)/float64(n)
			if k == n {
				to = target
			}
			if err := m.advance1D(s, path.Control, to, set, &res, 0); err != nil {
				return fail(NotConverged, seg, "increment did not converge after cutbacks", to)
			}
			if visit != nil {
				visit(res.Increments-1, s)
			}
		}
	}
	return res, nil
}

// advance1D moves s to the strain or stress value to, halving on failure.
func (m *Material) advance1D(s *State1D, c Control, to float64, set *Settings, res *Result, depth int) error {
	var next State1D
	var err error
	if c == StressControl {
		err = m.stressIncrement(&next, s, to, set, res)
	} else {
		var info StepInfo
		info, err = m.Step1D(&next, s, to-s.Eps, set)
		res.StepIterations += info.Iterations
		res.Substeps += info.Substeps
	}
	if err == nil {
		*s = next
		res.Increments++
		return nil
	}
	if depth >= set.maxCutbacks() {
		return err
	}
	res.Cutbacks++
	from := s.Eps
	if c == StressControl {
		from = s.Sigma
	}
	if err := m.advance1D(s, c, 0.5*(from+to), set, res, depth+1); err != nil {
		return err
	}
	return m.advance1D(s, c, to, set, res, depth+1)
}

// stressIncrement finds the strain increment that brings s to the stress
// target and writes the end state to dst.
func (m *Material) stressIncrement(dst, s *State1D, target float64, set *Settings, res *Result) error {
	tol := set.driverTol() * m.SigmaY
	d0 := (target - s.Sigma) / m.E
	lo, hi := math.Inf(-1), math.Inf(1)
	if d0 >= 0 {
		lo = d0
	} else {
		hi = d0
	}
	width := math.Max(math.Abs(d0), m.SigmaY/m.E)
	x := d0
	var trial State1D
	for it := 0; it < set.driverMaxIter()+60; it++ {
		info, err := m.Step1D(&trial, s, x, set)
		res.StepIterations += info.Iterations
		res.Substeps += info.Substeps
		res.NewtonIterations++
		if err != nil {
			return err
		}
		r := trial.Sigma - target
		if math.Abs(r) <= tol {
			*dst = trial
			return nil
		}
		if r < 0 {
			lo = x
		} else {
			hi = x
		}
		next := x - r/info.Tangent
		if !(info.Tangent > 0) || !(next > lo && next < hi) {
			switch {
			case math.IsInf(hi, 1):
				width *= 2
				next = lo + width
			case math.IsInf(lo, -1):
				width *= 2
				next = hi - width
			default:
				next = 0.5 * (lo + hi)
			}
		}
		if next == x {
			break
		}
		x = next
	}
	return ErrNotConverged
}

// Run3D drives s along path under mixed control. Semantics as Run1D: s is
// updated in place, visit sees every increment, ctx is checked between
// increments, errors are *PathError values. Each increment is solved by
// Newton on the free (stress-controlled) strain components with the
// consistent tangent, started from the tangent predictor of the previous
// increment; a Newton failure (Settings.DriverMaxIter iterations without the
// stress residual falling below Settings.DriverTol SigmaY) halves the
// increment, at most Settings.MaxCutbacks times in a row.
//
// Within an increment the free strain components are taken to vary
// linearly, like the prescribed ones. On proportional paths (uniaxial
// stress, pure shear) this is exact; on a non-proportional mixed path it is
// a first-order discretization of the load path in the increment size
// (measured: 5e-7 SigmaY on the tension-torsion box of
// TestTensionTorsionAccuracy at 1e-4).
func (m *Material) Run3D(ctx context.Context, s *State3D, path *Path3D, set *Settings, visit func(step int, s *State3D)) (Result, error) {
	m.mustBeValid()
	res := Result{MaxStrainIncrement: path.MaxStrainIncrement, MaxStressIncrement: path.MaxStressIncrement}
	fail := func(st Status, seg int, detail string, v float64) (Result, error) {
		res.Status = st
		return res, &PathError{Status: st, Segment: seg, Increment: res.Increments, Detail: detail, Value: v}
	}
	d := m.ElasticStiffness()
	done := ctx.Done()
	for seg := range path.Targets {
		target := path.Targets[seg]
		var start [6]float64
		n := 0
		for k := 0; k < 6; k++ {
			if math.IsNaN(target[k]) || math.IsInf(target[k], 0) {
				return fail(InvalidInput, seg, "non-finite target component", target[k])
			}
			maxInc := path.MaxStressIncrement
			start[k] = s.Sigma[k]
			if path.StrainControlled[k] {
				maxInc = path.MaxStrainIncrement
				start[k] = s.Eps[k]
			}
			delta := target[k] - start[k]
			if delta == 0 {
				continue
			}
			if !(maxInc > 0) {
				return fail(InvalidInput, seg, "max increment must be positive for a changing component", maxInc)
			}
			nk := nIncrements(delta, maxInc)
			if nk < 0 {
				return fail(InvalidInput, seg, "too many increments", delta)
			}
			n = max(n, nk)
		}
		for k := 1; k <= n; k++ {
			if canceled(done) {
				return fail(Canceled, seg, "canceled", 0)
			}
			var to [6]float64
			for j := 0; j < 6; j++ {
				to[j] = start[j] + (target[j]-start[j])*float64(k)/float64(n)
			}
			if k == n {
				to = target
			}
			if err := m.advance3D(s, path, &to, &d, set, &res, 0); err != nil {
				return fail(NotConverged, seg, "increment did not converge after cutbacks", 0)
			}
			if visit != nil {
				visit(res.Increments-1, s)
			}
		}
	}
	return res, nil
}

func (m *Material) advance3D(s *State3D, path *Path3D, to *[6]float64, d *[6][6]float64, set *Settings, res *Result, depth int) error {
	var next State3D
	err := m.mixedIncrement(&next, s, path, to, d, set, res)
	if err == nil {
		*s = next
		res.Increments++
		return nil
	}
	if depth >= set.maxCutbacks() {
		return err
	}
	res.Cutbacks++
	var mid [6]float64
	for k := 0; k < 6; k++ {
		from := s.Sigma[k]
		if path.StrainControlled[k] {
			from = s.Eps[k]
		}
		mid[k] = 0.5 * (from + to[k])
	}
	if err := m.advance3D(s, path, &mid, d, set, res, depth+1); err != nil {
		return err
	}
	return m.advance3D(s, path, to, d, set, res, depth+1)
}

// mixedIncrement solves one increment of mixed control. d holds the tangent
// of the last converged increment on entry (used for the predictor) and the
// new tangent on return.
func (m *Material) mixedIncrement(dst, s *State3D, path *Path3D, to *[6]float64, d *[6][6]float64, set *Settings, res *Result) error {
	var free [6]int
	nf := 0
	var dEps [6]float64
	for k := 0; k < 6; k++ {
		if path.StrainControlled[k] {
			dEps[k] = to[k] - s.Eps[k]
		} else {
			free[nf] = k
			nf++
		}
	}
	if nf > 0 {
		// Predictor: D_ff dEps_f = (target_f - sigma_f) - D_fp dEps_p.
		var rhs [6]float64
		for a := 0; a < nf; a++ {
			i := free[a]
			rhs[a] = to[i] - s.Sigma[i]
			for k := 0; k < 6; k++ {
				rhs[a] -= d[i][k] * dEps[k]
			}
		}
		x, ok := solveSub(d, &free, nf, rhs)
		if ok {
			for a := 0; a < nf; a++ {
				dEps[free[a]] = x[a]
			}
		}
	}
	tol := set.driverTol() * m.SigmaY
	maxIt := set.driverMaxIter()
	for it := 0; ; it++ {
		info, err := m.Step3D(dst, s, dEps, d, set)
		res.StepIterations += info.Iterations
		res.Substeps += info.Substeps
		if err != nil {
			return err
		}
		if nf == 0 {
			return nil
		}
		var r [6]float64
		rmax := 0.0
		for a := 0; a < nf; a++ {
			i := free[a]
			r[a] = to[i] - dst.Sigma[i]
			rmax = math.Max(rmax, math.Abs(r[a]))
		}
		if rmax <= tol {
			return nil
		}
		if it >= maxIt {
			return ErrNotConverged
		}
		res.NewtonIterations++
		x, ok := solveSub(d, &free, nf, r)
		if !ok {
			return ErrNotConverged
		}
		for a := 0; a < nf; a++ {
			dEps[free[a]] += x[a]
		}
	}
}

// solveSub solves D[free][free] x = rhs by Gaussian elimination with partial
// pivoting; ok is false for a singular or non-finite system.
func solveSub(d *[6][6]float64, free *[6]int, nf int, rhs [6]float64) (x [6]float64, ok bool) {
	var a [6][6]float64
	for i := 0; i < nf; i++ {
		for j := 0; j < nf; j++ {
			a[i][j] = d[free[i]][free[j]]
		}
	}
	for c := 0; c < nf; c++ {
		p := c
		for r := c + 1; r < nf; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[p][c]) {
				p = r
			}
		}
		if !(math.Abs(a[p][c]) > 0) {
			return x, false
		}
		a[c], a[p] = a[p], a[c]
		rhs[c], rhs[p] = rhs[p], rhs[c]
		for r := c + 1; r < nf; r++ {
			f := a[r][c] / a[c][c]
			for j := c; j < nf; j++ {
				a[r][j] -= f * a[c][j]
			}
			rhs[r] -= f * rhs[c]
		}
	}
	for i := nf - 1; i >= 0; i-- {
		v := rhs[i]
		for j := i + 1; j < nf; j++ {
			v -= a[i][j] * x[j]
		}
		x[i] = v / a[i][i]
		if math.IsNaN(x[i]) || math.IsInf(x[i], 0) {
			return x, false
		}
	}
	return x, true
}
