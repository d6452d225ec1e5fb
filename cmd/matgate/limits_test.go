package main

import (
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"matgate/convert"
	"matgate/schema"
)

// refCard writes the aluminium demo card with a reference curve file of n
// points into dir (rows of one text length, so each point adds the same
// bytes to the normalized card: "[0.0011,275790291.7]," in Pa) and returns
// the card's path. The points are invented.
func refCard(t *testing.T, dir string, n int) string {
	t.Helper()
	base, err := os.ReadFile("../../testdata/cards/al-bilinear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("strain,stress\n0,0\n")
	for k := range n {
		b.WriteString([]string{"0.0011,40\n", "0.0012,41\n"}[k%2])
	}
	if err := os.WriteFile(filepath.Join(dir, "curve.csv"), []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	card := filepath.Join(dir, "card.yaml")
	os.WriteFile(card, append(base, "verification:\n  references:\n    - {name: curve, kind: measured, file: curve.csv}\n"...), 0o644)
	return card
}

// normalizedSize is the length of the canonical form of a card as check
// loads it.
func normalizedSize(t *testing.T, card string) int {
	t.Helper()
	l := loadCard(&env{stdin: strings.NewReader("")}, card)
	if !l.valid() {
		t.Fatalf("%s: %v", card, l.diags)
	}
	b, err := convert.Canonical(l.card)
	if err != nil {
		t.Fatal(err)
	}
	return len(b)
}

// TestSizeRulesInCheckAndSubmit: the size rules hold the same in check and
// submit. A card with a reference file of some 227 kB (issue 13: it passed
// check and was too large for submit, which sent it indented) is sent as
// its compact canonical form, within the card limit, which serve's decoder
// takes as the same card; a card whose reference file makes it one point
// over the limit as normalized, and a reference file one byte over its
// limit, are refused by check and by submit (exit 2, nothing sent).
func TestSizeRulesInCheckAndSubmit(t *testing.T) {
	dir := t.TempDir()
	card := refCard(t, dir, 227_000/10)
	if st, _ := os.Stat(filepath.Join(dir, "curve.csv")); st.Size() < 220_000 {
		t.Fatalf("reference file of %d bytes", st.Size())
	}
	if code, out, errOut := matgate(t, "", "check", card); code != exitPass {
		t.Fatalf("check: exit %d\n%s%s", code, out, errOut)
	}
	e := &env{stdin: strings.NewReader(""), stdout: io.Discard, stderr: io.Discard}
	l := loadCard(e, card)
	body, media, err := submission(e, card, l)
	if err != nil || media != "application/json" || len(body) > schema.DefaultMaxBytes {
		t.Fatalf("submission: %d bytes %s %v", len(body), media, err)
	}
	if ind, _ := convert.Indented(l.card); len(ind) <= schema.DefaultMaxBytes {
		t.Errorf("the indented form is %d bytes, within the limit: not a test of issue 13", len(ind))
	}
	doc, err := schema.Decode("card", body, nil) // as serve decodes it
	if err != nil {
		t.Fatal(err)
	}
	if c, ds := convert.Prepare(doc, nil); c == nil || c.Digest != l.card.Digest {
		t.Fatalf("the submitted body is not the card: %v", ds)
	}

	// One pair of points past the limit as normalized.
	s2, s4 := normalizedSize(t, refCard(t, dir, 2)), normalizedSize(t, refCard(t, dir, 4))
	n := 4 + 2*((schema.DefaultMaxBytes-s2)/(s4-s2))
	refCard(t, dir, n)
	t.Setenv("MATGATE_TOKEN", "mgt_unused")
	for _, args := range [][]string{{"check", card}, {"submit", "--server", "http://127.0.0.1:1", "--out", filepath.Join(dir, "out"), card}} {
		code, out, errOut := matgate(t, "", args...)
		if code != exitInvalid || !strings.Contains(out, "/verification/references: the normalized card") {
			t.Errorf("%s of a card normalized just over the limit: exit %d\n%s%s", args[0], code, out, errOut)
		}
	}
	os.WriteFile(filepath.Join(dir, "curve.csv"), []byte("strain,stress\n"+strings.Repeat("#", convert.MaxReferenceBytes-13)), 0o644)
	for _, args := range [][]string{{"check", card}, {"submit", "--server", "http://127.0.0.1:1", "--out", filepath.Join(dir, "out"), card}} {
		code, out, errOut := matgate(t, "", args...)
		if code != exitInvalid || !strings.Contains(out, "/verification/references/0/file") || !strings.Contains(out, "for reference data") {
			t.Errorf("%s of a reference file one byte over its limit: exit %d\n%s%s", args[0], code, out, errOut)
		}
	}
}
