package worker

import (
	"context"
	"net/http"
	"net/http/httptest"
	"strings"
	"sync/atomic"
	"testing"
	"time"
)

// TestClientWaitsOutRateLimit: a 429 is retried after its Retry-After
// however often it comes (the server says when it takes the request), a
// 503 only Unavailable times.
func TestClientWaitsOutRateLimit(t *testing.T) {
	var calls atomic.Int64
	var status atomic.Int64
	status.Store(http.StatusTooManyRequests)
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if calls.Add(1) <= 3 {
			w.Header().Set("Retry-After", "0")
			w.WriteHeader(int(status.Load()))
			return
		}
		w.Write([]byte(`{"id":"` + strings.Repeat("ab", 32) + `","state":"queued","links":{}}`))
	}))
	defer srv.Close()
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	c := &Client{BaseURL: srv.URL, Token: "x", Unavailable: 1}
	if j, err := c.Job(ctx, strings.Repeat("ab", 32)); err != nil || j.State != JobQueued || calls.Load() != 4 {
		t.Errorf("after three 429: %+v %v, %d calls", j, err, calls.Load())
	}
	calls.Store(0)
	status.Store(http.StatusServiceUnavailable)
	if _, err := c.Job(ctx, strings.Repeat("ab", 32)); !IsProblem(err, http.StatusServiceUnavailable) || calls.Load() != 2 {
		t.Errorf("503 with Unavailable 1: %v, %d calls", err, calls.Load())
	}
}
