package checks

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
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
			x, err := strconv.Atoi(string(e[i+1:]))
			if err != nil {
				return out, err
			}
			exp = x
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
func quoteCanonical(out []byte, s []byte) []byte {
	const hex = "0123456789abcdef"
	out = append(out, '"')
	start := 0
	for i := 0; i < len(s); i++ {
		ch := s[i]
		if ch >= 0x20 && ch != '"' && ch != '\\' {
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
