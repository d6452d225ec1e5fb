package checks

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"matgate/checks/plastic"
)

// Headline response quantities, for comparing two revisions of a card:
// what a reviewer of a card change needs to see is how the response moves
// (the stress at 1 % strain, the stabilized loop, the ratchet rate), not
// which numbers of the card changed. Both revisions are driven through
// the same loads, the older revision's resolved verification loads, so
// that a change of the loads does not show as a change of the response.

// MonotonicStrains are the total strains at which the virgin tension
// stress is compared: 0.5 %, 1 % and 2 %, the strains at which design
// curves of structural metals are commonly read (common practice, no
// source), besides the card's own monotonic strain.
var MonotonicStrains = []float64{0.005, 0.01, 0.02}

// Quantity is one headline response quantity of a card under given loads.
type Quantity struct {
	Name  string  `json:"name"`
	Unit  string  `json:"unit"`           // "Pa", "J/m^3" or "" (strain)
	Value float64 `json:"value"`          // meaningful when Note is empty
	Note  string  `json:"note,omitempty"` // why the quantity is not defined for this card
	How   string  `json:"how,omitempty"`  // how it is computed, with the error bound
	// Floor is the magnitude below which the quantity counts as zero in a
	// comparison: a relative change is taken against the larger of the
	// old value and Floor, so that a quantity that is zero in theory
	// (shakedown, a fully relaxed mean stress) does not show round-off as
	// a large relative change. A thousandth of the yield strain or stress:
	// our own choice, no source.
	Floor float64 `json:"floor,omitempty"`
}

// Response is the headline response of one card.
type Response struct {
	Quantities []Quantity   `json:"quantities"`
	Monotonic  [][2]float64 `json:"-"` // virgin tension to the largest compared strain: strain, stress Pa
	Loop       [][2]float64 `json:"-"` // last fully reversed cycle at the first amplitude
}

// energyIncPerYield is the strain increment of the cycled responses, a
// fiftieth of the yield strain: the trapezoid rule on sigma d eps over a
// cycle then errs by O(h^2), measured below 1e-5 of the loop area on the
// demo cards by halving the increment (our own measurement, stated in
// How).
const energyIncPerYield = 50

// Responses drives the material m through the loads of load (a Spec
// resolved with Resolve, normally the older revision's) and returns the
// headline quantities: the virgin tension stress at MonotonicStrains and
// at load.MonotonicStrain; at each of load.StrainAmplitudes, the stress
// amplitude and the dissipated energy of the last of load.Cycles fully
// reversed cycles; the ratchet strain of the last cycle of load.Ratcheting;
// the mean stress of the last cycle of load.Relaxation; and the shear
// yield stress sigmaY/sqrt(3) (von Mises). 1D responses come from the
// exact algorithm, which is exact for strain increments (package plastic),
// so the monotonic stresses are exact to round-off.
func Responses(ctx context.Context, m *plastic.Material, load Spec) (*Response, error) {
	out := &Response{}
	set := &plastic.Settings{Algorithm: plastic.Exact}
	add := func(q Quantity) { out.Quantities = append(out.Quantities, q) }
	epsY := m.SigmaY / m.E

	// Monotonic tension. The exact algorithm needs no small increments
	// under strain control; the curve is sampled at a hundred points for
	// the plot.
	strains := append([]float64(nil), MonotonicStrains...)
	if !slices.Contains(strains, load.MonotonicStrain) {
		strains = append(strains, load.MonotonicStrain)
	}
	slices.Sort(strains)
	top := 0.0
	for _, e := range strains {
		top = math.Max(top, e)
	}
	var s plastic.State1D
	out.Monotonic = [][2]float64{{0, 0}}
	if _, err := m.Run1D(ctx, &s, &plastic.Path1D{Targets: []float64{top}, MaxIncrement: top / 100}, set,
		func(_ int, st *plastic.State1D) { out.Monotonic = append(out.Monotonic, [2]float64{st.Eps, st.Sigma}) }); err != nil {
		return nil, fmt.Errorf("monotonic tension: %w", err)
	}
	for _, e := range strains {
		var st plastic.State1D
		if _, err := m.Run1D(ctx, &st, &plastic.Path1D{Targets: []float64{e}, MaxIncrement: e}, set, nil); err != nil {
			return nil, fmt.Errorf("monotonic tension to %g: %w", e, err)
		}
		add(Quantity{Name: fmt.Sprintf("tension stress at strain %s", fmtG(e)), Unit: "Pa", Value: st.Sigma,
			How: "virgin uniaxial tension, exact 1D integration (exact to round-off)"})
	}

	// Fully reversed cycling.
	h := epsY / energyIncPerYield
	for i, a := range load.StrainAmplitudes {
		inc := math.Min(h, a/20)
		var st plastic.State1D
		var last [][2]float64 // the last cycle, from the tip at +a before it
		for k, t := range cycleTargets(a, -a, a, load.Cycles) {
			if k == 2*load.Cycles-1 { // the targets are +a, then (-a, +a) per cycle
				last = [][2]float64{{st.Eps, st.Sigma}}
			}
			if _, err := m.Run1D(ctx, &st, &plastic.Path1D{Targets: []float64{t}, MaxIncrement: inc}, set, func(_ int, x *plastic.State1D) {
				if last != nil {
					last = append(last, [2]float64{x.Eps, x.Sigma})
				}
			}); err != nil {
				return nil, fmt.Errorf("cycling at %g: %w", a, err)
			}
		}
		lo, hi, w := math.Inf(1), math.Inf(-1), 0.0
		for j := 1; j < len(last); j++ {
			w += (last[j][1] + last[j-1][1]) / 2 * (last[j][0] - last[j-1][0])
			lo, hi = math.Min(lo, last[j][1]), math.Max(hi, last[j][1])
		}
		if i == 0 {
			out.Loop = last
		}
		how := fmt.Sprintf("cycle %d of %d at strain ratio -1, exact 1D integration", load.Cycles, load.Cycles)
		add(Quantity{Name: fmt.Sprintf("stress amplitude at strain amplitude %s", fmtG(a)), Unit: "Pa", Value: (hi - lo) / 2, How: how})
		add(Quantity{Name: fmt.Sprintf("dissipated energy per cycle at strain amplitude %s", fmtG(a)), Unit: "J/m^3", Value: w,
			How: how + fmt.Sprintf("; loop area by the trapezoid rule on increments of at most %.3g (error O(h^2), about 1e-5 of the area)", inc)})
	}

	// Ratcheting under stress control.
	if r := load.Ratcheting; r == nil {
		add(Quantity{Name: "ratchet strain per cycle", Note: "no ratcheting loading"})
	} else {
		sMax, sMin := r.MeanStress+r.StressAmplitude, r.MeanStress-r.StressAmplitude
		var st plastic.State1D
		var tops []float64
		targets := cycleTargets(sMax, sMin, sMax, r.Cycles)
		seg := 0
		for _, t := range targets {
			_, err := m.Run1D(ctx, &st, &plastic.Path1D{Control: plastic.StressControl, Targets: []float64{t}, MaxIncrement: m.SigmaY / 10}, set, nil)
			if errors.Is(err, plastic.ErrBeyondSaturation) {
				break
			}
			if err != nil {
				return nil, fmt.Errorf("ratcheting: %w", err)
			}
			if seg%2 == 0 {
				tops = append(tops, st.Eps)
			}
			seg++
		}
		q := Quantity{Name: "ratchet strain per cycle", Unit: "", Floor: 1e-3 * epsY,
			How: fmt.Sprintf("strain at %.6g Pa after cycle %d minus after cycle %d, stress control between %.6g and %.6g Pa", sMax, r.Cycles, r.Cycles-1, sMin, sMax)}
		if len(tops) < r.Cycles+1 {
			q.Note = fmt.Sprintf("the peak stress %.6g Pa is at or above this card's saturation stress %.6g Pa", math.Max(math.Abs(sMax), math.Abs(sMin)), m.SaturationStress())
		} else {
			q.Value = tops[r.Cycles] - tops[r.Cycles-1]
		}
		add(q)
	}

	// Mean-strain relaxation.
	if r := load.Relaxation; r != nil {
		eMax, eMin := r.MeanStrain+r.StrainAmplitude, r.MeanStrain-r.StrainAmplitude
		var st plastic.State1D
		var last [2]float64
		for k, t := range cycleTargets(eMax, eMin, eMax, r.Cycles) {
			if _, err := m.Run1D(ctx, &st, &plastic.Path1D{Targets: []float64{t}, MaxIncrement: h}, set, nil); err != nil {
				return nil, fmt.Errorf("relaxation: %w", err)
			}
			last[k%2] = st.Sigma
		}
		add(Quantity{Name: "mean stress of the last relaxation cycle", Unit: "Pa", Value: (last[0] + last[1]) / 2, Floor: 1e-3 * m.SigmaY,
			How: fmt.Sprintf("strain cycling between %s and %s, cycle %d, exact 1D integration", fmtG(eMin), fmtG(eMax), r.Cycles)})
	}

	add(Quantity{Name: "shear yield stress", Unit: "Pa", Value: m.SigmaY / math.Sqrt(3), How: srcMises})
	return out, nil
}

// Change is the change of one headline quantity between two revisions.
type Change struct {
	Name string   `json:"name"`
	Unit string   `json:"unit"`
	Old  *float64 `json:"old"`            // nil: not defined for the older revision
	New  *float64 `json:"new"`            // nil: not defined for the newer revision
	Abs  *float64 `json:"abs_change"`     // New - Old
	Rel  *float64 `json:"rel_change"`     // (New - Old)/|Old|; nil when Old is zero or either is undefined
	Note string   `json:"note,omitempty"` // why a value is missing
}

// Compare pairs the quantities of two responses by name, in the order of
// old.
func Compare(old, new *Response) []Change {
	byName := map[string]Quantity{}
	for _, q := range new.Quantities {
		byName[q.Name] = q
	}
	var out []Change
	for _, o := range old.Quantities {
		n, ok := byName[o.Name]
		c := Change{Name: o.Name, Unit: o.Unit}
		switch {
		case o.Note != "":
			c.Note = "old: " + o.Note
		case !ok:
			c.Note = "new: not computed"
		case n.Note != "":
			c.Note = "new: " + n.Note
		}
		if o.Note == "" {
			c.Old = ptrF(o.Value)
		}
		if ok && n.Note == "" {
			c.New = ptrF(n.Value)
		}
		if c.Old != nil && c.New != nil {
			c.Abs = ptrF(*c.New - *c.Old)
			if d := math.Max(math.Abs(*c.Old), o.Floor); d > 0 {
				c.Rel = ptrF((*c.New - *c.Old) / d)
			}
		}
		out = append(out, c)
	}
	return out
}

func ptrF(v float64) *float64 { return &v }
