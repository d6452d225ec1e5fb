package worker

import (
	"bytes"
	"context"
	"crypto/ed25519"
	"encoding/json"
	"fmt"
	"log/slog"
	"os"
	"path/filepath"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/hibiken/asynq"
	"github.com/redis/go-redis/v9"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker/redistest"
)

var testTool = checks.Tool{Version: "test", Commit: "none"}

// demoCards are the demo cards of testdata/cards (an invented scenario).
var demoCards = []string{"al-bilinear.yaml", "ss-chaboche.yaml", "steel-prager.json"}

// loadTestCard decodes and prepares a card file as matgate verify does.
func loadTestCard(t testing.TB, path string) *schema.Card {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return prepareTestCard(t, path, b)
}

func prepareTestCard(t testing.TB, name string, b []byte) *schema.Card {
	t.Helper()
	doc, err := schema.Decode(name, b, nil)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	c, ds := convert.Prepare(doc, nil)
	if c == nil {
		t.Fatalf("%s: %v", name, ds)
	}
	return c
}

// queueStack is a worker and a materializer on one private Redis, in this
// process.
type queueStack struct {
	redis   *redistest.Server
	rdb     *redis.Client
	client  *asynq.Client
	insp    *asynq.Inspector
	store   *DirStore
	dir     string
	runs    atomic.Int64  // verification tasks the worker ran
	poll    time.Duration // idle poll interval; zero: quiet's
	observe func(seconds float64)
	key     ed25519.PrivateKey // serve's signing key
	log     *slog.Logger       // the materializer's; nil discards
}

// testKey is serve's signing key in the tests (a fixed seed: a key of the
// tests, not a secret).
var testKey = ed25519.NewKeyFromSeed(bytes.Repeat([]byte{7}, ed25519.SeedSize))

func newQueueStack(t testing.TB, r *redistest.Server, workers bool) *queueStack {
	t.Helper()
	if r == nil {
		r = redistest.Start(t)
	}
	s := &queueStack{redis: r, rdb: r.Client(t), dir: t.TempDir(), key: testKey}
	s.client = asynq.NewClientFromRedisClient(s.rdb)
	s.insp = asynq.NewInspectorFromRedisClient(s.rdb)
	t.Cleanup(func() { s.client.Close(); s.insp.Close() })
	var err error
	if s.store, err = OpenDirStore(s.dir); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.store.Close() })
	if workers {
		s.startWorker(t)
		s.startMaterializer(t)
	}
	return s
}

var quiet = ServerOptions{CheckInterval: 20 * time.Millisecond, LogLevel: asynq.FatalLevel, ShutdownTimeout: 5 * time.Second}

func (s *queueStack) options() ServerOptions {
	o := quiet
	if s.poll > 0 {
		o.CheckInterval = s.poll
	}
	return o
}

func (s *queueStack) handler() *Handler {
	return &Handler{Redis: s.rdb, Queue: s.client, Tool: testTool}
}

func (s *queueStack) startWorker(t testing.TB) {
	h := s.handler()
	counted := asynq.HandlerFunc(func(ctx context.Context, task *asynq.Task) error {
		s.runs.Add(1)
		return h.ProcessTask(ctx, task)
	})
	o := s.options()
	o.Concurrency = 2
	srv, _ := NewVerifyServer(s.rdb, h, o)
	mux := asynq.NewServeMux()
	mux.Handle(TypeVerify, counted)
	if err := srv.Start(mux); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
}

func (s *queueStack) startMaterializer(t testing.TB) *asynq.Server {
	srv, mux := NewMaterializeServer(s.rdb, s.materializer(), s.options())
	if err := srv.Start(mux); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	return srv
}

func (s *queueStack) materializer() *Materializer {
	return &Materializer{Redis: s.rdb, Store: s.store, Key: s.key, Inspector: s.insp, Observe: s.observe, Log: s.log}
}

// waitStored waits until the store holds every id. It fails when stall
// passes with no new record stored (a bound on progress, not on the whole
// run, so that a busy machine slows the test without failing it).
func (s *queueStack) waitStored(t *testing.T, stall time.Duration, ids ...string) {
	t.Helper()
	waitProgress(t, "records stored", stall, func() (int, int) {
		n := 0
		for _, id := range ids {
			if s.store.Has(id) {
				n++
			}
		}
		return n, len(ids)
	}, func() string {
		for _, id := range ids {
			if !s.store.Has(id) {
				info, err := s.insp.GetTaskInfo(QueueVerify, id)
				if err != nil {
					return fmt.Sprintf("record %s missing (task: %v)", id, err)
				}
				return fmt.Sprintf("record %s missing: task %v, %d retries, last error %q", id, info.State, info.Retried, info.LastErr)
			}
		}
		return ""
	})
}

// waitProgress polls count until done reaches total. It fails when stall
// passes without count growing, with what detail says. Common practice for
// tests on shared machines: bound the lack of progress, not the run.
func waitProgress(t *testing.T, what string, stall time.Duration, count func() (done, total int), detail func() string) {
	t.Helper()
	last, since := -1, time.Now()
	for {
		n, total := count()
		if n >= total {
			return
		}
		if n > last {
			last, since = n, time.Now()
		}
		if time.Since(since) > stall {
			t.Fatalf("%s: %d of %d, no progress for %v; %s", what, n, total, stall, detail())
		}
		time.Sleep(10 * time.Millisecond)
	}
}

// longTest skips a test that takes a minute or more unless
// MATGATE_LONG_TESTS or CI is set (.ci/run sets CI=true), so that `go test
// ./...` stays a few minutes for developers.
func longTest(t *testing.T) {
	t.Helper()
	if os.Getenv("MATGATE_LONG_TESTS") == "" && os.Getenv("CI") != "true" {
		t.Skip("long test (a minute or more): set MATGATE_LONG_TESTS=1 to run it; CI runs it")
	}
}

// recordWithout decodes a record and drops the fields that differ between
// two runs of the same verification (created and so the digest) and
// serve's signature.
func recordWithout(t *testing.T, b []byte) string {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	delete(m, "created")
	delete(m, "digest")
	delete(m, "signature")
	out, _ := json.Marshal(m)
	return string(out)
}

// TestQueueMatchesInProcess sends the demo cards through the queue: each
// record in the store equals the in-process Verify's apart from created
// and digest, the neutral card is byte for byte the same, and the ledger
// verifies.
func TestQueueMatchesInProcess(t *testing.T) {
	s := newQueueStack(t, nil, true)
	var ids []string
	want := map[string]*Outputs{}
	for _, f := range demoCards {
		c := loadTestCard(t, filepath.Join("..", "testdata", "cards", f))
		task, id, err := NewVerifyTask(c, Settings{ToolVersion: testTool.Version}, TaskTimeout(DefaultBudget))
		if err != nil {
			t.Fatal(err)
		}
		if _, err := s.client.Enqueue(task); err != nil {
			t.Fatal(err)
		}
		ids = append(ids, id)
		if want[id], err = Verify(context.Background(), c, testTool, time.Now()); err != nil {
			t.Fatal(err)
		}
	}
	s.waitStored(t, time.Minute, ids...)
	for _, id := range ids {
		rec, err := s.store.Record(id)
		if err != nil {
			t.Fatal(err)
		}
		wantRec, _ := RecordJSON(want[id].Record)
		if recordWithout(t, rec) != recordWithout(t, wantRec) {
			t.Errorf("%s: queued record differs from the in-process one beyond created, digest and signature", id)
		}
		if err := verifySigned(rec); err != nil {
			t.Errorf("%s: the stored record is not signed with serve's key: %v", id, err)
		}
		card, _ := s.store.Card(id)
		if string(card) != string(want[id].Card) {
			t.Errorf("%s: queued neutral card differs from the in-process one", id)
		}
	}
	rep, err := VerifyLedger(s.dir, nil)
	if err != nil || rep.Break != nil || rep.Entries != len(ids) || rep.Files != 2*len(ids) {
		t.Errorf("ledger: %+v, %v", rep, err)
	}
}

// TestHandlerIdempotent runs the same task through the handler three times,
// twice of them at once: one verification, one record, one materialize
// task, and the record is the first one written.
func TestHandlerIdempotent(t *testing.T) {
	s := newQueueStack(t, nil, false)
	c := loadTestCard(t, "../testdata/cards/al-bilinear.yaml")
	task, id, err := NewVerifyTask(c, Settings{ToolVersion: "test"}, time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	var verified atomic.Int64
	h := s.handler()
	h.Now = func() time.Time { verified.Add(1); return time.Unix(1e9+verified.Load(), 0) }
	var wg sync.WaitGroup
	errs := make([]error, 2)
	for i := range 2 {
		wg.Go(func() { errs[i] = h.ProcessTask(context.Background(), task) })
	}
	wg.Wait()
	if errs[0] != nil || errs[1] != nil {
		t.Fatalf("concurrent runs: %v, %v", errs[0], errs[1])
	}
	first, err := s.rdb.Get(context.Background(), recordKey(id)).Bytes()
	if err != nil {
		t.Fatal(err)
	}
	before := verified.Load()
	if err := h.ProcessTask(context.Background(), task); err != nil {
		t.Fatal(err)
	}
	if verified.Load() != before {
		t.Errorf("a third run verified again although the record exists")
	}
	again, _ := s.rdb.Get(context.Background(), recordKey(id)).Bytes()
	if string(again) != string(first) {
		t.Errorf("the record in Redis was replaced")
	}
	info, err := s.insp.GetQueueInfo(QueueMaterialize)
	if err != nil {
		t.Fatal(err)
	}
	if info.Pending != 1 {
		t.Errorf("%d materialize tasks pending, want 1", info.Pending)
	}
}

// TestHandlerSkipRetry: deterministic failures are not retried.
func TestHandlerSkipRetry(t *testing.T) {
	s := newQueueStack(t, nil, false)
	h := s.handler()
	c := loadTestCard(t, "../testdata/cards/ss-chaboche.yaml")
	task, _, err := NewVerifyTask(c, Settings{ToolVersion: "test"}, time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	h.Budget = time.Nanosecond
	tests := []struct {
		name string
		h    *Handler
		task *asynq.Task
	}{
		{"payload not JSON", s.handler(), asynq.NewTask(TypeVerify, []byte("{"))},
		{"card invalid", s.handler(), asynq.NewTask(TypeVerify, []byte(`{"card":{"format":"matgate.card/1"},"settings":{}}`))},
		{"budget exceeded", h, task},
	}
	for _, tc := range tests {
		err := tc.h.ProcessTask(context.Background(), tc.task)
		if err == nil || !errorsIs(err, asynq.SkipRetry) {
			t.Errorf("%s: %v, want an error wrapping SkipRetry", tc.name, err)
		}
	}
	if err := h.ProcessTask(context.Background(), task); !errorsIs(err, ErrBudget) {
		t.Errorf("budget: %v, want ErrBudget", err)
	}
	// A verification that fails at once for another reason (here a
	// stress-controlled reference beyond the card's saturation stress, which
	// the spec refuses) names that reason, not the budget (issue 11: every
	// failure was reported as the budget, even after 0.55 s). Plausibility
	// refuses such a card since issue 9, so it is normalized without it, as
	// a task from another client than matgate may hold it.
	doc, err := schema.Decode("beyond.yaml", []byte(`format: matgate.card/1
id: beyond-saturation
revision: 1
title: reference beyond saturation (test input)
source: test input, not material data
units: {stress: MPa}
elastic: {youngs_modulus: 200000, poisson_ratio: 0.3}
plasticity:
  yield_stress: 200
  kinematic:
    - {model: armstrong_frederick, c: 20000, gamma: 200}
verification:
  references:
    - {name: beyond, kind: solver, control: stress, points: [[0, 0], [0.01, 500]]}
`), nil)
	if err != nil {
		t.Fatal(err)
	}
	bad, err := convert.Normalize(doc.Card, nil)
	if err != nil {
		t.Fatal(err)
	}
	badTask, _, err := NewVerifyTask(bad, Settings{ToolVersion: "test"}, time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	err = s.handler().ProcessTask(context.Background(), badTask)
	if err == nil || !errorsIs(err, asynq.SkipRetry) || errorsIs(err, ErrBudget) {
		t.Errorf("failing card: %v, want SkipRetry with the cause, not ErrBudget", err)
	}
}

// TestRedisDownIsRetried: with Redis gone the handler returns an error that
// asynq retries (no SkipRetry).
func TestRedisDownIsRetried(t *testing.T) {
	r := redistest.Start(t)
	s := newQueueStack(t, r, false)
	c := loadTestCard(t, "../testdata/cards/al-bilinear.yaml")
	task, _, _ := NewVerifyTask(c, Settings{ToolVersion: "test"}, time.Minute)
	r.Stop()
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	err := s.handler().ProcessTask(ctx, task)
	if err == nil || errorsIs(err, asynq.SkipRetry) {
		t.Errorf("Redis down: %v, want a retryable error", err)
	}
}

func TestTaskTimeoutExceedsBudget(t *testing.T) {
	for _, b := range []time.Duration{time.Nanosecond, 300 * time.Millisecond, time.Second, DefaultBudget, 90*time.Second + 1} {
		to := TaskTimeout(b)
		if to <= b || to%time.Second != 0 {
			t.Errorf("budget %v: asynq timeout %v, want whole seconds above the budget", b, to)
		}
	}
	for n := range 20 {
		if d := RetryDelay(n, nil, nil); d <= 0 || d > maxRetryDelay {
			t.Errorf("retry %d: delay %v outside (0, %v]", n, d, maxRetryDelay)
		}
	}
}
