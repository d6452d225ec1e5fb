package report

import "matgate/checks"

// This file is the one place that reads a case's response (Case.Series)
// and its overlays (Case.Curves); the rest of the package works on the
// caseData it returns.

// point is one plotted point in SI: strain (or axial stress, for the
// shear plane) and stress, Pa.
type point struct{ X, Y float64 }

// caseData is what the plots of one case need.
type caseData struct {
	// Runs are the stress-strain response split at the samples that
	// follow increments left out of the series, so that no line is drawn
	// across them.
	Runs [][]point
	// ShearRuns are the same runs in the plane of axial stress and shear
	// stress tau_12 (tension-torsion); nil when the case has no shear.
	ShearRuns [][]point
	Overlays  []overlay // closed-form and reference curves, strain and stress
}

// overlay is one closed-form or reference curve.
type overlay struct {
	Name     string
	Points   []point
	Recorded bool // the points of a reference curve (else a closed form)
}

// referenceKind is the kind of a case that replays a reference curve
// (checks' reference case): its overlay is the recorded points.
const referenceKind = "reference-curve"

// readCase returns the plotted data of c.
func readCase(c checks.Case) caseData {
	var d caseData
	shear := false
	samples := c.Series.Samples()
	for _, s := range samples {
		if s.ShearStrain != 0 || s.ShearStress != 0 {
			shear = true
			break
		}
	}
	for i, s := range samples {
		if i == 0 || s.Gap {
			d.Runs = append(d.Runs, nil)
			if shear {
				d.ShearRuns = append(d.ShearRuns, nil)
			}
		}
		d.Runs[len(d.Runs)-1] = append(d.Runs[len(d.Runs)-1], point{s.Strain, s.Stress})
		if shear {
			d.ShearRuns[len(d.ShearRuns)-1] = append(d.ShearRuns[len(d.ShearRuns)-1], point{s.Stress, s.ShearStress})
		}
	}
	for _, cv := range c.Curves {
		o := overlay{Name: cv.Name, Points: make([]point, len(cv.Points)), Recorded: c.Kind == referenceKind}
		for j, q := range cv.Points {
			o.Points[j] = point{q[0], q[1]}
		}
		d.Overlays = append(d.Overlays, o)
	}
	return d
}

// samples returns the number of response samples of d.
func (d caseData) samples() int {
	n := 0
	for _, r := range d.Runs {
		n += len(r)
	}
	return n
}
