package convert

import (
	"context"
	"fmt"
	"math"
	"strconv"
	"strings"

	"matgate/checks/plastic"
	"matgate/schema"
)

// Table is a tabulated curve of the neutral card, written as CSV.
type Table struct {
	Name    string   // file-name part, e.g. "monotonic"
	Columns []string // header, SI units in the names
	Rows    [][]float64
}

// CSV returns the table as CSV: the header, then every number in the
// shortest form that reads back to the same float64.
func (t *Table) CSV() []byte {
	var b strings.Builder
	b.WriteString(strings.Join(t.Columns, ","))
	b.WriteByte('\n')
	for _, r := range t.Rows {
		for i, v := range r {
			if i > 0 {
				b.WriteByte(',')
			}
			b.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
		}
		b.WriteByte('\n')
	}
	return []byte(b.String())
}

// Table sizes of the neutral card.
const (
	monotonicRows = 200 // rows of the monotonic table
	cyclicRows    = 24  // amplitudes of the cyclic curve
)

// Tables returns the tabulated curves of a canonical card, computed with the
// exact 1D integrator (increment-independent for strain control, so the rows
// are exact values of the card's equations, not of a discretisation):
//
//   - "monotonic": strain-controlled tension from the virgin state to the
//     card's monotonic_strain: strain, plastic_strain, stress_pa;
//   - "cyclic": the stabilized cyclic stress-strain curve from the loop tips
//     of fully reversed strain cycling (strain ratio -1), cycled for the
//     card's `cycles` at each of cyclicRows amplitudes from 1.5 yield strains
//     up to the largest verification amplitude: strain_amplitude,
//     plastic_strain_amplitude, stress_amplitude_pa, each from the last cycle.
//
// A temperature-dependent card has both tables at each tabulated
// temperature T, named "monotonic-at-<T>K" and "cyclic-at-<T>K".
func Tables(ctx context.Context, c *schema.Card) ([]Table, error) {
	if c.IsTemperatureDependent() {
		var out []Table
		for _, T := range c.Temperatures {
			ck, err := At(c, T)
			if err != nil {
				return nil, err
			}
			ts, err := Tables(ctx, ck)
			if err != nil {
				return nil, err
			}
			for i := range ts {
				ts[i].Name += "-at-" + strconv.FormatFloat(T, 'g', -1, 64) + "K"
			}
			out = append(out, ts...)
		}
		return out, nil
	}
	m, err := Material(c)
	if err != nil {
		return nil, err
	}
	v := c.Verification
	if v == nil || v.MonotonicStrain == nil || v.Cycles == nil {
		return nil, fmt.Errorf("tables of card %s: not canonical (verification defaults missing)", c.ID)
	}
	mono := Table{Name: "monotonic", Columns: []string{"strain", "plastic_strain", "stress_pa"}}
	var s plastic.State1D
	path := plastic.Path1D{Control: plastic.StrainControl, Targets: []float64{*v.MonotonicStrain}, MaxIncrement: *v.MonotonicStrain / monotonicRows}
	mono.Rows = append(mono.Rows, []float64{0, 0, 0})
	if _, err := m.Run1D(ctx, &s, &path, nil, func(_ int, s *plastic.State1D) {
		mono.Rows = append(mono.Rows, []float64{s.Eps, s.EpsP, s.Sigma})
	}); err != nil {
		return nil, fmt.Errorf("monotonic table of card %s: %w", c.ID, err)
	}

	cyc := Table{Name: "cyclic", Columns: []string{"strain_amplitude", "plastic_strain_amplitude", "stress_amplitude_pa"}}
	epsY := c.Plasticity.YieldStress / c.Elastic.YoungsModulus
	lo, hi := 1.5*epsY, 1.5*epsY
	for _, a := range v.StrainAmplitudes {
		hi = math.Max(hi, a)
	}
	targets := make([]float64, 0, 2**v.Cycles+1)
	for k := range cyclicRows {
		a := lo + (hi-lo)*float64(k)/float64(cyclicRows-1)
		targets = targets[:0]
		for range *v.Cycles {
			targets = append(targets, a, -a)
		}
		targets = append(targets, a)
		var s plastic.State1D
		var top, bottom plastic.State1D
		last := len(targets) - 1
		seg := 0
		path := plastic.Path1D{Control: plastic.StrainControl, Targets: targets, MaxIncrement: a}
		if _, err := m.Run1D(ctx, &s, &path, nil, func(_ int, st *plastic.State1D) {
			// The driver ends each segment exactly on its target, so a
			// reversal is the increment whose strain equals the target.
			if st.Eps == targets[seg] {
				if seg == last-1 {
					bottom = *st
				}
				if seg == last {
					top = *st
				}
				if seg < last {
					seg++
				}
			}
		}); err != nil {
			return nil, fmt.Errorf("cyclic table of card %s at amplitude %g: %w", c.ID, a, err)
		}
		cyc.Rows = append(cyc.Rows, []float64{a, (top.EpsP - bottom.EpsP) / 2, (top.Sigma - bottom.Sigma) / 2})
	}
	return []Table{mono, cyc}, nil
}
