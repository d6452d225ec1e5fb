package checks

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// uniaxial3D drives the 3D integrator in uniaxial stress (axial strain
// given, lateral stresses zero by mixed control) along the monotonic
// tension path and compares it with the 1D integrator on the same strains.
func (v *verifier) uniaxial3D(ctx context.Context, refine int) (Case, CaseSetting, error) {
	m := v.m
	h := v.hEps / float64(refine)
	epsEnd := v.spec.MonotonicStrain
	c := Case{Name: "3d-uniaxial-stress", Kind: "3d-uniaxial-stress", Loading: fmt.Sprintf("3D, axial strain from 0 to %s then unloading by (sigmaY + R)/E, lateral stresses held at zero (mixed control, Newton on the lateral strains), increments of at most %.4g; compared with the 1D integrator on the same strains", fmtG(epsEnd), h)}
	var free [6]bool
	free[plastic.V22], free[plastic.V33] = true, true
	d := newPath3D(ctx, m, v.set, v.prof.driverTol, free, int(epsEnd/h)+64)
	one := newPath1D(ctx, m, v.set, v.prof.driverTol, int(epsEnd/h)+64)
	if err := one.strainTo(epsEnd, h, 1); err != nil {
		return c, CaseSetting{}, err
	}
	back := m.YieldRadius(one.st.P) / m.E
	if err := one.strainTo(epsEnd-back, h, 2); err != nil {
		return c, CaseSetting{}, err
	}
	unloadAt := 0
	for i := 1; i < len(one.pts); i++ {
		if i >= 2 && one.pts[i].eps < one.pts[i-1].eps && unloadAt == 0 {
			unloadAt = i
		}
		var dEps [6]float64
		dEps[0] = one.pts[i].eps - d.st.Eps[0]
		if err := d.step(d.elasticGuess(dEps)); err != nil {
			return c, CaseSetting{}, err
		}
	}
	n := d.n
	peak, worst := 0.0, 0.0
	for i := range one.pts {
		peak = math.Max(peak, math.Abs(one.pts[i].sigma))
		worst = math.Max(worst, math.Abs(d.pts[i].sig11-one.pts[i].sigma))
	}
	tol := float64(n)*(v.prof.driverTol+v.prof.substepTol)*m.SigmaY/peak + roundTol(n)
	c.add(Check{
		Name: "uniaxial stress reproduces 1D", Quantity: "max over the path of |sigma_11 (3D) - sigma (1D)| / peak |sigma|",
		Value: worst / peak, ReferenceSource: "reduction of J2 plasticity with the same rules to uniaxial stress (sigma_22 = sigma_33 = 0 gives the 1D equations exactly); common practice, no source",
		Tolerance: tol, ToleranceKind: "abs", Bound: "upper",
		ToleranceBasis: fmt.Sprintf("%d increments x (lateral stress residual DriverTol %.0e + 3D substep tolerance %.0e) sigmaY / peak stress + %s", n, v.prof.driverTol, v.prof.substepTol, roundBasis(n)),
		converge:       true,
	})
	if unloadAt > 0 {
		a, b := d.pts[unloadAt-1], d.pts[unloadAt]
		if !b.plastic {
			dS, dE := b.sig11-a.sig11, b.eps11-a.eps11
			st := 8*u*(math.Abs(a.sig11)+math.Abs(b.sig11))/math.Abs(dS) + 8*u*(math.Abs(a.eps11)+math.Abs(b.eps11))/math.Abs(dE) + 2*v.prof.driverTol*m.SigmaY/math.Abs(dS)
			d.inv.slopes = append(d.inv.slopes, slope{dS / dE, m.E, st})
		}
	}
	addInvariants(&c, m, &d.inv)
	c.Series = d.series()
	return c, CaseSetting{Case: c.Name, Control: "mixed", Increment: h, Increments: n}, nil
}

// pureShear drives the engineering shear strain gamma_12 alone (every
// other strain component zero) to four times the shear yield strain and
// unloads by (sigmaY + R)/(sqrt(3) G).
func (v *verifier) pureShear(ctx context.Context, refine int) (Case, CaseSetting, error) {
	m := v.m
	G := m.ShearModulus()
	s3 := math.Sqrt(3)
	gY := m.SigmaY / (s3 * G)
	h := gY / v.prof.incPerYield / float64(refine)
	gEnd := 4 * gY
	c := Case{Name: "3d-pure-shear", Kind: "3d-pure-shear", Loading: fmt.Sprintf("3D strain control, engineering shear strain gamma_12 from 0 to %.6g (4 shear yield strains) then unloading by (sigmaY + R)/(sqrt(3) G), all other strains zero, increments of at most %.4g", gEnd, h)}
	d := newPath3D(ctx, m, v.set, v.prof.driverTol, [6]bool{}, int(gEnd/h)+64)
	nInc := int(math.Ceil(gEnd / h))
	yieldTau, found := 0.0, false
	for i := 1; i <= nInc; i++ {
		var dEps [6]float64
		dEps[plastic.V12] = gEnd*float64(i)/float64(nInc) - d.st.Eps[plastic.V12]
		prev := d.st
		if err := d.step(dEps); err != nil {
			return c, CaseSetting{}, err
		}
		if !found && d.pts[len(d.pts)-1].plastic {
			found = true
			// Bisect the fraction of the increment at which Step3D first
			// reports a plastic step: the integrator's elastic limit.
			var tmp plastic.State3D
			lo, hi := 0.0, 1.0
			for it := 0; it < 200; it++ {
				mid := lo + (hi-lo)/2
				if mid <= lo || mid >= hi {
					break
				}
				var e [6]float64
				e[plastic.V12] = mid * dEps[plastic.V12]
				info, err := m.Step3D(&tmp, &prev, e, nil, v.set)
				if err != nil {
					return c, CaseSetting{}, err
				}
				if info.Plastic {
					hi = mid
				} else {
					lo = mid
				}
			}
			yieldTau = prev.Sigma[plastic.V12] + G*lo*dEps[plastic.V12]
		}
	}
	tauEnd, pEnd := d.st.Sigma[plastic.V12], d.st.P
	maxNormal := 0.0
	for _, p := range d.pts {
		maxNormal = math.Max(maxNormal, p.maxNormal)
	}
	back := m.YieldRadius(pEnd) / (s3 * G)
	var un [6]float64
	un[plastic.V12] = -back
	a := d.st
	if err := d.step(un); err != nil {
		return c, CaseSetting{}, err
	}
	n := d.n
	rt, rb := roundTol(n), roundBasis(n)
	if found {
		c.add(Check{
			Name: "shear yield stress", Quantity: "shear stress tau_12 at first yield (integrator's elastic limit, bisected to the last bit)",
			Value: yieldTau, Reference: m.SigmaY / s3, ReferenceSource: srcMises,
			Tolerance: rt, ToleranceKind: "rel", ToleranceBasis: rb, Unit: "Pa", converge: true,
		})
	} else {
		c.omit("shear yield stress", "the path did not yield")
	}
	// Closed form of the shear curve: with n = e_12 direction, dp =
	// (2/sqrt(3)) d eps_p12 and each rule gives X_12 = alpha_i(p)/sqrt(3),
	// so tau = sigma_mono(p)/sqrt(3) and gamma_12 = sqrt(3) p + tau/G.
	pRef, err := findRoot(func(p float64) float64 { return s3*p + monotonicStress(m, p)/(s3*G) - gEnd }, 0, gEnd)
	if err != nil {
		return c, CaseSetting{}, err
	}
	tauRef := monotonicStress(m, pRef) / s3
	c.add(Check{
		Name: "shear stress at the end of loading", Quantity: fmt.Sprintf("tau_12 at gamma_12 = %.6g", gEnd),
		Value: tauEnd, Reference: tauRef,
		ReferenceSource: "closed form derived here: the uniaxial curve mapped by the von Mises equivalence, tau = sigma_mono(p)/sqrt(3), gamma_12 = sqrt(3) p + tau/G (" + srcMises + "; " + monotonicSource(m) + ")",
		Tolerance:       rt, ToleranceKind: "rel", ToleranceBasis: rb, Unit: "Pa", converge: true,
	})
	c.add(Check{
		Name: "no normal stress in pure shear", Quantity: "max |sigma_11|, |sigma_22|, |sigma_33| over the path",
		Value: maxNormal, ReferenceSource: "J2 flow in pure shear is along e_12: no normal plastic strain, hence no normal stress under zero normal strain (" + srcMises + ")",
		Tolerance: rt * math.Abs(tauEnd), ToleranceKind: "abs", Bound: "upper", ToleranceBasis: rb + ", relative to the shear stress", Unit: "Pa",
	})
	if b := d.st; !d.pts[len(d.pts)-1].plastic {
		dS, dE := b.Sigma[plastic.V12]-a.Sigma[plastic.V12], b.Eps[plastic.V12]-a.Eps[plastic.V12]
		st := 8*u*(math.Abs(a.Sigma[plastic.V12])+math.Abs(b.Sigma[plastic.V12]))/math.Abs(dS) + 8*u*(math.Abs(a.Eps[plastic.V12])+math.Abs(b.Eps[plastic.V12]))/math.Abs(dE)
		d.inv.slopes = append(d.inv.slopes, slope{dS / dE, G, st})
	}
	inv := d.inv
	slopes := inv.slopes
	inv.slopes = nil
	addInvariants(&c, m, &inv)
	// addInvariants reported the unloading as missing; replace it with the
	// shear slope.
	c.Omitted = c.Omitted[:len(c.Omitted)-1]
	addSlope(&c, slopes, "G", srcHooke)
	c.Series = d.series()
	return c, CaseSetting{Case: c.Name, Control: "strain", Increment: h, Increments: n}, nil
}

// tensionTorsion drives a 90-degree out-of-phase tension-torsion circle,
// eps_11 = A sin(theta), gamma_12 = -sqrt(3) A cos(theta), with the lateral
// stresses zero: a shear ramp to gamma_12 = -sqrt(3) A, two circles ending
// at theta = pi/2, and an elastic unloading along -(s - X).
//
// The case uses the backward-Euler radial return: on this path every
// increment is non-proportional, and the Exact algorithm's error-controlled
// substepping (SubstepTol) costs up to 2^16 return mappings per increment
// (seconds per case). Backward Euler is first order in the increment; the
// case is run at nc, 2 nc and 4 nc increments per circle and must converge:
// the change of the end state must at least halve from one halving to the
// next (observed order >= 1).
func (v *verifier) tensionTorsion(ctx context.Context, refine int) (Case, CaseSetting, error) {
	m := v.m
	A := v.spec.StrainAmplitudes[0]
	nc := v.prof.angleInc * refine
	const circles = 2
	c := Case{Name: "3d-tension-torsion-90", Kind: "3d-non-proportional", Loading: fmt.Sprintf("3D, eps_11 = %s sin(theta), gamma_12 = -sqrt(3) %s cos(theta) (90 degrees out of phase, equal von Mises strain amplitudes), after a shear ramp from 0; %d circles in %d increments each, ending at theta = pi/2; lateral stresses zero (mixed control); then an elastic unloading along -(s - X); backward-Euler radial return", fmtG(A), fmtG(A), circles, nc)}
	set := *v.set
	set.Algorithm = plastic.BackwardEuler
	run := func(nc int) (*path3D, plastic.State3D, error) {
		var free [6]bool
		free[plastic.V22], free[plastic.V33] = true, true
		d := newPath3D(ctx, m, &set, v.prof.driverTol, free, circles*nc+nc+8)
		s3 := math.Sqrt(3)
		go3 := func(e, g float64) error {
			var dEps [6]float64
			dEps[plastic.V11] = e - d.st.Eps[plastic.V11]
			dEps[plastic.V12] = g - d.st.Eps[plastic.V12]
			return d.step(d.elasticGuess(dEps))
		}
		ramp := nc / 4
		for i := 1; i <= ramp; i++ {
			if err := go3(0, -s3*A*float64(i)/float64(ramp)); err != nil {
				return nil, plastic.State3D{}, err
			}
		}
		total := circles*nc + nc/4
		for i := 1; i <= total; i++ {
			th := 2 * math.Pi * float64(i) / float64(nc)
			if err := go3(A*math.Sin(th), -s3*A*math.Cos(th)); err != nil {
				return nil, plastic.State3D{}, err
			}
		}
		return d, d.st, nil
	}
	d, end, err := run(nc)
	if err != nil {
		return c, CaseSetting{}, err
	}
	// Unload elastically along -(s - X)/2: the stress increment (dSigma_11,
	// dTau_12) = -(3/2 xi_11, xi_12)/2 has the deviator -xi/2 (xi_22 =
	// xi_33 = -xi_11/2 on this path), so |xi| halves and the step is
	// elastic; its strains are dSigma_11/E and dTau_12/G.
	xi := plastic.Deviator(end.Sigma)
	x := end.BackStress(m.N)
	for k := range xi {
		xi[k] -= x[k]
	}
	var un [6]float64
	un[plastic.V11] = -0.75 * xi[0] / m.E
	un[plastic.V12] = -0.5 * xi[5] / m.ShearModulus()
	if err := d.step(d.elasticGuess(un)); err != nil {
		return c, CaseSetting{}, err
	}
	n := d.n
	after := d.st
	if !d.pts[len(d.pts)-1].plastic {
		k, mod := 0, m.E // the larger of the axial and the shear change
		if math.Abs(xi[0]) < math.Abs(xi[5]) {
			k, mod = 5, m.ShearModulus()
		}
		dS, dE := after.Sigma[k]-end.Sigma[k], after.Eps[k]-end.Eps[k]
		st := 8*u*(math.Abs(end.Sigma[k])+math.Abs(after.Sigma[k]))/math.Abs(dS) + 8*u*(math.Abs(end.Eps[k])+math.Abs(after.Eps[k]))/math.Abs(dE) + 2*v.prof.driverTol*m.SigmaY/math.Abs(dS)
		d.inv.slopes = append(d.inv.slopes, slope{dS / dE, mod, st})
	}
	addInvariants(&c, m, &d.inv)
	{
		_, e2, err := run(2 * nc)
		if err != nil {
			return c, CaseSetting{}, err
		}
		_, e4, err := run(4 * nc)
		if err != nil {
			return c, CaseSetting{}, err
		}
		diff := func(a, b plastic.State3D) float64 {
			return math.Max(math.Abs(a.Sigma[0]-b.Sigma[0]), math.Abs(a.Sigma[5]-b.Sigma[5]))
		}
		d1, d2 := diff(end, e2), diff(e2, e4)
		order := math.Log2(d1 / d2)
		if d2 == 0 || d1 == 0 {
			order = 0
			if d1 == 0 && d2 == 0 {
				order = math.MaxFloat64 // exact at every increment
			}
		}
		c.add(Check{
			Name: "convergence under step halving", Quantity: fmt.Sprintf("observed order log2(d1/d2) of the end-of-circle stresses, d1 = max |change| from %d to %d increments a circle = %.4g Pa, d2 = from %d to %d = %.4g Pa", nc, 2*nc, d1, 2*nc, 4*nc, d2),
			Value: order, Reference: 1,
			ReferenceSource: "backward Euler is first-order accurate in the increment (J. C. Simo and T. J. R. Hughes, Computational Inelasticity, 1998, ch. 3); the chords of the circular path add a second-order error",
			Tolerance:       0.5, ToleranceKind: "abs", Bound: "lower",
			ToleranceBasis: "our criterion: an observed order of at least 0.5 (the change shrinks by at least sqrt(2) per halving) shows geometric convergence; the allowance below the asymptotic order 1 covers the pre-asymptotic higher-order terms (observed about 0.98 on the demo cards); a non-converging result has order near 0",
		})
		c.measure("end-of-circle change, nc to 2nc", d1, "Pa")
		c.measure("end-of-circle change, 2nc to 4nc", d2, "Pa")
	}
	c.measure("axial stress at the end of the circles", end.Sigma[0], "Pa")
	c.measure("shear stress at the end of the circles", end.Sigma[5], "Pa")
	c.measure("accumulated plastic strain at the end of the circles", end.P, "")
	c.measure("driver Newton iterations", float64(d.newton), "")
	c.Series = d.series()
	return c, CaseSetting{Case: c.Name, Control: "mixed", Algorithm: set.Algorithm.String(), Increment: 2 * math.Pi / float64(nc), Increments: n}, nil
}
