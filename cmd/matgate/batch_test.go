package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strconv"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"matgate/worker/cardspace"
)

// TestInOrderBounded: with the first item slow, the later ones finish and
// wait; no more than 2 jobs + 2 results are ever held (the streaming
// bound of inOrder's doc), and they come out in input order.
func TestInOrderBounded(t *testing.T) {
	const n, jobs = 200, 4
	var held, most atomic.Int64
	var got []int
	err := inOrder(context.Background(), n, jobs, func(i int) int {
		if i == 0 {
			time.Sleep(100 * time.Millisecond) // the others run ahead meanwhile; not a timing assertion
		}
		h := held.Add(1)
		for m := most.Load(); h > m && !most.CompareAndSwap(m, h); m = most.Load() {
		}
		return i
	}, func(i, r int) error {
		held.Add(-1)
		if r != i {
			return fmt.Errorf("result %d handed over as item %d", r, i)
		}
		got = append(got, i)
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != n || got[n-1] != n-1 {
		t.Errorf("%d results, last %v", len(got), got[len(got)-1])
	}
	if m := most.Load(); m > 2*jobs+2 {
		t.Errorf("%d results held at once, want at most %d", m, 2*jobs+2)
	}
}

// TestInOrderStops: an error from emit stops the batch and comes back; a
// cancelled context stops it before the next item starts.
func TestInOrderStops(t *testing.T) {
	const n, jobs = 1000, 2
	var started atomic.Int64
	stop := errors.New("stop")
	err := inOrder(context.Background(), n, jobs, func(i int) int { started.Add(1); return i },
		func(i, _ int) error {
			if i == 5 {
				return stop
			}
			return nil
		})
	if !errors.Is(err, stop) || started.Load() > 5+2*jobs+2 {
		t.Errorf("emit error: %v after %d of %d items started", err, started.Load(), n)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	started.Store(0)
	err = inOrder(ctx, n, jobs, func(i int) int { started.Add(1); return i }, func(int, int) error { return nil })
	if !errors.Is(err, context.Canceled) || started.Load() != 0 {
		t.Errorf("cancelled: %v after %d items", err, started.Load())
	}
}

// BenchmarkCheckFolder is matgate check on a folder of 1,000 random
// plausible cards (worker/cardspace, seed 1), at 1 and 2 jobs; it reports
// cards/s of wall time and the CPU time (user and system, of the whole
// process) per card, which the load of a shared machine changes less.
//
//	go test -run '^$' -bench CheckFolder -benchtime 3x -count 6 ./cmd/matgate
func BenchmarkCheckFolder(b *testing.B) {
	const n = 1000
	dir := b.TempDir()
	for i := range n {
		writeFile(b, dir, fmt.Sprintf("%04d.yaml", i), cardspace.Card(1, i))
	}
	for _, jobs := range []int{1, 2} {
		b.Run("jobs="+strconv.Itoa(jobs), func(b *testing.B) {
			cpu0 := cpuTime(b)
			start := time.Now()
			for b.Loop() {
				code := run(context.Background(), []string{"check", "--jobs", strconv.Itoa(jobs), dir}, nil, io.Discard, io.Discard)
				if code != exitPass {
					b.Fatalf("exit %d", code)
				}
			}
			b.ReportMetric(float64(n*b.N)/time.Since(start).Seconds(), "cards/s")
			b.ReportMetric((cpuTime(b)-cpu0).Seconds()*1e3/float64(n*b.N), "cpu-ms/card")
		})
	}
}

// cpuTime is the user and system CPU time of this process so far.
func cpuTime(b *testing.B) time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
