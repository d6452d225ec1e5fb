package checks

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"matgate/checks/plastic"
)

// prager is a one-term Prager card: E 200 GPa, yield 200 MPa, H.
func prager(t *testing.T, H float64) plastic.Material {
	t.Helper()
	m, err := plastic.NewMaterial(200*gpa, 0.3, 200*mpa, []plastic.Term{{C: H}}, plastic.Isotropic{})
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// pragerTension is monotonic tension of a Prager card at strains eps:
// sigma = E eps to the yield strain, then (H eps + sy)/(1 + H/E) (from
// alpha = H eps_p and eps = sigma/E + eps_p; W. Prager, J. Appl. Mech. 23,
// 1956; derived here).
func pragerTension(E, sy, H float64, eps []float64) [][2]float64 {
	pts := make([][2]float64, len(eps))
	for i, e := range eps {
		s := E * e
		if s > sy {
			s = (H*e + sy) / (1 + H/E)
		}
		pts[i] = [2]float64{e, s}
	}
	return pts
}

func strains(max float64, n int) []float64 {
	out := make([]float64, n+1)
	for i := range out {
		out[i] = max * float64(i) / float64(n)
	}
	return out
}

// TestNearMissRule exercises the thresholds of a finding on a passing
// reference (nearMissRatio 10, nearMissFloor 1e-4) on a Prager card whose
// linear term was written as a tangent modulus Et of a few percent of E,
// while the reference holds that number as the plastic modulus: the card's
// H = E Et/(E - Et) (Lubliner, Plasticity Theory, 1990, sec. 3.3) is off by
// Et/(E - Et). The reference runs to 3 % strain (15 yield strains).
func TestNearMissRule(t *testing.T) {
	const E, sy = 200 * gpa, 200 * mpa
	eps := strains(0.03, 30)
	scatter := func(pts [][2]float64, a float64) [][2]float64 {
		r := rand.New(rand.NewPCG(3, 4))
		out := make([][2]float64, len(pts))
		for i, p := range pts {
			out[i] = [2]float64{p[0], p[1] * (1 + a*(2*r.Float64()-1))}
		}
		return out
	}
	for _, tc := range []struct {
		name    string
		EtE     float64 // Et/E of the slip (0: none)
		scatter float64 // relative amplitude on the reference stresses
		want    bool    // a near-miss finding
	}{
		// The card's own curve: no finding.
		{name: "own curve", EtE: 0, want: false},
		// Et/E = 3 %: the card's error is about 3 % of the hardening,
		// H eps_p / sigma ~ 0.46 at 3 % strain, so ~1.4 % < 2 %: passes,
		// the misreading matches to round-off: a finding.
		{name: "slip at 3 percent", EtE: 0.03, want: true},
		// The same slip under scatter of 0.02 %: the misreading's error
		// is the scatter, below a tenth of the card's: still a finding.
		{name: "slip with small scatter", EtE: 0.03, scatter: 2e-4, want: true},
		// Under scatter of 0.2 % the misreading's error is more than a
		// tenth of the card's: no finding (the ratio).
		{name: "slip with scatter", EtE: 0.03, scatter: 2e-3, want: false},
		// Et/E = 2e-4: the card's error is about 2e-4 x H eps_p / sigma
		// (0.005 here) = 1e-6, under the floor 1e-4: no finding (the floor).
		{name: "slip under the floor", EtE: 2e-4, want: false},
	} {
		t.Run(tc.name, func(t *testing.T) {
			Et := 0.02 * E // the reference's plastic modulus when there is no slip
			if tc.EtE > 0 {
				Et = tc.EtE * E
			}
			H := Et
			if tc.EtE > 0 {
				H = E * Et / (E - Et) // the card read the number as a tangent modulus
			}
			ref := Reference{Name: "r", Kind: "solver", Control: "strain", Points: scatter(pragerTension(E, sy, Et, eps), tc.scatter)}
			ds, err := Diagnose(context.Background(), Spec{Material: prager(t, H), References: []Reference{ref}}, nil)
			if err != nil {
				t.Fatal(err)
			}
			got := false
			for _, d := range ds {
				t.Logf("%s", d.Describe(Wording{Unit: Unit{"MPa", mpa}, Tangent: []bool{true}}))
				if !d.Passed {
					t.Errorf("the reference check fails (max error %g): the case does not test a near miss", d.MaxError)
				}
				got = got || d.Misreading == TangentAsPlastic
			}
			if got != tc.want {
				t.Errorf("near-miss finding %v, want %v", got, tc.want)
			}
		})
	}
}

// TestDiagnoseStressControl: a stress-controlled reference of an
// Armstrong-Frederick card whose c was multiplied by 3/2 once too often
// (the card's c is 1.5 times the reference's). The strain at stress
// sigma on monotonic loading is eps = sigma/E - ln(1 - (sigma - sy)
// gamma/C)/gamma (the inverse of the Armstrong-Frederick branch, Armstrong
// and Frederick 1966; Lemaitre and Chaboche 1990, ch. 5, from memory).
// The stress-unit and swap trials need units, so with nil units they are
// skipped with a reason.
func TestDiagnoseStressControl(t *testing.T) {
	const E, sy, C, gamma = 200 * gpa, 200 * mpa, 30000 * mpa, 200.0
	m, err := plastic.NewMaterial(E, 0.3, sy, []plastic.Term{{C: C, Gamma: gamma}}, plastic.Isotropic{})
	if err != nil {
		t.Fatal(err)
	}
	var pts [][2]float64
	C1 := C / 1.5
	for k := 0; k <= 20; k++ {
		s := sy + 0.9*(C1/gamma)*float64(k)/20 // up to 90 % of the reference's saturation
		pts = append(pts, [2]float64{s/E - math.Log1p(-(s-sy)*gamma/C1)/gamma, s})
	}
	ds, err := Diagnose(context.Background(), Spec{Material: m, References: []Reference{{Name: "r", Kind: "solver", Control: "stress", Points: pts[1:]}}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(ds) == 0 || ds[0].Misreading != TensorFactor || ds[0].Factor != 2.0/3 || ds[0].Passed || !(ds[0].Matched < 1e-6) {
		t.Fatalf("diagnoses %+v, want tensor-factor 2/3 first on a failed check", ds)
	}
	skipped := map[Misreading]bool{}
	for _, tr := range ds[0].Tried {
		if tr.Skipped != "" {
			skipped[tr.Misreading] = true
		}
	}
	// A stress path beyond the misread card's saturation (gamma per
	// percent with c kept: saturation c/gamma a hundred times smaller) is
	// refused, not run.
	if !skipped[StressUnit] || !skipped[SwappedCGamma] || !skipped[GammaPerPercent] {
		t.Errorf("skipped trials %v, want stress-unit and c-gamma-swapped (no units) and gamma-per-percent (beyond saturation)", skipped)
	}
}

// TestReplayBudget: a reference with a strain of 1e4 is refused by
// Resolve with the numbers (1e4 / (1e-3 / 10) = 1e8 increments of the
// standard profile, the yield strain 200 MPa / 200 GPa), as an invalid
// spec; one within the budget is taken.
func TestReplayBudget(t *testing.T) {
	m := prager(t, 2*gpa)
	long := Reference{Name: "r", Kind: "measured", Control: "strain", Points: [][2]float64{{0, 0}, {1e4, 300 * mpa}}}
	_, err := Spec{Material: m, References: []Reference{long}}.Resolve()
	var se *SpecError
	if !errors.As(err, &se) || !errors.Is(err, ErrInvalidSpec) || se.Field != "References[0].Points" || math.Abs(se.Value/1e8-1) > 1e-6 {
		t.Fatalf("Resolve: %v, want a SpecError on References[0].Points of about 1e8 increments", err)
	}
	long.Points[1][0] = 0.9 * MaxReplayIncrements * 1e-3 / 10
	if _, err := (Spec{Material: m, References: []Reference{long}}).Resolve(); err != nil {
		t.Errorf("within the budget: %v", err)
	}
	// A curve that records no stress has no peak to be relative to.
	flat := Reference{Name: "r", Kind: "measured", Control: "strain", Points: [][2]float64{{0, 0}, {0.01, 0}}}
	if _, err := (Spec{Material: m, References: []Reference{flat}}).Resolve(); !errors.As(err, &se) || se.Field != "References[0].Points" {
		t.Errorf("all-zero stresses: %v, want a SpecError on References[0].Points", err)
	}
}

// TestReplayBoundedMemory replays 200 fully reversed cycles at +-10 yield
// strains on a Prager card (79,900 increments of the standard profile) and
// checks that the history kept is bounded (the first and last increments
// for the series), that the series marks the gap, and that every recorded
// tip matches Prager's closed form: at a tip of a plastic branch sigma =
// (H eps +- sy)/(1 + H/E) (W. Prager 1956; derived here from alpha = H
// eps_p), to round-off (1e-12 relative).
func TestReplayBoundedMemory(t *testing.T) {
	const E, sy, H = 200 * gpa, 200 * mpa, 2 * gpa
	m := prager(t, H)
	a := 10 * sy / E
	var pts [][2]float64
	for k := 0; k < 200; k++ {
		pts = append(pts, [2]float64{a, (H*a + sy) / (1 + H/E)}, [2]float64{-a, (-H*a - sy) / (1 + H/E)})
	}
	spec, err := Spec{Material: m, References: []Reference{{Name: "r", Kind: "solver", Control: "strain", Points: pts}}}.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	v := newVerifier(spec)
	d, got, want, err := v.replay(context.Background(), v.m, spec.References[0], v.hEps)
	if err != nil {
		t.Fatal(err)
	}
	// 10 yield strains in increments of a tenth: 100 to the first tip,
	// 200 a branch after it.
	if d.n != 100+399*200 {
		t.Errorf("%d increments, want 79,900", d.n)
	}
	if bound := 8*maxSeries + replayChunk + 4 + maxSeries/2; cap(d.pts) > bound {
		t.Errorf("history capacity %d, want at most %d", cap(d.pts), bound)
	}
	if s := d.series(); s.Len() > maxSamples || len(s.Gaps) != 1 {
		t.Errorf("series of %d samples with gaps %v, want at most %d and one gap", s.Len(), s.Gaps, maxSamples)
	}
	for i := range got {
		if math.Abs(got[i]-want[i]) > 1e-12*math.Abs(want[i]) {
			t.Errorf("tip %d: stress %.15g, closed form %.15g", i, got[i], want[i])
		}
	}
}

// TestEngineeringToTrue: the conversion eps = ln(1 + e), sigma = s (1 + e)
// (Dieter, Mechanical Metallurgy, 1986, ch. 8, from memory), cut at the
// maximum engineering stress of the first loading branch.
func TestEngineeringToTrue(t *testing.T) {
	for _, tc := range []struct {
		name string
		pts  [][2]float64
		kept int // 0: refused
	}{
		{"rising", [][2]float64{{0, 0}, {0.1, 100}, {0.2, 120}}, 3},
		{"past the maximum", [][2]float64{{0, 0}, {0.1, 100}, {0.2, 120}, {0.3, 110}, {0.4, 90}}, 3},
		{"reversal before any drop", [][2]float64{{0, 0}, {0.1, 100}, {0.05, 20}, {0.06, 10}}, 4},
		{"strain at -1", [][2]float64{{0, 0}, {-1, -100}}, 0},
		{"maximum at the first point", [][2]float64{{0.1, 100}, {0.2, 50}}, 0},
	} {
		out, kept, err := engineeringToTrue(tc.pts)
		if tc.kept == 0 {
			if err == nil {
				t.Errorf("%s: converted, want refused", tc.name)
			}
			continue
		}
		if err != nil || kept != tc.kept || len(out) != kept {
			t.Errorf("%s: kept %d (%d points), %v; want %d", tc.name, kept, len(out), err, tc.kept)
			continue
		}
		// e = 0.1, s = 100: eps = ln 1.1 = 0.0953101798, sigma = 110.
		if p := out[1]; math.Abs(p[0]-0.0953101798043249) > 1e-15 || math.Abs(p[1]-110) > 1e-12 {
			t.Errorf("%s: point 1 -> %v, want [0.0953101798, 110]", tc.name, p)
		}
		back := trueToEngineering(out)
		for i := range back {
			if math.Abs(back[i][0]-tc.pts[i][0]) > 1e-15 || math.Abs(back[i][1]-tc.pts[i][1]) > 1e-12 {
				t.Errorf("%s: round trip of point %d: %v, want %v", tc.name, i, back[i], tc.pts[i])
			}
		}
	}
}

// TestDescribe words diagnoses in the card's own terms (MPa; term 2
// written as a tangent modulus). The numbers are worked by hand: Et = E
// H/(E + H) = 70000 x 14000 / 84000 = 11667 MPa (Lubliner 1990, sec. 3.3);
// 1 ksi = 6.894757 MPa (NIST SP 811, 2008).
func TestDescribe(t *testing.T) {
	const E = 70000 * mpa
	mat := func(af plastic.Term, H float64) plastic.Material {
		m, err := plastic.NewMaterial(E, 0.3, 250*mpa, []plastic.Term{af, {C: H}}, plastic.Isotropic{})
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	card := mat(plastic.Term{C: 42000 * mpa, Gamma: 260}, E*14000*mpa/(E-14000*mpa))
	units := []Unit{{"MPa", mpa}, {"ksi", 6.894757293168361 * mpa}}
	w := Wording{Unit: units[0], Tangent: []bool{false, true}}
	base := Diagnosis{Reference: "r", MaxError: 0.1, Tolerance: 0.02, Matched: 1e-12, Term: -1, Card: card, Misread: card, units: units}
	for _, tc := range []struct {
		name string
		edit func(d *Diagnosis)
		want []string
	}{
		{"tangent read as plastic", func(d *Diagnosis) {
			d.Misreading, d.Term, d.Misread = TangentAsPlastic, 1, mat(card.Terms[0], 14000*mpa)
		}, []string{`reference "r" (max error 0.1, tolerance 0.02): `, "tangent_modulus 14000 MPa of kinematic term 2 is read as a plastic modulus (tangent modulus 11667 MPa)", "max error then 1e-12"}},
		{"near miss", func(d *Diagnosis) {
			d.Misreading, d.Term, d.Misread, d.Passed, d.MaxError = TangentAsPlastic, 1, mat(card.Terms[0], 14000*mpa), true, 0.01
		}, []string{`reference "r" passes (max error 0.01, tolerance 0.02), but`, "under a tenth of the card's"}},
		{"gamma per percent", func(d *Diagnosis) {
			d.Misreading, d.Factor = GammaPerPercent, 1
			d.Card = mat(plastic.Term{C: 42000 * mpa, Gamma: 2.6}, card.Terms[1].C)
		}, []string{"gammas were given per percent strain", "gamma 2.6 of term 1 becomes 260"}},
		{"strain in percent", func(d *Diagnosis) {
			d.Misreading, d.Factor = GammaPerPercent, 100
			d.Card = mat(plastic.Term{C: 420 * mpa, Gamma: 2.6}, card.Terms[1].C)
		}, []string{"fitted with strain in percent", "gamma 2.6 of term 1 becomes 260 and c 420 MPa becomes 42000 MPa"}},
		{"c and gamma swapped", func(d *Diagnosis) {
			d.Misreading, d.Term, d.Unit = SwappedCGamma, 0, units[0]
			d.Card = mat(plastic.Term{C: 260 * mpa, Gamma: 42000}, card.Terms[1].C)
		}, []string{"c and gamma of kinematic term 1 were written in each other's place (values in MPa): term 1: c 260 MPa, gamma 42000 become c 42000 MPa, gamma 260"}},
		{"stress unit", func(d *Diagnosis) {
			d.Misreading, d.Factor = StressUnit, units[1].Pa/units[0].Pa
		}, []string{"read in ksi rather than the card's MPa (a factor 6.894757)"}},
		{"engineering, cut", func(d *Diagnosis) {
			d.Misreading, d.Kept = EngineeringReference, 12
		}, []string{"on its first 12 points, up to its maximum stress,", "engineering stress and strain", "cut them"}},
		{"none", func(d *Diagnosis) {
			d.Tried = []Trial{{Misreading: TensorFactor, Detail: "x 1.5", MaxError: 0.05}, {Misreading: StressUnit, Detail: "y", Skipped: "no"}}
		}, []string{"none of the usual misreadings", "closest: tensor-factor (x 1.5) with max error 0.05"}},
	} {
		d := base
		tc.edit(&d)
		got := d.Describe(w)
		for _, s := range tc.want {
			if !strings.Contains(got, s) {
				t.Errorf("%s: %q\nwant it to contain %q", tc.name, got, s)
			}
		}
	}
}

// BenchmarkDiagnose is the diagnosis of one reference curve of each demo
// card, every misreading tried (six stress units): a monotonic curve of 31
// points to 20 yield strains, and 50 fully reversed cycles at +-5 yield
// strains (about 20,000 increments a replay), both the card's own
// response.
func BenchmarkDiagnose(b *testing.B) {
	units := []Unit{{"Pa", 1}, {"kPa", 1e3}, {"MPa", mpa}, {"psi", 6894.757293168361}, {"ksi", 6894757.293168361}, {"GPa", gpa}}
	for _, d := range demoSpecs(b) {
		epsY := d.spec.Material.SigmaY / d.spec.Material.E
		mono := strains(20*epsY, 30)
		var cyc []float64
		for k := 0; k < 50; k++ {
			cyc = append(cyc, 5*epsY, -5*epsY)
		}
		for _, c := range []struct {
			name string
			eps  []float64
		}{{"monotonic", mono}, {"cyclic", cyc}} {
			spec, err := d.spec.Resolve()
			if err != nil {
				b.Fatal(err)
			}
			v := newVerifier(spec)
			pts := make([][2]float64, len(c.eps))
			for i, e := range c.eps {
				pts[i][0] = e
			}
			pts[0][1] = 1 // any nonzero stress: the replay gives the response
			_, got, _, err := v.replay(context.Background(), v.m, Reference{Name: "r", Control: "strain", Points: pts}, v.hEps)
			if err != nil {
				b.Fatal(err)
			}
			for i := range pts {
				pts[i][1] = got[i]
			}
			spec.References = []Reference{{Name: "r", Kind: "solver", Control: "strain", Points: pts}}
			b.Run(d.name+"/"+c.name, func(b *testing.B) {
				b.ReportAllocs()
				for b.Loop() {
					if _, err := Diagnose(context.Background(), spec, units); err != nil {
						b.Fatal(err)
					}
				}
			})
		}
	}
}
