package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"testing"

	"matgate/checks/plastic"
)

// The demo data of testdata/fit: an invented scenario of our own (bracket
// steel of the fictional Millbrook cable-car station), generated from a
// known two-term card with seeded noise. Not measured; not for design.
const (
	demoE, demoSy          = 200000.0, 280.0 // MPa
	demoC1, demoG1         = 50000.0, 500.0  // MPa, -
	demoC2, demoG2         = 8000.0, 60.0    // MPa, -
	demoNoise              = 1.5             // MPa, standard deviation
	demoSeed1, demoSeed2   = 2024, 6
	demoPointsPerQuarter   = 25
	demoMonotonicStrain    = 0.03
	demoMonotonicPoints    = 120
	demoCycles             = 3
	demoDir                = "../../testdata/fit"
	demoHeaderForEachFile  = "strain,stress\n"
	demoFileMonotonic      = "monotonic.csv"
	demoFileCyclicTemplate = "cyclic-%s.csv"
)

var demoAmplitudes = []float64{0.004, 0.008}

// demoFiles generates the demo data: file name -> CSV bytes. The stresses
// come from the reference integrator (Exact, increments of at most 1e-4)
// plus Gaussian noise from a PCG generator with a fixed seed, rounded to
// 0.01 MPa; strains are rounded to 1e-7 as an extensometer records them.
func demoFiles(t testing.TB) map[string][]byte {
	m, err := plastic.NewMaterial(demoE*1e6, 0.3, demoSy*1e6,
		[]plastic.Term{{C: demoC1 * 1e6, Gamma: demoG1}, {C: demoC2 * 1e6, Gamma: demoG2}}, plastic.Isotropic{})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(demoSeed1, demoSeed2))
	file := func(strains []float64) []byte {
		var b strings.Builder
		b.WriteString(demoHeaderForEachFile)
		var s plastic.State1D
		for i, e := range strains {
			path := plastic.Path1D{Control: plastic.StrainControl, Targets: []float64{e}, MaxIncrement: 1e-4}
			if _, err := m.Run1D(context.Background(), &s, &path, nil, nil); err != nil {
				t.Fatal(err)
			}
			sig := s.Sigma/1e6 + demoNoise*rng.NormFloat64()
			if i == 0 {
				sig = 0 // the virgin state is recorded as zero load
			}
			fmt.Fprintf(&b, "%s,%s\n", strconv.FormatFloat(e, 'f', 7, 64), strconv.FormatFloat(sig, 'f', 2, 64))
		}
		return []byte(b.String())
	}
	out := map[string][]byte{}
	var mono []float64
	for k := 0; k <= demoMonotonicPoints; k++ {
		mono = append(mono, demoMonotonicStrain*float64(k)/demoMonotonicPoints)
	}
	out[demoFileMonotonic] = file(mono)
	for _, a := range demoAmplitudes {
		strains := []float64{0}
		ramp := func(from, to float64) {
			for k := 1; k <= demoPointsPerQuarter*2; k++ {
				strains = append(strains, from+(to-from)*float64(k)/float64(demoPointsPerQuarter*2))
			}
		}
		for k := 1; k <= demoPointsPerQuarter; k++ {
			strains = append(strains, a*float64(k)/demoPointsPerQuarter)
		}
		for c := 0; c < demoCycles; c++ {
			ramp(a, -a)
			ramp(-a, a)
		}
		out[fmt.Sprintf(demoFileCyclicTemplate, strconv.FormatFloat(a, 'g', -1, 64))] = file(strains)
	}
	return out
}

// TestFitDemoData: the committed demo data are what the generator makes
// (go test -update rewrites them).
func TestFitDemoData(t *testing.T) {
	for name, want := range demoFiles(t) {
		p := filepath.Join(demoDir, name)
		if *update {
			if err := os.WriteFile(p, want, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		got, err := os.ReadFile(p)
		if err != nil {
			t.Fatalf("%v (run go test -update to write the demo data)", err)
		}
		if string(got) != string(want) {
			t.Errorf("%s differs from the generator's output; run go test -update", p)
		}
	}
}

func copyDemo(t *testing.T) (dir string, files []string) {
	t.Helper()
	dir = t.TempDir()
	for name, b := range demoFiles(t) {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, b, 0o644); err != nil {
			t.Fatal(err)
		}
		files = append(files, p)
	}
	sort.Strings(files) // the order of the command line, as a user would type it
	return dir, files
}

// TestFitThenVerify: fit the demo data, then verify the card: the fit
// recovers the generating card within the noise (parameters within 10%:
// 1.5 MPa noise on a 500 MPa peak over about 900 points; the loose bound
// is for gamma2, the slowest term, which the 3% monotonic strain only
// half saturates) and verify passes, the references included.
func TestFitThenVerify(t *testing.T) {
	dir, files := copyDemo(t)
	card := filepath.Join(dir, "bracket-steel.yaml")
	args := append([]string{"fit", "--model", "chaboche:2", "--stress-unit", "MPa", "--out", card, "--format", "json"}, files...)
	code, out, errOut := matgate(t, "", args...)
	if code != 0 {
		t.Fatalf("fit: exit %d\n%s%s", code, out, errOut)
	}
	var sum fitJSON
	if err := jsonUnmarshal(out, &sum); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	t.Logf("demo fit: %+v", sum)
	for name, want := range map[string]float64{"yield_stress": demoSy, "c1": demoC1, "gamma1": demoG1, "c2": demoC2, "gamma2": demoG2} {
		if got := sum.Parameters[name]; relErr(got, want) > 0.10 {
			t.Errorf("%s = %g, want %g within 10%%", name, got, want)
		}
	}
	if !sum.EEstimated || relErr(sum.E, demoE) > 0.02 {
		t.Errorf("E %g (estimated %v), want %g within 2%% from the noisy initial slope", sum.E, sum.EEstimated, demoE)
	}
	if sum.RMS < 0.8*demoNoise || sum.RMS > 1.3*demoNoise {
		t.Errorf("rms %g MPa, want about the noise %g MPa", sum.RMS, demoNoise)
	}
	code, out, errOut = matgate(t, "", "verify", "--out", filepath.Join(dir, "out"), card)
	if code != 0 {
		b, _ := os.ReadFile(card)
		t.Fatalf("verify of the fitted card: exit %d\n%s%s\n%s", code, out, errOut, b)
	}
	// A second fit to the same --out is refused unless --force.
	code, _, errOut = matgate(t, "", args...)
	if code != exitInvalid || !strings.Contains(errOut, "exists") {
		t.Errorf("refit over an existing card: exit %d, %s", code, errOut)
	}
}

// TestFitEngineering: --engineering converts and attaches the converted
// files, so verify compares like with like; data past the maximum
// engineering stress are refused, naming the row (Considere; Dieter,
// Mechanical Metallurgy, 1986, ch. 8, from memory).
func TestFitEngineering(t *testing.T) {
	dir := t.TempDir()
	// A linear-hardening tension test in engineering values, made from the
	// true bilinear curve sigma = 300 + 2000 (eps - 0.0015) MPa, E = 200000
	// MPa (Prager 1956), converted by e = exp(eps) - 1, s = sigma exp(-eps).
	var b strings.Builder
	b.WriteString("strain,stress\n")
	for k := 0; k <= 60; k++ {
		eps := 0.001 * float64(k)
		sig := 200000 * eps
		if eps > 0.0015 {
			sig = 300 + 2000*(eps-0.0015) // tangent modulus 2000 MPa
		}
		fmt.Fprintf(&b, "%.10g,%.10g\n", math.Expm1(eps), sig*math.Exp(-eps))
	}
	data := filepath.Join(dir, "tension.csv")
	os.WriteFile(data, []byte(b.String()), 0o644)
	card := filepath.Join(dir, "eng.yaml")
	code, out, errOut := matgate(t, "", "fit", "--model", "prager", "--stress-unit", "MPa", "--youngs-modulus", "200000", "--engineering", "--out", card, data)
	if code != 0 {
		t.Fatalf("fit: exit %d\n%s%s", code, out, errOut)
	}
	if _, err := os.Stat(filepath.Join(dir, "eng.tension.true.csv")); err != nil {
		t.Errorf("converted data not attached: %v", err)
	}
	if code, out, errOut := matgate(t, "", "verify", "--out", filepath.Join(dir, "out"), card); code != 0 {
		t.Errorf("verify: exit %d\n%s%s", code, out, errOut)
	}
	// Past necking: the engineering stress falls at the end.
	neck := filepath.Join(dir, "neck.csv")
	os.WriteFile(neck, []byte("strain,stress\n0,0\n0.001,200\n0.05,400\n0.1,420\n0.15,415\n"), 0o644)
	code, _, errOut = matgate(t, "", "fit", "--model", "prager", "--stress-unit", "MPa", "--engineering", "--out", filepath.Join(dir, "n.yaml"), neck)
	if code != exitInvalid || !strings.Contains(errOut, "data row 5 (strain 0.15, stress 415)") || !strings.Contains(errOut, "maximum engineering stress") {
		t.Errorf("past necking: exit %d, %s", code, errOut)
	}
}

// TestFitBadInput: flags and files with a clear error, exit 2, naming the
// file and where.
func TestFitBadInput(t *testing.T) {
	dir := t.TempDir()
	write := func(name, s string) string {
		p := filepath.Join(dir, name)
		os.WriteFile(p, []byte(s), 0o644)
		return p
	}
	good := write("good.csv", "strain,stress\n0,0\n0.001,200\n0.002,260\n0.004,280\n")
	cases := []struct {
		name string
		args []string
		want string
	}{
		{"missing column", []string{"--model", "af", "--stress-unit", "MPa", "--out", filepath.Join(dir, "c.yaml"), write("nocol.csv", "strain\n0\n0.001\n")}, "nocol.csv:1: header \"strain\", expected \"strain,stress\""},
		{"nan", []string{"--model", "af", "--stress-unit", "MPa", "--out", filepath.Join(dir, "c.yaml"), write("nan.csv", "strain,stress\n0,0\n0.001,NaN\n")}, "nan.csv:3: stress \"NaN\" is not a finite number"},
		{"one point", []string{"--model", "af", "--stress-unit", "MPa", "--out", filepath.Join(dir, "c.yaml"), write("one.csv", "strain,stress\n0,0\n")}, "one.csv: a curve needs at least 2 points, found 1"},
		{"unsorted", []string{"--model", "af", "--stress-unit", "MPa", "--out", filepath.Join(dir, "c.yaml"), write("shuffled.csv", "strain,stress\n0,0\n0.004,280\n0.001,200\n0.006,290\n0.002,260\n0.005,285\n0.003,270\n0.007,295\n")}, "the rows look unsorted"},
		{"unit", []string{"--model", "af", "--stress-unit", "N/mm2", "--out", filepath.Join(dir, "c.yaml"), good}, "--stress-unit: unknown stress unit \"N/mm2\""},
		{"model", []string{"--model", "chaboche", "--stress-unit", "MPa", "--out", filepath.Join(dir, "c.yaml"), good}, "want prager, af or chaboche:N"},
		{"no out", []string{"--model", "af", "--stress-unit", "MPa", good}, "--out CARD.yaml is required"},
		{"outside", []string{"--model", "af", "--stress-unit", "MPa", "--out", filepath.Join(dir, "sub", "c.yaml"), good}, "is not in the folder of --out"},
	}
	os.MkdirAll(filepath.Join(dir, "sub"), 0o755)
	for _, tc := range cases {
		code, out, errOut := matgate(t, "", append([]string{"fit"}, tc.args...)...)
		if code != exitInvalid || !strings.Contains(errOut, tc.want) {
			t.Errorf("%s: exit %d, stderr %q, want 2 and %q\n%s", tc.name, code, errOut, tc.want, out)
		}
	}
}

func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

func jsonUnmarshal(s string, v any) error { return json.Unmarshal([]byte(s), v) }

// TestFitPathsRelativeAndAbsolute: data given by relative paths with an
// absolute --out above them, and absolute data paths with a relative
// --out, are both in the card's folder and are attached (issue 10: the
// relative path was compared with the absolute one and refused).
func TestFitPathsRelativeAndAbsolute(t *testing.T) {
	dir, _ := copyDemo(t)
	t.Chdir(dir)
	if err := os.Mkdir("data", 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.Rename(demoFileMonotonic, filepath.Join("data", demoFileMonotonic)); err != nil {
		t.Fatal(err)
	}
	rel := filepath.Join("data", demoFileMonotonic)
	cases := []struct{ name, out, data, wantRef string }{
		{"relative data, absolute out", filepath.Join(dir, "a.yaml"), rel, "data/" + demoFileMonotonic},
		{"absolute data, relative out", "b.yaml", filepath.Join(dir, rel), "data/" + demoFileMonotonic},
		{"relative data, absolute out in the data folder", filepath.Join(dir, "data", "c.yaml"), rel, demoFileMonotonic},
	}
	for _, c := range cases {
		code, out, errOut := matgate(t, "", "fit", "--model", "chaboche:1", "--stress-unit", "MPa", "--out", c.out, c.data)
		if code != 0 {
			t.Errorf("%s: exit %d\n%s%s", c.name, code, out, errOut)
			continue
		}
		b, err := os.ReadFile(c.out)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(b), `file: "`+c.wantRef+`"`) {
			t.Errorf("%s: the card does not attach %s:\n%s", c.name, c.wantRef, b)
		}
	}
	// A data file outside the card's folder is still refused.
	code, _, errOut := matgate(t, "", "fit", "--model", "chaboche:1", "--stress-unit", "MPa", "--out", filepath.Join(dir, "data", "d.yaml"), filepath.Join(dir, fmt.Sprintf(demoFileCyclicTemplate, "0.004")))
	if code != exitInvalid || !strings.Contains(errOut, "is not in the folder of --out") {
		t.Errorf("data above the card's folder: exit %d, %s", code, errOut)
	}
}
