package main

import (
	"bytes"
	"fmt"
	"strings"
)

// markdown is the summary of a verify run for CI job pages: a table of
// verdicts, then the failed checks and the findings of each card, then the
// revision comparisons, then the caution.
func (s *verifySummary) markdown() []byte {
	var b bytes.Buffer
	fmt.Fprintf(&b, "## matgate verification: %d card(s), %d passed, %d failed, %d invalid, %d error(s)\n\n", len(s.outcomes), s.passed, s.failed, s.invalid, s.internal)
	b.WriteString("| card | revision | verdict | checks | failed | findings | file |\n|---|---:|---|---:|---:|---:|---|\n")
	for _, o := range s.outcomes {
		verdict := o.Status
		if o.Reused != "" {
			verdict += " (stored record reused)"
		}
		fmt.Fprintf(&b, "| %s | %d | %s | %d | %d | %d | `%s` |\n", mdCell(o.ID), o.Revision, verdict, o.Checks, len(o.Failed), len(o.Findings), mdCell(o.File))
	}
	for _, o := range s.outcomes {
		if len(o.Failed) == 0 && len(o.Findings) == 0 && len(o.Problems) == 0 {
			continue
		}
		fmt.Fprintf(&b, "\n### `%s` (%s)\n\n", mdCell(o.File), o.Status)
		for _, p := range o.Problems {
			fmt.Fprintf(&b, "- problem: %s\n", mdCell(p))
		}
		for _, f := range o.Failed {
			fmt.Fprintf(&b, "- failed: %s\n", mdCell(f))
		}
		for _, f := range o.Findings {
			fmt.Fprintf(&b, "- finding: %s\n", mdCell(f.Text))
		}
	}
	for _, o := range s.outcomes {
		if o.Comparison != nil {
			b.WriteString("\n")
			writeComparisonMarkdown(&b, o.Comparison)
		}
	}
	b.WriteString("\n> Verification is not fitness for design: defer to the applicable codes and licensed engineers.\n")
	return b.Bytes()
}

// mdCell keeps text from breaking a Markdown table row or list item.
func mdCell(s string) string {
	return strings.NewReplacer("|", "\\|", "\n", " ").Replace(s)
}
