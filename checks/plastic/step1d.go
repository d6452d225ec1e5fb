package plastic

import "math"

// State1D is the uniaxial-stress state. It is a plain value; copy it to keep
// a history.
type State1D struct {
	Eps   float64           // total strain
	EpsP  float64           // plastic strain
	P     float64           // accumulated plastic strain, p = integral |d eps_p|
	Sigma float64           // stress, Pa
	Alpha [MaxTerms]float64 // back stress of each term, Pa; alpha = sum Alpha[:N]
}

// BackStress returns alpha = sum of the n first terms' back stresses.
func (s *State1D) BackStress(n int) float64 {
	a := 0.0
	for i := 0; i < n; i++ {
		a += s.Alpha[i]
	}
	return a
}

// Yield1D returns the yield function of s,
//
//	f = |sigma - alpha| - (sigmaY + R(p)),
//
// negative inside the elastic domain and zero (to round-off) after a plastic
// step.
func (m *Material) Yield1D(s *State1D) float64 {
	return math.Abs(s.Sigma-s.BackStress(m.N)) - m.YieldRadius(s.P)
}

// Dissipation1D returns the intrinsic plastic dissipation of the step from
// prev to next, evaluated with the end state (backward rectangle rule):
//
//	dD = (sigma - alpha) d eps_p - R dp + sum_i (gamma_i/C_i) alpha_i^2 dp
//
// This is the Clausius-Duhem dissipation of the Armstrong-Frederick model
// with the energy of the isotropic hardening counted as stored; at
// consistency it equals sigmaY dp + sum_i (gamma_i/C_i) alpha_i^2 dp >= 0. It
// turns negative when the flow direction opposes sigma - alpha.
//
// References:
//   - J. Lemaitre and J.-L. Chaboche, Mechanics of Solid Materials, 1990,
//     ch. 5 (thermodynamics of the nonlinear kinematic rule; from memory,
//     no equation number).
func (m *Material) Dissipation1D(prev, next *State1D) float64 {
	dEpsP := next.EpsP - prev.EpsP
	dp := next.P - prev.P
	d := (next.Sigma-next.BackStress(m.N))*dEpsP - m.R(next.P)*dp
	for i := 0; i < m.N; i++ {
		if t := m.Terms[i]; t.Gamma != 0 {
			d += t.Gamma / t.C * next.Alpha[i] * next.Alpha[i] * dp
		}
	}
	return d
}

// Step1D integrates the strain increment dEps from src and writes the end
// state to dst (dst may be src). It does not allocate.
//
// Elastic predictor sigma_tr = sigma_n + E dEps; if |sigma_tr - alpha_n| <=
// sigmaY + R(p_n) the step is elastic. Otherwise, with n = sign(sigma_tr -
// alpha_n), the plastic increment dp >= 0 solves the consistency condition
//
//	g(dp) = n sigma_tr - E dp - n sum_i alpha_i(dp) - sigmaY - R(p_n + dp) = 0
//
// with, for Exact (closed form of d alpha_i = C_i n dp - gamma_i alpha_i dp
// at fixed n),
//
//	alpha_i(dp) = n C_i/gamma_i + (alpha_i,n - n C_i/gamma_i) exp(-gamma_i dp)   (AF)
//	alpha_i(dp) = alpha_i,n + n C_i dp                                           (linear)
//
// and, for BackwardEuler (alpha_i,n+1 = alpha_i,n + C_i n dp - gamma_i
// alpha_i,n+1 dp, solved for alpha_i,n+1),
//
//	alpha_i(dp) = (alpha_i,n + n C_i dp) / (1 + gamma_i dp).
//
// R is the closed form in both. g is decreasing (g' = -(E + h) with the
// plastic modulus h > -E by the NewMaterial preconditions) and g(0) = f_tr
// > 0. g is evaluated as the trial value minus the changes since dp = 0,
//
//	g(dp) = f_tr - (E + sum H + K) dp - (R(p_n + dp) - R(p_n)) - n sum_AF (alpha_i(dp) - alpha_i,n)
//
// with the exponentials carried as exp(-gamma dp) - 1, so that g keeps its
// relative accuracy however small dp is (a trial state one ulp outside the
// surface gives dp ~ 1e-19). dp is found by Halley's method from dp = 0,
// kept inside a bracket [lo, hi] that every evaluation narrows (bisection
// when an iterate leaves it), until |g| is at the round-off floor of its
// terms ((2 N_AF + 6) u times the sum of their magnitudes), or the Newton
// correction |g/g'| is below 2^-52 dp, or the bracket has closed to 2^-51
// relative. Without Armstrong-Frederick terms and Voce hardening g is
// linear and dp = f_tr / (E + sum H + K) at once. Then
//
//	sigma = sigma_tr - n E dp,  eps_p += n dp,  p += dp,
//	tangent = E h / (E + h),    h = -g'(dp) - E,
//
// which is the exact derivative d sigma/d eps of the algorithm (consistent
// tangent) for both algorithms. Exact gives the solution of the rate
// equations for a strain increment linear in time, independent of the
// increment size: within a monotone increment n is constant and the state
// depends on dp alone. The only failure is non-convergence, reported as
// ErrNotConverged with dst unchanged.
//
// References:
//   - W. Prager, A new method of analyzing stresses and strains in
//     work-hardening plastic solids, J. Appl. Mech. 23, 1956.
//   - P. J. Armstrong and C. O. Frederick, A mathematical representation of
//     the multiaxial Bauschinger effect, CEGB report RD/B/N731, 1966.
//   - E. Voce, The relationship between stress and strain for homogeneous
//     deformation, J. Inst. Metals 74, 1948.
//   - J. C. Simo and T. J. R. Hughes, Computational Inelasticity, 1998,
//     ch. 1 (1D return mapping and its algorithmic tangent).
func (m *Material) Step1D(dst, src *State1D, dEps float64, set *Settings) (StepInfo, error) {
	m.mustBeValid()
	s := src // read from src; written through dst at the end (dst may be src)
	sigTr := s.Sigma + m.E*dEps
	xi := sigTr - s.BackStress(m.N)
	// R and its derivatives at p; eP = exp(-B p) is kept for the Voce
	// factor of the iterations.
	voce := m.Iso.Kind == IsoVoce
	var r0, r1, r2, eP float64
	if voce {
		eP = math.Exp(-m.Iso.B * s.P)
		r0 = m.Iso.Q * (1 - eP)
		r1 = m.Iso.Q * m.Iso.B * eP
		r2 = -r1 * m.Iso.B
	} else if m.Iso.Kind == IsoLinear {
		r0, r1 = m.Iso.K*s.P, m.Iso.K
	}
	f := math.Abs(xi) - (m.SigmaY + r0)
	if !(f > 0) {
		if math.IsNaN(f) {
			return StepInfo{}, ErrInvalidInput
		}
		if dst != src {
			*dst = *src
		}
		dst.Eps += dEps
		dst.Sigma = sigTr
		return StepInfo{Substeps: 1, Tangent: m.E}, nil
	}
	n := 1.0
	if xi < 0 {
		n = -1
	}
	exact := set.alg() == Exact

	// Per-term constants: nAlpha = n alpha_n; b = n alpha_n - C/gamma
	// (Exact) or C - gamma n alpha_n (BackwardEuler); em = exp(-gamma dp) - 1
	// (Exact) or 1/(1 + gamma dp) (BackwardEuler) at the current dp.
	var nAlpha, b, em [MaxTerms]float64
	nAF := m.nAF
	for j := 0; j < nAF; j++ {
		nAlpha[j] = n * s.Alpha[m.af[j]]
		if exact {
			b[j] = nAlpha[j] - m.afA[j]
		} else {
			b[j] = m.afC[j] - m.afG[j]*nAlpha[j]
			em[j] = 1
		}
	}
	kLin := 0.0
	if m.Iso.Kind == IsoLinear {
		kLin = m.Iso.K
	}
	// k0 dp is the part of the residual linear in dp.
	k0 := m.E + m.hLin + kLin
	// Voce: R(p + dp) - R(p) = -Q exp(-B p) (exp(-B dp) - 1); wm carries
	// exp(-B dp) - 1 at the current dp.
	wm := 0.0

	dp := 0.0
	it := 0
	// g' at dp = 0, the same for both algorithms; r1 = R'(p) includes the
	// linear isotropic modulus.
	g1 := -m.E - m.hLin - r1
	for j := 0; j < nAF; j++ {
		g1 -= m.afC[j] - m.afG[j]*nAlpha[j]
	}
	if m.linear {
		// No AF term, no Voce: g is linear in dp and one step is exact.
		dp = -f / g1
		it = 1
	} else {
		// g'' at dp = 0: twice as large for backward Euler.
		g := f
		g2 := -r2
		c2 := 1.0
		if !exact {
			c2 = 2
		}
		for j := 0; j < nAF; j++ {
			g2 += c2 * m.afG[j] * (m.afC[j] - m.afG[j]*nAlpha[j])
		}
		lo, hi := 0.0, math.Inf(1)
		maxIter := set.maxIter()
		converged := false
		for it < maxIter {
			it++
			// Halley step; Newton where the Halley denominator is unsafe.
			den := 2*g1*g1 - g*g2
			var step float64
			if den > 0 {
				step = -2 * g * g1 / den
			} else {
				step = -g / g1
			}
			next := dp + step
			if !(next > lo && next < hi) {
				if math.IsInf(hi, 1) {
					next = 2*lo + math.Abs(step)
				} else {
					next = 0.5 * (lo + hi)
				}
			}
			delta := next - dp
			dp = next

			// g, g', g'' at dp, as the trial value f minus the changes
			// since dp = 0, so that g keeps its relative accuracy however
			// small dp is; floor sums the magnitudes of the terms, whose
			// round-off bounds the accuracy g can reach.
			ld := k0 * dp
			g = f - ld
			floor := math.Abs(f) + ld
			g1 = -k0
			g2 = 0
			if voce {
				wm = moveExpm1(wm, m.Iso.B, dp, delta)
				dR := -m.Iso.Q * eP * wm
				g -= dR
				floor += math.Abs(dR)
				qb := m.Iso.Q * m.Iso.B * eP * (1 + wm)
				g1 -= qb
				g2 += qb * m.Iso.B
			}
			if exact {
				for j := 0; j < nAF; j++ {
					gam := m.afG[j]
					em[j] = moveExpm1(em[j], gam, dp, delta)
					// n alpha - n alpha_n = b (exp(-gamma dp) - 1)
					da := b[j] * em[j]
					g -= da
					floor += math.Abs(da)
					be := b[j] * (1 + em[j])
					g1 += gam * be
					g2 -= gam * gam * be
				}
			} else {
				for j := 0; j < nAF; j++ {
					q := 1 / (1 + m.afG[j]*dp)
					em[j] = q
					// n alpha - n alpha_n = (C - gamma n alpha_n) dp q
					cq := b[j] * q
					da := cq * dp
					g -= da
					floor += math.Abs(da)
					g1 -= cq * q
					g2 += 2 * m.afG[j] * cq * q * q
				}
			}
			if math.IsNaN(g) {
				break
			}
			if g > 0 {
				lo = dp
			} else {
				hi = dp
			}
			// Converged when g is at the round-off floor of its terms
			// (2 u per term and operation, with the factor 2 for the
			// accumulated exponentials), when the Newton correction is
			// below the resolution of dp, or when the bracket has closed.
			if math.Abs(g) <= float64(2*nAF+6)*u*floor || math.Abs(g) <= -0x1p-52*dp*g1 || (hi < math.MaxFloat64 && hi-lo <= 0x1p-51*hi) {
				converged = true
				break
			}
		}
		if !converged {
			return StepInfo{Iterations: it, Substeps: 1}, ErrNotConverged
		}
	}
	if !(g1 < 0) || !(dp > 0) || math.IsInf(dp, 0) {
		return StepInfo{Iterations: it, Substeps: 1}, ErrNotConverged
	}

	// Write the state at dp (em holds the factors at this dp).
	p0 := s.P
	if dst != src {
		*dst = *src
	}
	for j := 0; j < m.nLin; j++ {
		i := m.lin[j]
		dst.Alpha[i] += n * m.Terms[i].C * dp
	}
	for j := 0; j < nAF; j++ {
		i := m.af[j]
		if exact {
			dst.Alpha[i] += n * b[j] * em[j]
		} else {
			dst.Alpha[i] = (dst.Alpha[i] + n*m.afC[j]*dp) * em[j]
		}
	}
	dst.Eps += dEps
	dst.EpsP += n * dp
	dst.P = p0 + dp
	dst.Sigma = sigTr - n*m.E*dp
	h := -g1 - m.E
	return StepInfo{Plastic: true, DP: dp, Iterations: it, Substeps: 1, Tangent: m.E * h / (m.E + h)}, nil
}
