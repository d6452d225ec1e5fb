package plastic

import (
	"context"
	"errors"
	"math"
	"testing"
)

// hotTable is a two-temperature table of the form of chaboche3Voce (two
// Armstrong-Frederick terms, a linear term, Voce), softer at 673.15 K.
// Invented steel-like values, inputs to closed forms.
func hotTable(t *testing.T) Table {
	t.Helper()
	cold, err := NewMaterial(200e9, 0.3, 250e6, []Term{{C: 60e9, Gamma: 600}, {C: 15e9, Gamma: 80}, {C: 2e9}}, Isotropic{Kind: IsoVoce, Q: 40e6, B: 12})
	if err != nil {
		t.Fatal(err)
	}
	hot, err := NewMaterial(170e9, 0.31, 180e6, []Term{{C: 45e9, Gamma: 700}, {C: 10e9, Gamma: 90}, {C: 1.2e9}}, Isotropic{Kind: IsoVoce, Q: 25e6, B: 14})
	if err != nil {
		t.Fatal(err)
	}
	tb, err := NewTable([]float64{293.15, 673.15}, []Material{cold, hot})
	if err != nil {
		t.Fatal(err)
	}
	return tb
}

// Linear interpolation, checked against values computed by hand: at
// 388.15 K, a quarter of the way, E = 200 - 0.25 30 = 192.5 GPa, sigmaY =
// 250 - 0.25 70 = 232.5 MPa, C_1 = 60 - 0.25 15 = 56.25 GPa, gamma_1 = 600
// + 0.25 100 = 625, C_3 = 2 - 0.25 0.8 = 1.8 GPa, Q = 40 - 0.25 15 = 36.25
// MPa, B = 12.5, nu = 0.3025. Outside the range: ErrOutOfRange.
func TestTableAt(t *testing.T) {
	tb := hotTable(t)
	m, err := tb.At(388.15)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"E", m.E, 192.5e9}, {"sigmaY", m.SigmaY, 232.5e6}, {"C1", m.Terms[0].C, 56.25e9}, {"gamma1", m.Terms[0].Gamma, 625},
		{"C3", m.Terms[2].C, 1.8e9}, {"gamma3", m.Terms[2].Gamma, 0}, {"Q", m.Iso.Q, 36.25e6}, {"B", m.Iso.B, 12.5}, {"nu", m.Nu, 0.3025},
	} {
		// w = 0.25 exactly; (1 - w) a + w b rounds twice: 2 ulp.
		if relErr(c.got, c.want) > 4.5e-16 {
			t.Errorf("%s at 388.15 K = %.17g, want %.17g", c.name, c.got, c.want)
		}
	}
	if got, _ := tb.At(673.15); got != tb.M[1] {
		t.Error("At a tabulated temperature is not the tabulated material")
	}
	for _, T := range []float64{293.14, 673.16, math.NaN()} {
		if _, err := tb.At(T); !errors.Is(err, ErrOutOfRange) {
			t.Errorf("At(%g): %v, want ErrOutOfRange", T, err)
		}
	}
	if _, err := NewTable([]float64{300, 300}, tb.M); err == nil {
		t.Error("equal temperatures accepted")
	}
	other := mustMaterial(t, []Term{{C: 1e9, Gamma: 10}, {C: 1e9, Gamma: 10}, {C: 1e9, Gamma: 10}}, Isotropic{Kind: IsoVoce, Q: 1e6, B: 1})
	if _, err := NewTable([]float64{300, 400}, []Material{tb.M[0], other}); err == nil {
		t.Error("a linear term at one temperature and an Armstrong-Frederick term at the other accepted")
	}
}

// An elastic temperature excursion after plastic prestrain: with dp = 0
// the back-stress law with Chaboche's temperature-rate term,
// d alpha_i = (1/C_i)(dC_i/dT) alpha_i dT, gives alpha_i(T) =
// alpha_i(T0) C_i(T)/C_i(T0) (closed form; J.-L. Chaboche, Int. J.
// Plasticity 5, 1989, from memory). Heating from 293.15 K to 673.15 K at
// zero stress and back: every increment on the closed form, no plastic
// flow, the stress E(T)(eps - eps_p) = 0 exactly, and the start recovered.
func TestElasticTemperatureExcursion(t *testing.T) {
	tb := hotTable(t)
	s := StateT1D{T: 293.15}
	ctx := context.Background()
	if _, err := tb.RunT1D(ctx, &s, StrainControl, 1e-4, 5, []PointT{{0.01, 293.15}}, nil, nil); err != nil {
		t.Fatal(err)
	}
	if _, err := tb.RunT1D(ctx, &s, StrainControl, 1e-4, 5, []PointT{{s.EpsP, 293.15}}, nil, nil); err != nil {
		t.Fatal(err)
	}
	start := s
	// The unloading accumulates stress increments: zero to round-off.
	if math.Abs(start.Sigma) > 1e-12*start.Alpha[0] || start.P == 0 {
		t.Fatalf("prestrained state: sigma %g, p %g", start.Sigma, start.P)
	}
	m0 := tb.M[0]
	n := 0
	check := func(s *StateT1D) {
		n++
		m, _ := tb.At(s.T)
		if s.P != start.P || s.Sigma != 0 {
			t.Fatalf("at %g K: p %g (start %g), sigma %g: the excursion must stay elastic at zero stress", s.T, s.P, start.P, s.Sigma)
		}
		for i := 0; i < m.N; i++ {
			want := start.Alpha[i] * m.Terms[i].C / m0.Terms[i].C
			// One product of ratios per increment: about 3 u of
			// round-off each, 80 increments there and back.
			if relErr(s.Alpha[i], want) > 1e-13 {
				t.Fatalf("at %g K, term %d: alpha %.17g, closed form %.17g", s.T, i, s.Alpha[i], want)
			}
		}
	}
	if _, err := tb.RunT1D(ctx, &s, StrainControl, 1e-4, 10, []PointT{{s.EpsP, 673.15}, {s.EpsP, 293.15}}, nil, check); err != nil {
		t.Fatal(err)
	}
	if n != 76 {
		t.Errorf("%d increments, want 2 x 38", n)
	}
	for i := 0; i < m0.N; i++ {
		if relErr(s.Alpha[i], start.Alpha[i]) > 1e-13 {
			t.Errorf("term %d after the excursion: %.17g, before %.17g", i, s.Alpha[i], start.Alpha[i])
		}
	}
}

// A history at one temperature, tabulated or between two, gives Run1D's
// result for the material at that temperature bit for bit: same
// increments, same states.
func TestIsothermalEquivalence(t *testing.T) {
	tb := hotTable(t)
	ctx := context.Background()
	targets := []float64{0.006, -0.006, 0.006, -0.004, 0.008}
	for _, T := range []float64{293.15, 480, 673.15} {
		for _, c := range []struct {
			control Control
			inc     float64
		}{{StrainControl, 1e-4}, {StressControl, 5e6}} {
			m, err := tb.At(T)
			if err != nil {
				t.Fatal(err)
			}
			tg := targets
			if c.control == StressControl {
				tg = []float64{1.1 * m.SigmaY, -1.1 * m.SigmaY, 1.1 * m.SigmaY}
			}
			var want []State1D
			var s0 State1D
			path := Path1D{Control: c.control, Targets: tg, MaxIncrement: c.inc}
			if _, err := m.Run1D(ctx, &s0, &path, nil, func(_ int, s *State1D) { want = append(want, *s) }); err != nil {
				t.Fatal(err)
			}
			var got []State1D
			s := StateT1D{T: T}
			pts := make([]PointT, len(tg))
			for i, v := range tg {
				pts[i] = PointT{v, T}
			}
			if _, err := tb.RunT1D(ctx, &s, c.control, c.inc, 1, pts, nil, func(s *StateT1D) { got = append(got, s.State1D) }); err != nil {
				t.Fatal(err)
			}
			if len(got) != len(want) {
				t.Fatalf("at %g K, %v control: %d increments, Run1D %d", T, c.control, len(got), len(want))
			}
			for i := range want {
				if got[i] != want[i] {
					t.Fatalf("at %g K, %v control, increment %d: %+v, Run1D %+v", T, c.control, i, got[i], want[i])
				}
			}
		}
	}
}

// Invariants of thermo-mechanical cycling, in phase and out of phase: the
// yield condition after every plastic increment at the end temperature,
// and the bound |alpha_i| <= C_i(T)/min gamma_i of every
// Armstrong-Frederick term (with a_i = alpha_i/C_i, d a_i = d eps_p -
// gamma_i a_i dp decreases |a_i| once |a_i| >= 1/gamma_i, and the
// temperature-rate term leaves a_i unchanged; derived from the law).
func TestThermoMechanicalInvariants(t *testing.T) {
	tb := hotTable(t)
	ctx := context.Background()
	for _, phase := range []float64{1, -1} {
		s := StateT1D{T: 483.15}
		var path []PointT
		for c := 0; c < 5; c++ {
			path = append(path, PointT{0.006, 483.15 + phase*190}, PointT{-0.006, 483.15 - phase*190})
		}
		gMin := [2]float64{600, 80}
		plasticSteps := 0
		prev := s
		_, err := tb.RunT1D(ctx, &s, StrainControl, 5e-5, 2, path, nil, func(s *StateT1D) {
			m, _ := tb.At(s.T)
			if s.P > prev.P {
				plasticSteps++
				if f := m.Yield1D(&s.State1D); math.Abs(f) > 1e-9*m.SigmaY {
					t.Fatalf("phase %g at %g K: yield function %g after a plastic increment", phase, s.T, f)
				}
			}
			for i := 0; i < 2; i++ {
				if bound := m.Terms[i].C / gMin[i]; math.Abs(s.Alpha[i]) > bound*(1+1e-12) {
					t.Fatalf("phase %g at %g K: |alpha_%d| = %g above C/min gamma = %g", phase, s.T, i, s.Alpha[i], bound)
				}
			}
			prev = *s
		})
		if err != nil {
			t.Fatal(err)
		}
		if plasticSteps < 100 {
			t.Errorf("phase %g: only %d plastic increments: the cycle does not test the flow", phase, plasticSteps)
		}
	}
}

// An anisothermal step, between tabulated temperatures and plastic, does
// not allocate (the hot loop of RunT1D).
func TestStepT1DAllocates(t *testing.T) {
	tb := hotTable(t)
	s := StateT1D{T: 300}
	var dst StateT1D
	n := testing.AllocsPerRun(100, func() {
		if _, err := tb.StepT1D(&dst, &s, 0.002, 310, nil); err != nil {
			t.Fatal(err)
		}
	})
	if n != 0 || dst.P == 0 {
		t.Errorf("%g allocations a step (plastic: %v)", n, dst.P > 0)
	}
}

// A plastic step with a temperature change is first order (the step
// applies the temperature change at fixed plastic strain, then flows with
// the end-of-step parameters: an operator split): loading to 0.006 while
// heating from 293.15 K to 673.15 K, then reversing to -0.002 while
// cooling, the error of the final stress against a run at 1/1024 of the
// increment halves when the increment halves. Bounds: the ratio of
// successive errors is 2 for a first-order method up to the O(h^2) terms
// (1.99 to 2.01 seen) and the reference's own error (at most 2 h_ref/h =
// 1.6 % here): [1.9, 2.1].
func TestAnisothermalFirstOrder(t *testing.T) {
	tb := hotTable(t)
	run := func(h float64) float64 {
		s := StateT1D{T: 293.15}
		dT := 380 * h / 0.006 // the temperature moves with the strain
		if _, err := tb.RunT1D(context.Background(), &s, StrainControl, h, dT, []PointT{{0.006, 673.15}, {-0.002, 293.15}}, nil, nil); err != nil {
			t.Fatal(err)
		}
		return s.Sigma
	}
	ref := run(1e-4 / 1024)
	prev := run(1e-4) - ref
	for _, h := range []float64{5e-5, 2.5e-5, 1.25e-5} {
		e := run(h) - ref
		if r := prev / e; !(r >= 1.9 && r <= 2.1) {
			t.Errorf("increment %g: error %g Pa, ratio to the error at twice the increment %g, want about 2", h, e, r)
		}
		prev = e
	}
}
