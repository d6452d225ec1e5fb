package checks

import (
	"context"
	"os"
	"path/filepath"
	"testing"
	"time"

	"matgate/convert"
	"matgate/schema"
)

// BenchmarkVerify is the full standard verification (every case and its
// half-increment rerun) of each demo card.
func BenchmarkVerify(b *testing.B) {
	for _, d := range demoSpecs(b) {
		b.Run(d.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Run(context.Background(), d.spec); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkRecord is the record of a demo card's result as verify makes
// it, beside BenchmarkVerify: the record, its RFC 8785 encoding and digest
// and the bytes written to disk (NewRecordJSON), with the card's canonical
// form embedded.
func BenchmarkRecord(b *testing.B) {
	for _, d := range demoSpecs(b) {
		res, err := Run(context.Background(), d.spec)
		if err != nil {
			b.Fatal(err)
		}
		card := demoCard(b, d.name)
		b.Run(d.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, _, err := NewRecordJSON(res, card, Tool{Version: "bench"}, time.Time{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// demoCard returns the record card of the demo card file
// testdata/cards/<name>.*: its canonical form as convert makes it.
func demoCard(b *testing.B, name string) RecordCard {
	paths, err := filepath.Glob(filepath.Join("..", "testdata", "cards", name+".*"))
	if err != nil || len(paths) != 1 {
		b.Fatalf("demo card %s: %v %v", name, paths, err)
	}
	data, err := os.ReadFile(paths[0])
	if err != nil {
		b.Fatal(err)
	}
	doc, err := schema.Decode(paths[0], data, nil)
	if err != nil {
		b.Fatal(err)
	}
	c, ds := convert.Prepare(doc, nil)
	if c == nil {
		b.Fatal(ds)
	}
	canon, err := convert.Canonical(c)
	if err != nil {
		b.Fatal(err)
	}
	return RecordCard{ID: c.ID, Revision: c.Revision, Digest: c.Digest, Canonical: canon}
}
