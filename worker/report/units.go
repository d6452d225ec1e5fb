package report

import (
	"math"
	"strconv"
	"strings"

	"matgate/convert"
)

// fallbackUnit is the stress unit of a report whose caller does not know
// the unit the card was written in (the record's canonical card is in Pa
// whatever it was written in): the unit of most metal data sheets in SI.
const fallbackUnit = "MPa"

// display prints the record's SI values in the card's own stress unit.
type display struct {
	Unit  string  // stress unit name, e.g. "ksi"
	Pa    float64 // pascals per unit
	Known bool    // Unit is the card's own, or one asked for (false: fallbackUnit)
	Asked bool    // Unit is one a reader asked for (Written.Asked)
}

// newDisplay returns the display of a card written in unit ("" or an
// unknown name: fallbackUnit, Known false).
func newDisplay(unit string) display {
	if f, err := convert.StressFactor(unit); err == nil && unit != "" {
		return display{Unit: unit, Pa: f, Known: true}
	}
	f, _ := convert.StressFactor(fallbackUnit)
	return display{Unit: fallbackUnit, Pa: f}
}

// EnergyUnit names the unit of energy per volume equal to the stress unit
// (1 Pa = 1 J/m^3; 1 psi = 1 in lbf/in^3).
func (d display) EnergyUnit() string {
	switch d.Unit {
	case "Pa":
		return "J/m³"
	case "kPa":
		return "kJ/m³"
	case "MPa":
		return "MJ/m³"
	case "GPa":
		return "GJ/m³"
	case "psi":
		return "in·lbf/in³"
	case "ksi":
		return "in·kip/in³"
	}
	return d.Unit
}

// quantity returns a value of the record's unit ("Pa", "J/m^3" or ""
// for dimensionless) in the card's unit, and that unit's name.
func (d display) quantity(v float64, unit string) (float64, string) {
	switch unit {
	case "Pa":
		return v / d.Pa, d.Unit
	case "J/m^3":
		return v / d.Pa, d.EnergyUnit()
	}
	return v, unit
}

// num prints v with 4 significant digits: plain notation from 1e-3 to
// 1e6, otherwise with a power of ten; an exact zero as 0.
func num(v float64) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 0):
		return strconv.FormatFloat(v, 'g', -1, 64)
	case v == 0:
		return "0"
	}
	a := math.Abs(v)
	if a >= 1e-3 && a < 1e6 {
		// 4 significant digits in plain notation, trailing zeros after
		// the point dropped (355.0 is printed as 355).
		dec := 3 - int(math.Floor(math.Log10(a)))
		if dec < 0 {
			dec = 0
		}
		s := strconv.FormatFloat(v, 'f', dec, 64)
		if strings.Contains(s, ".") {
			s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
		}
		return s
	}
	m := strconv.FormatFloat(v, 'e', 3, 64) // d.ddde±XX
	mant, exp, _ := strings.Cut(m, "e")
	if strings.Contains(mant, ".") {
		mant = strings.TrimRight(strings.TrimRight(mant, "0"), ".")
	}
	e, _ := strconv.Atoi(exp)
	return mant + "×10" + superscript(e)
}

// superscript writes an integer in Unicode superscript digits.
func superscript(n int) string {
	const digits = "⁰¹²³⁴⁵⁶⁷⁸⁹"
	var b strings.Builder
	if n < 0 {
		b.WriteString("⁻")
		n = -n
	}
	for _, c := range strconv.Itoa(n) {
		b.WriteString(string([]rune(digits)[c-'0']))
	}
	return b.String()
}

// tolerance words a check's tolerance: relative ones in percent, absolute
// ones in the check's unit, with the side of a one-sided bound.
func (d display) tolerance(tol float64, kind, bound, unit string) string {
	var s string
	if kind == "rel" {
		s = num(100*tol) + " %"
	} else {
		v, u := d.quantity(tol, unit)
		s = num(v)
		if u != "" {
			s += " " + u
		}
	}
	switch bound {
	case "upper":
		return "at most ref. + " + s
	case "lower":
		return "at least ref. − " + s
	}
	return "± " + s
}
