package report

import (
	"bytes"
	"fmt"
	"html/template"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
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

// Plot size and type sizes. The plots are drawn at the size they are
// printed (under half an A4 page's width), so that their lettering keeps
// its size on paper: 8 pt labels, 7 pt tick labels and legend.
const (
	plotWidth  = 3.1 * vg.Inch
	plotHeight = 1.85 * vg.Inch
	titleSize  = 8.5 // pt
	labelSize  = 8   // pt
	tickSize   = 7   // pt
)

// newPlot returns a plot with the report's lettering and ticks.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font = sans(titleSize)
	p.X.Label.Text, p.Y.Label.Text = xLabel, yLabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = sans(labelSize)
		a.Tick.Label.Font = sans(tickSize)
	}
	p.X.Tick.Marker = plot.TickerFunc(func(min, max float64) []plot.Tick { return niceTicks(min, max, 5) })
	p.Y.Tick.Marker = plot.TickerFunc(func(min, max float64) []plot.Tick { return niceTicks(min, max, 5) })
	p.Legend.TextStyle.Font = sans(tickSize)
	p.Legend.Top, p.Legend.Left = true, true
	p.Add(plotter.NewGrid())
	return p
}

// sans is the report's plot lettering at size pt.
func sans(pt float64) font.Font {
	return font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(pt)}
}

// niceTicks labels [min, max] in the largest step of 1, 2 or 5 times a
// power of ten that gives at least want labels, with unlabelled ticks
// between them (a fifth or a quarter of the step).
func niceTicks(min, max float64, want int) []plot.Tick {
	if !(max > min) || math.IsInf(max-min, 0) {
		return []plot.Tick{{Value: min, Label: num(min)}}
	}
	mag := math.Pow(10, math.Floor(math.Log10((max-min)/float64(want))))
	step, minor := mag, 5
	for _, m := range []float64{5, 2, 1} {
		if math.Floor(max/(m*mag)+1e-9)-math.Ceil(min/(m*mag)-1e-9)+1 >= float64(want) {
			step = m * mag
			if m == 2 {
				minor = 4
			}
			break
		}
	}
	var ticks []plot.Tick
	first := math.Ceil(min/step-1e-9) * step
	for k := 0; ; k++ {
		v := first + float64(k)*step
		if v > max+1e-9*step {
			break
		}
		if math.Abs(v) < 1e-9*step {
			v = 0
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: tickLabel(v, step)})
	}
	sub := step / float64(minor)
	for v := math.Ceil(min/sub-1e-9) * sub; v <= max+1e-9*sub; v += sub {
		if r := math.Mod(math.Abs(v), step); r > 1e-6*step && step-r > 1e-6*step {
			ticks = append(ticks, plot.Tick{Value: v})
		}
	}
	return ticks
}

// tickLabel prints v with as many decimals as the step needs.
func tickLabel(v, step float64) string {
	dec := 0
	if step < 1 {
		dec = int(math.Ceil(-math.Log10(step) - 1e-9))
	}
	if math.Abs(v) >= 1e6 || (v != 0 && math.Abs(v) < 1e-4) {
		return num(v)
	}
	return fmt.Sprintf("%.*f", dec, v)
}

// casePlots draws the plots of one case in the display's units: stress
// against strain (in percent), and for a case with shear the shear stress
// against the axial stress.
func casePlots(name string, d caseData, u display) ([]template.HTML, error) {
	if d.samples() < 2 {
		return nil, nil
	}
	stress := "stress (" + u.Unit + ")"
	p := newPlot(name, "strain (%)", stress)
	if err := addRuns(p, d.Runs, 100, 1/u.Pa); err != nil {
		return nil, err
	}
	for i, o := range d.Overlays {
		xy := make(plotter.XYs, len(o.Points))
		for j, q := range o.Points {
			xy[j] = plotter.XY{X: 100 * q.X, Y: q.Y / u.Pa}
		}
		if !o.Recorded {
			// A closed form is a curve: dashed, so the response under it
			// shows through.
			line, err := plotter.NewLine(xy)
			if err != nil {
				return nil, err
			}
			line.Color = inkOverlay[i%len(inkOverlay)]
			line.Width = vg.Points(1.1)
			line.Dashes = []vg.Length{vg.Points(4), vg.Points(2.5)}
			p.Add(line)
			p.Legend.Add(o.Name, line)
			continue
		}
		sc, err := plotter.NewScatter(xy)
		if err != nil {
			return nil, err
		}
		sc.Color = inkOverlay[i%len(inkOverlay)]
		sc.Shape = draw.PlusGlyph{}
		sc.Radius = vg.Points(2.2)
		p.Add(sc)
		p.Legend.Add(o.Name, sc)
	}
	placeLegend(p, d.Runs, 100, 1/u.Pa)
	svg, err := inlineSVG(p)
	if err != nil {
		return nil, err
	}
	out := []template.HTML{svg}
	if d.ShearRuns != nil {
		q := newPlot(name+": stress path", "axial stress ("+u.Unit+")", "shear stress τ12 ("+u.Unit+")")
		if err := addRuns(q, d.ShearRuns, 1/u.Pa, 1/u.Pa); err != nil {
			return nil, err
		}
		placeLegend(q, d.ShearRuns, 1/u.Pa, 1/u.Pa)
		if svg, err = inlineSVG(q); err != nil {
			return nil, err
		}
		out = append(out, svg)
	}
	return out, nil
}

// placeLegend puts the legend in the corner of the plot that the
// response crosses least: a third of the width and a quarter of the
// height from each corner are counted.
func placeLegend(p *plot.Plot, runs [][]point, sx, sy float64) {
	xmin, xmax, ymin, ymax := p.X.Min, p.X.Max, p.Y.Min, p.Y.Max
	if !(xmax > xmin && ymax > ymin) {
		return
	}
	var count [2][2]int // [top][left]
	for _, run := range runs {
		for _, q := range run {
			x, y := (sx*q.X-xmin)/(xmax-xmin), (sy*q.Y-ymin)/(ymax-ymin)
			for top := 0; top < 2; top++ {
				for left := 0; left < 2; left++ {
					inX := (left == 1 && x < 1.0/3) || (left == 0 && x > 2.0/3)
					inY := (top == 1 && y > 0.75) || (top == 0 && y < 0.25)
					if inX && inY {
						count[top][left]++
					}
				}
			}
		}
	}
	best := [2]int{1, 1}
	for _, c := range [][2]int{{1, 1}, {0, 0}, {1, 0}, {0, 1}} {
		if count[c[0]][c[1]] < count[best[0]][best[1]] {
			best = c
		}
	}
	p.Legend.Top, p.Legend.Left = best[0] == 1, best[1] == 1
	p.Legend.XOffs, p.Legend.YOffs = vg.Points(4), vg.Points(-4)
	if !p.Legend.Left {
		p.Legend.XOffs = vg.Points(-4)
	}
	if !p.Legend.Top {
		p.Legend.YOffs = vg.Points(4)
	}
}

// addRuns draws the runs of the response as lines, x and y scaled.
func addRuns(p *plot.Plot, runs [][]point, sx, sy float64) error {
	for i, run := range runs {
		xy := make(plotter.XYs, len(run))
		for j, q := range run {
			xy[j] = plotter.XY{X: sx * q.X, Y: sy * q.Y}
		}
		line, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		line.Color = inkResponse
		line.Width = vg.Points(1.2)
		p.Add(line)
		if i == 0 {
			p.Legend.Add("reference integrator", line)
		}
	}
	return nil
}

// inlineSVG renders a plot as SVG for inline use in HTML (no XML prolog).
func inlineSVG(p *plot.Plot) (template.HTML, error) {
	w, err := p.WriterTo(plotWidth, plotHeight, "svg")
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
