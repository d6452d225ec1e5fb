package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const hotCard = "../../testdata/temperature/canopy-steel-hot.yaml"

// A temperature-dependent card simulates with a temperature column; a
// history held at 200 C gives, row for row, the response of the
// single-temperature card written with the 200 C values (the anisothermal
// integrator reduces to the isothermal one exactly); a row outside the
// card's range and a history without temperatures are located errors.
func TestSimulateTemperatureCard(t *testing.T) {
	dir := t.TempDir()
	single := "../../testdata/temperature/canopy-steel-hot-200c.yaml"
	hot := filepath.Join(dir, "hot.csv")
	os.WriteFile(hot, []byte("strain,temperature\n0.004,200\n-0.004,200\n0.006,200\n"), 0o644)
	cold := filepath.Join(dir, "cold.csv")
	os.WriteFile(cold, []byte("strain\n0.004\n-0.004\n0.006\n"), 0o644)
	code, out, errOut := matgate(t, "", "simulate", hotCard, "--path", hot)
	if code != 0 {
		t.Fatalf("simulate: exit %d %s", code, errOut)
	}
	code, want, errOut := matgate(t, "", "simulate", single, "--path", cold)
	if code != 0 {
		t.Fatalf("simulate: exit %d %s", code, errOut)
	}
	got := strings.Split(strings.TrimSpace(out), "\n")
	wl := strings.Split(strings.TrimSpace(want), "\n")
	if got[0] != wl[0]+",temperature" || len(got) != len(wl) || len(got) < 100 {
		t.Fatalf("header %q and %d rows, single card %q and %d rows", got[0], len(got), wl[0], len(wl))
	}
	for i := 1; i < len(got); i++ {
		if got[i] != wl[i]+",200" {
			t.Fatalf("row %d: %q, single-temperature card %q", i, got[i], wl[i])
		}
	}

	for _, tc := range []struct{ name, path, want string }{
		{"beyond the range", "strain,temperature\n0.002,20\n0.002,450\n", "path.csv:3: temperature 450 C is outside the card's range 20 to 400 C"},
		{"no temperatures", "strain\n0.002\n", "path.csv:1: header \"strain\""},
	} {
		p := filepath.Join(dir, "path.csv")
		os.WriteFile(p, []byte(tc.path), 0o644)
		code, _, errOut := matgate(t, "", "simulate", hotCard, "--path", p)
		if code != exitInvalid || !strings.Contains(errOut, tc.want) {
			t.Errorf("%s: exit %d, stderr %q, want %q", tc.name, code, errOut, tc.want)
		}
	}
	// A heating at zero strain from 20 C to 400 C stays elastic and the
	// stress is zero throughout.
	p := filepath.Join(dir, "heat.csv")
	os.WriteFile(p, []byte("strain,temperature\n0,20\n0,400\n"), 0o644)
	code, out, _ = matgate(t, "", "simulate", hotCard, "--path", p)
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if code != 0 || len(lines) != 382 || lines[len(lines)-1] != "380,0,0,0,0,0,400" {
		t.Errorf("heating: exit %d, %d lines, last %q", code, len(lines), lines[len(lines)-1])
	}
}
