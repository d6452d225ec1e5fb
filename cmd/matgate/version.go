package main

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"strings"
	"sync"
	"time"

	"github.com/spf13/cobra"

	"matgate/checks"
)

func newVersionCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print the tool version",
		Args:  cobra.NoArgs,
		RunE: func(*cobra.Command, []string) error {
			_, err := fmt.Fprintf(e.stdout, "matgate %s\n", versionLine())
			return err
		},
	}
}

// versionLine is the version, commit, Go version and platform.
func versionLine() string {
	v, c := toolVersion()
	return fmt.Sprintf("%s (commit %s, %s, %s/%s)", v, c, runtime.Version(), runtime.GOOS, runtime.GOARCH)
}

// toolVersion returns the version and commit that records carry: the values
// stamped with -ldflags, else what the Go toolchain recorded in the binary
// (a module version, or the VCS revision when built with VCS stamping),
// else "dev" and "unknown", which say honestly that the build is unstamped.
func toolVersion() (v, c string) { return stampOnce() }

// stampOnce computes the version and commit once per process (sourceCommit
// runs git).
var stampOnce = sync.OnceValues(func() (string, string) { return readStamp() })

func readStamp() (v, c string) {
	v, c = version, commit
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return v, c
	}
	if v == "dev" && info.Main.Version != "" && info.Main.Version != "(devel)" {
		v = info.Main.Version
	}
	for _, s := range info.Settings {
		if s.Key == "vcs.revision" && c == "unknown" {
			c = s.Value
		}
	}
	if c == "unknown" {
		if sc := sourceCommit(); sc != "" {
			c = sc
		}
	}
	return v, c
}

// sourceCommit returns the commit of the git checkout this binary was
// compiled from, with "+dirty" when tracked files differ from it, or "".
// It covers `go run` (which never stamps VCS information) and builds on
// machines that set -buildvcs=false: the compiler recorded this file's
// path, and while that checkout is still there git can say which commit it
// holds. A binary moved elsewhere, or built with -trimpath, gets "".
func sourceCommit() string {
	_, file, _, ok := runtime.Caller(0)
	if !ok || !filepath.IsAbs(file) {
		return ""
	}
	dir := filepath.Dir(file)
	if _, err := os.Stat(dir); err != nil {
		return ""
	}
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	git := func(args ...string) (string, bool) {
		out, err := exec.CommandContext(ctx, "git", append([]string{"-C", dir}, args...)...).Output()
		return strings.TrimSpace(string(out)), err == nil
	}
	rev, ok := git("rev-parse", "HEAD")
	if !ok || len(rev) < 40 {
		return ""
	}
	if st, ok := git("status", "--porcelain", "--untracked-files=no"); !ok || st != "" {
		rev += "+dirty"
	}
	return rev
}

func toolOf() checks.Tool {
	v, c := toolVersion()
	return checks.Tool{Version: v, Commit: c}
}
