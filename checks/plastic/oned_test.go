package plastic

import (
	"context"
	"errors"
	"math"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"gonum.org/v1/gonum/diff/fd"
)

// preCycled returns a non-virgin state: a cycle of +-0.01 and back to zero
// stress, so that back stresses and p are non-trivial.
func preCycled(t *testing.T, m *Material) State1D {
	s, _, _ := run1D(t, m, State1D{}, Path1D{Targets: []float64{0.01, -0.01}, MaxIncrement: 1e-4}, nil)
	s, _, _ = run1D(t, m, s, Path1D{Control: StressControl, Targets: []float64{0}, MaxIncrement: 10e6}, nil)
	return s
}

// TestExact1DIncrementIndependence: the Exact 1D step solves the rate
// equations exactly for a strain increment linear in time, so one increment
// and 1,000 increments over the same monotone strain give the same state to
// 1e-12 relative (the bound; round-off of 1,000 steps is about
// 1e-13). Derived here: within a monotone increment the flow direction is
// constant and the state is a function of dp alone (Step1D).
func TestExact1DIncrementIndependence(t *testing.T) {
	mats := map[string]Material{
		"chaboche3+voce":           chaboche3Voce(t),
		"af+prager+voce-softening": mustMaterial(t, []Term{{C: 40e9, Gamma: 300}, {C: 1e9}}, Isotropic{Kind: IsoVoce, Q: -50e6, B: 20}),
	}
	for name, m := range mats {
		start := preCycled(t, &m)
		for _, target := range []float64{0.03, -0.03} {
			one, _, _ := run1D(t, &m, start, Path1D{Targets: []float64{target}, MaxIncrement: 1}, nil)
			many, _, _ := run1D(t, &m, start, Path1D{Targets: []float64{target}, MaxIncrement: math.Abs(target-start.Eps) / 1000 * 1.0000001}, nil)
			d := maxRelDiff1D(many, one, m.SigmaY)
			t.Logf("%s, to %g: 1 vs 1000 increments: %.3g", name, target, d)
			if d > 1e-12 {
				t.Errorf("%s, to %g: 1 vs 1000 increments differ by %.3g > 1e-12\n(-want +got):\n%s", name, target, d,
					cmp.Diff(stateVec1D(many), stateVec1D(one), cmpopts.EquateApprox(1e-12, 0)))
			}
		}
	}
}

// TestBackwardEuler1DFirstOrder: backward Euler converges to the Exact 1D
// solution at first order under step halving. Source: Simo and Hughes,
// Computational Inelasticity, 1998, ch. 1 (implicit Euler is first-order
// accurate); the order is measured and must lie in [0.9, 1.1].
func TestBackwardEuler1DFirstOrder(t *testing.T) {
	m := chaboche3Voce(t)
	start := preCycled(t, &m)
	exact, _, _ := run1D(t, &m, start, Path1D{Targets: []float64{0.02}, MaxIncrement: 1}, nil)
	var errs []float64
	for _, n := range []float64{100, 200, 400, 800} {
		s, _, _ := run1D(t, &m, start, Path1D{Targets: []float64{0.02}, MaxIncrement: (0.02 - start.Eps) / n * 1.0000001}, &Settings{Algorithm: BackwardEuler})
		errs = append(errs, math.Abs(s.Sigma-exact.Sigma)/m.SigmaY)
	}
	t.Logf("backward Euler 1D stress error / sigmaY at 100..800 increments: %.3g", errs)
	for i := 1; i < len(errs); i++ {
		if order := math.Log2(errs[i-1] / errs[i]); order < 0.9 || order > 1.1 {
			t.Errorf("observed order %.3f at halving %d, want about 1 (errors %.3g)", order, i, errs)
		}
	}
}

// TestTangent1D: the returned tangent is d sigma / d eps of the step, by
// central finite differences (gonum diff/fd), for both algorithms, on
// plastic increments in both directions. Tolerance 1e-7 relative: the
// step 1e-6 against increments of 3e-3 to 1e-2 gives a truncation error of
// order (1e-6/3e-3)^2 = 1e-7 times the ratio of the third derivative of
// sigma to the first (much less than 1 here), and
// keeps the noise of the dp iteration (stopped at 1e-14 dp, about 1e-5 Pa)
// at 1e-5 Pa / 2e-6 = 5 Pa, below 1e-9 of the tangent.
func TestTangent1D(t *testing.T) {
	m := chaboche3Voce(t)
	start := preCycled(t, &m)
	for _, alg := range []Algorithm{Exact, BackwardEuler} {
		set := &Settings{Algorithm: alg}
		for _, de := range []float64{3e-3, -4e-3, 1e-2} {
			var out State1D
			info, err := m.Step1D(&out, &start, de, set)
			if err != nil || !info.Plastic {
				t.Fatalf("%v, de %g: plastic %v err %v", alg, de, info.Plastic, err)
			}
			num := fd.Derivative(func(x float64) float64 {
				var o State1D
				if _, err := m.Step1D(&o, &start, x, set); err != nil {
					panic(err)
				}
				return o.Sigma
			}, de, &fd.Settings{Formula: fd.Central, Step: 1e-6})
			if relErr(info.Tangent, num) > 1e-7 {
				t.Errorf("%v, de %g: tangent %.10g, finite difference %.10g", alg, de, info.Tangent, num)
			}
		}
	}
}

// TestStressControlBeyondSaturation: a stress target at or above the
// saturation stress sigmaY + sum C/gamma + Q has no solution and is
// refused with ErrBeyondSaturation (no hang); just below it is reached.
// The saturation stress: Lemaitre and Chaboche 1990, ch. 5 (C/gamma is the
// saturation of an Armstrong-Frederick back stress).
func TestStressControlBeyondSaturation(t *testing.T) {
	m := mustMaterial(t, []Term{{C: 40e9, Gamma: 300}}, Isotropic{Kind: IsoVoce, Q: 30e6, B: 10})
	sat := m.SaturationStress()
	if want := tSigmaY + 40e9/300 + 30e6; relErr(sat, want) > 1e-15 {
		t.Fatalf("SaturationStress %g, want %g", sat, want)
	}
	for _, target := range []float64{sat, -sat * 1.01} {
		s := State1D{}
		res, err := m.Run1D(context.Background(), &s, &Path1D{Control: StressControl, Targets: []float64{target}, MaxIncrement: 5e6}, nil, nil)
		var pe *PathError
		if !errors.Is(err, ErrBeyondSaturation) || !errors.As(err, &pe) || res.Status != BeyondSaturation || res.Err() == nil {
			t.Errorf("target %g: err %v, status %v; want ErrBeyondSaturation as *PathError", target, err, res.Status)
		}
	}
	s, _, _ := run1D(t, &m, State1D{}, Path1D{Control: StressControl, Targets: []float64{0.999 * sat}, MaxIncrement: 5e6}, nil)
	if relErr(s.Sigma, 0.999*sat) > 1e-10 {
		t.Errorf("just below saturation: sigma %g, want %g", s.Sigma, 0.999*sat)
	}
	if lin := mustMaterial(t, []Term{{C: 1e9}}, Isotropic{}); !math.IsInf(lin.SaturationStress(), 1) {
		t.Errorf("linear term: saturation %g, want +Inf", lin.SaturationStress())
	}
}

func TestDriverErrors(t *testing.T) {
	m := chaboche3Voce(t)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	s := State1D{}
	if _, err := m.Run1D(ctx, &s, &Path1D{Targets: []float64{0.01}, MaxIncrement: 1e-4}, nil, nil); !errors.Is(err, ErrCanceled) {
		t.Errorf("canceled context: err %v, want ErrCanceled", err)
	}
	if s != (State1D{}) {
		t.Errorf("canceled before the first increment, state changed: %+v", s)
	}
	// Cancel from the visitor after 7 increments: the driver stops before
	// the next increment, with the state of the 7th.
	{
		ctx, cancel := context.WithCancel(context.Background())
		defer cancel()
		s := State1D{}
		var seen State1D
		res, err := m.Run1D(ctx, &s, &Path1D{Targets: []float64{0.01}, MaxIncrement: 1e-4}, nil, func(i int, st *State1D) {
			if i == 6 {
				seen = *st
				cancel()
			}
		})
		if !errors.Is(err, ErrCanceled) || res.Increments != 7 || s != seen {
			t.Errorf("cancel after 7 increments: err %v, increments %d, state kept %v", err, res.Increments, s == seen)
		}
	}
	for _, p := range []Path1D{
		{Targets: []float64{0.01}, MaxIncrement: 0},
		{Targets: []float64{math.NaN()}, MaxIncrement: 1e-4},
		{Targets: []float64{math.Inf(1)}, MaxIncrement: 1e-4},
	} {
		s := State1D{}
		if res, err := m.Run1D(context.Background(), &s, &p, nil, nil); !errors.Is(err, ErrInvalidInput) || res.Status != InvalidInput {
			t.Errorf("path %+v: err %v, want ErrInvalidInput", p, err)
		}
	}
	var s3 State3D
	p3 := UniaxialStressPath([]float64{0.01}, 0)
	if _, err := m.Run3D(context.Background(), &s3, &p3, nil, nil); !errors.Is(err, ErrInvalidInput) {
		t.Errorf("3D zero increment: err %v, want ErrInvalidInput", err)
	}
	// 3D stress control beyond saturation: every Newton fails, cutbacks run
	// out, the run ends with ErrNotConverged and counts the cutbacks.
	all := Path3D{MaxStressIncrement: 20e6, Targets: [][6]float64{{V11: 2 * m.SaturationStress()}}}
	res, err := m.Run3D(context.Background(), &s3, &all, nil, nil)
	if !errors.Is(err, ErrNotConverged) || res.Cutbacks == 0 {
		t.Errorf("3D stress target beyond saturation: err %v, cutbacks %d; want ErrNotConverged after cutbacks", err, res.Cutbacks)
	}
	if math.IsNaN(s3.Sigma[0]) || math.Abs(s3.Sigma[0]) >= m.SaturationStress() {
		t.Errorf("state after failure: sigma_11 %g (must be the last converged state)", s3.Sigma[0])
	}
	// Step with a non-finite increment.
	var o State1D
	if _, err := m.Step1D(&o, &State1D{}, math.NaN(), nil); !errors.Is(err, ErrInvalidInput) {
		t.Errorf("Step1D(NaN): err %v", err)
	}
	if _, err := m.Step3D(&s3, &s3, [6]float64{math.Inf(1)}, nil, nil); !errors.Is(err, ErrInvalidInput) {
		t.Errorf("Step3D(Inf): err %v", err)
	}
	for _, st := range []Status{Success, Canceled, NotConverged, BeyondSaturation, InvalidInput} {
		if (st.Err() == nil) != (st == Success) || st.String() == "" {
			t.Errorf("status %d: String %q, Err %v", int(st), st, st.Err())
		}
	}
}

func TestNewMaterialErrors(t *testing.T) {
	cases := []struct {
		name  string
		E, nu float64
		sy    float64
		terms []Term
		iso   Isotropic
		field string
	}{
		{"E zero", 0, 0.3, 250e6, nil, Isotropic{}, "E"},
		{"E NaN", math.NaN(), 0.3, 250e6, nil, Isotropic{}, "E"},
		{"nu 0.5", 200e9, 0.5, 250e6, nil, Isotropic{}, "Nu"},
		{"nu negative", 200e9, -0.1, 250e6, nil, Isotropic{}, "Nu"},
		{"yield zero", 200e9, 0.3, 0, nil, Isotropic{}, "SigmaY"},
		{"C zero", 200e9, 0.3, 250e6, []Term{{C: 0, Gamma: 10}}, Isotropic{}, "Terms[0].C"},
		{"gamma negative", 200e9, 0.3, 250e6, []Term{{C: 1e9}, {C: 1e9, Gamma: -1}}, Isotropic{}, "Terms[1].Gamma"},
		{"too many terms", 200e9, 0.3, 250e6, make([]Term, MaxTerms+1), Isotropic{}, "len(Terms)"},
		{"voce b zero", 200e9, 0.3, 250e6, nil, Isotropic{Kind: IsoVoce, Q: 1e6}, "Iso.B"},
		{"voce vanishing surface", 200e9, 0.3, 250e6, nil, Isotropic{Kind: IsoVoce, Q: -250e6, B: 1}, "Iso.Q"},
		{"voce too fast softening", 200e9, 0.3, 250e6, nil, Isotropic{Kind: IsoVoce, Q: -200e6, B: 2000}, "Iso.Q"},
		{"linear K negative", 200e9, 0.3, 250e6, nil, Isotropic{Kind: IsoLinear, K: -1}, "Iso.K"},
		{"params without law", 200e9, 0.3, 250e6, nil, Isotropic{K: 1}, "Iso"},
	}
	for _, c := range cases {
		_, err := NewMaterial(c.E, c.nu, c.sy, c.terms, c.iso)
		var me *MaterialError
		if !errors.As(err, &me) || me.Field != c.field {
			t.Errorf("%s: err %v, want *MaterialError on %s", c.name, err, c.field)
		}
	}
	if _, err := NewMaterial(200e9, 0, 250e6, []Term{{C: 1e9}, {C: 1e9, Gamma: 10}}, Isotropic{Kind: IsoLinear, K: 0}); err != nil {
		t.Errorf("valid material refused: %v", err)
	}
}
