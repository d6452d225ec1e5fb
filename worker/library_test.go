package worker

import (
	"context"
	"encoding/json"
	"errors"
	"net/http"
	"os"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"matgate/schema"
)

// aluminium returns the aluminium demo card with each old -> new
// replacement of repl made once, decoded and prepared as submitted.
func aluminium(t testing.TB, name string, repl ...string) (*schema.Card, CardRef, []byte) {
	t.Helper()
	b, err := os.ReadFile("../testdata/cards/al-bilinear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	for i := 0; i < len(repl); i += 2 {
		if !strings.Contains(s, repl[i]) {
			t.Fatalf("the demo card has no %q", repl[i])
		}
		s = strings.Replace(s, repl[i], repl[i+1], 1)
	}
	doc, err := schema.Decode(name, []byte(s), nil)
	if err != nil {
		t.Fatal(err)
	}
	c := prepareTestCard(t, name, []byte(s))
	return c, RefOf(doc, c), []byte(s)
}

// storeCard verifies c in-process and puts its record into s, as verify
// --store and serve do; it returns the record id.
func storeCard(t testing.TB, s *DirStore, c *schema.Card) string {
	t.Helper()
	out, err := Verify(context.Background(), c, testTool, time.Date(2026, 1, 2, 3, 4, 5, 0, time.UTC))
	if err != nil {
		t.Fatal(err)
	}
	rec, err := RecordJSON(out.Record)
	if err != nil {
		t.Fatal(err)
	}
	id := JobID(c.Digest, Settings{ToolVersion: testTool.Version})
	if _, err := s.Put(id, MetaOf(out.Record), rec, out.Card); err != nil {
		t.Fatal(err)
	}
	return id
}

func rules(cs []Conflict) []string {
	var out []string
	for _, c := range cs {
		out = append(out, c.Rule)
	}
	return out
}

// TestLibraryRun: within one run the first card of an id and revision
// stands and a later one of other content conflicts with it; the same
// content twice, or another revision, does not.
func TestLibraryRun(t *testing.T) {
	_, r2, _ := aluminium(t, "a.yaml")
	_, r2same, _ := aluminium(t, "copy.yaml", "# Demo card", "# A copy of the demo card")
	_, r2other, _ := aluminium(t, "b.yaml", "yield_stress: 40", "yield_stress: 41")
	_, r3, _ := aluminium(t, "c.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 41")
	if r2same.Digest != r2.Digest || r2other.Digest == r2.Digest {
		t.Fatalf("the digest is not of the content alone: %s %s %s", r2.Digest, r2same.Digest, r2other.Digest)
	}
	lib := NewLibrary(nil)
	for _, tc := range []struct {
		ref  CardRef
		want []string
	}{
		{r2, nil}, {r2same, nil}, {r3, nil}, {r2other, []string{RuleDuplicateRevision}},
	} {
		cs, err := lib.Add(tc.ref)
		if err != nil {
			t.Fatal(err)
		}
		if diff := cmp.Diff(tc.want, rules(cs)); diff != "" {
			t.Errorf("%s: rules (-want +got):\n%s", tc.ref.File, diff)
		}
		if len(cs) == 1 {
			d := cs[0].Diagnostic()
			want := "b.yaml:5:11: /revision: card demo-canopy-aluminium revision 2 is also in a.yaml:5:11 with other content"
			if !strings.HasPrefix(d.String(), want) || d.Severity != schema.SeverityError {
				t.Errorf("diagnostic %q, want it to start with %q", d.String(), want)
			}
		}
	}
}

// TestLibraryStore: the store rules on a records directory holding
// revision 3 of the aluminium card.
func TestLibraryStore(t *testing.T) {
	s, err := OpenDirStore(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	c3, r3, _ := aluminium(t, "r3.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 41")
	id3 := storeCard(t, s, c3)
	_, r2, _ := aluminium(t, "r2.yaml")
	_, r3changed, _ := aluminium(t, "r3-changed.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 42")
	_, r4, _ := aluminium(t, "r4.yaml", "revision: 2", "revision: 4")
	_, other, _ := aluminium(t, "other.yaml", "id: demo-canopy-aluminium", "id: another-card")
	for _, tc := range []struct {
		ref  CardRef
		want []string
	}{
		{r3, nil}, // the stored card itself
		{r4, nil}, // a new revision
		{other, nil},
		{r3changed, []string{RuleUnbumpedRevision}},
		{r2, []string{RuleRevisionBelowStored}},
	} {
		cs, err := StoreConflicts(s, tc.ref)
		if err != nil {
			t.Fatal(err)
		}
		if diff := cmp.Diff(tc.want, rules(cs)); diff != "" {
			t.Errorf("%s: rules (-want +got):\n%s", tc.ref.File, diff)
		}
		for _, c := range cs {
			if c.Stored == nil || c.Stored.Record != id3 || c.Latest != 3 || !strings.Contains(c.Message(), id3) {
				t.Errorf("%s: the conflict does not name the stored record %s: %+v %s", tc.ref.File, id3, c.Stored, c.Message())
			}
		}
	}
	// Both store rules at once: revision 2 of other content while 2 and 3
	// are stored.
	c2, _, _ := aluminium(t, "r2.yaml")
	storeCard(t, s, c2)
	_, r2changed, _ := aluminium(t, "r2-changed.yaml", "yield_stress: 40", "yield_stress: 39")
	cs, err := StoreConflicts(s, r2changed)
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff([]string{RuleUnbumpedRevision, RuleRevisionBelowStored}, rules(cs)); diff != "" {
		t.Errorf("rules (-want +got):\n%s", diff)
	}
	// A stored card that cannot be read is an error, not a pass.
	if _, err := StoreConflicts(brokenStore{s}, r3); err == nil {
		t.Errorf("an unreadable stored card passed the rules")
	}
}

// brokenStore is a records directory whose card files cannot be read.
type brokenStore struct{ *DirStore }

func (brokenStore) Card(string) ([]byte, error) { return nil, errors.New("disk gone") }

// TestAPILibraryConflict: serve refuses a submission that breaks a store
// rule with 409 and an RFC 9457 problem document that names the stored
// record; the stored card itself is still answered as before.
func TestAPILibraryConflict(t *testing.T) {
	s := newAPIStack(t, false, 0)
	c3, _, _ := aluminium(t, "r3.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 41")
	id3 := storeCard(t, s.store, c3)
	_, _, r3 := aluminium(t, "r3.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 41")
	_, _, r3changed := aluminium(t, "r3-changed.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 42")
	_, _, r2 := aluminium(t, "r2.yaml")
	for _, tc := range []struct {
		name string
		body []byte
		rule string
	}{
		{"unbumped", r3changed, RuleUnbumpedRevision},
		{"below", r2, RuleRevisionBelowStored},
	} {
		resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(tc.body)))
		var p struct {
			Type, Title, Detail, Instance string
			Status                        int
			Errors, Records               []string
			Conflicts                     []Conflict
		}
		if err := json.Unmarshal(body, &p); err != nil {
			t.Fatalf("%s: %v\n%s", tc.name, err, body)
		}
		if resp.StatusCode != http.StatusConflict || resp.Header.Get("Content-Type") != "application/problem+json" ||
			p.Status != 409 || p.Title != "Conflict" || p.Instance != "/v1/cards" {
			t.Errorf("%s: %d %q %+v", tc.name, resp.StatusCode, resp.Header.Get("Content-Type"), p)
		}
		if len(p.Conflicts) != 1 || p.Conflicts[0].Rule != tc.rule || p.Conflicts[0].Stored.Record != id3 ||
			len(p.Records) != 1 || p.Records[0] != "/v1/records/"+id3 || !strings.Contains(p.Detail, id3) ||
			len(p.Errors) != 1 || !strings.HasPrefix(p.Errors[0], "card:5:11: /revision: ") {
			t.Errorf("%s: the problem does not name rule %s and record %s:\n%s", tc.name, tc.rule, id3, body)
		}
	}
	resp, body := s.do(t, "POST", "/v1/cards", secretAll, "application/yaml", strings.NewReader(string(r3)))
	if resp.StatusCode != http.StatusSeeOther || resp.Header.Get("Location") != "/v1/records/"+id3 {
		t.Errorf("the stored card resubmitted: %d %s", resp.StatusCode, body)
	}
}
