package worker

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/gowebpki/jcs"

	"matgate/checks"
	"matgate/convert"
	"matgate/worker/cardspace"
)

// TestRecordBytesAgainstJCS: the stored bytes of the records of the demo
// cards and of random plausible cards (worker/cardspace, seed 8785) are
// the RFC 8785 encoding of the record, as Verify makes them and as
// RecordJSON makes them again: gowebpki/jcs, an independent
// implementation, gives the same bytes from encoding/json's text of the
// same record; they read back, their digest holds, and the neutral card
// indented from the canonical form is the card's indented canonical form.
func TestRecordBytesAgainstJCS(t *testing.T) {
	paths, err := filepath.Glob("../testdata/cards/*")
	if err != nil || len(paths) == 0 {
		t.Fatalf("no demo cards: %v", err)
	}
	type input struct {
		name string
		data []byte
	}
	var inputs []input
	for _, p := range paths {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		inputs = append(inputs, input{filepath.Base(p), b})
	}
	for i := range 3 {
		inputs = append(inputs, input{fmt.Sprintf("cardspace-8785-%d.yaml", i), cardspace.Card(8785, i)})
	}
	for _, in := range inputs {
		c := prepareTestCard(t, in.name, in.data)
		out, err := Verify(context.Background(), c, testTool, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
		if err != nil {
			t.Fatalf("%s: %v", in.name, err)
		}
		again, err := RecordJSON(out.Record)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(out.RecordJSON, again) {
			t.Errorf("%s: Outputs.RecordJSON differs from RecordJSON of the record", in.name)
		}
		b := bytes.TrimSuffix(out.RecordJSON, []byte("\n"))
		type plain checks.Record // encoding/json's own encoding, not MarshalJSON
		raw, err := json.Marshal((*plain)(out.Record))
		if err != nil {
			t.Fatal(err)
		}
		want, err := jcs.Transform(raw)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(b, want) {
			i := 0
			for i < len(b) && i < len(want) && b[i] == want[i] {
				i++
			}
			t.Errorf("%s: record bytes differ from gowebpki/jcs at byte %d of %d", in.name, i, len(want))
		}
		r, err := checks.ParseRecord(b)
		if err != nil {
			t.Fatalf("%s: %v", in.name, err)
		}
		if err := r.VerifyIntegrity(nil); err != nil {
			t.Errorf("%s: %v", in.name, err)
		}
		card, err := convert.Indented(c)
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(card, out.Card) {
			t.Errorf("%s: neutral card differs from convert.Indented", in.name)
		}
		t.Logf("%s: record %d bytes", in.name, len(b))
	}
}
