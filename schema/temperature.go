package schema

import (
	"bytes"
	"encoding/json"
	"fmt"
	"regexp"
	"sort"
	"strconv"
	"strings"
)

// A temperature-dependent card lists `temperatures` (strictly increasing, in
// units.temperature) and gives any material parameter (elastic, plasticity)
// either as one number, the same at every temperature, or as a list with
// one value per temperature. In the Go type the list is kept beside the
// struct: Card.Tabulated maps the JSON pointer of the parameter to its
// values, and the struct field holds the value at the first temperature.
// Card's JSON encoding writes the lists back in place, so the canonical
// encoding and the digest cover them.

// tabulatedPointer matches the pointers of the values that may be lists: the
// material parameters and, in a normalized card, the derived values.
var tabulatedPointer = regexp.MustCompile(`^(/elastic/(youngs_modulus|poisson_ratio)` +
	`|/plasticity/yield_stress` +
	`|/plasticity/kinematic/(0|[1-9][0-9]*)/(plastic_modulus|tangent_modulus|c|gamma)` +
	`|/plasticity/isotropic/(modulus|q|b)` +
	`|/derived/(yield_strain|saturation_stress)` +
	`|/derived/kinematic/(0|[1-9][0-9]*)/(plastic_modulus|tangent_modulus|saturation))$`)

// Tabulable reports whether the value at the JSON pointer may be given as
// a list with one value per temperature.
func Tabulable(pointer string) bool { return tabulatedPointer.MatchString(pointer) }

// IsTemperatureDependent reports whether c lists temperatures.
func (c *Card) IsTemperatureDependent() bool { return len(c.Temperatures) > 0 }

// plainCard is Card without its JSON methods.
type plainCard Card

// MarshalJSON encodes the card with every list of Tabulated in place of the
// number its pointer names.
func (c Card) MarshalJSON() ([]byte, error) {
	b, err := json.Marshal(plainCard(c))
	if err != nil || len(c.Tabulated) == 0 {
		return b, err
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var tree any
	if err := dec.Decode(&tree); err != nil {
		return nil, err
	}
	for p, list := range c.Tabulated {
		vals := make([]any, len(list))
		for i, x := range list {
			vals[i] = x
		}
		if !Set(tree, p, vals) {
			return nil, fmt.Errorf("encode card: tabulated value %s has no place in the card", p)
		}
	}
	return json.Marshal(tree)
}

// UnmarshalJSON decodes a card whose parameters may be lists (see
// MarshalJSON). Unknown fields are ignored here; Decode refuses them.
func (c *Card) UnmarshalJSON(b []byte) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.UseNumber()
	var tree any
	if err := dec.Decode(&tree); err != nil {
		return err
	}
	tree, lists := splitLists(tree)
	raw, err := json.Marshal(tree)
	if err != nil {
		return err
	}
	var p plainCard
	if err := json.Unmarshal(raw, &p); err != nil {
		return err
	}
	*c = Card(p)
	c.Tabulated = lists
	return nil
}

// splitLists returns a copy of the JSON-compatible tree v in which every list
// at a tabulable pointer is replaced by its first value, and the lists by
// pointer (nil when there are none). Lists that are not all numbers are
// left in place for the decoder to refuse.
func splitLists(v any) (any, map[string][]float64) {
	var lists map[string][]float64
	var walk func(v any, pointer string) any
	walk = func(v any, pointer string) any {
		switch t := v.(type) {
		case map[string]any:
			out := make(map[string]any, len(t))
			for k, x := range t {
				out[k] = walk(x, childPointer(pointer, k))
			}
			return out
		case []any:
			if Tabulable(pointer) && len(t) > 0 {
				if vals, ok := numbers(t); ok {
					if lists == nil {
						lists = map[string][]float64{}
					}
					lists[pointer] = vals
					return t[0]
				}
			}
			out := make([]any, len(t))
			for i, x := range t {
				out[i] = walk(x, pointer+"/"+strconv.Itoa(i))
			}
			return out
		}
		return v
	}
	return walk(v, ""), lists
}

// numbers returns the values of a list of JSON numbers.
func numbers(list []any) ([]float64, bool) {
	out := make([]float64, len(list))
	for i, x := range list {
		var err error
		switch n := x.(type) {
		case json.Number:
			out[i], err = n.Float64()
		case float64:
			out[i] = n
		default:
			return nil, false
		}
		if err != nil {
			return nil, false
		}
	}
	return out, true
}

// Lookup returns the value at a JSON pointer (RFC 6901) of a
// JSON-compatible tree.
func Lookup(tree any, pointer string) (any, bool) { return lookup(tree, pointer) }

// Set replaces the value at a JSON pointer of a JSON-compatible tree by v;
// false when the pointer names nothing there.
func Set(tree any, pointer string, v any) bool {
	if pointer == "" {
		return false
	}
	parent, ok := lookup(tree, parentPointer(pointer))
	if !ok {
		return false
	}
	key := pointerUnescaper.Replace(pointer[strings.LastIndexByte(pointer, '/')+1:])
	switch t := parent.(type) {
	case map[string]any:
		if _, ok := t[key]; !ok {
			return false
		}
		t[key] = v
		return true
	case []any:
		i, err := strconv.Atoi(key)
		if err != nil || i < 0 || i >= len(t) || strconv.Itoa(i) != key {
			return false
		}
		t[i] = v
		return true
	}
	return false
}

// checkTemperatures reports what the schema cannot say about a
// temperature-dependent card: temperature and temperatures together,
// temperatures that do not increase, a list of values without temperatures,
// and a list whose length is not the number of temperatures.
func (b *builder) checkTemperatures(v any) {
	root, ok := v.(map[string]any)
	if !ok {
		return
	}
	_, single := root["temperature"]
	var temps []float64
	if t, ok := root["temperatures"].([]any); ok {
		temps, _ = numbers(t)
		if single {
			b.errorf(b.doc.keyPos("/temperatures"), "/temperatures", "a card gives either temperature (one temperature) or temperatures (a table over temperature), not both")
		}
		for i := 1; i < len(temps); i++ {
			if temps[i] <= temps[i-1] {
				p := "/temperatures/" + strconv.Itoa(i)
				b.errorf(b.doc.Pos(p), p, "temperature %g is not above the one before it (%g): temperatures must increase strictly", temps[i], temps[i-1])
			}
		}
	}
	_, lists := splitLists(v)
	ptrs := make([]string, 0, len(lists))
	for p := range lists {
		ptrs = append(ptrs, p)
	}
	sort.Strings(ptrs)
	for _, p := range ptrs {
		switch n := len(lists[p]); {
		case temps == nil:
			b.errorf(b.doc.Pos(p), p, "a list of %s needs temperatures: give temperatures with one entry per value, or write one number", plural(n, "value"))
		case n != len(temps):
			b.errorf(b.doc.Pos(p), p, "%s for %s: give one value per temperature, or one number for all", plural(n, "value"), plural(len(temps), "temperature"))
		}
	}
}
