package worker

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"time"

	"github.com/hibiken/asynq"

	"matgate/convert"
	"matgate/schema"
)

// Task types and queues. The verify queue is served by every worker; the
// materialize queue only by serve, the one writer of the records directory.
const (
	TypeVerify      = "matgate:verify"
	TypeMaterialize = "matgate:materialize"

	QueueVerify      = "verify"
	QueueMaterialize = "materialize"
)

// Retry policy. A verification is deterministic, so a retry only helps with
// Redis or disk trouble: a few attempts with a bounded, jittered delay
// (1 s, 2 s, 4 s, ... at most a minute, times a factor in [0.5, 1)) cover a
// Redis restart or a full disk being cleared without keeping a task alive
// for days (asynq's default is 25 retries over about 20 days).
const (
	VerifyMaxRetry      = 5
	MaterializeMaxRetry = 10
	maxRetryDelay       = time.Minute
)

// TaskRetention is how long a finished verification task stays in Redis
// (asynq keeps it whole, payload and all: a canonical card of up to 1 MiB).
// What reads a finished task is GET /v1/jobs/{id}, for the attempts and
// the last error, while a client polls the job; the verdict, and whether
// a resubmission is the same job, come from the record and its summary,
// which do not expire. An hour covers a polling client (matgate submit
// waits 10 minutes by default) and keeps Redis from holding a day of
// payloads that nothing reads.
const TaskRetention = time.Hour

// RetryDelay is the asynq RetryDelayFunc of both task types.
func RetryDelay(n int, _ error, _ *asynq.Task) time.Duration {
	d := time.Duration(math.Min(float64(time.Second)*math.Pow(2, float64(n)), float64(maxRetryDelay)))
	return time.Duration(float64(d) * (0.5 + 0.5*rand.Float64()))
}

// Settings are what changes a verification's outcome besides the card: the
// tool that runs it. A new tool version is a new job, so an upgrade
// re-verifies a card instead of returning the old version's record.
type Settings struct {
	ToolVersion string `json:"tool_version"`
}

// Payload is the verification task's payload.
type Payload struct {
	Card     json.RawMessage `json:"card"` // canonical card (convert.Canonical)
	Settings Settings        `json:"settings"`
}

// JobID is the task id of a verification, and the id of its record: the
// hex sha256 of the card digest and the settings, so a resubmission of the
// same card with the same settings is the same job.
func JobID(cardDigest string, s Settings) string {
	b, _ := json.Marshal(struct {
		Card     string   `json:"card"`
		Settings Settings `json:"settings"`
	}{cardDigest, s}) // a struct of strings always marshals
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

var idPattern = regexp.MustCompile(`^[0-9a-f]{64}$`)

// ValidID reports whether id has the form of a job and record id. Every id
// from outside (a URL, a task) is checked before it names a key or a file.
func ValidID(id string) bool { return idPattern.MatchString(id) }

// NewVerifyTask returns the verification task of a canonical card (as
// convert.Prepare returns it) under settings s, and its id. timeout is
// asynq's own Timeout; it must exceed the handler's verification budget
// (see Handler.Budget), and asynq keeps it in whole seconds.
func NewVerifyTask(c *schema.Card, s Settings, timeout time.Duration) (*asynq.Task, string, error) {
	canon, err := convert.Canonical(c)
	if err != nil {
		return nil, "", fmt.Errorf("canonical form of %s: %w", c.ID, err)
	}
	b, err := json.Marshal(Payload{Card: canon, Settings: s})
	if err != nil {
		return nil, "", err
	}
	id := JobID(c.Digest, s)
	return asynq.NewTask(TypeVerify, b,
		asynq.TaskID(id),
		asynq.Queue(QueueVerify),
		asynq.MaxRetry(VerifyMaxRetry),
		asynq.Timeout(wholeSeconds(timeout)),
		asynq.Retention(TaskRetention),
	), id, nil
}

// wholeSeconds rounds d up to whole seconds, at least one: asynq stores a
// Timeout in seconds and turns anything below one second into its
// 30-minute default.
func wholeSeconds(d time.Duration) time.Duration {
	s := math.Ceil(d.Seconds())
	if s < 1 {
		s = 1
	}
	return time.Duration(s) * time.Second
}

// TaskTimeout is the asynq Timeout for a verification budget: the budget
// plus a margin for decoding, the Redis write and the materialize enqueue,
// so that the handler's own budget always expires first and its SkipRetry
// is honoured.
func TaskTimeout(budget time.Duration) time.Duration {
	return wholeSeconds(budget + 10*time.Second)
}

// materializePayload names the record to materialize and carries the
// verification's duration for the metrics of serve. The record's ledger
// fields are read from the record, which serve checks (admit), not taken
// from the payload.
type materializePayload struct {
	ID      string  `json:"id"`
	Seconds float64 `json:"seconds"`
}

func newMaterializeTask(id string, seconds float64) *asynq.Task {
	b, _ := json.Marshal(materializePayload{ID: id, Seconds: seconds}) // a string and a finite float
	return asynq.NewTask(TypeMaterialize, b,
		asynq.TaskID("m-"+id),
		asynq.Queue(QueueMaterialize),
		asynq.MaxRetry(MaterializeMaxRetry),
		asynq.Timeout(time.Minute),
	)
}

// decodeCanonical decodes a task's canonical card through the same decoder,
// plausibility checks and normalization as a submitted file (normalizing a
// canonical card changes nothing), so the worker verifies exactly the card
// that matgate verify would.
func decodeCanonical(b []byte) (*schema.Card, error) {
	doc, err := schema.Decode("task", b, nil)
	if err != nil {
		return nil, err
	}
	c, ds := convert.Prepare(doc, nil)
	if c == nil {
		return nil, ds
	}
	return c, nil
}

// ErrBudget is returned (wrapped, with asynq.SkipRetry) when a verification
// runs past the handler's budget.
var ErrBudget = errors.New("verification budget exceeded")
