package worker

import (
	"bytes"
	"context"
	"crypto/ed25519"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

func errorsIs(err, target error) bool { return errors.Is(err, target) }

// storeOutputs verifies a demo card in-process and returns its job id and
// the bytes the store keeps (copies of one verification per card: the
// outputs are the same every time, stamped with a fixed time).
func storeOutputs(t testing.TB, file string) (id string, rec, card []byte) {
	t.Helper()
	type outputs struct {
		id        string
		rec, card []byte
	}
	o, ok := storeOutputsMemo.Load(file)
	if !ok {
		c := loadTestCard(t, filepath.Join("..", "testdata", "cards", file))
		out, err := Verify(context.Background(), c, testTool, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
		if err != nil {
			t.Fatal(err)
		}
		rec, err := RecordJSON(out.Record)
		if err != nil {
			t.Fatal(err)
		}
		o, _ = storeOutputsMemo.LoadOrStore(file, outputs{JobID(c.Digest, Settings{ToolVersion: testTool.Version}), rec, out.Card})
	}
	v := o.(outputs)
	return v.id, bytes.Clone(v.rec), bytes.Clone(v.card)
}

var storeOutputsMemo sync.Map // file -> outputs

func TestDirStorePutIdempotent(t *testing.T) {
	dir := t.TempDir()
	s, err := OpenDirStore(dir)
	if err != nil {
		t.Fatal(err)
	}
	id, rec, card := storeOutputs(t, "al-bilinear.yaml")
	if added, err := putJSON(t, s, id, rec, card); !added || err != nil {
		t.Fatalf("first put: %v %v", added, err)
	}
	if added, err := putJSON(t, s, id, rec, card); added || err != nil {
		t.Errorf("second put: added %v, %v; want a no-op", added, err)
	}
	got, err := s.Record(id)
	if err != nil || string(got) != string(rec) {
		t.Errorf("record read back: %v", err)
	}
	if _, err := s.Record(strings.Repeat("0", 64)); !errors.Is(err, ErrNotFound) {
		t.Errorf("unknown id: %v", err)
	}
	// A second writer is refused while the first holds the directory.
	if _, err := OpenDirStore(dir); err == nil {
		t.Errorf("a second OpenDirStore of the same directory succeeded")
	}
	s.Close()
	// Reopened, the store still has the record; a crashed Put that left
	// the files but no ledger line is completed by the retry.
	id2, rec2, card2 := storeOutputs(t, "steel-prager.json")
	os.MkdirAll(filepath.Join(dir, id2[:2]), 0o755)
	os.WriteFile(filepath.Join(dir, recordName(id2)), rec2, 0o444)
	if rep, _ := VerifyLedger(dir, nil); rep.Break == nil || !strings.Contains(rep.Break.Error(), "not in the ledger") {
		t.Errorf("left-over file: ledger verify says %v", rep.Break)
	}
	s, err = OpenDirStore(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if !s.Has(id) {
		t.Errorf("reopened store lost %s", id)
	}
	if added, err := putJSON(t, s, id2, rec2, card2); !added || err != nil {
		t.Errorf("put over a left-over identical file: %v %v", added, err)
	}
	// A different record under an id whose file exists is a conflict.
	id3, rec3, card3 := storeOutputs(t, "ss-chaboche.yaml")
	os.MkdirAll(filepath.Join(dir, id3[:2]), 0o755)
	os.WriteFile(filepath.Join(dir, cardName(id3)), []byte("{}\n"), 0o444)
	if _, err := putJSON(t, s, id3, rec3, card3); !errors.Is(err, ErrConflict) {
		t.Errorf("put over a different file: %v, want ErrConflict", err)
	}
	for _, bad := range []string{"../" + id, "", strings.Repeat("A", 64), id[:63]} {
		if _, err := putJSON(t, s, bad, rec, card); err == nil {
			t.Errorf("put with id %q succeeded", bad)
		}
	}
}

// TestLedgerVerify damages an intact directory in each of the ways an
// auditor must see and checks that ledger verify reports the first break.
func TestLedgerVerify(t *testing.T) {
	build := func(t *testing.T) (string, []string) { return storeDemoCards(t, nil) }
	dir, _ := build(t)
	if rep, err := VerifyLedger(dir, nil); err != nil || rep.Break != nil || rep.Entries != 3 || rep.Files != 6 {
		t.Fatalf("intact directory: %+v %v", rep, err)
	}
	ledgerLines := func(dir string) []string {
		b, _ := os.ReadFile(filepath.Join(dir, LedgerName))
		return strings.SplitAfter(string(b), "\n")
	}
	tests := []struct {
		name   string
		damage func(dir string, ids []string)
		want   string
	}{
		{"changed byte in a record", func(dir string, ids []string) {
			p := filepath.Join(dir, recordName(ids[1]))
			b, _ := os.ReadFile(p)
			b[len(b)/2] ^= 1
			os.Chmod(p, 0o644)
			os.WriteFile(p, b, 0o444)
		}, "ledger.jsonl:2: " + ids1Prefix},
		{"record removed", func(dir string, ids []string) { os.Remove(filepath.Join(dir, recordName(ids[0]))) }, "ledger.jsonl:1:"},
		{"line removed", func(dir string, ids []string) {
			l := ledgerLines(dir)
			os.WriteFile(filepath.Join(dir, LedgerName), []byte(l[0]+l[2]), 0o644)
		}, "ledger.jsonl:2: sequence number 3"},
		{"verdict edited in the ledger", func(dir string, ids []string) {
			l := ledgerLines(dir)
			l[0] = strings.Replace(l[0], `"verdict":"pass"`, `"verdict":"fail"`, 1)
			os.WriteFile(filepath.Join(dir, LedgerName), []byte(strings.Join(l, "")), 0o644)
		}, "ledger.jsonl:2: prev"},
		{"torn last line", func(dir string, ids []string) {
			f, _ := os.OpenFile(filepath.Join(dir, LedgerName), os.O_APPEND|os.O_WRONLY, 0)
			f.WriteString(`{"seq":4,"id":"`)
			f.Close()
		}, "incomplete"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			dir, ids := build(t)
			tc.damage(dir, ids)
			rep, err := VerifyLedger(dir, nil)
			if err != nil {
				t.Fatal(err)
			}
			want := strings.Replace(tc.want, ids1Prefix, ids[1][:2], 1)
			if rep.Break == nil || !strings.Contains(rep.Break.Error(), want) {
				t.Errorf("break %v, want one containing %q", rep.Break, want)
			}
		})
	}
	// Opening the directory cuts off a torn last line; the rest verifies.
	dir, _ = build(t)
	f, _ := os.OpenFile(filepath.Join(dir, LedgerName), os.O_APPEND|os.O_WRONLY, 0)
	f.WriteString(`{"seq":4,"id":"`)
	f.Close()
	s, err := OpenDirStore(dir)
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
	if rep, _ := VerifyLedger(dir, nil); rep.Break != nil || rep.Entries != 3 {
		t.Errorf("after reopening: %+v", rep)
	}
}

// storeDemoCards returns a records directory holding the demo cards'
// outputs, stored as serve stores them (admit; signed with key unless it
// is nil), and their ids.
func storeDemoCards(t *testing.T, key ed25519.PrivateKey) (string, []string) {
	t.Helper()
	dir := t.TempDir()
	s, err := OpenDirStore(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var ids []string
	for _, f := range demoCards {
		id, rec, card := storeOutputs(t, f)
		a, err := admit(id, rec, card, key)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := s.Put(id, a.meta, a.record, card); err != nil {
			t.Fatal(err)
		}
		ids = append(ids, id)
	}
	return dir, ids
}

// ids1Prefix stands in a want string for the shard of the second record.
const ids1Prefix = "<shard>"

// putJSON is Put with the ledger fields read from the record's bytes, as
// the materializer does for a retried task.
func putJSON(t *testing.T, s *DirStore, id string, rec, card []byte) (bool, error) {
	t.Helper()
	m, err := metaFromJSON(rec)
	if err != nil {
		t.Fatal(err)
	}
	return s.Put(id, m, rec, card)
}
