package fit

import (
	"context"
	"runtime/debug"
	"testing"
	"time"
)

// TestExtremeData fits every model to data whose numbers are extreme but
// finite (huge, tiny, denormal stresses, strains and moduli): each fit
// returns a result or an error, never a panic, within its context (the
// project's rule: no panic on any finite input; common practice, no
// source).
func TestExtremeData(t *testing.T) {
	xs := []float64{1e300, -1e300, 1.7976931348623157e308, 1e-300, 5e-324, -5e-324, 0, 1}
	// A tension test to 2 % with a reversal, 14 points: elastic to 300
	// MPa at E = 200 GPa, then 350 to 380 MPa.
	base := [][2]float64{{0, 0}, {0.0005, 100e6}, {0.001, 200e6}, {0.0015, 300e6}, {0.003, 330e6}, {0.005, 345e6}, {0.008, 355e6}, {0.012, 365e6}, {0.016, 372e6}, {0.02, 380e6}, {0.018, -20e6}, {0.015, -330e6}, {0.01, -350e6}, {0.005, -360e6}}
	models := []Model{{Terms: 1, Linear: true}, {Terms: 1}, {Terms: 2, Voce: true}}
	fits, refused := 0, 0
	run := func(name string, pts [][2]float64, E float64) {
		for _, m := range models {
			func() {
				defer func() {
					if r := recover(); r != nil {
						t.Fatalf("%s, %v, E %g: panic: %v\n%s\ndata %v", name, m, E, r, debug.Stack(), pts)
					}
				}()
				ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
				defer cancel()
				if _, err := Fit(ctx, []Data{{Name: name, Points: pts}}, Options{Model: m, E: E, MaxIterations: 20}); err != nil {
					refused++
				} else {
					fits++
				}
			}()
		}
	}
	for i := range base {
		for j := 0; j < 2; j++ {
			for _, x := range xs {
				pts := append([][2]float64(nil), base...)
				pts[i][j] = x
				run("data", pts, 0)
			}
		}
	}
	for _, E := range xs {
		run("modulus", base, E)
	}
	t.Logf("%d fits, %d refused", fits, refused)
}
