package main

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"crosspec/dynsys"
	"crosspec/ulam"
	"crosspec/ulam/galerkin"
)

func init() { register(ulamCommand) }

var ulamCommand = &command{
	name:    "ulam",
	args:    "SYSTEM",
	summary: "Ulam path alone: transfer matrices on grids of growing size and their leading spectrum",
	details: `For each grid size the transfer matrix P_ij (the fraction of cell i that the
map sends into cell j, weighted by exp(beta a)) is built, restricted to the
cells that carry the dynamics, and its leading eigenvalues are computed
(from the irreducible diagonal blocks of the matrix, each solved alone: a
matrix on a whole grid, --restrict none, is mostly transient cells).
1D maps are assembled exactly from their monotone laps; 2D maps from the
images of the cells' two triangles under the affine map through their
corners' images (exact for piecewise-affine maps), or from --points test
points per cell when --points is given (faster, but with a counting error
that does not shrink with the cells); maps of dimension d >= 3 from test
points (16 by default).

--export and --density write the matrix and the leading density of the last
(largest) grid. The Matrix Market file holds P with rows = source cells; the
transfer operator acting on densities is its transpose.`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		params := paramFlag{}
		fs.Var(params, "param", "override a parameter, NAME=VALUE (repeatable)")
		cells := fs.String("cells", "1024,4096", "comma-separated cell counts, one run each")
		grids := fs.String("grid", "", "comma-separated exact grid shapes such as 1024x512 (overrides --cells)")
		points := fs.Int("points", 0, "test points per cell for maps of dimension d >= 2 (0: piecewise-affine images of the cells in 2D, 16 points in d >= 3)")
		eigs := fs.Int("eigs", 1, "number of leading eigenvalues to report")
		beta := fs.Float64("beta", 0, "inverse temperature beta of the weight exp(beta a)")
		quantity := fs.String("quantity", string(dynsys.Eigenvalues), "quantity to estimate: "+quantityNames())
		format := fs.String("format", formatTable, "output format: table, csv, json, latex or markdown")
		tol := fs.Float64("tol", 1e-12, "relative residual of the eigen-solver")
		restrict := fs.String("restrict", "auto", "cells kept: auto, none, survivors, cycles or recurrent")
		export := fs.String("export", "", "write the last matrix in Matrix Market format to `FILE.mtx`")
		density := fs.String("density", "", "write the leading density of the last grid to `FILE.csv`")
		quiet := fs.Bool("quiet", false, "no progress messages on a terminal")
		degree := fs.Int("degree", 0, "polynomial degree per cell (0 = plain Ulam; 1D maps)")
		basis := fs.String("basis", "cells", "basis: cells (piecewise polynomials) or chebyshev (global, 1D; --cells then counts Chebyshev points)")
		return func(args []string) int {
			if err := checkFormat(*format); err != nil {
				return e.fail(err)
			}
			q, err := dynsys.ParseQuantity(*quantity)
			if err != nil {
				return e.fail(usagef("--quantity: %v", err))
			}
			restriction, err := ulam.ParseRestriction(*restrict)
			if err != nil {
				return e.fail(usagef("--restrict %q: expected auto, none, survivors, cycles or recurrent", *restrict))
			}
			if *eigs < 1 || *points < 0 {
				return e.fail(usagef("--eigs must be at least 1, --points at least 0"))
			}
			if !(*tol > 0 && *tol < 1) {
				return e.fail(usagef("--tol %g: expected a number in (0, 1)", *tol))
			}
			if math.IsNaN(*beta) || math.IsInf(*beta, 0) {
				return e.fail(usagef("--beta: expected a finite number"))
			}
			s, err := openSystem(args, params)
			if err != nil {
				return e.fail(err)
			}
			runs, err := parseRuns(*cells, *grids, s.Dim())
			if err != nil {
				return e.fail(err)
			}
			switch {
			case q == dynsys.Mean && !s.HasObservable():
				return e.fail(usagef("--quantity mean: system %s defines no observable", s.Name))
			case (q == dynsys.Lyapunov || q == dynsys.Dimension) && s.Dim() != 1:
				return e.fail(usagef("--quantity %s: defined for 1D maps only (%s has dimension %d)", q, s.Name, s.Dim()))
			case (q == dynsys.Pressure || q == dynsys.Eigenvalues) && *beta != 0 && !s.HasObservable():
				return e.fail(usagef("--beta: system %s defines no observable to weight", s.Name))
			}
			disc, err := parseDiscretization(*basis, *degree)
			if err != nil {
				return e.fail(err)
			}
			progress := !*quiet && isTerminal(e.stderr)
			report := ulamReport{System: s.Name, Quantity: string(q), Beta: *beta}
			ctx, stop := interruptContext()
			defer stop()
			// interrupted reports what Ctrl-C cut short: the grids
			// finished before, without the files of the last grid.
			interrupted := func(label string) int {
				where := "during the run on " + label
				if len(report.Runs) == 0 {
					return e.fail(interruptedError(where, false))
				}
				report.Interrupted = where
				if *export != "" || *density != "" {
					where += " (so --export and --density, of the last grid, were not written)"
				}
				if code := writeUlamReport(e, report, *format, *eigs); code != exitOK {
					return code
				}
				return e.fail(interruptedError(where, true))
			}
			if !disc.plain() {
				if *export != "" || *grids != "" {
					return e.fail(usagef("--export and --grid apply to the plain Ulam matrix (--degree 0, --basis cells)"))
				}
				report.Basis = disc.String()
				var last galerkin.Result
				for i, r := range runs {
					sv := &ulam.SolveSettings{Eigenvalues: *eigs, Tol: *tol, Density: *density != "" && i == len(runs)-1}
					run, res, err := runGalerkinUntil(ctx, s, q, disc, r.cells, *beta, sv)
					if errors.Is(err, errStopped) {
						return interrupted(fmt.Sprintf("size %d", r.cells))
					}
					if err != nil {
						return e.fail(err)
					}
					report.Runs = append(report.Runs, run)
					last = res
				}
				if *density != "" {
					if err := writeGalerkinDensity(*density, s, last); err != nil {
						return e.fail(err)
					}
				}
				return writeUlamReport(e, report, *format, *eigs)
			}
			var last ulam.Result
			for i, r := range runs {
				set := &ulam.Settings{Cells: r.cells, Shape: r.shape, Points: *points, Beta: *beta, Restrict: restriction}
				sv := &ulam.SolveSettings{Eigenvalues: *eigs, Tol: *tol, Density: *density != "" && i == len(runs)-1}
				if progress {
					fmt.Fprintf(e.stderr, "%s: grid %s ...", e.cmd, r.label(s))
				}
				start := time.Now()
				res, err := whileRunning(ctx, func() (ulam.Result, error) { return ulam.ComputeContext(ctx, s, q, set, sv) })
				elapsed := time.Since(start).Seconds()
				if progress {
					fmt.Fprintf(e.stderr, " %.3g s\n", elapsed)
				}
				if errors.Is(err, errStopped) {
					return interrupted(r.label(s))
				}
				if err != nil {
					return e.fail(&numericalError{err})
				}
				report.Runs = append(report.Runs, newUlamRun(res, elapsed))
				last = res
			}
			if *export != "" {
				if err := exportMatrix(*export, last.Matrix, s, q, *beta); err != nil {
					return e.fail(err)
				}
			}
			if *density != "" {
				if err := writeDensity(*density, last); err != nil {
					return e.fail(err)
				}
			}
			return writeUlamReport(e, report, *format, *eigs)
		}
	},
}

func writeUlamReport(e *env, report ulamReport, format string, eigs int) int {
	if format == formatJSON {
		if err := writeJSON(e.stdout, report); err != nil {
			return e.fail(err)
		}
		return exitOK
	}
	if err := report.grid(eigs).render(e.stdout, format); err != nil {
		return e.fail(err)
	}
	notes := []string{ulamNote}
	if (report.Quantity == string(dynsys.DecayRate) || eigs > 1) && report.Basis != "Chebyshev basis" {
		basis := "plain Ulam"
		if report.Basis != "" {
			basis = report.Basis + " on cells"
		}
		notes = append(notes, basis+" approximates the transfer operator on functions with jumps: its eigenvalues after λ0 can differ from those on analytic functions, which cycle expansions give (--basis chebyshev resolves those for maps with analytic full branches).")
	}
	writeLines(e.stdout, format, notes)
	return exitOK
}

// ulamNote tells how to read the table of ulam.
const ulamNote = "Each row is the estimate on one grid, not extrapolated: its change from grid to grid shows the discretization error, which crosspec check extrapolates with an (estimated, not rigorous) error bar."

// writeGalerkinDensity writes the leading density of a higher-order basis
// at 1000 equally spaced points.
func writeGalerkinDensity(path string, s *dynsys.System, res galerkin.Result) error {
	if res.Density == nil {
		return &numericalError{fmt.Errorf("no density was computed")}
	}
	f, err := os.Create(path)
	if err != nil {
		return usagef("--density: %v", err)
	}
	w := bufio.NewWriter(f)
	fmt.Fprintf(w, "%s,density\n", s.Vars[0])
	const points = 1000
	for i := range points {
		x := s.Lo[0] + (float64(i)+0.5)/points*(s.Hi[0]-s.Lo[0])
		fmt.Fprintf(w, "%s,%s\n", strconv.FormatFloat(x, 'g', -1, 64), strconv.FormatFloat(res.Density.At(x), 'g', -1, 64))
	}
	if err := flushClose(w, f); err != nil {
		return usagef("--density: %v", err)
	}
	return nil
}

func quantityNames() string {
	names := make([]string, len(dynsys.Quantities))
	for i, q := range dynsys.Quantities {
		names[i] = string(q)
	}
	return strings.Join(names, ", ")
}

// ulamRun is one grid of the --cells list: a cell count or an exact shape.
type ulamRun struct {
	cells int
	shape []int
}

func (r ulamRun) label(s *dynsys.System) string {
	if r.shape == nil {
		return fmt.Sprintf("%d cells", r.cells)
	}
	parts := make([]string, len(r.shape))
	for i, m := range r.shape {
		parts[i] = strconv.Itoa(m)
	}
	return strings.Join(parts, "x")
}

// maxCells is the largest grid the Ulam matrices index (32-bit indices).
const maxCells = math.MaxInt32

// parseRuns reads --cells (a list of counts) or --grid (a list of shapes
// M1xM2x…, one count a dimension).
func parseRuns(cells, grids string, dim int) ([]ulamRun, error) {
	var runs []ulamRun
	if grids != "" {
		for _, g := range strings.Split(grids, ",") {
			parts := strings.Split(strings.TrimSpace(g), "x")
			if len(parts) != dim {
				return nil, usagef("--grid %q: expected %d counts separated by x for a %d-dimensional system", g, dim, dim)
			}
			shape := make([]int, dim)
			total := 1.0
			for i, p := range parts {
				m, err := strconv.Atoi(p)
				if err != nil || m < 1 {
					return nil, usagef("--grid %q: %q is not a positive count", g, p)
				}
				shape[i] = m
				total *= float64(m)
			}
			if total > maxCells {
				return nil, usagef("--grid %q: %.3g cells, more than the %d the matrix indices hold", g, total, maxCells)
			}
			runs = append(runs, ulamRun{shape: shape})
		}
		return runs, nil
	}
	for _, c := range strings.Split(cells, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(c))
		if err != nil || n < 1 {
			return nil, usagef("--cells %q: expected positive cell counts separated by commas", cells)
		}
		if n > maxCells {
			return nil, usagef("--cells %q: %d cells, more than the %d the matrix indices hold", cells, n, maxCells)
		}
		runs = append(runs, ulamRun{cells: n})
	}
	return runs, nil
}

// ulamReport is the JSON document of DESIGN.md section 6.
type ulamReport struct {
	System   string        `json:"system"`
	Quantity string        `json:"quantity"`
	Basis    string        `json:"basis,omitempty"`
	Beta     float64       `json:"beta"`
	Runs     []ulamRunJSON `json:"runs"`
	// Interrupted says where Ctrl-C cut the run short; absent otherwise.
	Interrupted string `json:"interrupted,omitempty"`
}

type ulamRunJSON struct {
	Cells          int           `json:"cells"`
	GridCells      int           `json:"grid_cells"`
	Shape          []int         `json:"shape"`
	NNZ            int           `json:"nnz"`
	Eigenvalues    []jsonComplex `json:"eigenvalues"`
	Residuals      []float64     `json:"residuals"`
	Value          float64       `json:"value"`
	Seconds        float64       `json:"seconds"`
	MatVecs        int           `json:"matvecs"`
	ExcludedLength float64       `json:"excluded_length"`
	// Floor is the round-off floor of Value where it is estimated (the
	// Chebyshev basis: galerkin.Result.Floor).
	Floor float64 `json:"floor,omitempty"`
}

func newUlamRun(res ulam.Result, seconds float64) ulamRunJSON {
	m := res.Matrix
	run := ulamRunJSON{
		Cells:          m.Dim(),
		GridCells:      m.GridCells,
		Shape:          m.Grid.Shape,
		NNZ:            m.NNZ(),
		Residuals:      res.Residuals,
		Value:          res.Value,
		Seconds:        seconds,
		MatVecs:        res.Stats.MatVecs,
		ExcludedLength: m.ExcludedLength,
	}
	for _, z := range res.Eigenvalues {
		run.Eigenvalues = append(run.Eigenvalues, jsonComplex{real(z), imag(z)})
	}
	return run
}

// grid lays the runs out as a table; seconds are left to the JSON output
// so that the tables of two runs compare equal.
func (r ulamReport) grid(eigs int) *grid {
	header := []string{"grid cells", "cells kept", "nonzeros", r.Quantity}
	if r.Basis != "" {
		header[0], header[1] = "cells or points", "matrix size"
	}
	for k := range eigs {
		header = append(header, fmt.Sprintf("eigenvalue %d", k))
	}
	g := &grid{header: header}
	for _, run := range r.Runs {
		row := []string{strconv.Itoa(run.GridCells), strconv.Itoa(run.Cells), strconv.Itoa(run.NNZ), fmt.Sprintf("%.12g", run.Value)}
		for k := range eigs {
			cell := ""
			if k < len(run.Eigenvalues) {
				cell = complexText(complex(run.Eigenvalues[k].Re, run.Eigenvalues[k].Im))
			}
			row = append(row, cell)
		}
		g.add(row...)
	}
	return g
}

func exportMatrix(path string, m *ulam.Matrix, s *dynsys.System, q dynsys.Quantity, beta float64) error {
	f, err := os.Create(path)
	if err != nil {
		return usagef("--export: %v", err)
	}
	werr := m.WriteMatrixMarket(f, fmt.Sprintf("system %s, quantity %s, beta %g", s.Name, q, beta))
	if cerr := f.Close(); werr == nil {
		werr = cerr
	}
	if werr != nil {
		return usagef("--export: %v", werr)
	}
	return nil
}

// writeDensity writes the leading density: one line a kept cell, its
// centre's coordinates and the density.
func writeDensity(path string, res ulam.Result) error {
	if res.Density == nil {
		if res.DensityErr != nil {
			return &numericalError{fmt.Errorf("no density: %w", res.DensityErr)}
		}
		return &numericalError{fmt.Errorf("no density was computed")}
	}
	f, err := os.Create(path)
	if err != nil {
		return usagef("--density: %v", err)
	}
	w := bufio.NewWriter(f)
	m := res.Matrix
	d := m.Grid.Dim()
	for k := range d {
		fmt.Fprintf(w, "x%d,", k+1)
	}
	fmt.Fprintln(w, "density")
	centre := make([]float64, d)
	for i, cell := range m.Cells {
		m.Grid.CenterTo(centre, cell)
		for _, c := range centre {
			w.WriteString(strconv.FormatFloat(c, 'g', -1, 64))
			w.WriteByte(',')
		}
		w.WriteString(strconv.FormatFloat(res.Density[i], 'g', -1, 64))
		w.WriteByte('\n')
	}
	if err := flushClose(w, f); err != nil {
		return usagef("--density: %v", err)
	}
	return nil
}

// flushClose flushes w and closes f, its file, and returns the first error.
func flushClose(w *bufio.Writer, f *os.File) error {
	err := w.Flush()
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	return err
}
