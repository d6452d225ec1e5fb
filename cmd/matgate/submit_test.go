package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"matgate/checks"
	"matgate/worker"
)

// TestSubmitTrustsNothing runs submit against a fake server that answers
// one card with a record whose card id is a path out of --out (its digest
// recomputed, so the digest alone does not catch it), another with the
// genuine record of a different card, a third with its genuine record and
// an edited neutral card. All three are refused, nothing is written for
// them, nothing at all outside --out, and submit exits 3; the fourth
// card's genuine outputs are taken, so the checks do not refuse
// everything.
func TestSubmitTrustsNothing(t *testing.T) {
	cards := map[string]string{ // file -> what the fake server answers
		"steel-prager.json": "escape",
		"al-bilinear.yaml":  "foreign",
		"al-other.yaml":     "edited neutral card",
		"ss-chaboche.yaml":  "genuine",
	}
	src := t.TempDir()
	for _, f := range []string{"steel-prager.json", "al-bilinear.yaml", "ss-chaboche.yaml"} {
		b, err := os.ReadFile(filepath.Join("../../testdata/cards", f))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(src, f), b, 0o644)
		if f == "al-bilinear.yaml" {
			os.WriteFile(filepath.Join(src, "al-other.yaml"), []byte(strings.Replace(string(b), "id: demo-canopy-aluminium\n", "id: demo-canopy-aluminium-other\n", 1)), 0o644)
		}
	}
	e := &env{stdin: strings.NewReader(""), stdout: io.Discard, stderr: io.Discard}
	outputs := map[string]*worker.Outputs{}
	for f := range cards {
		l := loadCard(e, filepath.Join(src, f))
		if !l.valid() {
			t.Fatalf("%s: %v", f, l.diags)
		}
		o, err := worker.Verify(context.Background(), l.card, checks.Tool{Version: "fake"}, time.Date(2026, 3, 4, 5, 6, 7, 0, time.UTC))
		if err != nil {
			t.Fatal(err)
		}
		outputs[f] = o
	}
	// What the fake server answers for each card id: the record (for the
	// escape, with a recomputed digest) and the neutral card.
	answers := map[string][2][]byte{}
	for f, kind := range cards {
		o := outputs[f]
		switch kind {
		case "escape":
			r := *o.Record
			r.Card.ID = "../../escaped"
			d, err := r.ComputeDigest()
			if err != nil {
				t.Fatal(err)
			}
			r.Digest = d
			o = &worker.Outputs{Record: &r, Card: o.Card}
		case "foreign":
			o = outputs["steel-prager.json"]
		case "edited neutral card":
			o = &worker.Outputs{Record: o.Record, Card: []byte(strings.Replace(string(o.Card), `"poisson_ratio": 0.33`, `"poisson_ratio": 0.23`, 1))}
			if bytes.Equal(o.Card, outputs[f].Card) {
				t.Fatal("the neutral card was not edited")
			}
		}
		rec, err := worker.RecordJSON(o.Record)
		if err != nil {
			t.Fatal(err)
		}
		answers[outputs[f].Record.Card.ID] = [2][]byte{rec, o.Card}
	}
	// The fake server names each job by the sha256 of the body it was sent
	// and knows which card a body is by the card id in it.
	var mu sync.Mutex
	jobs := map[string][2][]byte{}
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		mu.Lock()
		defer mu.Unlock()
		switch {
		case r.Method == http.MethodPost && r.URL.Path == "/v1/cards":
			body, _ := io.ReadAll(r.Body)
			sum := sha256.Sum256(body)
			id := hex.EncodeToString(sum[:])
			for cardID, a := range answers {
				if strings.Contains(string(body), `"`+cardID+`"`) || strings.Contains(string(body), "id: "+cardID+"\n") {
					jobs[id] = a
				}
			}
			w.WriteHeader(http.StatusAccepted)
			json.NewEncoder(w).Encode(worker.Job{ID: id, State: worker.JobQueued})
		case r.URL.Path == "/v1/records": // no earlier revisions to compare with
			json.NewEncoder(w).Encode(worker.Listing{Records: []worker.Summary{}})
		case strings.HasPrefix(r.URL.Path, "/v1/jobs/"):
			id := strings.TrimPrefix(r.URL.Path, "/v1/jobs/")
			json.NewEncoder(w).Encode(worker.Job{ID: id, State: worker.JobDone, Stored: true})
		case strings.HasPrefix(r.URL.Path, "/v1/records/"):
			id, card := strings.CutSuffix(strings.TrimPrefix(r.URL.Path, "/v1/records/"), "/card")
			j, ok := jobs[id]
			switch {
			case !ok:
				http.NotFound(w, r)
			case card:
				w.Write(j[1])
			default:
				w.Write(j[0])
			}
		default:
			http.NotFound(w, r)
		}
	}))
	defer srv.Close()

	dir := t.TempDir()
	out := filepath.Join(dir, "a", "b", "out")
	t.Setenv("MATGATE_TOKEN", "mgt_fake")
	code, stdout, stderr := matgate(t, "", "submit", "--server", srv.URL, "--out", out, "--timeout", "1m",
		src)
	if code != exitInternal {
		t.Errorf("exit %d, want %d\n%s%s", code, exitInternal, stdout, stderr)
	}
	for _, want := range []string{`of card "../../escaped" r4`, `of card "demo-canopy-steel" r4`, "not the canonical form of the card submit sent", "1 passed, 0 failed, 0 invalid, 3 error(s)"} {
		if !strings.Contains(stdout, want) {
			t.Errorf("submit's output does not say %q:\n%s", want, stdout)
		}
	}
	var files []string
	filepath.Walk(dir, func(p string, info os.FileInfo, err error) error {
		if err == nil && !info.IsDir() {
			rel, _ := filepath.Rel(dir, p)
			files = append(files, rel)
		}
		return nil
	})
	want := []string{"a/b/out/demo-canopy-stainless-r1.card.json", "a/b/out/demo-canopy-stainless-r1.record.json"}
	if strings.Join(files, " ") != strings.Join(want, " ") {
		t.Errorf("files written: %v, want only %v", files, want)
	}
}

// TestPlainRemote: plain http is warned about unless the host is this
// machine's loopback; anything but http(s) is refused.
func TestPlainRemote(t *testing.T) {
	tests := []struct {
		url   string
		plain bool
		err   bool
	}{
		{"http://127.0.0.1:8080", false, false},
		{"http://127.8.9.10:8080", false, false},
		{"http://localhost:8080", false, false},
		{"http://[::1]:8080", false, false},
		{"https://gate.example.org", false, false},
		{"http://gate.example.org", true, false},
		{"http://10.1.2.3:8080", true, false},
		{"ftp://gate.example.org", false, true},
		{"gate.example.org:8080", false, true},
	}
	for _, tc := range tests {
		plain, err := plainRemote(tc.url)
		if plain != tc.plain || (err != nil) != tc.err {
			t.Errorf("%s: plain %v, err %v; want plain %v, error %v", tc.url, plain, err, tc.plain, tc.err)
		}
	}
	t.Setenv("MATGATE_TOKEN", "mgt_fake")
	// 192.0.2.0/24 is TEST-NET-1 (RFC 5737): nothing answers there; the
	// short timeout ends the wait.
	_, _, stderr := matgate(t, "", "submit", "--server", "http://192.0.2.1:9", "--out", t.TempDir(), "--timeout", "1ms", "../../testdata/cards/steel-prager.json")
	if !strings.Contains(stderr, "warning: --server http://192.0.2.1:9 is plain http") {
		t.Errorf("no warning for plain http to another machine:\n%s", stderr)
	}
}
