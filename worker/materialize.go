package worker

import (
	"context"
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
// copies a job's record and neutral card from Redis into the DirStore and
// only then lets the Redis copy expire.
type Materializer struct {
	Redis redis.UniversalClient
	Store *DirStore
	// Observe, when set, is told the verification's duration of each
	// record that became a file (the duration histogram of /metrics).
	Observe func(seconds float64)
	// Log is told every record that could not be stored, with the cause
	// (a full or failing disk); nil discards.
	Log *slog.Logger
}

// ProcessTask materializes one record; every step is idempotent.
func (m *Materializer) ProcessTask(ctx context.Context, t *asynq.Task) error {
	var p materializePayload
	if err := json.Unmarshal(t.Payload(), &p); err != nil || !ValidID(p.ID) {
		return fmt.Errorf("materialize task: bad payload %q: %w", t.Payload(), asynq.SkipRetry)
	}
	if m.Store.Has(p.ID) {
		return m.expire(ctx, p.ID)
	}
	vals, err := m.Redis.MGet(ctx, recordKey(p.ID), cardKey(p.ID)).Result()
	if err != nil {
		return fmt.Errorf("materialize %s: %w", p.ID, err)
	}
	rec, ok1 := vals[0].(string)
	card, ok2 := vals[1].(string)
	if !ok1 || !ok2 {
		// Nothing to copy and no file: the outputs were lost from Redis
		// (eviction, a flushed database). Retrying cannot bring them back.
		return fmt.Errorf("materialize %s: the record is neither in Redis nor in the records directory: %w", p.ID, asynq.SkipRetry)
	}
	meta := p.Meta
	if meta.CardID == "" || meta.Digest == "" || meta.Checks == 0 { // none, or from a worker before the ledger kept digests or counts
		if meta, err = metaFromJSON([]byte(rec)); err != nil {
			return fmt.Errorf("materialize %s: %w: %w", p.ID, err, asynq.SkipRetry)
		}
	}
	added, err := m.Store.Put(p.ID, meta, []byte(rec), []byte(card))
	if err != nil && m.Log != nil {
		msg := "store: record not stored; it stays in Redis and the task is retried"
		if errors.Is(err, ErrConflict) {
			msg = "store: record not stored: another file of its id exists; not retried"
		}
		retry, _ := asynq.GetRetryCount(ctx)
		m.Log.Error(msg, "id", p.ID, "attempt", retry+1, "err", err)
	}
	if errors.Is(err, ErrConflict) {
		return fmt.Errorf("materialize %s: %w: %w", p.ID, err, asynq.SkipRetry)
	}
	if err != nil {
		return fmt.Errorf("materialize %s: %w", p.ID, err)
	}
	if added && m.Observe != nil && p.Seconds > 0 {
		m.Observe(p.Seconds)
	}
	return m.expire(ctx, p.ID)
}

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
