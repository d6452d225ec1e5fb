package cardspace_test

import (
	"flag"
	"fmt"
	"regexp"
	"sort"
	"testing"

	"matgate/convert"
	"matgate/schema"
	"matgate/worker/cardspace"
)

var nPlausible = flag.Int("cardspace.plausible", 2000, "cards of the random card space to run through the plausibility checks alone")

// TestPlausibleSpace runs random plausible cards (see package doc) through
// decode and convert.Prepare alone, which is fast, and wants no error: a
// plausibility error on a card in the ranges of real metals would refuse a
// good card. Warnings are counted by kind and logged (go test -v), so that
// a limit that warns on much of the space shows. Source of the
// expectation: the generator's ranges, from memory of handbook tables and
// published fits (common practice, no source).
func TestPlausibleSpace(t *testing.T) {
	n := *nPlausible
	if testing.Short() {
		n = min(n, 200)
	}
	// A warning's kind is its pointer and message with the numbers left out.
	number := regexp.MustCompile(`[-+]?[0-9][0-9.e+-]*|\b(k|M|G)?Pa\b|\b(k)?psi\b|\bksi\b`)
	worst, worstCard := 0.0, 0 // largest (yield stress + saturating hardening)/E
	kinds := map[string]int{}
	warned := 0
	for i := 0; i < n; i++ {
		doc, err := schema.Decode(fmt.Sprintf("card-%d.yaml", i), cardspace.Card(*seed, i), nil)
		if err != nil {
			t.Fatalf("card %d (seed %d): schema: %v", i, *seed, err)
		}
		p := cardspace.Draw(*seed, i)
		top := p.SY + max(p.IsoQ, 0)
		for k := range p.AFC {
			top += p.AFC[k] / p.AFGam[k]
		}
		if top/p.E > worst {
			worst, worstCard = top/p.E, i
		}
		_, ds := convert.Prepare(doc, nil)
		if ds.HasErrors() {
			t.Errorf("card %d (seed %d):\n%s\n%v", i, *seed, cardspace.Card(*seed, i), ds)
			continue
		}
		if len(ds) > 0 {
			warned++
		}
		for _, d := range ds {
			kinds[number.ReplaceAllString(d.Pointer+": "+d.Message, "#")]++
		}
	}
	keys := make([]string, 0, len(kinds))
	for k := range kinds {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		t.Logf("%5d x %s", kinds[k], k)
	}
	t.Logf("%d cards, %d with warnings; the largest (yield stress + sum c/gamma + q)/E is %.3g (card %d)", n, warned, worst, worstCard)
}
