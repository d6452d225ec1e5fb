package checks

import (
	"context"
	"errors"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// reverseYield locates where the branch that starts at the tip index i0 of
// d first yields: the first plastic increment after i0 is repeated from its
// start state with a fraction t of its strain increment, and t is bisected
// to the last bit on whether Step1D reports a plastic step. It returns the
// stress at that point, the stress and p at the tip, and false when the
// branch stays elastic. The point is the integrator's own elastic limit.
func reverseYield(m *plastic.Material, set *plastic.Settings, hist []histPt) (sigma float64, ok bool, err error) {
	for j := 1; j < len(hist); j++ {
		if !hist[j].plastic {
			continue
		}
		s0 := hist[j-1].st
		dEps := hist[j].st.Eps - s0.Eps
		var tmp plastic.State1D
		lo, hi := 0.0, 1.0
		for it := 0; it < 200; it++ {
			mid := lo + (hi-lo)/2
			if mid <= lo || mid >= hi {
				break
			}
			info, err := m.Step1D(&tmp, &s0, mid*dEps, set)
			// Step1D decides elastic or plastic from the trial stress before
			// it iterates, so a step whose iteration fails was plastic. (It
			// does fail on some tiny plastic steps: reported to
			// checks/plastic.)
			if err != nil && !errors.Is(err, plastic.ErrNotConverged) {
				return 0, false, fmt.Errorf("reverse-yield bisection: fraction %g of the increment %g from strain %g, stress %g Pa: %w", mid, dEps, s0.Eps, s0.Sigma, err)
			}
			if err != nil || info.Plastic {
				hi = mid
			} else {
				lo = mid
			}
		}
		return s0.Sigma + m.E*lo*dEps, true, nil
	}
	return 0, false, nil
}

// cycleIncrement returns the increment bound and the least number of
// increments per branch for cycle k (0-based) of N under strain control
// with branches of strain span: h and the profile's count in the first
// cycle and in the last two, two increments per branch between them. The
// checks read the first cycle (reverse yield, first means) and the last two
// (peaks, closure, loop area, last means); the cycles between only carry
// the transients forward, and the exact algorithm is independent of the
// increment size under monotone strain control (package plastic, Exact).
func (v *verifier) cycleIncrement(k, N int, h, span float64) (float64, int) {
	if v.set.Algorithm == plastic.Exact && k > 0 && k < N-2 {
		return span, 2
	}
	return h, v.prof.incPerBranch
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
		d := newPath1D(ctx, m, v.set, v.prof.driverTol, (4*N+1)*int(a/h+2))
		// The reference: branch solutions tip to tip.
		tips, err := v.tipsOf(name, true, cycleTargets(a, -a, a, N))
		if err != nil {
			return c, CaseSetting{}, err
		}
		if err := d.strainTo(a, h, v.prof.incPerBranch/2); err != nil {
			return c, CaseSetting{}, err
		}
		var first []histPt // states of the first reverse branch, for the reverse-yield bisection
		for k := 0; k < N; k++ {
			hk, minK := v.cycleIncrement(k, N, h, 2*a)
			for _, target := range [2]float64{-a, a} {
				d.keep = k == 0 && target < 0
				if d.keep {
					d.hist = append(d.hist[:0], histPt{d.st, false})
				}
				if err := d.strainTo(target, hk, minK); err != nil {
					return c, CaseSetting{}, err
				}
				if d.keep {
					first, d.keep = d.hist, false
				}
			}
		}
		idx := append(append([]int(nil), d.tips...), len(d.pts)-1)
		n := d.n
		rt, rb := roundTol(n), roundBasis(n)
		cycleAmp := func(k int) float64 { // integrator stress amplitude of cycle k (1-based)
			return (d.pts[idx[2*k]].sigma - d.pts[idx[2*k-1]].sigma) / 2
		}
		cycleW := func(k int) (w1, w2 float64) { return trapezoid(d.pts, idx[2*k-2], idx[2*k]) }
		sMax := d.pts[idx[2*N]].sigma

		// Bauschinger: reverse yield of the first reversal.
		ry, ok, err := reverseYield(m, v.set, first)
		if err != nil {
			return c, CaseSetting{}, err
		}
		if ok {
			tp := d.pts[idx[0]]
			k := m.YieldRadius(tp.p)
			c.add(Check{
				Name: "Bauschinger reverse yield", Quantity: "stress at which the first reverse branch yields (integrator's elastic limit, bisected to the last bit)",
				Value: ry, Reference: tp.sigma - 2*k,
				ReferenceSource: "closed form: elastic unloading leaves alpha and p unchanged, so the reverse yield is at alpha - k = sigma_max - 2 (sigmaY + R(p)) (translation of the yield surface: " + srcPrager + "; " + srcAF + ")",
				Tolerance:       rt * (math.Abs(tp.sigma) + 2*k), ToleranceKind: "abs", ToleranceBasis: rb + ", relative to |sigma_max| + 2k", Unit: "Pa", converge: true,
			})
		} else {
			c.omit("Bauschinger reverse yield", "the first reverse branch stays elastic at this amplitude")
		}

		c.add(Check{
			Name: fmt.Sprintf("peak stress, cycle %d", N), Quantity: fmt.Sprintf("stress at +%s at the end of cycle %d", fmtG(a), N),
			Value: sMax, Reference: tips[2*N].sigma,
			ReferenceSource: "closed form derived here: branch solutions of the 1D rules tip to tip (" + srcAF + "; " + srcPrager + "; " + srcVoce + ")",
			Tolerance:       rt, ToleranceKind: "rel", ToleranceBasis: rb, Unit: "Pa", converge: true,
		})
		wRef := loopWork(m, &tips[2*N-2], &tips[2*N])
		w1, w2 := cycleW(N)
		wR := (4*w1 - w2) / 3
		trapErr := math.Abs(w1 - w2)
		c.add(Check{
			Name: fmt.Sprintf("dissipated energy, cycle %d", N), Quantity: "loop area integral sigma d eps over the cycle, trapezoid rule on the integrated path with Richardson extrapolation",
			Value: wR, Reference: wRef,
			ReferenceSource: "closed form derived here: plastic work of the branch solutions (integral sigma d eps_p in closed form per branch) plus the elastic energy change (sigma_b^2 - sigma_a^2)/(2E)",
			Tolerance:       trapErr + rt*math.Abs(wRef), ToleranceKind: "abs",
			ToleranceBasis: fmt.Sprintf("trapezoid error bound |W(h) - W(2h)| = %.3g J/m^3 (Richardson's estimate of the O(h^2) error of W(h) is a third of it; the full difference is allowed for the extrapolated value because the yield kinks inside increments make the h^2 term irregular) + %s", trapErr, rb), Unit: "J/m^3", converge: true,
		})
		closeRef := tips[2*N].sigma - tips[2*N-2].sigma
		c.add(Check{
			Name: "loop closure", Quantity: fmt.Sprintf("change of the peak stress over cycle %d (zero for a closed loop)", N),
			Value: sMax - d.pts[idx[2*N-2]].sigma, Reference: closeRef,
			ReferenceSource: "closed form derived here (branch solutions tip to tip); zero from the first cycle for linear kinematic hardening without isotropic hardening (" + srcPrager + ")",
			Tolerance:       rt * math.Abs(sMax), ToleranceKind: "abs", ToleranceBasis: rb + ", relative to the peak stress", Unit: "Pa", converge: true,
		})

		// Stabilized loop closed forms.
		if k, ok := stabilizedRadius(m); !ok {
			c.omit("stabilized stress amplitude", "linear isotropic hardening grows without bound: no stabilized loop")
			c.omit("stabilized dissipated energy", "linear isotropic hardening grows without bound: no stabilized loop")
		} else if dEpsP, sA, W, ok := stabilizedLoop(m, k, a); !ok {
			c.omit("stabilized stress amplitude", "the stabilized loop is elastic at this amplitude")
			c.omit("stabilized dissipated energy", "the stabilized loop is elastic at this amplitude")
		} else {
			ampN := cycleAmp(N)
			pN := d.pts[idx[2*N-2]].p // p at the start of the last cycle
			trA := memory(m, pN)
			trW := 4 * a * trA // the stress shift bounds the area change over the strain traversed, 4a
			src := "stabilized loop: sigma_a = k + sum (C_i/gamma_i) tanh(gamma_i dEps_p/2) + sum H_i dEps_p/2 with 2 eps_a = dEps_p + 2 sigma_a/E, k = sigmaY (+ Q after Voce saturation) (" + srcChaboche + "; " + srcPrager + ")"
			why := fmt.Sprintf("%s; + remaining memory of the virgin state %.3g Pa at p = %.4g (sum 2 C_i/gamma_i exp(-gamma_i p) + |Q| exp(-b p), derived here)", rb, trA, pN)
			if trA > stabilizedLimit*sA {
				c.omit("stabilized stress amplitude", fmt.Sprintf("cycle %d is not stabilized: the remaining transient bound %.3g Pa exceeds 1%% of the amplitude %.4g Pa ; more cycles needed", N, trA, sA))
			} else {
				c.add(Check{
					Name: "stabilized stress amplitude", Quantity: fmt.Sprintf("(sigma_max - sigma_min)/2 of cycle %d", N),
					Value: ampN, Reference: sA, ReferenceSource: src + "; stabilized cycle per " + StabilizedCycleDefinition,
					Tolerance: trA + rt*sA, ToleranceKind: "abs", ToleranceBasis: why, Unit: "Pa", converge: true,
				})
			}
			if trW > stabilizedLimit*W {
				c.omit("stabilized dissipated energy", fmt.Sprintf("cycle %d is not stabilized: the remaining transient bound %.3g J/m^3 exceeds 1%% of the loop area", N, trW))
			} else {
				c.add(Check{
					Name: "stabilized dissipated energy", Quantity: fmt.Sprintf("loop area of cycle %d (trapezoid with Richardson extrapolation)", N),
					Value: wR, Reference: W,
					ReferenceSource: "closed form derived here: W = 2 k dEps_p + sum 2 (C_i/gamma_i)(dEps_p - (2/gamma_i) tanh(gamma_i dEps_p/2)), integrating sigma d eps_p around the stabilized loop of " + srcChaboche,
					Tolerance:       trW + trapErr + rt*W, ToleranceKind: "abs",
					ToleranceBasis: fmt.Sprintf("remaining memory of the virgin state %.3g Pa times the strain traversed 4 eps_a = %.3g J/m^3 + trapezoid error bound %.3g J/m^3 + %s", trA, trW, trapErr, rb), Unit: "J/m^3", converge: true,
				})
			}
			c.measure("stabilized plastic strain range (closed form)", dEpsP, "")
		}
		addInvariants(&c, m, &d.inv)
		c.Series = d.series()
		return c, CaseSetting{Case: name, Control: "strain", Increment: h, Increments: n}, nil
	}
}
