package main

import (
	"errors"
	"fmt"
	"io"
	"sync"

	"github.com/spf13/cobra"
)

// env is what a command may touch of the process.
type env struct {
	stdin          io.Reader
	stdout, stderr io.Writer

	// stdin as read by readLimited, once.
	stdinOnce sync.Once
	stdinData []byte
	stdinErr  error
}

// Exit codes, one meaning each, for CI.
const (
	exitPass     = 0 // every card valid / verified
	exitFailed   = 1 // a verification failed
	exitInvalid  = 2 // invalid input: a card, a flag, a file
	exitInternal = 3 // internal or service error
)

// exitError carries an exit code up to run; a nil err means the command has
// already said everything it had to say.
type exitError struct {
	code int
	err  error
}

func (e *exitError) Error() string {
	if e.err == nil {
		return fmt.Sprintf("exit %d", e.code)
	}
	return e.err.Error()
}
func (e *exitError) Unwrap() error { return e.err }

func invalid(format string, args ...any) error {
	return &exitError{code: exitInvalid, err: fmt.Errorf(format, args...)}
}

func exitCode(err error, stderr io.Writer) int {
	if err == nil {
		return exitPass
	}
	var ee *exitError
	if errors.As(err, &ee) {
		if ee.err != nil {
			fmt.Fprintf(stderr, "matgate: %v\n", ee.err)
		}
		return ee.code
	}
	var ue *usageError
	if errors.As(err, &ue) {
		fmt.Fprintf(stderr, "matgate: %v\n", ue.err)
		return exitInvalid
	}
	fmt.Fprintf(stderr, "matgate: %v\n", err)
	return exitInternal
}

// usageError marks a bad command line (unknown flag, wrong arguments).
type usageError struct{ err error }

func (e *usageError) Error() string { return e.err.Error() }

func newRoot(e *env) *cobra.Command {
	root := &cobra.Command{
		Use:   "matgate",
		Short: "Gate elastic-plastic material cards by verification",
		Long: `matgate checks elastic-plastic material cards (format matgate.card/1),
verifies them on a reference kinematic-hardening integrator and writes
neutral cards and verification records.

Verification shows that a card is integrated consistently and matches its
references; it does not show fitness for design, which stays with the
applicable codes and licensed engineers.`,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return &usageError{err} })
	// --version prints the same line as `matgate version`, computed only
	// when asked (it may run git, see sourceCommit).
	root.Version = "see template"
	cobra.AddTemplateFunc("matgateVersion", versionLine)
	root.SetVersionTemplate("matgate {{matgateVersion}}\n")
	root.AddCommand(newVersionCmd(e), newCheckCmd(e), newNormalizeCmd(e), newSchemaCmd(e),
		newVerifyCmd(e), newSimulateCmd(e), newRecordCmd(e))
	root.AddCommand(newServeCmd(e), newWorkerCmd(e), newSubmitCmd(e), newLedgerCmd(e), newStoreCmd(e), newTokenCmd(e))
	root.AddCommand(newFitCmd(e), newCompareCmd(e))
	for _, c := range root.Commands() {
		wrapArgs(c)
	}
	return root
}

// wrapArgs makes argument-count errors usage errors (exit 2).
func wrapArgs(c *cobra.Command) {
	if c.Args == nil {
		return
	}
	check := c.Args
	c.Args = func(cmd *cobra.Command, args []string) error {
		if err := check(cmd, args); err != nil {
			return &usageError{fmt.Errorf("%s: %w", cmd.Name(), err)}
		}
		return nil
	}
}
