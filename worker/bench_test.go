package worker

import (
	"context"
	"fmt"
	"net/http"
	"os"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"matgate/worker/redistest"
)

// benchCard returns the i-th distinct variant of the aluminium demo card
// (its revision), so that no two submissions are the same job.
func benchCard(b testing.TB, i int) []byte {
	base, err := os.ReadFile("../testdata/cards/al-bilinear.yaml")
	if err != nil || !strings.Contains(string(base), "revision: 2\n") {
		b.Fatalf("the demo card changed: %v", err)
	}
	return []byte(strings.Replace(string(base), "revision: 2\n", fmt.Sprintf("revision: %d\n", 10+i), 1))
}

// reportLatency adds p50 and p99 (ms) of the per-card latencies and the
// throughput in cards/s over the wall time of the run.
func reportLatency(b *testing.B, lat []time.Duration, wall time.Duration) {
	slices.Sort(lat)
	q := func(p float64) float64 { return float64(lat[int(p*float64(len(lat)-1))]) / 1e6 }
	b.ReportMetric(q(0.50), "p50-ms")
	b.ReportMetric(q(0.99), "p99-ms")
	b.ReportMetric(float64(len(lat))/wall.Seconds(), "cards/s")
}

const benchClients = 2 // two cards in flight: worker concurrency 2 on two cores

// BenchmarkInProcess is matgate verify --store on the same cards: decode,
// prepare, Verify and the durable write to a records directory, two cards
// at a time.
func BenchmarkInProcess(b *testing.B) {
	store, err := OpenDirStore(b.TempDir())
	if err != nil {
		b.Fatal(err)
	}
	defer store.Close()
	cards := make([][]byte, b.N)
	for i := range cards {
		cards[i] = benchCard(b, i)
	}
	lat := make([]time.Duration, b.N)
	var next atomic.Int64
	b.ResetTimer()
	start := time.Now()
	var wg sync.WaitGroup
	for range benchClients {
		wg.Go(func() {
			for i := int(next.Add(1) - 1); i < b.N; i = int(next.Add(1) - 1) {
				t0 := time.Now()
				c := prepareTestCard(b, "card.yaml", cards[i])
				out, err := Verify(context.Background(), c, testTool, time.Now())
				if err != nil {
					b.Error(err)
					return
				}
				rec, _ := RecordJSON(out.Record)
				if _, err := store.Put(JobID(c.Digest, Settings{ToolVersion: testTool.Version}), MetaOf(out.Record), rec, out.Card); err != nil {
					b.Error(err)
					return
				}
				lat[i] = time.Since(t0)
			}
		})
	}
	wg.Wait()
	reportLatency(b, lat, time.Since(start))
}

// BenchmarkQueue is the same cards through the service on one machine:
// POST /v1/cards over loopback HTTP, Redis with appendonly yes and
// appendfsync always, a worker of concurrency 2 and serve's materializer,
// two clients each submitting a card and waiting until its record is
// readable (in Redis; GET /v1/records/{id} answers from there) before the
// next. poll is the idle queue poll interval of worker and materializer.
func BenchmarkQueue(b *testing.B) {
	for _, poll := range []time.Duration{DefaultCheckInterval, 2 * time.Millisecond} {
		b.Run(fmt.Sprintf("poll=%v", poll), func(b *testing.B) { benchQueue(b, poll) })
	}
}

func benchQueue(b *testing.B, poll time.Duration) {
	s := newAPIStackOn(b, redistest.Start(b, "--appendonly", "yes", "--appendfsync", "always"), poll, true, 0)
	cards := make([][]byte, b.N)
	for i := range cards {
		cards[i] = benchCard(b, i)
	}
	lat := make([]time.Duration, b.N)
	var next atomic.Int64
	client := &http.Client{Timeout: time.Minute}
	b.ResetTimer()
	start := time.Now()
	var wg sync.WaitGroup
	for range benchClients {
		wg.Go(func() {
			for i := int(next.Add(1) - 1); i < b.N; i = int(next.Add(1) - 1) {
				t0 := time.Now()
				req, _ := http.NewRequest("POST", s.srv.URL+"/v1/cards", strings.NewReader(string(cards[i])))
				req.Header.Set("Authorization", "Bearer "+secretAll)
				req.Header.Set("Content-Type", "application/yaml")
				resp, err := client.Do(req)
				if err != nil || resp.StatusCode != http.StatusAccepted {
					b.Errorf("card %d: %v %v", i, resp, err)
					return
				}
				resp.Body.Close()
				key := recordKey(strings.TrimPrefix(resp.Header.Get("Location"), "/v1/jobs/"))
				for {
					n, err := s.rdb.Exists(context.Background(), key).Result()
					if err != nil {
						b.Error(err)
						return
					}
					if n == 1 {
						break
					}
					time.Sleep(200 * time.Microsecond)
				}
				lat[i] = time.Since(t0)
			}
		})
	}
	wg.Wait()
	reportLatency(b, lat, time.Since(start))
}
