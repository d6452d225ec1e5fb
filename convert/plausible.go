package convert

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"matgate/schema"
)

// Plausibility limits. Each is a fact of the trade about structural metals;
// the values are from memory of handbook tables (e.g. ASM Handbook vol. 2
// and vol. 1 property tables) and of published Chaboche fits, common
// practice with no single source unless one is named.
const (
	// MinMetalE and MaxMetalE, in Pa: Young's modulus of structural metals
	// lies between about 40 GPa (magnesium alloys, 45 GPa) and about 410
	// GPa (tungsten); 5 GPa and 700 GPa leave a wide margin and still catch
	// a unit slip, which is a factor of 1e3 or more.
	MinMetalE = 5e9
	MaxMetalE = 7e11
	// maxStressPa bounds every other stress-like value (moduli, c, stresses)
	// at 100 times the stiffest metal's E. The fastest Armstrong-Frederick
	// terms of published fits have c of a few times E (from memory); no
	// value of a metal comes near 70 TPa, and the bound keeps every
	// conversion to Pa and every derived value finite.
	maxStressPa = 100 * MaxMetalE
	// Yield strain of metals: high-strength steels and titanium alloys reach
	// about 0.01; above 0.05 the yield stress or E is wrong.
	maxYieldStrain = 0.05
	// Below about 5e-5 (pure annealed aluminium is near 2e-4) the yield
	// stress is almost surely in another unit than E.
	minYieldStrain = 5e-5
	// Below 1e-6 it is no metal's: annealed pure single crystals, the
	// softest, yield at resolved shear stresses of about 1 MPa (from
	// memory; G. E. Dieter, Mechanical Metallurgy, 3rd ed., 1986, ch. 4),
	// a yield strain of about 1e-5; a slip of 1e3 between units lands
	// below 1e-6.
	minYieldStrainError = 1e-6
	// minStrain is one microstrain, the resolution of strain gauges and
	// extensometers (common practice, no source): a verification strain
	// below it is no test's, and it sizes increments to nothing.
	minStrain = 1e-6
	// MaxRate is the largest plausible gamma of an Armstrong-Frederick term
	// or b of Voce's law. Such a law reaches 95 percent of its saturation
	// after a plastic strain of 3/gamma (exp(-3) = 0.05); saturation within
	// 1e-5, gamma > 3e5, is a step, not hardening: usually c and gamma
	// swapped. The fastest terms of published Chaboche fits have gamma of
	// a few thousand, rarely 1e4 or more (from memory).
	MaxRate = 3 / 1e-5
	// Poisson's ratio of structural metals lies between about 0.25
	// (beryllium is lower, 0.03, but is no structural metal here) and
	// 0.44 (lead); outside [0.2, 0.45] the card is suspect. Above 0.49
	// the reference integrator's 3D stress deviator loses digits to
	// round-off (the bulk modulus E/(3(1 - 2 nu)) dwarfs the shear
	// modulus), so such a card cannot be verified in 3D.
	minMetalNu, maxMetalNu = 0.2, 0.45
	maxIntegrableNu        = 0.49
)

// Limits of saturation stresses (each Armstrong-Frederick term's c/gamma,
// Voce's q, their sum; a stress a case drives to).
const (
	// idealStrength is the theoretical strength of a perfect crystal,
	// about E/10 (Orowan's estimate of the cohesive strength; G. E.
	// Dieter, Mechanical Metallurgy, 3rd ed., 1986, ch. 7, from memory).
	// No metal carries a stress above it: an error.
	idealStrength = 0.1
	// strongest: the strongest engineering metals reach true tensile
	// strengths of about 0.015 E (maraging steel 2.4 GPa at E = 190 GPa,
	// cold-drawn pearlitic wire 3 GPa at 205 GPa, beta titanium 1.4 GPa
	// at 105 GPa; from memory of ASM Handbook vols. 1 and 2). A
	// saturation stress above 0.02 E is beyond them: a warning.
	strongest = 0.02
	// maxHardening: annealed pure metals and austenitic stainless steels
	// harden to true stresses of 3 to 5 times their 0.2 % yield stress
	// before necking (from memory: annealed copper about 70 to 300 MPa,
	// 304 stainless 215 to 850 MPa); Chaboche fits that put the yield at
	// a smaller offset double that. Twenty times the yield stress is more
	// strain hardening than any metal shows: a warning.
	maxHardening = 20
	// negligible: a term that adds less than 0.1 % of the yield stress
	// within small strain (smallStrain) changes no stress by more than a
	// tenth of the usual 1 % scatter of a test (common practice, no
	// source): it does nothing; usually c and gamma are swapped, or a term
	// that never saturates has a c far too small.
	negligible = 1e-3
	// smallStrain is the plastic strain over which a term's contribution
	// is judged negligible: the end of small strain, the same limit that
	// bounds the verification cases (MaxStrain, sizing.go).
	smallStrain = MaxStrain
)

// MaxHardening returns the largest saturating hardening h (an
// Armstrong-Frederick term's c/gamma, Voce's q, or their sum) on top of
// the yield stress sy that draws no saturation diagnostic for Young's
// modulus E (all three in one unit): sy + h at most 0.02 E and h at most
// 20 sy. convert/fit keeps its parameters inside it. Negative when sy
// itself is above 0.02 E.
func MaxHardening(E, sy float64) float64 {
	return math.Min(strongest*E-sy, maxHardening*sy)
}

// Plausibility returns the errors and warnings about a card that passed the
// schema but may not be physical, each located in the card's source. The
// card is read as written (its own units). A temperature-dependent card is
// checked at each of its temperatures and across them
// (temperaturePlausibility).
func Plausibility(doc *schema.Document) schema.Diagnostics {
	if doc.Card.IsTemperatureDependent() {
		return append(perTemperature(doc, plausibilityAt), temperaturePlausibility(doc)...)
	}
	return plausibilityAt(doc)
}

// plausibilityAt is Plausibility for a card of one temperature.
func plausibilityAt(doc *schema.Document) schema.Diagnostics {
	c := doc.Card
	var ds schema.Diagnostics
	add := func(sev schema.Severity, pointer, format string, args ...any) {
		ds = append(ds, doc.Diag(sev, pointer, format, args...))
	}
	f, err := StressFactor(c.Units.Stress)
	if err != nil {
		add(schema.SeverityError, "/units/stress", "%v", err)
		return ds
	}
	unit := c.Units.Stress
	E := c.Elastic.YoungsModulus
	ESI := E * f
	plausibleE := ESI >= MinMetalE && ESI <= MaxMetalE
	if !plausibleE {
		msg := fmt.Sprintf("Young's modulus %g %s is %.3g GPa, outside the range of metals (%g to %g GPa)", E, unit, ESI/1e9, MinMetalE/1e9, MaxMetalE/1e9)
		if u := likelyUnit(E); u != "" {
			msg += fmt.Sprintf("; the card is almost surely written in %s, not %s", u, unit)
		}
		add(schema.SeverityError, "/elastic/youngs_modulus", "%s", msg)
	}
	ds = append(ds, stressBounds(doc, f)...)
	// sane: E and every stress are in the range of metals, so that ratios
	// between them mean something; else they would compare values written
	// in different units, and the unit is what the errors above report.
	sane := !ds.HasErrors()
	switch nu := c.Elastic.PoissonRatio; {
	case nu > maxIntegrableNu:
		add(schema.SeverityError, "/elastic/poisson_ratio", "Poisson's ratio %g is above %g: nearly incompressible, no metal, and beyond what the reference integrator resolves in 3D", nu, maxIntegrableNu)
	case nu < minMetalNu || nu > maxMetalNu:
		add(schema.SeverityWarning, "/elastic/poisson_ratio", "Poisson's ratio %g is outside %g to %g, the range of structural metals", nu, minMetalNu, maxMetalNu)
	}
	sy := c.Plasticity.YieldStress
	epsY := sy / E
	switch {
	case !sane:
	case epsY > maxYieldStrain:
		add(schema.SeverityError, "/plasticity/yield_stress", "yield strain yield_stress/E = %g/%g = %.3g is above %g: the yield stress or Young's modulus is wrong", sy, E, epsY, maxYieldStrain)
		sane = false
	case epsY < minYieldStrainError:
		add(schema.SeverityError, "/plasticity/yield_stress", "yield strain yield_stress/E = %g/%g = %.3g is below %g, no metal's%s", sy, E, epsY, minYieldStrainError, yieldUnitHint(sy, E, f, unit))
		sane = false
	case epsY < minYieldStrain:
		add(schema.SeverityWarning, "/plasticity/yield_stress", "yield strain yield_stress/E = %g/%g = %.3g is below %g: is the yield stress in another unit than %s?", sy, E, epsY, minYieldStrain, unit)
	}
	for i, t := range c.Plasticity.Kinematic {
		if t.TangentModulus != nil && *t.TangentModulus >= E {
			add(schema.SeverityError, fmt.Sprintf("/plasticity/kinematic/%d/tangent_modulus", i), "tangent modulus %g %s is not below Young's modulus %g %s", *t.TangentModulus, unit, E, unit)
			sane = false
		}
	}
	if iso := c.Plasticity.Isotropic; iso != nil && iso.Q != nil && sy+*iso.Q <= 0 {
		add(schema.SeverityError, "/plasticity/isotropic/q", "yield_stress + q = %g + (%g) = %g %s is not positive: the yield surface would vanish", sy, *iso.Q, sy+*iso.Q, unit)
		sane = false
	}
	var d schema.Derived
	if sane {
		ds = append(ds, hardening(doc)...)
		d = Derive(c)
		if d.SaturationStress != nil && *d.SaturationStress < sy {
			add(schema.SeverityWarning, "/plasticity", "saturation stress yield_stress + sum c/gamma + q = %g %s is below the yield stress %g %s: the card softens overall", *d.SaturationStress, unit, sy, unit)
		}
	}
	v := c.Verification
	if v == nil {
		return ds
	}
	if m := v.MonotonicStrain; m != nil {
		// An error: the monotonic cases compare the plastic branch.
		strainBounds(add, "/verification/monotonic_strain", "monotonic strain", *m, epsY, sane, schema.SeverityError, "the tension stays elastic and has nothing to verify")
	}
	for i, a := range v.StrainAmplitudes {
		strainBounds(add, fmt.Sprintf("/verification/strain_amplitudes/%d", i), "strain amplitude", a, epsY, sane, schema.SeverityWarning, "the cycle stays elastic")
	}
	if !sane {
		return ds
	}
	if r := v.Ratcheting; r != nil {
		peak := r.StressAmplitude + math.Abs(r.MeanStress)
		switch {
		case peak > idealStrength*E:
			add(schema.SeverityError, "/verification/ratcheting", "stress_amplitude + |mean_stress| = %g %s is above E/10 = %g %s, the ideal strength of a perfect crystal: no metal carries it", peak, unit, idealStrength*E, unit)
		case d.SaturationStress != nil && peak >= *d.SaturationStress:
			add(schema.SeverityError, "/verification/ratcheting", "stress_amplitude + |mean_stress| = %g %s is not below the saturation stress %g %s: stress control has no solution", peak, unit, *d.SaturationStress, unit)
		}
	}
	for i, r := range v.References {
		for j, p := range r.Points {
			// A strain-controlled curve in another stress unit is left to
			// verification, whose diagnosis names the unit (worker.Diagnose),
			// for inline points and files alike.
			if r.Control == schema.ControlStress && d.SaturationStress != nil && math.Abs(p[1]) >= *d.SaturationStress {
				add(schema.SeverityError, fmt.Sprintf("/verification/references/%d/points/%d/1", i, j), "stress %g %s of a stress-controlled curve is not below the saturation stress %g %s: stress control has no solution", p[1], unit, *d.SaturationStress, unit)
				break
			}
		}
	}
	return ds
}

// strainBounds adds the diagnostics of a verification strain eps: an
// error below one microstrain and, when the card is sane (see
// Plausibility), one of severity sev when it does not exceed the yield
// strain epsY.
func strainBounds(add func(schema.Severity, string, string, ...any), pointer, what string, eps, epsY float64, sane bool, sev schema.Severity, elastic string) {
	switch {
	case eps < minStrain:
		add(schema.SeverityError, pointer, "%s %g is below one microstrain (%g), the resolution of strain gauges: no test imposes it", what, eps, minStrain)
	case sane && eps <= epsY:
		add(sev, pointer, "%s %g is not above the yield strain %.3g: %s", what, eps, epsY, elastic)
	}
}

// yieldUnitHint says in which stress unit the yield stress sy (written in
// unit, factor f to Pa) gives a plausible yield strain against E, if one
// does; "" when none.
func yieldUnitHint(sy, E, f float64, unit string) string {
	for _, u := range StressUnits {
		if e := sy * stressFactors[u] / (E * f); u != unit && e >= minYieldStrain && e <= maxYieldStrain {
			return fmt.Sprintf("; read in %s it is %.3g: is the yield stress in %s, not %s?", u, e, u, unit)
		}
	}
	return ""
}

// stressBounds returns an error for every stress-like value of the card
// (other than E, bounded on its own) beyond maxStressPa.
func stressBounds(doc *schema.Document, f float64) schema.Diagnostics {
	c := doc.Card
	var ds schema.Diagnostics
	check := func(pointer string, v *float64) bool {
		if v == nil || math.Abs(*v)*f <= maxStressPa {
			return true
		}
		ds = append(ds, doc.Diag(schema.SeverityError, pointer, "%g %s is above %g %s, 100 times the stiffest metal's Young's modulus: no value of a metal; is the stress unit right?", *v, c.Units.Stress, maxStressPa/f, c.Units.Stress))
		return false
	}
	check("/plasticity/yield_stress", &c.Plasticity.YieldStress)
	for i, t := range c.Plasticity.Kinematic {
		p := fmt.Sprintf("/plasticity/kinematic/%d", i)
		check(p+"/tangent_modulus", t.TangentModulus)
		check(p+"/plastic_modulus", t.PlasticModulus)
		check(p+"/c", t.C)
	}
	if iso := c.Plasticity.Isotropic; iso != nil {
		check("/plasticity/isotropic/modulus", iso.Modulus)
		check("/plasticity/isotropic/q", iso.Q)
	}
	if v := c.Verification; v != nil {
		if r := v.Ratcheting; r != nil {
			check("/verification/ratcheting/mean_stress", &r.MeanStress)
			check("/verification/ratcheting/stress_amplitude", &r.StressAmplitude)
		}
		for i, r := range v.References {
			for j := range r.Points {
				if !check(fmt.Sprintf("/verification/references/%d/points/%d/1", i, j), &r.Points[j][1]) {
					break // one a reference is enough
				}
			}
		}
	}
	return ds
}

// hardening returns the diagnostics of the hardening of a card whose E
// and yield stress are plausible: each Armstrong-Frederick term's
// saturation c/gamma and rate gamma, Voce's q and b, and their sum,
// against the yield stress and E (see the limits above), and a linear term
// too weak to matter. A term that looks misread gets the corrected
// readings that make it plausible: gamma given per percent strain (100
// times too small) and c and gamma swapped.
func hardening(doc *schema.Document) schema.Diagnostics {
	c := doc.Card
	unit := c.Units.Stress
	E, sy := c.Elastic.YoungsModulus, c.Plasticity.YieldStress
	var ds schema.Diagnostics
	flagged := false // a part is above a limit: the sum is not reported again
	sum := 0.0
	for i, t := range c.Plasticity.Kinematic {
		if t.Model == schema.ModelLinear {
			H := 0.0
			switch {
			case t.PlasticModulus != nil:
				H = *t.PlasticModulus
			case t.TangentModulus != nil:
				H = TangentToPlastic(E, *t.TangentModulus)
			}
			if H*smallStrain < negligible*sy {
				ds = append(ds, doc.Diag(schema.SeverityWarning, fmt.Sprintf("/plasticity/kinematic/%d", i), "plastic modulus H = %.6g %s adds %.3g %s within a plastic strain of %g, below %g %% of the yield stress: the term does nothing", H, unit, H*smallStrain, unit, smallStrain, 100*negligible))
			}
			continue
		}
		if t.C == nil || t.Gamma == nil {
			continue
		}
		C, g := *t.C, *t.Gamma
		s := C / g
		sum += s
		p := fmt.Sprintf("/plasticity/kinematic/%d", i)
		subject := fmt.Sprintf("saturation c/gamma = %g/%g = %.6g %s", C, g, s, unit)
		sev, reason := judgeHardening(E, sy, s, unit)
		var reasons []string
		if reason != "" {
			reasons = append(reasons, subject+" "+reason)
			flagged = true
		}
		if r := reach(C, g); r < negligible*sy {
			of := subject
			if r < 0.99*s { // the term does not saturate within small strain
				of = fmt.Sprintf("%s, of which the term reaches %.3g %s within a plastic strain of %g,", subject, r, unit, smallStrain)
			}
			reasons = append(reasons, fmt.Sprintf("%s is below %g %% of the yield stress: the term does nothing", of, 100*negligible))
		}
		if g > MaxRate {
			reasons = append(reasons, fmt.Sprintf("gamma %g saturates the term within a plastic strain of %.2g (3/gamma), below 1e-5: a step, not hardening", g, 3/g))
		}
		if len(reasons) == 0 {
			continue
		}
		var readings []string
		pointer := p
		if termPlausible(E, sy, C, 100*g) {
			readings = append(readings, fmt.Sprintf("gamma looks given per percent strain: gamma = %g gives a saturation of %.6g %s", 100*g, s/100, unit))
			pointer = p + "/gamma"
		}
		if termPlausible(E, sy, g, C) {
			readings = append(readings, fmt.Sprintf("c and gamma look swapped: c = %g %s, gamma = %g give a saturation of %.6g %s", g, unit, C, g/C, unit))
		}
		if len(readings) == 0 && g > MaxRate {
			pointer = p + "/gamma"
		}
		msg := strings.Join(reasons, "; ")
		if len(readings) > 0 {
			msg += "; " + strings.Join(readings, "; or ")
		}
		ds = append(ds, doc.Diag(sev, pointer, "%s", msg))
	}
	if iso := c.Plasticity.Isotropic; iso != nil && iso.Model == schema.ModelVoce && iso.Q != nil && iso.B != nil {
		q, b := *iso.Q, *iso.B
		if sev, reason := judgeHardening(E, sy, q, unit); reason != "" {
			ds = append(ds, doc.Diag(sev, "/plasticity/isotropic/q", "saturation q = %g %s %s", q, unit, reason))
			flagged = true
		}
		if b > MaxRate {
			ds = append(ds, doc.Diag(schema.SeverityWarning, "/plasticity/isotropic/b", "b %g saturates the isotropic hardening within a plastic strain of %.2g (3/b), below 1e-5: a step, not hardening", b, 3/b))
		}
		sum += math.Max(q, 0)
	}
	if !flagged {
		if sev, reason := judgeHardening(E, sy, sum, unit); reason != "" {
			ds = append(ds, doc.Diag(sev, "/plasticity", "saturating hardening sum c/gamma + q = %.6g %s %s", sum, unit, reason))
		}
	}
	return ds
}

// judgeHardening returns the severity of a saturating hardening h on top
// of the yield stress sy, for Young's modulus E (all in unit), and the
// reason as the end of a sentence; a warning and "" when it is plausible.
func judgeHardening(E, sy, h float64, unit string) (schema.Severity, string) {
	switch top := sy + h; {
	case !(top <= idealStrength*E): // also NaN and Inf
		return schema.SeverityError, fmt.Sprintf("brings the stress to %.6g %s, above E/10 = %g %s, the ideal strength of a perfect crystal: no metal reaches it", top, unit, idealStrength*E, unit)
	case top > strongest*E:
		return schema.SeverityWarning, fmt.Sprintf("brings the stress to %.6g %s, above 0.02 E = %g %s, beyond the true tensile strength of the strongest metals (about 0.015 E)", top, unit, strongest*E, unit)
	case h > maxHardening*sy:
		return schema.SeverityWarning, fmt.Sprintf("is %.3g times the yield stress %g %s, above %d: more strain hardening than any metal shows", h/sy, sy, unit, maxHardening)
	}
	return schema.SeverityWarning, ""
}

// termPlausible reports whether an Armstrong-Frederick term (c, gamma)
// draws no diagnostic of its own on a card with E and yield stress sy.
func termPlausible(E, sy, C, gamma float64) bool {
	return gamma <= MaxRate && reach(C, gamma) >= negligible*sy && C/gamma <= MaxHardening(E, sy)
}

// reach returns the back stress an Armstrong-Frederick term reaches from
// zero over a monotonic plastic strain of smallStrain,
//
//	alpha = (c/gamma) (1 - exp(-gamma eps_p)),
//
// the branch solution of d alpha = c d eps_p - gamma alpha d eps_p
// (Armstrong and Frederick, 1966; Lemaitre and Chaboche, Mechanics of
// Solid Materials, 1990, ch. 5, from memory). Written with expm1 so that a
// term with gamma eps_p << 1 gives c eps_p to full precision.
func reach(C, gamma float64) float64 {
	return -C / gamma * math.Expm1(-gamma*smallStrain)
}

// likelyUnit returns the stress unit in which a modulus written as the bare
// number E falls in the range of metals, or "" when none or several do.
func likelyUnit(E float64) string {
	found := ""
	for _, u := range StressUnits {
		if v := E * stressFactors[u]; v >= MinMetalE && v <= MaxMetalE {
			if found != "" {
				return ""
			}
			found = u
		}
	}
	return found
}

// Prepare runs everything that follows the schema on a decoded card: the
// plausibility checks, the recomputation of any derived block and digest the
// card states, Normalize, the sizing limits of the cases and the size rule
// of the normalized card (see MaxReferenceBytes). It returns the canonical card (nil when there
// are errors) and every diagnostic, warnings included.
func Prepare(doc *schema.Document, opts *Options) (*schema.Card, schema.Diagnostics) {
	ds := Plausibility(doc)
	if ds.HasErrors() {
		return nil, sortDiags(ds)
	}
	n, err := Normalize(doc.Card, opts)
	if err != nil {
		var fe *FieldError
		if errors.As(err, &fe) {
			return nil, sortDiags(append(ds, doc.Diag(schema.SeverityError, fe.Pointer, "%v", fe.Err)))
		}
		return nil, sortDiags(append(ds, doc.Diag(schema.SeverityError, "", "%v", err)))
	}
	ds = append(ds, checkDigest(doc, n)...)
	if doc.Card.IsTemperatureDependent() {
		ds = append(ds, perTemperature(doc, func(sd *schema.Document) schema.Diagnostics {
			nk, err := Normalize(sd.Card, opts)
			if err != nil {
				return schema.Diagnostics{sd.Diag(schema.SeverityError, "", "%v", err)}
			}
			return append(checkStated(sd), usable(sd, nk)...)
		})...)
	} else {
		ds = append(append(ds, checkStated(doc)...), usable(doc, n)...)
	}
	ds = append(ds, normalizedSize(doc, n)...)
	if ds.HasErrors() {
		return nil, sortDiags(ds)
	}
	return n, sortDiags(ds)
}

// usable returns the diagnostics of the canonical card n of a card of one
// temperature that the reference integrator and the sizing limits give.
func usable(doc *schema.Document, n *schema.Card) schema.Diagnostics {
	ds := Sizing(doc, n)
	if _, err := Material(n); err != nil {
		ds = append(ds, doc.Diag(schema.SeverityError, "/plasticity", "the integrator cannot use these parameters: %v", err))
	}
	return ds
}

// checkDigest compares the digest a card states with the one recomputed;
// n is the card's canonical form.
func checkDigest(doc *schema.Document, n *schema.Card) schema.Diagnostics {
	if c := doc.Card; c.Digest != "" && c.Digest != n.Digest {
		return schema.Diagnostics{doc.Diag(schema.SeverityError, "/digest", "digest %s does not match the card's content, whose digest is %s: the card was changed after it was normalized", c.Digest, n.Digest)}
	}
	return nil
}

// sortDiags orders diagnostics by source position, as a reader goes
// through the file; diagnostics without a position come first.
func sortDiags(ds schema.Diagnostics) schema.Diagnostics {
	sort.SliceStable(ds, func(i, j int) bool {
		a, b := ds[i].Pos, ds[j].Pos
		if a.Line != b.Line {
			return a.Line < b.Line
		}
		return a.Column < b.Column
	})
	return ds
}

// statedTolerance is the relative agreement required between a derived
// value a card states and the recomputed one: the canonical encoding prints
// shortest round-trip decimals, so anything beyond round-off is a change.
const statedTolerance = 1e-12

// checkStated compares the derived block a card of one temperature states
// with the one recomputed.
func checkStated(doc *schema.Document) schema.Diagnostics {
	var ds schema.Diagnostics
	c := doc.Card
	if c.Derived == nil {
		return ds
	}
	want := Derive(c)
	got := c.Derived
	mismatch := func(pointer string, stated, recomputed float64) {
		ds = append(ds, doc.Diag(schema.SeverityError, pointer, "stated %g, but the card's parameters give %g", stated, recomputed))
	}
	if !relClose(got.YieldStrain, want.YieldStrain, statedTolerance) {
		mismatch("/derived/yield_strain", got.YieldStrain, want.YieldStrain)
	}
	if len(got.Kinematic) != len(want.Kinematic) {
		ds = append(ds, doc.Diag(schema.SeverityError, "/derived/kinematic", "states %d terms, but the card has %d", len(got.Kinematic), len(want.Kinematic)))
	} else {
		for i := range want.Kinematic {
			p := fmt.Sprintf("/derived/kinematic/%d", i)
			compareOpt(&ds, doc, p+"/plastic_modulus", got.Kinematic[i].PlasticModulus, want.Kinematic[i].PlasticModulus)
			compareOpt(&ds, doc, p+"/tangent_modulus", got.Kinematic[i].TangentModulus, want.Kinematic[i].TangentModulus)
			compareOpt(&ds, doc, p+"/saturation", got.Kinematic[i].Saturation, want.Kinematic[i].Saturation)
		}
	}
	compareOpt(&ds, doc, "/derived/saturation_stress", got.SaturationStress, want.SaturationStress)
	return ds
}

func compareOpt(ds *schema.Diagnostics, doc *schema.Document, pointer string, stated, recomputed *float64) {
	switch {
	case stated == nil && recomputed == nil:
	case stated == nil:
		*ds = append(*ds, doc.Diag(schema.SeverityError, pointer, "missing; the card's parameters give %g", *recomputed))
	case recomputed == nil:
		*ds = append(*ds, doc.Diag(schema.SeverityError, pointer, "stated %g, but the card's parameters define no such value", *stated))
	case !relClose(*stated, *recomputed, statedTolerance):
		*ds = append(*ds, doc.Diag(schema.SeverityError, pointer, "stated %g, but the card's parameters give %g", *stated, *recomputed))
	}
}
