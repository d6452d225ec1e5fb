package checks

import (
	"context"
	"testing"

	"matgate/checks/plastic"
)

func mat(t *testing.T, E, sy float64, terms []plastic.Term, iso plastic.Isotropic) plastic.Material {
	t.Helper()
	m, err := plastic.NewMaterial(E, 0.3, sy, terms, iso)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// sense says whether every parameter moves the monotonic stress the same
// way between two temperatures (the condition under which the
// interpolated card's curve lies between its neighbours', see bracket).
func TestSense(t *testing.T) {
	voce := func(q, b float64) plastic.Isotropic { return plastic.Isotropic{Kind: plastic.IsoVoce, Q: q, B: b} }
	cold := mat(t, 210e9, 355e6, []plastic.Term{{C: 40e9, Gamma: 250}, {C: 1.5e9}}, voce(30e6, 8))
	for _, tc := range []struct {
		name    string
		hot     plastic.Material
		want    int
		opposed bool
	}{
		{"everything softer, gamma up", mat(t, 170e9, 245e6, []plastic.Term{{C: 27e9, Gamma: 280}, {C: 1e9}}, voce(18e6, 8)), -1, false},
		{"nothing changes", cold, 0, false},
		{"yield falls, C rises", mat(t, 210e9, 245e6, []plastic.Term{{C: 50e9, Gamma: 250}, {C: 1.5e9}}, voce(30e6, 8)), 0, true},
		{"C falls, gamma falls too (saturation up)", mat(t, 210e9, 355e6, []plastic.Term{{C: 30e9, Gamma: 150}, {C: 1.5e9}}, voce(30e6, 8)), 0, true},
		{"Voce b up with q > 0 hardens, E up", mat(t, 220e9, 355e6, []plastic.Term{{C: 40e9, Gamma: 250}, {C: 1.5e9}}, voce(30e6, 10)), 1, false},
		{"q changes sign while b changes", mat(t, 210e9, 355e6, []plastic.Term{{C: 40e9, Gamma: 250}, {C: 1.5e9}}, voce(-10e6, 10)), 0, true},
	} {
		got, why := sense(&cold, &tc.hot)
		if (why != "") != tc.opposed || (!tc.opposed && got != tc.want) {
			t.Errorf("%s: sense %d, why %q; want %d, opposed %v", tc.name, got, why, tc.want, tc.opposed)
		}
	}
}

// Where the parameters pull in opposite senses the bracket is omitted,
// with why; where they agree it is checked, and the demo-like table passes.
func TestBracket(t *testing.T) {
	ctx := context.Background()
	cold := mat(t, 210e9, 355e6, []plastic.Term{{C: 40e9, Gamma: 250}}, plastic.Isotropic{})
	for _, tc := range []struct {
		name  string
		hot   plastic.Material
		check bool
	}{
		{"softer", mat(t, 170e9, 245e6, []plastic.Term{{C: 27e9, Gamma: 280}}, plastic.Isotropic{}), true},
		{"yield falls, saturation rises", mat(t, 210e9, 245e6, []plastic.Term{{C: 60e9, Gamma: 200}}, plastic.Isotropic{}), false},
	} {
		tb, err := plastic.NewTable([]float64{293.15, 673.15}, []plastic.Material{cold, tc.hot})
		if err != nil {
			t.Fatal(err)
		}
		lo, err := Spec{Material: cold}.Resolve()
		if err != nil {
			t.Fatal(err)
		}
		hi, err := Spec{Material: tc.hot}.Resolve()
		if err != nil {
			t.Fatal(err)
		}
		c, err := bracket(ctx, &tb, 0, lo, hi)
		if err != nil {
			t.Fatal(err)
		}
		if *c.Temperature != 483.15 || len(c.Curves) != 2 {
			t.Errorf("%s: temperature %v, %d neighbour curves", tc.name, *c.Temperature, len(c.Curves))
		}
		switch {
		case tc.check && (len(c.Checks) != 1 || !c.Checks[0].Pass || c.Checks[0].Value > 0):
			t.Errorf("%s: checks %+v", tc.name, c.Checks)
		case !tc.check && (len(c.Checks) != 0 || len(c.Omitted) != 1):
			t.Errorf("%s: checks %+v, omitted %+v", tc.name, c.Checks, c.Omitted)
		}
	}
}

// RunTable on two tables beyond the demo card's shape: one without
// kinematic hardening (the back-stress checks are omitted, with why) and
// one whose back stress after prestrain outgrows the hot yield surface, so
// that heating at zero stress yields (the closed form is compared up to
// there, the return omitted). Both pass.
func TestRunTableOmissions(t *testing.T) {
	ctx := context.Background()
	voce := func(q float64) plastic.Isotropic { return plastic.Isotropic{Kind: plastic.IsoVoce, Q: q, B: 10} }
	for _, tc := range []struct {
		name      string
		cold, hot plastic.Material
		omitted   map[string]string // case -> check omitted
	}{
		{"isotropic only", mat(t, 210e9, 355e6, nil, voce(60e6)), mat(t, 180e9, 250e6, nil, voce(40e6)),
			map[string]string{"anisothermal-excursion": "back stress on the closed form", "thermomechanical-in-phase": "back stress within C(T)/min gamma"}},
		{"heating yields", mat(t, 200e9, 355e6, []plastic.Term{{C: 300e9, Gamma: 1000}}, plastic.Isotropic{}), mat(t, 200e9, 100e6, []plastic.Term{{C: 300e9, Gamma: 1000}}, plastic.Isotropic{}),
			map[string]string{"anisothermal-excursion": "back at the start"}},
	} {
		tb, err := plastic.NewTable([]float64{293.15, 673.15}, []plastic.Material{tc.cold, tc.hot})
		if err != nil {
			t.Fatal(err)
		}
		res, err := RunTable(ctx, TableSpec{Table: tb, Specs: []Spec{{Material: tc.cold}, {Material: tc.hot}}})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if res.Verdict != "pass" {
			for _, c := range res.Cases {
				for _, ch := range c.Checks {
					if !ch.Pass {
						t.Errorf("%s: %s / %s: %g (tolerance %g)", tc.name, c.Name, ch.Name, ch.Value, ch.Tolerance)
					}
				}
			}
		}
		for cs, check := range tc.omitted {
			found := false
			for _, c := range res.Cases {
				for _, o := range c.Omitted {
					found = found || (c.Name == cs && o.Check == check)
				}
			}
			if !found {
				t.Errorf("%s: %s does not omit %q", tc.name, cs, check)
			}
		}
	}
}
