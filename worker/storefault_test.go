package worker

import (
	"bytes"
	"encoding/json"
	"errors"
	"log/slog"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
)

// diskFaults makes the store's writes fail on demand, as a full or failing
// disk does, by the plan set.
type diskFaults struct {
	mu sync.Mutex
	p  faultPlan
}

// faultPlan: a write takes what space is left and fails with ENOSPC (a
// short write, as write(2) makes on a full disk); the next syncs (all of
// them when syncs < 0) and every truncate of the files whose name ends in
// only fail with the errors set.
type faultPlan struct {
	space    int64 // bytes that can still be written; < 0: no limit
	syncErr  error
	syncs    int
	truncErr error
	only     string // "": every file
}

func (d *diskFaults) set(p faultPlan) {
	d.mu.Lock()
	defer d.mu.Unlock()
	d.p = p
}

func (d *diskFaults) wrap(name string, f storeFile) storeFile {
	return &faultyFile{storeFile: f, d: d, name: name}
}

type faultyFile struct {
	storeFile
	d    *diskFaults
	name string
}

// take returns how many of n bytes fit.
func (d *diskFaults) take(n int) int {
	d.mu.Lock()
	defer d.mu.Unlock()
	if d.p.space < 0 {
		return n
	}
	k := int(min(int64(n), d.p.space))
	d.p.space -= int64(k)
	return k
}

func (f *faultyFile) Write(p []byte) (int, error) {
	k := f.d.take(len(p))
	n, err := f.storeFile.Write(p[:k])
	if err == nil && k < len(p) {
		err = syscall.ENOSPC
	}
	return n, err
}

func (f *faultyFile) WriteAt(p []byte, off int64) (int, error) {
	k := f.d.take(len(p))
	n, err := f.storeFile.WriteAt(p[:k], off)
	if err == nil && k < len(p) {
		err = syscall.ENOSPC
	}
	return n, err
}

func (f *faultyFile) Sync() error {
	f.d.mu.Lock()
	p := &f.d.p
	var err error
	if p.syncErr != nil && p.syncs != 0 && strings.HasSuffix(f.name, p.only) {
		err = p.syncErr
		p.syncs--
	}
	f.d.mu.Unlock()
	if err != nil {
		return err
	}
	return f.storeFile.Sync()
}

func (f *faultyFile) Truncate(size int64) error {
	f.d.mu.Lock()
	err := f.d.p.truncErr
	f.d.mu.Unlock()
	if err != nil {
		return err
	}
	return f.storeFile.Truncate(size)
}

// TestStoreDiskFaults fails the disk under a Put in each place it can
// fail: the record file, the ledger append (part of the line written,
// then ENOSPC), the ledger's sync, and an append whose cut-back fails
// too. After each, the ledger holds whole lines only and the store
// reports the fault; once the disk works, the retried Puts store every
// record, the store is healthy again, and the directory verifies.
func TestStoreDiskFaults(t *testing.T) {
	dir := t.TempDir()
	var faults diskFaults
	faults.set(faultPlan{space: -1})
	s, err := OpenStore(dir, StoreOptions{Create: true, wrap: faults.wrap})
	if err != nil {
		t.Fatal(err)
	}
	type out struct {
		id        string
		rec, card []byte
	}
	var outs []out
	for _, f := range demoCards {
		id, rec, card := storeOutputs(t, f)
		outs = append(outs, out{id, rec, card})
	}
	if _, err := putJSON(t, s, outs[0].id, outs[0].rec, outs[0].card); err != nil {
		t.Fatal(err)
	}
	ledger, _ := os.ReadFile(filepath.Join(dir, LedgerName))
	o := outs[1]
	m, err := metaFromJSON(o.rec)
	if err != nil {
		t.Fatal(err)
	}
	sum := summaryJSON(SummaryOf(o.id, m))
	full := int64(len(o.rec) + len(o.card) + len(sum) + 40) // the files fit, 40 bytes of the ledger line do
	tests := []struct {
		name string
		plan faultPlan
		want string
	}{
		{"disk full during the record write", faultPlan{space: 1000}, "no space left"},
		{"record sync fails", faultPlan{space: -1, syncErr: syscall.EIO, syncs: -1, only: ".record.json"}, "input/output error"},
		{"disk full during the ledger append", faultPlan{space: full}, "ledger: no space left"},
		{"ledger sync fails once", faultPlan{space: -1, syncErr: syscall.EIO, syncs: 1, only: LedgerName}, "ledger: input/output error"},
		{"disk full during the append, and its cut-back fails", faultPlan{space: full, truncErr: syscall.EIO}, "cutting back the torn line failed"},
		{"the next append, while cutting back still fails", faultPlan{space: -1, truncErr: syscall.EIO}, "cut back the failed append before this one"},
	}
	for _, tc := range tests {
		faults.set(tc.plan)
		added, err := putJSON(t, s, o.id, o.rec, o.card)
		if added || err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: added %v, %v; want an error saying %q", tc.name, added, err, tc.want)
		}
		if err := s.Ping(); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: Ping says %v, want the fault", tc.name, err)
		}
		got, _ := os.ReadFile(filepath.Join(dir, LedgerName))
		if tc.plan.truncErr == nil && !bytes.Equal(got, ledger) {
			t.Errorf("%s: the ledger changed:\n%q\nwant\n%q", tc.name, got, ledger)
		}
		if tc.plan.truncErr != nil && (len(got) != len(ledger)+40 || !bytes.HasPrefix(got, ledger)) {
			t.Errorf("%s: the ledger has %d bytes, want the %d before and the 40 of the torn line", tc.name, len(got), len(ledger))
		}
		if s.Has(o.id) {
			t.Errorf("%s: a failed Put is in the index", tc.name)
		}
	}
	// The disk works again: the retry first cuts the torn line the last
	// fault left, then appends whole lines.
	faults.set(faultPlan{space: -1})
	for _, o := range outs[1:] {
		if added, err := putJSON(t, s, o.id, o.rec, o.card); !added || err != nil {
			t.Fatalf("put after the faults: %v %v", added, err)
		}
	}
	if err := s.Ping(); err != nil {
		t.Errorf("Ping after a successful Put: %v", err)
	}
	s.Close()
	if rep, err := VerifyLedger(dir, nil); err != nil || rep.Break != nil || rep.Entries != len(outs) {
		t.Errorf("after recovery: %+v %v", rep, err)
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "*", ".tmp-*")); len(m) > 0 {
		t.Errorf("temporary files left: %v", m)
	}
}

// TestStoreOpen: a directory without the marker is refused unless Create
// is set (an unmounted volume looks like a missing or empty directory), a
// directory of other data is refused even with Create, a directory made by
// a matgate before the marker is taken, and stale temporary files and a
// torn ledger tail are removed on open, each with a log line.
func TestStoreOpen(t *testing.T) {
	base := t.TempDir()
	missing := filepath.Join(base, "volume", "records")
	if _, err := OpenStore(missing, StoreOptions{}); err == nil || !strings.Contains(err.Error(), "store.create") {
		t.Errorf("missing directory: %v, want a refusal naming store.create", err)
	}
	if _, err := os.Stat(filepath.Join(base, "volume")); err == nil {
		t.Errorf("OpenStore without Create made a directory")
	}
	empty := filepath.Join(base, "empty")
	os.Mkdir(empty, 0o755)
	if _, err := OpenStore(empty, StoreOptions{}); err == nil || !strings.Contains(err.Error(), StoreMarker) {
		t.Errorf("empty directory: %v, want a refusal naming %s", err, StoreMarker)
	}
	if des, _ := os.ReadDir(empty); len(des) != 0 {
		t.Errorf("a refused directory was written to: %v", des)
	}
	other := filepath.Join(base, "other")
	os.Mkdir(other, 0o755)
	os.WriteFile(filepath.Join(other, "photo.jpg"), []byte("x"), 0o644)
	if _, err := OpenStore(other, StoreOptions{Create: true}); err == nil || !strings.Contains(err.Error(), "photo.jpg") {
		t.Errorf("directory of other data: %v, want a refusal", err)
	}
	os.WriteFile(filepath.Join(empty, StoreMarker), []byte("something else\n"), 0o644)
	if _, err := OpenStore(empty, StoreOptions{Create: true}); err == nil || !strings.Contains(err.Error(), "not a matgate records directory") {
		t.Errorf("foreign marker: %v", err)
	}

	// The root of a new ext4 volume holds lost+found: that is empty.
	vol := filepath.Join(base, "vol")
	os.MkdirAll(filepath.Join(vol, "lost+found"), 0o700)
	if s, err := OpenStore(vol, StoreOptions{Create: true}); err != nil {
		t.Errorf("a new volume's root: %v", err)
	} else {
		s.Close()
	}

	// Made with Create, then opened without: fine.
	dir := filepath.Join(base, "records")
	var log bytes.Buffer
	lg := slog.New(slog.NewTextHandler(&log, nil))
	s, err := OpenStore(dir, StoreOptions{Create: true, Log: lg})
	if err != nil {
		t.Fatal(err)
	}
	id, rec, card := storeOutputs(t, "al-bilinear.yaml")
	if _, err := putJSON(t, s, id, rec, card); err != nil {
		t.Fatal(err)
	}
	s.Close()
	// A crash left temporary files and half a ledger line.
	for _, p := range []string{filepath.Join(dir, id[:2], ".tmp-0123456789abcdef"), filepath.Join(dir, ".tmp-fedcba9876543210")} {
		os.WriteFile(p, []byte("partial"), 0o444)
	}
	f, _ := os.OpenFile(filepath.Join(dir, LedgerName), os.O_APPEND|os.O_WRONLY, 0)
	f.WriteString(`{"seq":2,"id":"`)
	f.Close()
	s, err = OpenStore(dir, StoreOptions{Log: lg})
	if err != nil {
		t.Fatalf("reopen: %v", err)
	}
	if !s.Has(id) {
		t.Errorf("reopened store lost %s", id)
	}
	s.Close()
	for _, want := range []string{"made a new records directory", "removed temporary files", "files=2", "cut off a torn last line", "bytes=15"} {
		if !strings.Contains(log.String(), want) {
			t.Errorf("the log does not say %q:\n%s", want, log.String())
		}
	}
	if m, _ := filepath.Glob(filepath.Join(dir, "*", ".tmp-*")); len(m) > 0 {
		t.Errorf("temporary files left: %v", m)
	}
	if rep, err := VerifyLedger(dir, nil); err != nil || rep.Break != nil || rep.Entries != 1 {
		t.Errorf("after reopening: %+v %v", rep, err)
	}

	// A directory from before the marker: it has a ledger, and is taken.
	os.Remove(filepath.Join(dir, StoreMarker))
	s, err = OpenStore(dir, StoreOptions{Log: lg})
	if err != nil {
		t.Fatalf("directory from before the marker: %v", err)
	}
	s.Close()
	if _, err := os.Stat(filepath.Join(dir, StoreMarker)); err != nil || !strings.Contains(log.String(), "made before the marker") {
		t.Errorf("directory from before the marker not marked: %v\n%s", err, log.String())
	}
}

// TestStoreTmpfsFull fills a real filesystem: a 4 MiB tmpfs, which needs
// the privilege to mount (root in a container that allows it); skipped
// otherwise. A Put on the full disk fails and leaves no file behind; with
// the space back, the retry stores the record and the directory verifies.
func TestStoreTmpfsFull(t *testing.T) {
	dir := t.TempDir()
	if err := syscall.Mount("tmpfs", dir, "tmpfs", 0, "size=4m"); err != nil {
		t.Skipf("cannot mount a tmpfs here (%v): the injected faults of TestStoreDiskFaults cover this", err)
	}
	t.Cleanup(func() {
		if err := syscall.Unmount(dir, syscall.MNT_DETACH); err != nil {
			t.Errorf("unmount %s: %v", dir, err)
		}
	})
	records := filepath.Join(dir, "records")
	s, err := OpenStore(records, StoreOptions{Create: true})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	var ids []string
	for _, f := range demoCards {
		id, rec, card := storeOutputs(t, f)
		ids = append(ids, id)
		// Fill the disk to the last byte.
		filler, err := os.Create(filepath.Join(dir, "filler"))
		if err != nil {
			t.Fatal(err)
		}
		chunk := make([]byte, 64<<10)
		for n := len(chunk); n >= 1; n /= 2 {
			for err == nil {
				_, err = filler.Write(chunk[:n])
			}
			if n > 1 {
				err = nil
			}
		}
		filler.Close()
		if !errors.Is(err, syscall.ENOSPC) {
			t.Fatalf("filling the tmpfs: %v", err)
		}
		if added, err := putJSON(t, s, id, rec, card); added || !errors.Is(err, syscall.ENOSPC) {
			t.Errorf("%s: put on a full disk: added %v, %v; want ENOSPC", f, added, err)
		}
		if s.Has(id) || s.Ping() == nil {
			t.Errorf("%s: the failed put is in the index, or Ping does not report it", f)
		}
		os.Remove(filepath.Join(dir, "filler"))
		if added, err := putJSON(t, s, id, rec, card); !added || err != nil {
			t.Fatalf("%s: put with the space back: %v %v", f, added, err)
		}
	}
	if rep, err := VerifyLedger(records, nil); err != nil || rep.Break != nil || rep.Entries != len(ids) {
		t.Errorf("after the full disks: %+v %v", rep, err)
	}
	if m, _ := filepath.Glob(filepath.Join(records, "*", ".tmp-*")); len(m) > 0 {
		t.Errorf("temporary files left: %v", m)
	}
}

// TestLedgerVerifyAgainstRecords: a ledger whose verdict, revision or
// digest was changed and whose hash chain was recomputed after it still
// chains, but ledger verify compares every line with its record and
// reports the line.
func TestLedgerVerifyAgainstRecords(t *testing.T) {
	tests := []struct {
		name string
		edit func(e *LedgerEntry)
		want string
	}{
		{"verdict", func(e *LedgerEntry) { e.Verdict = "fail" }, "ledger.jsonl:2: the line says verdict fail, the record says pass"},
		{"revision", func(e *LedgerEntry) { e.Revision++ }, "ledger.jsonl:2: the line says revision"},
		{"digest", func(e *LedgerEntry) { e.Digest = "sha256:" + strings.Repeat("0", 64) }, "ledger.jsonl:2: the line says digest sha256:000"},
		{"card digest", func(e *LedgerEntry) { e.CardDigest = "sha256:" + strings.Repeat("1", 64) }, "ledger.jsonl:2: the line says card_digest sha256:111"},
	}
	dir, _ := storeDemoCards(t, nil)
	intact, _ := os.ReadFile(filepath.Join(dir, LedgerName))
	for _, tc := range tests {
		// Edit line 2 and recompute prev of every line, as someone who
		// rewrites the ledger would.
		var out []byte
		prev := ""
		for i, line := range bytes.SplitAfter(bytes.TrimSuffix(intact, []byte("\n")), []byte("\n")) {
			var e LedgerEntry
			if err := json.Unmarshal(bytes.TrimSuffix(line, []byte("\n")), &e); err != nil {
				t.Fatal(err)
			}
			if i == 1 {
				tc.edit(&e)
			}
			e.Prev = prev
			b, _ := json.Marshal(e)
			prev = sha256Hex(b)
			out = append(append(out, b...), '\n')
		}
		os.WriteFile(filepath.Join(dir, LedgerName), out, 0o644)
		rep, err := VerifyLedger(dir, nil)
		if err != nil || rep.Break == nil || !strings.Contains(rep.Break.Error(), tc.want) {
			t.Errorf("%s edited: break %v (%v), want %q", tc.name, rep.Break, err, tc.want)
		}
	}
	os.WriteFile(filepath.Join(dir, LedgerName), intact, 0o644)
	if rep, err := VerifyLedger(dir, nil); err != nil || rep.Break != nil {
		t.Errorf("the intact ledger: %+v %v", rep, err)
	}
}
