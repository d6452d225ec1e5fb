package worker

import (
	"context"
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"time"

	"github.com/hibiken/asynq"
	"github.com/redis/go-redis/v9"
)

// RedisCopyTTL is how long the Redis copy of a record (its card and
// summary) stays once its file is durable. What reads the copy is a
// request that looked at the records directory just before the file was
// there (readOutput, hasRecord, the job status): a matter of milliseconds.
// Ten minutes cover that with room, and keep Redis, which runs without
// eviction, from holding records of some hundreds of kB each for days.
const RedisCopyTTL = 10 * time.Minute

// Materializer runs materialize tasks in serve, with concurrency 1: it
// checks a job's record and neutral card as a worker left them in Redis
// (admit), signs the record, stores both in the DirStore and only then
// lets the Redis copy expire. Its Reconcile pass does the same for every
// record that Redis holds and the store does not.
type Materializer struct {
	Redis redis.UniversalClient
	Store *DirStore
	// Key signs every record stored; nil stores records unsigned.
	Key ed25519.PrivateKey
	// Inspector, when set, removes the verification task of a job whose
	// outputs were refused, so that a resubmission runs it again.
	Inspector *asynq.Inspector
	// Observe, when set, is told the verification's duration of each
	// record that became a file (the duration histogram of /metrics).
	Observe func(seconds float64)
	// Log is told every record that could not be stored, with the cause
	// (a full or failing disk, outputs refused); nil discards.
	Log *slog.Logger
}

// ProcessTask materializes one record; every step is idempotent.
func (m *Materializer) ProcessTask(ctx context.Context, t *asynq.Task) error {
	var p materializePayload
	if err := json.Unmarshal(t.Payload(), &p); err != nil || !ValidID(p.ID) {
		return fmt.Errorf("materialize task: bad payload %q: %w", t.Payload(), asynq.SkipRetry)
	}
	err := m.materialize(ctx, p.ID, p.Seconds)
	if errors.Is(err, ErrRefused) {
		// Done: the job's failure is recorded. The task ends without
		// error so that it is not kept, and a new run's materialize task
		// of the same id can be enqueued.
		return nil
	}
	return err
}

func (m *Materializer) log() *slog.Logger {
	if m.Log == nil {
		return slog.New(slog.DiscardHandler)
	}
	return m.Log
}

// materialize stores the outputs of job id from Redis. Errors that a
// retry cannot mend wrap asynq.SkipRetry.
func (m *Materializer) materialize(ctx context.Context, id string, seconds float64) error {
	if m.Store.Has(id) {
		return m.expire(ctx, id)
	}
	vals, err := m.Redis.MGet(ctx, recordKey(id), cardKey(id)).Result()
	if err != nil {
		return fmt.Errorf("materialize %s: %w", id, err)
	}
	rec, ok1 := vals[0].(string)
	card, ok2 := vals[1].(string)
	if !ok1 || !ok2 {
		// Nothing to copy and no file: the outputs were lost from Redis
		// (eviction, a flushed database), or refused. Retrying cannot
		// bring them back.
		return fmt.Errorf("materialize %s: the record is neither in Redis nor in the records directory: %w", id, asynq.SkipRetry)
	}
	a, err := admit(id, []byte(rec), []byte(card), m.Key)
	if errors.Is(err, ErrRefused) {
		return fmt.Errorf("materialize %s: %w", id, m.refuse(ctx, id, err))
	}
	if err != nil {
		return fmt.Errorf("materialize %s: %w", id, err)
	}
	added, err := m.Store.Put(id, a.meta, a.record, []byte(card))
	if err != nil {
		msg := "store: record not stored; it stays in Redis and is stored when the store works again"
		if errors.Is(err, ErrConflict) {
			msg = "store: record not stored: another file of its id exists; not retried"
		}
		retry, _ := asynq.GetRetryCount(ctx)
		m.log().Error(msg, "id", id, "attempt", retry+1, "err", err)
	}
	if errors.Is(err, ErrConflict) {
		return fmt.Errorf("materialize %s: %w: %w", id, err, asynq.SkipRetry)
	}
	if err != nil {
		return fmt.Errorf("materialize %s: %w", id, err)
	}
	if added && m.Observe != nil && seconds > 0 {
		m.Observe(seconds)
	}
	return m.expire(ctx, id)
}

// refuse fails job id for good because its outputs in Redis were refused
// (why): they are moved aside for RefusedTTL, the job's failure says why,
// and its finished verification task is removed so that a resubmission
// runs it again. It returns why, or the Redis error that kept it from
// being recorded (and the refusal is made again at the next attempt).
func (m *Materializer) refuse(ctx context.Context, id string, why error) error {
	m.log().Error("store: refused the outputs of a job; not stored, the job is failed", "id", id, "reason", why)
	pipe := m.Redis.TxPipeline()
	pipe.Rename(ctx, recordKey(id), refusedRecordKey(id))
	pipe.Rename(ctx, cardKey(id), refusedCardKey(id))
	pipe.Del(ctx, summaryKey(id)) // the worker's summary of a record serve refused: job status must not answer from it
	pipe.Expire(ctx, refusedRecordKey(id), RefusedTTL)
	pipe.Expire(ctx, refusedCardKey(id), RefusedTTL)
	pipe.Set(ctx, failureKey(id), failureJSON(FailureRefused, why.Error(), time.Now()), RefusedTTL)
	if _, err := pipe.Exec(ctx); err != nil {
		return fmt.Errorf("recording the refusal (%v): %w", why, err)
	}
	m.removeVerifyTask(ctx, id)
	return why
}

// removeVerifyTask removes the verification task of a job whose outputs
// were refused, so that a resubmission runs it again. A worker that wrote
// the outputs may still be finishing the task (it enqueues the
// materialize task before it returns): an active task is waited for, up
// to activeWait; a task still active then is a genuine run that someone
// raced, and it stays.
func (m *Materializer) removeVerifyTask(ctx context.Context, id string) {
	if m.Inspector == nil {
		return
	}
	deadline := time.Now().Add(activeWait)
	for {
		err := m.Inspector.DeleteTask(QueueVerify, id)
		if err == nil || errors.Is(err, asynq.ErrTaskNotFound) || errors.Is(err, asynq.ErrQueueNotFound) {
			return
		}
		// The task may have left the active state between the two calls
		// (the worker returned): then the next round deletes it.
		if _, ierr := m.Inspector.GetTaskInfo(QueueVerify, id); errors.Is(ierr, asynq.ErrTaskNotFound) {
			return
		} else if ierr != nil || time.Now().After(deadline) {
			m.log().Warn("store: the refused job's verification task stays; a resubmission answers with it", "id", id, "err", err)
			return
		}
		select {
		case <-ctx.Done():
			return
		case <-time.After(20 * time.Millisecond):
		}
	}
}

// activeWait bounds how long serve waits for the verification task of a
// refused job to finish; a worker returns within milliseconds of
// enqueueing the materialize task.
const activeWait = 10 * time.Second

func (m *Materializer) expire(ctx context.Context, id string) error {
	pipe := m.Redis.TxPipeline()
	pipe.Expire(ctx, recordKey(id), RedisCopyTTL)
	pipe.Expire(ctx, cardKey(id), RedisCopyTTL)
	pipe.Expire(ctx, summaryKey(id), RedisCopyTTL)
	if _, err := pipe.Exec(ctx); err != nil {
		return fmt.Errorf("materialize %s: expire the Redis copy: %w", id, err)
	}
	return nil
}
