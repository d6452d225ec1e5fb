package plastic

import (
	"context"
	"math"
	"testing"
)

// Test materials. The parameter values are invented, steel-like magnitudes
// (E = 200 GPa, sigmaY = 250 MPa); they are inputs to closed forms, not
// reference data.
const (
	tE      = 200e9
	tNu     = 0.3
	tSigmaY = 250e6
)

func mustMaterial(t testing.TB, terms []Term, iso Isotropic) Material {
	t.Helper()
	m, err := NewMaterial(tE, tNu, tSigmaY, terms, iso)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// chaboche3Voce is three Armstrong-Frederick terms with Voce hardening: the
// benchmark material of the issue.
func chaboche3Voce(t testing.TB) Material {
	return mustMaterial(t, []Term{{C: 60e9, Gamma: 600}, {C: 15e9, Gamma: 80}, {C: 2e9, Gamma: 8}}, Isotropic{Kind: IsoVoce, Q: 40e6, B: 12})
}

func relErr(got, want float64) float64 {
	if want == 0 {
		return math.Abs(got)
	}
	return math.Abs(got-want) / math.Abs(want)
}

// run1D runs a path and fails the test on error; it returns the history.
func run1D(t testing.TB, m *Material, s State1D, path Path1D, set *Settings) (State1D, []State1D, Result) {
	t.Helper()
	var hist []State1D
	res, err := m.Run1D(context.Background(), &s, &path, set, func(_ int, s *State1D) { hist = append(hist, *s) })
	if err != nil {
		t.Fatalf("Run1D: %v (result %+v)", err, res)
	}
	return s, hist, res
}

func run3D(t testing.TB, m *Material, s State3D, path Path3D, set *Settings) (State3D, []State3D, Result) {
	t.Helper()
	var hist []State3D
	res, err := m.Run3D(context.Background(), &s, &path, set, func(_ int, s *State3D) { hist = append(hist, *s) })
	if err != nil {
		t.Fatalf("Run3D: %v (result %+v)", err, res)
	}
	return s, hist, res
}

// stateVec1D flattens a 1D state for comparisons.
func stateVec1D(s State1D) []float64 {
	return append([]float64{s.Eps, s.EpsP, s.P, s.Sigma}, s.Alpha[:]...)
}

// maxRelDiff1D returns the largest difference of two states, each component
// relative to a scale of its kind (strains to the largest strain magnitude,
// stresses to sigmaY) so that components crossing zero do not blow up.
func maxRelDiff1D(a, b State1D, sigmaY float64) float64 {
	epsScale := math.Max(math.Max(math.Abs(a.Eps), math.Abs(a.P)), 1e-300)
	d := math.Max(math.Abs(a.Eps-b.Eps), math.Max(math.Abs(a.EpsP-b.EpsP), math.Abs(a.P-b.P))) / epsScale
	d = math.Max(d, math.Abs(a.Sigma-b.Sigma)/sigmaY)
	for i := range a.Alpha {
		d = math.Max(d, math.Abs(a.Alpha[i]-b.Alpha[i])/sigmaY)
	}
	return d
}
