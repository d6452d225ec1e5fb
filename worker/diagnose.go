package worker

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
)

// Misreading names one of the usual ways a card and its reference curve
// come apart.
type Misreading string

// The misreadings Diagnose tries.
const (
	// TangentAsPlastic: the number of a linear term is the plastic modulus
	// H of the reference, but the card has it as (or derived it from) a
	// tangent modulus Et. H = E Et / (E - Et) (Lubliner, Plasticity Theory,
	// 1990, sec. 3.3).
	TangentAsPlastic Misreading = "tangent-as-plastic"
	// PlasticAsTangent is the reverse: the reference's tangent modulus
	// was written as the plastic modulus.
	PlasticAsTangent Misreading = "plastic-as-tangent"
	// StressUnit: the reference's stresses are in a unit 1e3 or 1e6 away
	// from the card's.
	StressUnit Misreading = "stress-unit"
	// EngineeringReference: the reference holds engineering stress and
	// strain where the card (small strain, true values) needs true ones.
	EngineeringReference Misreading = "engineering-reference"
	// EngineeringCard: the card was fitted to engineering values, the
	// reference holds true ones.
	EngineeringCard Misreading = "engineering-card"
	// TensorFactor: the kinematic moduli are those of a 3D law written
	// without the 2/3 factor (dX = C d eps_p, uniaxial modulus 3/2 C), or
	// multiplied by 3/2 once too often. See package checks/plastic, "3D and
	// the 2/3 factor".
	TensorFactor Misreading = "tensor-factor"
)

// Diagnosis says which misreading, if any, makes one failed reference
// curve match. Values are canonical (SI, plastic-modulus form); Describe
// words them in the card's own terms.
type Diagnosis struct {
	Reference  string     `json:"reference"`
	Misreading Misreading `json:"misreading,omitempty"` // empty: none of them matches
	MaxError   float64    `json:"max_error"`            // of the card as written, relative to the peak recorded value
	Tolerance  float64    `json:"tolerance"`
	Matched    float64    `json:"matched_error,omitempty"` // max error under the misreading
	// Factor is the stress-unit factor applied to the recorded stresses
	// (StressUnit) or the factor applied to every kinematic modulus
	// (TensorFactor).
	Factor float64 `json:"factor,omitempty"`
	// Term is the kinematic term (0-based) of a modulus misreading; -1
	// otherwise.
	Term int `json:"term"`
	// Corrected holds, for each kinematic term the misreading changes, the
	// corrected C (Pa; the plastic modulus H of a linear term); NaN for a
	// term it leaves alone.
	Corrected []float64 `json:"-"`
	Tried     []Trial   `json:"tried"`
}

// Trial is one misreading tried on a reference.
type Trial struct {
	Misreading Misreading `json:"misreading"`
	Detail     string     `json:"detail"`
	MaxError   float64    `json:"max_error,omitempty"`
	Skipped    string     `json:"skipped,omitempty"` // why it could not be tried
}

// referenceCheck is the name of the reference case's pass/fail check
// (package checks, reference case).
const referenceCheck = "max error against the reference"

// Diagnose tries the usual misreadings on every reference curve whose max
// error check failed in res and returns one Diagnosis for each such curve
// and each misreading that makes it match (within the curve's own
// tolerance), or one Diagnosis without a Misreading when none does. c is
// the canonical card, spec its Spec. Each misreading is judged by the
// reference comparison of checks.Run on a copy of the card or curve with
// only that reference (ratcheting off, two cycles: the other cases are not
// judged here). Errors are cancellation only; a misreading that cannot be
// run (the integrator refuses it) is a skipped Trial.
func Diagnose(ctx context.Context, c *schema.Card, spec checks.Spec, res *checks.Result) ([]Diagnosis, error) {
	var out []Diagnosis
	for _, ref := range res.Settings.References {
		ck := findCheck(res, "reference-"+ref.Name)
		if ck == nil || ck.Pass {
			continue
		}
		var pts [][2]float64
		for _, r := range spec.References {
			if r.Name == ref.Name {
				pts = r.Points
			}
		}
		ref.Points = pts
		base := Diagnosis{Reference: ref.Name, MaxError: ck.Value, Tolerance: ck.Tolerance, Term: -1}
		var found []Diagnosis
		for _, v := range variants(c, ref) {
			tr := Trial{Misreading: v.d.Misreading, Detail: v.detail, Skipped: v.skip}
			if v.skip == "" {
				e, pass, why, err := tryVariant(ctx, v.card, v.ref)
				if err != nil {
					return nil, err
				}
				tr.MaxError, tr.Skipped = e, why
				if pass {
					d := v.d
					d.Reference, d.MaxError, d.Tolerance, d.Matched = ref.Name, ck.Value, ck.Tolerance, e
					found = append(found, d)
				}
			}
			base.Tried = append(base.Tried, tr)
		}
		sort.SliceStable(found, func(i, j int) bool { return found[i].Matched < found[j].Matched })
		if len(found) == 0 {
			found = []Diagnosis{base}
		}
		for i := range found {
			found[i].Tried = base.Tried
		}
		out = append(out, found...)
	}
	return out, nil
}

func findCheck(res *checks.Result, caseName string) *checks.Check {
	for i := range res.Cases {
		if res.Cases[i].Name != caseName {
			continue
		}
		for j := range res.Cases[i].Checks {
			if res.Cases[i].Checks[j].Name == referenceCheck {
				return &res.Cases[i].Checks[j]
			}
		}
	}
	return nil
}

type variant struct {
	d      Diagnosis
	detail string
	card   *schema.Card
	ref    checks.Reference
	skip   string
}

// variants builds the misread cards and curves of one reference.
func variants(c *schema.Card, ref checks.Reference) []variant {
	E := c.Elastic.YoungsModulus
	n := len(c.Plasticity.Kinematic)
	var vs []variant
	modVariant := func(m Misreading, term int, factor float64, detail string, newC func(i int, C float64, linear bool) float64) {
		k := cloneCard(c)
		corr := make([]float64, n)
		for i := range corr {
			corr[i] = math.NaN()
		}
		for i := range k.Plasticity.Kinematic {
			t := &k.Plasticity.Kinematic[i]
			if t.PlasticModulus != nil {
				v := newC(i, *t.PlasticModulus, true)
				if !math.IsNaN(v) {
					t.PlasticModulus, corr[i] = &v, v
				}
			} else if t.C != nil {
				v := newC(i, *t.C, false)
				if !math.IsNaN(v) {
					t.C, corr[i] = &v, v
				}
			}
		}
		vs = append(vs, variant{d: Diagnosis{Misreading: m, Term: term, Factor: factor, Corrected: corr}, detail: detail, card: k, ref: ref})
	}
	for i, t := range c.Plasticity.Kinematic {
		if t.PlasticModulus == nil || *t.PlasticModulus <= 0 {
			continue
		}
		i := i
		modVariant(TangentAsPlastic, i, 0, fmt.Sprintf("kinematic term %d: plastic modulus E H/(E + H)", i+1), func(j int, H float64, lin bool) float64 {
			if j != i {
				return math.NaN()
			}
			return convert.PlasticToTangent(E, H)
		})
		if *t.PlasticModulus < E {
			modVariant(PlasticAsTangent, i, 0, fmt.Sprintf("kinematic term %d: plastic modulus E H/(E - H)", i+1), func(j int, H float64, lin bool) float64 {
				if j != i {
					return math.NaN()
				}
				return convert.TangentToPlastic(E, H)
			})
		} else {
			vs = append(vs, variant{d: Diagnosis{Misreading: PlasticAsTangent, Term: i}, detail: fmt.Sprintf("kinematic term %d", i+1), skip: "the plastic modulus is not below E, so it cannot be a tangent modulus"})
		}
	}
	for _, k := range []float64{1e-3, 1e-6, 1e3, 1e6} {
		r := ref
		r.Points = scaleStress(ref.Points, k)
		vs = append(vs, variant{d: Diagnosis{Misreading: StressUnit, Factor: k, Term: -1}, detail: fmt.Sprintf("recorded stresses times %g", k), card: c, ref: r})
	}
	e2t := variant{d: Diagnosis{Misreading: EngineeringReference, Term: -1}, detail: "recorded points converted from engineering to true values", card: c, ref: ref}
	if p, err := convert.EngineeringToTrue(ref.Name, ref.Points); err != nil {
		e2t.skip = err.Error()
	} else {
		e2t.ref.Points = p
	}
	t2e := variant{d: Diagnosis{Misreading: EngineeringCard, Term: -1}, detail: "recorded points converted from true to engineering values", card: c, ref: ref}
	if p, err := convert.TrueToEngineering(ref.Name, ref.Points); err != nil {
		t2e.skip = err.Error()
	} else {
		t2e.ref.Points = p
	}
	vs = append(vs, e2t, t2e)
	if n > 0 {
		for _, f := range []float64{1.5, 2.0 / 3} {
			f := f
			modVariant(TensorFactor, -1, f, fmt.Sprintf("every kinematic modulus times %.4g", f), func(_ int, C float64, _ bool) float64 { return f * C })
		}
	}
	return vs
}

func scaleStress(pts [][2]float64, k float64) [][2]float64 {
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		out[i] = [2]float64{p[0], p[1] * k}
	}
	return out
}

// cloneCard copies the parts of a canonical card that variants change.
func cloneCard(c *schema.Card) *schema.Card {
	k := *c
	k.Plasticity.Kinematic = make([]schema.KinematicTerm, len(c.Plasticity.Kinematic))
	for i, t := range c.Plasticity.Kinematic {
		k.Plasticity.Kinematic[i] = t
		if t.PlasticModulus != nil {
			v := *t.PlasticModulus
			k.Plasticity.Kinematic[i].PlasticModulus = &v
		}
		if t.C != nil {
			v := *t.C
			k.Plasticity.Kinematic[i].C = &v
		}
	}
	return &k
}

// tryVariant runs the reference comparison of checks on card c with the
// one reference ref and returns its max error and whether it passes. why is
// set when the spec or the integrator refuses the variant.
func tryVariant(ctx context.Context, c *schema.Card, ref checks.Reference) (maxErr float64, pass bool, why string, err error) {
	spec, err := Spec(c)
	if err != nil {
		return 0, false, err.Error(), nil
	}
	spec.Ratcheting = nil
	spec.Relaxation = nil
	spec.Cycles = 2
	spec.References = []checks.Reference{ref}
	res, err := checks.Run(ctx, spec)
	if errors.Is(err, checks.ErrCanceled) {
		return 0, false, "", err
	}
	if err != nil {
		return 0, false, err.Error(), nil
	}
	ck := findCheck(res, "reference-"+ref.Name)
	if ck == nil {
		return 0, false, "no reference check in the result", nil
	}
	return ck.Value, ck.Pass, "", nil
}

// Describe words the diagnosis in the terms of the card as written
// (written: the decoded card before normalization, in its own units and
// parameter forms). With written nil it uses the canonical form (Pa,
// plastic moduli).
func (d Diagnosis) Describe(written *schema.Card) string {
	unit, f := "Pa", 1.0
	var terms []schema.KinematicTerm
	E := math.NaN()
	if written != nil {
		if g, err := convert.StressFactor(written.Units.Stress); err == nil {
			unit, f = written.Units.Stress, g
			terms = written.Plasticity.Kinematic
			E = written.Elastic.YoungsModulus * f
		}
	}
	v := func(pa float64) string { return fmt.Sprintf("%.5g %s", pa/f, unit) }
	head := fmt.Sprintf("reference %q (max error %.3g, tolerance %.3g): ", d.Reference, d.MaxError, d.Tolerance)
	tail := fmt.Sprintf("; max error then %.3g", d.Matched)
	term := func(i int) *schema.KinematicTerm {
		if i >= 0 && i < len(terms) {
			return &terms[i]
		}
		return nil
	}
	switch d.Misreading {
	case "":
		best, at := math.Inf(1), ""
		for _, t := range d.Tried {
			if t.Skipped == "" && t.MaxError < best {
				best, at = t.MaxError, string(t.Misreading)+" ("+t.Detail+")"
			}
		}
		s := head + "none of the usual misreadings (tangent/plastic modulus, stress unit 1e3 or 1e6, engineering/true values, the 2/3 tensor factor) makes it match"
		if at != "" {
			s += fmt.Sprintf("; closest: %s with max error %.3g", at, best)
		}
		return s
	case TangentAsPlastic, PlasticAsTangent:
		H := d.Corrected[d.Term]
		t := term(d.Term)
		switch {
		case t != nil && d.Misreading == TangentAsPlastic && t.TangentModulus != nil:
			return head + fmt.Sprintf("the reference matches if tangent_modulus %s of kinematic term %d is read as a plastic modulus (tangent modulus %s)%s",
				v(*t.TangentModulus*f), d.Term+1, v(convert.PlasticToTangent(E, H)), tail)
		case t != nil && d.Misreading == PlasticAsTangent && t.PlasticModulus != nil:
			return head + fmt.Sprintf("the reference matches if plastic_modulus %s of kinematic term %d is read as a tangent modulus (plastic modulus %s)%s",
				v(*t.PlasticModulus*f), d.Term+1, v(H), tail)
		case t != nil && t.TangentModulus != nil:
			return head + fmt.Sprintf("the reference matches with tangent modulus %s for kinematic term %d in place of tangent_modulus %s (the card's value looks converted from a tangent modulus as if that were a plastic modulus)%s",
				v(convert.PlasticToTangent(E, H)), d.Term+1, v(*t.TangentModulus*f), tail)
		case t != nil && t.PlasticModulus != nil:
			return head + fmt.Sprintf("the reference matches with plastic modulus %s for kinematic term %d in place of plastic_modulus %s (the card's value looks converted from a plastic modulus as if that were a tangent modulus)%s",
				v(H), d.Term+1, v(*t.PlasticModulus*f), tail)
		}
		reading := "tangent modulus read as a plastic modulus"
		if d.Misreading == PlasticAsTangent {
			reading = "plastic modulus read as a tangent modulus"
		}
		return head + fmt.Sprintf("the reference matches with plastic modulus %s for kinematic term %d (%s)%s", v(H), d.Term+1, reading, tail)
	case StressUnit:
		if written != nil {
			for _, u := range convert.StressUnits {
				g, _ := convert.StressFactor(u)
				if math.Abs(g/(f*d.Factor)-1) < 1e-9 {
					return head + fmt.Sprintf("the reference matches if its stresses are read in %s rather than the card's %s (a factor %g)%s", u, unit, d.Factor, tail)
				}
			}
		}
		return head + fmt.Sprintf("the reference matches if its stresses are multiplied by %g (a stress unit off by that factor)%s", d.Factor, tail)
	case EngineeringReference:
		return head + "the reference matches if its points are engineering stress and strain, converted to true values first (eps = ln(1 + e), sigma = s (1 + e))" + tail
	case EngineeringCard:
		return head + "the reference matches only when converted to engineering values: the card looks fitted to engineering stress and strain; refit it to true values" + tail
	case TensorFactor:
		var parts []string
		for i, C := range d.Corrected {
			if math.IsNaN(C) {
				continue
			}
			t := term(i)
			switch {
			case t != nil && t.TangentModulus != nil:
				parts = append(parts, fmt.Sprintf("tangent_modulus %s of term %d becomes %s", v(*t.TangentModulus*f), i+1, v(convert.PlasticToTangent(E, C))))
			case t != nil && t.PlasticModulus != nil:
				parts = append(parts, fmt.Sprintf("plastic_modulus %s of term %d becomes %s", v(*t.PlasticModulus*f), i+1, v(C)))
			case t != nil && t.C != nil:
				parts = append(parts, fmt.Sprintf("c %s of term %d becomes %s", v(*t.C*f), i+1, v(C)))
			default:
				parts = append(parts, fmt.Sprintf("C of term %d becomes %s", i+1, v(C)))
			}
		}
		why := "the card's kinematic moduli are those of a 3D law written without the 2/3 factor (dX = C d eps_p), whose uniaxial moduli are 3/2 as large"
		if d.Factor < 1 {
			why = "the card's kinematic moduli were multiplied by 3/2 once too often (a 3D modulus without the 2/3 factor converted twice)"
		}
		return head + "the reference matches if " + why + ": " + strings.Join(parts, ", ") + tail
	}
	return head + string(d.Misreading) + tail
}
