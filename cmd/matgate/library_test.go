package main

import (
	"bytes"
	"context"
	"io"
	"os"
	"strings"
	"testing"

	"matgate/worker"
)

// TestLibraryConflicts: the first pass that verify makes over its inputs
// finds the later card of a duplicate id and revision (here from standard
// input) and nothing else, and leaves standard input readable for the
// second pass.
func TestLibraryConflicts(t *testing.T) {
	dir := t.TempDir()
	original := demoVariant(t, dir, "a-original.yaml")
	changed, err := os.ReadFile(demoVariant(t, dir, "b-changed.yaml", "yield_stress: 40", "yield_stress: 41"))
	if err != nil {
		t.Fatal(err)
	}
	r3 := demoVariant(t, dir, "c-r3.yaml", "revision: 2", "revision: 3")
	bad := writeFile(t, dir, "d-bad.yaml", []byte("id: x\n"))
	e := &env{stdin: bytes.NewReader(changed), stdout: io.Discard, stderr: io.Discard}
	names := []string{original, "-", r3, bad}
	got, err := libraryConflicts(context.Background(), e, names, 2, worker.NewLibrary(nil))
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 1 || len(got[1]) != 1 || got[1][0].Rule != worker.RuleDuplicateRevision ||
		got[1][0].Other.File != original || got[1][0].Card.File != stdinName {
		t.Errorf("conflicts: %+v", got)
	}
	if l := loadCard(e, "-"); !l.valid() || !strings.HasPrefix(l.card.Digest, "sha256:") {
		t.Errorf("standard input read again: %v", l.diags)
	}
}
