package convert

import (
	"fmt"
	"math"
)

// Resample returns a monotonic tabulated curve [strain, value] at the
// strains of at, by piecewise-linear interpolation between the recorded
// points. The curve's strains must increase strictly (an unsorted or
// repeated strain is an error naming the data row, 1-based after the
// header: a cyclic history cannot be resampled as one curve, split it into
// branches first), and every strain of at must lie inside the recorded
// range (no extrapolation). Linear interpolation keeps the recorded points
// exactly and adds no overshoot between them.
func Resample(name string, pts [][2]float64, at []float64) ([][2]float64, error) {
	if len(pts) < 2 {
		return nil, fmt.Errorf("%s: resampling needs at least 2 points, found %d", name, len(pts))
	}
	if err := checkFinite(name, pts); err != nil {
		return nil, err
	}
	for i := 1; i < len(pts); i++ {
		if !(pts[i][0] > pts[i-1][0]) {
			return nil, fmt.Errorf("%s: data row %d: strain %g does not exceed the previous row's %g; a curve to resample must have strictly increasing strain",
				name, i+1, pts[i][0], pts[i-1][0])
		}
	}
	lo, hi := pts[0][0], pts[len(pts)-1][0]
	out := make([][2]float64, len(at))
	j := 0
	for k, x := range at {
		if math.IsNaN(x) || x < lo || x > hi {
			return nil, fmt.Errorf("%s: resampling strain %g is outside the recorded range [%g, %g]", name, x, lo, hi)
		}
		if k > 0 && x < at[k-1] {
			j = 0 // at need not be sorted; restart the search
		}
		for j < len(pts)-2 && pts[j+1][0] < x {
			j++
		}
		a, b := pts[j], pts[j+1]
		t := (x - a[0]) / (b[0] - a[0])
		out[k] = [2]float64{x, a[1] + t*(b[1]-a[1])}
	}
	return out, nil
}

// UniformStrains returns n >= 2 strains evenly spaced from lo to hi, both
// included, for Resample. It panics for n < 2 (a programmer error).
func UniformStrains(lo, hi float64, n int) []float64 {
	if n < 2 {
		panic("convert: UniformStrains needs n >= 2")
	}
	out := make([]float64, n)
	for i := range out {
		out[i] = lo + (hi-lo)*float64(i)/float64(n-1)
	}
	out[n-1] = hi
	return out
}
