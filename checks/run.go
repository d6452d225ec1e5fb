package checks

import (
	"context"
	"errors"
	"fmt"
	"math"
)

// Run resolves the spec's defaults and runs every case. ctx is checked
// between load increments. A failed check is a result (Verdict "fail"), not
// an error; errors are ErrCanceled (wrapped with ctx's error), *SpecError
// and *CaseError.
//
// Every case runs twice, at the profile's increments and at half of them;
// the rerun adds the case's step-size convergence check (see
// addConvergence) and is otherwise discarded.
func Run(ctx context.Context, spec Spec) (*Result, error) {
	spec, err := spec.Resolve()
	if err != nil {
		return nil, err
	}
	return newVerifier(spec).run(ctx)
}

// run runs every case of the resolved spec of v.
func (v *verifier) run(ctx context.Context) (*Result, error) {
	res := &Result{Settings: v.settings()}
	for _, cs := range v.cases() {
		if cs.skip != "" {
			res.Cases = append(res.Cases, Case{Name: cs.name, Kind: cs.kind, Loading: cs.loading, Skipped: cs.skip, Checks: []Check{}})
			continue
		}
		c, set, err := cs.fn(ctx, 1)
		if err == nil {
			var fine Case
			var fset CaseSetting
			fine, fset, err = cs.fn(ctx, 2)
			if err == nil {
				set.Rerun = fset.Increments
				addConvergence(&c, &fine)
			}
		}
		if err != nil {
			if errors.Is(err, ErrCanceled) {
				return nil, err
			}
			return nil, &CaseError{Case: cs.name, Err: err}
		}
		if c.Checks == nil {
			c.Checks = []Check{}
		}
		res.Cases = append(res.Cases, c)
		res.Settings.Cases = append(res.Settings.Cases, set)
	}
	res.Verdict = VerdictOf(res.Cases)
	return res, nil
}

type caseSpec struct {
	name, kind, loading string
	skip                string
	fn                  caseFn
}

func (v *verifier) cases() []caseSpec {
	cs := []caseSpec{
		{name: "monotonic-tension", fn: v.monotonic(1)},
		{name: "monotonic-compression", fn: v.monotonic(-1)},
	}
	for _, a := range v.spec.StrainAmplitudes {
		cs = append(cs, caseSpec{name: "cyclic-" + fmtG(a), fn: v.cyclic(a)})
	}
	if r := v.spec.Ratcheting; r == nil {
		cs = append(cs, caseSpec{name: "ratcheting", kind: "stress-controlled-ratcheting", loading: "stress-controlled cycling with a mean stress", skip: "the spec gives no ratcheting loading (mean stress, stress amplitude)"})
	} else if v.m.N == 0 {
		cs = append(cs, caseSpec{name: "ratcheting", kind: "stress-controlled-ratcheting", loading: "stress-controlled cycling with a mean stress", skip: "the card has no kinematic hardening: ratcheting is not defined by it"})
	} else {
		cs = append(cs, caseSpec{name: "ratcheting", fn: v.ratcheting})
	}
	cs = append(cs, caseSpec{name: "mean-strain-relaxation", fn: v.relaxation})
	cs = append(cs,
		caseSpec{name: "3d-uniaxial-stress", fn: v.uniaxial3D},
		caseSpec{name: "3d-pure-shear", fn: v.pureShear},
		caseSpec{name: "3d-circular-strain-path", fn: v.circle})
	for _, r := range v.spec.References {
		cs = append(cs, caseSpec{name: "reference-" + r.Name, fn: v.reference(r)})
	}
	return cs
}

func (v *verifier) settings() Settings {
	s := v.spec
	refs := make([]Reference, len(s.References))
	copy(refs, s.References)
	return Settings{
		Profile:          s.Profile,
		Algorithm:        v.set.Algorithm.String(),
		StrainIncrement:  v.hEps,
		StressIncrement:  v.hSig,
		SubstepTol:       v.prof.substepTol,
		DriverTol:        v.prof.driverTol,
		AngleIncrements:  v.prof.angleInc,
		MonotonicStrain:  s.MonotonicStrain,
		StrainAmplitudes: s.StrainAmplitudes,
		Cycles:           s.Cycles,
		Ratcheting:       s.Ratcheting,
		Relaxation:       s.Relaxation,
		References:       refs,
		Cases:            []CaseSetting{},
		Refinement:       "every case is rerun with every increment halved (twice the increments) for the step-size convergence check",
		StabilizedCycle:  StabilizedCycleDefinition,
	}
}

// addConvergence appends the step-size convergence check of c from its
// rerun at half the increment. For each checked or tracked quantity q with tolerance
// t(h) at the increment h (each a bound on the distance of q(h) from the
// true value when its check passes), the triangle inequality gives
//
//	|q(h/2) - q(h)| <= t(h) + t(h/2),
//
// so the check is that the largest ratio |q(h/2) - q(h)| / (t(h) + t(h/2))
// does not exceed 1. A tolerance compared with its own error estimate
// alone fails converged results by round-off and by the error of the
// rerun (seen at 1.007 for the trapezoid loop area).
func addConvergence(c, fine *Case) {
	worst, name, count := 0.0, "", 0
	cmp := func(n string, a, b, tolA, tolB float64) {
		count++
		r := math.Abs(a-b) / (tolA + tolB)
		if math.IsNaN(r) { // both tolerances zero and equal values
			r = 0
			if a != b {
				r = math.Inf(1)
			}
		}
		if r > worst || name == "" {
			worst, name = r, n
		}
	}
	for i := range c.Checks {
		ch := &c.Checks[i]
		if !ch.converge {
			continue
		}
		for j := range fine.Checks {
			if f := &fine.Checks[j]; f.Name == ch.Name {
				cmp(ch.Name, ch.Value, f.Value, ch.absTol(), f.absTol())
			}
		}
	}
	for _, t := range c.tracked {
		for _, f := range fine.tracked {
			if f.name == t.name {
				cmp(t.name, t.value, f.value, t.tol, f.tol)
			}
		}
	}
	if count == 0 {
		c.omit("step-size convergence", "the case has no quantity to compare")
		return
	}
	if math.IsInf(worst, 1) {
		worst = math.MaxFloat64
	}
	c.add(Check{
		Name:            "step-size convergence",
		Quantity:        fmt.Sprintf("max over %d quantities of |q(h/2) - q(h)| / (tolerance of q(h) + tolerance of q(h/2)) (worst: %s)", count, name),
		Value:           worst,
		Reference:       0,
		ReferenceSource: "rerun of the case with every increment halved; common practice, no source",
		Tolerance:       1,
		ToleranceKind:   "abs",
		Bound:           "upper",
		ToleranceBasis:  "each quantity's tolerances at both increments: when q(h) and q(h/2) are each within their tolerance of the true value, they differ by at most the sum (triangle inequality); more is not converged",
		Unit:            "",
	})
}
