package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker"
)

func newSubmitCmd(e *env) *cobra.Command {
	var (
		server, outDir, junitPath string
		timeout                   time.Duration
	)
	c := &cobra.Command{
		Use:   "submit FILE|DIR...",
		Short: "Submit cards to a matgate server, wait, and download the records",
		Long: `submit checks each card locally, submits the valid ones to the server,
waits up to --timeout for their verifications and for the server to store
their records, and writes, per card, into --out the same record and neutral
card files as matgate verify:

  <id>-r<revision>.record.json    <id>-r<revision>.card.json

The file names come from the cards submit read, never from the server. A
downloaded record is taken only when its own digest holds and it names the
card id, revision and card digest that submit computed, and the neutral
card only when it is the one submit computes. Anything else is a service
error.

The token is read from the environment variable MATGATE_TOKEN only (a flag
would show in process lists and CI logs); it needs the submit and read
scopes. A card whose reference curves are files is sent in its canonical
form, with the curves inline.

Exit 0 when every card passes, 1 when a verification failed, 2 when a card
is invalid, 3 on a service error, a record that does not check out, or
when --timeout ran out (for example while the server cannot store records).

Verification shows that a card is integrated consistently and matches its
references; it does not show fitness for design.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			token := os.Getenv("MATGATE_TOKEN")
			if token == "" {
				return invalid("MATGATE_TOKEN is not set: put a token with the submit and read scopes there (matgate token new)")
			}
			if timeout <= 0 {
				return &usageError{fmt.Errorf("--timeout %v: want a positive duration", timeout)}
			}
			plain, err := plainRemote(server)
			if err != nil {
				return &usageError{fmt.Errorf("--server %q: %w", server, err)}
			}
			if plain {
				fmt.Fprintf(e.stderr, "warning: --server %s is plain http to another machine: the token and the records travel unencrypted and can be read or changed on the way; use https\n", server)
			}
			names, err := expandInputs(args, outDir)
			if err != nil {
				return err
			}
			if err := os.MkdirAll(outDir, 0o755); err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			ctx, cancel := context.WithTimeout(cmd.Context(), timeout)
			defer cancel()
			s := &submitter{e: e, out: outDir, client: &worker.Client{BaseURL: server, Token: token, Unavailable: 5}, bar: isTerminal(e.stderr)}
			if err := s.run(ctx, names); err != nil {
				return err
			}
			var sum verifySummary
			var suites []junitSuite
			for _, it := range s.items {
				sum.add(it.o, false)
				it.o.print(e)
				suites = append(suites, it.o.junit())
			}
			if junitPath != "" {
				if err := writeJUnit(junitPath, suites); err != nil {
					return &exitError{code: exitInternal, err: err}
				}
			}
			fmt.Fprintf(e.stdout, "%d card(s): %d passed, %d failed, %d invalid, %d error(s); outputs in %s\n",
				len(names), sum.passed, sum.failed, sum.invalid, sum.internal, outDir)
			fmt.Fprintln(e.stdout, "Verification is not fitness for design: defer to the applicable codes and licensed engineers.")
			return sum.err()
		},
	}
	c.Flags().StringVar(&server, "server", "http://127.0.0.1:8080", "base URL of matgate serve")
	c.Flags().StringVar(&outDir, "out", "matgate-out", "directory for the downloaded records and neutral cards")
	c.Flags().StringVar(&junitPath, "junit", "", "write JUnit XML to this file (one test case a check)")
	c.Flags().DurationVar(&timeout, "timeout", 10*time.Minute, "give up waiting after this long (exit 3)")
	return c
}

type submitItem struct {
	o       verifyOutcome
	digest  string // the card digest submit computed
	neutral []byte // the neutral card submit computed
	job     string // "" when not submitted
	l       loaded // the card as read and as normalized
}

type submitter struct {
	e      *env
	out    string
	client *worker.Client
	bar    bool // a progress bar on a terminal, plain lines otherwise
	items  []*submitItem
}

func (s *submitter) run(ctx context.Context, names []string) error {
	lib := worker.NewLibrary(nil) // the rule of the run; serve holds each card to its records (409)
	for i, n := range names {
		it := &submitItem{}
		s.items = append(s.items, it)
		l := loadCard(s.e, n)
		it.o.File = l.file
		for _, d := range l.diags {
			it.o.Problems = append(it.o.Problems, d.String())
		}
		if !l.valid() {
			it.o.Status = "invalid"
			continue
		}
		it.o.ID, it.o.Revision, it.digest, it.l = l.card.ID, l.card.Revision, l.card.Digest, l
		if cs, _ := lib.Add(worker.RefOf(l.doc, l.card)); len(cs) > 0 { // no store: no error
			for _, c := range cs {
				it.o.Problems = append(it.o.Problems, c.Diagnostic().String())
			}
			it.o.Status = "invalid"
			continue
		}
		body, media, err := submission(s.e, n, l)
		if err == nil {
			it.neutral, err = convert.Indented(l.card)
		}
		if err != nil {
			it.fail(err)
			continue
		}
		j, err := s.client.Submit(ctx, body, media)
		switch {
		case worker.IsProblem(err, http.StatusUnauthorized, http.StatusForbidden):
			return &exitError{code: exitInternal, err: fmt.Errorf("%s: %w (check MATGATE_TOKEN and its scopes)", s.client.BaseURL, err)}
		case worker.IsProblem(err, http.StatusBadRequest, http.StatusConflict, http.StatusUnprocessableEntity, http.StatusRequestEntityTooLarge):
			it.o.Status = "invalid"
			it.o.Problems = append(it.o.Problems, err.Error())
			continue
		case err != nil:
			it.fail(err)
			continue
		}
		it.job = j.ID
		s.progress(fmt.Sprintf("[%d/%d] submitted %s r%d: job %s", i+1, len(names), it.o.ID, it.o.Revision, j.ID))
	}
	return s.wait(ctx)
}

func (it *submitItem) fail(err error) {
	it.o.Status = "error"
	it.o.Problems = append(it.o.Problems, err.Error())
}

// submission returns what to send for a card: its own bytes when it
// stands alone, so the server reads what the author wrote; its canonical
// encoding (compact, reference curves inline) when it names files or came
// from stdin, which convert.Prepare has held to the size rule of a card.
func submission(e *env, name string, l loaded) ([]byte, string, error) {
	files := false
	if v := l.doc.Card.Verification; v != nil {
		for _, r := range v.References {
			files = files || r.File != ""
		}
	}
	if name != "-" && !files {
		b, err := readLimited(e, name, schema.DefaultMaxBytes)
		if err != nil {
			return nil, "", err
		}
		if strings.HasSuffix(strings.ToLower(name), ".json") {
			return b, "application/json", nil
		}
		return b, "application/yaml", nil
	}
	b, err := convert.Canonical(l.card)
	return b, "application/json", err
}

// wait polls the submitted jobs until each is done or failed, downloading
// the outputs of each finished one, or until ctx ends.
func (s *submitter) wait(ctx context.Context) error {
	pending := 0
	for _, it := range s.items {
		if it.job != "" {
			pending++
		}
	}
	total, done := pending, 0
	delay := 100 * time.Millisecond
	for pending > 0 {
		for _, it := range s.items {
			if it.job == "" || it.o.Status != "" {
				continue
			}
			j, err := s.client.Job(ctx, it.job)
			if ctx.Err() != nil {
				break
			}
			switch {
			case err != nil:
				it.fail(fmt.Errorf("job %s: %w", it.job, err))
			case j.State == worker.JobFailed:
				it.fail(fmt.Errorf("job %s failed after %d attempt(s): %s", it.job, j.Attempts, j.LastError))
			case j.State == worker.JobDone && !j.Stored:
				continue // verified, not yet a file in the records directory
			case j.State == worker.JobDone:
				if err := s.download(ctx, it); err != nil {
					it.fail(err)
				}
			default:
				continue
			}
			pending--
			done++
			s.progress(fmt.Sprintf("%s %s r%d (%d/%d done)", it.o.Status, it.o.ID, it.o.Revision, done, total))
		}
		if pending == 0 {
			break
		}
		select {
		case <-ctx.Done():
			if s.bar {
				fmt.Fprintln(s.e.stderr)
			}
			for _, it := range s.items {
				if it.job != "" && it.o.Status == "" {
					it.fail(fmt.Errorf("job %s not finished and stored when --timeout ran out (%v); the job's state: %s", it.job, ctx.Err(), s.client.BaseURL+"/v1/jobs/"+it.job))
				}
			}
			return nil
		case <-time.After(delay):
		}
		delay = min(2*delay, 2*time.Second)
	}
	if s.bar && total > 0 {
		fmt.Fprintln(s.e.stderr)
	}
	return nil
}

// download fetches a finished job's record and neutral card and writes
// them under names built from the card submit sent. Nothing the server
// says is used as a path, and both files must be of that card: the
// record's digest holds and it names the card's id, revision and digest.
func (s *submitter) download(ctx context.Context, it *submitItem) error {
	rec, err := s.client.Get(ctx, "/v1/records/"+it.job)
	if err != nil {
		return fmt.Errorf("record %s: %w", it.job, err)
	}
	r, err := checks.ParseRecord(rec)
	if err == nil {
		err = r.VerifyIntegrity(nil)
	}
	if err == nil {
		err = it.sameCard(r.Card.ID, r.Card.Revision, r.Card.Digest)
	}
	if err != nil {
		return fmt.Errorf("record %s refused: %w", it.job, err)
	}
	card, err := s.client.Get(ctx, "/v1/records/"+it.job+"/card")
	if err != nil {
		return fmt.Errorf("card %s: %w", it.job, err)
	}
	if !bytes.Equal(card, it.neutral) {
		return fmt.Errorf("neutral card %s refused: it is not the canonical form of the card submit sent", it.job)
	}
	// it.o.ID passed the card schema's id pattern, ^[a-z0-9][a-z0-9._-]*$:
	// a plain file name.
	base := filepath.Join(s.out, fmt.Sprintf("%s-r%d", it.o.ID, it.o.Revision))
	for _, f := range []struct {
		path string
		b    []byte
	}{{base + ".record.json", rec}, {base + ".card.json", card}} {
		if err := writeFileAtomic(f.path, f.b); err != nil {
			return err
		}
		it.o.Outputs = append(it.o.Outputs, f.path)
	}
	it.o.fromRecord(r)
	if len(r.Findings) > 0 {
		// The record words its findings canonically (Pa, plastic
		// moduli); print them as verify does, in the card's own terms.
		if diags, err := worker.Diagnoses(ctx, it.l.card); err == nil {
			it.o.wordFindings(it.l.doc.Card, diags)
		}
	}
	return s.compare(ctx, it)
}

// compare sets the outcome's comparison with the latest stored revision of
// the card's id below its own, as verify --store does with its records
// directory: the previous neutral card comes from the server's listing
// and must have the digest its record names; the comparison runs here.
func (s *submitter) compare(ctx context.Context, it *submitItem) error {
	sums, err := s.client.Records(ctx, it.o.ID)
	if err != nil {
		return fmt.Errorf("stored revisions of %s: %w", it.o.ID, err)
	}
	revs := make([]int, len(sums))
	for i, sum := range sums {
		revs[i] = sum.Card.Revision
	}
	i := worker.PreviousOf(revs, it.o.Revision)
	if i < 0 {
		return nil
	}
	if !worker.ValidID(sums[i].ID) {
		return fmt.Errorf("stored revisions of %s: malformed record id %q", it.o.ID, sums[i].ID)
	}
	b, err := s.client.Get(ctx, "/v1/records/"+sums[i].ID+"/card")
	if err != nil {
		return fmt.Errorf("stored card of %s r%d: %w", it.o.ID, sums[i].Card.Revision, err)
	}
	prev, err := worker.DecodeStoredCard(b, it.o.ID, sums[i].Card.Digest)
	if err != nil {
		return err
	}
	if it.o.Comparison, err = worker.Compare(ctx, prev, it.l.card); err != nil {
		return err
	}
	it.o.Comparison.New.File = it.o.File
	return nil
}

// sameCard reports whether a downloaded file names the card submit sent.
func (it *submitItem) sameCard(id string, revision int, digest string) error {
	if id != it.o.ID || revision != it.o.Revision || digest != it.digest {
		return fmt.Errorf("it is of card %q r%d %s, but submit sent %s r%d %s (a server of another matgate version, or not the server it claims to be)",
			id, revision, digest, it.o.ID, it.o.Revision, it.digest)
	}
	return nil
}

// plainRemote checks a server URL and reports whether it is plain http to
// a host other than this machine's loopback.
func plainRemote(server string) (bool, error) {
	u, err := url.Parse(server)
	if err != nil {
		return false, err
	}
	if (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return false, fmt.Errorf("want http(s)://host[:port]")
	}
	if u.Scheme == "https" {
		return false, nil
	}
	h := u.Hostname()
	ip := net.ParseIP(h)
	return !(h == "localhost" || ip != nil && ip.IsLoopback()), nil
}

// fromRecord fills the outcome's verdict and check counts from a record.
func (o *verifyOutcome) fromRecord(r *checks.Record) {
	o.record = r
	o.Status = r.Verdict
	for _, cs := range r.Cases {
		for _, ck := range cs.Checks {
			o.Checks++
			if !ck.Pass {
				o.Failed = append(o.Failed, cs.Name+"/"+ck.Name)
			}
		}
	}
	for _, f := range r.Findings {
		o.Findings = append(o.Findings, outcomeFinding{Case: f.Case, Check: f.Check, CheckPassed: f.CheckPassed, Misreading: string(f.Misreading), Text: f.Text})
	}
}

// progress shows one event: the line itself, or on a terminal a bar.
func (s *submitter) progress(line string) {
	if !s.bar {
		fmt.Fprintln(s.e.stderr, line)
		return
	}
	done, total := 0, 0
	for _, it := range s.items {
		if it.job != "" {
			total++
			if it.o.Status != "" {
				done++
			}
		}
	}
	const width = 30
	fill := 0
	if total > 0 {
		fill = width * done / total
	}
	fmt.Fprintf(s.e.stderr, "\r[%s%s] %d/%d  %-50.50s", strings.Repeat("#", fill), strings.Repeat(".", width-fill), done, total, line)
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}
