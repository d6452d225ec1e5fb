package plastic

import (
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"gonum.org/v1/gonum/diff/fd"
	"gonum.org/v1/gonum/mat"
)

// checkInvariants3D fails the test unless every plastic increment of hist
// ends on the yield surface (|f| <= 1e-10 sigmaY, the bound; the
// return mapping converges to round-off, about 1e-15 sigmaY) and dissipates
// a non-negative amount.
func checkInvariants3D(t *testing.T, m *Material, start State3D, hist []State3D) {
	t.Helper()
	prev := start
	for i, s := range hist {
		if s.P > prev.P {
			if f := m.Yield3D(&s); math.Abs(f) > 1e-10*m.SigmaY {
				t.Fatalf("increment %d: |f| = %g > 1e-10 sigmaY after a plastic step", i, f)
			}
			if d := m.Dissipation3D(&prev, &s); d < 0 {
				t.Fatalf("increment %d: dissipation %g < 0", i, d)
			}
		}
		prev = s
	}
}

// TestUniaxialStress3DMatches1D: a uniaxial-stress path in 3D (axial strain
// prescribed, other stresses zero) reproduces the 1D result, with alpha =
// (3/2) X_11 and eps_p = eps_p,11 (the 2/3 factor of the 3D rule). Derived
// here (see the package documentation); the model is Chaboche, Int. J.
// Plasticity 24, 2008. The issue asks for 1e-6 relative; the Exact 3D
// return is exact for coaxial increments, so the tolerance is round-off:
// 1e-10 sigmaY covers the mixed-control Newton residual (1e-11 sigmaY) and
// its effect on the state.
func TestUniaxialStress3DMatches1D(t *testing.T) {
	m := mustMaterial(t, []Term{{C: 60e9, Gamma: 600}, {C: 15e9, Gamma: 80}, {C: 2e9, Gamma: 8}, {C: 1e9}}, Isotropic{Kind: IsoVoce, Q: 40e6, B: 12})
	targets := []float64{0.01, -0.008, 0.012, -0.01, 0.004}
	for _, alg := range []Algorithm{Exact, BackwardEuler} {
		set := &Settings{Algorithm: alg}
		_, h1, _ := run1D(t, &m, State1D{}, Path1D{Targets: targets, MaxIncrement: 2e-4}, set)
		_, h3, res := run3D(t, &m, State3D{}, UniaxialStressPath(targets, 2e-4), set)
		if len(h1) != len(h3) {
			t.Fatalf("%v: %d 1D increments, %d 3D", alg, len(h1), len(h3))
		}
		checkInvariants3D(t, &m, State3D{}, h3)
		worst := 0.0
		for i := range h1 {
			a, b := h1[i], h3[i]
			x := b.BackStress(m.N)
			d := math.Abs(a.Sigma-b.Sigma[V11]) / m.SigmaY
			d = math.Max(d, math.Abs(a.BackStress(m.N)-1.5*x[V11])/m.SigmaY)
			d = math.Max(d, math.Abs(a.EpsP-b.EpsP[V11])/0.01)
			d = math.Max(d, math.Abs(a.P-b.P)/0.01)
			for k := 1; k < 6; k++ {
				d = math.Max(d, math.Abs(b.Sigma[k])/m.SigmaY)
			}
			worst = math.Max(worst, d)
		}
		if worst > 1e-10 {
			t.Errorf("%v: 3D uniaxial stress differs from 1D by %.3g (scaled max norm) > 1e-10", alg, worst)
		}
		t.Logf("%v: max scaled difference 3D vs 1D %.3g over %d increments; %+v", alg, worst, len(h1), res)
	}
}

// TestPureShearYield: under pure shear the von Mises criterion yields at
// tau = sigmaY/sqrt(3), and a perfectly plastic material stays there.
// Source: R. von Mises, Mechanik der festen Koerper im plastisch-deformablen
// Zustand, Goettinger Nachrichten, 1913 (J2 criterion); any plasticity
// text, e.g. Lubliner 1990, ch. 3.
func TestPureShearYield(t *testing.T) {
	tauY := tSigmaY / math.Sqrt(3)
	perfect := mustMaterial(t, nil, Isotropic{})
	s, hist, _ := run3D(t, &perfect, State3D{}, PureShearPath([]float64{0.02}, 1e-4), nil)
	checkInvariants3D(t, &perfect, State3D{}, hist)
	if relErr(s.Sigma[V12], tauY) > 1e-12 { // round-off
		t.Errorf("perfectly plastic shear stress %.15g, want sigmaY/sqrt(3) = %.15g", s.Sigma[V12], tauY)
	}
	for k := 0; k < 5; k++ {
		if math.Abs(s.Sigma[k]) > 1e-10*tSigmaY {
			t.Errorf("pure shear: sigma[%d] = %g, want 0", k, s.Sigma[k])
		}
	}
	// Onset with hardening: elastic just below gamma_y = tau_y / G, plastic just above.
	m := chaboche3Voce(t)
	gy := tauY / m.ShearModulus()
	below, _, _ := run3D(t, &m, State3D{}, PureShearPath([]float64{gy * (1 - 1e-9)}, 1e-4), nil)
	above, _, _ := run3D(t, &m, State3D{}, PureShearPath([]float64{gy * (1 + 1e-6)}, 1e-4), nil)
	if below.P != 0 || !(above.P > 0) {
		t.Errorf("yield onset: p = %g at gamma_y (1 - 1e-9), %g at gamma_y (1 + 1e-6); want 0 and > 0", below.P, above.P)
	}
}

// TestLinearHardeningOneStep: with linear kinematic and linear isotropic
// hardening, the radial return is exact under proportional loading, so one
// increment equals a thousand. Source: Simo and Hughes, Computational
// Inelasticity, 1998, ch. 3 (radial return exact for linear hardening and
// proportional loading; from memory, no box number). The same holds for the
// Exact algorithm with Armstrong-Frederick terms (its update is the closed
// form for a fixed normal; derived here, see Step3D).
func TestLinearHardeningOneStep(t *testing.T) {
	dir := [6]float64{1, -0.4, -0.2, 0.3, 0, 0.5} // a proportional, non-uniaxial strain direction
	var target [6]float64
	for k := range dir {
		target[k] = 0.02 * dir[k]
	}
	all := [6]bool{true, true, true, true, true, true}
	cases := []struct {
		name  string
		terms []Term
		iso   Isotropic
		alg   Algorithm
	}{
		{"prager+linear-iso/backward-euler", []Term{{C: 5e9}}, Isotropic{Kind: IsoLinear, K: 2e9}, BackwardEuler},
		{"prager+linear-iso/exact", []Term{{C: 5e9}}, Isotropic{Kind: IsoLinear, K: 2e9}, Exact},
		{"chaboche+voce/exact", []Term{{C: 60e9, Gamma: 600}, {C: 15e9, Gamma: 80}, {C: 2e9}}, Isotropic{Kind: IsoVoce, Q: 40e6, B: 12}, Exact},
	}
	opt := cmpopts.EquateApprox(1e-12, 1e-12*tSigmaY) // round-off; abs part for components near zero (stress scale)
	optStrain := cmpopts.EquateApprox(1e-12, 1e-14)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m := mustMaterial(t, c.terms, c.iso)
			set := &Settings{Algorithm: c.alg}
			one, _, _ := run3D(t, &m, State3D{}, Path3D{StrainControlled: all, Targets: [][6]float64{target}, MaxStrainIncrement: 1}, set)
			many, hist, _ := run3D(t, &m, State3D{}, Path3D{StrainControlled: all, Targets: [][6]float64{target}, MaxStrainIncrement: 0.02 / 1000}, set)
			checkInvariants3D(t, &m, State3D{}, hist)
			if !(one.P > 0) {
				t.Fatal("no plastic flow: the case checks nothing")
			}
			if d := cmp.Diff(many.Sigma, one.Sigma, opt); d != "" {
				t.Errorf("stress, 1000 increments vs 1 (-want +got):\n%s", d)
			}
			if d := cmp.Diff(many.X, one.X, opt); d != "" {
				t.Errorf("back stress (-want +got):\n%s", d)
			}
			if d := cmp.Diff([]float64{many.P, many.EpsP[0], many.EpsP[5]}, []float64{one.P, one.EpsP[0], one.EpsP[5]}, optStrain); d != "" {
				t.Errorf("plastic strains (-want +got):\n%s", d)
			}
		})
	}
}

// TestBackwardEuler3DFirstOrder: under step halving the backward-Euler
// radial return converges to the exact (1D) uniaxial solution at first
// order for Armstrong-Frederick terms. Source: Simo and Hughes 1998, ch. 3
// (backward Euler is first-order accurate); the observed order is measured.
func TestBackwardEuler3DFirstOrder(t *testing.T) {
	m := chaboche3Voce(t)
	exact, _, _ := run1D(t, &m, State1D{}, Path1D{Targets: []float64{0.01, -0.01}, MaxIncrement: 1}, nil)
	var errs []float64
	for _, n := range []float64{50, 100, 200, 400} {
		s, _, _ := run3D(t, &m, State3D{}, UniaxialStressPath([]float64{0.01, -0.01}, 0.01/n), &Settings{Algorithm: BackwardEuler})
		errs = append(errs, math.Abs(s.Sigma[V11]-exact.Sigma)/m.SigmaY)
	}
	t.Logf("backward Euler 3D stress error / sigmaY at 50..400 increments per 0.01 strain: %.3g", errs)
	for i := 1; i < len(errs); i++ {
		if order := math.Log2(errs[i-1] / errs[i]); order < 0.9 || order > 1.1 {
			t.Errorf("observed order %.3f at halving %d, want about 1 (errors %.3g)", order, i, errs)
		}
	}
}

// TestTensionTorsionAccuracy: a non-proportional tension-torsion path (a
// box in the eps_11 - gamma_12 plane) keeps consistency and dissipation
// after every plastic step and converges. The Exact algorithm at its
// defaults and the default-size increment 1e-4 must agree with a reference
// run (SubstepTol 1e-9, increments four times smaller) to 1e-6 sigmaY, the
// issue's accuracy target for 3D cases, both
//   - under full strain control (lateral strains -eps_11/2 prescribed): the
//     difference is the integration error alone, and
//   - under mixed control (thin-walled tube, other stresses zero): the
//     difference adds the first-order discretization of the free-strain
//     path (see Run3D), measured separately by running the reference
//     tolerance at the default increment.
//
// Backward Euler at the same increment is reported for contrast.
func TestTensionTorsionAccuracy(t *testing.T) {
	m := chaboche3Voce(t)
	pts := [][2]float64{{0.004, 0}, {0.004, 0.01}, {-0.004, 0.01}, {-0.004, -0.01}, {0.004, -0.01}, {0.004, 0}}
	strainPath := func(inc float64) Path3D {
		p := Path3D{StrainControlled: [6]bool{true, true, true, true, true, true}, MaxStrainIncrement: inc}
		for _, q := range pts {
			p.Targets = append(p.Targets, [6]float64{q[0], -0.5 * q[0], -0.5 * q[0], 0, 0, q[1]})
		}
		return p
	}
	refSet := &Settings{SubstepTol: 1e-9}
	for _, c := range []struct {
		name string
		path func(inc float64) Path3D
	}{
		{"strain-control", strainPath},
		{"mixed-control", func(inc float64) Path3D { return TensionTorsionPath(pts, inc) }},
	} {
		t.Run(c.name, func(t *testing.T) {
			got, hist, res := run3D(t, &m, State3D{}, c.path(1e-4), nil)
			checkInvariants3D(t, &m, State3D{}, hist)
			ref, _, _ := run3D(t, &m, State3D{}, c.path(1e-4/4), refSet)
			d := m.stateDiff(&got, &ref) / m.SigmaY
			t.Logf("default run vs reference %.3g sigmaY; %.1f returns a step; %+v", d, float64(res.Substeps)/float64(res.Increments+res.NewtonIterations), res)
			if d > 1e-6 {
				t.Errorf("default run and reference differ by %.3g sigmaY > 1e-6", d)
			}
			same, _, _ := run3D(t, &m, State3D{}, c.path(1e-4), refSet)
			t.Logf("reference tolerance at the default increment vs reference: %.3g sigmaY (path discretization)", m.stateDiff(&same, &ref)/m.SigmaY)
			be, _, _ := run3D(t, &m, State3D{}, c.path(1e-4), &Settings{Algorithm: BackwardEuler})
			t.Logf("backward Euler at 1e-4 vs reference: %.3g sigmaY", m.stateDiff(&be, &ref)/m.SigmaY)
		})
	}
}

// TestConsistentTangent3D compares the consistent tangent of one return
// mapping with a central finite-difference Jacobian of the stress update
// (gonum diff/fd), on non-proportional plastic increments from a
// pre-strained state, for both algorithms. Tolerance 1e-6 of the largest
// entry: the central difference with step 1e-9 has truncation error of
// order (1e-9/1e-4)^2 relative and round-off of order 1e-16 sigma / 1e-9.
func TestConsistentTangent3D(t *testing.T) {
	m := chaboche3Voce(t)
	pre, _, _ := run3D(t, &m, State3D{}, TensionTorsionPath([][2]float64{{0.006, 0}, {0.006, 0.004}}, 1e-4), nil)
	incs := [][6]float64{
		{2e-4, -1e-4, -0.5e-4, 0.3e-4, -0.2e-4, 1.5e-4},
		{-1e-4, 0.2e-4, 0.4e-4, 0, 0.1e-4, 3e-4},
	}
	for _, alg := range []Algorithm{Exact, BackwardEuler} {
		for ci, de := range incs {
			var out State3D
			var D [6][6]float64
			info, err := m.radialReturn(&out, &pre, &de, &D, alg, 60)
			if err != nil || !info.Plastic {
				t.Fatalf("%v case %d: plastic %v, err %v", alg, ci, info.Plastic, err)
			}
			J := mat.NewDense(6, 6, nil)
			fd.Jacobian(J, func(y, x []float64) {
				var e [6]float64
				copy(e[:], x)
				var o State3D
				if _, err := m.radialReturn(&o, &pre, &e, nil, alg, 60); err != nil {
					panic(err)
				}
				copy(y, o.Sigma[:])
			}, de[:], &fd.JacobianSettings{Formula: fd.Central, Step: 1e-9})
			scale := 0.0
			for i := 0; i < 6; i++ {
				for j := 0; j < 6; j++ {
					scale = math.Max(scale, math.Abs(D[i][j]))
				}
			}
			worst := 0.0
			for i := 0; i < 6; i++ {
				for j := 0; j < 6; j++ {
					worst = math.Max(worst, math.Abs(D[i][j]-J.At(i, j))/scale)
				}
			}
			if worst > 1e-6 {
				t.Errorf("%v case %d: tangent differs from finite differences by %.3g of max entry\nD=%v\nJ=%v", alg, ci, worst, D, mat.Formatted(J))
			}
			t.Logf("%v case %d: max |D - J| / max|D| = %.3g", alg, ci, worst)
		}
	}
}
