package worker

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"

	"matgate/schema"
)

// The library rules, by the rule ids that diagnostics and problem
// documents carry. A library holds one content per card id and revision,
// and a card that changes gets a higher revision:
//
//   - RuleDuplicateRevision: two cards of one run have the same id and
//     revision but different content (card digest);
//   - RuleUnbumpedRevision: the records directory holds a record of the
//     card's id and revision whose card has another digest (the card was
//     changed without a new revision);
//   - RuleRevisionBelowStored: the card's revision is below the highest
//     revision of its id in the records directory.
const (
	RuleDuplicateRevision   = "library-duplicate-revision"
	RuleUnbumpedRevision    = "library-unbumped-revision"
	RuleRevisionBelowStored = "library-revision-below-stored"
)

// CardRef is what the library rules know of a card: where it is written
// and which card it is.
type CardRef struct {
	File     string     `json:"file"`
	Pos      schema.Pos `json:"pos,omitzero"` // of the revision in File; zero when unknown
	ID       string     `json:"id"`
	Revision int        `json:"revision"`
	Digest   string     `json:"digest"`
}

// RefOf returns the CardRef of the canonical card c (as convert.Prepare
// returns it) decoded from doc.
func RefOf(doc *schema.Document, c *schema.Card) CardRef {
	return CardRef{File: doc.File, Pos: doc.Pos("/revision"), ID: c.ID, Revision: c.Revision, Digest: c.Digest}
}

// where is the card's place as diagnostics print it.
func (c CardRef) where() string { return schema.Where(c.File, c.Pos) }

// StoredCard is the record of a records directory that a card conflicts
// with.
type StoredCard struct {
	Record   string `json:"record"` // the record's id; GET /v1/records/{id} serves it
	Revision int    `json:"revision"`
	Digest   string `json:"digest,omitempty"` // its card's digest (RuleUnbumpedRevision)
	Created  string `json:"created"`
}

// Conflict is one breach of a library rule by Card.
type Conflict struct {
	Rule   string      `json:"rule"`
	Card   CardRef     `json:"card"`
	Other  *CardRef    `json:"other,omitempty"`  // the earlier card of the run (RuleDuplicateRevision)
	Stored *StoredCard `json:"stored,omitempty"` // the stored record (the store rules)
	// Latest is the highest revision of the card's id in the records
	// directory (the store rules).
	Latest int `json:"latest_stored_revision,omitempty"`
}

// Message says what is wrong and what to do, naming both places.
func (c Conflict) Message() string {
	switch c.Rule {
	case RuleDuplicateRevision:
		return fmt.Sprintf("card %s revision %d is also in %s with other content (digest %s there, %s here): one content per id and revision: give one of them a new revision",
			c.Card.ID, c.Card.Revision, c.Other.where(), c.Other.Digest, c.Card.Digest)
	case RuleUnbumpedRevision:
		return fmt.Sprintf("card %s revision %d has a stored record %s (created %s) of other content (digest %s there, %s here): a changed card needs a new revision, above %d",
			c.Card.ID, c.Card.Revision, c.Stored.Record, c.Stored.Created, c.Stored.Digest, c.Card.Digest, c.Latest)
	case RuleRevisionBelowStored:
		return fmt.Sprintf("card %s revision %d is below revision %d, the latest stored (record %s, created %s): revisions of a card only go up",
			c.Card.ID, c.Card.Revision, c.Stored.Revision, c.Stored.Record, c.Stored.Created)
	}
	return c.Rule
}

// Diagnostic is the conflict as a located error at the card's revision.
func (c Conflict) Diagnostic() schema.Diagnostic {
	return schema.Diagnostic{
		File: c.Card.File, Pos: c.Card.Pos, Pointer: "/revision",
		Value: strconv.Itoa(c.Card.Revision), Message: c.Message(), Severity: schema.SeverityError,
	}
}

// LibraryStore is what the library rules read of a records directory.
type LibraryStore interface {
	List(cardID string, offset, limit int) ([]LedgerEntry, int)
	Card(id string) ([]byte, error)
}

var _ LibraryStore = (*DirStore)(nil)

// StoreConflicts applies the store rules (RuleUnbumpedRevision,
// RuleRevisionBelowStored) to c. It reads the ledger entries of c's id
// and the neutral card of each stored record of c's revision (a few
// kilobytes each); an error is a records directory that cannot be read.
func StoreConflicts(s LibraryStore, c CardRef) ([]Conflict, error) {
	entries, _ := s.List(c.ID, 0, math.MaxInt)
	if len(entries) == 0 {
		return nil, nil
	}
	latest := entries[0]
	for _, e := range entries[1:] {
		if e.Revision > latest.Revision {
			latest = e
		}
	}
	var out []Conflict
	for _, e := range entries {
		if e.Revision != c.Revision {
			continue
		}
		d, err := storedDigest(s, e.ID)
		if err != nil {
			return nil, err
		}
		if d != c.Digest {
			out = append(out, Conflict{Rule: RuleUnbumpedRevision, Card: c, Latest: latest.Revision,
				Stored: &StoredCard{Record: e.ID, Revision: e.Revision, Digest: d, Created: e.Created}})
			break // one stored record of other content says it
		}
	}
	if c.Revision < latest.Revision {
		out = append(out, Conflict{Rule: RuleRevisionBelowStored, Card: c, Latest: latest.Revision,
			Stored: &StoredCard{Record: latest.ID, Revision: latest.Revision, Created: latest.Created}})
	}
	return out, nil
}

// storedDigest reads the card digest from the neutral card of record id.
func storedDigest(s LibraryStore, id string) (string, error) {
	b, err := s.Card(id)
	if err != nil {
		return "", fmt.Errorf("stored card of record %s: %w", id, err)
	}
	var c struct {
		Digest string `json:"digest"`
	}
	if err := json.Unmarshal(b, &c); err != nil || c.Digest == "" {
		return "", fmt.Errorf("stored card of record %s has no digest (%v)", id, err)
	}
	return c.Digest, nil
}

// Library applies the library rules to the cards of one run, one card at a
// time in the run's order: a card conflicts with the cards added before it
// and with the records directory. It keeps a CardRef per id and revision
// (some hundred bytes a card).
type Library struct {
	store LibraryStore
	seen  map[idRevision]CardRef
}

type idRevision struct {
	id       string
	revision int
}

// NewLibrary returns a Library for one run; a nil store (a nil interface,
// not a nil *DirStore) applies the rule of the run alone.
func NewLibrary(store LibraryStore) *Library {
	return &Library{store: store, seen: map[idRevision]CardRef{}}
}

// Add applies the library rules to c, the next card of the run, and
// returns its conflicts; an error is a records directory that cannot be
// read.
func (l *Library) Add(c CardRef) ([]Conflict, error) {
	var out []Conflict
	k := idRevision{c.ID, c.Revision}
	if first, ok := l.seen[k]; !ok {
		l.seen[k] = c
	} else if first.Digest != c.Digest {
		out = append(out, Conflict{Rule: RuleDuplicateRevision, Card: c, Other: &first})
	}
	if l.store != nil {
		cs, err := StoreConflicts(l.store, c)
		if err != nil {
			return nil, err
		}
		out = append(out, cs...)
	}
	return out, nil
}
