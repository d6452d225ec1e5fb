package checks

import (
	"context"
	"math"
	"testing"

	"matgate/checks/plastic"
)

// TestTransientTail: the remainder estimate of a decaying per-cycle
// sequence is at least the true remainder of sums of geometric modes of
// one sign (the sum of a geometric series, by hand), also when a fast mode
// hides a slow one that only the card's rate model knows, and refuses
// changes that are not a monotone decay.
func TestTransientTail(t *testing.T) {
	const N = 40
	seq := func(f func(k int) float64) []float64 {
		q := make([]float64, N)
		for k := range q {
			q[k] = f(k + 1)
		}
		return q
	}
	rows := []struct {
		name     string
		q        []float64
		rhoModel float64
		rest     float64 // true |q_N - q_inf|; NaN: want a refusal
		loose    float64 // the estimate may exceed rest by this factor
	}{
		{"one mode, rate 0.9", seq(func(k int) float64 { return 100 + 5*math.Pow(0.9, float64(k)) }), 0, 5 * math.Pow(0.9, N), 3},
		{"one mode, rate 0.3", seq(func(k int) float64 { return 100 - 5*math.Pow(0.3, float64(k)) }), 0, 5 * math.Pow(0.3, N), 3},
		// A fast mode that still dominates the changes hides a slow one:
		// observed ratios near 0.8, the slow rate 0.99 (as on a card with
		// gamma 24 and gamma 2 terms).
		{"fast mode hides a slow one", seq(func(k int) float64 {
			return 100 + 50*math.Pow(0.8, float64(k)) + 1e-4*math.Pow(0.99, float64(k))
		}), 0.99, 50*math.Pow(0.8, N) + 1e-4*math.Pow(0.99, N), 100},
		{"converged to round-off", seq(func(k int) float64 { return 100 + 1e-14*float64(k%2) }), 0, 0, 1},
		// Modes of opposite signs, the slow one dominant by now: one sign.
		{"modes of opposite signs, settled", seq(func(k int) float64 {
			return 100 + 5*math.Pow(0.5, float64(k)) - 5*math.Pow(0.9, float64(k))
		}), 0, 5 * (math.Pow(0.9, N) - math.Pow(0.5, N)), 3},
		// A slow mode of the opposite sign about to take over (changes 0.8
		// of the fast mode's): the remainder, 0.127, is twice what the last
		// change suggests, so the estimate must be refused (as a mean
		// stress that overshoots zero under Voce softening).
		{"slow mode of the opposite sign taking over", seq(func(k int) float64 {
			return 100 + 50*math.Pow(0.8, float64(k)) - 0.2*math.Pow(0.99, float64(k))
		}), 0.99, math.NaN(), 0},
		{"oscillating decay", seq(func(k int) float64 { return 100 + 5*math.Pow(-0.5, float64(k)) }), 0, math.NaN(), 0},
		{"too few cycles", []float64{1, 2, 3, 4}, 0, math.NaN(), 0},
	}
	for _, row := range rows {
		t.Run(row.name, func(t *testing.T) {
			floor := tailFloor * 100
			tail, why := transientTail(row.q, floor, row.rhoModel)
			if math.IsNaN(row.rest) {
				if why == "" {
					t.Fatalf("estimated %g, want a refusal", tail)
				}
				return
			}
			if why != "" {
				t.Fatal(why)
			}
			if tail < row.rest {
				t.Errorf("estimate %g below the true remainder %g", tail, row.rest)
			}
			if tail > row.loose*row.rest+2*floor {
				t.Errorf("estimate %g more than %g times the true remainder %g", tail, row.loose, row.rest)
			}
		})
	}
}

// TestIssue9Cards runs the cards of issue 9 whose correct results failed
// a check, each through every case: they must pass, and the check they
// failed must run (not be omitted). Parameters copied from the cards, in
// Pa; the failure each showed before is named.
func TestIssue9Cards(t *testing.T) {
	mat := func(E, nu, sy float64, terms []plastic.Term, iso plastic.Isotropic) plastic.Material {
		m, err := plastic.NewMaterial(E, nu, sy, terms, iso)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	plasticModulus := func(E, Et float64) float64 { return E * Et / (E - Et) }
	E289, E34 := 1.0715e11, 1.94921e11
	const psi = 6894.757293168 // Pa (NIST SP 811, 2008, B.9; see demo_test.go)
	E469, sy469 := 2.98934e7*psi, 120153*psi
	rows := []struct {
		name    string
		spec    Spec
		want    string // the check that failed before
		omitted bool   // want is omitted (its reference cannot be applied), not run
	}{
		{"one Armstrong-Frederick term: relaxed mean stress off by 417 Pa against a 120 Pa memory bound",
			Spec{Material: mat(195000e6, 0.3, 271.7e6, []plastic.Term{{C: 50023.7e6, Gamma: 334.998}}, plastic.Isotropic{})},
			"relaxed mean stress", false},
		{"four AF terms and a linear term: a slow mode under a fast one, which an estimate from the observed ratios alone missed (card space 289)",
			Spec{Material: mat(E289, 0.319, 7.57453e8, []plastic.Term{{C: 9.93714e11, Gamma: 1514.43}, {C: 7.99908e9, Gamma: 199.597}, {C: 8.98359e9, Gamma: 24.0759}, {C: 3.66305e8, Gamma: 2}, {C: plasticModulus(E289, 4.93838e9)}}, plastic.Isotropic{}),
				StrainAmplitudes: []float64{0.0141, 0.0283}},
			"stabilized stress amplitude", false},
		{"four AF terms and Voce: relaxed mean stress, which the same estimate missed (card space 271)",
			Spec{Material: mat(194.713e9, 0.2894, 0.507079e9, []plastic.Term{{C: 694.022e9, Gamma: 2041.51}, {C: 119.088e9, Gamma: 260.833}, {C: 8.30979e9, Gamma: 33.7129}, {C: 0.550053e9, Gamma: 3.89476}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 0.23977e9, B: 40.1246})},
			"relaxed mean stress", false},
		{"linear term and Voce under stress cycling: dissipation at tiny dp (card space 34)",
			Spec{Material: mat(E34, 0.3029, 2.95429e8, []plastic.Term{{C: plasticModulus(E34, 6.15303e8)}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 1.63115e8, B: 20.1098}),
				Ratcheting: &Ratcheting{MeanStress: 5.909e7, StressAmplitude: 3.545e8, Cycles: 20}},
			"non-negative dissipation", false},
		{"Voce alone: step-size convergence of the loop area (card space 166)",
			Spec{Material: mat(205335e6, 0.3002, 749.329e6, nil, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 33.8533e6, B: 13.1857}),
				StrainAmplitudes: []float64{0.0073, 0.0146}},
			"step-size convergence", false},
		{"a linear term and Voce softening faster than it hardens (H + Q b < 0): the stress-controlled increment stepped by tol/E past the dip and gave up after 100 (card space 469)",
			Spec{Material: mat(E469, 0.3015, sy469, []plastic.Term{{C: plasticModulus(E469, 198273*psi)}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: -8461.95 * psi, B: 54.3109}),
				Ratcheting: &Ratcheting{MeanStress: 0.025 * sy469, StressAmplitude: 1.025 * sy469, Cycles: 20}},
			"accumulated ratchet strain", false},
		{"four AF terms and Voce softening: the mean stress overshoots zero, a slow mode of the opposite sign takes over (card space 926)",
			Spec{Material: mat(7.26667e10, 0.333, 2.50349e8, []plastic.Term{{C: 1.93639e10, Gamma: 1535.48}, {C: 5.63895e10, Gamma: 233.83}, {C: 9.40913e9, Gamma: 46.0105}, {C: 1.88997e8, Gamma: 4.93545}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: -1.89396e7, B: 1.04368}),
				StrainAmplitudes: []float64{0.00689, 0.0138}},
			"relaxed mean stress", true},
	}
	for _, row := range rows {
		t.Run(row.name, func(t *testing.T) {
			res, err := Run(context.Background(), row.spec)
			if err != nil {
				t.Fatal(err)
			}
			found, omitted := false, false
			for _, c := range res.Cases {
				for _, o := range c.Omitted {
					omitted = omitted || o.Check == row.want
				}
				for _, ch := range c.Checks {
					found = found || ch.Name == row.want
					if !ch.Pass {
						t.Errorf("%s / %s: value %.17g ref %.17g tol %.3g (%s)", c.Name, ch.Name, ch.Value, ch.Reference, ch.Tolerance, ch.ToleranceBasis)
					}
				}
			}
			if found == row.omitted || omitted != row.omitted {
				t.Errorf("check %q: run %v, omitted %v; want omitted %v", row.want, found, omitted, row.omitted)
			}
		})
	}
}

// memory is the remaining memory of the virgin state at accumulated
// plastic strain p under a common plastic-strain history, in Pa:
//
//	sum_AF (2 C_i/gamma_i) exp(-gamma_i p) + |Q| exp(-b p)
//
// (derived here: two solutions of d alpha = C d eps_p - gamma alpha dp
// differ by their initial difference times exp(-gamma p)); +Inf under
// linear isotropic hardening. It is no bound under strain control (the
// plastic strain history moves with the state; the stabilized checks use
// transientTail instead); TestCircleSteadyStateAttracts uses it to choose
// how many turns to run before it compares with the steady state.
func memory(m *plastic.Material, p float64) float64 {
	if m.Iso.Kind == plastic.IsoLinear && m.Iso.K > 0 {
		return math.Inf(1)
	}
	s := 0.0
	for i := 0; i < m.N; i++ {
		if t := m.Terms[i]; !t.Linear() {
			s += 2 * t.C / t.Gamma * math.Exp(-t.Gamma*p)
		}
	}
	if m.Iso.Kind == plastic.IsoVoce {
		s += math.Abs(m.Iso.Q) * math.Exp(-m.Iso.B*p)
	}
	return s
}
