// Package convert turns a decoded card into its canonical form: SI units
// (stress in Pa, temperature in K), one parameter form for each law, every
// verification default written out, a derived block and a digest. It also
// holds the plausibility checks that need units, and the conversion of a
// canonical card into the integrator's material. A temperature-dependent
// card is normalized temperature by temperature and checked across
// temperature (temperature.go); At gives its canonical card at any
// temperature in range, MaterialTable the integrator's table.
package convert
