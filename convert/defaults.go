package convert

import (
	"errors"
	"fmt"
	"io/fs"
	"math"
	"strconv"

	"matgate/schema"
)

// Verification defaults, written out by Normalize where a card gives none.
// They are sized from the yield strain eps_y = yield_stress/E so that every
// case reaches well into the plastic range of the card whatever its units.
const (
	// DefaultRatchetCycles of the stress-controlled ratcheting case.
	DefaultRatchetCycles = 20
	// Default reference tolerances (relative to the peak absolute recorded
	// value). A solver curve integrates the same equations with another
	// algorithm: backward Euler at the increments solvers use differs from
	// the exact solution by up to about 1 percent, so 2 percent. A measured
	// curve carries test scatter and the model's own fit error, commonly a
	// few percent (common practice, no source): 5 percent.
	DefaultSolverTolerance   = 0.02
	DefaultMeasuredTolerance = 0.05
)

// Defaults returns the verification block that Normalize writes for a card
// that gives none; c must be in SI units (E, yield stress, C, Q in Pa).
// Every default case stays within MaxStrain and MaxPathYields (sizing.go).
//
//   - monotonic_strain: 20 eps_y, at least min(0.01, 1000 eps_y) and at
//     most MaxStrain;
//   - strain_amplitudes: 2 eps_y and 4 eps_y (at most MaxStrain/4 and
//     MaxStrain/2, so the mean-strain relaxation case, which cycles from 0
//     to twice the first, stays within MaxStrain): both reverse yield,
//     since a fully reversed cycle yields again once the strain range
//     exceeds 2 eps_y; plastic strain ranges of about 2 and 6 eps_y;
//   - cycles: see defaultCycles;
//   - ratcheting: see defaultRatcheting.
func Defaults(c *schema.Card) schema.Verification {
	epsY := c.Plasticity.YieldStress / c.Elastic.YoungsModulus
	v := schema.Verification{
		Profile:          schema.ProfileStandard,
		MonotonicStrain:  ptr(roundTo(math.Min(MaxStrain, math.Max(math.Min(0.01, 1000*epsY), 20*epsY)), 3)),
		StrainAmplitudes: []float64{roundTo(math.Min(MaxStrain/4, 2*epsY), 3), roundTo(math.Min(MaxStrain/2, 4*epsY), 3)},
		Ratcheting:       defaultRatcheting(c),
	}
	v.Cycles = ptr(defaultCycles(c, v.StrainAmplitudes[0]))
	return v
}

// defaultCycles returns the number of fully reversed cycles after which the
// slowest transient of the card has decayed to 1e-3 of its initial size at
// the strain amplitude epsA, kept within [10, 200]. It is the rule that
// checks.Spec applies to a hand-built spec without cycles; the two are kept
// in step so that a card verifies the same whether its defaults come from
// here or from there (convert may not import checks).
//
// An Armstrong-Frederick back stress forgets its value at the start of a
// branch by exp(-gamma dEpsP) over the branch (the branch solution of
// d alpha = C d eps_p - gamma alpha |d eps_p|), so by rho = exp(-2 gamma
// dEpsP) per cycle; Voce's R(p) approaches Q by exp(-b dp), rho = exp(-2 b
// dEpsP). dEpsP, the stabilized plastic strain range, is estimated as
// 2 (epsA - eps_y); N = ln(1e3) / (2 rate dEpsP) for the smallest rate.
// Linear terms stabilize in one cycle; linear isotropic hardening never
// does (10 cycles). Derived here.
func defaultCycles(c *schema.Card, epsA float64) int {
	dEpsP := 2 * (epsA - c.Plasticity.YieldStress/c.Elastic.YoungsModulus)
	slow := math.Inf(1)
	for _, t := range c.Plasticity.Kinematic {
		if t.Gamma != nil {
			slow = math.Min(slow, *t.Gamma)
		}
	}
	if iso := c.Plasticity.Isotropic; iso != nil && iso.B != nil {
		slow = math.Min(slow, *iso.B)
	}
	if dEpsP <= 0 || math.IsInf(slow, 1) {
		return 10
	}
	n := math.Ceil(math.Log(1e3) / (2 * slow * dEpsP))
	return int(math.Max(10, math.Min(200, n)))
}

// defaultRatcheting returns the default ratcheting load of the SI card c:
// for bounded hardening with kinematic capacity A = sum C_i/gamma_i +
// min(Q, 0) > 0, stress_amplitude yield_stress + 0.4 A lambda and
// mean_stress 0.3 A lambda, so the peak stress stays below saturation and
// both branches of every cycle are plastic; for unbounded (linear)
// hardening yield_stress (1 + 0.2 lambda) and 0.2 lambda yield_stress;
// DefaultRatchetCycles cycles. lambda is the largest of 1, 1/2, 1/4, ...,
// 2^-10 whose load (rounded to 4 digits) keeps the whole path within
// MaxStrain and MaxPathYields (ratchetFits): near saturation a stress
// cycle ratchets by whole strains per cycle (12 to 83 after 20 cycles were
// seen at lambda = 1). None when the card has no kinematic hardening
// (nothing can ratchet), when its parameters make no material, or when no
// lambda fits.
func defaultRatcheting(c *schema.Card) *schema.Ratcheting {
	sy := c.Plasticity.YieldStress
	capacity, linear := 0.0, false
	for _, t := range c.Plasticity.Kinematic {
		switch {
		case t.PlasticModulus != nil && *t.PlasticModulus > 0:
			linear = true
		case t.C != nil && t.Gamma != nil:
			capacity += *t.C / *t.Gamma
		}
	}
	if iso := c.Plasticity.Isotropic; !linear && iso != nil && iso.Q != nil {
		capacity += math.Min(*iso.Q, 0)
	}
	if !linear && capacity <= 0 {
		return nil
	}
	m, err := Material(c)
	if err != nil {
		return nil
	}
	for j := 0; j <= 10; j++ {
		lam := math.Ldexp(1, -j)
		r := &schema.Ratcheting{MeanStress: roundTo(0.3*capacity*lam, 4), StressAmplitude: roundTo(sy+0.4*capacity*lam, 4), Cycles: DefaultRatchetCycles}
		if linear {
			r.MeanStress, r.StressAmplitude = roundTo(0.2*sy*lam, 4), roundTo(sy*(1+0.2*lam), 4)
		}
		if ratchetFits(&m, r) {
			return r
		}
	}
	return nil
}

// verificationDefaults merges the card's verification block (in its stress
// unit, factor f to Pa) with Defaults(n); n is the SI card so far.
func verificationDefaults(n *schema.Card, given *schema.Verification, f float64, opts *Options) (*schema.Verification, error) {
	v := Defaults(n)
	if given == nil {
		return &v, nil
	}
	if given.Cycles == nil && len(given.StrainAmplitudes) > 0 {
		v.Cycles = ptr(defaultCycles(n, given.StrainAmplitudes[0]))
	}
	return mergeVerification(v, given, f, opts)
}

// verificationGiven is the verification block of a temperature-dependent
// card: the block as given (stresses in Pa, references inlined) and the
// profile; the cases it does not size are sized at each temperature by
// Defaults when the card is verified.
func verificationGiven(given *schema.Verification, f float64, opts *Options) (*schema.Verification, error) {
	v := schema.Verification{Profile: schema.ProfileStandard}
	if given == nil {
		return &v, nil
	}
	return mergeVerification(v, given, f, opts)
}

// mergeVerification writes what the card's verification block given (in
// its stress unit, factor f to Pa) states over v.
func mergeVerification(v schema.Verification, given *schema.Verification, f float64, opts *Options) (*schema.Verification, error) {
	if given.Profile != "" {
		v.Profile = given.Profile
	}
	if given.MonotonicStrain != nil {
		v.MonotonicStrain = ptr(*given.MonotonicStrain)
	}
	if given.StrainAmplitudes != nil {
		v.StrainAmplitudes = append([]float64(nil), given.StrainAmplitudes...)
	}
	if given.Cycles != nil {
		v.Cycles = ptr(*given.Cycles)
	}
	if r := given.Ratcheting; r != nil {
		v.Ratcheting = &schema.Ratcheting{MeanStress: round15(r.MeanStress * f), StressAmplitude: round15(r.StressAmplitude * f), Cycles: r.Cycles}
	}
	for i, r := range given.References {
		ptrOf := fmt.Sprintf("/verification/references/%d", i)
		out := schema.Reference{Name: r.Name, Kind: r.Kind, Control: r.Control}
		if out.Control == "" {
			out.Control = schema.ControlStrain
		}
		pts := r.Points
		if r.File != "" {
			if opts.ReadFile == nil {
				return nil, &FieldError{Pointer: ptrOf + "/file", Err: fmt.Errorf("reference file %q cannot be read here: no card directory", r.File)}
			}
			data, err := opts.ReadFile(r.File)
			if errors.Is(err, fs.ErrNotExist) {
				return nil, &FieldError{Pointer: ptrOf + "/file", Err: fmt.Errorf("reference file %q not found in the card's folder", r.File)}
			}
			if err != nil {
				return nil, &FieldError{Pointer: ptrOf + "/file", Err: fmt.Errorf("read reference %q: %w", r.File, err)}
			}
			if err := checkReferenceSize(r.File, data); err != nil {
				return nil, &FieldError{Pointer: ptrOf + "/file", Err: err}
			}
			if pts, err = ReadCurve(r.File, data); err != nil {
				return nil, &FieldError{Pointer: ptrOf + "/file", Err: err}
			}
		}
		out.Points = make([][2]float64, len(pts))
		for j, p := range pts {
			out.Points[j] = [2]float64{p[0], round15(p[1] * f)}
		}
		switch {
		case r.Tolerance != nil:
			out.Tolerance = &schema.Tolerance{Rel: r.Tolerance.Rel}
		case r.Kind == schema.KindMeasured:
			out.Tolerance = &schema.Tolerance{Rel: DefaultMeasuredTolerance}
		default:
			out.Tolerance = &schema.Tolerance{Rel: DefaultSolverTolerance}
		}
		v.References = append(v.References, out)
	}
	return &v, nil
}

// roundTo rounds v to d significant digits, for tidy defaults.
func roundTo(v float64, d int) float64 {
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', d, 64), 64)
	if err != nil {
		return v
	}
	return r
}
