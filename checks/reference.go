package checks

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// MaxReplayIncrements bounds the increments of one replay of a reference
// curve at the profile's increment (the step-size rerun takes twice as
// many, each diagnosis trial as many). Our own budget, no source: a 1D
// exact increment costs 0.1 to 0.3 microseconds on this project's machines
// (BenchmarkStep1D), so a replay stays under about a second; it holds a
// 1,000-cycle test at +-1 % strain of a card with a yield strain of 0.2 %
// (4e5 increments) and refuses a strain of 1e4, which no small-strain card
// can describe anyway. Memory does not grow with the increments (see
// replay).
const MaxReplayIncrements = 1_000_000

// replayIncrements returns an upper bound on the increments of the replay
// of ref at increment h of its controlled quantity (Pa for stress): every
// segment between recorded points takes ceil(|change| / h) increments,
// rounded up to an even number (path1D.strainTo), so at most |change|/h + 2.
// The sum is a float, so that absurd data cannot overflow it.
func replayIncrements(ref Reference, h float64) float64 {
	col := 0
	if ref.Control == "stress" {
		col = 1
	}
	n, prev := 0.0, 0.0
	for _, p := range ref.Points {
		n += math.Abs(p[col]-prev)/h + 2
		prev = p[col]
	}
	return n
}

// checkReference refuses reference i of a spec that the reference case
// cannot compare: one whose compared quantity is zero at every point (the
// error is relative to its peak), or whose replay would take more than
// MaxReplayIncrements increments. The error is a *SpecError with the
// numbers (an input the verification cannot take, not an integrator
// failure).
func checkReference(i int, ref Reference, m *plastic.Material, prof profile) error {
	col, compared := 1, "stress"
	if ref.Control == "stress" {
		col, compared = 0, "strain"
	}
	zero := true
	for _, p := range ref.Points {
		zero = zero && p[col] == 0
	}
	if zero {
		return &SpecError{Field: fmt.Sprintf("References[%d].Points", i), Value: 0,
			Reason: fmt.Sprintf("reference %q records a %s of zero at every point: nothing to compare with (its errors are relative to the peak recorded %s)", ref.Name, compared, compared)}
	}
	// The increments of the verifier (newVerifier).
	h := m.SigmaY / m.E / prof.incPerYield
	qty, hText := "strain", fmt.Sprintf("%.3g (the yield strain / %g)", h, prof.incPerYield)
	if ref.Control == "stress" {
		h = m.SigmaY / prof.incPerYield
		qty, hText = "stress", fmt.Sprintf("%.3g Pa (the yield stress / %g)", h, prof.incPerYield)
	}
	n := replayIncrements(ref, h)
	if n <= MaxReplayIncrements {
		return nil
	}
	return &SpecError{
		Field: fmt.Sprintf("References[%d].Points", i),
		Value: n,
		Reason: fmt.Sprintf("reference %q: replaying its %d points takes about %.3g increments of %s at most %s, more than the budget of %d; "+
			"the recorded %s path is too long for the card's increment (strains beyond a few percent leave small strain)",
			ref.Name, len(ref.Points), n, qty, hText, MaxReplayIncrements, qty),
	}
}

// replayChunk is the most increments driven to one intermediate target of
// a long segment, so that a long history is compacted in bounded steps.
const replayChunk = 2048

// replay drives the integrator with material m along a reference curve's
// own history, point by point from the virgin state: under strain control
// each recorded strain is reached exactly (in increments no larger than h,
// so loops and reversals are followed, not interpolated) and got holds the
// stress there; under stress control the recorded stresses drive it and got
// holds the strains. want holds the recorded values of the compared
// quantity. Memory does not grow with the increments: the path keeps the
// first and the last increments for the plotted series (as downsample
// would) and the invariants, nothing else.
func (v *verifier) replay(ctx context.Context, m *plastic.Material, ref Reference, h float64) (d *path1D, got, want []float64, err error) {
	d = newPath1D(ctx, m, v.set, v.prof.driverTol, int(min(replayIncrements(ref, h), 8*maxSeries+replayChunk+4)))
	got = make([]float64, len(ref.Points))
	want = make([]float64, len(ref.Points))
	strain := ref.Control == "strain"
	var head []pt
	compact := func() {
		if len(d.pts) < 8*maxSeries {
			return
		}
		if head == nil {
			head = append([]pt(nil), d.pts[:maxSeries/2]...)
		}
		// Keep one more than the tail of the series, so that the joined
		// history is longer than maxSeries and downsample marks the gap.
		keep := maxSeries/2 + 1
		d.pts = d.pts[:copy(d.pts, d.pts[len(d.pts)-keep:])]
		d.tips = d.tips[:0] // indices into the dropped history; a reference has no use for them
	}
	for i, p := range ref.Points {
		x, target := d.st.Eps, p[0]
		if !strain {
			x, target = d.st.Sigma, p[1]
		}
		// Long segments go in chunks of replayChunk increments to
		// intermediate targets on the same straight line.
		for steps := math.Ceil(math.Abs(target-x) / h); steps > replayChunk; steps -= replayChunk {
			x += math.Copysign(replayChunk*h, target-x)
			if strain {
				err = d.strainTo(x, h, 1)
			} else {
				err = d.stressTo(x, h)
			}
			if err != nil {
				return nil, nil, nil, fmt.Errorf("reference %q, segment to point %d: %w", ref.Name, i, err)
			}
			compact()
		}
		if strain {
			err = d.strainTo(target, h, 1)
			got[i], want[i] = d.st.Sigma, p[1]
		} else {
			err = d.stressTo(target, h)
			got[i], want[i] = d.st.Eps, p[0]
		}
		if err != nil {
			return nil, nil, nil, fmt.Errorf("reference %q, point %d: %w", ref.Name, i, err)
		}
		compact()
	}
	if head != nil {
		d.pts = append(head, d.pts...)
	}
	return d, got, want, nil
}

// refError returns the largest and the RMS of |got - want| / peak |want|
// over the points, and where the largest is. checkReference keeps peak
// |want| above zero for the card's curves and every misreading keeps it so.
func refError(got, want []float64) (maxErr, rms float64, at int) {
	peak := 0.0
	for _, w := range want {
		peak = math.Max(peak, math.Abs(w))
	}
	sq := 0.0
	for i := range got {
		e := math.Abs(got[i]-want[i]) / peak
		if e > maxErr || math.IsNaN(e) {
			maxErr, at = e, i
		}
		sq += e * e
	}
	return maxErr, math.Sqrt(sq / float64(len(got))), at
}

// referenceCheck is the name of a reference case's pass/fail check.
const referenceCheck = "max error against the reference"

// reference replays a reference curve (see replay) and compares the
// integrator's values with the recorded ones, relative to the peak
// absolute recorded value of the compared quantity.
func (v *verifier) reference(ref Reference) caseFn {
	return func(ctx context.Context, refine int) (Case, CaseSetting, error) {
		m := v.m
		name := "reference-" + ref.Name
		c := Case{Name: name, Kind: "reference-curve"}
		strain := ref.Control == "strain"
		h := v.hSig / float64(refine)
		if strain {
			h = v.hEps / float64(refine)
		}
		c.Loading = fmt.Sprintf("%s control along the %d recorded points of %s reference %q from the virgin state, increments of at most %.4g", ref.Control, len(ref.Points), ref.Kind, ref.Name, h)
		d, got, want, err := v.replay(ctx, m, ref, h)
		if err != nil {
			return c, CaseSetting{}, err
		}
		maxErr, rms, at := refError(got, want)
		peak := 0.0
		for _, w := range want {
			peak = math.Max(peak, math.Abs(w))
		}
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
			Name:            referenceCheck,
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
