package checks

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"matgate/checks/plastic"
)

// TestWrongModelsFail: every check changed for issue 9 fails when a wrong
// model integrates the 1D cases while the references stay the card's.
// Scenario: the one-term card of TestIssue9Cards (E 195 GPa, sigmaY 271.7
// MPa, C 50023.7 MPa, gamma 334.998), with a ratcheting load of our own.
func TestWrongModelsFail(t *testing.T) {
	mat := func(terms []plastic.Term) *plastic.Material {
		m, err := plastic.NewMaterial(195000e6, 0.3, 271.7e6, terms, plastic.Isotropic{})
		if err != nil {
			t.Fatal(err)
		}
		return &m
	}
	card := mat([]plastic.Term{{C: 50023.7e6, Gamma: 334.998}})
	spec, err := Spec{Material: *card, Ratcheting: &Ratcheting{MeanStress: 30e6, StressAmplitude: 300e6, Cycles: 10}}.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	cyc := "cyclic-" + fmtG(spec.StrainAmplitudes[0])
	stiffer := mat([]plastic.Term{{C: 1.02 * 50023.7e6, Gamma: 334.998}})
	withLinear := mat([]plastic.Term{{C: 50023.7e6, Gamma: 334.998}, {C: 2e9}})
	exact := &plastic.Settings{Algorithm: plastic.Exact}
	rows := []struct {
		name string
		step stepFn
		want []string // case / check that must fail; nil: none may fail
	}{
		{"the card's own model", card.Step1D, nil},
		{"C 2 % high", stiffer.Step1D, []string{
			cyc + " / stabilized stress amplitude", cyc + " / stabilized dissipated energy",
			fmt.Sprintf("%s / dissipated energy, cycle %d", cyc, spec.Cycles),
			"ratcheting / steady ratchet strain per cycle (single Armstrong-Frederick term)",
		}},
		{"a linear term of 2 GPa added: the mean stress relaxes only partly", withLinear.Step1D, []string{
			"mean-strain-relaxation / relaxed mean stress",
		}},
		{"plastic strain increment of the wrong sign", func(dst, src *plastic.State1D, dEps float64, set *plastic.Settings) (plastic.StepInfo, error) {
			info, err := card.Step1D(dst, src, dEps, set)
			dst.EpsP = src.EpsP - (dst.EpsP - src.EpsP)
			return info, err
		}, []string{"monotonic-tension / non-negative dissipation", cyc + " / non-negative dissipation"}},
		{"backward Euler: depends on the increment", func(dst, src *plastic.State1D, dEps float64, _ *plastic.Settings) (plastic.StepInfo, error) {
			be := *exact
			be.Algorithm = plastic.BackwardEuler
			return card.Step1D(dst, src, dEps, &be)
		}, []string{cyc + " / step-size convergence", "monotonic-tension / step-size convergence"}},
	}
	for _, row := range rows {
		t.Run(row.name, func(t *testing.T) {
			v := newVerifier(spec)
			v.step = row.step
			res, err := v.run(context.Background())
			if err != nil {
				t.Fatal(err)
			}
			failed := map[string]bool{}
			for _, c := range res.Cases {
				for _, ch := range c.Checks {
					if !ch.Pass {
						failed[c.Name+" / "+ch.Name] = true
					}
				}
			}
			if row.want == nil && len(failed) > 0 {
				t.Errorf("the right model failed %v", failed)
			}
			for _, w := range row.want {
				if !failed[w] {
					var got []string
					for f := range failed {
						got = append(got, f)
					}
					t.Errorf("%s passed the wrong model; failed: %s", w, strings.Join(got, "; "))
				}
			}
		})
	}
}
