package main

import (
	"strings"
	"testing"
)

// TestVersionFlag: `matgate --version` prints the line of `matgate
// version`, and an unstamped build run from this checkout names the
// commit git reports instead of "unknown" (issue 11: records made with
// `go run` said commit "unknown").
func TestVersionFlag(t *testing.T) {
	code, flag, _ := matgate(t, "", "--version")
	code2, cmd, _ := matgate(t, "", "version")
	if code != exitPass || code2 != exitPass || flag != cmd || !strings.HasPrefix(flag, "matgate ") {
		t.Fatalf("--version: exit %d %q; version: exit %d %q", code, flag, code2, cmd)
	}
	if version == "dev" && sourceCommit() != "" && strings.Contains(flag, "commit unknown") {
		t.Errorf("unstamped build in a checkout: %q, want the commit", flag)
	}
}
