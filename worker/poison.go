package worker

import (
	"context"
	"errors"
	"fmt"
	"time"

	"github.com/redis/go-redis/v9"
)

// PoisonLimit is how many runs of a card may end without a result (its
// worker died: the kernel's out-of-memory killer, a SIGKILL, a crash)
// before the card is poison: the next delivery fails the job for good
// instead of taking another worker down. asynq would otherwise deliver it
// VerifyMaxRetry+1 times. A run that returns (a result, a failed
// verification, an error, a shutdown that requeues it) does not count.
const PoisonLimit = 3

// ErrPoison is wrapped (with asynq.SkipRetry) by the error of a
// verification task whose card is poison.
var ErrPoison = errors.New("poison card")

// runsKey counts the runs of a job that started and have not returned.
func runsKey(id string) string { return "matgate:runs:" + id }

// startRun counts a run of job id before it starts, and refuses it when
// the job is poison: already marked, or with PoisonLimit runs that never
// returned. done must be called when the run returns, whatever its
// outcome; a worker that dies never calls it, and that is what is
// counted.
func startRun(ctx context.Context, rdb redis.UniversalClient, id string, now time.Time) (done func(), err error) {
	f, err := ReadFailure(ctx, rdb, id)
	if err != nil {
		return nil, err
	}
	if f != nil && f.Kind == FailurePoison {
		return nil, fmt.Errorf("%w: %s", ErrPoison, f.Reason)
	}
	pipe := rdb.TxPipeline()
	n := pipe.Incr(ctx, runsKey(id))
	pipe.Expire(ctx, runsKey(id), TaskRetention)
	if _, err := pipe.Exec(ctx); err != nil {
		return nil, err
	}
	if died := n.Val() - 1; died >= PoisonLimit {
		reason := fmt.Sprintf("%d runs of this card ended without a result (the worker died: out of memory, killed or crashed); it is not run again", died)
		pipe := rdb.TxPipeline()
		pipe.Set(ctx, failureKey(id), failureJSON(FailurePoison, reason, now), 0)
		pipe.Del(ctx, runsKey(id))
		if _, err := pipe.Exec(ctx); err != nil {
			return nil, err
		}
		return nil, fmt.Errorf("%w: %s", ErrPoison, reason)
	}
	return func() {
		// The task's context may be done (shutdown, asynq's timeout):
		// the count must still go down.
		ctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), 5*time.Second)
		defer cancel()
		rdb.Decr(ctx, runsKey(id))
	}, nil
}
