package cardspace_test

import (
	"context"
	"flag"
	"fmt"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker"
	"matgate/worker/cardspace"
)

var (
	nCards  = flag.Int("cardspace.n", 60, "cards of the random card space to verify")
	nTables = flag.Int("cardspace.tables", 6, "temperature-dependent cards of the random card space to verify")
	seed    = flag.Uint64("cardspace.seed", 20261202, "seed of the card space")
)

// outcome is what verifying one card gave.
type outcome struct {
	i       int
	problem string // empty when the card passed
}

// verifyCard runs the whole path of `matgate verify` on card i (decode,
// plausibility, normalize, verify) and says what went wrong, if anything.
func verifyCard(ctx context.Context, i int) (problem string) {
	return verifyData(ctx, fmt.Sprintf("card-%d.yaml", i), cardspace.Card(*seed, i))
}

// verifyData is verifyCard for the card in data.
func verifyData(ctx context.Context, name string, data []byte) (problem string) {
	defer func() {
		if r := recover(); r != nil {
			problem = fmt.Sprintf("panic: %v", r)
		}
	}()
	doc, err := schema.Decode(name, data, nil)
	if err != nil {
		return fmt.Sprintf("schema: %v", err)
	}
	card, ds := convert.Prepare(doc, nil)
	if ds.HasErrors() {
		return fmt.Sprintf("invalid: %v", ds)
	}
	out, err := worker.Verify(ctx, card, checks.Tool{Version: "cardspace"}, time.Unix(0, 0).UTC())
	if err != nil {
		return fmt.Sprintf("error: %v", err)
	}
	if out.Record.Verdict != "pass" {
		var failed []string
		for _, c := range out.Record.Cases {
			for _, ch := range c.Checks {
				if !ch.Pass {
					failed = append(failed, fmt.Sprintf("%s / %s: value %.17g, reference %.17g, tolerance %.3g (%s)", c.Name, ch.Name, ch.Value, ch.Reference, ch.Tolerance, ch.ToleranceKind))
				}
			}
		}
		return "fail:\n    " + strings.Join(failed, "\n    ")
	}
	return ""
}

// TestCardSpace verifies random plausible cards (see package doc) through
// the whole path of `matgate verify`: every one must pass, with no error
// and no panic. A correct card that fails is a false alarm of the gate.
// Source of the expectation: the cards are integrated by the reference
// integrator whose every case has a closed form; common practice, no
// source. Run more with -cardspace.n 10000.
func TestCardSpace(t *testing.T) {
	n := *nCards
	if testing.Short() {
		n = min(n, 10)
	}
	ctx := context.Background()
	jobs := make(chan int)
	results := make(chan outcome)
	var wg sync.WaitGroup
	for w := 0; w < runtime.GOMAXPROCS(0); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				results <- outcome{i, verifyCard(ctx, i)}
			}
		}()
	}
	go func() {
		for i := 0; i < n; i++ {
			jobs <- i
		}
		close(jobs)
		wg.Wait()
		close(results)
	}()
	bad := 0
	for o := range results {
		if o.problem == "" {
			continue
		}
		bad++
		if bad <= 10 {
			t.Errorf("card %d (seed %d):\n%s  %s", o.i, *seed, cardspace.Card(*seed, o.i), o.problem)
		} else {
			t.Errorf("card %d (seed %d): %s", o.i, *seed, o.problem)
		}
	}
	t.Logf("%d cards, %d wrong verdicts", n, bad)
}

// TestTableSpace verifies random temperature-dependent cards
// (cardspace.Table: card i's parameters softened over 2 to 4 temperatures)
// through the whole path of matgate verify: every one must pass, the
// anisothermal and interpolation cases included. Run more with
// -cardspace.tables 500.
func TestTableSpace(t *testing.T) {
	n := *nTables
	if testing.Short() {
		n = min(n, 2)
	}
	ctx := context.Background()
	bad := 0
	for i := 0; i < n; i++ {
		data := cardspace.Table(*seed, i)
		if p := verifyData(ctx, fmt.Sprintf("table-%d.yaml", i), data); p != "" {
			bad++
			t.Errorf("table card %d (seed %d):\n%s  %s", i, *seed, data, p)
		}
	}
	t.Logf("%d temperature-dependent cards, %d wrong verdicts", n, bad)
}
