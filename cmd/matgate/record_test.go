package main

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestRecordVerifyStrict: a field the record format does not define fails
// record verify even when the digest and signature hold (the digest covers
// only the known fields), at the top and inside a series, in a
// matgate.record/2 record and in a matgate.record/1 record made by the
// code before it (testdata/records); a series of the other format's shape
// fails; a stripped signature is reported as unsigned, a failure with
// --require-signature or --public-key.
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

	inSeries := filepath.Join(dir, "in-series.json")
	os.WriteFile(inSeries, bytes.Replace(b, []byte(`"series":{`), []byte(`"series":{"smoothed":true,`), 1), 0o644)
	if bytes.Equal(b, mustRead(t, inSeries)) {
		t.Fatal("no series object in the record")
	}

	v1 := filepath.Join(dir, "v1.json")
	v1b := gunzipFile(t, "../../testdata/records/steel-prager-v1.record.json.gz")
	os.WriteFile(v1, v1b, 0o644)
	v1Added := filepath.Join(dir, "v1-added.json")
	os.WriteFile(v1Added, bytes.Replace(v1b, []byte(`"accumulated_plastic_strain":`), []byte(`"smoothed": true, "accumulated_plastic_strain":`), 1), 0o644)
	v1As2 := filepath.Join(dir, "v1-as-2.json")
	os.WriteFile(v1As2, bytes.Replace(v1b, []byte(`"matgate.record/1"`), []byte(`"matgate.record/2"`), 1), 0o644)

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
		{"added field", []string{"--public-key", key + ".pub", added}, exitFailed, []string{`FAIL read as a verification record`, `unknown field "approved_for_design"`, "NOT intact"}},
		{"added field in a series", []string{"--public-key", key + ".pub", inSeries}, exitFailed, []string{`unknown field "smoothed"`, "NOT intact"}},
		{"matgate.record/1 of the code before", []string{v1}, exitPass, []string{"ok   digest sha256:", "ok   re-run from the embedded card reproduces", "intact, unsigned; verdict pass"}},
		{"matgate.record/1, added field in a sample", []string{v1Added}, exitFailed, []string{`unknown field "smoothed"`, "NOT intact"}},
		{"matgate.record/1 relabelled /2", []string{v1As2}, exitFailed, []string{"series is not in the form of matgate.record/2", "NOT intact"}},
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

func mustRead(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// gunzipFile returns the content of a gzip file.
func gunzipFile(t *testing.T, path string) []byte {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	b, err := io.ReadAll(zr)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
