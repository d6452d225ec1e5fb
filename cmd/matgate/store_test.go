package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"matgate/checks"
	"matgate/worker"
	"matgate/worker/redistest"
)

// TestStorePending plays a worker that finished a job into Redis while
// serve was down: store pending lists it, --replay stores it (signed with
// the key made beside the directory) and a record of another card under a
// job id is refused (exit 1); afterwards nothing is pending and the
// directory verifies with the public key.
func TestStorePending(t *testing.T) {
	r := redistest.Start(t)
	rdb := r.Client(t)
	dir := t.TempDir()
	out := filepath.Join(dir, "out")
	if code, o, e := matgate(t, "", "verify", "--out", out, "../../testdata/cards/steel-prager.json", "../../testdata/cards/al-bilinear.yaml"); code != exitPass {
		t.Fatalf("verify: exit %d %s%s", code, o, e)
	}
	ctx := context.Background()
	write := func(id, base string) {
		for _, kind := range []string{"record", "card"} {
			b, err := os.ReadFile(filepath.Join(out, base+"."+kind+".json"))
			if err != nil {
				t.Fatal(err)
			}
			if err := rdb.Set(ctx, "matgate:"+kind+":"+id, b, 0).Err(); err != nil {
				t.Fatal(err)
			}
		}
	}
	jobOf := func(base string) string {
		b, _ := os.ReadFile(filepath.Join(out, base+".record.json"))
		rec, err := checks.ParseRecord(b)
		if err != nil {
			t.Fatal(err)
		}
		return worker.JobID(rec.Card.Digest, worker.Settings{ToolVersion: rec.Tool.Version})
	}
	steel, al := jobOf("demo-canopy-steel-r4"), jobOf("demo-canopy-aluminium-r2")
	write(steel, "demo-canopy-steel-r4")
	write(al, "demo-canopy-steel-r4") // the steel record under the aluminium job: forged
	store := filepath.Join(dir, "records")
	if code, o, e := matgate(t, "", "verify", "--store", store, "../../testdata/cards/hanger-mixed.yaml"); code != exitPass { // makes the directory
		t.Fatalf("verify --store: exit %d %s%s", code, o, e)
	}
	args := []string{"store", "pending", "--redis", r.URL(), "--store", store}
	code, o, e := matgate(t, "", args...)
	if code != exitPass || !strings.Contains(o, steel+"  demo-canopy-steel r4 pass") || !strings.Contains(o, "2 record(s) in Redis and not in") {
		t.Fatalf("store pending: exit %d\n%s%s", code, o, e)
	}
	code, o, e = matgate(t, "", append(args, "--replay")...)
	if code != exitFailed || !strings.Contains(o, "2 record(s) pending: 1 stored, 1 refused") || !strings.Contains(e, "refused the outputs of a job") || !strings.Contains(e, "made a new signing key") {
		t.Errorf("store pending --replay: exit %d\n%s%s", code, o, e)
	}
	if code, o, e := matgate(t, "", args...); code != exitPass || !strings.Contains(o, "0 record(s) in Redis and not in") {
		t.Errorf("store pending after the replay: exit %d\n%s%s", code, o, e)
	}
	// The record that verify --store wrote is unsigned; the replayed one
	// is signed: --public-key finds the first, and the replayed one
	// checks.
	if code, o, _ := matgate(t, "", "ledger", "verify", "--public-key", store+".sign.pub", store); code != exitFailed || !strings.Contains(o, "ledger.jsonl:1:") || !strings.Contains(o, "not signed") {
		t.Errorf("ledger verify --public-key: exit %d\n%s", code, o)
	}
	rec := filepath.Join(store, steel[:2], steel+".record.json")
	if code, o, e := matgate(t, "", "record", "verify", "--public-key", store+".sign.pub", rec); code != exitPass {
		t.Errorf("record verify of the replayed record: exit %d\n%s%s", code, o, e)
	}
}
