package checks

import (
	"errors"
	"math"
	"testing"

	"matgate/checks/plastic"
)

// TestFindRoot: the root finder brackets by doubling (a root 1e18 times
// the starting width away is found), reaches the root to the last bits,
// and says so when there is no root instead of returning a capped end.
// Known answers: roots of x - c and of exp(x) - c, by hand.
func TestFindRoot(t *testing.T) {
	rows := []struct {
		name   string
		g      func(float64) float64
		lo, hi float64
		want   float64 // root; NaN: want errNoBracket
	}{
		{"root inside the first bracket", func(x float64) float64 { return x - 0.3 }, 0, 1, 0.3},
		{"root 1e18 widths away", func(x float64) float64 { return x - 1e6 }, 0, 1e-12, 1e6},
		{"exponential, root ln 5", func(x float64) float64 { return math.Exp(x) - 5 }, 0, 1e-3, math.Log(5)},
		{"no root: g stays negative", func(float64) float64 { return -1 }, 0, 1, math.NaN()},
		{"no root: g turns NaN", func(x float64) float64 {
			if x > 10 {
				return math.NaN()
			}
			return -1
		}, 0, 1, math.NaN()},
		{"g(lo) > 0", func(x float64) float64 { return x + 1 }, 0, 1, math.NaN()},
	}
	for _, row := range rows {
		t.Run(row.name, func(t *testing.T) {
			x, err := findRoot(row.g, row.lo, row.hi)
			if math.IsNaN(row.want) {
				if !errors.Is(err, errNoBracket) {
					t.Fatalf("got %v, %v; want errNoBracket", x, err)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(x-row.want) > 4*u*math.Abs(row.want) {
				t.Errorf("root %.17g, want %.17g", x, row.want)
			}
		})
	}
}

// TestLongRatchetBranch is the regression of the capped bracket (issue 9):
// a stress cycle whose every branch runs a plastic strain of about 0.27,
// more than 201 times the first bracket sigmaY/E = 1.25e-3, where the old
// search stopped silently (the reference then said no ratcheting). The
// branch-solution ratchet per cycle must equal the explicit single-term
// formula delta = (1/gamma) ln((a^2 - alpha-^2)/(a^2 - alpha+^2)) (derived
// from the Armstrong-Frederick branch solution, see singleTermRatchet):
// 0.1 ln(37500/3900) = 0.22634 per cycle. Scenario of our own: E 200 GPa,
// sigmaY 250 MPa, C 2 GPa, gamma 10 (a = 200 MPa), stress between -200 and
// 440 MPa.
func TestLongRatchetBranch(t *testing.T) {
	m, err := plastic.NewMaterial(200e9, 0.3, 250e6, []plastic.Term{{C: 2e9, Gamma: 10}}, plastic.Isotropic{})
	if err != nil {
		t.Fatal(err)
	}
	const sMax, sMin = 440e6, -200e6
	want, ok := singleTermRatchet(&m, sMin, sMax)
	if !ok || math.Abs(want-0.1*math.Log(37500.0/3900)) > 1e-12 {
		t.Fatalf("closed form %v, %v; want 0.1 ln(37500/3900)", want, ok)
	}
	var tp tip
	var eps []float64
	for _, s := range cycleTargets(sMax, sMin, sMax, 3) {
		if tp, err = branchToStress(&m, tp, s); err != nil {
			t.Fatal(err)
		}
		eps = append(eps, tp.eps)
	}
	for k := 2; k <= 3; k++ { // exact from the second cycle
		if got := eps[2*k] - eps[2*k-2]; math.Abs(got-want) > 1e-12 {
			t.Errorf("cycle %d: ratchet %.15g, want %.15g", k, got, want)
		}
	}
}
