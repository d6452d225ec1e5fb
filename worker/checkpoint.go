package worker

import (
	"bufio"
	"bytes"
	"crypto/ed25519"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"time"

	"matgate/checks"
)

// CheckpointFormat is the format name of a ledger checkpoint.
const CheckpointFormat = "matgate.checkpoint/1"

// CheckpointsName is the file in a records directory to which serve
// appends a signed checkpoint, one JSON line, whenever the ledger has grown
// (store.checkpoint_interval). It is a convenience for the auditor, who
// copies the checkpoints elsewhere: whoever can rewrite the ledger can
// rewrite this file too, but cannot sign a checkpoint without serve's key,
// and cannot reach the copies.
const CheckpointsName = "checkpoints.jsonl"

// Checkpoint says that a ledger had Seq lines and that the sha256 of its
// last line was Head (the value the next line's prev holds), at Time. It
// is signed with the key that signs the records. A ledger that was later
// truncated below Seq, or whose line Seq or any line before it was
// rewritten (each line's prev chains to the one before), no longer
// matches it.
type Checkpoint struct {
	Format    string `json:"format"`
	Seq       int    `json:"seq"`
	Head      string `json:"head"` // hex sha256 of line Seq; "" when Seq is 0
	Time      string `json:"time"` // RFC 3339, UTC
	KeyID     string `json:"key_id,omitempty"`
	Signature string `json:"signature,omitempty"` // ed25519 of signedText, standard base64
}

// signedText is what the signature covers: the format, seq, head and time,
// one a line, so that no field can be moved into another.
func (c *Checkpoint) signedText() []byte {
	return fmt.Appendf(nil, "%s\n%d\n%s\n%s\n", CheckpointFormat, c.Seq, c.Head, c.Time)
}

// Sign signs c with key.
func (c *Checkpoint) Sign(key ed25519.PrivateKey) {
	c.KeyID = checks.KeyID(key.Public().(ed25519.PublicKey))
	c.Signature = base64.StdEncoding.EncodeToString(ed25519.Sign(key, c.signedText()))
}

// VerifySignature checks c's signature with pub (wrapping
// checks.ErrUnsigned, checks.ErrKeyMismatch or checks.ErrBadSignature).
func (c *Checkpoint) VerifySignature(pub ed25519.PublicKey) error {
	if c.Signature == "" {
		return checks.ErrUnsigned
	}
	if id := checks.KeyID(pub); c.KeyID != id {
		return fmt.Errorf("%w: signed by key %s, checked with key %s", checks.ErrKeyMismatch, c.KeyID, id)
	}
	sig, err := base64.StdEncoding.DecodeString(c.Signature)
	if err != nil || !ed25519.Verify(pub, c.signedText(), sig) {
		return checks.ErrBadSignature
	}
	return nil
}

// String names a checkpoint in messages.
func (c *Checkpoint) String() string {
	return fmt.Sprintf("checkpoint of %s (line %d)", c.Time, c.Seq)
}

// Checkpoint returns a signed checkpoint of the ledger as it is now.
func (s *DirStore) Checkpoint(key ed25519.PrivateKey, now time.Time) Checkpoint {
	s.mu.Lock()
	c := Checkpoint{Format: CheckpointFormat, Seq: len(s.entries), Head: s.last, Time: now.UTC().Format(time.RFC3339)}
	s.mu.Unlock()
	c.Sign(key)
	return c
}

// AppendCheckpoint appends a signed checkpoint of the ledger to
// CheckpointsName, durably, when the ledger has grown since the last one
// there; it returns the checkpoint and whether it wrote it.
func (s *DirStore) AppendCheckpoint(key ed25519.PrivateKey, now time.Time) (Checkpoint, bool, error) {
	c := s.Checkpoint(key, now)
	if s.ledger == nil {
		return c, false, fmt.Errorf("checkpoint: the records directory %s is open for reading only", s.dir)
	}
	s.cpMu.Lock()
	defer s.cpMu.Unlock()
	if s.cpSeq < 0 {
		b, err := s.root.ReadFile(CheckpointsName)
		if err != nil && !errors.Is(err, fs.ErrNotExist) {
			return c, false, fmt.Errorf("checkpoint: %w", err)
		}
		if cut := bytes.LastIndexByte(b, '\n') + 1; cut < len(b) {
			// A torn last line (a crash or a full disk during an
			// append): cut off, so that the next line starts clean.
			if err := s.truncateFile(CheckpointsName, int64(cut)); err != nil {
				return c, false, fmt.Errorf("checkpoint: cut off a torn last line: %w", err)
			}
			b = b[:cut]
		}
		s.cpSeq = 0
		if cps, err := ParseCheckpoints(b); err == nil && len(cps) > 0 {
			s.cpSeq = cps[len(cps)-1].Seq
		}
	}
	if c.Seq == 0 || c.Seq == s.cpSeq {
		return c, false, nil
	}
	line, err := json.Marshal(c)
	if err != nil {
		return c, false, err
	}
	f, err := s.root.OpenFile(CheckpointsName, os.O_CREATE|os.O_WRONLY|os.O_APPEND, 0o644)
	if err != nil {
		return c, false, fmt.Errorf("checkpoint: %w", err)
	}
	_, err = f.Write(append(line, '\n'))
	if err == nil {
		err = f.Sync()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		s.cpSeq = -1 // read again, and cut what this append may have torn
		return c, false, fmt.Errorf("checkpoint: %w", err)
	}
	s.cpSeq = c.Seq
	return c, true, nil
}

// ParseCheckpoints reads checkpoints: one JSON document, or JSON lines
// (CheckpointsName), or several documents one after the other. An
// unknown field is an error.
func ParseCheckpoints(b []byte) ([]Checkpoint, error) {
	var cps []Checkpoint
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	for n := 1; dec.More(); n++ {
		var c Checkpoint
		if err := dec.Decode(&c); err != nil {
			return cps, fmt.Errorf("checkpoint %d: %w", n, err)
		}
		if c.Format != CheckpointFormat {
			return cps, fmt.Errorf("checkpoint %d: format %q, want %q", n, c.Format, CheckpointFormat)
		}
		cps = append(cps, c)
	}
	return cps, nil
}

// lineHashes returns the hex sha256 of every ledger line of data, in
// order.
func lineHashes(data []byte) []string {
	var hs []string
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 64<<10), 1<<20)
	for sc.Scan() {
		hs = append(hs, sha256Hex(sc.Bytes()))
	}
	return hs
}

// checkCheckpoint reports where the ledger (its line hashes) does not
// hold c: truncated below c.Seq, or line c.Seq with another hash.
func checkCheckpoint(hashes []string, c Checkpoint) error {
	switch {
	case c.Seq < 0:
		return fmt.Errorf("%s: negative line number", c.String())
	case c.Seq > len(hashes):
		return fmt.Errorf("%s: the ledger has %d line(s) only: it was cut back after the checkpoint", c.String(), len(hashes))
	case c.Seq == 0:
		return nil
	case hashes[c.Seq-1] != c.Head:
		return fmt.Errorf("%s: line %d has sha256 %s, the checkpoint says %s: the ledger was rewritten up to line %d", c.String(), c.Seq, hashes[c.Seq-1], c.Head, c.Seq)
	}
	return nil
}

func (s *DirStore) truncateFile(name string, size int64) error {
	f, err := s.root.OpenFile(name, os.O_WRONLY, 0)
	if err != nil {
		return err
	}
	err = f.Truncate(size)
	if err == nil {
		err = f.Sync()
	}
	return errors.Join(err, f.Close())
}
