package worker

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"strconv"
	"strings"
	"time"
)

// Client is the submit client of the HTTP API.
type Client struct {
	BaseURL string       // e.g. http://127.0.0.1:8080
	Token   string       // bearer token
	HTTP    *http.Client // nil: a client with a 60 s timeout
	// Unavailable is how many times a 503 answer is retried, after the
	// Retry-After it gives (at most 30 s each). A 429 (the token's rate)
	// is always retried after its Retry-After, until ctx ends: the server
	// says when the request will be taken.
	Unavailable int
}

// Problem is an RFC 9457 problem the API answered with.
type Problem struct {
	Status int      `json:"status"`
	Title  string   `json:"title"`
	Detail string   `json:"detail"`
	Errors []string `json:"errors,omitempty"` // located diagnostics of a card
}

func (p *Problem) Error() string {
	s := fmt.Sprintf("%d %s: %s", p.Status, p.Title, p.Detail)
	for _, e := range p.Errors {
		s += "\n  " + e
	}
	return s
}

func (c *Client) http() *http.Client {
	if c.HTTP != nil {
		return c.HTTP
	}
	return &http.Client{
		Timeout:       60 * time.Second,
		CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse },
	}
}

// do sends one request, retrying 503 and 429 answers, and returns the
// status and body of a 2xx or 3xx answer; anything else is a *Problem.
func (c *Client) do(ctx context.Context, method, path, ctype string, body []byte) (int, []byte, error) {
	for attempt := 0; ; {
		req, err := http.NewRequestWithContext(ctx, method, strings.TrimRight(c.BaseURL, "/")+path, bytes.NewReader(body))
		if err != nil {
			return 0, nil, err
		}
		req.Header.Set("Authorization", "Bearer "+c.Token)
		if ctype != "" {
			req.Header.Set("Content-Type", ctype)
		}
		resp, err := c.http().Do(req)
		if err != nil {
			return 0, nil, err
		}
		b, err := io.ReadAll(io.LimitReader(resp.Body, 64<<20))
		resp.Body.Close()
		if err != nil {
			return 0, nil, err
		}
		retry := resp.StatusCode == http.StatusTooManyRequests
		if resp.StatusCode == http.StatusServiceUnavailable && attempt < c.Unavailable {
			attempt++
			retry = true
		}
		if retry {
			wait := 5 * time.Second
			if s, err := strconv.Atoi(resp.Header.Get("Retry-After")); err == nil && s >= 0 {
				wait = min(time.Duration(s)*time.Second, 30*time.Second)
			}
			select {
			case <-time.After(wait):
				continue
			case <-ctx.Done():
				return 0, nil, ctx.Err()
			}
		}
		if resp.StatusCode >= 400 {
			p := &Problem{Status: resp.StatusCode, Title: http.StatusText(resp.StatusCode), Detail: strings.TrimSpace(string(b))}
			if strings.HasPrefix(resp.Header.Get("Content-Type"), "application/problem+json") {
				json.Unmarshal(b, p) // a problem that does not decode keeps the raw body as detail
			}
			return resp.StatusCode, nil, p
		}
		return resp.StatusCode, b, nil
	}
}

// Submit posts a card (mediaType application/yaml or application/json) and
// returns its job: state queued (202) or done (303, verified before).
func (c *Client) Submit(ctx context.Context, card []byte, mediaType string) (Job, error) {
	_, b, err := c.do(ctx, http.MethodPost, "/v1/cards", mediaType, card)
	if err != nil {
		return Job{}, err
	}
	var j Job
	if err := json.Unmarshal(b, &j); err != nil || !ValidID(j.ID) {
		return Job{}, fmt.Errorf("submit: unexpected answer %.200q", b)
	}
	return j, nil
}

// Job returns a job's state.
func (c *Client) Job(ctx context.Context, id string) (Job, error) {
	_, b, err := c.do(ctx, http.MethodGet, "/v1/jobs/"+id, "", nil)
	if err != nil {
		return Job{}, err
	}
	var j Job
	if err := json.Unmarshal(b, &j); err != nil {
		return Job{}, fmt.Errorf("job %s: %w", id, err)
	}
	return j, nil
}

// Get returns the body of a GET of path (a record, a card, a report).
func (c *Client) Get(ctx context.Context, path string) ([]byte, error) {
	_, b, err := c.do(ctx, http.MethodGet, path, "", nil)
	return b, err
}

// IsProblem reports whether err is an API answer with one of the statuses.
func IsProblem(err error, status ...int) bool {
	var p *Problem
	if !errors.As(err, &p) {
		return false
	}
	for _, s := range status {
		if p.Status == s {
			return true
		}
	}
	return len(status) == 0
}

// Records returns the summaries of every stored record of card id, oldest
// first, following the listing's pages.
func (c *Client) Records(ctx context.Context, cardID string) ([]Summary, error) {
	var out []Summary
	next := "/v1/records?" + encodeQuery(map[string][]string{"card": {cardID}, "limit": {"1000"}})
	for next != "" {
		_, b, err := c.do(ctx, http.MethodGet, next, "", nil)
		if err != nil {
			return nil, err
		}
		var l Listing
		if err := json.Unmarshal(b, &l); err != nil {
			return nil, fmt.Errorf("listing of %s: %w", cardID, err)
		}
		out = append(out, l.Records...)
		if l.Next != "" && !strings.HasPrefix(l.Next, "/v1/records?") {
			return nil, fmt.Errorf("listing of %s: unexpected next page %q", cardID, l.Next)
		}
		next = l.Next
	}
	return out, nil
}
