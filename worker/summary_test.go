package worker

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"matgate/checks"
)

// TestSummary: a stored record has a summary beside it that says what the
// record says (its counts recounted here from the parsed record); a
// record stored without counts (an older worker) is summarized from its
// ledger line; a summary file changed after the fact breaks the ledger
// verification.
func TestSummary(t *testing.T) {
	dir := t.TempDir()
	s, err := OpenDirStore(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	id, rec, card := storeOutputs(t, "ss-chaboche.yaml")
	if _, err := putJSON(t, s, id, rec, card); err != nil {
		t.Fatal(err)
	}
	r, err := checks.ParseRecord(rec)
	if err != nil {
		t.Fatal(err)
	}
	total, failed := 0, 0
	for _, c := range r.Cases {
		for _, ck := range c.Checks {
			total++
			if !ck.Pass {
				failed++
			}
		}
	}
	want := Summary{ID: id, Verdict: r.Verdict, Created: r.Created, Digest: r.Digest,
		Card: SummaryCard{ID: r.Card.ID, Revision: r.Card.Revision, Digest: r.Card.Digest}, Checks: &CheckCounts{Total: total, Failed: failed}}
	got, err := s.Summary(id)
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("summary (-want +got):\n%s", diff)
	}
	if total == 0 {
		t.Fatal("the demo record has no checks")
	}

	// Stored without counts: no summary file, the ledger's fields.
	id2, rec2, card2 := storeOutputs(t, "al-bilinear.yaml")
	m, _ := metaFromJSON(rec2)
	m.Checks, m.ChecksFailed = 0, 0
	if _, err := s.Put(id2, m, rec2, card2); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(filepath.Join(dir, summaryName(id2))); !os.IsNotExist(err) {
		t.Errorf("a summary file without counts: %v", err)
	}
	if got, err := s.Summary(id2); err != nil || got.Checks != nil || got.Digest != m.Digest || got.Card.Digest != m.CardDigest || got.Verdict != m.Verdict {
		t.Errorf("summary from the ledger: %+v %v", got, err)
	}
	if rep, err := VerifyLedger(dir, nil); err != nil || rep.Break != nil {
		t.Fatalf("intact directory: %+v %v", rep, err)
	}

	// A summary that lies about the verdict is a break.
	p := filepath.Join(dir, summaryName(id))
	b, _ := os.ReadFile(p)
	os.Chmod(p, 0o644)
	os.WriteFile(p, []byte(strings.Replace(string(b), `"verdict":"`+r.Verdict, `"verdict":"x`+r.Verdict, 1)), 0o644)
	if rep, err := VerifyLedger(dir, nil); err != nil || rep.Break == nil || !strings.Contains(rep.Break.Error(), summaryName(id)) {
		t.Errorf("changed summary: %+v %v", rep, err)
	}
}
