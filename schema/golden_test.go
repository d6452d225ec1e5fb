package schema

import (
	"errors"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files of the bad-card corpus")

// badDir holds the bad-card corpus: each <name>.yaml or <name>.json has the
// diagnostics Decode must give in <name>.golden, one Diagnostic.String() a
// line, in Decode's order.
const badDir = "../testdata/bad/schema"

// badOptions are the DecodeOptions of corpus files that need other than the
// defaults.
var badOptions = map[string]*DecodeOptions{
	"too-large.yaml": {MaxBytes: 256},
}

func badCards(t testing.TB) []string {
	t.Helper()
	entries, err := os.ReadDir(badDir)
	if err != nil {
		t.Fatal(err)
	}
	var files []string
	goldens := map[string]string{}
	for _, e := range entries {
		switch filepath.Ext(e.Name()) {
		case ".yaml", ".yml", ".json":
			g := strings.TrimSuffix(e.Name(), filepath.Ext(e.Name()))
			if other, ok := goldens[g]; ok {
				t.Fatalf("%s and %s would share %s.golden: rename one", other, e.Name(), g)
			}
			goldens[g] = e.Name()
			files = append(files, filepath.Join(badDir, e.Name()))
		}
	}
	if len(files) == 0 {
		t.Fatalf("no bad cards in %s", badDir)
	}
	return files
}

func TestBadCorpus(t *testing.T) {
	for _, f := range badCards(t) {
		name := filepath.Base(f)
		t.Run(name, func(t *testing.T) {
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			doc, err := Decode(name, data, badOptions[name])
			if doc == nil {
				t.Fatal("Decode returned a nil Document")
			}
			var ds Diagnostics
			if !errors.As(err, &ds) {
				t.Fatalf("Decode error = %v (%T), want Diagnostics", err, err)
			}
			if !ds.HasErrors() {
				t.Fatalf("no error diagnostic for a bad card: %v", ds)
			}
			if doc.Card != nil {
				t.Error("Card is set although the card is invalid")
			}
			var got strings.Builder
			for _, d := range ds {
				got.WriteString(d.String())
				got.WriteByte('\n')
			}
			golden := strings.TrimSuffix(f, filepath.Ext(f)) + ".golden"
			if *update {
				if err := os.WriteFile(golden, []byte(got.String()), 0o644); err != nil {
					t.Fatal(err)
				}
				return
			}
			want, err := os.ReadFile(golden)
			if err != nil {
				t.Fatalf("%v (run go test ./schema -run TestBadCorpus -update to create it)", err)
			}
			if got.String() != string(want) {
				t.Errorf("diagnostics differ from %s\n--- want\n%s--- got\n%s", golden, want, got.String())
			}
		})
	}
}
