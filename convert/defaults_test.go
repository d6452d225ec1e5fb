package convert_test

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
)

// TestDefaultsInStepWithChecks: the defaults a canonical card carries are
// those checks.Spec applies to a spec without them, up to the 3-digit
// rounding convert applies for tidy cards (so 0.5 percent, and one cycle
// for the cycle count computed from a rounded amplitude).
func TestDefaultsInStepWithChecks(t *testing.T) {
	files, _ := filepath.Glob("../testdata/cards/*")
	for _, f := range files {
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		doc, err := schema.Decode(f, b, nil)
		if err != nil {
			t.Fatal(err)
		}
		doc.Card.Verification = nil // every default from convert
		table, ds := convert.Prepare(doc, nil)
		if ds.HasErrors() {
			t.Fatal(ds)
		}
		for _, n := range atEachTemperature(t, table) {
			defaultsInStep(t, f, n)
		}
	}
}

// atEachTemperature returns the card at each tabulated temperature of a
// temperature-dependent canonical card, the card itself otherwise.
func atEachTemperature(t *testing.T, n *schema.Card) []*schema.Card {
	t.Helper()
	if !n.IsTemperatureDependent() {
		return []*schema.Card{n}
	}
	var out []*schema.Card
	for _, T := range n.Temperatures {
		s, err := convert.At(n, T)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, s)
	}
	return out
}

func defaultsInStep(t *testing.T, f string, n *schema.Card) {
	t.Helper()
	m, err := convert.Material(n)
	if err != nil {
		t.Fatal(err)
	}
	r, err := checks.Spec{Material: m}.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	v := n.Verification
	close := func(name string, a, b float64) {
		if math.Abs(a-b) > 5e-3*math.Abs(b) {
			t.Errorf("%s: %s: convert %g, checks %g", f, name, a, b)
		}
	}
	close("monotonic strain", *v.MonotonicStrain, r.MonotonicStrain)
	if len(v.StrainAmplitudes) != len(r.StrainAmplitudes) {
		t.Fatalf("%s: amplitudes %v vs %v", f, v.StrainAmplitudes, r.StrainAmplitudes)
	}
	for i := range v.StrainAmplitudes {
		close("strain amplitude", v.StrainAmplitudes[i], r.StrainAmplitudes[i])
	}
	if d := *v.Cycles - r.Cycles; d < -1 || d > 1 {
		t.Errorf("%s: cycles: convert %d, checks %d", f, *v.Cycles, r.Cycles)
	}
}
