package worker

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"github.com/hibiken/asynq"
	"github.com/redis/go-redis/v9"

	"matgate/checks"
	"matgate/schema"
)

// Redis keys of the outputs of a job, until serve has made them files.
func recordKey(id string) string { return "matgate:record:" + id }
func cardKey(id string) string   { return "matgate:card:" + id }

// putOutputs writes a record, its neutral card and its summary (KEYS[4])
// in one step, only when no record of that id exists: a retried or
// concurrent run of the same job leaves the first record in place. It
// drops the job's refusal (KEYS[3]), if serve refused an earlier record of
// it. It returns 1 when it wrote, 0 when the record was there.
var putOutputs = redis.NewScript(`
if redis.call('EXISTS', KEYS[1]) == 1 then return 0 end
redis.call('SET', KEYS[1], ARGV[1])
redis.call('SET', KEYS[2], ARGV[2])
redis.call('DEL', KEYS[3])
redis.call('SET', KEYS[4], ARGV[3])
return 1
`)

// budgetMargin is kept between the end of the verification budget and
// asynq's deadline for the Redis write and the enqueue that follow.
const budgetMargin = 5 * time.Second

// DefaultBudget is the verification budget when none is configured: the
// demo cards take well under a second on one core.
const DefaultBudget = 2 * time.Minute

// Handler runs verification tasks. Its zero value is not usable: set
// Redis, Queue and Tool.
type Handler struct {
	Redis redis.UniversalClient
	Queue *asynq.Client // enqueues the materialize task
	Tool  checks.Tool
	// Budget is the time one verification may take; zero means
	// DefaultBudget. It must be shorter than the task's asynq Timeout
	// (TaskTimeout(Budget) is), or asynq would retry a task whose
	// SkipRetry it ignores.
	Budget time.Duration
	// Now stamps records; nil means time.Now.
	Now func() time.Time

	verify func(context.Context, *schema.Card, checks.Tool, time.Time) (*Outputs, error) // tests; nil: Verify
}

// ProcessTask runs one verification task, idempotently, since asynq
// delivers at least once:
//
//  1. a record for this job in Redis: go to 4;
//  2. count the run (a poison card is refused: see PoisonLimit), decode
//     the canonical card and run Verify under the budget;
//  3. write the record and the neutral card create-if-absent;
//  4. enqueue the materialize task (a task-id conflict is success);
//  5. return nil.
//
// A failed verification is a successful task with verdict fail. An invalid
// payload, a card that does not decode, an integrator failure or a budget
// overrun wrap asynq.SkipRetry: running again gives the same answer. Redis
// errors are returned as they are and retried.
func (h *Handler) ProcessTask(ctx context.Context, t *asynq.Task) error {
	var p Payload
	if err := json.Unmarshal(t.Payload(), &p); err != nil {
		return fmt.Errorf("verify task: payload: %v: %w", err, asynq.SkipRetry)
	}
	c, err := decodeCanonical(p.Card)
	if err != nil {
		return fmt.Errorf("verify task: card: %v: %w", err, asynq.SkipRetry)
	}
	id := JobID(c.Digest, p.Settings)
	if tid, ok := asynq.GetTaskID(ctx); ok && tid != id {
		return fmt.Errorf("verify task %s: payload is job %s: %w", tid, id, asynq.SkipRetry)
	}
	n, err := h.Redis.Exists(ctx, recordKey(id)).Result()
	if err != nil {
		return fmt.Errorf("verify task %s: %w", id, err)
	}
	var seconds float64
	if n == 0 {
		budget := h.Budget
		if budget <= 0 {
			budget = DefaultBudget
		}
		// The task's asynq Timeout was set by serve from its own budget;
		// end first, so that the SkipRetry below is honoured.
		if dl, ok := ctx.Deadline(); ok {
			if rem := time.Until(dl) - budgetMargin; rem < budget {
				budget = max(rem, time.Millisecond)
			}
		}
		now := time.Now
		if h.Now != nil {
			now = h.Now
		}
		verify := Verify
		if h.verify != nil {
			verify = h.verify
		}
		done, err := startRun(ctx, h.Redis, id, now())
		if errors.Is(err, ErrPoison) {
			return fmt.Errorf("verify task %s: %w: %w", id, err, asynq.SkipRetry)
		}
		if err != nil {
			return fmt.Errorf("verify task %s: %w", id, err)
		}
		vctx, cancel := context.WithTimeout(ctx, budget)
		start := time.Now()
		out, err := verify(vctx, c, h.Tool, now().UTC())
		seconds = time.Since(start).Seconds()
		cancel()
		done() // not reached when the run takes the worker down
		switch {
		case err != nil && ctx.Err() != nil:
			return fmt.Errorf("verify task %s: %w", id, ctx.Err()) // shutdown or asynq's timeout: asynq requeues
		case err != nil && errors.Is(vctx.Err(), context.DeadlineExceeded):
			// Only a deadline that fired is an overrun: after cancel()
			// vctx.Err() is never nil, whatever the cause of err.
			return fmt.Errorf("verify task %s: %w after %v: %w", id, ErrBudget, budget, asynq.SkipRetry)
		case err != nil:
			return fmt.Errorf("verify task %s: %w: %w", id, err, asynq.SkipRetry)
		}
		if err := putOutputs.Run(ctx, h.Redis, []string{recordKey(id), cardKey(id), failureKey(id), summaryKey(id)}, out.RecordJSON, out.Card, summaryJSON(SummaryOf(id, MetaOf(out.Record)))).Err(); err != nil {
			return fmt.Errorf("verify task %s: write outputs: %w", id, err)
		}
	}
	_, err = h.Queue.EnqueueContext(ctx, newMaterializeTask(id, seconds))
	if err != nil && !errors.Is(err, asynq.ErrTaskIDConflict) {
		return fmt.Errorf("verify task %s: enqueue materialize: %w", id, err)
	}
	return nil
}

// RecordJSON is the byte form of a record in every store and output: its
// RFC 8785 encoding (compact JSON, the bytes its digest is computed from,
// with the digest and signature) and a newline.
func RecordJSON(r *checks.Record) ([]byte, error) {
	b, err := r.MarshalJSON()
	if err != nil {
		return nil, fmt.Errorf("encode record: %w", err)
	}
	return append(b, '\n'), nil
}
