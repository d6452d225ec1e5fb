package checks

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"reflect"
	"slices"
	"strconv"
	"strings"
	"sync"
	"unicode/utf16"
	"unicode/utf8"
)

// canonicalJSON returns the RFC 8785 (JSON Canonicalization Scheme)
// encoding of the JSON text b: no whitespace, object members sorted by the
// UTF-16 code units of their names, strings escaped as ECMAScript's
// JSON.stringify does, numbers in ECMAScript's Number::toString form. It
// reads b once, without building a tree or using regular expressions, and
// writes into one buffer: the record's digest was three quarters of the
// cost of building a record with a general-purpose transformer. Duplicate
// names, invalid UTF-8, non-finite numbers and trailing data are errors.
//
// References:
//   - A. Rundgren, B. Jordan and S. Erdtman, JSON Canonicalization Scheme
//     (JCS), RFC 8785, 2020, sec. 3.2.
//   - ECMA-262, ECMAScript Language Specification, Number::toString
//     (sec. 6.1.6.1.20 in the 2020 edition; section number from memory)
//     and JSON.stringify's QuoteJSONString.
func canonicalJSON(b []byte) ([]byte, error) {
	c := canonicalizer{in: b, out: make([]byte, 0, len(b))}
	c.space()
	if err := c.value(0); err != nil {
		return nil, err
	}
	c.space()
	if c.pos != len(c.in) {
		return nil, c.errorf("data after the JSON value")
	}
	return c.out, nil
}

type canonicalizer struct {
	in  []byte
	pos int
	out []byte
	// Scratch space reused by every object: the stack of members of the
	// objects being written (each object's members above its base) and
	// the copy of an object's values while they are put in name order
	// (an object copies only after its nested objects are done).
	members []member
	values  []byte
}

// maxDepth bounds the nesting, as encoding/json does (10000).
const maxDepth = 10000

func (c *canonicalizer) errorf(format string, args ...any) error {
	return fmt.Errorf("canonical JSON: offset %d: %s", c.pos, fmt.Sprintf(format, args...))
}

func (c *canonicalizer) space() {
	for c.pos < len(c.in) {
		switch c.in[c.pos] {
		case ' ', '\t', '\n', '\r':
			c.pos++
		default:
			return
		}
	}
}

func (c *canonicalizer) value(depth int) error {
	if depth > maxDepth {
		return c.errorf("nested deeper than %d", maxDepth)
	}
	if c.pos >= len(c.in) {
		return c.errorf("unexpected end")
	}
	switch ch := c.in[c.pos]; {
	case ch == '{':
		return c.object(depth)
	case ch == '[':
		return c.array(depth)
	case ch == '"':
		s, err := c.str()
		if err != nil {
			return err
		}
		c.out = quoteCanonical(c.out, s)
		return nil
	case ch == '-' || (ch >= '0' && ch <= '9'):
		return c.number()
	default:
		for _, lit := range []string{"true", "false", "null"} {
			if len(c.in)-c.pos >= len(lit) && string(c.in[c.pos:c.pos+len(lit)]) == lit {
				c.pos += len(lit)
				c.out = append(c.out, lit...)
				return nil
			}
		}
		return c.errorf("unexpected %q", ch)
	}
}

// member is an object member while its object is written: the name and
// the span of its canonical value in out.
type member struct {
	name       []byte
	start, end int
}

func (c *canonicalizer) object(depth int) error {
	c.pos++ // '{'
	c.space()
	if c.pos < len(c.in) && c.in[c.pos] == '}' {
		c.pos++
		c.out = append(c.out, "{}"...)
		return nil
	}
	// The values are written after out's current end, then moved into
	// place in name order.
	base := len(c.out)
	mBase := len(c.members)
	for {
		c.space()
		if c.pos >= len(c.in) || c.in[c.pos] != '"' {
			return c.errorf("object member name expected")
		}
		name, err := c.str()
		if err != nil {
			return err
		}
		c.space()
		if c.pos >= len(c.in) || c.in[c.pos] != ':' {
			return c.errorf("':' expected after %q", name)
		}
		c.pos++
		c.space()
		start := len(c.out)
		if err := c.value(depth + 1); err != nil {
			return err
		}
		c.members = append(c.members, member{name, start, len(c.out)})
		c.space()
		if c.pos >= len(c.in) {
			return c.errorf("unexpected end in an object")
		}
		if c.in[c.pos] == ',' {
			c.pos++
			continue
		}
		if c.in[c.pos] != '}' {
			return c.errorf("',' or '}' expected")
		}
		c.pos++
		break
	}
	members := c.members[mBase:]
	defer func() { c.members = c.members[:mBase] }()
	slices.SortFunc(members, func(a, b member) int { return compareUTF16(a.name, b.name) })
	for i := 1; i < len(members); i++ {
		if bytes.Equal(members[i].name, members[i-1].name) {
			return c.errorf("duplicate member name %q", members[i].name)
		}
	}
	c.values = append(c.values[:0], c.out[base:]...)
	values := c.values
	c.out = append(c.out[:base], '{')
	for i, m := range members {
		if i > 0 {
			c.out = append(c.out, ',')
		}
		c.out = quoteCanonical(c.out, m.name)
		c.out = append(c.out, ':')
		c.out = append(c.out, values[m.start-base:m.end-base]...)
	}
	c.out = append(c.out, '}')
	return nil
}

func (c *canonicalizer) array(depth int) error {
	c.pos++ // '['
	c.out = append(c.out, '[')
	c.space()
	if c.pos < len(c.in) && c.in[c.pos] == ']' {
		c.pos++
		c.out = append(c.out, ']')
		return nil
	}
	for first := true; ; first = false {
		if !first {
			c.out = append(c.out, ',')
		}
		c.space()
		if err := c.value(depth + 1); err != nil {
			return err
		}
		c.space()
		if c.pos >= len(c.in) {
			return c.errorf("unexpected end in an array")
		}
		if c.in[c.pos] == ',' {
			c.pos++
			continue
		}
		if c.in[c.pos] != ']' {
			return c.errorf("',' or ']' expected")
		}
		c.pos++
		c.out = append(c.out, ']')
		return nil
	}
}

// str reads a JSON string at pos and returns its value: a slice of the
// input when the string has no escapes, else a new buffer.
func (c *canonicalizer) str() ([]byte, error) {
	c.pos++ // '"'
	start := c.pos
	// Fast path: no escapes.
	for c.pos < len(c.in) {
		ch := c.in[c.pos]
		if ch == '"' {
			s := c.in[start:c.pos]
			c.pos++
			if !utf8.Valid(s) {
				return nil, c.errorf("string is not valid UTF-8")
			}
			return s, nil
		}
		if ch == '\\' || ch < 0x20 {
			break
		}
		c.pos++
	}
	buf := append([]byte(nil), c.in[start:c.pos]...)
	for c.pos < len(c.in) {
		ch := c.in[c.pos]
		switch {
		case ch == '"':
			c.pos++
			if !utf8.Valid(buf) {
				return nil, c.errorf("string is not valid UTF-8")
			}
			return buf, nil
		case ch < 0x20:
			return nil, c.errorf("control character in a string")
		case ch != '\\':
			buf = append(buf, ch)
			c.pos++
			continue
		}
		if c.pos+1 >= len(c.in) {
			break
		}
		esc := c.in[c.pos+1]
		c.pos += 2
		switch esc {
		case '"', '\\', '/':
			buf = append(buf, esc)
		case 'b':
			buf = append(buf, '\b')
		case 'f':
			buf = append(buf, '\f')
		case 'n':
			buf = append(buf, '\n')
		case 'r':
			buf = append(buf, '\r')
		case 't':
			buf = append(buf, '\t')
		case 'u':
			r, ok := c.hex4()
			if !ok {
				return nil, c.errorf("bad \\u escape")
			}
			if utf16.IsSurrogate(r) {
				if c.pos+1 < len(c.in) && c.in[c.pos] == '\\' && c.in[c.pos+1] == 'u' {
					c.pos += 2
					r2, ok := c.hex4()
					if !ok {
						return nil, c.errorf("bad \\u escape")
					}
					r = utf16.DecodeRune(r, r2)
				} else {
					r = utf8.RuneError
				}
				if r == utf8.RuneError {
					return nil, c.errorf("unpaired surrogate in a \\u escape")
				}
			}
			buf = utf8.AppendRune(buf, r)
		default:
			return nil, c.errorf("bad escape \\%c", esc)
		}
	}
	return nil, c.errorf("unterminated string")
}

func (c *canonicalizer) hex4() (rune, bool) {
	if c.pos+4 > len(c.in) {
		return 0, false
	}
	v, err := strconv.ParseUint(string(c.in[c.pos:c.pos+4]), 16, 32)
	if err != nil {
		return 0, false
	}
	c.pos += 4
	return rune(v), true
}

func (c *canonicalizer) number() error {
	start := c.pos
	for c.pos < len(c.in) && isNumberByte(c.in[c.pos]) {
		c.pos++
	}
	v, err := strconv.ParseFloat(string(c.in[start:c.pos]), 64)
	if err != nil {
		return c.errorf("number %q: %v", c.in[start:c.pos], err)
	}
	out, err := appendES6Number(c.out, v)
	if err != nil {
		return c.errorf("%v", err)
	}
	c.out = out
	return nil
}

func isNumberByte(ch byte) bool {
	return ch >= '0' && ch <= '9' || ch == '-' || ch == '+' || ch == '.' || ch == 'e' || ch == 'E'
}

var errNonFinite = errors.New("NaN and infinities have no JSON form")

// appendES6Number appends v as ECMAScript's Number::toString writes it:
// the shortest decimal that reads back as v (Go's 'e' format with
// precision -1 gives the same digits), in plain notation when the decimal
// exponent n (v = 0.d1d2...dk x 10^n) is in (-6, 21], else as d[.ddd]e+-x.
func appendES6Number(out []byte, v float64) ([]byte, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return out, errNonFinite
	}
	if v == 0 {
		return append(out, '0'), nil // -0 too
	}
	// An integer below 2^53 is exact in both forms and written plain.
	if v == math.Trunc(v) && math.Abs(v) < 1<<53 {
		return strconv.AppendInt(out, int64(v), 10), nil
	}
	if v < 0 {
		out = append(out, '-')
		v = -v
	}
	var tmp [32]byte
	e := strconv.AppendFloat(tmp[:0], v, 'e', -1, 64) // d.ddddde+XX
	mant, exp := e, 0
	for i := range e {
		if e[i] == 'e' {
			mant = e[:i]
			for _, ch := range e[i+2:] { // after the sign
				exp = 10*exp + int(ch-'0')
			}
			if e[i+1] == '-' {
				exp = -exp
			}
			break
		}
	}
	var digits [24]byte
	k := 0
	for _, ch := range mant {
		if ch != '.' {
			digits[k] = ch
			k++
		}
	}
	n := exp + 1 // v = 0.d1...dk x 10^n
	switch {
	case k <= n && n <= 21:
		out = append(out, digits[:k]...)
		for i := 0; i < n-k; i++ {
			out = append(out, '0')
		}
	case 0 < n && n <= 21:
		out = append(out, digits[:n]...)
		out = append(out, '.')
		out = append(out, digits[n:k]...)
	case -6 < n && n <= 0:
		out = append(out, '0', '.')
		for i := 0; i < -n; i++ {
			out = append(out, '0')
		}
		out = append(out, digits[:k]...)
	default:
		out = append(out, digits[0])
		if k > 1 {
			out = append(out, '.')
			out = append(out, digits[1:k]...)
		}
		out = append(out, 'e')
		if n-1 >= 0 {
			out = append(out, '+')
		}
		out = strconv.AppendInt(out, int64(n-1), 10)
	}
	return out, nil
}

// quoteCanonical appends s as a JSON string the way JSON.stringify writes
// it: '"' and '\\' escaped, the control characters U+0000 to U+001F as
// \b \t \n \f \r or \u00xx (lower-case hex), everything else as it is.
func quoteCanonical[S ~string | ~[]byte](out []byte, s S) []byte {
	const hex = "0123456789abcdef"
	out = append(out, '"')
	start := 0
	for i := 0; i < len(s); i++ {
		ch := s[i]
		if !needsEscape[ch] {
			continue
		}
		out = append(out, s[start:i]...)
		switch ch {
		case '"', '\\':
			out = append(out, '\\', ch)
		case '\b':
			out = append(out, '\\', 'b')
		case '\t':
			out = append(out, '\\', 't')
		case '\n':
			out = append(out, '\\', 'n')
		case '\f':
			out = append(out, '\\', 'f')
		case '\r':
			out = append(out, '\\', 'r')
		default:
			out = append(out, '\\', 'u', '0', '0', hex[ch>>4], hex[ch&0xf])
		}
		start = i + 1
	}
	out = append(out, s[start:]...)
	return append(out, '"')
}

// needsEscape marks the bytes quoteCanonical escapes.
var needsEscape = func() (t [256]bool) {
	for ch := range 0x20 {
		t[ch] = true
	}
	t['"'], t['\\'] = true, true
	return t
}()

// compareUTF16 orders strings by their UTF-16 code units, as RFC 8785
// sorts member names. For names below U+D800 (all of ours) this is the
// byte order of their UTF-8; the general case converts.
func compareUTF16(a, b []byte) int {
	ascii := true
	for i := 0; i < len(a) && ascii; i++ {
		ascii = a[i] < 0x80
	}
	for i := 0; i < len(b) && ascii; i++ {
		ascii = b[i] < 0x80
	}
	if ascii {
		return bytes.Compare(a, b)
	}
	return slices.Compare(utf16.Encode([]rune(string(a))), utf16.Encode([]rune(string(b))))
}

// encoder writes the RFC 8785 encoding of a Go value directly, as
// canonicalJSON would write it for what encoding/json writes of the value,
// without the intermediate text: fields named by their json tags, sorted
// by UTF-16 code units, omitempty as encoding/json applies it, fields
// tagged "-" and unexported fields left out, strings coerced to valid
// UTF-8 as encoding/json does, integers through float64 as RFC 8785 reads
// every number. A json.RawMessage is written as it is and must already be
// canonical. It takes the kinds the record types use (structs without
// embedding, pointers, slices, arrays, strings, bools, integers, float64)
// and refuses the others.
type encoder struct {
	out []byte
	// seriesRows writes a *Series as matgate.record/1 did: an array of
	// sample objects instead of columns.
	seriesRows bool
	// mark names a member of the outermost object: markAt is where it
	// is, or would be when left out, in out (before its comma).
	mark   string
	markAt int
	depth  int
}

var (
	rawMessageType = reflect.TypeFor[json.RawMessage]()
	seriesPtrType  = reflect.TypeFor[*Series]()
	float64sType   = reflect.TypeFor[[]float64]()
)

func (e *encoder) value(v reflect.Value) error {
	switch v.Type() {
	case rawMessageType:
		if v.IsNil() {
			e.out = append(e.out, "null"...)
		} else {
			e.out = append(e.out, v.Bytes()...)
		}
		return nil
	case seriesPtrType:
		if e.seriesRows && !v.IsNil() {
			return e.seriesAsRows(v.Interface().(*Series))
		}
	case float64sType:
		if v.IsNil() {
			e.out = append(e.out, "null"...)
			return nil
		}
		e.out = append(e.out, '[')
		for i, x := range v.Interface().([]float64) {
			if i > 0 {
				e.out = append(e.out, ',')
			}
			if err := e.float(x); err != nil {
				return err
			}
		}
		e.out = append(e.out, ']')
		return nil
	}
	switch v.Kind() {
	case reflect.Pointer:
		if v.IsNil() {
			e.out = append(e.out, "null"...)
			return nil
		}
		return e.value(v.Elem())
	case reflect.Struct:
		return e.object(v)
	case reflect.Slice:
		if v.IsNil() {
			e.out = append(e.out, "null"...)
			return nil
		}
		if v.Type().Elem().Kind() == reflect.Uint8 {
			return fmt.Errorf("canonical JSON: %s: byte slices are not supported", v.Type())
		}
		fallthrough
	case reflect.Array:
		e.out = append(e.out, '[')
		for i := range v.Len() {
			if i > 0 {
				e.out = append(e.out, ',')
			}
			if err := e.value(v.Index(i)); err != nil {
				return err
			}
		}
		e.out = append(e.out, ']')
		return nil
	case reflect.String:
		e.out = quoteString(e.out, v.String())
		return nil
	case reflect.Bool:
		if v.Bool() {
			e.out = append(e.out, "true"...)
		} else {
			e.out = append(e.out, "false"...)
		}
		return nil
	case reflect.Float64:
		return e.float(v.Float())
	case reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64:
		return e.float(float64(v.Int()))
	case reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64:
		return e.float(float64(v.Uint()))
	}
	return fmt.Errorf("canonical JSON: %s: kind %s is not supported", v.Type(), v.Kind())
}

func (e *encoder) float(x float64) error {
	out, err := appendES6Number(e.out, x)
	if err != nil {
		return fmt.Errorf("canonical JSON: %g: %w", x, err)
	}
	e.out = out
	return nil
}

// field is an encoded struct field: its quoted name and colon, in
// canonical order.
type field struct {
	index     int
	name      string
	key       []byte // "name":
	omitEmpty bool
}

var fieldCache sync.Map // reflect.Type -> []field

func fieldsOf(t reflect.Type) ([]field, error) {
	if f, ok := fieldCache.Load(t); ok {
		return f.([]field), nil
	}
	var fs []field
	var names [][]byte
	for i := range t.NumField() {
		sf := t.Field(i)
		if sf.Anonymous {
			return nil, fmt.Errorf("canonical JSON: %s: embedded field %s is not supported", t, sf.Name)
		}
		if !sf.IsExported() {
			continue
		}
		tag := sf.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		if name == "" {
			name = sf.Name
		}
		omit := false
		for o := range strings.SplitSeq(opts, ",") {
			switch o {
			case "omitempty":
				omit = true
			case "":
			default:
				return nil, fmt.Errorf("canonical JSON: %s.%s: tag option %q is not supported", t, sf.Name, o)
			}
		}
		key := quoteCanonical(nil, []byte(name))
		fs = append(fs, field{index: i, name: name, key: append(key, ':'), omitEmpty: omit})
		names = append(names, []byte(name))
	}
	order := make([]int, len(fs))
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(a, b int) int { return compareUTF16(names[a], names[b]) })
	sorted := make([]field, len(fs))
	for i, j := range order {
		sorted[i] = fs[j]
	}
	fieldCache.Store(t, sorted)
	return sorted, nil
}

func (e *encoder) object(v reflect.Value) error {
	fs, err := fieldsOf(v.Type())
	if err != nil {
		return err
	}
	e.out = append(e.out, '{')
	e.depth++
	defer func() { e.depth-- }()
	first := true
	for _, f := range fs {
		if e.depth == 1 && f.name == e.mark {
			e.markAt = len(e.out)
		}
		fv := v.Field(f.index)
		if f.omitEmpty && isEmptyValue(fv) {
			continue
		}
		if !first {
			e.out = append(e.out, ',')
		}
		first = false
		e.out = append(e.out, f.key...)
		if err := e.value(fv); err != nil {
			return err
		}
	}
	e.out = append(e.out, '}')
	return nil
}

// isEmptyValue is encoding/json's rule for omitempty.
func isEmptyValue(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Array, reflect.Map, reflect.Slice, reflect.String:
		return v.Len() == 0
	case reflect.Bool, reflect.Int, reflect.Int8, reflect.Int16, reflect.Int32, reflect.Int64,
		reflect.Uint, reflect.Uint8, reflect.Uint16, reflect.Uint32, reflect.Uint64, reflect.Uintptr,
		reflect.Float32, reflect.Float64, reflect.Interface, reflect.Pointer:
		return v.IsZero()
	}
	return false
}

// seriesAsRows writes s as matgate.record/1 wrote a series: one object per
// sample, the shear members only where they are not +0 (encoding/json's
// omitempty: reflect.Value.IsZero) and gap only where it is true.
func (e *encoder) seriesAsRows(s *Series) error {
	e.out = append(e.out, '[')
	gaps := s.Gaps
	for i, smp := range s.Samples() {
		if i > 0 {
			e.out = append(e.out, ',')
		}
		members := []struct {
			key  string
			v    float64
			omit bool
		}{
			{`{"accumulated_plastic_strain":`, smp.P, false},
			{`,"back_stress":`, smp.BackStress, false},
			{`,"plastic_strain":`, smp.PlasticStrain, false},
			{`,"shear_strain":`, smp.ShearStrain, math.Float64bits(smp.ShearStrain) == 0},
			{`,"shear_stress":`, smp.ShearStress, math.Float64bits(smp.ShearStress) == 0},
			{`,"strain":`, smp.Strain, false},
			{`,"stress":`, smp.Stress, false},
		}
		for k, m := range members {
			if k == 2 && len(gaps) > 0 && gaps[0] == i {
				e.out = append(e.out, `,"gap":true`...)
				gaps = gaps[1:]
			}
			if m.omit {
				continue
			}
			e.out = append(e.out, m.key...)
			if err := e.float(m.v); err != nil {
				return err
			}
		}
		e.out = append(e.out, '}')
	}
	e.out = append(e.out, ']')
	return nil
}

// quoteString is quoteCanonical of a Go string as encoding/json writes it:
// each byte that is not part of valid UTF-8 becomes U+FFFD.
func quoteString(out []byte, s string) []byte {
	if utf8.ValidString(s) {
		return quoteCanonical(out, s)
	}
	var b []byte
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		b = utf8.AppendRune(b, r)
		i += size
	}
	return quoteCanonical(out, b)
}
