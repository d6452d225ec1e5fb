package main

import (
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"matgate/checks"
	"matgate/schema"
	"matgate/worker"
	"matgate/worker/report"
)

// commit is stamped at build time with -ldflags "-X main.commit=...".
var commit = "unknown"

func newVerifyCmd(e *env) *cobra.Command {
	var (
		outDir, junitPath, signKey, format, storeDir, summaryPath string
		withReport, force                                         bool
		jobs                                                      int
	)
	c := &cobra.Command{
		Use:   "verify FILE|DIR|-...",
		Short: "Verify cards and write records, neutral cards and tables",
		Long: `verify checks each card, runs the standard verification cases on the
reference integrator and writes, per card, into --out:

  <id>-r<revision>.record.json    the verification record (matgate.record/2)
  <id>-r<revision>.card.json      the neutral card (canonical, SI units)
  <id>-r<revision>.monotonic.csv  monotonic tension: strain, plastic strain, stress
  <id>-r<revision>.cyclic.csv     stabilized cyclic curve from the loop tips
  <id>-r<revision>.report.html    with --report: the record with plots

With --store DIR each record and neutral card also goes into the records
directory DIR, as matgate serve keeps it (immutable files named by job id,
a hash-chained ledger; check it with matgate ledger verify DIR). A card
whose job (card digest and tool version) already has a record there is not
verified again: the stored record is reused and said to be (--force
verifies again). The library rules hold across the run and the store: one
content per id and revision, a changed card bumps its revision, no revision
below the latest stored one. When the store holds an earlier revision of a
card, verify prints how the response changed (see matgate compare).

Cards are verified on --jobs cores at once (default: all); results are
printed in the order of the inputs. --summary FILE writes a Markdown
summary for CI job pages.

Exit 0 when every card passes, 1 when a verification failed, 2 when a card is
invalid, 3 on an internal error. Invalid cards never stop the others.

Verification shows that a card is integrated consistently and matches its
references; it does not show fitness for design.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if format != "text" && format != "json" {
				return &usageError{fmt.Errorf("--format %q: use text or json", format)}
			}
			var priv ed25519.PrivateKey
			if signKey != "" {
				var err error
				if priv, err = readPrivateKey(signKey); err != nil {
					return invalid("--sign-key: %v", err)
				}
			}
			if err := checkJobs(jobs); err != nil {
				return err
			}
			names, err := expandInputs(args, outDir)
			if err != nil {
				return err
			}
			if err := os.MkdirAll(outDir, 0o755); err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			var store *worker.DirStore
			if storeDir != "" {
				if store, err = worker.OpenDirStore(storeDir); err != nil {
					return &exitError{code: exitInternal, err: err}
				}
				defer store.Close()
			}
			var ls worker.LibraryStore // a nil interface without --store
			if store != nil {
				ls = store
			}
			conflicts, err := libraryConflicts(cmd.Context(), e, names, jobs, worker.NewLibrary(ls))
			if err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			opts := verifyOptions{outDir: outDir, withReport: withReport, priv: priv, store: store, storeDir: storeDir, force: force}
			var sum verifySummary
			var suites []junitSuite
			err = inOrder(cmd.Context(), len(names), jobs,
				func(i int) verifyOutcome {
					if cs := conflicts[i]; cs != nil {
						return conflictOutcome(cs)
					}
					return verifyOne(cmd, e, names[i], opts)
				},
				func(i int, o verifyOutcome) error {
					if len(names) > 1 {
						fmt.Fprintf(e.stderr, "[%d/%d] %s\n", i+1, len(names), names[i])
					}
					if format == "text" {
						o.print(e)
					}
					// Hold per card only what an output asked for needs
					// (JUnit, the summary, the JSON listing), so that
					// memory stays flat over a library.
					if junitPath != "" {
						suites = append(suites, o.junit())
					}
					o.record = nil
					sum.add(o, summaryPath != "" || format == "json")
					return nil
				})
			if err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			if summaryPath != "" {
				if err := writeFileAtomic(summaryPath, sum.markdown()); err != nil {
					return &exitError{code: exitInternal, err: err}
				}
			}
			if junitPath != "" {
				if err := writeJUnit(junitPath, suites); err != nil {
					return &exitError{code: exitInternal, err: err}
				}
			}
			if format == "json" {
				enc := json.NewEncoder(e.stdout)
				enc.SetIndent("", "  ")
				if err := enc.Encode(sum.outcomes); err != nil {
					return err
				}
			} else {
				reused := ""
				if sum.reused > 0 {
					reused = fmt.Sprintf(" (%d reused from the store)", sum.reused)
				}
				fmt.Fprintf(e.stdout, "%d card(s): %d passed, %d failed, %d invalid, %d error(s)%s; outputs in %s\n",
					len(names), sum.passed, sum.failed, sum.invalid, sum.internal, reused, outDir)
				fmt.Fprintln(e.stdout, "Verification is not fitness for design: defer to the applicable codes and licensed engineers.")
			}
			return sum.err()
		},
	}
	c.Flags().StringVar(&outDir, "out", "matgate-out", "directory for records, neutral cards, tables and reports")
	c.Flags().BoolVar(&withReport, "report", false, "also write an HTML report with plots of every case")
	c.Flags().StringVar(&junitPath, "junit", "", "write JUnit XML to this file (one test case a check)")
	c.Flags().StringVar(&signKey, "sign-key", "", "sign each record with this ed25519 private key (PEM, PKCS #8)")
	c.Flags().StringVar(&format, "format", "text", "output format: text or json")
	c.Flags().StringVar(&storeDir, "store", "", "also keep each record and neutral card in this records directory (as serve does: immutable files and a ledger); reuse the records it holds")
	c.Flags().BoolVar(&force, "force", false, "with --store: verify again cards whose record is already stored")
	c.Flags().IntVar(&jobs, "jobs", defaultJobs(), "cards verified at once; the default is every core the process may use")
	c.Flags().StringVar(&summaryPath, "summary", "", "write a Markdown summary (verdicts, failed checks, findings, revision comparisons) to this file")
	return c
}

// verifyOutcome is one card's result, as `verify --format json` prints it.
type verifyOutcome struct {
	File     string   `json:"file"`
	ID       string   `json:"id,omitempty"`
	Revision int      `json:"revision,omitempty"`
	Status   string   `json:"status"` // pass, fail, invalid, error
	Checks   int      `json:"checks"`
	Failed   []string `json:"failed_checks,omitempty"`
	Outputs  []string `json:"outputs,omitempty"`
	Problems []string `json:"problems,omitempty"` // diagnostics or the internal error
	// Findings are the record's findings (see checks.Finding): which
	// usual misreading of the card explains a failed reference curve, or
	// matches a passing one far better than the card as written; worded in
	// the card's own terms where the card as written is at hand.
	Findings []outcomeFinding `json:"findings,omitempty"`
	// Reused names the stored record (job id) that was reused instead of
	// verifying the card again (verify --store).
	Reused string `json:"reused,omitempty"`
	// Comparison is the change of the response from the latest earlier
	// revision in the store (verify --store), when there is one.
	Comparison *worker.Comparison `json:"comparison,omitempty"`

	record  *checks.Record
	seconds float64 // how long the card took (JUnit's time), not in the JSON
}

// verifyOptions are the settings verifyOne shares across the cards.
type verifyOptions struct {
	outDir, storeDir string
	withReport       bool
	force            bool
	priv             ed25519.PrivateKey
	store            *worker.DirStore
}

// conflictOutcome is the outcome of a card that breaks a library rule: it
// is invalid and not verified, so it writes nothing.
func conflictOutcome(cs []worker.Conflict) verifyOutcome {
	c := cs[0].Card
	o := verifyOutcome{File: c.File, ID: c.ID, Revision: c.Revision, Status: "invalid"}
	for _, c := range cs {
		o.Problems = append(o.Problems, c.Diagnostic().String())
	}
	return o
}

func verifyOne(cmd *cobra.Command, e *env, name string, opt verifyOptions) verifyOutcome {
	outDir, store := opt.outDir, opt.store
	l := loadCard(e, name)
	o := verifyOutcome{File: l.file}
	for _, d := range l.diags {
		o.Problems = append(o.Problems, d.String())
	}
	if !l.valid() {
		o.Status = "invalid"
		return o
	}
	o.ID, o.Revision = l.card.ID, l.card.Revision
	fail := func(err error) verifyOutcome {
		o.Status = "error"
		o.Problems = append(o.Problems, err.Error())
		return o
	}
	id := worker.JobID(l.card.Digest, worker.Settings{ToolVersion: toolOf().Version})
	base := filepath.Join(outDir, fmt.Sprintf("%s-r%d", l.card.ID, l.card.Revision))
	if store != nil {
		prev, err := worker.PreviousRevision(store, l.card)
		if err != nil {
			return fail(err)
		}
		if prev != nil {
			if o.Comparison, err = worker.Compare(cmd.Context(), prev, l.card); err != nil {
				return fail(err)
			}
			o.Comparison.New.File = l.file
		}
		if !opt.force && store.Has(id) {
			return reuseStored(o, store, id, base, opt.withReport, report.Written{Stress: l.doc.Card.Units.Stress})
		}
	}
	start := time.Now()
	out, err := worker.Verify(cmd.Context(), l.card, toolOf(), time.Now().UTC())
	o.seconds = time.Since(start).Seconds()
	if errors.Is(err, checks.ErrInvalidSpec) {
		// A card the verification cannot take (such as a reference too
		// long to replay): invalid input, not an internal error.
		o.Status = "invalid"
		o.Problems = append(o.Problems, worker.SpecDiagnostic(l.doc, err).String())
		return o
	}
	if err != nil {
		return fail(err)
	}
	rec := out.RecordJSON
	if opt.priv != nil {
		if err := out.Record.Sign(opt.priv); err != nil {
			return fail(err)
		}
		if rec, err = worker.RecordJSON(out.Record); err != nil {
			return fail(err)
		}
	}
	o.fromRecord(out.Record)
	o.wordFindings(l.doc.Card, out.Diagnoses)
	files := map[string][]byte{
		base + ".record.json": rec,
		base + ".card.json":   out.Card,
	}
	for _, t := range out.Tables {
		files[base+"."+t.Name+".csv"] = t.CSV()
	}
	written := report.Written{Stress: l.doc.Card.Units.Stress}
	for _, f := range o.Findings {
		written.Findings = append(written.Findings, f.Text)
	}
	if err := writeOutputs(&o, files, base, opt.withReport, out.Record, written); err != nil {
		return fail(err)
	}
	if store != nil {
		// The same records directory as serve's: the job id of the card
		// under this tool version, immutable files, a ledger line.
		if _, err := store.Put(id, worker.MetaOf(out.Record), rec, out.Card); err != nil {
			return fail(err)
		}
		o.Outputs = append(o.Outputs, filepath.Join(opt.storeDir, id[:2], id+".record.json"))
	}
	return o
}

// wordFindings words the outcome's findings as the card is written (its
// stress unit, its linear terms as tangent or plastic moduli) rather than
// canonically, as the record has them: diags are the card's diagnoses,
// which the record's findings are in order. verify and submit print the
// same lines through it. Diagnoses that are not the findings (another
// tool version's record) leave the record's wording.
func (o *verifyOutcome) wordFindings(written *schema.Card, diags []checks.Diagnosis) {
	if len(diags) != len(o.Findings) {
		return
	}
	for i, d := range diags {
		if f := d.Finding(); f.Case != o.Findings[i].Case || f.Check != o.Findings[i].Check || string(f.Misreading) != o.Findings[i].Misreading {
			return
		}
	}
	w := worker.Wording(written)
	for i, d := range diags {
		o.Findings[i].Text = d.Describe(w)
	}
}

func (o verifyOutcome) print(e *env) {
	for _, p := range o.Problems {
		fmt.Fprintln(e.stdout, p)
	}
	switch o.Status {
	case "pass", "fail":
		reused := ""
		if o.Reused != "" {
			reused = ", stored record reused"
		}
		fmt.Fprintf(e.stdout, "%-4s %s r%d: %d checks, %d failed, %d finding(s)%s (%s)\n", o.Status, o.ID, o.Revision, o.Checks, len(o.Failed), len(o.Findings), reused, o.File)
		for _, f := range o.Failed {
			fmt.Fprintf(e.stdout, "     failed: %s\n", f)
		}
		for _, f := range o.Findings {
			fmt.Fprintf(e.stdout, "     finding: %s\n", f.Text)
		}
		if c := o.Comparison; c != nil {
			fmt.Fprintf(e.stdout, "     response vs r%d: %s\n", c.Old.Revision, headlineChanges(c))
		}
	default:
		fmt.Fprintf(e.stdout, "%s %s\n", o.Status, o.File)
	}
}

// outcomeFinding is one finding as `verify --format json` prints it.
type outcomeFinding struct {
	Case        string `json:"case"`
	Check       string `json:"check"`
	CheckPassed bool   `json:"check_passed"`
	Misreading  string `json:"misreading,omitempty"`
	Text        string `json:"text"`
}

type verifySummary struct {
	passed, failed, invalid, internal, reused int
	outcomes                                  []verifyOutcome
}

// add counts o, and keeps it when keep is set (for the summary and the
// JSON listing).
func (s *verifySummary) add(o verifyOutcome, keep bool) {
	if keep {
		s.outcomes = append(s.outcomes, o)
	}
	if o.Reused != "" {
		s.reused++
	}
	switch o.Status {
	case "pass":
		s.passed++
	case "fail":
		s.failed++
	case "invalid":
		s.invalid++
	default:
		s.internal++
	}
}

// err maps the summary to the exit code: the worst outcome wins.
func (s *verifySummary) err() error {
	switch {
	case s.internal > 0:
		return &exitError{code: exitInternal}
	case s.invalid > 0:
		return &exitError{code: exitInvalid}
	case s.failed > 0:
		return &exitError{code: exitFailed}
	}
	return nil
}

// reuseStored completes o from the stored record of job id instead of
// verifying again, and writes the stored record and neutral card (and,
// with the report, its HTML) into the output folder.
func reuseStored(o verifyOutcome, store *worker.DirStore, id, base string, withReport bool, written report.Written) verifyOutcome {
	fail := func(err error) verifyOutcome {
		o.Status = "error"
		o.Problems = append(o.Problems, fmt.Sprintf("stored record %s: %v", id, err))
		return o
	}
	rec, err := store.Record(id)
	if err != nil {
		return fail(err)
	}
	card, err := store.Card(id)
	if err != nil {
		return fail(err)
	}
	r, err := checks.ParseRecord(rec)
	if err != nil {
		return fail(err)
	}
	o.fromRecord(r)
	o.Reused = id
	files := map[string][]byte{base + ".record.json": rec, base + ".card.json": card}
	if err := writeOutputs(&o, files, base, withReport, r, written); err != nil {
		return fail(err)
	}
	return o
}

// writeOutputs writes a card's output files (with the report of r when
// asked, in the card's terms as written) in name order and lists them in o.
func writeOutputs(o *verifyOutcome, files map[string][]byte, base string, withReport bool, r *checks.Record, written report.Written) error {
	if withReport {
		html, err := report.Render(r, written)
		if err != nil {
			return err
		}
		files[base+".report.html"] = html
	}
	for _, p := range sortedKeys(files) {
		if err := writeFileAtomic(p, files[p]); err != nil {
			return err
		}
		o.Outputs = append(o.Outputs, p)
	}
	return nil
}

// headlineChanges words the changes of a comparison of at least 0.1 %
// (relative), for the one line verify prints per card.
func headlineChanges(c *worker.Comparison) string {
	var parts []string
	for _, ch := range c.Changes {
		switch {
		case (ch.Old == nil) != (ch.New == nil):
			parts = append(parts, ch.Name+" "+ch.Note)
		case ch.Rel != nil && math.Abs(*ch.Rel) >= 1e-3:
			parts = append(parts, fmt.Sprintf("%s %s", ch.Name, displayRel(ch.Rel)))
		}
	}
	if len(parts) == 0 {
		return "no headline quantity changed by 0.1 % or more"
	}
	return strings.Join(parts, "; ")
}
