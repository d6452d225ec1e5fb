package worker

import (
	"context"
	"fmt"
	"net/http"
	"os"
	"os/exec"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/hibiken/asynq"
	"github.com/redis/go-redis/v9"

	"matgate/worker/redistest"
)

// helperEnv, when set to a Redis address, turns the test binary into a
// worker process (see TestMain), so that a test can kill a real process.
const helperEnv = "MATGATE_TEST_WORKER_REDIS"

func TestMain(m *testing.M) {
	if addr := os.Getenv(helperEnv); addr != "" {
		rdb := redis.NewClient(&redis.Options{Addr: addr})
		client := asynq.NewClientFromRedisClient(rdb)
		o := quiet
		o.Concurrency = 1
		srv, mux := NewVerifyServer(rdb, &Handler{Redis: rdb, Queue: client, Tool: testTool}, o)
		if err := srv.Start(mux); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(3)
		}
		select {} // until killed
	}
	os.Exit(m.Run())
}

// slowCard is the stainless demo card sized to verify for several seconds
// on one core within the sizing limits of every case: the strict profile
// and a recorded history of 500 strain cycles of +-0.4 % (about 350,000
// replay increments), which is replayed and, since it does not match the
// card, diagnosed under every usual misreading (a card of our own for this
// test; the points are not data).
func slowCard(t *testing.T) []byte {
	b, err := os.ReadFile("../testdata/cards/ss-chaboche.yaml")
	if err != nil {
		t.Fatal(err)
	}
	pts := []string{"[0, 0]"}
	for range 500 {
		pts = append(pts, "[0.004, 300]", "[-0.004, -300]")
	}
	s := strings.Replace(string(b), "  profile: standard\n", "  profile: strict\n", 1)
	if s == string(b) || !strings.HasSuffix(s, "\n") {
		t.Fatal("the demo card changed: slowCard no longer applies")
	}
	s += "  references:\n    - {name: long-history, kind: measured, control: strain, points: [" + strings.Join(pts, ", ") + "]}\n"
	return []byte(s)
}

// TestKilledWorkerRecovered kills a worker process (SIGKILL) in the middle
// of a slow verification. asynq's lease on the task runs out (30 s) and the
// next recovery scan (every minute) hands it to another worker, which
// completes it: one record, one ledger line. Bounded by 3 minutes without
// progress.
func TestKilledWorkerRecovered(t *testing.T) {
	longTest(t)
	r := redistest.Start(t)
	s := newQueueStack(t, r, false)
	s.startMaterializer(t)
	id := enqueueSlowCard(t, s)
	proc := exec.Command(os.Args[0], "-test.run=^$")
	proc.Env = append(os.Environ(), helperEnv+"="+r.Addr)
	proc.Stderr = os.Stderr
	if err := proc.Start(); err != nil {
		t.Fatal(err)
	}
	defer func() { proc.Process.Kill(); proc.Wait() }()
	for deadline := time.Now().Add(30 * time.Second); ; time.Sleep(20 * time.Millisecond) {
		info, err := s.insp.GetTaskInfo(QueueVerify, id)
		if err == nil && info.State == asynq.TaskStateActive {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("the worker process did not take the task: %v %v", info, err)
		}
	}
	time.Sleep(time.Second) // in the middle of the verification (several seconds)
	if n, _ := s.rdb.Exists(context.Background(), recordKey(id)).Result(); n != 0 {
		t.Fatal("the verification finished before the kill: make slowCard slower")
	}
	proc.Process.Kill()
	proc.Wait()
	killed := time.Now()
	s.startWorker(t)
	s.waitStored(t, 3*time.Minute, id)
	t.Logf("recovered and stored %v after the kill", time.Since(killed).Round(time.Second))
	if n := s.runs.Load(); n != 1 {
		t.Errorf("the second worker ran the task %d times, want 1", n)
	}
	info, err := s.insp.GetTaskInfo(QueueVerify, id)
	if err != nil || info.State != asynq.TaskStateCompleted || info.Retried < 1 {
		t.Errorf("task after recovery: %+v %v; want completed after a retry", info, err)
	}
	if rep, _ := VerifyLedger(s.dir, nil); rep.Break != nil || rep.Entries != 1 {
		t.Errorf("ledger: %+v", rep)
	}
}

// TestServeRestartBeforeMaterialize: serve is down while a worker writes
// records; when it comes back on the same records directory, every record
// becomes a file and nothing is lost.
func TestServeRestartBeforeMaterialize(t *testing.T) {
	s := newQueueStack(t, nil, false)
	first := s.startMaterializer(t)
	first.Shutdown()
	s.store.Close()
	s.startWorker(t)
	ids := enqueueDemoCards(t, s)
	for deadline := time.Now().Add(time.Minute); ; time.Sleep(20 * time.Millisecond) {
		info, err := queueInfo(s.insp, QueueMaterialize)
		if err == nil && info.Pending == len(ids) {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("materialize tasks: %+v %v", info, err)
		}
	}
	for _, id := range ids {
		if ttl, _ := s.rdb.TTL(context.Background(), recordKey(id)).Result(); ttl != -1 {
			t.Errorf("%s: the Redis copy has TTL %v before it is a file, want none", id, ttl)
		}
	}
	var err error
	if s.store, err = OpenDirStore(s.dir); err != nil {
		t.Fatal(err)
	}
	s.startMaterializer(t)
	s.waitStored(t, time.Minute, ids...)
	if rep, _ := VerifyLedger(s.dir, nil); rep.Break != nil || rep.Entries != len(ids) {
		t.Errorf("ledger: %+v", rep)
	}
	for _, id := range ids {
		ttl, _ := s.rdb.TTL(context.Background(), recordKey(id)).Result()
		if ttl <= 0 || ttl > RedisCopyTTL {
			t.Errorf("%s: the Redis copy has TTL %v after it is a file, want (0, %v]", id, ttl, RedisCopyTTL)
		}
	}
}

// TestRedisRestartAOF: jobs accepted by a Redis with appendonly yes and
// appendfsync always survive a SIGKILL of Redis before any worker ran.
func TestRedisRestartAOF(t *testing.T) {
	r := redistest.Start(t, "--appendonly", "yes", "--appendfsync", "always")
	s := newQueueStack(t, r, false)
	ids := enqueueDemoCards(t, s)
	r.Restart()
	s.startWorker(t)
	s.startMaterializer(t)
	s.waitStored(t, time.Minute, ids...)
	if n := s.runs.Load(); n != int64(len(ids)) {
		t.Errorf("%d verifications ran, want %d", n, len(ids))
	}
}

// TestLoad1000 submits 1,000 distinct cards over HTTP from 8 clients at
// once (server.max_in_flight 8: all let in): every one is accepted,
// verified once and stored once, and the ledger verifies. Bounded by a
// minute without progress.
func TestLoad1000(t *testing.T) {
	longTest(t)
	const n = 1000
	s := newAPIStackOn(t, nil, 0, true, 0, func(c *APIConfig) { c.MaxInFlight = 8 })
	base, err := os.ReadFile("../testdata/cards/al-bilinear.yaml")
	if err != nil || !strings.Contains(string(base), "revision: 2\n") {
		t.Fatalf("the demo card changed: %v", err)
	}
	start := time.Now()
	jobs := make(chan int)
	ids := make([]string, n)
	var wg sync.WaitGroup
	for range 8 {
		wg.Go(func() {
			for i := range jobs {
				card := strings.Replace(string(base), "revision: 2\n", fmt.Sprintf("revision: %d\n", 1000+i), 1)
				resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(card))
				if resp.StatusCode != http.StatusAccepted {
					t.Errorf("card %d: %d %s", i, resp.StatusCode, body)
					continue
				}
				ids[i] = strings.TrimPrefix(resp.Header.Get("Location"), "/v1/jobs/")
			}
		})
	}
	for i := range n {
		jobs <- i
	}
	close(jobs)
	wg.Wait()
	t.Logf("%d submissions accepted in %v", n, time.Since(start).Round(time.Millisecond))
	seen := map[string]bool{}
	for _, id := range ids {
		seen[id] = true
	}
	if len(seen) != n {
		t.Fatalf("%d distinct job ids for %d distinct cards", len(seen), n)
	}
	waitProgress(t, "verifications completed", time.Minute, func() (int, int) {
		info, err := queueInfo(s.insp, QueueVerify)
		if err != nil {
			return 0, n
		}
		return info.Completed, n
	}, func() string {
		info, err := queueInfo(s.insp, QueueVerify)
		return fmt.Sprintf("verify queue %+v %v", info, err)
	})
	t.Logf("%d verifications completed after %v", n, time.Since(start).Round(time.Millisecond))
	s.waitStored(t, time.Minute, ids...)
	t.Logf("%d records stored after %v", n, time.Since(start).Round(time.Millisecond))
	if got := s.runs.Load(); got != n {
		t.Errorf("%d verifications ran, want %d", got, n)
	}
	rep, err := VerifyLedger(s.dir, nil)
	if err != nil || rep.Break != nil || rep.Entries != n || rep.Files != 2*n {
		t.Errorf("ledger: %+v %v", rep, err)
	}
}

// TestWorkerShutdownRequeues stops a worker (as SIGTERM does) in the middle
// of a slow verification: the task goes back to the queue without spending
// a retry, and the next worker completes it with one record.
func TestWorkerShutdownRequeues(t *testing.T) {
	longTest(t) // the second worker runs the slow card in full: 10 to 40 s
	s := newQueueStack(t, nil, false)
	s.startMaterializer(t)
	id := enqueueSlowCard(t, s)
	o := s.options()
	o.Concurrency, o.ShutdownTimeout = 1, 200*time.Millisecond
	first, mux := NewVerifyServer(s.rdb, s.handler(), o)
	if err := first.Start(mux); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(first.Shutdown) // before the Redis client closes, on any failure below
	for deadline := time.Now().Add(30 * time.Second); ; time.Sleep(20 * time.Millisecond) {
		info, err := s.insp.GetTaskInfo(QueueVerify, id)
		if err == nil && info.State == asynq.TaskStateActive {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("the first worker did not take the task: %v", err)
		}
	}
	time.Sleep(500 * time.Millisecond)
	first.Shutdown()
	info, err := s.insp.GetTaskInfo(QueueVerify, id)
	if err != nil || info.State != asynq.TaskStatePending || info.Retried != 0 {
		t.Fatalf("after shutdown: %+v %v; want pending with no retry spent", info, err)
	}
	if n, _ := s.rdb.Exists(context.Background(), recordKey(id)).Result(); n != 0 {
		t.Fatal("the verification finished before the shutdown: make slowCard slower")
	}
	s.startWorker(t)
	s.waitStored(t, 2*time.Minute, id)
	if rep, _ := VerifyLedger(s.dir, nil); rep.Break != nil || rep.Entries != 1 {
		t.Errorf("ledger: %+v", rep)
	}
}

// enqueueSlowCard enqueues the verification of slowCard and returns its
// job id.
func enqueueSlowCard(t *testing.T, s *queueStack) string {
	t.Helper()
	task, id, err := NewVerifyTask(prepareTestCard(t, "slow.yaml", slowCard(t)), Settings{ToolVersion: testTool.Version}, TaskTimeout(DefaultBudget))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := s.client.Enqueue(task); err != nil {
		t.Fatal(err)
	}
	return id
}

// enqueueDemoCards enqueues a verification task for each demo card directly
// (not through HTTP) and returns the job ids.
func enqueueDemoCards(t *testing.T, s *queueStack) []string {
	t.Helper()
	var ids []string
	for _, f := range demoCards {
		task, id, err := NewVerifyTask(loadTestCard(t, "../testdata/cards/"+f), Settings{ToolVersion: testTool.Version}, time.Minute)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := s.client.Enqueue(task); err != nil {
			t.Fatal(err)
		}
		ids = append(ids, id)
	}
	return ids
}
