package checks

import (
	"bytes"
	"crypto/ed25519"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"
)

// RecordFormat is the format name of a verification record.
const RecordFormat = "matgate.record/1"

// Caution is carried by every record and should be shown with every
// verdict.
const Caution = "This record shows that the material card was integrated consistently by the reference integrator and agrees with its closed forms and reference curves within the stated tolerances. It does not show that the card, or any structure analysed with it, is fit for design: that judgement stays with the applicable design codes and with licensed engineers."

// Record is a verification record, matgate.record/1.
type Record struct {
	Format    string     `json:"format"`
	Card      RecordCard `json:"card"`
	Tool      Tool       `json:"tool"`
	Created   string     `json:"created"` // RFC 3339, UTC
	Settings  Settings   `json:"settings"`
	Cases     []Case     `json:"cases"`
	Verdict   string     `json:"verdict"`
	Findings  []Finding  `json:"findings,omitempty"` // see Result.Findings
	Caution   string     `json:"caution"`
	Digest    string     `json:"digest,omitempty"`    // "sha256:" + hex
	Signature *Signature `json:"signature,omitempty"` //
}

// RecordCard identifies the verified card and carries its canonical form,
// so that a record stands alone.
type RecordCard struct {
	ID        string          `json:"id"`
	Revision  int             `json:"revision"`
	Digest    string          `json:"digest"`
	Canonical json.RawMessage `json:"canonical"`
}

// Tool is the program that made the record.
type Tool struct {
	Version string `json:"version"`
	Commit  string `json:"commit"`
}

// Signature is an ed25519 signature of the record's digest string (the
// UTF-8 bytes of "sha256:<hex>").
type Signature struct {
	KeyID     string `json:"key_id"`    // first 16 hex digits of sha256(public key)
	Algorithm string `json:"algorithm"` // "ed25519"
	Value     string `json:"value"`     // standard base64
}

// Integrity errors; VerifyIntegrity wraps one of them.
var (
	ErrDigestMismatch = errors.New("checks: record digest does not match its content")
	ErrUnsigned       = errors.New("checks: record is not signed")
	ErrKeyMismatch    = errors.New("checks: record was signed with another key")
	ErrBadSignature   = errors.New("checks: record signature is invalid")
	ErrBadRecord      = errors.New("checks: malformed record")
)

// NewRecord builds the record of res for card, made by tool at created,
// and computes its digest: "sha256:" + hex sha256 of the RFC 8785 (JSON
// Canonicalization Scheme) encoding of the record without digest and
// signature. Two records of the same Result differ only in created and so
// in the digest.
func NewRecord(res *Result, card RecordCard, tool Tool, created time.Time) (*Record, error) {
	if res == nil {
		return nil, fmt.Errorf("%w: no result", ErrBadRecord)
	}
	if len(card.Canonical) == 0 {
		return nil, fmt.Errorf("%w: card %s has no canonical form", ErrBadRecord, card.ID)
	}
	if !json.Valid(card.Canonical) {
		return nil, fmt.Errorf("%w: canonical form of card %s is not valid JSON", ErrBadRecord, card.ID)
	}
	r := &Record{
		Format:   RecordFormat,
		Card:     card,
		Tool:     tool,
		Created:  created.UTC().Format(time.RFC3339),
		Settings: res.Settings,
		Cases:    res.Cases,
		Verdict:  res.Verdict,
		Findings: res.Findings,
		Caution:  Caution,
	}
	d, err := r.ComputeDigest()
	if err != nil {
		return nil, err
	}
	r.Digest = d
	return r, nil
}

// ComputeDigest returns the digest of r as NewRecord defines it, ignoring
// r.Digest and r.Signature.
func (r *Record) ComputeDigest() (string, error) {
	c := *r
	c.Digest, c.Signature = "", nil
	b, err := json.Marshal(&c)
	if err != nil {
		return "", fmt.Errorf("%w: encode: %w", ErrBadRecord, err)
	}
	canon, err := canonicalJSON(b)
	if err != nil {
		return "", fmt.Errorf("%w: canonicalize: %w", ErrBadRecord, err)
	}
	sum := sha256.Sum256(canon)
	return "sha256:" + hex.EncodeToString(sum[:]), nil
}

// KeyID returns the key id of a public key: the first 16 hex digits of its
// sha256.
func KeyID(pub ed25519.PublicKey) string {
	sum := sha256.Sum256(pub)
	return hex.EncodeToString(sum[:])[:16]
}

// Sign signs r's digest (recomputed first, so a record edited after
// NewRecord is signed as it is) and sets r.Signature.
func (r *Record) Sign(priv ed25519.PrivateKey) error {
	if len(priv) != ed25519.PrivateKeySize {
		return fmt.Errorf("%w: ed25519 private key of %d bytes, want %d", ErrBadRecord, len(priv), ed25519.PrivateKeySize)
	}
	d, err := r.ComputeDigest()
	if err != nil {
		return err
	}
	r.Digest = d
	pub := priv.Public().(ed25519.PublicKey)
	r.Signature = &Signature{
		KeyID:     KeyID(pub),
		Algorithm: "ed25519",
		Value:     base64.StdEncoding.EncodeToString(ed25519.Sign(priv, []byte(d))),
	}
	return nil
}

// VerifyIntegrity recomputes the digest and, when pub is not nil, checks
// the signature with pub. It returns nil, or an error wrapping
// ErrDigestMismatch, ErrUnsigned, ErrKeyMismatch, ErrBadSignature or
// ErrBadRecord.
func (r *Record) VerifyIntegrity(pub ed25519.PublicKey) error {
	if r.Format != RecordFormat {
		return fmt.Errorf("%w: format %q, want %q", ErrBadRecord, r.Format, RecordFormat)
	}
	d, err := r.ComputeDigest()
	if err != nil {
		return err
	}
	if d != r.Digest {
		return fmt.Errorf("%w: recorded %s, computed %s", ErrDigestMismatch, r.Digest, d)
	}
	if pub == nil {
		return nil
	}
	if len(pub) != ed25519.PublicKeySize {
		return fmt.Errorf("%w: ed25519 public key of %d bytes, want %d", ErrBadRecord, len(pub), ed25519.PublicKeySize)
	}
	s := r.Signature
	if s == nil {
		return ErrUnsigned
	}
	if s.Algorithm != "ed25519" {
		return fmt.Errorf("%w: algorithm %q", ErrBadSignature, s.Algorithm)
	}
	if id := KeyID(pub); s.KeyID != id {
		return fmt.Errorf("%w: signed by key %s, checked with key %s", ErrKeyMismatch, s.KeyID, id)
	}
	sig, err := base64.StdEncoding.DecodeString(s.Value)
	if err != nil || len(sig) != ed25519.SignatureSize {
		return fmt.Errorf("%w: signature value is not a base64 ed25519 signature", ErrBadSignature)
	}
	if !ed25519.Verify(pub, []byte(r.Digest), sig) {
		return ErrBadSignature
	}
	return nil
}

// ParseRecord decodes a record, refusing unknown fields and trailing data,
// so that a record verified is the record read.
func ParseRecord(b []byte) (*Record, error) {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	var r Record
	if err := dec.Decode(&r); err != nil {
		return nil, fmt.Errorf("%w: %w", ErrBadRecord, err)
	}
	if dec.More() {
		return nil, fmt.Errorf("%w: data after the record", ErrBadRecord)
	}
	if !strings.HasPrefix(r.Digest, "sha256:") {
		return nil, fmt.Errorf("%w: digest %q is not sha256:<hex>", ErrBadRecord, r.Digest)
	}
	return &r, nil
}
