package report_test

import (
	"context"
	"fmt"
	"html"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker"
	"matgate/worker/report"
)

// verified decodes, prepares and verifies a card and returns the written
// card, its outputs and its report in the card's own terms, as verify
// --report writes it.
func verified(t *testing.T, file string, src []byte) (*schema.Card, *worker.Outputs, string) {
	t.Helper()
	doc, err := schema.Decode(file, src, nil)
	if err != nil {
		t.Fatalf("%s: decode: %v", file, err)
	}
	c, ds := convert.Prepare(doc, nil)
	if c == nil {
		t.Fatalf("%s: prepare: %v", file, ds)
	}
	out, err := worker.Verify(context.Background(), c, checks.Tool{Version: "test"}, time.Unix(0, 0).UTC())
	if err != nil {
		t.Fatalf("%s: verify: %v", file, err)
	}
	w := report.Written{Stress: doc.Card.Units.Stress}
	for _, d := range out.Diagnoses {
		w.Findings = append(w.Findings, d.Describe(worker.Wording(doc.Card)))
	}
	page, err := report.Render(out.Record, w)
	if err != nil {
		t.Fatalf("%s: render: %v", file, err)
	}
	return doc.Card, out, string(page)
}

func demoCards(t *testing.T) []string {
	t.Helper()
	files, err := filepath.Glob("../../testdata/cards/*")
	if err != nil || len(files) == 0 {
		t.Fatalf("no demo cards: %v", err)
	}
	return files
}

// TestRenderDemoCards: the report of every demo card states the verdict,
// the count of checks, every case, and the caution.
func TestRenderDemoCards(t *testing.T) {
	for _, f := range demoCards(t) {
		src, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		_, out, page := verified(t, f, src)
		rec := out.Record
		n := 0
		for _, c := range rec.Cases {
			n += len(c.Checks)
			if !strings.Contains(page, `id="case-`+c.Name+`"`) {
				t.Errorf("%s: no section for case %s", f, c.Name)
			}
		}
		word := map[string]string{"pass": "PASSED", "fail": "FAILED"}[rec.Verdict]
		for _, want := range []string{
			`<div class="word">` + word + `</div>`,
			fmt.Sprintf("<b>%d</b>checks", n),
			html.EscapeString(checks.Caution),
			"</html>",
		} {
			if !strings.Contains(page, want) {
				t.Errorf("%s: report lacks %q", f, want)
			}
		}
	}
}

// TestRenderCardUnits: a card written in ksi is reported in ksi: its
// parameters as written (E 10200 ksi, yield stress 40 ksi, tangent
// modulus 100 ksi), the check values and the plots; no value is printed
// in Pa. Without the card's unit the report says so and uses MPa.
func TestRenderCardUnits(t *testing.T) {
	f := "../../testdata/cards/al-bilinear.yaml"
	src, err := os.ReadFile(f)
	if err != nil {
		t.Fatal(err)
	}
	written, out, page := verified(t, f, src)
	if written.Units.Stress != "ksi" {
		t.Fatalf("%s is written in %s; the test needs a ksi card", f, written.Units.Stress)
	}
	for _, want := range []string{
		`<td>E</td><td class="n">10200</td><td>ksi</td>`,
		`<td>σy</td><td class="n">40</td><td>ksi</td>`,
		`<td>Et</td><td class="n">100</td><td>ksi</td>`,
		"stress (ksi)",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("ksi card: report lacks %q", want)
		}
	}
	// The stress at the monotonic strain is a check in ksi: its value
	// cell is followed by the reference and the unit ksi.
	if !regexp.MustCompile(`<td class="n">[0-9.]+</td><td class="n">[0-9.]+</td><td>ksi</td>`).MatchString(page) {
		t.Error("ksi card: no check value printed in ksi")
	}
	if strings.Contains(page, "<td>Pa</td>") || strings.Contains(page, "MPa") {
		t.Error("ksi card: a value is printed in Pa or MPa")
	}

	b, err := report.Render(out.Record, report.Written{})
	if err != nil {
		t.Fatal(err)
	}
	if p := string(b); !strings.Contains(p, `<td>E</td><td class="n">70327</td><td>MPa</td>`) || !strings.Contains(p, "not in the record") {
		t.Error("unknown unit: E not printed as 70327 MPa (10200 ksi x 6.894757 MPa/ksi, NIST SP 811 B.8) or the unknown unit not said")
	}
}

// TestRenderFailedCheck: the first screen of a card with a tangent
// modulus misread as a plastic modulus shows the failed check and its
// diagnosis with the corrected value in the card's words: Et = E H/(E + H)
// = 70000 x 14000 / 84000 = 11667 MPa (Lubliner, Plasticity Theory, 1990,
// sec. 3.3).
func TestRenderFailedCheck(t *testing.T) {
	misread, err := os.ReadFile("../../testdata/misread/gutter-misread.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, out, page := verified(t, "gutter-misread.yaml", misread)
	if out.Record.Verdict != "fail" {
		t.Fatalf("the misread card passes; the test needs a failing card")
	}
	first, _, ok := strings.Cut(page, "<nav>")
	if !ok {
		t.Fatal("report has no contents")
	}
	for _, want := range []string{
		`<div class="word">FAILED</div>`,
		"Failed checks (1)",
		"reference-solver-tension</a>: max error against the reference",
		"Diagnosis: tangent-as-plastic.",
		"tangent_modulus 14000 MPa of kinematic term 1 is read as a plastic modulus (tangent modulus 11667 MPa)",
	} {
		if !strings.Contains(first, want) {
			t.Errorf("first screen lacks %q", want)
		}
	}
	// Without the card as written, the record's own wording (canonical).
	b, err := report.Render(out.Record, report.Written{})
	if err != nil {
		t.Fatal(err)
	}
	first, _, _ = strings.Cut(string(b), "<nav>")
	if !strings.Contains(first, "Diagnosis: tangent-as-plastic.") || !strings.Contains(first, "the reference matches with plastic modulus 1.4e&#43;10 Pa for kinematic term 1") {
		t.Errorf("record's wording: the first screen lacks the diagnosis %q", out.Record.Findings[0].Text)
	}
}

// TestRenderSources: the numbered list holds each cited work once, every
// number cited in the page is on the list, and "from memory" is said only
// in the list.
func TestRenderSources(t *testing.T) {
	src, err := os.ReadFile("../../testdata/cards/ss-chaboche.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, _, page := verified(t, "ss-chaboche.yaml", src)
	body, list, ok := strings.Cut(page, `<section id="sources">`)
	if !ok {
		t.Fatal("no sources section")
	}
	list, after, _ := strings.Cut(list, "</section>")
	items := regexp.MustCompile(`(?s)<li>(.*?)</li>`).FindAllStringSubmatch(list, -1)
	if len(items) < 4 {
		t.Fatalf("%d sources, want the works the demo's checks cite (Prager, Armstrong-Frederick, Chaboche, Voce, ...)", len(items))
	}
	seen := map[string]bool{}
	for _, it := range items {
		cite, _, _ := strings.Cut(it[1], " <span")
		if seen[cite] {
			t.Errorf("source listed twice: %s", cite)
		}
		seen[cite] = true
	}
	for _, work := range []string{"W. Prager, A new method", "P. J. Armstrong and C. O. Frederick", "E. Voce, The relationship"} {
		if n := strings.Count(page, work); n != 1 {
			t.Errorf("%q appears %d times, want once (in the list)", work, n)
		}
	}
	for _, m := range regexp.MustCompile(`\[(\d+)\]`).FindAllStringSubmatch(body+after, -1) {
		if k, _ := strconv.Atoi(m[1]); k < 1 || k > len(items) {
			t.Errorf("cites [%d], the list has %d", k, len(items))
		}
	}
	if strings.Contains(body+after, "from memory") {
		t.Error(`"from memory" is said outside the list of sources`)
	}
	if !regexp.MustCompile(`<span class="mem">[^<]*from memory[^<]*confirm against`).MatchString(list) {
		t.Error("the list does not mark the works recalled from memory")
	}
}
