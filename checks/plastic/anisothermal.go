package plastic

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
)

// Table is a temperature-dependent material: materials of the same form
// (the same number and kinds of back-stress terms, the same isotropic law)
// at strictly increasing temperatures, interpolated linearly in temperature
// between neighbours and not extrapolated. Build it with NewTable; the zero
// value is not usable.
type Table struct {
	T []float64  // kelvin, strictly increasing, at least 2
	M []Material // M[k] holds at T[k]
}

// ErrOutOfRange is returned (wrapped) when a temperature leaves a Table's
// range.
var ErrOutOfRange = errors.New("plastic: temperature outside the tabulated range")

// NewTable validates a temperature table: at least two strictly increasing
// finite temperatures, one valid material each, all of the same form.
func NewTable(T []float64, ms []Material) (Table, error) {
	if len(T) < 2 || len(T) != len(ms) {
		return Table{}, fmt.Errorf("plastic: table of %d temperatures and %d materials (want at least 2 of each, as many materials as temperatures)", len(T), len(ms))
	}
	for k := range T {
		if math.IsNaN(T[k]) || math.IsInf(T[k], 0) || (k > 0 && !(T[k] > T[k-1])) {
			return Table{}, fmt.Errorf("plastic: table temperature %d (%g K) is not finite and above the one before", k, T[k])
		}
		m := &ms[k]
		m.mustBeValid()
		a := &ms[0]
		if m.N != a.N || m.Iso.Kind != a.Iso.Kind {
			return Table{}, fmt.Errorf("plastic: the material at %g K has %d terms and isotropic law %v, the one at %g K %d and %v", T[k], m.N, m.Iso.Kind, T[0], a.N, a.Iso.Kind)
		}
		for i := 0; i < m.N; i++ {
			if m.Terms[i].Linear() != a.Terms[i].Linear() {
				return Table{}, fmt.Errorf("plastic: term %d is linear at one temperature and Armstrong-Frederick at another", i)
			}
		}
	}
	return Table{T: append([]float64(nil), T...), M: append([]Material(nil), ms...)}, nil
}

// At returns the material at T kelvin: M[k] itself at a tabulated
// temperature, and between T[k] and T[k+1], with w = (T - T[k])/(T[k+1] -
// T[k]), every parameter p (E, nu, sigmaY, each C and Gamma, K, Q, B) as
//
//	p(T) = (1 - w) p_k + w p_k+1,
//
// which is exact at both ends. Outside [T[0], T[len-1]] an error wrapping
// ErrOutOfRange.
func (tb *Table) At(T float64) (Material, error) {
	n := len(tb.T)
	if n == 0 {
		panic("plastic: Table not built by NewTable")
	}
	if !(T >= tb.T[0] && T <= tb.T[n-1]) {
		return Material{}, fmt.Errorf("%w: %g K is outside %g to %g K", ErrOutOfRange, T, tb.T[0], tb.T[n-1])
	}
	k := sort.SearchFloat64s(tb.T, T)
	if tb.T[k] == T {
		return tb.M[k], nil
	}
	a, b := &tb.M[k-1], &tb.M[k]
	w := (T - tb.T[k-1]) / (tb.T[k] - tb.T[k-1])
	lin := func(x, y float64) float64 { return (1-w)*x + w*y }
	var terms [MaxTerms]Term // on the stack: a step does not allocate
	for i := 0; i < a.N; i++ {
		terms[i] = Term{C: lin(a.Terms[i].C, b.Terms[i].C), Gamma: lin(a.Terms[i].Gamma, b.Terms[i].Gamma)}
	}
	iso := Isotropic{Kind: a.Iso.Kind, K: lin(a.Iso.K, b.Iso.K), Q: lin(a.Iso.Q, b.Iso.Q), B: lin(a.Iso.B, b.Iso.B)}
	return NewMaterial(lin(a.E, b.E), lin(a.Nu, b.Nu), lin(a.SigmaY, b.SigmaY), terms[:a.N], iso)
}

// StateT1D is the uniaxial state of an anisothermal history: the state of
// State1D and the temperature, kelvin, it holds at.
type StateT1D struct {
	State1D
	T float64
}

// StepT1D integrates the strain increment dEps during which the
// temperature goes from src.T to T1 (kelvin, in the table's range), and
// writes the end state to dst (dst may be src).
//
// Back-stress evolution, uniaxial, with the temperature-rate term of
// Chaboche (1989):
//
//	d alpha_i = C_i(T) d eps_p - gamma_i(T) alpha_i dp + (1/C_i) (dC_i/dT) alpha_i dT
//
// (linear terms: gamma_i = 0, C_i = H_i). The last term keeps alpha_i/C_i,
// the thermodynamic state variable of the term (alpha_i = C_i(T) a_i with
// the free energy C_i a_i^2/2, uniaxially), constant when there is no
// plastic flow. Its exact solution over any temperature change at dp = 0 is
//
//	alpha_i(T1) = alpha_i(T0) C_i(T1) / C_i(T0),
//
// whatever the path of C_i between T0 and T1. The stress is E(T) times the
// elastic strain, sigma = E(T) (eps - eps_p); strains are mechanical (the
// card has no thermal expansion: give the history's strain net of it).
// The isotropic hardening is R(p, T) at the current temperature.
//
// The step is split: first the temperature change at fixed plastic strain
// (alpha_i scaled by C_i(T1)/C_i(T0), sigma = E(T1) (eps_n - eps_p,n)),
// then Step1D of the material at T1 for dEps. So:
//   - a step with T1 = T0 is Step1D of the material at T0, bit for bit
//     (an isothermal history gives the isothermal result exactly);
//   - an elastic step is exact for any temperature change;
//   - a plastic step with a temperature change is first order in the step
//     (flow with the end-of-step parameters, the usual implicit choice).
//
// References:
//   - J.-L. Chaboche, Constitutive equations for cyclic plasticity and
//     cyclic viscoplasticity, Int. J. Plasticity 5 (1989) 247-302, the
//     anisothermal form of the nonlinear kinematic rule with the term
//     (1/C)(dC/dT) X dT (from memory; the equation number not checked).
//   - J.-L. Chaboche, A review of some plasticity and viscoplasticity
//     constitutive theories, Int. J. Plasticity 24 (2008) 1642-1693, which
//     restates the term and discusses the alternative in terms of the
//     saturation C/gamma (Ohno and Kachi, J. Appl. Mech. 53, 1986); from
//     memory.
func (tb *Table) StepT1D(dst, src *StateT1D, dEps, T1 float64, set *Settings) (StepInfo, error) {
	m1, s, err := tb.shift(src, T1)
	if err != nil {
		return StepInfo{}, err
	}
	info, err := m1.Step1D(&dst.State1D, &s, dEps, set)
	if err == nil {
		dst.T = T1
	}
	return info, err
}

// shift returns the material at T1 and the state src after the temperature
// change from src.T to T1 at fixed plastic strain (see StepT1D); src itself
// when T1 = src.T.
func (tb *Table) shift(src *StateT1D, T1 float64) (Material, State1D, error) {
	m1, err := tb.At(T1)
	if err != nil || T1 == src.T {
		return m1, src.State1D, err
	}
	m0, err := tb.At(src.T)
	if err != nil {
		return Material{}, State1D{}, err
	}
	s := src.State1D
	for i := 0; i < m1.N; i++ {
		s.Alpha[i] *= m1.Terms[i].C / m0.Terms[i].C
	}
	s.Sigma = m1.E * (s.Eps - s.EpsP)
	return m1, s, nil
}

// PointT is one target of an anisothermal history: the strain (or stress,
// by the path's Control) and the temperature, kelvin.
type PointT struct {
	Value, T float64
}

// RunT1D drives the table along an anisothermal strain- or
// stress-controlled history from s, as Run1D drives a material: each target
// is reached in the fewest equal increments no larger than maxInc in the
// controlled quantity and maxDT kelvin in temperature, the temperature
// moving linearly with the increments. Each increment is the temperature
// change (see StepT1D) followed by Run1D's increment of the material at the
// end temperature (Step1D, or Newton on the strain under stress control,
// with Run1D's cutbacks), so that a history at one temperature gives Run1D's
// result bit for bit. s is updated in place; visit (may be nil) sees every
// increment's end state. Errors: ctx's cancellation (ErrCanceled), a
// temperature outside the table (ErrOutOfRange), ErrNotConverged,
// ErrInvalidInput.
func (tb *Table) RunT1D(ctx context.Context, s *StateT1D, c Control, maxInc, maxDT float64, path []PointT, set *Settings, visit func(s *StateT1D)) (Result, error) {
	var res Result
	if !(maxInc > 0) || !(maxDT > 0) || math.IsInf(maxInc, 0) || math.IsInf(maxDT, 0) {
		return res, fmt.Errorf("%w: increments %g and %g K must be positive and finite", ErrInvalidInput, maxInc, maxDT)
	}
	done := ctx.Done()
	for _, p := range path {
		start := s.Eps
		if c == StressControl {
			start = s.Sigma
		}
		T0 := s.T
		n, nt := nIncrements(p.Value-start, maxInc), nIncrements(p.T-T0, maxDT)
		if n < 0 || nt < 0 || math.IsNaN(p.Value) || math.IsNaN(p.T) {
			return res, fmt.Errorf("%w: target %g at %g K", ErrInvalidInput, p.Value, p.T)
		}
		n = max(n, nt)
		for k := 1; k <= n; k++ {
			if canceled(done) {
				return res, ErrCanceled
			}
			to := start + (p.Value-start)*float64(k)/float64(n)
			T := T0 + (p.T-T0)*float64(k)/float64(n)
			if k == n {
				to, T = p.Value, p.T
			}
			m, shifted, err := tb.shift(s, T)
			if err != nil {
				return res, err
			}
			if err := m.advance1D(&shifted, c, to, set, &res, 0); err != nil {
				return res, err
			}
			s.State1D, s.T = shifted, T
			if visit != nil {
				visit(s)
			}
		}
	}
	return res, nil
}
