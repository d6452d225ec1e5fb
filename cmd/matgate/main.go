// Command matgate gates a library of elastic-plastic material cards: it
// checks cards, verifies them on a reference kinematic-hardening integrator,
// and writes neutral cards and verification records.
package main

import (
	"context"
	"io"
	"os"
	"os/signal"
	"syscall"
)

// version is stamped at build time with -ldflags "-X main.version=...".
var version = "dev"

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// run executes one matgate command line and returns its exit code.
func run(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	root := newRoot(&env{stdin: stdin, stdout: stdout, stderr: stderr})
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	return exitCode(root.ExecuteContext(ctx), stderr)
}
