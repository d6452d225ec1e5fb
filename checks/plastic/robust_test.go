package plastic

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

// The return mappings must converge on every admissible increment: tiny
// ones, huge ones, from states exactly on the yield surface and from
// trial states one ulp outside it. These tests draw materials over the
// ranges of structural metals (steels, stainless, aluminium, titanium and
// nickel alloys; moduli and yield stresses from memory of handbook tables,
// Chaboche constants over the published range of fits, gamma from 2 to
// 3000) and demand zero non-convergence. Expectation: the consistency
// condition has one root (g is strictly decreasing, Simo and Hughes,
// Computational Inelasticity, 1998, ch. 1), so an iteration that knows
// its round-off floor always terminates; common practice, no source.

// metalMaterial draws a material from the ranges of structural metals.
func metalMaterial(t testing.TB, rng *rand.Rand) Material {
	logU := func(lo, hi float64) float64 { return lo * math.Pow(hi/lo, rng.Float64()) }
	E := logU(68e9, 215e9)
	sy := logU(30e6, 1100e6)
	var terms []Term
	gam := logU(800, 3000)
	for k := rng.IntN(5); k > 0; k-- {
		terms = append(terms, Term{C: logU(0.05, 1.2) * sy * gam, Gamma: gam})
		gam = math.Max(2, gam/logU(3, 15))
	}
	if rng.IntN(2) == 0 {
		et := logU(0.002, 0.05) * E
		terms = append(terms, Term{C: E * et / (E - et)})
	}
	var iso Isotropic
	switch rng.IntN(3) {
	case 1:
		iso = Isotropic{Kind: IsoVoce, Q: sy * (-0.15 + 0.75*rng.Float64()), B: logU(1, 60)}
	case 2:
		iso = Isotropic{Kind: IsoLinear, K: logU(0.0005, 0.02) * E}
	}
	m, err := NewMaterial(E, 0.27+0.08*rng.Float64(), sy, terms, iso)
	if err != nil {
		t.Fatalf("material refused: %v", err)
	}
	return m
}

// increment draws a strain increment of any size from 1e-16 to 1e-1
// (times a random sign), with extra weight on the hard ones.
func increment(rng *rand.Rand, epsY float64) float64 {
	var d float64
	switch rng.IntN(4) {
	case 0:
		d = epsY * math.Pow(10, -12+10*rng.Float64()) // tiny against the yield strain
	case 1:
		d = math.Pow(10, -16+4*rng.Float64()) // a few ulps of strain
	default:
		d = epsY * math.Pow(10, -3+4*rng.Float64()) // ordinary to huge (up to 10 eps_y and more)
	}
	if rng.IntN(2) == 0 {
		d = -d
	}
	return d
}

// TestStep1DConvergesEverywhere walks random materials along random
// increments (both algorithms) and, at every state, also tries an
// increment that puts the trial state one ulp outside the yield surface.
// Every step must converge and end on the surface within its round-off
// floor (consistency: Simo and Hughes 1998, ch. 1).
func TestStep1DConvergesEverywhere(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 1))
	trials, steps := 300, 400
	if testing.Short() {
		trials = 60
	}
	total := 0
	for trial := 0; trial < trials; trial++ {
		m := metalMaterial(t, rng)
		epsY := m.SigmaY / m.E
		set := &Settings{Algorithm: Algorithm(rng.IntN(2))}
		var s State1D
		for k := 0; k < steps; k++ {
			de := increment(rng, epsY)
			if math.Abs(s.Eps+de) > 0.1 {
				de = -de
			}
			var next State1D
			info, err := m.Step1D(&next, &s, de, set)
			total++
			if err != nil {
				t.Fatalf("trial %d step %d (%v): dEps %g from %+v: %v (material %+v)", trial, k, set.Algorithm, de, s, err, m)
			}
			checkOnSurface1D(t, &m, &next, info, de)
			s = next
			// One ulp outside: from a state on the surface, the smallest
			// stress change that leaves it.
			if info.Plastic {
				xi := s.Sigma - s.BackStress(m.N)
				dir := math.Copysign(1, xi)
				for _, ulps := range []float64{1, 2, 16} {
					ds := ulps * (math.Nextafter(math.Abs(s.Sigma)+1, math.Inf(1)) - math.Abs(s.Sigma) - 1 + 1e-300)
					ds = math.Max(ds, math.Abs(math.Nextafter(s.Sigma, s.Sigma+dir*math.MaxFloat64)-s.Sigma))
					var tip State1D
					info, err := m.Step1D(&tip, &s, dir*ulps*ds/m.E, set)
					total++
					if err != nil {
						t.Fatalf("trial %d step %d (%v): %g ulp outside the surface: %v (state %+v, material %+v)", trial, k, set.Algorithm, ulps, err, s, m)
					}
					checkOnSurface1D(t, &m, &tip, info, dir*ulps*ds/m.E)
				}
			}
		}
	}
	t.Logf("%d steps, none failed", total)
}

// checkOnSurface1D demands |f| within the round-off floor of the yield
// function after a plastic step: 16 u of the magnitudes subtracted in f
// and in sigma = sigma_n + E dEps - E n dp (each at most |sigma| + E |dEps|).
func checkOnSurface1D(t *testing.T, m *Material, s *State1D, info StepInfo, de float64) {
	t.Helper()
	const u = 0x1p-53
	scale := 3*math.Abs(s.Sigma) + 2*m.E*math.Abs(de) + m.YieldRadius(s.P)
	for i := 0; i < m.N; i++ {
		scale += math.Abs(s.Alpha[i])
	}
	f := m.Yield1D(s)
	if math.IsNaN(f) || f > 16*u*scale || (info.Plastic && math.Abs(f) > 16*u*scale) {
		t.Fatalf("after dEps %g: f = %g Pa, round-off floor %g Pa (state %+v)", de, f, 16*u*scale, *s)
	}
}

// TestStep3DConvergesEverywhere: the same for 3D return mappings on random
// increments (proportional and not), including one-ulp-outside trial
// states.
func TestStep3DConvergesEverywhere(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 2))
	trials, steps := 50, 120
	if testing.Short() {
		trials = 15
	}
	total := 0
	for trial := 0; trial < trials; trial++ {
		m := metalMaterial(t, rng)
		epsY := m.SigmaY / m.E
		set := &Settings{Algorithm: Algorithm(rng.IntN(2))}
		var s State3D
		for k := 0; k < steps; k++ {
			var de [6]float64
			size := math.Abs(increment(rng, epsY))
			if rng.IntN(2) == 0 { // uniaxial-stress-like, proportional
				sign := math.Copysign(1, rng.Float64()-0.5)
				de = [6]float64{sign * size, -0.5 * sign * size, -0.5 * sign * size}
			} else {
				for j := range de {
					de[j] = size * (2*rng.Float64() - 1)
				}
			}
			if math.Abs(s.Eps[0]+de[0]) > 0.1 || math.Abs(s.Eps[5]+de[5]) > 0.1 {
				for j := range de {
					de[j] = -de[j]
				}
			}
			var next State3D
			info, err := m.Step3D(&next, &s, de, nil, set)
			total++
			if err != nil {
				t.Fatalf("trial %d step %d (%v): dEps %g: %v (state %+v, material %+v)", trial, k, set.Algorithm, de, err, s, m)
			}
			checkOnSurface3D(t, &m, &next, info, de)
			s = next
		}
	}
	t.Logf("%d steps, none failed", total)
}

// checkOnSurface3D: as checkOnSurface1D, with 64 u (more terms: six
// components, the deviator, the norm) of the magnitudes subtracted, the
// elastic trial increment 3 E max |dEps_k| among them.
func checkOnSurface3D(t *testing.T, m *Material, s *State3D, info StepInfo, de [6]float64) {
	t.Helper()
	const u = 0x1p-53
	maxDe := 0.0
	for _, d := range de {
		maxDe = math.Max(maxDe, math.Abs(d))
	}
	scale := VonMises(s.Sigma) + math.Abs(s.Sigma[0]+s.Sigma[1]+s.Sigma[2]) + m.YieldRadius(s.P) + 3*m.E*maxDe
	for i := 0; i < m.N; i++ {
		scale += math.Sqrt(1.5 * Contract(s.X[i], s.X[i]))
	}
	f := m.Yield3D(s)
	if math.IsNaN(f) || f > 64*u*scale || (info.Plastic && math.Abs(f) > 64*u*scale) {
		t.Fatalf("f = %g Pa, round-off floor %g Pa (state %+v)", f, 64*u*scale, *s)
	}
}

// TestIssueCardCycles: the card of issue 9 (E 70000 MPa, yield 175.7 MPa,
// AF (26466, 243.5) + AF (4922, 50.3), invented values of an ordinary
// aluminium-like card) cycled at +-0.00502 with increments of 0.003 and
// of 1e-5 failed with "iteration did not converge".
func TestIssueCardCycles(t *testing.T) {
	m, err := NewMaterial(70e9, 0.33, 175.7e6, []Term{{C: 26466e6, Gamma: 243.5}, {C: 4922e6, Gamma: 50.3}}, Isotropic{})
	if err != nil {
		t.Fatal(err)
	}
	for _, h := range []float64{0.003, 1e-4, 1e-5} {
		for _, alg := range []Algorithm{Exact, BackwardEuler} {
			var targets []float64
			for k := 0; k < 30; k++ {
				targets = append(targets, 0.00502, -0.00502)
			}
			var s State1D
			if _, err := m.Run1D(context.Background(), &s, &Path1D{Targets: targets, MaxIncrement: h}, &Settings{Algorithm: alg}, nil); err != nil {
				t.Errorf("h %g, %v: %v", h, alg, err)
			}
		}
	}
}

// TestRun3DMixedControlConverges: the mixed-control driver (uniaxial
// stress, pure shear, and a tension-torsion box with the other stresses
// free) converges on random metal materials at the increments the
// verification cases use (a tenth of the yield strain) and at ten times
// them, both algorithms, with the free stresses at zero within DriverTol.
// Expectation: each increment has one solution, since the consistent
// tangent restricted to the free components is positive definite when
// the plastic modulus is positive (associative plasticity; Simo and
// Hughes, Computational Inelasticity, 1998, ch. 3, from memory, no
// equation number).
func TestRun3DMixedControlConverges(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261202, 3))
	trials := 20
	if testing.Short() {
		trials = 6
	}
	for trial := 0; trial < trials; trial++ {
		m := metalMaterial(t, rng)
		ey := m.SigmaY / m.E
		set := &Settings{Algorithm: Algorithm(rng.IntN(2))}
		h := ey / 10 * math.Pow(10, rng.Float64())
		a := ey * (2 + 4*rng.Float64())
		paths := []Path3D{
			UniaxialStressPath([]float64{a, -a, a, -a}, h),
			PureShearPath([]float64{2 * a, -2 * a, 2 * a}, h),
			TensionTorsionPath([][2]float64{{a, 0}, {a, 2 * a}, {-a, 2 * a}, {-a, -2 * a}, {a, -2 * a}, {a, 0}}, h),
		}
		for k, p := range paths {
			var s State3D
			_, err := m.Run3D(context.Background(), &s, &p, set, func(_ int, st *State3D) {
				for j := 0; j < 6; j++ {
					if !p.StrainControlled[j] && math.Abs(st.Sigma[j]) > 2*set.driverTol()*m.SigmaY {
						t.Fatalf("trial %d path %d: free stress %d = %g Pa", trial, k, j, st.Sigma[j])
					}
				}
			})
			if err != nil {
				t.Fatalf("trial %d path %d (%v, h %g): %v (material %+v)", trial, k, set.Algorithm, h, err, m)
			}
		}
	}
}
