package schema

import (
	"fmt"
	"strings"
)

// Severity says whether a Diagnostic makes a card invalid.
type Severity int

const (
	SeverityError Severity = iota
	SeverityWarning
)

func (s Severity) String() string {
	if s == SeverityWarning {
		return "warning"
	}
	return "error"
}

// Pos is a position in a source file; Line and Column count from 1 (Column
// in characters, not bytes), a zero Line means unknown and a zero Column
// means the column is unknown.
type Pos struct {
	Line   int `json:"line"`
	Column int `json:"column"`
}

// Diagnostic is one located problem with a card.
type Diagnostic struct {
	File     string   `json:"file"`
	Pos      Pos      `json:"pos"`
	Pointer  string   `json:"pointer"`         // JSON pointer (RFC 6901) of the offending value; "" for the whole document
	Value    string   `json:"value,omitempty"` // the offending value, shortened, as written
	Message  string   `json:"message"`         // one plain sentence
	Severity Severity `json:"-"`
}

// String formats d as file:line:col: /pointer: message, the form editors and
// CI annotate.
func (d Diagnostic) String() string {
	var b strings.Builder
	b.WriteString(Where(d.File, d.Pos))
	b.WriteString(": ")
	if d.Severity == SeverityWarning {
		b.WriteString("warning: ")
	}
	if d.Pointer != "" {
		b.WriteString(d.Pointer)
		b.WriteString(": ")
	}
	b.WriteString(d.Message)
	return b.String()
}

// Where formats a place in a file as file:line:col, file:line when the
// column is unknown (some YAML syntax errors), or file alone.
func Where(file string, p Pos) string {
	switch {
	case p.Line > 0 && p.Column > 0:
		return fmt.Sprintf("%s:%d:%d", file, p.Line, p.Column)
	case p.Line > 0:
		return fmt.Sprintf("%s:%d", file, p.Line)
	}
	return file
}

// Diagnostics is a list of problems; as an error it reports all of them.
type Diagnostics []Diagnostic

func (ds Diagnostics) Error() string {
	lines := make([]string, len(ds))
	for i, d := range ds {
		lines[i] = d.String()
	}
	return strings.Join(lines, "\n")
}

// HasErrors reports whether any diagnostic is an error (not a warning).
func (ds Diagnostics) HasErrors() bool {
	for _, d := range ds {
		if d.Severity == SeverityError {
			return true
		}
	}
	return false
}
