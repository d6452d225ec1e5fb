package schema

// Format is the value of a card's `format` field.
const Format = "matgate.card/1"

// Card is a material card as written (format matgate.card/1), in the units
// it states. Optional fields are pointers or nil slices, so that "absent" and
// "zero" stay distinct; convert.Normalize writes every default out.
type Card struct {
	Format      string   `json:"format"`
	ID          string   `json:"id"`
	Revision    int      `json:"revision"`
	Title       string   `json:"title"`
	Source      string   `json:"source"`
	Units       Units    `json:"units"`
	Temperature *float64 `json:"temperature,omitempty"`
	// Temperatures makes the card temperature-dependent (see Tabulated):
	// strictly increasing, in Units.Temperature; nil for a card at one
	// temperature.
	Temperatures []float64     `json:"temperatures,omitempty"`
	Elastic      Elastic       `json:"elastic"`
	Plasticity   Plasticity    `json:"plasticity"`
	Verification *Verification `json:"verification,omitempty"`
	Derived      *Derived      `json:"derived,omitempty"`
	Digest       string        `json:"digest,omitempty"`
	// Tabulated holds the parameters given as a list with one value per
	// entry of Temperatures, by JSON pointer (see Tabulable); the struct
	// field then holds the first value. Nil for a card at one temperature.
	// The JSON encoding writes each list in place.
	Tabulated map[string][]float64 `json:"-"`
}

// Units names the units that every stress-like value in the card is written
// in (stress, moduli, C of a back-stress term, Q and K of isotropic hardening,
// reference-curve stresses) and the unit of Temperature.
type Units struct {
	Stress      string `json:"stress"`                // Pa, kPa, MPa, GPa, psi or ksi
	Temperature string `json:"temperature,omitempty"` // K, C or F; required when Card.Temperature or Card.Temperatures is set
}

// Elastic holds the isotropic elastic constants.
type Elastic struct {
	YoungsModulus float64 `json:"youngs_modulus"` // E > 0
	PoissonRatio  float64 `json:"poisson_ratio"`  // 0 <= nu < 0.5
}

// Plasticity holds the initial yield stress and the hardening laws.
//
// Conventions (uniaxial form; the 3D form is in package checks/plastic):
//
//	alpha = sum_i alpha_i
//	d alpha_i = C_i d eps_p - gamma_i alpha_i |d eps_p|   (linear: gamma_i = 0, C_i = H)
//	f = |sigma - alpha| - (yield_stress + R(p)) <= 0
//	R(p) = K p  (linear)   or   Q (1 - exp(-b p))  (Voce)
type Plasticity struct {
	YieldStress float64         `json:"yield_stress"`
	Kinematic   []KinematicTerm `json:"kinematic,omitempty"`
	Isotropic   *Isotropic      `json:"isotropic,omitempty"`
}

// Kinematic term models.
const (
	ModelLinear             = "linear"
	ModelArmstrongFrederick = "armstrong_frederick"
	ModelVoce               = "voce"
)

// KinematicTerm is one back-stress term. Exactly one form is valid:
// {linear, plastic_modulus}, {linear, tangent_modulus} or
// {armstrong_frederick, c, gamma}.
type KinematicTerm struct {
	Model          string   `json:"model"`
	PlasticModulus *float64 `json:"plastic_modulus,omitempty"` // H >= 0: alpha = H eps_p
	TangentModulus *float64 `json:"tangent_modulus,omitempty"` // 0 <= Et < E: slope of the bilinear curve
	C              *float64 `json:"c,omitempty"`               // C > 0 (stress unit)
	Gamma          *float64 `json:"gamma,omitempty"`           // gamma > 0 (dimensionless)
}

// Isotropic is the isotropic hardening law: {linear, modulus} or {voce, q, b}.
type Isotropic struct {
	Model   string   `json:"model"`
	Modulus *float64 `json:"modulus,omitempty"` // K >= 0 (stress unit)
	Q       *float64 `json:"q,omitempty"`       // Q (stress unit); Q < 0 is cyclic softening
	B       *float64 `json:"b,omitempty"`       // b > 0 (dimensionless)
}

// Verification profiles.
const (
	ProfileStandard = "standard"
	ProfileStrict   = "strict"
)

// Verification sizes the verification cases. Every field is optional.
type Verification struct {
	Profile          string      `json:"profile,omitempty"`
	MonotonicStrain  *float64    `json:"monotonic_strain,omitempty"`  // (0, 0.5]
	StrainAmplitudes []float64   `json:"strain_amplitudes,omitempty"` // each in (0, 0.2]
	Cycles           *int        `json:"cycles,omitempty"`            // 2..1000
	Ratcheting       *Ratcheting `json:"ratcheting,omitempty"`
	References       []Reference `json:"references,omitempty"`
}

// Ratcheting is the stress-controlled cycling case with a mean stress.
type Ratcheting struct {
	MeanStress      float64 `json:"mean_stress"`
	StressAmplitude float64 `json:"stress_amplitude"` // > 0
	Cycles          int     `json:"cycles"`           // 2..10000
}

// Reference kinds and controls.
const (
	KindMeasured  = "measured"
	KindSolver    = "solver"
	ControlStrain = "strain"
	ControlStress = "stress"
)

// Reference is a recorded uniaxial history that the card must reproduce.
// Exactly one of File and Points is set.
type Reference struct {
	Name      string       `json:"name"`
	Kind      string       `json:"kind"`
	Control   string       `json:"control,omitempty"` // default strain
	File      string       `json:"file,omitempty"`    // CSV relative to the card, header strain,stress
	Points    [][2]float64 `json:"points,omitempty"`  // [strain, stress] pairs, at least 2
	Tolerance *Tolerance   `json:"tolerance,omitempty"`
}

// Tolerance of a reference comparison.
type Tolerance struct {
	Rel float64 `json:"rel"` // > 0, relative to the peak absolute value of the compared quantity
}

// Derived holds values computed from the card, written by normalization in
// the card's stress unit. On input they are recomputed and compared.
type Derived struct {
	YieldStrain float64       `json:"yield_strain"`
	Kinematic   []DerivedTerm `json:"kinematic,omitempty"`
	// SaturationStress is yield_stress + sum C_i/gamma_i + Q: the stress that
	// monotonic loading approaches. Absent when a linear term (H > 0) or
	// linear isotropic hardening (K > 0) makes the stress unbounded.
	SaturationStress *float64 `json:"saturation_stress,omitempty"`
}

// DerivedTerm holds the derived values of one kinematic term: both moduli of
// a linear term, the saturation C/gamma of an Armstrong-Frederick term.
type DerivedTerm struct {
	PlasticModulus *float64 `json:"plastic_modulus,omitempty"`
	TangentModulus *float64 `json:"tangent_modulus,omitempty"`
	Saturation     *float64 `json:"saturation,omitempty"`
}
