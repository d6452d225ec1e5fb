package schema

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
)

// jsonParser walks a JSON text token by token, which encoding/json's
// Unmarshal cannot do: it finds duplicate keys (Unmarshal keeps the last),
// records the position of every value, and requires the end of input after
// the card (Unmarshal ignores what follows).
type jsonParser struct {
	b    *builder
	data []byte
	dec  *json.Decoder
}

// errStop ends the walk after a syntax error; the error is already reported.
var errStop = errors.New("stop")

func (b *builder) parseJSON(data []byte) (any, bool) {
	p := &jsonParser{b: b, data: data, dec: json.NewDecoder(bytes.NewReader(data))}
	p.dec.UseNumber()
	v, err := p.value("", 1)
	if err != nil {
		return nil, false
	}
	off := p.next()
	if _, err := p.dec.Token(); err != io.EOF {
		b.errorf(b.posAt(data, off), "", "unexpected text after the end of the card's JSON value: a card file holds one value")
	}
	return v, true
}

// next returns the offset at which the next token starts: after the last
// token, blanks and the ':' or ',' that the decoder consumes silently.
func (p *jsonParser) next() int {
	off := int(p.dec.InputOffset())
	for off < len(p.data) {
		switch p.data[off] {
		case ' ', '\t', '\r', '\n', ':', ',':
			off++
			continue
		}
		break
	}
	return off
}

// token reads one token and reports a syntax error at its position.
func (p *jsonParser) token() (json.Token, int, error) {
	off := p.next()
	tok, err := p.dec.Token()
	if err == nil {
		return tok, off, nil
	}
	var se *json.SyntaxError
	switch {
	case errors.As(err, &se):
		at := int(se.Offset) - 1
		if at < off {
			at = off
		}
		p.b.errorf(p.b.posAt(p.data, at), "", "JSON syntax error: %s", se.Error())
	case errors.Is(err, io.EOF), errors.Is(err, io.ErrUnexpectedEOF):
		p.b.errorf(p.b.posAt(p.data, len(p.data)), "", "JSON syntax error: the file ends before the card's JSON value is complete")
	default:
		p.b.errorf(p.b.posAt(p.data, off), "", "JSON syntax error: %v", err)
	}
	return nil, off, errStop
}

func (p *jsonParser) value(pointer string, depth int) (any, error) {
	tok, off, err := p.token()
	if err != nil {
		return nil, err
	}
	pos := p.b.posAt(p.data, off)
	switch t := tok.(type) {
	case json.Delim:
		p.b.record(pointer, pos, "")
		if depth > maxDepth {
			p.b.errorf(pos, pointer, "the card nests deeper than %d levels here: a card is a few levels deep", maxDepth)
			p.b.bad[pointer] = true
			return nil, p.skip()
		}
		if t == '{' {
			return p.object(pointer, depth)
		}
		return p.array(pointer, depth)
	case string:
		p.b.record(pointer, pos, quoteText(t))
		return t, nil
	case json.Number:
		p.b.record(pointer, pos, string(t))
		v, _ := p.b.number(pointer, pos, string(t))
		return v, nil
	case bool:
		p.b.record(pointer, pos, fmt.Sprint(t))
		return t, nil
	case nil:
		p.b.record(pointer, pos, "null")
		return nil, nil
	}
	return nil, fmt.Errorf("unexpected JSON token %T", tok)
}

func (p *jsonParser) object(pointer string, depth int) (any, error) {
	m := map[string]any{}
	keys := map[string]Pos{}
	for p.dec.More() {
		tok, off, err := p.token()
		if err != nil {
			return nil, err
		}
		key, ok := tok.(string)
		if !ok {
			p.b.errorf(p.b.posAt(p.data, off), pointer, "JSON syntax error: a key must be a string")
			return nil, errStop
		}
		kpos := p.b.posAt(p.data, off)
		child := childPointer(pointer, key)
		first, dup := keys[key]
		v, err := p.value(child, depth+1)
		if err != nil {
			return nil, err
		}
		if dup {
			p.b.errorf(kpos, child, "duplicate key %s (first at line %d, column %d): each key appears once", quoteText(key), first.Line, first.Column)
			continue
		}
		keys[key] = kpos
		p.b.recordKey(child, kpos)
		m[key] = v
	}
	if _, _, err := p.token(); err != nil { // '}'
		return nil, err
	}
	return m, nil
}

func (p *jsonParser) array(pointer string, depth int) (any, error) {
	a := []any{}
	for i := 0; p.dec.More(); i++ {
		v, err := p.value(fmt.Sprintf("%s/%d", pointer, i), depth+1)
		if err != nil {
			return nil, err
		}
		a = append(a, v)
	}
	if _, _, err := p.token(); err != nil { // ']'
		return nil, err
	}
	return a, nil
}

// skip reads the rest of a container whose opening delimiter was just read.
func (p *jsonParser) skip() error {
	for level := 1; level > 0; {
		tok, _, err := p.token()
		if err != nil {
			return err
		}
		switch tok {
		case json.Delim('{'), json.Delim('['):
			level++
		case json.Delim('}'), json.Delim(']'):
			level--
		}
	}
	return nil
}
