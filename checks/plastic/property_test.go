package plastic

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

// randomMaterial draws a material with 0 to 4 terms (linear or
// Armstrong-Frederick) and none, linear or Voce (possibly softening)
// isotropic hardening, over ranges that cover metals (invented, for the
// property test only).
func randomMaterial(t *testing.T, rng *rand.Rand) Material {
	E := 50e9 + 200e9*rng.Float64()
	sy := E * (2e-4 + 4e-3*rng.Float64())
	nt := rng.IntN(5)
	terms := make([]Term, nt)
	for i := range terms {
		c := E * math.Pow(10, -3+2.5*rng.Float64())
		if rng.IntN(4) == 0 {
			terms[i] = Term{C: c}
		} else {
			terms[i] = Term{C: c, Gamma: math.Pow(10, 0.5+2.5*rng.Float64())}
		}
	}
	var iso Isotropic
	switch rng.IntN(3) {
	case 1:
		iso = Isotropic{Kind: IsoLinear, K: E * 1e-2 * rng.Float64()}
	case 2:
		iso = Isotropic{Kind: IsoVoce, Q: sy * (-0.5 + 1.5*rng.Float64()), B: 1 + 50*rng.Float64()}
	}
	m, err := NewMaterial(E, 0.5*rng.Float64()*0.98, sy, terms, iso)
	if err != nil {
		t.Fatalf("random material refused: %v", err)
	}
	return m
}

// TestPropertyRandom: seeded random materials and paths never panic, never
// return NaN, never leave the yield surface (f <= 1e-10 sigmaY after every
// increment, |f| <= 1e-10 sigmaY after every plastic one) and never
// dissipate a negative amount. Invariants: consistency of the return
// mapping (Simo and Hughes 1998, ch. 3) and the second law (Lemaitre and
// Chaboche 1990, ch. 2).
func TestPropertyRandom(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261201, 3))
	n := 60
	if testing.Short() {
		n = 15
	}
	substeps, incs := 0, 0
	defer func() { t.Logf("%d trials; 3D: %d increments, %d return mappings", n, incs, substeps) }()
	for trial := 0; trial < n; trial++ {
		m := randomMaterial(t, rng)
		ey := m.SigmaY / m.E
		alg := Algorithm(rng.IntN(2))
		set := &Settings{Algorithm: alg}
		check1 := func(what string, prev, s *State1D) {
			f := m.Yield1D(s)
			if math.IsNaN(f) || f > 1e-10*m.SigmaY || (s.P > prev.P && math.Abs(f) > 1e-10*m.SigmaY) {
				t.Fatalf("trial %d (%v) %s: f = %g sigmaY after an increment (material %+v)", trial, alg, what, f/m.SigmaY, m)
			}
			if d := m.Dissipation1D(prev, s); d < -1e-12*m.SigmaY*(s.P-prev.P) {
				t.Fatalf("trial %d %s: dissipation %g < 0", trial, what, d)
			}
		}
		// 1D strain path.
		var targets []float64
		for k := 0; k < 6; k++ {
			targets = append(targets, ey*(-30+60*rng.Float64()))
		}
		s := State1D{}
		prev := s
		_, err := m.Run1D(context.Background(), &s, &Path1D{Targets: targets, MaxIncrement: ey * (0.05 + 2*rng.Float64())}, set,
			func(_ int, st *State1D) { check1("strain path", &prev, st); prev = *st })
		if err != nil {
			t.Fatalf("trial %d: 1D strain path: %v", trial, err)
		}
		// 1D stress path below saturation.
		sat := math.Min(m.SaturationStress(), 3*m.SigmaY)
		targets = targets[:0]
		for k := 0; k < 6; k++ {
			targets = append(targets, sat*(-0.95+1.9*rng.Float64()))
		}
		s = State1D{}
		prev = s
		_, err = m.Run1D(context.Background(), &s, &Path1D{Control: StressControl, Targets: targets, MaxIncrement: m.SigmaY * (0.02 + 0.5*rng.Float64())}, set,
			func(_ int, st *State1D) { check1("stress path", &prev, st); prev = *st })
		if err != nil {
			t.Fatalf("trial %d: 1D stress path: %v (material %+v)", trial, err, m)
		}
		// 3D strain path in random directions.
		var t3 [][6]float64
		for k := 0; k < 3; k++ {
			var e [6]float64
			for j := range e {
				e[j] = ey * (-8 + 16*rng.Float64())
			}
			t3 = append(t3, e)
		}
		all := [6]bool{true, true, true, true, true, true}
		s3 := State3D{}
		prev3 := s3
		res, err := m.Run3D(context.Background(), &s3, &Path3D{StrainControlled: all, Targets: t3, MaxStrainIncrement: ey * (0.2 + rng.Float64())}, set,
			func(i int, st *State3D) {
				f := m.Yield3D(st)
				if math.IsNaN(f) || f > 1e-10*m.SigmaY || (st.P > prev3.P && math.Abs(f) > 1e-10*m.SigmaY) {
					t.Fatalf("trial %d (%v) 3D increment %d: f = %g sigmaY", trial, alg, i, f/m.SigmaY)
				}
				if d := m.Dissipation3D(&prev3, st); d < -1e-12*m.SigmaY*(st.P-prev3.P) {
					t.Fatalf("trial %d 3D increment %d: dissipation %g < 0", trial, i, d)
				}
				prev3 = *st
			})
		if err != nil {
			t.Fatalf("trial %d: 3D path: %v (material %+v)", trial, err, m)
		}
		substeps += res.Substeps
		incs += res.Increments
	}
}
