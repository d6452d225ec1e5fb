package schema

import (
	"bytes"
	"encoding/json"
	"errors"
	"os"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
)

// FuzzDecode checks, for any input, that Decode does not panic, that a
// rejected input comes back as located Diagnostics with no Card, and that an
// accepted card survives a round trip: its Card, encoded as JSON and decoded
// again, is accepted and equal (an empty list and an absent one are equal:
// the JSON encoding omits both). Seeds are the demo cards and the bad-card
// corpus.
func FuzzDecode(f *testing.F) {
	for _, name := range append(goodCards(f), badCards(f)...) {
		data, err := os.ReadFile(name)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		doc, err := Decode("fuzz.yaml", data, nil)
		if doc == nil {
			t.Fatal("Decode returned a nil Document")
		}
		if err != nil {
			var ds Diagnostics
			if !errors.As(err, &ds) {
				t.Fatalf("error %v is %T, want Diagnostics", err, err)
			}
			if !ds.HasErrors() || doc.Card != nil {
				t.Fatalf("rejected with HasErrors=%v, Card=%v", ds.HasErrors(), doc.Card != nil)
			}
			lines := bytes.Count(data, []byte("\n")) + bytes.Count(data, []byte("\r")) + 1
			for _, d := range ds {
				if d.File != "fuzz.yaml" || d.Message == "" || d.Pos.Line < 0 || d.Pos.Line > lines {
					t.Fatalf("malformed diagnostic %+v (input has at most %d lines)", d, lines)
				}
			}
			return
		}
		if doc.Card == nil {
			t.Fatal("accepted without a Card")
		}
		raw, err := json.Marshal(doc.Card)
		if err != nil {
			t.Fatalf("marshal accepted card: %v", err)
		}
		again, err := Decode("again.json", raw, nil)
		if err != nil {
			t.Fatalf("accepted card %s does not re-validate: %v", raw, err)
		}
		if diff := cmp.Diff(doc.Card, again.Card, cmpopts.EquateEmpty()); diff != "" {
			t.Fatalf("round trip changed the card (-first +again):\n%s", diff)
		}
	})
}
