package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"matgate/convert"
	"matgate/schema"
)

// cardExtensions are the file names a directory walk takes as cards.
var cardExtensions = map[string]bool{".yaml": true, ".yml": true, ".json": true}

// expandInputs turns FILE|DIR|- arguments into card names: a directory
// stands for every card file below it, in lexical order; "-" is stdin.
func expandInputs(args []string) ([]string, error) {
	var out []string
	for _, a := range args {
		if a == "-" {
			out = append(out, a)
			continue
		}
		st, err := os.Stat(a)
		if err != nil {
			return nil, invalid("%v", err)
		}
		if !st.IsDir() {
			out = append(out, a)
			continue
		}
		var found []string
		err = filepath.WalkDir(a, func(p string, d fs.DirEntry, err error) error {
			if err != nil {
				return err
			}
			if !d.IsDir() && cardExtensions[strings.ToLower(filepath.Ext(p))] {
				found = append(found, p)
			}
			return nil
		})
		if err != nil {
			return nil, invalid("%v", err)
		}
		if len(found) == 0 {
			return nil, invalid("%s: no card files (.yaml, .yml, .json) in the directory", a)
		}
		sort.Strings(found)
		out = append(out, found...)
	}
	return out, nil
}

// loaded is one card after decoding, plausibility and normalization.
type loaded struct {
	file  string
	doc   *schema.Document // nil when the bytes could not be read
	card  *schema.Card     // canonical; nil when the card is invalid
	diags schema.Diagnostics
}

func (l loaded) valid() bool { return l.card != nil }

// loadCard reads, decodes, checks and normalizes one card. Every problem is
// a located diagnostic; nothing here stops other cards.
func loadCard(e *env, name string) loaded {
	l := loaded{file: name}
	display := name
	if name == "-" {
		display = "<stdin>"
		l.file = display
	}
	data, err := readLimited(e, name, schema.DefaultMaxBytes)
	if err != nil {
		l.diags = schema.Diagnostics{{File: display, Message: err.Error()}}
		return l
	}
	doc, err := schema.Decode(display, data, nil)
	l.doc = doc
	if err != nil {
		var ds schema.Diagnostics
		if !errors.As(err, &ds) {
			ds = schema.Diagnostics{{File: display, Message: err.Error()}}
		}
		l.diags = ds
		return l
	}
	opts := &convert.Options{}
	if name != "-" {
		opts.ReadFile = referenceReader(filepath.Dir(name))
	}
	l.card, l.diags = convert.Prepare(doc, opts)
	return l
}

// readLimited reads at most limit+1 bytes so that Decode can report an
// oversized file without the whole file in memory.
func readLimited(e *env, name string, limit int64) ([]byte, error) {
	var r io.Reader
	if name == "-" {
		r = e.stdin
	} else {
		f, err := os.Open(name)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		r = f
	}
	return io.ReadAll(io.LimitReader(r, limit+1))
}

// referenceReader reads reference curves relative to the card's directory,
// confined to it: a card cannot name a file outside its own folder tree.
func referenceReader(dir string) func(string) ([]byte, error) {
	return func(name string) ([]byte, error) {
		root, err := os.OpenRoot(dir)
		if err != nil {
			return nil, err
		}
		defer root.Close()
		st, err := root.Stat(name)
		if err != nil {
			return nil, err
		}
		if !st.Mode().IsRegular() { // a FIFO or device would block the read
			return nil, fmt.Errorf("%s is not a regular file (%v)", name, st.Mode().Type())
		}
		if st.Size() > schema.DefaultMaxBytes*16 {
			return nil, fmt.Errorf("%s is %d bytes, above the %d-byte limit for a reference curve", name, st.Size(), schema.DefaultMaxBytes*16)
		}
		return root.ReadFile(name)
	}
}
