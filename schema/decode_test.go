package schema

import (
	"errors"
	"os"
	"path/filepath"
	"testing"
)

// goodCards are the demo cards, the temperature-dependent ones included;
// each must decode without a diagnostic.
func goodCards(t testing.TB) []string {
	t.Helper()
	files, err := filepath.Glob("../testdata/cards/*")
	if err != nil {
		t.Fatal(err)
	}
	more, err := filepath.Glob("../testdata/temperature/*")
	if err != nil {
		t.Fatal(err)
	}
	files = append(files, more...)
	var cards []string
	for _, f := range files {
		switch filepath.Ext(f) {
		case ".yaml", ".yml", ".json":
			cards = append(cards, f)
		}
	}
	if len(cards) == 0 {
		t.Fatal("no demo cards in ../testdata/cards")
	}
	return cards
}

func TestDecodeGoodCards(t *testing.T) {
	for _, f := range goodCards(t) {
		t.Run(filepath.Base(f), func(t *testing.T) {
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			doc, err := Decode(f, data, nil)
			if err != nil {
				var ds Diagnostics
				if !errors.As(err, &ds) {
					t.Fatalf("error is %T, want Diagnostics", err)
				}
				t.Fatalf("Decode: %v", err)
			}
			if doc.Card == nil || doc.Card.Format != Format {
				t.Fatalf("Card = %+v, want a card of format %s", doc.Card, Format)
			}
		})
	}
}
