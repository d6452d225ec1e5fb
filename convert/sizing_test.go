package convert_test

import (
	"fmt"
	"testing"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker/cardspace"
)

// spec maps a canonical card to a checks.Spec as the verification does
// (worker.Spec, which convert's tests cannot import without a cycle).
func spec(t *testing.T, n *schema.Card) checks.Spec {
	t.Helper()
	m, err := convert.Material(n)
	if err != nil {
		t.Fatal(err)
	}
	v := n.Verification
	s := checks.Spec{Material: m, Profile: v.Profile, MonotonicStrain: *v.MonotonicStrain, StrainAmplitudes: v.StrainAmplitudes, Cycles: *v.Cycles}
	if r := v.Ratcheting; r != nil {
		s.Ratcheting = &checks.Ratcheting{MeanStress: r.MeanStress, StressAmplitude: r.StressAmplitude, Cycles: r.Cycles}
	}
	for _, r := range v.References {
		s.References = append(s.References, checks.Reference{Name: r.Name, Kind: r.Kind, Control: r.Control, Points: r.Points})
	}
	return s
}

// TestSizingInStepWithChecks: convert.Sizing and checks.Spec.Resolve apply
// the same limits: the same numbers, and on a grid of stated cases around
// the limits an error from one exactly when the other refuses. Card of our
// own: E 200 GPa, sigmaY 250 MPa, one AF term (40 GPa, 200).
func TestSizingInStepWithChecks(t *testing.T) {
	if convert.MaxStrain != checks.MaxStrain || convert.MaxPathYields != checks.MaxPathYields {
		t.Fatalf("limits differ: convert %g, %d; checks %g, %d", convert.MaxStrain, convert.MaxPathYields, checks.MaxStrain, checks.MaxPathYields)
	}
	var blocks []string
	for _, e := range []float64{0.05, 0.1, 0.1001} {
		blocks = append(blocks, fmt.Sprintf("monotonic_strain: %g", e))
	}
	for _, a := range []float64{0.02, 0.05, 0.1, 0.1001} {
		blocks = append(blocks, fmt.Sprintf("strain_amplitudes: [0.005, %g]", a))
	}
	for _, mean := range []float64{0, 60, 100} {
		for _, amp := range []float64{260, 300, 340} {
			for _, n := range []int{10, 20, 1000, 2000} {
				blocks = append(blocks, fmt.Sprintf("ratcheting: {mean_stress: %g, stress_amplitude: %g, cycles: %d}", mean, amp, n))
			}
		}
	}
	refused := 0
	for _, b := range blocks {
		card := "format: matgate.card/1\nid: sizing\nrevision: 1\ntitle: t\nsource: Invented for a matgate test.\nunits: {stress: MPa}\n" +
			"elastic: {youngs_modulus: 200000, poisson_ratio: 0.3}\nplasticity:\n  yield_stress: 250\n  kinematic:\n    - {model: armstrong_frederick, c: 40000, gamma: 200}\n" +
			"verification:\n  " + b + "\n"
		doc, err := schema.Decode("sizing.yaml", []byte(card), nil)
		if err != nil {
			t.Fatalf("%s: %v", b, err)
		}
		n, err := convert.Normalize(doc.Card, nil)
		if err != nil {
			t.Fatalf("%s: %v", b, err)
		}
		ds := convert.Sizing(doc, n)
		_, rerr := spec(t, n).Resolve()
		if ds.HasErrors() != (rerr != nil) {
			t.Errorf("%s: convert says %v, checks says %v", b, ds, rerr)
		}
		if rerr != nil {
			refused++
		}
	}
	if refused == 0 || refused == len(blocks) {
		t.Errorf("%d of %d stated cases refused: the grid must straddle the limits", refused, len(blocks))
	}
	t.Logf("%d of %d stated cases refused", refused, len(blocks))
}

// TestDefaultsWithinLimits: the defaults of random plausible cards (the
// card space of worker/cardspace) are accepted by checks.Spec.Resolve, so
// every default case is within the small-strain limit and the budget.
func TestDefaultsWithinLimits(t *testing.T) {
	for i := 0; i < 200; i++ {
		doc, err := schema.Decode("c.yaml", cardspace.Card(20261202, i), nil)
		if err != nil {
			t.Fatal(err)
		}
		n, ds := convert.Prepare(doc, nil)
		if ds.HasErrors() {
			t.Fatalf("card %d: %v", i, ds)
		}
		if _, err := spec(t, n).Resolve(); err != nil {
			t.Errorf("card %d: defaults refused: %v", i, err)
		}
	}
}
