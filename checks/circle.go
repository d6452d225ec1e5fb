package checks

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"matgate/checks/plastic"
)

// circleState is the steady state of J2 plasticity with kinematic
// hardening under a circular isochoric strain path, derived here.
//
// The path. With the orthonormal deviators (tensor components, inner
// product a : b)
//
//	n1 = (1, -1/2, -1/2, 0, 0, 0) / sqrt(3/2),   n2 = (0, 0, 0, 0, 0, 1) / sqrt(2),
//
// the strain is e(theta) = rho (cos theta n1 + sin theta n2): in Voigt
// form eps_11 = a cos theta, eps_22 = eps_33 = -a/2 cos theta, gamma_12 =
// sqrt(3) a sin theta with a = sqrt(2/3) rho, every strain component
// prescribed. The trace is zero, so the pressure stays zero and the whole
// problem lives in the plane of n1 and n2.
//
// The steady state. Write every in-plane deviator in the rotating frame
// u = cos theta n1 + sin theta n2, v = du/dtheta as a complex number
// z_r + i z_t (the tensor z_r u + z_t v); a state that rotates with the
// strain has constant components, and d/dtheta of such a tensor is i z.
// With xi = s - X on the yield surface, |xi| = r0 = sqrt(2/3) k (k =
// sigmaY + R, R saturated), the flow rule d eps_p = dlambda xi/r0 (dp =
// sqrt(2/3) dlambda), the rules dX_j = (2/3) C_j d eps_p - gamma_j X_j dp
// and s = 2G (e - eps_p), a constant rate L = (dlambda/dtheta)/r0 gives
//
//	eps_p = -i L xi,   X_j = a_j L xi / (i + g_j r0 L),   a_j = (2/3) C_j,  g_j = sqrt(2/3) gamma_j,
//	xi = 2G rho / D(L),   D(L) = 1 - 2G L i + sum_j a_j L / (i + g_j r0 L),
//
// and |xi| = r0 fixes L by |D(L)| = q = 2G rho / r0 (> 1: the strain
// circle reaches beyond the elastic domain). A linear (Prager) term has
// g_j = 0. For Prager terms alone |D|^2 = 1 + (h L)^2, h = 2G + (2/3) sum
// H_j, so L = sqrt(q^2 - 1)/h; with Armstrong-Frederick terms Re D >= 1
// grows with L and |Im D| grows when 2G > sum_j a_j / 8 (the least slope
// of a_j L/(1 + (g_j r0 L)^2) is -a_j/8), so |D| is increasing and the
// root is unique. The accumulated plastic strain grows by dp/dtheta =
// sqrt(2/3) r0 L.
//
// The steady state is an exact solution of the rate equations: started in
// it, the material stays in it, so an integrator started there must
// reproduce it along the whole path up to its own integration error; no
// transient is involved.
//
// References (the rules; the steady state is derived here):
//   - W. Prager, A new method of analyzing stresses and strains in
//     work-hardening plastic solids, J. Appl. Mech. 23, 1956.
//   - P. J. Armstrong and C. O. Frederick, A mathematical representation of
//     the multiaxial Bauschinger effect, CEGB report RD/B/N731, 1966.
//   - R. von Mises, Mechanik der festen Koerper im plastisch-deformablen
//     Zustand, Goettinger Nachrichten, 1913 (the yield surface).
type circleState struct {
	rho, k, r0, q, L float64
	xi, epsP         complex128
	x                [plastic.MaxTerms]complex128
	m                *plastic.Material
}

// errNoSteadyState says why a material has no circular steady state.
var errNoSteadyState = errors.New("no rotating steady state")

// newCircleState returns the steady state of m on the strain circle of
// deviatoric radius rho. It needs a saturating isotropic law (none or
// Voce; k = sigmaY + Q), q = 2G rho / r0 > 1, and 2G > sum (2/3) C_j / 8
// for a unique root; otherwise it returns an error wrapping
// errNoSteadyState (with rho, k, r0 and q set).
func newCircleState(m *plastic.Material, rho float64) (circleState, error) {
	cs := circleState{rho: rho, m: m}
	G := m.ShearModulus()
	cs.k = m.SigmaY
	if m.Iso.Kind == plastic.IsoVoce {
		cs.k += m.Iso.Q
	}
	cs.r0 = math.Sqrt(2.0/3) * cs.k
	cs.q = 2 * G * rho / cs.r0
	if m.Iso.Kind == plastic.IsoLinear && m.Iso.K > 0 {
		return cs, fmt.Errorf("%w: linear isotropic hardening grows without bound", errNoSteadyState)
	}
	if !(cs.q > 1) {
		return cs, fmt.Errorf("%w: the strain circle does not leave the elastic domain", errNoSteadyState)
	}
	sa := 0.0
	for i := 0; i < m.N; i++ {
		sa += 2.0 / 3 * m.Terms[i].C
	}
	if !(2*G > sa/8) {
		return cs, fmt.Errorf("%w: the sum of c over the terms is at or above 24 G (%.4g Pa), so the steady state may not be unique", errNoSteadyState, 24*G)
	}
	// |D(L)| - q is increasing from 1 - q < 0 at L = 0, and positive at
	// L = q/(2G - sum a/8) since |Im D| >= (2G - sum a/8) L.
	g := func(L float64) float64 { return cmplx.Abs(cs.d(L)) - cs.q }
	L, err := findRoot(g, 0, cs.q/(2*G-sa/8))
	if err != nil {
		return cs, fmt.Errorf("steady state on the strain circle: %w", err)
	}
	cs.L = L
	cs.xi = complex(2*G*rho, 0) / cs.d(cs.L)
	cs.epsP = -1i * complex(cs.L, 0) * cs.xi
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		a, gg := 2.0/3*t.C, math.Sqrt(2.0/3)*t.Gamma
		cs.x[i] = complex(a*cs.L, 0) * cs.xi / complex(gg*cs.r0*cs.L, 1)
	}
	return cs, nil
}

// d returns D(L).
func (cs *circleState) d(L float64) complex128 {
	m := cs.m
	D := complex(1, -2*m.ShearModulus()*L)
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		a, gg := 2.0/3*t.C, math.Sqrt(2.0/3)*t.Gamma
		D += complex(a*L, 0) / complex(gg*cs.r0*L, 1)
	}
	return D
}

// dpPerRadian returns dp/dtheta = sqrt(2/3) r0 L.
func (cs *circleState) dpPerRadian() float64 { return math.Sqrt(2.0/3) * cs.r0 * cs.L }

// amplitude returns a = sqrt(2/3) rho, the amplitude of eps_11.
func (cs *circleState) amplitude() float64 { return math.Sqrt(2.0/3) * cs.rho }

// strain returns the prescribed Voigt strain (engineering shear) at theta.
func (cs *circleState) strain(theta float64) [6]float64 {
	a := cs.amplitude()
	c, s := math.Cos(theta), math.Sin(theta)
	return [6]float64{plastic.V11: a * c, plastic.V22: -a / 2 * c, plastic.V33: -a / 2 * c, plastic.V12: math.Sqrt(3) * a * s}
}

// tensor returns the tensor-component 6-vector of the rotating-frame
// complex z at theta: Re(z e^(i theta)) n1 + Im(z e^(i theta)) n2.
func tensor(z complex128, theta float64) [6]float64 {
	w := z * cmplx.Exp(complex(0, theta))
	c1 := real(w) / math.Sqrt(1.5)
	c2 := imag(w) / math.Sqrt(2)
	return [6]float64{plastic.V11: c1, plastic.V22: -c1 / 2, plastic.V33: -c1 / 2, plastic.V12: c2}
}

// state returns the steady state at theta with accumulated plastic strain
// p: strain, plastic strain (engineering shear), stress and back stresses.
func (cs *circleState) state(theta, p float64) plastic.State3D {
	var s plastic.State3D
	s.Eps = cs.strain(theta)
	s.EpsP = tensor(cs.epsP, theta)
	s.EpsP[plastic.V12] *= 2
	G := cs.m.ShearModulus()
	e := tensor(complex(cs.rho, 0)-cs.epsP, theta)
	for k := range e {
		s.Sigma[k] = 2 * G * e[k]
	}
	for i := 0; i < cs.m.N; i++ {
		s.X[i] = tensor(cs.x[i], theta)
	}
	s.P = p
	return s
}
