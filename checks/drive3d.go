package checks

import (
	"context"
	"errors"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// pt3 is one recorded 3D state (the columns the 3D cases report).
type pt3 struct {
	eps11, sig11, epsP11, x11, p float64
	gam12, tau12                 float64
}

// rec3D records a 3D path driven by plastic.Run3D: the invariants of every
// increment and every stride-th state for the series.
type rec3D struct {
	m      *plastic.Material
	prev   plastic.State3D
	stride int
	n      int // increments seen
	pts    []pt3
	inv    invariants
	// each, when not nil, is called after every increment with the states
	// before and after it.
	each func(prev, next *plastic.State3D)
}

// newRec3D returns a recorder starting at st that keeps every stride-th
// state of about n increments (stride >= 1).
func newRec3D(m *plastic.Material, st plastic.State3D, stride, n int) *rec3D {
	stride = max(stride, 1)
	r := &rec3D{m: m, prev: st, stride: stride, pts: make([]pt3, 0, n/stride+2)}
	r.inv.minDiss = math.Inf(1)
	r.record(&st)
	return r
}

func (r *rec3D) record(s *plastic.State3D) {
	x := s.BackStress(r.m.N)
	r.pts = append(r.pts, pt3{s.Eps[0], s.Sigma[0], s.EpsP[0], x[0], s.P, s.Eps[5], s.Sigma[5]})
}

// visit is the plastic.Run3D visitor: yield consistency and dissipation
// after every plastic increment (one with dp > 0), the scales of the
// round-off bounds, and the series.
func (r *rec3D) visit(_ int, s *plastic.State3D) {
	m := r.m
	r.n++
	k := m.YieldRadius(s.P)
	sc := 0.0
	for i := 0; i < 6; i++ {
		sc = math.Max(sc, math.Abs(s.Sigma[i]))
		r.inv.maxDEps = math.Max(r.inv.maxDEps, math.Abs(s.Eps[i]-r.prev.Eps[i]))
	}
	r.inv.maxScale = math.Max(r.inv.maxScale, (2*sc+k)/k)
	if dp := s.P - r.prev.P; dp > 0 {
		r.inv.plasticSteps++
		r.inv.maxYield = math.Max(r.inv.maxYield, math.Abs(m.Yield3D(s))/k)
		r.inv.minDiss = math.Min(r.inv.minDiss, m.Dissipation3D(&r.prev, s)/dp)
	}
	if r.each != nil {
		r.each(&r.prev, s)
	}
	if r.n%r.stride == 0 {
		r.record(s)
	}
	r.prev = *s
}

// drive runs m along path from st (updated in place) with set, recording
// into r. A canceled context comes back as ErrCanceled.
func (r *rec3D) drive(ctx context.Context, m *plastic.Material, st *plastic.State3D, path *plastic.Path3D, set *plastic.Settings) (plastic.Result, error) {
	res, err := m.Run3D(ctx, st, path, set, r.visit)
	if r.n%r.stride != 0 {
		r.record(st) // the last state, when the stride skipped it
	}
	if errors.Is(err, plastic.ErrCanceled) {
		return res, fmt.Errorf("%w: %w", ErrCanceled, ctx.Err())
	}
	return res, err
}

func (r *rec3D) series() *Series {
	return downsample(r.pts, maxSeries, func(p *pt3) Sample {
		return Sample{Strain: p.eps11, Stress: p.sig11, PlasticStrain: p.epsP11, BackStress: p.x11, P: p.p, ShearStrain: p.gam12, ShearStress: p.tau12}
	})
}

// strainPath returns a path with every strain component prescribed.
func strainPath(maxInc float64, targets ...[6]float64) plastic.Path3D {
	p := plastic.Path3D{Targets: targets, MaxStrainIncrement: maxInc, MaxStressIncrement: math.Inf(1)}
	for k := range p.StrainControlled {
		p.StrainControlled[k] = true
	}
	return p
}
