package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"time"

	"github.com/spf13/cobra"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker"
)

func newRecordCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "record",
		Short: "Work with verification records: check their integrity, make signing keys",
	}
	c.AddCommand(newRecordVerifyCmd(e), newRecordKeygenCmd(e))
	for _, sub := range c.Commands() {
		wrapArgs(sub)
	}
	return c
}

func newRecordVerifyCmd(e *env) *cobra.Command {
	var pubPath string
	c := &cobra.Command{
		Use:   "verify RECORD",
		Short: "Check a record's digest and signature and that it reproduces",
		Long: `verify recomputes the record's digest, checks its ed25519 signature when
--public-key is given (a signed record without a key is reported, not
trusted), re-runs the verification from the canonical card the record
embeds and compares every case and check. Exit 0 when all of that holds, 1
when anything does not.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			b, err := os.ReadFile(args[0])
			if err != nil {
				return invalid("%v", err)
			}
			var rec checks.Record
			if err := json.Unmarshal(b, &rec); err != nil {
				return invalid("%s: not a record: %v", args[0], err)
			}
			var pub []byte
			if pubPath != "" {
				if pub, err = readPublicKey(pubPath); err != nil {
					return invalid("--public-key: %v", err)
				}
			}
			bad := 0
			report := func(ok bool, what string) {
				mark := "ok  "
				if !ok {
					mark = "FAIL"
					bad++
				}
				fmt.Fprintf(e.stdout, "%s %s\n", mark, what)
			}
			err = rec.VerifyIntegrity(pub)
			report(err == nil, "digest"+sigNote(&rec, pub)+errNote(err))

			reproduced, why := reproduce(cmd, &rec)
			report(reproduced, "re-run from the embedded card reproduces the record"+why)
			if bad > 0 {
				fmt.Fprintf(e.stdout, "%s: NOT intact (%d problem(s))\n", args[0], bad)
				return &exitError{code: exitFailed}
			}
			fmt.Fprintf(e.stdout, "%s: intact; verdict %s\n", args[0], rec.Verdict)
			return nil
		},
	}
	c.Flags().StringVar(&pubPath, "public-key", "", "ed25519 public key (PEM) to check the signature with")
	return c
}

func sigNote(rec *checks.Record, pub []byte) string {
	switch {
	case rec.Signature == nil:
		return " (record is not signed)"
	case pub == nil:
		return " (signed by key " + rec.Signature.KeyID + "; signature not checked: no --public-key)"
	}
	return " and signature (key " + rec.Signature.KeyID + ")"
}

func errNote(err error) string {
	if err == nil {
		return ""
	}
	return ": " + err.Error()
}

// reproduce re-runs the verification of the record's embedded canonical card
// and compares the result with the record, ignoring created, digest and
// signature.
func reproduce(cmd *cobra.Command, rec *checks.Record) (bool, string) {
	doc, err := schema.Decode("record:/card/canonical", rec.Card.Canonical, nil)
	if err != nil {
		var ds schema.Diagnostics
		if errors.As(err, &ds) {
			return false, ": embedded card is invalid: " + ds.Error()
		}
		return false, ": " + err.Error()
	}
	card, ds := convert.Prepare(doc, nil)
	if card == nil {
		return false, ": embedded card is invalid: " + ds.Error()
	}
	if card.Digest != rec.Card.Digest {
		return false, fmt.Sprintf(": embedded card digest %s, record says %s", card.Digest, rec.Card.Digest)
	}
	created, err := time.Parse(time.RFC3339, rec.Created)
	if err != nil {
		return false, ": created: " + err.Error()
	}
	out, err := worker.Verify(cmd.Context(), card, rec.Tool, created)
	if err != nil {
		return false, ": " + err.Error()
	}
	// The re-run carries the record's tool and created, so it reproduces
	// when its digest equals that of the record's content: card, settings,
	// every case and check, findings and verdict.
	want, err := rec.ComputeDigest()
	if err != nil {
		return false, ": " + err.Error()
	}
	if out.Record.Digest != want {
		return false, ": the re-run differs from the record (another tool version, or the record was edited)"
	}
	return true, ""
}

func newRecordKeygenCmd(e *env) *cobra.Command {
	return &cobra.Command{
		Use:   "keygen PREFIX",
		Short: "Make an ed25519 key pair for signing records: PREFIX.key and PREFIX.pub",
		Args:  cobra.ExactArgs(1),
		RunE: func(_ *cobra.Command, args []string) error {
			pub, err := writeKeyPair(args[0])
			if err != nil {
				return invalid("%v", err)
			}
			fmt.Fprintf(e.stdout, "wrote %s.key (keep it private) and %s.pub; key id %s\n", args[0], args[0], checks.KeyID(pub))
			return nil
		},
	}
}
