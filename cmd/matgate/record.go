package main

import (
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
	var (
		pubPath    string
		requireSig bool
	)
	c := &cobra.Command{
		Use:   "verify RECORD",
		Short: "Check a record's digest and signature and that it reproduces",
		Long: `verify reads the record strictly (a field that its format, matgate.record/2
or the earlier matgate.record/1, does not define, or data after the
record, fails: the digest covers only the fields it knows, so an added
field would otherwise pass unseen),
recomputes the record's digest, checks its ed25519 signature with
--public-key, and re-runs the verification from the canonical card the
record embeds and compares every case and check (a matgate.record/1
series kept increments that matgate.record/2 leaves out: the re-run's
series must be part of it).

A record without a signature is reported as unsigned: nothing then shows
who made it. It fails with --require-signature, and always with
--public-key. A signed record checked without --public-key is reported as
signed but not checked: anyone can sign with a key of their own.

Exit 0 when all of that holds, 1 when anything does not, 2 when the file
cannot be read.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			b, err := os.ReadFile(args[0])
			if err != nil {
				return invalid("%v", err)
			}
			var pub []byte
			if pubPath != "" {
				if pub, err = readPublicKey(pubPath); err != nil {
					return invalid("--public-key: %v", err)
				}
			}
			bad := 0
			report := func(mark, what string) {
				if mark == "FAIL" {
					bad++
				}
				fmt.Fprintf(e.stdout, "%-4s %s\n", mark, what)
			}
			notIntact := func() error {
				fmt.Fprintf(e.stdout, "%s: NOT intact (%d problem(s))\n", args[0], bad)
				return &exitError{code: exitFailed}
			}
			rec, err := checks.ParseRecord(b)
			if err != nil {
				report("FAIL", "read as a verification record: "+err.Error())
				return notIntact()
			}
			err = rec.VerifyIntegrity(pub)
			if errors.Is(err, checks.ErrDigestMismatch) || errors.Is(err, checks.ErrBadRecord) {
				report("FAIL", "digest: "+err.Error())
			} else {
				report("ok", "digest "+rec.Digest)
			}
			switch {
			case rec.Signature == nil && (requireSig || pub != nil):
				report("FAIL", "unsigned: the record carries no signature")
			case rec.Signature == nil:
				report("note", "unsigned: the record carries no signature, so nothing shows who made it (--require-signature fails it)")
			case pub == nil:
				report("note", "signed by key "+rec.Signature.KeyID+"; signature not checked: no --public-key")
			case errors.Is(err, checks.ErrDigestMismatch) || errors.Is(err, checks.ErrBadRecord):
				report("FAIL", "signature of key "+rec.Signature.KeyID+" not checked: the digest it signs does not hold")
			case err != nil:
				report("FAIL", "signature: "+err.Error())
			default:
				report("ok", "signature of key "+rec.Signature.KeyID+" checked with --public-key")
			}
			reproduced, why := reproduce(cmd, rec)
			report(map[bool]string{true: "ok", false: "FAIL"}[reproduced], "re-run from the embedded card reproduces the record"+why)
			if bad > 0 {
				return notIntact()
			}
			state := "unsigned"
			if rec.Signature != nil {
				state = "signed by key " + rec.Signature.KeyID
				if pub == nil {
					state += " (not checked)"
				}
			}
			fmt.Fprintf(e.stdout, "%s: intact, %s; verdict %s\n", args[0], state, rec.Verdict)
			return nil
		},
	}
	c.Flags().StringVar(&pubPath, "public-key", "", "ed25519 public key (PEM) to check the signature with; an unsigned record then fails")
	c.Flags().BoolVar(&requireSig, "require-signature", false, "fail a record that carries no signature")
	return c
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
	// when it has the record's content (checks.Record.Reproduces).
	ok, err := rec.Reproduces(out.Record)
	if err != nil {
		return false, ": " + err.Error()
	}
	if !ok {
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
