package schema_test

import (
	"errors"
	"fmt"

	"matgate/schema"
)

// A card with a Poisson's ratio out of range and a misspelt field: Decode
// reports both at once, each with its line, column and JSON pointer.
func ExampleDecode() {
	card := []byte(`format: matgate.card/1
id: example-plate
revision: 1
title: Example plate (invented data)
source: Invented for this example; not material data.
units: {stress: MPa}
elastic: {youngs_modulus: 200000, poisson_ratio: 0.55}
plasticity:
  yield_stress: 250
  kinematic:
    - {model: armstrong_frederick, c: 20000, gama: 100}
`)
	doc, err := schema.Decode("plate.yaml", card, nil)
	var ds schema.Diagnostics
	if errors.As(err, &ds) {
		for _, d := range ds {
			fmt.Println(d)
		}
	}
	fmt.Println("card accepted:", doc.Card != nil)
	// Later checks locate their own findings through the Document.
	d := doc.Diag(schema.SeverityWarning, "/plasticity/yield_stress", "yield strain %.4g", 250.0/200000)
	fmt.Printf("%v (value as written: %s)\n", d, d.Value)
	// Output:
	// plate.yaml:7:50: /elastic/poisson_ratio: 0.55 is not below 0.5
	// plate.yaml:11:7: /plasticity/kinematic/0/gamma: required field gamma of the armstrong_frederick term is missing
	// plate.yaml:11:46: /plasticity/kinematic/0/gama: unknown field "gama" in an armstrong_frederick term: did you mean gamma?
	// card accepted: false
	// plate.yaml:9:17: warning: /plasticity/yield_stress: yield strain 0.00125 (value as written: 250)
}
