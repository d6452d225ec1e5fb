package convert_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"runtime/debug"
	"testing"
	"time"

	"go.yaml.in/yaml/v3"

	"matgate/convert"
	"matgate/schema"
)

// extremes are finite numbers at the edges of float64 and of the card's
// integer fields: huge, tiny, denormal, negative, zero and the largest
// int32 and int64 a count can be written as.
var extremes = []string{
	"1e300", "-1e300", "1.7976931348623157e308", "-1.7976931348623157e308",
	"1e-300", "-1e-300", "5e-324", "2.2250738585072014e-308",
	"1e15", "1e20", "0", "-1",
	"2147483647", "9223372036854775807",
}

// seedCards returns the demo and bad cards under testdata: the corpus the
// extreme values are put into.
func seedCards(t testing.TB) []string {
	t.Helper()
	var names []string
	for _, pat := range []string{"../testdata/cards/*", "../testdata/temperature/*", "../testdata/bad/plausible/*", "../testdata/bad/schema/*"} {
		m, err := filepath.Glob(pat)
		if err != nil {
			t.Fatal(err)
		}
		for _, n := range m {
			if ext := filepath.Ext(n); ext == ".yaml" || ext == ".json" {
				names = append(names, n)
			}
		}
	}
	if len(names) < 20 {
		t.Fatalf("only %d seed cards", len(names))
	}
	return names
}

// numberNodes returns the scalar nodes of a YAML tree that hold numbers.
func numberNodes(n *yaml.Node) []*yaml.Node {
	var out []*yaml.Node
	if n.Kind == yaml.ScalarNode && (n.Tag == "!!int" || n.Tag == "!!float") {
		out = append(out, n)
	}
	for _, c := range n.Content {
		out = append(out, numberNodes(c)...)
	}
	return out
}

// variants returns the card with each of its numbers, one at a time,
// replaced by each extreme value.
func variants(t testing.TB, data []byte) [][]byte {
	var root yaml.Node
	if err := yaml.Unmarshal(data, &root); err != nil || len(root.Content) == 0 {
		return nil
	}
	var out [][]byte
	for _, node := range numberNodes(&root) {
		was := node.Value
		for _, x := range extremes {
			node.Value = x
			b, err := yaml.Marshal(&root)
			if err != nil {
				t.Fatal(err)
			}
			out = append(out, b)
		}
		node.Value = was
	}
	return out
}

// prepareAll runs data through the whole conversion path that follows the
// schema: Decode, Prepare (plausibility, normalization, Material) and, on
// a valid card, Tables. It fails the test on a panic or on an invalid card
// whose diagnostics are not located in the card; dir holds the card's
// reference files.
func prepareAll(t *testing.T, name string, data []byte, dir string) {
	t.Helper()
	defer func() {
		if r := recover(); r != nil {
			t.Fatalf("%s: panic: %v\n%s\ncard:\n%s", name, r, debug.Stack(), data)
		}
	}()
	doc, err := schema.Decode(name, data, nil)
	if err != nil {
		return
	}
	read := func(file string) ([]byte, error) { return os.ReadFile(filepath.Join(dir, filepath.FromSlash(file))) }
	card, ds := convert.Prepare(doc, &convert.Options{ReadFile: read})
	for _, d := range ds {
		if d.Pointer == "" && d.Severity == schema.SeverityError {
			t.Errorf("%s: unlocated error %q\ncard:\n%s", name, d.Message, data)
		}
	}
	if card == nil {
		if !ds.HasErrors() {
			t.Errorf("%s: no card and no error\ncard:\n%s", name, data)
		}
		return
	}
	// A bound on a runaway, not a timing: the tables of any card take
	// milliseconds.
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	if _, err := convert.Tables(ctx, card); err != nil && ctx.Err() != nil {
		t.Errorf("%s: tables take more than a minute\ncard:\n%s", name, data)
	}
}

// TestExtremeValues puts each extreme finite value into each number of each
// card under testdata, one at a time, and runs the result through Decode,
// Prepare and Tables: no panic, every error located at a field. The
// expectation (any finite input gives a located answer, never a crash) is
// the project's rule; common practice, no source.
func TestExtremeValues(t *testing.T) {
	n := 0
	for _, name := range seedCards(t) {
		data, err := os.ReadFile(name)
		if err != nil {
			t.Fatal(err)
		}
		for i, v := range variants(t, data) {
			prepareAll(t, fmt.Sprintf("%s#%d", filepath.Base(name), i), v, filepath.Dir(name))
			n++
		}
	}
	t.Logf("%d variants", n)
}

// FuzzPrepare runs any input through Decode, Prepare and Tables (see
// prepareAll). Seeds are the cards under testdata; run it with
//
//	go test -run='^$' -fuzz=FuzzPrepare -fuzztime=3m ./convert
func FuzzPrepare(f *testing.F) {
	for _, name := range seedCards(f) {
		data, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		prepareAll(t, "fuzz.yaml", data, "../testdata/bad/plausible")
	})
}

// FuzzPrepareNumbers fills the numbers of a card with every model (two
// Armstrong-Frederick terms, a linear term, Voce, a ratcheting case and a
// reference) from the fuzzer, so that it explores values rather than
// syntax, and runs it through prepareAll.
//
//	go test -run='^$' -fuzz=FuzzPrepareNumbers -fuzztime=3m ./convert
func FuzzPrepareNumbers(f *testing.F) {
	f.Add(uint8(2), 200000.0, 0.3, 300.0, 50000.0, 500.0, 5000.0, 50.0, 2000.0, 60.0, 6.0, 0.004, 40.0, 320.0, 20, 0.01, 420.0)
	f.Add(uint8(0), 2e11, 0.3, 3e8, 5e10, 2.0, 300.0, 5e4, 2e9, 6e7, 1e-300, 5e-324, 1e300, 1e300, 10000, 1e300, 1e300)
	f.Fuzz(func(t *testing.T, unit uint8, E, nu, sy, c1, g1, c2, g2, H, q, b, amp, mean, sa float64, cycles int, eps, sig float64) {
		card := fmt.Sprintf(`format: matgate.card/1
id: fuzz
revision: 1
title: fuzz
source: fuzz
units: {stress: %s}
elastic: {youngs_modulus: %g, poisson_ratio: %g}
plasticity:
  yield_stress: %g
  kinematic:
    - {model: armstrong_frederick, c: %g, gamma: %g}
    - {model: armstrong_frederick, c: %g, gamma: %g}
    - {model: linear, plastic_modulus: %g}
  isotropic: {model: voce, q: %g, b: %g}
verification:
  strain_amplitudes: [%g]
  ratcheting: {mean_stress: %g, stress_amplitude: %g, cycles: %d}
  references:
    - {name: r, kind: solver, points: [[0, 0], [%g, %g]]}
`, convert.StressUnits[int(unit)%len(convert.StressUnits)], E, nu, sy, c1, g1, c2, g2, H, q, b, amp, mean, sa, cycles, eps, sig)
		prepareAll(t, "fuzz.yaml", []byte(card), ".")
	})
}
