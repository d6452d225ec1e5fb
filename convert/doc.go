// Package convert turns a decoded card into its canonical form: SI units
// (stress in Pa, temperature in K), one parameter form for each law, every
// verification default written out, a derived block and a digest. It also
// holds the plausibility checks that need units, and the conversion of a
// canonical card into the integrator's material.
package convert
