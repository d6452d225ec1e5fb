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

// transientTail estimates |q_N - q_inf|, how far the last value of the
// per-cycle sequence q (q[k-1] the value of cycle k of the exact solution:
// branch solutions tip to tip) still is from its limit, or says why it
// cannot ("" when it can). floor is the round-off of the values q;
// rhoModel is the slowest decay per cycle that the card's rates predict
// (slowestDecay).
//
// No closed-form bound on the remainder is used: the memory of the virgin
// state decays by exp(-gamma dp) only under a common plastic-strain
// history, and under strain control the plastic strain range of each
// cycle moves with the back stress, which slows the decay (measured on
// random cards: residuals 3.5 to 1,400 times above sum 2 C/gamma
// exp(-gamma p)). The estimate is taken from the sequence itself, from its
// last six changes d_k = q_k - q_(k-1). When every |d_k| <= floor the
// sequence has converged to round-off and the tail is floor. Otherwise the
// changes must be a monotone decay (one sign, |d_k| decreasing) whose
// ratios d_k/d_(k-1) fall by at most ratioDrop a cycle beyond their
// round-off. A sum of decaying modes of one sign, d_k = sum c_j r_j^k with
// the c_j of one sign, has the remainder
//
//	sum_j c_j r_j^(N+1)/(1 - r_j) <= |d_N| r/(1 - r)   for every r >= max r_j,
//
// and its observed ratios lie between the rates, growing toward the
// slowest, so they underestimate it while a faster mode still dominates
// (seen: observed 0.944, slowest 0.991). The rate is therefore taken
// halfway between 1 and the larger of the largest observed ratio and
// rhoModel, r = (1 + max(rho, rhoModel))/2 (the margin: our choice, no
// source), and the tail is |d_N| r/(1 - r) + floor. A faster mode of the
// opposite sign makes the ratios fall toward the slower rate by ever less
// (harmless: they overestimate it); a slower one makes them fall ever
// faster before it takes over (seen: a mean stress that overshoots zero
// under Voce softening), which ratioDrop refuses.
//
// A conservative estimate with the stated margin, not a proof (the modes'
// signs and rates are inferred): changes that are not such a decay are
// refused, not guessed.
func transientTail(q []float64, floor, rhoModel float64) (tail float64, why string) {
	const last = 6
	if len(q) < last+1 {
		return 0, fmt.Sprintf("%d cycles are too few to measure the decay of the transient (at least %d)", len(q), last+1)
	}
	d := make([]float64, last)
	small := true
	for j := range d {
		k := len(q) - last + j
		d[j] = q[k] - q[k-1]
		small = small && math.Abs(d[j]) <= floor
	}
	if small {
		return floor, ""
	}
	rho, prev, prevNoise := rhoModel, 0.0, 0.0
	for j := 1; j < last; j++ {
		if d[j]*d[j-1] <= 0 || math.Abs(d[j]) >= math.Abs(d[j-1]) {
			return 0, fmt.Sprintf("the cycle-to-cycle changes of the last %d cycles (%.3g) are not a monotone decay, so the remaining transient cannot be estimated", last, d)
		}
		ratio := d[j] / d[j-1]
		// Round-off of the ratio: each change errs by up to 2 floor.
		noise := 2 * ratio * (floor/math.Abs(d[j]) + floor/math.Abs(d[j-1]))
		if j > 1 && ratio < prev*(1-ratioDrop)-noise-prevNoise {
			return 0, fmt.Sprintf("the decay of the last %d cycle-to-cycle changes (%.3g) accelerates: a slower part of the opposite sign may remain, so the remaining transient cannot be estimated", last, d)
		}
		prev, prevNoise = ratio, noise
		rho = math.Max(rho, ratio)
	}
	r := (1 + rho) / 2
	return math.Abs(d[last-1])*r/(1-r) + floor, ""
}

// slowestDecay returns the slowest decay per cycle of a transient that the
// card's rates predict for a stabilized loop with the plastic strain range
// dEpsP, derived here. For one Armstrong-Frederick term under strain
// control, linearizing the branch solution alpha' = -a + (alpha + a) q,
// q = exp(-gamma dEps_p), with the strain constraint of the branch gives
// d alpha'/d alpha = (q + h/E)/(1 + h/E) per branch, h the plastic modulus
// at the tip (C (1 - tanh(gamma dEps_p/2)) in the stabilized loop): the
// closer h is to E, the slower the decay. For several terms (and Voce's
// exp(-b dp)) each rate is taken with the h of all terms at the tip, and
// the slowest, squared for the two branches of a cycle, is returned. It is
// a model of the decay for transientTail, not a bound.
func slowestDecay(m *plastic.Material, dEpsP float64) float64 {
	h := 0.0
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		if t.Linear() {
			h += t.C
		} else {
			h += t.C * (1 - math.Tanh(t.Gamma*dEpsP/2))
		}
	}
	e := h / m.E
	rho := 0.0
	rate := func(q float64) { rho = math.Max(rho, math.Pow((q+e)/(1+e), 2)) }
	for i := 0; i < m.N; i++ {
		if t := m.Terms[i]; !t.Linear() {
			rate(math.Exp(-t.Gamma * dEpsP))
		}
	}
	if m.Iso.Kind == plastic.IsoVoce {
		rate(math.Exp(-m.Iso.B * dEpsP))
	}
	return rho
}

// ratioDrop is the largest relative fall of the ratio of successive
// cycle-to-cycle changes that transientTail accepts. A slow mode of the
// opposite sign whose changes are a fraction x of the fast mode's lowers
// the ratio by about x (s - f)/s a cycle (rates s > f) and defeats the
// estimate from about x = 2/3; 1e-3 refuses it unless the two rates are
// within 0.15 % of each other, when the two modes decay alike. Our
// choice, derived here.
const ratioDrop = 1e-3

// tailBasis says how transientTail estimates, for ToleranceBasis.
const tailBasis = "from the exact solution's cycle-to-cycle changes d_k over the last 6 cycles (branch solutions tip to tip): one sign, decreasing, ratios falling by at most 1e-3 a cycle; rate r = (1 + max(largest observed ratio, slowest decay the card's rates predict))/2 (margin, our choice, no source); remainder |d_N| r/(1 - r) + round-off floor; derived here"

// tailFloor is the round-off of a per-cycle value of the branch solutions,
// relative to its size: each is a closed form evaluated with a root found
// to the last bit, summed over at most MaxTerms terms and the isotropic
// part, and differenced once; 64 u covers it with a margin of about 4.
const tailFloor = 64 * u

// stabilizedLimit is our criterion for applying a stabilized-loop closed
// form: the estimated remaining transient (transientTail) must be below 1%
// of the compared quantity's scale. Our own criterion, no source; the definition
// of the stabilized cycle itself follows StabilizedCycleDefinition.
const stabilizedLimit = 0.01

// StabilizedCycleDefinition names the definition of the stabilized cycle
// that the fully reversed cases follow.
const StabilizedCycleDefinition = "ASTM E606/E606M (strain-controlled fatigue testing): the stabilized hysteresis loop is the one whose stress amplitude no longer changes with further cycling (definition recalled from memory, the standard was not at hand); a simulation has no failure and so no half-life cycle, so the last of the case's cycles is taken, and a stabilized-loop closed form is applied only when the remaining transient, estimated from the decay of the exact solution's cycle-to-cycle changes, is below 1% of the compared quantity"
