package worker

import (
	"context"
	"fmt"
	"strconv"
	"strings"
	"testing"
	"time"

	"matgate/checks"
	"matgate/checks/plastic"
	"matgate/convert"
	"matgate/schema"
)

// monotonicAF is the closed-form monotonic tension curve (see tension) of
// one Armstrong-Frederick term C, gamma (gamma = 0: a linear Prager term,
// C = H), yield sy and modulus E in any one stress unit, to the plastic
// strain epsPMax in n steps.
func monotonicAF(E, sy, C, gamma, epsPMax float64, n int) [][2]float64 {
	m, err := plastic.NewMaterial(E, 0.3, sy, []plastic.Term{{C: C, Gamma: gamma}}, plastic.Isotropic{})
	if err != nil {
		panic(err) // the test's own parameters
	}
	return tension(&m, epsPMax, n)
}

func scaleStress(pts [][2]float64, k float64) [][2]float64 {
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		out[i] = [2]float64{p[0], p[1] * k}
	}
	return out
}

func ptsYAML(pts [][2]float64) string {
	var ps []string
	for _, p := range pts {
		ps = append(ps, fmt.Sprintf("[%s, %s]", strconv.FormatFloat(p[0], 'g', 12, 64), strconv.FormatFloat(p[1], 'g', 12, 64)))
	}
	return "[" + strings.Join(ps, ", ") + "]"
}

// diagnoseCard decodes and prepares a card (MPa, one kinematic term given
// as YAML), runs Verify and returns the written card and the diagnoses.
func diagnoseCard(t *testing.T, term string, sy float64, ref [][2]float64) (*schema.Card, []checks.Diagnosis) {
	t.Helper()
	src := fmt.Sprintf(`format: matgate.card/1
id: diagnose-test
revision: 1
title: Test card for the diagnosis of a misreading
source: Invented for a matgate test; the reference is a closed form, not data.
units: {stress: MPa}
elastic: {youngs_modulus: 70000, poisson_ratio: 0.3}
plasticity:
  yield_stress: %g
  kinematic:
    - %s
verification:
  references:
    - {name: tension, kind: solver, points: %s}
`, sy, term, ptsYAML(ref))
	doc, err := schema.Decode("t.yaml", []byte(src), nil)
	if err != nil {
		t.Fatalf("decode: %v", err)
	}
	c, ds := convert.Prepare(doc, nil)
	if c == nil {
		t.Fatalf("prepare: %v", ds)
	}
	out, err := Verify(context.Background(), c, checks.Tool{Version: "test"}, time.Unix(0, 0).UTC())
	if err != nil {
		t.Fatal(err)
	}
	return doc.Card, out.Diagnoses
}

// TestDiagnose builds, for each misreading, a card with that very error
// (the reference is the closed form of the intended reading) and checks
// that the diagnosis names it, with the corrected value in the card's own
// words, and that it is the best match. The conversions are the
// references: H = E Et / (E - Et) (Lubliner, Plasticity Theory, 1990, sec.
// 3.3), eps = ln(1 + e), sigma = s (1 + e) (Dieter, Mechanical Metallurgy,
// 1986, ch. 8; from memory), the uniaxial modulus 3/2 C of the 3D law
// dX = C d eps_p (alpha = 3/2 X_11; Lemaitre and Chaboche 1990, ch. 5,
// from memory).
func TestDiagnose(t *testing.T) {
	const E, sy = 70000.0, 250.0 // MPa
	H := convert.TangentToPlastic(E, 14000)
	cases := []struct {
		name string
		term string
		ref  [][2]float64
		want checks.Misreading
		text string
	}{
		{
			// The intended plastic modulus is 14000; the card says it is a tangent modulus.
			name: "tangent read as plastic", term: "{model: linear, tangent_modulus: 14000}",
			ref: monotonicAF(E, sy, 14000, 0, 0.03, 15), want: checks.TangentAsPlastic,
			// Et = E H / (E + H) = 70000 x 14000 / 84000 = 11666.7
			text: "tangent_modulus 14000 MPa of kinematic term 1 is read as a plastic modulus (tangent modulus 11667 MPa)",
		},
		{
			// The intended tangent modulus is 14000; the card says it is the plastic modulus.
			name: "plastic read as tangent", term: "{model: linear, plastic_modulus: 14000}",
			ref: monotonicAF(E, sy, H, 0, 0.03, 15), want: checks.PlasticAsTangent,
			// H = 70000 x 14000 / 56000 = 17500
			text: "plastic_modulus 14000 MPa of kinematic term 1 is read as a tangent modulus (plastic modulus 17500 MPa)",
		},
		{
			// The reference file was written in kPa: 1000 times the MPa numbers.
			name: "stress unit", term: "{model: armstrong_frederick, c: 42000, gamma: 260}",
			ref: scaleStress(monotonicAF(E, sy, 42000, 260, 0.02, 20), 1e3), want: checks.StressUnit,
			text: "read in kPa rather than the card's MPa (a factor 0.001)",
		},
		{
			// The reference holds engineering values of the card's true curve, to 20 percent strain.
			// A linear term: its slope (about 4700 MPa) stays above the true stress (below 1200 MPa),
			// so the engineering curve has no maximum (Considere) and the conversion back is valid;
			// a saturating term would neck in engineering terms and the conversion is refused.
			name: "engineering reference", term: "{model: linear, plastic_modulus: 5000}",
			ref: mustConv(t, convert.TrueToEngineering, monotonicAF(E, sy, 5000, 0, 0.2, 40)), want: checks.EngineeringReference,
			text: "engineering stress and strain, converted to true values first",
		},
		{
			// The card was fitted to engineering values; the reference is the true curve.
			name: "engineering card", term: "{model: armstrong_frederick, c: 42000, gamma: 260}",
			ref: mustConv(t, convert.EngineeringToTrue, monotonicAF(E, sy, 42000, 260, 0.2, 40)), want: checks.EngineeringCard,
			text: "the card looks fitted to engineering stress and strain",
		},
		{
			// The intended uniaxial c is 3/2 x 42000 = 63000: the card copied a 3D c without the 2/3 factor.
			name: "tensor factor", term: "{model: armstrong_frederick, c: 42000, gamma: 260}",
			ref: monotonicAF(E, sy, 63000, 260, 0.02, 20), want: checks.TensorFactor,
			text: "c 42000 MPa of term 1 becomes 63000 MPa",
		},
		{
			// A yield stress 10 percent off is none of the misreadings.
			name: "none", term: "{model: armstrong_frederick, c: 42000, gamma: 260}",
			ref: monotonicAF(E, 1.1*sy, 42000, 260, 0.02, 20), want: "",
			text: "none of the usual misreadings",
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			written, ds := diagnoseCard(t, tc.term, sy, tc.ref)
			if len(ds) == 0 {
				t.Fatalf("no diagnosis: the reference check did not fail")
			}
			d := ds[0]
			msg := d.Describe(Wording(written))
			t.Log(msg)
			if d.Misreading != tc.want {
				t.Errorf("best misreading %q, want %q: %s", d.Misreading, tc.want, msg)
			}
			if !strings.Contains(msg, tc.text) {
				t.Errorf("message %q\nwant it to contain %q", msg, tc.text)
			}
			if d.MaxError <= d.Tolerance {
				t.Errorf("max error %g within tolerance %g: the card was not wrong", d.MaxError, d.Tolerance)
			}
			if tc.want != "" && !(d.Matched <= d.Tolerance) {
				t.Errorf("matched error %g above tolerance %g", d.Matched, d.Tolerance)
			}
			if len(d.Tried) < 8 {
				t.Errorf("%d trials, want every misreading tried: %+v", len(d.Tried), d.Tried)
			}
		})
	}
}

// TestDiagnoseNothingOnPass: a card that matches its reference gets no
// diagnosis.
func TestDiagnoseNothingOnPass(t *testing.T) {
	_, ds := diagnoseCard(t, "{model: armstrong_frederick, c: 42000, gamma: 260}", 250, monotonicAF(70000, 250, 42000, 260, 0.02, 20))
	if len(ds) != 0 {
		t.Errorf("diagnoses %+v for a passing card", ds)
	}
}

func mustConv(t *testing.T, f func(string, [][2]float64) ([][2]float64, error), pts [][2]float64) [][2]float64 {
	t.Helper()
	out, err := f("ref", pts)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// TestDiagnoseNecking: engineering values of a saturating card to 20
// percent strain run past their maximum (Considere: the engineering stress
// s = sigma exp(-eps) peaks where d sigma / d eps = sigma; Dieter,
// Mechanical Metallurgy, 1986, ch. 8, from memory). The diagnosis cuts them
// at the maximum, converts the rest to true values and names the
// engineering reading, with the points compared; before, such a curve got
// "closest: tensor-factor".
func TestDiagnoseNecking(t *testing.T) {
	ref := mustConv(t, convert.TrueToEngineering, monotonicAF(70000, 250, 42000, 260, 0.2, 40))
	peak := 0
	for i, p := range ref {
		if p[1] > ref[peak][1] {
			peak = i
		}
	}
	if peak == len(ref)-1 {
		t.Fatal("the engineering curve has no maximum: the test does not test the cut")
	}
	written, ds := diagnoseCard(t, "{model: armstrong_frederick, c: 42000, gamma: 260}", 250, ref)
	if len(ds) == 0 {
		t.Fatal("no diagnosis")
	}
	d := ds[0]
	msg := d.Describe(Wording(written))
	if d.Misreading != checks.EngineeringReference || d.Kept != peak+1 || !(d.Matched < 1e-9) || !strings.Contains(msg, "cut them") {
		t.Errorf("diagnosis %s, kept %d, matched %g; want engineering-reference on the %d points up to the maximum\n%s", d.Misreading, d.Kept, d.Matched, peak+1, msg)
	}
}
