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
	"reflect"
	"slices"
	"strings"
	"sync"
	"time"
)

// RecordFormat is the format name of the verification records NewRecord
// makes: matgate.record/2, whose case series are stored by column.
// RecordFormatV1 is the format before it, whose series were arrays of
// sample objects; ParseRecord and VerifyIntegrity still take it.
const (
	RecordFormat   = "matgate.record/2"
	RecordFormatV1 = "matgate.record/1"
)

// Caution is carried by every record and should be shown with every
// verdict.
const Caution = "This record shows that the material card was integrated consistently by the reference integrator and agrees with its closed forms and reference curves within the stated tolerances. It does not show that the card, or any structure analysed with it, is fit for design: that judgement stays with the applicable design codes and with licensed engineers."

// Record is a verification record (RecordFormat, or RecordFormatV1 when
// read from a file of that format). Its JSON form is its RFC 8785
// encoding (MarshalJSON): compact, members in canonical order.
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
// so that a record stands alone. Canonical must be the RFC 8785 encoding
// of the card (convert.Canonical): the record's encoding embeds it as it
// is, without reading it again.
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
	r, _, err := NewRecordJSON(res, card, tool, created)
	return r, err
}

// NewRecordJSON is NewRecord that also returns the record's JSON (as
// MarshalJSON writes it) from the one encoding that its digest is
// computed from: the digest member is put into place in those bytes.
func NewRecordJSON(res *Result, card RecordCard, tool Tool, created time.Time) (*Record, []byte, error) {
	if res == nil {
		return nil, nil, fmt.Errorf("%w: no result", ErrBadRecord)
	}
	if len(card.Canonical) == 0 {
		return nil, nil, fmt.Errorf("%w: card %s has no canonical form", ErrBadRecord, card.ID)
	}
	if !json.Valid(card.Canonical) {
		return nil, nil, fmt.Errorf("%w: canonical form of card %s is not valid JSON", ErrBadRecord, card.ID)
	}
	for _, c := range res.Cases {
		if c.Series == nil {
			continue
		}
		if err := c.Series.validate(); err != nil {
			return nil, nil, fmt.Errorf("%w: case %s: %w", ErrBadRecord, c.Name, err)
		}
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
	e := encoder{out: make([]byte, 0, 128<<10), mark: "digest"} // a demo record is 80-115 KB
	if err := e.value(reflect.ValueOf(r).Elem()); err != nil {
		return nil, nil, fmt.Errorf("%w: encode: %w", ErrBadRecord, err)
	}
	sum := sha256.Sum256(e.out)
	r.Digest = "sha256:" + hex.EncodeToString(sum[:])
	if e.markAt <= 1 {
		panic("checks: the record's digest has no member before it") // "card" sorts first
	}
	b := slices.Insert(e.out, e.markAt, []byte(`,"digest":"`+r.Digest+`"`)...)
	return r, b, nil
}

// ComputeDigest returns the digest of r as NewRecord defines it, ignoring
// r.Digest and r.Signature.
func (r *Record) ComputeDigest() (string, error) {
	c := *r
	c.Digest, c.Signature = "", nil
	buf := digestBuffers.Get().(*[]byte)
	defer digestBuffers.Put(buf)
	b, err := c.appendJSON((*buf)[:0])
	if err != nil {
		return "", err
	}
	*buf = b
	sum := sha256.Sum256(b)
	return "sha256:" + hex.EncodeToString(sum[:]), nil
}

// digestBuffers keeps the encoding buffers of ComputeDigest, which needs
// the bytes only until they are hashed.
var digestBuffers = sync.Pool{New: func() any { return new([]byte) }}

// MarshalJSON returns the RFC 8785 (JSON Canonicalization Scheme)
// encoding of r, written directly from its fields: series by column, or as
// sample objects in a RecordFormatV1 record.
func (r Record) MarshalJSON() ([]byte, error) {
	return r.appendJSON(make([]byte, 0, 128<<10)) // a demo record is 80-115 KB
}

func (r *Record) appendJSON(out []byte) ([]byte, error) {
	e := encoder{out: out, seriesRows: r.Format == RecordFormatV1}
	if err := e.value(reflect.ValueOf(r).Elem()); err != nil {
		return nil, fmt.Errorf("%w: encode: %w", ErrBadRecord, err)
	}
	return e.out, nil
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
	if r.Format != RecordFormat && r.Format != RecordFormatV1 {
		return fmt.Errorf("%w: format %q, want %q or %q", ErrBadRecord, r.Format, RecordFormat, RecordFormatV1)
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

// ParseRecord decodes a record of either format, refusing unknown fields,
// a series of the other format's shape and trailing data, so that a record
// verified is the record read. The embedded card is kept in its RFC 8785
// form (a RecordFormatV1 file has it indented).
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
	if r.Format != RecordFormat && r.Format != RecordFormatV1 {
		return nil, fmt.Errorf("%w: format %q, want %q or %q", ErrBadRecord, r.Format, RecordFormat, RecordFormatV1)
	}
	for _, c := range r.Cases {
		if c.Series != nil && c.Series.rows != (r.Format == RecordFormatV1) {
			return nil, fmt.Errorf("%w: case %s: series is not in the form of %s", ErrBadRecord, c.Name, r.Format)
		}
	}
	if !strings.HasPrefix(r.Digest, "sha256:") {
		return nil, fmt.Errorf("%w: digest %q is not sha256:<hex>", ErrBadRecord, r.Digest)
	}
	canon, err := canonicalJSON(r.Card.Canonical)
	if err != nil {
		return nil, fmt.Errorf("%w: card.canonical: %w", ErrBadRecord, err)
	}
	r.Card.Canonical = canon
	return &r, nil
}

// sampleV1 is a sample as matgate.record/1 wrote it.
type sampleV1 struct {
	Strain        float64 `json:"strain"`
	Stress        float64 `json:"stress"`
	PlasticStrain float64 `json:"plastic_strain"`
	BackStress    float64 `json:"back_stress"`
	P             float64 `json:"accumulated_plastic_strain"`
	ShearStrain   float64 `json:"shear_strain,omitempty"`
	ShearStress   float64 `json:"shear_stress,omitempty"`
	Gap           bool    `json:"gap,omitempty"`
}

// UnmarshalJSON reads a series by column, or as the array of sample
// objects of matgate.record/1, refusing unknown members in either (the
// decoder's DisallowUnknownFields does not reach into an Unmarshaler).
func (s *Series) UnmarshalJSON(b []byte) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	if t := bytes.TrimLeft(b, " \t\r\n"); len(t) > 0 && t[0] == '[' {
		var rows []sampleV1
		if err := dec.Decode(&rows); err != nil {
			return err
		}
		*s = Series{rows: true}
		for i, r := range rows {
			if r.Gap && i == 0 {
				return fmt.Errorf("series sample 0 is marked as a gap")
			}
			s.append(Sample{Strain: r.Strain, Stress: r.Stress, PlasticStrain: r.PlasticStrain, BackStress: r.BackStress,
				P: r.P, ShearStrain: r.ShearStrain, ShearStress: r.ShearStress}, r.Gap)
		}
		if len(rows) == 0 {
			s.Strain, s.Stress, s.PlasticStrain, s.BackStress, s.P = []float64{}, []float64{}, []float64{}, []float64{}, []float64{}
		}
		s.dropZeroColumns()
		return nil
	}
	type columns Series // without this method
	var c columns
	if err := dec.Decode(&c); err != nil {
		return err
	}
	*s = Series(c)
	return s.validate()
}

// Reproduces reports whether rerun, the record of a verification run again
// from r's card with r's tool and created, has r's content: card,
// settings, every case and check, findings and verdict. A record of
// RecordFormat must have the same digest. A RecordFormatV1 record kept
// every increment of its series that the thinning of RecordFormat leaves
// out, so each series of rerun must be a subsequence of r's and the rest
// must have r's digest.
func (r *Record) Reproduces(rerun *Record) (bool, error) {
	want, err := r.ComputeDigest()
	if err != nil {
		return false, err
	}
	if r.Format == RecordFormatV1 {
		if len(rerun.Cases) != len(r.Cases) {
			return false, nil
		}
		c := *rerun
		c.Format = RecordFormatV1
		c.Cases = slices.Clone(rerun.Cases)
		for i := range c.Cases {
			if !isSubsequence(c.Cases[i].Series.Samples(), r.Cases[i].Series.Samples()) {
				return false, nil
			}
			c.Cases[i].Series = r.Cases[i].Series
		}
		rerun = &c
	}
	got, err := rerun.ComputeDigest()
	return err == nil && got == want, err
}

// isSubsequence reports whether every sample of sub is in all, in order
// (the gap marks aside, which thinning moves).
func isSubsequence(sub, all []Sample) bool {
	j := 0
	for _, s := range sub {
		s.Gap = false
		for {
			if j == len(all) {
				return false
			}
			a := all[j]
			a.Gap = false
			j++
			if a == s {
				break
			}
		}
	}
	return true
}
