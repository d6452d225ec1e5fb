package main

import (
	"bytes"
	"context"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files of testdata/bad/plausible")

// matgate runs one command line in-process and returns its exit code and
// output.
func matgate(t *testing.T, stdin string, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(context.Background(), args, strings.NewReader(stdin), &out, &errb)
	return code, out.String(), errb.String()
}

// TestCheckGolden runs `matgate check` on every bad card and compares its
// diagnostics, line for line, with the card's golden file; the exit code is
// 2 exactly when a diagnostic is an error, 0 when all are warnings.
func TestCheckGolden(t *testing.T) {
	for _, dir := range []string{"../../testdata/bad/schema", "../../testdata/bad/plausible"} {
		cards, _ := filepath.Glob(filepath.Join(dir, "*"))
		n := 0
		for _, card := range cards {
			ext := filepath.Ext(card)
			if ext != ".yaml" && ext != ".json" {
				continue
			}
			if filepath.Base(card) == "too-large.yaml" {
				continue // decoded with a 256-byte limit by the schema tests; see TestCheckOversize
			}
			n++
			golden := strings.TrimSuffix(card, ext) + ".golden"
			t.Run(filepath.Base(dir)+"/"+filepath.Base(card), func(t *testing.T) {
				code, out, errOut := matgate(t, "", "check", card)
				var got []string
				for _, line := range strings.Split(out, "\n") {
					if line == "" || strings.HasPrefix(line, card+": valid:") || strings.HasPrefix(line, card+": invalid:") || strings.Contains(line, " card(s): ") {
						continue
					}
					got = append(got, strings.TrimPrefix(line, dir+"/"))
				}
				if *update && strings.HasSuffix(dir, "plausible") {
					if err := os.WriteFile(golden, []byte(strings.Join(got, "\n")+"\n"), 0o644); err != nil {
						t.Fatal(err)
					}
				}
				b, err := os.ReadFile(golden)
				if err != nil {
					t.Fatalf("no golden file: %v (run go test -update for plausible cards)", err)
				}
				want := strings.Split(strings.TrimRight(string(b), "\n"), "\n")
				if strings.Join(got, "\n") != strings.Join(want, "\n") {
					t.Errorf("check %s:\n got:\n%s\nwant:\n%s", card, strings.Join(got, "\n"), strings.Join(want, "\n"))
				}
				hasError := false
				for _, w := range want {
					if !strings.Contains(w, ": warning: ") {
						hasError = true
					}
				}
				if wantCode := map[bool]int{true: exitInvalid, false: exitPass}[hasError]; code != wantCode {
					t.Errorf("exit %d, want %d (stderr %q)", code, wantCode, errOut)
				}
			})
		}
		if n < 10 {
			t.Errorf("%s: only %d bad cards", dir, n)
		}
	}
}

func TestCheckDemoCards(t *testing.T) {
	code, out, errOut := matgate(t, "", "check", "--strict", "../../testdata/cards")
	if code != exitPass {
		t.Fatalf("exit %d\n%s%s", code, out, errOut)
	}
	if !strings.Contains(out, "4 card(s): 4 valid, 0 invalid") {
		t.Errorf("summary missing:\n%s", out)
	}
	// The same card through stdin.
	b, _ := os.ReadFile("../../testdata/cards/ss-chaboche.yaml")
	if code, out, _ := matgate(t, string(b), "check", "-"); code != 0 || !strings.Contains(out, "<stdin>: valid: demo-canopy-stainless r1 sha256:") {
		t.Errorf("stdin: exit %d\n%s", code, out)
	}
}

func TestUsageErrors(t *testing.T) {
	tests := []struct {
		name string
		args []string
		want int
	}{
		{"unknown flag", []string{"check", "--no-such-flag", "x.yaml"}, exitInvalid},
		{"no arguments", []string{"check"}, exitInvalid},
		{"missing file", []string{"check", "no-such-card.yaml"}, exitInvalid},
		{"bad format", []string{"check", "--format", "xml", "../../testdata/cards"}, exitInvalid},
		{"simulate without path", []string{"simulate", "../../testdata/cards/ss-chaboche.yaml"}, exitInvalid},
		{"version", []string{"version"}, exitPass},
	}
	for _, tc := range tests {
		if code, out, errOut := matgate(t, "", tc.args...); code != tc.want {
			t.Errorf("%s: exit %d, want %d\n%s%s", tc.name, code, tc.want, out, errOut)
		}
	}
}

func TestNormalizeYAMLRoundTrip(t *testing.T) {
	code, js, _ := matgate(t, "", "normalize", "../../testdata/cards/ss-chaboche.yaml")
	if code != 0 {
		t.Fatalf("normalize: exit %d", code)
	}
	code, y, _ := matgate(t, "", "normalize", "--yaml", "../../testdata/cards/ss-chaboche.yaml")
	if code != 0 {
		t.Fatalf("normalize --yaml: exit %d", code)
	}
	// The YAML form, read back, normalizes to the same JSON byte for byte.
	code, again, errOut := matgate(t, y, "normalize", "-")
	if code != 0 || again != js {
		t.Errorf("normalize of the YAML form: exit %d %s\n got %s\nwant %s", code, errOut, again, js)
	}
}

func TestCheckOversize(t *testing.T) {
	b, _ := os.ReadFile("../../testdata/cards/ss-chaboche.yaml")
	big := string(b) + "# " + strings.Repeat("x", 1<<20) + "\n"
	code, out, _ := matgate(t, big, "check", "-")
	if code != exitInvalid || !strings.Contains(out, "<stdin>: the file is larger than the limit of 1048576 bytes") {
		t.Errorf("1 MiB card: exit %d\n%.300s", code, out)
	}
}
