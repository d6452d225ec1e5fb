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
	// The canonical card is in kelvin; NIST SP 811 (2008) 4.2.1.1:
	// t/°C = T/K - 273.15.
	if c.Temperature != nil {
		v.Temperature = fmt.Sprintf("%s K (%s °C)", num(*c.Temperature), num(*c.Temperature-273.15))
	}
	if c.IsTemperatureDependent() {
		k, cel := make([]string, len(c.Temperatures)), make([]string, len(c.Temperatures))
		for i, T := range c.Temperatures {
			k[i], cel[i] = strconv.FormatFloat(T, 'g', -1, 64), num(T-273.15)
		}
		v.Temperature = fmt.Sprintf("%s K (%s °C); parameters that change with temperature are listed at each, interpolated linearly between", strings.Join(k, ", "), strings.Join(cel, ", "))
	}
	// value prints the parameter at pointer: its list at the card's
	// temperatures when it has one, else x.
	value := func(pointer string, x float64, f func(float64) string) string {
		l, ok := c.Tabulated[pointer]
		if !ok {
			return f(x)
		}
		out := make([]string, len(l))
		for i, y := range l {
			out[i] = f(y)
		}
		return strings.Join(out, ", ")
	}
	stress := func(name, sym, pointer string, pa float64) param {
		return param{Name: name, Symbol: sym, Value: value(pointer, pa, func(x float64) string { return num(x / u.Pa) }), Unit: u.Unit}
	}
	plain := func(name, sym, pointer string, x float64) param {
		return param{Name: name, Symbol: sym, Value: value(pointer, x, num)}
	}
	v.Params = append(v.Params,
		stress("Young's modulus", "E", "/elastic/youngs_modulus", c.Elastic.YoungsModulus),
		plain("Poisson ratio", "ν", "/elastic/poisson_ratio", c.Elastic.PoissonRatio),
		stress("yield stress", "σy", "/plasticity/yield_stress", c.Plasticity.YieldStress))
	var derived []schema.DerivedTerm
	if c.Derived != nil {
		derived = c.Derived.Kinematic
		v.Params = append(v.Params, param{Name: "yield strain (derived)", Symbol: "σy/E", Value: value("/derived/yield_strain", c.Derived.YieldStrain, pct), Unit: "%"})
	}
	for i, t := range c.Plasticity.Kinematic {
		term := "back stress " + strconv.Itoa(i+1)
		at := "/plasticity/kinematic/" + strconv.Itoa(i) + "/"
		dat := "/derived/kinematic/" + strconv.Itoa(i) + "/"
		var d schema.DerivedTerm
		if i < len(derived) {
			d = derived[i]
		}
		switch t.Model {
		case schema.ModelLinear:
			if t.PlasticModulus != nil {
				v.Params = append(v.Params, stress(term+", linear (Prager): plastic modulus", "H", at+"plastic_modulus", *t.PlasticModulus))
			}
			if d.TangentModulus != nil {
				v.Params = append(v.Params, stress(term+": tangent modulus (derived)", "Et", dat+"tangent_modulus", *d.TangentModulus))
			}
		case schema.ModelArmstrongFrederick:
			if t.C != nil && t.Gamma != nil {
				v.Params = append(v.Params,
					stress(term+", Armstrong-Frederick: modulus", "C", at+"c", *t.C),
					plain(term+": dynamic recovery", "γ", at+"gamma", *t.Gamma))
			}
			if d.Saturation != nil {
				v.Params = append(v.Params, stress(term+": saturation (derived)", "C/γ", dat+"saturation", *d.Saturation))
			}
		}
	}
	if is := c.Plasticity.Isotropic; is != nil {
		switch is.Model {
		case schema.ModelVoce:
			if is.Q != nil && is.B != nil {
				v.Params = append(v.Params, stress("isotropic, Voce: saturation", "Q", "/plasticity/isotropic/q", *is.Q), plain("isotropic, Voce: rate", "b", "/plasticity/isotropic/b", *is.B))
			}
		case schema.ModelLinear:
			if is.Modulus != nil {
				v.Params = append(v.Params, stress("isotropic, linear: modulus", "K", "/plasticity/isotropic/modulus", *is.Modulus))
			}
		}
	}
	if c.Derived != nil && c.Derived.SaturationStress != nil {
		v.Params = append(v.Params, stress("saturation stress (derived)", "σy + ΣC/γ + Q", "/derived/saturation_stress", *c.Derived.SaturationStress))
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
