package worker

import (
	"context"
	"errors"
	"fmt"
	"time"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
)

// Spec maps a canonical card (as convert.Normalize writes it: SI units,
// every default written out) to the verification spec.
func Spec(c *schema.Card) (checks.Spec, error) {
	m, err := convert.Material(c)
	if err != nil {
		return checks.Spec{}, err
	}
	v := c.Verification
	if v == nil || v.MonotonicStrain == nil || v.Cycles == nil {
		return checks.Spec{}, fmt.Errorf("spec of card %s: not canonical (verification defaults missing)", c.ID)
	}
	s := checks.Spec{
		Material:         m,
		Profile:          v.Profile,
		MonotonicStrain:  *v.MonotonicStrain,
		StrainAmplitudes: append([]float64(nil), v.StrainAmplitudes...),
		Cycles:           *v.Cycles,
	}
	if r := v.Ratcheting; r != nil {
		s.Ratcheting = &checks.Ratcheting{MeanStress: r.MeanStress, StressAmplitude: r.StressAmplitude, Cycles: r.Cycles}
	}
	for _, r := range v.References {
		ref := checks.Reference{Name: r.Name, Kind: r.Kind, Control: r.Control, Points: r.Points}
		if r.Tolerance != nil {
			ref.Tol = r.Tolerance.Rel
		}
		s.References = append(s.References, ref)
	}
	return s, nil
}

// Outputs are what one verification produces.
type Outputs struct {
	Record *checks.Record
	// RecordJSON is Record in its stored form (RecordJSON), made with
	// it from one encoding; a change to Record (Sign) needs RecordJSON
	// again.
	RecordJSON []byte
	Card       []byte          // the neutral card: the canonical card, indented JSON
	Tables     []convert.Table // tabulated curves of the neutral card
	// Diagnoses say, for each reference curve, which usual misreading of
	// the card explains its failure, or matches it far better than the card
	// as written although it passes (see checks.Diagnose). The record's
	// Findings carry them, worded canonically.
	Diagnoses []checks.Diagnosis
}

// Verify runs the standard verification of a canonical card and the
// diagnosis of its reference curves (findings), and builds its record and
// neutral card. A failed verification is a result (the record's verdict),
// not an error; errors are cancellation, a card the verification cannot
// take (wrapping checks.ErrInvalidSpec, such as a reference too long to
// replay) and internal failures.
func Verify(ctx context.Context, c *schema.Card, tool checks.Tool, created time.Time) (*Outputs, error) {
	spec, err := Spec(c)
	if err != nil {
		return nil, err
	}
	res, err := checks.Run(ctx, spec)
	if err != nil {
		return nil, fmt.Errorf("verify %s: %w", c.ID, err)
	}
	diags, err := checks.Diagnose(ctx, spec, StressUnits())
	if err != nil {
		return nil, fmt.Errorf("diagnose %s: %w", c.ID, err)
	}
	for _, d := range diags {
		res.Findings = append(res.Findings, d.Finding())
	}
	canon, err := convert.Canonical(c)
	if err != nil {
		return nil, err
	}
	rec, recJSON, err := checks.NewRecordJSON(res, checks.RecordCard{ID: c.ID, Revision: c.Revision, Digest: c.Digest, Canonical: canon}, tool, created)
	if err != nil {
		return nil, fmt.Errorf("record of %s: %w", c.ID, err)
	}
	card, err := convert.Indent(canon)
	if err != nil {
		return nil, err
	}
	tables, err := convert.Tables(ctx, c)
	if err != nil {
		return nil, err
	}
	return &Outputs{Record: rec, RecordJSON: append(recJSON, '\n'), Card: card, Tables: tables, Diagnoses: diags}, nil
}

// SpecDiagnostic words a spec that the verification refused
// (checks.ErrInvalidSpec) as a diagnostic of the card: located at the
// card's reference when it is about one (the spec's references are the
// card's, in order: Spec), else at the card.
func SpecDiagnostic(doc *schema.Document, err error) schema.Diagnostic {
	var se *checks.SpecError
	var i int
	if errors.As(err, &se) {
		if _, serr := fmt.Sscanf(se.Field, "References[%d]", &i); serr == nil {
			return doc.Diag(schema.SeverityError, fmt.Sprintf("/verification/references/%d", i), "%s", se.Reason)
		}
	}
	return doc.Diag(schema.SeverityError, "", "the verification cannot take this card: %v", err)
}
