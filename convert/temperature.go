package convert

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"matgate/checks/plastic"
	"matgate/schema"
)

// Temperature-dependent cards (schema.Card.Temperatures): a table of
// single-temperature cards that share everything but their material
// parameters. Between neighbouring temperatures every canonical parameter
// (E, nu, yield stress, each term's plastic modulus H or c and gamma, K or
// q and b, in SI) is interpolated linearly in temperature; outside the
// tabulated range nothing is extrapolated. The canonical parameters are the
// ones interpolated: a linear term given by its tangent modulus Et is
// interpolated as H = E Et / (E - Et), which is not linear in Et.

// ErrOutOfRange is returned (wrapped in a *RangeError) when a temperature
// lies outside a card's tabulated range.
var ErrOutOfRange = errors.New("temperature outside the card's tabulated range")

// RangeError says which temperature left which range, in kelvin.
type RangeError struct {
	T, Lo, Hi float64
}

func (e *RangeError) Error() string {
	return fmt.Sprintf("temperature %.6g K is outside the card's tabulated range %.6g to %.6g K: matgate interpolates between tabulated temperatures and does not extrapolate", e.T, e.Lo, e.Hi)
}
func (e *RangeError) Unwrap() error { return ErrOutOfRange }

// Slice returns the single-temperature card that c, a temperature-dependent
// card, holds at its k-th temperature: every list replaced by its k-th
// value (derived values too), temperature set to the k-th temperature, no
// digest. A card of one
// temperature is returned as a copy. c is not modified.
func Slice(c *schema.Card, k int) (*schema.Card, error) {
	if !c.IsTemperatureDependent() {
		cp, err := copyCard(c)
		return cp, err
	}
	if k < 0 || k >= len(c.Temperatures) {
		panic(fmt.Sprintf("convert.Slice: index %d of %d temperatures", k, len(c.Temperatures)))
	}
	return slice(c, k)
}

// At returns the canonical single-temperature card that the canonical
// temperature-dependent card n holds at T kelvin, normalized (verification
// defaults sized for that temperature): at a tabulated temperature the
// tabulated values themselves (Slice), between two the parameters of the
// integrator's interpolated material (plastic.Table.At: linear in
// temperature, exact at both ends; the one copy of the rule). Outside the
// range a *RangeError.
func At(n *schema.Card, T float64) (*schema.Card, error) {
	tb, err := MaterialTable(n)
	if err != nil {
		return nil, err
	}
	ts := n.Temperatures
	if !(T >= ts[0] && T <= ts[len(ts)-1]) {
		return nil, &RangeError{T: T, Lo: ts[0], Hi: ts[len(ts)-1]}
	}
	k := sort.SearchFloat64s(ts, T) // first ts[k] >= T
	s, err := slice(n, k)
	if err != nil {
		return nil, err
	}
	if ts[k] != T {
		m, err := tb.At(T)
		if err != nil {
			return nil, err
		}
		setMaterial(s, &m)
		s.Temperature = ptr(round15(T))
		s.Derived = nil // derived values are not linear in temperature
	}
	return Normalize(s, nil)
}

// MaterialTable returns the integrator's table of the canonical
// temperature-dependent card n: its material at each tabulated temperature.
func MaterialTable(n *schema.Card) (plastic.Table, error) {
	if !n.IsTemperatureDependent() {
		return plastic.Table{}, fmt.Errorf("card %s is not temperature-dependent", n.ID)
	}
	if n.Units.Temperature != "K" || n.Units.Stress != "Pa" {
		return plastic.Table{}, fmt.Errorf("card %s is not canonical (units %s, %s)", n.ID, n.Units.Stress, n.Units.Temperature)
	}
	ms := make([]plastic.Material, len(n.Temperatures))
	for k := range n.Temperatures {
		s, err := slice(n, k)
		if err != nil {
			return plastic.Table{}, err
		}
		if ms[k], err = Material(s); err != nil {
			return plastic.Table{}, fmt.Errorf("at %g K: %w", n.Temperatures[k], err)
		}
	}
	return plastic.NewTable(n.Temperatures, ms)
}

// setMaterial writes the parameters of m into the canonical card s of the
// same form (linear terms as plastic_modulus).
func setMaterial(s *schema.Card, m *plastic.Material) {
	s.Elastic = schema.Elastic{YoungsModulus: m.E, PoissonRatio: m.Nu}
	s.Plasticity.YieldStress = m.SigmaY
	for i := range s.Plasticity.Kinematic {
		t := &s.Plasticity.Kinematic[i]
		if t.Model == schema.ModelLinear {
			t.PlasticModulus = ptr(m.Terms[i].C)
		} else {
			t.C, t.Gamma = ptr(m.Terms[i].C), ptr(m.Terms[i].Gamma)
		}
	}
	if iso := s.Plasticity.Isotropic; iso != nil {
		switch iso.Model {
		case schema.ModelLinear:
			iso.Modulus = ptr(m.Iso.K)
		case schema.ModelVoce:
			iso.Q, iso.B = ptr(m.Iso.Q), ptr(m.Iso.B)
		}
	}
}

// slice is Slice for a temperature-dependent card: every list replaced by
// its k-th value, derived values included.
func slice(c *schema.Card, k int) (*schema.Card, error) {
	s, err := copyCard(c)
	if err != nil {
		return nil, err
	}
	s.Temperature = ptr(c.Temperatures[k])
	s.Temperatures, s.Tabulated = nil, nil
	s.Digest = ""
	tree, err := toTree(s)
	if err != nil {
		return nil, err
	}
	for p, list := range c.Tabulated {
		if !schema.Set(tree, p, list[k]) {
			return nil, fmt.Errorf("card %s: tabulated value %s has no place in the card", c.ID, p)
		}
	}
	return fromTree(tree)
}

// merge returns the temperature-dependent card whose k-th temperature is
// cards[k] (one-temperature cards that differ only in tabulable values):
// every tabulable number that differs between them becomes a list, one
// that is equal stays a number, and a derived value present at some
// temperatures only is left out. The result has temps as its temperatures
// and no temperature.
func merge(cards []*schema.Card, temps []float64) (*schema.Card, error) {
	trees := make([]any, len(cards))
	for i, c := range cards {
		t, err := toTree(c)
		if err != nil {
			return nil, err
		}
		trees[i] = t
	}
	escape := strings.NewReplacer("~", "~0", "/", "~1")
	var walk func(v any, pointer string) (any, bool)
	walk = func(v any, pointer string) (any, bool) {
		switch t := v.(type) {
		case map[string]any:
			out := map[string]any{}
			for key, x := range t {
				p := pointer + "/" + escape.Replace(key)
				if y, keep := walk(x, p); keep {
					out[key] = y
				}
			}
			return out, true
		case []any:
			out := make([]any, 0, len(t))
			for i, x := range t {
				if y, keep := walk(x, pointer+"/"+strconv.Itoa(i)); keep {
					out = append(out, y)
				}
			}
			return out, true
		case json.Number:
			if !schema.Tabulable(pointer) {
				return t, true
			}
			vals := make([]any, len(trees))
			same := true
			for i, tr := range trees {
				x, ok := schema.Lookup(tr, pointer)
				if !ok {
					return nil, false
				}
				vals[i] = x
				same = same && x == t
			}
			if same {
				return t, true
			}
			return vals, true
		}
		return v, true
	}
	out, _ := walk(trees[0], "")
	root := out.(map[string]any)
	delete(root, "temperature")
	temperatures := make([]any, len(temps))
	for i, x := range temps {
		temperatures[i] = x
	}
	root["temperatures"] = temperatures
	return fromTree(root)
}

// normalizeTable is Normalize for a temperature-dependent card: each
// temperature's parameters normalized as a card of their own (the
// temperatures in kelvin), merged back into lists, the verification block
// as the card gives it (cases not sized there are sized at each
// temperature when the card is verified, see At), the derived values per
// temperature, and the digest of the whole.
func normalizeTable(c *schema.Card, opts *Options) (*schema.Card, error) {
	if opts == nil {
		opts = &Options{}
	}
	f, err := StressFactor(c.Units.Stress)
	if err != nil {
		return nil, &FieldError{Pointer: "/units/stress", Err: err}
	}
	n := len(c.Temperatures)
	cards := make([]*schema.Card, n)
	temps := make([]float64, n)
	for k := range c.Temperatures {
		s, err := Slice(c, k)
		if err != nil {
			return nil, err
		}
		s.Verification = nil
		nk, err := normalizeParams(s, f)
		if err != nil {
			var fe *FieldError
			if errors.As(err, &fe) {
				return nil, &FieldError{Pointer: tablePointer(c, fe.Pointer, k), Err: fmt.Errorf("at %s: %w", TemperatureText(c, k), fe.Err)}
			}
			return nil, err
		}
		d := Derive(nk)
		nk.Derived = &d
		cards[k] = nk
		temps[k] = *nk.Temperature
	}
	out, err := merge(cards, temps)
	if err != nil {
		return nil, err
	}
	out.Verification, err = verificationGiven(c.Verification, f, opts)
	if err != nil {
		return nil, err
	}
	if out.Digest, err = Digest(out); err != nil {
		return nil, err
	}
	return out, nil
}

// TemperatureText names the k-th temperature of c as written, with its
// unit ("200 C").
func TemperatureText(c *schema.Card, k int) string {
	return fmt.Sprintf("%g %s", c.Temperatures[k], c.Units.Temperature)
}

// tablePointer is the pointer of the k-th value of the parameter at
// pointer when the card tabulates it, the pointer itself otherwise.
func tablePointer(c *schema.Card, pointer string, k int) string {
	if _, ok := c.Tabulated[pointer]; ok {
		return pointer + "/" + strconv.Itoa(k)
	}
	return pointer
}

// perTemperature runs the single-temperature diagnosis fn on the card of
// doc at each of its temperatures and locates what it finds: a finding on
// a tabulated parameter at the parameter's value for that temperature,
// each message prefixed with the temperature; a finding that is the same
// at every temperature on a value that is not tabulated once, without the
// prefix.
func perTemperature(doc *schema.Document, fn func(*schema.Document) schema.Diagnostics) schema.Diagnostics {
	c := doc.Card
	type key struct {
		pointer, message string
		sev              schema.Severity
	}
	count := map[key]int{}
	var all []schema.Diagnostics
	for k := range c.Temperatures {
		s, err := Slice(c, k)
		if err != nil {
			return schema.Diagnostics{doc.Diag(schema.SeverityError, "/temperatures", "internal error: %v", err)}
		}
		sd := *doc
		sd.Card = s
		ds := fn(&sd)
		all = append(all, ds)
		for _, d := range ds {
			count[key{d.Pointer, d.Message, d.Severity}]++
		}
	}
	var out schema.Diagnostics
	seen := map[key]bool{}
	for k, ds := range all {
		for _, d := range ds {
			kk := key{d.Pointer, d.Message, d.Severity}
			if _, tab := c.Tabulated[d.Pointer]; !tab && count[kk] == len(c.Temperatures) {
				if !seen[kk] {
					seen[kk] = true
					out = append(out, d)
				}
				continue
			}
			out = append(out, doc.Diag(d.Severity, tablePointer(c, d.Pointer, k), "at %s: %s", TemperatureText(c, k), d.Message))
		}
	}
	return out
}

// Plausibility limits across temperature.
const (
	// maxSaturationJump is the largest factor by which a saturation stress
	// (an Armstrong-Frederick term's c/gamma, Voce's q) may change between
	// neighbouring temperatures without a warning. The yield strength of
	// structural carbon steel changes by at most about a factor 2 between
	// neighbouring rows 100 K apart of the reduction factors of EN 1993-1-2
	// (2005), Table 3.1 (k_y,theta 0.47 at 600 C, 0.23 at 700 C; from
	// memory), the steepest part of the table; hardening that changes
	// faster than the strength itself makes interpolated cards between the
	// rows meaningless.
	maxSaturationJump = 2.0
)

// temperaturePlausibility returns the warnings about how a
// temperature-dependent card's parameters change with temperature: E or
// the yield stress rising with temperature (a value in the wrong column),
// a saturation stress that changes by more than maxSaturationJump or
// changes sign between neighbours, and a term present at one temperature
// and absent (zero) at another. Poisson's ratio and every single-temperature
// rule are checked at each temperature by perTemperature.
func temperaturePlausibility(doc *schema.Document) schema.Diagnostics {
	c := doc.Card
	var ds schema.Diagnostics
	unit, tu := c.Units.Stress, c.Units.Temperature
	values := func(pointer string, v float64) []float64 {
		if l, ok := c.Tabulated[pointer]; ok {
			return l
		}
		out := make([]float64, len(c.Temperatures))
		for i := range out {
			out[i] = v
		}
		return out
	}
	ts := c.Temperatures
	rising := func(pointer, what string, v float64) {
		l := values(pointer, v)
		for k := 1; k < len(l); k++ {
			if l[k] > l[k-1] {
				ds = append(ds, doc.Diag(schema.SeverityWarning, tablePointer(c, pointer, k),
					"%s rises with temperature, from %g %s at %g %s to %g %s at %g %s: metals soften as they heat; is a value in the wrong column?",
					what, l[k-1], unit, ts[k-1], tu, l[k], unit, ts[k], tu))
			}
		}
	}
	rising("/elastic/youngs_modulus", "Young's modulus", c.Elastic.YoungsModulus)
	rising("/plasticity/yield_stress", "the yield stress", c.Plasticity.YieldStress)

	jumps := func(pointer, what string, sat []float64) {
		for k := 1; k < len(sat); k++ {
			a, b := sat[k-1], sat[k]
			switch {
			case a == 0 || b == 0:
			case a*b < 0:
				ds = append(ds, doc.Diag(schema.SeverityWarning, tablePointer(c, pointer, k),
					"%s changes sign between neighbouring temperatures, %g %s at %g %s and %g %s at %g %s: the interpolated cards between them pass through no hardening at all",
					what, a, unit, ts[k-1], tu, b, unit, ts[k], tu))
			case math.Max(math.Abs(a/b), math.Abs(b/a)) > maxSaturationJump:
				ds = append(ds, doc.Diag(schema.SeverityWarning, tablePointer(c, pointer, k),
					"%s changes by a factor %.3g between neighbouring temperatures, %g %s at %g %s and %g %s at %g %s, more than %g: the interpolated cards between them are not a material's",
					what, math.Max(math.Abs(a/b), math.Abs(b/a)), a, unit, ts[k-1], tu, b, unit, ts[k], tu, maxSaturationJump))
			}
		}
	}
	presence := func(pointer, what string, l []float64) {
		var on, off []string
		for k, x := range l {
			if x == 0 {
				off = append(off, fmt.Sprintf("%g", ts[k]))
			} else {
				on = append(on, fmt.Sprintf("%g", ts[k]))
			}
		}
		if len(on) > 0 && len(off) > 0 {
			ds = append(ds, doc.Diag(schema.SeverityWarning, pointer,
				"%s is present at %s %s and absent (zero) at %s %s: interpolation fades it in and out, which no fit of a real material does; give it at every temperature or at none",
				what, strings.Join(on, ", "), tu, strings.Join(off, ", "), tu))
		}
	}
	for i, t := range c.Plasticity.Kinematic {
		p := fmt.Sprintf("/plasticity/kinematic/%d", i)
		switch {
		case t.C != nil && t.Gamma != nil:
			C, g := values(p+"/c", *t.C), values(p+"/gamma", *t.Gamma)
			sat := make([]float64, len(C))
			for k := range sat {
				sat[k] = C[k] / g[k]
			}
			at := p + "/c"
			if _, ok := c.Tabulated[at]; !ok {
				at = p + "/gamma"
			}
			jumps(at, fmt.Sprintf("the saturation c/gamma of kinematic term %d", i), sat)
		case t.PlasticModulus != nil:
			presence(p+"/plastic_modulus", fmt.Sprintf("linear kinematic term %d", i), values(p+"/plastic_modulus", *t.PlasticModulus))
		case t.TangentModulus != nil: // H = 0 exactly when Et = 0
			presence(p+"/tangent_modulus", fmt.Sprintf("linear kinematic term %d", i), values(p+"/tangent_modulus", *t.TangentModulus))
		}
	}
	if iso := c.Plasticity.Isotropic; iso != nil {
		switch {
		case iso.Q != nil:
			q := values("/plasticity/isotropic/q", *iso.Q)
			presence("/plasticity/isotropic/q", "Voce's isotropic hardening", q)
			jumps("/plasticity/isotropic/q", "Voce's saturation q", q)
		case iso.Modulus != nil:
			presence("/plasticity/isotropic/modulus", "linear isotropic hardening", values("/plasticity/isotropic/modulus", *iso.Modulus))
		}
	}
	if v := c.Verification; v != nil && len(v.References) > 0 {
		ds = append(ds, doc.Diag(schema.SeverityError, "/verification/references",
			"reference curves are not supported in a temperature-dependent card (a curve is measured at one temperature): verify them with the single-temperature card of that temperature"))
	}
	return ds
}

// copyCard returns a deep copy of c.
func copyCard(c *schema.Card) (*schema.Card, error) {
	t, err := toTree(c)
	if err != nil {
		return nil, err
	}
	return fromTree(t)
}

// toTree encodes c as a JSON-compatible tree (numbers as json.Number).
func toTree(c *schema.Card) (any, error) {
	b, err := json.Marshal(c)
	if err != nil {
		return nil, fmt.Errorf("encode card: %w", err)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var t any
	if err := dec.Decode(&t); err != nil {
		return nil, fmt.Errorf("encode card: %w", err)
	}
	return t, nil
}

// fromTree decodes a JSON-compatible tree into a card.
func fromTree(t any) (*schema.Card, error) {
	b, err := json.Marshal(t)
	if err != nil {
		return nil, fmt.Errorf("decode card: %w", err)
	}
	var c schema.Card
	if err := json.Unmarshal(b, &c); err != nil {
		return nil, fmt.Errorf("decode card: %w", err)
	}
	return &c, nil
}
