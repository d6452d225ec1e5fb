package worker

import (
	"context"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
)

// StressUnits are the stress units a card may be written in, for the
// misreadings of checks.Diagnose that depend on them (a stress unit of the
// reference, c and gamma swapped in the card's unit).
func StressUnits() []checks.Unit {
	us := make([]checks.Unit, 0, len(convert.StressUnits))
	for _, n := range convert.StressUnits {
		f, err := convert.StressFactor(n)
		if err != nil {
			panic("worker: convert.StressUnits lists " + n + " without a factor") // a programmer error
		}
		us = append(us, checks.Unit{Name: n, Pa: f})
	}
	return us
}

// Wording returns how the card as written (decoded, before normalization)
// gives the values a diagnosis speaks of: its stress unit and which linear
// terms it writes as a tangent modulus. An unknown unit words in Pa.
func Wording(written *schema.Card) checks.Wording {
	var w checks.Wording
	if f, err := convert.StressFactor(written.Units.Stress); err == nil {
		w.Unit = checks.Unit{Name: written.Units.Stress, Pa: f}
	}
	for _, t := range written.Plasticity.Kinematic {
		w.Tangent = append(w.Tangent, t.TangentModulus != nil)
	}
	return w
}

// Diagnoses runs the diagnosis of a canonical card's reference curves
// alone, as Verify does, for a client that holds a record (whose findings
// are worded canonically) and the card as written, to word the findings
// as the card is written (Describe with Wording).
func Diagnoses(ctx context.Context, c *schema.Card) ([]checks.Diagnosis, error) {
	spec, err := Spec(c)
	if err != nil {
		return nil, err
	}
	return checks.Diagnose(ctx, spec, StressUnits())
}
