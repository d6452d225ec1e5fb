package worker

import (
	"context"
	"encoding/json"
	"net/http"
	"os"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"matgate/checks"
	"matgate/convert"
	"matgate/schema"
	"matgate/worker/report"
)

func preparedCard(t *testing.T, name string, data []byte) *schema.Card {
	t.Helper()
	doc, err := schema.Decode(name, data, nil)
	if err != nil {
		t.Fatal(err)
	}
	n, ds := convert.Prepare(doc, nil)
	if ds.HasErrors() {
		t.Fatalf("%s: %v", name, ds)
	}
	return n
}

// The temperature-dependent demo card verifies (its record passes), and its
// cases at each tabulated temperature are, field for field, those of the
// single-temperature card written by hand with that temperature's values
// (testdata/temperature/canopy-steel-hot-200c.yaml), with the temperature's
// prefix and Temperature added.
func TestTemperatureCardVerify(t *testing.T) {
	data, err := os.ReadFile("../testdata/temperature/canopy-steel-hot.yaml")
	if err != nil {
		t.Fatal(err)
	}
	table := preparedCard(t, "canopy-steel-hot.yaml", data)
	created := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	out, err := Verify(context.Background(), table, checks.Tool{Version: "test"}, created)
	if err != nil {
		t.Fatal(err)
	}
	rec := out.Record
	if rec.Verdict != "pass" {
		for _, c := range rec.Cases {
			for _, ch := range c.Checks {
				if !ch.Pass {
					t.Errorf("%s: %s: %g (reference %g, tolerance %g)", c.Name, ch.Name, ch.Value, ch.Reference, ch.Tolerance)
				}
			}
		}
		t.Fatalf("verdict %s", rec.Verdict)
	}

	data, err = os.ReadFile("../testdata/temperature/canopy-steel-hot-200c.yaml")
	if err != nil {
		t.Fatal(err)
	}
	single := preparedCard(t, "canopy-steel-hot-200c.yaml", data)
	one, err := Verify(context.Background(), single, checks.Tool{Version: "test"}, created)
	if err != nil {
		t.Fatal(err)
	}
	prefix := checks.TemperatureName(473.15) + "/"
	var got []checks.Case
	for _, c := range rec.Cases {
		if strings.HasPrefix(c.Name, prefix) {
			if c.Temperature == nil || *c.Temperature != 473.15 {
				t.Errorf("%s: temperature %v", c.Name, c.Temperature)
			}
			c.Name = strings.TrimPrefix(c.Name, prefix)
			c.Temperature = nil
			got = append(got, c)
		}
	}
	// Compare the cases as the record holds them (their JSON).
	enc := func(v any) string {
		b, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	if len(got) == 0 || enc(got) != enc(one.Record.Cases) {
		t.Errorf("cases at 473.15 K differ from the single-temperature card's:\n%s", cmp.Diff(enc(one.Record.Cases), enc(got)))
	}
	var names []string
	for _, c := range rec.Cases {
		if !strings.HasPrefix(c.Name, "at-") {
			names = append(names, c.Name)
		}
	}
	want := []string{"between-293.15K-373.15K", "between-373.15K-473.15K", "between-473.15K-573.15K", "between-573.15K-673.15K",
		"anisothermal-excursion", "anisothermal-isothermal", "thermomechanical-in-phase", "thermomechanical-out-of-phase"}
	if d := cmp.Diff(want, names); d != "" {
		t.Errorf("cases beyond the tabulated temperatures (-want +got)\n%s", d)
	}
	html, err := report.Render(rec, report.Written{Stress: "MPa"})
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{"Response at each temperature", "monotonic tension at each temperature",
		`at-673.15K/monotonic-tension <span class="muted small">monotonic-tension</span> <span class="muted small">at 673.15 K</span>`,
		`<span class="muted small">at 423.15 K</span>`,
		"210000, 205000, 195000, 185000, 170000", // E at each temperature, in the card's MPa
		"293.15, 373.15, 473.15, 573.15, 673.15 K"} {
		if !strings.Contains(string(html), w) {
			t.Errorf("the report lacks %q", w)
		}
	}
	if len(out.Tables) != 10 {
		t.Errorf("%d tables, want 2 at each of 5 temperatures", len(out.Tables))
	}
}

// Two revisions of a temperature-dependent card compare at each of the
// older one's temperatures: a change of the 400 C yield stress changes
// responses at 673.15 K only.
func TestTemperatureCardCompare(t *testing.T) {
	data, err := os.ReadFile("../testdata/temperature/canopy-steel-hot.yaml")
	if err != nil {
		t.Fatal(err)
	}
	old := preparedCard(t, "r1.yaml", data)
	changed := strings.Replace(strings.Replace(string(data), "revision: 1", "revision: 2", 1), "[355, 335, 305, 275, 245]", "[355, 335, 305, 275, 230]", 1)
	new := preparedCard(t, "r2.yaml", []byte(changed))
	c, err := Compare(context.Background(), old, new)
	if err != nil {
		t.Fatal(err)
	}
	seen := map[string]bool{}
	for _, ch := range c.Changes {
		T, _, ok := strings.Cut(ch.Name, ": ")
		if !ok || !strings.HasPrefix(T, "at ") {
			t.Fatalf("change %q is not named by its temperature", ch.Name)
		}
		seen[T] = true
		moved := ch.Abs != nil && *ch.Abs != 0
		if T != "at 673.15 K" && moved {
			t.Errorf("%s changed by %g, but only the 400 C yield stress changed", ch.Name, *ch.Abs)
		}
	}
	if len(seen) != 5 {
		t.Errorf("compared at %d temperatures, want 5", len(seen))
	}
	if len(c.Exceeding(1e-9)) == 0 {
		t.Error("no change at 673.15 K")
	}
}

// BenchmarkVerifyTemperatureCard is worker.Verify on the
// temperature-dependent demo card (5 temperatures) beside its 200 C column
// as a card of one temperature: what the temperatures cost.
func BenchmarkVerifyTemperatureCard(b *testing.B) {
	for _, name := range []string{"canopy-steel-hot.yaml", "canopy-steel-hot-200c.yaml"} {
		b.Run(name, func(b *testing.B) {
			data, err := os.ReadFile("../testdata/temperature/" + name)
			if err != nil {
				b.Fatal(err)
			}
			doc, err := schema.Decode(name, data, nil)
			if err != nil {
				b.Fatal(err)
			}
			card, ds := convert.Prepare(doc, nil)
			if ds.HasErrors() {
				b.Fatal(ds)
			}
			for b.Loop() {
				if _, err := Verify(context.Background(), card, checks.Tool{Version: "bench"}, time.Unix(0, 0).UTC()); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// The queue path takes a temperature-dependent card as verify does: the
// API accepts it (the spec at every temperature resolves), a worker
// verifies it, and the stored record passes with its cases at every
// temperature.
func TestTemperatureCardAPI(t *testing.T) {
	s := newAPIStack(t, true, 0)
	resp, j := s.submitFile(t, "../testdata/temperature/canopy-steel-hot.yaml")
	if resp.StatusCode != http.StatusAccepted {
		t.Fatalf("submit: %d", resp.StatusCode)
	}
	done := s.waitJob(t, j.ID, 2*time.Minute)
	if done.State != JobDone || done.Verdict != "pass" {
		t.Fatalf("job %+v", done)
	}
	_, body := s.do(t, "GET", "/v1/records/"+j.ID, secretRead, "", nil)
	rec, err := checks.ParseRecord(body)
	if err != nil {
		t.Fatal(err)
	}
	temps := map[float64]bool{}
	for _, c := range rec.Cases {
		if c.Temperature != nil {
			temps[*c.Temperature] = true
		}
	}
	if len(temps) != 9 { // 5 tabulated, 4 midpoints
		t.Errorf("cases at %d temperatures, want 9: %v", len(temps), temps)
	}
}
