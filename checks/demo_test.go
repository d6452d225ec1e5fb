package checks

import (
	"testing"

	"matgate/checks/plastic"
)

// Unit factors, by hand: 1 ksi = 6894757.293168 Pa (NIST SP 811, 2008,
// appendix B.9: 1 kip/in^2 = 6.894 757 E+06 Pa; the full value from 1 lbf =
// 4.448221615260500 N and 1 in = 0.0254 m), 1 MPa = 1e6 Pa, 1 GPa = 1e9 Pa.
const (
	ksi = 6894757.293168
	mpa = 1e6
	gpa = 1e9
)

type demo struct {
	name string
	spec Spec
}

// demoSpecs are the specs of the four demo cards of testdata/cards, the
// numbers copied from the files and converted to Pa here.
func demoSpecs(t testing.TB) []demo {
	t.Helper()
	mat := func(E, nu, sy float64, terms []plastic.Term, iso plastic.Isotropic) plastic.Material {
		m, err := plastic.NewMaterial(E, nu, sy, terms, iso)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	// al-bilinear.yaml: E = 10200 ksi, nu = 0.33, sigmaY = 40 ksi, linear
	// term given as tangent modulus Et = 100 ksi: H = E Et / (E - Et).
	E, Et := 10200*ksi, 100*ksi
	al := mat(E, 0.33, 40*ksi, []plastic.Term{{C: E * Et / (E - Et)}}, plastic.Isotropic{})
	// ss-chaboche.yaml: MPa.
	ss := mat(195000*mpa, 0.3, 180*mpa, []plastic.Term{
		{C: 60000 * mpa, Gamma: 800}, {C: 15000 * mpa, Gamma: 100}, {C: 2000 * mpa, Gamma: 10},
	}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 60 * mpa, B: 6})
	// steel-prager.json: GPa, plastic modulus H = 2 GPa.
	st := mat(205*gpa, 0.3, 0.355*gpa, []plastic.Term{{C: 2 * gpa}}, plastic.Isotropic{})
	// hanger-mixed.yaml: MPa, a linear term given as tangent modulus Et =
	// 10000 MPa next to an Armstrong-Frederick term, and a reference
	// history (the card's own response, rounded to 0.01 MPa).
	Eh, Eth := 206000*mpa, 10000*mpa
	hg := mat(Eh, 0.29, 420*mpa, []plastic.Term{{C: Eh * Eth / (Eh - Eth)}, {C: 90000 * mpa, Gamma: 600}}, plastic.Isotropic{})
	hgPts := [][2]float64{{0, 0}, {0.0025, 449.43}, {0.005, 556.40}, {0.0075, 608.01},
		{0.01, 640.05}, {0.0125, 666.78}, {0.015, 692.20}, {0.0175, 717.30},
		{0.02, 742.32}, {0.0225, 767.33}, {0.025, 792.33}, {0.0225, 277.33},
		{0.02, -132.32}, {0.0175, -292.59}, {0.015, -371.35}, {0.0125, -412.06},
		{0.01, -441.05}, {0.0075, -467.02}, {0.005, -492.26}, {0.0025, -517.31},
		{0, -542.33}, {-0.0025, -567.33}, {-0.005, -592.33}, {-0.0075, -617.33},
		{-0.01, -642.33}}
	for i := range hgPts {
		hgPts[i][1] *= mpa
	}
	return []demo{
		{"al-bilinear", Spec{Material: al, Profile: "standard"}},
		{"ss-chaboche", Spec{Material: ss, Profile: "standard", StrainAmplitudes: []float64{0.004, 0.008},
			Ratcheting: &Ratcheting{MeanStress: 60 * mpa, StressAmplitude: 260 * mpa, Cycles: 20}}},
		{"steel-prager", Spec{Material: st, Profile: "standard"}},
		{"hanger-mixed", Spec{Material: hg, Profile: "standard", StrainAmplitudes: []float64{0.005, 0.01},
			Ratcheting: &Ratcheting{MeanStress: 50 * mpa, StressAmplitude: 460 * mpa, Cycles: 20},
			References: []Reference{{Name: "tension-reversal", Kind: "solver", Control: "strain", Points: hgPts, Tol: 0.005}}}},
	}
}
