package checks

import (
	"context"
	"fmt"
	"math"
)

// ratcheting is stress-controlled cycling with a mean stress: from the
// virgin state to sMax, then Cycles cycles sMax -> sMin -> sMax.
func (v *verifier) ratcheting(ctx context.Context, refine int) (Case, CaseSetting, error) {
	m := v.m
	r := v.spec.Ratcheting
	N := r.Cycles
	sMax, sMin := r.MeanStress+r.StressAmplitude, r.MeanStress-r.StressAmplitude
	h := v.hSig / float64(refine)
	c := Case{Name: "ratcheting", Kind: "stress-controlled-ratcheting", Loading: fmt.Sprintf("stress control from the virgin state to %.6g Pa, then %d cycles between %.6g and %.6g Pa (mean %.6g, amplitude %.6g), increments of at most %.4g Pa", sMax, N, sMax, sMin, r.MeanStress, r.StressAmplitude, h)}
	d := v.newPath(ctx, (2*N+1)*int(2*r.StressAmplitude/h+2))
	tips, err := v.tipsOf(c.Name, false, cycleTargets(sMax, sMin, sMax, N))
	if err != nil {
		return c, CaseSetting{}, err
	}
	if err := d.stressTo(sMax, h); err != nil {
		return c, CaseSetting{}, err
	}
	for k := 0; k < N; k++ {
		for _, target := range [2]float64{sMin, sMax} {
			if err := d.stressTo(target, h); err != nil {
				return c, CaseSetting{}, err
			}
		}
	}
	idx := append(append([]int(nil), d.tips...), len(d.pts)-1)
	n := d.n
	epsAt := func(k int) float64 { return d.pts[idx[2*k]].eps } // strain at sMax after cycle k
	maxEps := 0.0
	for _, p := range d.pts {
		maxEps = math.Max(maxEps, math.Abs(p.eps))
	}
	// Strain error bound: each increment meets its stress within
	// DriverTol sigmaY, which moves the strain by at most that over the
	// smallest consistent tangent; at worst these add up over the n
	// increments.
	drv := float64(n) * v.prof.driverTol * m.SigmaY / d.inv.minTangent
	tol := 2*drv + roundTol(n)*maxEps
	basis := fmt.Sprintf("stress-control residual: %d increments x DriverTol %.0e sigmaY / smallest tangent %.4g Pa, for each of the two strains compared, + %s, relative to the largest strain %.4g", n, v.prof.driverTol, d.inv.minTangent, roundBasis(n), maxEps)
	rate := epsAt(N) - epsAt(N-1)
	rateRef := tips[2*N].eps - tips[2*N-2].eps
	srcBranch := "closed form derived here: branch solutions of the 1D rules tip to tip under stress targets (" + srcAF + "; " + srcPrager + "; " + srcVoce + ")"
	c.add(Check{
		Name: fmt.Sprintf("ratchet strain per cycle, cycle %d", N), Quantity: fmt.Sprintf("strain at the maximum stress after cycle %d minus after cycle %d", N, N-1),
		Value: rate, Reference: rateRef, ReferenceSource: srcBranch,
		Tolerance: tol, ToleranceKind: "abs", ToleranceBasis: basis, Unit: "", converge: true,
	})
	c.add(Check{
		Name: "accumulated ratchet strain", Quantity: fmt.Sprintf("strain at the maximum stress after cycle %d minus after the first loading", N),
		Value: epsAt(N) - epsAt(0), Reference: tips[2*N].eps - tips[0].eps, ReferenceSource: srcBranch,
		Tolerance: tol, ToleranceKind: "abs", ToleranceBasis: basis, Unit: "", converge: true,
	})
	switch delta, ok := singleTermRatchet(m, sMin, sMax); {
	case ok:
		c.add(Check{
			Name: "steady ratchet strain per cycle (single Armstrong-Frederick term)", Quantity: fmt.Sprintf("ratchet strain of cycle %d", N),
			Value: rate, Reference: delta,
			ReferenceSource: "closed form derived here from the branch solutions of " + srcAF + ": delta = (1/gamma) ln((a^2 - alpha-^2)/(a^2 - alpha+^2)), a = C/gamma, alpha+ = sigma_max - sigmaY, alpha- = sigma_min + sigmaY, exact from the second cycle",
			Tolerance:       tol, ToleranceKind: "abs", ToleranceBasis: basis, Unit: "", converge: true,
		})
	case allLinear(m):
		c.add(Check{
			Name: "shakedown (linear kinematic hardening)", Quantity: fmt.Sprintf("ratchet strain of cycle %d", N),
			Value: rate, Reference: 0,
			ReferenceSource: "closed form: with linear kinematic hardening alone the back stress at each stress tip is fixed by the yield condition, alpha = H eps_p, so the plastic strain at each tip repeats from the second cycle: no ratcheting (" + srcPrager + ")",
			Tolerance:       tol, ToleranceKind: "abs", ToleranceBasis: basis, Unit: "", converge: true,
		})
	default:
		c.omit("steady ratchet strain (closed form)", "the explicit formula holds for one Armstrong-Frederick term without linear terms or isotropic hardening, and zero holds for linear kinematic hardening alone; this card has another shape, so only the branch-solution references apply")
	}
	c.measure("ratchet strain per cycle, last cycle", rate, "")
	addInvariants(&c, m, &d.inv)
	c.Series = d.series()
	return c, CaseSetting{Case: c.Name, Control: "stress", Increment: h, Increments: n}, nil
}

// relaxation is strain cycling with a mean strain: from the virgin state
// to eMax, then Cycles cycles eMax -> eMin -> eMax.
func (v *verifier) relaxation(ctx context.Context, refine int) (Case, CaseSetting, error) {
	m := v.m
	r := v.spec.Relaxation
	N := r.Cycles
	eMax, eMin := r.MeanStrain+r.StrainAmplitude, r.MeanStrain-r.StrainAmplitude
	h := math.Min(v.hEps, 2*r.StrainAmplitude/float64(v.prof.incPerBranch)) / float64(refine)
	c := Case{Name: "mean-strain-relaxation", Kind: "mean-stress-relaxation", Loading: fmt.Sprintf("strain control from the virgin state to %s, then %d cycles between %s and %s (mean strain %s), increments of at most %.4g in the first and the last two cycles and two per branch between them (exact algorithm)", fmtG(eMax), N, fmtG(eMax), fmtG(eMin), fmtG(r.MeanStrain), h)}
	d := v.newPath(ctx, v.cyclingCapacity(eMax, r.StrainAmplitude, h, N))
	tips, err := v.tipsOf(c.Name, true, cycleTargets(eMax, eMin, eMax, N))
	if err != nil {
		return c, CaseSetting{}, err
	}
	if err := d.strainTo(eMax, h, v.prof.incPerBranch/2); err != nil {
		return c, CaseSetting{}, err
	}
	for k := 0; k < N; k++ {
		hk, minK := v.cycleIncrement(k, N, h, eMax-eMin)
		for _, target := range [2]float64{eMin, eMax} {
			if err := d.strainTo(target, hk, minK); err != nil {
				return c, CaseSetting{}, err
			}
		}
	}
	idx := append(append([]int(nil), d.tips...), len(d.pts)-1)
	n := d.n
	mean := func(k int) float64 { return (d.pts[idx[2*k]].sigma + d.pts[idx[2*k-1]].sigma) / 2 }
	meanRef := func(k int) float64 { return (tips[2*k].sigma + tips[2*k-1].sigma) / 2 }
	sMax := 0.0
	for _, p := range d.pts {
		sMax = math.Max(sMax, math.Abs(p.sigma))
	}
	rt, rb := roundTol(n)*sMax, roundBasis(n)+", relative to the largest stress on the path"
	c.add(Check{
		Name: fmt.Sprintf("mean stress, cycle %d", N), Quantity: fmt.Sprintf("(sigma_max + sigma_min)/2 of cycle %d", N),
		Value: mean(N), Reference: meanRef(N),
		ReferenceSource: "closed form derived here: branch solutions of the 1D rules tip to tip (" + srcAF + "; " + srcPrager + "; " + srcVoce + ")",
		Tolerance:       rt, ToleranceKind: "abs", ToleranceBasis: rb, Unit: "Pa", converge: true,
	})
	kStab, stab := stabilizedRadius(m)
	switch {
	case allLinear(m):
		c.add(Check{
			Name: "no relaxation (linear kinematic hardening)", Quantity: fmt.Sprintf("mean stress of cycle %d minus that of cycle 1", N),
			Value: mean(N) - mean(1), Reference: 0,
			ReferenceSource: "closed form: with linear kinematic hardening alone the loop repeats from the first cycle, so the mean stress does not relax (" + srcPrager + ")",
			Tolerance:       rt, ToleranceKind: "abs", ToleranceBasis: rb, Unit: "Pa", converge: true,
		})
	case noLinear(m) && stab:
		seq := make([]float64, N)
		for k := 1; k <= N; k++ {
			seq[k-1] = meanRef(k)
		}
		dEpsP, _, _, yields, err := stabilizedLoop(m, kStab, r.StrainAmplitude)
		if err != nil {
			return c, CaseSetting{}, err
		}
		if !yields {
			c.omit("relaxed mean stress", "the stabilized loop is elastic at this amplitude: an elastic shakedown keeps part of the mean stress")
			break
		}
		tail, why := transientTail(seq, tailFloor*sMax, slowestDecay(m, dEpsP))
		if why != "" {
			c.omit("relaxed mean stress", fmt.Sprintf("cycle %d: %s", N, why))
			break
		}
		if tail > stabilizedLimit*sMax {
			c.omit("relaxed mean stress", fmt.Sprintf("cycle %d is not stabilized: the estimated remaining transient %.3g Pa exceeds 1%% of the peak stress; more cycles needed", N, tail))
			break
		}
		c.add(Check{
			Name: "relaxed mean stress", Quantity: fmt.Sprintf("mean stress of cycle %d", N),
			Value: mean(N), Reference: 0,
			ReferenceSource: "closed form derived here: the stabilized cycle of every Armstrong-Frederick term under a fixed plastic strain range has tips alpha+ = -alpha- = (C/gamma) tanh(gamma dEps_p/2), whatever the mean strain, so the stabilized loop is symmetric in stress and the mean stress relaxes to 0 (" + srcAF + "; " + srcChaboche + ")",
			Tolerance:       tail + rt, ToleranceKind: "abs",
			ToleranceBasis: fmt.Sprintf("estimated remaining transient %.3g Pa (%s) + %s", tail, tailBasis, rb), Unit: "Pa", converge: true,
		})
	default:
		c.omit("relaxed mean stress", "linear terms together with saturating terms (or linear isotropic hardening) relax the mean stress only partly; no closed form for the limit, the branch-solution reference applies")
	}
	c.measure("mean stress, cycle 1", mean(1), "Pa")
	c.measure(fmt.Sprintf("mean stress, cycle %d", N), mean(N), "Pa")
	addInvariants(&c, m, &d.inv)
	c.Series = d.series()
	return c, CaseSetting{Case: c.Name, Control: "strain", Increment: h, Increments: n}, nil
}
