package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestRecordVerifyStrict: a field the record format does not define fails
// record verify even when the digest and signature hold (the digest covers
// only the known fields), and a stripped signature is reported as
// unsigned, a failure with --require-signature or --public-key.
func TestRecordVerifyStrict(t *testing.T) {
	dir := t.TempDir()
	key := filepath.Join(dir, "k")
	if code, out, errOut := matgate(t, "", "record", "keygen", key); code != 0 {
		t.Fatalf("keygen: %d %s%s", code, out, errOut)
	}
	if code, out, errOut := matgate(t, "", "verify", "--out", dir, "--sign-key", key+".key", "../../testdata/cards/steel-prager.json"); code != 0 {
		t.Fatalf("verify: %d %s%s", code, out, errOut)
	}
	signed := filepath.Join(dir, "demo-canopy-steel-r4.record.json")
	b, err := os.ReadFile(signed)
	if err != nil {
		t.Fatal(err)
	}
	added := filepath.Join(dir, "added.json")
	os.WriteFile(added, bytes.Replace(b, []byte("{"), []byte("{\n  \"approved_for_design\": true,"), 1), 0o644)

	var m map[string]json.RawMessage
	if err := json.Unmarshal(b, &m); err != nil {
		t.Fatal(err)
	}
	delete(m, "signature")
	sb, _ := json.Marshal(m)
	stripped := filepath.Join(dir, "stripped.json")
	os.WriteFile(stripped, sb, 0o644)

	tests := []struct {
		name string
		args []string
		code int
		want []string
	}{
		{"signed, checked", []string{"--public-key", key + ".pub", signed}, exitPass, []string{"ok   signature of key", "intact, signed by key"}},
		{"signed, no key", []string{signed}, exitPass, []string{"note signed by key", "not checked"}},
		{"added field", []string{"--public-key", key + ".pub", added}, exitFailed, []string{`FAIL read as matgate.record/1`, `unknown field "approved_for_design"`, "NOT intact"}},
		{"stripped signature", []string{stripped}, exitPass, []string{"note unsigned", "intact, unsigned"}},
		{"stripped, --require-signature", []string{"--require-signature", stripped}, exitFailed, []string{"FAIL unsigned", "NOT intact"}},
		{"stripped, --public-key", []string{"--public-key", key + ".pub", stripped}, exitFailed, []string{"FAIL unsigned"}},
	}
	for _, tc := range tests {
		code, out, errOut := matgate(t, "", append([]string{"record", "verify"}, tc.args...)...)
		if code != tc.code {
			t.Errorf("%s: exit %d, want %d\n%s%s", tc.name, code, tc.code, out, errOut)
		}
		for _, w := range tc.want {
			if !strings.Contains(out, w) {
				t.Errorf("%s: output does not say %q:\n%s", tc.name, w, out)
			}
		}
	}
}

// TestReferenceFIFO: a reference "file" that is a FIFO is refused as not
// a regular file (exit 2) by check and verify; reading it would block
// until some writer opened it, that is, for ever.
func TestReferenceFIFO(t *testing.T) {
	dir := t.TempDir()
	b, err := os.ReadFile("../../testdata/cards/ss-chaboche.yaml")
	if err != nil {
		t.Fatal(err)
	}
	card := filepath.Join(dir, "card.yaml")
	os.WriteFile(card, []byte(strings.Replace(string(b), "  profile: standard\n",
		"  profile: standard\n  references:\n    - {name: pipe, kind: measured, file: tension.csv}\n", 1)), 0o644)
	if err := syscall.Mkfifo(filepath.Join(dir, "tension.csv"), 0o644); err != nil {
		t.Skipf("cannot make a FIFO here: %v", err)
	}
	for _, args := range [][]string{{"check", card}, {"verify", "--out", filepath.Join(dir, "out"), card}} {
		cmd := args[0]
		done := make(chan struct{})
		var code int
		var out string
		go func() {
			defer close(done)
			code, out, _ = matgate(t, "", args...)
		}()
		select {
		case <-done:
		case <-time.After(time.Minute): // a guard against a hang, not a timing
			t.Fatalf("%s blocks on a FIFO reference file", cmd)
		}
		if code != exitInvalid || !strings.Contains(out, "tension.csv is not a regular file") {
			t.Errorf("%s: exit %d, want %d with the reason\n%s", cmd, code, exitInvalid, out)
		}
	}
}
