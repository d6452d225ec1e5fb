package worker

import (
	"bytes"
	"context"
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/hibiken/asynq"

	"matgate/checks"
	"matgate/schema"
	"matgate/worker/redistest"
)

var testPub = testKey.Public().(ed25519.PublicKey)

// verifySigned checks a stored record's digest and its signature with
// serve's test key.
func verifySigned(rec []byte) error {
	r, err := checks.ParseRecord(rec)
	if err != nil {
		return err
	}
	return r.VerifyIntegrity(testPub)
}

// logBuffer is a slog destination that tests read.
type logBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *logBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *logBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// editRecord decodes a record, lets edit change it, and encodes it again;
// with redigest the digest is recomputed after the edit, as a forger who
// knows the format would.
func editRecord(t *testing.T, rec []byte, redigest bool, edit func(r *checks.Record)) []byte {
	t.Helper()
	r, err := checks.ParseRecord(rec)
	if err != nil {
		t.Fatal(err)
	}
	edit(r)
	if redigest {
		if r.Digest, err = r.ComputeDigest(); err != nil {
			t.Fatal(err)
		}
	}
	b, err := RecordJSON(r)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// TestForgedOutputsRefused plays a compromised worker, or anyone who can
// write to Redis: after a genuine submission, it writes forged outputs of
// the job into Redis with go-redis and hands them to serve as a worker
// does (a materialize task). serve refuses each before it is stored, logs
// it, moves the outputs aside and fails the job with the reason, which
// GET /v1/jobs/{id} shows. A resubmission then runs the job again, and
// with a real worker the genuine record is stored, signed with serve's
// key.
func TestForgedOutputsRefused(t *testing.T) {
	var log logBuffer
	s := newAPIStackOn(t, nil, 0, false, 0)
	s.log = slog.New(slog.NewTextHandler(&log, nil))
	s.startMaterializer(t)
	file := "../testdata/cards/al-bilinear.yaml"
	id, rec, card := storeOutputs(t, "al-bilinear.yaml")
	_, otherRec, otherCard := storeOutputs(t, "steel-prager.json")
	tests := []struct {
		name      string
		rec, card []byte
		want      string
	}{
		{"verdict edited", editRecord(t, rec, false, func(r *checks.Record) { r.Verdict = "fail" }), card,
			"record digest does not match its content"},
		{"verdict edited, digest recomputed", editRecord(t, rec, true, func(r *checks.Record) { r.Verdict = "fail" }), card,
			`the record says verdict "fail", its checks give "pass"`},
		{"a check's outcome edited, digest recomputed", editRecord(t, rec, true, func(r *checks.Record) { r.Cases[0].Checks[0].Pass = false }), card,
			`the record says verdict "pass", its checks give "fail"`},
		{"record of another card", otherRec, otherCard, "which is job "},
		{"record by another tool version", editRecord(t, rec, true, func(r *checks.Record) { r.Tool.Version = "other" }), card, "by tool other, which is job"},
		{"neutral card of another card", rec, otherCard, "the neutral card is not the record's canonical card"},
		{"not a record", []byte(`{"verdict": "pass"}`), card, "not a record"},
	}
	for i, tc := range tests {
		resp, j := s.submitFile(t, file)
		if resp.StatusCode != http.StatusAccepted || j.ID != id {
			t.Fatalf("%s: submit: %d %+v", tc.name, resp.StatusCode, j)
		}
		if err := s.rdb.Set(context.Background(), recordKey(id), tc.rec, 0).Err(); err != nil {
			t.Fatal(err)
		}
		s.rdb.Set(context.Background(), cardKey(id), tc.card, 0)
		if _, err := s.client.Enqueue(newMaterializeTask(id, 0)); err != nil {
			t.Fatal(err)
		}
		j = s.waitJob(t, id, 30*time.Second)
		if j.State != JobFailed || !strings.Contains(j.LastError, "refused: ") || !strings.Contains(j.LastError, tc.want) {
			t.Errorf("%s: job %s %q, want failed with %q", tc.name, j.State, j.LastError, tc.want)
		}
		if s.store.Has(id) {
			t.Fatalf("%s: the forged record was stored", tc.name)
		}
		if got, _ := s.rdb.Get(context.Background(), refusedRecordKey(id)).Bytes(); !bytes.Equal(got, tc.rec) {
			t.Errorf("%s: the refused record was not kept aside", tc.name)
		}
		if n, _ := s.rdb.Exists(context.Background(), recordKey(id), cardKey(id)).Result(); n != 0 {
			t.Errorf("%s: the refused outputs are still the job's in Redis", tc.name)
		}
		lines := strings.Split(strings.TrimSpace(log.String()), "\n")
		if last := lines[len(lines)-1]; len(lines) != i+1 || !strings.Contains(last, "refused the outputs of a job") || !strings.Contains(last, id) ||
			!strings.Contains(last, strings.ReplaceAll(tc.want, `"`, `\"`)) {
			t.Errorf("%s: no log line of the refusal:\n%s", tc.name, log.String())
		}
	}
	// A compromised worker: it writes another card's record as the job's
	// and hands it to serve while its task is still active.
	compromised := asynq.NewServerFromRedisClient(s.rdb, asynq.Config{Concurrency: 1, Queues: map[string]int{QueueVerify: 1},
		TaskCheckInterval: 20 * time.Millisecond, LogLevel: asynq.FatalLevel})
	mux := asynq.NewServeMux()
	mux.HandleFunc(TypeVerify, func(ctx context.Context, task *asynq.Task) error {
		s.rdb.Set(ctx, recordKey(id), otherRec, 0)
		s.rdb.Set(ctx, cardKey(id), otherCard, 0)
		if _, err := s.client.Enqueue(newMaterializeTask(id, 0)); err != nil {
			return err
		}
		time.Sleep(300 * time.Millisecond) // still active while serve refuses
		return nil
	})
	if err := compromised.Start(mux); err != nil {
		t.Fatal(err)
	}
	// Shut down before the Redis client closes whatever happens below:
	// an asynq server whose client is closed under it panics.
	t.Cleanup(compromised.Shutdown)
	if resp, _ := s.submitFile(t, file); resp.StatusCode != http.StatusAccepted {
		t.Fatalf("submit to the compromised worker: %d", resp.StatusCode)
	}
	waitProgress(t, "the compromised worker's job failed and its task removed", 30*time.Second, func() (int, int) {
		_, err := s.insp.GetTaskInfo(QueueVerify, id)
		f, _ := ReadFailure(context.Background(), s.rdb, id)
		if errors.Is(err, asynq.ErrTaskNotFound) && f != nil {
			return 1, 1
		}
		return 0, 1
	}, func() string { return log.String() })
	compromised.Shutdown()
	if j := s.waitJob(t, id, time.Second); j.State != JobFailed || !strings.Contains(j.LastError, "which is job") || s.store.Has(id) {
		t.Errorf("the compromised worker's job: %+v", j)
	}

	// The genuine run after the refusals.
	s.startWorker(t)
	resp, j := s.submitFile(t, file)
	if resp.StatusCode != http.StatusAccepted {
		t.Fatalf("resubmission after the refusals: %d %+v", resp.StatusCode, j)
	}
	j = s.waitJob(t, id, time.Minute)
	if j.State != JobDone || !j.Stored || j.Verdict != "pass" {
		t.Fatalf("genuine run: %+v", j)
	}
	stored, _ := s.store.Record(id)
	if err := verifySigned(stored); err != nil {
		t.Errorf("the stored record: %v", err)
	}
	if f, err := ReadFailure(context.Background(), s.rdb, id); f != nil || err != nil {
		t.Errorf("the refusal outlived the genuine record: %+v %v", f, err)
	}
	if rep, err := VerifyLedger(s.dir, &LedgerCheck{PublicKey: testPub}); err != nil || rep.Break != nil || rep.Entries != 1 {
		t.Errorf("ledger: %+v %v", rep, err)
	}
}

// rechain writes lines as the ledger of dir, with seq and prev recomputed,
// as someone who rewrites the ledger would.
func rechain(t *testing.T, dir string, lines []LedgerEntry) {
	t.Helper()
	var out []byte
	prev := ""
	for i, e := range lines {
		e.Seq, e.Prev = i+1, prev
		b, _ := json.Marshal(e)
		prev = sha256Hex(b)
		out = append(append(out, b...), '\n')
	}
	if err := os.WriteFile(filepath.Join(dir, LedgerName), out, 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestCheckpoints: a checkpoint signed by serve's key catches what the
// chain alone cannot, a ledger cut back or rewritten with its chain
// recomputed (each of which verifies without the checkpoint), and a
// checkpoint edited to match a rewritten ledger fails its signature.
// Records must carry serve's signature when --public-key is given.
func TestCheckpoints(t *testing.T) {
	dir, ids := storeDemoCards(t, testKey)
	s, err := OpenStore(dir, StoreOptions{})
	if err != nil {
		t.Fatal(err)
	}
	at := time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC)
	cp, wrote, err := s.AppendCheckpoint(testKey, at)
	if err != nil || !wrote || cp.Seq != 3 || cp.KeyID != checks.KeyID(testPub) {
		t.Fatalf("checkpoint: %+v %v %v", cp, wrote, err)
	}
	if _, wrote, err := s.AppendCheckpoint(testKey, at.Add(time.Hour)); wrote || err != nil {
		t.Errorf("a second checkpoint of an unchanged ledger was written: %v", err)
	}
	s.Close()
	b, _ := os.ReadFile(filepath.Join(dir, CheckpointsName))
	if cps, err := ParseCheckpoints(b); err != nil || len(cps) != 1 || cps[0] != cp {
		t.Fatalf("%s: %v %+v", CheckpointsName, err, cps)
	}
	full := &LedgerCheck{PublicKey: testPub, Checkpoints: []Checkpoint{cp}}
	if rep, err := VerifyLedger(dir, full); err != nil || rep.Break != nil || rep.Checkpoints != 1 || rep.Entries != 3 {
		t.Fatalf("the intact directory with its checkpoint: %+v %v", rep, err)
	}
	intact, _ := os.ReadFile(filepath.Join(dir, LedgerName))
	entries, _, _ := parseLedger(intact)
	otherKey := ed25519.NewKeyFromSeed(bytes.Repeat([]byte{9}, ed25519.SeedSize))
	tests := []struct {
		name   string
		tamper func(dir string) // a copy of the directory
		check  func(dir string) *LedgerCheck
		want   string
	}{
		{"cut back by its last line (and its files)", func(dir string) {
			rechain(t, dir, entries[:2])
			os.Remove(filepath.Join(dir, recordName(ids[2])))
			os.Remove(filepath.Join(dir, cardName(ids[2])))
			os.Remove(filepath.Join(dir, summaryName(ids[2])))
		}, nil, "the ledger has 2 line(s) only: it was cut back after the checkpoint"},
		{"two lines swapped, chain recomputed", func(dir string) {
			rechain(t, dir, []LedgerEntry{entries[1], entries[0], entries[2]})
		}, nil, "the ledger was rewritten up to line 3"},
		{"checkpoint edited to the rewritten ledger", func(dir string) {
			rechain(t, dir, []LedgerEntry{entries[1], entries[0], entries[2]})
		}, func(dir string) *LedgerCheck {
			data, _ := os.ReadFile(filepath.Join(dir, LedgerName))
			forged := cp
			forged.Head = lineHashes(data)[2]
			return &LedgerCheck{PublicKey: testPub, Checkpoints: []Checkpoint{forged}}
		}, "signature: checks: record signature is invalid"},
		{"checkpoint by another key", func(string) {}, func(string) *LedgerCheck {
			other := cp
			other.Sign(otherKey)
			return &LedgerCheck{PublicKey: testPub, Checkpoints: []Checkpoint{other}}
		}, "signed by key " + checks.KeyID(otherKey.Public().(ed25519.PublicKey))},
		{"a record without serve's signature", func(dir string) {
			id, rec, card := storeOutputs(t, "ss-chaboche.yaml")
			p := filepath.Join(dir, recordName(id))
			os.Chmod(p, 0o644)
			os.WriteFile(p, rec, 0o644)
			e := entries[1]
			e.RecordSHA256, e.CardSHA256 = sha256Hex(rec), sha256Hex(card)
			rechain(t, dir, []LedgerEntry{entries[0], e, entries[2]})
		}, func(string) *LedgerCheck { return &LedgerCheck{PublicKey: testPub} }, "checks: record is not signed"},
	}
	for _, tc := range tests {
		d := filepath.Join(t.TempDir(), "records")
		if err := os.CopyFS(d, os.DirFS(dir)); err != nil {
			t.Fatal(err)
		}
		tc.tamper(d)
		if tc.check == nil {
			// Without the checkpoint, the tampered directory verifies:
			// the chain and the files alone do not show it.
			if rep, err := VerifyLedger(d, nil); err != nil || rep.Break != nil {
				t.Errorf("%s: without the checkpoint: %+v %v; want intact (the test's tampering is not the kind only a checkpoint finds)", tc.name, rep, err)
			}
			tc.check = func(string) *LedgerCheck { return full }
		}
		rep, err := VerifyLedger(d, tc.check(d))
		if err != nil || rep.Break == nil || !strings.Contains(rep.Break.Error(), tc.want) {
			t.Errorf("%s: break %v (%v), want %q", tc.name, rep.Break, err, tc.want)
		}
	}
}

// storeSignedFor checks that stored records verify with serve's key.
func storeSignedFor(t *testing.T, s *DirStore, ids []string) {
	t.Helper()
	for _, id := range ids {
		b, err := s.Record(id)
		if err == nil {
			err = verifySigned(b)
		}
		if err != nil {
			t.Errorf("record %s: %v", id, err)
		}
	}
}

// TestStoreFailsRecordsReconciled: with every write of the records
// directory failing (a full disk), workers finish the demo jobs into
// Redis and every materialize attempt fails; the materialize tasks are
// then archived, as after their last retry. ListPending lists the jobs.
// Once the disk works again, serve's reconcile pass (Upkeep, every 50
// ms here) stores every record, signed, with the ledger intact, and
// nothing is left pending. The time from the disk's recovery to the last
// record stored is logged.
func TestStoreFailsRecordsReconciled(t *testing.T) {
	s := newQueueStack(t, nil, false)
	var faults diskFaults
	faults.set(faultPlan{space: 0})
	s.store.Close()
	var err error
	if s.store, err = OpenStore(s.dir, StoreOptions{wrap: faults.wrap}); err != nil {
		t.Fatal(err)
	}
	s.startWorker(t)
	msrv := s.startMaterializer(t)
	ids := enqueueDemoCards(t, s)
	ctx := context.Background()
	// Every job finished into Redis, and serve tried to store each.
	waitProgress(t, "records in Redis whose store failed", time.Minute, func() (int, int) {
		n := 0
		for _, id := range ids {
			if info, err := s.insp.GetTaskInfo(QueueMaterialize, "m-"+id); err == nil && info.Retried > 0 || err == nil && info.State == asynq.TaskStateRetry {
				n++
			}
		}
		return n, len(ids)
	}, func() string { return "store: " + errString(s.store.Ping()) })
	if s.store.Ping() == nil {
		t.Fatal("the store reports no fault under a full disk")
	}
	// The materialize tasks give up, as after their last retry.
	msrv.Shutdown()
	n1, err1 := s.insp.ArchiveAllRetryTasks(QueueMaterialize)
	n2, err2 := s.insp.ArchiveAllPendingTasks(QueueMaterialize)
	if err1 != nil || err2 != nil || n1+n2 != len(ids) {
		t.Fatalf("archive the materialize tasks: %d+%d %v %v", n1, n2, err1, err2)
	}
	ps, err := ListPending(ctx, s.rdb, s.store.Has)
	if err != nil || len(ps) != len(ids) {
		t.Fatalf("pending: %+v %v", ps, err)
	}
	for _, p := range ps {
		if p.Problem != "" || p.CardID == "" || p.Verdict == "" {
			t.Errorf("pending %s: %+v", p.ID, p)
		}
	}
	// A reconcile pass while the disk is still full stores nothing and
	// says why.
	if r := s.materializer().Reconcile(ctx); r.Stored != 0 || r.Err == nil || len(r.Pending) != len(ids) {
		t.Errorf("reconcile on a full disk: %+v", r)
	}
	uctx, stop := context.WithCancel(ctx)
	done := make(chan struct{})
	go func() {
		defer close(done)
		Upkeep(uctx, s.materializer(), UpkeepOptions{Reconcile: 50 * time.Millisecond})
	}()
	t.Cleanup(func() { stop(); <-done })
	recovered := time.Now()
	faults.set(faultPlan{space: -1})
	s.waitStored(t, 30*time.Second, ids...)
	t.Logf("all %d records stored %v after the disk recovered (reconcile every 50 ms)", len(ids), time.Since(recovered).Round(time.Millisecond))
	storeSignedFor(t, s.store, ids)
	if ps, err := ListPending(ctx, s.rdb, s.store.Has); err != nil || len(ps) != 0 {
		t.Errorf("still pending: %+v %v", ps, err)
	}
	if err := s.store.Ping(); err != nil {
		t.Errorf("store unhealthy after recovery: %v", err)
	}
	if rep, err := VerifyLedger(s.dir, &LedgerCheck{PublicKey: testPub}); err != nil || rep.Break != nil || rep.Entries != len(ids) {
		t.Errorf("ledger: %+v %v", rep, err)
	}
	for _, id := range ids {
		if ttl, _ := s.rdb.TTL(ctx, recordKey(id)).Result(); ttl <= 0 {
			t.Errorf("%s: the Redis copy of a stored record does not expire (ttl %v)", id, ttl)
		}
	}
}

func errString(err error) string {
	if err == nil {
		return "no fault"
	}
	return err.Error()
}

// crashing is a verification that takes its worker down: it panics, which
// asynq recovers from as it would not from an out-of-memory kill, but
// like a killed worker it never returns to the handler.
func crashing(runs *int, mu *sync.Mutex) func(context.Context, *schema.Card, checks.Tool, time.Time) (*Outputs, error) {
	return func(context.Context, *schema.Card, checks.Tool, time.Time) (*Outputs, error) {
		mu.Lock()
		*runs++
		mu.Unlock()
		panic("the card exhausted the worker's memory (test)")
	}
}

// TestPoisonCard: a card whose runs never return (the worker dies) is run
// PoisonLimit times by asynq's retries and then failed for good as
// poison, with the reason in its job status; a resubmission does not run
// it again. A run that returns is not counted: after PoisonLimit-1 deaths
// a normal run stores its record.
func TestPoisonCard(t *testing.T) {
	s := newAPIStackOn(t, nil, 0, false, 0)
	var mu sync.Mutex
	runs := 0
	h := s.handler()
	h.verify = crashing(&runs, &mu)
	srv := asynq.NewServerFromRedisClient(s.rdb, asynq.Config{
		Concurrency: 1, Queues: map[string]int{QueueVerify: 1}, TaskCheckInterval: 20 * time.Millisecond,
		RetryDelayFunc:           func(int, error, *asynq.Task) time.Duration { return 10 * time.Millisecond },
		DelayedTaskCheckInterval: 20 * time.Millisecond,
		LogLevel:                 asynq.FatalLevel,
	})
	mux := asynq.NewServeMux()
	mux.Handle(TypeVerify, h)
	if err := srv.Start(mux); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(srv.Shutdown)
	file := "../testdata/cards/al-bilinear.yaml"
	resp, j := s.submitFile(t, file)
	if resp.StatusCode != http.StatusAccepted {
		t.Fatalf("submit: %d", resp.StatusCode)
	}
	j = s.waitJob(t, j.ID, time.Minute)
	mu.Lock()
	n := runs
	mu.Unlock()
	if n != PoisonLimit {
		t.Errorf("the poison card ran %d times, want %d", n, PoisonLimit)
	}
	if j.State != JobFailed || !strings.Contains(j.LastError, "poison card: 3 runs of this card ended without a result") {
		t.Errorf("job: %s %q", j.State, j.LastError)
	}
	f, err := ReadFailure(context.Background(), s.rdb, j.ID)
	if err != nil || f == nil || f.Kind != FailurePoison {
		t.Errorf("failure entry: %+v %v", f, err)
	}
	// A resubmission puts the task back (it was archived), and the
	// worker refuses it without running it.
	resp, _ = s.submitFile(t, file)
	if resp.StatusCode != http.StatusAccepted {
		t.Fatalf("resubmission: %d", resp.StatusCode)
	}
	waitProgress(t, "the resubmitted poison job failed", 30*time.Second, func() (int, int) {
		info, err := s.insp.GetTaskInfo(QueueVerify, j.ID)
		if err == nil && info.State == asynq.TaskStateArchived {
			return 1, 1
		}
		return 0, 1
	}, func() string { return "" })
	mu.Lock()
	n = runs
	mu.Unlock()
	if n != PoisonLimit {
		t.Errorf("the poison card ran again after its resubmission: %d runs", n)
	}
	if j = s.waitJob(t, j.ID, time.Second); j.State != JobFailed || !strings.Contains(j.LastError, "it is not run again") {
		t.Errorf("resubmitted job: %s %q", j.State, j.LastError)
	}

	// Deaths below the limit, then a run that returns: stored.
	c := loadTestCard(t, "../testdata/cards/steel-prager.json")
	task, id, err := NewVerifyTask(c, Settings{ToolVersion: testTool.Version}, time.Minute)
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	for range PoisonLimit - 1 {
		func() {
			defer func() { recover() }()
			h.ProcessTask(ctx, task)
		}()
	}
	h.verify = nil
	if err := h.ProcessTask(ctx, task); err != nil {
		t.Fatalf("a run after %d deaths: %v", PoisonLimit-1, err)
	}
	if n, _ := s.rdb.Get(ctx, runsKey(id)).Int(); n != PoisonLimit-1 {
		t.Errorf("runs that never returned: %d, want %d", n, PoisonLimit-1)
	}
	if ok, _ := s.rdb.Exists(ctx, recordKey(id)).Result(); ok != 1 {
		t.Errorf("no record after a run that returned")
	}
}

// TestPoisonKilledWorkers kills real worker processes (SIGKILL, as the
// out-of-memory killer does) in the middle of a slow card, PoisonLimit
// times: asynq hands the task to the next worker after each death (its
// lease runs out), and the delivery after the last death fails the job
// as poison without running it. A long test: each recovery takes asynq
// 30 to 90 s.
func TestPoisonKilledWorkers(t *testing.T) {
	longTest(t)
	r := redistest.Start(t)
	s := newQueueStack(t, r, false)
	id := enqueueSlowCard(t, s)
	ctx := context.Background()
	for death := 1; death <= PoisonLimit; death++ {
		proc := exec.Command(os.Args[0], "-test.run=^$")
		proc.Env = append(os.Environ(), helperEnv+"="+r.Addr)
		proc.Stderr = os.Stderr
		if err := proc.Start(); err != nil {
			t.Fatal(err)
		}
		waitProgress(t, fmt.Sprintf("run %d started in a worker process", death), 3*time.Minute, func() (int, int) {
			if n, _ := s.rdb.Get(ctx, runsKey(id)).Int(); n == death {
				return 1, 1
			}
			return 0, 1
		}, func() string {
			info, err := s.insp.GetTaskInfo(QueueVerify, id)
			return fmt.Sprintf("task %+v %v", info, err)
		})
		proc.Process.Kill()
		proc.Wait()
		t.Logf("worker process killed during run %d", death)
	}
	s.startWorker(t)
	waitProgress(t, "the job failed as poison", 3*time.Minute, func() (int, int) {
		if info, err := s.insp.GetTaskInfo(QueueVerify, id); err == nil && info.State == asynq.TaskStateArchived {
			return 1, 1
		}
		return 0, 1
	}, func() string { return "" })
	info, _ := s.insp.GetTaskInfo(QueueVerify, id)
	if !strings.Contains(info.LastErr, "poison card: 3 runs of this card ended without a result") {
		t.Errorf("last error %q", info.LastErr)
	}
	if f, err := ReadFailure(ctx, s.rdb, id); err != nil || f == nil || f.Kind != FailurePoison {
		t.Errorf("failure: %+v %v", f, err)
	}
	if n, _ := s.rdb.Exists(ctx, recordKey(id)).Result(); n != 0 {
		t.Errorf("the poison card has a record")
	}
}

// BenchmarkAdmit is serve's cost per record of checking a worker's
// outputs and signing the record (admit), which the materializer pays
// once per record, one record at a time.
func BenchmarkAdmit(b *testing.B) {
	for _, f := range demoCards {
		id, rec, card := storeOutputs(b, f)
		b.Run(f, func(b *testing.B) {
			b.SetBytes(int64(len(rec)))
			for b.Loop() {
				if _, err := admit(id, rec, card, testKey); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// TestCheckpointTornLine: a checkpoint append that a crash tore is cut off
// before the next one, so checkpoints.jsonl stays a file of whole lines.
func TestCheckpointTornLine(t *testing.T) {
	dir, _ := storeDemoCards(t, testKey)
	torn := []byte(`{"format":"matgate.checkpoint/1","seq":2,"he`)
	if err := os.WriteFile(filepath.Join(dir, CheckpointsName), torn, 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := OpenStore(dir, StoreOptions{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if _, wrote, err := s.AppendCheckpoint(testKey, time.Now()); !wrote || err != nil {
		t.Fatalf("checkpoint after a torn line: %v %v", wrote, err)
	}
	b, _ := os.ReadFile(filepath.Join(dir, CheckpointsName))
	if cps, err := ParseCheckpoints(b); err != nil || len(cps) != 1 || cps[0].Seq != 3 {
		t.Errorf("%s after the cut: %v %+v\n%s", CheckpointsName, err, cps, b)
	}
}
