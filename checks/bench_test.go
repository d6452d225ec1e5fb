package checks

import (
	"context"
	"testing"
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
