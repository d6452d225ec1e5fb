package convert

import (
	"errors"
	"os"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"matgate/schema"
)

// demoTable is the temperature-dependent demo card, normalized.
func demoTable(t *testing.T) *schema.Card {
	t.Helper()
	data, err := os.ReadFile("../testdata/temperature/canopy-steel-hot.yaml")
	if err != nil {
		t.Fatal(err)
	}
	return prepared(t, "canopy-steel-hot.yaml", string(data))
}

func prepared(t *testing.T, name, text string) *schema.Card {
	t.Helper()
	doc, err := schema.Decode(name, []byte(text), nil)
	if err != nil {
		t.Fatal(err)
	}
	n, ds := Prepare(doc, nil)
	if ds.HasErrors() {
		t.Fatalf("%s: %v", name, ds)
	}
	return n
}

// The card at a tabulated temperature is, byte for byte, the canonical
// form of the single-temperature card written by hand with that column's
// values (testdata/temperature/canopy-steel-hot-200c.yaml), but for its
// name.
func TestAtTabulatedIsSingleCard(t *testing.T) {
	n := demoTable(t)
	got, err := At(n, 473.15)
	if err != nil {
		t.Fatal(err)
	}
	data, err := os.ReadFile("../testdata/temperature/canopy-steel-hot-200c.yaml")
	if err != nil {
		t.Fatal(err)
	}
	want := prepared(t, "canopy-steel-hot-200c.yaml", string(data))
	// The same card but for its name: give it the table's, and the digest
	// that follows.
	want.ID, want.Title = got.ID, got.Title
	if want.Digest, err = Digest(want); err != nil {
		t.Fatal(err)
	}
	gb, _ := Canonical(got)
	wb, _ := Canonical(want)
	if string(gb) != string(wb) {
		t.Errorf("card at 473.15 K differs from the single-temperature card:\n got %s\nwant %s", gb, wb)
	}
	for k, T := range n.Temperatures {
		s, err := At(n, T)
		if err != nil {
			t.Fatal(err)
		}
		if *s.Temperature != T || s.Elastic.YoungsModulus != n.Tabulated["/elastic/youngs_modulus"][k] {
			t.Errorf("at %g K: temperature %g, E %g", T, *s.Temperature, s.Elastic.YoungsModulus)
		}
	}
}

// Linear interpolation against values computed by hand from the demo card:
// at 125 C, a quarter of the way from 100 C to 200 C, and at 150 C, half
// way.
func TestAtInterpolates(t *testing.T) {
	n := demoTable(t)
	for _, tc := range []struct {
		T                         float64 // K
		E, sy, c, gamma, H, q, nu float64 // SI
	}{
		// 205 - 0.25 (205 - 195) = 202.5 GPa; 335 - 0.25 30 = 327.5 MPa;
		// 38 - 0.25 3 = 37.25 GPa; 250 + 0.25 10 = 252.5; 1.45 - 0.25 0.1 =
		// 1.425 GPa; 28 - 0.25 3 = 27.25 MPa.
		{398.15, 202.5e9, 327.5e6, 37.25e9, 252.5, 1.425e9, 27.25e6, 0.3},
		// half way: 200 GPa, 320 MPa, 36.5 GPa, 255, 1.4 GPa, 26.5 MPa.
		{423.15, 200e9, 320e6, 36.5e9, 255, 1.4e9, 26.5e6, 0.3},
	} {
		s, err := At(n, tc.T)
		if err != nil {
			t.Fatal(err)
		}
		k := s.Plasticity.Kinematic
		got := []float64{s.Elastic.YoungsModulus, s.Plasticity.YieldStress, *k[0].C, *k[0].Gamma, *k[1].PlasticModulus, *s.Plasticity.Isotropic.Q, s.Elastic.PoissonRatio}
		want := []float64{tc.E, tc.sy, tc.c, tc.gamma, tc.H, tc.q, tc.nu}
		// Normalize rounds to 15 digits: agreement to 1e-14 relative.
		for i := range want {
			if !relClose(got[i], want[i], 1e-14) {
				t.Errorf("at %g K, parameter %d: got %.17g, want %.17g", tc.T, i, got[i], want[i])
			}
		}
		if s.Verification.MonotonicStrain == nil || s.Derived == nil {
			t.Errorf("at %g K: the interpolated card is not normalized", tc.T)
		}
	}
}

func TestAtOutsideRange(t *testing.T) {
	n := demoTable(t)
	for _, T := range []float64{293.14, 673.16, 0, 1e4} {
		_, err := At(n, T)
		var re *RangeError
		if !errors.Is(err, ErrOutOfRange) || !errors.As(err, &re) || re.Lo != 293.15 || re.Hi != 673.15 {
			t.Errorf("At(%g K): %v, want the range 293.15 to 673.15 K refused", T, err)
		}
	}
	if _, err := At(n, 673.15); err != nil {
		t.Errorf("the last temperature is in range: %v", err)
	}
}

// Normalizing twice changes nothing; the digest covers every list value; a
// list of equal values is the same card as one number.
func TestNormalizeTable(t *testing.T) {
	n := demoTable(t)
	again, err := Normalize(n, nil)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(n, again); d != "" {
		t.Errorf("Normalize twice (-once +twice)\n%s", d)
	}
	m, _ := copyCard(n)
	m.Tabulated["/plasticity/kinematic/0/gamma"][3] = 271
	dm, err := Digest(m)
	if err != nil {
		t.Fatal(err)
	}
	if dm == n.Digest {
		t.Error("changing one tabulated value leaves the digest unchanged")
	}

	base := `format: matgate.card/1
id: t
revision: 1
title: t
source: Invented for a matgate test; not measured data.
units: {stress: MPa, temperature: C}
temperatures: [20, 400]
elastic: {youngs_modulus: [210000, 170000], poisson_ratio: NU}
plasticity:
  yield_stress: [355, 245]
`
	one := prepared(t, "one.yaml", strings.Replace(base, "NU", "0.3", 1))
	list := prepared(t, "list.yaml", strings.Replace(base, "NU", "[0.3, 0.3]", 1))
	if one.Digest != list.Digest {
		t.Errorf("poisson_ratio 0.3 and [0.3, 0.3]: digests %s and %s", one.Digest, list.Digest)
	}
	if _, ok := list.Tabulated["/elastic/poisson_ratio"]; ok {
		t.Error("a list of equal values stays a list in the canonical card")
	}
}

// A single-temperature card is not affected by the tables: no
// temperatures, no tabulated values, the digest of its fields alone.
func TestSingleCardHasNoTable(t *testing.T) {
	data, err := os.ReadFile("../testdata/cards/ss-chaboche.yaml")
	if err != nil {
		t.Fatal(err)
	}
	n := prepared(t, "ss-chaboche.yaml", string(data))
	if n.IsTemperatureDependent() || n.Tabulated != nil {
		t.Errorf("temperatures %v, tables %v", n.Temperatures, n.Tabulated)
	}
	if _, err := At(n, 293.15); err == nil {
		t.Error("At on a single-temperature card: no error")
	}
}
