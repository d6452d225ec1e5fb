package plastic

import (
	"math"
	"testing"
)

// katMonotonic is a known-answer case: monotonic uniaxial tension from the
// virgin state under strain control, with the closed-form stress as a
// function of the plastic strain.
type katMonotonic struct {
	name   string
	terms  []Term
	iso    Isotropic
	epsMax float64
	inc    float64
	alg    Algorithm
	// want returns the closed-form stress at plastic strain ep (ep >= 0,
	// plastic branch) for the material m.
	want   func(m *Material, ep float64) float64
	tol    float64 // relative to sigmaY; says where its size comes from
	source string
}

func prager(m *Material, ep float64) float64 {
	return m.SigmaY + m.Terms[0].C*ep
}

// afVoce is the monotonic closed form from the virgin state, n = +1, p = ep:
//
//	sigma = sigmaY + R(ep) + sum_i (C_i/gamma_i)(1 - exp(-gamma_i ep)) + sum_lin H ep
func afVoce(m *Material, ep float64) float64 {
	s := m.SigmaY + m.R(ep)
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		if t.Gamma == 0 {
			s += t.C * ep
		} else {
			s += t.C / t.Gamma * -math.Expm1(-t.Gamma*ep)
		}
	}
	return s
}

var katMonotonicCases = []katMonotonic{
	{
		name: "prager-bilinear", terms: []Term{{C: tE * 2e9 / (tE - 2e9)}}, epsMax: 0.05, inc: 1e-3,
		want: prager, tol: 1e-13, // round-off: the consistency condition is linear in dp, solved in one step
		source: "Prager 1956 (linear kinematic, alpha = H eps_p); Lubliner, Plasticity Theory, 1990, ch. 3 (bilinear curve, H = E Et/(E - Et))",
	},
	{
		name: "prager-bilinear-backward-euler", terms: []Term{{C: 5e9}}, epsMax: 0.05, inc: 7e-3, alg: BackwardEuler,
		want: prager, tol: 1e-13, // linear hardening: backward Euler is exact (Simo and Hughes 1998, ch. 1)
		source: "Prager 1956; Simo and Hughes, Computational Inelasticity, 1998, ch. 1 (return mapping exact for linear hardening)",
	},
	{
		name: "armstrong-frederick", terms: []Term{{C: 40e9, Gamma: 300}}, epsMax: 0.04, inc: 2e-3,
		want: afVoce, tol: 1e-12, // round-off of the closed-form branch solution (exact algorithm), increment 2e-3 is deliberately coarse
		source: "Armstrong and Frederick 1966; Lemaitre and Chaboche, Mechanics of Solid Materials, 1990, ch. 5: alpha = (C/gamma)(1 - exp(-gamma eps_p))",
	},
	{
		name: "chaboche-3-terms-voce", terms: []Term{{C: 60e9, Gamma: 600}, {C: 15e9, Gamma: 80}, {C: 2e9, Gamma: 8}},
		iso: Isotropic{Kind: IsoVoce, Q: 40e6, B: 12}, epsMax: 0.1, inc: 5e-3,
		want: afVoce, tol: 1e-12, // round-off, as above
		source: "Chaboche, Int. J. Plasticity 24, 2008 (superposed AF terms); Voce 1948 (R = Q (1 - exp(-b p)))",
	},
	{
		name: "voce-only", iso: Isotropic{Kind: IsoVoce, Q: 120e6, B: 20}, epsMax: 0.2, inc: 1e-2,
		want: afVoce, tol: 1e-12, // round-off
		source: "Voce, J. Inst. Metals 74, 1948: sigma = sigmaY + Q (1 - exp(-b eps_p))",
	},
	{
		name: "voce-softening", iso: Isotropic{Kind: IsoVoce, Q: -60e6, B: 15}, epsMax: 0.2, inc: 1e-2,
		want: afVoce, tol: 1e-12, // round-off
		source: "Voce 1948 with Q < 0 (cyclic softening form, Lemaitre and Chaboche 1990, ch. 5)",
	},
	{
		name: "armstrong-frederick-plus-linear-isotropic", terms: []Term{{C: 40e9, Gamma: 300}}, iso: Isotropic{Kind: IsoLinear, K: 1.5e9}, epsMax: 0.04, inc: 2e-3,
		want: afVoce, tol: 1e-12, // round-off
		source: "Armstrong and Frederick 1966 with linear isotropic hardening R = K p (Lemaitre and Chaboche 1990, ch. 5)",
	},
	{
		name: "linear-isotropic-plus-prager", terms: []Term{{C: 3e9}}, iso: Isotropic{Kind: IsoLinear, K: 1e9}, epsMax: 0.03, inc: 1e-3,
		want: afVoce, tol: 1e-13, // round-off, linear consistency
		source: "Lubliner, Plasticity Theory, 1990, ch. 3 (combined linear hardening, slope H + K in stress vs plastic strain)",
	},
}

// TestKnownAnswersMonotonic runs every monotonic known-answer case: after
// each plastic increment the stress must match the closed form at the
// increment's plastic strain, and compression must mirror tension.
func TestKnownAnswersMonotonic(t *testing.T) {
	for _, c := range katMonotonicCases {
		t.Run(c.name, func(t *testing.T) {
			m := mustMaterial(t, c.terms, c.iso)
			set := &Settings{Algorithm: c.alg}
			for _, sign := range []float64{1, -1} {
				_, hist, _ := run1D(t, &m, State1D{}, Path1D{Targets: []float64{sign * c.epsMax}, MaxIncrement: c.inc}, set)
				plastic := 0
				for i, s := range hist {
					if s.P == 0 {
						if got, want := s.Sigma, tE*s.Eps; relErr(got, want) > 1e-15 {
							t.Errorf("sign %v, increment %d: elastic stress %g, want E eps = %g", sign, i, got, want)
						}
						continue
					}
					plastic++
					want := sign * c.want(&m, s.P)
					if d := math.Abs(s.Sigma-want) / m.SigmaY; d > c.tol {
						t.Errorf("sign %v, increment %d (eps_p %.6g): sigma %.15g, want %.15g (|d|/sigmaY = %.3g > %.3g)\nsource: %s",
							sign, i, s.EpsP, s.Sigma, want, d, c.tol, c.source)
					}
					if relErr(s.EpsP, sign*s.P) > 1e-15 {
						t.Errorf("monotonic: eps_p %g != sign * p %g", s.EpsP, sign*s.P)
					}
				}
				if plastic == 0 {
					t.Fatal("path never yielded: the case checks nothing")
				}
			}
		})
	}
}

// TestMoveExpm1: the factor exp(-rate dp) - 1 moved from dp - delta to dp
// agrees with math.Expm1(-rate dp) to round-off relative to itself, for
// small moves (the Taylor branch) and large ones, including moves that
// would overflow exp and tiny dp where exp(x) rounds to 1. Bound: the
// Taylor remainder after x^6 is below |x|^7/5040 <= 2e-25 |x| for |x| <=
// 1e-3 (Lagrange remainder), so the difference is the round-off of the
// two evaluations and of the product, a few ulp (1e-15 relative allowed).
func TestMoveExpm1(t *testing.T) {
	cases := []struct{ rate, dp, delta float64 }{
		{3000, 1e-7, 1e-7}, {3000, 1e-7, 2e-8}, {3000, 2e-20, 1e-20}, {50, 1e-3, 1e-5},
		{2950, 0.0448, -0.47}, {2950, 0.514, 0.514}, {0.5, 3, 1e-4}, {10, 1e-300, 1e-300},
	}
	for _, c := range cases {
		em0 := math.Expm1(-c.rate * (c.dp - c.delta))
		got, want := moveExpm1(em0, c.rate, c.dp, c.delta), math.Expm1(-c.rate*c.dp)
		if relErr(got, want) > 1e-15 {
			t.Errorf("moveExpm1(rate %g, dp %g, delta %g) = %.17g, math.Expm1 = %.17g", c.rate, c.dp, c.delta, got, want)
		}
	}
}
