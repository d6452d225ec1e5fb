package checks

import (
	"fmt"
	"math"
	"strings"
)

// Finding is a remark on one check that its pass or fail does not carry:
// which usual misreading of the card explains a failed reference curve, or
// matches a passing one far better than the card as written (a near
// miss). Findings go into the record and its digest.
type Finding struct {
	Case        string     `json:"case"`
	Check       string     `json:"check"`
	CheckPassed bool       `json:"check_passed"`
	Misreading  Misreading `json:"misreading,omitempty"` // empty: none of the usual ones
	MaxError    float64    `json:"max_error"`            // of the card as written
	Matched     float64    `json:"matched_error"`        // under the misreading (none: the closest one)
	Tolerance   float64    `json:"tolerance"`
	Text        string     `json:"text"`
}

// Wording says how the card as written gives the values a diagnosis
// speaks of, so that Describe can use the card's own terms. The zero value
// words the canonical card: Pa, linear terms by their plastic modulus.
type Wording struct {
	Unit Unit // the card's stress unit; zero: Pa
	// Tangent marks, per kinematic term, a linear term written as a
	// tangent modulus.
	Tangent []bool
}

// Finding returns the record's finding of d, worded canonically.
func (d Diagnosis) Finding() Finding {
	return Finding{
		Case:        "reference-" + d.Reference,
		Check:       referenceCheck,
		CheckPassed: d.Passed,
		Misreading:  d.Misreading,
		MaxError:    d.MaxError,
		Matched:     d.Matched,
		Tolerance:   d.Tolerance,
		Text:        d.Describe(Wording{}),
	}
}

// Describe words the diagnosis in the terms of w.
func (d Diagnosis) Describe(w Wording) string {
	unit, written := w.Unit, w.Unit.Pa > 0
	if !written {
		unit = Unit{Name: "Pa", Pa: 1}
	}
	val := func(pa float64) string { return fmt.Sprintf("%.5g %s", pa/unit.Pa, unit.Name) }
	tangent := func(i int) bool { return i >= 0 && i < len(w.Tangent) && w.Tangent[i] }
	E := d.Card.E
	var head, tail string
	if d.Passed {
		head = fmt.Sprintf("reference %q passes (max error %.3g, tolerance %.3g), but ", d.Reference, d.MaxError, d.Tolerance)
		tail = fmt.Sprintf("; max error then %.3g, under a tenth of the card's: check the card for this slip", d.Matched)
	} else {
		head = fmt.Sprintf("reference %q (max error %.3g, tolerance %.3g): ", d.Reference, d.MaxError, d.Tolerance)
		tail = fmt.Sprintf("; max error then %.3g", d.Matched)
	}
	if d.Kept > 0 {
		head += fmt.Sprintf("on its first %d points, up to its maximum stress, ", d.Kept)
	}
	switch d.Misreading {
	case "":
		s := head + "none of the usual misreadings (tangent/plastic modulus, stress unit, engineering/true values, the 2/3 tensor factor, gamma per percent strain, c and gamma swapped) makes it match"
		best, at := math.Inf(1), ""
		for _, t := range d.Tried {
			if t.Skipped == "" && t.MaxError < best {
				best, at = t.MaxError, string(t.Misreading)+" ("+t.Detail+")"
			}
		}
		if best < d.MaxError {
			s += fmt.Sprintf("; closest: %s with max error %.3g", at, best)
		}
		return s
	case TangentAsPlastic, PlasticAsTangent:
		i := d.Term
		H, H1 := d.Card.Terms[i].C, d.Misread.Terms[i].C
		switch {
		case d.Misreading == TangentAsPlastic && tangent(i):
			return head + fmt.Sprintf("the reference matches if tangent_modulus %s of kinematic term %d is read as a plastic modulus (tangent modulus %s)%s",
				val(plasticToTangent(E, H)), i+1, val(plasticToTangent(E, H1)), tail)
		case d.Misreading == PlasticAsTangent && !tangent(i):
			return head + fmt.Sprintf("the reference matches if plastic_modulus %s of kinematic term %d is read as a tangent modulus (plastic modulus %s)%s",
				val(H), i+1, val(H1), tail)
		case tangent(i):
			return head + fmt.Sprintf("the reference matches with tangent modulus %s for kinematic term %d in place of tangent_modulus %s (the card's value looks converted from a tangent modulus as if that were a plastic modulus)%s",
				val(plasticToTangent(E, H1)), i+1, val(plasticToTangent(E, H)), tail)
		default:
			return head + fmt.Sprintf("the reference matches with plastic modulus %s for kinematic term %d in place of plastic_modulus %s (the card's value looks converted from a plastic modulus as if that were a tangent modulus)%s",
				val(H1), i+1, val(H), tail)
		}
	case StressUnit:
		// The pair of units only where the card's own unit is known (the
		// canonical card is in Pa whatever it was written in).
		for _, a := range d.units {
			if written && math.Abs(a.Pa/(unit.Pa*d.Factor)-1) < 1e-9 {
				return head + fmt.Sprintf("the reference matches if its stresses are read in %s rather than the card's %s (a factor %.7g)%s", a.Name, unit.Name, d.Factor, tail)
			}
		}
		return head + fmt.Sprintf("the reference matches if its stresses are multiplied by %.7g (a stress unit off by that factor)%s", d.Factor, tail)
	case EngineeringReference:
		s := head + "the reference matches if its points are engineering stress and strain, converted to true values first (eps = ln(1 + e), sigma = s (1 + e))"
		if d.Kept > 0 {
			s += "; the points after the maximum lie past the onset of necking and describe no material: cut them"
		}
		return s + tail
	case EngineeringCard:
		return head + "the reference matches only when converted to engineering values: the card looks fitted to engineering stress and strain; refit it to true values" + tail
	case TensorFactor:
		var parts []string
		for i := 0; i < d.Card.N; i++ {
			C, C1 := d.Card.Terms[i].C, d.Misread.Terms[i].C
			switch {
			case d.Card.Terms[i].Linear() && tangent(i):
				parts = append(parts, fmt.Sprintf("tangent_modulus %s of term %d becomes %s", val(plasticToTangent(E, C)), i+1, val(plasticToTangent(E, C1))))
			case d.Card.Terms[i].Linear():
				parts = append(parts, fmt.Sprintf("plastic_modulus %s of term %d becomes %s", val(C), i+1, val(C1)))
			default:
				parts = append(parts, fmt.Sprintf("c %s of term %d becomes %s", val(C), i+1, val(C1)))
			}
		}
		why := "the card's kinematic moduli are those of a 3D law written without the 2/3 factor (dX = C d eps_p), whose uniaxial moduli are 3/2 as large"
		if d.Factor < 1 {
			why = "the card's kinematic moduli were multiplied by 3/2 once too often (a 3D modulus without the 2/3 factor converted twice)"
		}
		return head + "the reference matches if " + why + ": " + strings.Join(parts, ", ") + tail
	case GammaPerPercent:
		var parts []string
		for i := 0; i < d.Card.N; i++ {
			t, t1 := d.Card.Terms[i], d.Misread.Terms[i]
			if t.Linear() {
				continue
			}
			p := fmt.Sprintf("gamma %.5g of term %d becomes %.5g", t.Gamma, i+1, t1.Gamma)
			if d.Factor != 1 {
				p += fmt.Sprintf(" and c %s becomes %s", val(t.C), val(t1.C))
			}
			parts = append(parts, p)
		}
		why := "the Armstrong-Frederick gammas were given per percent strain (100 times too small, which makes the saturations c/gamma 100 times too large)"
		if d.Factor != 1 {
			why = "the Armstrong-Frederick terms were fitted with strain in percent (gamma and c each 100 times too small, the saturations c/gamma right)"
		}
		return head + "the reference matches if " + why + ": " + strings.Join(parts, ", ") + tail
	case SwappedCGamma:
		u := d.Unit
		var parts []string
		for i := 0; i < d.Card.N; i++ {
			t, t1 := d.Card.Terms[i], d.Misread.Terms[i]
			if t.Linear() || (d.Term >= 0 && i != d.Term) {
				continue
			}
			parts = append(parts, fmt.Sprintf("term %d: c %.5g %s, gamma %.5g become c %.5g %s, gamma %.5g", i+1, t.C/u.Pa, u.Name, t.Gamma, t1.C/u.Pa, u.Name, t1.Gamma))
		}
		which := "of every Armstrong-Frederick term"
		if d.Term >= 0 {
			which = fmt.Sprintf("of kinematic term %d", d.Term+1)
		}
		return head + fmt.Sprintf("the reference matches if c and gamma %s were written in each other's place (values in %s): %s%s", which, u.Name, strings.Join(parts, "; "), tail)
	}
	return head + string(d.Misreading) + tail
}
