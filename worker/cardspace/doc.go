// Package cardspace generates random plausible material cards, seeded, for
// the card-space tests: every model combination (0 to 4
// Armstrong-Frederick terms, an optional linear term given as tangent or
// plastic modulus, no, linear or Voce isotropic hardening), every stress
// and temperature unit, and parameter ranges of structural steels,
// stainless steels, aluminium, titanium and nickel alloys. The ranges are
// our own, from memory of handbook property tables (e.g. ASM Handbook
// vols. 1 and 2) and of published Chaboche fits; they are wide on purpose.
// The cards are test inputs, not material data: never for design.
package cardspace
