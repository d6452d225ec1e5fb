package worker

import (
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"os"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus/testutil"

	"matgate/convert"
	"matgate/schema"
	"matgate/worker/cardspace"
)

// maxSizeCard returns cardspace.PointsCard grown to about size bytes as written: the
// costliest body a client can send, since serve decodes, validates and
// normalizes all of it.
func maxSizeCard(t testing.TB, size int) []byte {
	n0 := len(cardspace.PointsCard(0))
	return cardspace.PointsCard((size - n0) / 15)
}

// filler is n bytes of a YAML comment, made as they are read, so that a
// client's oversized body is not in the test process's heap.
type filler struct{ n int }

var xs = []byte(strings.Repeat("x", 32<<10))

func (f *filler) Read(p []byte) (int, error) {
	if f.n == 0 {
		return 0, io.EOF
	}
	k := copy(p[:min(len(p), f.n)], xs)
	f.n -= k
	return k, nil
}

// heapPeak samples HeapInuse until stop is called and returns the peak
// above the level at the start.
func heapPeak() (stop func() uint64) {
	runtime.GC()
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	base, peak := m.HeapInuse, m.HeapInuse
	done := make(chan struct{})
	var wg sync.WaitGroup
	wg.Go(func() {
		for {
			var m runtime.MemStats
			runtime.ReadMemStats(&m)
			peak = max(peak, m.HeapInuse)
			select {
			case <-done:
				return
			case <-time.After(5 * time.Millisecond):
			}
		}
	})
	return func() uint64 { close(done); wg.Wait(); return peak - base }
}

// TestConcurrentBodiesBounded sends 48 bodies at once to a serve that
// takes two at a time (server.max_in_flight 2): costly cards (6 of a
// quarter of the card limit of reference points; with MATGATE_LONG_TESTS=1
// or CI=true, 4 of the whole limit, about 1.6 s of CPU each) and the rest
// just over the card limit. serve's heap (this process's, sampled) stays
// within what two of the costly cards take, measured alone first, plus one
// more for the sampling's slack; without the limit (max_in_flight 48) the
// peak is above that bound in both forms (tried by hand: 106 MiB against
// 61, 320 against 241). A costly
// card answered 503 (with Retry-After) is sent again after 50 ms, so that
// each is handled in the end (202, or 422 when normalized above the
// limit); a body over the limit is refused, 413 or 503. Health and job status are answered throughout, and a
// normal card is accepted after.
func TestConcurrentBodiesBounded(t *testing.T) {
	const inFlight = 2
	// Collect early, so that the heap in use follows the live heap and the
	// two measurements compare what is held, not when the collector ran.
	defer debug.SetGCPercent(debug.SetGCPercent(20))
	s := newAPIStackOn(t, nil, 0, false, 0, func(c *APIConfig) { c.MaxInFlight = inFlight })
	id, rec, card := storeOutputs(t, "al-bilinear.yaml")
	if _, err := putJSON(t, s.store, id, rec, card); err != nil {
		t.Fatal(err)
	}
	size, every := schema.DefaultMaxBytes/4, 8 // one body in every is costly
	if os.Getenv("MATGATE_LONG_TESTS") != "" || os.Getenv("CI") == "true" {
		size, every = schema.DefaultMaxBytes-64, 12
	}
	heavy := maxSizeCard(t, size)
	post := func(body io.Reader) (*http.Response, error) {
		req, _ := http.NewRequest("POST", s.srv.URL+"/v1/cards", body)
		req.Header.Set("Authorization", "Bearer "+secretAll)
		req.Header.Set("Content-Type", "application/yaml")
		resp, err := http.DefaultClient.Do(req)
		if err == nil {
			io.Copy(io.Discard, resp.Body)
			resp.Body.Close()
		}
		return resp, err
	}

	stop := heapPeak()
	resp, err := post(strings.NewReader(string(heavy)))
	one := stop()
	if err != nil || resp.StatusCode/100 != 2 && resp.StatusCode != http.StatusUnprocessableEntity {
		t.Fatalf("the costly card alone: %v %v, want 202, or 422 for a card normalized above the limit", resp, err)
	}

	var (
		wg      sync.WaitGroup
		mu      sync.Mutex
		status  = map[int]int{}
		polls   atomic.Int64
		flood   = make(chan struct{})
		start   = make(chan struct{})
		pollErr error
	)
	go func() { // health and job status while the flood is on
		defer func() { flood <- struct{}{} }()
		<-start
		for {
			for _, p := range []string{"/healthz", "/v1/jobs/" + id} {
				resp, body := s.do(t, "GET", p, secretRead, "", nil)
				if resp.StatusCode != http.StatusOK {
					pollErr = fmt.Errorf("%s: %d %s", p, resp.StatusCode, body)
					return
				}
			}
			polls.Add(1)
			select {
			case <-flood:
				return
			case <-time.After(5 * time.Millisecond):
			}
		}
	}()
	stop = heapPeak()
	busy := 0   // 503 answers
	resets := 0 // bodies over the limit whose connection was closed before the client read the 413
	for i := range 48 {
		wg.Go(func() {
			costly := i%every == 0
			body := func() io.Reader {
				if costly { // a body of its own, not answered from the digest of another
					return strings.NewReader(string(heavy) + fmt.Sprintf("# %d\n", i))
				}
				return io.MultiReader(strings.NewReader(string(heavy[:1000])), &filler{n: schema.DefaultMaxBytes})
			}
			<-start
			for {
				resp, err := post(body())
				mu.Lock()
				switch {
				case err != nil && !costly:
					// The server stops reading a body at the limit and
					// closes the connection: the client may see that
					// instead of the 413.
					status[413]++
					resets++
				case err != nil:
					t.Errorf("a costly card (within the limit): %v", err)
				case resp.StatusCode == http.StatusServiceUnavailable:
					busy++
					if resp.Header.Get("Retry-After") == "" {
						t.Error("503 without Retry-After")
					}
					if !costly {
						status[413]++ // refused either way; only the costly cards are sent again
					}
				case costly:
					status[-resp.StatusCode]++ // negative: a costly card's answer
				default:
					status[resp.StatusCode]++
				}
				mu.Unlock()
				if !costly || err != nil || resp.StatusCode != http.StatusServiceUnavailable {
					return
				}
				time.Sleep(50 * time.Millisecond)
			}
		})
	}
	close(start)
	wg.Wait()
	peak := stop()
	flood <- struct{}{}
	<-flood
	t.Logf("heap in use above the start: one costly card of %d bytes %.1f MiB; 48 bodies at once, %d in flight: peak %.1f MiB; answers %v (negative: the costly cards'; 413 counts 503s and %d closed connections of bodies over the limit), %d busy (503); %d health+status polls during the flood",
		len(heavy), float64(one)/(1<<20), inFlight, float64(peak)/(1<<20), status, resets, busy, polls.Load())
	if pollErr != nil {
		t.Errorf("during the flood: %v", pollErr)
	}
	if costly := status[-202] + status[-422]; status[413] != 48-48/every || costly != 48/every {
		t.Errorf("answers %v: want 413 or 503 (counted as 413) for the %d bodies over the limit, 202 or 422 for the %d costly cards", status, 48-48/every, 48/every)
	}
	if bound := uint64(inFlight+1) * one; peak > bound {
		t.Errorf("peak heap %.1f MiB above the bound of %d costly cards (%.1f MiB)", float64(peak)/(1<<20), inFlight+1, float64(bound)/(1<<20))
	}
	if resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(benchCard(t, 1)))); resp.StatusCode != http.StatusAccepted {
		t.Errorf("a normal card after the flood: %d %s", resp.StatusCode, body)
	}
}

// TestBusy: with one submission in flight (its body still coming) and
// server.max_in_flight 1, the next submission is 503 with Retry-After and
// a problem document; once the first ends, a submission is taken.
func TestBusy(t *testing.T) {
	s := newAPIStackOn(t, nil, 0, false, 0, func(c *APIConfig) { c.MaxInFlight = 1 })
	pr, pw := io.Pipe()
	first := make(chan int, 1)
	go func() {
		req, _ := http.NewRequest("POST", s.srv.URL+"/v1/cards", pr)
		req.Header.Set("Authorization", "Bearer "+secretAll)
		req.Header.Set("Content-Type", "application/yaml")
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			first <- 0
			return
		}
		resp.Body.Close()
		first <- resp.StatusCode
	}()
	pw.Write([]byte("format: matgate.card/1\n"))
	card := string(benchCard(t, 2))
	var resp *http.Response
	var body []byte
	for range 200 { // until the first request holds the gate
		resp, body = s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(card))
		if resp.StatusCode == http.StatusServiceUnavailable {
			break
		}
		time.Sleep(10 * time.Millisecond)
	}
	var p map[string]any
	json.Unmarshal(body, &p)
	if resp.StatusCode != http.StatusServiceUnavailable || resp.Header.Get("Retry-After") != "1" ||
		resp.Header.Get("Content-Type") != "application/problem+json" || !strings.Contains(fmt.Sprint(p["detail"]), "server.max_in_flight") {
		t.Fatalf("second submission while one is in flight: %d Retry-After %q %s", resp.StatusCode, resp.Header.Get("Retry-After"), body)
	}
	pw.Close() // the first body ends: a card of one line, invalid
	if code := <-first; code != http.StatusUnprocessableEntity {
		t.Errorf("the first submission: %d, want 422", code)
	}
	if resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(card)); resp.StatusCode != http.StatusAccepted {
		t.Errorf("after the first ended: %d %s", resp.StatusCode, body)
	}
	if n := testutil.ToFloat64(s.metrics.Refused.WithLabelValues("busy")); n < 1 {
		t.Errorf("refused busy counted %g", n)
	}
}

// TestRateLimit: a token over its rate gets 429 with Retry-After (whole
// seconds until its bucket holds a request again) and a problem document
// naming the setting; another token is not held back.
func TestRateLimit(t *testing.T) {
	// One request every 100 s, two at once: the third is refused whatever
	// the machine's speed.
	s := newAPIStackOn(t, nil, 0, false, 0, func(c *APIConfig) { c.TokenRate, c.TokenBurst = 0.01, 2 })
	path := "/v1/jobs/" + strings.Repeat("cd", 32)
	for i := range 2 {
		if resp, body := s.do(t, "GET", path, secretRead, "", nil); resp.StatusCode != http.StatusNotFound {
			t.Fatalf("request %d within the burst: %d %s", i+1, resp.StatusCode, body)
		}
	}
	resp, body := s.do(t, "GET", path, secretRead, "", nil)
	var p map[string]any
	json.Unmarshal(body, &p)
	secs, _ := strconv.Atoi(resp.Header.Get("Retry-After"))
	if resp.StatusCode != http.StatusTooManyRequests || secs < 90 || secs > 100 ||
		resp.Header.Get("Content-Type") != "application/problem+json" || !strings.Contains(fmt.Sprint(p["detail"]), "server.token_rate") {
		t.Errorf("over the rate: %d Retry-After %q %s", resp.StatusCode, resp.Header.Get("Retry-After"), body)
	}
	if resp, body := s.do(t, "GET", path, secretAll, "", nil); resp.StatusCode != http.StatusNotFound {
		t.Errorf("another token: %d %s", resp.StatusCode, body)
	}
}

// TestBodyDigest: a body sent again is answered from its digest without
// parsing (counted), with the same job; the library rules still hold for
// it: once a higher revision is stored, the old body is refused (409).
func TestBodyDigest(t *testing.T) {
	s := newAPIStack(t, true, 0)
	r2 := benchCard(t, 0) // revision 10
	resp, j := s.submitCard(t, r2)
	if resp.StatusCode != http.StatusAccepted {
		t.Fatalf("first submission: %d", resp.StatusCode)
	}
	resp, again := s.submitCard(t, r2)
	if resp.StatusCode != http.StatusAccepted || again.ID != j.ID || testutil.ToFloat64(s.metrics.Deduplicated) != 1 {
		t.Errorf("the same body while queued: %d %s, deduplicated %g", resp.StatusCode, again.ID, testutil.ToFloat64(s.metrics.Deduplicated))
	}
	s.waitJob(t, j.ID, time.Minute)
	if resp, again = s.submitCard(t, r2); resp.StatusCode != http.StatusSeeOther || again.ID != j.ID || again.Verdict != "" && again.Verdict != "pass" {
		t.Errorf("the same body once done: %d %+v", resp.StatusCode, again)
	}
	if n := testutil.ToFloat64(s.metrics.Deduplicated); n != 2 {
		t.Errorf("deduplicated %g, want 2", n)
	}
	_, j3 := s.submitCard(t, benchCard(t, 1)) // revision 11
	s.waitJob(t, j3.ID, time.Minute)
	if resp, _ := s.submitCard(t, r2); resp.StatusCode != http.StatusConflict {
		t.Errorf("the old revision's body after a newer one is stored: %d, want 409", resp.StatusCode)
	}
}

func (s *apiStack) submitCard(t *testing.T, card []byte) (*http.Response, Job) {
	t.Helper()
	resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(card)))
	var j Job
	json.Unmarshal(body, &j)
	return resp, j
}

// TestSizeRuleInServeAndWorker: serve refuses a card whose canonical form
// is one pair of points over the card limit (422, located at the
// references, though its body is well within the limit) and takes one
// pair fewer (202); the worker decodes that job's task, the canonical card
// at the limit, as the same card.
func TestSizeRuleInServeAndWorker(t *testing.T) {
	s := newAPIStack(t, false, 0)
	size := func(n int) int {
		b, _ := convert.Canonical(prepareTestCard(t, "card.yaml", cardspace.PointsCard(n)))
		return len(b)
	}
	s2, s4 := size(2), size(4)
	under := 2 + 2*((schema.DefaultMaxBytes-s2)/(s4-s2))
	resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(cardspace.PointsCard(under+2))))
	if resp.StatusCode != http.StatusUnprocessableEntity || !strings.Contains(string(body), "/verification/references: the normalized card") {
		t.Errorf("a card normalized just over the limit: %d %.600s", resp.StatusCode, body)
	}
	resp, j := s.submitCard(t, cardspace.PointsCard(under))
	if resp.StatusCode != http.StatusAccepted {
		t.Fatalf("a card normalized just within the limit: %d", resp.StatusCode)
	}
	info, err := s.insp.GetTaskInfo(QueueVerify, j.ID)
	if err != nil {
		t.Fatal(err)
	}
	var p Payload
	if err := json.Unmarshal(info.Payload, &p); err != nil {
		t.Fatal(err)
	}
	c, err := decodeCanonical(p.Card)
	if err != nil || JobID(c.Digest, p.Settings) != j.ID || len(p.Card) > schema.DefaultMaxBytes || len(p.Card) < schema.DefaultMaxBytes-64 {
		t.Errorf("the worker's decoding of the task (%d bytes): %v", len(p.Card), err)
	}
}
