package main

import (
	"encoding/json"
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"matgate/schema"
	"matgate/worker"
)

func newCheckCmd(e *env) *cobra.Command {
	var (
		format, storeDir string
		strict           bool
		jobs             int
	)
	c := &cobra.Command{
		Use:   "check FILE|DIR|-...",
		Short: "Check cards against the schema, for plausibility and against the library rules",
		Long: `check decodes each card, validates it against the matgate.card/1 schema and
checks it for physical plausibility. Every problem is printed as
file:line:col: /json/pointer: message.

The cards of one run are also held to the library rules: one content per
card id and revision (two files with the same id and revision but other
content are an error naming both). With --store DIR, the records directory
that matgate serve and verify --store keep, a card must also not change
the content of a stored id and revision, nor go below the latest stored
revision of its id. The store is only read.

A directory stands for every .yaml, .yml and .json file below it, leaving
out hidden files and folders, records directories and folders named
matgate-out (verify's outputs). Cards are checked on --jobs cores; the
output is in the order of the inputs, the same for any --jobs.

--format json prints one object per card; --format sarif prints SARIF
2.1.0 (the OASIS format that code-review tools show at the line), one
result per error and warning.

Exit 0 when every card is valid, 2 when any is invalid or breaks a library
rule (warnings fail only with --strict), 3 when the store cannot be read.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if format != "text" && format != "json" && format != "sarif" {
				return &usageError{fmt.Errorf("--format %q: use text, json or sarif", format)}
			}
			if err := checkJobs(jobs); err != nil {
				return err
			}
			var lib *worker.Library
			if storeDir != "" {
				store, err := worker.OpenDirStoreReadOnly(storeDir)
				if err != nil {
					return invalid("--store: %v", err)
				}
				defer store.Close()
				lib = worker.NewLibrary(store)
			} else {
				lib = worker.NewLibrary(nil)
			}
			names, err := expandInputs(args)
			if err != nil {
				return err
			}
			out := newCheckWriter(format, e.stdout)
			bad := 0
			err = inOrder(cmd.Context(), len(names), jobs,
				func(i int) checkResult { return newCheckResult(loadCard(e, names[i]), strict) },
				func(_ int, r checkResult) error {
					if err := r.applyLibrary(lib); err != nil {
						return err
					}
					if !r.Valid {
						bad++
					}
					return out.card(r)
				})
			if err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			if err := out.close(len(names), bad); err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			if bad > 0 {
				return &exitError{code: exitInvalid}
			}
			return nil
		},
	}
	c.Flags().StringVar(&format, "format", "text", "output format: text, json or sarif")
	c.Flags().BoolVar(&strict, "strict", false, "treat warnings as errors")
	c.Flags().IntVar(&jobs, "jobs", defaultJobs(), "cards checked at once; the default is every core the process may use")
	c.Flags().StringVar(&storeDir, "store", "", "also hold the cards to the records in this records directory (read only)")
	return c
}

// checkResult is one card's outcome, as `check --format json` prints it.
type checkResult struct {
	File        string           `json:"file"`
	Valid       bool             `json:"valid"`
	ID          string           `json:"id,omitempty"`
	Revision    int              `json:"revision,omitempty"`
	Digest      string           `json:"digest,omitempty"`
	Diagnostics []jsonDiagnostic `json:"diagnostics"`

	diags  []checkDiag
	strict bool
	ref    *worker.CardRef // nil when the card is invalid
}

// checkDiag is a diagnostic with its rule id and, for a rule that involves
// two cards, the other one.
type checkDiag struct {
	schema.Diagnostic
	rule  string
	other *worker.CardRef
}

type jsonDiagnostic struct {
	Severity string `json:"severity"`
	Rule     string `json:"rule"`
	File     string `json:"file"`
	Line     int    `json:"line,omitempty"`
	Column   int    `json:"column,omitempty"`
	Pointer  string `json:"pointer"`
	Value    string `json:"value,omitempty"`
	Message  string `json:"message"`
}

func newCheckResult(l loaded, strict bool) checkResult {
	r := checkResult{File: l.file, Valid: l.valid(), Diagnostics: []jsonDiagnostic{}, strict: strict}
	if l.card != nil {
		r.ID, r.Revision, r.Digest = l.card.ID, l.card.Revision, l.card.Digest
		ref := worker.RefOf(l.doc, l.card)
		r.ref = &ref
	}
	for _, d := range l.diags {
		r.add(checkDiag{Diagnostic: d, rule: l.rule})
	}
	return r
}

func (r *checkResult) add(d checkDiag) {
	if d.Severity == schema.SeverityError || r.strict {
		r.Valid = false
	}
	r.diags = append(r.diags, d)
	r.Diagnostics = append(r.Diagnostics, jsonDiagnostic{
		Severity: d.Severity.String(), Rule: d.rule, File: d.File, Line: d.Pos.Line, Column: d.Pos.Column,
		Pointer: d.Pointer, Value: d.Value, Message: d.Message,
	})
}

// applyLibrary adds the card to the run's library and its conflicts to
// the result; the error is a records directory that cannot be read.
func (r *checkResult) applyLibrary(lib *worker.Library) error {
	if r.ref == nil {
		return nil
	}
	cs, err := lib.Add(*r.ref)
	if err != nil {
		return err
	}
	for _, c := range cs {
		r.add(checkDiag{Diagnostic: c.Diagnostic(), rule: c.Rule, other: c.Other})
	}
	return nil
}

// checkWriter prints the results of check in one format, a card at a time.
type checkWriter interface {
	card(r checkResult) error
	close(cards, invalid int) error
}

func newCheckWriter(format string, w io.Writer) checkWriter {
	switch format {
	case "json":
		return &jsonArrayWriter{w: w}
	case "sarif":
		return &sarifWriter{w: w}
	}
	return textCheckWriter{w: w}
}

type textCheckWriter struct{ w io.Writer }

func (t textCheckWriter) card(r checkResult) error {
	for _, d := range r.diags {
		fmt.Fprintln(t.w, d.String())
	}
	var err error
	if r.Valid {
		_, err = fmt.Fprintf(t.w, "%s: valid: %s r%d %s\n", r.File, r.ID, r.Revision, r.Digest)
	} else {
		_, err = fmt.Fprintf(t.w, "%s: invalid: %s\n", r.File, countDiags(r.diags))
	}
	return err
}

func (t textCheckWriter) close(cards, invalid int) error {
	_, err := fmt.Fprintf(t.w, "%d card(s): %d valid, %d invalid\n", cards, cards-invalid, invalid)
	return err
}

// jsonArrayWriter streams a JSON array, element by element, in the bytes
// that json.Encoder with SetIndent("", "  ") writes for the whole slice.
type jsonArrayWriter struct {
	w io.Writer
	n int
}

func (j *jsonArrayWriter) card(r checkResult) error {
	b, err := json.MarshalIndent(r, "  ", "  ")
	if err != nil {
		return err
	}
	sep := ",\n  "
	if j.n == 0 {
		sep = "[\n  "
	}
	j.n++
	_, err = fmt.Fprintf(j.w, "%s%s", sep, b)
	return err
}

func (j *jsonArrayWriter) close(int, int) error {
	end := "\n]\n"
	if j.n == 0 {
		end = "[]\n"
	}
	_, err := io.WriteString(j.w, end)
	return err
}

func countDiags(ds []checkDiag) string {
	errs, warns := 0, 0
	for _, d := range ds {
		if d.Severity == schema.SeverityWarning {
			warns++
		} else {
			errs++
		}
	}
	return fmt.Sprintf("%d error(s), %d warning(s)", errs, warns)
}
