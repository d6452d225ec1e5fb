package worker

import (
	"encoding/json"
	"errors"
	"fmt"
	"io/fs"
	"path"

	"matgate/checks"
)

// Summary is what a job's status and the listing of records say of a
// record, kept beside it when it is stored (a few hundred bytes, against a
// record of some hundreds of kB), so that neither parses the record. Its
// words are the record's: "digest" is the record's own RFC 8785 digest and
// card.digest the verified card's, as the record and the report name them
// (not the sha256 of a file).
type Summary struct {
	ID      string       `json:"id"` // the job and record id
	Verdict string       `json:"verdict"`
	Created string       `json:"created"`
	Digest  string       `json:"digest"`
	Card    SummaryCard  `json:"card"`
	Checks  *CheckCounts `json:"checks,omitempty"` // nil for a record stored before summaries were kept
}

// SummaryCard is the verified card as the record names it.
type SummaryCard struct {
	ID       string `json:"id"`
	Revision int    `json:"revision"`
	Digest   string `json:"digest"`
}

// CheckCounts counts a record's checks.
type CheckCounts struct {
	Total  int `json:"total"`
	Failed int `json:"failed"`
}

// countChecks counts the checks of r and those that failed.
func countChecks(r *checks.Record) (total, failed int) {
	for _, cs := range r.Cases {
		for _, ck := range cs.Checks {
			total++
			if !ck.Pass {
				failed++
			}
		}
	}
	return total, failed
}

// SummaryOf returns the summary of record id from its ledger fields.
func SummaryOf(id string, m RecordMeta) Summary {
	s := Summary{ID: id, Verdict: m.Verdict, Created: m.Created, Digest: m.Digest,
		Card: SummaryCard{ID: m.CardID, Revision: m.Revision, Digest: m.CardDigest}}
	if m.Checks > 0 {
		s.Checks = &CheckCounts{Total: m.Checks, Failed: m.ChecksFailed}
	}
	return s
}

// summaryJSON is the byte form of a summary in the records directory and
// in Redis: compact JSON and a newline.
func summaryJSON(s Summary) []byte {
	b, _ := json.Marshal(s) // strings and ints always marshal
	return append(b, '\n')
}

// summaryKey is the Redis key of a job's summary, beside recordKey.
func summaryKey(id string) string { return "matgate:summary:" + id }

func summaryName(id string) string { return path.Join(id[:2], id+".summary.json") }

// Summary returns the summary of record id: its summary file, or for a
// record stored before summaries were kept, its ledger line (without the
// check counts).
func (s *DirStore) Summary(id string) (Summary, error) {
	s.mu.Lock()
	i, ok := s.index[id]
	var e LedgerEntry
	if ok {
		e = s.entries[i]
	}
	s.mu.Unlock()
	if !ok {
		return Summary{}, ErrNotFound
	}
	b, err := s.root.ReadFile(summaryName(id))
	if errors.Is(err, fs.ErrNotExist) {
		return SummaryOf(id, RecordMeta{CardID: e.CardID, Revision: e.Revision, Verdict: e.Verdict, Created: e.Created,
			Digest: e.Digest, CardDigest: e.CardDigest}), nil
	}
	if err != nil {
		return Summary{}, err
	}
	var sum Summary
	if err := json.Unmarshal(b, &sum); err != nil {
		return Summary{}, fmt.Errorf("%s: %w", summaryName(id), err)
	}
	return sum, nil
}

// checkSummary checks the summary file of ledger line n, when there is
// one, against the line and the record r it summarizes.
func checkSummary(b []byte, e LedgerEntry, r *checks.Record, n int) error {
	var got Summary
	if err := json.Unmarshal(b, &got); err != nil {
		return fmt.Errorf("%s:%d: %s: %w", LedgerName, n, summaryName(e.ID), err)
	}
	want := SummaryOf(e.ID, MetaOf(r))
	if string(summaryJSON(got)) != string(summaryJSON(want)) {
		return fmt.Errorf("%s:%d: %s says %s, the record %s", LedgerName, n, summaryName(e.ID), summaryJSON(got), summaryJSON(want))
	}
	return nil
}
