package main

import (
	"context"
	"fmt"
	"runtime"

	"github.com/sourcegraph/conc/stream"
)

// defaultJobs is the default of --jobs: every core the process may use.
func defaultJobs() int { return runtime.GOMAXPROCS(0) }

// checkJobs is the usage check of a --jobs value.
func checkJobs(jobs int) error {
	if jobs < 1 {
		return &usageError{fmt.Errorf("--jobs %d: want 1 or more", jobs)}
	}
	return nil
}

// inOrder runs work(i) for i = 0, ..., n-1 on up to jobs goroutines and
// hands each result to emit in the order of i, from one goroutine, as soon
// as it and every result before it are done: the output of a batch is the
// same whatever jobs is, and it streams. conc's stream queues at most
// jobs+1 finished results behind a slow one and blocks the submission
// beyond that, so at most about 2 jobs + 2 results exist at a time.
//
// When emit returns an error or ctx ends, no further work starts (work
// already running finishes, its results are dropped) and inOrder returns
// that error, or ctx.Err() when ctx ended before every item started.
func inOrder[T any](ctx context.Context, n, jobs int, work func(i int) T, emit func(i int, r T) error) error {
	s := stream.New().WithMaxGoroutines(jobs)
	stop := make(chan struct{})
	var emitErr error // touched by the callbacks only (one goroutine), and read after Wait
	var ctxErr error
submit:
	for i := range n {
		select {
		case <-stop:
			break submit
		case <-ctx.Done():
			ctxErr = ctx.Err()
			break submit
		default:
		}
		s.Go(func() stream.Callback {
			select {
			case <-stop:
				return nil
			default:
			}
			r := work(i)
			return func() {
				if emitErr != nil {
					return
				}
				if err := emit(i, r); err != nil {
					emitErr = err
					close(stop)
				}
			}
		})
	}
	s.Wait()
	if emitErr != nil {
		return emitErr
	}
	return ctxErr
}
