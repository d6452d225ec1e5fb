package checks

import (
	"context"
	"fmt"
	"math"
	"strconv"

	"matgate/checks/plastic"
)

// verifier holds what every case needs.
type verifier struct {
	m    *plastic.Material
	spec Spec
	prof profile
	set  *plastic.Settings
	epsY float64 // yield strain sigmaY / E
	hEps float64 // strain increment
	hSig float64 // stress increment, Pa

	tipCache map[string][]tip // branch-solution references by case (they do not depend on the increment)

	// step integrates the 1D cases' increments; nil: v.m.Step1D. Tests
	// put a wrong model here to show that the checks fail it.
	step stepFn
}

// newPath returns a 1D path of the card for a case that records up to
// capacity increments, integrated by v.step.
func (v *verifier) newPath(ctx context.Context, capacity int) *path1D {
	d := newPath1D(ctx, v.m, v.set, v.prof.driverTol, capacity)
	if v.step != nil {
		d.step1D = v.step
	}
	return d
}

// tipsOf returns the branch-solution tips from the virgin state through the
// targets, strain targets when strain is true, computed once per case.
func (v *verifier) tipsOf(name string, strain bool, targets []float64) ([]tip, error) {
	if t, ok := v.tipCache[name]; ok {
		return t, nil
	}
	tips := make([]tip, 0, len(targets))
	var t tip
	for _, x := range targets {
		var err error
		if strain {
			t, err = branchToStrain(v.m, t, x)
		} else {
			t, err = branchToStress(v.m, t, x)
		}
		if err != nil {
			return nil, err
		}
		tips = append(tips, t)
	}
	if v.tipCache == nil {
		v.tipCache = map[string][]tip{}
	}
	v.tipCache[name] = tips
	return tips, nil
}

// cycleTargets returns first, then n times (lo, hi).
func cycleTargets(first, lo, hi float64, n int) []float64 {
	t := make([]float64, 0, 2*n+1)
	t = append(t, first)
	for k := 0; k < n; k++ {
		t = append(t, lo, hi)
	}
	return t
}

func newVerifier(spec Spec) *verifier {
	v := &verifier{spec: spec, prof: profiles[spec.Profile]}
	v.m = &v.spec.Material
	v.set = v.prof.settings()
	v.epsY = v.m.SigmaY / v.m.E
	v.hEps = v.epsY / v.prof.incPerYield
	v.hSig = v.m.SigmaY / v.prof.incPerYield
	return v
}

// caseFn runs one case with the increments divided by refine.
type caseFn func(ctx context.Context, refine int) (Case, CaseSetting, error)

func fmtG(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// monotonic is strain-controlled loading from the virgin state to sign
// times MonotonicStrain, then an elastic unloading by k/E.
func (v *verifier) monotonic(sign float64) caseFn {
	return func(ctx context.Context, refine int) (Case, CaseSetting, error) {
		m := v.m
		name, kind := "monotonic-tension", "monotonic-tension"
		if sign < 0 {
			name, kind = "monotonic-compression", "monotonic-compression"
		}
		epsEnd := sign * v.spec.MonotonicStrain
		h := v.hEps / float64(refine)
		c := Case{Name: name, Kind: kind, Loading: fmt.Sprintf("strain control from the virgin state to %s in increments of at most %.4g, then unloading by (sigmaY + R)/E", fmtG(epsEnd), h)}
		d := v.newPath(ctx, int(math.Abs(epsEnd)/h)+64)
		if err := d.strainTo(epsEnd, h, 1); err != nil {
			return c, CaseSetting{}, err
		}
		iEnd := len(d.pts) - 1
		back := m.YieldRadius(d.st.P) / m.E
		if err := d.strainTo(epsEnd-sign*back, h, 2); err != nil {
			return c, CaseSetting{}, err
		}
		n := d.n
		ref, _, err := monotonicAt(m, epsEnd)
		if err != nil {
			return c, CaseSetting{}, err
		}
		src := monotonicSource(m)
		c.add(Check{
			Name: "stress at the monotonic strain", Quantity: "stress at eps = " + fmtG(epsEnd),
			Value: d.pts[iEnd].sigma, Reference: ref, ReferenceSource: src,
			Tolerance: roundTol(n), ToleranceKind: "rel", ToleranceBasis: roundBasis(n), Unit: "Pa", converge: true,
		})
		worst := 0.0
		for i := 1; i <= iEnd; i++ {
			s, _, err := monotonicAt(m, d.pts[i].eps)
			if err != nil {
				return c, CaseSetting{}, err
			}
			worst = math.Max(worst, math.Abs(d.pts[i].sigma-s))
		}
		c.add(Check{
			Name: "loading curve", Quantity: "max over the loading increments of |sigma - sigma_closed(eps)| / |sigma_closed(eps_end)|",
			Value: worst / math.Abs(ref), ReferenceSource: src,
			Tolerance: roundTol(n), ToleranceKind: "abs", Bound: "upper", ToleranceBasis: roundBasis(n), Unit: "", converge: true,
		})
		if sign < 0 {
			// Tension/compression symmetry: the same path in tension, point
			// by point.
			t := v.newPath(ctx, len(d.pts))
			if err := t.strainTo(-epsEnd, h, 1); err != nil {
				return c, CaseSetting{}, err
			}
			if err := t.strainTo(-epsEnd-back, h, 2); err != nil {
				return c, CaseSetting{}, err
			}
			asym := 0.0
			for i := range d.pts {
				asym = math.Max(asym, math.Abs(d.pts[i].sigma+t.pts[i].sigma))
			}
			c.add(Check{
				Name: "tension/compression symmetry", Quantity: "max over the path of |sigma_compression(-eps) + sigma_tension(eps)| / |sigma at the monotonic strain|",
				Value: asym / math.Abs(ref), ReferenceSource: "odd symmetry of the uniaxial rules: every rule is odd in (sigma, alpha, eps_p) with p even; common practice, no source",
				Tolerance: roundTol(n), ToleranceKind: "abs", Bound: "upper", ToleranceBasis: roundBasis(n), Unit: "", converge: true,
			})
		}
		addInvariants(&c, m, &d.inv)
		c.Series = d.series()
		curve, err := monotonicCurve(m, epsEnd, src)
		if err != nil {
			return c, CaseSetting{}, err
		}
		c.Curves = []Curve{curve}
		return c, CaseSetting{Case: name, Control: "strain", Increment: h, Increments: n}, nil
	}
}

func monotonicSource(m *plastic.Material) string {
	s := "closed form sigma = sigmaY + R(eps_p) + sum (C_i/gamma_i)(1 - exp(-gamma_i eps_p)) + sum H_i eps_p, eps = eps_p + sigma/E, from the virgin state: "
	if allLinear(m) {
		return "bilinear closed form sigma = sigmaY + Et (eps - sigmaY/E), Et = E H/(E + H): " + srcPrager
	}
	parts := []string{}
	hasAF, hasLin := false, false
	for i := 0; i < m.N; i++ {
		if m.Terms[i].Linear() {
			hasLin = true
		} else {
			hasAF = true
		}
	}
	if hasAF {
		parts = append(parts, srcAF, srcChaboche)
	}
	if hasLin {
		parts = append(parts, srcPrager)
	}
	if m.Iso.Kind == plastic.IsoVoce {
		parts = append(parts, srcVoce)
	}
	for i, p := range parts {
		if i > 0 {
			s += "; "
		}
		s += p
	}
	return s
}

func monotonicCurve(m *plastic.Material, epsEnd float64, src string) (Curve, error) {
	c := Curve{Name: "closed form", Source: src, Points: make([][2]float64, 0, 101)}
	for i := 0; i <= 100; i++ {
		e := epsEnd * float64(i) / 100
		s, _, err := monotonicAt(m, e)
		if err != nil {
			return c, err
		}
		c.Points = append(c.Points, [2]float64{e, s})
	}
	return c, nil
}
