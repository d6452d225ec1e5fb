package worker

import (
	"bytes"
	"crypto/ed25519"
	"errors"
	"fmt"

	"matgate/checks"
	"matgate/convert"
)

// ErrRefused is wrapped by admit's error: the outputs a worker left in
// Redis are not what the job asked for, or not what a verification writes.
// Whoever can write to Redis can write such outputs, so serve checks them
// before they become files.
var ErrRefused = errors.New("refused")

// admitted is a record that admit accepted, ready to be stored: its
// bytes (signed when serve has a key) and its ledger fields.
type admitted struct {
	record []byte
	meta   RecordMeta
}

// admit checks the outputs of job id as they came out of Redis, before
// they are stored, and signs the record with key (nil: not signed):
//
//   - the record reads strictly (checks.ParseRecord) and its digest is that
//     of its content (an edited verdict, case or check that was not
//     followed by a new digest);
//   - its verdict is the one its checks give (pass when every check
//     passes), so an edited verdict with a recomputed digest is refused
//     too;
//   - it is a record of this job: the job id of its card digest and tool
//     version (JobID) is id, so a record of another card, or by another
//     tool version than the job names, is refused;
//   - its embedded canonical card decodes, has the digest, id and
//     revision the record names, and the neutral card is that card's
//     indented encoding, byte for byte.
//
// What admit cannot see is a record whose cases, checks and digest were
// all made up consistently: `matgate record verify` re-runs a record and
// finds that.
func admit(id string, rec, card []byte, key ed25519.PrivateKey) (admitted, error) {
	refuse := func(format string, args ...any) (admitted, error) {
		return admitted{}, fmt.Errorf("%w: %s", ErrRefused, fmt.Sprintf(format, args...))
	}
	r, err := checks.ParseRecord(rec)
	if err != nil {
		return refuse("not a record: %v", err)
	}
	if err := r.VerifyIntegrity(nil); err != nil {
		return refuse("%v", err)
	}
	if v := checks.VerdictOf(r.Cases); v != r.Verdict {
		return refuse("the record says verdict %q, its checks give %q", r.Verdict, v)
	}
	if got := JobID(r.Card.Digest, Settings{ToolVersion: r.Tool.Version}); got != id {
		return refuse("the record is of card %s (digest %s) by tool %s, which is job %s, not this job", r.Card.ID, r.Card.Digest, r.Tool.Version, got)
	}
	c, err := decodeCanonical(r.Card.Canonical)
	if err != nil {
		return refuse("the record's canonical card: %v", err)
	}
	if c.Digest != r.Card.Digest || c.ID != r.Card.ID || c.Revision != r.Card.Revision {
		return refuse("the record's canonical card is %s revision %d digest %s; the record names %s revision %d digest %s",
			c.ID, c.Revision, c.Digest, r.Card.ID, r.Card.Revision, r.Card.Digest)
	}
	neutral, err := convert.Indented(c)
	if err != nil {
		return refuse("the record's canonical card: %v", err)
	}
	if !bytes.Equal(neutral, card) {
		return refuse("the neutral card is not the record's canonical card")
	}
	a := admitted{record: rec, meta: MetaOf(r)}
	if key != nil {
		if err := r.Sign(key); err != nil {
			return admitted{}, err
		}
		if a.record, err = RecordJSON(r); err != nil {
			return admitted{}, err
		}
	}
	return a, nil
}
