package checks

import (
	"context"
	"testing"
)

func TestDemoCardsPass(t *testing.T) {
	for _, d := range demoSpecs(t) {
		t.Run(d.name, func(t *testing.T) {
			res, err := Run(context.Background(), d.spec)
			if err != nil {
				t.Fatal(err)
			}
			n := 0
			for _, c := range res.Cases {
				for _, ch := range c.Checks {
					n++
					if !ch.Pass || testing.Verbose() {
						t.Logf("%s / %s: pass=%v value %.17g ref %.17g tol %.3g %s %s", c.Name, ch.Name, ch.Pass, ch.Value, ch.Reference, ch.Tolerance, ch.ToleranceKind, ch.Bound)
					}
					if !ch.Pass {
						t.Errorf("%s / %s failed", c.Name, ch.Name)
					}
				}
				for _, o := range c.Omitted {
					t.Logf("%s: omitted %s: %s", c.Name, o.Check, o.Why)
				}
			}
			if res.Verdict != "pass" {
				t.Errorf("verdict %s", res.Verdict)
			}
			t.Logf("%d checks", n)
		})
	}
}
