package report

import (
	"fmt"
	"html/template"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"matgate/checks"
)

// temperaturePlot draws the monotonic tension of a temperature-dependent
// card's record at each of its temperatures in one plot, one line a
// temperature, in the display's units; "" for a record of one
// temperature.
func temperaturePlot(rec *checks.Record, u display) (template.HTML, error) {
	p := newPlot("monotonic tension at each temperature", "strain (%)", "stress ("+u.Unit+")")
	n := 0
	for _, c := range rec.Cases {
		if c.Temperature == nil || c.Kind != "monotonic-tension" || c.Series.Len() < 2 {
			continue
		}
		xy := make(plotter.XYs, 0, c.Series.Len())
		for _, s := range c.Series.Samples() {
			xy = append(xy, plotter.XY{X: 100 * s.Strain, Y: s.Stress / u.Pa})
		}
		line, err := plotter.NewLine(xy)
		if err != nil {
			return "", err
		}
		line.Color = inkOverlay[n%len(inkOverlay)]
		line.Width = vg.Points(1.1)
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
	return inlineSVG(p)
}

// temperatureText says at which temperature a case ran, "" for none.
func temperatureText(c *checks.Case) string {
	if c.Temperature == nil {
		return ""
	}
	return fmt.Sprintf("at %g K", *c.Temperature)
}
