package worker

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"github.com/redis/go-redis/v9"
)

// A job can fail for good for two reasons that asynq's own task state does
// not carry: serve refused the outputs a worker left in Redis (admit), or
// the card is poison (it took its worker down more than PoisonLimit
// times). Either is kept in Redis as a JobFailure under failureKey, and
// GET /v1/jobs/{id} answers "failed" with its reason.
const (
	FailureRefused = "refused" // the outputs in Redis were not the job's: see admit
	FailurePoison  = "poison"  // the card's runs ended without a result too often: see Handler
)

// JobFailure is why a job failed for good.
type JobFailure struct {
	Kind   string `json:"kind"` // FailureRefused or FailurePoison
	Reason string `json:"reason"`
	Time   string `json:"time"` // RFC 3339, UTC
}

func failureKey(id string) string { return "matgate:failed:" + id }

// Refused outputs are moved under these keys, for whoever investigates
// how they got into Redis, for RefusedTTL.
func refusedRecordKey(id string) string { return "matgate:refused:record:" + id }
func refusedCardKey(id string) string   { return "matgate:refused:card:" + id }

// RefusedTTL is how long refused outputs and the refusal are kept.
const RefusedTTL = 7 * 24 * time.Hour

// ReadFailure returns the failure of job id, or nil when it has none.
func ReadFailure(ctx context.Context, rdb redis.UniversalClient, id string) (*JobFailure, error) {
	b, err := rdb.Get(ctx, failureKey(id)).Bytes()
	if errors.Is(err, redis.Nil) {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	var f JobFailure
	if err := json.Unmarshal(b, &f); err != nil {
		return nil, fmt.Errorf("job %s: failure entry: %w", id, err)
	}
	return &f, nil
}

// String words a failure for a job's state.
func (f *JobFailure) String() string { return f.Kind + ": " + f.Reason }

func failureJSON(kind, reason string, now time.Time) string {
	b, _ := json.Marshal(JobFailure{Kind: kind, Reason: reason, Time: now.UTC().Format(time.RFC3339)}) // strings only
	return string(b)
}

// failedJob fills j, a job with no record and no task, from its failure
// (a refused record: serve removed the task so that a resubmission runs
// it again); it reports whether there was one.
func (a *API) failedJob(ctx context.Context, j *Job) (bool, error) {
	f, err := ReadFailure(ctx, a.c.Redis, j.ID)
	if err != nil || f == nil {
		return false, err
	}
	j.State, j.LastError, j.Links = JobFailed, f.String(), jobLinks(j.ID, false)
	return true, nil
}
