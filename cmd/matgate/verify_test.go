package main

import (
	"encoding/json"
	"encoding/xml"
	"fmt"
	"html"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"matgate/checks"
)

// TestVerifyDemoCards runs the main job on every demo card: each passes,
// writes its outputs, and a second run gives the same records apart from
// created and the digest.
func TestVerifyDemoCards(t *testing.T) {
	out1, out2 := t.TempDir(), t.TempDir()
	junit := filepath.Join(out1, "junit.xml")
	code, stdout, stderr := matgate(t, "", "verify", "--out", out1, "--report", "--junit", junit, "../../testdata/cards")
	if code != exitPass {
		t.Fatalf("verify: exit %d\n%s%s", code, stdout, stderr)
	}
	if code, stdout, stderr := matgate(t, "", "verify", "--out", out2, "../../testdata/cards"); code != exitPass {
		t.Fatalf("second verify: exit %d\n%s%s", code, stdout, stderr)
	}
	for _, base := range []string{"demo-canopy-aluminium-r2", "demo-canopy-hanger-r1", "demo-canopy-stainless-r1", "demo-canopy-steel-r4"} {
		for _, ext := range []string{".record.json", ".card.json", ".monotonic.csv", ".cyclic.csv", ".report.html"} {
			if _, err := os.Stat(filepath.Join(out1, base+ext)); err != nil {
				t.Errorf("missing output: %v", err)
			}
		}
		a, b := readRecord(t, filepath.Join(out1, base+".record.json")), readRecord(t, filepath.Join(out2, base+".record.json"))
		if a["verdict"] != "pass" {
			t.Errorf("%s: verdict %v", base, a["verdict"])
		}
		for _, k := range []string{"created", "digest"} {
			delete(a, k)
			delete(b, k)
		}
		ja, _ := json.Marshal(a)
		jb, _ := json.Marshal(b)
		if string(ja) != string(jb) {
			t.Errorf("%s: two runs differ beyond created and digest", base)
		}
	}
	// The JUnit file is JUnit XML: testsuites of testcases, no failures.
	var js junitSuites
	b, err := os.ReadFile(junit)
	if err != nil {
		t.Fatal(err)
	}
	if err := xml.Unmarshal(b, &js); err != nil {
		t.Fatalf("junit: %v", err)
	}
	if len(js.Suites) != 4 || js.Tests < 4*20 || js.Failures != 0 {
		t.Errorf("junit: %d suites, %d tests, %d failures", len(js.Suites), js.Tests, js.Failures)
	}
	// Reporters split a class name at its last dot: one dot, between the
	// card and the case (the amplitudes in case names carry dots); every
	// testcase names its card file, every suite its time (issue 10).
	for _, su := range js.Suites {
		if su.File == "" || su.Time == "" {
			t.Errorf("junit suite %s: file %q, time %q", su.Name, su.File, su.Time)
		}
		for _, c := range su.Cases {
			if strings.Count(c.Classname, ".") != 1 || c.File != su.File {
				t.Errorf("junit testcase %s: classname %q, file %q", c.Name, c.Classname, c.File)
			}
		}
	}
	report, _ := os.ReadFile(filepath.Join(out1, "demo-canopy-stainless-r1.report.html"))
	for _, want := range []string{"<svg", html.EscapeString(checks.Caution), "demo-canopy-stainless"} {
		if !strings.Contains(string(report), want) {
			t.Errorf("report lacks %q", want)
		}
	}
}

func readRecord(t *testing.T, path string) map[string]any {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	return m
}

// TestRecordVerify signs a record, checks it, and then changes one byte of
// it and checks it with another key: both are caught.
func TestRecordVerify(t *testing.T) {
	dir := t.TempDir()
	key, other := filepath.Join(dir, "k"), filepath.Join(dir, "other")
	for _, k := range []string{key, other} {
		if code, out, errOut := matgate(t, "", "record", "keygen", k); code != 0 {
			t.Fatalf("keygen: %d %s%s", code, out, errOut)
		}
	}
	if code, out, errOut := matgate(t, "", "verify", "--out", dir, "--sign-key", key+".key", "../../testdata/cards/steel-prager.json"); code != 0 {
		t.Fatalf("verify: %d %s%s", code, out, errOut)
	}
	rec := filepath.Join(dir, "demo-canopy-steel-r4.record.json")
	if code, out, _ := matgate(t, "", "record", "verify", "--public-key", key+".pub", rec); code != 0 || !strings.Contains(out, "intact") {
		t.Errorf("intact record: exit %d\n%s", code, out)
	}
	if code, out, _ := matgate(t, "", "record", "verify", "--public-key", other+".pub", rec); code != exitFailed {
		t.Errorf("wrong key: exit %d, want 1\n%s", code, out)
	}
	b, _ := os.ReadFile(rec)
	i := strings.Index(string(b), `"revision":4`)
	if i < 0 {
		t.Fatal("record has no revision 4")
	}
	b[i+len(`"revision":`)] = '5'
	tampered := filepath.Join(dir, "tampered.json")
	os.WriteFile(tampered, b, 0o644)
	if code, out, _ := matgate(t, "", "record", "verify", "--public-key", key+".pub", tampered); code != exitFailed || !strings.Contains(out, "FAIL digest") {
		t.Errorf("changed byte: exit %d, want 1 with a digest failure\n%s", code, out)
	}
}

// bilinearPoints returns the stress along a strain history for linear
// kinematic hardening with plastic modulus H, by the one-step radial return
// of Simo and Hughes, Computational Inelasticity (1998), box 1.5, which is
// exact for linear hardening: written here independently of checks/plastic.
// Stresses in MPa.
func bilinearPoints(E, sy, H float64, strains []float64) [][2]float64 {
	var epsP, alpha float64
	pts := make([][2]float64, len(strains))
	for i, eps := range strains {
		trial := E * (eps - epsP)
		xi := trial - alpha
		if f := math.Abs(xi) - sy; f > 0 {
			dl := f / (E + H)
			n := math.Copysign(1, xi)
			epsP += dl * n
			alpha += H * dl * n
		}
		pts[i] = [2]float64{eps, E * (eps - epsP)}
	}
	return pts
}

// TestWrongReadingFails: a card whose linear term is written as a tangent
// modulus, while its reference curve was computed with that number as the
// plastic modulus, fails its reference check; written as the plastic
// modulus, the same card passes. H = E Et / (E - Et): the classic misreading
// (DESIGN of the card format; Lubliner, Plasticity Theory, 1990, sec. 3.3).
func TestWrongReadingFails(t *testing.T) {
	const E, sy, X = 70000.0, 250.0, 14000.0 // MPa; X/E = 0.2 so the readings differ by 20 percent in slope
	var strains []float64
	for k := 0; k <= 30; k++ {
		strains = append(strains, 0.001*float64(k))
	}
	for k := 1; k <= 30; k++ {
		strains = append(strains, 0.03-0.002*float64(k))
	}
	pts := bilinearPoints(E, sy, X, strains)
	var ps []string
	for _, p := range pts {
		ps = append(ps, fmt.Sprintf("[%s, %s]", strconv.FormatFloat(p[0], 'g', -1, 64), strconv.FormatFloat(p[1], 'g', -1, 64)))
	}
	card := func(form string) string {
		return fmt.Sprintf(`format: matgate.card/1
id: wrong-reading
revision: 1
title: Test card for the tangent/plastic modulus misreading
source: Invented for a matgate test; the reference is a closed form, not data.
units: {stress: MPa}
elastic: {youngs_modulus: %g, poisson_ratio: 0.3}
plasticity:
  yield_stress: %g
  kinematic:
    - {model: linear, %s: %g}
verification:
  references:
    - name: solver-tension-reversal
      kind: solver
      points: [%s]
`, E, sy, form, X, strings.Join(ps, ", "))
	}
	dir := t.TempDir()
	for _, tc := range []struct {
		form string
		want int
	}{{"tangent_modulus", exitFailed}, {"plastic_modulus", exitPass}} {
		f := filepath.Join(dir, tc.form+".yaml")
		os.WriteFile(f, []byte(card(tc.form)), 0o644)
		code, out, errOut := matgate(t, "", "verify", "--out", dir, f)
		if code != tc.want {
			t.Errorf("%s: exit %d, want %d\n%s%s", tc.form, code, tc.want, out, errOut)
			continue
		}
		rec := readRecord(t, filepath.Join(dir, "wrong-reading-r1.record.json"))
		// The failures, if any, are the reference check and nothing else.
		var failed []string
		for _, c := range rec["cases"].([]any) {
			cm := c.(map[string]any)
			for _, ck := range cm["checks"].([]any) {
				if km := ck.(map[string]any); km["pass"] == false {
					failed = append(failed, cm["name"].(string)+"/"+km["name"].(string))
				}
			}
		}
		if tc.want == exitFailed && (len(failed) == 0 || !allContain(failed, "solver-tension-reversal")) {
			t.Errorf("%s: failed checks %v, want only the reference curve's", tc.form, failed)
		}
		// The record says which misreading explains the failure.
		if f, _ := rec["findings"].([]any); tc.want == exitFailed && (len(f) == 0 || f[0].(map[string]any)["misreading"] != "tangent-as-plastic") {
			t.Errorf("%s: findings %v, want the tangent-as-plastic diagnosis", tc.form, rec["findings"])
		}
		if tc.want == exitPass && len(failed) != 0 {
			t.Errorf("%s: failed checks %v, want none", tc.form, failed)
		}
	}
}

func allContain(ss []string, sub string) bool {
	for _, s := range ss {
		if !strings.Contains(s, sub) {
			return false
		}
	}
	return true
}

// TestSimulateClosedForm drives the steel demo card (E = 205 GPa, yield
// 0.355 GPa, Prager H = 2 GPa) elastic, then to yield, then into reverse
// yield. For linear kinematic hardening the branches are closed forms
// (derived here from Prager's rule alpha = H eps_p with eps = sigma/E +
// eps_p): loading sigma = (H eps + sy)/(1 + H/E), reverse sigma = (H eps -
// sy)/(1 + H/E) once sigma has fallen 2 sy below the peak (Bauschinger
// effect of linear kinematic hardening; Prager 1956).
func TestSimulateClosedForm(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "path.csv")
	os.WriteFile(path, []byte("strain\n0.001\n0.01\n-0.01\n"), 0o644)
	code, out, errOut := matgate(t, "", "simulate", "../../testdata/cards/steel-prager.json", "--path", path, "--increment", "0.0005")
	if code != 0 {
		t.Fatalf("simulate: exit %d %s", code, errOut)
	}
	const E, sy, H = 205.0, 0.355, 2.0
	// With increments of at most 5e-4 the targets are reached at steps 2,
	// 2 + 18 and 20 + 40.
	want := []struct {
		step        int
		eps, stress float64
	}{
		{2, 0.001, E * 0.001},
		{20, 0.01, (H*0.01 + sy) / (1 + H/E)},
		{60, -0.01, (H*-0.01 - sy) / (1 + H/E)},
	}
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if lines[0] != "step,strain,stress,plastic_strain,back_stress,accumulated_plastic_strain" {
		t.Fatalf("header %q", lines[0])
	}
	if len(lines) != 62 {
		t.Fatalf("%d lines, want a header and steps 0..60", len(lines))
	}
	for _, w := range want {
		f := strings.Split(lines[w.step+1], ",")
		eps, _ := strconv.ParseFloat(f[1], 64)
		sig, _ := strconv.ParseFloat(f[2], 64)
		// Exact algorithm, linear hardening: round-off only.
		if f[0] != strconv.Itoa(w.step) || math.Abs(eps-w.eps) > 1e-15 || math.Abs(sig-w.stress) > 1e-12*math.Abs(w.stress) {
			t.Errorf("step %d: strain %g stress %.15g GPa, closed form strain %g stress %.15g", w.step, eps, sig, w.eps, w.stress)
		}
	}
	// A stress target beyond saturation of the stainless card is a located
	// error (saturation 180 + 75 + 150 + 200 + 60 = 665 MPa).
	os.WriteFile(path, []byte("stress\n300\n700\n"), 0o644)
	code, _, errOut = matgate(t, "", "simulate", "../../testdata/cards/ss-chaboche.yaml", "--path", path)
	if code != exitInvalid || !strings.Contains(errOut, "path.csv:3: stress") {
		t.Errorf("beyond saturation: exit %d, stderr %q", code, errOut)
	}
}
