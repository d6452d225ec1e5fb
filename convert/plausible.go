package convert

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"matgate/schema"
)

// Plausibility limits. Each is a fact of the trade about structural metals,
// common practice with no single source; the values are from memory of
// handbook tables (e.g. ASM Handbook vol. 2 and vol. 1 property tables).
const (
	// Young's modulus of structural metals lies between about 40 GPa
	// (magnesium alloys, 45 GPa) and about 410 GPa (tungsten); 5 GPa and
	// 700 GPa leave a wide margin and still catch a unit slip, which is a
	// factor of 1e3 or more.
	minMetalE = 5e9
	maxMetalE = 7e11
	// Yield strain of metals: high-strength steels and titanium alloys reach
	// about 0.01; above 0.05 the yield stress or E is wrong.
	maxYieldStrain = 0.05
	// Below about 5e-5 (pure annealed aluminium is near 2e-4) the yield
	// stress is almost surely in another unit than E.
	minYieldStrain = 5e-5
	// An Armstrong-Frederick term reaches 95 percent of saturation after a
	// plastic strain of 3/gamma (exp(-3) = 0.05). Saturation within 1e-5,
	// gamma > 3e5, is a step, not hardening: usually C and gamma swapped.
	maxGamma = 3 / 1e-5
	// Poisson's ratio of structural metals lies between about 0.25
	// (beryllium is lower, 0.03, but is no structural metal here) and
	// 0.44 (lead); outside [0.2, 0.45] the card is suspect. Above 0.49
	// the reference integrator's 3D stress deviator loses digits to
	// round-off (the bulk modulus E/(3(1 - 2 nu)) dwarfs the shear
	// modulus), so such a card cannot be verified in 3D.
	minMetalNu, maxMetalNu = 0.2, 0.45
	maxIntegrableNu        = 0.49
)

// Plausibility returns the errors and warnings about a card that passed the
// schema but may not be physical, each located in the card's source. The
// card is read as written (its own units).
func Plausibility(doc *schema.Document) schema.Diagnostics {
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
	plausibleE := ESI >= minMetalE && ESI <= maxMetalE
	if !plausibleE {
		msg := fmt.Sprintf("Young's modulus %g %s is %.3g GPa, outside the range of metals (%g to %g GPa)", E, unit, ESI/1e9, minMetalE/1e9, maxMetalE/1e9)
		if u := likelyUnit(E); u != "" {
			msg += fmt.Sprintf("; the card is almost surely written in %s, not %s", u, unit)
		}
		add(schema.SeverityError, "/elastic/youngs_modulus", "%s", msg)
	}
	switch nu := c.Elastic.PoissonRatio; {
	case nu > maxIntegrableNu:
		add(schema.SeverityError, "/elastic/poisson_ratio", "Poisson's ratio %g is above %g: nearly incompressible, no metal, and beyond what the reference integrator resolves in 3D", nu, maxIntegrableNu)
	case nu < minMetalNu || nu > maxMetalNu:
		add(schema.SeverityWarning, "/elastic/poisson_ratio", "Poisson's ratio %g is outside %g to %g, the range of structural metals", nu, minMetalNu, maxMetalNu)
	}
	sy := c.Plasticity.YieldStress
	switch epsY := sy / E; {
	case epsY > maxYieldStrain:
		add(schema.SeverityError, "/plasticity/yield_stress", "yield strain yield_stress/E = %g/%g = %.3g is above %g: the yield stress or Young's modulus is wrong", sy, E, epsY, maxYieldStrain)
	case epsY < minYieldStrain && plausibleE: // else E is the slip, reported above
		add(schema.SeverityWarning, "/plasticity/yield_stress", "yield strain yield_stress/E = %g/%g = %.3g is below %g: is the yield stress in another unit than %s?", sy, E, epsY, minYieldStrain, unit)
	}
	for i, t := range c.Plasticity.Kinematic {
		p := fmt.Sprintf("/plasticity/kinematic/%d", i)
		if t.TangentModulus != nil && *t.TangentModulus >= E {
			add(schema.SeverityError, p+"/tangent_modulus", "tangent modulus %g %s is not below Young's modulus %g %s", *t.TangentModulus, unit, E, unit)
		}
		if t.Gamma != nil && *t.Gamma > maxGamma {
			add(schema.SeverityWarning, p+"/gamma", "gamma %g saturates the term within a plastic strain of %.2g (3/gamma), below 1e-5: a step, not hardening; are c and gamma swapped?", *t.Gamma, 3 / *t.Gamma)
		}
	}
	d := Derive(c)
	if iso := c.Plasticity.Isotropic; iso != nil && iso.Q != nil && sy+*iso.Q <= 0 {
		add(schema.SeverityError, "/plasticity/isotropic/q", "yield_stress + q = %g + (%g) = %g %s is not positive: the yield surface would vanish", sy, *iso.Q, sy+*iso.Q, unit)
	}
	if d.SaturationStress != nil && *d.SaturationStress < sy {
		add(schema.SeverityWarning, "/plasticity", "saturation stress yield_stress + sum c/gamma + q = %g %s is below the yield stress %g %s: the card softens overall", *d.SaturationStress, unit, sy, unit)
	}
	if v := c.Verification; v != nil {
		epsY := sy / E
		for i, a := range v.StrainAmplitudes {
			if a <= epsY {
				add(schema.SeverityWarning, fmt.Sprintf("/verification/strain_amplitudes/%d", i), "strain amplitude %g is not above the yield strain %.3g: the cycle stays elastic", a, epsY)
			}
		}
		if r := v.Ratcheting; r != nil && d.SaturationStress != nil {
			if peak := r.StressAmplitude + math.Abs(r.MeanStress); peak >= *d.SaturationStress {
				add(schema.SeverityError, "/verification/ratcheting", "stress_amplitude + |mean_stress| = %g %s is not below the saturation stress %g %s: stress control has no solution", peak, unit, *d.SaturationStress, unit)
			}
		}
	}
	return ds
}

// likelyUnit returns the stress unit in which a modulus written as the bare
// number E falls in the range of metals, or "" when none or several do.
func likelyUnit(E float64) string {
	found := ""
	for _, u := range StressUnits {
		if v := E * stressFactors[u]; v >= minMetalE && v <= maxMetalE {
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
// card states, and Normalize. It returns the canonical card (nil when there
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
	ds = append(append(ds, checkStated(doc, n)...), Sizing(doc, n)...)
	if _, err := Material(n); err != nil {
		ds = append(ds, doc.Diag(schema.SeverityError, "/plasticity", "the integrator cannot use these parameters: %v", err))
	}
	if ds.HasErrors() {
		return nil, sortDiags(ds)
	}
	return n, sortDiags(ds)
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

// checkStated compares the derived block and digest a card states with
// those recomputed; n is the card's canonical form.
func checkStated(doc *schema.Document, n *schema.Card) schema.Diagnostics {
	var ds schema.Diagnostics
	c := doc.Card
	if c.Digest != "" && c.Digest != n.Digest {
		ds = append(ds, doc.Diag(schema.SeverityError, "/digest", "digest %s does not match the card's content, whose digest is %s: the card was changed after it was normalized", c.Digest, n.Digest))
	}
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
