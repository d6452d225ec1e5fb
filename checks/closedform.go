package checks

import (
	"errors"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// Sources of the closed forms, cited in the checks.
const (
	srcPrager   = "W. Prager, A new method of analyzing stresses and strains in work-hardening plastic solids, J. Appl. Mech. 23, 1956 (linear kinematic rule alpha = H eps_p)"
	srcAF       = "P. J. Armstrong and C. O. Frederick, A mathematical representation of the multiaxial Bauschinger effect, CEGB report RD/B/N731, 1966 (rule d alpha = C d eps_p - gamma alpha dp)"
	srcChaboche = "J.-L. Chaboche, Time-independent constitutive theories for cyclic plasticity, Int. J. Plasticity 2, 1986 (uniaxial integration of the nonlinear kinematic rule; equation numbers from memory, not given)"
	srcVoce     = "E. Voce, The relationship between stress and strain for homogeneous deformation, J. Inst. Metals 74, 1948 (R = Q (1 - exp(-b p)))"
	srcMises    = "R. von Mises, Mechanik der festen Koerper im plastisch-deformablen Zustand, Goettinger Nachrichten, 1913 (J2 yield: shear yield stress sigmaY/sqrt(3))"
	srcHooke    = "Hooke's law: an elastic increment has slope E (uniaxial stress) or G = E/(2(1+nu)) (shear); common practice, no source"
)

// monotonicStress is the virgin uniaxial tension curve as a function of the
// plastic strain epsP >= 0:
//
//	sigma = sigmaY + R(epsP) + sum_AF (C_i/gamma_i)(1 - exp(-gamma_i epsP)) + sum_lin H_i epsP
//
// the integral of each back-stress rule from alpha = 0 at constant flow
// direction, plus R(p) with p = epsP. For linear terms alone this is the
// bilinear curve sigma = sigmaY + Et (eps - sigmaY/E), Et = E H/(E + H).
//
// References: srcAF, srcChaboche (AF terms), srcPrager (linear), srcVoce (R).
func monotonicStress(m *plastic.Material, epsP float64) float64 {
	s := m.SigmaY + m.R(epsP)
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		if t.Linear() {
			s += t.C * epsP
		} else {
			s += t.C / t.Gamma * -math.Expm1(-t.Gamma*epsP)
		}
	}
	return s
}

// monotonicAt returns the virgin tension stress and plastic strain at the
// total strain eps (any sign; compression by symmetry, sigma(-eps) =
// -sigma(eps)), solving eps = epsP + sigma(epsP)/E for epsP by findRoot.
func monotonicAt(m *plastic.Material, eps float64) (sigma, epsP float64, err error) {
	sgn := 1.0
	if eps < 0 {
		sgn, eps = -1, -eps
	}
	if eps*m.E <= m.SigmaY {
		return sgn * m.E * eps, 0, nil
	}
	g := func(x float64) float64 { return x + monotonicStress(m, x)/m.E - eps }
	x, err := findRoot(g, 0, eps)
	if err != nil {
		return 0, 0, fmt.Errorf("monotonic curve at strain %g: %w", sgn*eps, err)
	}
	return sgn * monotonicStress(m, x), sgn * x, nil
}

// errNoBracket is wrapped when findRoot cannot bracket a root: g stays
// negative up to the largest finite trial point, or turns NaN.
var errNoBracket = errors.New("closed-form reference cannot be computed: no sign change of the equation")

// findRoot returns the root of an increasing g with g(lo) <= 0 (for a g
// that dips first, the crossing from below in the first bracket found), to
// the last bit, or an error wrapping errNoBracket. The upper end of the
// bracket starts at hi (lo + 1e-12 when hi <= lo) and, while g(hi) < 0,
// moves up by a width that doubles every time (lo takes the old hi), so a
// root at distance D from lo is bracketed after about log2(D/(hi - lo))
// evaluations; the search ends with an error when the trial point is no
// longer finite or g is NaN, never at a silent cap.
//
// The bracket is then shrunk until its ends are adjacent floats (or g
// vanishes). The trial point is the regula falsi point with the Illinois
// modification (the retained end's value halved when the same end is kept
// twice), which converges superlinearly, and the midpoint where that point
// leaves the bracket or where two trial points in a row failed to halve
// the bracket; so the bracket halves at least every third iteration and
// reaches adjacent floats within 3 x 2100 iterations from any finite
// bracket (2^2100 > the ratio of the largest float64 to the smallest
// subnormal). The iteration limit below is that count; reaching it is
// reported as an error.
//
// References: M. Dowell and P. Jarratt, A modified regula falsi method for
// computing the root of an equation, BIT 11, 1971 (the Illinois method).
func findRoot(g func(float64) float64, lo, hi float64) (float64, error) {
	if hi <= lo {
		hi = lo + 1e-12
	}
	glo, ghi := g(lo), g(hi)
	if math.IsNaN(glo) || glo > 0 {
		return 0, fmt.Errorf("%w: g(%g) = %g, want <= 0", errNoBracket, lo, glo)
	}
	for w := hi - lo; ghi < 0; {
		w *= 2
		lo, glo, hi = hi, ghi, hi+w
		if math.IsInf(hi, 0) {
			return 0, fmt.Errorf("%w: g is still negative (%g) at %g", errNoBracket, glo, lo)
		}
		ghi = g(hi)
	}
	if math.IsNaN(ghi) {
		return 0, fmt.Errorf("%w: g(%g) is NaN", errNoBracket, hi)
	}
	side, stale := 0, 0
	for i := 0; i < 3*2100; i++ {
		w := hi - lo
		x := lo + w/2
		if stale < 2 && glo < 0 && ghi > 0 {
			if rf := lo - glo*w/(ghi-glo); rf > lo && rf < hi {
				x = rf
			}
		}
		if x <= lo || x >= hi {
			return x, nil
		}
		gx := g(x)
		switch {
		case gx == 0:
			return x, nil
		case math.IsNaN(gx):
			return 0, fmt.Errorf("%w: g(%g) is NaN", errNoBracket, x)
		case gx < 0:
			lo, glo = x, gx
			if side < 0 {
				ghi /= 2
			}
			side = -1
		default:
			hi, ghi = x, gx
			if side > 0 {
				glo /= 2
			}
			side = 1
		}
		if hi-lo > w/2 {
			stale++
		} else {
			stale = 0
		}
	}
	return 0, fmt.Errorf("closed-form reference: root finder did not reach adjacent floats in [%g, %g]", lo, hi)
}

// tip is a uniaxial state at the end of a branch, from the branch
// solutions, with the plastic work accumulated so far.
type tip struct {
	eps, sigma, epsP, p float64
	alpha               [plastic.MaxTerms]float64
	work                float64 // integral of sigma d eps_p, J/m^3
}

func (t *tip) backStress(n int) float64 {
	a := 0.0
	for i := 0; i < n; i++ {
		a += t.alpha[i]
	}
	return a
}

var errBeyondSaturation = errors.New("stress target beyond the saturation stress")

// Branch solutions, derived here. On a monotone branch the flow direction
// n = +-1 is constant, so with dp the plastic strain accumulated on the
// branch from the state (alpha_i0, p0) the rate equations integrate to
//
//	AF:      n alpha_i = C_i/gamma_i + (n alpha_i0 - C_i/gamma_i) exp(-gamma_i dp)
//	linear:  n alpha_i = n alpha_i0 + C_i dp
//	yield:   sigma = sum alpha_i + n (sigmaY + R(p0 + dp)),  eps_p = eps_p0 + n dp
//
// (srcAF, srcPrager, srcVoce), and the plastic work on the branch,
// W = integral sigma d eps_p = integral (n alpha + sigmaY + R) dp, is
//
//	AF:      (C/gamma) dp + (n alpha_i0 - C/gamma)(1 - exp(-gamma dp))/gamma
//	linear:  n alpha_i0 dp + C dp^2/2
//	sigmaY dp + integral R: Voce Q dp - (Q/b)(exp(-b p0) - exp(-b (p0+dp))),
//	                        linear K (p0 dp + dp^2/2).
//
// A branch to a strain target solves eps_p + sigma/E = eps_target for dp,
// which is increasing in dp (the plastic modulus exceeds -E, a
// plastic.NewMaterial precondition); a branch to a stress target solves
// sigma = sigma_target, increasing in dp where the plastic modulus is
// positive (a softening card dips first, and the root is the crossing past
// the dip, which the stress-controlled increments reach too: solveStress).
// Both are solved by findRoot, independently of the integrator's
// iteration.

func branchAt(m *plastic.Material, s *tip, n, dp float64) (out tip) {
	out = *s
	w := 0.0
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		na0 := n * s.alpha[i]
		if t.Linear() {
			out.alpha[i] = s.alpha[i] + n*t.C*dp
			w += na0*dp + t.C*dp*dp/2
		} else {
			sat := t.C / t.Gamma
			e := math.Exp(-t.Gamma * dp)
			out.alpha[i] = n * (sat + (na0-sat)*e)
			w += sat*dp + (na0-sat)*-math.Expm1(-t.Gamma*dp)/t.Gamma
		}
	}
	w += m.SigmaY * dp
	switch m.Iso.Kind {
	case plastic.IsoVoce:
		q, b := m.Iso.Q, m.Iso.B
		w += q*dp - q/b*(math.Exp(-b*s.p)-math.Exp(-b*(s.p+dp)))
	case plastic.IsoLinear:
		w += m.Iso.K * (s.p*dp + dp*dp/2)
	}
	out.p = s.p + dp
	out.epsP = s.epsP + n*dp
	out.sigma = out.backStress(m.N) + n*m.YieldRadius(out.p)
	out.eps = out.epsP + out.sigma/m.E
	out.work = s.work + w
	return out
}

// branchToStrain follows a monotone strain branch from s to eps.
func branchToStrain(m *plastic.Material, s tip, eps float64) (tip, error) {
	sigTr := s.sigma + m.E*(eps-s.eps)
	xi := sigTr - s.backStress(m.N)
	if math.Abs(xi) <= m.YieldRadius(s.p) {
		s.sigma, s.eps = sigTr, eps
		return s, nil
	}
	n := math.Copysign(1, xi)
	g := func(dp float64) float64 { return n * (branchAt(m, &s, n, dp).eps - eps) }
	dp, err := findRoot(g, 0, math.Abs(eps-s.eps))
	if err != nil {
		return s, fmt.Errorf("branch solution from strain %g to %g: %w", s.eps, eps, err)
	}
	out := branchAt(m, &s, n, dp)
	out.eps = eps
	return out, nil
}

// branchToStress follows a monotone stress branch from s to sigma.
func branchToStress(m *plastic.Material, s tip, sigma float64) (tip, error) {
	xi := sigma - s.backStress(m.N)
	if math.Abs(xi) <= m.YieldRadius(s.p) {
		s.eps += (sigma - s.sigma) / m.E
		s.sigma = sigma
		return s, nil
	}
	if math.Abs(sigma) >= m.SaturationStress() {
		return s, errBeyondSaturation
	}
	n := math.Copysign(1, xi)
	g := func(dp float64) float64 { return n * (branchAt(m, &s, n, dp).sigma - sigma) }
	dp, err := findRoot(g, 0, m.SigmaY/m.E)
	if err != nil {
		return s, fmt.Errorf("branch solution from stress %g to %g Pa: %w", s.sigma, sigma, err)
	}
	out := branchAt(m, &s, n, dp)
	out.sigma = sigma
	out.eps = out.epsP + sigma/m.E
	return out, nil
}

// loopWork returns the area of the closed-in-strain cycle from a to b (a
// and b at the same strain): integral sigma d eps = W_p(b) - W_p(a) +
// (sigma_b^2 - sigma_a^2)/(2E), since sigma d eps_e = d(sigma^2/(2E)).
func loopWork(m *plastic.Material, a, b *tip) float64 {
	return b.work - a.work + (b.sigma*b.sigma-a.sigma*a.sigma)/(2*m.E)
}

// stabilizedRadius returns the yield radius k of a stabilized loop and
// whether the card has one: sigmaY without isotropic hardening, sigmaY + Q
// once Voce has saturated; none under linear isotropic hardening with K > 0.
func stabilizedRadius(m *plastic.Material) (float64, bool) {
	switch m.Iso.Kind {
	case plastic.IsoVoce:
		return m.SigmaY + m.Iso.Q, true
	case plastic.IsoLinear:
		if m.Iso.K > 0 {
			return 0, false
		}
	}
	return m.SigmaY, true
}

// stabilizedLoop returns the plastic strain range dEpsP, the stress
// amplitude sigmaA and the loop area W of the stabilized fully reversed
// loop at the strain amplitude epsA, with k the stabilized yield radius:
//
//	sigmaA = k + sum_AF (C_i/gamma_i) tanh(gamma_i dEpsP/2) + sum_lin H_i dEpsP/2
//	2 epsA = dEpsP + 2 sigmaA/E
//
// (srcChaboche for the tanh form; the linear part from srcPrager). The
// loop area, derived here by integrating sigma d eps_p around the loop
// with the branch solutions above and the symmetry alpha_desc(x) =
// -alpha_asc(-x) (linear terms contribute nothing around a closed loop):
//
//	W = 2 k dEpsP + sum_AF 2 (C_i/gamma_i) (dEpsP - (2/gamma_i) tanh(gamma_i dEpsP/2))
//
// ok is false when the loop is elastic (epsA <= k/E).
func stabilizedLoop(m *plastic.Material, k, epsA float64) (dEpsP, sigmaA, W float64, ok bool, err error) {
	if epsA*m.E <= k {
		return 0, 0, 0, false, nil
	}
	amp := func(x float64) float64 {
		s := k
		for i := 0; i < m.N; i++ {
			t := m.Terms[i]
			if t.Linear() {
				s += t.C * x / 2
			} else {
				s += t.C / t.Gamma * math.Tanh(t.Gamma*x/2)
			}
		}
		return s
	}
	dEpsP, err = findRoot(func(x float64) float64 { return x + 2*amp(x)/m.E - 2*epsA }, 0, 2*epsA)
	if err != nil {
		return 0, 0, 0, false, fmt.Errorf("stabilized loop at strain amplitude %g: %w", epsA, err)
	}
	sigmaA = amp(dEpsP)
	W = 2 * k * dEpsP
	for i := 0; i < m.N; i++ {
		if t := m.Terms[i]; !t.Linear() {
			W += 2 * t.C / t.Gamma * (dEpsP - 2/t.Gamma*math.Tanh(t.Gamma*dEpsP/2))
		}
	}
	return dEpsP, sigmaA, W, true, nil
}

// singleTermRatchet returns the ratchet strain per cycle of a card with one
// Armstrong-Frederick term, no linear term and no isotropic hardening,
// cycled in stress between sMin and sMax, from the second cycle on.
// Derived here: on the rising branch the yield condition at sMax fixes
// alpha+ = sMax - sigmaY, on the falling branch alpha- = sMin + sigmaY, the
// same every cycle. Inverting the branch solution for the plastic strain of
// each branch, with a = C/gamma,
//
//	rising:  dEpsP+ = (1/gamma) ln((a - alpha-)/(a - alpha+))
//	falling: dEpsP- = (1/gamma) ln((a + alpha+)/(a + alpha-))
//
// and the ratchet strain per cycle is their difference,
//
//	delta = (1/gamma) ln((a^2 - alpha-^2) / (a^2 - alpha+^2)).
//
// ok is false when the card has another shape or a branch stays elastic.
func singleTermRatchet(m *plastic.Material, sMin, sMax float64) (float64, bool) {
	if m.N != 1 || m.Terms[0].Linear() || m.Iso.Kind != plastic.IsoNone || sMax-sMin <= 2*m.SigmaY {
		return 0, false
	}
	t := m.Terms[0]
	a := t.C / t.Gamma
	ap, am := sMax-m.SigmaY, sMin+m.SigmaY
	if math.Abs(ap) >= a || math.Abs(am) >= a {
		return 0, false
	}
	return math.Log((a*a-am*am)/(a*a-ap*ap)) / t.Gamma, true
}

// allLinear reports whether every back-stress term is linear (Prager) and
// there is no isotropic hardening, the shape for which loops close in one
// cycle and ratcheting shakes down at once.
func allLinear(m *plastic.Material) bool {
	if m.Iso.Kind != plastic.IsoNone || m.N == 0 {
		return false
	}
	for i := 0; i < m.N; i++ {
		if !m.Terms[i].Linear() {
			return false
		}
	}
	return true
}

// noLinear reports whether the card has no linear term (every kinematic
// term saturates).
func noLinear(m *plastic.Material) bool {
	for i := 0; i < m.N; i++ {
		if m.Terms[i].Linear() {
			return false
		}
	}
	return true
}
