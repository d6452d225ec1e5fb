package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"matgate/checks"
)

// Report colours: our own palette, chosen to stay apart in greyscale print.
var (
	inkResponse = color.RGBA{R: 0x1f, G: 0x3a, B: 0x5f, A: 0xff} // integrator response: slate blue
	inkOverlay  = []color.Color{
		color.RGBA{R: 0xb3, G: 0x6b, B: 0x00, A: 0xff}, // ochre
		color.RGBA{R: 0x6a, G: 0x3d, B: 0x7a, A: 0xff}, // plum
		color.RGBA{R: 0x2e, G: 0x7d, B: 0x6b, A: 0xff}, // sea green
	}
)

// Render returns a self-contained HTML page of a record: the verdict,
// the findings (on failed checks and near misses of passing ones), the
// caution, the settings, and per case its checks, its findings and an SVG
// plot of the response with any closed-form or reference overlays. It
// needs no network.
func Render(rec *checks.Record) ([]byte, error) {
	type caseView struct {
		checks.Case
		Plots    []template.HTML
		Findings []checks.Finding
	}
	view := struct {
		R     *checks.Record
		Cases []caseView
	}{R: rec}
	for _, c := range rec.Cases {
		cv := caseView{Case: c}
		for _, f := range rec.Findings {
			if f.Case == c.Name {
				cv.Findings = append(cv.Findings, f)
			}
		}
		if c.Skipped == "" && c.Series.Len() > 1 {
			svg, err := plotCase(c, false)
			if err != nil {
				return nil, fmt.Errorf("plot %s: %w", c.Name, err)
			}
			cv.Plots = append(cv.Plots, svg)
			if hasShear(c) {
				if svg, err = plotCase(c, true); err != nil {
					return nil, fmt.Errorf("plot %s: %w", c.Name, err)
				}
				cv.Plots = append(cv.Plots, svg)
			}
		}
		view.Cases = append(view.Cases, cv)
	}
	var buf bytes.Buffer
	if err := reportTemplate.Execute(&buf, view); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

func hasShear(c checks.Case) bool {
	for _, s := range c.Series.Samples() {
		if s.ShearStrain != 0 || s.ShearStress != 0 {
			return true
		}
	}
	return false
}

// plotCase draws stress against strain (MPa), or for shear the shear
// stress against the axial stress, as inline SVG.
func plotCase(c checks.Case, shear bool) (template.HTML, error) {
	p, err := buildPlot(c, shear)
	if err != nil {
		return "", err
	}
	return inlineSVG(p)
}

// buildPlot lays out the plot of one case.
func buildPlot(c checks.Case, shear bool) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = c.Name
	p.X.Label.Text, p.Y.Label.Text = "strain", "stress (MPa)"
	if shear {
		p.X.Label.Text, p.Y.Label.Text = "axial stress (MPa)", "shear stress (MPa)"
	}
	// One line per run of consecutive samples: a Gap sample starts a new
	// one, so increments left out of the series are not drawn across.
	var runs []plotter.XYs
	for i, s := range c.Series.Samples() {
		if i == 0 || s.Gap {
			runs = append(runs, nil)
		}
		xy := plotter.XY{X: s.Strain, Y: s.Stress / 1e6}
		if shear {
			xy = plotter.XY{X: s.Stress / 1e6, Y: s.ShearStress / 1e6}
		}
		runs[len(runs)-1] = append(runs[len(runs)-1], xy)
	}
	for i, pts := range runs {
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, err
		}
		line.Color = inkResponse
		line.Width = vg.Points(1.2)
		p.Add(line)
		if i == 0 {
			p.Legend.Add("reference integrator", line)
		}
	}
	if !shear {
		for i, cv := range c.Curves {
			xy := make(plotter.XYs, len(cv.Points))
			for j, q := range cv.Points {
				xy[j] = plotter.XY{X: q[0], Y: q[1] / 1e6}
			}
			sc, err := plotter.NewScatter(xy)
			if err != nil {
				return nil, err
			}
			sc.Color = inkOverlay[i%len(inkOverlay)]
			sc.Shape = draw.PlusGlyph{}
			sc.Radius = vg.Points(2)
			p.Add(sc)
			p.Legend.Add(cv.Name, sc)
		}
	}
	p.Legend.Top, p.Legend.Left = true, true
	p.Add(plotter.NewGrid())
	return p, nil
}

// g prints a number with 8 significant digits, as the JUnit output does.
func g(v float64) string { return strconv.FormatFloat(v, 'g', 8, 64) }

var reportTemplate = template.Must(template.New("report").Funcs(template.FuncMap{
	"g": g,
}).Parse(`<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>matgate record {{.R.Card.ID}} r{{.R.Card.Revision}}</title>
<style>
body{font-family:system-ui,sans-serif;margin:2em auto;max-width:70em;color:#222}
.verdict{font-size:1.4em;padding:.3em .6em;display:inline-block;border:2px solid}
.pass{color:#1f3a5f;border-color:#1f3a5f}.fail{color:#8a2d00;border-color:#8a2d00}
.caution{border-left:4px solid #b36b00;padding:.5em 1em;background:#fbf6ee}
table{border-collapse:collapse;margin:.5em 0}td,th{border:1px solid #ccc;padding:.2em .5em;font-size:.9em;vertical-align:top}
tr.broke td{background:#fbeae3}.small{color:#555;font-size:.85em}
.findings,.finding{border-left:4px solid #6a3d7a;padding:.3em 1em;background:#f5f0f7}
</style></head><body>
<h1>Verification record: {{.R.Card.ID}} r{{.R.Card.Revision}}</h1>
<p class="verdict {{.R.Verdict}}">{{.R.Verdict}}</p>
{{with .R.Findings}}<div class="findings"><h2>Findings</h2>
<p class="small">Remarks the verdict does not carry: which usual misreading of the card explains a failed reference curve, or matches a passing one far better than the card as written.</p>
<ul>{{range .}}<li><b>{{.Case}}</b>{{with .Misreading}} ({{.}}){{end}}{{if .CheckPassed}}, check passed{{else}}, check failed{{end}}: {{.Text}}</li>{{end}}</ul></div>{{end}}
<p class="caution">{{.R.Caution}}</p>
<table>
<tr><th>card digest</th><td>{{.R.Card.Digest}}</td></tr>
<tr><th>record digest</th><td>{{.R.Digest}}</td></tr>
{{with .R.Signature}}<tr><th>signed by key</th><td>{{.KeyID}} ({{.Algorithm}})</td></tr>{{end}}
<tr><th>tool</th><td>matgate {{.R.Tool.Version}} ({{.R.Tool.Commit}})</td></tr>
<tr><th>created</th><td>{{.R.Created}}</td></tr>
<tr><th>profile</th><td>{{.R.Settings.Profile}}, algorithm {{.R.Settings.Algorithm}}</td></tr>
</table>
{{range .Cases}}
<h2>{{.Name}} <span class="small">({{.Kind}})</span></h2>
<p>{{.Loading}}</p>
{{if .Skipped}}<p><em>Not run: {{.Skipped}}</em></p>{{else}}
{{range .Plots}}<div>{{.}}</div>{{end}}{{if .Plots}}<p class="small">The plot shows every increment of a short run, and the first and last 200 increments of a long one (the lines break where increments are left out).</p>{{end}}
<table><tr><th></th><th>check</th><th>quantity</th><th>value</th><th>reference</th><th>tolerance</th><th>unit</th><th>reference from</th><th>tolerance basis</th></tr>
{{range .Checks}}<tr{{if not .Pass}} class="broke"{{end}}><td>{{if .Pass}}&#10003;{{else}}&#10007;{{end}}</td><td>{{.Name}}</td><td>{{.Quantity}}</td><td>{{g .Value}}</td><td>{{g .Reference}}</td><td>{{g .Tolerance}} {{.ToleranceKind}}{{with .Bound}} ({{.}}){{end}}</td><td>{{.Unit}}</td><td class="small">{{.ReferenceSource}}</td><td class="small">{{.ToleranceBasis}}</td></tr>
{{end}}</table>
{{range .Findings}}<p class="finding">Finding{{with .Misreading}} ({{.}}){{end}}{{if .CheckPassed}} on a passing check{{end}}: {{.Text}}</p>{{end}}
{{range .Omitted}}<p class="small">Not applicable: {{.Check}}: {{.Why}}</p>{{end}}
{{end}}{{end}}
</body></html>
`))

// inlineSVG renders a plot as SVG for inline use in HTML (no XML prolog).
func inlineSVG(p *plot.Plot) (template.HTML, error) {
	w, err := p.WriterTo(6*vg.Inch, 4*vg.Inch, "svg")
	if err != nil {
		return "", err
	}
	var buf bytes.Buffer
	if _, err := w.WriteTo(&buf); err != nil {
		return "", err
	}
	svg := buf.String()
	if i := strings.Index(svg, "<svg"); i > 0 {
		svg = svg[i:] // drop the XML prolog: the SVG is inline in HTML
	}
	return template.HTML(svg), nil // produced by gonum/plot from numbers, not user text
}
