package schema

import (
	"fmt"
	"strings"
	"testing"
)

// BenchmarkDecode decodes a valid card in YAML and JSON, and a YAML card
// with n reference points (the part of a card that grows), to show how
// decoding and validation scale.
func BenchmarkDecode(b *testing.B) {
	cases := []struct{ name, src string }{
		{"yaml", minimalYAML},
		{"json", minimalJSON},
	}
	for _, n := range []int{100, 1000} {
		var pts strings.Builder
		for i := range n {
			if i > 0 {
				pts.WriteString(", ")
			}
			fmt.Fprintf(&pts, "[%g, %g]", float64(i)*1e-4, 250+float64(i)*0.1)
		}
		src := strings.Replace(minimalYAML, "[[0, 0], [0.01, 260]]", "["+pts.String()+"]", 1)
		cases = append(cases, struct{ name, src string }{fmt.Sprintf("yaml-points-%d", n), src})
	}
	for _, tc := range cases {
		data := []byte(tc.src)
		b.Run(tc.name, func(b *testing.B) {
			b.SetBytes(int64(len(data)))
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Decode("bench", data, nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkDecodeLongLine decodes a JSON card of about 1 MiB written on one
// line (a minified file): position lookup must stay linear in the length.
func BenchmarkDecodeLongLine(b *testing.B) {
	var pts strings.Builder
	for i := 0; pts.Len() < 1000000; i++ {
		if i > 0 {
			pts.WriteString(",")
		}
		fmt.Fprintf(&pts, "[%d,%d]", i, i)
	}
	src := strings.Replace(strings.ReplaceAll(minimalJSON, "\n", ""), "[[0, 0], [0.01, 260]]", "["+pts.String()+"]", 1)
	data := []byte(src)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Decode("long.json", data, nil); err != nil {
			b.Fatal(err)
		}
	}
}
