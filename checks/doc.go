// Package checks runs the standard verification cases of a material on the
// reference integrator (matgate/checks/plastic), compares every result with a
// closed form, a numerical invariant or one of the card's reference curves
// within a derived tolerance, and writes the verification record
// (matgate.record/2; matgate.record/1 is still read) with its digest and
// optional ed25519 signature. The record's JSON form is its RFC 8785
// encoding, written directly from the record's fields (canonical.go).
//
// Units are SI throughout: stresses in Pa, energies per volume in J/m^3,
// strains dimensionless. Tension is positive.
//
// Run(ctx, spec) is the entry point. A failed check is a result (Verdict
// "fail"), never an error; errors are cancellation (ErrCanceled), an invalid
// Spec (*SpecError) and integrator failures (*CaseError). Diagnose(ctx,
// spec, units) replays each reference curve under the usual misreadings of
// a card (Misreading) with the same comparison, for the record's findings:
// which one explains a failed reference, or matches a passing one far
// better than the card as written.
//
// Every closed-form reference names its source beside it (author, title,
// year, equation); formulas derived in this package say "derived here" and
// carry the derivation in a comment. Every tolerance carries the reason for
// its size (Check.ToleranceBasis); see profile.go for the error model.
//
// Verification shows that a card is integrated consistently and matches its
// references; it does not show fitness for design (see Caution).
package checks
