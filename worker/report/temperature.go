package report

import (
	"fmt"
	"html/template"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"matgate/checks"
)

// temperaturePlot draws the monotonic tension of a temperature-dependent
// card's record at each of its temperatures in one plot, one line a
// temperature; "" for a record of one temperature.
func temperaturePlot(rec *checks.Record) (template.HTML, error) {
	p := plot.New()
	p.Title.Text = "monotonic tension at each temperature"
	p.X.Label.Text, p.Y.Label.Text = "strain", "stress (MPa)"
	n := 0
	for _, c := range rec.Cases {
		if c.Temperature == nil || c.Kind != "monotonic-tension" || len(c.Series) < 2 {
			continue
		}
		xy := make(plotter.XYs, 0, len(c.Series))
		for _, s := range c.Series {
			xy = append(xy, plotter.XY{X: s.Strain, Y: s.Stress / 1e6})
		}
		line, err := plotter.NewLine(xy)
		if err != nil {
			return "", err
		}
		line.Color = inkOverlay[n%len(inkOverlay)]
		line.Width = vg.Points(1.2)
		if k := n / len(inkOverlay); k > 0 { // more temperatures than colours: dashed
			line.Dashes = []vg.Length{vg.Points(float64(2 * k)), vg.Points(float64(2 * k))}
		}
		p.Add(line)
		p.Legend.Add(fmt.Sprintf("%g K", *c.Temperature), line)
		n++
	}
	if n < 2 {
		return "", nil
	}
	p.Legend.Top, p.Legend.Left = true, true
	p.Add(plotter.NewGrid())
	return inlineSVG(p)
}
