package checks

import (
	"errors"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// Spec is everything that changes a verification's outcome. All stresses in
// Pa. Zero fields take the documented defaults (see Resolve).
type Spec struct {
	Material plastic.Material

	// Profile is "standard" or "strict". Empty: "standard".
	Profile string

	// MonotonicStrain is the strain of the monotonic cases. Zero: 20 times
	// the yield strain sigmaY/E (far enough into the plastic range that the
	// monotonic curve shows every hardening term).
	MonotonicStrain float64

	// StrainAmplitudes are the amplitudes of the fully reversed (strain
	// ratio -1) cycling cases. Empty: 2 and 4 times the yield strain (a
	// loop with a plastic strain range of about twice the yield strain and
	// one of about six times).
	StrainAmplitudes []float64

	// Cycles is the number of cycles of the fully reversed cases. Zero:
	// derived from the card, the cycles after which the slowest transient
	// (Armstrong-Frederick memory exp(-gamma dEpsP) per branch, Voce
	// exp(-b dp)) has decayed to 1e-3 of its start at the first amplitude,
	// at least 10 and at most 200 (see defaultCycles).
	Cycles int

	// Ratcheting is the stress-controlled ratcheting case; nil: the case is
	// skipped (reported as skipped, with why).
	Ratcheting *Ratcheting

	// Relaxation is the mean-strain relaxation case. Nil: mean strain and
	// strain amplitude both the first of StrainAmplitudes (a cycle from 0 to
	// twice it, so the loop is that of the first fully reversed case moved
	// by its amplitude), Cycles cycles.
	Relaxation *Relaxation

	// References are the card's recorded uniaxial curves.
	References []Reference
}

// Ratcheting is a stress-controlled cycle between MeanStress -
// StressAmplitude and MeanStress + StressAmplitude, Cycles times, after a
// first loading to the maximum.
type Ratcheting struct {
	MeanStress      float64 `json:"mean_stress"`      // Pa
	StressAmplitude float64 `json:"stress_amplitude"` // Pa
	Cycles          int     `json:"cycles"`           // zero: 20
}

// Relaxation is a strain-controlled cycle between MeanStrain -
// StrainAmplitude and MeanStrain + StrainAmplitude, Cycles times, after a
// first loading to the maximum.
type Relaxation struct {
	MeanStrain      float64 `json:"mean_strain"`
	StrainAmplitude float64 `json:"strain_amplitude"`
	Cycles          int     `json:"cycles"` // zero: Spec.Cycles
}

// Reference is one recorded uniaxial history of the card.
type Reference struct {
	Name    string       `json:"name"`
	Kind    string       `json:"kind"`    // "measured" | "solver"
	Control string       `json:"control"` // "strain" | "stress"
	Points  [][2]float64 `json:"-"`       // [strain, stress Pa], in recorded order
	// Tol is relative to the peak absolute recorded value of the compared
	// quantity (stress under strain control, strain under stress control).
	// Zero: DefaultSolverTol or DefaultMeasuredTol.
	Tol float64 `json:"tol"`
}

// Default reference tolerances (relative to the peak recorded value).
//
// A solver curve is another integrator's answer for the same card, usually
// backward Euler at the solver's own increment: its first-order error for
// Armstrong-Frederick terms is about gamma dEpsP / 2 relative to the
// back stress (a percent at gamma = 200, dEpsP = 1e-4), so 0.02 leaves room
// for that and still catches a wrong parameter reading (a percent-level
// error in every post-yield stress). A measured curve also carries test
// scatter and the fit residual of the card, a few percent for calibrated
// cyclic models, hence 0.05. Common practice, no source.
const (
	DefaultSolverTol   = 0.02
	DefaultMeasuredTol = 0.05
)

// ErrInvalidSpec is wrapped by every *SpecError.
var ErrInvalidSpec = errors.New("checks: invalid spec")

// SpecError says which field of a Spec is invalid and why.
type SpecError struct {
	Field  string
	Value  float64
	Reason string
}

func (e *SpecError) Error() string {
	return fmt.Sprintf("checks: invalid spec: %s = %g: %s", e.Field, e.Value, e.Reason)
}

// Unwrap returns ErrInvalidSpec.
func (e *SpecError) Unwrap() error { return ErrInvalidSpec }

// Resolve returns the spec with every default written out, or a
// *SpecError. Run calls it; the record's settings are the resolved values.
func (s Spec) Resolve() (Spec, error) {
	m := &s.Material
	if m.E <= 0 || m.SigmaY <= 0 {
		return s, &SpecError{"Material", m.E, "not built by plastic.NewMaterial"}
	}
	epsY := m.SigmaY / m.E
	bad := func(f string, v float64, why string) (Spec, error) { return s, &SpecError{f, v, why} }
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	if s.Profile == "" {
		s.Profile = "standard"
	}
	if _, ok := profiles[s.Profile]; !ok {
		return bad("Profile", 0, fmt.Sprintf("unknown profile %q (want standard or strict)", s.Profile))
	}
	if s.MonotonicStrain == 0 {
		s.MonotonicStrain = 20 * epsY
	}
	if !finite(s.MonotonicStrain) || s.MonotonicStrain <= epsY {
		return bad("MonotonicStrain", s.MonotonicStrain, fmt.Sprintf("must exceed the yield strain %g", epsY))
	}
	if len(s.StrainAmplitudes) == 0 {
		s.StrainAmplitudes = []float64{2 * epsY, 4 * epsY}
	} else {
		s.StrainAmplitudes = append([]float64(nil), s.StrainAmplitudes...)
	}
	for i, a := range s.StrainAmplitudes {
		if !finite(a) || a <= 0 || a > 1 {
			return bad(fmt.Sprintf("StrainAmplitudes[%d]", i), a, "must be in (0, 1]")
		}
	}
	if s.Cycles == 0 {
		s.Cycles = defaultCycles(m, s.StrainAmplitudes[0])
	}
	if s.Cycles < 2 || s.Cycles > 10000 {
		return bad("Cycles", float64(s.Cycles), "must be in [2, 10000]")
	}
	if s.Relaxation == nil {
		a := s.StrainAmplitudes[0]
		s.Relaxation = &Relaxation{MeanStrain: a, StrainAmplitude: a}
	} else {
		r := *s.Relaxation
		s.Relaxation = &r
	}
	if s.Relaxation.Cycles == 0 {
		s.Relaxation.Cycles = s.Cycles
	}
	if r := s.Relaxation; !finite(r.MeanStrain) || !finite(r.StrainAmplitude) || r.StrainAmplitude <= 0 || math.Abs(r.MeanStrain)+r.StrainAmplitude > 1 || r.Cycles < 2 || r.Cycles > 10000 {
		return bad("Relaxation", r.StrainAmplitude, "needs amplitude > 0, |mean|+amplitude <= 1 and 2..10000 cycles")
	}
	if s.Ratcheting != nil {
		r := *s.Ratcheting
		if r.Cycles == 0 {
			r.Cycles = 20
		}
		sat := m.SaturationStress()
		switch {
		case !finite(r.MeanStress) || !finite(r.StressAmplitude) || r.StressAmplitude <= 0:
			return bad("Ratcheting.StressAmplitude", r.StressAmplitude, "must be positive and finite")
		case math.Abs(r.MeanStress)+r.StressAmplitude >= sat:
			return bad("Ratcheting.MeanStress", r.MeanStress, fmt.Sprintf("the peak stress |mean|+amplitude must stay below the saturation stress %g Pa", sat))
		case r.Cycles < 2 || r.Cycles > 10000:
			return bad("Ratcheting.Cycles", float64(r.Cycles), "must be in [2, 10000]")
		}
		s.Ratcheting = &r
	}
	refs := make([]Reference, len(s.References))
	seen := map[string]bool{}
	for i, r := range s.References {
		f := fmt.Sprintf("References[%d]", i)
		switch {
		case r.Name == "" || seen[r.Name]:
			return bad(f+".Name", 0, fmt.Sprintf("%q: a reference needs a name of its own (it names the case)", r.Name))
		case r.Kind != "measured" && r.Kind != "solver":
			return bad(f+".Kind", 0, fmt.Sprintf("%q: want measured or solver", r.Kind))
		case r.Control != "strain" && r.Control != "stress":
			return bad(f+".Control", 0, fmt.Sprintf("%q: want strain or stress", r.Control))
		case len(r.Points) < 2:
			return bad(f+".Points", float64(len(r.Points)), "need at least 2 points")
		case r.Tol < 0 || !finite(r.Tol):
			return bad(f+".Tol", r.Tol, "must be >= 0")
		}
		for j, p := range r.Points {
			if !finite(p[0]) || !finite(p[1]) {
				return bad(fmt.Sprintf("%s.Points[%d]", f, j), p[0]+p[1], "not finite")
			}
			if r.Control == "stress" && math.Abs(p[1]) >= m.SaturationStress() {
				return bad(fmt.Sprintf("%s.Points[%d]", f, j), p[1], "stress beyond the saturation stress")
			}
		}
		if r.Tol == 0 {
			r.Tol = DefaultSolverTol
			if r.Kind == "measured" {
				r.Tol = DefaultMeasuredTol
			}
		}
		if err := checkReference(i, r, m, profiles[s.Profile]); err != nil {
			return s, err
		}
		seen[r.Name] = true
		r.Points = append([][2]float64(nil), r.Points...)
		refs[i] = r
	}
	s.References = refs
	return s, nil
}

// defaultCycles returns the number of fully reversed cycles after which the
// slowest transient of the card has decayed to 1e-3 of its initial size at
// the strain amplitude epsA, clamped to [10, 200].
//
// An Armstrong-Frederick back stress forgets its value at the start of a
// branch by exp(-gamma dEpsP) over the branch (the branch solution, see
// branchAlpha), so by rho = exp(-2 gamma dEpsP) per cycle; Voce's R(p)
// approaches Q by exp(-b dp), rho = exp(-2 b dEpsP). dEpsP is the
// stabilized plastic strain range estimated as 2 (epsA - epsY), epsY the
// yield strain; N = ln(1e-3) / ln(rho). At 1e-3 the memory bound of the
// stabilized-loop checks (see memory) is a few tenths of a percent of the
// stress amplitude for the demo cards, well inside the 1% that applies
// them; a longer run buys little and costs linearly. Linear terms stabilize in one
// cycle; linear isotropic hardening never does (10 cycles).
func defaultCycles(m *plastic.Material, epsA float64) int {
	dEpsP := 2 * (epsA - m.SigmaY/m.E)
	if dEpsP <= 0 {
		return 10
	}
	slow := math.Inf(1) // smallest rate
	for i := 0; i < m.N; i++ {
		if g := m.Terms[i].Gamma; g > 0 {
			slow = math.Min(slow, g)
		}
	}
	if m.Iso.Kind == plastic.IsoVoce {
		slow = math.Min(slow, m.Iso.B)
	}
	if math.IsInf(slow, 1) {
		return 10
	}
	n := math.Ceil(math.Log(1e3) / (2 * slow * dEpsP))
	return int(math.Max(10, math.Min(200, n)))
}
