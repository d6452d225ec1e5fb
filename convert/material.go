package convert

import (
	"fmt"

	"matgate/checks/plastic"
	"matgate/schema"
)

// Material returns the integrator's material for a canonical card (SI
// units, linear terms in plastic_modulus form, as Normalize writes them).
func Material(c *schema.Card) (plastic.Material, error) {
	if c.IsTemperatureDependent() {
		return plastic.Material{}, fmt.Errorf("material of card %s: the card is temperature-dependent: take its card at one temperature (At)", c.ID)
	}
	if c.Units.Stress != "Pa" {
		return plastic.Material{}, fmt.Errorf("material of card %s: not canonical (stress unit %s, want Pa)", c.ID, c.Units.Stress)
	}
	terms := make([]plastic.Term, 0, len(c.Plasticity.Kinematic))
	for i, t := range c.Plasticity.Kinematic {
		switch {
		case t.Model == schema.ModelLinear && t.PlasticModulus != nil:
			terms = append(terms, plastic.Term{C: *t.PlasticModulus})
		case t.Model == schema.ModelArmstrongFrederick && t.C != nil && t.Gamma != nil:
			terms = append(terms, plastic.Term{C: *t.C, Gamma: *t.Gamma})
		default:
			return plastic.Material{}, fmt.Errorf("material of card %s: kinematic term %d is not in canonical form", c.ID, i)
		}
	}
	var iso plastic.Isotropic
	if s := c.Plasticity.Isotropic; s != nil {
		switch {
		case s.Model == schema.ModelLinear && s.Modulus != nil:
			iso = plastic.Isotropic{Kind: plastic.IsoLinear, K: *s.Modulus}
		case s.Model == schema.ModelVoce && s.Q != nil && s.B != nil:
			iso = plastic.Isotropic{Kind: plastic.IsoVoce, Q: *s.Q, B: *s.B}
		default:
			return plastic.Material{}, fmt.Errorf("material of card %s: isotropic law %q is incomplete", c.ID, s.Model)
		}
	}
	m, err := plastic.NewMaterial(c.Elastic.YoungsModulus, c.Elastic.PoissonRatio, c.Plasticity.YieldStress, terms, iso)
	if err != nil {
		return plastic.Material{}, fmt.Errorf("material of card %s: %w", c.ID, err)
	}
	return m, nil
}
