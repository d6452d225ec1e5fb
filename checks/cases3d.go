package checks

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// The 3D cases drive plastic.Run3D. Each is a method on the verifier that
// integrates with the verifier's material; the ...On forms take the
// integrator's material separately from the reference's, so that a test can
// show that a wrong model fails the checks.

// uniaxial3D drives the 3D integrator in uniaxial stress (axial strain
// given, every other stress zero by Run3D's mixed control) to the
// monotonic strain and back to zero, which reverses the plastic flow, and
// compares it with the 1D integrator on the same axial strains.
func (v *verifier) uniaxial3D(ctx context.Context, refine int) (Case, CaseSetting, error) {
	return v.uniaxial3DOn(ctx, v.m, refine)
}

func (v *verifier) uniaxial3DOn(ctx context.Context, m3 *plastic.Material, refine int) (Case, CaseSetting, error) {
	m := v.m
	h := v.hEps / float64(refine)
	epsEnd := v.spec.MonotonicStrain
	c := Case{Name: "3d-uniaxial-stress", Kind: "3d-uniaxial-stress", Loading: fmt.Sprintf("3D, axial strain from 0 to %s and back to 0 (reversed plastic flow), every other stress held at zero (mixed control: Newton on the free strains), increments of at most %.4g; compared with the 1D integrator on the same axial strains", fmtG(epsEnd), h)}
	path := plastic.UniaxialStressPath([]float64{epsEnd, 0}, h)
	nEst := 2*int(math.Ceil(epsEnd/h)) + 2
	var st plastic.State3D
	r := newRec3D(m3, st, nEst/maxSeries+1, nEst)
	var one plastic.State1D
	var err1 error
	peak, worst := 0.0, 0.0
	reversed := false
	r.each = func(prev, s *plastic.State3D) {
		if err1 != nil {
			return
		}
		if d := s.Eps[plastic.V11] - prev.Eps[plastic.V11]; d < 0 && !reversed {
			// Hooke: the first increment after the reversal is elastic, of
			// slope E; round-off of the two differences and the
			// free-stress residual bound it.
			reversed = true
			dS := s.Sigma[plastic.V11] - prev.Sigma[plastic.V11]
			if s.P == prev.P {
				bound := 8*u*(math.Abs(prev.Sigma[0])+math.Abs(s.Sigma[0]))/math.Abs(dS) + 8*u*(math.Abs(prev.Eps[0])+math.Abs(s.Eps[0]))/math.Abs(d) + 2*v.prof.driverTol*m.SigmaY/math.Abs(dS)
				r.inv.slopes = append(r.inv.slopes, slope{dS / d, m.E, bound})
			}
		}
		if _, err := m.Step1D(&one, &one, s.Eps[plastic.V11]-one.Eps, v.set); err != nil {
			err1 = fmt.Errorf("1D reference at strain %g: %w", one.Eps, err)
			return
		}
		peak = math.Max(peak, math.Abs(one.Sigma))
		worst = math.Max(worst, math.Abs(s.Sigma[plastic.V11]-one.Sigma))
	}
	res, err := r.drive(ctx, m3, &st, &path, v.set)
	if err == nil {
		err = err1
	}
	if err != nil {
		return c, CaseSetting{}, err
	}
	n := res.Increments
	tol := float64(n)*(v.prof.driverTol+v.prof.substepTol)*m.SigmaY/peak + roundTol(n)
	c.add(Check{
		Name: "uniaxial stress reproduces 1D", Quantity: "max over the path of |sigma_11 (3D) - sigma (1D)| / peak |sigma|",
		Value: worst / peak, ReferenceSource: "reduction of J2 plasticity with the same rules to uniaxial stress (sigma_22 = sigma_33 = 0 gives the 1D equations exactly, the 2/3 of the 3D rule making alpha = (3/2) X_11); common practice, no source",
		Tolerance: tol, ToleranceKind: "abs", Bound: "upper",
		ToleranceBasis: fmt.Sprintf("%d increments x (free-stress residual DriverTol %.0e + 3D substep tolerance %.0e) sigmaY / peak stress + %s", n, v.prof.driverTol, v.prof.substepTol, roundBasis(n)),
		converge:       true,
	})
	addInvariants(&c, m3, &r.inv)
	c.measure("driver Newton iterations", float64(res.NewtonIterations), "")
	c.Series = r.series()
	return c, CaseSetting{Case: c.Name, Control: "mixed", Increment: h, Increments: n}, nil
}

// pureShear drives the engineering shear strain gamma_12 alone (every
// other strain component zero) to four times the shear yield strain.
func (v *verifier) pureShear(ctx context.Context, refine int) (Case, CaseSetting, error) {
	return v.pureShearOn(ctx, v.m, refine)
}

func (v *verifier) pureShearOn(ctx context.Context, m3 *plastic.Material, refine int) (Case, CaseSetting, error) {
	m := v.m
	G := m.ShearModulus()
	s3 := math.Sqrt(3)
	gY := m.SigmaY / (s3 * G)
	h := gY / v.prof.incPerYield / float64(refine)
	gEnd := 4 * gY
	c := Case{Name: "3d-pure-shear", Kind: "3d-pure-shear", Loading: fmt.Sprintf("3D strain control, engineering shear strain gamma_12 from 0 to %.6g (4 shear yield strains), all other strains zero, increments of at most %.4g", gEnd, h)}
	path := strainPath(h, [6]float64{plastic.V12: gEnd})
	nEst := int(math.Ceil(gEnd/h)) + 1
	var st plastic.State3D
	r := newRec3D(m3, st, nEst/maxSeries+1, nEst)
	var from plastic.State3D // the state before the first plastic increment
	var dGam float64         // and that increment
	found := false
	maxNormal := 0.0
	r.each = func(prev, s *plastic.State3D) {
		for k := 0; k < 3; k++ {
			maxNormal = math.Max(maxNormal, math.Abs(s.Sigma[k]))
		}
		if !found && s.P > prev.P {
			found, from, dGam = true, *prev, s.Eps[plastic.V12]-prev.Eps[plastic.V12]
		}
	}
	res, err := r.drive(ctx, m3, &st, &path, v.set)
	if err != nil {
		return c, CaseSetting{}, err
	}
	n := res.Increments
	rt, rb := roundTol(n), roundBasis(n)
	if found {
		c.add(Check{
			Name: "shear yield stress", Quantity: "shear stress tau_12 at first yield: the integrator's elastic limit, the fraction of the first plastic increment bisected to the last bit",
			Value: elasticLimit(m3, v.set, &from, dGam), Reference: m.SigmaY / s3, ReferenceSource: srcMises,
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
	tauEnd := st.Sigma[plastic.V12]
	c.add(Check{
		Name: "shear stress at the end of loading", Quantity: fmt.Sprintf("tau_12 at gamma_12 = %.6g", gEnd),
		Value: tauEnd, Reference: monotonicStress(m, pRef) / s3,
		ReferenceSource: "closed form derived here: the uniaxial curve mapped by the von Mises equivalence, tau = sigma_mono(p)/sqrt(3), gamma_12 = sqrt(3) p + tau/G (" + srcMises + "; " + monotonicSource(m) + ")",
		Tolerance:       rt, ToleranceKind: "rel", ToleranceBasis: rb, Unit: "Pa", converge: true,
	})
	c.add(Check{
		Name: "no normal stress in pure shear", Quantity: "max |sigma_11|, |sigma_22|, |sigma_33| over the path",
		Value: maxNormal, ReferenceSource: "J2 flow in pure shear is along e_12: no normal plastic strain, hence no normal stress under zero normal strain (" + srcMises + ")",
		Tolerance: rt * math.Abs(tauEnd), ToleranceKind: "abs", Bound: "upper", ToleranceBasis: rb + ", relative to the shear stress", Unit: "Pa",
	})
	addInvariants(&c, m3, &r.inv)
	c.Series = r.series()
	return c, CaseSetting{Case: c.Name, Control: "strain", Increment: h, Increments: n}, nil
}

// elasticLimit returns the shear stress at which Step3D first reports a
// plastic step along the shear increment dGam from the elastic state
// from, bisecting the fraction of the increment to the last bit. A step
// that fails counts as plastic: for a finite increment Step3D can fail only
// in its return mapping, which it enters only beyond the elastic limit.
func elasticLimit(m *plastic.Material, set *plastic.Settings, from *plastic.State3D, dGam float64) float64 {
	var tmp plastic.State3D
	lo, hi := 0.0, 1.0
	tau := from.Sigma[plastic.V12]
	for mid := 0.5; mid > lo && mid < hi; mid = lo + (hi-lo)/2 {
		var e [6]float64
		e[plastic.V12] = mid * dGam
		info, err := m.Step3D(&tmp, from, e, nil, set)
		if err != nil || info.Plastic {
			hi = mid
		} else {
			lo, tau = mid, tmp.Sigma[plastic.V12]
		}
	}
	return tau
}

// circleQ is the size of the strain circle of the non-proportional case:
// the deviatoric strain radius rho is three times the elastic one, q = 2G
// rho / (sqrt(2/3) k) = 3 (k the saturated yield radius): far enough out
// that plastic flow is steady and strong, and at k/G (about 0.2 to 1 %
// for metals) well within small strain. Our choice, no source.
const circleQ = 3

// circle drives a circular isochoric strain path (every strain component
// prescribed) from the steady state that the material reaches on it, one
// full turn, and compares stress and back stress at every increment with
// the closed form of circleState. Materials without a steady state (linear
// isotropic hardening) start from the virgin state with a radial ramp and
// are checked by the invariants and the step-size rerun only.
func (v *verifier) circle(ctx context.Context, refine int) (Case, CaseSetting, error) {
	return v.circleOn(ctx, v.m, refine)
}

func (v *verifier) circleOn(ctx context.Context, m3 *plastic.Material, refine int) (Case, CaseSetting, error) {
	m := v.m
	G := m.ShearModulus()
	k := m.SigmaY
	if m.Iso.Kind == plastic.IsoVoce {
		k += m.Iso.Q
	}
	rho := circleQ * math.Sqrt(2.0/3) * k / (2 * G)
	cs, steadyErr := newCircleState(m, rho)
	nc := v.prof.angleInc * refine
	dTheta := 2 * math.Pi / float64(nc)
	a := cs.amplitude()
	c := Case{Name: "3d-circular-strain-path", Kind: "3d-non-proportional"}
	loading := fmt.Sprintf("3D strain control on a circle of the deviatoric strain plane: eps_11 = %.6g cos(theta), eps_22 = eps_33 = -eps_11/2, gamma_12 = sqrt(3) %.6g sin(theta) (90 degrees out of phase, equal von Mises strain amplitudes, no volume change), deviatoric radius %d times the elastic one; one turn in %d chords (straight increments)", a, a, circleQ, nc)
	// p0: Voce's R(p) must be saturated for the steady state; exp(-40) =
	// 4.2e-18 leaves R(p0) equal to Q to round-off.
	p0 := 0.0
	if m.Iso.Kind == plastic.IsoVoce {
		p0 = 40 / m.Iso.B
	}
	var st plastic.State3D
	var targets [][6]float64
	if steadyErr == nil {
		st = cs.state(0, p0)
		c.Loading = loading + "; started in the rotating steady state of the closed form"
		if p0 > 0 {
			c.Loading += fmt.Sprintf(" at accumulated plastic strain %.4g, where Voce's R(p) is saturated", p0)
		}
	} else {
		c.Loading = loading + fmt.Sprintf("; this card has %v, so the turn starts from the virgin state after a radial ramp to theta = 0", steadyErr)
		targets = append(targets, cs.strain(0))
	}
	for i := 1; i <= nc; i++ {
		targets = append(targets, cs.strain(dTheta*float64(i)))
	}
	start := st
	// Run3D cuts no chord (the increment bound is infinite): each target
	// is one increment.
	path := strainPath(math.Inf(1), targets...)
	r := newRec3D(m3, st, nc/180+1, len(targets))
	worst := 0.0
	i0 := len(targets) - nc // increments before the circle
	r.each = func(_, s *plastic.State3D) {
		i := r.n - i0
		if steadyErr != nil || i < 0 {
			return
		}
		ref := cs.state(dTheta*float64(i), 0)
		x, xr := s.BackStress(m3.N), ref.BackStress(m.N)
		for k := 0; k < 6; k++ {
			worst = math.Max(worst, math.Max(math.Abs(s.Sigma[k]-ref.Sigma[k]), math.Abs(x[k]-xr[k])))
		}
	}
	res, err := r.drive(ctx, m3, &st, &path, v.set)
	if err != nil {
		return c, CaseSetting{}, err
	}
	n := res.Increments
	// Tolerance, in Pa. (1) The chords: each increment follows the chord,
	// not the arc; they are at most rho (1 - cos(dTheta/2)) = 2 rho
	// sin^2(dTheta/4) apart in deviatoric strain, which moves the stress by
	// 2G times that in an elastic increment and less in a plastic one (the
	// closest-point return is B-stable, it does not expand distances in the
	// energy norm: J. C. Simo and T. J. R. Hughes, Computational
	// Inelasticity, 1998, ch. 3, from memory, section not checked). Over a
	// path this is an estimate, not a bound; we take four times it (our margin, no
	// source): the deviation measured on the demo cards and 300 random
	// plausible cards (worker/cardspace, seed 20261202) is at most 0.89 of
	// the elastic value. (2) The substep tolerance of the Exact algorithm,
	// SubstepTol sigmaY per increment, added over the n increments (the
	// profile's error model). (3) Round-off, roundTol(n) of the largest
	// stress scale on the path.
	elastic := 2 * G * 2 * rho * math.Pow(math.Sin(dTheta/4), 2)
	chord := 4 * elastic
	tol := chord + float64(n)*v.prof.substepTol*m.SigmaY + roundTol(n)*r.inv.maxScale*k
	basis := fmt.Sprintf("4 x 2G rho (1 - cos(dtheta/2)) = %.3g Pa (the stress an elastic increment gives to the largest distance between chord and arc, times a margin of 4: our estimate, no source) + %d increments x SubstepTol %.0e sigmaY (error control of the Exact substeps, added over the increments) + %s, of the largest stress scale on the path", chord, n, v.prof.substepTol, roundBasis(n))
	if steadyErr == nil {
		c.add(Check{
			Name: "stress on the steady state", Quantity: "max over the increments and components of |sigma - sigma_ss(theta)| and |X - X_ss(theta)| / sigmaY, X the total back stress",
			Value: worst / m.SigmaY, ReferenceSource: "closed form derived here: the rotating steady state of J2 plasticity with Prager and Armstrong-Frederick terms on a circular deviatoric strain path (" + srcPrager + "; " + srcAF + "; " + srcMises + ")",
			Tolerance: tol / m.SigmaY, ToleranceKind: "abs", Bound: "upper", ToleranceBasis: basis,
			converge: true,
		})
		dp, dpRef := st.P-start.P, 2*math.Pi*cs.dpPerRadian()
		c.measure("accumulated plastic strain over the turn", dp, "")
		c.measure("closed form of the accumulated plastic strain over the turn", dpRef, "")
		c.measure("stress deviation from the steady state / 2G rho (1 - cos(dtheta/2))", worst/elastic, "")
	} else {
		c.omit("stress on the steady state", steadyErr.Error())
		c.tracked = append(c.tracked,
			tracked{"axial stress at the end of the turn", st.Sigma[plastic.V11], tol, basis},
			tracked{"shear stress at the end of the turn", st.Sigma[plastic.V12], tol, basis})
	}
	addInvariants(&c, m3, &r.inv)
	c.measure("return mappings (Exact substeps)", float64(res.Substeps), "")
	c.Series = r.series()
	return c, CaseSetting{Case: c.Name, Control: "strain", Increment: dTheta, Increments: n}, nil
}
