package schema

import (
	"encoding/json"
	"errors"
	"fmt"
	"net/url"
	"sort"
	"strconv"
	"strings"

	"github.com/santhosh-tekuri/jsonschema/v5"
)

// patternPhrases says in words what each pattern of card.schema.json
// requires; a test checks that every pattern has one.
var patternPhrases = map[string]string{
	`^[a-z0-9][a-z0-9._-]{0,63}$`: "is not a slug: 1 to 64 lower-case letters, digits, '.', '_' or '-', starting with a letter or digit",
	`\S`:                          "is blank: write some text",
	`^sha256:[0-9a-f]{64}$`:       "is not a digest: sha256: followed by 64 lower-case hex digits",
	`^[A-Za-z0-9_][A-Za-z0-9 ._-]*(/[A-Za-z0-9_][A-Za-z0-9 ._-]*)*\.csv$`: "is not a relative path to a .csv file below the card's folder ('/'-separated, no '..', no leading '/', no '\\', each segment starting with a letter, digit or '_')",
}

// validate checks v against the embedded schema and turns every failure
// into a located diagnostic with a message of our own.
func (b *builder) validate(v any) {
	c, err := loadSchema()
	if err != nil {
		b.errorf(Pos{}, "", "internal error: %v", err)
		return
	}
	err = c.schema.Validate(v)
	if err == nil {
		return
	}
	var ve *jsonschema.ValidationError
	if !errors.As(err, &ve) {
		b.errorf(Pos{}, "", "internal error: schema validation: %v", err)
		return
	}
	m := messenger{b: b, tree: c.tree}
	m.walk(ve)
}

type messenger struct {
	b    *builder
	tree any // the parsed schema
}

// walk descends v5's error tree to the leaves (v5's order varies from run to
// run; Decode sorts by position afterwards). oneOf is answered where it
// stands: its branches' failures are noise.
func (m *messenger) walk(ve *jsonschema.ValidationError) {
	frag := fragment(ve.AbsoluteKeywordLocation)
	if keyword(frag) == "oneOf" {
		m.oneOf(ve, frag)
		return
	}
	if len(ve.Causes) > 0 {
		for _, c := range ve.Causes {
			m.walk(c)
		}
		return
	}
	m.leaf(ve, frag)
}

// fragment returns the JSON pointer into the schema of an absolute keyword
// location ("urn:...#/$defs/x/minimum" -> "/$defs/x/minimum").
func fragment(loc string) string {
	if i := strings.IndexByte(loc, '#'); i >= 0 {
		return loc[i+1:]
	}
	return ""
}

func keyword(frag string) string { return frag[strings.LastIndexByte(frag, '/')+1:] }

// instancePointer converts v5's instance location, whose tokens are also
// URL-path-escaped, to an RFC 6901 pointer.
func instancePointer(loc string) string {
	if loc == "" {
		return ""
	}
	toks := strings.Split(loc, "/")
	for i, t := range toks {
		if u, err := url.PathUnescape(t); err == nil {
			toks[i] = u
		}
	}
	return strings.Join(toks, "/")
}

// schemaAt returns the schema value at a pointer into the schema.
func (m *messenger) schemaAt(frag string) any {
	v, _ := lookup(m.tree, frag)
	return v
}

// title is the title of the schema object that holds the keyword at frag,
// for context ("in an armstrong_frederick term"); "" for the card itself.
func (m *messenger) title(frag string) string {
	parent := parentPointer(frag)
	if parent == "" {
		return ""
	}
	if o, ok := m.schemaAt(parent).(map[string]any); ok {
		if t, ok := o["title"].(string); ok {
			return t
		}
	}
	return ""
}

func (m *messenger) report(pos Pos, pointer, format string, args ...any) {
	if m.b.underBad(pointer) {
		return
	}
	m.b.errorf(pos, pointer, format, args...)
}

func (m *messenger) leaf(ve *jsonschema.ValidationError, frag string) {
	doc := m.b.doc
	ptr := instancePointer(ve.InstanceLocation)
	kw := keyword(frag)
	want := m.schemaAt(frag)
	inst, _ := lookup(doc.Value, ptr)
	val := doc.valueText(ptr)
	pos := doc.Pos(ptr)
	switch kw {
	case "type":
		m.report(pos, ptr, "%s, want %s", describe(inst, val), typeNames(want))
	case "const":
		m.report(pos, ptr, "%s is not %s", val, render(want))
	case "enum":
		m.report(pos, ptr, "%s is not one of %s", val, renderList(want))
	case "minimum":
		m.report(pos, ptr, "%s is below the minimum %s", val, render(want))
	case "exclusiveMinimum":
		m.report(pos, ptr, "%s is not above %s", val, render(want))
	case "maximum":
		m.report(pos, ptr, "%s is above the maximum %s", val, render(want))
	case "exclusiveMaximum":
		m.report(pos, ptr, "%s is not below %s", val, render(want))
	case "minLength":
		if n, _ := strconv.Atoi(render(want)); n <= 1 {
			m.report(pos, ptr, "the text is empty")
		} else {
			m.report(pos, ptr, "the text is shorter than %s characters", render(want))
		}
	case "maxLength":
		s, _ := inst.(string)
		m.report(pos, ptr, "the text is %d characters long, above the limit of %s", len([]rune(s)), render(want))
	case "pattern":
		p, _ := want.(string)
		phrase, ok := patternPhrases[p]
		if !ok {
			phrase = "does not match the pattern " + p
		}
		m.report(pos, ptr, "%s %s", val, phrase)
	case "minItems", "maxItems":
		m.items(ve, frag, ptr, pos, inst)
	case "required":
		m.required(frag, ptr, inst)
	case "additionalProperties":
		m.unknownFields(frag, ptr, inst)
	case "format":
		m.report(pos, ptr, "%s is not a valid %s", val, render(want))
	default:
		m.report(pos, ptr, "%s", ve.Message)
	}
}

func (m *messenger) items(ve *jsonschema.ValidationError, frag, ptr string, pos Pos, inst any) {
	a, _ := inst.([]any)
	o, _ := m.schemaAt(parentPointer(frag)).(map[string]any)
	lo, hasLo := o["minItems"]
	hi, hasHi := o["maxItems"]
	switch {
	case hasLo && hasHi && render(lo) == render(hi):
		m.report(pos, ptr, "the list has %s, want exactly %s", plural(len(a), "item"), render(lo))
	case keyword(frag) == "minItems":
		m.report(pos, ptr, "the list has %s, want at least %s", plural(len(a), "item"), render(lo))
	default:
		m.report(pos, ptr, "the list has %s, want at most %s", plural(len(a), "item"), render(hi))
	}
}

// required reports each missing field at its own pointer; the position is
// that of the mapping that lacks it.
func (m *messenger) required(frag, ptr string, inst any) {
	obj, _ := inst.(map[string]any)
	names, _ := m.schemaAt(frag).([]any)
	because := ""
	if i := strings.Index(frag, "/dependentSchemas/"); i >= 0 {
		dep := strings.SplitN(frag[i+len("/dependentSchemas/"):], "/", 2)[0]
		because = fmt.Sprintf(" (required because %s is given)", pointerUnescaper.Replace(dep))
	}
	of := ""
	if t := m.title(frag); t != "" {
		of = " of the " + t
	}
	for _, n := range names {
		name, _ := n.(string)
		if _, ok := obj[name]; ok {
			continue
		}
		m.report(m.b.doc.Pos(ptr), childPointer(ptr, name), "required field %s%s is missing%s", name, of, because)
	}
}

// unknownFields reports each field the schema object does not define, at
// its key, with the nearest allowed name or the list of allowed ones.
func (m *messenger) unknownFields(frag, ptr string, inst any) {
	obj, _ := inst.(map[string]any)
	o, _ := m.schemaAt(parentPointer(frag)).(map[string]any)
	props, _ := o["properties"].(map[string]any)
	allowed := make([]string, 0, len(props))
	for name := range props {
		allowed = append(allowed, name)
	}
	sort.Strings(allowed)
	in := ""
	if t := m.title(frag); t != "" {
		in = " in " + article(t) + " " + t
	}
	for name := range obj {
		if _, ok := props[name]; ok {
			continue
		}
		child := childPointer(ptr, name)
		hint := "the fields here are " + strings.Join(allowed, ", ")
		if s := closest(name, allowed); s != "" {
			hint = "did you mean " + s + "?"
		}
		m.report(m.b.doc.keyPos(child), child, "unknown field %s%s: %s", quoteText(name), in, hint)
	}
}

// oneOf answers a failed oneOf. Where every branch only requires one field
// (an "exactly one of" choice) it says which fields and what was found;
// otherwise it says that no form, or more than one, matched.
func (m *messenger) oneOf(ve *jsonschema.ValidationError, frag string) {
	doc := m.b.doc
	ptr := instancePointer(ve.InstanceLocation)
	inst, _ := lookup(doc.Value, ptr)
	obj, _ := inst.(map[string]any)
	branches, _ := m.schemaAt(frag).([]any)
	var names, found []string
	for _, br := range branches {
		o, _ := br.(map[string]any)
		req, _ := o["required"].([]any)
		if len(o) != 1 || len(req) != 1 {
			names = nil
			break
		}
		name, _ := req[0].(string)
		names = append(names, name)
		if _, ok := obj[name]; ok {
			found = append(found, name)
		}
	}
	subject := "this value"
	if t := m.title(frag); t != "" {
		subject = article(t) + " " + t
	}
	pos := doc.Pos(ptr)
	switch {
	case names == nil && len(ve.Causes) == 0:
		m.report(pos, ptr, "%s matches more than one of its allowed forms", subject)
	case names == nil:
		m.report(pos, ptr, "%s matches none of its allowed forms", subject)
	case len(found) == 0:
		m.report(pos, ptr, "%s gives exactly one of %s; this one gives neither", subject, strings.Join(names, " and "))
	default:
		m.report(pos, ptr, "%s gives exactly one of %s; this one gives %s", subject, strings.Join(names, " and "), strings.Join(found, " and "))
	}
}

// describe names the kind of a value, with the value when it is a scalar.
func describe(v any, text string) string {
	switch v.(type) {
	case nil:
		return "the value is empty (null)"
	case map[string]any:
		return "this is a mapping"
	case []any:
		return "this is a list"
	case string:
		return text + " is a string"
	case bool:
		return text + " is a boolean"
	case json.Number:
		return text + " is a number"
	}
	return text
}

var typeWords = map[string]string{
	"object": "a mapping", "array": "a list", "string": "a string",
	"number": "a number", "integer": "an integer (a whole number)", "boolean": "true or false", "null": "null",
}

func typeNames(want any) string {
	var ws []string
	switch t := want.(type) {
	case string:
		ws = []string{typeWords[t]}
	case []any:
		for _, x := range t {
			s, _ := x.(string)
			ws = append(ws, typeWords[s])
		}
	}
	return strings.Join(ws, " or ")
}

// render prints a schema value for a message: strings bare, numbers as
// written in the schema.
func render(v any) string {
	switch t := v.(type) {
	case string:
		return t
	case json.Number:
		return string(t)
	}
	b, _ := json.Marshal(v)
	return string(b)
}

func renderList(v any) string {
	a, _ := v.([]any)
	s := make([]string, len(a))
	for i, x := range a {
		s[i] = render(x)
	}
	return strings.Join(s, ", ")
}

func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}

// closest returns the allowed name nearest to name in edit distance when it
// is near enough to be a typo (at most 2 edits, and fewer than half the
// name), else "".
func closest(name string, allowed []string) string {
	best, bestD := "", 3
	for _, a := range allowed {
		d := editDistance(name, a)
		if d < bestD && 2*d < len([]rune(a)) {
			best, bestD = a, d
		}
	}
	return best
}

// editDistance is the Levenshtein distance between a and b, in runes.
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

// article is the indefinite article for a noun phrase.
func article(s string) string {
	if s != "" && strings.ContainsRune("aeiou", rune(s[0])) {
		return "an"
	}
	return "a"
}
