package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCompareCommand: a demo card compared with itself changes nothing
// and passes any limit; with the yield stress raised 5 % the shear yield
// stress changes by exactly 5 % (von Mises 1913: shear yield sigmaY/sqrt(3),
// linear in sigmaY) and a 3 % limit exits 1 naming it; markdown and html
// outputs are written. The demo card is invented data (our own scenario).
func TestCompareCommand(t *testing.T) {
	card := "../../testdata/cards/ss-chaboche.yaml"
	code, out, errOut := matgate(t, "", "compare", "--limit", "0", "--format", "json", card, card)
	if code != exitPass {
		t.Fatalf("itself: exit %d\n%s%s", code, out, errOut)
	}
	var res struct {
		Changes []struct {
			Name string   `json:"name"`
			Rel  *float64 `json:"rel_change"`
		} `json:"changes"`
		Caution string `json:"caution"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if len(res.Changes) < 10 || !strings.Contains(res.Caution, "fit for design") {
		t.Fatalf("itself: %d changes, caution %q", len(res.Changes), res.Caution)
	}
	b, err := os.ReadFile(card)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	newer := filepath.Join(dir, "r2.yaml")
	text := strings.Replace(strings.Replace(string(b), "revision: 1", "revision: 2", 1), "yield_stress: 180", "yield_stress: 189", 1)
	if err := os.WriteFile(newer, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	page := filepath.Join(dir, "cmp.html")
	code, out, errOut = matgate(t, "", "compare", "--limit", "0.03", "--format", "json", "--html", page, card, newer)
	if code != exitFailed || !strings.Contains(errOut, "shear yield stress") {
		t.Fatalf("yield +5%%: exit %d, %s", code, errOut)
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	for _, c := range res.Changes {
		if c.Name == "shear yield stress" && (c.Rel == nil || math.Abs(*c.Rel-0.05) > 1e-12) {
			t.Errorf("shear yield stress: relative change %v, want 0.05", c.Rel)
		}
	}
	html, err := os.ReadFile(page)
	if err != nil || !strings.Contains(string(html), "<svg") || !strings.Contains(string(html), "fit for design") {
		t.Errorf("html page: %v, %d bytes", err, len(html))
	}
	code, out, _ = matgate(t, "", "compare", "--format", "markdown", card, newer)
	if code != exitPass || !strings.Contains(out, "| quantity | older | newer | change | relative |") {
		t.Errorf("markdown: exit %d\n%s", code, out)
	}
}
