package checks

import (
	"context"
	"crypto/ed25519"
	"encoding/json"
	"errors"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

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
