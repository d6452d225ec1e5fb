package main

import (
	"encoding/json"
	"fmt"

	"github.com/spf13/cobra"

	"matgate/schema"
)

func newCheckCmd(e *env) *cobra.Command {
	var format string
	var strict bool
	c := &cobra.Command{
		Use:   "check FILE|DIR|-...",
		Short: "Check cards against the schema and for plausibility",
		Long: `check decodes each card, validates it against the matgate.card/1 schema and
checks it for physical plausibility. Every problem is printed as
file:line:col: /json/pointer: message. Exit 0 when every card is valid, 2
when any is invalid; warnings fail only with --strict.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			if format != "text" && format != "json" {
				return &usageError{fmt.Errorf("--format %q: use text or json", format)}
			}
			names, err := expandInputs(args)
			if err != nil {
				return err
			}
			results := make([]checkResult, 0, len(names))
			bad := 0
			for _, n := range names {
				l := loadCard(e, n)
				r := newCheckResult(l, strict)
				if !r.Valid {
					bad++
				}
				results = append(results, r)
			}
			if format == "json" {
				enc := json.NewEncoder(e.stdout)
				enc.SetIndent("", "  ")
				if err := enc.Encode(results); err != nil {
					return err
				}
			} else {
				for _, r := range results {
					for _, d := range r.diags {
						fmt.Fprintln(e.stdout, d.String())
					}
					if r.Valid {
						fmt.Fprintf(e.stdout, "%s: valid: %s r%d %s\n", r.File, r.ID, r.Revision, r.Digest)
					} else {
						fmt.Fprintf(e.stdout, "%s: invalid: %s\n", r.File, countDiags(r.diags))
					}
				}
				fmt.Fprintf(e.stdout, "%d card(s): %d valid, %d invalid\n", len(results), len(results)-bad, bad)
			}
			if bad > 0 {
				return &exitError{code: exitInvalid}
			}
			return nil
		},
	}
	c.Flags().StringVar(&format, "format", "text", "output format: text or json")
	c.Flags().BoolVar(&strict, "strict", false, "treat warnings as errors")
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
	diags       schema.Diagnostics
}

type jsonDiagnostic struct {
	Severity string `json:"severity"`
	File     string `json:"file"`
	Line     int    `json:"line,omitempty"`
	Column   int    `json:"column,omitempty"`
	Pointer  string `json:"pointer"`
	Value    string `json:"value,omitempty"`
	Message  string `json:"message"`
}

func newCheckResult(l loaded, strict bool) checkResult {
	r := checkResult{File: l.file, Valid: l.valid(), diags: l.diags, Diagnostics: []jsonDiagnostic{}}
	if strict && len(l.diags) > 0 {
		r.Valid = false
	}
	if l.card != nil {
		r.ID, r.Revision, r.Digest = l.card.ID, l.card.Revision, l.card.Digest
	}
	for _, d := range l.diags {
		r.Diagnostics = append(r.Diagnostics, jsonDiagnostic{
			Severity: d.Severity.String(), File: d.File, Line: d.Pos.Line, Column: d.Pos.Column,
			Pointer: d.Pointer, Value: d.Value, Message: d.Message,
		})
	}
	return r
}

func countDiags(ds schema.Diagnostics) string {
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
