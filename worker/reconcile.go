package worker

import (
	"cmp"
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"

	"github.com/hibiken/asynq"
	"github.com/redis/go-redis/v9"
)

// PendingRecords returns, sorted, the ids of the records that Redis holds
// and the store does not: finished jobs whose materialize task has not run
// yet, is waiting to be retried, or gave up (the store failed longer than
// its retries last). has is the store's Has.
func PendingRecords(ctx context.Context, rdb redis.UniversalClient, has func(id string) bool) ([]string, error) {
	var ids []string
	prefix := recordKey("")
	iter := rdb.Scan(ctx, 0, prefix+"*", 1000).Iterator()
	for iter.Next(ctx) {
		id := strings.TrimPrefix(iter.Val(), prefix)
		if ValidID(id) && !has(id) {
			ids = append(ids, id)
		}
	}
	if err := iter.Err(); err != nil {
		return nil, fmt.Errorf("list the records in Redis: %w", err)
	}
	slices.Sort(ids)
	return slices.Compact(ids), nil // SCAN may return a key twice
}

// ReconcileReport is what one Reconcile pass did.
type ReconcileReport struct {
	Pending []string // records in Redis and not in the store when the pass began
	Stored  int      // of them, stored by the pass (or by the materialize task meanwhile)
	Refused int      // refused (see admit): not stored, their jobs failed
	Err     error    // the first other error, such as the store still failing
}

// Reconcile stores every record that Redis holds and the store does not,
// through the same checks as the materialize task (a record that is
// being materialized meanwhile is stored once: Put is idempotent). serve
// runs it periodically, so that no record is left in Redis when the
// materialize task gave up on a store that failed for long; matgate store
// pending --replay runs it once. It stops at the first store error: the
// rest would fail alike.
func (m *Materializer) Reconcile(ctx context.Context) ReconcileReport {
	var r ReconcileReport
	r.Pending, r.Err = PendingRecords(ctx, m.Redis, m.Store.Has)
	for _, id := range r.Pending {
		err := m.materialize(ctx, id, 0)
		switch {
		case err == nil:
			r.Stored++
		case errors.Is(err, ErrRefused):
			r.Refused++
		case errors.Is(err, ErrConflict):
			r.Err = cmp.Or(r.Err, err) // this record only: go on
		case errors.Is(err, asynq.SkipRetry):
			// The outputs left Redis meanwhile (refused by the
			// materialize task); nothing of this pass's to do.
		default:
			r.Err = err
			return r
		}
	}
	return r
}

// PendingRecord is a record that Redis holds and the store does not, with
// what the record says of itself (unchecked: Reconcile checks it).
type PendingRecord struct {
	ID string
	RecordMeta
	Problem string // why the record's fields could not be read; "" when they could
}

// ListPending returns the records of PendingRecords with their fields.
func ListPending(ctx context.Context, rdb redis.UniversalClient, has func(id string) bool) ([]PendingRecord, error) {
	ids, err := PendingRecords(ctx, rdb, has)
	if err != nil {
		return nil, err
	}
	out := make([]PendingRecord, 0, len(ids))
	for _, id := range ids {
		p := PendingRecord{ID: id}
		b, err := rdb.Get(ctx, recordKey(id)).Bytes()
		switch {
		case errors.Is(err, redis.Nil):
			continue // stored or refused meanwhile
		case err != nil:
			return nil, err
		}
		if p.RecordMeta, err = metaFromJSON(b); err != nil {
			p.Problem = err.Error()
		}
		out = append(out, p)
	}
	return out, nil
}
