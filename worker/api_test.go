package worker

import (
	"bufio"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"matgate/checks"
	"matgate/worker/redistest"
)

// Test tokens: secrets and their configuration entries.
var (
	secretAll, tokenAll   = NewToken("ci", []string{ScopeSubmit, ScopeRead})
	secretRead, tokenRead = NewToken("auditor", []string{ScopeRead})
	secretSub, tokenSub   = NewToken("bot", []string{ScopeSubmit})
)

type apiStack struct {
	*queueStack
	srv     *httptest.Server
	metrics *Metrics
}

// newAPIStack starts Redis, a worker, serve's materializer and the API on
// a loopback port; readTimeout bounds a request's body.
func newAPIStack(t *testing.T, workers bool, readTimeout time.Duration) *apiStack {
	return newAPIStackOn(t, nil, 0, workers, readTimeout)
}

// newAPIStackOn is newAPIStack on a given Redis (nil: a new one) with an
// idle poll interval (zero: the tests' 20 ms); set, when given, adjusts the
// API's configuration.
func newAPIStackOn(t testing.TB, r *redistest.Server, poll time.Duration, workers bool, readTimeout time.Duration, set ...func(*APIConfig)) *apiStack {
	t.Helper()
	s := &apiStack{queueStack: newQueueStack(t, r, false)}
	s.poll = poll
	s.metrics = NewMetrics(s.insp)
	s.observe = s.metrics.Duration.Observe
	if workers {
		s.startWorker(t)
		s.startMaterializer(t)
	}
	c := APIConfig{
		Redis: s.rdb, Queue: s.client, Inspector: s.insp, Store: s.store, Metrics: s.metrics,
		Tokens: []Token{tokenAll, tokenRead, tokenSub}, Settings: Settings{ToolVersion: testTool.Version},
	}
	for _, f := range set {
		f(&c)
	}
	api, err := NewAPI(c)
	if err != nil {
		t.Fatal(err)
	}
	hs := NewHTTPServer("", api, HTTPTimeouts{Read: readTimeout})
	s.srv = httptest.NewUnstartedServer(hs.Handler)
	s.srv.Config = hs
	s.srv.Start()
	t.Cleanup(s.srv.Close)
	return s
}

func (s *apiStack) do(t *testing.T, method, path, token, ctype string, body io.Reader) (*http.Response, []byte) {
	t.Helper()
	req, err := http.NewRequest(method, s.srv.URL+path, body)
	if err != nil {
		t.Fatal(err)
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	c := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }, Timeout: 30 * time.Second}
	resp, err := c.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp, b
}

func mediaType(file string) string {
	if strings.HasSuffix(file, ".json") {
		return "application/json"
	}
	return "application/yaml"
}

func (s *apiStack) submitFile(t *testing.T, file string) (*http.Response, Job) {
	t.Helper()
	b, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	resp, body := s.do(t, "POST", "/v1/cards", secretAll, mediaType(file), strings.NewReader(string(b)))
	var j Job
	if resp.StatusCode == http.StatusAccepted || resp.StatusCode == http.StatusSeeOther {
		if err := json.Unmarshal(body, &j); err != nil {
			t.Fatalf("%s: %v\n%s", file, err, body)
		}
	}
	return resp, j
}

// waitJob polls a job until it is done or failed.
func (s *apiStack) waitJob(t *testing.T, id string, limit time.Duration) Job {
	t.Helper()
	deadline := time.Now().Add(limit)
	for {
		resp, body := s.do(t, "GET", "/v1/jobs/"+id, secretRead, "", nil)
		var j Job
		json.Unmarshal(body, &j)
		if resp.StatusCode == http.StatusOK && (j.State == JobDone && j.Stored || j.State == JobFailed) {
			return j
		}
		if time.Now().After(deadline) {
			t.Fatalf("job %s not done after %v: %d %s", id, limit, resp.StatusCode, body)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// TestAPIEndToEnd submits the demo cards over HTTP; a worker verifies them
// and the records fetched over HTTP equal the in-process ones apart from
// created and digest. Resubmitting answers 303 to the record.
func TestAPIEndToEnd(t *testing.T) {
	s := newAPIStack(t, true, 0)
	records := map[string][]byte{} // by job id, as served
	for _, f := range demoCards {
		path := filepath.Join("..", "testdata", "cards", f)
		resp, j := s.submitFile(t, path)
		if resp.StatusCode != http.StatusAccepted || resp.Header.Get("Location") != "/v1/jobs/"+j.ID || resp.Header.Get("Retry-After") == "" {
			t.Fatalf("%s: %d, Location %q, Retry-After %q", f, resp.StatusCode, resp.Header.Get("Location"), resp.Header.Get("Retry-After"))
		}
		done := s.waitJob(t, j.ID, time.Minute)
		if done.State != JobDone || done.Verdict != "pass" {
			t.Errorf("%s: job %+v", f, done)
		}
		_, rec := s.do(t, "GET", "/v1/records/"+j.ID, secretRead, "", nil)
		want, err := Verify(context.Background(), loadTestCard(t, path), testTool, time.Now())
		if err != nil {
			t.Fatal(err)
		}
		wantRec, _ := RecordJSON(want.Record)
		if recordWithout(t, rec) != recordWithout(t, wantRec) {
			t.Errorf("%s: record over HTTP differs from the in-process one beyond created and digest", f)
		}
		// The job's status comes from the summary: the record's own counts.
		if total, failed := countChecks(want.Record); done.Checks == nil || done.Checks.Total != total || done.Checks.Failed != failed {
			t.Errorf("%s: job status checks %+v, want %d total, %d failed", f, done.Checks, total, failed)
		}
		records[j.ID] = rec
		if _, card := s.do(t, "GET", "/v1/records/"+j.ID+"/card", secretRead, "", nil); string(card) != string(want.Card) {
			t.Errorf("%s: neutral card over HTTP differs from the in-process one", f)
		}
		resp, html := s.do(t, "GET", "/v1/records/"+j.ID+"/report", secretRead, "", nil)
		if resp.StatusCode != 200 || !strings.Contains(string(html), "<svg") || !strings.HasPrefix(resp.Header.Get("Content-Type"), "text/html") {
			t.Errorf("%s: report %d %q", f, resp.StatusCode, resp.Header.Get("Content-Type"))
		}
		// The record does not hold the card's unit: without ?unit= the
		// report says so and prints MPa; with it, the unit asked for,
		// said to be asked for, not written.
		if !strings.Contains(string(html), "is not in the record") || !strings.Contains(string(html), "stress (MPa)") {
			t.Errorf("%s: report without ?unit= does not print MPa and say the card's unit is unknown", f)
		}
		resp, html = s.do(t, "GET", "/v1/records/"+j.ID+"/report?unit=ksi", secretRead, "", nil)
		if resp.StatusCode != 200 || !strings.Contains(string(html), "as asked for") || !strings.Contains(string(html), "stress (ksi)") || strings.Contains(string(html), "stress (MPa)") {
			t.Errorf("%s: report ?unit=ksi: %d, want stresses in ksi said to be asked for", f, resp.StatusCode)
		}
		if resp, _ := s.do(t, "GET", "/v1/records/"+j.ID+"/report?unit=furlong", secretRead, "", nil); resp.StatusCode != http.StatusBadRequest {
			t.Errorf("%s: report ?unit=furlong: %d, want 400", f, resp.StatusCode)
		}
		resp, again := s.submitFile(t, path)
		if resp.StatusCode != http.StatusSeeOther || resp.Header.Get("Location") != "/v1/records/"+j.ID || again.ID != j.ID {
			t.Errorf("%s: resubmission %d Location %q", f, resp.StatusCode, resp.Header.Get("Location"))
		}
	}
	resp, body := s.do(t, "GET", "/v1/records?limit=2", secretRead, "", nil)
	var l Listing
	json.Unmarshal(body, &l)
	if resp.StatusCode != 200 || l.Total != 3 || len(l.Records) != 2 || l.Next == "" {
		t.Errorf("listing: %d %s", resp.StatusCode, body)
	}
	_, body = s.do(t, "GET", "/v1/records?card=demo-canopy-steel", secretRead, "", nil)
	json.Unmarshal(body, &l)
	if l.Total != 1 || len(l.Records) != 1 || l.Records[0].Card.ID != "demo-canopy-steel" || l.Records[0].Card.Revision != 4 {
		t.Fatalf("filtered listing: %s", body)
	}
	// The listing names the record's digest and its card's digest as the
	// record does ("digest", "card": {"digest"}), not file hashes.
	got := l.Records[0]
	r, err := checks.ParseRecord(records[got.ID])
	if err != nil {
		t.Fatal(err)
	}
	total, failed := countChecks(r)
	want := Summary{ID: got.ID, Verdict: r.Verdict, Created: r.Created, Digest: r.Digest,
		Card: SummaryCard{ID: r.Card.ID, Revision: r.Card.Revision, Digest: r.Card.Digest}, Checks: &CheckCounts{Total: total, Failed: failed}}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("listing entry (-want +got):\n%s", diff)
	}
	if strings.Contains(string(body), "sha256\"") || !strings.Contains(string(body), `"digest":`) {
		t.Errorf("listing names file hashes or no digest: %s", body)
	}
	for _, p := range []string{"/healthz", "/readyz"} {
		if resp, body := s.do(t, "GET", p, "", "", nil); resp.StatusCode != 200 {
			t.Errorf("%s: %d %s", p, resp.StatusCode, body)
		}
	}
	if resp, _ := s.do(t, "GET", "/metrics", "", "", nil); resp.StatusCode != http.StatusUnauthorized {
		t.Errorf("/metrics without a token: %d, want 401", resp.StatusCode)
	}
	_, m := s.do(t, "GET", "/metrics", secretRead, "", nil)
	for _, want := range []string{"matgate_verification_duration_seconds_count 3", `matgate_queue_tasks{queue="verify",state="completed"} 3`,
		`matgate_tasks_processed_total{queue="verify"}`, "matgate_redis_errors_total 0"} {
		if !strings.Contains(string(m), want) {
			t.Errorf("metrics lack %q", want)
		}
	}
}

// TestAPIIdempotent submits one card eight times at once and twice more
// after: one job id, one verification, one record, one ledger line. All
// eight are let in at once (server.max_in_flight 8), so that they race.
func TestAPIIdempotent(t *testing.T) {
	s := newAPIStackOn(t, nil, 0, true, 0, func(c *APIConfig) { c.MaxInFlight = 8 })
	path := "../testdata/cards/ss-chaboche.yaml"
	var wg sync.WaitGroup
	ids := make([]string, 8)
	codes := make([]int, 8)
	for i := range ids {
		wg.Go(func() {
			resp, j := s.submitFile(t, path)
			ids[i], codes[i] = j.ID, resp.StatusCode
		})
	}
	wg.Wait()
	for i := range ids {
		if ids[i] != ids[0] || (codes[i] != http.StatusAccepted && codes[i] != http.StatusSeeOther) {
			t.Errorf("submission %d: %d job %s, want job %s", i, codes[i], ids[i], ids[0])
		}
	}
	s.waitJob(t, ids[0], time.Minute)
	s.submitFile(t, path)
	s.submitFile(t, path)
	time.Sleep(200 * time.Millisecond) // a duplicate task, if any had been queued, would run now
	if n := s.runs.Load(); n != 1 {
		t.Errorf("%d verification tasks ran, want 1", n)
	}
	if rep, _ := VerifyLedger(s.dir, nil); rep.Break != nil || rep.Entries != 1 {
		t.Errorf("ledger: %+v", rep)
	}
}

// TestAPIAuth: no token, a wrong token, a token without the scope: 401 or
// 403, and nothing is enqueued.
func TestAPIAuth(t *testing.T) {
	s := newAPIStack(t, false, 0)
	card, _ := os.ReadFile("../testdata/cards/al-bilinear.yaml")
	tests := []struct {
		name, method, path, token string
		want                      int
	}{
		{"no token", "POST", "/v1/cards", "", 401},
		{"wrong token", "POST", "/v1/cards", secretAll + "x", 401},
		{"hash as token", "POST", "/v1/cards", tokenAll.SHA256, 401},
		{"read-only token submits", "POST", "/v1/cards", secretRead, 403},
		{"submit-only token reads", "GET", "/v1/records", secretSub, 403},
		{"no token reads", "GET", "/v1/records", "", 401},
	}
	for _, tc := range tests {
		resp, body := s.do(t, tc.method, tc.path, tc.token, "application/yaml", strings.NewReader(string(card)))
		if resp.StatusCode != tc.want || resp.Header.Get("Content-Type") != "application/problem+json" {
			t.Errorf("%s: %d %q, want %d problem+json\n%s", tc.name, resp.StatusCode, resp.Header.Get("Content-Type"), tc.want, body)
		}
		if tc.want == 401 && resp.Header.Get("WWW-Authenticate") == "" {
			t.Errorf("%s: 401 without WWW-Authenticate", tc.name)
		}
	}
	info, err := queueInfo(s.insp, QueueVerify)
	if err != nil {
		t.Fatal(err)
	}
	if info.Size != 0 {
		t.Errorf("%d tasks enqueued by refused requests", info.Size)
	}
	// The submit-only token does submit.
	if resp, body := s.do(t, "POST", "/v1/cards", secretSub, "application/yaml", strings.NewReader(string(card))); resp.StatusCode != 202 {
		t.Errorf("submit token: %d %s", resp.StatusCode, body)
	}
	// The scheme name is case-insensitive (RFC 7235, sec. 2.1); another
	// scheme, or none, is no token.
	for _, h := range []struct {
		header string
		want   int
	}{
		{"bearer " + secretRead, 200}, {"BEARER  " + secretRead, 200}, {"Bearer " + secretRead, 200},
		{"Basic " + secretRead, 401}, {"Bearer", 401}, {"Bearer ", 401}, {secretRead, 401},
	} {
		req, _ := http.NewRequest("GET", s.srv.URL+"/v1/records", nil)
		req.Header.Set("Authorization", h.header)
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		if resp.StatusCode != h.want {
			t.Errorf("Authorization %.12q...: %d, want %d", h.header, resp.StatusCode, h.want)
		}
	}
}

// TestAPIMethods: a path of the API under a method it does not take is
// 405 with an Allow header (RFC 9110, sec. 15.5.6), before any token is
// looked at; an unknown path is 404.
func TestAPIMethods(t *testing.T) {
	s := newAPIStack(t, false, 0)
	id := strings.Repeat("ab", 32)
	tests := []struct {
		method, path string
		want         int
		allow        string
	}{
		{"GET", "/v1/cards", 405, "POST"},
		{"PUT", "/v1/cards", 405, "POST"},
		{"DELETE", "/v1/records/" + id, 405, "GET, HEAD"},
		{"POST", "/v1/jobs/" + id, 405, "GET, HEAD"},
		{"POST", "/metrics", 405, "GET, HEAD"},
		{"GET", "/v1/nothing", 404, ""},
		{"POST", "/v1/records/" + id + "/nothing", 404, ""},
	}
	for _, tc := range tests {
		resp, body := s.do(t, tc.method, tc.path, secretAll, "", nil)
		if resp.StatusCode != tc.want || resp.Header.Get("Allow") != tc.allow || resp.Header.Get("Content-Type") != "application/problem+json" {
			t.Errorf("%s %s: %d Allow %q, want %d Allow %q\n%s", tc.method, tc.path, resp.StatusCode, resp.Header.Get("Allow"), tc.want, tc.allow, body)
		}
	}
}

// TestAPIBadInput: each bad request gets its status and a problem that
// says why, and the server keeps serving others, also while a client holds
// a connection with a body it never finishes.
func TestAPIBadInput(t *testing.T) {
	s := newAPIStack(t, false, time.Second)
	card, _ := os.ReadFile("../testdata/cards/al-bilinear.yaml")
	invalid := strings.Replace(strings.Replace(string(card), "youngs_modulus: 10200", "youngs_modulus: -10200", 1), "poisson_ratio: 0.33", "poisson_ratio: 0.7", 1)
	// A reference history too long to replay (12,000 segments of 0.1
	// strain, about 3 million increments at a tenth of the yield strain,
	// above checks.MaxReplayIncrements): the verification refuses it, so serve refuses it at the
	// door, located at the reference, instead of a worker failing it later.
	pts := []string{"[0, 0]"}
	for range 6000 {
		pts = append(pts, "[0.05, 60]", "[-0.05, -60]")
	}
	long := string(card) + "verification:\n  references:\n    - {name: long, kind: measured, points: [" + strings.Join(pts, ", ") + "]}\n"
	tests := []struct {
		name, ctype, body string
		want              int
		detail            []string
	}{
		{"oversized", "application/yaml", string(card) + "# " + strings.Repeat("x", 1<<20) + "\n", 413, []string{"1048576 bytes"}},
		{"wrong content type", "text/plain", string(card), 415, []string{"application/yaml"}},
		{"no content type", "", string(card), 415, nil},
		{"JSON declared, YAML sent", "application/json", string(card), 400, []string{"JSON"}},
		{"malformed YAML", "application/yaml", "format: matgate.card/1\nid: [unclosed\n", 400, []string{"card:"}},
		{"invalid card", "application/yaml", invalid, 422, []string{"/elastic/youngs_modulus", "/elastic/poisson_ratio"}},
		{"reference too long to replay", "application/yaml", long, 422, []string{"/verification/references/0"}},
	}
	for _, tc := range tests {
		resp, body := s.do(t, "POST", "/v1/cards", secretAll, tc.ctype, strings.NewReader(tc.body))
		if resp.StatusCode != tc.want || resp.Header.Get("Content-Type") != "application/problem+json" {
			t.Errorf("%s: %d %q, want %d\n%.400s", tc.name, resp.StatusCode, resp.Header.Get("Content-Type"), tc.want, body)
			continue
		}
		var p map[string]any
		if err := json.Unmarshal(body, &p); err != nil || p["status"] != float64(tc.want) || p["detail"] == "" {
			t.Errorf("%s: not a problem details object: %s", tc.name, body)
		}
		for _, d := range tc.detail {
			if !strings.Contains(string(body), d) {
				t.Errorf("%s: problem does not mention %q:\n%s", tc.name, d, body)
			}
		}
	}
	// A slow client: headers and part of the body, then nothing.
	conn, err := net.Dial("tcp", s.srv.Listener.Addr().String())
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	fmt.Fprintf(conn, "POST /v1/cards HTTP/1.1\r\nHost: x\r\nAuthorization: Bearer %s\r\nContent-Type: application/yaml\r\nContent-Length: %d\r\n\r\n%s", secretAll, len(card), card[:20])
	start := time.Now()
	if resp, _ := s.do(t, "GET", "/healthz", "", "", nil); resp.StatusCode != 200 {
		t.Errorf("healthz while a client stalls: %d", resp.StatusCode)
	}
	if resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(card))); resp.StatusCode != 202 {
		t.Errorf("submission while a client stalls: %d %s", resp.StatusCode, body)
	}
	// The server gives up on the stalled body after its 1 s read timeout:
	// an error answer or a closed connection, well before 10 s.
	conn.SetReadDeadline(time.Now().Add(10 * time.Second))
	line, err := bufio.NewReader(conn).ReadString('\n')
	if took := time.Since(start); took > 5*time.Second {
		t.Errorf("stalled client held for %v (line %q, %v)", took, line, err)
	}
	if strings.HasPrefix(line, "HTTP/1.1 202") {
		t.Errorf("stalled body accepted: %q", line)
	}
}

// TestAPIRedisDown: with Redis gone, a submission is 503 with Retry-After
// and readiness fails; liveness does not.
func TestAPIRedisDown(t *testing.T) {
	s := newAPIStack(t, false, 0)
	// A record already in the records directory stays readable.
	id, rec, card := storeOutputs(t, "steel-prager.json")
	if _, err := putJSON(t, s.store, id, rec, card); err != nil {
		t.Fatal(err)
	}
	s.redis.Stop()
	for _, p := range []string{"/v1/jobs/" + id, "/v1/records/" + id} {
		if resp, body := s.do(t, "GET", p, secretRead, "", nil); resp.StatusCode != 200 {
			t.Errorf("%s with Redis down: %d %s", p, resp.StatusCode, body)
		}
	}
	b, _ := os.ReadFile("../testdata/cards/steel-prager.json")
	if resp, _ := s.do(t, "POST", "/v1/cards", secretAll, "application/json", strings.NewReader(string(b))); resp.StatusCode != http.StatusSeeOther {
		t.Errorf("resubmitting a stored card with Redis down: %d, want 303", resp.StatusCode)
	}
	card, _ = os.ReadFile("../testdata/cards/al-bilinear.yaml")
	resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(card)))
	if resp.StatusCode != 503 || resp.Header.Get("Retry-After") == "" {
		t.Errorf("submit: %d Retry-After %q\n%s", resp.StatusCode, resp.Header.Get("Retry-After"), body)
	}
	if resp, _ := s.do(t, "GET", "/readyz", "", "", nil); resp.StatusCode != 503 {
		t.Errorf("readyz: %d", resp.StatusCode)
	}
	if resp, _ := s.do(t, "GET", "/healthz", "", "", nil); resp.StatusCode != 200 {
		t.Errorf("healthz: %d", resp.StatusCode)
	}
}
