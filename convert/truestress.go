package convert

import (
	"errors"
	"fmt"
	"math"
)

// ErrPastNecking is wrapped by the error EngineeringToTrue returns for data
// beyond the maximum engineering stress (beyond uniform elongation).
var ErrPastNecking = errors.New("data past the maximum engineering stress")

// EngineeringToTrue converts uniaxial engineering points [strain e, stress
// s] (in recorded order, any stress unit) to true (logarithmic) strain and
// true (Cauchy) stress,
//
//	eps = ln(1 + e),   sigma = s (1 + e),
//
// which assume constant volume and a uniform strain over the gauge length:
// valid up to uniform elongation, the maximum engineering stress, where
// necking starts (Considere's criterion). Data past that point describe the
// neck, not the material, and are refused: on the first loading branch (from
// the first point while the strain does not decrease) no point after the
// maximum engineering stress may lie below it. The error wraps
// ErrPastNecking and names the file and the data row (1-based, after the
// header). A strain e <= -1 is refused too (no length left).
//
// The formulas use the elastic strain's volume change as zero; at the
// strains of a tension test (elastic strains below 1%) the error of that is
// below 0.5% of the elastic strain, common practice, no source.
//
// References:
//   - ASTM E8/E8M, Standard Test Methods for Tension Testing of Metallic
//     Materials: engineering stress = force / original area, engineering
//     strain = elongation / original gauge length (definitions; from memory,
//     the standard is not at hand here).
//   - G. E. Dieter, Mechanical Metallurgy, 3rd ed., 1986, ch. 8, "the
//     true-stress-true-strain curve": eps = ln(1 + e), sigma = s (1 + e)
//     up to the maximum load, and Considere's construction for its onset
//     (from memory, no equation numbers).
func EngineeringToTrue(name string, pts [][2]float64) ([][2]float64, error) {
	if err := checkFinite(name, pts); err != nil {
		return nil, err
	}
	if err := checkUniform(name, pts); err != nil {
		return nil, err
	}
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		e, s := p[0], p[1]
		out[i] = [2]float64{math.Log1p(e), s * (1 + e)}
	}
	return out, nil
}

// TrueToEngineering is the inverse of EngineeringToTrue:
//
//	e = exp(eps) - 1,   s = sigma / (1 + e) = sigma exp(-eps).
//
// It refuses non-finite values; it cannot know where necking began in the
// engineering curve it makes, so the caller keeps true data to uniform
// elongation.
func TrueToEngineering(name string, pts [][2]float64) ([][2]float64, error) {
	if err := checkFinite(name, pts); err != nil {
		return nil, err
	}
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		out[i] = [2]float64{math.Expm1(p[0]), p[1] * math.Exp(-p[0])}
	}
	return out, nil
}

// checkUniform refuses engineering points past the maximum engineering
// stress of the first loading branch, and strains at or below -1.
func checkUniform(name string, pts [][2]float64) error {
	for i, p := range pts {
		if !(p[0] > -1) {
			return fmt.Errorf("%s: data row %d: engineering strain %g: at or below -1 (no gauge length left)", name, i+1, p[0])
		}
	}
	peak, at := math.Inf(-1), -1
	for i, p := range pts {
		if i > 0 && p[0] < pts[i-1][0] {
			break // the first reversal ends the loading branch
		}
		if p[1] > peak {
			peak, at = p[1], i
		} else if p[1] < peak && p[0] > pts[at][0] && peak > 0 {
			return fmt.Errorf("%s: data row %d (strain %g, stress %g): %w %g at data row %d (strain %g): "+
				"the true-stress conversion holds only up to uniform elongation; cut the data at row %d",
				name, i+1, p[0], p[1], ErrPastNecking, peak, at+1, pts[at][0], at+1)
		}
	}
	return nil
}

func checkFinite(name string, pts [][2]float64) error {
	for i, p := range pts {
		for j, v := range p {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				col := [2]string{"strain", "stress"}[j]
				return fmt.Errorf("%s: data row %d: %s %g is not a finite number", name, i+1, col, v)
			}
		}
	}
	return nil
}

// PlasticStrain returns the plastic strain of each uniaxial point [strain,
// stress] for Young's modulus E (in the stress unit of the points):
//
//	eps_p = eps - sigma / E,
//
// the additive split of the small (or logarithmic) strain into elastic and
// plastic parts with linear isotropic elasticity; it holds on loading and
// unloading alike. Precondition: E > 0 (panics otherwise: a programmer
// error, the card checks reject E <= 0).
//
// References:
//   - J. Lubliner, Plasticity Theory, 1990, section 3.2 (additive
//     decomposition of the strain; from memory).
func PlasticStrain(pts [][2]float64, E float64) []float64 {
	if !(E > 0) {
		panic("convert: PlasticStrain needs E > 0")
	}
	out := make([]float64, len(pts))
	for i, p := range pts {
		out[i] = p[0] - p[1]/E
	}
	return out
}
