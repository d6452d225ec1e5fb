package report

import (
	"bytes"
	"fmt"
	"html/template"

	"matgate/checks"
)

// Written is what the caller knows of the card as written that the record
// does not carry: the record's canonical card is in SI units, whatever
// unit the card was written in. The zero value prints stresses in MPa and
// says that the card's own unit is not known.
type Written struct {
	// Stress is the card's stress unit (Pa, kPa, MPa, GPa, psi, ksi).
	Stress string
	// Asked says that Stress is the unit a reader asked for, not one the
	// caller knows to be the card's (the service's report, ?unit=).
	Asked bool
	// Findings are the record's findings worded in the card's own terms
	// (see checks.Diagnosis.Describe), one per Record.Findings and in that
	// order; nil prints the record's own wording (canonical, Pa).
	Findings []string
}

// Render returns a self-contained HTML page of a record for an auditor.
// Its first screen holds the verdict, the card (title, source, parameters
// in the card's units), the counts of checks, every failed check with its
// diagnosis, the findings, the record's integrity and the caution, then
// a table of contents of the cases. Each case follows with its plots and
// its checks; the sources the checks cite are one numbered list at the
// end. It needs no network and prints on a few pages.
func Render(rec *checks.Record, w Written) ([]byte, error) {
	v, err := newView(rec, w)
	if err != nil {
		return nil, err
	}
	var buf bytes.Buffer
	if err := reportTemplate.Execute(&buf, v); err != nil {
		return nil, err
	}
	return buf.Bytes(), nil
}

// view is what the template prints.
type view struct {
	R                      *checks.Record
	Unit                   display
	Card                   cardView
	Checks, Passed, Failed int
	Omitted                int
	SkippedCases           int
	FailedChecks           []failedView
	NearMisses             []findingView // findings on passing checks
	DigestOK               bool
	Cases                  []caseView
	Bib                    *bibliography
	Stabilized             string
	// Temperatures is the plot of the response at each temperature of a
	// temperature-dependent card; "" for a card of one temperature.
	Temperatures template.HTML
}

type checkRow struct {
	Pass                                  bool
	Name, Quantity                        string
	Value, Reference, Tolerance, UnitName string
	Source, Basis                         string // with citations as numbers
	// Same names the case whose check of the same name was measured and
	// referenced word for word as this one, when an earlier case has one:
	// the row then refers to it instead of repeating the words.
	Same, SameAnchor string
}

type findingView struct {
	Case, Anchor, Check string
	Misreading          string
	Passed              bool
	Text                string
}

type failedView struct {
	Case, Anchor string
	Row          checkRow
	Findings     []findingView
}

type caseView struct {
	Anchor, Name, Kind, Loading, Skipped string
	Temperature                          string // "at 293.15 K"; "" for a card of one temperature
	Passed, Failed                       int
	Rows                                 []checkRow
	Omitted                              []checks.Omission
	Measures                             []string
	Plots                                []template.HTML
	Gaps                                 bool // the plotted response leaves out increments
	Findings                             []findingView
}

func newView(rec *checks.Record, w Written) (*view, error) {
	u := newDisplay(w.Stress)
	u.Asked = u.Known && w.Asked
	card, err := readCard(rec.Card.Canonical, u)
	if err != nil {
		return nil, err
	}
	v := &view{R: rec, Unit: u, Card: card, Bib: newBibliography()}
	if d, err := rec.ComputeDigest(); err == nil && d == rec.Digest {
		v.DigestOK = true
	}
	findings := make([]findingView, len(rec.Findings))
	for i, f := range rec.Findings {
		text := f.Text
		if i < len(w.Findings) && w.Findings[i] != "" {
			text = w.Findings[i]
		}
		findings[i] = findingView{Case: f.Case, Anchor: anchor(f.Case), Check: f.Check, Misreading: string(f.Misreading), Passed: f.CheckPassed, Text: text}
		if f.CheckPassed {
			v.NearMisses = append(v.NearMisses, findings[i])
		}
	}
	// Failed checks first: they are cited first, on the first screen.
	for _, c := range rec.Cases {
		for _, k := range c.Checks {
			if !k.Pass {
				fv := failedView{Case: c.Name, Anchor: anchor(c.Name), Row: v.row(k)}
				for _, f := range findings {
					if f.Case == c.Name && f.Check == k.Name {
						fv.Findings = append(fv.Findings, f)
					}
				}
				v.FailedChecks = append(v.FailedChecks, fv)
			}
		}
	}
	shown := map[[3]string]string{} // name, quantity, source: the case that shows them
	for _, c := range rec.Cases {
		cv := caseView{Anchor: anchor(c.Name), Name: c.Name, Kind: c.Kind, Loading: c.Loading, Skipped: c.Skipped, Omitted: c.Omitted, Temperature: temperatureText(&c)}
		if c.Skipped != "" {
			v.SkippedCases++
		}
		v.Omitted += len(c.Omitted)
		for _, k := range c.Checks {
			r := v.row(k)
			key := [3]string{k.Name, k.Quantity, k.ReferenceSource}
			if first, ok := shown[key]; ok {
				r.Same, r.SameAnchor = first, anchor(first)
			} else {
				shown[key] = c.Name
			}
			cv.Rows = append(cv.Rows, r)
			if k.Pass {
				cv.Passed++
			} else {
				cv.Failed++
			}
		}
		v.Checks += len(c.Checks)
		v.Passed += cv.Passed
		v.Failed += cv.Failed
		for _, m := range c.Measures {
			x, unit := u.quantity(m.Value, m.Unit)
			s := m.Name + ": " + num(x)
			if unit != "" {
				s += " " + unit
			}
			cv.Measures = append(cv.Measures, s)
		}
		for _, f := range findings {
			if f.Case == c.Name {
				cv.Findings = append(cv.Findings, f)
			}
		}
		if c.Skipped == "" {
			d := readCase(c)
			cv.Gaps = len(d.Runs) > 1
			if cv.Plots, err = casePlots(c.Name, d, u); err != nil {
				return nil, fmt.Errorf("plot %s: %w", c.Name, err)
			}
		}
		v.Cases = append(v.Cases, cv)
	}
	v.Stabilized = v.Bib.cite(rec.Settings.StabilizedCycle)
	if v.Temperatures, err = temperaturePlot(rec, u); err != nil {
		return nil, fmt.Errorf("plot at each temperature: %w", err)
	}
	return v, nil
}

// row prints one check in the display's units, citing its sources by
// number.
func (v *view) row(k checks.Check) checkRow {
	val, unit := v.Unit.quantity(k.Value, k.Unit)
	ref, _ := v.Unit.quantity(k.Reference, k.Unit)
	return checkRow{
		Pass: k.Pass, Name: k.Name, Quantity: k.Quantity,
		Value: num(val), Reference: num(ref), UnitName: unit,
		Tolerance: v.Unit.tolerance(k.Tolerance, k.ToleranceKind, k.Bound, k.Unit),
		Source:    v.Bib.cite(k.ReferenceSource),
		Basis:     v.Bib.cite(k.ToleranceBasis),
	}
}

// anchor is the HTML id of a case's section.
func anchor(caseName string) string { return "case-" + caseName }

var reportTemplate = template.Must(template.New("report").Funcs(template.FuncMap{
	"num": num,
}).Parse(reportHTML))
