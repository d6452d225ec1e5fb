package convert

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"matgate/schema"
)

// prepare decodes and prepares a card given as text; it fails the test on
// any error diagnostic.
func prepare(t *testing.T, name, text string) *schema.Card {
	t.Helper()
	doc, err := schema.Decode(name, []byte(text), nil)
	if err != nil {
		t.Fatalf("decode %s: %v", name, err)
	}
	n, ds := Prepare(doc, nil)
	if ds.HasErrors() {
		t.Fatalf("prepare %s:\n%v", name, ds)
	}
	return n
}

const cardMPa = `format: matgate.card/1
id: unit-test-steel
revision: 1
title: Test card
source: invented for a unit test
units: {stress: MPa, temperature: C}
temperature: 20
elastic: {youngs_modulus: 205000, poisson_ratio: 0.3}
plasticity:
  yield_stress: 355
  kinematic:
    - {model: linear, tangent_modulus: 1800}
    - {model: armstrong_frederick, c: 42000, gamma: 260}
  isotropic: {model: voce, q: 40, b: 8}
`

// The same card as cardMPa: JSON, keys reordered, stresses in Pa, the
// temperature in K, the linear term as the plastic modulus that
// H = E Et / (E - Et) gives (205000*1800/203200 MPa = 1815.9448818897638 MPa).
const cardPa = `{"units": {"temperature": "K", "stress": "Pa"}, "temperature": 293.15,
 "revision": 1, "id": "unit-test-steel", "format": "matgate.card/1",
 "title": "Test card", "source": "invented for a unit test",
 "plasticity": {"isotropic": {"b": 8, "q": 40e6, "model": "voce"},
   "kinematic": [{"tangent_modulus": 1800e6, "model": "linear"},
                 {"gamma": 260, "c": 42000e6, "model": "armstrong_frederick"}],
   "yield_stress": 355e6},
 "elastic": {"poisson_ratio": 0.3, "youngs_modulus": 205000e6}}`

func TestDigestStable(t *testing.T) {
	a := prepare(t, "a.yaml", cardMPa)
	b := prepare(t, "b.json", cardPa)
	if a.Digest != b.Digest {
		t.Errorf("same card in MPa/YAML and Pa/JSON: digests differ\n%s\n%s", a.Digest, b.Digest)
	}
	if diff := cmp.Diff(a, b); diff != "" {
		t.Errorf("canonical forms differ (-MPa +Pa):\n%s", diff)
	}
	if !strings.HasPrefix(a.Digest, "sha256:") || len(a.Digest) != len("sha256:")+64 {
		t.Errorf("digest %q is not sha256:<64 hex>", a.Digest)
	}
	// A change of one parameter changes the digest.
	c := prepare(t, "c.yaml", strings.Replace(cardMPa, "gamma: 260", "gamma: 261", 1))
	if c.Digest == a.Digest {
		t.Error("a changed gamma kept the digest")
	}
}

func TestNormalizeIdempotent(t *testing.T) {
	files, _ := filepath.Glob("../testdata/cards/*.*")
	texts := map[string]string{"inline-mpa.yaml": cardMPa, "inline-pa.json": cardPa}
	for _, f := range files {
		if ext := filepath.Ext(f); ext != ".yaml" && ext != ".json" {
			continue
		}
		b, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		texts[filepath.Base(f)] = string(b)
	}
	if len(texts) < 6 {
		t.Fatalf("expected the four demo cards in ../testdata/cards and two inline cards, found %d texts", len(texts))
	}
	for name, text := range texts {
		t.Run(name, func(t *testing.T) {
			once := prepare(t, name, text)
			enc, err := Indented(once)
			if err != nil {
				t.Fatal(err)
			}
			// The canonical card is a valid card, with its own derived
			// block and digest, and normalizing it changes nothing.
			twice := prepare(t, "canonical.json", string(enc))
			if diff := cmp.Diff(once, twice); diff != "" {
				t.Errorf("normalize twice (-once +twice):\n%s", diff)
			}
			enc2, _ := Indented(twice)
			if string(enc) != string(enc2) {
				t.Error("canonical encodings differ byte-wise")
			}
		})
	}
}

func TestDerived(t *testing.T) {
	n := prepare(t, "a.yaml", cardMPa)
	d := n.Derived
	// H = E Et / (E - Et) (Lubliner, Plasticity Theory, 1990, sec. 3.3),
	// worked by hand: 205000*1800/203200 MPa.
	wantH := 205000.0 * 1800 / 203200 * 1e6
	tests := []struct {
		name      string
		got, want float64
		rel       float64 // round-off of the unit conversion and round15
	}{
		{"yield strain", d.YieldStrain, 355.0 / 205000, 1e-14},
		{"H", *d.Kinematic[0].PlasticModulus, wantH, 1e-14},
		{"Et", *d.Kinematic[0].TangentModulus, 1800e6, 1e-14},
		{"C/gamma", *d.Kinematic[1].Saturation, 42000e6 / 260, 1e-14},
	}
	for _, tc := range tests {
		if !relClose(tc.got, tc.want, tc.rel) {
			t.Errorf("%s = %.17g, want %.17g", tc.name, tc.got, tc.want)
		}
	}
	if d.SaturationStress != nil {
		t.Error("a linear term with H > 0 makes hardening unbounded, but a saturation stress was derived")
	}
	// Without the linear term: 355 + 42000/260 + 40 MPa.
	af := prepare(t, "af.yaml", strings.Replace(cardMPa, "    - {model: linear, tangent_modulus: 1800}\n", "", 1))
	if s := af.Derived.SaturationStress; s == nil || !relClose(*s, (355+42000.0/260+40)*1e6, 1e-14) {
		t.Errorf("saturation stress %v, want %g", s, (355+42000.0/260+40)*1e6)
	}
}

func TestStatedDerivedAndDigestChecked(t *testing.T) {
	n := prepare(t, "a.yaml", cardMPa)
	enc, _ := Indented(n)
	// A digest that is not the content's.
	wrong := strings.Replace(string(enc), n.Digest, "sha256:"+strings.Repeat("0", 64), 1)
	doc, err := schema.Decode("t.json", []byte(wrong), nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, ds := Prepare(doc, nil); len(ds) != 1 || ds[0].Pointer != "/digest" {
		t.Errorf("wrong digest: diagnostics %v, want one error at /digest", ds)
	}
	// A changed parameter with the old derived block: the derived values no
	// longer follow from the card.
	bad := strings.Replace(string(enc), "\"yield_stress\": 355000000", "\"yield_stress\": 360000000", 1)
	if bad == string(enc) {
		t.Fatal("test card encoding changed; update the replacement")
	}
	doc, err = schema.Decode("t.json", []byte(bad), nil)
	if err != nil {
		t.Fatal(err)
	}
	_, ds := Prepare(doc, nil)
	got := map[string]bool{}
	for _, d := range ds {
		got[d.Pointer] = true
	}
	for _, p := range []string{"/digest", "/derived/yield_strain"} {
		if !got[p] {
			t.Errorf("changed yield stress: no error at %s in\n%v", p, ds)
		}
	}
}
