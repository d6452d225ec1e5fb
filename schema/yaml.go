package schema

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"regexp"
	"strconv"

	"go.yaml.in/yaml/v3"
)

// parseYAML parses one YAML document into yaml.Node and walks it. Decoding
// YAML straight into Go values would expand aliases (billion laughs), turn
// timestamps into time.Time and .nan into NaN, read 010 as 8 and drop
// duplicate keys; the walk refuses or reports each of these instead.
func (b *builder) parseYAML(data []byte) (any, bool) {
	dec := yaml.NewDecoder(bytes.NewReader(data))
	var root yaml.Node
	if err := dec.Decode(&root); err != nil {
		if errors.Is(err, io.EOF) {
			b.errorf(Pos{}, "", "the file is empty: it holds no card, only comments or blank lines")
		} else {
			b.yamlError(err)
		}
		return nil, false
	}
	w := yamlWalker{b: b, aliases: map[string]bool{}}
	var next yaml.Node
	switch err := dec.Decode(&next); {
	case errors.Is(err, io.EOF):
	case err != nil:
		b.yamlError(err)
	default:
		b.errorf(w.pos(&next), "", "a second YAML document starts here: a card file holds one document (remove the '---' and what follows, or split the file)")
	}
	var v any
	if len(root.Content) > 0 {
		v = w.node(root.Content[0], "", 1)
	}
	return v, true
}

var yamlLineRE = regexp.MustCompile(`^yaml: line ([0-9]+): (.*)$`)

// yamlParserProblems are the parser's (not the scanner's) problems in
// go.yaml.in/yaml/v3 v3.0.6 (parserc.go). For these its error message gives
// the 0-based line of the construct being parsed; scanner errors give the
// 1-based line. Decode adds the missing 1.
var yamlParserProblems = map[string]bool{
	"did not find expected ',' or ']'":       true,
	"did not find expected ',' or '}'":       true,
	"did not find expected '-' indicator":    true,
	"did not find expected <document start>": true,
	"did not find expected <stream-start>":   true,
	"did not find expected key":              true,
	"did not find expected node content":     true,
	"found duplicate %TAG directive":         true,
	"found duplicate %YAML directive":        true,
	"found incompatible YAML document":       true,
	"found undefined tag handle":             true,
}

// yamlError reports a parse error. go.yaml.in/yaml/v3 gives the line but not
// the column.
func (b *builder) yamlError(err error) {
	msg := err.Error()
	if m := yamlLineRE.FindStringSubmatch(msg); m != nil {
		line, _ := strconv.Atoi(m[1])
		if yamlParserProblems[m[2]] {
			line++
		}
		// At the end of the input the parser's mark can be one line past
		// the last one.
		line = min(line, len(b.lines))
		b.errorf(Pos{Line: line}, "", "YAML syntax error: %s", m[2])
		return
	}
	if len(msg) > 6 && msg[:6] == "yaml: " {
		msg = msg[6:]
	}
	b.errorf(Pos{}, "", "YAML syntax error: %s", msg)
}

type yamlWalker struct {
	b       *builder
	aliases map[string]bool // alias names already reported
}

// pos is where n is written. An empty node at the end of the input can be
// placed one line past the last; it is moved to the start of the last line.
func (w *yamlWalker) pos(n *yaml.Node) Pos {
	if last := len(w.b.lines); n.Line > last {
		return Pos{Line: last, Column: 1}
	}
	return Pos{Line: n.Line, Column: n.Column}
}

// node converts n to a JSON-compatible value and records its position.
func (w *yamlWalker) node(n *yaml.Node, pointer string, depth int) any {
	b := w.b
	pos := w.pos(n)
	if n.Anchor != "" {
		b.errorf(pos, pointer, "YAML anchor &%s is not allowed: write each value out in full (anchors and aliases can expand a small file into a huge card)", n.Anchor)
	}
	if n.Kind != yaml.ScalarNode && n.Kind != yaml.AliasNode {
		b.record(pointer, pos, "")
		if depth > maxDepth {
			b.errorf(pos, pointer, "the card nests deeper than %d levels here: a card is a few levels deep", maxDepth)
			b.bad[pointer] = true
			return nil
		}
	}
	if n.Style&yaml.TaggedStyle != 0 {
		b.record(pointer, pos, n.Value)
		b.errorf(pos, pointer, "YAML tag %s is not allowed: a card uses plain values (quote a value to make it a string)", n.Tag)
		b.bad[pointer] = true
		return nil
	}
	switch n.Kind {
	case yaml.AliasNode:
		b.record(pointer, pos, "*"+n.Value)
		if !w.aliases[n.Value] {
			w.aliases[n.Value] = true
			b.errorf(pos, pointer, "YAML alias *%s is not allowed: write the value out in full", n.Value)
		}
		b.bad[pointer] = true
		return nil
	case yaml.MappingNode:
		return w.mapping(n, pointer, depth)
	case yaml.SequenceNode:
		a := make([]any, 0, len(n.Content))
		for i, c := range n.Content {
			a = append(a, w.node(c, fmt.Sprintf("%s/%d", pointer, i), depth+1))
		}
		return a
	case yaml.ScalarNode:
		return w.scalar(n, pointer, pos)
	}
	b.record(pointer, pos, "")
	b.errorf(pos, pointer, "unexpected YAML node")
	b.bad[pointer] = true
	return nil
}

func (w *yamlWalker) mapping(n *yaml.Node, pointer string, depth int) any {
	b := w.b
	m := map[string]any{}
	keys := map[string]Pos{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		kpos := w.pos(k)
		switch {
		case k.Kind != yaml.ScalarNode:
			b.errorf(kpos, pointer, "a mapping key must be a plain name, not a %s", kindName(k.Kind))
			continue
		case k.Anchor != "" || k.Style&yaml.TaggedStyle != 0:
			b.errorf(kpos, pointer, "a mapping key must be a plain name, without YAML anchor or tag")
			continue
		case k.ShortTag() == "!!merge":
			b.errorf(kpos, pointer, "YAML merge keys (<<) are not allowed: write each field out")
			continue
		}
		child := childPointer(pointer, k.Value)
		if first, dup := keys[k.Value]; dup {
			b.errorf(kpos, child, "duplicate key %s (first at line %d, column %d): each key appears once", quoteText(k.Value), first.Line, first.Column)
			continue
		}
		keys[k.Value] = kpos
		m[k.Value] = w.node(v, child, depth+1)
		b.recordKey(child, kpos)
	}
	return m
}

// scalar converts a scalar by the tag YAML 1.2's core schema resolves for
// it. Unquoted timestamps stay strings (the schema then rejects one where a
// number belongs); numbers go through builder.number.
func (w *yamlWalker) scalar(n *yaml.Node, pointer string, pos Pos) any {
	b := w.b
	quoted := n.Style&(yaml.DoubleQuotedStyle|yaml.SingleQuotedStyle|yaml.LiteralStyle|yaml.FoldedStyle) != 0
	switch tag := n.ShortTag(); {
	case tag == "!!null":
		text := n.Value
		if text == "" {
			text = "null"
		}
		b.record(pointer, pos, text)
		return nil
	case tag == "!!bool":
		b.record(pointer, pos, n.Value)
		var v bool
		if err := n.Decode(&v); err != nil {
			b.errorf(pos, pointer, "%s is not true or false", n.Value)
			b.bad[pointer] = true
			return nil
		}
		return v
	case tag == "!!int", tag == "!!float", !quoted && decimalRE.MatchString(n.Value):
		// The last case is a decimal that go.yaml.in/yaml/v3 leaves a
		// string because it overflows float64 (1e400).
		b.record(pointer, pos, n.Value)
		v, _ := b.number(pointer, pos, n.Value)
		return v
	default: // !!str, !!timestamp, and plain text
		b.record(pointer, pos, quoteText(n.Value))
		return n.Value
	}
}

func kindName(k yaml.Kind) string {
	switch k {
	case yaml.MappingNode:
		return "mapping"
	case yaml.SequenceNode:
		return "list"
	case yaml.AliasNode:
		return "alias"
	}
	return "value"
}
