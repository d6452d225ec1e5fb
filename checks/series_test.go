package checks

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestThin: the series thinning keeps what a plot shows. A straight line
// keeps its two ends, a bilinear response (elastic to the yield point,
// then linear hardening) its three corners; on smooth and on noisy
// histories every row left out lies within the tolerance of the line drawn
// past it (in fractions of the axis ranges), every run keeps its ends and
// its gap, the samples are rows of the input in order, and no series has
// more than maxSamples. The property is the definition of the
// Ramer-Douglas-Peucker simplification (Douglas and Peucker, 1973).
func TestThin(t *testing.T) {
	line := func(n int, f func(x float64) (float64, float64)) []Sample {
		rows := make([]Sample, n)
		for i := range rows {
			e, s := f(float64(i) / float64(n-1))
			rows[i] = Sample{Strain: e, Stress: s, P: float64(i)}
		}
		return rows
	}
	if s := thin(line(400, func(x float64) (float64, float64) { return 0.01 * x, 2e9 * x }), maxSamples); s.Len() != 2 {
		t.Errorf("straight line: %d samples, want 2", s.Len())
	}
	// Elastic to the yield strain 0.002 (E = 200 GPa), then H' = 2 GPa:
	// corners at 0, the yield point and the end.
	bilinear := line(401, func(x float64) (float64, float64) {
		e := 0.02 * x
		if e <= 0.002 {
			return e, 200e9 * e
		}
		return e, 400e6 + 2e9*(e-0.002)
	})
	if s := thin(bilinear, maxSamples); s.Len() != 3 || s.Strain[1] != 0.002 {
		t.Errorf("bilinear: strains %v, want [0 0.002 0.02]", s.Strain)
	}

	rng := rand.New(rand.NewPCG(1972, 1973))
	cyclic := line(400, func(x float64) (float64, float64) {
		e := 0.01 * math.Sin(4*math.Pi*x) // two cycles
		return e, 3e8 * math.Tanh(100*e+0.3*math.Cos(4*math.Pi*x))
	})
	noisy := line(400, func(float64) (float64, float64) { return rng.Float64(), rng.Float64() })
	cyclic[200].Gap = true
	for _, tc := range []struct {
		name   string
		rows   []Sample
		capped bool // the tolerance had to grow to fit maxSamples
	}{{"cyclic with a gap", cyclic, false}, {"noise", noisy, true}} {
		s := thin(tc.rows, maxSamples)
		if s.Len() > maxSamples {
			t.Errorf("%s: %d samples, more than %d", tc.name, s.Len(), maxSamples)
		}
		if !tc.capped && s.Len() >= maxSamples {
			t.Errorf("%s: %d samples, the cap was reached", tc.name, s.Len())
		}
		// Map the samples back to rows.
		at := make([]int, 0, s.Len())
		j := 0
		for _, smp := range s.Samples() {
			for j < len(tc.rows) && (tc.rows[j].Strain != smp.Strain || tc.rows[j].Stress != smp.Stress || tc.rows[j].P != smp.P) {
				j++
			}
			if j == len(tc.rows) {
				t.Fatalf("%s: sample %+v is not a row of the input in order", tc.name, smp)
			}
			if smp.Gap != tc.rows[j].Gap {
				t.Errorf("%s: row %d gap %v, sample gap %v", tc.name, j, tc.rows[j].Gap, smp.Gap)
			}
			at = append(at, j)
		}
		if at[0] != 0 || at[len(at)-1] != len(tc.rows)-1 {
			t.Errorf("%s: ends not kept: rows %d to %d", tc.name, at[0], at[len(at)-1])
		}
		if tc.capped {
			continue
		}
		lo, hi := [2]float64{math.Inf(1), math.Inf(1)}, [2]float64{math.Inf(-1), math.Inf(-1)}
		for _, r := range tc.rows {
			lo = [2]float64{math.Min(lo[0], r.Strain), math.Min(lo[1], r.Stress)}
			hi = [2]float64{math.Max(hi[0], r.Strain), math.Max(hi[1], r.Stress)}
		}
		norm := func(r Sample) [4]float64 {
			return [4]float64{(r.Strain - lo[0]) / (hi[0] - lo[0]), (r.Stress - lo[1]) / (hi[1] - lo[1])}
		}
		for k := 1; k < len(at); k++ {
			if tc.rows[at[k]].Gap {
				continue // nothing is drawn across a gap
			}
			a, b := norm(tc.rows[at[k-1]]), norm(tc.rows[at[k]])
			for i := at[k-1] + 1; i < at[k]; i++ {
				if d := chordDistance(norm(tc.rows[i]), a, b); d > thinTol*(1+1e-12) {
					t.Errorf("%s: row %d left out at %.3g of the axes from the line drawn, more than %g", tc.name, i, d, thinTol)
				}
			}
		}
		t.Logf("%s: %d rows, %d samples", tc.name, len(tc.rows), s.Len())
	}
}
