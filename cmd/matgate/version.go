package main

import (
	"fmt"
	"runtime"
	"runtime/debug"

	"github.com/spf13/cobra"

	"matgate/checks"
)

func newVersionCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "version",
		Short: "Print the tool version",
		Args:  cobra.NoArgs,
		RunE: func(*cobra.Command, []string) error {
			v, c := toolVersion()
			_, err := fmt.Fprintf(e.stdout, "matgate %s (commit %s, %s, %s/%s)\n", v, c, runtime.Version(), runtime.GOOS, runtime.GOARCH)
			return err
		},
	}
}

// toolVersion returns the version and commit that records carry: the values
// stamped with -ldflags, else what the Go toolchain recorded in the binary
// (a module version, or the VCS revision when built with VCS stamping),
// else "dev" and "unknown", which say honestly that the build is unstamped.
func toolVersion() (v, c string) {
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
	return v, c
}

func toolOf() checks.Tool {
	v, c := toolVersion()
	return checks.Tool{Version: v, Commit: c}
}
