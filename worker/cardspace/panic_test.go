package cardspace_test

import (
	"context"
	"fmt"
	"runtime/debug"
	"testing"

	"matgate/checks"
	"matgate/checks/plastic"
)

// TestChecksNoPanic runs checks.Run on specs with extreme but finite
// values that checks.Spec.Resolve accepts: each must come back as a result
// or an error, never a panic (the project's rule: no panic on any finite
// input). Cards no longer reach these specs (convert's plausibility
// refuses strains below one microstrain and yield strains below 1e-6), but
// checks is a package of its own with its own callers. Found by
// convert.TestExtremeValues' variants run through worker.Verify (issue 9).
func TestChecksNoPanic(t *testing.T) {
	steel := func(sy float64) plastic.Material {
		m, err := plastic.NewMaterial(205e9, 0.3, sy, []plastic.Term{{C: 2e9}}, plastic.Isotropic{})
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	tests := []struct {
		name string
		spec checks.Spec
	}{
		// makeslice: cap out of range in checks/cyclic.go (the capacity
		// (4N+1) int(a/h+2) of a history with h = 0).
		{"amplitude 5e-324", checks.Spec{Material: steel(355e6), StrainAmplitudes: []float64{5e-324, 0.005}}},
		// makeslice: cap out of range in checks/cases1d.go (the monotonic
		// history sized by int(|eps|/h) with h from a yield strain 5e-303).
		{"yield stress 1e-291 Pa", checks.Spec{Material: steel(1e-291), MonotonicStrain: 0.01}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				if r := recover(); r != nil {
					t.Errorf("checks.Run panics: %v\n%s", r, debug.Stack())
				}
			}()
			_, err := checks.Run(context.Background(), tc.spec)
			t.Logf("error: %v", fmt.Sprint(err))
		})
	}
}
