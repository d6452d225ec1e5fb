package checks

import (
	"context"
	"math"
	"testing"

	"matgate/checks/plastic"
)

func mustMat(t *testing.T, E, sy float64, terms []plastic.Term, iso plastic.Isotropic) plastic.Material {
	t.Helper()
	m, err := plastic.NewMaterial(E, 0.3, sy, terms, iso)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

func responsesOf(t *testing.T, m *plastic.Material, load Spec) *Response {
	t.Helper()
	load.Material = *m
	r, err := load.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	resp, err := Responses(context.Background(), m, r)
	if err != nil {
		t.Fatal(err)
	}
	return resp
}

// TestCompareItself: a card compared with itself changes nothing.
// Expectation: the computation is deterministic; common practice, no source.
func TestCompareItself(t *testing.T) {
	m := mustMat(t, 195e9, 180e6, []plastic.Term{{C: 60e9, Gamma: 800}, {C: 2e9}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 60e6, B: 6})
	load := Spec{Ratcheting: &Ratcheting{MeanStress: 40e6, StressAmplitude: 200e6}}
	a, b := responsesOf(t, &m, load), responsesOf(t, &m, load)
	changes := Compare(a, b)
	if len(changes) < 8 {
		t.Fatalf("only %d quantities: %+v", len(changes), changes)
	}
	for _, c := range changes {
		if c.Abs == nil || math.Abs(*c.Abs) > 1e-15*math.Abs(*c.Old) {
			t.Errorf("%s: change %s (note %q), want none", c.Name, fmtPtr(c.Abs), c.Note)
		}
	}
}

// TestCompareYieldStressOfBilinearCard: raising the yield stress of a
// bilinear (Prager) card by 5 % raises the stress at every plastic strain
// by dSigmaY (1 - Et/E) and the shear yield stress by dSigmaY/sqrt(3):
// the bilinear curve sigma = sigmaY + Et (eps - sigmaY/E) (W. Prager, J.
// Appl. Mech. 23, 1956, linear kinematic rule; the bilinear curve is a
// fact of the trade) and von Mises' shear yield (1913). Tolerance 1e-9
// relative to the change: the exact 1D algorithm is exact to round-off.
func TestCompareYieldStressOfBilinearCard(t *testing.T) {
	const E, sy, H = 200e9, 250e6, 2e9
	et := E * H / (E + H)
	old := mustMat(t, E, sy, []plastic.Term{{C: H}}, plastic.Isotropic{})
	new := mustMat(t, E, 1.05*sy, []plastic.Term{{C: H}}, plastic.Isotropic{})
	load := Spec{Material: old}
	changes := Compare(responsesOf(t, &old, load), responsesOf(t, &new, load))
	want := map[string]float64{
		"shear yield stress": 0.05 * sy / math.Sqrt(3),
	}
	for _, e := range MonotonicStrains {
		want["tension stress at strain "+fmtG(e)] = 0.05 * sy * (1 - et/E)
	}
	found := 0
	for _, c := range changes {
		w, ok := want[c.Name]
		if !ok {
			continue
		}
		found++
		if c.Abs == nil || math.Abs(*c.Abs-w) > 1e-9*w {
			t.Errorf("%s: change %s Pa, want %.12g Pa", c.Name, fmtPtr(c.Abs), w)
		}
	}
	if found != len(want) {
		t.Errorf("found %d of the %d quantities: %+v", found, len(want), changes)
	}
}

// TestResponsesAgainstClosedForms: for one Armstrong-Frederick term the
// stabilized stress amplitude is sigmaY + (C/gamma) tanh(gamma dEpsP/2)
// with 2 eps_a = dEpsP + 2 sigma_a/E (J.-L. Chaboche, Int. J. Plasticity
// 2, 1986, uniaxial integration of the nonlinear kinematic rule; equation
// number from memory, not given), and the steady ratchet strain per cycle
// is (1/gamma) ln((a^2 - alpha-^2)/(a^2 - alpha+^2)) (derived from the AF
// branch solutions, see singleTermRatchet). Tolerances: the transient of
// the loop after 200 cycles at gamma dEpsP ~ 2.6 is below 1e-200 of the
// start (decay exp(-2 gamma dEpsP) per cycle), so 1e-9 relative is round-
// off and the stress-control residual (DriverTol 1e-11 sigmaY, over the
// smallest tangent) with room.
func TestResponsesAgainstClosedForms(t *testing.T) {
	const E, sy, C, g = 200e9, 250e6, 50e9, 500
	m := mustMat(t, E, sy, []plastic.Term{{C: C, Gamma: g}}, plastic.Isotropic{})
	const amp = 0.004
	load := Spec{StrainAmplitudes: []float64{amp}, Cycles: 200, Ratcheting: &Ratcheting{MeanStress: 50e6, StressAmplitude: 260e6, Cycles: 5}}
	resp := responsesOf(t, &m, load)
	_, sA, _, ok := stabilizedLoop(&m, sy, amp)
	if !ok {
		t.Fatal("no stabilized loop")
	}
	delta, ok := singleTermRatchet(&m, 50e6-260e6, 50e6+260e6)
	if !ok {
		t.Fatal("no ratchet closed form")
	}
	want := map[string]float64{"stress amplitude at strain amplitude 0.004": sA, "ratchet strain per cycle": delta}
	for _, q := range resp.Quantities {
		if w, ok := want[q.Name]; ok {
			if math.Abs(q.Value-w) > 1e-9*math.Abs(w) {
				t.Errorf("%s = %.12g, closed form %.12g", q.Name, q.Value, w)
			}
			delete(want, q.Name)
		}
	}
	if len(want) > 0 {
		t.Errorf("missing: %v", want)
	}
}

func fmtPtr(p *float64) string {
	if p == nil {
		return "none"
	}
	return fmtG(*p)
}
