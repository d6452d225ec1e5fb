package checks

import (
	"context"
	"testing"
	"time"
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

// BenchmarkNewRecord is the record of a demo card's result: its encoding
// and RFC 8785 digest.
func BenchmarkNewRecord(b *testing.B) {
	for _, d := range demoSpecs(b) {
		res, err := Run(context.Background(), d.spec)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(d.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := NewRecord(res, RecordCard{ID: "x", Revision: 1, Digest: "sha256:0", Canonical: []byte(`{}`)}, Tool{Version: "bench"}, time.Time{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
