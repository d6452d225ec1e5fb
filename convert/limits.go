package convert

import (
	"fmt"

	"matgate/schema"
)

// The size rules of a card, one copy each, which every path applies
// through schema.Decode, Prepare and Normalize (check, verify, submit,
// serve and the worker):
//
//   - a card is at most schema.DefaultMaxBytes (1 MiB) both as sent or read
//     and as normalized: its canonical encoding, in SI units with every
//     default written out and every reference curve inline, is what submit
//     sends for a card with reference files and what the worker decodes
//     from its task, so a card that passes here fits every later step;
//   - a reference file is at most MaxReferenceBytes; its curve then counts
//     towards the normalized card.
//
// A card is a few kilobytes; the limits are there to refuse a wrong file
// (a mesh, a log) and to bound the memory of serve, not to ration data.
const MaxReferenceBytes = schema.DefaultMaxBytes

// checkReferenceSize refuses reference file data above MaxReferenceBytes.
// A reader should stop after MaxReferenceBytes+1 bytes, so that a huge
// file is never held whole.
func checkReferenceSize(file string, data []byte) error {
	if len(data) > MaxReferenceBytes {
		return fmt.Errorf("reference file %q is larger than the limit of %s for reference data: resample the curve to fewer points", file, schema.ByteSize(MaxReferenceBytes))
	}
	return nil
}

// normalizedSize returns a located error when the canonical encoding of n
// (a normalized card) exceeds schema.DefaultMaxBytes; the location is the
// references when the card has any, since they are what grows.
func normalizedSize(doc *schema.Document, n *schema.Card) schema.Diagnostics {
	b, err := Canonical(n)
	if err != nil {
		return schema.Diagnostics{doc.Diag(schema.SeverityError, "", "%v", err)}
	}
	if len(b) <= schema.DefaultMaxBytes {
		return nil
	}
	pointer := ""
	if v := doc.Card.Verification; v != nil && len(v.References) > 0 {
		pointer = "/verification/references"
	}
	return schema.Diagnostics{doc.Diag(schema.SeverityError, pointer,
		"the normalized card (SI units, defaults written out, reference curves inline) is %d bytes, above the limit of %s for a card as sent and as normalized: resample the reference curves to fewer points",
		len(b), schema.ByteSize(schema.DefaultMaxBytes))}
}
