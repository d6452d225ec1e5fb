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
	"matgate/worker"
)

// cardExtensions are the file names a directory walk takes as cards.
var cardExtensions = map[string]bool{".yaml": true, ".yml": true, ".json": true}

// defaultOutDir is where verify and submit write unless --out says
// otherwise; a walk skips every folder of this name (see expandInputs).
const defaultOutDir = "matgate-out"

// expandInputs turns FILE|DIR|- arguments into card names: "-" is stdin, a
// file is itself, and a directory stands for every card file below it, in
// lexical order. Below a directory the walk leaves out what is not a card
// of the library, so that a command run twice in a library root does not
// take up its own outputs: hidden files and folders (a name starting with
// a dot: .git, .github, editor files), records directories (a folder
// holding a ledger, as serve and verify --store keep them, see
// worker.IsRecordsDir), output folders of earlier runs with the default
// --out (any folder named matgate-out), and the folders in skip (the
// run's own --out; one that does not exist yet is ignored). A file or
// folder named as an argument is taken whatever it is.
func expandInputs(args []string, skip ...string) ([]string, error) {
	var skipInfo []os.FileInfo
	for _, s := range skip {
		if st, err := os.Stat(s); err == nil && st.IsDir() {
			skipInfo = append(skipInfo, st)
		}
	}
	leftOut := func(p string, d fs.DirEntry) (bool, error) {
		if strings.HasPrefix(d.Name(), ".") {
			return true, nil
		}
		if !d.IsDir() {
			return false, nil
		}
		if d.Name() == defaultOutDir || worker.IsRecordsDir(p) {
			return true, nil
		}
		st, err := os.Stat(p)
		if err != nil {
			return false, err
		}
		for _, s := range skipInfo {
			if os.SameFile(st, s) {
				return true, nil
			}
		}
		return false, nil
	}
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
			if p != a {
				skip, err := leftOut(p, d)
				switch {
				case err != nil:
					return err
				case skip && d.IsDir():
					return filepath.SkipDir
				case skip:
					return nil
				}
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
			return nil, invalid("%s: no card files (.yaml, .yml, .json) in the directory (hidden folders, records directories and the output folder are left out)", a)
		}
		sort.Strings(found)
		out = append(out, found...)
	}
	return out, nil
}

// stdinName is the name of standard input ("-") in diagnostics.
const stdinName = "<stdin>"

// loaded is one card after decoding, plausibility and normalization.
type loaded struct {
	file  string
	doc   *schema.Document // nil when the bytes could not be read
	card  *schema.Card     // canonical; nil when the card is invalid
	diags schema.Diagnostics
	// rule is the rule id of diags, named after the step that found them
	// (ruleUnreadable, ruleFormat or rulePlausibility).
	rule string
}

// Rule ids of the card diagnostics, one for each step of loadCard, as
// `check --format json|sarif` names them. The library rules have theirs in
// package worker.
const (
	ruleUnreadable   = "card-unreadable"   // the file cannot be read
	ruleFormat       = "card-format"       // syntax and schema of matgate.card/1
	rulePlausibility = "card-plausibility" // physical plausibility, units, stated derived values
)

func (l loaded) valid() bool { return l.card != nil }

// loadCard reads, decodes, checks and normalizes one card. Every problem is
// a located diagnostic; nothing here stops other cards.
func loadCard(e *env, name string) loaded {
	l := loaded{file: name}
	display := name
	if name == "-" {
		display = stdinName
		l.file = display
	}
	data, err := readLimited(e, name, schema.DefaultMaxBytes)
	if err != nil {
		l.diags, l.rule = schema.Diagnostics{{File: display, Message: err.Error()}}, ruleUnreadable
		return l
	}
	doc, err := schema.Decode(display, data, nil)
	l.doc, l.rule = doc, ruleFormat
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
	l.rule = rulePlausibility
	return l
}

// readLimited reads at most limit+1 bytes so that Decode can report an
// oversized file without the whole file in memory. Standard input is read
// once, at the first call, and the same bytes are returned to every later
// call, so a card from "-" can be loaded twice (see libraryConflicts).
func readLimited(e *env, name string, limit int64) ([]byte, error) {
	if name == "-" {
		e.stdinOnce.Do(func() {
			e.stdinData, e.stdinErr = io.ReadAll(io.LimitReader(e.stdin, limit+1))
		})
		return e.stdinData, e.stdinErr
	}
	f, err := os.Open(name)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return io.ReadAll(io.LimitReader(f, limit+1))
}

// referenceReader reads reference curves relative to the card's directory,
// confined to it: a card cannot name a file outside its own folder tree.
// It reads at most one byte past convert.MaxReferenceBytes, so that
// convert refuses a file above the limit without holding it whole.
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
		if !st.Mode().IsRegular() { // a FIFO or device would block the open or the read
			return nil, fmt.Errorf("%s is not a regular file (%v)", name, st.Mode().Type())
		}
		f, err := root.Open(name)
		if err != nil {
			return nil, err
		}
		defer f.Close()
		return io.ReadAll(io.LimitReader(f, convert.MaxReferenceBytes+1))
	}
}
