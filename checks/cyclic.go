package checks

import (
	"context"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// cycleIncrement returns the increment bound and the least number of
// increments per branch for cycle k (0-based) of N under strain control
// with branches of strain span: h and the profile's count in the first
// cycle and in the last two, two increments per branch between them. The
// checks read the first cycle (first means) and the last two (peaks,
// closure, loop area, last means); the cycles between only carry
// the transients forward, and the exact algorithm is independent of the
// increment size under monotone strain control (package plastic, Exact).
func (v *verifier) cycleIncrement(k, N int, h, span float64) (float64, int) {
	if v.set.Algorithm == plastic.Exact && k > 0 && k < N-2 {
		return span, 2
	}
	return h, v.prof.incPerBranch
}

// cyclingCapacity is the number of increments of a strain-cycling case
// with the largest strain eMax, the amplitude amp, the increment h and N
// cycles, at most (see cycleIncrement): the first loading, three cycles
// resolved at h (at least incPerBranch a branch, rounded up to even), and
// 4 increments for each cycle between.
func (v *verifier) cyclingCapacity(eMax, amp, h float64, N int) int {
	branch := int(2*amp/h) + 2 + v.prof.incPerBranch
	return int(eMax/h) + 2 + v.prof.incPerBranch + 6*branch + 4*N
}

// cyclic is fully reversed strain cycling (strain ratio -1) at amplitude
// a: loading from the virgin state to +a, then Cycles cycles +a -> -a -> +a.
func (v *verifier) cyclic(a float64) caseFn {
	return func(ctx context.Context, refine int) (Case, CaseSetting, error) {
		m := v.m
		N := v.spec.Cycles
		name := "cyclic-" + fmtG(a)
		h := math.Min(v.hEps, 2*a/float64(v.prof.incPerBranch)) / float64(refine)
		c := Case{Name: name, Kind: "fully-reversed", Loading: fmt.Sprintf("strain control, strain ratio -1: from the virgin state to %s, then %d cycles between %s and -%s, increments of at most %.4g (even per branch) in the first and the last two cycles and two per branch between them (exact algorithm)", fmtG(a), N, fmtG(a), fmtG(a), h)}
		d := v.newPath(ctx, v.cyclingCapacity(a, a, h, N))
		// The reference: branch solutions tip to tip.
		tips, err := v.tipsOf(name, true, cycleTargets(a, -a, a, N))
		if err != nil {
			return c, CaseSetting{}, err
		}
		if err := d.strainTo(a, h, v.prof.incPerBranch/2); err != nil {
			return c, CaseSetting{}, err
		}
		for k := 0; k < N; k++ {
			hk, minK := v.cycleIncrement(k, N, h, 2*a)
			for _, target := range [2]float64{-a, a} {
				if err := d.strainTo(target, hk, minK); err != nil {
					return c, CaseSetting{}, err
				}
			}
		}
		idx := append(append([]int(nil), d.tips...), len(d.pts)-1)
		n := d.n
		rt, rb := roundTol(n), roundBasis(n)
		cycleAmp := func(k int) float64 { // integrator stress amplitude of cycle k (1-based)
			return (d.pts[idx[2*k]].sigma - d.pts[idx[2*k-1]].sigma) / 2
		}
		sMax := d.pts[idx[2*N]].sigma

		c.add(Check{
			Name: fmt.Sprintf("peak stress, cycle %d", N), Quantity: fmt.Sprintf("stress at +%s at the end of cycle %d", fmtG(a), N),
			Value: sMax, Reference: tips[2*N].sigma,
			ReferenceSource: "closed form derived here: branch solutions of the 1D rules tip to tip (" + srcAF + "; " + srcPrager + "; " + srcVoce + ")",
			Tolerance:       rt, ToleranceKind: "rel", ToleranceBasis: rb, Unit: "Pa", converge: true,
		})
		wRef := loopWork(m, &tips[2*N-2], &tips[2*N])
		w1, w2, wAbs := trapezoid(d.pts, idx[2*N-2], idx[2*N])
		wR := (4*w1 - w2) / 3
		trapErr := math.Abs(w1 - w2)
		// Round-off of the trapezoid sums: recursive summation of m terms
		// errs by at most (m - 1) u sum |x_i| (N. J. Higham, Accuracy and
		// Stability of Numerical Algorithms, 2nd ed., 2002, eq. (4.4)),
		// each term (sigma_a + sigma_b)/2 (eps_b - eps_a) carries 3 more
		// roundings, and (4 w1 - w2)/3 weighs the two sums by 5/3 in all;
		// 2 (m + 3) u sum |x_i| covers it with the m of the finer sum. It
		// dominates for nearly elastic loops, whose area is a small
		// difference of large sums.
		mInc := idx[2*N] - idx[2*N-2]
		wRound := 2 * float64(mInc+3) * u * wAbs
		c.add(Check{
			Name: fmt.Sprintf("dissipated energy, cycle %d", N), Quantity: "loop area integral sigma d eps over the cycle, trapezoid rule on the integrated path with Richardson extrapolation",
			Value: wR, Reference: wRef,
			ReferenceSource: "closed form derived here: plastic work of the branch solutions (integral sigma d eps_p in closed form per branch) plus the elastic energy change (sigma_b^2 - sigma_a^2)/(2E)",
			Tolerance:       trapErr + wRound + rt*math.Abs(wRef), ToleranceKind: "abs",
			ToleranceBasis: fmt.Sprintf("trapezoid error bound |W(h) - W(2h)| = %.3g J/m^3 (Richardson's estimate of the O(h^2) error of W(h) is a third of it; the full difference is allowed for the extrapolated value because the yield kinks inside increments make the h^2 term irregular) + round-off of the sums 2 (m + 3) u sum |sigma d eps| = %.3g J/m^3 over m = %d increments (Higham 2002, eq. (4.4)) + %s", trapErr, wRound, mInc, rb), Unit: "J/m^3", converge: true,
		})
		closeRef := tips[2*N].sigma - tips[2*N-2].sigma
		c.add(Check{
			Name: "loop closure", Quantity: fmt.Sprintf("change of the peak stress over cycle %d (zero for a closed loop)", N),
			Value: sMax - d.pts[idx[2*N-2]].sigma, Reference: closeRef,
			ReferenceSource: "closed form derived here (branch solutions tip to tip); zero from the first cycle for linear kinematic hardening without isotropic hardening (" + srcPrager + ")",
			Tolerance:       rt * math.Abs(sMax), ToleranceKind: "abs", ToleranceBasis: rb + ", relative to the peak stress", Unit: "Pa", converge: true,
		})

		// Stabilized loop closed forms, against the last cycle, with the
		// transient that cycle still carries estimated from the decay of
		// the exact solution's cycle-to-cycle changes (see transientTail).
		if k, ok := stabilizedRadius(m); !ok {
			c.omit("stabilized stress amplitude", "linear isotropic hardening grows without bound: no stabilized loop")
			c.omit("stabilized dissipated energy", "linear isotropic hardening grows without bound: no stabilized loop")
		} else if dEpsP, sA, W, ok, err := stabilizedLoop(m, k, a); err != nil {
			return c, CaseSetting{}, err
		} else if !ok {
			c.omit("stabilized stress amplitude", "the stabilized loop is elastic at this amplitude")
			c.omit("stabilized dissipated energy", "the stabilized loop is elastic at this amplitude")
		} else {
			ampRef, wSeq := make([]float64, N), make([]float64, N)
			for j := 1; j <= N; j++ {
				ampRef[j-1] = (tips[2*j].sigma - tips[2*j-1].sigma) / 2
				wSeq[j-1] = loopWork(m, &tips[2*j-2], &tips[2*j])
			}
			src := "stabilized loop: sigma_a = k + sum (C_i/gamma_i) tanh(gamma_i dEps_p/2) + sum H_i dEps_p/2 with 2 eps_a = dEps_p + 2 sigma_a/E, k = sigmaY (+ Q after Voce saturation) (" + srcChaboche + "; " + srcPrager + ")"
			if tail, why := transientTail(ampRef, tailFloor*sA, slowestDecay(m, dEpsP)); why != "" {
				c.omit("stabilized stress amplitude", fmt.Sprintf("cycle %d: %s", N, why))
			} else if tail > stabilizedLimit*sA {
				c.omit("stabilized stress amplitude", fmt.Sprintf("cycle %d is not stabilized: the estimated remaining transient %.3g Pa exceeds 1%% of the amplitude %.4g Pa; more cycles needed", N, tail, sA))
			} else {
				c.add(Check{
					Name: "stabilized stress amplitude", Quantity: fmt.Sprintf("(sigma_max - sigma_min)/2 of cycle %d", N),
					Value: cycleAmp(N), Reference: sA, ReferenceSource: src + "; stabilized cycle per " + StabilizedCycleDefinition,
					Tolerance: tail + rt*sA, ToleranceKind: "abs", ToleranceBasis: fmt.Sprintf("estimated remaining transient %.3g Pa (%s) + %s", tail, tailBasis, rb), Unit: "Pa", converge: true,
				})
			}
			if tail, why := transientTail(wSeq, tailFloor*W, slowestDecay(m, dEpsP)); why != "" {
				c.omit("stabilized dissipated energy", fmt.Sprintf("cycle %d: %s", N, why))
			} else if tail > stabilizedLimit*W {
				c.omit("stabilized dissipated energy", fmt.Sprintf("cycle %d is not stabilized: the estimated remaining transient %.3g J/m^3 exceeds 1%% of the loop area %.4g J/m^3; more cycles needed", N, tail, W))
			} else {
				c.add(Check{
					Name: "stabilized dissipated energy", Quantity: fmt.Sprintf("loop area of cycle %d (trapezoid with Richardson extrapolation)", N),
					Value: wR, Reference: W,
					ReferenceSource: "closed form derived here: W = 2 k dEps_p + sum 2 (C_i/gamma_i)(dEps_p - (2/gamma_i) tanh(gamma_i dEps_p/2)), integrating sigma d eps_p around the stabilized loop of " + srcChaboche,
					Tolerance:       tail + trapErr + wRound + rt*W, ToleranceKind: "abs",
					ToleranceBasis: fmt.Sprintf("estimated remaining transient %.3g J/m^3 (%s) + trapezoid error bound %.3g J/m^3 + round-off of the sums %.3g J/m^3 + %s", tail, tailBasis, trapErr, wRound, rb), Unit: "J/m^3", converge: true,
				})
			}
			c.measure("stabilized plastic strain range (closed form)", dEpsP, "")
		}
		addInvariants(&c, m, &d.inv)
		c.Series = d.series()
		return c, CaseSetting{Case: name, Control: "strain", Increment: h, Increments: n}, nil
	}
}
