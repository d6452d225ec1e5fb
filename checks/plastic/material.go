package plastic

import (
	"fmt"
	"math"
)

// MaxTerms is the largest number of back-stress terms a Material holds. The
// arrays are fixed-size so that states are plain values and steps do not
// allocate.
const MaxTerms = 10

// Term is one back-stress term. An Armstrong-Frederick term has C > 0 and
// Gamma > 0 (saturation C/Gamma); a linear (Prager) term has Gamma = 0 and
// C = H, the plastic modulus, H = E Et / (E - Et) for a tangent modulus Et.
//
// Uniaxial evolution (3D form in the package documentation):
//
//	d alpha_i = C d eps_p - Gamma alpha_i |d eps_p|
type Term struct {
	C     float64 // Pa
	Gamma float64 // dimensionless
}

// Linear reports whether t is a linear (Prager) term.
func (t Term) Linear() bool { return t.Gamma == 0 }

// IsoKind selects the isotropic hardening law.
type IsoKind int

// Isotropic hardening laws.
const (
	IsoNone   IsoKind = iota // R(p) = 0
	IsoLinear                // R(p) = K p
	IsoVoce                  // R(p) = Q (1 - exp(-B p))
)

// String returns the name of the law.
func (k IsoKind) String() string {
	switch k {
	case IsoNone:
		return "none"
	case IsoLinear:
		return "linear"
	case IsoVoce:
		return "voce"
	}
	return fmt.Sprintf("IsoKind(%d)", int(k))
}

// Isotropic is the isotropic hardening law R(p) of the accumulated plastic
// strain p. Only the fields of the selected Kind are used and the others
// must be zero.
type Isotropic struct {
	Kind IsoKind
	K    float64 // IsoLinear: modulus, Pa, K >= 0
	Q    float64 // IsoVoce: saturation, Pa; Q < 0 is cyclic softening, needs SigmaY + Q > 0
	B    float64 // IsoVoce: rate, dimensionless, B > 0
}

// Material is a validated elastic-plastic material. Build it with
// NewMaterial; the zero value is not usable and a Material must not be
// modified after construction (the steps read cached derived values).
type Material struct {
	E      float64 // Young's modulus, Pa
	Nu     float64 // Poisson ratio
	SigmaY float64 // initial yield stress, Pa
	N      int     // number of back-stress terms in Terms
	Terms  [MaxTerms]Term
	Iso    Isotropic

	// Derived, cached by NewMaterial.
	g, bulk float64 // shear and bulk modulus
	hLin    float64 // sum of C over linear terms
	nAF     int
	af      [MaxTerms]int8    // indices of Armstrong-Frederick terms
	afC     [MaxTerms]float64 // C, gamma and C/gamma of the AF terms, compact
	afG     [MaxTerms]float64
	afA     [MaxTerms]float64
	nLin    int
	lin     [MaxTerms]int8 // indices of linear terms
	linear  bool           // no AF term and no Voce: consistency is linear in dp
	valid   bool
}

// MaterialError says which parameter of a material is invalid and why.
type MaterialError struct {
	Field  string  // e.g. "E", "Terms[1].Gamma", "Iso.Q"
	Value  float64 // the offending value
	Reason string
}

func (e *MaterialError) Error() string {
	return fmt.Sprintf("plastic: invalid material: %s = %g: %s", e.Field, e.Value, e.Reason)
}

// NewMaterial validates the parameters and returns the Material. An invalid
// parameter is reported as a *MaterialError (the first one found; card-level
// validation reporting every error belongs to the card checks).
//
// Preconditions checked: E > 0 and finite; 0 <= nu < 0.5; 0 < sigmaY; at most
// MaxTerms terms, each with C > 0 and Gamma >= 0; K >= 0; B > 0,
// sigmaY + Q > 0 and E + Q B > 0 for Voce (the last keeps the consistency
// condition solvable for a softening law, since the plastic modulus is never
// below Q B).
//
// Limitation: the 3D state stores stresses, so for nu very close to 0.5
// (above about 0.49) the bulk modulus E/(3(1 - 2 nu)) makes the pressure of
// any volume change so large that the stress deviator is lost to round-off
// (found by FuzzStep). Nearly incompressible cards need a mixed
// formulation, which this package does not have.
func NewMaterial(E, nu, sigmaY float64, terms []Term, iso Isotropic) (Material, error) {
	var m Material
	bad := func(field string, v float64, why string) (Material, error) {
		return Material{}, &MaterialError{Field: field, Value: v, Reason: why}
	}
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	switch {
	case !finite(E) || E <= 0:
		return bad("E", E, "must be positive and finite")
	case !finite(nu) || nu < 0 || nu >= 0.5:
		return bad("Nu", nu, "must be in [0, 0.5)")
	case !finite(sigmaY) || sigmaY <= 0:
		return bad("SigmaY", sigmaY, "must be positive and finite")
	case len(terms) > MaxTerms:
		return bad("len(Terms)", float64(len(terms)), fmt.Sprintf("at most %d terms", MaxTerms))
	}
	m.E, m.Nu, m.SigmaY = E, nu, sigmaY
	for i, t := range terms {
		if !finite(t.C) || t.C <= 0 {
			return bad(fmt.Sprintf("Terms[%d].C", i), t.C, "must be positive and finite")
		}
		if !finite(t.Gamma) || t.Gamma < 0 {
			return bad(fmt.Sprintf("Terms[%d].Gamma", i), t.Gamma, "must be >= 0 and finite (0 is a linear term)")
		}
		m.Terms[i] = t
		if t.Linear() {
			m.lin[m.nLin] = int8(i)
			m.nLin++
			m.hLin += t.C
		} else {
			m.af[m.nAF] = int8(i)
			m.afC[m.nAF], m.afG[m.nAF], m.afA[m.nAF] = t.C, t.Gamma, t.C/t.Gamma
			m.nAF++
		}
	}
	m.N = len(terms)
	switch iso.Kind {
	case IsoNone:
		if iso.K != 0 || iso.Q != 0 || iso.B != 0 {
			return bad("Iso", iso.K+iso.Q+iso.B, "parameters given without a law")
		}
	case IsoLinear:
		if !finite(iso.K) || iso.K < 0 {
			return bad("Iso.K", iso.K, "must be >= 0 and finite")
		}
		if iso.Q != 0 || iso.B != 0 {
			return bad("Iso.Q", iso.Q, "Q and B belong to the Voce law")
		}
	case IsoVoce:
		switch {
		case !finite(iso.Q):
			return bad("Iso.Q", iso.Q, "must be finite")
		case !finite(iso.B) || iso.B <= 0:
			return bad("Iso.B", iso.B, "must be positive and finite")
		case sigmaY+iso.Q <= 0:
			return bad("Iso.Q", iso.Q, "SigmaY + Q must be positive (the yield surface must not vanish)")
		case E+iso.Q*iso.B <= 0:
			return bad("Iso.Q", iso.Q, "E + Q B must be positive (softening faster than elastic unloading)")
		case iso.K != 0:
			return bad("Iso.K", iso.K, "K belongs to the linear law")
		}
	default:
		return bad("Iso.Kind", float64(iso.Kind), "unknown isotropic law")
	}
	m.Iso = iso
	m.g = E / (2 * (1 + nu))
	m.bulk = E / (3 * (1 - 2*nu))
	m.linear = m.nAF == 0 && iso.Kind != IsoVoce
	m.valid = true
	return m, nil
}

// ShearModulus returns G = E / (2 (1 + nu)).
func (m *Material) ShearModulus() float64 { return m.g }

// BulkModulus returns K = E / (3 (1 - 2 nu)).
func (m *Material) BulkModulus() float64 { return m.bulk }

// R returns the isotropic hardening R(p).
func (m *Material) R(p float64) float64 {
	switch m.Iso.Kind {
	case IsoLinear:
		return m.Iso.K * p
	case IsoVoce:
		return m.Iso.Q * -math.Expm1(-m.Iso.B*p)
	}
	return 0
}

// YieldRadius returns the uniaxial yield stress sigmaY + R(p) at accumulated
// plastic strain p.
func (m *Material) YieldRadius(p float64) float64 { return m.SigmaY + m.R(p) }

// SaturationStress returns the stress that monotonic uniaxial loading
// approaches from any admissible state,
//
//	sigma_sat = sigmaY + sum_i C_i/gamma_i + Q   (Q = 0 without Voce),
//
// or +Inf when a linear term or linear isotropic hardening with K > 0 makes
// the stress unbounded. With Q < 0 the stress may pass above sigma_sat on the
// way (a peak, then softening); sigma_sat is still the limit.
func (m *Material) SaturationStress() float64 {
	if m.nLin > 0 || (m.Iso.Kind == IsoLinear && m.Iso.K > 0) {
		return math.Inf(1)
	}
	s := m.SigmaY
	for j := 0; j < m.nAF; j++ {
		t := m.Terms[m.af[j]]
		s += t.C / t.Gamma
	}
	if m.Iso.Kind == IsoVoce {
		s += m.Iso.Q
	}
	return s
}

func (m *Material) mustBeValid() {
	if !m.valid {
		panic("plastic: Material not built by NewMaterial")
	}
}

// u is the unit round-off of float64, 2^-53.
const u = 0x1p-53

// moveExpm1 returns exp(-rate dp) - 1 at dp from em, its value at
// dp - delta. Small moves (|rate delta| <= 1e-3, the late iterates of the
// iterations on dp) update em by the factor exp(-rate delta) from the
// Taylor series to x^6 (truncation below |x|^7/5040 ~ 2e-25 |x|, under the
// round-off of math.Expm1), several times cheaper than math.Expm1; larger
// moves evaluate math.Expm1 afresh. Carrying exp(x) - 1 rather than exp(x)
// keeps a tiny dp moving the factor (1 + x would round to 1).
func moveExpm1(em, rate, dp, delta float64) float64 {
	x := -rate * delta
	if x > 1e-3 || x < -1e-3 {
		return math.Expm1(-rate * dp)
	}
	return em + (1+em)*x*(1+x*(0.5+x*(1.0/6+x*(1.0/24+x*(1.0/120+x*(1.0/720))))))
}
