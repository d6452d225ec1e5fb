package checks

import (
	"fmt"
	"math"
	"sort"

	"matgate/checks/plastic"
)

// variants builds the misread materials and points of one reference.
func (v *verifier) variants(ref Reference, units []Unit) []variant {
	m := v.m
	E := m.E
	var vs []variant
	// modulus builds a variant whose kinematic terms are newTerm of the
	// card's (term i, its Term); a material NewMaterial refuses is skipped.
	modulus := func(d Diagnosis, detail string, newTerm func(i int, t plastic.Term) plastic.Term) {
		terms := make([]plastic.Term, m.N)
		for i := range terms {
			terms[i] = newTerm(i, m.Terms[i])
		}
		vr := variant{d: d, detail: detail, ref: ref}
		mm, err := plastic.NewMaterial(m.E, m.Nu, m.SigmaY, terms, m.Iso)
		if err != nil {
			vr.skip = err.Error()
		} else {
			vr.m = &mm
		}
		vs = append(vs, vr)
	}
	nAF := 0
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		if !t.Linear() {
			nAF++
			continue
		}
		only := func(c float64) func(int, plastic.Term) plastic.Term {
			return func(j int, u plastic.Term) plastic.Term {
				if j == i {
					u.C = c
				}
				return u
			}
		}
		modulus(Diagnosis{Misreading: TangentAsPlastic, Term: i}, fmt.Sprintf("kinematic term %d: plastic modulus E H/(E + H)", i+1), only(plasticToTangent(E, t.C)))
		if t.C < E {
			modulus(Diagnosis{Misreading: PlasticAsTangent, Term: i}, fmt.Sprintf("kinematic term %d: plastic modulus E H/(E - H)", i+1), only(tangentToPlastic(E, t.C)))
		} else {
			vs = append(vs, variant{d: Diagnosis{Misreading: PlasticAsTangent, Term: i}, detail: fmt.Sprintf("kinematic term %d", i+1), skip: "the plastic modulus is not below E, so it cannot be a tangent modulus"})
		}
	}
	if len(units) == 0 {
		vs = append(vs, variant{d: Diagnosis{Misreading: StressUnit, Term: -1}, detail: "recorded stresses in another unit", skip: "no stress units given"})
	}
	for _, k := range unitRatios(units) {
		r := ref
		r.Points = make([][2]float64, len(ref.Points))
		for i, p := range ref.Points {
			r.Points[i] = [2]float64{p[0], p[1] * k}
		}
		vs = append(vs, variant{d: Diagnosis{Misreading: StressUnit, Factor: k, Term: -1}, detail: fmt.Sprintf("recorded stresses times %.7g", k), ref: r})
	}
	e2t := variant{d: Diagnosis{Misreading: EngineeringReference, Term: -1}, detail: "recorded points converted from engineering to true values", ref: ref}
	if pts, kept, err := engineeringToTrue(ref.Points); err != nil {
		e2t.skip = err.Error()
	} else {
		e2t.ref.Points = pts
		if kept < len(ref.Points) {
			e2t.d.Kept = kept
			e2t.detail += fmt.Sprintf(", cut after point %d at the maximum engineering stress", kept-1)
			cr := ref
			cr.Points = ref.Points[:kept]
			e2t.cardRef = &cr
		}
	}
	t2e := variant{d: Diagnosis{Misreading: EngineeringCard, Term: -1}, detail: "recorded points converted from true to engineering values", ref: ref}
	t2e.ref.Points = trueToEngineering(ref.Points)
	vs = append(vs, e2t, t2e)
	if m.N > 0 {
		for _, f := range []float64{1.5, 2.0 / 3} {
			modulus(Diagnosis{Misreading: TensorFactor, Factor: f, Term: -1}, fmt.Sprintf("every kinematic modulus times %.4g", f), func(_ int, t plastic.Term) plastic.Term {
				t.C *= f
				return t
			})
		}
	}
	if nAF > 0 {
		for _, f := range []float64{1, 100} {
			detail := "every Armstrong-Frederick gamma times 100"
			if f == 100 {
				detail += ", and every c"
			}
			modulus(Diagnosis{Misreading: GammaPerPercent, Factor: f, Term: -1}, detail, func(_ int, t plastic.Term) plastic.Term {
				if !t.Linear() {
					t.C, t.Gamma = f*t.C, 100*t.Gamma
				}
				return t
			})
		}
	}
	if nAF > 0 && len(units) == 0 {
		vs = append(vs, variant{d: Diagnosis{Misreading: SwappedCGamma, Term: -1}, detail: "c and gamma swapped", skip: "no stress units given"})
	}
	for _, u := range units {
		swap := func(term int) {
			detail := fmt.Sprintf("c and gamma of every Armstrong-Frederick term swapped, in %s", u.Name)
			if term >= 0 {
				detail = fmt.Sprintf("c and gamma of kinematic term %d swapped, in %s", term+1, u.Name)
			}
			for i := 0; i < m.N; i++ {
				if t := m.Terms[i]; !t.Linear() && (term < 0 || i == term) && !(t.C/u.Pa >= swapGammaMin && t.C/u.Pa <= swapGammaMax) {
					vs = append(vs, variant{d: Diagnosis{Misreading: SwappedCGamma, Term: term, Unit: u}, detail: detail,
						skip: fmt.Sprintf("the c of term %d in %s, %.4g, is no gamma of a metal", i+1, u.Name, t.C/u.Pa)})
					return
				}
			}
			modulus(Diagnosis{Misreading: SwappedCGamma, Term: term, Unit: u}, detail, func(i int, t plastic.Term) plastic.Term {
				if !t.Linear() && (term < 0 || i == term) {
					t.C, t.Gamma = t.Gamma*u.Pa, t.C/u.Pa
				}
				return t
			})
		}
		for i := 0; i < m.N; i++ {
			if !m.Terms[i].Linear() {
				swap(i)
			}
		}
		if nAF > 1 {
			swap(-1)
		}
	}
	return vs
}

// A swap of c and gamma is tried in a unit only when the card's c in that
// unit, the swapped gamma, lies in [swapGammaMin, swapGammaMax]: published
// Armstrong-Frederick and Chaboche fits of metals have gammas from a few to
// a few thousand (from memory of handbook and paper fits; the card space of
// worker/cardspace draws 2 to 3000), so two decades of margin on each side.
// The other units would make a gamma of 1e7 or more out of a c in Pa or
// kPa, which no fit gives, and each trial costs a replay.
const (
	swapGammaMin = 0.1
	swapGammaMax = 1e5
)

// unitRatios returns the distinct ratios a.Pa / b.Pa other than 1 of two
// units, in increasing order: the factors by which stresses written in b
// but meant in a are off.
func unitRatios(units []Unit) []float64 {
	var ks []float64
	for _, a := range units {
		for _, b := range units {
			k := a.Pa / b.Pa
			if math.Abs(k-1) < 1e-9 {
				continue
			}
			dup := false
			for _, q := range ks {
				dup = dup || math.Abs(q/k-1) < 1e-9
			}
			if !dup {
				ks = append(ks, k)
			}
		}
	}
	sort.Float64s(ks)
	return ks
}

// tangentToPlastic and plasticToTangent convert a linear term's modulus:
// H = E Et/(E - Et), Et = E H/(E + H), from 1/Et = 1/E + 1/H (Lubliner,
// Plasticity Theory, 1990, sec. 3.3; a fact of the trade). Package convert
// has the same two lines for cards (this package cannot import it).
func tangentToPlastic(E, Et float64) float64 { return E * Et / (E - Et) }
func plasticToTangent(E, H float64) float64  { return E * H / (E + H) }

// engineeringToTrue converts uniaxial engineering points [e, s] to true
// strain and stress,
//
//	eps = ln(1 + e),   sigma = s (1 + e),
//
// valid up to the maximum engineering stress, where necking starts
// (Considere). Points past it are cut: on the first loading branch (from
// the first point while the strain does not decrease), when a point after
// the maximum lies below it, only the points up to the maximum are kept;
// kept says how many. A strain at or below -1 is refused, and so is a cut
// that leaves fewer than 2 points. The rule is that of
// convert.EngineeringToTrue, which refuses such data where this cuts it.
//
// References: G. E. Dieter, Mechanical Metallurgy, 3rd ed., 1986, ch. 8
// (the conversion up to the maximum load, and Considere's construction;
// from memory); ASTM E8/E8M for the definitions of engineering stress and
// strain (from memory).
func engineeringToTrue(pts [][2]float64) (out [][2]float64, kept int, err error) {
	for i, p := range pts {
		if !(p[0] > -1) {
			return nil, 0, fmt.Errorf("point %d: engineering strain %g at or below -1", i, p[0])
		}
	}
	kept = len(pts)
	peak, at := math.Inf(-1), -1
	for i, p := range pts {
		if i > 0 && p[0] < pts[i-1][0] {
			break // the first reversal ends the loading branch
		}
		if p[1] > peak {
			peak, at = p[1], i
		} else if p[1] < peak && p[0] > pts[at][0] && peak > 0 {
			kept = at + 1
			break
		}
	}
	if kept < 2 {
		return nil, 0, fmt.Errorf("only %d point before the maximum engineering stress", kept)
	}
	out = make([][2]float64, kept)
	for i, p := range pts[:kept] {
		out[i] = [2]float64{math.Log1p(p[0]), p[1] * (1 + p[0])}
	}
	return out, kept, nil
}

// trueToEngineering is the inverse of engineeringToTrue without a cut:
// e = exp(eps) - 1, s = sigma exp(-eps).
func trueToEngineering(pts [][2]float64) [][2]float64 {
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		out[i] = [2]float64{math.Expm1(p[0]), p[1] * math.Exp(-p[0])}
	}
	return out
}
