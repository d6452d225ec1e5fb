package main

import (
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"matgate/worker"
)

func newLedgerCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "ledger",
		Short: "Check the ledger of a records directory",
	}
	verify := &cobra.Command{
		Use:   "verify DIR",
		Short: "Walk the ledger chain and every record and card file, report the first break",
		Long: `ledger verify reads DIR/ledger.jsonl and checks that each line's prev is
the sha256 of the line before, that every record and card file the ledger
names exists with the sha256 it holds, that every record's own digest
matches its content, that each line says what its record says (card id,
revision, verdict, created, record and card digests: a listing never
shows "pass" for a failed record), and that no record or card file is
missing from the ledger. It only reads, and can run while serve writes.

A ledger rewritten with its chain recomputed still chains: keep the
verified line count and head hash elsewhere to catch that.

Exit 0 when intact, 1 at a break, 2 when DIR is not a records directory.`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			if st, err := os.Stat(args[0]); err != nil || !st.IsDir() {
				return invalid("%s: not a directory", args[0])
			}
			rep, err := worker.VerifyLedger(args[0])
			if err != nil {
				return invalid("%s: %v", args[0], err)
			}
			if rep.Break != nil {
				fmt.Fprintf(e.stdout, "BROKEN %s: %v\n(%d ledger line(s) read, %d file(s) checked before the break)\n", args[0], rep.Break, rep.Entries, rep.Files)
				return &exitError{code: exitFailed}
			}
			fmt.Fprintf(e.stdout, "intact %s: %d record(s), %d file(s), chain unbroken\n", args[0], rep.Entries, rep.Files)
			return nil
		},
	}
	c.AddCommand(verify)
	wrapArgs(verify)
	return c
}
