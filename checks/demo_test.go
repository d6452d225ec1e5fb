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

// demoSpecs are the specs of the three demo cards of testdata/cards, the
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
	return []demo{
		{"al-bilinear", Spec{Material: al, Profile: "standard"}},
		{"ss-chaboche", Spec{Material: ss, Profile: "standard", StrainAmplitudes: []float64{0.004, 0.008},
			Ratcheting: &Ratcheting{MeanStress: 60 * mpa, StressAmplitude: 260 * mpa, Cycles: 20}}},
		{"steel-prager", Spec{Material: st, Profile: "standard"}},
	}
}
