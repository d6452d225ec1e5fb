package report

import (
	"bytes"
	"fmt"
	"html/template"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"matgate/checks"
)

// Side is one revision in a comparison page.
type Side struct {
	Label    string // e.g. "demo-canopy-steel r2 (cards/steel.yaml)"
	Response *checks.Response
}

// RenderComparison returns a self-contained HTML page comparing the
// headline responses of two revisions of a card: the table of changes and
// overlay plots of the virgin tension curve and of the last loop at the
// first strain amplitude. It needs no network.
func RenderComparison(old, new Side, changes []checks.Change, loads string) ([]byte, error) {
	mono, err := overlaySVG("virgin tension", old, new, func(r *checks.Response) [][2]float64 { return r.Monotonic })
	if err != nil {
		return nil, err
	}
	loop, err := overlaySVG("last cycle at the first strain amplitude", old, new, func(r *checks.Response) [][2]float64 { return r.Loop })
	if err != nil {
		return nil, err
	}
	type row struct {
		checks.Change
		OldS, NewS, AbsS, RelS string
	}
	view := struct {
		Old, New    string
		Loads       string
		Rows        []row
		Plots       []template.HTML
		CautionText string
	}{Old: old.Label, New: new.Label, Loads: loads, Plots: []template.HTML{mono, loop}, CautionText: checks.Caution}
	for _, c := range changes {
		view.Rows = append(view.Rows, row{Change: c, OldS: ptrG(c.Old), NewS: ptrG(c.New), AbsS: ptrG(c.Abs), RelS: relPct(c.Rel)})
	}
	var buf bytes.Buffer
	if err := compareTemplate.Execute(&buf, view); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func ptrG(p *float64) string {
	if p == nil {
		return "-"
	}
	return num(*p)
}

func relPct(p *float64) string {
	if p == nil {
		return "-"
	}
	s := num(100 * *p)
	if *p > 0 {
		s = "+" + s
	}
	return s + " %"
}

// overlaySVG draws one curve of each side, stress in MPa against strain.
func overlaySVG(title string, old, new Side, curve func(*checks.Response) [][2]float64) (template.HTML, error) {
	p := newPlot(title, "strain (%)", "stress (MPa)")
	for i, s := range []Side{old, new} {
		pts := curve(s.Response)
		xy := make(plotter.XYs, len(pts))
		for j, q := range pts {
			xy[j] = plotter.XY{X: 100 * q[0], Y: q[1] / 1e6}
		}
		line, err := plotter.NewLine(xy)
		if err != nil {
			return "", fmt.Errorf("plot %s: %w", title, err)
		}
		line.Width = vg.Points(1.4)
		line.Color = inkResponse
		if i == 1 {
			line.Color = inkOverlay[0]
			line.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
		}
		p.Add(line)
		p.Legend.Add(s.Label, line)
	}
	return inlineSVG(p)
}

var compareTemplate = template.Must(template.New("compare").Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>matgate comparison: {{.Old}} and {{.New}}</title>
<style>
body { font-family: sans-serif; max-width: 60em; margin: 2em auto; color: #222; }
table { border-collapse: collapse; width: 100%; }
th, td { border-bottom: 1px solid #ccc; padding: 0.3em 0.5em; text-align: right; }
th:first-child, td:first-child { text-align: left; }
.note { color: #666; font-size: 0.9em; }
.caution { border-left: 4px solid #b36b00; padding: 0.5em 1em; background: #faf6ee; }
</style></head><body>
<h1>Response of two revisions</h1>
<p>Older: <b>{{.Old}}</b> (solid)<br>Newer: <b>{{.New}}</b> (dashed)</p>
<p class="note">Both revisions are driven through the same loads: {{.Loads}}</p>
<table><tr><th>quantity</th><th>older</th><th>newer</th><th>change</th><th>relative</th><th>unit</th></tr>
{{range .Rows}}<tr><td>{{.Name}}{{if .Note}}<br><span class="note">{{.Note}}</span>{{end}}</td><td>{{.OldS}}</td><td>{{.NewS}}</td><td>{{.AbsS}}</td><td>{{.RelS}}</td><td>{{.Unit}}</td></tr>
{{end}}</table>
{{range .Plots}}<figure>{{.}}</figure>
{{end}}
<p class="caution">{{.CautionText}}</p>
</body></html>
`))
