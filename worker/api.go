package worker

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"mime"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"time"

	"github.com/hibiken/asynq"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"github.com/redis/go-redis/v9"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker/report"
)

// RecordStore is what the API reads of the records directory.
type RecordStore interface {
	Has(id string) bool
	Record(id string) ([]byte, error)
	Card(id string) ([]byte, error)
	List(cardID string, offset, limit int) ([]LedgerEntry, int)
	Summary(id string) (Summary, error)
	Ping() error
}

var _ RecordStore = (*DirStore)(nil)

// APIConfig is what NewAPI needs; only cmd fills it.
type APIConfig struct {
	Redis     redis.UniversalClient
	Queue     *asynq.Client
	Inspector *asynq.Inspector
	Store     RecordStore
	Metrics   *Metrics // nil: no /metrics
	Tokens    []Token
	Settings  Settings
	// Budget is the verification budget the tasks are enqueued for (their
	// asynq Timeout is TaskTimeout(Budget)); zero means DefaultBudget.
	Budget time.Duration
	// MaxInFlight bounds the card submissions and report renderings
	// handled at once (503 beyond); zero means DefaultMaxInFlight.
	MaxInFlight int
	// TokenRate is each token's sustained requests a second and
	// TokenBurst the requests above it at once (429 beyond); a zero
	// TokenRate means no rate limit.
	TokenRate  float64
	TokenBurst int
	// DefaultProfile is the verification profile of cards that name none;
	// "" leaves the card's own default (standard).
	DefaultProfile string
	Log            *slog.Logger // nil: discard
}

// API is the HTTP API of matgate serve.
type API struct {
	c        APIConfig
	auth     *authenticator
	mux      *http.ServeMux
	inFlight gate
	rates    rateLimits
}

// NewAPI checks the configuration (every token problem at once) and builds
// the routes.
func NewAPI(c APIConfig) (*API, error) {
	auth, err := newAuthenticator(c.Tokens)
	if err != nil {
		return nil, err
	}
	if c.Budget <= 0 {
		c.Budget = DefaultBudget
	}
	if c.Log == nil {
		c.Log = slog.New(slog.DiscardHandler)
	}
	if c.MaxInFlight <= 0 {
		c.MaxInFlight = DefaultMaxInFlight
	}
	a := &API{c: c, auth: auth, mux: http.NewServeMux(), inFlight: make(gate, c.MaxInFlight),
		rates: newRateLimits(c.Tokens, c.TokenRate, c.TokenBurst)}
	a.mux.HandleFunc("POST /v1/cards", a.scoped(ScopeSubmit, a.bounded(a.submit)))
	a.mux.HandleFunc("GET /v1/jobs/{id}", a.scoped(ScopeRead, a.job))
	a.mux.HandleFunc("GET /v1/records", a.scoped(ScopeRead, a.list))
	a.mux.HandleFunc("GET /v1/records/{id}", a.scoped(ScopeRead, a.record))
	a.mux.HandleFunc("GET /v1/records/{id}/card", a.scoped(ScopeRead, a.card))
	a.mux.HandleFunc("GET /v1/records/{id}/report", a.scoped(ScopeRead, a.bounded(a.report)))
	a.mux.HandleFunc("GET /healthz", func(w http.ResponseWriter, _ *http.Request) {
		writeJSON(w, http.StatusOK, map[string]string{"status": "ok"})
	})
	a.mux.HandleFunc("GET /readyz", a.ready)
	if c.Metrics != nil {
		// Scrapes cost Redis work (queue sizes): only a token with the
		// read scope may ask.
		a.mux.HandleFunc("GET /metrics", a.scoped(ScopeRead, promhttp.HandlerFor(c.Metrics.Registry, promhttp.HandlerOpts{}).ServeHTTP))
	}
	a.mux.HandleFunc("/", a.noRoute)
	return a, nil
}

// noRoute answers what no route takes: 405 with Allow when the path is the
// API's under other methods, else 404.
func (a *API) noRoute(w http.ResponseWriter, r *http.Request) {
	var allow []string
	for _, m := range []string{http.MethodGet, http.MethodHead, http.MethodPost, http.MethodPut, http.MethodPatch, http.MethodDelete} {
		if _, pattern := a.mux.Handler(&http.Request{Method: m, URL: r.URL, Host: r.Host}); m != r.Method && pattern != "/" && pattern != "" {
			allow = append(allow, m)
		}
	}
	if len(allow) > 0 {
		w.Header().Set("Allow", strings.Join(allow, ", "))
		problem(w, r, http.StatusMethodNotAllowed, "method not allowed", fmt.Sprintf("%s %s: this resource takes %s", r.Method, r.URL.Path, strings.Join(allow, ", ")), nil)
		return
	}
	problem(w, r, http.StatusNotFound, "no such resource", fmt.Sprintf("%s %s is not part of the API", r.Method, r.URL.Path), nil)
}

// ServeHTTP logs each request (never its Authorization header).
func (a *API) ServeHTTP(w http.ResponseWriter, r *http.Request) {
	start := time.Now()
	sw := &statusWriter{ResponseWriter: w, status: http.StatusOK}
	a.mux.ServeHTTP(sw, r)
	a.c.Log.Info("request", "method", r.Method, "path", r.URL.Path, "status", sw.status,
		"ms", time.Since(start).Milliseconds(), "token", sw.token, "remote", r.RemoteAddr)
}

type statusWriter struct {
	http.ResponseWriter
	status int
	token  string
}

func (w *statusWriter) WriteHeader(s int) { w.status = s; w.ResponseWriter.WriteHeader(s) }

// scoped admits a request whose bearer token has scope: 401 without a
// valid token, 403 when the token lacks the scope, 429 when the token is
// over its rate.
func (a *API) scoped(scope string, h http.HandlerFunc) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		t := a.auth.identify(r)
		if t == nil {
			w.Header().Set("WWW-Authenticate", `Bearer realm="matgate"`)
			problem(w, r, http.StatusUnauthorized, "authentication required", "send a valid token as Authorization: Bearer <token>", nil)
			return
		}
		if sw, ok := w.(*statusWriter); ok {
			sw.token = t.name
		}
		if !t.has(scope) {
			problem(w, r, http.StatusForbidden, "missing scope", fmt.Sprintf("token %q lacks the %s scope", t.name, scope), nil)
			return
		}
		if !a.rates.admit(w, r, t.name, a.c.Metrics) {
			return
		}
		h(w, r)
	}
}

// Job is the state of a verification job, as GET /v1/jobs/{id} returns it.
type Job struct {
	ID        string            `json:"id"`
	State     string            `json:"state"` // queued, running, retrying, done, failed
	Attempts  int               `json:"attempts,omitempty"`
	MaxRetry  int               `json:"max_retry,omitempty"`
	LastError string            `json:"last_error,omitempty"`
	Verdict   string            `json:"verdict,omitempty"` // pass or fail, when done
	CardID    string            `json:"card_id,omitempty"`
	Revision  int               `json:"revision,omitempty"`
	Checks    *CheckCounts      `json:"checks,omitempty"` // when done (and counted)
	Stored    bool              `json:"stored,omitempty"` // the record is a file in the records directory
	Warnings  []string          `json:"warnings,omitempty"`
	Links     map[string]string `json:"links"`
}

// Job states.
const (
	JobQueued   = "queued"
	JobRunning  = "running"
	JobRetrying = "retrying"
	JobDone     = "done"
	JobFailed   = "failed"
)

func jobLinks(id string, done bool) map[string]string {
	l := map[string]string{"self": "/v1/jobs/" + id}
	if done {
		l["record"] = "/v1/records/" + id
		l["card"] = "/v1/records/" + id + "/card"
		l["report"] = "/v1/records/" + id + "/report"
	}
	return l
}

// isJSONMedia and isYAMLMedia are the accepted request media types.
var cardMedia = map[string]string{
	"application/json":   "json",
	"application/yaml":   "yaml",
	"application/x-yaml": "yaml",
	"text/yaml":          "yaml",
}

func (a *API) submit(w http.ResponseWriter, r *http.Request) {
	mt, _, err := mime.ParseMediaType(r.Header.Get("Content-Type"))
	kind := cardMedia[mt]
	if err != nil || kind == "" {
		problem(w, r, http.StatusUnsupportedMediaType, "unsupported content type",
			fmt.Sprintf("Content-Type %q: send a card as application/yaml or application/json", r.Header.Get("Content-Type")), nil)
		return
	}
	body, err := io.ReadAll(http.MaxBytesReader(w, r.Body, schema.DefaultMaxBytes))
	var mbe *http.MaxBytesError
	switch {
	case errors.As(err, &mbe):
		problem(w, r, http.StatusRequestEntityTooLarge, "card too large",
			fmt.Sprintf("the body exceeds the limit of %s for a card; a card is a few kilobytes", schema.ByteSize(schema.DefaultMaxBytes)), nil)
		return
	case err != nil:
		problem(w, r, http.StatusBadRequest, "body not read", fmt.Sprintf("reading the request body: %v", err), nil)
		return
	}
	if looksJSON := isJSONText(body); kind == "json" && !looksJSON {
		problem(w, r, http.StatusBadRequest, "card does not parse", "Content-Type says JSON, but the body does not start with '{'", nil)
		return
	}
	key := a.bodyKey(body)
	if a.answerKnownBody(w, r, key) {
		return
	}
	c, ref, warnings, perr := a.prepare(body)
	if perr != nil {
		status, title := http.StatusUnprocessableEntity, "invalid card"
		if perr.syntax {
			status, title = http.StatusBadRequest, "card does not parse"
		}
		problem(w, r, status, title, fmt.Sprintf("%d problem(s) with the card", len(perr.diags)), map[string]any{"errors": perr.diags})
		return
	}
	if !a.libraryRules(w, r, ref) {
		return
	}
	id := JobID(c.Digest, a.c.Settings)
	ctx := r.Context()
	done, err := a.hasRecord(ctx, id)
	if err != nil {
		a.unavailable(w, r, err)
		return
	}
	ans := bodyAnswer{Job: id, Ref: ref, Warnings: warnings}
	if !done {
		task, _, err := NewVerifyTask(c, a.c.Settings, TaskTimeout(a.c.Budget))
		if err != nil {
			problem(w, r, http.StatusInternalServerError, "internal error", err.Error(), nil)
			return
		}
		if err := a.enqueue(ctx, task, id); err != nil {
			a.unavailable(w, r, err)
			return
		}
	}
	a.rememberBody(ctx, key, ans)
	a.answerSubmission(w, ans, done)
}

// enqueue enqueues a verification; a job already queued is success. A job
// that ended in error (archived) is removed and queued again, so a
// resubmission after fixing the cause (e.g. a larger budget) runs it.
func (a *API) enqueue(ctx context.Context, task *asynq.Task, id string) error {
	_, err := a.c.Queue.EnqueueContext(ctx, task)
	if !errors.Is(err, asynq.ErrTaskIDConflict) {
		return err
	}
	info, err := a.c.Inspector.GetTaskInfo(QueueVerify, id)
	if err != nil || info.State != asynq.TaskStateArchived {
		return nil // queued, running or done: the same job
	}
	if err := a.c.Inspector.DeleteTask(QueueVerify, id); err != nil && !errors.Is(err, asynq.ErrTaskNotFound) {
		return err
	}
	_, err = a.c.Queue.EnqueueContext(ctx, task)
	if errors.Is(err, asynq.ErrTaskIDConflict) {
		return nil // a concurrent resubmission won
	}
	return err
}

type prepareError struct {
	syntax bool
	diags  []string
}

// libraryRules holds a submitted card to the library rules of the records
// directory (StoreConflicts) and answers 409 Conflict, naming the stored
// records, when it breaks one; it reports whether the submission may go
// on. The rules come before the look-up of an existing job, so that a
// resubmission of an old revision is refused like a new one.
func (a *API) libraryRules(w http.ResponseWriter, r *http.Request, ref CardRef) bool {
	cs, err := StoreConflicts(a.c.Store, ref)
	if err != nil {
		a.c.Log.Error("records directory", "path", r.URL.Path, "err", err)
		w.Header().Set("Retry-After", "5")
		problem(w, r, http.StatusServiceUnavailable, "records directory unavailable", err.Error(), nil)
		return false
	}
	if len(cs) == 0 {
		return true
	}
	diags := make([]string, len(cs))
	msgs := make([]string, len(cs))
	records := make([]string, len(cs))
	for i, c := range cs {
		diags[i], msgs[i] = c.Diagnostic().String(), c.Message()
		records[i] = "/v1/records/" + c.Stored.Record
	}
	problem(w, r, http.StatusConflict, "library rule", strings.Join(msgs, "; "),
		map[string]any{"errors": diags, "conflicts": cs, "records": records})
	return false
}

// prepare decodes, checks and normalizes a submitted card: the same
// functions as matgate verify, with reference curves inline (a card over
// HTTP has no folder to read files from).
func (a *API) prepare(body []byte) (*schema.Card, CardRef, []string, *prepareError) {
	doc, err := schema.Decode("card", body, nil)
	if err != nil {
		pe := &prepareError{syntax: doc.Value == nil}
		var ds schema.Diagnostics
		if !errors.As(err, &ds) {
			ds = schema.Diagnostics{{File: "card", Message: err.Error()}}
		}
		for _, d := range ds {
			pe.diags = append(pe.diags, d.String())
		}
		return nil, CardRef{}, nil, pe
	}
	if p := a.c.DefaultProfile; p != "" {
		if doc.Card.Verification == nil {
			doc.Card.Verification = &schema.Verification{}
		}
		if doc.Card.Verification.Profile == "" {
			doc.Card.Verification.Profile = p
		}
	}
	c, ds := convert.Prepare(doc, nil)
	var msgs []string
	for _, d := range ds {
		msgs = append(msgs, d.String())
	}
	if c == nil {
		return nil, CardRef{}, nil, &prepareError{diags: msgs}
	}
	// What the verification itself refuses (a reference too long to
	// replay, say) is refused here too, with its location, rather than
	// accepted and then failed in a worker without retry.
	specs, err := Specs(c)
	if err != nil {
		return nil, CardRef{}, nil, &prepareError{diags: append(msgs, err.Error())}
	}
	for _, spec := range specs {
		if _, err := spec.Resolve(); err != nil {
			return nil, CardRef{}, nil, &prepareError{diags: append(msgs, SpecDiagnostic(doc, err).String())}
		}
	}
	return c, RefOf(doc, c), msgs, nil
}

func isJSONText(b []byte) bool {
	b = bytes.TrimLeft(bytes.TrimPrefix(b, []byte("\xef\xbb\xbf")), " \t\r\n")
	return len(b) > 0 && b[0] == '{'
}

func (a *API) hasRecord(ctx context.Context, id string) (bool, error) {
	if a.c.Store.Has(id) {
		return true, nil
	}
	n, err := a.c.Redis.Exists(ctx, recordKey(id)).Result()
	return n == 1, err
}

// readOutput returns a record's or card's bytes from the records directory,
// or from Redis while serve has not yet made them a file.
func (a *API) readOutput(ctx context.Context, id string, card bool) (b []byte, stored bool, err error) {
	if a.c.Store.Has(id) {
		if card {
			b, err = a.c.Store.Card(id)
		} else {
			b, err = a.c.Store.Record(id)
		}
		return b, true, err
	}
	key := recordKey(id)
	if card {
		key = cardKey(id)
	}
	b, err = a.c.Redis.Get(ctx, key).Bytes()
	if errors.Is(err, redis.Nil) {
		return nil, false, ErrNotFound
	}
	return b, false, err
}

// summary returns a finished job's summary: from the records directory,
// or from Redis while serve has not yet made the record a file. A record
// in Redis that a worker before summaries wrote has an empty summary
// (state done, nothing more).
func (a *API) summary(ctx context.Context, id string) (sum Summary, stored bool, err error) {
	if a.c.Store.Has(id) {
		sum, err = a.c.Store.Summary(id)
		return sum, true, err
	}
	b, err := a.c.Redis.Get(ctx, summaryKey(id)).Bytes()
	if err == nil {
		err = json.Unmarshal(b, &sum)
		return sum, false, err
	}
	if !errors.Is(err, redis.Nil) {
		return sum, false, err
	}
	done, err := a.hasRecord(ctx, id)
	if err == nil && !done {
		err = ErrNotFound
	}
	return Summary{ID: id}, false, err
}

func (a *API) job(w http.ResponseWriter, r *http.Request) {
	id, ok := pathID(w, r)
	if !ok {
		return
	}
	j := Job{ID: id}
	sum, stored, err := a.summary(r.Context(), id)
	switch {
	case err == nil:
		j.State, j.Stored, j.Links = JobDone, stored, jobLinks(id, true)
		j.Verdict, j.CardID, j.Revision, j.Checks = sum.Verdict, sum.Card.ID, sum.Card.Revision, sum.Checks
	case !errors.Is(err, ErrNotFound):
		a.unavailable(w, r, err)
		return
	}
	info, err := a.c.Inspector.GetTaskInfo(QueueVerify, id)
	switch {
	case errors.Is(err, asynq.ErrTaskNotFound) || errors.Is(err, asynq.ErrQueueNotFound):
		if j.State == "" {
			failed, ferr := a.failedJob(r.Context(), &j)
			if ferr != nil {
				a.unavailable(w, r, ferr)
				return
			}
			if !failed {
				problem(w, r, http.StatusNotFound, "no such job", "no job or record has id "+id, nil)
				return
			}
		}
	case err != nil && j.State == JobDone && j.Stored:
		// Redis is down but the record is a file: the job's answer stands.
	case err != nil:
		a.unavailable(w, r, err)
		return
	default:
		j.MaxRetry, j.LastError = info.MaxRetry, info.LastErr
		j.Attempts = info.Retried
		if j.State == "" {
			j.Links = jobLinks(id, false)
			switch info.State {
			case asynq.TaskStateActive:
				j.State, j.Attempts = JobRunning, info.Retried+1
			case asynq.TaskStateRetry:
				j.State = JobRetrying
			case asynq.TaskStateArchived:
				j.State = JobFailed
			default:
				j.State = JobQueued
			}
		} else if j.Attempts == 0 {
			j.Attempts = 1
		}
	}
	writeJSON(w, http.StatusOK, j)
}

func (a *API) record(w http.ResponseWriter, r *http.Request) { a.output(w, r, false) }
func (a *API) card(w http.ResponseWriter, r *http.Request)   { a.output(w, r, true) }

func (a *API) output(w http.ResponseWriter, r *http.Request, card bool) {
	id, ok := pathID(w, r)
	if !ok {
		return
	}
	b, _, err := a.readOutput(r.Context(), id, card)
	if errors.Is(err, ErrNotFound) {
		problem(w, r, http.StatusNotFound, "no such record", "no record has id "+id+" (yet: see /v1/jobs/"+id+")", nil)
		return
	}
	if err != nil {
		a.unavailable(w, r, err)
		return
	}
	w.Header().Set("Content-Type", "application/json")
	w.Write(b)
}

func (a *API) report(w http.ResponseWriter, r *http.Request) {
	id, ok := pathID(w, r)
	if !ok {
		return
	}
	// The record holds the card in SI, not the unit it was written in: a
	// reader may ask for the stresses in a unit of theirs (?unit=ksi).
	written := report.Written{Asked: true}
	if u := r.URL.Query().Get("unit"); u != "" {
		if _, err := convert.StressFactor(u); err != nil {
			problem(w, r, http.StatusBadRequest, "unknown unit", fmt.Sprintf("unit %q: use Pa, kPa, MPa, GPa, psi or ksi", u), nil)
			return
		}
		written.Stress = u
	}
	b, _, err := a.readOutput(r.Context(), id, false)
	if errors.Is(err, ErrNotFound) {
		problem(w, r, http.StatusNotFound, "no such record", "no record has id "+id, nil)
		return
	}
	if err != nil {
		a.unavailable(w, r, err)
		return
	}
	rec, err := checks.ParseRecord(b)
	if err == nil {
		b, err = report.Render(rec, written)
	}
	if err != nil {
		problem(w, r, http.StatusInternalServerError, "report failed", err.Error(), nil)
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Write(b)
}

// Listing is a page of GET /v1/records: the stored records' summaries,
// oldest first.
type Listing struct {
	Total   int       `json:"total"`
	Records []Summary `json:"records"`
	Next    string    `json:"next,omitempty"`
}

func (a *API) list(w http.ResponseWriter, r *http.Request) {
	q := r.URL.Query()
	offset, limit := 0, 100
	for _, p := range []struct {
		name string
		v    *int
		max  int
	}{{"offset", &offset, 1 << 30}, {"limit", &limit, 1000}} {
		if s := q.Get(p.name); s != "" {
			n, err := strconv.Atoi(s)
			if err != nil || n < 0 || n > p.max {
				problem(w, r, http.StatusBadRequest, "bad query", fmt.Sprintf("%s=%q: want an integer in [0, %d]", p.name, s, p.max), nil)
				return
			}
			*p.v = n
		}
	}
	card := q.Get("card")
	entries, total := a.c.Store.List(card, offset, limit)
	l := Listing{Total: total, Records: make([]Summary, len(entries))}
	for i, e := range entries {
		sum, err := a.c.Store.Summary(e.ID)
		if err != nil {
			a.c.Log.Error("records directory", "path", r.URL.Path, "err", err)
			w.Header().Set("Retry-After", "5")
			problem(w, r, http.StatusServiceUnavailable, "records directory unavailable", err.Error(), nil)
			return
		}
		l.Records[i] = sum
	}
	if next := offset + len(entries); next < total {
		v := map[string][]string{"offset": {strconv.Itoa(next)}, "limit": {strconv.Itoa(limit)}}
		if card != "" {
			v["card"] = []string{card}
		}
		l.Next = "/v1/records?" + encodeQuery(v)
	}
	writeJSON(w, http.StatusOK, l)
}

func (a *API) ready(w http.ResponseWriter, r *http.Request) {
	ctx, cancel := context.WithTimeout(r.Context(), 2*time.Second)
	defer cancel()
	if err := a.c.Redis.Ping(ctx).Err(); err != nil {
		a.unavailable(w, r, err)
		return
	}
	if err := a.c.Store.Ping(); err != nil {
		problem(w, r, http.StatusServiceUnavailable, "records directory unavailable", err.Error(), nil)
		return
	}
	writeJSON(w, http.StatusOK, map[string]string{"status": "ready"})
}

// unavailable answers 503 for a Redis failure and counts it.
func (a *API) unavailable(w http.ResponseWriter, r *http.Request, err error) {
	if a.c.Metrics != nil {
		a.c.Metrics.RedisErrors.Inc()
	}
	a.c.Log.Error("redis", "path", r.URL.Path, "err", err)
	w.Header().Set("Retry-After", "5")
	problem(w, r, http.StatusServiceUnavailable, "queue unavailable", "Redis did not answer; nothing was accepted, try again", nil)
}

func pathID(w http.ResponseWriter, r *http.Request) (string, bool) {
	id := r.PathValue("id")
	if !ValidID(id) {
		problem(w, r, http.StatusNotFound, "no such resource", fmt.Sprintf("%q is not a job or record id (64 hex digits)", id), nil)
		return "", false
	}
	return id, true
}

// problem writes an RFC 9457 problem details object; extra members (such as
// "errors", the located diagnostics of a card) are added beside the
// standard ones.
func problem(w http.ResponseWriter, r *http.Request, status int, title, detail string, extra map[string]any) {
	// With type about:blank the title is the status phrase (RFC 9457,
	// sec. 4.2.1); what went wrong is in the detail.
	p := map[string]any{"type": "about:blank", "title": http.StatusText(status), "status": status,
		"detail": title + ": " + detail, "instance": r.URL.Path}
	for k, v := range extra {
		p[k] = v
	}
	b, _ := json.MarshalIndent(p, "", "  ")
	w.Header().Set("Content-Type", "application/problem+json")
	w.WriteHeader(status)
	w.Write(append(b, '\n'))
}

func writeJSON(w http.ResponseWriter, status int, v any) {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		http.Error(w, err.Error(), http.StatusInternalServerError)
		return
	}
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(status)
	w.Write(append(b, '\n'))
}

func encodeQuery(v map[string][]string) string { return url.Values(v).Encode() }

// HTTPTimeouts bound how long a client may take; zero fields take the
// defaults of NewHTTPServer.
type HTTPTimeouts struct {
	ReadHeader time.Duration // default 5 s
	Read       time.Duration // whole request, body included; default 30 s
	Write      time.Duration // default 60 s (a report renders in well under a second)
	Idle       time.Duration // keep-alive; default 120 s
}

// NewHTTPServer returns the http.Server of serve: a client that never
// finishes its headers or body is cut off after the read timeouts, so it
// holds one connection for a bounded time and no one else waits for it.
func NewHTTPServer(addr string, h http.Handler, t HTTPTimeouts) *http.Server {
	def := func(d, v time.Duration) time.Duration {
		if d > 0 {
			return d
		}
		return v
	}
	return &http.Server{
		Addr:              addr,
		Handler:           h,
		ReadHeaderTimeout: def(t.ReadHeader, 5*time.Second),
		ReadTimeout:       def(t.Read, 30*time.Second),
		WriteTimeout:      def(t.Write, 60*time.Second),
		IdleTimeout:       def(t.Idle, 120*time.Second),
		MaxHeaderBytes:    64 << 10,
	}
}
