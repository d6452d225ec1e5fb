package checks

import (
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// A profile fixes the numerical settings of the cases. Tolerances are not
// part of it: every tolerance is computed from these settings and from the
// size of the compared quantities by the error model below, so a stricter
// profile (finer increments, tighter iteration tolerances) gets tighter
// tolerances wherever discretization or iteration error enters, and the
// same round-off bound where it does not.
//
// Error model (the rationale carried in every check's ToleranceBasis):
//
//   - Step1D with the Exact algorithm is the exact solution of the 1D rate
//     equations for a monotone strain increment (plastic package
//     documentation), so strain-controlled 1D results do not depend on the
//     increment. What remains is the stopping rule of its scalar iteration
//     (a change of dp below 1e-14 dp) and round-off: stepRel = 1e-14
//     relative per increment, accumulated at worst linearly over the n
//     increments of a case, plus 32 units of round-off (2^-53) for the
//     evaluation of the closed form itself. roundTol(n) = 1e-14 n + 32u.
//   - Stress control solves each increment's stress to DriverTol sigmaY; the
//     strain it reports is then off by at most DriverTol sigmaY / Et, Et the
//     consistent tangent at the target.
//   - 3D Exact on a non-proportional increment is substepped until the full
//     and two half steps agree within SubstepTol sigmaY (local error); over
//     n increments the global error is at most n SubstepTol sigmaY.
//   - Loop areas by the trapezoid rule have an O(h^2) error; it is
//     estimated from the same path by Richardson's rule, comparing the rule
//     on every point with the rule on every second point:
//     e(h) ~ (W(2h) - W(h)) / 3.
type profile struct {
	name string
	// incPerYield: the strain increment is sigmaY / E / incPerYield, the
	// stress increment sigmaY / incPerYield.
	incPerYield float64
	// incPerBranch: at least this many increments per branch of a cycle
	// (resolution of the loop area and of the plotted loop).
	incPerBranch int
	// angleInc: increments (chords) per turn of the circular strain path
	// of the non-proportional 3D case; its chord error falls with the
	// square of the angle (see circleOn).
	angleInc   int
	substepTol float64
	driverTol  float64
}

var profiles = map[string]profile{
	// standard: the yield strain in 10 increments, 40 increments a branch,
	// 1/8-degree increments on the circular strain path; the integrator's
	// default iteration tolerances.
	"standard": {name: "standard", incPerYield: 10, incPerBranch: 40, angleInc: 2880, substepTol: 1e-9, driverTol: 1e-11},
	// strict: four times finer increments, iteration tolerances 100 times
	// tighter.
	"strict": {name: "strict", incPerYield: 40, incPerBranch: 160, angleInc: 11520, substepTol: 1e-11, driverTol: 1e-13},
}

func (p profile) settings() *plastic.Settings {
	return &plastic.Settings{Algorithm: plastic.Exact, SubstepTol: p.substepTol, DriverTol: p.driverTol}
}

const (
	u       = 0x1p-53 // unit round-off of float64
	stepRel = 1e-14   // stopping rule of the scalar return-mapping iteration, relative
)

// roundTol is the relative round-off and iteration bound after n exact
// increments (see the error model above).
func roundTol(n int) float64 { return stepRel*float64(n) + 32*u }

func roundBasis(n int) string {
	return fmt.Sprintf("round-off bound of the exact 1D integration over %d increments: 1e-14 per increment (iteration stopping rule) + 32 u for the closed form, u = 2^-53; the exact algorithm has no discretization error under strain control", n)
}

// memory bounds how far a uniaxial state at accumulated plastic strain p
// can still be from the stabilized cycle, in Pa, derived here: under a
// common plastic-strain history two solutions of an Armstrong-Frederick
// rule d alpha = C d eps_p - gamma alpha dp differ by their initial
// difference times exp(-gamma p) (subtract the two rules: d(delta) =
// -gamma delta dp), and the virgin start is at most 2 C/gamma from any
// admissible back stress (|alpha| <= C/gamma); Voce's R(p) is Q exp(-b p)
// from its saturation exactly. Linear terms and a missing isotropic law
// carry no memory. Every stress of the path (sigma = alpha + n k) is then
// within
//
//	sum_AF (2 C_i/gamma_i) exp(-gamma_i p) + |Q| exp(-b p)
//
// of the stabilized cycle's. The coupling of the terms through the
// plastic-strain history is not bounded by this (it changes the history by
// the same order). Linear isotropic hardening never stabilizes: +Inf.
func memory(m *plastic.Material, p float64) float64 {
	if m.Iso.Kind == plastic.IsoLinear && m.Iso.K > 0 {
		return math.Inf(1)
	}
	s := 0.0
	for i := 0; i < m.N; i++ {
		if t := m.Terms[i]; !t.Linear() {
			s += 2 * t.C / t.Gamma * math.Exp(-t.Gamma*p)
		}
	}
	if m.Iso.Kind == plastic.IsoVoce {
		s += math.Abs(m.Iso.Q) * math.Exp(-m.Iso.B*p)
	}
	return s
}

// stabilizedLimit is our criterion for applying a stabilized-loop closed
// form: the bound on the remaining transient must be below 1% of the
// compared quantity's scale. Our own criterion, no source; the definition
// of the stabilized cycle itself follows StabilizedCycleDefinition.
const stabilizedLimit = 0.01

// StabilizedCycleDefinition names the definition of the stabilized cycle
// that the fully reversed cases follow.
const StabilizedCycleDefinition = "ASTM E606/E606M (strain-controlled fatigue testing): the stabilized hysteresis loop is the one whose stress amplitude no longer changes with further cycling (definition recalled from memory, the standard was not at hand); a simulation has no failure and so no half-life cycle, so the last of the case's cycles is taken, and a stabilized-loop closed form is applied only when the bound on the remaining memory of the virgin state (Armstrong-Frederick terms exp(-gamma p), Voce exp(-b p)) is below 1% of the compared quantity"
