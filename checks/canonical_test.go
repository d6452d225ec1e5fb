package checks

import (
	"bytes"
	"context"
	"crypto/ed25519"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/gowebpki/jcs"
)

// TestES6NumberRFC8785: numbers in their canonical text, RFC 8785
// (A. Rundgren, B. Jordan, S. Erdtman, JSON Canonicalization Scheme, 2020):
// the IEEE 754 bit patterns of its Appendix B ("Number Serialization
// Samples") and the rules of its sec. 3.2.2.3 ("Serialization of
// Numbers", which defers to ECMAScript's Number::toString: plain notation
// for decimal exponents n with -6 < n <= 21, else d.ddde+-x; -0 as 0; no
// NaN or infinities). The Appendix B table is from memory of the RFC;
// every row is also checked against gowebpki/jcs, an independent
// implementation, so a row remembered wrong shows as a disagreement with
// it, not as a silent pass.
func TestES6NumberRFC8785(t *testing.T) {
	const appB, sec3223 = "RFC 8785 App. B", "RFC 8785 sec. 3.2.2.3"
	cases := []struct {
		bits uint64
		want string
		src  string
	}{
		{0x0000000000000000, "0", appB + ": zero"},
		{0x8000000000000000, "0", appB + ": minus zero is written 0"},
		{0x0000000000000001, "5e-324", appB + ": min. positive subnormal"},
		{0x8000000000000001, "-5e-324", appB + ": min. negative subnormal"},
		{0x7fefffffffffffff, "1.7976931348623157e+308", appB + ": max. positive double"},
		{0xffefffffffffffff, "-1.7976931348623157e+308", appB + ": max. negative double"},
		{0x4340000000000000, "9007199254740992", appB + ": 2^53, max. integer"},
		{0xc340000000000000, "-9007199254740992", appB + ": -2^53"},
		{0x4430000000000000, "295147905179352830000", appB + ": 2^68, plain below 1e21"},
		{0x44b52d02c7e14af5, "9.999999999999997e+22", appB},
		{0x44b52d02c7e14af6, "1e+23", appB},
		{0x44b52d02c7e14af7, "1.0000000000000001e+23", appB},
		{0x444b1ae4d6e2ef4e, "999999999999999700000", appB},
		{0x444b1ae4d6e2ef4f, "999999999999999900000", appB + ": largest double below 1e21, plain"},
		{0x444b1ae4d6e2ef50, "1e+21", appB + ": 1e21 switches to exponent notation, with '+'"},
		{0x3eb0c6f7a0b5ed8c, "9.999999999999997e-7", appB + ": below 1e-6, exponent notation"},
		{0x3eb0c6f7a0b5ed8d, "0.000001", appB + ": 1e-6 stays plain"},
		{0x41b3de4355555553, "333333333.3333332", appB},
		{0x41b3de4355555554, "333333333.33333325", appB},
		{0x41b3de4355555555, "333333333.3333333", appB},
		{0x41b3de4355555556, "333333333.3333334", appB},
		{0x41b3de4355555557, "333333333.33333343", appB},
		{0xbecbf647612f3696, "-0.0000033333333333333333", appB},
		{0x43143ff3c1cb0959, "1424953923781206.2", appB + ": rounding of the last digit"},
		{math.Float64bits(1e-7), "1e-7", sec3223 + ": 1e-7 (n = -6) in exponent notation, no zero padding of the exponent"},
		{math.Float64bits(1e20), "100000000000000000000", sec3223 + ": 1e20 (n = 21) plain"},
		{math.Float64bits(1.5), "1.5", sec3223 + ": shortest round-trip digits"},
		{math.Float64bits(-1e-300), "-1e-300", sec3223 + ": negative exponent"},
	}
	for _, c := range cases {
		v := math.Float64frombits(c.bits)
		got, err := appendES6Number(nil, v)
		if err != nil || string(got) != c.want {
			t.Errorf("%016x (%g, %s): got %q (%v), want %q", c.bits, v, c.src, got, err, c.want)
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
	sameAsJCS(t, what, got, raw)
}

// sameAsJCS reports where got differs from gowebpki/jcs's encoding of raw.
func sameAsJCS(t *testing.T, what string, got, raw []byte) {
	t.Helper()
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

// TestCanonicalRecords: the record encoder (Record.MarshalJSON) writes
// the bytes gowebpki/jcs makes of what encoding/json writes of the same
// record, for the demo-like cards' records in both formats, signed and
// not, and NewRecordJSON's bytes (the digest put into place) are the same.
func TestCanonicalRecords(t *testing.T) {
	key := ed25519.NewKeyFromSeed(make([]byte, ed25519.SeedSize))
	for _, d := range demoSpecs(t) {
		res, err := Run(context.Background(), d.spec)
		if err != nil {
			t.Fatal(err)
		}
		rec, b, err := NewRecordJSON(res, RecordCard{ID: "x", Revision: 1, Digest: "sha256:0", Canonical: []byte(`{"a":1,"b":[1e-7,"é"]}`)}, Tool{Version: "test"}, time.Unix(0, 0).UTC())
		if err != nil {
			t.Fatal(err)
		}
		checkEncoder(t, d.name, rec)
		if again, err := rec.MarshalJSON(); err != nil || !bytes.Equal(b, again) {
			t.Errorf("%s: NewRecordJSON's bytes differ from MarshalJSON's (%v)", d.name, err)
		}
		if err := rec.Sign(key); err != nil {
			t.Fatal(err)
		}
		checkEncoder(t, d.name+" signed", rec)
		v1 := *rec
		v1.Format = RecordFormatV1
		checkEncoder(t, d.name+" as matgate.record/1", &v1)
	}
}

// checkEncoder compares rec.MarshalJSON with gowebpki/jcs applied to
// encoding/json's text of rec (a matgate.record/1 series as the sample
// objects that format had).
func checkEncoder(t *testing.T, what string, rec *Record) {
	t.Helper()
	got, err := rec.MarshalJSON()
	if err != nil {
		t.Fatalf("%s: %v", what, err)
	}
	type plain Record // without MarshalJSON
	var raw []byte
	if rec.Format == RecordFormatV1 {
		type caseV1 struct {
			Case
			Series []sampleV1 `json:"series"`
		}
		var m map[string]any
		b, _ := json.Marshal((*plain)(rec))
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		cases := m["cases"].([]any)
		for i, c := range rec.Cases {
			var rows []sampleV1
			for _, s := range c.Series.Samples() {
				rows = append(rows, sampleV1{s.Strain, s.Stress, s.PlasticStrain, s.BackStress, s.P, s.ShearStrain, s.ShearStress, s.Gap})
			}
			if c.Series != nil && rows == nil {
				rows = []sampleV1{}
			}
			cases[i].(map[string]any)["series"] = rows
		}
		raw, err = json.Marshal(m)
	} else {
		raw, err = json.Marshal((*plain)(rec))
	}
	if err != nil {
		t.Fatal(err)
	}
	sameAsJCS(t, what, got, raw)
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
