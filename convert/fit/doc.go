// Package fit calibrates a card's plasticity parameters to uniaxial test
// data by least squares: the reference integrator (checks/plastic) is driven
// along each data file's own strain history, monotonic or cyclic, and the
// squared stress errors are summed and minimized with gonum's optimize
// (Gauss-Newton steps through optimize.Newton with the Hessian J^T J).
// Positivity is kept by fitting logarithms, and the saturations inside the
// plausible bound of convert.MaxHardening, so that a fitted card passes
// check; start values come from closed forms. A fit shows that a card
// reproduces its data; it does not show fitness for design, which stays
// with the applicable codes and licensed engineers.
package fit
