package worker

import (
	"fmt"
	"io"
	"math"
	"net/http"
	"strconv"
	"time"

	"golang.org/x/time/rate"

	"matgate/schema"
)

// Defaults of the request limits of serve (APIConfig, server.* in the
// configuration).
const (
	// DefaultMaxInFlight is how many card submissions and report
	// renderings serve handles at once. A demo card costs little, but the
	// costliest card within the size rule (1 MiB of reference points)
	// takes about 100 MiB of heap and 1.6 s of CPU to decode, validate
	// and normalize (TestConcurrentBodiesBounded, MATGATE_LONG_TESTS=1),
	// so four bound serve's memory to some 400 MiB whatever clients send,
	// keep two cores busy, and a CI client retries the 503.
	DefaultMaxInFlight = 4
	// DefaultTokenRate and DefaultTokenBurst are each token's sustained
	// requests a second and the requests it may make at once above that:
	// a CI job that submits a library of a hundred cards at once and then
	// polls their jobs stays within them; a runaway loop does not.
	DefaultTokenRate  = 20.0
	DefaultTokenBurst = 100
)

// gate admits at most n requests at once; a request beyond waits for no
// one and is answered 503 with Retry-After, so that the memory of serve is
// bounded by n bodies whatever the clients send.
type gate chan struct{}

func (g gate) enter() bool {
	select {
	case g <- struct{}{}:
		return true
	default:
		return false
	}
}

func (g gate) leave() { <-g }

// bounded runs h inside the in-flight gate.
func (a *API) bounded(h http.HandlerFunc) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		if !a.inFlight.enter() {
			if a.c.Metrics != nil {
				a.c.Metrics.Refused.WithLabelValues("busy").Inc()
			}
			// Read the body (to nothing, at most a card's limit) before
			// answering: a server that answers without reading closes the
			// connection under a client still sending, which then sees a
			// reset instead of the 503 and its Retry-After.
			io.Copy(io.Discard, http.MaxBytesReader(w, r.Body, schema.DefaultMaxBytes))
			w.Header().Set("Retry-After", "1")
			problem(w, r, http.StatusServiceUnavailable, "busy",
				fmt.Sprintf("serve is handling %d submissions or reports, its limit (server.max_in_flight); nothing was accepted, try again", cap(a.inFlight)), nil)
			return
		}
		defer a.inFlight.leave()
		h(w, r)
	}
}

// rateLimits are the token buckets of the configured tokens, by name; nil
// when no rate is configured. The set is fixed at NewAPI, so it never
// grows with what clients send.
type rateLimits map[string]*rate.Limiter

func newRateLimits(ts []Token, perSecond float64, burst int) rateLimits {
	if perSecond <= 0 {
		return nil
	}
	burst = max(burst, 1)
	l := rateLimits{}
	for _, t := range ts {
		l[t.Name] = rate.NewLimiter(rate.Limit(perSecond), burst)
	}
	return l
}

// admit takes one request from the token's bucket, or answers 429 with
// the seconds until the bucket holds one again (Retry-After, RFC 9110,
// sec. 10.2.3; 429 is RFC 6585, sec. 4) and reports false.
func (l rateLimits) admit(w http.ResponseWriter, r *http.Request, token string, m *Metrics) bool {
	lim := l[token]
	if lim == nil {
		return true
	}
	res := lim.Reserve()
	d := res.Delay()
	if d == 0 {
		return true
	}
	res.Cancel() // not taken: the request is refused
	if m != nil {
		m.Refused.WithLabelValues("rate").Inc()
	}
	secs := max(1, int(math.Ceil(min(d, time.Hour).Seconds())))
	w.Header().Set("Retry-After", strconv.Itoa(secs))
	problem(w, r, http.StatusTooManyRequests, "rate limit",
		fmt.Sprintf("token %q made more than %g requests a second (burst %d; server.token_rate, server.token_burst); try again in %d s", token, float64(lim.Limit()), lim.Burst(), secs),
		map[string]any{"retry_after_seconds": secs})
	return false
}
