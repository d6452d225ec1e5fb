package convert

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"math"

	"github.com/gowebpki/jcs"

	"matgate/schema"
)

// Options tune Normalize. A nil *Options means the defaults below.
type Options struct {
	// ReadFile reads a reference curve named by a card's `file` field,
	// relative to the card. Nil: a reference given as a file is an error.
	ReadFile func(name string) ([]byte, error)
}

// FieldError is a normalization error tied to one field of the card.
type FieldError struct {
	Pointer string // JSON pointer of the field
	Err     error
}

func (e *FieldError) Error() string { return e.Pointer + ": " + e.Err.Error() }
func (e *FieldError) Unwrap() error { return e.Err }

// Normalize returns the canonical form of a card that passed the schema:
//
//   - stress-like values in Pa and the temperature in K, each rounded to 15
//     significant digits (see canonicalDigits);
//   - linear kinematic terms in plastic_modulus form, H = E Et / (E - Et);
//   - every verification default written out (see Defaults), reference
//     files read and inlined as points, each reference with its control and
//     tolerance;
//   - the derived block and the digest.
//
// The canonical card is itself a valid card, and Normalize(Normalize(c))
// equals Normalize(c). c is not modified.
func Normalize(c *schema.Card, opts *Options) (*schema.Card, error) {
	if opts == nil {
		opts = &Options{}
	}
	f, err := StressFactor(c.Units.Stress)
	if err != nil {
		return nil, &FieldError{Pointer: "/units/stress", Err: err}
	}
	s := func(v float64) float64 { return round15(v * f) }
	sp := func(v *float64) *float64 {
		if v == nil {
			return nil
		}
		return ptr(s(*v))
	}

	n := &schema.Card{
		Format:   schema.Format,
		ID:       c.ID,
		Revision: c.Revision,
		Title:    c.Title,
		Source:   c.Source,
		Units:    schema.Units{Stress: "Pa"},
		Elastic: schema.Elastic{
			YoungsModulus: s(c.Elastic.YoungsModulus),
			PoissonRatio:  c.Elastic.PoissonRatio,
		},
	}
	if c.Temperature != nil {
		tk, err := KelvinFrom(*c.Temperature, c.Units.Temperature)
		if err != nil {
			return nil, &FieldError{Pointer: "/units/temperature", Err: err}
		}
		n.Temperature = ptr(round15(tk))
		n.Units.Temperature = "K"
	}

	E := n.Elastic.YoungsModulus
	n.Plasticity.YieldStress = s(c.Plasticity.YieldStress)
	for i, t := range c.Plasticity.Kinematic {
		switch {
		case t.Model == schema.ModelLinear && t.TangentModulus != nil:
			Et := s(*t.TangentModulus)
			if Et >= E {
				return nil, &FieldError{Pointer: fmt.Sprintf("/plasticity/kinematic/%d/tangent_modulus", i),
					Err: fmt.Errorf("tangent modulus %g Pa is not below Young's modulus %g Pa", Et, E)}
			}
			n.Plasticity.Kinematic = append(n.Plasticity.Kinematic, schema.KinematicTerm{
				Model: schema.ModelLinear, PlasticModulus: ptr(round15(TangentToPlastic(E, Et)))})
		case t.Model == schema.ModelLinear:
			n.Plasticity.Kinematic = append(n.Plasticity.Kinematic, schema.KinematicTerm{
				Model: schema.ModelLinear, PlasticModulus: sp(t.PlasticModulus)})
		default:
			n.Plasticity.Kinematic = append(n.Plasticity.Kinematic, schema.KinematicTerm{
				Model: t.Model, C: sp(t.C), Gamma: t.Gamma})
		}
	}
	if iso := c.Plasticity.Isotropic; iso != nil {
		n.Plasticity.Isotropic = &schema.Isotropic{Model: iso.Model, Modulus: sp(iso.Modulus), Q: sp(iso.Q), B: iso.B}
	}

	v, err := verificationDefaults(n, c.Verification, f, opts)
	if err != nil {
		return nil, err
	}
	n.Verification = v

	d := Derive(n)
	n.Derived = &d
	if n.Digest, err = Digest(n); err != nil {
		return nil, err
	}
	return n, nil
}

// Derive computes the derived block of a card, in the card's own units.
// It ignores any derived block the card already has.
func Derive(c *schema.Card) schema.Derived {
	E := c.Elastic.YoungsModulus
	d := schema.Derived{YieldStrain: c.Plasticity.YieldStress / E}
	sat := c.Plasticity.YieldStress
	bounded := true
	for _, t := range c.Plasticity.Kinematic {
		var dt schema.DerivedTerm
		switch {
		case t.Model == schema.ModelLinear:
			H := 0.0
			if t.PlasticModulus != nil {
				H = *t.PlasticModulus
			} else if t.TangentModulus != nil {
				H = TangentToPlastic(E, *t.TangentModulus)
			}
			dt.PlasticModulus = ptr(H)
			dt.TangentModulus = ptr(PlasticToTangent(E, H))
			if H > 0 {
				bounded = false
			}
		case t.C != nil && t.Gamma != nil:
			dt.Saturation = ptr(*t.C / *t.Gamma)
			sat += *dt.Saturation
		}
		d.Kinematic = append(d.Kinematic, dt)
	}
	if iso := c.Plasticity.Isotropic; iso != nil {
		switch {
		case iso.Model == schema.ModelLinear && iso.Modulus != nil && *iso.Modulus > 0:
			bounded = false
		case iso.Model == schema.ModelVoce && iso.Q != nil:
			sat += *iso.Q
		}
	}
	if bounded {
		d.SaturationStress = ptr(sat)
	}
	return d
}

// Digest returns "sha256:" and the hex sha256 of the RFC 8785 (JSON
// Canonicalization Scheme) encoding of c without its derived block and
// digest. It is meaningful for a canonical card.
func Digest(c *schema.Card) (string, error) {
	bare := *c
	bare.Derived = nil
	bare.Digest = ""
	b, err := Canonical(&bare)
	if err != nil {
		return "", err
	}
	sum := sha256.Sum256(b)
	return "sha256:" + hex.EncodeToString(sum[:]), nil
}

// Canonical returns the RFC 8785 encoding of c.
func Canonical(c *schema.Card) ([]byte, error) {
	raw, err := json.Marshal(c)
	if err != nil {
		return nil, fmt.Errorf("encode card: %w", err)
	}
	out, err := jcs.Transform(raw)
	if err != nil {
		return nil, fmt.Errorf("canonicalize card: %w", err)
	}
	return out, nil
}

// Indented returns the canonical encoding of c, indented for reading; the
// key order is the canonical one.
func Indented(c *schema.Card) ([]byte, error) {
	b, err := Canonical(c)
	if err != nil {
		return nil, err
	}
	return Indent(b)
}

// Indent returns canonical JSON (as Canonical returns it) indented for
// reading, without encoding it again: the neutral card of a verification
// that already has the card's canonical form.
func Indent(b []byte) ([]byte, error) {
	var buf bytes.Buffer
	if err := json.Indent(&buf, b, "", "  "); err != nil {
		return nil, err
	}
	buf.WriteByte('\n')
	return buf.Bytes(), nil
}

func ptr[T any](v T) *T { return &v }

// relClose reports whether a and b agree to rel relative (to the larger
// magnitude); used to compare recomputed values with those a card states.
func relClose(a, b, rel float64) bool {
	return math.Abs(a-b) <= rel*math.Max(math.Abs(a), math.Abs(b))
}
