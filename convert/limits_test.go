package convert

import (
	"os"
	"strings"
	"testing"

	"matgate/schema"
	"matgate/worker/cardspace"
)

// canonicalSize is the length of the canonical form of a card of n points.
func canonicalSize(t testing.TB, n int) int {
	t.Helper()
	doc, err := schema.Decode("card.yaml", cardspace.PointsCard(n), nil)
	if err != nil {
		t.Fatal(err)
	}
	c, err := Normalize(doc.Card, nil)
	if err != nil {
		t.Fatal(err)
	}
	b, err := Canonical(c)
	if err != nil {
		t.Fatal(err)
	}
	return len(b)
}

// pointsAround returns the point counts whose canonical card is the
// largest within schema.DefaultMaxBytes and the smallest above it, from
// the sizes of two small cards (each pair of points adds the same bytes).
func pointsAround(t testing.TB) (under, over int) {
	s2, s4 := canonicalSize(t, 2), canonicalSize(t, 4)
	pairs := (schema.DefaultMaxBytes - s2) / (s4 - s2)
	return 2 + 2*pairs, 4 + 2*pairs
}

// TestCardSizeRule: a card is held to the size rule as normalized: the
// largest canonical form within schema.DefaultMaxBytes is taken, one pair
// of points more is refused, located at the references, though the card
// as written (MPa, shorter numbers) is well within the limit.
func TestCardSizeRule(t *testing.T) {
	under, over := pointsAround(t)
	prepare := func(n int) (*schema.Card, schema.Diagnostics) {
		b := cardspace.PointsCard(n)
		if len(b) >= schema.DefaultMaxBytes {
			t.Fatalf("the card as written is %d bytes: not a test of the normalized size", len(b))
		}
		doc, err := schema.Decode("card.yaml", b, nil)
		if err != nil {
			t.Fatal(err)
		}
		return Prepare(doc, nil)
	}
	c, ds := prepare(under)
	if c == nil {
		t.Fatalf("%d points: refused %v", under, ds)
	}
	if b, _ := Canonical(c); len(b) > schema.DefaultMaxBytes || len(b) < schema.DefaultMaxBytes-64 {
		t.Errorf("%d points: canonical %d bytes, not just under the limit", under, len(b))
	}
	c, ds = prepare(over)
	if c != nil || len(ds) == 0 || !strings.Contains(ds[len(ds)-1].String(), "/verification/references: the normalized card") ||
		!strings.Contains(ds[len(ds)-1].String(), "above the limit of 1048576 bytes (1 MiB)") {
		t.Errorf("%d points: %v", over, ds)
	}
}

// TestReferenceFileSizeRule: a reference file one byte over
// MaxReferenceBytes is refused at its file field before it is parsed.
func TestReferenceFileSizeRule(t *testing.T) {
	base, _ := os.ReadFile("../testdata/cards/al-bilinear.yaml")
	text := string(base) + "verification:\n  references:\n    - {name: big, kind: measured, file: big.csv}\n"
	doc, err := schema.Decode("card.yaml", []byte(text), nil)
	if err != nil {
		t.Fatal(err)
	}
	read := func(string) ([]byte, error) { return []byte(strings.Repeat("#", MaxReferenceBytes+1)), nil }
	c, ds := Prepare(doc, &Options{ReadFile: read})
	if c != nil || len(ds) != 1 || !strings.Contains(ds[0].String(), "/verification/references/0/file") || !strings.Contains(ds[0].String(), "limit of 1048576 bytes (1 MiB) for reference data") {
		t.Errorf("reference file over the limit: %v", ds)
	}
}
