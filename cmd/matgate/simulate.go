package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"matgate/checks/plastic"
	"matgate/convert"
	"matgate/schema"
)

func newSimulateCmd(e *env) *cobra.Command {
	var (
		pathFile, mode, algorithm string
		increment, tempIncrement  float64
	)
	c := &cobra.Command{
		Use:   "simulate CARD --path PATH.csv",
		Short: "Drive a card along a load history of your own and print the response",
		Long: `simulate drives the reference integrator along the load history in
--path and prints the response as CSV on stdout, every number in the
shortest form that reads back to the same float64, stresses in the card's
stress unit.

The path CSV has a header naming its control column, strain or stress (in
the card's stress unit); in --mode 3d also strain,shear_strain (tension and
engineering shear strain of a thin-walled tube, the other stresses zero).
Each row is a target reached by increments no larger than --increment
(default 1e-5 for strain, yield_stress/200 for stress). 1D uses the exact
algorithm by default; 3D --mode uses the 3D radial return under mixed
control (uniaxial stress, or tension-torsion).

A temperature-dependent card (one with temperatures) takes a second
column, temperature, in the card's temperature unit: strain,temperature or
stress,temperature. The history starts from the virgin state at the first
row's temperature; within a row the temperature moves linearly with the
control quantity, in increments of at most --temperature-increment kelvin.
The back stress carries the temperature-rate term of Chaboche (1989),
the parameters are interpolated linearly between the card's temperatures
and never extrapolated (a row outside the range is an error), and the
strain is mechanical (the card has no thermal expansion). The output has a
temperature column. 1d only.`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if pathFile == "" {
				return &usageError{fmt.Errorf("simulate: --path is required")}
			}
			var set plastic.Settings
			switch algorithm {
			case "exact":
				set.Algorithm = plastic.Exact
			case "backward-euler":
				set.Algorithm = plastic.BackwardEuler
			default:
				return &usageError{fmt.Errorf("--algorithm %q: use exact or backward-euler", algorithm)}
			}
			if mode != "1d" && mode != "3d" {
				return &usageError{fmt.Errorf("--mode %q: use 1d or 3d", mode)}
			}
			if increment < 0 {
				return &usageError{fmt.Errorf("--increment %g: must be positive", increment)}
			}
			l := loadCard(e, args[0])
			for _, d := range l.diags {
				fmt.Fprintln(e.stderr, d.String())
			}
			if !l.valid() {
				return &exitError{code: exitInvalid}
			}
			f, _ := convert.StressFactor(l.doc.Card.Units.Stress)
			data, err := os.ReadFile(pathFile)
			if err != nil {
				return invalid("--path: %v", err)
			}
			p, err := readLoadPath(pathFile, data, mode, l.card.IsTemperatureDependent())
			if err != nil {
				return invalid("%v", err)
			}
			w := bufio.NewWriter(e.stdout)
			defer w.Flush()
			num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
			if l.card.IsTemperatureDependent() {
				if mode != "1d" {
					return &usageError{fmt.Errorf("--mode %s: a temperature-dependent card is simulated in 1d only (the anisothermal integrator is uniaxial)", mode)}
				}
				if tempIncrement <= 0 {
					return &usageError{fmt.Errorf("--temperature-increment %g: must be positive", tempIncrement)}
				}
				return simulateAnisothermal(cmd.Context(), w, l.doc.Card, l.card, p, increment, tempIncrement, &set, f)
			}
			m, err := convert.Material(l.card)
			if err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			if mode == "1d" {
				path := plastic.Path1D{Control: plastic.StrainControl, MaxIncrement: increment}
				for _, r := range p.rows {
					path.Targets = append(path.Targets, r[0])
				}
				if p.columns[0] == "stress" {
					path.Control = plastic.StressControl
					for i := range path.Targets {
						path.Targets[i] *= f
					}
					if path.MaxIncrement == 0 {
						path.MaxIncrement = m.SigmaY / 200
					} else {
						path.MaxIncrement *= f
					}
				} else if path.MaxIncrement == 0 {
					path.MaxIncrement = 1e-5
				}
				fmt.Fprintln(w, "step,strain,stress,plastic_strain,back_stress,accumulated_plastic_strain")
				var s plastic.State1D
				row := func(step int, s *plastic.State1D) {
					fmt.Fprintln(w, strings.Join([]string{strconv.Itoa(step), num(s.Eps), num(s.Sigma / f), num(s.EpsP), num(s.BackStress(m.N) / f), num(s.P)}, ","))
				}
				row(0, &s)
				if _, err := m.Run1D(cmd.Context(), &s, &path, &set, func(k int, s *plastic.State1D) { row(k+1, s) }); err != nil {
					w.Flush()
					return simulateError(err, p)
				}
				return nil
			}
			if increment == 0 {
				increment = 1e-5
			}
			var path plastic.Path3D
			if len(p.columns) == 2 {
				pts := make([][2]float64, len(p.rows))
				for i, r := range p.rows {
					pts[i] = [2]float64{r[0], r[1]}
				}
				path = plastic.TensionTorsionPath(pts, increment)
			} else {
				ax := make([]float64, len(p.rows))
				for i, r := range p.rows {
					ax[i] = r[0]
				}
				path = plastic.UniaxialStressPath(ax, increment)
			}
			fmt.Fprintln(w, "step,strain,stress,plastic_strain,back_stress,accumulated_plastic_strain,shear_strain,shear_stress,shear_plastic_strain,shear_back_stress")
			var s plastic.State3D
			row := func(step int, s *plastic.State3D) {
				x := s.BackStress(m.N)
				fmt.Fprintln(w, strings.Join([]string{strconv.Itoa(step),
					num(s.Eps[plastic.V11]), num(s.Sigma[plastic.V11] / f), num(s.EpsP[plastic.V11]), num(x[plastic.V11] / f), num(s.P),
					num(s.Eps[plastic.V12]), num(s.Sigma[plastic.V12] / f), num(s.EpsP[plastic.V12]), num(x[plastic.V12] / f)}, ","))
			}
			row(0, &s)
			if _, err := m.Run3D(cmd.Context(), &s, &path, &set, func(k int, s *plastic.State3D) { row(k+1, s) }); err != nil {
				w.Flush()
				return simulateError(err, p)
			}
			return nil
		},
	}
	c.Flags().StringVar(&pathFile, "path", "", "load history CSV (header strain, stress, or in 3d strain,shear_strain)")
	c.Flags().Float64Var(&increment, "increment", 0, "largest increment of the control quantity (0: 1e-5 strain, yield_stress/200 stress)")
	c.Flags().StringVar(&mode, "mode", "1d", "1d (uniaxial stress, exact) or 3d (J2 radial return, mixed control)")
	c.Flags().StringVar(&algorithm, "algorithm", "exact", "return mapping: exact or backward-euler")
	c.Flags().Float64Var(&tempIncrement, "temperature-increment", 1, "largest temperature increment, kelvin, of a temperature-dependent card's history")
	return c
}

// loadPath is a parsed --path file.
type loadPath struct {
	name    string
	columns []string
	rows    [][]float64
}

// readLoadPath parses a load history: the header names the control column
// and, for a temperature-dependent card (tabled), the temperature column.
func readLoadPath(name string, data []byte, mode string, tabled bool) (*loadPath, error) {
	first, _, _ := strings.Cut(strings.TrimPrefix(string(data), "\xef\xbb\xbf"), "\n")
	head := strings.Split(strings.TrimSpace(first), ",")
	for i := range head {
		head[i] = strings.TrimSpace(head[i])
	}
	h := strings.Join(head, ",")
	allowed := map[string]bool{"strain": true, "stress": true}
	if mode == "3d" {
		allowed = map[string]bool{"strain": true, "strain,shear_strain": true}
	}
	if tabled {
		allowed = map[string]bool{"strain,temperature": true, "stress,temperature": true}
	}
	if !allowed[h] {
		want := "strain or stress"
		switch {
		case tabled:
			want = "strain,temperature or stress,temperature (the card is temperature-dependent: each row needs its temperature, in the card's unit)"
		case mode == "3d":
			want = "strain, or strain,shear_strain (3d mode has no stress control)"
		case strings.Contains(h, "temperature"):
			want = "strain or stress (a temperature column needs a card with temperatures; this card holds one temperature)"
		}
		return nil, fmt.Errorf("%s:1: header %q: the header names one control column: %s", name, h, want)
	}
	rows, err := convert.ReadTable(name, data, head...)
	if err != nil {
		return nil, err
	}
	if len(rows) == 0 {
		return nil, fmt.Errorf("%s: no targets after the header", name)
	}
	return &loadPath{name: name, columns: head, rows: rows}, nil
}

// simulateError locates a driver failure in the path file: segment i is the
// target on line i+2.
func simulateError(err error, p *loadPath) error {
	var pe *plastic.PathError
	if errors.As(err, &pe) {
		return invalid("%s:%d: %s: %v", p.name, pe.Segment+2, p.columns[0], err)
	}
	return &exitError{code: exitInternal, err: err}
}

// simulateAnisothermal drives a temperature-dependent card along a history
// of (strain or stress, temperature) rows and prints the response with the
// temperature, in the card's units; a row the integrator cannot reach (a
// temperature outside the card's range, no convergence) is located at its
// line.
//
// n0 is the card as written (its temperatures in its unit), n the
// canonical card.
func simulateAnisothermal(ctx context.Context, w *bufio.Writer, n0, n *schema.Card, p *loadPath, increment, dT float64, set *plastic.Settings, f float64) error {
	units := n0.Units
	tb, err := convert.MaterialTable(n)
	if err != nil {
		return &exitError{code: exitInternal, err: err}
	}
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	control := plastic.StrainControl
	if p.columns[0] == "stress" {
		control = plastic.StressControl
		sy := math.Inf(1)
		for _, m := range tb.M {
			sy = math.Min(sy, m.SigmaY)
		}
		if increment == 0 {
			increment = sy / 200
		} else {
			increment *= f
		}
	} else if increment == 0 {
		increment = 1e-5
	}
	pts := make([]plastic.PointT, len(p.rows))
	for i, r := range p.rows {
		T, err := convert.KelvinFrom(r[1], units.Temperature)
		if err != nil {
			return invalid("%s:%d: temperature: %v", p.name, i+2, err)
		}
		if lo, hi := tb.T[0], tb.T[len(tb.T)-1]; !(T >= lo && T <= hi) {
			return invalid("%s:%d: temperature %s %s is outside the card's range %s to %s %s: matgate interpolates between the card's temperatures and does not extrapolate", p.name, i+2, num(r[1]), units.Temperature, num(n0.Temperatures[0]), num(n0.Temperatures[len(n0.Temperatures)-1]), units.Temperature)
		}
		v := r[0]
		if control == plastic.StressControl {
			v *= f
		}
		pts[i] = plastic.PointT{Value: v, T: T}
	}
	fromK := func(T float64) float64 {
		switch units.Temperature {
		case "C":
			return T - 273.15
		case "F":
			return T*1.8 - 459.67
		}
		return T
	}
	fmt.Fprintln(w, "step,strain,stress,plastic_strain,back_stress,accumulated_plastic_strain,temperature")
	step := 0
	row := func(s *plastic.StateT1D) {
		fmt.Fprintln(w, strings.Join([]string{strconv.Itoa(step), num(s.Eps), num(s.Sigma / f), num(s.EpsP), num(s.BackStress(tb.M[0].N) / f), num(s.P), num(fromK(s.T))}, ","))
		step++
	}
	s := plastic.StateT1D{T: pts[0].T}
	row(&s)
	for i, pt := range pts {
		if _, err := tb.RunT1D(ctx, &s, control, increment, dT, []plastic.PointT{pt}, set, row); err != nil {
			w.Flush()
			if errors.Is(err, plastic.ErrCanceled) {
				return &exitError{code: exitInternal, err: err}
			}
			return invalid("%s:%d: %s %s at temperature %s %s: %v", p.name, i+2, p.columns[0], num(p.rows[i][0]), num(p.rows[i][1]), units.Temperature, err)
		}
	}
	return nil
}
