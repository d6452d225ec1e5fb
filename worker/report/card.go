package report

import (
	"encoding/json"
	"fmt"
	"strconv"
	"strings"

	"matgate/schema"
)

// param is one line of the card's parameter table.
type param struct {
	Name, Symbol, Value, Unit string
}

// cardView is the card as the first screen shows it.
type cardView struct {
	Title, Source string
	Temperature   string
	Params        []param
	Sizing        []param // how the verification was sized
	References    []string
}

// readCard returns the card view of the record's canonical card (SI) in
// the display's units.
func readCard(canonical json.RawMessage, u display) (cardView, error) {
	var c schema.Card
	if err := json.Unmarshal(canonical, &c); err != nil {
		return cardView{}, fmt.Errorf("canonical card: %w", err)
	}
	v := cardView{Title: c.Title, Source: c.Source}
	if c.Temperature != nil {
		// The canonical card is in kelvin; NIST SP 811 (2008) 4.2.1.1:
		// t/°C = T/K - 273.15.
		v.Temperature = fmt.Sprintf("%s K (%s °C)", num(*c.Temperature), num(*c.Temperature-273.15))
	}
	stress := func(name, sym string, pa float64) param {
		return param{Name: name, Symbol: sym, Value: num(pa / u.Pa), Unit: u.Unit}
	}
	plain := func(name, sym string, x float64) param {
		return param{Name: name, Symbol: sym, Value: num(x)}
	}
	v.Params = append(v.Params,
		stress("Young's modulus", "E", c.Elastic.YoungsModulus),
		plain("Poisson ratio", "ν", c.Elastic.PoissonRatio),
		stress("yield stress", "σy", c.Plasticity.YieldStress))
	var derived []schema.DerivedTerm
	if c.Derived != nil {
		derived = c.Derived.Kinematic
		v.Params = append(v.Params, param{Name: "yield strain (derived)", Symbol: "σy/E", Value: pct(c.Derived.YieldStrain), Unit: "%"})
	}
	for i, t := range c.Plasticity.Kinematic {
		term := "back stress " + strconv.Itoa(i+1)
		var d schema.DerivedTerm
		if i < len(derived) {
			d = derived[i]
		}
		switch t.Model {
		case schema.ModelLinear:
			if t.PlasticModulus != nil {
				v.Params = append(v.Params, stress(term+", linear (Prager): plastic modulus", "H", *t.PlasticModulus))
			}
			if d.TangentModulus != nil {
				v.Params = append(v.Params, stress(term+": tangent modulus (derived)", "Et", *d.TangentModulus))
			}
		case schema.ModelArmstrongFrederick:
			if t.C != nil && t.Gamma != nil {
				v.Params = append(v.Params,
					stress(term+", Armstrong-Frederick: modulus", "C", *t.C),
					plain(term+": dynamic recovery", "γ", *t.Gamma))
			}
			if d.Saturation != nil {
				v.Params = append(v.Params, stress(term+": saturation (derived)", "C/γ", *d.Saturation))
			}
		}
	}
	if is := c.Plasticity.Isotropic; is != nil {
		switch is.Model {
		case schema.ModelVoce:
			if is.Q != nil && is.B != nil {
				v.Params = append(v.Params, stress("isotropic, Voce: saturation", "Q", *is.Q), plain("isotropic, Voce: rate", "b", *is.B))
			}
		case schema.ModelLinear:
			if is.Modulus != nil {
				v.Params = append(v.Params, stress("isotropic, linear: modulus", "K", *is.Modulus))
			}
		}
	}
	if c.Derived != nil && c.Derived.SaturationStress != nil {
		v.Params = append(v.Params, stress("saturation stress (derived)", "σy + ΣC/γ + Q", *c.Derived.SaturationStress))
	}
	if vs := c.Verification; vs != nil {
		v.Sizing = append(v.Sizing, param{Name: "profile", Value: vs.Profile})
		if vs.MonotonicStrain != nil {
			v.Sizing = append(v.Sizing, param{Name: "monotonic strain", Value: pct(*vs.MonotonicStrain), Unit: "%"})
		}
		if len(vs.StrainAmplitudes) > 0 {
			var a []string
			for _, x := range vs.StrainAmplitudes {
				a = append(a, pct(x))
			}
			v.Sizing = append(v.Sizing, param{Name: "strain amplitudes", Value: strings.Join(a, ", "), Unit: "%"})
		}
		if vs.Cycles != nil {
			v.Sizing = append(v.Sizing, param{Name: "cycles of the strain-controlled cases", Value: strconv.Itoa(*vs.Cycles)})
		}
		if r := vs.Ratcheting; r != nil {
			v.Sizing = append(v.Sizing, param{Name: "ratcheting: mean stress, amplitude, cycles",
				Value: fmt.Sprintf("%s, %s %s, %d", num(r.MeanStress/u.Pa), num(r.StressAmplitude/u.Pa), u.Unit, r.Cycles)})
		}
		for _, r := range vs.References {
			s := fmt.Sprintf("%s (%s, %d points", r.Name, r.Kind, len(r.Points))
			if r.Control != "" {
				s += ", " + r.Control + " control"
			}
			if r.Tolerance != nil {
				s += ", tolerance " + num(100*r.Tolerance.Rel) + " % of the peak"
			}
			v.References = append(v.References, s+")")
		}
	}
	return v, nil
}

// pct prints a strain in percent with 4 significant digits.
func pct(x float64) string { return num(100 * x) }
