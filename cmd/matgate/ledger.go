package main

import (
	"crypto/ed25519"
	"encoding/json"
	"fmt"
	"os"
	"time"

	"github.com/spf13/cobra"

	"matgate/worker"
)

func newLedgerCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "ledger",
		Short: "Check the ledger of a records directory, take signed checkpoints of it",
	}
	c.AddCommand(newLedgerVerifyCmd(e), newLedgerCheckpointCmd(e))
	for _, sub := range c.Commands() {
		wrapArgs(sub)
	}
	return c
}

func newLedgerVerifyCmd(e *env) *cobra.Command {
	var (
		cpPaths []string
		pubPath string
	)
	c := &cobra.Command{
		Use:   "verify DIR",
		Short: "Walk the ledger chain and every record and card file, report the first break",
		Long: `ledger verify reads DIR/ledger.jsonl and checks that each line's prev is
the sha256 of the line before, that every record and card file the ledger
names exists with the sha256 it holds, that every record's own digest
matches its content, that each line says what its record says (card id,
revision, verdict, created, record and card digests: a listing never
shows "pass" for a failed record), and that no record or card file is
missing from the ledger. It only reads, and can run while serve writes.

A ledger rewritten with its chain recomputed still chains. Checkpoints
catch that: --checkpoint FILE (repeatable) names files of signed
checkpoints (matgate ledger checkpoint, or lines copied from
DIR/checkpoints.jsonl) that an auditor kept outside the directory; the
ledger must still have each one's line with the same sha256, so a ledger
cut back or rewritten up to a checkpoint's line fails. --public-key
(serve's DIR.sign.pub) requires every record and every checkpoint to carry
a valid signature of that key.

Exit 0 when intact, 1 at a break, 2 when DIR is not a records directory
or a file cannot be read.`,
		Args: cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			if st, err := os.Stat(args[0]); err != nil || !st.IsDir() {
				return invalid("%s: not a directory", args[0])
			}
			o := &worker.LedgerCheck{}
			if pubPath != "" {
				pub, err := readPublicKey(pubPath)
				if err != nil {
					return invalid("--public-key: %v", err)
				}
				o.PublicKey = pub
			}
			for _, p := range cpPaths {
				b, err := os.ReadFile(p)
				if err != nil {
					return invalid("--checkpoint: %v", err)
				}
				cps, err := worker.ParseCheckpoints(b)
				if err == nil && len(cps) == 0 {
					err = fmt.Errorf("no checkpoint in it")
				}
				if err != nil {
					return invalid("--checkpoint %s: %v", p, err)
				}
				o.Checkpoints = append(o.Checkpoints, cps...)
			}
			rep, err := worker.VerifyLedger(args[0], o)
			if err != nil {
				return invalid("%s: %v", args[0], err)
			}
			if rep.Break != nil {
				fmt.Fprintf(e.stdout, "BROKEN %s: %v\n(%d ledger line(s) read, %d checkpoint(s) and %d file(s) checked before the break)\n", args[0], rep.Break, rep.Entries, rep.Checkpoints, rep.Files)
				return &exitError{code: exitFailed}
			}
			fmt.Fprintf(e.stdout, "intact %s: %d record(s), %d file(s), chain unbroken", args[0], rep.Entries, rep.Files)
			if len(o.Checkpoints) > 0 {
				fmt.Fprintf(e.stdout, ", %d checkpoint(s) held", rep.Checkpoints)
			}
			switch {
			case o.PublicKey != nil:
				fmt.Fprintf(e.stdout, ", every signature checked with %s", pubPath)
			case len(o.Checkpoints) > 0:
				fmt.Fprint(e.stdout, " (signatures not checked: no --public-key)")
			}
			fmt.Fprintln(e.stdout)
			return nil
		},
	}
	c.Flags().StringArrayVar(&cpPaths, "checkpoint", nil, "file of signed checkpoints kept elsewhere (repeatable); the ledger must still hold each")
	c.Flags().StringVar(&pubPath, "public-key", "", "serve's public signing key (PEM): every record and checkpoint must carry its valid signature")
	return c
}

func newLedgerCheckpointCmd(e *env) *cobra.Command {
	var keyPath string
	c := &cobra.Command{
		Use:   "checkpoint DIR",
		Short: "Print a signed checkpoint of the ledger (line count, head hash, time) for an auditor to keep",
		Long: `ledger checkpoint prints a checkpoint of DIR/ledger.jsonl as it is now: a
small JSON document with its line count (seq), the sha256 of its last
line (head) and the time, signed with serve's key. Keep it outside the
records directory (another machine, a ticket, a mail); later, matgate
ledger verify DIR --checkpoint FILE fails if the ledger no longer holds
that line with that hash, which shows a ledger cut back or rewritten
since, even with its chain recomputed. serve appends such checkpoints to
DIR/checkpoints.jsonl by itself (store.checkpoint_interval).

The key is --key, else store.sign_key of --config, else DIR.sign.key,
where serve makes it. It only reads DIR and can run while serve writes.
The ledger is checked first (its chain, not the files): a broken ledger
gets no checkpoint.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if keyPath == "" {
				cfg, err := loadConfig(cmd, map[string]string{})
				if err != nil {
					return err
				}
				cfg.Store.Dir = args[0]
				keyPath, _ = cfg.signKeyPath()
			}
			key, err := readPrivateKey(keyPath)
			if err != nil {
				return invalid("signing key: %v", err)
			}
			return printCheckpoint(e, args[0], key)
		},
	}
	addConfigFlag(c)
	c.Flags().StringVar(&keyPath, "key", "", "serve's private signing key (PEM); default store.sign_key, else DIR.sign.key")
	return c
}

func printCheckpoint(e *env, dir string, key ed25519.PrivateKey) error {
	s, err := worker.OpenDirStoreReadOnly(dir)
	if err != nil {
		return invalid("%v", err)
	}
	defer s.Close()
	c := s.Checkpoint(key, time.Now())
	b, err := json.MarshalIndent(c, "", "  ")
	if err != nil {
		return err
	}
	fmt.Fprintf(e.stdout, "%s\n", b)
	return nil
}
