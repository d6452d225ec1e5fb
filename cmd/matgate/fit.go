package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"matgate/convert"
	"matgate/convert/fit"
	"matgate/schema"
)

func newFitCmd(e *env) *cobra.Command {
	var (
		model, iso, unit, out, id, title, format string
		E, nu, tol                               float64
		engineering, force                       bool
	)
	c := &cobra.Command{
		Use:   "fit DATA.csv... --model prager|af|chaboche:N --stress-unit U --out CARD.yaml",
		Short: "Fit a card to uniaxial test data by least squares",
		Long: `fit calibrates the plasticity parameters of a card to uniaxial tests.
Each DATA file is one test as CSV with the header strain,stress (true values,
stress in --stress-unit; --engineering converts engineering values first),
in its recorded order from the virgin state: a monotonic curve or a
strain-controlled cyclic history. The reference integrator is driven along
every file's own strain history and the squared stress errors are
minimized.

The card (matgate.card/1) is written to --out with the data files' sha256 in
its source and the data attached as measured references, so that
'matgate verify CARD' checks the fit. The data files must lie in the card's
folder or below it. fit reports the RMS and max error, each parameter's
relative standard error, the Jacobian's condition, and warns when the data
cannot determine the parameters.

Exit 0 on a fit (warnings included), 2 on bad data or flags, 3 on an
internal error. A fit shows that a card reproduces its data; it does not
show fitness for design.`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if format != "text" && format != "json" {
				return &usageError{fmt.Errorf("--format %q: use text or json", format)}
			}
			m, err := fit.ParseModel(model, iso)
			if err != nil {
				return invalid("--model/--isotropic: %v", err)
			}
			f, err := convert.StressFactor(unit)
			if err != nil {
				return invalid("--stress-unit: %v (use one of %s)", err, strings.Join(convert.StressUnits, ", "))
			}
			if out == "" {
				return invalid("--out CARD.yaml is required")
			}
			if x := strings.ToLower(filepath.Ext(out)); x != ".yaml" && x != ".yml" {
				return invalid("--out %s: the card is written as YAML (.yaml or .yml)", out)
			}
			if _, err := os.Stat(out); err == nil && !force {
				return invalid("--out %s exists; raise the revision in a new file or pass --force to replace it", out)
			}
			if id == "" {
				id = slug(strings.TrimSuffix(filepath.Base(out), filepath.Ext(out)))
			}
			if !slugRE.MatchString(id) {
				return invalid("--id %q: a lower-case slug (a-z, 0-9, '.', '_', '-'), at most 64 characters", id)
			}
			if tol < 0 {
				return invalid("--tolerance %g: must be positive", tol)
			}
			cardDir := filepath.Dir(out)
			var (
				data    []fit.Data
				refs    []fitRef
				sources []string
				extra   = map[string][]byte{} // converted data files written beside the card
				names   = map[string]bool{}
			)
			for _, a := range args {
				b, err := os.ReadFile(a)
				if err != nil {
					return invalid("%v", err)
				}
				sum := sha256.Sum256(b)
				shown := filepath.Base(a) // the path relative to the card, or the bare name: no machine paths in the card
				if r, ok := below(cardDir, a); ok {
					shown = r
				}
				sources = append(sources, fmt.Sprintf("%s (sha256:%s)", filepath.ToSlash(shown), hex.EncodeToString(sum[:])))
				pts, err := convert.ReadCurve(a, b)
				if err != nil {
					return invalid("%v", err)
				}
				if engineering {
					if pts, err = convert.EngineeringToTrue(a, pts); err != nil {
						return invalid("--engineering: %v", err)
					}
				}
				name := slug(strings.TrimSuffix(filepath.Base(a), filepath.Ext(a)))
				for names[name] {
					name += "-2"
				}
				names[name] = true
				file := a
				if engineering {
					file = filepath.Join(cardDir, fmt.Sprintf("%s.%s.true.csv", id, name))
					extra[file] = curveCSV(pts)
				}
				rel, ok := below(cardDir, file)
				if !ok {
					return invalid("%s is not in the folder of --out %s or below it: verify reads reference files only there; write the card beside the data", a, out)
				}
				refs = append(refs, fitRef{name: name, file: filepath.ToSlash(rel)})
				si := make([][2]float64, len(pts))
				for i, p := range pts {
					si[i] = [2]float64{p[0], p[1] * f}
				}
				data = append(data, fit.Data{Name: a, Points: si})
			}
			npts := 0
			for _, d := range data {
				npts += len(d.Points)
			}
			fmt.Fprintf(e.stderr, "fitting %s to %d file(s), %d points...\n", m, len(data), npts)
			res, err := fit.Fit(cmd.Context(), data, fit.Options{Model: m, E: E * f, Nu: nu})
			if err != nil {
				if errors.Is(err, fit.ErrBadData) {
					return invalid("%v", err)
				}
				return &exitError{code: exitInternal, err: err}
			}
			if title == "" {
				title = fmt.Sprintf("Fitted %s card from %d uniaxial test file(s)", m, len(data))
			}
			src := "Fitted by matgate fit (" + m.String() + ", least squares on the reference integrator) to " + strings.Join(sources, ", ")
			if engineering {
				src += "; engineering values converted to true stress and strain"
			}
			card := fitCardYAML(res, fitCardInfo{id: id, title: title, source: src, unit: unit, f: f, refs: refs, tol: tol})
			// Write the converted data first: the card names them.
			for _, p := range sortedKeys(extra) {
				if err := writeFileAtomic(p, extra[p]); err != nil {
					return &exitError{code: exitInternal, err: err}
				}
			}
			if err := validateCard(out, card, cardDir); err != nil {
				return &exitError{code: exitInternal, err: fmt.Errorf("the fitted card is not valid (a bug): %w", err)}
			}
			if err := writeFileAtomic(out, card); err != nil {
				return &exitError{code: exitInternal, err: err}
			}
			if format == "json" {
				enc := json.NewEncoder(e.stdout)
				enc.SetIndent("", "  ")
				return enc.Encode(fitSummary(res, unit, f, out))
			}
			printFit(e, res, unit, f, out)
			return nil
		},
	}
	fl := c.Flags()
	fl.StringVar(&model, "model", "", "kinematic hardening: prager, af or chaboche:N (N Armstrong-Frederick terms)")
	fl.StringVar(&iso, "isotropic", "", "isotropic hardening: voce, or none (default)")
	fl.StringVar(&unit, "stress-unit", "", "stress unit of the data and of the card: "+strings.Join(convert.StressUnits, ", "))
	fl.Float64Var(&E, "youngs-modulus", 0, "Young's modulus in --stress-unit; absent: estimated from the initial slope of the first file (and reported)")
	fl.Float64Var(&nu, "poisson-ratio", 0.3, "Poisson ratio written to the card (uniaxial data cannot determine it)")
	fl.BoolVar(&engineering, "engineering", false, "the data are engineering stress and strain: convert to true values (up to the maximum engineering stress) and attach the converted files")
	fl.StringVar(&out, "out", "", "the card to write (YAML), in the data's folder or above it")
	fl.StringVar(&id, "id", "", "card id (default: from the --out file name)")
	fl.StringVar(&title, "title", "", "card title (default: names the model and the number of files)")
	fl.Float64Var(&tol, "tolerance", 0, "relative tolerance of the attached references (default: the profile's for measured curves)")
	fl.BoolVar(&force, "force", false, "replace an existing --out")
	fl.StringVar(&format, "format", "text", "output format: text or json")
	return c
}

var slugRE = regexp.MustCompile(`^[a-z0-9][a-z0-9._-]{0,63}$`)

// slug lower-cases s and replaces every run of other characters by '-'.
func slug(s string) string {
	var b strings.Builder
	dash := false
	for _, r := range strings.ToLower(s) {
		if r >= 'a' && r <= 'z' || r >= '0' && r <= '9' || r == '.' || r == '_' {
			b.WriteRune(r)
			dash = false
		} else if !dash && b.Len() > 0 {
			b.WriteByte('-')
			dash = true
		}
	}
	out := strings.TrimRight(b.String(), "-")
	if len(out) > 64 {
		out = out[:64]
	}
	if out == "" {
		out = "fitted"
	}
	return out
}

type fitRef struct{ name, file string }

type fitCardInfo struct {
	id, title, source, unit string
	f                       float64 // unit to Pa
	refs                    []fitRef
	tol                     float64
}

// fitCardYAML writes the fitted card. Numbers have 6 significant digits: a
// change of at most 5e-7 relative, far below any fit's error.
func fitCardYAML(r *fit.Result, in fitCardInfo) []byte {
	v := func(pa float64) string { return strconv.FormatFloat(pa/in.f, 'g', 6, 64) }
	n := func(x float64) string { return strconv.FormatFloat(x, 'g', 6, 64) }
	var b strings.Builder
	b.WriteString("# Written by matgate fit. A fit shows that the card reproduces its data;\n")
	b.WriteString("# it does not show fitness for design: defer to the applicable codes and\n")
	b.WriteString("# licensed engineers.\n")
	fmt.Fprintf(&b, "format: %s\nid: %s\nrevision: 1\ntitle: %s\nsource: %s\n", schema.Format, in.id, yq(in.title), yq(in.source))
	fmt.Fprintf(&b, "units: {stress: %s}\n", in.unit)
	fmt.Fprintf(&b, "elastic: {youngs_modulus: %s, poisson_ratio: %s}\n", v(r.Params.E), n(r.Nu))
	fmt.Fprintf(&b, "plasticity:\n  yield_stress: %s\n  kinematic:\n", v(r.Params.SigmaY))
	for _, t := range r.Params.Terms {
		if t.Linear() {
			fmt.Fprintf(&b, "    - {model: linear, plastic_modulus: %s}\n", v(t.C))
		} else {
			fmt.Fprintf(&b, "    - {model: armstrong_frederick, c: %s, gamma: %s}\n", v(t.C), n(t.Gamma))
		}
	}
	if r.Model.Voce {
		fmt.Fprintf(&b, "  isotropic: {model: voce, q: %s, b: %s}\n", v(r.Params.Iso.Q), n(r.Params.Iso.B))
	}
	b.WriteString("verification:\n  references:\n")
	for _, ref := range in.refs {
		fmt.Fprintf(&b, "    - {name: %s, kind: measured, file: %s", ref.name, yq(ref.file))
		if in.tol > 0 {
			fmt.Fprintf(&b, ", tolerance: {rel: %s}", n(in.tol))
		}
		b.WriteString("}\n")
	}
	return []byte(b.String())
}

// yq quotes s as a YAML double-quoted scalar (JSON string syntax is valid
// YAML).
func yq(s string) string {
	q, _ := json.Marshal(s)
	return string(q)
}

func curveCSV(pts [][2]float64) []byte {
	var b strings.Builder
	b.WriteString("strain,stress\n")
	for _, p := range pts {
		fmt.Fprintf(&b, "%s,%s\n", strconv.FormatFloat(p[0], 'g', -1, 64), strconv.FormatFloat(p[1], 'g', -1, 64))
	}
	return []byte(b.String())
}

// validateCard runs the card through the same decoding, plausibility and
// normalization as verify, reading references from dir.
func validateCard(name string, card []byte, dir string) error {
	doc, err := schema.Decode(name, card, nil)
	if err != nil {
		return err
	}
	c, ds := convert.Prepare(doc, &convert.Options{ReadFile: referenceReader(dir)})
	if c == nil {
		return ds
	}
	return nil
}

type fitJSON struct {
	Card        string             `json:"card"`
	Model       string             `json:"model"`
	Unit        string             `json:"stress_unit"`
	Parameters  map[string]float64 `json:"parameters"`
	RelStdErr   map[string]float64 `json:"relative_standard_error"`
	E           float64            `json:"youngs_modulus"`
	EEstimated  bool               `json:"youngs_modulus_estimated"`
	RMS         float64            `json:"rms_error"`
	Max         float64            `json:"max_error"`
	Peak        float64            `json:"peak_stress"`
	Cond        float64            `json:"jacobian_condition"`
	Iterations  int                `json:"iterations"`
	Evaluations int                `json:"evaluations"`
	Seconds     float64            `json:"seconds"`
	Warnings    []string           `json:"warnings"`
}

// fitValues returns the fitted parameters in the order of Model.Names, in
// the card's units.
func fitValues(r *fit.Result, f float64) []float64 {
	vals := []float64{r.Params.SigmaY / f}
	for _, t := range r.Params.Terms {
		if t.Linear() {
			vals = append(vals, t.C/f)
		} else {
			vals = append(vals, t.C/f, t.Gamma)
		}
	}
	if r.Model.Voce {
		vals = append(vals, r.Params.Iso.Q/f, r.Params.Iso.B)
	}
	return vals
}

func fitSummary(r *fit.Result, unit string, f float64, out string) fitJSON {
	j := fitJSON{Card: out, Model: r.Model.String(), Unit: unit, Parameters: map[string]float64{}, RelStdErr: map[string]float64{},
		E: r.Params.E / f, EEstimated: r.EEstimated, RMS: r.RMS / f, Max: r.Max / f, Peak: r.Peak / f, Cond: r.Cond,
		Iterations: r.Iterations, Evaluations: r.Evaluations, Seconds: r.Runtime.Seconds(), Warnings: append([]string{}, r.Warnings...)}
	vals := fitValues(r, f)
	for i, name := range r.Model.Names() {
		j.Parameters[name] = vals[i]
		if !isInf(r.RelStdErr[i]) {
			j.RelStdErr[name] = r.RelStdErr[i]
		}
	}
	return j
}

func isInf(x float64) bool { return x > 1e308 || x < -1e308 }

func printFit(e *env, r *fit.Result, unit string, f float64, out string) {
	w := e.stdout
	fmt.Fprintf(w, "fitted %s in %d iterations (%d integrator passes, %.3g s): %s\n", r.Model, r.Iterations, r.Evaluations, r.Runtime.Seconds(), r.Status)
	if r.EEstimated {
		fmt.Fprintf(w, "  youngs_modulus   %12.6g %s  (estimated from the initial slope, %d points; not fitted)\n", r.Params.E/f, unit, r.EPoints)
	} else {
		fmt.Fprintf(w, "  youngs_modulus   %12.6g %s  (given)\n", r.Params.E/f, unit)
	}
	vals := fitValues(r, f)
	for i, name := range r.Model.Names() {
		u := unit
		if strings.HasPrefix(name, "gamma") || name == "b" {
			u = ""
		}
		se := "undetermined"
		if !isInf(r.RelStdErr[i]) {
			se = fmt.Sprintf("+-%.2g%%", 100*r.RelStdErr[i])
		}
		fmt.Fprintf(w, "  %-16s %12.6g %-4s (%s)\n", name, vals[i], u, se)
	}
	fmt.Fprintf(w, "  error: rms %.4g %s, max %.4g %s (%.3g%% and %.3g%% of the peak stress %.4g %s)\n",
		r.RMS/f, unit, r.Max/f, unit, 100*r.RMS/r.Peak, 100*r.Max/r.Peak, r.Peak/f, unit)
	fmt.Fprintf(w, "  Jacobian condition (log parameters): %.3g\n", r.Cond)
	for _, fs := range r.Files {
		kind := "monotonic"
		if fs.Cyclic {
			kind = fmt.Sprintf("cyclic, strain amplitude %.4g", fs.Amplitude)
		}
		fmt.Fprintf(w, "  %s: %d points, %s: rms %.4g %s, max %.4g %s\n", fs.Name, fs.Points, kind, fs.RMS/f, unit, fs.Max/f, unit)
	}
	for _, x := range r.Warnings {
		fmt.Fprintf(w, "warning: %s\n", x)
	}
	fmt.Fprintf(w, "wrote %s; check it with: matgate verify %s\n", out, out)
	fmt.Fprintln(w, "A fit is not fitness for design: defer to the applicable codes and licensed engineers.")
}

// below returns the path of file relative to dir when file is in dir or
// below it. Both are made absolute first, so that a relative data path and
// an absolute --out (or the reverse) compare as the same tree.
func below(dir, file string) (string, bool) {
	ad, err1 := filepath.Abs(dir)
	af, err2 := filepath.Abs(file)
	if err1 != nil || err2 != nil {
		return "", false
	}
	r, err := filepath.Rel(ad, af)
	if err != nil || r == ".." || strings.HasPrefix(r, ".."+string(filepath.Separator)) || filepath.IsAbs(r) {
		return "", false
	}
	return r, true
}
