package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"matgate/checks"
	"matgate/worker"
	"matgate/worker/report"
)

func newCompareCmd(e *env) *cobra.Command {
	var (
		format   string
		limit    float64
		htmlFile string
	)
	c := &cobra.Command{
		Use:   "compare OLD NEW",
		Short: "Show how the response of a card changes between two revisions",
		Long: `compare drives two revisions of a card through the same loads (the older
revision's verification loads) and reports the change of each headline
response quantity: the tension stress at 0.5, 1 and 2 % strain and at the
monotonic strain, the stress amplitude and dissipated energy of the last
fully reversed cycle at each strain amplitude, the ratchet strain per cycle,
the mean stress after relaxation, and the shear yield stress.

--limit R makes any relative change above R (0.05 is 5 %), or a quantity
that exists for one revision only, exit 1. --html FILE writes a page with
the table and overlay plots of both revisions.`,
		Args: cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			if format != "text" && format != "json" && format != "markdown" {
				return &usageError{fmt.Errorf("--format %q: use text, json or markdown", format)}
			}
			if limit < 0 || math.IsNaN(limit) {
				return &usageError{fmt.Errorf("--limit %g: give a relative change >= 0, e.g. 0.05", limit)}
			}
			var sides [2]loaded
			bad := false
			for i, a := range args {
				sides[i] = loadCard(e, a)
				for _, d := range sides[i].diags {
					fmt.Fprintln(e.stderr, d.String())
				}
				bad = bad || !sides[i].valid()
			}
			if bad {
				return &exitError{code: exitInvalid}
			}
			cmp, err := worker.Compare(cmd.Context(), sides[0].card, sides[1].card)
			if err != nil {
				return err
			}
			cmp.Old.File, cmp.New.File = sides[0].file, sides[1].file
			var over []checks.Change
			if cmd.Flags().Changed("limit") {
				over = cmp.Exceeding(limit)
			}
			switch format {
			case "json":
				out := struct {
					*worker.Comparison
					Limit     *float64        `json:"limit,omitempty"`
					Exceeding []checks.Change `json:"exceeding,omitempty"`
				}{Comparison: cmp, Exceeding: over}
				if cmd.Flags().Changed("limit") {
					out.Limit = &limit
				}
				enc := json.NewEncoder(e.stdout)
				enc.SetIndent("", "  ")
				if err := enc.Encode(out); err != nil {
					return err
				}
			case "markdown":
				writeComparisonMarkdown(e.stdout, cmp)
			default:
				writeComparisonText(e.stdout, cmp)
			}
			if htmlFile != "" {
				page, err := report.RenderComparison(report.Side{Label: sideLabel(cmp.Old), Response: cmp.OldResp},
					report.Side{Label: sideLabel(cmp.New), Response: cmp.NewResp}, cmp.Changes, cmp.Loads)
				if err != nil {
					return err
				}
				if err := os.WriteFile(htmlFile, page, 0o644); err != nil {
					return &exitError{code: exitInternal, err: err}
				}
			}
			if len(over) > 0 {
				names := make([]string, len(over))
				for i, c := range over {
					names[i] = c.Name
				}
				return &exitError{code: exitFailed, err: fmt.Errorf("%d of %d quantities changed by more than --limit %g: %s", len(over), len(cmp.Changes), limit, strings.Join(names, "; "))}
			}
			return nil
		},
	}
	c.Flags().StringVar(&format, "format", "text", "output: text, json or markdown")
	c.Flags().Float64Var(&limit, "limit", 0, "exit 1 when a relative change exceeds this (0.05 is 5 %)")
	c.Flags().StringVar(&htmlFile, "html", "", "write an HTML page with the table and overlay plots to this file")
	return c
}

func sideLabel(r worker.CardRef) string {
	return fmt.Sprintf("%s r%d (%s)", r.ID, r.Revision, r.File)
}

// display returns a value in the unit a reader expects: stresses in MPa,
// energies in kJ/m^3, strains as they are.
func display(v *float64, unit string) string {
	if v == nil {
		return "-"
	}
	switch unit {
	case "Pa":
		return fmt.Sprintf("%.6g MPa", *v/1e6)
	case "J/m^3":
		return fmt.Sprintf("%.6g kJ/m^3", *v/1e3)
	}
	return fmt.Sprintf("%.6g", *v)
}

func displayChange(v *float64, unit string) string {
	if v == nil {
		return "-"
	}
	s := display(v, unit)
	if *v >= 0 {
		s = "+" + s
	}
	return s
}

func displayRel(r *float64) string {
	if r == nil {
		return "-"
	}
	return fmt.Sprintf("%+.3g %%", 100**r)
}

func writeComparisonText(w io.Writer, c *worker.Comparison) {
	fmt.Fprintf(w, "%s -> %s\nloads: %s\n\n", sideLabel(c.Old), sideLabel(c.New), c.Loads)
	fmt.Fprintf(w, "%-55s %18s %18s %18s %10s\n", "quantity", "older", "newer", "change", "relative")
	for _, ch := range c.Changes {
		fmt.Fprintf(w, "%-55s %18s %18s %18s %10s\n", ch.Name, display(ch.Old, ch.Unit), display(ch.New, ch.Unit), displayChange(ch.Abs, ch.Unit), displayRel(ch.Rel))
		if ch.Note != "" {
			fmt.Fprintf(w, "    (%s)\n", ch.Note)
		}
	}
	fmt.Fprintf(w, "\n%s\n", c.Caution)
}

func writeComparisonMarkdown(w io.Writer, c *worker.Comparison) {
	fmt.Fprintf(w, "### Response of `%s` r%d -> r%d\n\n", c.New.ID, c.Old.Revision, c.New.Revision)
	fmt.Fprintf(w, "Both revisions under the same loads: %s.\n\n", c.Loads)
	fmt.Fprintln(w, "| quantity | older | newer | change | relative |")
	fmt.Fprintln(w, "|---|---:|---:|---:|---:|")
	for _, ch := range c.Changes {
		name := ch.Name
		if ch.Note != "" {
			name += " (" + ch.Note + ")"
		}
		fmt.Fprintf(w, "| %s | %s | %s | %s | %s |\n", name, display(ch.Old, ch.Unit), display(ch.New, ch.Unit), displayChange(ch.Abs, ch.Unit), displayRel(ch.Rel))
	}
	fmt.Fprintf(w, "\n> %s\n", c.Caution)
}
