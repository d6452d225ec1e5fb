package checks

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"

	"matgate/checks/plastic"
)

// Misreading names one of the usual ways a card and its reference curve
// come apart. Each is expressed on the material (the card's moduli) or on
// the recorded points, and judged by the reference comparison itself
// (replay and refError, as the reference case does).
type Misreading string

// The misreadings Diagnose tries.
const (
	// TangentAsPlastic: the number of a linear term is the plastic modulus
	// H of the reference, but the card has it as (or derived it from) a
	// tangent modulus Et; corrected H = E H/(E + H). H = E Et/(E - Et)
	// follows from 1/Et = 1/E + 1/H (elastic and plastic strain rates add;
	// Lubliner, Plasticity Theory, 1990, sec. 3.3; a fact of the trade).
	TangentAsPlastic Misreading = "tangent-as-plastic"
	// PlasticAsTangent is the reverse: the reference's tangent modulus was
	// written as the plastic modulus; corrected H = E H/(E - H), H < E.
	PlasticAsTangent Misreading = "plastic-as-tangent"
	// StressUnit: the recorded stresses are in another stress unit than
	// the card's (every ratio of two units a card may be written in).
	StressUnit Misreading = "stress-unit"
	// EngineeringReference: the reference holds engineering stress and
	// strain where the card (small strain, true values) needs true ones;
	// points past the maximum engineering stress (necking) are cut first.
	EngineeringReference Misreading = "engineering-reference"
	// EngineeringCard: the card was fitted to engineering values, the
	// reference holds true ones.
	EngineeringCard Misreading = "engineering-card"
	// TensorFactor: the kinematic moduli are those of a 3D law written
	// without the 2/3 factor (dX = C d eps_p, uniaxial modulus 3/2 C), or
	// multiplied by 3/2 once too often. See package checks/plastic, "3D and
	// the 2/3 factor".
	TensorFactor Misreading = "tensor-factor"
	// GammaPerPercent: the gammas of the Armstrong-Frederick terms were
	// given per percent strain, so the card's are 100 times too small:
	// either gamma alone (Factor 1: the c came per unit strain, the
	// saturations c/gamma are 100 times too large) or gamma and c together
	// (Factor 100: the whole fit used strain in percent, the saturations
	// are right). With eps_p in percent, exp(-gamma' eps_p[%]) =
	// exp(-100 gamma' eps_p): gamma = 100 gamma' (derived here).
	GammaPerPercent Misreading = "gamma-per-percent"
	// SwappedCGamma: c and gamma of an Armstrong-Frederick term (or of
	// all of them) were written in each other's place, in the card's stress
	// unit (tried in each unit a card may be written in, since the
	// canonical card is in Pa).
	SwappedCGamma Misreading = "c-gamma-swapped"
)

// Thresholds of a near-miss finding on a reference check that passes.
//
// nearMissRatio: the misreading's max error must be at most a tenth of
// the card's. The max error over a curve with scatter of amplitude n is at
// least about n for any material, the card's and the misreading's alike,
// so a tenfold reduction needs a card error of at least 10 n: at least 90
// percent of it systematic and explained by the misreading. Scatter cannot
// produce it; a solver curve of the misread card (scatter at round-off)
// gives reductions of 1e3 and more. Since a passing check has a card error
// within the tolerance, the matched error is then within a tenth of the
// tolerance: well inside it. The factor 10 is our own choice (an order of
// magnitude), no source.
//
// nearMissFloor: the card's max error must be at least 1e-4 of the peak
// recorded value, twenty times the rounding of data written with six
// significant digits (5e-6), the usual %g of a data file; below it the card
// and the misreading differ by less than the data's own digits. Our own
// choice, no source.
const (
	nearMissRatio = 10
	nearMissFloor = 1e-4
)

// Unit is a stress unit a card may be written in.
type Unit struct {
	Name string
	Pa   float64 // pascals per unit
}

// Diagnosis says which usual misreading makes one reference curve match:
// for a failed reference check, each misreading under which the check
// passes (best first), or one Diagnosis without a Misreading when none
// does; for a passing check, each misreading whose max error is at most a
// tenth of the card's (a near miss: see nearMissRatio). Values are SI;
// Describe words them in the card's own terms.
type Diagnosis struct {
	Reference  string     // the reference's name; its case is "reference-" + Reference
	Passed     bool       // the reference check of the card as written passed
	Misreading Misreading // empty: none of them matches (failed checks only)
	// MaxError is the card's max error on the compared points: all of
	// them, or for a cut EngineeringReference the points up to the
	// maximum engineering stress.
	MaxError  float64
	Tolerance float64
	Matched   float64 // max error under the misreading (none: the closest trial's)
	// Factor is the factor on the recorded stresses (StressUnit), on
	// every kinematic modulus (TensorFactor) or on every Armstrong-Frederick
	// c (GammaPerPercent: 1 or 100).
	Factor float64
	// Term is the kinematic term (0-based) of a modulus misreading; -1 for
	// all of them or none.
	Term int
	// Unit is the stress unit of a swap of c and gamma (SwappedCGamma).
	Unit Unit
	// Kept is the number of points compared after a cut at the maximum
	// engineering stress (EngineeringReference); 0 when nothing was cut.
	Kept int
	// Card and Misread are the card's material and the material under
	// the misreading (the card's for misreadings of the recorded points).
	Card, Misread plastic.Material
	Tried         []Trial
	units         []Unit
}

// Trial is one misreading tried on a reference.
type Trial struct {
	Misreading Misreading `json:"misreading"`
	Detail     string     `json:"detail"`
	MaxError   float64    `json:"max_error,omitempty"`
	Skipped    string     `json:"skipped,omitempty"` // why it could not be tried
	Err        error      `json:"-"`                 // the integrator's error that skipped it, if any
}

// Diagnose replays every reference curve of spec with the card as written
// and under each usual misreading, and judges each by the reference
// comparison of Run (same increments, same error measure, same
// tolerance). units are the stress units a card may be written in (for
// StressUnit and SwappedCGamma; nil skips those two). Errors are those of
// Resolve and cancellation; a misreading the integrator or the replay
// budget refuses is a skipped Trial.
func Diagnose(ctx context.Context, spec Spec, units []Unit) ([]Diagnosis, error) {
	spec, err := spec.Resolve()
	if err != nil {
		return nil, err
	}
	v := newVerifier(spec)
	var out []Diagnosis
	for _, ref := range v.spec.References {
		ds, err := v.diagnose(ctx, ref, units)
		if err != nil {
			return nil, err
		}
		out = append(out, ds...)
	}
	return out, nil
}

// variant is one misreading of a reference: a material (nil: the card's)
// and the points to replay.
type variant struct {
	d      Diagnosis
	detail string
	m      *plastic.Material
	ref    Reference
	// cardRef, when set, holds the recorded points the card is judged on
	// for this variant (those kept by a cut), as recorded.
	cardRef *Reference
	skip    string
}

func (v *verifier) diagnose(ctx context.Context, ref Reference, units []Unit) ([]Diagnosis, error) {
	h := v.hEps
	if ref.Control == "stress" {
		h = v.hSig
	}
	// errOf replays ref with m; why is set when it cannot be replayed,
	// cause when the integrator refused it; err is cancellation.
	var cause error
	errOf := func(m *plastic.Material, r Reference) (e float64, why string, err error) {
		cause = nil
		if n := replayIncrements(r, h); n > MaxReplayIncrements {
			return 0, fmt.Sprintf("the replay would take %.3g increments, more than %d", n, MaxReplayIncrements), nil
		}
		if r.Control == "stress" {
			for i, p := range r.Points {
				if sat := m.SaturationStress(); math.Abs(p[1]) >= sat {
					return 0, fmt.Sprintf("point %d: stress %.4g Pa at or beyond the saturation stress %.4g Pa", i, p[1], sat), nil
				}
			}
		}
		_, got, want, err := v.replay(ctx, m, r, h)
		if errors.Is(err, ErrCanceled) {
			return 0, "", err
		}
		if err != nil {
			cause = err
			return 0, err.Error(), nil
		}
		e, _, _ = refError(got, want)
		return e, "", nil
	}
	// The card as written: Resolve has checked the budget and the
	// saturation, so an error here is the integrator's, as in Run.
	_, got, want, err := v.replay(ctx, v.m, ref, h)
	if err != nil {
		return nil, fmt.Errorf("diagnose: %w", err)
	}
	e0, _, _ := refError(got, want)
	ck := Check{Value: e0, Tolerance: ref.Tol, ToleranceKind: "abs", Bound: "upper"}
	ck.judge()
	base := Diagnosis{Reference: ref.Name, Passed: ck.Pass, MaxError: e0, Tolerance: ref.Tol, Term: -1, Card: *v.m, Misread: *v.m, units: units}
	var found []Diagnosis
	closest := math.Inf(1)
	for _, vr := range v.variants(ref, units) {
		tr := Trial{Misreading: vr.d.Misreading, Detail: vr.detail, Skipped: vr.skip}
		m := v.m
		if vr.m != nil {
			m = vr.m
		}
		cardErr := e0
		if tr.Skipped == "" && vr.cardRef != nil {
			if cardErr, tr.Skipped, err = errOf(v.m, *vr.cardRef); err != nil {
				return nil, err
			}
		}
		if tr.Skipped == "" {
			if tr.MaxError, tr.Skipped, err = errOf(m, vr.ref); err != nil {
				return nil, err
			}
		}
		tr.Err = cause
		base.Tried = append(base.Tried, tr)
		if tr.Skipped != "" {
			continue
		}
		e := tr.MaxError
		closest = math.Min(closest, e)
		match := e <= ref.Tol // a failed check: the misreading makes it pass
		if ck.Pass {
			match = cardErr >= nearMissFloor && e <= cardErr/nearMissRatio
		}
		if match {
			d := vr.d
			d.Reference, d.Passed, d.MaxError, d.Tolerance, d.Matched = ref.Name, ck.Pass, cardErr, ref.Tol, e
			d.Card, d.Misread, d.units = *v.m, *m, units
			found = append(found, d)
		}
	}
	sort.SliceStable(found, func(i, j int) bool { return found[i].Matched < found[j].Matched })
	if len(found) == 0 && !ck.Pass {
		base.Matched = math.Min(closest, e0) // the card itself when no trial ran
		found = []Diagnosis{base}
	}
	for i := range found {
		found[i].Tried = base.Tried
	}
	return found, nil
}
