package checks

import (
	"context"
	"errors"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"matgate/checks/plastic"
)

func TestDemoCardsPass(t *testing.T) {
	for _, d := range demoSpecs(t) {
		t.Run(d.name, func(t *testing.T) {
			res, err := Run(context.Background(), d.spec)
			if err != nil {
				t.Fatal(err)
			}
			n := 0
			for _, c := range res.Cases {
				for _, ch := range c.Checks {
					n++
					if !ch.Pass || testing.Verbose() {
						t.Logf("%s / %s: pass=%v value %.17g ref %.17g tol %.3g %s %s", c.Name, ch.Name, ch.Pass, ch.Value, ch.Reference, ch.Tolerance, ch.ToleranceKind, ch.Bound)
					}
					if !ch.Pass {
						t.Errorf("%s / %s failed", c.Name, ch.Name)
					}
				}
				for _, o := range c.Omitted {
					t.Logf("%s: omitted %s: %s", c.Name, o.Check, o.Why)
				}
			}
			if res.Verdict != "pass" {
				t.Errorf("verdict %s", res.Verdict)
			}
			t.Logf("%d checks", n)
		})
	}
}

// TestShapesPass runs specs of our own test scenario that reach the checks
// the demo cards do not: one Armstrong-Frederick term (explicit ratchet
// formula), linear kinematic hardening under stress cycling (shakedown),
// and linear isotropic hardening (no stabilized loop).
func TestShapesPass(t *testing.T) {
	mat := func(terms []plastic.Term, iso plastic.Isotropic) plastic.Material {
		m, err := plastic.NewMaterial(200e9, 0.3, 250e6, terms, iso)
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	rows := []struct {
		name string
		spec Spec
		want string // a check that must be present
	}{
		{"one AF term", Spec{Material: mat([]plastic.Term{{C: 40e9, Gamma: 200}}, plastic.Isotropic{}),
			Ratcheting: &Ratcheting{MeanStress: 50e6, StressAmplitude: 270e6, Cycles: 10}},
			"steady ratchet strain per cycle (single Armstrong-Frederick term)"},
		{"Prager under stress cycling", Spec{Material: mat([]plastic.Term{{C: 5e9}}, plastic.Isotropic{}),
			Ratcheting: &Ratcheting{MeanStress: 50e6, StressAmplitude: 300e6, Cycles: 10}},
			"shakedown (linear kinematic hardening)"},
		{"AF with linear isotropic", Spec{Material: mat([]plastic.Term{{C: 40e9, Gamma: 200}}, plastic.Isotropic{Kind: plastic.IsoLinear, K: 1e9}), Profile: "strict"},
			"peak stress, cycle 10"},
	}
	for _, row := range rows {
		t.Run(row.name, func(t *testing.T) {
			res, err := Run(context.Background(), row.spec)
			if err != nil {
				t.Fatal(err)
			}
			found := false
			for _, c := range res.Cases {
				for _, ch := range c.Checks {
					found = found || ch.Name == row.want
					if !ch.Pass {
						t.Errorf("%s / %s: value %.17g ref %.17g tol %.3g", c.Name, ch.Name, ch.Value, ch.Reference, ch.Tolerance)
					}
				}
			}
			if !found {
				t.Errorf("check %q not run", row.want)
			}
		})
	}
}

// TestWrongModulusReading builds the classic card error: a reference curve
// computed from the bilinear closed form with the tangent modulus Et (the
// slope of the curve), and a material whose linear term took Et as the
// plastic modulus H. The reference check must fail on that reading and pass
// on the right one, H = E Et/(E - Et). Test scenario of our own: E = 200
// GPa, sigmaY = 300 MPa, Et = 20 GPa, strain to 0.02.
func TestWrongModulusReading(t *testing.T) {
	const E, sy, Et = 200e9, 300e6, 20e9
	var pts [][2]float64
	for i := 0; i <= 40; i++ {
		e := 0.02 * float64(i) / 40
		s := E * e
		if s > sy { // bilinear: sigma = sigmaY + Et (eps - sigmaY/E)
			s = sy + Et*(e-sy/E)
		}
		pts = append(pts, [2]float64{e, s})
	}
	ref := Reference{Name: "tension-bilinear", Kind: "solver", Control: "strain", Points: pts}
	for _, row := range []struct {
		name string
		H    float64
		pass bool
	}{
		{"tangent modulus read as plastic modulus", Et, false},
		{"right reading", E * Et / (E - Et), true},
	} {
		t.Run(row.name, func(t *testing.T) {
			m, err := plastic.NewMaterial(E, 0.3, sy, []plastic.Term{{C: row.H}}, plastic.Isotropic{})
			if err != nil {
				t.Fatal(err)
			}
			res, err := Run(context.Background(), Spec{Material: m, References: []Reference{ref}})
			if err != nil {
				t.Fatal(err)
			}
			var failed []string
			for _, c := range res.Cases {
				for _, ch := range c.Checks {
					if !ch.Pass {
						failed = append(failed, c.Name+" / "+ch.Name)
					}
				}
			}
			want := []string{}
			if !row.pass {
				want = []string{"reference-tension-bilinear / max error against the reference"}
			}
			if diff := cmp.Diff(want, failed, cmpopts.EquateEmpty()); diff != "" {
				t.Errorf("failed checks (-want +got):\n%s", diff)
			}
		})
	}
}

func TestRunCanceled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Run(ctx, demoSpecs(t)[1].spec)
	if !errors.Is(err, ErrCanceled) || !errors.Is(err, context.Canceled) {
		t.Fatalf("got %v, want ErrCanceled wrapping context.Canceled", err)
	}
}

func TestSpecErrors(t *testing.T) {
	m := demoSpecs(t)[2].spec.Material
	for _, s := range []Spec{
		{Material: m, Profile: "lenient"},
		{Material: m, StrainAmplitudes: []float64{-1}},
		{Material: m, Ratcheting: &Ratcheting{MeanStress: 0, StressAmplitude: -1}},
		{Material: m, References: []Reference{{Name: "x", Kind: "guess", Control: "strain", Points: [][2]float64{{0, 0}, {1, 1}}}}},
		{},
	} {
		var se *SpecError
		if _, err := Run(context.Background(), s); !errors.As(err, &se) || !errors.Is(err, ErrInvalidSpec) {
			t.Errorf("spec %+v: got %v, want *SpecError", s.Profile, err)
		}
	}
}
