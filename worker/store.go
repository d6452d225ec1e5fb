package worker

import (
	"bufio"
	"bytes"
	"crypto/ed25519"
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"log/slog"
	"os"
	"path"
	"path/filepath"
	"runtime"
	"strings"
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
	Digest       string `json:"digest,omitempty"`      // the record's own digest; "" on lines written before it was kept
	CardDigest   string `json:"card_digest,omitempty"` // the verified card's digest; likewise
	RecordSHA256 string `json:"record_sha256"`
	CardSHA256   string `json:"card_sha256"`
	Prev         string `json:"prev"`
}

// StoreMarker is the file that makes a directory a records directory.
// OpenStore refuses a directory without it unless told to create one, so
// that a volume that is not mounted does not silently become an empty
// directory on another disk.
const StoreMarker = ".matgate-store"

// storeFormat is the first line of the marker.
const storeFormat = "matgate.store/1"

// DirStore is the records directory: every record and neutral card an
// immutable file, sharded by the first two hex digits of the id
// (ab/<id>.record.json, ab/<id>.card.json), and a ledger of JSON lines. One
// process writes it at a time (an exclusive flock on .lock); its methods
// are safe for concurrent use.
type DirStore struct {
	dir  string
	root *os.Root // every name is resolved inside dir: no id escapes it
	lock *os.File
	log  *slog.Logger
	wrap func(name string, f storeFile) storeFile // StoreOptions.wrap

	mu      sync.Mutex
	ledger  storeFile
	size    int64  // length of the ledger's whole lines: where the next append goes
	torn    bool   // a failed append may have left bytes after size
	last    string // hex sha256 of the last ledger line
	entries []LedgerEntry
	index   map[string]int // id -> position in entries

	faultMu sync.Mutex // not mu: Ping must answer while a Put waits on the disk
	fault   error      // the last write that failed, until one succeeds

	cpMu  sync.Mutex // AppendCheckpoint
	cpSeq int        // seq of the last line of CheckpointsName; -1: not read yet
}

// storeFile is what the store writes through: an *os.File, or in tests a
// wrapper whose writes fail on demand.
type storeFile interface {
	Write(p []byte) (int, error)
	WriteAt(p []byte, off int64) (int, error)
	Sync() error
	Truncate(size int64) error
	Close() error
}

var _ storeFile = (*os.File)(nil)

// StoreOptions tune OpenStore.
type StoreOptions struct {
	// Create makes dir a records directory when it has no StoreMarker:
	// creates it if missing and writes the marker (refusing a directory
	// that holds other files). Without Create such a directory is an
	// error. A directory with a ledger but no marker (made by a matgate
	// before the marker) is taken and marked either way.
	Create bool
	// Log is told what opening repaired: a torn ledger tail cut off, stale
	// temporary files removed, a marker written. Nil discards.
	Log *slog.Logger

	wrap func(name string, f storeFile) storeFile // tests: fail writes on demand
}

// OpenDirStore opens the records directory dir, creating and marking it
// when needed: OpenStore with Create, for a directory named on the command
// line (matgate verify --store).
func OpenDirStore(dir string) (*DirStore, error) {
	return OpenStore(dir, StoreOptions{Create: true})
}

// OpenStore opens the records directory dir, takes its write lock, removes
// temporary files that a crash left behind, and reads the ledger. A torn
// last line, left by a crash in the middle of an append that was
// therefore never acknowledged, is cut off (and logged); any other damage
// is an error (run matgate ledger verify).
func OpenStore(dir string, o StoreOptions) (*DirStore, error) {
	if o.Log == nil {
		o.Log = slog.New(slog.DiscardHandler)
	}
	if o.Create {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("records directory: %w", err)
		}
	}
	root, err := os.OpenRoot(dir)
	if errors.Is(err, fs.ErrNotExist) && !o.Create {
		return nil, fmt.Errorf("records directory %s: %w (a volume that is not mounted? set store.create: true once to make a new one)", dir, err)
	}
	if err != nil {
		return nil, fmt.Errorf("records directory %s: %w", dir, err)
	}
	s := &DirStore{dir: dir, root: root, index: map[string]int{}, log: o.Log, wrap: o.wrap, cpSeq: -1}
	fail := func(err error) (*DirStore, error) {
		s.Close()
		return nil, fmt.Errorf("records directory %s: %w", dir, err)
	}
	marked, err := checkMarker(root)
	if err != nil {
		return fail(err)
	}
	legacy := false
	if !marked {
		if st, err := root.Stat(LedgerName); err == nil && st.Size() > 0 {
			legacy = true
		} else if !o.Create {
			return fail(fmt.Errorf("not a records directory (no %s): a volume that is not mounted, or a wrong store.dir? Set store.create: true (serve --create-store) once to make a new one", StoreMarker))
		}
	}
	if s.lock, err = root.OpenFile(".lock", os.O_CREATE|os.O_RDWR, 0o644); err != nil {
		return fail(err)
	}
	if err := syscall.Flock(int(s.lock.Fd()), syscall.LOCK_EX|syscall.LOCK_NB); err != nil {
		return fail(fmt.Errorf("another process writes this directory (lock .lock): %w", err))
	}
	if !marked {
		if err := s.mark(legacy); err != nil {
			return fail(err)
		}
	}
	if err := s.removeTemporaries(); err != nil {
		return fail(err)
	}
	f, err := root.OpenFile(LedgerName, os.O_CREATE|os.O_RDWR, 0o644)
	if err != nil {
		return fail(err)
	}
	s.ledger = s.wrapped(LedgerName, f)
	data, err := io.ReadAll(f)
	if err != nil {
		return fail(err)
	}
	if cut := bytes.LastIndexByte(data, '\n') + 1; cut < len(data) {
		if err := f.Truncate(int64(cut)); err != nil {
			return fail(err)
		}
		if err := f.Sync(); err != nil {
			return fail(err)
		}
		s.log.Warn("ledger: cut off a torn last line, an append that never completed and was never acknowledged",
			"dir", dir, "bytes", len(data)-cut, "kept_bytes", cut)
		data = data[:cut]
	}
	s.size = int64(len(data))
	var brk error
	s.entries, s.last, brk = parseLedger(data)
	if brk != nil {
		return fail(brk)
	}
	for i, e := range s.entries {
		s.index[e.ID] = i
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

func (s *DirStore) wrapped(name string, f *os.File) storeFile {
	if s.wrap != nil {
		return s.wrap(name, f)
	}
	return f
}

// checkMarker reports whether the directory carries the store marker, and
// refuses a marker of something else.
func checkMarker(root *os.Root) (bool, error) {
	b, err := root.ReadFile(StoreMarker)
	if errors.Is(err, fs.ErrNotExist) {
		return false, nil
	}
	if err != nil {
		return false, err
	}
	if first, _, _ := bytes.Cut(b, []byte("\n")); string(first) != storeFormat {
		return false, fmt.Errorf("%s does not start with %q: not a matgate records directory", StoreMarker, storeFormat)
	}
	return true, nil
}

// mark writes the store marker into a new directory, or into one that an
// older matgate made (legacy: it has a ledger). A new directory must hold
// nothing else, so that a store is never made inside some other data.
func (s *DirStore) mark(legacy bool) error {
	if !legacy {
		des, err := fs.ReadDir(s.root.FS(), ".")
		if err != nil {
			return err
		}
		for _, d := range des {
			if n := d.Name(); n != ".lock" && n != LedgerName && n != "lost+found" { // lost+found: the root of a new ext4 volume
				return fmt.Errorf("not a records directory (no %s) and not empty (%s): refusing to make one here", StoreMarker, n)
			}
		}
	}
	b := fmt.Appendf(nil, "%s\nmatgate records directory: immutable record and card files and %s; do not edit.\n", storeFormat, LedgerName)
	if err := s.writeImmutable(StoreMarker, b); err != nil {
		return fmt.Errorf("write %s: %w", StoreMarker, err)
	}
	if err := syncDir(s.root, "."); err != nil {
		return err
	}
	what := "made a new records directory"
	if legacy {
		what = "marked a records directory made before the marker"
	}
	s.log.Info("store: "+what, "dir", s.dir, "marker", StoreMarker)
	return nil
}

// removeTemporaries removes the temporary files of writes that a crash
// interrupted (.tmp-* in the directory and its shards); under the lock no
// write is in flight.
func (s *DirStore) removeTemporaries() error {
	n := 0
	dirs := []string{"."}
	des, err := fs.ReadDir(s.root.FS(), ".")
	if err != nil {
		return err
	}
	for _, d := range des {
		if d.IsDir() && len(d.Name()) == 2 {
			dirs = append(dirs, d.Name())
		}
	}
	for _, dir := range dirs {
		des, err := fs.ReadDir(s.root.FS(), dir)
		if err != nil {
			return err
		}
		for _, d := range des {
			if !d.IsDir() && strings.HasPrefix(d.Name(), ".tmp-") {
				if err := s.root.Remove(path.Join(dir, d.Name())); err != nil {
					return err
				}
				n++
			}
		}
	}
	if n > 0 {
		s.log.Warn("store: removed temporary files left by an interrupted write", "dir", s.dir, "files", n)
	}
	return nil
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
	CardID     string `json:"card_id"`
	Revision   int    `json:"revision"`
	Verdict    string `json:"verdict"`
	Created    string `json:"created"`
	Digest     string `json:"digest"`
	CardDigest string `json:"card_digest"`
	// Checks and ChecksFailed count the record's checks for its Summary;
	// not in the ledger. Zero Checks: not counted (an older worker).
	Checks       int `json:"checks,omitempty"`
	ChecksFailed int `json:"checks_failed,omitempty"`
}

// MetaOf returns the ledger fields of a record and its check counts.
func MetaOf(r *checks.Record) RecordMeta {
	m := RecordMeta{CardID: r.Card.ID, Revision: r.Card.Revision, Verdict: r.Verdict, Created: r.Created,
		Digest: r.Digest, CardDigest: r.Card.Digest}
	m.Checks, m.ChecksFailed = countChecks(r)
	return m
}

// mismatch names the first field in which the ledger line e differs from
// the record it names.
func (e LedgerEntry) mismatch(r *checks.Record) string {
	m := MetaOf(r)
	for _, f := range []struct {
		name       string
		line, file any
	}{
		{"card_id", e.CardID, m.CardID}, {"revision", e.Revision, m.Revision},
		{"verdict", e.Verdict, m.Verdict}, {"created", e.Created, m.Created},
		{"digest", e.Digest, m.Digest}, {"card_digest", e.CardDigest, m.CardDigest},
	} {
		if f.line == "" && (f.name == "digest" || f.name == "card_digest") {
			continue // a line written before the ledger kept the digests
		}
		if f.line != f.file {
			return fmt.Sprintf("%s %v, the record says %v", f.name, f.line, f.file)
		}
	}
	return ""
}

// metaFromJSON reads the ledger fields from a record's bytes, for a caller
// that has only those. A record is large (every case's series): this costs
// some milliseconds, which is why Put takes the fields from its caller.
func metaFromJSON(record []byte) (RecordMeta, error) {
	var rec struct {
		Card struct {
			ID       string `json:"id"`
			Revision int    `json:"revision"`
			Digest   string `json:"digest"`
		} `json:"card"`
		Verdict string `json:"verdict"`
		Created string `json:"created"`
		Digest  string `json:"digest"`
		Cases   []struct {
			Checks []struct {
				Pass bool `json:"pass"`
			} `json:"checks"`
		} `json:"cases"`
	}
	if err := json.Unmarshal(record, &rec); err != nil || rec.Card.ID == "" || rec.Verdict == "" {
		return RecordMeta{}, fmt.Errorf("not a verification record (%v)", err)
	}
	m := RecordMeta{CardID: rec.Card.ID, Revision: rec.Card.Revision, Verdict: rec.Verdict, Created: rec.Created,
		Digest: rec.Digest, CardDigest: rec.Card.Digest}
	for _, cs := range rec.Cases {
		for _, ck := range cs.Checks {
			m.Checks++
			if !ck.Pass {
				m.ChecksFailed++
			}
		}
	}
	return m, nil
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
	if m.CardID == "" || m.Verdict == "" || m.Digest == "" || m.CardDigest == "" {
		return false, fmt.Errorf("put %s: the record's card id, verdict, digest or card digest is missing", id)
	}
	s.mu.Lock()
	defer s.mu.Unlock()
	if _, ok := s.index[id]; ok {
		return false, nil
	}
	if s.ledger == nil {
		return false, fmt.Errorf("put %s: the records directory %s is open for reading only", id, s.dir)
	}
	err = s.put(id, m, record, card)
	if !errors.Is(err, ErrConflict) {
		s.faultMu.Lock()
		s.fault = err
		s.faultMu.Unlock()
	}
	if err != nil {
		return false, fmt.Errorf("put %s: %w", id, err)
	}
	return true, nil
}

func (s *DirStore) put(id string, m RecordMeta, record, card []byte) error {
	if _, err := s.root.Stat(id[:2]); errors.Is(err, fs.ErrNotExist) {
		if err := s.root.Mkdir(id[:2], 0o755); err != nil && !errors.Is(err, fs.ErrExist) {
			return err
		}
		if err := syncDir(s.root, "."); err != nil { // the new shard's name
			return err
		}
	}
	if err := s.writeImmutable(recordName(id), record); err != nil {
		return err
	}
	if err := s.writeImmutable(cardName(id), card); err != nil {
		return err
	}
	if m.Checks > 0 { // counted: the summary that job status and the listing read
		if err := s.writeImmutable(summaryName(id), summaryJSON(SummaryOf(id, m))); err != nil {
			return err
		}
	}
	if err := syncDir(s.root, id[:2]); err != nil {
		return err
	}
	e := LedgerEntry{
		Seq: len(s.entries) + 1, ID: id, CardID: m.CardID, Revision: m.Revision,
		Verdict: m.Verdict, Created: m.Created, Digest: m.Digest, CardDigest: m.CardDigest,
		RecordSHA256: sha256Hex(record), CardSHA256: sha256Hex(card), Prev: s.last,
	}
	line, err := json.Marshal(e)
	if err != nil {
		return err
	}
	if err := s.appendLedger(append(line, '\n')); err != nil {
		return fmt.Errorf("ledger: %w", err)
	}
	s.last = sha256Hex(line)
	s.index[id] = len(s.entries)
	s.entries = append(s.entries, e)
	return nil
}

// appendLedger appends one whole line durably, or nothing: a write or
// sync that fails (a full disk writes part of the line) is cut back to
// the last whole line before the error is returned, and when that cut
// fails too the next append makes it first, so no line is ever written
// after a torn one.
func (s *DirStore) appendLedger(line []byte) error {
	if s.torn {
		if err := s.cutLedger(); err != nil {
			return fmt.Errorf("cut back the failed append before this one: %w", err)
		}
	}
	_, err := s.ledger.WriteAt(line, s.size)
	if err == nil {
		err = s.ledger.Sync()
	}
	if err != nil {
		s.torn = true
		if cerr := s.cutLedger(); cerr != nil {
			return fmt.Errorf("%w (and cutting back the torn line failed: %v; the next append cuts it first)", err, cerr)
		}
		return err
	}
	s.size += int64(len(line))
	return nil
}

// cutLedger truncates the ledger to its whole lines.
func (s *DirStore) cutLedger() error {
	if err := s.ledger.Truncate(s.size); err != nil {
		return err
	}
	if err := s.ledger.Sync(); err != nil {
		return err
	}
	s.torn = false
	return nil
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

// Ping reports whether the directory is still there and readable, and
// the last write's error while no write has succeeded since.
func (s *DirStore) Ping() error {
	s.faultMu.Lock()
	fault := s.fault
	s.faultMu.Unlock()
	if fault != nil {
		return fmt.Errorf("the last write failed: %w", fault)
	}
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
func (s *DirStore) writeImmutable(name string, data []byte) error {
	root := s.root
	var rnd [8]byte
	rand.Read(rnd[:])
	tmp := path.Join(path.Dir(name), ".tmp-"+hex.EncodeToString(rnd[:]))
	of, err := root.OpenFile(tmp, os.O_CREATE|os.O_EXCL|os.O_WRONLY, 0o444)
	if err != nil {
		return err
	}
	defer root.Remove(tmp)
	f := s.wrapped(name, of)
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

// checkEntry checks the two files of ledger line n, the record's own
// digest (and its signature with pub, when set), and that the line says
// what the record says.
func checkEntry(root *os.Root, e LedgerEntry, n int, pub ed25519.PublicKey) error {
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
		err = r.VerifyIntegrity(pub)
	}
	if err != nil {
		return fmt.Errorf("%s:%d: %s: %w", LedgerName, n, recordName(e.ID), err)
	}
	if d := e.mismatch(r); d != "" {
		return fmt.Errorf("%s:%d: the line says %s", LedgerName, n, d)
	}
	if b, err := root.ReadFile(summaryName(e.ID)); err == nil {
		return checkSummary(b, e, r, n)
	} else if !errors.Is(err, fs.ErrNotExist) {
		return fmt.Errorf("%s:%d: %w", LedgerName, n, err)
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
	Entries     int   // ledger lines read
	Files       int   // record and card files checked
	Checkpoints int   // checkpoints the ledger holds
	Break       error // the first break, nil when the directory is intact
}

// LedgerCheck asks VerifyLedger for more than the directory itself can
// show. A nil *LedgerCheck asks for nothing more.
type LedgerCheck struct {
	// PublicKey, when set, is serve's signing key: every record must carry
	// a valid signature of it, and so must every checkpoint.
	PublicKey ed25519.PublicKey
	// Checkpoints kept elsewhere by an auditor: the ledger must still
	// have each one's line with its hash.
	Checkpoints []Checkpoint
}

// VerifyLedger walks the ledger chain of a records directory and every
// file it names: each line's prev is the sha256 of the line before, each
// file exists with the sha256 the ledger holds, each record's own digest
// matches its content, each line's card, revision, verdict, created and
// digests are the record's, and no record or card file is missing from
// the ledger; and what o asks besides. It reads only, and takes no lock.
// The returned error is for a directory that cannot be read; a break is in
// the report.
func VerifyLedger(dir string, o *LedgerCheck) (LedgerReport, error) {
	if o == nil {
		o = &LedgerCheck{}
	}
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
	hashes := lineHashes(data)
	for _, c := range o.Checkpoints {
		err := checkCheckpoint(hashes, c)
		if err == nil && o.PublicKey != nil {
			if err = c.VerifySignature(o.PublicKey); err != nil {
				err = fmt.Errorf("%s: signature: %w", c.String(), err)
			}
		}
		if err != nil {
			rep.Break = err
			return rep, nil
		}
		rep.Checkpoints++
	}
	// Every entry's files and record digest, on all cores (a record is
	// some 0.7 MB and its RFC 8785 digest takes tens of milliseconds);
	// the first break in ledger order is reported.
	named := map[string]bool{}
	for _, e := range entries {
		named[recordName(e.ID)], named[cardName(e.ID)], named[summaryName(e.ID)] = true, true, true
	}
	errs := make([]error, len(entries))
	var next atomic.Int64
	var wg sync.WaitGroup
	for range runtime.GOMAXPROCS(0) {
		wg.Go(func() {
			for i := int(next.Add(1) - 1); i < len(entries); i = int(next.Add(1) - 1) {
				errs[i] = checkEntry(root, entries[i], i+1, o.PublicKey)
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
		if d.IsDir() || p == LedgerName || p == CheckpointsName || p == ".lock" || path.Base(p)[0] == '.' {
			return nil
		}
		if !named[p] && rep.Break == nil {
			rep.Break = fmt.Errorf("%s is not in the ledger", p)
		}
		return nil
	})
	return rep, err
}
