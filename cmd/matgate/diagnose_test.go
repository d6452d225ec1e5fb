package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// misreadCard is a card (MPa, E 70000, yield 250) with one linear term
// written as "form: X" and a solver reference computed with X as the
// plastic modulus along strains 0, 0.001, ..., 0.03 (bilinearPoints, Simo
// and Hughes 1998, box 1.5).
func misreadCard(form string, X float64) string {
	var strains []float64
	for k := 0; k <= 30; k++ {
		strains = append(strains, 0.001*float64(k))
	}
	var ps []string
	for _, p := range bilinearPoints(70000, 250, X, strains) {
		ps = append(ps, fmt.Sprintf("[%s, %s]", strconv.FormatFloat(p[0], 'g', -1, 64), strconv.FormatFloat(p[1], 'g', -1, 64)))
	}
	return fmt.Sprintf(`format: matgate.card/1
id: misread
revision: 1
title: Test card for the printed diagnosis
source: Invented for a matgate test; the reference is a closed form, not data.
units: {stress: MPa}
elastic: {youngs_modulus: 70000, poisson_ratio: 0.3}
plasticity:
  yield_stress: 250
  kinematic:
    - {model: linear, %s: %g}
verification:
  references:
    - {name: solver-tension, kind: solver, points: [%s]}
`, form, X, strings.Join(ps, ", "))
}

// TestVerifyPrintsDiagnosis: verify names the misreading of a card whose
// linear term is written as a tangent modulus while its reference curve was
// computed with that number as the plastic modulus, with the corrected
// value in the card's own words: Et = E H / (E + H) = 70000 x 14000 / 84000
// = 11667 MPa (Lubliner, Plasticity Theory, 1990, sec. 3.3).
func TestVerifyPrintsDiagnosis(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "misread.yaml")
	os.WriteFile(f, []byte(misreadCard("tangent_modulus", 14000)), 0o644)
	code, out, errOut := matgate(t, "", "verify", "--out", dir, f)
	want := `finding: reference "solver-tension" (max error`
	fix := "the reference matches if tangent_modulus 14000 MPa of kinematic term 1 is read as a plastic modulus (tangent modulus 11667 MPa)"
	if code != exitFailed || !strings.Contains(out, want) || !strings.Contains(out, fix) {
		t.Errorf("exit %d, want 1 and a finding containing %q\n%s%s", code, fix, out, errOut)
	}
	// The same card written with the plastic modulus passes: no finding.
	os.WriteFile(f, []byte(misreadCard("plastic_modulus", 14000)), 0o644)
	code, out, _ = matgate(t, "", "verify", "--out", dir, f)
	if code != exitPass || strings.Contains(out, "finding:") {
		t.Errorf("plastic form: exit %d\n%s", code, out)
	}
}

// TestVerifyNearMiss: the classic slip that passes the default tolerance.
// Et/E = 2100/70000 = 3 %: read as a tangent modulus the card's plastic
// modulus is 70000 x 2100 / 67900 = 2165 MPa, 3 % above the reference's
// 2100, and the stress at 3 % strain differs by about 0.03 x 2100 x 0.027
// = 1.7 MPa of 306 (0.55 %, inside the solver tolerance 0.02). The card
// passes (exit 0) and the finding is in the console, the JSON output, the
// record, the JUnit XML and the HTML report.
func TestVerifyNearMiss(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "misread.yaml")
	os.WriteFile(f, []byte(misreadCard("tangent_modulus", 2100)), 0o644)
	junit := filepath.Join(dir, "junit.xml")
	code, out, errOut := matgate(t, "", "verify", "--out", dir, "--junit", junit, "--report", f)
	fix := "tangent_modulus 2100 MPa of kinematic term 1 is read as a plastic modulus"
	if code != exitPass || !strings.Contains(out, `finding: reference "solver-tension" passes (max error`) || !strings.Contains(out, fix) {
		t.Errorf("exit %d, want 0 and a near-miss finding containing %q\n%s%s", code, fix, out, errOut)
	}
	rec := readRecord(t, filepath.Join(dir, "misread-r1.record.json"))
	fs, _ := rec["findings"].([]any)
	if len(fs) != 1 {
		t.Fatalf("record findings %v, want one", rec["findings"])
	}
	fr := fs[0].(map[string]any)
	if fr["case"] != "reference-solver-tension" || fr["check_passed"] != true || fr["misreading"] != "tangent-as-plastic" {
		t.Errorf("record finding %v", fr)
	}
	// The card's error: 0.55 % estimated above; the misreading's: round-off.
	if e, m := fr["max_error"].(float64), fr["matched_error"].(float64); e < 0.004 || e > 0.007 || m > 1e-9 {
		t.Errorf("record finding errors %g and %g, want about 0.0055 and round-off", e, m)
	}
	// JUnit words it as the console does; the report, from the record
	// alone, canonically (Pa, plastic moduli) with the misreading's name.
	for file, text := range map[string]string{junit: fix, filepath.Join(dir, "misread-r1.report.html"): "Finding (tangent-as-plastic) on a passing check"} {
		b, err := os.ReadFile(file)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(b), text) {
			t.Errorf("%s has no finding %q", filepath.Base(file), text)
		}
	}
	code, out, _ = matgate(t, "", "verify", "--out", dir, "--format", "json", f)
	var outs []struct {
		Status   string
		Findings []struct {
			Case        string `json:"case"`
			CheckPassed bool   `json:"check_passed"`
			Misreading  string `json:"misreading"`
			Text        string `json:"text"`
		}
	}
	if err := json.Unmarshal([]byte(out), &outs); err != nil {
		t.Fatalf("json: %v\n%s", err, out)
	}
	if code != exitPass || len(outs) != 1 || outs[0].Status != "pass" || len(outs[0].Findings) != 1 ||
		!outs[0].Findings[0].CheckPassed || !strings.Contains(outs[0].Findings[0].Text, fix) {
		t.Errorf("--format json: exit %d, %+v", code, outs)
	}
}

// TestVerifyRefusesLongReference: a reference with a strain of 1e4 (far
// beyond small strain) would take about 5.7e8 increments of the yield
// strain / 10 (250/70000/10); it is refused as invalid input (exit 2) with
// the numbers, located at the reference (line 14, column 7: the list item
// of the card misreadCard writes), not run out of memory and not an
// internal error.
func TestVerifyRefusesLongReference(t *testing.T) {
	dir := t.TempDir()
	f := filepath.Join(dir, "long.yaml")
	card := strings.Replace(misreadCard("plastic_modulus", 2100), "points: [[0, 0],", "points: [[0, 0], [10000, 300],", 1)
	os.WriteFile(f, []byte(card), 0o644)
	code, out, errOut := matgate(t, "", "verify", "--out", dir, f)
	if code != exitInvalid || !strings.Contains(out, "long.yaml:14:7: /verification/references/0: reference \"solver-tension\": replaying its 32 points") || !strings.Contains(out, "more than the budget of 1000000") {
		t.Errorf("exit %d, want 2 and the replay budget\n%s%s", code, out, errOut)
	}
}
