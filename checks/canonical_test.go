package checks

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/gowebpki/jcs"
)

// TestES6NumberRFC8785: the number serialization examples of RFC 8785
// (A. Rundgren, B. Jordan, S. Erdtman, JSON Canonicalization Scheme,
// 2020, Appendix B), IEEE 754 bit patterns and their canonical text. The
// table is from memory of the RFC; every row is also checked against
// gowebpki/jcs, an independent implementation, so a row remembered wrong
// shows as a disagreement with it, not as a silent pass.
func TestES6NumberRFC8785(t *testing.T) {
	cases := []struct {
		bits uint64
		want string
	}{
		{0x0000000000000000, "0"},
		{0x8000000000000000, "0"},
		{0x0000000000000001, "5e-324"},
		{0x8000000000000001, "-5e-324"},
		{0x7fefffffffffffff, "1.7976931348623157e+308"},
		{0xffefffffffffffff, "-1.7976931348623157e+308"},
		{0x4340000000000000, "9007199254740992"},
		{0xc340000000000000, "-9007199254740992"},
		{0x4430000000000000, "295147905179352830000"},
		{0x44b52d02c7e14af5, "9.999999999999997e+22"},
		{0x44b52d02c7e14af6, "1e+23"},
		{0x44b52d02c7e14af7, "1.0000000000000001e+23"},
		{0x444b1ae4d6e2ef4e, "999999999999999700000"},
		{0x444b1ae4d6e2ef4f, "999999999999999900000"},
		{0x444b1ae4d6e2ef50, "1e+21"},
		{0x3eb0c6f7a0b5ed8c, "9.999999999999997e-7"},
		{0x3eb0c6f7a0b5ed8d, "0.000001"},
		{0x41b3de4355555553, "333333333.3333332"},
		{0x41b3de4355555554, "333333333.33333325"},
		{0x41b3de4355555555, "333333333.3333333"},
		{0x41b3de4355555556, "333333333.3333334"},
		{0x41b3de4355555557, "333333333.33333343"},
		{0xbecbf647612f3696, "-0.0000033333333333333333"},
		{0x43143ff3c1cb0959, "1424953923781206.2"},
	}
	for _, c := range cases {
		v := math.Float64frombits(c.bits)
		got, err := appendES6Number(nil, v)
		if err != nil || string(got) != c.want {
			t.Errorf("%016x (%g): got %q (%v), want %q", c.bits, v, got, err, c.want)
		}
		ref, err := jcs.Transform([]byte(fmt.Sprintf("[%s]", strconvG(v))))
		if err != nil || string(ref) != "["+c.want+"]" {
			t.Errorf("%016x: gowebpki/jcs gives %s (%v), the table %q", c.bits, ref, err, c.want)
		}
	}
	for _, bits := range []uint64{0x7fffffffffffffff, 0x7ff0000000000000, 0xfff0000000000000} {
		if _, err := appendES6Number(nil, math.Float64frombits(bits)); err == nil {
			t.Errorf("%016x: no error for a non-finite number", bits)
		}
	}
}

func strconvG(v float64) string {
	b, _ := json.Marshal(v)
	return string(b)
}

// TestCanonicalAgainstJCS: on random doubles (all magnitudes), on strings
// with every kind of escape and non-ASCII names, and on the records of the
// demo-like cards, canonicalJSON gives the same bytes as gowebpki/jcs.
func TestCanonicalAgainstJCS(t *testing.T) {
	rng := rand.New(rand.NewPCG(8785, 1))
	var nums []float64
	for i := 0; i < 20000; i++ {
		nums = append(nums, math.Float64frombits(rng.Uint64()))
		nums = append(nums, (rng.Float64()-0.5)*math.Pow(10, float64(rng.IntN(60)-30)))
	}
	var finite []float64
	for _, v := range nums {
		if !math.IsNaN(v) && !math.IsInf(v, 0) {
			finite = append(finite, v)
		}
	}
	doc := map[string]any{
		"numbers": finite,
		"strings": []string{"plain", "quote \" backslash \\ slash /", "\b\f\n\r\t\x00\x01\x1f\x7f", "<&>", "\u2028\u2029", "é ü € 𝄞", "\U0001F600"},
		"z":       map[string]any{"b": 1, "a": []any{true, false, nil}, "é": "e-acute", "€": 1, "\U0001F600": 2, "\uff61": 3},
		"empty":   map[string]any{},
		"list":    []any{},
	}
	raw, err := json.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	checkAgainstJCS(t, "random document", raw)
	// A literal escaped non-BMP character and a surrogate pair.
	checkAgainstJCS(t, "escapes", []byte(`{"\ud834\udd1e":"\u00e9\ud83d\ude00","a\u0000":"\/"}`))
}

func checkAgainstJCS(t *testing.T, what string, raw []byte) {
	t.Helper()
	got, err := canonicalJSON(raw)
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	want, err := jcs.Transform(raw)
	if err != nil {
		t.Fatalf("%s: jcs: %v", what, err)
	}
	if !bytes.Equal(got, want) {
		i := 0
		for i < len(got) && i < len(want) && got[i] == want[i] {
			i++
		}
		lo := max(0, i-60)
		t.Errorf("%s: differs from gowebpki/jcs at byte %d:\n got %q\nwant %q", what, i, got[lo:min(len(got), i+60)], want[lo:min(len(want), i+60)])
	}
}

// TestCanonicalRecords: the canonical bytes of verification records, as
// NewRecord digests them, equal gowebpki/jcs's.
func TestCanonicalRecords(t *testing.T) {
	for _, d := range demoSpecs(t) {
		res, err := Run(context.Background(), d.spec)
		if err != nil {
			t.Fatal(err)
		}
		rec, err := NewRecord(res, RecordCard{ID: "x", Revision: 1, Digest: "sha256:0", Canonical: []byte(`{"a":1}`)}, Tool{Version: "test"}, time.Unix(0, 0).UTC())
		if err != nil {
			t.Fatal(err)
		}
		raw, err := json.Marshal(rec)
		if err != nil {
			t.Fatal(err)
		}
		checkAgainstJCS(t, d.name, raw)
	}
}

// TestCanonicalRejects: what RFC 8785 has no canonical form for, and
// malformed JSON, is an error, not a guess.
func TestCanonicalRejects(t *testing.T) {
	for _, in := range []string{`{"a":1,"a":2}`, `[1] x`, `{"a" 1}`, `[1,]`, "\"\xff\"", `"\ud800"`, `[1e400]`, `{`, `nul`} {
		if out, err := canonicalJSON([]byte(in)); err == nil {
			t.Errorf("%q: accepted as %q", in, out)
		}
	}
}
