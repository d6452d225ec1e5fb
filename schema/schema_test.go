package schema

import (
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

// walkSchema calls fn for every object in the schema tree with its pointer.
func walkSchema(v any, ptr string, fn func(ptr string, o map[string]any)) {
	switch t := v.(type) {
	case map[string]any:
		fn(ptr, t)
		for k, c := range t {
			walkSchema(c, childPointer(ptr, k), fn)
		}
	case []any:
		for i, c := range t {
			walkSchema(c, fmt.Sprintf("%s/%d", ptr, i), fn)
		}
	}
}

func compiledSchema(t *testing.T) *compiled {
	t.Helper()
	c, err := loadSchema()
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// conditional reports whether ptr lies in a fragment that only adds a
// condition to properties defined (and documented, and closed) elsewhere:
// an if, a dependentSchemas entry, the top-level allOf of temperature bounds.
func conditional(ptr string) bool {
	return strings.Contains(ptr, "/if") || strings.Contains(ptr, "/dependentSchemas/") || strings.HasPrefix(ptr, "/allOf/")
}

// TestSchemaDocumented: every property the schema defines carries a
// description, directly or on the definition it refers to. The top-level
// $schema and $id say which draft and which schema this is.
func TestSchemaDocumented(t *testing.T) {
	c := compiledSchema(t)
	root := c.tree.(map[string]any)
	if root["$schema"] != "https://json-schema.org/draft/2020-12/schema" || root["$id"] != schemaID {
		t.Fatalf("$schema = %v, $id = %v", root["$schema"], root["$id"])
	}
	n := 0
	walkSchema(c.tree, "", func(ptr string, o map[string]any) {
		if !strings.HasSuffix(parentPointer(ptr), "/properties") || conditional(ptr) {
			return
		}
		n++
		if _, ok := o["description"]; ok {
			return
		}
		if ref, ok := o["$ref"].(string); ok {
			if target, ok := lookup(c.tree, strings.TrimPrefix(ref, "#")); ok {
				if _, ok := target.(map[string]any)["description"]; ok {
					return
				}
			}
		}
		t.Errorf("%s has no description", ptr)
	})
	if n < 40 {
		t.Errorf("found %d properties; the walk is broken", n)
	}
}

// TestSchemaClosed: every schema object that lists properties and is not a
// dispatcher on `model` (kinematicTerm, isotropic, whose branches close
// themselves) or a conditional fragment rejects unknown fields.
func TestSchemaClosed(t *testing.T) {
	c := compiledSchema(t)
	walkSchema(c.tree, "", func(ptr string, o map[string]any) {
		if _, ok := o["properties"]; !ok {
			return
		}
		switch ptr {
		case "/$defs/kinematicTerm", "/$defs/isotropic":
			return
		}
		if conditional(ptr) {
			return
		}
		if o["additionalProperties"] != false {
			t.Errorf("%s does not set additionalProperties: false", ptr)
		}
	})
}

// TestPatternPhrases: every pattern in the schema has a sentence in words.
func TestPatternPhrases(t *testing.T) {
	c := compiledSchema(t)
	walkSchema(c.tree, "", func(ptr string, o map[string]any) {
		if p, ok := o["pattern"].(string); ok {
			if _, ok := patternPhrases[p]; !ok {
				t.Errorf("%s: pattern %s has no phrase in patternPhrases", ptr, p)
			}
		}
	})
}

const minimalYAML = `format: matgate.card/1
id: unit-test
revision: 3
title: Unit test card (invented data)
source: Invented for matgate's unit tests; not material data.
units: {stress: MPa, temperature: C}
temperature: 20
elastic: {youngs_modulus: 2.1e5, poisson_ratio: .3}
plasticity:
  yield_stress: +250
  kinematic:
    - {model: linear, tangent_modulus: 1000.}
    - {model: armstrong_frederick, c: 20000, gamma: 100}
  isotropic: {model: voce, q: -20, b: 5}
verification:
  cycles: 1e1
  references:
    - {name: tension, kind: measured, points: [[0, 0], [0.01, 260]], tolerance: {rel: 0.02}}
`

const minimalJSON = `{"format": "matgate.card/1", "id": "unit-test", "revision": 3,
 "title": "Unit test card (invented data)",
 "source": "Invented for matgate's unit tests; not material data.",
 "units": {"stress": "MPa", "temperature": "C"}, "temperature": 20,
 "elastic": {"youngs_modulus": 210000, "poisson_ratio": 0.3},
 "plasticity": {"yield_stress": 250,
  "kinematic": [{"model": "linear", "tangent_modulus": 1000}, {"model": "armstrong_frederick", "c": 20000, "gamma": 100}],
  "isotropic": {"model": "voce", "q": -20, "b": 5}},
 "verification": {"cycles": 10,
  "references": [{"name": "tension", "kind": "measured", "points": [[0, 0], [0.01, 260]], "tolerance": {"rel": 0.02}}]}}`

func ptr[T any](v T) *T { return &v }

// TestDecodeTyped: the same card in YAML (with YAML's number spellings
// .3, +250, 1000., 1e1) and in JSON decodes to the same typed Card.
func TestDecodeTyped(t *testing.T) {
	want := &Card{
		Format: Format, ID: "unit-test", Revision: 3,
		Title:       "Unit test card (invented data)",
		Source:      "Invented for matgate's unit tests; not material data.",
		Units:       Units{Stress: "MPa", Temperature: "C"},
		Temperature: ptr(20.0),
		Elastic:     Elastic{YoungsModulus: 210000, PoissonRatio: 0.3},
		Plasticity: Plasticity{
			YieldStress: 250,
			Kinematic: []KinematicTerm{
				{Model: ModelLinear, TangentModulus: ptr(1000.0)},
				{Model: ModelArmstrongFrederick, C: ptr(20000.0), Gamma: ptr(100.0)},
			},
			Isotropic: &Isotropic{Model: ModelVoce, Q: ptr(-20.0), B: ptr(5.0)},
		},
		Verification: &Verification{
			Cycles: ptr(10),
			References: []Reference{{Name: "tension", Kind: KindMeasured,
				Points: [][2]float64{{0, 0}, {0.01, 260}}, Tolerance: &Tolerance{Rel: 0.02}}},
		},
	}
	for _, tc := range []struct{ name, src string }{{"card.yaml", minimalYAML}, {"card.json", minimalJSON}} {
		doc, err := Decode(tc.name, []byte(tc.src), nil)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if diff := cmp.Diff(want, doc.Card); diff != "" {
			t.Errorf("%s (-want +got):\n%s", tc.name, diff)
		}
	}
}

// TestYAMLJSONSameDiagnostics: the same mistakes in YAML and JSON give the
// same pointers and messages; only positions differ.
func TestYAMLJSONSameDiagnostics(t *testing.T) {
	y := strings.NewReplacer("poisson_ratio: .3", "poisson_ratio: 0.5", "gamma: 100", "gamma: 0", "name: tension", "name: Tension").Replace(minimalYAML)
	j := strings.NewReplacer(`"poisson_ratio": 0.3`, `"poisson_ratio": 0.5`, `"gamma": 100`, `"gamma": 0`, `"name": "tension"`, `"name": "Tension"`).Replace(minimalJSON)
	msgs := func(name, src string) []string {
		_, err := Decode(name, []byte(src), nil)
		var ds Diagnostics
		if !errors.As(err, &ds) {
			t.Fatalf("%s: error %v, want Diagnostics", name, err)
		}
		var out []string
		for _, d := range ds {
			out = append(out, d.Pointer+": "+d.Message)
		}
		return out
	}
	got, want := msgs("c.json", j), msgs("c.yaml", y)
	if len(want) != 3 {
		t.Fatalf("YAML gave %d diagnostics, want 3: %q", len(want), want)
	}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("YAML vs JSON (-yaml +json):\n%s", diff)
	}
}

// TestPositions: positions are 1-based lines and character columns; a
// pointer to an absent value falls back to its nearest ancestor; Diag fills
// the value as written.
func TestPositions(t *testing.T) {
	src := "# é comment\nformat: matgate.card/1\ntitle: \"é\"\nelastic: {youngs_modulus: 2.10e5}\n"
	doc, _ := Decode("p.yaml", []byte(src), nil)
	for _, tc := range []struct {
		pointer string
		want    Pos
	}{
		{"", Pos{2, 1}},
		{"/format", Pos{2, 9}},
		{"/title", Pos{3, 8}},
		{"/elastic", Pos{4, 10}},
		{"/elastic/youngs_modulus", Pos{4, 27}},
		{"/elastic/poisson_ratio", Pos{4, 10}},  // absent: the mapping
		{"/plasticity/yield_stress", Pos{2, 1}}, // absent: the root
	} {
		if got := doc.Pos(tc.pointer); got != tc.want {
			t.Errorf("Pos(%q) = %v, want %v", tc.pointer, got, tc.want)
		}
	}
	d := doc.Diag(SeverityWarning, "/elastic/youngs_modulus", "E is %g", 2.1e5)
	want := Diagnostic{File: "p.yaml", Pos: Pos{4, 27}, Pointer: "/elastic/youngs_modulus", Value: "2.10e5", Message: "E is 210000", Severity: SeverityWarning}
	if d != want {
		t.Errorf("Diag = %+v, want %+v", d, want)
	}
	if s := d.String(); s != "p.yaml:4:27: warning: /elastic/youngs_modulus: E is 210000" {
		t.Errorf("String = %q", s)
	}
}

// TestSizeLimit: the default limit is 1 MiB, a file of exactly the limit is
// parsed, one byte more is refused with the limit in the message.
func TestSizeLimit(t *testing.T) {
	pad := func(n int) []byte {
		b := []byte(minimalYAML)
		return append(b, []byte(strings.Repeat("#", n-len(b)))...)
	}
	if _, err := Decode("at.yaml", pad(DefaultMaxBytes), nil); err != nil {
		t.Errorf("a card of exactly DefaultMaxBytes: %v", err)
	}
	_, err := Decode("over.yaml", pad(DefaultMaxBytes+1), nil)
	if err == nil || !strings.Contains(err.Error(), "1048576 bytes (1 MiB)") {
		t.Errorf("a card of DefaultMaxBytes+1: error %v, want one naming the 1 MiB limit", err)
	}
	if _, err := Decode("small.yaml", []byte(minimalYAML), &DecodeOptions{MaxBytes: 100}); err == nil {
		t.Error("MaxBytes 100 accepted a longer card")
	}
}

// TestDiagnosticCap: a file with hundreds of problems gives the first
// maxDiagnostics and one line that counts the rest.
func TestDiagnosticCap(t *testing.T) {
	var b strings.Builder
	b.WriteString(minimalYAML)
	for i := range 150 {
		fmt.Fprintf(&b, "extra_%d: 1\n", i)
	}
	_, err := Decode("many.yaml", []byte(b.String()), nil)
	var ds Diagnostics
	if !errors.As(err, &ds) {
		t.Fatalf("error %v", err)
	}
	if len(ds) != maxDiagnostics+1 || ds[maxDiagnostics].Message != "50 more problems not shown" {
		t.Errorf("got %d diagnostics, last %q; want %d and a count of 50 more", len(ds), ds[len(ds)-1].Message, maxDiagnostics+1)
	}
	for i := 1; i < maxDiagnostics; i++ {
		if ds[i].Pos.Line < ds[i-1].Pos.Line {
			t.Fatalf("diagnostics not sorted by line at %d: %v before %v", i, ds[i-1], ds[i])
		}
	}
}

// TestNumbersValidatedAsFloat64: a decimal that rounds to the bound is
// judged as the float64 the Card holds, so acceptance and the Card agree.
func TestNumbersValidatedAsFloat64(t *testing.T) {
	// 0.49999999999999999999 is below 0.5 as a decimal but is 0.5 as a float64.
	src := strings.Replace(minimalYAML, "poisson_ratio: .3", "poisson_ratio: 0.49999999999999999999", 1)
	_, err := Decode("round.yaml", []byte(src), nil)
	if err == nil || !strings.Contains(err.Error(), "is not below 0.5") {
		t.Errorf("error %v, want the Poisson's ratio rejected as 0.5", err)
	}
}

// TestSchemaBytes: Schema returns the embedded schema, which is valid JSON.
func TestSchemaBytes(t *testing.T) {
	var v map[string]any
	if err := json.Unmarshal(Schema(), &v); err != nil {
		t.Fatal(err)
	}
	if v["$id"] != schemaID {
		t.Errorf("$id = %v", v["$id"])
	}
}
