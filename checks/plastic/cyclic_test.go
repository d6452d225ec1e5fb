package plastic

import (
	"context"
	"math"
	"testing"
)

// TestPragerBauschinger: after loading to sigma_max and unloading, a linear
// kinematic material yields again at sigma_max - 2 sigmaY.
//
// Source: Prager 1956; Lubliner, Plasticity Theory, 1990, ch. 3 (Bauschinger
// effect of linear kinematic hardening: the elastic range 2 sigmaY
// translates with the back stress alpha = sigma_max - sigmaY).
func TestPragerBauschinger(t *testing.T) {
	m := mustMaterial(t, []Term{{C: 10e9}}, Isotropic{})
	const sigmaMax = 400e6
	rev := sigmaMax - 2*tSigmaY
	for _, alg := range []Algorithm{Exact, BackwardEuler} {
		set := &Settings{Algorithm: alg}
		s, _, _ := run1D(t, &m, State1D{}, Path1D{Control: StressControl, Targets: []float64{sigmaMax}, MaxIncrement: 10e6}, set)
		pPeak := s.P
		// Down to 1 kPa above the predicted reverse yield: elastic.
		s, _, _ = run1D(t, &m, s, Path1D{Control: StressControl, Targets: []float64{rev + 1e3}, MaxIncrement: 10e6}, set)
		if s.P != pPeak {
			t.Errorf("%v: plastic flow before sigma_max - 2 sigmaY: p grew by %g at sigma %g", alg, s.P-pPeak, s.Sigma)
		}
		// 1 kPa below it: plastic, with dp = 2 kPa / H from the linear branch (tolerance: round-off of a 1e-7 strain difference).
		s, _, _ = run1D(t, &m, s, Path1D{Control: StressControl, Targets: []float64{rev - 1e3}, MaxIncrement: 10e6}, set)
		dp := s.P - pPeak
		if want := 1e3 / m.Terms[0].C; relErr(dp, want) > 1e-6 {
			t.Errorf("%v: reverse yield: dp = %g after passing sigma_max - 2 sigmaY by 1 kPa, want %g", alg, dp, want)
		}
	}
}

// loopPeaks runs n fully reversed strain cycles of amplitude epsA from the
// virgin state and returns the last cycle's states at the peaks and the
// loop's area from the trapezoid rule over sigma d eps.
func strainCycles(t *testing.T, m *Material, epsA float64, n int, inc float64, set *Settings) (top, bottom State1D, area float64) {
	t.Helper()
	s, _, _ := run1D(t, m, State1D{}, Path1D{Targets: []float64{epsA}, MaxIncrement: inc}, set)
	for c := 0; c < n; c++ {
		var hist []State1D
		start := s
		res, err := m.Run1D(context.Background(), &s, &Path1D{Targets: []float64{-epsA, epsA}, MaxIncrement: inc}, set,
			func(i int, s *State1D) {
				if c == n-1 {
					hist = append(hist, *s)
				}
			})
		if err != nil {
			t.Fatalf("cycle %d: %v (%+v)", c, err, res)
		}
		if c == n-1 {
			prev := start
			area = 0
			for _, h := range hist {
				area += 0.5 * (h.Sigma + prev.Sigma) * (h.Eps - prev.Eps)
				prev = h
			}
			bottom = hist[len(hist)/2-1]
			top = s
		}
	}
	return top, bottom, area
}

// TestPragerStabilizedLoop: fully reversed strain cycling of a linear
// kinematic material gives a closed loop from the first reversal, with
//
//	sigma_a = sigmaY + Et (eps_a - sigmaY/E),      Et = E H/(E + H)
//	W = 2 sigmaY d eps_p,  d eps_p = 2 (sigma_a - sigmaY)/H
//
// derived here: the loop is a parallelogram with elastic sides of height
// 2 sigmaY and plastic sides of slope Et; on the upper plastic side
// sigma = H eps_p + sigmaY, on the lower sigma = H eps_p - sigmaY, so that
// the loop integral of sigma d eps_p is 2 sigmaY d eps_p (the elastic part
// of sigma d eps closes to zero).
// Source of the model: Prager 1956; Lubliner, Plasticity Theory, 1990, ch. 3.
func TestPragerStabilizedLoop(t *testing.T) {
	const H = 8e9
	m := mustMaterial(t, []Term{{C: H}}, Isotropic{})
	et := tE * H / (tE + H)
	for _, epsA := range []float64{0.004, 0.01} {
		top, bottom, area := strainCycles(t, &m, epsA, 3, 1e-6, nil)
		wantA := tSigmaY + et*(epsA-tSigmaY/tE)
		if relErr(top.Sigma, wantA) > 1e-12 || relErr(-bottom.Sigma, wantA) > 1e-12 { // round-off
			t.Errorf("eps_a %g: peaks %g, %g, want +-%g", epsA, top.Sigma, bottom.Sigma, wantA)
		}
		dEpsP := 2 * (wantA - tSigmaY) / H
		wantW := 2 * tSigmaY * dEpsP
		// Tolerance 1e-6: the trapezoid rule is exact on each linear piece;
		// the two increments that contain a yield kink err by about
		// E inc^2 / 2 = 1e-1 J/m^3 each, against W of order 1e6 J/m^3.
		if relErr(area, wantW) > 1e-6 {
			t.Errorf("eps_a %g: loop area %g J/m^3, want %g (rel err %.3g)", epsA, area, wantW, relErr(area, wantW))
		}
	}
}

// TestPragerShakedown: stress-controlled cycling with a mean stress
// (amplitude above sigmaY) of a linear kinematic material gives the same
// strain at every peak after the first: a closed loop, no ratcheting.
//
// Derived here from the branch solutions: on loading to sigma_max the back
// stress becomes sigma_max - sigmaY, on unloading to sigma_min it becomes
// sigma_min + sigmaY, independently of the cycle, and eps = sigma/E +
// alpha/H at each peak. Sources of the fact: Prager 1956; Chaboche, Int. J.
// Plasticity 24, 2008, sec. on ratcheting (linear kinematic hardening
// predicts no ratcheting under uniaxial stress cycling).
func TestPragerShakedown(t *testing.T) {
	m := mustMaterial(t, []Term{{C: 8e9}}, Isotropic{})
	const mean, amp = 80e6, 300e6
	var targets []float64
	for c := 0; c < 10; c++ {
		targets = append(targets, mean+amp, mean-amp)
	}
	var peaks []float64
	s := State1D{}
	res, err := m.Run1D(context.Background(), &s, &Path1D{Control: StressControl, Targets: targets, MaxIncrement: 7e6}, nil, nil)
	if err != nil {
		t.Fatal(err, res)
	}
	// Re-run segment by segment to read the peak strains.
	s = State1D{}
	for _, tg := range targets {
		s, _, _ = run1D(t, &m, s, Path1D{Control: StressControl, Targets: []float64{tg}, MaxIncrement: 7e6}, nil)
		if tg > mean {
			peaks = append(peaks, s.Eps)
		}
	}
	want := (mean+amp)/tE + (mean+amp-tSigmaY)/m.Terms[0].C
	for i, e := range peaks {
		// Tolerance: the stress-control Newton stops at 1e-11 sigmaY, a strain
		// error of 1e-11 sigmaY / Et, about 1e-12 relative here.
		if relErr(e, want) > 1e-9 {
			t.Errorf("cycle %d: peak strain %.15g, want %.15g (ratcheting %g)", i, e, want, e-want)
		}
	}
}

// TestAFStabilizedLoopPeak: the stabilized loop of fully reversed strain
// cycling of pure Armstrong-Frederick kinematic hardening has the peak
//
//	sigma_a = sigmaY + sum_i (C_i/gamma_i) tanh(gamma_i d eps_p / 2),
//
// d eps_p the plastic strain range of the loop.
//
// Source: Chaboche, Int. J. Plasticity 24, 2008 (stabilized cyclic curve of
// the nonlinear kinematic rule); Lemaitre and Chaboche, Mechanics of Solid
// Materials, 1990, ch. 5 (from memory, no equation number).
func TestAFStabilizedLoopPeak(t *testing.T) {
	m := mustMaterial(t, []Term{{C: 60e9, Gamma: 600}, {C: 15e9, Gamma: 80}, {C: 2e9, Gamma: 8}}, Isotropic{})
	for _, epsA := range []float64{0.005, 0.01} {
		const cycles = 300
		top, bottom, _ := strainCycles(t, &m, epsA, cycles, 2e-4, nil)
		dEpsP := top.EpsP - bottom.EpsP
		want := tSigmaY
		for i := 0; i < m.N; i++ {
			want += m.Terms[i].C / m.Terms[i].Gamma * math.Tanh(m.Terms[i].Gamma*dEpsP/2)
		}
		amp := 0.5 * (top.Sigma - bottom.Sigma)
		// Tolerance: each half cycle multiplies a term's offset from the
		// symmetric loop by exp(-gamma_i d eps_p); the slowest term (index 2)
		// keeps at most (C/gamma) exp(-2 gamma d eps_p cycles) of it, plus
		// round-off (1e-12 relative).
		slow := m.Terms[2]
		tol := 1e-12 + slow.C/slow.Gamma*math.Exp(-2*slow.Gamma*dEpsP*cycles)/want
		if relErr(amp, want) > tol {
			t.Errorf("eps_a %g: sigma_a %.12g, want %.12g (d eps_p %g, rel err %.3g)", epsA, amp, want, dEpsP, relErr(amp, want))
		}
	}
}

// afRatchet is the ratchet strain per cycle of one Armstrong-Frederick term
// (no isotropic hardening) under stress cycling between sigma_min and
// sigma_max, with a = C/gamma:
//
//	d eps_r = (1/gamma) ln[(a^2 - alpha_min^2) / (a^2 - alpha_max^2)],
//	alpha_max = sigma_max - sigmaY,  alpha_min = sigma_min + sigmaY,
//
// derived here from the branch solutions alpha(eps_p) = n a + (alpha_0 -
// n a) exp(-gamma n (eps_p - eps_p0)): the loading branch takes alpha from
// alpha_min to alpha_max over d eps_p+ = (1/gamma) ln((a - alpha_min)/(a -
// alpha_max)), the unloading branch back over d eps_p- = (1/gamma) ln((a +
// alpha_max)/(a + alpha_min)); the elastic strain at the peaks repeats, so
// the ratchet strain per cycle is d eps_p+ - d eps_p-. It holds from the
// first full cycle on, since the peaks fix the back stress. Requires
// sigma_max - sigma_min > 2 sigmaY and |alpha| < a.
func afRatchet(m *Material, sigmaMin, sigmaMax float64) float64 {
	t := m.Terms[0]
	a := t.C / t.Gamma
	amax, amin := sigmaMax-m.SigmaY, sigmaMin+m.SigmaY
	return math.Log((a*a-amin*amin)/(a*a-amax*amax)) / t.Gamma
}

func ratchetPerCycle(t *testing.T, m *Material, sigmaMin, sigmaMax float64, cycles int, inc float64, set *Settings) []float64 {
	t.Helper()
	s, _, _ := run1D(t, m, State1D{}, Path1D{Control: StressControl, Targets: []float64{sigmaMax}, MaxIncrement: inc}, set)
	var out []float64
	prev := s.Eps
	for c := 0; c < cycles; c++ {
		s, _, _ = run1D(t, m, s, Path1D{Control: StressControl, Targets: []float64{sigmaMin, sigmaMax}, MaxIncrement: inc}, set)
		out = append(out, s.Eps-prev)
		prev = s.Eps
	}
	return out
}

// TestAFRatchetPerCycle checks the integrator against afRatchet (and so the
// derivation against the integrator) and shows the increment dependence of
// backward Euler on the same quantity.
func TestAFRatchetPerCycle(t *testing.T) {
	m := mustMaterial(t, []Term{{C: 40e9, Gamma: 300}}, Isotropic{})
	const mean, amp = 60e6, 280e6
	want := afRatchet(&m, mean-amp, mean+amp)
	if !(want > 0) {
		t.Fatalf("closed form %g: the case must ratchet", want)
	}
	for _, inc := range []float64{amp / 2, amp / 50} {
		got := ratchetPerCycle(t, &m, mean-amp, mean+amp, 5, inc, nil)
		for c, g := range got {
			// Tolerance: the stress-control Newton stops at 1e-11 sigmaY; a
			// strain error of order 1e-11 sigmaY / tangent at each peak; the
			// tangent near sigma_max is about C - gamma alpha_max ~ 6e9 Pa,
			// so 1e-9 relative to a ratchet of ~5e-4.
			if relErr(g, want) > 1e-8 {
				t.Errorf("exact, increment %g Pa, cycle %d: ratchet %.12g, want %.12g (rel %.3g)", inc, c, g, want, relErr(g, want))
			}
		}
	}
	// Backward Euler: error at 1000 increments per half cycle, and its
	// observed order under halving.
	var errs []float64
	for _, n := range []float64{250, 500, 1000} {
		got := ratchetPerCycle(t, &m, mean-amp, mean+amp, 3, 2*amp/n, &Settings{Algorithm: BackwardEuler})
		errs = append(errs, relErr(got[2], want))
	}
	t.Logf("backward Euler ratchet rel. error at 250/500/1000 increments per half cycle: %.3g %.3g %.3g", errs[0], errs[1], errs[2])
	for i := 1; i < len(errs); i++ {
		order := math.Log2(errs[i-1] / errs[i])
		if order < 0.9 || order > 1.1 { // first order: Simo and Hughes 1998, ch. 1 (backward Euler is first-order accurate)
			t.Errorf("backward Euler observed order %.3f between halvings, want about 1", order)
		}
	}
}
