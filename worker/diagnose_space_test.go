package worker

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"matgate/checks"
	"matgate/checks/plastic"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker/cardspace"
)

var (
	diagN    = flag.Int("diagnose.n", 16, "random plausible cards of worker/cardspace in TestDiagnoseHitRates")
	diagSeed = flag.Uint64("diagnose.seed", 20261202, "seed of the card space in TestDiagnoseHitRates")
)

// tension is the closed-form monotonic uniaxial tension curve of m from
// the virgin state, parametric in the plastic strain p (= eps_p, = the
// accumulated plastic strain under monotonic loading):
//
//	sigma(p) = sy + R(p) + sum_AF C/gamma (1 - exp(-gamma p)) + sum_linear H p
//	eps(p)   = p + sigma(p)/E
//
// preceded by the origin and the yield point, n points for p in
// (0, pMax]. Each Armstrong-Frederick back stress integrates to its
// saturating exponential under dp = d eps_p > 0 (P. J. Armstrong and C. O.
// Frederick, CEGB report RD/B/N731, 1966; the integral in J. Lemaitre and
// J.-L. Chaboche, Mechanics of Solid Materials, 1990, ch. 5, from memory);
// a linear term is Prager's alpha = H eps_p (W. Prager, J. Appl. Mech. 23,
// 1956); R(p) = Q (1 - exp(-b p)) is Voce's law (E. Voce, J. Inst. Metals
// 74, 1948) and K p the linear one.
func tension(m *plastic.Material, pMax float64, n int) [][2]float64 {
	pts := [][2]float64{{0, 0}, {m.SigmaY / m.E, m.SigmaY}}
	for k := 1; k <= n; k++ {
		p := pMax * float64(k) / float64(n)
		s := tensionStress(m, p)
		pts = append(pts, [2]float64{p + s/m.E, s})
	}
	return pts
}

func tensionStress(m *plastic.Material, p float64) float64 {
	s := m.SigmaY + m.R(p)
	for i := 0; i < m.N; i++ {
		t := m.Terms[i]
		if t.Linear() {
			s += t.C * p
		} else {
			s += t.C / t.Gamma * -math.Expm1(-t.Gamma*p)
		}
	}
	return s
}

// tensionAt returns the closed-form stress of m at total strain eps on the
// monotonic curve: eps(p) = p + sigma(p)/E increases with p (its slope
// 1 + sigma'(p)/E is positive since NewMaterial keeps E + Q b > 0), so
// bisection on p finds it.
func tensionAt(m *plastic.Material, eps float64) float64 {
	if eps <= m.SigmaY/m.E {
		return m.E * eps
	}
	lo, hi := 0.0, eps
	for k := 0; k < 200 && hi-lo > 1e-17; k++ {
		mid := (lo + hi) / 2
		if mid+tensionStress(m, mid)/m.E < eps {
			lo = mid
		} else {
			hi = mid
		}
	}
	return tensionStress(m, (lo+hi)/2)
}

// closedFormError is the max error of the card m against pts (strain
// control), relative to the peak recorded stress, from the closed form:
// an independent value of checks' reference comparison.
func closedFormError(m *plastic.Material, pts [][2]float64) float64 {
	peak, e := 0.0, 0.0
	for _, p := range pts {
		peak = math.Max(peak, math.Abs(p[1]))
	}
	for _, p := range pts {
		e = math.Max(e, math.Abs(tensionAt(m, p[0])-p[1])/peak)
	}
	return e
}

// withTerms returns m with kinematic terms f(i, term).
func withTerms(t *testing.T, m plastic.Material, f func(i int, t plastic.Term) plastic.Term) plastic.Material {
	t.Helper()
	terms := make([]plastic.Term, m.N)
	for i := range terms {
		terms[i] = f(i, m.Terms[i])
	}
	mm, err := plastic.NewMaterial(m.E, m.Nu, m.SigmaY, terms, m.Iso)
	if err != nil {
		t.Fatal(err)
	}
	return mm
}

// slip is one misreading made on purpose: the card as written (the
// material the spec gets) and the reference curve, made from the intended
// reading by the closed form.
type slip struct {
	want checks.Misreading
	card plastic.Material
	pts  [][2]float64
	// cut: the reference runs past its maximum stress, which the
	// diagnosis cuts; the card's error is judged up to there.
	cut int
}

// slips returns, for the canonical material m of a plausible card written
// in unit u, each misreading that applies to it as a slip.
//
// The conversions are the trade's: H = E Et/(E - Et) (Lubliner,
// Plasticity Theory, 1990, sec. 3.3); eps = ln(1 + e), sigma = s (1 + e)
// up to the maximum load (Dieter, Mechanical Metallurgy, 1986, ch. 8, from
// memory); the 3D law dX = C d eps_p without the 2/3 factor has the
// uniaxial modulus 3/2 C (Lemaitre and Chaboche 1990, ch. 5, from memory);
// stress unit factors from NIST SP 811 (2008). Gamma per percent strain
// and the swap of c and gamma are derived in checks (GammaPerPercent,
// SwappedCGamma).
func slips(t *testing.T, m plastic.Material, u checks.Unit) []slip {
	t.Helper()
	pMax := 19 * m.SigmaY / m.E // a total strain of about 20 yield strains: the default monotonic strain
	own := tension(&m, pMax, 30)
	var ss []slip
	for i := 0; i < m.N; i++ {
		H := m.Terms[i].C
		if !m.Terms[i].Linear() {
			continue
		}
		only := func(c float64) plastic.Material {
			return withTerms(t, m, func(j int, tm plastic.Term) plastic.Term {
				if j == i {
					tm.C = c
				}
				return tm
			})
		}
		// The number of the card is the reference's plastic modulus.
		truth := only(m.E * H / (m.E + H))
		ss = append(ss, slip{want: checks.TangentAsPlastic, card: m, pts: tension(&truth, pMax, 30)})
		truth = only(m.E * H / (m.E - H))
		ss = append(ss, slip{want: checks.PlasticAsTangent, card: m, pts: tension(&truth, pMax, 30)})
	}
	// The reference written in kPa-sized numbers for an MPa card, and in
	// MPa numbers for a ksi card.
	for _, k := range []float64{1e3, 1 / 6.894757293168361} {
		pts := make([][2]float64, len(own))
		for i, p := range own {
			pts[i] = [2]float64{p[0], p[1] * k}
		}
		ss = append(ss, slip{want: checks.StressUnit, card: m, pts: pts})
	}
	eng := make([][2]float64, len(own))
	cut := 0
	for i, p := range own {
		eng[i] = [2]float64{math.Expm1(p[0]), p[1] * math.Exp(-p[0])}
		if cut == 0 && i > 0 && eng[i][1] < eng[i-1][1] {
			cut = i // Considere: the engineering stress peaks at point i-1
		}
	}
	ss = append(ss, slip{want: checks.EngineeringReference, card: m, pts: eng, cut: cut})
	tru := make([][2]float64, len(own))
	for i, p := range own {
		tru[i] = [2]float64{math.Log1p(p[0]), p[1] * (1 + p[0])}
	}
	ss = append(ss, slip{want: checks.EngineeringCard, card: m, pts: tru})
	if m.N > 0 {
		for _, f := range []float64{1.5, 2.0 / 3} {
			truth := withTerms(t, m, func(_ int, tm plastic.Term) plastic.Term { tm.C *= f; return tm })
			ss = append(ss, slip{want: checks.TensorFactor, card: m, pts: tension(&truth, pMax, 30)})
		}
	}
	for i := 0; i < m.N; i++ {
		if m.Terms[i].Linear() {
			continue
		}
		// The intended card is m; the card as written is the slip.
		for _, f := range []float64{1, 100} {
			card := withTerms(t, m, func(_ int, tm plastic.Term) plastic.Term {
				if !tm.Linear() {
					tm.C, tm.Gamma = tm.C/f, tm.Gamma/100
				}
				return tm
			})
			ss = append(ss, slip{want: checks.GammaPerPercent, card: card, pts: own})
		}
		card := withTerms(t, m, func(j int, tm plastic.Term) plastic.Term {
			if j == i {
				tm.C, tm.Gamma = tm.Gamma*u.Pa, tm.C/u.Pa
			}
			return tm
		})
		ss = append(ss, slip{want: checks.SwappedCGamma, card: card, pts: own})
		break
	}
	return ss
}

// scattered returns pts with deterministic scatter of +-1 % on the
// stresses, as a measured curve might have.
func scattered(pts [][2]float64) [][2]float64 {
	r := rand.New(rand.NewPCG(1, 2))
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		out[i] = [2]float64{p[0], p[1] * (1 + 0.01*(2*r.Float64()-1))}
	}
	return out
}

// notConverged reports whether a trial of misreading w was skipped because
// the integrator did not converge on it.
func notConverged(ds []checks.Diagnosis, w checks.Misreading) bool {
	for _, d := range ds {
		for _, tr := range d.Tried {
			if tr.Misreading == w && errors.Is(tr.Err, plastic.ErrNotConverged) {
				return true
			}
		}
	}
	return false
}

// spaceCard is a card to diagnose: its canonical spec and stress unit.
type spaceCard struct {
	name string
	spec checks.Spec
	unit checks.Unit
}

func prepared(t *testing.T, name string, data []byte) spaceCard {
	t.Helper()
	doc, err := schema.Decode(name, data, nil)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	c, ds := convert.Prepare(doc, nil)
	if c == nil {
		t.Fatalf("%s: %v", name, ds)
	}
	spec, err := Spec(c)
	if err != nil {
		t.Fatal(err)
	}
	f, err := convert.StressFactor(doc.Card.Units.Stress)
	if err != nil {
		t.Fatal(err)
	}
	return spaceCard{name: name, spec: spec, unit: checks.Unit{Name: doc.Card.Units.Stress, Pa: f}}
}

// TestDiagnoseHitRates makes, on the demo cards and on random plausible
// cards of worker/cardspace, reference curves from the card as written
// (exact, with 1 % scatter as a measured curve, by backward Euler at a
// tenth of the profile's increment) and under each misreading (see
// slips), and runs checks.Diagnose:
//   - the card's own curves pass with no finding (no false alarm); the
//     backward-Euler curve at the profile's increment is logged;
//   - a misread curve is named: as the failure's diagnosis or as a near
//     miss of a passing check, wherever the card's error is above the
//     near-miss floor 1e-4 (below it the slip changes the curve by less
//     than the digits of a data file); the rate per misreading is logged;
//   - the card's max error that Diagnose reports equals the closed form's
//     (an independent value of the comparison) within 1e-6 of the peak.
//
// Run more with -diagnose.n 400 (about a minute and a quarter here).
func TestDiagnoseHitRates(t *testing.T) {
	var cards []spaceCard
	files, _ := filepath.Glob("../testdata/cards/*")
	for _, f := range files {
		data, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		cards = append(cards, prepared(t, filepath.Base(f), data))
	}
	if len(cards) < 3 {
		t.Fatalf("%d demo cards, want 3", len(cards))
	}
	n := *diagN
	if testing.Short() {
		n = min(n, 4)
	}
	for i := 0; i < n; i++ {
		cards = append(cards, prepared(t, fmt.Sprintf("cardspace %d/%d", *diagSeed, i), cardspace.Card(*diagSeed, i)))
	}
	type tally struct{ tried, cut, named, first, failed, nearMiss, belowFloor, integrator, scatterNamed int }
	rates := map[checks.Misreading]*tally{}
	var beCoarse struct{ failed, named int }
	ctx := context.Background()
	units := StressUnits()
	for _, c := range cards {
		m := c.spec.Material
		// The card's own curves: exact, and with deterministic scatter of
		// +-1 % as a measured curve (tolerance 0.05).
		own := tension(&m, 19*m.SigmaY/m.E, 30)
		spec := c.spec
		spec.References = []checks.Reference{
			{Name: "own", Kind: "solver", Control: "strain", Points: own},
			{Name: "own-scatter", Kind: "measured", Control: "strain", Points: scattered(own)},
			// Another solver's answer: backward Euler (first order for
			// Armstrong-Frederick terms) at a tenth of the profile's
			// increment, and at the profile's own (yield strain / 10).
			{Name: "own-be-fine", Kind: "solver", Control: "strain", Points: backwardEuler(t, &m, own, m.SigmaY/m.E/100)},
			{Name: "own-be-coarse", Kind: "solver", Control: "strain", Points: backwardEuler(t, &m, own, m.SigmaY/m.E/10)},
		}
		ds, err := checks.Diagnose(ctx, spec, units)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		for _, d := range ds {
			if d.Reference == "own-be-coarse" {
				// A coarse solver curve may fail the tolerance: the verdict
				// on the curve, not a misreading. Naming one is counted.
				beCoarse.failed++
				if d.Misreading != "" {
					beCoarse.named++
					t.Logf("%s: coarse backward-Euler curve: %s", c.name, d.Describe(checks.Wording{Unit: c.unit}))
				}
				continue
			}
			t.Errorf("%s: the card's own curve %q gets a finding: %s", c.name, d.Reference, d.Describe(checks.Wording{Unit: c.unit}))
		}
		for k, s := range slips(t, m, c.unit) {
			spec := c.spec
			spec.Material = s.card
			spec.Ratcheting = nil // sized for the intended card, maybe beyond the slip's saturation; not used here
			spec.References = []checks.Reference{{Name: fmt.Sprintf("slip-%d-%s", k, s.want), Kind: "solver", Control: "strain", Points: s.pts}}
			ta := rates[s.want]
			if ta == nil {
				ta = &tally{}
				rates[s.want] = ta
			}
			ta.tried++
			if s.cut > 0 {
				ta.cut++
			}
			// The same slip in a measured curve with 1 % scatter
			// (tolerance 0.05): a failed check must be named (the
			// misreading's error is the scatter, inside the tolerance); a
			// passing one cannot be (the scatter is more than a tenth of
			// the card's error), so only the count is logged.
			noisy := spec
			noisy.References = []checks.Reference{{Name: "slip-scatter", Kind: "measured", Control: "strain", Points: scattered(s.pts)}}
			if ds, err := checks.Diagnose(ctx, noisy, units); err == nil {
				judged := noisy.References[0].Points
				if s.cut > 0 {
					judged = judged[:s.cut]
				}
				named := false
				for _, d := range ds {
					named = named || d.Misreading == s.want
				}
				if named {
					ta.scatterNamed++
				} else if e := closedFormError(&s.card, judged); e > 0.06 {
					t.Errorf("%s: slip %s in a curve with 1 %% scatter fails (card error %.3g) but is not named", c.name, s.want, e)
				}
			} else if !errors.Is(err, plastic.ErrNotConverged) {
				t.Fatalf("%s, %s with scatter: %v", c.name, s.want, err)
			}
			ds, err := checks.Diagnose(ctx, spec, units)
			if errors.Is(err, plastic.ErrNotConverged) {
				// The integrator's robustness is issue 9's first item, not
				// the diagnosis: counted, not judged.
				ta.integrator++
				t.Logf("%s, %s: %v", c.name, s.want, err)
				continue
			}
			if err != nil {
				t.Fatalf("%s, %s: %v", c.name, s.want, err)
			}
			judged := s.pts
			if s.cut > 0 {
				judged = s.pts[:s.cut]
			}
			e0 := closedFormError(&s.card, judged)
			named := -1
			for j, d := range ds {
				if d.Misreading == s.want && named < 0 {
					named = j
					if math.Abs(d.MaxError-e0) > 1e-6 {
						t.Errorf("%s, %s: Diagnose says the card's max error is %.9g, the closed form %.9g", c.name, s.want, d.MaxError, e0)
					}
					if d.Passed {
						ta.nearMiss++
					} else {
						ta.failed++
					}
				}
			}
			switch {
			case named == 0:
				ta.named++
				ta.first++
			case named > 0:
				ta.named++
			case e0 < 1e-4:
				ta.belowFloor++
			case notConverged(ds, s.want):
				ta.integrator++
				t.Logf("%s, %s: the misread card did not converge in the integrator", c.name, s.want)
			default:
				var got []string
				for _, d := range ds {
					got = append(got, d.Describe(checks.Wording{Unit: c.unit}))
				}
				t.Errorf("%s: slip %s (card error %.3g against the closed form) not named; diagnoses: %q", c.name, s.want, e0, got)
			}
		}
	}
	var names []string
	for k := range rates {
		names = append(names, string(k))
	}
	sort.Strings(names)
	var b strings.Builder
	fmt.Fprintf(&b, "%d cards (3 demo, %d random); per misreading: slips tried (cut at the maximum stress), named (named first), as failure / as near miss, below the floor, integrator failures; named with 1 %% scatter\n", len(cards), n)
	for _, k := range names {
		ta := rates[checks.Misreading(k)]
		fmt.Fprintf(&b, "  %-22s %4d (%d)  %4d (%d)  %d / %d  %d  %d;  %d\n", k, ta.tried, ta.cut, ta.named, ta.first, ta.failed, ta.nearMiss, ta.belowFloor, ta.integrator, ta.scatterNamed)
	}
	fmt.Fprintf(&b, "backward Euler at the profile's increment: %d curves fail the solver tolerance, %d of them with a misreading named\n", beCoarse.failed, beCoarse.named)
	t.Log(b.String())
}

// backwardEuler returns m's stresses at the strains of pts by the backward
// Euler return mapping (plastic.BackwardEuler, the usual solver's
// algorithm) in increments of at most h: a solver curve of the card as
// written with a first-order error.
func backwardEuler(t *testing.T, m *plastic.Material, pts [][2]float64, h float64) [][2]float64 {
	t.Helper()
	var s plastic.State1D
	set := &plastic.Settings{Algorithm: plastic.BackwardEuler}
	out := make([][2]float64, len(pts))
	for i, p := range pts {
		path := plastic.Path1D{Control: plastic.StrainControl, Targets: []float64{p[0]}, MaxIncrement: h}
		if _, err := m.Run1D(context.Background(), &s, &path, set, nil); err != nil {
			t.Fatal(err)
		}
		out[i] = [2]float64{p[0], s.Sigma}
	}
	return out
}
