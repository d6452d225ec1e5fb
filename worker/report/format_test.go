package report

import (
	"math"
	"testing"
)

// TestNum: 4 significant digits, plain from 1e-3 to 1e6, a power of ten
// outside (common practice, no source).
func TestNum(t *testing.T) {
	for _, c := range []struct {
		v    float64
		want string
	}{
		{355, "355"}, {47.4500001, "47.45"}, {0.0039215686, "0.003922"}, {-542.33, "-542.3"},
		{206000, "206000"}, {2.104e-12, "2.104×10⁻¹²"}, {7.0327e10, "7.033×10¹⁰"}, {0, "0"}, {1e-3, "0.001"},
	} {
		if got := num(c.v); got != c.want {
			t.Errorf("num(%g) = %q, want %q", c.v, got, c.want)
		}
	}
}

// TestNiceTicks: labels in steps of 1, 2 or 5 times a power of ten, at
// least the number asked for, all within the range.
func TestNiceTicks(t *testing.T) {
	for _, r := range [][2]float64{{0, 7.84}, {0, 950}, {-642, 792}, {-0.0157, 0.0157}, {3e8, 3.2e8}} {
		var labels []float64
		for _, tk := range niceTicks(r[0], r[1], 5) {
			if tk.Value < r[0]-1e-9*(r[1]-r[0]) || tk.Value > r[1]+1e-9*(r[1]-r[0]) {
				t.Errorf("%v: tick %g outside", r, tk.Value)
			}
			if tk.Label != "" {
				labels = append(labels, tk.Value)
			}
		}
		if len(labels) < 5 {
			t.Errorf("%v: %d labels, want at least 5", r, len(labels))
			continue
		}
		step := labels[1] - labels[0]
		m := step / math.Pow(10, math.Floor(math.Log10(step)))
		if math.Abs(m-1) > 1e-6 && math.Abs(m-2) > 1e-6 && math.Abs(m-5) > 1e-6 {
			t.Errorf("%v: step %g is not 1, 2 or 5 times a power of ten", r, step)
		}
	}
}

// TestCite: works are numbered once in order of first citation, their
// notes become uses, and a note of recall from memory, in the citation's
// parenthesis or after it, goes to the list.
func TestCite(t *testing.T) {
	b := newBibliography()
	got := b.cite("closed form (A. B. Author, A title, J. Things 3, 1999 (eq. 4; from memory); C. Other and D.-E. Second, A book, 2001, ch. 5)")
	if want := "closed form ([1]; [2])"; got != want {
		t.Errorf("cite = %q, want %q", got, want)
	}
	got = b.cite("per ASTM E606/E606M (fatigue): the loop (recalled from memory) and A. B. Author, A title, J. Things 3, 1999")
	if want := "per [3]: the loop and [1]"; got != want {
		t.Errorf("cite = %q, want %q", got, want)
	}
	if len(b.Entries) != 3 {
		t.Fatalf("%d entries, want 3", len(b.Entries))
	}
	if w := b.Entries[0]; w.Citation != "A. B. Author, A title, J. Things 3, 1999" || len(w.Uses) != 1 || w.Uses[0] != "eq. 4" || len(w.Memory) != 1 {
		t.Errorf("entry 1 = %+v", *w)
	}
	if w := b.Entries[1]; w.Citation != "C. Other and D.-E. Second, A book, 2001, ch. 5" {
		t.Errorf("entry 2 = %+v", *w)
	}
	if w := b.Entries[2]; w.Citation != "ASTM E606/E606M" || len(w.Memory) != 1 || w.Confirm() != "confirm against the current edition of the standard" {
		t.Errorf("entry 3 = %+v", *w)
	}
}
