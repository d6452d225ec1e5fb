package checks

import (
	"context"
	"errors"
	"math"
	"testing"

	"matgate/checks/plastic"
)

// TestSpecSizingLimits: hand-built specs whose cases leave small strain or
// exceed the work budget are refused with a *SpecError naming the field,
// among them the runaway cards of issue 9 (a linear term of 1e5 MPa with
// 10,000 ratchet cycles: 134 s and 6 GB; an AF term c 2000 MPa, gamma 1e-6
// whose ratcheting case was sized at 8e14 Pa).
func TestSpecSizingLimits(t *testing.T) {
	mat := func(terms []plastic.Term) plastic.Material {
		m, err := plastic.NewMaterial(200e9, 0.3, 250e6, terms, plastic.Isotropic{})
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	af := mat([]plastic.Term{{C: 40e9, Gamma: 200}})
	lin := mat([]plastic.Term{{C: 1e11}})
	slow := mat([]plastic.Term{{C: 2000e6, Gamma: 1e-6}})
	rows := []struct {
		name  string
		spec  Spec
		field string
	}{
		{"monotonic strain beyond 10 %", Spec{Material: af, MonotonicStrain: 0.15}, "MonotonicStrain"},
		{"strain amplitude below one microstrain (its increments underflowed to zero)", Spec{Material: af, StrainAmplitudes: []float64{5e-324, 0.005}}, "StrainAmplitudes[0]"},
		{"strain amplitude beyond 10 %", Spec{Material: af, StrainAmplitudes: []float64{0.005, 0.12}}, "StrainAmplitudes[1]"},
		{"relaxation beyond 10 %", Spec{Material: af, Relaxation: &Relaxation{MeanStrain: 0.06, StrainAmplitude: 0.05}}, "Relaxation"},
		// One AF term (a = 200 MPa) cycled between -240 and 440 MPa:
		// (1/200) ln((a^2 - 10^2)/(a^2 - 190^2)) = 0.0116 of ratchet strain
		// a cycle (singleTermRatchet), about 0.25 after 20 cycles.
		{"ratchet strain beyond 10 %", Spec{Material: af, Ratcheting: &Ratcheting{MeanStress: 100e6, StressAmplitude: 340e6, Cycles: 20}}, "Ratcheting.MeanStress"},
		{"linear term, 10,000 ratchet cycles", Spec{Material: lin, Ratcheting: &Ratcheting{MeanStress: 50e6, StressAmplitude: 300e6, Cycles: 10000}}, "Ratcheting.Cycles"},
		{"c 2000 MPa, gamma 1e-6: the old default ratcheting load", Spec{Material: slow, Ratcheting: &Ratcheting{MeanStress: 0.3 * 2e15, StressAmplitude: 250e6 + 0.4*2e15, Cycles: 20}}, "Ratcheting.Cycles"},
	}
	for _, row := range rows {
		t.Run(row.name, func(t *testing.T) {
			_, err := row.spec.Resolve()
			var se *SpecError
			if !errors.As(err, &se) || !errors.Is(err, ErrInvalidSpec) {
				t.Fatalf("got %v, want a *SpecError", err)
			}
			if se.Field != row.field {
				t.Errorf("field %s, want %s (%v)", se.Field, row.field, err)
			}
		})
	}
}

// TestDefaultCasesWithinLimits: every default case of the demo cards and
// of the cards of issue 9 stays within MaxStrain (largest |strain| of the
// recorded series, which keeps the first and the last increments of every
// case, where its largest strain is) and runs at most the increments that
// MaxPathYields allows at the profile (plus 4 a middle cycle and the
// least increments a branch).
func TestDefaultCasesWithinLimits(t *testing.T) {
	specs := map[string]Spec{}
	for _, d := range demoSpecs(t) {
		specs[d.name] = d.spec
	}
	m, err := plastic.NewMaterial(195000e6, 0.3, 271.7e6, []plastic.Term{{C: 50023.7e6, Gamma: 334.998}}, plastic.Isotropic{})
	if err != nil {
		t.Fatal(err)
	}
	specs["one AF term"] = Spec{Material: m}
	for name, spec := range specs {
		t.Run(name, func(t *testing.T) {
			res, err := Run(context.Background(), spec)
			if err != nil {
				t.Fatal(err)
			}
			prof := profiles[res.Settings.Profile]
			budget := MaxPathYields*int(prof.incPerYield) + 4*10000 + 8*prof.incPerBranch
			for i, c := range res.Cases {
				if c.Skipped != "" || c.Kind == "3d-non-proportional" {
					continue
				}
				peak := 0.0
				for _, s := range c.Series.Samples() {
					peak = math.Max(peak, math.Abs(s.Strain))
				}
				if peak > MaxStrain {
					t.Errorf("%s: strain %g beyond %g", c.Name, peak, MaxStrain)
				}
				if n := res.Settings.Cases[i].Increments; n > budget {
					t.Errorf("%s: %d increments, budget %d", c.Name, n, budget)
				}
			}
		})
	}
}

// BenchmarkSizingLimit is the worst card within the sizing limits: yield
// strain 2e-5 (E 200 GPa, sigmaY 4 MPa), so that a 10 % monotonic strain
// is the whole budget of 5000 yield strains; amplitudes, relaxation and
// ratcheting at the budget too; the strict profile (40 increments a yield
// strain) and 1000 cycles (the card schema's most). It measures the time
// and memory of one verification at the limits.
func BenchmarkSizingLimit(b *testing.B) {
	m, err := plastic.NewMaterial(200e9, 0.3, 4e6, []plastic.Term{{C: 2e9, Gamma: 100}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 2e6, B: 10})
	if err != nil {
		b.Fatal(err)
	}
	epsY := m.SigmaY / m.E
	a := MaxPathYields * epsY / 13 // cyclicWork(a, a) = 13 a
	r := MaxPathYields * epsY / 14 // cyclicWork(2r, r) = 14 r
	amp := 0.9 * m.SigmaY          // ratchetWork ~ 4 amp N
	N := int(MaxPathYields * m.SigmaY / (4 * amp) * 0.99)
	spec := Spec{Material: m, Profile: "strict", MonotonicStrain: MaxStrain, StrainAmplitudes: []float64{a / 2, a}, Cycles: 1000,
		Relaxation: &Relaxation{MeanStrain: r, StrainAmplitude: r},
		Ratcheting: &Ratcheting{MeanStress: 0.1 * amp, StressAmplitude: amp, Cycles: N}}
	if _, err := spec.Resolve(); err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Run(context.Background(), spec); err != nil {
			b.Fatal(err)
		}
	}
}
