package worker

import (
	"context"
	"fmt"
	"math"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
)

// Comparison is the change of the headline response between two revisions
// of a card (see checks.Responses): both are driven through the older
// revision's resolved verification loads.
type Comparison struct {
	Old     CardRef          `json:"old"`
	New     CardRef          `json:"new"`
	Loads   string           `json:"loads"` // the loads both revisions went through, in words
	Changes []checks.Change  `json:"changes"`
	Caution string           `json:"caution"`
	OldResp *checks.Response `json:"-"`
	NewResp *checks.Response `json:"-"`
}

// Compare computes the Comparison of two canonical cards (as
// convert.Normalize writes them). When either is temperature-dependent the
// two are compared at each temperature of the older one (its tabulated
// temperatures, or its one temperature), each change named "at <T> K: ...";
// a temperature outside the other card's range is an error. The responses
// kept for plots are those at the first temperature.
func Compare(ctx context.Context, old, new *schema.Card) (*Comparison, error) {
	if !old.IsTemperatureDependent() && !new.IsTemperatureDependent() {
		return compareAt(ctx, old, new)
	}
	temps := old.Temperatures
	if !old.IsTemperatureDependent() {
		if old.Temperature == nil {
			return nil, fmt.Errorf("compare %s r%d with r%d: the older revision states no temperature and the newer is temperature-dependent: nothing to compare at", old.ID, old.Revision, new.Revision)
		}
		temps = []float64{*old.Temperature}
	}
	var out *Comparison
	for _, T := range temps {
		oc, err := cardAt(old, T)
		if err != nil {
			return nil, err
		}
		nc, err := cardAt(new, T)
		if err != nil {
			return nil, err
		}
		c, err := compareAt(ctx, oc, nc)
		if err != nil {
			return nil, err
		}
		at := fmt.Sprintf("at %g K: ", T)
		for i := range c.Changes {
			c.Changes[i].Name = at + c.Changes[i].Name
		}
		if out == nil {
			out = c
			out.Old.Digest, out.New.Digest = old.Digest, new.Digest
			out.Loads = at + c.Loads
			continue
		}
		out.Changes = append(out.Changes, c.Changes...)
		out.Loads += "; " + at + c.Loads
	}
	return out, nil
}

// cardAt is the canonical card of one temperature that c holds at T kelvin.
func cardAt(c *schema.Card, T float64) (*schema.Card, error) {
	if c.IsTemperatureDependent() {
		n, err := convert.At(c, T)
		if err != nil {
			return nil, fmt.Errorf("%s r%d: %w", c.ID, c.Revision, err)
		}
		return n, nil
	}
	if c.Temperature == nil || *c.Temperature != T {
		return nil, fmt.Errorf("%s r%d holds one temperature, not %g K: nothing to compare at", c.ID, c.Revision, T)
	}
	return c, nil
}

// compareAt is Compare for two cards of one temperature.
func compareAt(ctx context.Context, old, new *schema.Card) (*Comparison, error) {
	os, err := Spec(old)
	if err != nil {
		return nil, err
	}
	ns, err := Spec(new)
	if err != nil {
		return nil, err
	}
	load, err := os.Resolve()
	if err != nil {
		return nil, fmt.Errorf("loads of %s r%d: %w", old.ID, old.Revision, err)
	}
	or, err := checks.Responses(ctx, &os.Material, load)
	if err != nil {
		return nil, fmt.Errorf("response of %s r%d: %w", old.ID, old.Revision, err)
	}
	nr, err := checks.Responses(ctx, &ns.Material, load)
	if err != nil {
		return nil, fmt.Errorf("response of %s r%d: %w", new.ID, new.Revision, err)
	}
	loads := fmt.Sprintf("those of %s r%d: virgin tension to %v and %g; %d fully reversed cycles at strain amplitudes %v", old.ID, old.Revision, checks.MonotonicStrains, load.MonotonicStrain, load.Cycles, load.StrainAmplitudes)
	if r := load.Ratcheting; r != nil {
		loads += fmt.Sprintf("; ratcheting at mean stress %.4g MPa and amplitude %.4g MPa, %d cycles", r.MeanStress/1e6, r.StressAmplitude/1e6, r.Cycles)
	}
	if r := load.Relaxation; r != nil {
		loads += fmt.Sprintf("; relaxation at mean strain %g and amplitude %g, %d cycles", r.MeanStrain, r.StrainAmplitude, r.Cycles)
	}
	return &Comparison{
		Old:     CardRef{ID: old.ID, Revision: old.Revision, Digest: old.Digest},
		New:     CardRef{ID: new.ID, Revision: new.Revision, Digest: new.Digest},
		Loads:   loads,
		Changes: checks.Compare(or, nr),
		Caution: "A comparison shows how the response of the card changes between revisions under the same loads; it does not show that either revision is fit for design: that stays with the applicable codes and licensed engineers.",
		OldResp: or, NewResp: nr,
	}, nil
}

// Exceeding returns the changes whose relative size exceeds limit, and
// those whose quantity is defined for one revision only.
func (c *Comparison) Exceeding(limit float64) []checks.Change {
	var out []checks.Change
	for _, ch := range c.Changes {
		switch {
		case (ch.Old == nil) != (ch.New == nil):
			out = append(out, ch)
		case ch.Rel != nil && (*ch.Rel > limit || *ch.Rel < -limit):
			out = append(out, ch)
		case ch.Rel == nil && ch.Abs != nil && *ch.Abs != 0:
			out = append(out, ch) // from zero to something: no relative size
		}
	}
	return out
}

// PreviousRevision returns the canonical card of the highest revision of
// c's id below c's revision in the records directory, or nil when there is
// none. When several records hold that revision (one per tool version) the
// latest in the ledger is taken.
func PreviousRevision(s *DirStore, c *schema.Card) (*schema.Card, error) {
	entries, _ := s.List(c.ID, 0, math.MaxInt)
	revs := make([]int, len(entries))
	for i, e := range entries {
		revs[i] = e.Revision
	}
	i := PreviousOf(revs, c.Revision)
	if i < 0 {
		return nil, nil
	}
	b, err := s.Card(entries[i].ID)
	if err != nil {
		return nil, fmt.Errorf("stored card of %s r%d: %w", c.ID, entries[i].Revision, err)
	}
	return DecodeStoredCard(b, c.ID, entries[i].CardDigest)
}

// PreviousOf returns the position, in revisions (the revisions of one card
// id's stored records in ledger order), of the highest revision below rev,
// the latest in the ledger among equals; -1 when there is none.
func PreviousOf(revisions []int, rev int) int {
	best := -1
	for i, r := range revisions {
		if r < rev && (best < 0 || r >= revisions[best]) {
			best = i
		}
	}
	return best
}

// DecodeStoredCard decodes a stored neutral card through the same decoder,
// checks and normalization as a submitted one, and checks that it is of
// card id with the digest its record names (digest "": a ledger line
// written before the ledger kept digests).
func DecodeStoredCard(b []byte, id, digest string) (*schema.Card, error) {
	c, err := decodeCanonical(b)
	if err != nil {
		return nil, fmt.Errorf("stored card of %s: %w", id, err)
	}
	if c.ID != id || digest != "" && c.Digest != digest {
		return nil, fmt.Errorf("stored card of %s: it is card %s with digest %s, its record names %s", id, c.ID, c.Digest, digest)
	}
	return c, nil
}
