package checks

import (
	"bytes"
	"compress/gzip"
	"context"
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"flag"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/gowebpki/jcs"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
)

var update = flag.Bool("update", false, "rewrite the golden files under testdata/")

// steelRecord verifies the steel demo card and returns its record made at
// the given time. The canonical card is a stand-in: the neutral card
// belongs to convert; the record only carries it.
func steelRecord(t *testing.T, created time.Time) *Record {
	t.Helper()
	d := demoSpecs(t)[2]
	res, err := Run(context.Background(), d.spec)
	if err != nil {
		t.Fatal(err)
	}
	card := RecordCard{ID: "demo-canopy-steel", Revision: 4, Digest: "sha256:0000000000000000000000000000000000000000000000000000000000000000",
		Canonical: json.RawMessage(`{"format":"matgate.card/1","id":"demo-canopy-steel","revision":4}`)}
	r, err := NewRecord(res, card, Tool{Version: "test", Commit: "none"}, created)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func TestRecordDeterministic(t *testing.T) {
	a := steelRecord(t, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
	b := steelRecord(t, time.Date(2027, 6, 7, 8, 9, 10, 0, time.FixedZone("x", 3600)))
	if a.Created == b.Created || a.Digest == b.Digest {
		t.Fatalf("created or digest equal across runs: %s %s", a.Created, a.Digest)
	}
	if b.Created != "2027-06-07T07:09:10Z" {
		t.Errorf("created %q, want UTC RFC 3339 2027-06-07T07:09:10Z", b.Created)
	}
	ja, _ := json.Marshal(a)
	b.Created, b.Digest = a.Created, a.Digest
	jb, _ := json.Marshal(b)
	if string(ja) != string(jb) {
		t.Fatalf("two runs differ apart from created and digest")
	}
}

func TestRecordIntegrity(t *testing.T) {
	r := steelRecord(t, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
	seed := make([]byte, ed25519.SeedSize)
	for i := range seed {
		seed[i] = byte(i + 1) // fixed test key, never a real one
	}
	priv := ed25519.NewKeyFromSeed(seed)
	pub := priv.Public().(ed25519.PublicKey)
	if err := r.Sign(priv); err != nil {
		t.Fatal(err)
	}
	raw, err := json.Marshal(r)
	if err != nil {
		t.Fatal(err)
	}
	back, err := ParseRecord(raw)
	if err != nil {
		t.Fatal(err)
	}
	if err := back.VerifyIntegrity(pub); err != nil {
		t.Fatalf("intact record: %v", err)
	}
	if err := back.VerifyIntegrity(nil); err != nil {
		t.Fatalf("intact record, digest only: %v", err)
	}
	if back.Signature.KeyID != KeyID(pub) || len(back.Signature.KeyID) != 16 {
		t.Errorf("key id %q", back.Signature.KeyID)
	}

	// One changed byte in a number of a check.
	i := strings.Index(string(raw), `"value":`)
	j := i + len(`"value":`)
	mod := []byte(string(raw))
	if mod[j] == '9' {
		mod[j] = '8'
	} else if mod[j] >= '0' && mod[j] < '9' {
		mod[j]++
	} else {
		t.Fatalf("unexpected byte %q", mod[j])
	}
	changed, err := ParseRecord(mod)
	if err != nil {
		t.Fatal(err)
	}
	if err := changed.VerifyIntegrity(nil); !errors.Is(err, ErrDigestMismatch) {
		t.Errorf("changed byte: got %v, want ErrDigestMismatch", err)
	}

	// A wrong key.
	other := ed25519.NewKeyFromSeed(make([]byte, ed25519.SeedSize))
	if err := back.VerifyIntegrity(other.Public().(ed25519.PublicKey)); !errors.Is(err, ErrKeyMismatch) {
		t.Errorf("wrong key: got %v, want ErrKeyMismatch", err)
	}
	// A signature made by another key under this key's id.
	forged := *back
	sig := *back.Signature
	forged.Signature = &sig
	tmp := *back
	if err := tmp.Sign(other); err != nil {
		t.Fatal(err)
	}
	forged.Signature.Value = tmp.Signature.Value
	if err := forged.VerifyIntegrity(pub); !errors.Is(err, ErrBadSignature) {
		t.Errorf("signature of another key: got %v, want ErrBadSignature", err)
	}
	// Unsigned.
	unsigned := *back
	unsigned.Signature = nil
	if err := unsigned.VerifyIntegrity(pub); !errors.Is(err, ErrUnsigned) {
		t.Errorf("unsigned: got %v, want ErrUnsigned", err)
	}
}

// TestGoldenRecord compares the steel demo record with
// testdata/record/steel-prager/record.json numerically (relative 1e-12 on
// numbers; created and digest masked). Regenerate with -update.
func TestGoldenRecord(t *testing.T) {
	r := steelRecord(t, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
	r.Created, r.Digest = "MASKED", "MASKED"
	got, err := json.MarshalIndent(r, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join("testdata", "record", "steel-prager", "record.json")
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, append(got, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -run TestGoldenRecord -update)", err)
	}
	var g, w any
	if err := json.Unmarshal(got, &g); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(want, &w); err != nil {
		t.Fatal(err)
	}
	// Round-off differs across platforms (FMA); 1e-12 relative is far
	// above it and far below any change of a result.
	opt := cmp.Comparer(func(a, b float64) bool {
		return a == b || math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b)) || math.Abs(a-b) <= 1e-300
	})
	if diff := cmp.Diff(w, g, opt, cmpopts.EquateEmpty()); diff != "" {
		t.Errorf("record differs from %s (-want +got):\n%s", path, diff)
	}
}

// v1Fixture returns testdata/records/steel-prager-v1.record.json.gz: the
// record of the steel demo card as matgate verify wrote it in
// matgate.record/1, before the series were stored by column.
func v1Fixture(t *testing.T) []byte {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", "records", "steel-prager-v1.record.json.gz"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// TestRecordV1: a matgate.record/1 record made by the code before
// matgate.record/2 reads, keeps its digest, encodes to the bytes
// gowebpki/jcs makes of the file, and is refused with a field of its
// format's samples added or with the other format's name.
func TestRecordV1(t *testing.T) {
	b := v1Fixture(t)
	r, err := ParseRecord(b)
	if err != nil {
		t.Fatal(err)
	}
	if r.Format != RecordFormatV1 {
		t.Fatalf("format %q", r.Format)
	}
	if err := r.VerifyIntegrity(nil); err != nil {
		t.Fatal(err)
	}
	got, err := r.MarshalJSON()
	if err != nil {
		t.Fatal(err)
	}
	want, err := jcs.Transform(b)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("re-encoded matgate.record/1 differs from gowebpki/jcs of the file")
	}
	gaps := 0
	for _, c := range r.Cases {
		gaps += len(c.Series.Gaps)
	}
	if gaps == 0 {
		t.Errorf("no gap read from the fixture, which has one")
	}
	for _, bad := range []struct{ name, old, new string }{
		{"field in a sample", `"accumulated_plastic_strain":`, `"rounded": true, "accumulated_plastic_strain":`},
		{"field at the top", `"caution":`, `"approved": true, "caution":`},
		{"format relabelled", `"matgate.record/1"`, `"matgate.record/2"`},
		{"unknown format", `"matgate.record/1"`, `"matgate.record/3"`},
	} {
		e := bytes.Replace(b, []byte(bad.old), []byte(bad.new), 1)
		if bytes.Equal(e, b) {
			t.Fatalf("%s: %q not in the fixture", bad.name, bad.old)
		}
		if _, err := ParseRecord(e); !errors.Is(err, ErrBadRecord) {
			t.Errorf("%s: got %v, want ErrBadRecord", bad.name, err)
		}
	}
}

// TestRecordV2Strict: a matgate.record/2 record is refused with a member
// added to a series, a column of another length, a gap out of order, or a
// series as sample objects.
func TestRecordV2Strict(t *testing.T) {
	r := steelRecord(t, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
	b, err := r.MarshalJSON()
	if err != nil {
		t.Fatal(err)
	}
	if _, err := ParseRecord(b); err != nil {
		t.Fatal(err)
	}
	for _, bad := range []struct{ name, old, new string }{
		{"member in a series", `"series":{`, `"series":{"smoothed":true,`},
		{"short column", `"back_stress":[`, `"back_stress":[1,`},
		{"gap at the first sample", `"series":{`, `"series":{"gaps":[0],`},
		{"series as samples", `"series":{`, `"series":[{"strain":0,"stress":0,"plastic_strain":0,"back_stress":0,"accumulated_plastic_strain":0}],"x":{`},
	} {
		e := bytes.Replace(b, []byte(bad.old), []byte(bad.new), 1)
		if bytes.Equal(e, b) {
			t.Fatalf("%s: %q not in the record", bad.name, bad.old)
		}
		if _, err := ParseRecord(e); !errors.Is(err, ErrBadRecord) {
			t.Errorf("%s: got %v, want ErrBadRecord", bad.name, err)
		}
	}
}

// TestRecordReproducesV1: a matgate.record/1 record is reproduced by a
// re-run whose series are thinned from its own, and not once a sample of
// the re-run is moved or a check changed.
func TestRecordReproducesV1(t *testing.T) {
	created := time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC)
	full := steelRecord(t, created)
	// The old record: every first-stage sample, as the rows of /1.
	old := *full
	old.Format = RecordFormatV1
	old.Cases = slices.Clone(full.Cases)
	for i, c := range old.Cases {
		if c.Series == nil {
			continue
		}
		s := &Series{rows: true}
		for _, smp := range c.Series.Samples() {
			s.append(smp, false)
			// a sample between every two, as thinning would have left out
			mid := smp
			mid.Strain += 1e-9
			s.append(mid, false)
		}
		s.dropZeroColumns()
		old.Cases[i].Series = s
	}
	d, err := old.ComputeDigest()
	if err != nil {
		t.Fatal(err)
	}
	old.Digest = d
	if ok, err := old.Reproduces(full); !ok || err != nil {
		t.Fatalf("thinned re-run does not reproduce: %v %v", ok, err)
	}
	moved := *full
	moved.Cases = slices.Clone(full.Cases)
	for i, c := range moved.Cases {
		if c.Series.Len() > 2 {
			s := *c.Series
			s.Strain = slices.Clone(s.Strain)
			s.Strain[1] += 1e-6
			moved.Cases[i].Series = &s
			break
		}
	}
	if ok, _ := old.Reproduces(&moved); ok {
		t.Errorf("a re-run with a moved sample reproduces")
	}
	changed := *full
	changed.Verdict = "fail"
	if ok, _ := old.Reproduces(&changed); ok {
		t.Errorf("a re-run with another verdict reproduces")
	}
}
