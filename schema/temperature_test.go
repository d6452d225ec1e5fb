package schema

import (
	"encoding/json"
	"os"
	"testing"

	"github.com/google/go-cmp/cmp"
)

// A temperature-dependent card decodes with its lists in Tabulated (the
// struct field holding the first value) and encodes back with the lists in
// place; a card at one temperature has no Tabulated.
func TestTemperatureCardRoundTrip(t *testing.T) {
	data, err := os.ReadFile("../testdata/temperature/canopy-steel-hot.yaml")
	if err != nil {
		t.Fatal(err)
	}
	doc, err := Decode("canopy-steel-hot.yaml", data, nil)
	if err != nil {
		t.Fatal(err)
	}
	c := doc.Card
	if !c.IsTemperatureDependent() || len(c.Temperatures) != 5 {
		t.Fatalf("temperatures %v", c.Temperatures)
	}
	want := map[string][]float64{
		"/elastic/youngs_modulus":                 {210000, 205000, 195000, 185000, 170000},
		"/plasticity/yield_stress":                {355, 335, 305, 275, 245},
		"/plasticity/kinematic/0/c":               {40000, 38000, 35000, 31000, 27000},
		"/plasticity/kinematic/0/gamma":           {250, 250, 260, 270, 280},
		"/plasticity/kinematic/1/plastic_modulus": {1500, 1450, 1350, 1200, 1000},
		"/plasticity/isotropic/q":                 {30, 28, 25, 22, 18},
	}
	if d := cmp.Diff(want, c.Tabulated); d != "" {
		t.Errorf("Tabulated (-want +got)\n%s", d)
	}
	if c.Elastic.YoungsModulus != 210000 || *c.Plasticity.Kinematic[0].C != 40000 || c.Elastic.PoissonRatio != 0.3 {
		t.Errorf("struct fields do not hold the first values: E %g, c %g, nu %g", c.Elastic.YoungsModulus, *c.Plasticity.Kinematic[0].C, c.Elastic.PoissonRatio)
	}
	b, err := json.Marshal(c)
	if err != nil {
		t.Fatal(err)
	}
	var back Card
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(c, &back); d != "" {
		t.Errorf("JSON round trip (-want +got)\n%s", d)
	}
	doc2, err := Decode("again.json", b, nil)
	if err != nil {
		t.Fatalf("the encoding is not a valid card: %v", err)
	}
	if d := cmp.Diff(c, doc2.Card); d != "" {
		t.Errorf("decode of the encoding (-want +got)\n%s", d)
	}

	one, err := os.ReadFile("../testdata/cards/ss-chaboche.yaml")
	if err != nil {
		t.Fatal(err)
	}
	doc3, err := Decode("ss-chaboche.yaml", one, nil)
	if err != nil {
		t.Fatal(err)
	}
	if doc3.Card.Tabulated != nil || doc3.Card.IsTemperatureDependent() {
		t.Errorf("a card at one temperature has tables: %v", doc3.Card.Tabulated)
	}
}

func TestTabulable(t *testing.T) {
	for p, want := range map[string]bool{
		"/elastic/youngs_modulus":              true,
		"/plasticity/kinematic/3/gamma":        true,
		"/plasticity/kinematic/03/gamma":       false,
		"/plasticity/isotropic/model":          false,
		"/derived/kinematic/0/saturation":      true,
		"/verification/ratcheting/mean_stress": false,
		"/temperatures":                        false,
	} {
		if got := Tabulable(p); got != want {
			t.Errorf("Tabulable(%q) = %v, want %v", p, got, want)
		}
	}
}
