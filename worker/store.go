package worker

import (
	"bufio"
	"bytes"
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"runtime"
	"sync"
	"sync/atomic"
	"syscall"

	"matgate/checks"
)

// LedgerName is the ledger's file name in a records directory.
const LedgerName = "ledger.jsonl"

// ErrConflict is returned when a file of a record id exists with other
// content than the one being written: the store never replaces a file.
var ErrConflict = errors.New("a different file of this id exists")

// ErrNotFound is returned for an id the store does not hold.
var ErrNotFound = errors.New("no such record")

// LedgerEntry is one line of the ledger. Prev is the hex sha256 of the
// previous line (without its newline), "" on the first line, so changing,
// removing or reordering a line breaks the chain after it.
type LedgerEntry struct {
	Seq          int    `json:"seq"`
	ID           string `json:"id"`
	CardID       string `json:"card_id"`
	Revision     int    `json:"revision"`
	Verdict      string `json:"verdict"`
	Created      string `json:"created"`
	RecordSHA256 string `json:"record_sha256"`
	CardSHA256   string `json:"card_sha256"`
	Prev         string `json:"prev"`
}

// DirStore is the records directory: every record and neutral card an
// immutable file, sharded by the first two hex digits of the id
// (ab/<id>.record.json, ab/<id>.card.json), and a ledger of JSON lines. One
// process writes it at a time (an exclusive flock on .lock); its methods
// are safe for concurrent use.
type DirStore struct {
	dir  string
	root *os.Root // every name is resolved inside dir: no id escapes it
	lock *os.File

	mu      sync.Mutex
	ledger  *os.File
	last    string // hex sha256 of the last ledger line
	entries []LedgerEntry
	index   map[string]int // id -> position in entries
}

// OpenDirStore opens (creating it if needed) the records directory dir,
// takes its write lock, and reads the ledger. A torn last line, left by a
// crash in the middle of an append that was therefore never acknowledged,
// is cut off; any other damage is an error (run matgate ledger verify).
func OpenDirStore(dir string) (*DirStore, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("records directory: %w", err)
	}
	root, err := os.OpenRoot(dir)
	if err != nil {
		return nil, fmt.Errorf("records directory: %w", err)
	}
	s := &DirStore{dir: dir, root: root, index: map[string]int{}}
	fail := func(err error) (*DirStore, error) {
		s.Close()
		return nil, fmt.Errorf("records directory %s: %w", dir, err)
	}
	if s.lock, err = root.OpenFile(".lock", os.O_CREATE|os.O_RDWR, 0o644); err != nil {
		return fail(err)
	}
	if err := syscall.Flock(int(s.lock.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		return fail(fmt.Errorf("another process writes this directory (lock .lock): %w", err))
	}
	if s.ledger, err = root.OpenFile(LedgerName, os.O_CREATE|os.O_RDWR, 0o644); err != nil {
		return fail(err)
	}
	data, err := io.ReadAll(s.ledger)
	if err != nil {
		return fail(err)
	}
	if cut := bytes.LastIndexByte(data, '\n') + 1; cut < len(data) {
		if err := s.ledger.Truncate(int64(cut)); err != nil {
			return fail(err)
		}
		if err := s.ledger.Sync(); err != nil {
			return fail(err)
		}
		data = data[:cut]
	}
	var brk error
	s.entries, s.last, brk = parseLedger(data)
	if brk != nil {
		return fail(brk)
	}
	for i, e := range s.entries {
		s.index[e.ID] = i
	}
	if _, err := s.ledger.Seek(0, io.SeekEnd); err != nil {
		return fail(err)
	}
	return s, nil
}

// OpenDirStoreReadOnly opens the records directory dir for reading only,
// without its write lock, so that it can be read while serve or verify
// --store writes it: the ledger as it is at the call (a torn last line is
// left out), and the files it names. dir must be a records directory
// already (IsRecordsDir). Put on the returned store fails.
func OpenDirStoreReadOnly(dir string) (*DirStore, error) {
	if !IsRecordsDir(dir) {
		return nil, fmt.Errorf("%s is not a records directory (no %s in it)", dir, LedgerName)
	}
	root, err := os.OpenRoot(dir)
	if err != nil {
		return nil, fmt.Errorf("records directory: %w", err)
	}
	s := &DirStore{dir: dir, root: root, index: map[string]int{}}
	data, err := root.ReadFile(LedgerName)
	if err != nil {
		root.Close()
		return nil, fmt.Errorf("records directory %s: %w", dir, err)
	}
	s.entries, s.last, err = parseLedger(data[:bytes.LastIndexByte(data, '\n')+1])
	if err != nil {
		root.Close()
		return nil, fmt.Errorf("records directory %s: %w", dir, err)
	}
	for i, e := range s.entries {
		s.index[e.ID] = i
	}
	return s, nil
}

// IsRecordsDir reports whether dir is a records directory: a folder that
// holds a ledger.
func IsRecordsDir(dir string) bool {
	st, err := os.Stat(filepath.Join(dir, LedgerName))
	return err == nil && st.Mode().IsRegular()
}

// parseLedger reads the ledger lines and checks their chain; it returns the
// entries, the hash of the last line and the first break.
func parseLedger(data []byte) ([]LedgerEntry, string, error) {
	var entries []LedgerEntry
	prev := ""
	seen := map[string]bool{}
	sc := bufio.NewScanner(bytes.NewReader(data))
	sc.Buffer(make([]byte, 64<<10), 1<<20)
	for n := 1; sc.Scan(); n++ {
		line := sc.Bytes()
		var e LedgerEntry
		dec := json.NewDecoder(bytes.NewReader(line))
		dec.DisallowUnknownFields()
		if err := dec.Decode(&e); err != nil {
			return entries, prev, fmt.Errorf("%s:%d: not a ledger entry: %v", LedgerName, n, err)
		}
		switch {
		case e.Seq != n:
			return entries, prev, fmt.Errorf("%s:%d: sequence number %d, want %d", LedgerName, n, e.Seq, n)
		case e.Prev != prev:
			return entries, prev, fmt.Errorf("%s:%d: prev %q does not match the sha256 of line %d (%q)", LedgerName, n, e.Prev, n-1, prev)
		case !ValidID(e.ID):
			return entries, prev, fmt.Errorf("%s:%d: malformed record id %q", LedgerName, n, e.ID)
		case seen[e.ID]:
			return entries, prev, fmt.Errorf("%s:%d: record %s is in the ledger twice", LedgerName, n, e.ID)
		}
		seen[e.ID] = true
		sum := sha256.Sum256(line)
		prev = hex.EncodeToString(sum[:])
		entries = append(entries, e)
	}
	if err := sc.Err(); err != nil {
		return entries, prev, fmt.Errorf("%s: %w", LedgerName, err)
	}
	return entries, prev, nil
}

func recordName(id string) string { return path.Join(id[:2], id+".record.json") }
func cardName(id string) string   { return path.Join(id[:2], id+".card.json") }

// Has reports whether the record id is in the store.
func (s *DirStore) Has(id string) bool {
	s.mu.Lock()
	defer s.mu.Unlock()
	_, ok := s.index[id]
	return ok
}

// RecordMeta is what the ledger says of a record besides its hashes.
type RecordMeta struct {
	CardID   string `json:"card_id"`
	Revision int    `json:"revision"`
	Verdict  string `json:"verdict"`
	Created  string `json:"created"`
}

// MetaOf returns the ledger fields of a record.
func MetaOf(r *checks.Record) RecordMeta {
	return RecordMeta{CardID: r.Card.ID, Revision: r.Card.Revision, Verdict: r.Verdict, Created: r.Created}
}

// metaFromJSON reads the ledger fields from a record's bytes, for a caller
// that has only those. A record is large (every case's series): this costs
// some milliseconds, which is why Put takes the fields from its caller.
func metaFromJSON(record []byte) (RecordMeta, error) {
	var rec struct {
		Card struct {
			ID       string `json:"id"`
			Revision int    `json:"revision"`
		} `json:"card"`
		Verdict string `json:"verdict"`
		Created string `json:"created"`
	}
	if err := json.Unmarshal(record, &rec); err != nil || rec.Card.ID == "" || rec.Verdict == "" {
		return RecordMeta{}, fmt.Errorf("not a verification record (%v)", err)
	}
	return RecordMeta{CardID: rec.Card.ID, Revision: rec.Card.Revision, Verdict: rec.Verdict, Created: rec.Created}, nil
}

// Put stores the record and the neutral card of id as immutable files and
// appends their ledger line (with m, the record's own fields), each
// durable (fsynced) before Put returns. It is idempotent: a record already
// in the ledger is left alone (added is false), and files that a crashed
// earlier Put left behind are taken when their content is the same. A file
// of the id with other content is ErrConflict.
func (s *DirStore) Put(id string, m RecordMeta, record, card []byte) (added bool, err error) {
	if !ValidID(id) {
		return false, fmt.Errorf("put: malformed record id %q", id)
	}
	if m.CardID == "" || m.Verdict == "" {
		return false, fmt.Errorf("put %s: the record's card id and verdict are missing", id)
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if _, ok := s.index[id]; ok {
		return false, nil
	}
	if s.ledger == nil {
		return false, fmt.Errorf("put %s: the records directory %s is open for reading only", id, s.dir)
	}
	if _, err := s.root.Stat(id[:2]); errors.Is(err, fs.ErrNotExist) {
		if err := s.root.Mkdir(id[:2], 0o755); err != nil && !errors.Is(err, fs.ErrExist) {
			return false, fmt.Errorf("put %s: %w", id, err)
		}
		if err := syncDir(s.root, "."); err != nil { // the new shard's name
			return false, fmt.Errorf("put %s: %w", id, err)
		}
	}
	if err := writeImmutable(s.root, recordName(id), record); err != nil {
		return false, fmt.Errorf("put %s: %w", id, err)
	}
	if err := writeImmutable(s.root, cardName(id), card); err != nil {
		return false, fmt.Errorf("put %s: %w", id, err)
	}
	if err := syncDir(s.root, id[:2]); err != nil {
		return false, fmt.Errorf("put %s: %w", id, err)
	}
	e := LedgerEntry{
		Seq: len(s.entries) + 1, ID: id, CardID: m.CardID, Revision: m.Revision,
		Verdict: m.Verdict, Created: m.Created,
		RecordSHA256: sha256Hex(record), CardSHA256: sha256Hex(card), Prev: s.last,
	}
	line, err := json.Marshal(e)
	if err != nil {
		return false, err
	}
	if _, err := s.ledger.Write(append(line, '\n')); err != nil {
		return false, fmt.Errorf("put %s: ledger: %w", id, err)
	}
	if err := s.ledger.Sync(); err != nil {
		return false, fmt.Errorf("put %s: ledger: %w", id, err)
	}
	s.last = sha256Hex(line)
	s.index[id] = len(s.entries)
	s.entries = append(s.entries, e)
	return true, nil
}

// Record returns the record file of id.
func (s *DirStore) Record(id string) ([]byte, error) { return s.read(id, recordName) }

// Card returns the neutral card file of id.
func (s *DirStore) Card(id string) ([]byte, error) { return s.read(id, cardName) }

func (s *DirStore) read(id string, name func(string) string) ([]byte, error) {
	if !s.Has(id) {
		return nil, ErrNotFound
	}
	return s.root.ReadFile(name(id))
}

// List returns the ledger entries whose card id is cardID ("" for all),
// oldest first, skipping offset of them and returning at most limit, and
// the number that match.
func (s *DirStore) List(cardID string, offset, limit int) ([]LedgerEntry, int) {
	s.mu.Lock()
	defer s.mu.Unlock()
	var out []LedgerEntry
	n := 0
	for _, e := range s.entries {
		if cardID != "" && e.CardID != cardID {
			continue
		}
		if n >= offset && len(out) < limit {
			out = append(out, e)
		}
		n++
	}
	return out, n
}

// Ping reports whether the directory is still there and readable.
func (s *DirStore) Ping() error {
	_, err := s.root.Stat(LedgerName)
	return err
}

// Close releases the directory and its lock.
func (s *DirStore) Close() error {
	var errs []error
	if s.ledger != nil {
		errs = append(errs, s.ledger.Close())
	}
	if s.lock != nil {
		errs = append(errs, s.lock.Close()) // closing drops the flock
	}
	errs = append(errs, s.root.Close())
	return errors.Join(errs...)
}

// writeImmutable writes data under name through a synced temporary file and
// a hard link, which fails rather than replace an existing file. An
// existing file with the same content is success (a retried write).
func writeImmutable(root *os.Root, name string, data []byte) error {
	var rnd [8]byte
	rand.Read(rnd[:])
	tmp := path.Join(path.Dir(name), ".tmp-"+hex.EncodeToString(rnd[:]))
	f, err := root.OpenFile(tmp, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o444)
	if err != nil {
		return err
	}
	defer root.Remove(tmp)
	if _, err := f.Write(data); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	if err := f.Close(); err != nil {
		return err
	}
	err = root.Link(tmp, name)
	if errors.Is(err, fs.ErrExist) {
		old, rerr := root.ReadFile(name)
		if rerr != nil {
			return rerr
		}
		if !bytes.Equal(old, data) {
			return fmt.Errorf("%s: %w", name, ErrConflict)
		}
		return nil
	}
	return err
}

// checkEntry checks the two files of ledger line n and the record's own
// digest.
func checkEntry(root *os.Root, e LedgerEntry, n int) error {
	var rec []byte
	for _, f := range []struct{ name, sum string }{{recordName(e.ID), e.RecordSHA256}, {cardName(e.ID), e.CardSHA256}} {
		b, err := root.ReadFile(f.name)
		if err != nil {
			return fmt.Errorf("%s:%d: %w", LedgerName, n, err)
		}
		if got := sha256Hex(b); got != f.sum {
			return fmt.Errorf("%s:%d: %s has sha256 %s, the ledger says %s", LedgerName, n, f.name, got, f.sum)
		}
		if rec == nil {
			rec = b
		}
	}
	r, err := checks.ParseRecord(rec)
	if err == nil {
		err = r.VerifyIntegrity(nil)
	}
	if err != nil {
		return fmt.Errorf("%s:%d: %s: %w", LedgerName, n, recordName(e.ID), err)
	}
	return nil
}

func syncDir(root *os.Root, name string) error {
	d, err := root.Open(name)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}

func sha256Hex(b []byte) string {
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

// LedgerReport is what VerifyLedger found.
type LedgerReport struct {
	Entries int   // ledger lines read
	Files   int   // record and card files checked
	Break   error // the first break, nil when the directory is intact
}

// VerifyLedger walks the ledger chain of a records directory and every
// file it names: each line's prev is the sha256 of the line before, each
// file exists with the sha256 the ledger holds, each record's own digest
// matches its content, and no record or card file is missing from the
// ledger. It reads only, and takes no lock. The returned error is for a
// directory that cannot be read; a break is in the report.
func VerifyLedger(dir string) (LedgerReport, error) {
	var rep LedgerReport
	root, err := os.OpenRoot(dir)
	if err != nil {
		return rep, err
	}
	defer root.Close()
	data, err := root.ReadFile(LedgerName)
	if err != nil {
		return rep, err
	}
	if cut := bytes.LastIndexByte(data, '\n') + 1; cut < len(data) {
		rep.Break = fmt.Errorf("%s: the last line is incomplete (a crash during an append; serve cuts it off when it opens the directory)", LedgerName)
		data = data[:cut]
	}
	entries, _, brk := parseLedger(data)
	rep.Entries = len(entries)
	if brk != nil {
		rep.Break = brk
		return rep, nil
	}
	// Every entry's files and record digest, on all cores (a record is
	// some 0.7 MB and its RFC 8785 digest takes tens of milliseconds);
	// the first break in ledger order is reported.
	named := map[string]bool{}
	for _, e := range entries {
		named[recordName(e.ID)], named[cardName(e.ID)] = true, true
	}
	errs := make([]error, len(entries))
	var next atomic.Int64
	var wg sync.WaitGroup
	for range runtime.GOMAXPROCS(0) {
		wg.Go(func() {
			for i := int(next.Add(1) - 1); i < len(entries); i = int(next.Add(1) - 1) {
				errs[i] = checkEntry(root, entries[i], i+1)
			}
		})
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			rep.Break = err
			return rep, nil
		}
		rep.Files += 2
	}
	err = fs.WalkDir(root.FS(), ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() || p == LedgerName || p == ".lock" || path.Base(p)[0] == '.' {
			return nil
		}
		if !named[p] && rep.Break == nil {
			rep.Break = fmt.Errorf("%s is not in the ledger", p)
		}
		return nil
	})
	return rep, err
}
