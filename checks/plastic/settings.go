package plastic

import "fmt"

// Algorithm selects the return-mapping algorithm of a step.
type Algorithm int

const (
	// Exact is the reference and the default. In 1D it is the exact solution
	// of the rate equations for a strain increment that is linear in time:
	// within a monotone increment the flow direction is constant, every
	// back stress and R(p) have closed forms in dp, and the consistency
	// condition is solved for dp to round-off. In 3D it is a radial return
	// with the same closed-form (exponential) back-stress update for a fixed
	// flow direction, exact whenever stress, back stresses and the strain
	// increment are coaxial (proportional loading), with error-controlled
	// substepping otherwise (see Settings.SubstepTol).
	Exact Algorithm = iota
	// BackwardEuler is the implicit (backward) Euler return mapping that most
	// solvers use: first order in the increment size for Armstrong-Frederick
	// terms and Voce's rate form, exact for linear hardening under
	// proportional loading. It is kept to report how far the usual algorithm
	// is from the exact one at a given increment.
	BackwardEuler
)

// String returns "exact" or "backward-euler".
func (a Algorithm) String() string {
	switch a {
	case Exact:
		return "exact"
	case BackwardEuler:
		return "backward-euler"
	}
	return fmt.Sprintf("Algorithm(%d)", int(a))
}

// Settings tune steps and drivers. A nil *Settings means the defaults; a
// zero field means its default.
type Settings struct {
	// Algorithm of the return mapping. Zero: Exact.
	Algorithm Algorithm

	// MaxIter bounds the scalar iterations on dp in one return mapping.
	// Zero: 60. Convergence is to round-off, usually in 2 to 5 iterations.
	MaxIter int

	// SubstepTol is the error tolerance of the 3D Exact algorithm on a
	// non-proportional increment, relative to SigmaY (max norm of stress and
	// back stresses). Such an increment is integrated with one, two and four
	// returns; the Richardson extrapolants R1 = 2 y(h/2) - y(h) and
	// R2 = 2 y(h/4) - y(h/2) are formed, and if |R2 - R1| <= SubstepTol the
	// next extrapolant (4 R2 - R1)/3 is accepted, else the increment is
	// halved (each half with half the tolerance). |R2 - R1| over-estimates
	// the error of the accepted value. Zero: 1e-6; measured on a
	// strain-controlled tension-torsion box at increments of 1e-4: 1.4e-7
	// SigmaY from a converged reference, about 18 returns a step.
	SubstepTol float64

	// MaxSubstepDepth bounds the halvings of one increment under
	// SubstepTol. Zero: 40. The halvings are adaptive: only a substep whose
	// extrapolants disagree is halved, so the depth is reached only where
	// the error is concentrated (the elastic-plastic transition inside an
	// increment, where the local error falls by about 4 per halving and the
	// tolerance by 2: an increment of 60 yield strains needed 18 levels).
	// MaxSubsteps bounds the work.
	MaxSubstepDepth int

	// MaxSubsteps bounds the return mappings of one 3D step. Zero: 65536,
	// a few milliseconds. The usual increment takes about 18; a
	// non-proportional increment of 20 to 60 yield strains with stiff
	// Armstrong-Frederick terms (gamma dp of 10 or more) took 3,500 to
	// 17,000.
	MaxSubsteps int

	// DriverTol is the tolerance of the stress residual of the stress- and
	// mixed-control Newton iterations, relative to SigmaY. Zero: 1e-11.
	DriverTol float64

	// DriverMaxIter bounds the Newton iterations of one controlled
	// increment before a cutback. Zero: 30.
	DriverMaxIter int

	// MaxCutbacks bounds how many times one increment may be halved after
	// a Newton failure before the driver gives up. Zero: 10.
	MaxCutbacks int
}

func (s *Settings) alg() Algorithm {
	if s == nil {
		return Exact
	}
	return s.Algorithm
}

func (s *Settings) maxIter() int {
	if s == nil || s.MaxIter <= 0 {
		return 60
	}
	return s.MaxIter
}

func (s *Settings) substepTol() float64 {
	if s == nil || s.SubstepTol <= 0 {
		return 1e-6
	}
	return s.SubstepTol
}

func (s *Settings) maxDepth() int {
	if s == nil || s.MaxSubstepDepth <= 0 {
		return 40
	}
	return s.MaxSubstepDepth
}

func (s *Settings) maxSubsteps() int {
	if s == nil || s.MaxSubsteps <= 0 {
		return 1 << 16
	}
	return s.MaxSubsteps
}

func (s *Settings) driverTol() float64 {
	if s == nil || s.DriverTol <= 0 {
		return 1e-11
	}
	return s.DriverTol
}

func (s *Settings) driverMaxIter() int {
	if s == nil || s.DriverMaxIter <= 0 {
		return 30
	}
	return s.DriverMaxIter
}

func (s *Settings) maxCutbacks() int {
	if s == nil || s.MaxCutbacks <= 0 {
		return 10
	}
	return s.MaxCutbacks
}
