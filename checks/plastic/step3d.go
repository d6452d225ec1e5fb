package plastic

import "math"

// Voigt order of every 6-vector in this package: 11, 22, 33, 23, 13, 12.
const (
	V11 = iota
	V22
	V33
	V23
	V13
	V12
)

// State3D is the 3D state. Stress-like vectors (Sigma, X) hold tensor
// components; strain-like vectors (Eps, EpsP) hold engineering shear strains
// (gamma_ij = 2 eps_ij) in the shear slots, so that sigma . eps (plain dot
// product) is the double contraction sigma : eps.
type State3D struct {
	Eps   [6]float64           // total strain, engineering shear
	EpsP  [6]float64           // plastic strain, engineering shear
	Sigma [6]float64           // stress, Pa
	X     [MaxTerms][6]float64 // back stress of each term (deviatoric), Pa
	P     float64              // accumulated plastic strain, dp = sqrt(2/3 d eps_p : d eps_p)
}

// BackStress returns X = sum of the n first terms' back stresses.
func (s *State3D) BackStress(n int) [6]float64 {
	var x [6]float64
	for i := 0; i < n; i++ {
		for k := 0; k < 6; k++ {
			x[k] += s.X[i][k]
		}
	}
	return x
}

// Deviator returns the deviatoric part of a stress-like 6-vector.
func Deviator(a [6]float64) [6]float64 {
	p := (a[0] + a[1] + a[2]) / 3
	a[0] -= p
	a[1] -= p
	a[2] -= p
	return a
}

// Contract returns the double contraction a : b of two stress-like
// (tensor-component) 6-vectors: sum of the normal products plus twice the
// shear products.
func Contract(a, b [6]float64) float64 {
	return a[0]*b[0] + a[1]*b[1] + a[2]*b[2] + 2*(a[3]*b[3]+a[4]*b[4]+a[5]*b[5])
}

// VonMises returns the von Mises equivalent stress sqrt(3/2 s : s) of a
// stress 6-vector, s its deviator.
func VonMises(sigma [6]float64) float64 {
	s := Deviator(sigma)
	return math.Sqrt(1.5 * Contract(s, s))
}

// Yield3D returns the yield function of s,
//
//	f = sqrt(3/2 (s - X) : (s - X)) - (sigmaY + R(p)),
//
// s the stress deviator and X the total back stress.
func (m *Material) Yield3D(s *State3D) float64 {
	xi := Deviator(s.Sigma)
	x := s.BackStress(m.N)
	for k := range xi {
		xi[k] -= x[k]
	}
	return math.Sqrt(1.5*Contract(xi, xi)) - m.YieldRadius(s.P)
}

// Dissipation3D returns the intrinsic plastic dissipation of the step from
// prev to next, evaluated with the end state:
//
//	dD = (sigma - X) : d eps_p - R dp + sum_i (3 gamma_i / (2 C_i)) X_i : X_i dp
//
// the 3D form of Dissipation1D (same reference); it reduces to the 1D value
// for uniaxial stress.
func (m *Material) Dissipation3D(prev, next *State3D) float64 {
	dp := next.P - prev.P
	x := next.BackStress(m.N)
	d := -m.R(next.P) * dp
	for k := 0; k < 6; k++ {
		d += (next.Sigma[k] - x[k]) * (next.EpsP[k] - prev.EpsP[k])
	}
	for i := 0; i < m.N; i++ {
		if t := m.Terms[i]; t.Gamma != 0 {
			d += 1.5 * t.Gamma / t.C * Contract(next.X[i], next.X[i]) * dp
		}
	}
	return d
}

// ElasticStiffness returns the isotropic elastic stiffness in this package's
// Voigt convention (engineering shear strain): sigma = D eps.
func (m *Material) ElasticStiffness() [6][6]float64 {
	var d [6][6]float64
	lam := m.bulk - 2*m.g/3
	for i := 0; i < 3; i++ {
		for j := 0; j < 3; j++ {
			d[i][j] = lam
		}
		d[i][i] += 2 * m.g
		d[i+3][i+3] = m.g
	}
	return d
}

// Step3D integrates the strain increment dEps (engineering shear) from src
// and writes the end state to dst (dst may be src) and, when D is not nil,
// the consistent tangent d sigma / d eps to D. It does not allocate.
//
// Radial return. With the trial deviator s_tr = dev(sigma_n) + 2G dev(dEps),
// unit normal nHat and dp >= 0, the flow rule d eps_p = sqrt(3/2) dp nHat
// and the back-stress rule dX_i = (2/3) C_i d eps_p - gamma_i X_i dp give,
// for a normal held fixed over the increment,
//
//	Exact:          X_i = e_i X_i,n + sqrt(2/3) (C_i/gamma_i)(1 - e_i) nHat,  e_i = exp(-gamma_i dp)
//	BackwardEuler:  X_i = q_i (X_i,n + sqrt(2/3) C_i dp nHat),               q_i = 1/(1 + gamma_i dp)
//	linear terms:   X_i = X_i,n + sqrt(2/3) C_i dp nHat   (both)
//
// so that xi = s - X is parallel to xiT(dp) = s_tr - sum_i phi_i X_i,n
// (phi_i = e_i, q_i or 1) and the consistency condition is one scalar
// equation
//
//	r(dp) = sqrt(3/2) |xiT(dp)| - 3G dp - sum_i psi_i(dp) - (sigmaY + R(p_n + dp)) = 0
//
// with psi_i = (C_i/gamma_i)(1 - e_i) (Exact), C_i dp q_i (BackwardEuler) or
// C_i dp (linear). It is evaluated as the trial value plus the changes
// since dp = 0 (see returnMap), so that it keeps its relative accuracy
// however small dp is, and solved by a bracketed Newton iteration until r
// is at the round-off floor of its terms, the Newton correction is below
// 2^-52 dp, or the bracket has closed. Then nHat = xiT/|xiT|, s = s_tr - sqrt(6) G dp nHat, and the
// consistent tangent is
//
//	D = K 1(x)1 + 2G (1 - theta) I_dev + 2G theta nHat(x)nHat - (6 G^2 / Dr) (nHat + c w) (x) nHat
//	theta = sqrt(6) G dp / |xiT|,  c = dp / |xiT|,  v = -d xiT/d dp,
//	w = v - (nHat : v) nHat,       Dr = -r'(dp) = 3G + sum psi_i' + R' - sqrt(3/2) nHat : v,
//
// derived here by differentiating r = 0 and the stress update (it is
// non-symmetric when several Armstrong-Frederick terms have different
// gamma). For BackwardEuler this is the multi-term radial return of
// Kobayashi and Ohno. For Exact the update is the exact solution of the
// rate equations whenever stress, back stresses and the strain increment
// are coaxial (then the normal does not turn, and one step is taken). On
// other increments the normal turns and the single return is first order;
// the increment is then integrated with one, two and four returns, the two
// Richardson extrapolants 2 y(h/2) - y(h) and 2 y(h/4) - y(h/2) are compared
// and the increment is halved until they agree within Settings.SubstepTol;
// their third-order combination (4 R2 - R1)/3 is accepted and returned to
// the yield surface at fixed total strain (extrapolation leaves it
// slightly). References for the extrapolation: Richardson 1911, Romberg
// 1955 (any numerical-analysis text, e.g. Hairer, Norsett and Wanner,
// Solving Ordinary Differential Equations I, 1993, sec. II.9). D is then
// the tangent of the first single return over the last accepted substep: an
// approximation of the tangent of the composite map, good enough for the
// mixed-control Newton (which converges on the stress residual, not on D).
//
// References:
//   - J. C. Simo and T. J. R. Hughes, Computational Inelasticity, 1998,
//     ch. 3 (radial return, consistent tangent).
//   - M. Kobayashi and N. Ohno, Implementation of cyclic plasticity models
//     based on a general form of kinematic hardening, Int. J. Numer. Meth.
//     Engng 53, 2002 (scalar equation for the multi-term return).
//   - J.-L. Chaboche, A review of some plasticity and viscoplasticity
//     constitutive theories, Int. J. Plasticity 24, 2008 (the rules).
func (m *Material) Step3D(dst, src *State3D, dEps [6]float64, D *[6][6]float64, set *Settings) (StepInfo, error) {
	m.mustBeValid()
	for _, v := range dEps {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return StepInfo{}, ErrInvalidInput
		}
	}
	alg := set.alg()
	maxIter := set.maxIter()
	if alg == BackwardEuler || m.proportional(src, &dEps) {
		return m.radialReturn(dst, src, &dEps, D, alg, maxIter)
	}
	var info StepInfo
	err := m.substep(dst, src, &dEps, D, maxIter, set.substepTol()*m.SigmaY, set.maxDepth(), &info)
	return info, err
}

// substep integrates dEps with the Exact return. It compares one step, two
// half steps and four quarter steps: with local errors c2 h^2 + c3 h^3 + ...
// the extrapolants R1 = 2 y(h/2) - y(h) and R2 = 2 y(h/4) - y(h/2) cancel
// the h^2 term and (4 R2 - R1)/3 the h^3 term (a Romberg table). That value,
// returned to the yield surface at fixed total strain, is accepted when
// |R2 - R1| <= tol; otherwise the increment is halved.
func (m *Material) substep(dst, src *State3D, dEps *[6]float64, D *[6][6]float64, maxIter int, tol float64, depth int, info *StepInfo) error {
	var y1, y2, y4 State3D
	fi, err := m.radialReturn(&y1, src, dEps, D, Exact, maxIter)
	info.Iterations += fi.Iterations
	info.Substeps++
	if err != nil {
		return err
	}
	if !fi.Plastic {
		// An elastic full step is exact: the trial path is a segment and the
		// elastic domain is convex.
		*dst = y1
		return nil
	}
	ok := m.uniform(&y2, src, dEps, 2, maxIter, info) == nil && m.uniform(&y4, src, dEps, 4, maxIter, info) == nil
	if ok {
		r1 := m.combine(&y2, &y1, 2, -1)
		r2 := m.combine(&y4, &y2, 2, -1)
		if m.stateDiff(&r1, &r2) <= tol {
			r3 := m.combine(&r2, &r1, 4.0/3, -1.0/3)
			var zero [6]float64
			pi, err := m.returnMap(dst, &r3, &zero, nil, Exact, maxIter, true)
			info.Iterations += pi.Iterations
			if err != nil {
				*dst = y4
			}
			info.Plastic = true
			info.DP += dst.P - src.P
			return nil
		}
	}
	if depth <= 0 {
		return ErrNotConverged
	}
	var h [6]float64
	for k := range h {
		h[k] = 0.5 * dEps[k]
	}
	var mid State3D
	// Each half gets half the tolerance, so that the errors of the accepted
	// substeps add up to at most tol over the increment.
	if err := m.substep(&mid, src, &h, nil, maxIter, tol/2, depth-1, info); err != nil {
		return err
	}
	return m.substep(dst, &mid, &h, D, maxIter, tol/2, depth-1, info)
}

// uniform integrates dEps in n equal Exact steps without error control.
func (m *Material) uniform(dst, src *State3D, dEps *[6]float64, n int, maxIter int, info *StepInfo) error {
	var h [6]float64
	for k := range h {
		h[k] = dEps[k] / float64(n)
	}
	*dst = *src
	for i := 0; i < n; i++ {
		si, err := m.radialReturn(dst, dst, &h, nil, Exact, maxIter)
		info.Iterations += si.Iterations
		info.Substeps++
		if err != nil {
			return err
		}
	}
	return nil
}

// combine returns ca a + cb b for the evolving fields (the total strain of
// a is kept; a and b share it).
func (m *Material) combine(a, b *State3D, ca, cb float64) State3D {
	out := *a
	for k := 0; k < 6; k++ {
		out.Sigma[k] = ca*a.Sigma[k] + cb*b.Sigma[k]
		out.EpsP[k] = ca*a.EpsP[k] + cb*b.EpsP[k]
		for i := 0; i < m.N; i++ {
			out.X[i][k] = ca*a.X[i][k] + cb*b.X[i][k]
		}
	}
	out.P = ca*a.P + cb*b.P
	return out
}

// stateDiff returns the max-norm difference of stress and back stresses.
func (m *Material) stateDiff(a, b *State3D) float64 {
	d := 0.0
	for k := 0; k < 6; k++ {
		d = math.Max(d, math.Abs(a.Sigma[k]-b.Sigma[k]))
		for i := 0; i < m.N; i++ {
			d = math.Max(d, math.Abs(a.X[i][k]-b.X[i][k]))
		}
	}
	return d
}

// proportional reports whether the stress deviator, every back stress and
// the deviatoric strain increment of a step are coaxial (all parallel to
// one deviator, to round-off), so that the Exact return needs no substeps.
func (m *Material) proportional(s *State3D, dEps *[6]float64) bool {
	var de [6]float64
	tr := (dEps[0] + dEps[1] + dEps[2]) / 3
	de[0], de[1], de[2] = dEps[0]-tr, dEps[1]-tr, dEps[2]-tr
	de[3], de[4], de[5] = 0.5*dEps[3], 0.5*dEps[4], 0.5*dEps[5]
	sd := Deviator(s.Sigma)
	u, uu := sd, Contract(sd, sd)
	if dd := Contract(de, de); dd > uu {
		u, uu = de, dd
	}
	if uu == 0 {
		return true
	}
	const sin2 = 1e-14 // squared sine of the angle allowed: round-off of the Gram determinant is ~1e-16
	par := func(a [6]float64) bool {
		aa := Contract(a, a)
		au := Contract(a, u)
		return aa*uu-au*au <= sin2*aa*uu
	}
	if !par(sd) || !par(de) {
		return false
	}
	for i := 0; i < m.N; i++ {
		if !par(s.X[i]) {
			return false
		}
	}
	return true
}

// radialReturn is one return mapping over dEps with the given algorithm.
func (m *Material) radialReturn(dst, src *State3D, dEps *[6]float64, D *[6][6]float64, alg Algorithm, maxIter int) (StepInfo, error) {
	return m.returnMap(dst, src, dEps, D, alg, maxIter, false)
}

// returnMap is radialReturn; with project set it returns src to the yield
// surface with a signed dp (zero strain increment expected), for the
// correction after Richardson extrapolation.
func (m *Material) returnMap(dst, src *State3D, dEps *[6]float64, D *[6][6]float64, alg Algorithm, maxIter int, project bool) (StepInfo, error) {
	G, K := m.g, m.bulk
	tr := dEps[0] + dEps[1] + dEps[2]
	var sTr [6]float64
	var sig [6]float64
	lam := K - 2*G/3
	for k := 0; k < 3; k++ {
		sig[k] = src.Sigma[k] + lam*tr + 2*G*dEps[k]
		sig[k+3] = src.Sigma[k+3] + G*dEps[k+3]
	}
	pTr := (sig[0] + sig[1] + sig[2]) / 3
	sTr = sig
	sTr[0] -= pTr
	sTr[1] -= pTr
	sTr[2] -= pTr

	// xiTr = s_tr - X_n, the trial relative stress.
	xiTr := sTr
	for i := 0; i < m.N; i++ {
		x := &src.X[i]
		for k := 0; k < 6; k++ {
			xiTr[k] -= x[k]
		}
	}
	const s32 = 1.2247448713915890491 // sqrt(3/2)
	// R(p) and R'(p); eP = exp(-B p) is kept for the Voce factor.
	voce := m.Iso.Kind == IsoVoce
	var rP, r1, eP float64
	if voce {
		eP = math.Exp(-m.Iso.B * src.P)
		rP, r1 = m.Iso.Q*(1-eP), m.Iso.Q*m.Iso.B*eP
	} else if m.Iso.Kind == IsoLinear {
		rP, r1 = m.Iso.K*src.P, m.Iso.K
	}
	f := s32*math.Sqrt(Contract(xiTr, xiTr)) - (m.SigmaY + rP)
	if !(f > 0) && !(project && f < 0) {
		if math.IsNaN(f) {
			return StepInfo{}, ErrInvalidInput
		}
		*dst = *src
		for k := 0; k < 6; k++ {
			dst.Eps[k] += dEps[k]
		}
		dst.Sigma = sig
		if D != nil {
			*D = m.ElasticStiffness()
		}
		return StepInfo{Substeps: 1}, nil
	}
	exact := alg == Exact
	// The residual is written as the trial value f plus the changes since
	// dp = 0, so that it keeps its relative accuracy however small dp is:
	//
	//	r(dp) = f + sqrt(3/2) (|xiT(dp)| - |xiTr|) - k0 dp - dR(dp) - sum_AF psi_i(dp)
	//
	// with xiT(dp) = xiTr + d, d = -sum_AF (phi_i - 1) X_i,n, the norm
	// difference evaluated as (2 xiTr : d + d : d) / (|xiT| + |xiTr|), k0 =
	// 3G + sum H + K, dR = R(p + dp) - R(p) and psi_i as documented.
	// phiM[j] carries phi_j - 1 at the current dp.
	var phiM, nX [MaxTerms]float64
	var xiT, v [6]float64
	nTr := math.Sqrt(Contract(xiTr, xiTr))
	nxi := nTr
	kLin := 0.0
	if m.Iso.Kind == IsoLinear {
		kLin = m.Iso.K
	}
	k0 := 3*G + m.hLin + kLin
	for j := 0; j < m.nAF; j++ {
		x := &src.X[m.af[j]]
		nX[j] = math.Sqrt(Contract(*x, *x))
	}
	wm := 0.0 // Voce: exp(-B dp) - 1 at the current dp
	// eval moves dp by delta, updates phiM, xiT, v, nxi and returns r,
	// Dr = -r' and the round-off floor of r (the sum of the magnitudes of
	// its terms).
	eval := func(dp, delta float64) (r, dr, floor float64) {
		var d [6]float64
		v = [6]float64{}
		ld := k0 * dp
		r = f - ld
		floor = math.Abs(f) + math.Abs(ld)
		dr = k0
		if voce {
			wm = moveExpm1(wm, m.Iso.B, dp, delta)
			dR := -m.Iso.Q * eP * wm
			r -= dR
			floor += math.Abs(dR)
			dr += m.Iso.Q * m.Iso.B * eP * (1 + wm)
		}
		for j := 0; j < m.nAF; j++ {
			c, gam := m.afC[j], m.afG[j]
			x := &src.X[m.af[j]]
			var pm, dph, psi float64 // phi - 1, -phi', psi
			if exact {
				phiM[j] = moveExpm1(phiM[j], gam, dp, delta)
				pm = phiM[j]
				dph = gam * (1 + pm)
				psi = -m.afA[j] * pm
				dr += c * (1 + pm)
			} else {
				q := 1 / (1 + gam*dp)
				pm = -gam * dp * q
				phiM[j] = pm
				dph = gam * q * q
				psi = c * dp * q
				dr += c * q * q
			}
			r -= psi
			floor += math.Abs(psi) + s32*math.Abs(pm)*nX[j]
			for k := 0; k < 6; k++ {
				d[k] -= pm * x[k]
				v[k] += dph * x[k]
			}
		}
		for k := 0; k < 6; k++ {
			xiT[k] = xiTr[k] + d[k]
		}
		nxi = math.Sqrt(Contract(xiT, xiT))
		if den := nxi + nTr; den > 0 {
			r += s32 * (2*Contract(xiTr, d) + Contract(d, d)) / den
		}
		dr -= s32 * Contract(xiT, v) / nxi
		return r, dr, floor
	}

	// r and -r' at dp = 0 (phi = 1, the same for both algorithms).
	dp := 0.0
	xiT = xiTr
	r := f
	dr := k0 + r1 - kLin
	for j := 0; j < m.nAF; j++ {
		dr += m.afC[j]
		x := &src.X[m.af[j]]
		for k := 0; k < 6; k++ {
			v[k] += m.afG[j] * x[k]
		}
	}
	dr -= s32 * Contract(xiTr, v) / nTr
	lo, hi := 0.0, math.Inf(1)
	if project {
		lo = math.Inf(-1)
	}
	it := 0
	converged := false
	// Round-off of r: 2 u per term and operation, with room for the norm
	// difference and the accumulated exponentials.
	floorC := float64(2*m.nAF+8) * u
	for it < maxIter {
		it++
		step := r / dr
		next := dp + step
		if project {
			if !(dr > 0) || math.IsInf(next, 0) || math.IsNaN(next) {
				break
			}
		} else if !(dr > 0) || !(next > lo && next < hi) {
			if math.IsInf(hi, 1) {
				next = 2*lo + math.Abs(step)
			} else {
				next = 0.5 * (lo + hi)
			}
		}
		delta := next - dp
		dp = next
		var floor float64
		r, dr, floor = eval(dp, delta)
		if math.IsNaN(r) {
			break
		}
		if r > 0 {
			lo = dp
		} else {
			hi = dp
		}
		// Converged when r is at the round-off floor of its terms, when
		// the Newton correction is below the resolution of dp, or when the
		// bracket has closed.
		if math.Abs(r) <= floorC*floor || math.Abs(r) <= 0x1p-52*math.Abs(dp)*dr || (hi < math.MaxFloat64 && hi-lo <= 0x1p-51*math.Abs(hi)) {
			converged = true
			break
		}
	}
	if !converged || !(dr > 0) || !(nxi > 0) || math.IsNaN(dp) {
		return StepInfo{Iterations: it, Substeps: 1}, ErrNotConverged
	}
	var nh [6]float64
	for k := 0; k < 6; k++ {
		nh[k] = xiT[k] / nxi
	}
	const s23 = 0.81649658092772603273 // sqrt(2/3)
	const s6 = 2.4494897427831780982   // sqrt(6)
	if dst != src {
		*dst = *src
	}
	out := dst
	for j := 0; j < m.nLin; j++ {
		i := m.lin[j]
		c := s23 * m.Terms[i].C * dp
		for k := 0; k < 6; k++ {
			out.X[i][k] += c * nh[k]
		}
	}
	for j := 0; j < m.nAF; j++ {
		i := m.af[j]
		t := m.Terms[i]
		ph := 1 + phiM[j]
		if exact {
			c := s23 * t.C / t.Gamma * (1 - ph)
			for k := 0; k < 6; k++ {
				out.X[i][k] = ph*out.X[i][k] + c*nh[k]
			}
		} else {
			c := s23 * t.C * dp
			for k := 0; k < 6; k++ {
				out.X[i][k] = ph * (out.X[i][k] + c*nh[k])
			}
		}
	}
	sd := s6 * G * dp
	for k := 0; k < 6; k++ {
		out.Sigma[k] = sTr[k] - sd*nh[k]
		out.Eps[k] += dEps[k]
	}
	for k := 0; k < 3; k++ {
		out.Sigma[k] += pTr
		out.EpsP[k] += s32 * dp * nh[k]
		out.EpsP[k+3] += 2 * s32 * dp * nh[k+3]
	}
	out.P += dp

	if D != nil {
		theta := sd / nxi
		c := dp / nxi
		nv := Contract(nh, v)
		var a [6]float64 // nHat + c w
		for k := 0; k < 6; k++ {
			a[k] = nh[k] + c*(v[k]-nv*nh[k])
		}
		lam := K - 2*G*(1-theta)/3
		g2 := 2 * G * (1 - theta)
		b := 6 * G * G / dr
		for i := 0; i < 6; i++ {
			for j := 0; j < 6; j++ {
				D[i][j] = (2*G*theta)*nh[i]*nh[j] - b*a[i]*nh[j]
			}
		}
		for i := 0; i < 3; i++ {
			for j := 0; j < 3; j++ {
				D[i][j] += lam
			}
			D[i][i] += g2
			D[i+3][i+3] += 0.5 * g2
		}
	}
	return StepInfo{Plastic: true, DP: dp, Iterations: it, Substeps: 1}, nil
}
