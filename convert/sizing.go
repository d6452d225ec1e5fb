package convert

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
	"matgate/schema"
)

// Sizing limits of the verification cases: the same numbers and rules as
// checks.MaxStrain and checks.MaxPathYields, which checks.Spec.Resolve
// applies to a hand-built spec (convert may not import checks;
// TestSizingInStepWithChecks keeps the two in step).
const (
	// MaxStrain bounds |strain| everywhere on a case's path, the
	// accumulated ratchet strain included: the reference integrator is
	// small-strain, which engineering practice accepts to a few percent;
	// 10 % is the usual outer limit (common practice, no source).
	MaxStrain = 0.1
	// MaxPathYields bounds the work of a case: its path in yield strains
	// (strain control) or yield stresses (stress control), counted where
	// the case resolves it at the profile's increments (see checks.Spec).
	MaxPathYields = 5000
)

// Sizing returns a located error for every verification case that the
// card states and that would leave small strain or exceed the work budget,
// with the numbers; n is the card's canonical form (SI, defaults written
// out). The defaults keep within both limits by construction (Defaults),
// so only stated values are diagnosed. Reference curves have their own
// budget (checks.MaxReplayIncrements), which verify reports.
func Sizing(doc *schema.Document, n *schema.Card) schema.Diagnostics {
	given, v := doc.Card.Verification, n.Verification
	if given == nil || v == nil {
		return nil
	}
	var ds schema.Diagnostics
	add := func(pointer, format string, args ...any) {
		ds = append(ds, doc.Diag(schema.SeverityError, pointer, format, args...))
	}
	epsY := n.Plasticity.YieldStress / n.Elastic.YoungsModulus
	overWork := func(pointer, what string, path float64, stress bool) {
		if path > MaxPathYields {
			in := "yield strains"
			if stress {
				in = "yield stresses"
			}
			add(pointer, "%s runs a path of %.4g %s, above the budget of %d a case: shorten it", what, path, in, MaxPathYields)
		}
	}
	if given.MonotonicStrain != nil {
		e := *v.MonotonicStrain
		if e > MaxStrain {
			add("/verification/monotonic_strain", "monotonic strain %g is beyond the small-strain limit %g of the reference integrator", e, MaxStrain)
		}
		overWork("/verification/monotonic_strain", fmt.Sprintf("the monotonic case to strain %g", e), e/epsY, false)
	}
	if given.StrainAmplitudes != nil {
		for i, a := range v.StrainAmplitudes {
			p := fmt.Sprintf("/verification/strain_amplitudes/%d", i)
			if a > MaxStrain {
				add(p, "strain amplitude %g is beyond the small-strain limit %g of the reference integrator", a, MaxStrain)
			}
			overWork(p, fmt.Sprintf("the cycling case at amplitude %g", a), cyclicWork(a, a)/epsY, false)
			if i == 0 {
				r := math.Min(a, MaxStrain/2) // the mean-strain relaxation case: mean = amplitude
				overWork(p, fmt.Sprintf("the mean-strain relaxation case (mean strain and amplitude %g)", r), cyclicWork(2*r, r)/epsY, false)
			}
		}
	}
	if given.Ratcheting != nil && v.Ratcheting != nil {
		r := v.Ratcheting
		if path := ratchetWork(r) / n.Plasticity.YieldStress; path > MaxPathYields {
			overWork("/verification/ratcheting/cycles", fmt.Sprintf("the ratcheting case (%d cycles of amplitude %g %s)", r.Cycles, given.Ratcheting.StressAmplitude, doc.Card.Units.Stress), path, true)
		} else if m, err := Material(n); err == nil {
			if peak, err := ratchetPeak(&m, r); err == nil && peak > MaxStrain {
				add("/verification/ratcheting", "the ratcheting case reaches a strain of %.4g after %d cycles, beyond the small-strain limit %g of the reference integrator: lower the mean stress, the amplitude or the cycles", peak, r.Cycles, MaxStrain)
			}
		}
	}
	return ds
}

// cyclicWork is the strain path that a strain-cycling case with the
// largest strain eMax and the amplitude amp resolves at the profile's
// increments (the rule of checks.Spec): the first loading and three
// cycles of 4 amp.
func cyclicWork(eMax, amp float64) float64 { return eMax + 12*amp }

// ratchetWork is the stress path of the ratcheting case, every cycle
// resolved (the rule of checks.Spec).
func ratchetWork(r *schema.Ratcheting) float64 {
	return math.Abs(r.MeanStress) + r.StressAmplitude + 4*r.StressAmplitude*float64(r.Cycles)
}

// ratchetFits reports whether the ratcheting load r (SI) keeps its case
// within MaxPathYields and MaxStrain.
func ratchetFits(m *plastic.Material, r *schema.Ratcheting) bool {
	if ratchetWork(r)/m.SigmaY > MaxPathYields || math.Abs(r.MeanStress)+r.StressAmplitude >= m.SaturationStress() {
		return false
	}
	peak, err := ratchetPeak(m, r)
	return err == nil && peak <= MaxStrain
}

// ratchetPeak returns the largest |strain| of the ratcheting path, from the
// virgin state to the peak stress and r.Cycles cycles, integrated with the
// exact algorithm in one increment a branch: the exact algorithm solves
// the rate equations whatever the increment on a monotone branch, and
// under stress control the strain is monotone on each branch, so the
// largest strain is at a branch end.
func ratchetPeak(m *plastic.Material, r *schema.Ratcheting) (float64, error) {
	sMax, sMin := r.MeanStress+r.StressAmplitude, r.MeanStress-r.StressAmplitude
	targets := make([]float64, 0, 2*r.Cycles+1)
	targets = append(targets, sMax)
	for k := 0; k < r.Cycles; k++ {
		targets = append(targets, sMin, sMax)
	}
	path := plastic.Path1D{Control: plastic.StressControl, Targets: targets, MaxIncrement: 2 * (math.Abs(r.MeanStress) + r.StressAmplitude)}
	var s plastic.State1D
	peak := 0.0
	_, err := m.Run1D(context.Background(), &s, &path, &plastic.Settings{Algorithm: plastic.Exact}, func(_ int, s *plastic.State1D) {
		peak = math.Max(peak, math.Abs(s.Eps))
	})
	return peak, err
}
