package checks

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// pt is one recorded uniaxial state.
type pt struct {
	eps, sigma, epsP, alpha, p float64
	plastic                    bool
}

// invariants collects the per-increment invariants of a path.
type invariants struct {
	plasticSteps int
	maxYield     float64 // max |f| / (sigmaY + R) after plastic increments
	maxScale     float64 // max (|sigma| + |alpha| + k)/k, for the round-off bound
	maxDEps      float64 // largest increment of strain (E dEps / k bounds the iteration residual)
	minDiss      float64 // min dD/dp over plastic increments, Pa (3D paths)
	// minDissRel is the min over plastic increments of dD / S, S the
	// round-off scale of dD (see path1D.step), recorded by 1D paths.
	minDissRel float64
	// oneD: a 1D path (dissipation checked per increment through
	// minDissRel, no slope check; see addInvariants).
	oneD       bool
	minTangent float64 // smallest consistent tangent on the path, Pa
	// slopes of the first elastic increment after each reversal, recorded
	// by 3D paths only (see addInvariants)
	slopes []slope
}

type slope struct {
	value, ref, tol float64
}

// stepFn integrates one 1D strain increment, as plastic.Material.Step1D.
type stepFn func(dst, src *plastic.State1D, dEps float64, set *plastic.Settings) (plastic.StepInfo, error)

// path1D drives Step1D and records every state.
type path1D struct {
	ctx    context.Context
	m      *plastic.Material
	step1D stepFn // m.Step1D unless a test replaces it (verifier.step)
	set    *plastic.Settings
	dTol   float64 // driver tolerance, relative to sigmaY
	st     plastic.State1D
	pts    []pt
	tips   []int // indices of the end points of the branches
	inv    invariants
	n      int // increments

	dir float64 // sign of the current branch
}

func newPath1D(ctx context.Context, m *plastic.Material, set *plastic.Settings, dTol float64, capacity int) *path1D {
	d := &path1D{ctx: ctx, m: m, step1D: m.Step1D, set: set, dTol: dTol, pts: make([]pt, 1, capacity+1)}
	d.inv.minDiss = math.Inf(1)
	d.inv.minDissRel = math.Inf(1)
	d.inv.oneD = true
	d.inv.minTangent = math.Inf(1)
	return d
}

func (d *path1D) record() {
	s := &d.st
	d.pts = append(d.pts, pt{s.Eps, s.Sigma, s.EpsP, s.BackStress(d.m.N), s.P, false})
}

// step integrates one strain increment and updates the invariants.
func (d *path1D) step(dEps float64) (plastic.StepInfo, error) {
	if d.n&31 == 0 {
		if err := d.ctx.Err(); err != nil {
			return plastic.StepInfo{}, fmt.Errorf("%w: %w", ErrCanceled, err)
		}
	}
	m := d.m
	prev := d.st
	info, err := d.step1D(&d.st, &prev, dEps, d.set)
	if err != nil {
		return info, fmt.Errorf("increment %d at strain %g: %w", d.n, prev.Eps, err)
	}
	d.n++
	s := &d.st
	k := m.YieldRadius(s.P)
	alpha := s.BackStress(m.N)
	d.inv.maxScale = math.Max(d.inv.maxScale, (math.Abs(s.Sigma)+math.Abs(alpha)+k)/k)
	d.inv.maxDEps = math.Max(d.inv.maxDEps, math.Abs(dEps))
	if info.Plastic {
		d.inv.plasticSteps++
		// Yield1D, with R(p) = k - sigmaY evaluated once (the exponential
		// of Voce's R is the cost of this bookkeeping).
		d.inv.maxYield = math.Max(d.inv.maxYield, math.Abs(math.Abs(s.Sigma-alpha)-k)/k)
		// The intrinsic dissipation of the increment (Dissipation1D, with
		// the same R) and the round-off scale S of its terms: eps_p(n+1) -
		// eps_p(n) errs by u |eps_p| of each end, which at a tiny dp (1e-18
		// is seen) dwarfs dp itself, and the products and the sum add a few
		// u of each term's size.
		dEpsP := s.EpsP - prev.EpsP
		diss := (s.Sigma-alpha)*dEpsP - (k-m.SigmaY)*info.DP
		scale := math.Abs(s.Sigma-alpha)*(math.Abs(s.EpsP)+math.Abs(prev.EpsP)) +
			(math.Abs(s.Sigma)+math.Abs(alpha))*math.Abs(dEpsP) + math.Abs(k-m.SigmaY)*info.DP
		for i := 0; i < m.N; i++ {
			if t := m.Terms[i]; t.Gamma != 0 {
				a2 := t.Gamma / t.C * s.Alpha[i] * s.Alpha[i] * info.DP
				diss += a2
				scale += a2
			}
		}
		if scale > 0 {
			d.inv.minDissRel = math.Min(d.inv.minDissRel, diss/scale)
		}
	}
	d.record()
	d.pts[len(d.pts)-1].plastic = info.Plastic
	d.inv.minTangent = math.Min(d.inv.minTangent, info.Tangent)
	return info, nil
}

func (d *path1D) turn(dir float64) {
	if d.dir != 0 && dir != d.dir {
		d.tips = append(d.tips, len(d.pts)-1)
	}
	d.dir = dir
}

// strainTo drives the strain to target in n equal increments, n the
// smallest even number with increments no larger than h and at least
// minInc increments.
func (d *path1D) strainTo(target, h float64, minInc int) error {
	e0 := d.st.Eps
	span := target - e0
	if span == 0 {
		return nil
	}
	d.turn(math.Copysign(1, span))
	n := int(math.Ceil(math.Abs(span) / h))
	n = max(n, minInc)
	n += n & 1
	for i := 1; i <= n; i++ {
		e := e0 + span*float64(i)/float64(n)
		if i == n {
			e = target
		}
		if _, err := d.step(e - d.st.Eps); err != nil {
			return err
		}
	}
	return nil
}

// stressTo drives the stress to target in increments no larger than h
// (Pa), each solved for its strain increment by a bracketed Newton
// iteration on Step1D with its consistent tangent, to d.dTol sigmaY.
func (d *path1D) stressTo(target, h float64) error {
	s0 := d.st.Sigma
	span := target - s0
	if span == 0 {
		return nil
	}
	d.turn(math.Copysign(1, span))
	n := max(int(math.Ceil(math.Abs(span)/h)), 1)
	tol := d.dTol * d.m.SigmaY
	for i := 1; i <= n; i++ {
		sig := s0 + span*float64(i)/float64(n)
		if i == n {
			sig = target
		}
		dEps, err := d.solveStress(sig, tol)
		if err != nil {
			return err
		}
		if _, err := d.step(dEps); err != nil {
			return err
		}
	}
	return nil
}

// solveStress returns the strain increment from the current state that
// reaches the stress sig within tol. The stress is increasing in the strain
// increment where the plastic modulus is positive; a softening card
// (Voce with Q b below -(sum H)) dips first, and a target beyond the dip is
// reached past it, as the branch solutions reach it (findRoot). The root
// is kept in a bracket: while one side is open the trial moves out by a
// width that doubles each time (from the elastic guess, at least tol/E),
// so a root beyond a dip is bracketed in a few dozen steps; Newton steps
// that leave a closed bracket are replaced by bisection. Not converging in
// 200 iterations (60 doublings and 140 halvings, room for a bracket from
// 1e-14 to 1e4 in strain solved to 1e-28) is an error.
func (d *path1D) solveStress(sig, tol float64) (float64, error) {
	m := d.m
	var trial plastic.State1D
	x := (sig - d.st.Sigma) / m.E
	width := math.Max(math.Abs(x), tol/m.E)
	lo, hi := math.Inf(-1), math.Inf(1)
	for it := 0; it < 200; it++ {
		info, err := d.step1D(&trial, &d.st, x, d.set)
		if err != nil {
			return 0, fmt.Errorf("stress target %g Pa at strain %g: %w", sig, d.st.Eps, err)
		}
		r := trial.Sigma - sig
		if math.Abs(r) <= tol {
			return x, nil
		}
		if r < 0 {
			lo = x
		} else {
			hi = x
		}
		next := x - r/info.Tangent
		if !(next > lo && next < hi) {
			switch {
			case math.IsInf(hi, 1):
				width *= 2
				next = lo + width
			case math.IsInf(lo, -1):
				width *= 2
				next = hi - width
			default:
				next = lo + (hi-lo)/2
			}
		}
		x = next
	}
	return 0, fmt.Errorf("stress target %g Pa at strain %g: %w", sig, d.st.Eps, plastic.ErrNotConverged)
}

// downsample returns the series of pts for plots in two stages. First the
// increments kept: all of them when they are at most limit, else the first
// and the last limit/2 at full resolution. A long cyclic history then shows
// its first cycles (virgin loading, transients) and its last, stabilized
// ones as they were integrated; an even stride would alias the loops of
// many cycles into a zigzag. Then thin leaves out the kept increments that
// a plot would not show.
func downsample[T any](pts []T, limit int, conv func(*T) Sample) *Series {
	keep := func(i int) bool { return i < limit/2 || i >= len(pts)-limit/2 }
	if len(pts) <= limit {
		keep = func(int) bool { return true }
	}
	rows := make([]Sample, 0, min(len(pts), limit))
	for i := range pts {
		if keep(i) {
			smp := conv(&pts[i])
			smp.Gap = i > 0 && !keep(i-1)
			rows = append(rows, smp)
		}
	}
	return thin(rows, maxSamples)
}

// maxSeries bounds the increments kept by downsample's first stage (and
// the recorded states of a 3D case); maxSamples bounds the samples of a
// series, which keeps a record of the standard cases near 100 KB.
const (
	maxSeries  = 400
	maxSamples = 120
)

// thinTol is the largest distance, in fractions of each plotted axis's
// range, between a left-out sample and the line drawn past it: about half
// a pixel of a plot 500 pixels across (common practice, no source).
const thinTol = 1e-3

// thin returns the series of rows with at most limit samples: the
// Ramer-Douglas-Peucker simplification of each run of rows between gaps,
// as a curve through the plotted coordinates (strain, stress, shear strain,
// shear stress, each divided by its range over rows), with tolerance
// thinTol, doubled until the series fits. Every run keeps its first and
// last row, and so every gap; the other columns follow the rows kept.
//
// References:
//   - U. Ramer, An iterative procedure for the polygonal approximation of
//     plane curves, Computer Graphics and Image Processing 1(3), 1972.
//   - D. H. Douglas and T. K. Peucker, Algorithms for the reduction of the
//     number of points required to represent a digitized line or its
//     caricature, The Canadian Cartographer 10(2), 1973.
func thin(rows []Sample, limit int) *Series {
	var lo, hi [4]float64
	coords := func(r *Sample) [4]float64 { return [4]float64{r.Strain, r.Stress, r.ShearStrain, r.ShearStress} }
	for i := range rows {
		x := coords(&rows[i])
		for k := range x {
			if i == 0 || x[k] < lo[k] {
				lo[k] = x[k]
			}
			if i == 0 || x[k] > hi[k] {
				hi[k] = x[k]
			}
		}
	}
	pts := make([][4]float64, len(rows))
	for i := range rows {
		x := coords(&rows[i])
		for k := range x {
			if hi[k] > lo[k] {
				pts[i][k] = (x[k] - lo[k]) / (hi[k] - lo[k])
			}
		}
	}
	kept := make([]bool, len(rows))
	n := 0
	for tol := thinTol; ; tol *= 2 {
		clear(kept)
		n = 0
		for a := 0; a < len(rows); {
			b := a + 1
			for b < len(rows) && !rows[b].Gap {
				b++
			}
			n += simplify(pts[a:b], kept[a:b], tol)
			a = b
		}
		if n <= limit || tol > 1 {
			break
		}
	}
	s := &Series{}
	s.grow(n)
	for i := range rows {
		if kept[i] {
			s.append(rows[i], rows[i].Gap)
		}
	}
	s.dropZeroColumns()
	return s
}

// simplify marks in kept the points of the Ramer-Douglas-Peucker
// simplification of pts with tolerance tol (Euclidean distance to the
// chord) and returns their number.
func simplify(pts [][4]float64, kept []bool, tol float64) int {
	n := len(pts)
	if n == 0 {
		return 0
	}
	kept[0], kept[n-1] = true, true
	count := min(n, 2)
	type span struct{ a, b int }
	stack := []span{{0, n - 1}}
	for len(stack) > 0 {
		sp := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		worst, at := tol, -1
		for k := sp.a + 1; k < sp.b; k++ {
			if d := chordDistance(pts[k], pts[sp.a], pts[sp.b]); d > worst {
				worst, at = d, k
			}
		}
		if at >= 0 {
			kept[at] = true
			count++
			stack = append(stack, span{sp.a, at}, span{at, sp.b})
		}
	}
	return count
}

// chordDistance returns the distance from p to the segment from a to b.
func chordDistance(p, a, b [4]float64) float64 {
	var ab, ap [4]float64
	l2, t := 0.0, 0.0
	for k := range p {
		ab[k], ap[k] = b[k]-a[k], p[k]-a[k]
		l2 += ab[k] * ab[k]
		t += ab[k] * ap[k]
	}
	if l2 > 0 {
		t = math.Max(0, math.Min(1, t/l2))
	} else {
		t = 0
	}
	d2 := 0.0
	for k := range p {
		e := ap[k] - t*ab[k]
		d2 += e * e
	}
	return math.Sqrt(d2)
}

func (d *path1D) series() *Series {
	return downsample(d.pts, maxSeries, func(p *pt) Sample {
		return Sample{Strain: p.eps, Stress: p.sigma, PlasticStrain: p.epsP, BackStress: p.alpha, P: p.p}
	})
}

// trapezoid returns the integral of sigma d eps over pts[i:j+1] with
// every point and with every second point (j - i even), and the sum of the
// absolute values of the terms of the first (the scale of its round-off).
func trapezoid(pts []pt, i, j int) (w1, w2, abs float64) {
	for k := i; k < j; k++ {
		x := (pts[k].sigma + pts[k+1].sigma) / 2 * (pts[k+1].eps - pts[k].eps)
		w1 += x
		abs += math.Abs(x)
	}
	for k := i; k+2 <= j; k += 2 {
		w2 += (pts[k].sigma + pts[k+2].sigma) / 2 * (pts[k+2].eps - pts[k].eps)
	}
	return w1, w2, abs
}
