package convert_test

import (
	"fmt"
	"strings"
	"testing"

	"matgate/convert"
	"matgate/schema"
)

// TestHardeningLimits: cards of real metals, one Armstrong-Frederick term
// carrying the hardening from the 0.2 % yield stress to about the true
// stress at the tensile strength, draw no diagnostic; the misreadings of
// issue 9 draw the diagnostic at the field with the corrected reading.
// The metals' values are from memory of handbook tables (ASM Handbook
// vols. 1 and 2; E, 0.2 % yield stress, tensile strength), as marked.
func TestHardeningLimits(t *testing.T) {
	tests := []struct {
		name     string
		E, sy    float64 // MPa
		c, gamma float64 // MPa, -
		want     string  // "" (no diagnostic) or "error"/"warning" and a part of the message
		source   string
	}{
		{"annealed copper", 117000, 70, 230 * 200, 200, "", "from memory: E 117 GPa, yield 70 MPa, tensile strength 220 MPa, true stress at necking about 300 MPa"},
		{"annealed 1100 aluminium", 69000, 34, 60 * 100, 100, "", "from memory: E 69 GPa, yield 34 MPa, tensile strength 90 MPa"},
		{"304 stainless, annealed", 193000, 215, 600 * 50, 50, "", "from memory: E 193 GPa, yield 215 MPa, tensile strength 505 MPa, true stress at necking about 800 MPa"},
		{"maraging steel 350", 190000, 2300, 150 * 300, 300, "", "from memory: E 190 GPa, yield 2.3 GPa, tensile strength 2.4 GPa"},
		{"Ti-6Al-4V", 114000, 880, 100 * 500, 500, "", "from memory: E 114 GPa, yield 880 MPa, tensile strength 950 MPa"},
		{"gamma per percent strain", 200000, 300, 50000, 2, "error: /plasticity/kinematic/0/gamma: saturation c/gamma = 50000/2 = 25000 MPa brings the stress to 25300 MPa, above E/10", "issue 9: gamma 200 written as 2; E/10 the ideal strength (Dieter 1986, from memory)"},
		{"c and gamma swapped", 200000, 300, 300, 50000, "warning: /plasticity/kinematic/0: saturation c/gamma = 300/50000 = 0.006 MPa is below 0.1 % of the yield stress: the term does nothing; c and gamma look swapped: c = 50000 MPa, gamma = 300", "issue 9: c 50000 MPa, gamma 300 written the other way round"},
		{"fit's runaway term", 200000, 300, 2000, 1e-6, "error: /plasticity/kinematic/0: saturation c/gamma = 2000/1e-06 = 2e+09 MPa", "issue 9: the card matgate fit wrote"},
	}
	for _, tc := range tests {
		card := fmt.Sprintf("format: matgate.card/1\nid: t\nrevision: 1\ntitle: t\nsource: test\nunits: {stress: MPa}\nelastic: {youngs_modulus: %g, poisson_ratio: 0.3}\nplasticity:\n  yield_stress: %g\n  kinematic:\n    - {model: armstrong_frederick, c: %g, gamma: %g}\n", tc.E, tc.sy, tc.c, tc.gamma)
		doc, err := schema.Decode("t.yaml", []byte(card), nil)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		ds := convert.Plausibility(doc)
		var got []string
		for _, d := range ds {
			got = append(got, fmt.Sprintf("%s: %s: %s", d.Severity, d.Pointer, d.Message))
		}
		switch {
		case tc.want == "" && len(ds) > 0:
			t.Errorf("%s (%s): want no diagnostic, got\n%s", tc.name, tc.source, strings.Join(got, "\n"))
		case tc.want != "" && (len(got) != 1 || !strings.HasPrefix(got[0], tc.want)):
			t.Errorf("%s (%s): want one diagnostic starting %q, got\n%s", tc.name, tc.source, tc.want, strings.Join(got, "\n"))
		}
	}
}

// TestMaxHardening: the bound fit keeps to is the one Plausibility warns
// beyond: a term at the bound draws nothing, one 1 % above it a warning.
func TestMaxHardening(t *testing.T) {
	for _, sy := range []float64{30, 300, 1000, 3000} {
		const E = 200000.0
		h := convert.MaxHardening(E, sy)
		for _, tc := range []struct {
			s    float64
			want int
		}{{h, 0}, {1.01 * h, 1}} {
			card := fmt.Sprintf("format: matgate.card/1\nid: t\nrevision: 1\ntitle: t\nsource: test\nunits: {stress: MPa}\nelastic: {youngs_modulus: %g, poisson_ratio: 0.3}\nplasticity:\n  yield_stress: %g\n  kinematic:\n    - {model: armstrong_frederick, c: %.17g, gamma: 100}\n", E, sy, 100*tc.s)
			doc, err := schema.Decode("t.yaml", []byte(card), nil)
			if err != nil {
				t.Fatal(err)
			}
			if ds := convert.Plausibility(doc); len(ds) != tc.want || ds.HasErrors() {
				t.Errorf("yield %g MPa, saturation %g MPa (bound %g): %d diagnostics, want %d warning(s):\n%v", sy, tc.s, h, len(ds), tc.want, ds)
			}
		}
	}
}
