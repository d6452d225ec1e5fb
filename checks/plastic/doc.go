// Package plastic is matgate's reference integrator: small-strain,
// rate-independent elastoplasticity with kinematic hardening as a sum of
// back-stress terms (linear Prager terms and Armstrong-Frederick terms, hence
// Chaboche's N-term model) and optional isotropic hardening (linear or
// Voce), in 1D (uniaxial stress) and 3D (J2, von Mises, associative flow),
// with load-path drivers under strain, stress and mixed control.
//
// # Notation and units
//
// SI units throughout: stresses and moduli in Pa, strains dimensionless.
// Tension and extension are positive. E is Young's modulus, nu Poisson's
// ratio, G = E/(2(1+nu)), K = E/(3(1-2nu)); sigmaY the initial yield stress;
// p the accumulated plastic strain; R(p) the isotropic hardening,
//
//	R(p) = 0,   K_iso p,   or   Q (1 - exp(-b p))   (Voce; Q < 0 softens).
//
// Each back-stress term i has C_i and gamma_i (gamma_i = 0, C_i = H for a
// linear term, H = E Et/(E - Et) from the tangent modulus Et).
//
// # 1D
//
//	alpha = sum_i alpha_i,   d alpha_i = C_i d eps_p - gamma_i alpha_i |d eps_p|,
//	f = |sigma - alpha| - (sigmaY + R(p)) <= 0,   dp = |d eps_p|.
//
// # 3D and the 2/3 factor
//
//	dX_i = (2/3) C_i d eps_p - gamma_i X_i dp,   dp = sqrt(2/3 d eps_p : d eps_p),
//	f = sqrt(3/2 (s - X) : (s - X)) - (sigmaY + R(p)),
//
// s the stress deviator. The factors 2/3 and 3/2 make a uniaxial stress path
// in 3D reduce exactly to the 1D model with alpha = (3/2) X_11 and
// eps_p = eps_p,11: the 1D and 3D parameters are the same numbers.
//
// # Voigt order and shear
//
// Symmetric tensors are [6]float64 in the order 11, 22, 33, 23, 13, 12
// (constants V11 ... V12). Stress-like vectors (stress, back stress) hold
// tensor components; strain-like vectors (strain, plastic strain, strain
// increments) hold engineering shear strains gamma_ij = 2 eps_ij in the
// shear slots. Tangents are [6][6]float64 with d sigma = D d eps in that
// convention. Contract computes a : b of two stress-like vectors.
//
// # Steps and what they mutate
//
// State1D and State3D are plain values with fixed-size arrays. Step1D and
// Step3D read a source state and a strain increment and write the end state
// (and, in 3D, the tangent) into destinations supplied by the caller; the
// destination may be the source. They do not allocate, and on error they
// leave the destination unchanged. Material values are read-only after
// NewMaterial. Two algorithms: Exact (default; in 1D the exact solution for
// a piecewise-linear strain path, independent of the increment size) and
// BackwardEuler (first order). In 3D, Exact is exact for proportional
// (coaxial) increments and error-controlled (Richardson-Romberg
// extrapolation with substepping, Settings.SubstepTol) for the others. Step1D and Step3D
// document the equations. A Material and the step functions hold no
// mutable shared state, so goroutines may share one Material.
//
// # Drivers
//
// Run1D and Run3D walk a path of straight segments, each cut into the fewest
// equal increments no larger than the stated size (always an input, reported
// in the Result). They call a visitor after each increment, check the
// context between increments, halve an increment whose Newton iteration
// fails, and report counters and a Status; failures are *PathError values
// that wrap ErrNotConverged, ErrBeyondSaturation, ErrCanceled or
// ErrInvalidInput. No result is a silent NaN.
//
// # Temperature
//
// A Table holds materials of one form at increasing temperatures (kelvin)
// and interpolates every parameter linearly between neighbours, with no
// extrapolation (ErrOutOfRange). StepT1D and RunT1D integrate uniaxial
// anisothermal histories: the back stress carries Chaboche's (1989)
// temperature-rate term (1/C_i)(dC_i/dT) alpha_i dT, integrated exactly as
// the factor C_i(T1)/C_i(T0) at fixed plastic strain, then the increment
// of the material at the end temperature; a history at one temperature is
// Run1D's, bit for bit. See StepT1D.
//
// # References
//
//   - W. Prager, A new method of analyzing stresses and strains in
//     work-hardening plastic solids, J. Appl. Mech. 23, 1956.
//   - P. J. Armstrong and C. O. Frederick, A mathematical representation of
//     the multiaxial Bauschinger effect, CEGB report RD/B/N731, 1966.
//   - E. Voce, The relationship between stress and strain for homogeneous
//     deformation, J. Inst. Metals 74, 1948.
//   - J. Lemaitre and J.-L. Chaboche, Mechanics of Solid Materials, 1990.
//   - J.-L. Chaboche, Constitutive equations for cyclic plasticity and
//     cyclic viscoplasticity, Int. J. Plasticity 5, 1989 (the
//     temperature-rate term of the back stress).
//   - J.-L. Chaboche, A review of some plasticity and viscoplasticity
//     constitutive theories, Int. J. Plasticity 24, 2008.
//   - J. C. Simo and T. J. R. Hughes, Computational Inelasticity, 1998.
//   - M. Kobayashi and N. Ohno, Implementation of cyclic plasticity models
//     based on a general form of kinematic hardening, Int. J. Numer. Meth.
//     Engng 53, 2002.
//   - J. Lubliner, Plasticity Theory, 1990.
//
// Verification by this package shows that a material is integrated
// consistently; it does not show fitness for design, which stays with the
// applicable codes and licensed engineers.
package plastic
