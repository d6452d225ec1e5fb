package checks

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// Result is the outcome of Run.
type Result struct {
	Settings Settings `json:"settings"`
	Cases    []Case   `json:"cases"`
	Verdict  string   `json:"verdict"` // "pass" | "fail"
	// Findings are remarks on checks that pass or fail does not carry
	// (see Diagnose); they go into the record and its digest.
	Findings []Finding `json:"findings,omitempty"`
}

// VerdictOf is the verdict of cases: "pass" when every check passes,
// else "fail". A record's verdict is this of its cases, which lets a
// reader recompute it.
func VerdictOf(cases []Case) string {
	for i := range cases {
		for j := range cases[i].Checks {
			if !cases[i].Checks[j].Pass {
				return "fail"
			}
		}
	}
	return "pass"
}

// Settings is everything needed to reproduce a Result: the resolved Spec
// (without the material, which the record's card carries) and the numerical
// settings of every case.
type Settings struct {
	Profile          string        `json:"profile"`
	Algorithm        string        `json:"algorithm"`         // return mapping of every case
	StrainIncrement  float64       `json:"strain_increment"`  // max strain increment of the 1D strain-controlled cases
	StressIncrement  float64       `json:"stress_increment"`  // max stress increment of the stress-controlled cases, Pa
	SubstepTol       float64       `json:"substep_tol"`       // plastic.Settings.SubstepTol (3D), relative to sigmaY
	DriverTol        float64       `json:"driver_tol"`        // stress residual of the controlled increments, relative to sigmaY
	AngleIncrements  int           `json:"angle_increments"`  // increments per turn of the circular strain path
	MonotonicStrain  float64       `json:"monotonic_strain"`  //
	StrainAmplitudes []float64     `json:"strain_amplitudes"` //
	Cycles           int           `json:"cycles"`            // of the fully reversed cases
	Ratcheting       *Ratcheting   `json:"ratcheting"`        // nil: skipped
	Relaxation       *Relaxation   `json:"relaxation"`        //
	References       []Reference   `json:"references"`        // name, kind, control, tolerance
	Cases            []CaseSetting `json:"cases"`             // per case
	Refinement       string        `json:"refinement"`        // how the step-size convergence rerun is made
	StabilizedCycle  string        `json:"stabilized_cycle"`  // the definition followed
}

// CaseSetting is the numerical setting of one case.
type CaseSetting struct {
	Case       string  `json:"case"`
	Control    string  `json:"control"`    // "strain", "stress", "mixed"
	Increment  float64 `json:"increment"`  // max increment of the controlled quantity (Pa for stress)
	Increments int     `json:"increments"` // increments of the reported run
	Rerun      int     `json:"rerun_increments"`
}

// Case is one verification case.
type Case struct {
	Name    string  `json:"name"`    // e.g. "cyclic-0.005"
	Kind    string  `json:"kind"`    // e.g. "fully-reversed"
	Loading string  `json:"loading"` // in words, with the numbers
	Skipped string  `json:"skipped,omitempty"`
	Checks  []Check `json:"checks"`
	// Omitted lists the checks of this kind of case that do not apply to
	// this card, each with why.
	Omitted []Omission `json:"omitted,omitempty"`
	// Measures are reported numbers that are not checks (RMS errors,
	// counts), for the auditor.
	Measures []Measure `json:"measures,omitempty"`
	// Series is the response for plots (see downsample); nil for a
	// skipped case.
	Series *Series `json:"series"`
	Curves []Curve `json:"curves,omitempty"`

	tracked []tracked // quantities compared by the convergence rerun only
}

// Check is one comparison.
//
// Pass rule by Bound: "" (two-sided) |Value - Reference| <= Tolerance (rel:
// <= Tolerance |Reference|); "upper": Value <= Reference + Tolerance;
// "lower": Value >= Reference - Tolerance.
type Check struct {
	Name            string  `json:"name"`
	Quantity        string  `json:"quantity"`
	Value           float64 `json:"value"`
	Reference       float64 `json:"reference"`
	ReferenceSource string  `json:"reference_source"`
	Tolerance       float64 `json:"tolerance"`
	ToleranceKind   string  `json:"tolerance_kind"` // "rel" | "abs"
	Bound           string  `json:"bound,omitempty"`
	ToleranceBasis  string  `json:"tolerance_basis"`
	Unit            string  `json:"unit"`
	Pass            bool    `json:"pass"`

	converge bool // compared by the step-size convergence rerun
}

// Omission is a check that does not apply to the card.
type Omission struct {
	Check string `json:"check"`
	Why   string `json:"why"`
}

// Measure is a reported number that is not a check.
type Measure struct {
	Name  string  `json:"name"`
	Value float64 `json:"value"`
	Unit  string  `json:"unit"`
}

// Series is the response of a case for plots, stored by column: sample i
// is element i of every column. 3D cases fill the shear columns
// (tension-torsion: engineering shear strain gamma_12 and shear stress
// tau_12); a column that is zero throughout is left out (nil), and the 1D
// columns are the axial ones. Gaps lists, in increasing order, the samples
// that follow increments left out of the series: a plot starts a new line
// there. See downsample for which increments are kept.
type Series struct {
	Strain        []float64 `json:"strain"`
	Stress        []float64 `json:"stress"`
	PlasticStrain []float64 `json:"plastic_strain"`
	BackStress    []float64 `json:"back_stress"`
	P             []float64 `json:"accumulated_plastic_strain"`
	ShearStrain   []float64 `json:"shear_strain,omitempty"`
	ShearStress   []float64 `json:"shear_stress,omitempty"`
	Gaps          []int     `json:"gaps,omitempty"`

	rows bool // read from a matgate.record/1 array of sample objects
}

// Sample is one point of a Series, as a row.
type Sample struct {
	Strain, Stress, PlasticStrain, BackStress, P float64
	ShearStrain, ShearStress                     float64
	Gap                                          bool // the first sample after increments left out
}

// Len returns the number of samples; a nil series has none.
func (s *Series) Len() int {
	if s == nil {
		return 0
	}
	return len(s.Strain)
}

// Samples returns the samples of s as rows, for plots; nil for a nil
// series.
func (s *Series) Samples() []Sample {
	if s == nil {
		return nil
	}
	n := s.Len()
	out := make([]Sample, n)
	for i := range out {
		out[i] = Sample{Strain: s.Strain[i], Stress: s.Stress[i], PlasticStrain: s.PlasticStrain[i], BackStress: s.BackStress[i], P: s.P[i]}
		if s.ShearStrain != nil {
			out[i].ShearStrain = s.ShearStrain[i]
		}
		if s.ShearStress != nil {
			out[i].ShearStress = s.ShearStress[i]
		}
	}
	for _, g := range s.Gaps {
		out[g].Gap = true
	}
	return out
}

// grow makes room for n more samples.
func (s *Series) grow(n int) {
	for _, col := range []*[]float64{&s.Strain, &s.Stress, &s.PlasticStrain, &s.BackStress, &s.P, &s.ShearStrain, &s.ShearStress} {
		*col = slices.Grow(*col, n)
	}
}

// append adds one sample; gap marks it as following left-out increments.
func (s *Series) append(smp Sample, gap bool) {
	if gap {
		s.Gaps = append(s.Gaps, len(s.Strain))
	}
	s.Strain = append(s.Strain, smp.Strain)
	s.Stress = append(s.Stress, smp.Stress)
	s.PlasticStrain = append(s.PlasticStrain, smp.PlasticStrain)
	s.BackStress = append(s.BackStress, smp.BackStress)
	s.P = append(s.P, smp.P)
	s.ShearStrain = append(s.ShearStrain, smp.ShearStrain)
	s.ShearStress = append(s.ShearStress, smp.ShearStress)
}

// dropZeroColumns leaves out the shear columns when they are +0
// throughout (a -0 is kept, as matgate.record/1 wrote it).
func (s *Series) dropZeroColumns() {
	zero := func(col []float64) bool {
		for _, v := range col {
			if math.Float64bits(v) != 0 {
				return false
			}
		}
		return true
	}
	if zero(s.ShearStrain) {
		s.ShearStrain = nil
	}
	if zero(s.ShearStress) {
		s.ShearStress = nil
	}
}

// validate checks that every column has one element per sample and that
// the gaps are increasing indices of samples after the first.
func (s *Series) validate() error {
	n := len(s.Strain)
	for _, c := range []struct {
		name string
		col  []float64
		opt  bool
	}{{"stress", s.Stress, false}, {"plastic_strain", s.PlasticStrain, false}, {"back_stress", s.BackStress, false},
		{"accumulated_plastic_strain", s.P, false}, {"shear_strain", s.ShearStrain, true}, {"shear_stress", s.ShearStress, true}} {
		if len(c.col) != n && !(c.opt && c.col == nil) {
			return fmt.Errorf("series column %s has %d values, strain has %d", c.name, len(c.col), n)
		}
	}
	prev := 0
	for _, g := range s.Gaps {
		if g <= prev || g >= n {
			return fmt.Errorf("series gap %d is not an increasing index in (0, %d)", g, n)
		}
		prev = g
	}
	return nil
}

// Curve is an overlay for plots: a closed-form curve or a reference curve,
// points [strain, stress Pa].
type Curve struct {
	Name   string       `json:"name"`
	Source string       `json:"source"`
	Points [][2]float64 `json:"points"`
}

// tracked is a quantity that only the step-size convergence rerun compares
// (a case without a closed form for it).
type tracked struct {
	name         string
	value        float64
	tol          float64 // absolute
	toleranceWhy string
}

// Errors of Run. A failed check is not an error.
var (
	// ErrCanceled is wrapped when ctx ends during Run.
	ErrCanceled = errors.New("checks: canceled")
	// ErrIntegration is wrapped by *CaseError.
	ErrIntegration = errors.New("checks: integration failed")
)

// CaseError is an integrator failure inside a case: the card drove the
// reference integrator where it did not converge. It wraps ErrIntegration
// and the integrator's error.
type CaseError struct {
	Case string
	Err  error
}

func (e *CaseError) Error() string {
	return fmt.Sprintf("checks: case %s: %v", e.Case, e.Err)
}

// Unwrap returns ErrIntegration and the cause.
func (e *CaseError) Unwrap() []error { return []error{ErrIntegration, e.Err} }

// judge sets c.Pass from the rule of Check.
func (c *Check) judge() {
	tol := c.Tolerance
	if c.ToleranceKind == "rel" {
		tol *= math.Abs(c.Reference)
	}
	d := c.Value - c.Reference
	switch c.Bound {
	case "upper":
		c.Pass = d <= tol
	case "lower":
		c.Pass = d >= -tol
	default:
		c.Pass = math.Abs(d) <= tol
	}
	if math.IsNaN(c.Value) || math.IsNaN(c.Reference) || math.IsNaN(tol) {
		c.Pass = false
	}
}

// absTol returns the check's tolerance in the unit of its value.
func (c *Check) absTol() float64 {
	if c.ToleranceKind == "rel" {
		return c.Tolerance * math.Abs(c.Reference)
	}
	return c.Tolerance
}
