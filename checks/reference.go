package checks

import (
	"context"
	"fmt"
	"math"
)

// reference drives the integrator along a reference curve's own history,
// point by point from the virgin state: under strain control each recorded
// strain is reached exactly (in increments no larger than the profile's, so
// loops and reversals are followed, not interpolated) and the stress there
// is compared with the recorded stress; under stress control the recorded
// stresses drive it and the strains are compared. The errors are relative
// to the peak absolute recorded value of the compared quantity.
func (v *verifier) reference(ref Reference) caseFn {
	return func(ctx context.Context, refine int) (Case, CaseSetting, error) {
		m := v.m
		name := "reference-" + ref.Name
		c := Case{Name: name, Kind: "reference-curve"}
		var h float64
		cap := len(ref.Points) * 4
		d := newPath1D(ctx, m, v.set, v.prof.driverTol, cap)
		got := make([]float64, len(ref.Points))
		want := make([]float64, len(ref.Points))
		strain := ref.Control == "strain"
		if strain {
			h = v.hEps / float64(refine)
		} else {
			h = v.hSig / float64(refine)
		}
		c.Loading = fmt.Sprintf("%s control along the %d recorded points of %s reference %q from the virgin state, increments of at most %.4g", ref.Control, len(ref.Points), ref.Kind, ref.Name, h)
		for i, p := range ref.Points {
			var err error
			if strain {
				err = d.strainTo(p[0], h, 1)
				got[i], want[i] = d.st.Sigma, p[1]
			} else {
				err = d.stressTo(p[1], h)
				got[i], want[i] = d.st.Eps, p[0]
			}
			if err != nil {
				return c, CaseSetting{}, fmt.Errorf("reference %q, point %d: %w", ref.Name, i, err)
			}
		}
		peak := 0.0
		for _, w := range want {
			peak = math.Max(peak, math.Abs(w))
		}
		maxErr, sq, at := 0.0, 0.0, 0
		for i := range got {
			e := math.Abs(got[i]-want[i]) / peak
			if e > maxErr {
				maxErr, at = e, i
			}
			sq += e * e
		}
		rms := math.Sqrt(sq / float64(len(got)))
		qty, unit := "stress", "Pa"
		if !strain {
			qty, unit = "strain", ""
		}
		why := "the card's tolerance for this reference"
		if ref.Kind == "measured" {
			why += fmt.Sprintf(" (default %g for measured curves: test scatter and fit residual of a few percent; common practice, no source)", DefaultMeasuredTol)
		} else {
			why += fmt.Sprintf(" (default %g for solver curves: another integrator's error at its own increment, about a percent for backward Euler on Armstrong-Frederick terms; common practice, no source)", DefaultSolverTol)
		}
		c.add(Check{
			Name:            "max error against the reference",
			Quantity:        fmt.Sprintf("max over the %d points of |%s - recorded %s| / peak |recorded %s| (largest at point %d)", len(got), qty, qty, qty, at),
			Value:           maxErr,
			ReferenceSource: fmt.Sprintf("reference curve %s (%s, %s control)", ref.Name, ref.Kind, ref.Control),
			Tolerance:       ref.Tol,
			ToleranceKind:   "abs",
			Bound:           "upper",
			ToleranceBasis:  why,
			Unit:            "",
			converge:        true,
		})
		c.measure("rms error against the reference (relative to the peak recorded value)", rms, "")
		c.measure("peak absolute recorded "+qty, peak, unit)
		pts := make([][2]float64, len(ref.Points))
		copy(pts, ref.Points)
		c.Curves = []Curve{{Name: ref.Name, Source: fmt.Sprintf("reference curve %s (%s)", ref.Name, ref.Kind), Points: pts}}
		addInvariants(&c, m, &d.inv)
		c.Series = d.series()
		return c, CaseSetting{Case: name, Control: ref.Control, Increment: h, Increments: d.n}, nil
	}
}
