package checks

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// pt3 is one recorded 3D state (the columns the 3D cases report).
type pt3 struct {
	eps11, sig11, epsP11, x11, p float64
	gam12, tau12                 float64
	maxNormal                    float64 // max |sigma_11|, |sigma_22|, |sigma_33|
	plastic                      bool
}

// path3D drives Step3D under mixed control: the strain components with
// free[k] false follow the path; those with free[k] true are solved so
// that their stress is zero.
type path3D struct {
	ctx  context.Context
	m    *plastic.Material
	set  *plastic.Settings
	dTol float64
	free [6]bool
	st   plastic.State3D
	pts  []pt3
	inv  invariants
	n    int
	// newton counts driver iterations.
	newton int
}

func newPath3D(ctx context.Context, m *plastic.Material, set *plastic.Settings, dTol float64, free [6]bool, capacity int) *path3D {
	d := &path3D{ctx: ctx, m: m, set: set, dTol: dTol, free: free, pts: make([]pt3, 1, capacity+1)}
	d.inv.minDiss = math.Inf(1)
	return d
}

func (d *path3D) record(plastic bool) {
	s := &d.st
	x := s.BackStress(d.m.N)
	mn := math.Max(math.Abs(s.Sigma[0]), math.Max(math.Abs(s.Sigma[1]), math.Abs(s.Sigma[2])))
	d.pts = append(d.pts, pt3{s.Eps[0], s.Sigma[0], s.EpsP[0], x[0], s.P, s.Eps[5], s.Sigma[5], mn, plastic})
}

// step applies the prescribed increment dEps (free components are
// initial guesses) and solves the free components by Newton's method with
// the consistent tangent, to dTol sigmaY on their stresses. An increment
// whose iteration fails is halved, up to 10 times.
func (d *path3D) step(dEps [6]float64) error {
	if d.n&31 == 0 {
		if err := d.ctx.Err(); err != nil {
			return fmt.Errorf("%w: %w", ErrCanceled, err)
		}
	}
	return d.stepDepth(dEps, 0)
}

func (d *path3D) stepDepth(dEps [6]float64, depth int) error {
	m := d.m
	var next plastic.State3D
	var D [6][6]float64
	tol := d.dTol * m.SigmaY
	var fi [6]int
	nf := 0
	for k := 0; k < 6; k++ {
		if d.free[k] {
			fi[nf] = k
			nf++
		}
	}
	var info plastic.StepInfo
	var err error
	ok := false
	x := dEps
	for it := 0; it < 30; it++ {
		d.newton++
		info, err = m.Step3D(&next, &d.st, x, &D, d.set)
		if err != nil {
			break
		}
		res := 0.0
		var a [6][6]float64
		var b [6]float64
		for i := 0; i < nf; i++ {
			b[i] = -next.Sigma[fi[i]]
			res = math.Max(res, math.Abs(b[i]))
			for j := 0; j < nf; j++ {
				a[i][j] = D[fi[i]][fi[j]]
			}
		}
		if res <= tol {
			ok = true
			break
		}
		if !solve(&a, &b, nf) {
			break
		}
		for i := 0; i < nf; i++ {
			x[fi[i]] += b[i]
		}
	}
	if !ok {
		if depth >= 10 {
			if err == nil {
				err = plastic.ErrNotConverged
			}
			return fmt.Errorf("3D increment %d at strain %v: %w", d.n, d.st.Eps, err)
		}
		var h [6]float64
		for k := range h {
			h[k] = dEps[k] / 2
		}
		if err := d.stepDepth(h, depth+1); err != nil {
			return err
		}
		return d.stepDepth(h, depth+1)
	}
	prev := d.st
	d.st = next
	d.n++
	k := m.YieldRadius(next.P)
	sc := 0.0
	for i := 0; i < 6; i++ {
		sc = math.Max(sc, math.Abs(next.Sigma[i]))
	}
	d.inv.maxScale = math.Max(d.inv.maxScale, (2*sc+k)/k)
	for i := 0; i < 6; i++ {
		d.inv.maxDEps = math.Max(d.inv.maxDEps, math.Abs(x[i]))
	}
	if info.Plastic {
		d.inv.plasticSteps++
		d.inv.maxYield = math.Max(d.inv.maxYield, math.Abs(m.Yield3D(&next))/k)
		diss := m.Dissipation3D(&prev, &next)
		if dp := next.P - prev.P; dp > 0 {
			d.inv.minDiss = math.Min(d.inv.minDiss, diss/dp)
		}
	}
	d.record(info.Plastic)
	return nil
}

// solve solves a x = b for the leading n x n block by Gaussian elimination
// with partial pivoting, in place (x in b). It reports false for a
// singular block.
func solve(a *[6][6]float64, b *[6]float64, n int) bool {
	for c := 0; c < n; c++ {
		p := c
		for r := c + 1; r < n; r++ {
			if math.Abs(a[r][c]) > math.Abs(a[p][c]) {
				p = r
			}
		}
		if a[p][c] == 0 {
			return false
		}
		a[c], a[p] = a[p], a[c]
		b[c], b[p] = b[p], b[c]
		for r := c + 1; r < n; r++ {
			f := a[r][c] / a[c][c]
			for j := c; j < n; j++ {
				a[r][j] -= f * a[c][j]
			}
			b[r] -= f * b[c]
		}
	}
	for c := n - 1; c >= 0; c-- {
		s := b[c]
		for j := c + 1; j < n; j++ {
			s -= a[c][j] * b[j]
		}
		b[c] = s / a[c][c]
	}
	return true
}

// elasticGuess returns the increment with its free components set so that
// an elastic increment would leave their stresses unchanged (uniaxial:
// -nu times the axial increment laterally).
func (d *path3D) elasticGuess(dEps [6]float64) [6]float64 {
	nu := d.m.Nu
	if d.free[1] {
		dEps[1] = -nu * dEps[0]
	}
	if d.free[2] {
		dEps[2] = -nu * dEps[0]
	}
	return dEps
}

func (d *path3D) series() []Sample {
	return downsample(d.pts, maxSeries, func(p *pt3) Sample {
		return Sample{Strain: p.eps11, Stress: p.sig11, PlasticStrain: p.epsP11, BackStress: p.x11, P: p.p, ShearStrain: p.gam12, ShearStress: p.tau12}
	})
}
