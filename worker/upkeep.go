package worker

import (
	"context"
	"time"
)

// UpkeepOptions are the intervals of Upkeep; zero means the default.
type UpkeepOptions struct {
	Reconcile  time.Duration // default DefaultReconcileInterval
	Checkpoint time.Duration // default DefaultCheckpointInterval
}

// Default intervals of serve's upkeep. A minute bounds how long a record
// waits in Redis after the records directory works again, for one SCAN
// of Redis's keys a minute; a checkpoint an hour keeps checkpoints.jsonl
// under 9,000 lines a year.
const (
	DefaultReconcileInterval  = time.Minute
	DefaultCheckpointInterval = time.Hour
)

// Upkeep runs serve's periodic work until ctx ends: m.Reconcile (records
// in Redis and not in the store are stored) at start and every
// o.Reconcile, and, when m has a key, a signed checkpoint of the ledger
// appended to CheckpointsName at start, every o.Checkpoint and at the
// end, when the ledger has grown. What it does and what fails is logged.
func Upkeep(ctx context.Context, m *Materializer, o UpkeepOptions) {
	if o.Reconcile <= 0 {
		o.Reconcile = DefaultReconcileInterval
	}
	if o.Checkpoint <= 0 {
		o.Checkpoint = DefaultCheckpointInterval
	}
	rt, ct := time.NewTicker(o.Reconcile), time.NewTicker(o.Checkpoint)
	defer rt.Stop()
	defer ct.Stop()
	reconcile := func() {
		r := m.Reconcile(ctx)
		if ctx.Err() != nil {
			return
		}
		if len(r.Pending) > 0 || r.Err != nil {
			l := m.log().Info
			if r.Err != nil {
				l = m.log().Error
			}
			l("store: reconcile pass over the records in Redis and not in the store", "pending", len(r.Pending), "stored", r.Stored, "refused", r.Refused, "err", r.Err)
		}
	}
	checkpoint := func() {
		if m.Key == nil {
			return
		}
		c, wrote, err := m.Store.AppendCheckpoint(m.Key, time.Now())
		switch {
		case err != nil:
			m.log().Error("store: ledger checkpoint not written", "err", err)
		case wrote:
			m.log().Info("store: ledger checkpoint", "seq", c.Seq, "head", c.Head, "file", CheckpointsName)
		}
	}
	reconcile()
	checkpoint()
	for {
		select {
		case <-ctx.Done():
			checkpoint()
			return
		case <-rt.C:
			reconcile()
		case <-ct.C:
			checkpoint()
		}
	}
}
