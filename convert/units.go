package convert

import (
	"fmt"
	"math"
	"strconv"
)

// Stress unit factors to pascal.
//
// References:
//   - Thompson and Taylor, Guide for the Use of the International System of
//     Units (SI), NIST Special Publication 811, 2008, appendix B.8/B.9:
//     1 lbf = 4.4482216152605 N and 1 in = 0.0254 m, both exact by
//     definition, so 1 psi = 1 lbf/in^2 = 6894.757293168361... Pa; the
//     often quoted 6894.757293168 is that value cut at 13 digits (2e-14
//     relative lower). 1 ksi = 1000 psi.
var stressFactors = map[string]float64{
	"Pa":  1,
	"kPa": 1e3,
	"MPa": 1e6,
	"GPa": 1e9,
	"psi": psi,
	"ksi": 1e3 * psi,
}

const (
	poundForce = 4.4482216152605 // N, exact (NIST SP 811, B.8)
	inch       = 0.0254          // m, exact
	psi        = poundForce / (inch * inch)
)

// StressUnits lists the accepted stress units from smallest to largest.
var StressUnits = []string{"Pa", "kPa", "MPa", "psi", "ksi", "GPa"}

// StressFactor returns the factor f such that a value v in unit is v*f pascal.
func StressFactor(unit string) (float64, error) {
	f, ok := stressFactors[unit]
	if !ok {
		return 0, fmt.Errorf("unknown stress unit %q", unit)
	}
	return f, nil
}

// KelvinFrom converts a temperature t in unit (K, C or F) to kelvin.
//
// References: NIST SP 811 (2008), section 4.2.1.1 and B.8:
// T/K = t/°C + 273.15 and T/K = (t/°F + 459.67)/1.8.
func KelvinFrom(t float64, unit string) (float64, error) {
	switch unit {
	case "K":
		return t, nil
	case "C":
		return t + 273.15, nil
	case "F":
		return (t + 459.67) / 1.8, nil
	}
	return 0, fmt.Errorf("unknown temperature unit %q", unit)
}

// canonicalDigits is the number of significant decimal digits kept in a
// converted value. A float64 holds 15 decimal digits exactly, so a value
// written with at most 15 digits survives a change of unit and back; rounding
// converted values to 15 digits makes the same card written in MPa and in Pa
// encode, and hash, the same, at a cost of at most 5e-16 relative.
const canonicalDigits = 15

// round15 rounds v to canonicalDigits significant digits.
func round15(v float64) float64 {
	if v == 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return v
	}
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', canonicalDigits, 64), 64)
	if err != nil {
		return v
	}
	return r
}

// TangentToPlastic returns the plastic modulus H of a linear kinematic term
// from the tangent modulus Et of the bilinear uniaxial curve:
//
//	H = E Et / (E - Et)
//
// Derived from 1/Et = 1/E + 1/H (elastic and plastic strain rates add in
// series); see e.g. Lubliner, Plasticity Theory (1990), section 3.3.
// Precondition: 0 <= Et < E.
func TangentToPlastic(E, Et float64) float64 { return E * Et / (E - Et) }

// PlasticToTangent is the inverse of TangentToPlastic: Et = E H / (E + H).
func PlasticToTangent(E, H float64) float64 { return E * H / (E + H) }
