package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestVerifyPrintsDiagnosis: verify names the misreading of a card whose
// linear term is written as a tangent modulus while its reference curve was
// computed with that number as the plastic modulus, with the corrected
// value in the card's own words: Et = E H / (E + H) = 70000 x 14000 / 84000
// = 11667 MPa (Lubliner, Plasticity Theory, 1990, sec. 3.3).
func TestVerifyPrintsDiagnosis(t *testing.T) {
	var strains []float64
	for k := 0; k <= 30; k++ {
		strains = append(strains, 0.001*float64(k))
	}
	var ps []string
	for _, p := range bilinearPoints(70000, 250, 14000, strains) {
		ps = append(ps, fmt.Sprintf("[%s, %s]", strconv.FormatFloat(p[0], 'g', -1, 64), strconv.FormatFloat(p[1], 'g', -1, 64)))
	}
	card := `format: matgate.card/1
id: misread
revision: 1
title: Test card for the printed diagnosis
source: Invented for a matgate test; the reference is a closed form, not data.
units: {stress: MPa}
elastic: {youngs_modulus: 70000, poisson_ratio: 0.3}
plasticity:
  yield_stress: 250
  kinematic:
    - {model: linear, tangent_modulus: 14000}
verification:
  references:
    - {name: solver-tension, kind: solver, points: [` + strings.Join(ps, ", ") + `]}
`
	dir := t.TempDir()
	f := filepath.Join(dir, "misread.yaml")
	os.WriteFile(f, []byte(card), 0o644)
	code, out, errOut := matgate(t, "", "verify", "--out", dir, f)
	want := `diagnosis: reference "solver-tension"`
	fix := "the reference matches if tangent_modulus 14000 MPa of kinematic term 1 is read as a plastic modulus (tangent modulus 11667 MPa)"
	if code != exitFailed || !strings.Contains(out, want) || !strings.Contains(out, fix) {
		t.Errorf("exit %d, want 1 and a diagnosis containing %q\n%s%s", code, fix, out, errOut)
	}
	// The same card written with the plastic modulus passes: no diagnosis.
	os.WriteFile(f, []byte(strings.Replace(card, "tangent_modulus", "plastic_modulus", 1)), 0o644)
	code, out, _ = matgate(t, "", "verify", "--out", dir, f)
	if code != exitPass || strings.Contains(out, "diagnosis:") {
		t.Errorf("plastic form: exit %d\n%s", code, out)
	}
}
