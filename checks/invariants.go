package checks

import (
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// addInvariants appends the invariant checks of a path to c: yield
// consistency, non-negative dissipation and, for 3D paths, the elastic
// unloading slope.
//
// 1D paths have no slope check: Step1D's elastic increment is sigma + E
// dEps by construction, so its slope is E whatever the model (a check
// that cannot fail); a wrong E shows in the monotonic curve. In 3D the
// uniaxial slope E needs the free strains of the mixed control right and
// the shear slope the shear modulus, so it stays there.
func addInvariants(c *Case, m *plastic.Material, inv *invariants) {
	if inv.plasticSteps == 0 {
		c.Omitted = append(c.Omitted, Omission{"yield consistency", "no plastic increment on this path"},
			Omission{"non-negative dissipation", "no plastic increment on this path"})
	} else {
		kMin := m.SigmaY
		if m.Iso.Kind == plastic.IsoVoce && m.Iso.Q < 0 {
			kMin += m.Iso.Q
		}
		tol := stepRel*m.E*inv.maxDEps/kMin + 8*u*inv.maxScale
		c.add(Check{
			Name:            "yield consistency",
			Quantity:        "max |f| / (sigmaY + R) after every plastic increment, f = |sigma - alpha| - (sigmaY + R(p))",
			Value:           inv.maxYield,
			ReferenceSource: "consistency condition f = 0 during plastic flow (rate-independent plasticity; common practice, no source)",
			Tolerance:       tol,
			ToleranceKind:   "abs",
			Bound:           "upper",
			ToleranceBasis:  fmt.Sprintf("iteration stopping rule (dp change below 1e-14 dp, residual <= 1e-14 E dEps / k with dEps <= %.3g) + 8 u (|sigma| + |alpha| + k)/k round-off of f, max scale %.3g", inv.maxDEps, inv.maxScale),
			Unit:            "",
		})
		if inv.oneD {
			c.add(Check{
				Name:            "non-negative dissipation",
				Quantity:        "min over plastic increments of dD / S: the intrinsic dissipation of the increment, dD = (sigma - alpha) d eps_p - R dp + sum (gamma_i/C_i) alpha_i^2 dp, over the round-off scale of its terms, S = |sigma - alpha| (|eps_p,n| + |eps_p,n+1|) + (|sigma| + |alpha|) |d eps_p| + |R| dp + sum (gamma_i/C_i) alpha_i^2 dp",
				Value:           inv.minDissRel,
				ReferenceSource: srcDissipation,
				Tolerance:       8 * u,
				ToleranceKind:   "abs",
				Bound:           "lower",
				ToleranceBasis:  "round-off of dD, per increment: d eps_p = eps_p,n+1 - eps_p,n errs by u |eps_p| of each end (it dominates at tiny dp), each product and the sum of the terms by a few u of the term; 8 u of S covers the at most 4 roundings of any term with a margin of 2",
				Unit:            "",
			})
		} else {
			c.add(Check{
				Name:            "non-negative dissipation",
				Quantity:        "min over plastic increments of the intrinsic dissipation per unit dp, (sigma - alpha) d eps_p - R dp + sum (gamma_i/C_i) alpha_i^2 dp",
				Value:           inv.minDiss,
				ReferenceSource: srcDissipation,
				Tolerance:       8 * u * inv.maxScale * m.SigmaY,
				ToleranceKind:   "abs",
				Bound:           "lower",
				ToleranceBasis:  "round-off of the dissipation terms, 8 u times the largest stress on the path",
				Unit:            "Pa",
			})
		}
	}
	if !inv.oneD {
		addSlope(c, inv.slopes, "E", srcHooke)
	}
}

// srcDissipation is the source of the non-negative dissipation check.
const srcDissipation = "second law (Clausius-Duhem inequality) for the Armstrong-Frederick model: J. Lemaitre and J.-L. Chaboche, Mechanics of Solid Materials, 1990, ch. 5 (from memory, no equation number)"

// addSlope appends the elastic unloading slope check for the worst of the
// measured slopes.
func addSlope(c *Case, slopes []slope, modulus, src string) {
	if len(slopes) == 0 {
		c.Omitted = append(c.Omitted, Omission{"elastic unloading slope", "the path has no unloading"})
		return
	}
	w, worst := 0, -1.0
	for i, s := range slopes {
		if r := math.Abs(s.value/s.ref-1) / s.tol; r > worst {
			w, worst = i, r
		}
	}
	s := slopes[w]
	c.add(Check{
		Name:            "elastic unloading slope",
		Quantity:        fmt.Sprintf("d sigma / d eps of the first increment after each of the %d reversals (the worst shown)", len(slopes)),
		Value:           s.value,
		Reference:       s.ref,
		ReferenceSource: src + " (reference: " + modulus + ")",
		Tolerance:       s.tol,
		ToleranceKind:   "rel",
		ToleranceBasis:  "round-off of the stress and strain differences of the increment: 8 u (|a| + |b|) / |b - a| for each (plus the driver residual under mixed control)",
		Unit:            "Pa",
	})
}

func (c *Case) add(ch Check) {
	ch.judge()
	c.Checks = append(c.Checks, ch)
}

func (c *Case) omit(check, why string) {
	c.Omitted = append(c.Omitted, Omission{check, why})
}

func (c *Case) measure(name string, v float64, unit string) {
	c.Measures = append(c.Measures, Measure{name, v, unit})
}
