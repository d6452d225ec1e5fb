package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime/metrics"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"matgate/worker/cardspace"
)

var benchCards = flag.Int("verifyfolder.n", 200, "cards in the folder of BenchmarkVerifyFolder")

// BenchmarkVerifyFolder is matgate verify --store on a library folder of
// random plausible cards (worker/cardspace, seed 1; -verifyfolder.n cards,
// 200 by default). It reports cards/s of wall time, the CPU time per card
// and the peak of the live heap during the run (sampled every 2 ms), for:
//
//   - first: an empty store, 1 and 2 jobs;
//   - reused: every card already has its record in the store;
//   - one-changed: one card is a new revision, the rest are reused.
//
// The peak heap of "first" at 200 and at 1,000 cards shows whether memory
// stays flat as the library grows (issue 10).
//
//	go test -run '^$' -bench VerifyFolder -benchtime 1x -count 3 ./cmd/matgate -verifyfolder.n 1000
func BenchmarkVerifyFolder(b *testing.B) {
	n := *benchCards
	lib := b.TempDir()
	for i := range n {
		writeFile(b, lib, fmt.Sprintf("%04d.yaml", i), cardspace.Card(1, i))
	}
	verify := func(b *testing.B, jobs int, store string) {
		b.Helper()
		out := filepath.Join(b.TempDir(), "out")
		args := []string{"verify", "--jobs", strconv.Itoa(jobs), "--out", out, "--store", store, lib}
		if code := run(context.Background(), args, nil, io.Discard, io.Discard); code != exitPass {
			b.Fatalf("exit %d", code)
		}
	}
	measure := func(b *testing.B, jobs int, before func(b *testing.B) string) {
		var peak uint64
		var elapsed time.Duration
		cpu0 := cpuTime(b)
		for b.Loop() {
			b.StopTimer()
			store := before(b)
			b.StartTimer()
			start := time.Now()
			p := heapPeak(func() { verify(b, jobs, store) })
			elapsed += time.Since(start)
			peak = max(peak, p)
		}
		b.ReportMetric(float64(n*b.N)/elapsed.Seconds(), "cards/s")
		b.ReportMetric((cpuTime(b)-cpu0).Seconds()*1e3/float64(n*b.N), "cpu-ms/card")
		b.ReportMetric(float64(peak)/(1<<20), "peak-heap-MB")
	}
	for _, jobs := range []int{1, 2} {
		b.Run("first/jobs="+strconv.Itoa(jobs), func(b *testing.B) {
			measure(b, jobs, func(b *testing.B) string { return filepath.Join(b.TempDir(), "records") })
		})
	}
	// The store of every card, made once and only when a benchmark below
	// runs (its cost is not measured).
	full := filepath.Join(b.TempDir(), "records")
	var fill sync.Once
	filled := func(b *testing.B) string {
		fill.Do(func() { verify(b, 2, full) })
		return full
	}
	b.Run("reused/jobs=2", func(b *testing.B) {
		measure(b, 2, filled)
	})
	// Each iteration bumps the revision of card 0 and raises its yield
	// stress by 1 %, so that exactly one card is verified.
	first := filepath.Join(lib, "0000.yaml")
	b.Run("one-changed/jobs=2", func(b *testing.B) {
		measure(b, 2, func(b *testing.B) string {
			store := filled(b)
			bumpCard(b, first)
			return store
		})
	})
}

// bumpCard raises the revision of the cardspace card in file by one and
// its yield stress by 1 %.
func bumpCard(b *testing.B, file string) {
	b.Helper()
	data, err := os.ReadFile(file)
	if err != nil {
		b.Fatal(err)
	}
	lines := strings.Split(string(data), "\n")
	var rev, ys bool
	for i, l := range lines {
		key, val, ok := strings.Cut(strings.TrimSpace(l), ": ")
		if !ok {
			continue
		}
		indent := l[:len(l)-len(strings.TrimLeft(l, " "))]
		switch key {
		case "revision":
			r, err := strconv.Atoi(val)
			if err != nil {
				b.Fatalf("%s: revision %q", file, val)
			}
			lines[i], rev = fmt.Sprintf("%srevision: %d", indent, r+1), true
		case "yield_stress":
			y, err := strconv.ParseFloat(val, 64)
			if err != nil {
				b.Fatalf("%s: yield_stress %q", file, val)
			}
			lines[i], ys = fmt.Sprintf("%syield_stress: %.17g", indent, y*1.01), true
		}
	}
	if !rev || !ys {
		b.Fatalf("%s: no revision or yield_stress line to change", file)
	}
	if err := os.WriteFile(file, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		b.Fatal(err)
	}
}

// heapPeak runs f and returns the largest live heap (bytes of heap objects,
// runtime/metrics) seen while it ran, sampled every 2 ms.
func heapPeak(f func()) uint64 {
	sample := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	read := func() uint64 { metrics.Read(sample); return sample[0].Value.Uint64() }
	var peak atomic.Uint64
	peak.Store(read())
	done := make(chan struct{})
	stopped := make(chan struct{})
	go func() {
		defer close(stopped)
		t := time.NewTicker(2 * time.Millisecond)
		defer t.Stop()
		for {
			select {
			case <-done:
				return
			case <-t.C:
				if v := read(); v > peak.Load() {
					peak.Store(v)
				}
			}
		}
	}()
	f()
	close(done)
	<-stopped
	return max(peak.Load(), read())
}
