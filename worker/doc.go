// Package worker verifies cards and runs the queue service around that one
// verification: Verify (used by both matgate verify and the queue), the
// asynq verification and materialize tasks and their idempotent handlers,
// the durable file record store with its hash-chained ledger, the library
// rules (one content per card id and revision, revisions only go up) that
// check, verify and serve hold cards to, the HTTP API of matgate serve
// (auth, problem details, metrics) and the submit client.
//
// The queue only moves the payload and stores the outputs: a worker decodes
// the canonical card of its task, calls Verify, writes the record and the
// neutral card to Redis create-if-absent and hands them to serve, the only
// writer of the records directory, with a materialize task. serve checks
// them (admit), signs the record with its key and stores both; a periodic
// pass (Reconcile) stores what the materialize task could not, and signed
// checkpoints of the ledger (Checkpoint) let an auditor detect a ledger
// rewritten later. A card whose runs keep taking their worker down is
// failed as poison (PoisonLimit).
package worker
