package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestVerifyStoreReuseAndCompare: a second `verify --store` of an
// unchanged card reuses its stored record and says so (issue 10); a new
// revision of the card is verified and its response compared with the
// stored one: raising the yield stress by 5 % moves the shear yield stress
// by exactly 5 % (von Mises 1913: sigmaY/sqrt(3)); --force verifies again;
// --summary writes the Markdown summary. Demo card: invented data.
func TestVerifyStoreReuseAndCompare(t *testing.T) {
	dir := t.TempDir()
	store, out := filepath.Join(dir, "records"), filepath.Join(dir, "out")
	b, err := os.ReadFile("../../testdata/cards/al-bilinear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	lib := filepath.Join(dir, "lib")
	if err := os.Mkdir(lib, 0o755); err != nil {
		t.Fatal(err)
	}
	card := filepath.Join(lib, "al.yaml")
	if err := os.WriteFile(card, b, 0o644); err != nil {
		t.Fatal(err)
	}
	run := func(args ...string) (int, string) {
		t.Helper()
		code, stdout, stderr := matgate(t, "", append([]string{"verify", "--out", out, "--store", store}, args...)...)
		return code, stdout + stderr
	}
	if code, text := run(card); code != exitPass || strings.Contains(text, "reused") {
		t.Fatalf("first run: exit %d\n%s", code, text)
	}
	summary := filepath.Join(dir, "summary.md")
	code, text := run("--summary", summary, card)
	if code != exitPass || !strings.Contains(text, "stored record reused") || !strings.Contains(text, "1 reused from the store") {
		t.Fatalf("second run: exit %d, want the stored record reused\n%s", code, text)
	}
	md, err := os.ReadFile(summary)
	if err != nil || !strings.Contains(string(md), "| card | revision | verdict |") || !strings.Contains(string(md), "not fitness for design") {
		t.Errorf("summary: %v\n%s", err, md)
	}
	if code, text := run("--force", card); code != exitPass || strings.Contains(text, "reused") {
		t.Errorf("--force: exit %d, want a fresh verification\n%s", code, text)
	}
	// The next revision with a 5 % higher yield stress.
	next := strings.Replace(strings.Replace(string(b), "revision: 2\n", "revision: 3\n", 1), "yield_stress: 40\n", "yield_stress: 42\n", 1)
	if next == string(b) || strings.Count(next, "42") == strings.Count(string(b), "42") {
		t.Fatalf("the demo card changed shape:\n%s", b)
	}
	if err := os.WriteFile(card, []byte(next), 0o644); err != nil {
		t.Fatal(err)
	}
	code, text = run(card)
	if code != exitPass || !strings.Contains(text, "response vs r2:") || !strings.Contains(text, "shear yield stress +5 %") {
		t.Errorf("revision 2: exit %d, want the comparison with r2 naming the shear yield stress +5 %%\n%s", code, text)
	}
}

// TestVerifyJobsSameOutput: verifying the demo folder on one core and on
// three gives the same output, byte for byte, in the order of the inputs
// (issue 10; the records differ only by their time stamps, which the
// outcomes do not show).
func TestVerifyJobsSameOutput(t *testing.T) {
	out := filepath.Join(t.TempDir(), "out")
	var got [2]string
	for i, jobs := range []string{"1", "3"} {
		code, stdout, stderr := matgate(t, "", "verify", "--jobs", jobs, "--format", "json", "--out", out, "../../testdata/cards")
		if code != exitPass {
			t.Fatalf("--jobs %s: exit %d\n%s", jobs, code, stderr)
		}
		got[i] = stdout
	}
	if got[0] != got[1] {
		t.Errorf("--jobs 1 and --jobs 3 differ:\n%s\n---\n%s", got[0], got[1])
	}
	if strings.Index(got[0], "al-bilinear") > strings.Index(got[0], "ss-chaboche") {
		t.Errorf("not in input order:\n%s", got[0])
	}
}
