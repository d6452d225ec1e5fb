package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/santhosh-tekuri/jsonschema/v5"

	"matgate/worker"
	"matgate/worker/cardspace"
)

// writeFile writes data to dir/name, making the folders on the way.
func writeFile(t testing.TB, dir, name string, data []byte) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(p, data, 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// demoVariant writes the aluminium demo card to dir/name with each
// old -> new replacement of repl made once (each must be in the card).
func demoVariant(t testing.TB, dir, name string, repl ...string) string {
	t.Helper()
	b, err := os.ReadFile("../../testdata/cards/al-bilinear.yaml")
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
	return writeFile(t, dir, name, []byte(s))
}

func TestExpandInputsLeavesOut(t *testing.T) {
	root := t.TempDir()
	card := []byte("id: x\n")
	for _, name := range []string{
		"a.yaml", "sub/b.json", "sub/c.YML", // cards
		"notes.txt",                   // not a card file
		".git/d.yaml", ".hidden.yaml", // hidden
		"matgate-out/e.record.json", "sub/matgate-out/f.card.json", // default --out of earlier runs
		"records/ab/g.card.json",   // a records directory (below)
		"custom-out/h.record.json", // this run's --out
	} {
		writeFile(t, root, name, card)
	}
	writeFile(t, root, "records/"+worker.LedgerName, nil)

	got, err := expandInputs([]string{root}, filepath.Join(root, "custom-out"), filepath.Join(root, "not-there"))
	if err != nil {
		t.Fatal(err)
	}
	want := []string{filepath.Join(root, "a.yaml"), filepath.Join(root, "sub/b.json"), filepath.Join(root, "sub/c.YML")}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("walk of the library root (-want +got):\n%s", diff)
	}
	// The same from inside the root, with --out relative: a folder is
	// recognized by identity, not by spelling.
	t.Chdir(root)
	got, err = expandInputs([]string{"."}, "./custom-out/")
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff([]string{"a.yaml", "sub/b.json", "sub/c.YML"}, got); diff != "" {
		t.Errorf("walk of . (-want +got):\n%s", diff)
	}
	// Without the skip, this run's --out is a folder like any other.
	if got, _ := expandInputs([]string{"."}); !slices.Contains(got, "custom-out/h.record.json") {
		t.Errorf("custom-out left out without being named: %v", got)
	}
	// A folder or file named as an argument is taken whatever it is.
	got, err = expandInputs([]string{".git", ".hidden.yaml", "records"})
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff([]string{".git/d.yaml", ".hidden.yaml", "records/ab/g.card.json"}, got); diff != "" {
		t.Errorf("named arguments (-want +got):\n%s", diff)
	}
	if _, err := expandInputs([]string{"matgate-out/.."}, "."); err != nil {
		t.Errorf("a root that is also the skipped folder: %v", err)
	}
}

// TestVerifyTwiceInLibraryRoot runs verify in a library root twice, with
// the default --out and a records directory inside the root: the second
// run sees the one card again and nothing of the first run's outputs.
func TestVerifyTwiceInLibraryRoot(t *testing.T) {
	root := t.TempDir()
	demoVariant(t, root, "cards/al.yaml")
	t.Chdir(root)
	for run := 1; run <= 2; run++ {
		code, out, errOut := matgate(t, "", "verify", "--store", "records", ".")
		if code != exitPass || !strings.Contains(out, "1 card(s): 1 passed, 0 failed, 0 invalid") {
			t.Fatalf("run %d: exit %d\n%s%s", run, code, out, errOut)
		}
	}
	for _, p := range []string{"matgate-out/demo-canopy-aluminium-r2.record.json", "records/" + worker.LedgerName} {
		if _, err := os.Stat(p); err != nil {
			t.Errorf("the test did not make what it means to leave out: %v", err)
		}
	}
	if code, out, _ := matgate(t, "", "check", "."); code != exitPass || !strings.Contains(out, "1 card(s): 1 valid") {
		t.Errorf("check after verify: exit %d\n%s", code, out)
	}
}

// checkLibrary makes a folder of cards that exercises every output of
// check: valid cards of every model combination (cardspace), the bad
// cards of testdata with their reference files, and a duplicate id and
// revision of other content.
func checkLibrary(t testing.TB, n int) string {
	t.Helper()
	dir := t.TempDir()
	for i := range n {
		writeFile(t, dir, fmt.Sprintf("space/%03d.yaml", i), cardspace.Card(7, i))
	}
	for _, bad := range []string{"schema", "plausible"} {
		src := filepath.Join("../../testdata/bad", bad)
		entries, err := os.ReadDir(src)
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range entries {
			if strings.HasSuffix(e.Name(), ".golden") || e.Name() == "too-large.yaml" {
				continue
			}
			b, err := os.ReadFile(filepath.Join(src, e.Name()))
			if err != nil {
				t.Fatal(err)
			}
			writeFile(t, dir, filepath.Join("bad", bad, e.Name()), b)
		}
	}
	demoVariant(t, dir, "demo/a-original.yaml")
	demoVariant(t, dir, "demo/b-changed.yaml", "yield_stress: 40", "yield_stress: 41")
	return dir
}

// TestCheckJobsSameOutput: check on 1 and on 8 goroutines prints the same
// bytes in every format, and the same exit code.
func TestCheckJobsSameOutput(t *testing.T) {
	dir := checkLibrary(t, 40)
	for _, format := range []string{"text", "json", "sarif"} {
		code1, out1, err1 := matgate(t, "", "check", "--format", format, "--jobs", "1", dir)
		code8, out8, err8 := matgate(t, "", "check", "--format", format, "--jobs", "8", dir)
		if code1 != exitInvalid || code8 != code1 || err1 != err8 {
			t.Errorf("%s: exit %d and %d, want %d both\n%s%s", format, code1, code8, exitInvalid, err1, err8)
		}
		if out1 != out8 {
			t.Errorf("%s: --jobs 8 prints other bytes than --jobs 1 (-1 +8):\n%s", format, cmp.Diff(out1, out8))
		}
		if format == "text" && !strings.Contains(out1, "demo/b-changed.yaml:5:11: /revision: card demo-canopy-aluminium revision 2 is also in "+filepath.Join(dir, "demo/a-original.yaml")+":5:11 with other content") {
			t.Errorf("text: the duplicate is not reported:\n%s", out1)
		}
	}
	if code, _, errOut := matgate(t, "", "check", "--jobs", "0", dir); code != exitInvalid || !strings.Contains(errOut, "--jobs 0") {
		t.Errorf("--jobs 0: exit %d %s", code, errOut)
	}
}

// TestCheckJSONFraming: the JSON array that check streams is, byte for
// byte, what encoding/json writes for the whole array at once.
func TestCheckJSONFraming(t *testing.T) {
	for _, args := range [][]string{
		{"check", "--format", "json", "../../testdata/cards"},
		{"check", "--format", "json", "../../testdata/cards/al-bilinear.yaml"},
		{"check", "--format", "json", "../../testdata/bad/plausible"},
	} {
		_, out, _ := matgate(t, "", args...)
		var v []json.RawMessage // member order as written
		if err := json.Unmarshal([]byte(out), &v); err != nil {
			t.Fatalf("%v: %v\n%s", args, err, out)
		}
		var b bytes.Buffer
		enc := json.NewEncoder(&b)
		enc.SetIndent("", "  ")
		if err := enc.Encode(v); err != nil {
			t.Fatal(err)
		}
		if b.String() != out {
			t.Errorf("%v: streamed JSON differs from encoding/json's (-encoder +streamed):\n%s", args, cmp.Diff(b.String(), out))
		}
	}
	var w bytes.Buffer
	j := &jsonArrayWriter{w: &w}
	j.close(0, 0)
	if w.String() != "[]\n" {
		t.Errorf("empty array: %q", w.String())
	}
}

// sarifSchema compiles the SARIF 2.1.0 subset of testdata/sarif (see its
// description: written from the OASIS standard, stricter in one way).
func sarifSchema(t *testing.T) *jsonschema.Schema {
	t.Helper()
	c := jsonschema.NewCompiler()
	c.AssertFormat = true
	b, err := os.ReadFile("../../testdata/sarif/sarif-2.1.0-subset.schema.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := c.AddResource("sarif.json", bytes.NewReader(b)); err != nil {
		t.Fatal(err)
	}
	s, err := c.Compile("sarif.json")
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestCheckSARIF: check --format sarif validates against the SARIF 2.1.0
// schema subset, has one result per diagnostic of the text output, at the
// same file, line and column, and each result's rule is the one its
// ruleIndex names. A log broken on purpose fails the schema, so the test
// can fail.
func TestCheckSARIF(t *testing.T) {
	schema := sarifSchema(t)
	dir := checkLibrary(t, 3)
	t.Chdir(dir)
	code, out, errOut := matgate(t, "", "check", "--format", "sarif", ".")
	if code != exitInvalid {
		t.Fatalf("exit %d %s", code, errOut)
	}
	var v any
	if err := json.Unmarshal([]byte(out), &v); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if err := schema.Validate(v); err != nil {
		t.Fatalf("SARIF output does not validate: %#v", err)
	}
	var log struct {
		Runs []struct {
			Tool struct {
				Driver struct {
					Rules []struct{ ID string } `json:"rules"`
				} `json:"driver"`
			} `json:"tool"`
			Results []struct {
				RuleID    string `json:"ruleId"`
				RuleIndex int    `json:"ruleIndex"`
				Level     string `json:"level"`
				Message   struct{ Text string }
				Locations []struct {
					PhysicalLocation struct {
						ArtifactLocation struct{ URI string }
						Region           *struct{ StartLine, StartColumn int }
					}
				}
				RelatedLocations []any `json:"relatedLocations"`
			} `json:"results"`
		} `json:"runs"`
	}
	if err := json.Unmarshal([]byte(out), &log); err != nil {
		t.Fatal(err)
	}
	run := log.Runs[0]
	var got []string
	related := 0
	for _, r := range run.Results {
		if rule := run.Tool.Driver.Rules[r.RuleIndex].ID; rule != r.RuleID {
			t.Errorf("ruleIndex %d names %s, ruleId is %s", r.RuleIndex, rule, r.RuleID)
		}
		if len(r.Locations) != 1 {
			t.Fatalf("result without its one location: %+v", r)
		}
		loc := r.Locations[0].PhysicalLocation
		where := loc.ArtifactLocation.URI
		if reg := loc.Region; reg != nil {
			where += fmt.Sprintf(":%d", reg.StartLine)
			if reg.StartColumn > 0 {
				where += fmt.Sprintf(":%d", reg.StartColumn)
			}
		}
		sev := ""
		if r.Level == "warning" {
			sev = "warning: "
		}
		got = append(got, where+": "+sev+r.Message.Text)
		if r.RuleID == worker.RuleDuplicateRevision {
			related += len(r.RelatedLocations)
		}
	}
	_, text, _ := matgate(t, "", "check", ".")
	var want []string
	for _, line := range strings.Split(text, "\n") {
		if line != "" && !strings.Contains(line, ": valid: ") && !strings.Contains(line, ": invalid: ") && !strings.Contains(line, " card(s): ") {
			want = append(want, line)
		}
	}
	if len(want) < 30 {
		t.Errorf("only %d diagnostics in the text output", len(want))
	}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("SARIF results against the text diagnostics (-text +sarif):\n%s", diff)
	}
	if related != 1 {
		t.Errorf("the duplicate revision has %d related locations, want 1 (the other file)", related)
	}

	// The schema bites: each of these breaks of the log fails it.
	for name, breakIt := range map[string]func(m map[string]any){
		"level fatal":    func(m map[string]any) { result0(m)["level"] = "fatal" },
		"line 0":         func(m map[string]any) { region0(m)["startLine"] = 0 },
		"invented field": func(m map[string]any) { result0(m)["severity"] = "error" },
		"no message":     func(m map[string]any) { delete(result0(m), "message") },
		"version 2.0":    func(m map[string]any) { m["version"] = "2.0.0" },
	} {
		var m map[string]any
		json.Unmarshal([]byte(out), &m)
		breakIt(m)
		if err := schema.Validate(m); err == nil {
			t.Errorf("%s: the broken log validates", name)
		}
	}
	// An empty run is a valid log too.
	_, out, _ = matgate(t, "", "check", "--format", "sarif", "space/000.yaml")
	json.Unmarshal([]byte(out), &v)
	if err := schema.Validate(v); err != nil || !strings.Contains(out, `"results": []`) {
		t.Errorf("a log without results: %v\n%s", err, out)
	}
}

func result0(m map[string]any) map[string]any {
	return m["runs"].([]any)[0].(map[string]any)["results"].([]any)[0].(map[string]any)
}

func region0(m map[string]any) map[string]any {
	return result0(m)["locations"].([]any)[0].(map[string]any)["physicalLocation"].(map[string]any)["region"].(map[string]any)
}

// TestCheckLibraryRules holds real card files to each library rule: two
// files of one run, and files against a records directory that verify
// --store filled.
func TestCheckLibraryRules(t *testing.T) {
	dir := t.TempDir()
	original := demoVariant(t, dir, "a-original.yaml")
	changed := demoVariant(t, dir, "b-changed.yaml", "yield_stress: 40", "yield_stress: 41")
	r3 := demoVariant(t, dir, "c-r3.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 41")
	r3changed := demoVariant(t, dir, "d-r3-changed.yaml", "revision: 2", "revision: 3", "yield_stress: 40", "yield_stress: 42")
	store := filepath.Join(t.TempDir(), "records")

	// One content per id and revision in a run; both files named.
	code, out, _ := matgate(t, "", "check", original, changed)
	if want := changed + ":5:11: /revision: card demo-canopy-aluminium revision 2 is also in " + original + ":5:11 with other content"; code != exitInvalid || !strings.Contains(out, want) {
		t.Errorf("duplicate revision: exit %d, want %d and %q in\n%s", code, exitInvalid, want, out)
	}

	if code, out, errOut := matgate(t, "", "verify", "--out", t.TempDir(), "--store", store, r3); code != exitPass {
		t.Fatalf("verify --store: exit %d\n%s%s", code, out, errOut)
	}
	entries, _ := worker.OpenDirStoreReadOnly(store)
	stored, n := entries.List("", 0, 10)
	entries.Close()
	if n != 1 {
		t.Fatalf("%d records stored, want 1", n)
	}
	// The store is read without its lock: check works while a writer
	// (serve, verify --store) holds the directory.
	writer, err := worker.OpenDirStore(store)
	if err != nil {
		t.Fatal(err)
	}
	defer writer.Close()
	for _, tc := range []struct {
		name, file string
		code       int
		want       string
	}{
		{"stored card", r3, exitPass, "c-r3.yaml: valid: demo-canopy-aluminium r3"},
		{"unbumped", r3changed, exitInvalid, r3changed + ":5:11: /revision: card demo-canopy-aluminium revision 3 has a stored record " + stored[0].ID},
		{"below", original, exitInvalid, original + ":5:11: /revision: card demo-canopy-aluminium revision 2 is below revision 3, the latest stored (record " + stored[0].ID},
	} {
		code, out, errOut := matgate(t, "", "check", "--store", store, tc.file)
		if code != tc.code || !strings.Contains(out, tc.want) {
			t.Errorf("%s: exit %d, want %d and %q in\n%s%s", tc.name, code, tc.code, tc.want, out, errOut)
		}
	}
	_, out, _ = matgate(t, "", "check", "--format", "json", "--store", store, r3changed)
	if !strings.Contains(out, `"rule": "library-unbumped-revision"`) {
		t.Errorf("json: no rule id of the library rule:\n%s", out)
	}
	if code, _, errOut := matgate(t, "", "check", "--store", dir, r3); code != exitInvalid || !strings.Contains(errOut, "not a records directory") {
		t.Errorf("--store of a folder without a ledger: exit %d %s", code, errOut)
	}
}
