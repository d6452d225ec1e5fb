package schema

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"regexp"
	"sort"
	"strconv"
	"strings"
	"unicode/utf8"
)

// DefaultMaxBytes is the largest card Decode accepts when DecodeOptions does
// not say otherwise: 1 MiB, about a thousand times a typical card, so that
// a wrong file (a mesh, a log) is refused before any parsing.
const DefaultMaxBytes = 1 << 20

// maxDepth is the deepest nesting of mappings and lists Decode accepts. A
// valid card nests 6 levels (card, verification, references, reference,
// points, pair); 64 leaves room and stops pathological input early.
const maxDepth = 64

// maxDiagnostics caps the diagnostics of one file, so that a binary or
// generated file does not bury the first problems.
const maxDiagnostics = 100

// DecodeOptions adjusts Decode. A nil *DecodeOptions means the defaults.
type DecodeOptions struct {
	// MaxBytes is the largest input accepted, in bytes; zero or negative
	// means DefaultMaxBytes.
	MaxBytes int64
}

// Document is a decoded card with the source position of every value.
type Document struct {
	File  string // name used in diagnostics
	Card  *Card  // the typed card; nil when decoding or validation failed
	Value any    // the JSON-compatible tree that was validated

	index map[string]*srcValue // JSON pointer -> where the value is written
}

// srcValue is where one value of the tree is written.
type srcValue struct {
	pos    Pos    // the value itself
	keyPos Pos    // its key, for a member of a mapping; zero otherwise
	text   string // a scalar as written (strings quoted); "" for mappings and lists
}

// Pos returns the source position of the value at the JSON pointer, or of
// its nearest ancestor present in the source; the zero Pos when there is
// none (an empty or unparsable file).
func (d *Document) Pos(pointer string) Pos {
	if d == nil {
		return Pos{}
	}
	for p := pointer; ; p = parentPointer(p) {
		if v, ok := d.index[p]; ok {
			return v.pos
		}
		if p == "" {
			return Pos{}
		}
	}
}

// keyPos is the position of the key of the member at pointer, or Pos(pointer)
// when the value has no key (a list item, the root, an absent value).
func (d *Document) keyPos(pointer string) Pos {
	if v, ok := d.index[pointer]; ok && v.keyPos.Line > 0 {
		return v.keyPos
	}
	return d.Pos(pointer)
}

// Diag builds a located diagnostic for the value at pointer: it fills File,
// Pos (see Document.Pos), Value (the value as written, shortened; empty when
// the pointer names nothing in the source) and Message.
func (d *Document) Diag(sev Severity, pointer, format string, args ...any) Diagnostic {
	return Diagnostic{
		File:     d.File,
		Pos:      d.Pos(pointer),
		Pointer:  pointer,
		Value:    d.valueText(pointer),
		Message:  fmt.Sprintf(format, args...),
		Severity: sev,
	}
}

// valueText renders the value at pointer for a message: a scalar as written
// (strings quoted), a mapping or list as compact JSON, shortened to
// maxValueRunes. It is "" when the pointer names nothing.
func (d *Document) valueText(pointer string) string {
	v, ok := d.index[pointer]
	if !ok {
		return ""
	}
	if v.text != "" {
		return shorten(v.text)
	}
	val, ok := lookup(d.Value, pointer)
	if !ok {
		return ""
	}
	b, err := json.Marshal(val)
	if err != nil {
		return ""
	}
	return shorten(string(b))
}

const maxValueRunes = 60

func shorten(s string) string {
	if utf8.RuneCountInString(s) <= maxValueRunes {
		return s
	}
	r := []rune(s)
	return string(r[:maxValueRunes-3]) + "..."
}

// Decode decodes a card written in YAML or JSON and validates it against the
// schema. The syntax is detected from the content: a file whose first
// character (after blanks) is '{' or '[' is JSON, anything else YAML. A
// UTF-8 byte order mark is stripped and accepted; CRLF and CR line ends are
// accepted.
//
// Every problem comes back at once as Diagnostics (use errors.As), sorted by
// source position: size over the limit, text that is not UTF-8, syntax
// errors, duplicate keys, YAML anchors, aliases, tags and merge keys,
// several YAML documents, non-finite or out-of-range numbers, numbers not in
// plain decimal, nesting deeper than 64, and every schema violation. The
// returned Document is never nil; its Card is set only when there is no
// error, and its positions are usable whenever the bytes parsed.
func Decode(file string, data []byte, opts *DecodeOptions) (*Document, error) {
	doc := &Document{File: file, index: map[string]*srcValue{}}
	b := &builder{doc: doc, bad: map[string]bool{}}
	limit := int64(DefaultMaxBytes)
	if opts != nil && opts.MaxBytes > 0 {
		limit = opts.MaxBytes
	}
	if int64(len(data)) > limit {
		b.errorf(Pos{}, "", "the file is larger than the limit of %s: a card is a few kilobytes; is this the right file?", ByteSize(limit))
		return doc, b.result()
	}
	data, ok := b.checkText(data)
	if !ok {
		return doc, b.result()
	}
	b.lines = lineStarts(data)
	if isBlank(data) {
		b.errorf(Pos{}, "", "the file is empty: it holds no card")
		return doc, b.result()
	}
	var v any
	if isJSON(data) {
		v, ok = b.parseJSON(data)
	} else {
		v, ok = b.parseYAML(data)
	}
	if !ok {
		return doc, b.result()
	}
	doc.Value = v
	b.validate(v)
	b.checkTemperatures(v)
	if len(b.diags) == 0 {
		card, err := toCard(v)
		if err != nil {
			b.errorf(Pos{}, "", "internal error: the validated card does not decode into Go types: %v", err)
		} else {
			doc.Card = card
		}
	}
	return doc, b.result()
}

// toCard decodes a validated tree into a Card.
func toCard(v any) (*Card, error) {
	v, lists := splitLists(v)
	raw, err := json.Marshal(v)
	if err != nil {
		return nil, err
	}
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	var c plainCard
	if err := dec.Decode(&c); err != nil {
		return nil, err
	}
	c.Tabulated = lists
	return (*Card)(&c), nil
}

// builder collects the tree's positions and the diagnostics of one Decode.
type builder struct {
	doc     *Document
	lines   []int // byte offset of the start of each line
	diags   Diagnostics
	lastPos posCache
	// bad holds the pointers of values that could not be decoded as
	// written; schema errors at or below them are consequences, not news.
	bad map[string]bool
}

func (b *builder) errorf(pos Pos, pointer, format string, args ...any) {
	b.diags = append(b.diags, Diagnostic{
		File:     b.doc.File,
		Pos:      pos,
		Pointer:  pointer,
		Value:    b.doc.valueText(pointer),
		Message:  fmt.Sprintf(format, args...),
		Severity: SeverityError,
	})
}

// record notes where the value at pointer is written; the first record of a
// pointer wins, so that a duplicate key does not move its original.
func (b *builder) record(pointer string, pos Pos, text string) {
	if _, ok := b.doc.index[pointer]; !ok {
		b.doc.index[pointer] = &srcValue{pos: pos, text: text}
	}
}

func (b *builder) recordKey(pointer string, pos Pos) {
	if v, ok := b.doc.index[pointer]; ok && v.keyPos.Line == 0 {
		v.keyPos = pos
	}
}

// underBad reports whether pointer is at or below a value that failed to
// decode.
func (b *builder) underBad(pointer string) bool {
	for p := pointer; ; p = parentPointer(p) {
		if b.bad[p] {
			return true
		}
		if p == "" {
			return false
		}
	}
}

// result sorts, deduplicates and caps the diagnostics; nil when there are
// none.
func (b *builder) result() error {
	if len(b.diags) == 0 {
		return nil
	}
	ds := b.diags
	sort.SliceStable(ds, func(i, j int) bool {
		a, c := ds[i], ds[j]
		if a.Pos.Line != c.Pos.Line {
			return a.Pos.Line < c.Pos.Line
		}
		if a.Pos.Column != c.Pos.Column {
			return a.Pos.Column < c.Pos.Column
		}
		if a.Pointer != c.Pointer {
			return a.Pointer < c.Pointer
		}
		return a.Message < c.Message
	})
	out := ds[:0]
	for i, d := range ds {
		if i > 0 && d == ds[i-1] {
			continue
		}
		out = append(out, d)
	}
	if len(out) > maxDiagnostics {
		n := len(out) - maxDiagnostics
		out = append(out[:maxDiagnostics], Diagnostic{
			File:     b.doc.File,
			Message:  fmt.Sprintf("%d more problems not shown", n),
			Severity: SeverityError,
		})
	}
	b.diags = out
	return out
}

var utf8BOM = []byte{0xEF, 0xBB, 0xBF}

// checkText strips a UTF-8 byte order mark and reports the first byte that
// makes data not a YAML/JSON text: a UTF-16 or UTF-32 byte order mark,
// invalid UTF-8, or a character outside YAML's printable set (C0 and C1
// controls other than tab, LF, CR and NEL; DEL; U+FFFE, U+FFFF). One
// problem is enough: a binary file would give thousands.
func (b *builder) checkText(data []byte) ([]byte, bool) {
	data = bytes.TrimPrefix(data, utf8BOM)
	if bytes.HasPrefix(data, []byte{0xFE, 0xFF}) || bytes.HasPrefix(data, []byte{0xFF, 0xFE}) {
		b.errorf(Pos{Line: 1, Column: 1}, "", "the file starts with a UTF-16 or UTF-32 byte order mark: save the card as UTF-8")
		return data, false
	}
	line, col := 1, 1
	for i := 0; i < len(data); {
		r, size := utf8.DecodeRune(data[i:])
		switch {
		case r == utf8.RuneError && size <= 1:
			b.errorf(Pos{Line: line, Column: col}, "", "byte 0x%02X is not valid UTF-8: a card is UTF-8 text (is this a binary file?)", data[i])
			return data, false
		case !printable(r):
			b.errorf(Pos{Line: line, Column: col}, "", "control character %U is not allowed: a card is text (is this a binary file?)", r)
			return data, false
		}
		switch {
		case r == '\n', r == '\r' && (i+1 == len(data) || data[i+1] != '\n'):
			line, col = line+1, 1
		case r == '\r':
		default:
			col++
		}
		i += size
	}
	return data, true
}

// printable is YAML 1.2's c-printable set, which JSON text also keeps to here.
func printable(r rune) bool {
	switch {
	case r == '\t', r == '\n', r == '\r', r == 0x85:
		return true
	case r < 0x20, r >= 0x7F && r < 0xA0:
		return false
	case r == 0xFFFE, r == 0xFFFF:
		return false
	}
	return true
}

func isBlank(data []byte) bool { return len(bytes.TrimSpace(data)) == 0 }

func isJSON(data []byte) bool {
	t := bytes.TrimLeft(data, " \t\r\n")
	return len(t) > 0 && (t[0] == '{' || t[0] == '[')
}

// lineStarts returns the byte offset at which each line starts; a line ends
// at LF, CRLF or a lone CR, as in YAML.
func lineStarts(data []byte) []int {
	starts := []int{0}
	for i := 0; i < len(data); i++ {
		switch data[i] {
		case '\r':
			if i+1 < len(data) && data[i+1] == '\n' {
				i++
			}
			starts = append(starts, i+1)
		case '\n':
			starts = append(starts, i+1)
		}
	}
	return starts
}

// posAt converts a byte offset into a line and a column counted in
// characters, as YAML counts them.
func (b *builder) posAt(data []byte, off int) Pos {
	if off > len(data) {
		off = len(data)
	}
	if off < 0 {
		off = 0
	}
	i := sort.Search(len(b.lines), func(i int) bool { return b.lines[i] > off }) - 1
	start, col := b.lines[i], 1
	// The JSON walk asks for increasing offsets: count on from the last
	// answer on the same line, so that a long one-line file stays linear.
	if c := b.lastPos; c.col > 0 && c.line == i && c.off >= start && c.off <= off {
		start, col = c.off, c.col
	}
	col += utf8.RuneCount(data[start:off])
	b.lastPos = posCache{line: i, off: off, col: col}
	return Pos{Line: i + 1, Column: col}
}

// posCache is the last answer of posAt: 0-based line, offset, column.
type posCache struct{ line, off, col int }

// ByteSize writes a size limit with its binary unit where it has one:
// "1048576 bytes (1 MiB)".
func ByteSize(n int64) string {
	switch {
	case n >= 1<<20 && n%(1<<20) == 0:
		return fmt.Sprintf("%d bytes (%d MiB)", n, n>>20)
	case n >= 1<<10 && n%(1<<10) == 0:
		return fmt.Sprintf("%d bytes (%d KiB)", n, n>>10)
	}
	return fmt.Sprintf("%d bytes", n)
}

// decimalRE is a number in plain decimal notation, as JSON writes it plus
// YAML's leading '+', leading '.' and trailing '.'.
var decimalRE = regexp.MustCompile(`^[-+]?([0-9]+(\.[0-9]*)?|\.[0-9]+)([eE][-+]?[0-9]+)?$`)

// leadingZeroRE is an integer part with a leading zero, which YAML 1.1
// reads as octal (010 is 8) and YAML 1.2 as decimal.
var leadingZeroRE = regexp.MustCompile(`^[-+]?0[0-9]`)

// number converts a numeric literal to the tree's representation: a
// json.Number holding the shortest decimal that round-trips the float64
// value, so that validation, the Card and a re-encoded card all see the same
// number. It reports non-finite values, overflow and non-decimal notations.
func (b *builder) number(pointer string, pos Pos, lit string) (any, bool) {
	switch strings.ToLower(lit) {
	case ".nan", ".inf", "+.inf", "-.inf":
		b.errorf(pos, pointer, "%s is not a finite number: every value of a card is finite", lit)
		b.bad[pointer] = true
		return nil, false
	}
	if !decimalRE.MatchString(lit) {
		b.errorf(pos, pointer, "%s is not a plain decimal number: write numbers in decimal, without 0x, 0o, 0b or '_'", lit)
		b.bad[pointer] = true
		return nil, false
	}
	if leadingZeroRE.MatchString(lit) {
		b.errorf(pos, pointer, "%s has a leading zero, which YAML 1.1 reads as octal: write it without the leading zero", lit)
		b.bad[pointer] = true
		return nil, false
	}
	f, err := strconv.ParseFloat(lit, 64)
	if err != nil || math.IsInf(f, 0) || math.IsNaN(f) {
		var ne *strconv.NumError
		if errors.As(err, &ne) && errors.Is(ne.Err, strconv.ErrRange) || math.IsInf(f, 0) {
			b.errorf(pos, pointer, "%s is out of range: a card's numbers must fit a 64-bit float (magnitude below 1.8e308)", lit)
		} else {
			b.errorf(pos, pointer, "%s is not a number", lit)
		}
		b.bad[pointer] = true
		return nil, false
	}
	return json.Number(strconv.FormatFloat(f, 'g', -1, 64)), true
}

// quoteText renders a string value for messages.
func quoteText(s string) string {
	q, err := json.Marshal(s)
	if err != nil {
		return strconv.Quote(s)
	}
	return string(q)
}

// parentPointer returns the pointer of the value that holds the one at p;
// the parent of "" is "".
func parentPointer(p string) string {
	i := strings.LastIndexByte(p, '/')
	if i < 0 {
		return ""
	}
	return p[:i]
}

var pointerEscaper = strings.NewReplacer("~", "~0", "/", "~1")
var pointerUnescaper = strings.NewReplacer("~1", "/", "~0", "~")

// childPointer appends an RFC 6901 reference token to p.
func childPointer(p, token string) string { return p + "/" + pointerEscaper.Replace(token) }

// lookup returns the value at pointer in a JSON-compatible tree.
func lookup(v any, pointer string) (any, bool) {
	if pointer == "" {
		return v, true
	}
	if pointer[0] != '/' {
		return nil, false
	}
	for _, tok := range strings.Split(pointer[1:], "/") {
		tok = pointerUnescaper.Replace(tok)
		switch t := v.(type) {
		case map[string]any:
			c, ok := t[tok]
			if !ok {
				return nil, false
			}
			v = c
		case []any:
			i, err := strconv.Atoi(tok)
			if err != nil || i < 0 || i >= len(t) || strconv.Itoa(i) != tok {
				return nil, false
			}
			v = t[i]
		default:
			return nil, false
		}
	}
	return v, true
}
