package main

import (
	"context"

	"matgate/worker"
)

// libraryConflicts holds the cards of a run to the library rules before
// anything is written: it loads the cards on jobs goroutines, adds the
// valid ones to lib in input order, and returns the conflicts of each card
// by its index in names (absent: none, or an invalid card, whose own
// diagnostics say why). A command that writes per card (verify) calls it
// first and does not verify a card with conflicts, so that two cards of
// one id and revision never write the same output files; it keeps only
// the conflicts, not the cards (each is loaded again when it is verified,
// some milliseconds against a verification's hundreds). The error is a
// records directory that cannot be read, or ctx's.
func libraryConflicts(ctx context.Context, e *env, names []string, jobs int, lib *worker.Library) (map[int][]worker.Conflict, error) {
	out := map[int][]worker.Conflict{}
	err := inOrder(ctx, len(names), jobs,
		func(i int) *worker.CardRef {
			l := loadCard(e, names[i])
			if !l.valid() {
				return nil
			}
			ref := worker.RefOf(l.doc, l.card)
			return &ref
		},
		func(i int, ref *worker.CardRef) error {
			if ref == nil {
				return nil
			}
			cs, err := lib.Add(*ref)
			if len(cs) > 0 {
				out[i] = cs
			}
			return err
		})
	return out, err
}
