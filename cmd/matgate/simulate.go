package main

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"matgate/checks/plastic"
	"matgate/convert"
)

func newSimulateCmd(e *env) *cobra.Command {
	var (
		pathFile, mode, algorithm string
		increment                 float64
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
control (uniaxial stress, or tension-torsion).`,
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
			m, err := convert.Material(l.card)
			if err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			data, err := os.ReadFile(pathFile)
			if err != nil {
				return invalid("--path: %v", err)
			}
			p, err := readLoadPath(pathFile, data, mode)
			if err != nil {
				return invalid("%v", err)
			}
			w := bufio.NewWriter(e.stdout)
			defer w.Flush()
			num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
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
	return c
}

// loadPath is a parsed --path file.
type loadPath struct {
	name    string
	columns []string
	rows    [][]float64
}

// readLoadPath parses a load history: the header names the control column.
func readLoadPath(name string, data []byte, mode string) (*loadPath, error) {
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
	if !allowed[h] {
		want := "strain or stress"
		if mode == "3d" {
			want = "strain, or strain,shear_strain (3d mode has no stress control)"
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
