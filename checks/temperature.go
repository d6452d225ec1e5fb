package checks

import (
	"context"
	"errors"
	"fmt"
	"math"

	"matgate/checks/plastic"
)

// TableSpec is the verification of a temperature-dependent card.
type TableSpec struct {
	// Table holds the card's materials at its temperatures, kelvin.
	Table plastic.Table
	// Specs are the standard verification of the card at each temperature
	// of Table, in order, each sized for its temperature.
	Specs []Spec
}

// TemperatureName is the prefix of the names of the cases run at T
// kelvin: "at-293.15K".
func TemperatureName(T float64) string { return "at-" + fmtG(T) + "K" }

// RunTable verifies a temperature-dependent card:
//
//   - the standard cases (Run) at every tabulated temperature, each with
//     its closed forms, named TemperatureName(T)/case and carrying T;
//   - between each pair of neighbours, the monotonic tension of the card
//     interpolated at the midpoint against its neighbours' (see bracket);
//   - the anisothermal cases of the table's integrator: an elastic
//     temperature excursion after plastic prestrain against the closed
//     form of the temperature-rate term, an isothermal history against
//     the isothermal integrator, and thermo-mechanical cycling in phase and
//     out of phase with its invariants.
//
// Settings are those of the first temperature, with the case settings of
// every temperature; the sizes of the other temperatures' cases are in
// their Loading. Errors as Run's.
func RunTable(ctx context.Context, ts TableSpec) (*Result, error) {
	tb := &ts.Table
	if len(ts.Specs) != len(tb.T) || len(tb.T) < 2 {
		return nil, fmt.Errorf("checks: %d specs for a table of %d temperatures", len(ts.Specs), len(tb.T))
	}
	out := &Result{}
	resolved := make([]Spec, len(ts.Specs))
	for k, spec := range ts.Specs {
		T := tb.T[k]
		r, err := spec.Resolve()
		if err != nil {
			return nil, fmt.Errorf("at %g K: %w", T, err)
		}
		resolved[k] = r
		res, err := Run(ctx, spec)
		if err != nil {
			return nil, fmt.Errorf("at %g K: %w", T, err)
		}
		prefix := TemperatureName(T) + "/"
		for i := range res.Cases {
			res.Cases[i].Name = prefix + res.Cases[i].Name
			res.Cases[i].Temperature = &tb.T[k]
		}
		for i := range res.Settings.Cases {
			res.Settings.Cases[i].Case = prefix + res.Settings.Cases[i].Case
		}
		if k == 0 {
			out.Settings = res.Settings
		} else {
			out.Settings.Cases = append(out.Settings.Cases, res.Settings.Cases...)
		}
		out.Cases = append(out.Cases, res.Cases...)
		out.Findings = append(out.Findings, res.Findings...)
	}
	for k := 0; k+1 < len(tb.T); k++ {
		c, err := bracket(ctx, tb, k, resolved[k], resolved[k+1])
		if err != nil {
			return nil, err
		}
		out.Cases = append(out.Cases, c)
	}
	for _, fn := range []func(context.Context, *plastic.Table, []Spec) (Case, error){excursion, isothermal, thermoMechanical(1), thermoMechanical(-1)} {
		c, err := fn(ctx, tb, resolved)
		if err != nil {
			return nil, err
		}
		out.Cases = append(out.Cases, c)
	}
	out.Verdict = "pass"
	for i := range out.Cases {
		if out.Cases[i].Checks == nil {
			out.Cases[i].Checks = []Check{}
		}
		for _, ch := range out.Cases[i].Checks {
			if !ch.Pass {
				out.Verdict = "fail"
			}
		}
	}
	return out, nil
}

// srcTemperatureRate names the back-stress law with the temperature-rate
// term.
const srcTemperatureRate = "d alpha_i = C_i d eps_p - gamma_i alpha_i dp + (1/C_i)(dC_i/dT) alpha_i dT: J.-L. Chaboche, Constitutive equations for cyclic plasticity and cyclic viscoplasticity, Int. J. Plasticity 5 (1989) 247-302 (from memory, equation number not checked)"

// sense returns +1 when every parameter change from a to b makes the
// uniaxial monotonic stress at every strain larger, -1 when every one makes
// it smaller, 0 when none changes it, and "" — or, when the changes pull in
// opposite senses, what does so. A larger E, sigmaY, H, K, C or Voce Q
// raises the stress at a given strain, a larger gamma lowers the term
// C/gamma (1 - exp(-gamma eps_p)), whose derivative in gamma is negative,
// and a larger Voce b raises R when Q > 0 and lowers it when Q < 0.
func sense(a, b *plastic.Material) (int, string) {
	s := 0
	why := ""
	vote := func(name string, d float64) {
		v := 0
		if d > 0 {
			v = 1
		} else if d < 0 {
			v = -1
		}
		switch {
		case v == 0 || why != "":
		case s == 0:
			s = v
		case s != v:
			why = name
		}
	}
	vote("Young's modulus", b.E-a.E)
	vote("the yield stress", b.SigmaY-a.SigmaY)
	for i := 0; i < a.N; i++ {
		vote(fmt.Sprintf("C of term %d", i), b.Terms[i].C-a.Terms[i].C)
		vote(fmt.Sprintf("gamma of term %d", i), a.Terms[i].Gamma-b.Terms[i].Gamma)
	}
	vote("K", b.Iso.K-a.Iso.K)
	vote("Voce's q", b.Iso.Q-a.Iso.Q)
	if a.Iso.Kind == plastic.IsoVoce && b.Iso.B != a.Iso.B {
		if a.Iso.Q*b.Iso.Q <= 0 && a.Iso.Q != b.Iso.Q {
			return 0, "Voce's q, which changes sign while b changes"
		}
		vote("Voce's b", (b.Iso.B-a.Iso.B)*math.Copysign(1, a.Iso.Q+b.Iso.Q))
	}
	return s, why
}

// bracket is the case between the k-th and (k+1)-th temperatures: the
// monotonic tension of the card interpolated at the midpoint lies between
// its neighbours' at every strain where every parameter moves the stress
// the same way between them.
//
// Why: the uniaxial monotonic stress at plastic strain x is sigmaY + sum
// C_i/gamma_i (1 - exp(-gamma_i x)) + H x + R(x), each summand monotone in
// its parameters (see sense), and along the interpolation p = (1 - w) p_k +
// w p_k+1 each parameter is monotone in w; when every summand moves the
// same way, the stress at every x is monotone in w, and so is the stress
// at a total strain eps = sigma/E + x (E moving the same way). Where the
// parameters pull in opposite senses (the yield stress falls while a
// term's saturation C/gamma rises, say) the stress is a sum of rising and
// falling parts, which can have an extreme between the neighbours: then no
// bracket holds and the check is omitted, with why. The exact algorithm
// integrates the three curves to round-off (roundTol).
func bracket(ctx context.Context, tb *plastic.Table, k int, lo, hi Spec) (Case, error) {
	Ta, Tb := tb.T[k], tb.T[k+1]
	Tm := 0.5 * (Ta + Tb)
	a, b := tb.M[k], tb.M[k+1]
	mid, err := tb.At(Tm)
	if err != nil {
		return Case{}, err
	}
	eps := math.Min(lo.MonotonicStrain, hi.MonotonicStrain)
	h := math.Min(newVerifier(lo).hEps, newVerifier(hi).hEps)
	set := profiles[lo.Profile].settings()
	c := Case{
		Name:        "between-" + fmtG(Ta) + "K-" + fmtG(Tb) + "K",
		Kind:        "temperature-interpolation",
		Loading:     fmt.Sprintf("monotonic tension to strain %s in increments of at most %.4g of the card interpolated at %s K (linear in temperature) and of its neighbours at %s K and %s K", fmtG(eps), h, fmtG(Tm), fmtG(Ta), fmtG(Tb)),
		Temperature: &Tm,
	}
	curve := func(m *plastic.Material) ([]plastic.State1D, error) {
		var hist []plastic.State1D
		var s plastic.State1D
		path := plastic.Path1D{Control: plastic.StrainControl, Targets: []float64{eps}, MaxIncrement: h}
		_, err := m.Run1D(ctx, &s, &path, set, func(_ int, s *plastic.State1D) { hist = append(hist, *s) })
		return hist, err
	}
	ha, err := curve(&a)
	if err != nil {
		return c, caseErr(c.Name, err)
	}
	hb, err := curve(&b)
	if err != nil {
		return c, caseErr(c.Name, err)
	}
	hm, err := curve(&mid)
	if err != nil {
		return c, caseErr(c.Name, err)
	}
	c.Series = downsample(hm, maxSeries, func(s *plastic.State1D) Sample {
		return Sample{Strain: s.Eps, Stress: s.Sigma, PlasticStrain: s.EpsP, BackStress: s.BackStress(mid.N), P: s.P}
	})
	for _, n := range []struct {
		T    float64
		hist []plastic.State1D
	}{{Ta, ha}, {Tb, hb}} {
		// Every stride-th increment and the last: at most about maxSeries
		// points, so that a long path does not swell the record.
		stride := max(1, len(n.hist)/maxSeries)
		var pts [][2]float64
		for i, s := range n.hist {
			if i%stride == 0 || i == len(n.hist)-1 {
				pts = append(pts, [2]float64{s.Eps, s.Sigma})
			}
		}
		c.Curves = append(c.Curves, Curve{Name: "at " + fmtG(n.T) + " K", Source: "the card at its tabulated temperature, integrated on the same path", Points: pts})
	}
	dir, why := sense(&a, &b)
	if why != "" {
		c.omit("between neighbours", fmt.Sprintf("between %s K and %s K the parameters pull the stress in opposite senses (%s against the others): the monotonic stress is then a sum of rising and falling parts as the temperature goes from one neighbour to the other and may have an extreme between them, so the interpolated card need not lie between its neighbours", fmtG(Ta), fmtG(Tb), why))
		return c, nil
	}
	worst, scale := math.Inf(-1), 0.0
	for i := range hm {
		sa, sb, sm := ha[i].Sigma, hb[i].Sigma, hm[i].Sigma
		worst = math.Max(worst, math.Max(sm-math.Max(sa, sb), math.Min(sa, sb)-sm))
		scale = math.Max(scale, math.Max(math.Abs(sa), math.Abs(sb)))
	}
	n := len(hm)
	c.add(Check{
		Name:            "between neighbours",
		Quantity:        "largest excursion of the interpolated card's stress outside the band of its neighbours' stresses at the same strain, over the largest stress (<= 0 inside the band)",
		Value:           worst / scale,
		ReferenceSource: "the interpolated card's monotonic curve lies between its neighbours' where every parameter moves the stress the same way (" + senseWords(dir) + "): closed form sigma = sigmaY + sum C_i/gamma_i (1 - exp(-gamma_i eps_p)) + H eps_p + R(eps_p), monotone in each parameter, derived here",
		Tolerance:       2 * roundTol(n),
		ToleranceKind:   "abs",
		Bound:           "upper",
		ToleranceBasis:  "the round-off bound of each of the two compared curves, " + roundBasis(n),
	})
	return c, nil
}

func senseWords(dir int) string {
	switch dir {
	case 1:
		return "every change from the lower to the higher temperature raises it"
	case -1:
		return "every change from the lower to the higher temperature lowers it"
	}
	return "no parameter changes"
}

func caseErr(name string, err error) error {
	if errors.Is(err, plastic.ErrCanceled) {
		return fmt.Errorf("%w: %w", ErrCanceled, err)
	}
	return &CaseError{Case: name, Err: err}
}

// excursion is the elastic temperature excursion after plastic prestrain:
// tension at the lowest temperature T0 to four yield strains (at most
// MaxStrain/2), unloading to
// zero stress, heating to the highest temperature and cooling back, the
// strain held. With dp = 0 the temperature-rate term gives, exactly, the
// closed form alpha_i(T) = alpha_i(T0) C_i(T)/C_i(T0) (d alpha_i/alpha_i =
// dC_i/C_i, derived from the law), and back at T0 the start. Where the
// heating itself yields (the back stress outgrows the hot yield surface),
// the comparison stops there and the return is omitted.
func excursion(ctx context.Context, tb *plastic.Table, specs []Spec) (Case, error) {
	T0, T1 := tb.T[0], tb.T[len(tb.T)-1]
	m0 := tb.M[0]
	v := newVerifier(specs[0])
	set := v.set
	nT := 100
	dT := (T1 - T0) / float64(nT)
	pre := math.Min(4*v.epsY, MaxStrain/2)
	c := Case{
		Name:    "anisothermal-excursion",
		Kind:    "anisothermal-elastic-excursion",
		Loading: fmt.Sprintf("at %s K, strain control to %.4g (4 yield strains, at most MaxStrain/2) and back to zero stress; then, the strain held, heating to %s K and cooling back to %s K in %d steps of %.4g K each way", fmtG(T0), pre, fmtG(T1), fmtG(T0), nT, dT),
	}
	s := plastic.StateT1D{T: T0}
	if _, err := tb.RunT1D(ctx, &s, plastic.StrainControl, v.hEps, dT, []plastic.PointT{{Value: pre, T: T0}}, set, nil); err != nil {
		return c, caseErr(c.Name, err)
	}
	if _, err := tb.RunT1D(ctx, &s, plastic.StrainControl, v.hEps, dT, []plastic.PointT{{Value: s.EpsP, T: T0}}, set, nil); err != nil {
		return c, caseErr(c.Name, err)
	}
	start := s
	aMax := 0.0
	for i := 0; i < m0.N; i++ {
		aMax = math.Max(aMax, math.Abs(start.Alpha[i]))
	}
	worst, steps, yieldedAt := 0.0, 0, math.NaN()
	var hist []plastic.StateT1D
	visit := func(st *plastic.StateT1D) {
		hist = append(hist, *st)
		if !math.IsNaN(yieldedAt) {
			return
		}
		if st.P != start.P {
			yieldedAt = st.T
			return
		}
		steps++
		m, _ := tb.At(st.T)
		for i := 0; i < m.N; i++ {
			want := start.Alpha[i] * m.Terms[i].C / m0.Terms[i].C
			worst = math.Max(worst, math.Abs(st.Alpha[i]-want)/aMax)
		}
	}
	if _, err := tb.RunT1D(ctx, &s, plastic.StrainControl, v.hEps, dT, []plastic.PointT{{Value: s.Eps, T: T1}, {Value: s.Eps, T: T0}}, set, visit); err != nil {
		return c, caseErr(c.Name, err)
	}
	c.Series = seriesT(hist, m0.N)
	if aMax == 0 {
		c.omit("back stress on the closed form", "the card has no kinematic hardening: no back stress to follow")
		c.omit("back at the start", "the card has no kinematic hardening")
		return c, nil
	}
	// Each increment multiplies alpha_i by fl(C(T1))/fl(C(T0)); the same
	// rounded C appears in the numerator of one increment and the
	// denominator of the next, so the product telescopes to the closed
	// form's C(T)/C(T0) up to 2 roundings per increment, and the closed
	// form has 2 of its own: (2 n + 2) u, doubled for margin.
	tol := func(n int) float64 { return float64(4*n+4) * u }
	if steps == 0 {
		c.measure("temperature at which the heating at zero stress yields", yieldedAt, "K")
		c.omit("back stress on the closed form", fmt.Sprintf("the first heating increment yields (at %s K): no elastic excursion to compare", fmtG(yieldedAt)))
		c.omit("back at the start", "no elastic excursion")
		return c, nil
	}
	c.add(Check{
		Name:            "back stress on the closed form",
		Quantity:        "largest |alpha_i - alpha_i(T0) C_i(T)/C_i(T0)| over the terms and the elastic increments of the excursion, over the largest |alpha_i(T0)|",
		Value:           worst,
		ReferenceSource: "closed form alpha_i(T) = alpha_i(T0) C_i(T)/C_i(T0) at dp = 0, derived here from " + srcTemperatureRate,
		Tolerance:       tol(steps),
		ToleranceKind:   "abs",
		Bound:           "upper",
		ToleranceBasis:  fmt.Sprintf("round-off: 2 roundings of the factor C_i(T_n+1)/C_i(T_n) per increment over %d increments and 2 in the closed form, (2 n + 2) u, doubled; u = 2^-53", steps),
	})
	if !math.IsNaN(yieldedAt) {
		c.measure("temperature at which the heating at zero stress yields", yieldedAt, "K")
		c.omit("back at the start", fmt.Sprintf("the heating yields at %s K: the excursion is not elastic from there on", fmtG(yieldedAt)))
		return c, nil
	}
	back := 0.0
	for i := 0; i < m0.N; i++ {
		back = math.Max(back, math.Abs(s.Alpha[i]-start.Alpha[i])/aMax)
	}
	c.add(Check{
		Name:            "back at the start",
		Quantity:        "largest |alpha_i - alpha_i(T0)| after heating and cooling back to T0, over the largest |alpha_i(T0)|",
		Value:           back,
		Reference:       0,
		ReferenceSource: "an elastic temperature cycle leaves alpha_i/C_i unchanged, so alpha_i returns to its start (" + srcTemperatureRate + ")",
		Tolerance:       tol(2 * nT),
		ToleranceKind:   "abs",
		Bound:           "upper",
		ToleranceBasis:  fmt.Sprintf("round-off as for the closed form, over the %d increments there and back", 2*nT),
	})
	return c, nil
}

// isothermal runs one strain cycle history at a temperature held constant
// (the lowest tabulated temperature and the midpoint of the first pair)
// through the anisothermal driver and through the isothermal one: the
// states must be the same bit for bit, since an increment without a
// temperature change is the isothermal increment (plastic.StepT1D).
func isothermal(ctx context.Context, tb *plastic.Table, specs []Spec) (Case, error) {
	v := newVerifier(specs[0])
	amp := specs[0].StrainAmplitudes[0]
	temps := []float64{tb.T[0], 0.5 * (tb.T[0] + tb.T[1])}
	c := Case{
		Name:    "anisothermal-isothermal",
		Kind:    "anisothermal-isothermal-equivalence",
		Loading: fmt.Sprintf("fully reversed strain cycling at amplitude %s, two cycles, increments of at most %.4g, at %s K and at %s K held constant, by the anisothermal and by the isothermal integrator", fmtG(amp), v.hEps, fmtG(temps[0]), fmtG(temps[1])),
	}
	targets := []float64{amp, -amp, amp, -amp, amp}
	differ, total := 0, 0
	for _, T := range temps {
		m, err := tb.At(T)
		if err != nil {
			return c, caseErr(c.Name, err)
		}
		var want []plastic.State1D
		var s0 plastic.State1D
		path := plastic.Path1D{Control: plastic.StrainControl, Targets: targets, MaxIncrement: v.hEps}
		if _, err := m.Run1D(ctx, &s0, &path, v.set, func(_ int, s *plastic.State1D) { want = append(want, *s) }); err != nil {
			return c, caseErr(c.Name, err)
		}
		pts := make([]plastic.PointT, len(targets))
		for i, x := range targets {
			pts[i] = plastic.PointT{Value: x, T: T}
		}
		i := 0
		s := plastic.StateT1D{T: T}
		if _, err := tb.RunT1D(ctx, &s, plastic.StrainControl, v.hEps, 1, pts, v.set, func(st *plastic.StateT1D) {
			if i >= len(want) || st.State1D != want[i] {
				differ++
			}
			i++
		}); err != nil {
			return c, caseErr(c.Name, err)
		}
		differ += abs(i - len(want))
		total += len(want)
	}
	c.measure("increments compared", float64(total), "")
	c.add(Check{
		Name:            "isothermal history reproduces the isothermal result",
		Quantity:        "increments whose state (strain, plastic strain, p, stress, every back stress) differs in any bit between the anisothermal and the isothermal integrator",
		Value:           float64(differ),
		ReferenceSource: "an increment without a temperature change is the isothermal increment (plastic.StepT1D); the temperature-rate term vanishes with dT (" + srcTemperatureRate + ")",
		Tolerance:       0,
		ToleranceKind:   "abs",
		Bound:           "upper",
		ToleranceBasis:  "exact: the same operations in the same order",
	})
	return c, nil
}

func abs(i int) int {
	if i < 0 {
		return -i
	}
	return i
}

// thermoMechanicalCycles is the number of cycles of the thermo-mechanical
// cases: enough to pass the first transients of the demo-like cards and
// keep the case within a few thousand increments.
const thermoMechanicalCycles = 10

// thermoMechanical returns the thermo-mechanical cycling case, in phase
// (phase 1: the highest temperature at the strain maximum) or out of phase
// (-1): strain between -a and a (a the largest strain amplitude of the
// lowest temperature's spec) and temperature between the lowest and the
// highest tabulated, both linear in time, thermoMechanicalCycles cycles
// from the mean temperature. Invariants: the yield condition after every
// plastic increment at its end temperature, and the bound |alpha_i| <=
// C_i(T)/min gamma_i of every Armstrong-Frederick term (with a_i =
// alpha_i/C_i, d a_i = d eps_p - gamma_i a_i dp shrinks |a_i| once |a_i| >=
// 1/gamma_i, and the temperature-rate term leaves a_i unchanged: derived
// from the law). The mean stress and range of the last cycle are reported.
func thermoMechanical(phase float64) func(context.Context, *plastic.Table, []Spec) (Case, error) {
	return func(ctx context.Context, tb *plastic.Table, specs []Spec) (Case, error) {
		lo, hi := tb.T[0], tb.T[len(tb.T)-1]
		amps := specs[0].StrainAmplitudes
		a := amps[len(amps)-1]
		h := math.Inf(1)
		for _, sp := range specs {
			h = math.Min(h, newVerifier(sp).hEps)
		}
		set := newVerifier(specs[0]).set
		dT := (hi - lo) * h / (2 * a)
		name, words := "thermomechanical-in-phase", "in phase (hottest at the strain maximum)"
		if phase < 0 {
			name, words = "thermomechanical-out-of-phase", "out of phase (coldest at the strain maximum)"
		}
		c := Case{
			Name:    name,
			Kind:    name,
			Loading: fmt.Sprintf("strain between -%s and %s and temperature between %s K and %s K, %s, %d cycles from the mean temperature at zero strain, increments of at most %.4g in strain", fmtG(a), fmtG(a), fmtG(lo), fmtG(hi), words, thermoMechanicalCycles, h),
		}
		Tm := 0.5 * (lo + hi)
		top, bottom := hi, lo
		if phase < 0 {
			top, bottom = lo, hi
		}
		var path []plastic.PointT
		for i := 0; i < thermoMechanicalCycles; i++ {
			path = append(path, plastic.PointT{Value: a, T: top}, plastic.PointT{Value: -a, T: bottom})
		}
		gMin := make([]float64, tb.M[0].N)
		for i := range gMin {
			gMin[i] = math.Inf(1)
			for _, m := range tb.M {
				gMin[i] = math.Min(gMin[i], m.Terms[i].Gamma)
			}
		}
		var hist []plastic.StateT1D
		prevP := 0.0
		var worstF, worstScale, eMax float64
		worstBound := math.Inf(-1)
		kMin := math.Inf(1)
		plasticSteps, n := 0, 0
		s := plastic.StateT1D{T: Tm}
		visit := func(st *plastic.StateT1D) {
			n++
			hist = append(hist, *st)
			m, _ := tb.At(st.T)
			eMax = math.Max(eMax, m.E)
			k := m.YieldRadius(st.P)
			kMin = math.Min(kMin, k)
			if st.P > prevP {
				plasticSteps++
				alpha := st.BackStress(m.N)
				worstF = math.Max(worstF, math.Abs(m.Yield1D(&st.State1D))/k)
				worstScale = math.Max(worstScale, (math.Abs(st.Sigma)+math.Abs(alpha)+k)/k)
			}
			prevP = st.P
			for i := 0; i < m.N; i++ {
				if !m.Terms[i].Linear() {
					worstBound = math.Max(worstBound, math.Abs(st.Alpha[i])/(m.Terms[i].C/gMin[i])-1)
				}
			}
		}
		// All but the last cycle, then the last (its increments from
		// lastStart on).
		_, err := tb.RunT1D(ctx, &s, plastic.StrainControl, h, dT, path[:len(path)-2], set, visit)
		lastStart := len(hist)
		if err == nil {
			_, err = tb.RunT1D(ctx, &s, plastic.StrainControl, h, dT, path[len(path)-2:], set, visit)
		}
		if err != nil {
			return c, caseErr(c.Name, err)
		}
		c.Series = seriesT(hist, tb.M[0].N)
		if plasticSteps == 0 {
			c.omit("yield consistency", "no plastic increment on this path")
		} else {
			c.add(Check{
				Name:            "yield consistency",
				Quantity:        "max |f| / (sigmaY(T) + R(p, T)) after every plastic increment, f at the increment's end temperature",
				Value:           worstF,
				ReferenceSource: "consistency condition f = 0 during plastic flow (rate-independent plasticity; common practice, no source)",
				Tolerance:       stepRel*eMax*h/kMin + 8*u*worstScale,
				ToleranceKind:   "abs",
				Bound:           "upper",
				ToleranceBasis:  fmt.Sprintf("iteration stopping rule (1e-14 E dEps / k with dEps <= %.3g) + 8 u (|sigma| + |alpha| + k)/k round-off of f, max scale %.3g (as the isothermal cases)", h, worstScale),
			})
		}
		hasAF := false
		for i := 0; i < tb.M[0].N; i++ {
			hasAF = hasAF || !tb.M[0].Terms[i].Linear()
		}
		if !hasAF {
			c.omit("back stress within C(T)/min gamma", "the card has no Armstrong-Frederick term")
		} else {
			c.add(Check{
				Name:            "back stress within C(T)/min gamma",
				Quantity:        "largest |alpha_i| / (C_i(T)/min_T gamma_i) - 1 over the Armstrong-Frederick terms and the increments (<= 0 within the bound)",
				Value:           worstBound,
				ReferenceSource: "with a_i = alpha_i/C_i the law gives d a_i = d eps_p - gamma_i a_i dp + 0 dT, which shrinks |a_i| once it reaches 1/gamma_i: |alpha_i| <= C_i(T)/min gamma_i from the virgin state (derived here from " + srcTemperatureRate + ")",
				Tolerance:       float64(4*n) * u,
				ToleranceKind:   "abs",
				Bound:           "upper",
				ToleranceBasis:  fmt.Sprintf("round-off of a_i: at most 4 roundings per increment (the temperature factor and the branch update), accumulated over %d increments; u = 2^-53", n),
			})
		}
		sLo, sHi := math.Inf(1), math.Inf(-1)
		for _, st := range hist[lastStart:] {
			sLo, sHi = math.Min(sLo, st.Sigma), math.Max(sHi, st.Sigma)
		}
		c.measure("mean stress of the last cycle", 0.5*(sLo+sHi), "Pa")
		c.measure("stress range of the last cycle", sHi-sLo, "Pa")
		c.measure("increments", float64(n), "")
		return c, nil
	}
}

// seriesT is the plotted series of an anisothermal history of a material
// with n back-stress terms.
func seriesT(hist []plastic.StateT1D, n int) *Series {
	return downsample(hist, maxSeries, func(st *plastic.StateT1D) Sample {
		return Sample{Strain: st.Eps, Stress: st.Sigma, PlasticStrain: st.EpsP, BackStress: st.BackStress(n), P: st.P}
	})
}
