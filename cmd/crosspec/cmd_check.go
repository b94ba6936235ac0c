package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"gonum.org/v1/plot/vg/draw"

	"crosspec/compare"
	"crosspec/cycles"
	"crosspec/dynsys"
	"crosspec/ulam"
	"crosspec/ulam/galerkin"
)

func init() { register(checkCommand) }

var checkCommand = &command{
	name:    "check",
	args:    "SYSTEM",
	summary: "both paths side by side: convergence, extrapolation, error bars, verdict, advice",
	details: `Runs the Ulam path on grids of growing size and the cycle expansion at growing
cycle length, puts both sequences side by side, extrapolates each with an error
estimate drawn from its observed convergence, and says whether the two agree:
"agree" when they differ by at most 2 combined errors, "disagree" beyond 5,
"inconclusive" in between. It also recommends the shortest cycle length whose
estimated error is below --tol, and the partition size Ulam would need.

--methods chooses the paths: ulam, galerkin (a higher-order basis for 1D
maps, set by --basis, --degree and --galerkin-sizes) and cycles, at least
two. Each path that is run is compared with the cycle expansion; without
cycles (--methods ulam,galerkin, for maps whose cycles cannot be searched,
such as the Gauss map's infinitely many laps) no cycle search is made,
Ulam's method is compared with the Galerkin basis instead, and the advice
is the partition size Ulam would need.

The error bars are estimates, not rigorous bounds: read "agree" as "consistent
within the estimated errors" and look at the table before trusting a number.

--out DIR writes the report in every format, the plots (convergence, spectrum,
and for 1D maps the density) and a manifest that records what is needed to
reproduce the run.`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		params := paramFlag{}
		fs.Var(params, "param", "override a parameter, NAME=VALUE (repeatable)")
		quantity := fs.String("quantity", "", "quantity: "+quantityNames()+" (default escape-rate for open systems, lyapunov for closed 1D maps, eigenvalues otherwise)")
		cells := fs.String("cells", "", "comma-separated Ulam cell counts (default 1024 doubling to 262144 in 1D, to 65536 in 2D)")
		points := fs.Int("points", 0, "test points per cell for maps of dimension d >= 2 (0: piecewise-affine images of the cells in 2D, 16 points in d >= 3)")
		opts := checkOptions{}
		fs.IntVar(&opts.expand.maxLen, "max-len", 0, "longest cycle length (default 12 in 1D, 8 otherwise)")
		fs.StringVar(&opts.expand.cycleFile, "cycles", "", "read the cycles from `FILE` instead of searching")
		function := fs.String("expansion", "determinant", "cycle expansion: determinant, zeta or factorized (1D)")
		fs.Float64Var(&opts.beta, "beta", 0, "β of the weight exp(β a(x))")
		fs.IntVar(&opts.eigs, "eigs", 3, "eigenvalues per path for quantity eigenvalues and for the spectrum plot")
		fs.Float64Var(&opts.tol, "tol", compare.DefaultTolerance, "tolerance for the truncation advice")
		format := fs.String("format", formatTable, "output format: table, csv, json, latex or markdown")
		fs.StringVar(&opts.plot, "plot", "", "write the convergence plot to `FILE` (.svg or .png)")
		fs.StringVar(&opts.outDir, "out", "", "write the report, plots and manifest into `DIR`")
		quiet := fs.Bool("quiet", false, "no progress indicator")
		methods := fs.String("methods", "ulam,cycles", "paths to run and compare: ulam, galerkin, cycles (at least two)")
		degree := fs.Int("degree", 6, "galerkin: polynomial degree per cell")
		basis := fs.String("basis", "cells", "galerkin: cells (piecewise polynomials) or chebyshev (global)")
		gsizes := fs.String("galerkin-sizes", "", "galerkin: increasing cell counts (default 2,4,8,16,32) or Chebyshev sizes (default 8,12,...,40), evenly stepped or doubling")
		return func(args []string) int {
			if err := checkFormat(*format); err != nil {
				return e.fail(err)
			}
			var err error
			if opts.methods, err = parseMethods(*methods); err != nil {
				return e.fail(err)
			}
			if opts.disc, err = parseDiscretization(*basis, *degree); err != nil {
				return e.fail(err)
			}
			if opts.galerkinSizes, err = parseSizes(*gsizes, opts.disc); err != nil {
				return e.fail(err)
			}
			if opts.plot != "" {
				if _, err := plotFormat(opts.plot); err != nil {
					return e.fail(err)
				}
			}
			if opts.expand.function, err = parseExpansion(*function); err != nil {
				return e.fail(err)
			}
			if !(opts.tol > 0) || *points < 0 || opts.eigs < 1 {
				return e.fail(usagef("--tol and --eigs must be positive, --points at least 0"))
			}
			s, err := openSystem(args, params)
			if err != nil {
				return e.fail(err)
			}
			if opts.quantity, err = defaultQuantity(s, *quantity); err != nil {
				return e.fail(err)
			}
			if opts.runs, err = parseRuns(defaultCells(s, *cells), "", s.Dim()); err != nil {
				return e.fail(err)
			}
			if *cells == "" {
				opts.nnzBudget = defaultNNZBudget
			}
			if opts.expand.maxLen == 0 {
				opts.expand.maxLen = 12
				if s.Dim() > 1 {
					opts.expand.maxLen = 8
				}
			}
			if opts.expand.maxLen < 1 {
				return e.fail(usagef("--max-len %d: expected a positive length", opts.expand.maxLen))
			}
			opts.points = *points
			opts.format = *format
			opts.progress = !*quiet && isTerminal(e.stderr)
			ctx, stop := interruptContext()
			defer stop()
			return runCheckCommand(ctx, e, s, opts, append([]string{"crosspec", "check"}, args...))
		}
	},
}

// parseMethods reads --methods: a set of at least two of ulam, galerkin
// and cycles.
func parseMethods(list string) (map[string]bool, error) {
	set := map[string]bool{}
	for _, m := range strings.Split(list, ",") {
		m = strings.TrimSpace(m)
		switch m {
		case "ulam", "galerkin", "cycles":
			set[m] = true
		default:
			return nil, usagef("--methods %q: expected a comma-separated list of ulam, galerkin and cycles", list)
		}
	}
	if len(set) < 2 {
		return nil, usagef("--methods %q: name at least two paths to compare", list)
	}
	return set, nil
}

// parseSizes reads --galerkin-sizes, with defaults by basis.
func parseSizes(list string, d discretization) ([]int, error) {
	if list == "" {
		if d.basis == galerkin.Chebyshev {
			return []int{8, 12, 16, 20, 24, 28, 32, 36, 40}, nil
		}
		return []int{2, 4, 8, 16, 32}, nil
	}
	var sizes []int
	for _, f := range strings.Split(list, ",") {
		n, err := strconv.Atoi(strings.TrimSpace(f))
		if err != nil || n < 1 || (len(sizes) > 0 && n <= sizes[len(sizes)-1]) {
			return nil, usagef("--galerkin-sizes %q: expected increasing positive counts separated by commas", list)
		}
		sizes = append(sizes, n)
	}
	return sizes, nil
}

// checkOptions are the settings of one comparison.
type checkOptions struct {
	methods       map[string]bool
	disc          discretization
	galerkinSizes []int
	quantity      dynsys.Quantity
	runs          []ulamRun
	nnzBudget     int // default grids stop before a matrix this large; 0: no limit
	points        int
	beta          float64
	eigs          int
	tol           float64
	expand        expandOptions
	format        string
	plot          string
	outDir        string
	progress      bool
}

func defaultQuantity(s *dynsys.System, name string) (dynsys.Quantity, error) {
	if name != "" {
		q, err := dynsys.ParseQuantity(name)
		if err != nil {
			return "", usagef("--quantity: %v", err)
		}
		return q, nil
	}
	switch {
	case !s.Closed:
		return dynsys.EscapeRate, nil
	case s.Dim() == 1:
		return dynsys.Lyapunov, nil
	}
	return dynsys.Eigenvalues, nil
}

// defaultNNZBudget bounds the matrices of the default grids: 2e7 nonzeros,
// about 0.5 GB at the assembly's peak of 24 bytes a nonzero. Maps with
// infinitely many laps (the Gauss map) have rows that fill up near the
// accumulation point, and their nonzeros grow like N^1.5.
const defaultNNZBudget = 20_000_000

func defaultCells(s *dynsys.System, cells string) string {
	if cells != "" {
		return cells
	}
	last := 18
	if s.Dim() > 1 {
		last = 16
	}
	var list []string
	for k := 10; k <= last; k++ {
		list = append(list, strconv.Itoa(1<<k))
	}
	return strings.Join(list, ",")
}

// checkResult is the outcome of both paths and their comparison.
type checkResult struct {
	system   *dynsys.System
	opts     checkOptions
	ulamRuns []ulamRunJSON
	ulamStop string // why the default grids stopped early
	// interrupted says where Ctrl-C cut the run short ("" when it did
	// not): the report holds the work finished before.
	interrupted string
	ulamLast    ulam.Result
	ulamEst     compare.Estimate
	expansion   cycles.QuantityResult
	info        cycleInfo
	cyclesEst   compare.Estimate
	comparison  compare.Comparison
	advice      compare.Advice
	seconds     map[string]float64

	// The higher-order basis, when --methods names galerkin.
	galerkinRuns       []ulamRunJSON
	galerkinLast       galerkin.Result
	galerkinEst        compare.Estimate
	galerkinComparison compare.Comparison
}

// galerkinValues returns the sizes and the estimates of the higher-order
// basis.
func (r *checkResult) galerkinValues() ([]int, []float64) {
	sizes := make([]int, len(r.galerkinRuns))
	values := make([]float64, len(r.galerkinRuns))
	for i, run := range r.galerkinRuns {
		sizes[i], values[i] = run.GridCells, run.Value
	}
	return sizes, values
}

// ulamValues returns the grid sizes and the Ulam estimates.
func (r *checkResult) ulamValues() ([]int, []float64) {
	cells := make([]int, len(r.ulamRuns))
	values := make([]float64, len(r.ulamRuns))
	for i, run := range r.ulamRuns {
		cells[i], values[i] = run.GridCells, run.Value
	}
	return cells, values
}

// cycleValues returns the truncation lengths, the cycle estimates and
// their round-off floors.
func (r *checkResult) cycleValues() ([]int, []float64, []float64) {
	orders := make([]int, len(r.expansion.Orders))
	values := make([]float64, len(r.expansion.Orders))
	floors := make([]float64, len(r.expansion.Orders))
	for i, o := range r.expansion.Orders {
		orders[i], values[i], floors[i] = o.MaxLen, o.Value, o.Floor
	}
	return orders, values, floors
}

// runCheck runs both paths and compares them.
func runCheck(ctx context.Context, e *env, s *dynsys.System, opts checkOptions) (*checkResult, error) {
	if err := checkQuantity(s, opts.quantity); err != nil {
		return nil, err
	}
	if (opts.quantity == dynsys.Lyapunov) && s.Dim() != 1 {
		return nil, usagef("quantity lyapunov is compared for 1D maps only; %s has dimension %d", s.Name, s.Dim())
	}
	if opts.methods["cycles"] && opts.expand.cycleFile == "" && s.Dim() == 1 {
		// Say it before the other paths run, not after.
		if ls, err := s.Laps(nil); err == nil && len(ls.Laps) > cycles.MaxSymbols {
			return nil, usagef("%s has %d laps, more than the %d symbols a cycle itinerary can spell, so its cycles cannot be searched; compare Ulam's method with a Galerkin basis instead (--methods ulam,galerkin)",
				s.Name, len(ls.Laps), cycles.MaxSymbols)
		}
	}
	r := &checkResult{system: s, opts: opts, seconds: map[string]float64{}}
	start := time.Now()
	solve := &ulam.SolveSettings{Eigenvalues: 1, Density: s.Dim() == 1}
	if opts.quantity == dynsys.Eigenvalues || opts.quantity == dynsys.DecayRate {
		solve.Eigenvalues = max(opts.eigs, 2)
	}
	runs := opts.runs
	if !opts.methods["ulam"] {
		runs = nil
	}
	for i, run := range runs {
		if ctx.Err() != nil {
			r.interrupted = "before the Ulam run on " + run.label(s)
			break
		}
		if k := len(r.ulamRuns); opts.nnzBudget > 0 && k >= 2 {
			// The nonzeros grow by about the same factor from grid to grid.
			a, b := r.ulamRuns[k-2].NNZ, r.ulamRuns[k-1].NNZ
			if next := float64(b) * float64(b) / float64(max(a, 1)); next > float64(opts.nnzBudget) {
				r.ulamStop = fmt.Sprintf("the default grids stop at %s: the next would need about %.2g nonzeros, more than %.2g (--cells goes on)",
					runs[i-1].label(s), next, float64(opts.nnzBudget))
				break
			}
		}
		if opts.progress {
			fmt.Fprintf(e.stderr, "\rUlam: %s (%d of %d)\033[K", run.label(s), i+1, len(opts.runs))
		}
		t0 := time.Now()
		res, err := whileRunning(ctx, func() (ulam.Result, error) {
			return ulam.ComputeContext(ctx, s, opts.quantity, &ulam.Settings{Cells: run.cells, Shape: run.shape, Points: opts.points, Beta: opts.beta}, solve)
		})
		if errors.Is(err, errStopped) {
			r.interrupted = "during the Ulam run on " + run.label(s)
			break
		}
		if err != nil {
			if opts.progress {
				fmt.Fprint(e.stderr, "\r\033[K")
			}
			return nil, &numericalError{fmt.Errorf("Ulam path, %s: %w", run.label(s), err)}
		}
		r.ulamRuns = append(r.ulamRuns, newUlamRun(res, time.Since(t0).Seconds()))
		r.ulamLast = res
	}
	if opts.progress {
		fmt.Fprint(e.stderr, "\r\033[K")
	}
	r.seconds["ulam"] = time.Since(start).Seconds()

	if opts.methods["galerkin"] && r.interrupted == "" {
		start = time.Now()
		// As many eigenvalues as the spectrum plot shows (--eigs): the
		// matrices are small.
		gsolve := &ulam.SolveSettings{Eigenvalues: max(solve.Eigenvalues, opts.eigs)}
		for i, size := range opts.galerkinSizes {
			if opts.progress {
				fmt.Fprintf(e.stderr, "\r%s: size %d (%d of %d)\033[K", opts.disc, size, i+1, len(opts.galerkinSizes))
			}
			run, res, err := runGalerkinUntil(ctx, s, opts.quantity, opts.disc, size, opts.beta, gsolve)
			if errors.Is(err, errStopped) {
				r.interrupted = fmt.Sprintf("during the Galerkin run of size %d", size)
				break
			}
			if err != nil {
				return nil, err
			}
			r.galerkinRuns = append(r.galerkinRuns, run)
			r.galerkinLast = res
		}
		if opts.progress {
			fmt.Fprint(e.stderr, "\r\033[K")
		}
		r.seconds["galerkin"] = time.Since(start).Seconds()
	}

	if !opts.methods["cycles"] {
		r.compareWithoutCycles()
		return r, nil
	}

	if r.interrupted == "" {
		start = time.Now()
		expandOpts := opts.expand
		expandOpts.quantity, expandOpts.beta, expandOpts.eigs, expandOpts.progress = opts.quantity, opts.beta, opts.eigs, opts.progress
		res, info, err := runExpansion(ctx, e, s, expandOpts)
		if info.interruptedAt > 0 {
			// The lengths searched in full are expanded; with none,
			// the cycle path has no estimate.
			r.interrupted = info.interruptedWhere()
			if info.interruptedAt == 1 {
				err = nil
			}
		}
		if err != nil {
			return nil, err
		}
		r.expansion, r.info = res, info
		r.seconds["cycles"] = time.Since(start).Seconds()
	}

	cells, ulamValues := r.ulamValues()
	orders, cycleValues, cycleFloors := r.cycleValues()
	analysis := &compare.Settings{NonMonotone: s.Dim() >= 2}
	r.cyclesEst = compare.CyclesWithFloors(orders, cycleValues, cycleFloors, analysis)
	// Cycle expansions of maps of dimension d ≥ 2 converge with
	// irregular signs and non-monotone steps by nature (the catalog's
	// horseshoe and skew-cantor): there, as for plain Ulam, an irregular
	// status leaves the estimate confirmable, and its error bar is at
	// least TailFactor times the last step (Settings.NonMonotone). In 1D
	// irregular steps mean missing cycles, pruning or marginal orbits.
	cyclesPath := compare.Path{Name: "cycles", Estimate: r.cyclesEst, Erratic: s.Dim() >= 2}
	var doubts []string
	if d := r.expansion.Diagnostics; d.Stalled {
		doubts = append(doubts, fmt.Sprintf("the cycle expansion's coefficients decay no faster than geometrically from length %d: %s", d.StallLen, stallCauses))
	}
	if r.info.short {
		doubts = append(doubts, "the cycle search found fewer cycles than the symbolic dynamics predicts (see the warnings): the expansion misses terms")
	}
	r.ulamEst = r.estimateUlam()
	if len(cells) > 0 {
		r.comparison = compare.ComparePaths(compare.Path{Name: "ulam", Estimate: r.ulamEst, Erratic: true}, cyclesPath)
		for _, why := range doubts {
			r.comparison.Unconfirmed(why)
		}
	}
	if len(r.galerkinRuns) > 0 {
		r.galerkinEst = r.estimateGalerkin()
		r.galerkinComparison = compare.ComparePaths(compare.Path{Name: "galerkin", Estimate: r.galerkinEst}, cyclesPath)
		for _, why := range doubts {
			r.galerkinComparison.Unconfirmed(why)
		}
		if len(cells) == 0 {
			r.comparison = r.galerkinComparison
		}
	}
	if opts.quantity == dynsys.DecayRate {
		// λ_1 of a basis with jumps need not be λ_1 on analytic
		// functions. Plain Ulam does not resolve the subleading spectrum
		// of smooth maps at all (DESIGN.md section 3): its agreement
		// means nothing either. Piecewise polynomials do, up to their
		// jump modes: their agreement confirms.
		if len(cells) > 0 {
			r.comparison.Incomparable(jumpModes("plain Ulam"))
		}
		if len(r.galerkinRuns) > 0 && opts.disc.basis == galerkin.Cells {
			r.galerkinComparison.Unrefuted(jumpModes("piecewise polynomials on cells"))
		}
	}
	r.advice = compare.Advise(cells, ulamValues, orders, cycleValues, cycleFloors, opts.tol, analysis)
	return r, nil
}

// jumpModes explains why a decay rate from a basis with jumps (plain Ulam,
// piecewise polynomials on cells) and one from cycles may differ: the
// basis approximates the transfer operator on functions of bounded
// variation, whose spectrum below λ_0 reaches out to the essential
// spectral radius, about 1/min|f'| for a piecewise expanding map (G.
// Keller, 1984, from memory), with eigenvalues such as 1/|Λ| from jumps on
// the orbits of periodic points (the Cantor map's fixed points, reached by
// the hole's edges: 1/3 against λ_1 = 2/9 on analytic functions), while
// the cycle expansion gives the spectrum on analytic functions.
func jumpModes(basis string) string {
	return basis + " approximates the transfer operator on functions with jumps, whose λ1 can be much larger (up to the essential spectral radius, about 1/min|f'|, and 1/|Λ| for jumps on periodic orbits) than λ1 on analytic functions, which the cycle expansion gives: the decay rates may differ without either being wrong, and may agree by chance (for maps with analytic full branches --methods galerkin,cycles --basis chebyshev compares like with like)"
}

// estimateUlam extrapolates the Ulam runs, or returns an estimate with
// NaN value and error (null in JSON) when --methods leaves the path out.
func (r *checkResult) estimateUlam() compare.Estimate {
	cells, values := r.ulamValues()
	if len(cells) == 0 {
		return compare.Estimate{Value: math.NaN(), Error: math.NaN(), Last: math.NaN(), Order: math.NaN(),
			Status: compare.TooFewPoints, Reason: "the Ulam path was not run (--methods)"}
	}
	est := compare.Ulam(cells, values, nil)
	if r.ulamStop != "" {
		est.Reason += "; " + r.ulamStop
	}
	return est
}

// estimateGalerkin extrapolates the values of a higher-order basis over its
// sequence of sizes (compare.GalerkinWithFloors, on the index of the size),
// with their round-off floors (zero where none is known).
func (r *checkResult) estimateGalerkin() compare.Estimate {
	steps := make([]int, len(r.galerkinRuns))
	values := make([]float64, len(r.galerkinRuns))
	floors := make([]float64, len(r.galerkinRuns))
	for i, run := range r.galerkinRuns {
		steps[i], values[i], floors[i] = i+1, run.Value, run.Floor
	}
	return compare.GalerkinWithFloors(steps, values, floors, nil)
}

// cyclesNotRun is the reason of the cycle estimate and notRun the status of
// a path and of its verdicts when --methods leaves it out.
const (
	cyclesNotRun = "the cycle path was not run (--methods)"
	notRun       = "not run"
)

// compareWithoutCycles compares Ulam's method with the higher-order basis
// when --methods leaves the cycle path out: parseMethods admits no other
// pair without cycles. Ulam's steps are erratic by nature, those of the
// higher-order basis are not (see estimateGalerkin). The cycle estimate is
// NaN (null in JSON) and the comparison of Galerkin against the cycles is
// left at its zero value; the JSON and text renderings say the cycles were
// not run instead of showing it.
//
// Only the partition size Ulam would need is advised: compare.Advise
// computes it from the Ulam runs alone, while its cycle length needs the
// cycle estimates, so its cycle note is dropped with it.
func (r *checkResult) compareWithoutCycles() {
	r.cyclesEst = compare.Estimate{Value: math.NaN(), Error: math.NaN(), Last: math.NaN(), Order: math.NaN(),
		Status: compare.TooFewPoints, Reason: cyclesNotRun}
	r.ulamEst = r.estimateUlam()
	r.galerkinEst = r.estimateGalerkin()
	r.comparison = compare.ComparePaths(compare.Path{Name: "ulam", Estimate: r.ulamEst, Erratic: true},
		compare.Path{Name: "galerkin", Estimate: r.galerkinEst})
	cells, ulamValues := r.ulamValues()
	advice := compare.Advise(cells, ulamValues, nil, nil, nil, r.opts.tol, nil)
	r.advice = compare.Advice{CellsNeeded: advice.CellsNeeded}
	for _, n := range advice.Notes {
		if !strings.HasPrefix(n, "cycles:") {
			r.advice.Notes = append(r.advice.Notes, n)
		}
	}
}

// cyclesRun reports whether --methods names the cycle path.
func (r *checkResult) cyclesRun() bool { return r.opts.methods["cycles"] }

func runCheckCommand(ctx context.Context, e *env, s *dynsys.System, opts checkOptions, command []string) int {
	start := time.Now()
	r, err := runCheck(ctx, e, s, opts)
	if err != nil {
		return e.fail(err)
	}
	if r.interrupted != "" && len(r.ulamRuns) == 0 && len(r.galerkinRuns) == 0 && len(r.expansion.Orders) == 0 {
		return e.fail(interruptedError(r.interrupted, false))
	}
	r.seconds["total"] = time.Since(start).Seconds()
	if err := r.write(e.stdout, opts.format); err != nil {
		return e.fail(err)
	}
	if opts.plot != "" {
		if err := r.writeConvergencePlot(opts.plot); err != nil {
			return e.fail(err)
		}
	}
	if opts.outDir != "" {
		files, err := r.writeAll(opts.outDir, command)
		if err != nil {
			return e.fail(err)
		}
		if opts.format == formatTable {
			fmt.Fprintf(e.stdout, "wrote %s\n", strings.Join(files, ", "))
		}
	}
	if r.interrupted != "" {
		return e.fail(interruptedError(r.interrupted, true))
	}
	return exitOK
}

// column is one path's sequence for the convergence table.
type column struct {
	resolution, name string
	x                []int
	values           []float64
	// digits is the number of significant digits printed: the matrix
	// paths solve their eigenproblems to a relative residual of 1e-12,
	// so digits beyond the twelfth are the solver's noise.
	digits int
}

func (c column) format(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return strconv.FormatFloat(v, 'g', c.digits, 64)
}

func (r *checkResult) columns() []column {
	q := string(r.opts.quantity)
	var cols []column
	if cells, uv := r.ulamValues(); len(cells) > 0 {
		cols = append(cols, column{"cells N", "Ulam " + q, cells, uv, 12})
	}
	if sizes, gv := r.galerkinValues(); len(sizes) > 0 {
		res := "cells"
		if r.opts.disc.basis == galerkin.Chebyshev {
			res = "points"
		}
		cols = append(cols, column{res, "Galerkin " + q, sizes, gv, 12})
	}
	if !r.cyclesRun() {
		return cols
	}
	orders, cv, _ := r.cycleValues()
	return append(cols, column{"cycle length n", "cycles " + q, orders, cv, 15})
}

// convergenceGrid lays the paths side by side against their resolution.
func (r *checkResult) convergenceGrid() *grid {
	cols := r.columns()
	g := &grid{}
	rows := 0
	for _, c := range cols {
		g.header = append(g.header, c.resolution, c.name, "change")
		rows = max(rows, len(c.x))
	}
	for i := range rows {
		var row []string
		for _, c := range cols {
			cell := []string{"", "", ""}
			if i < len(c.x) {
				cell[0], cell[1] = strconv.Itoa(c.x[i]), c.format(c.values[i])
				if i > 0 {
					cell[2] = formatSmall(math.Abs(c.values[i] - c.values[i-1]))
				}
			}
			row = append(row, cell...)
		}
		g.add(row...)
	}
	return g
}

// summaryGrid gives the extrapolated values with their error bars.
func (r *checkResult) summaryGrid() *grid {
	g := &grid{header: []string{"path", "estimate", "error", "value(error)", "convergence", "status"}}
	add := func(name string, est compare.Estimate, conv string, digits int) {
		g.add(name, column{digits: digits}.format(est.Value), formatSmall(est.Error), compare.FormatUncertainty(est.Value, est.Error), conv, est.Status.String())
	}
	rate := func(v float64, format string) string {
		if math.IsNaN(v) {
			return "-"
		}
		return fmt.Sprintf(format, v)
	}
	if len(r.ulamRuns) > 0 {
		add("Ulam", r.ulamEst, rate(r.ulamEst.Order, "order %.2g in 1/N"), 12)
	}
	if len(r.galerkinRuns) > 0 {
		add("Galerkin, "+r.opts.disc.String(), r.galerkinEst, rate(r.galerkinEst.Order, "rate %.2g a step"), 12)
	}
	if r.cyclesRun() {
		add("cycles", r.cyclesEst, rate(r.cyclesEst.Order, "rate %.2g"), 15)
	}
	return g
}

// cellsNeeded words the partition size of the advice: a figure beyond
// 10^12 cells (far past any machine's memory) is reported as such.
func cellsNeeded(n float64) string {
	if n > 1e12 {
		return "more than 1e12 cells (out of reach: Ulam converges too slowly here)"
	}
	return fmt.Sprintf("about %.3g cells", n)
}

func comparisonLines(title string, c compare.Comparison) []string {
	lines := []string{fmt.Sprintf("%s: %s (discrepancy %.2g combined errors; agree ≤ %g, disagree > %g)",
		title, c.Verdict, c.Discrepancy, compare.AgreeWithin, compare.DisagreeBeyond)}
	for _, reason := range c.Reasons {
		lines = append(lines, "  "+reason)
	}
	return lines
}

func (r *checkResult) verdictLines() []string {
	return append(r.interruptedLines(), r.pathLines()...)
}

// interruptedLines heads the verdict of a run that Ctrl-C cut short.
func (r *checkResult) interruptedLines() []string {
	if r.interrupted == "" {
		return nil
	}
	return []string{fmt.Sprintf("interrupted (Ctrl-C) %s: partial results, from the work finished before", r.interrupted)}
}

// pathLines are the verdicts, the advice and the warnings.
func (r *checkResult) pathLines() []string {
	if !r.cyclesRun() {
		lines := comparisonLines("verdict, Ulam against Galerkin", r.comparison)
		if a := r.advice; a.CellsNeeded > 0 && !math.IsInf(a.CellsNeeded, 0) {
			lines = append(lines, fmt.Sprintf("advice: Ulam would need %s for the tolerance %g", cellsNeeded(a.CellsNeeded), r.opts.tol))
		} else {
			lines = append(lines, fmt.Sprintf("advice: no Ulam partition size can be predicted for the tolerance %g", r.opts.tol))
		}
		for _, n := range r.advice.Notes {
			lines = append(lines, "  "+n)
		}
		return append(lines, r.densityNote()...)
	}
	var lines []string
	if len(r.ulamRuns) > 0 {
		lines = comparisonLines("verdict, Ulam against cycles", r.comparison)
	}
	if len(r.galerkinRuns) > 0 {
		lines = append(lines, comparisonLines("verdict, Galerkin against cycles", r.galerkinComparison)...)
	}
	a := r.advice
	if a.CycleLength > 0 {
		lines = append(lines, fmt.Sprintf("advice: cycle length %d reaches the tolerance %g", a.CycleLength, r.opts.tol))
	} else {
		line := fmt.Sprintf("advice: no cycle length up to %d reaches the tolerance %g", r.opts.expand.maxLen, r.opts.tol)
		if st := r.cyclesEst.Status; st == compare.Converged || st == compare.Irregular {
			// Still improving, not stalled: longer cycles may get there.
			line += fmt.Sprintf("; the expansion is still improving: try a larger --max-len than %d", r.opts.expand.maxLen)
		}
		lines = append(lines, line)
	}
	if a.CellsNeeded > 0 && !math.IsInf(a.CellsNeeded, 0) {
		lines = append(lines, fmt.Sprintf("  Ulam would need %s for the same tolerance", cellsNeeded(a.CellsNeeded)))
	}
	for _, n := range a.Notes {
		lines = append(lines, "  "+n)
	}
	for _, w := range expansionWarnings(r.expansion, r.info) {
		lines = append(lines, "warning: "+w)
	}
	return append(lines, r.densityNote()...)
}

// densityNote says why the largest Ulam grid has no density (and so no
// density plot), when it was asked for and could not be had.
func (r *checkResult) densityNote() []string {
	if err := r.ulamLast.DensityErr; err != nil {
		return []string{"note: no density plot: " + err.Error()}
	}
	return nil
}

// jsonCheck is the check document of DESIGN.md section 6.
//
// Agree, Verdict, Discrepancy and Reasons are those of Ulam's method
// against the cycle expansion when both are run, of Galerkin against the
// cycles when --methods leaves Ulam out, and of Ulam against Galerkin when
// it leaves the cycles out. A path that was not run has a null estimate and
// error.
type jsonCheck struct {
	System      string             `json:"system"`
	Quantity    string             `json:"quantity"`
	Beta        float64            `json:"beta"`
	Ulam        jsonCheckUlam      `json:"ulam"`
	Cycles      jsonCheckCyc       `json:"cycles"`
	Agree       bool               `json:"agree"`
	Verdict     string             `json:"verdict"`
	Discrepancy jsonFloat          `json:"discrepancy"`
	Reasons     []string           `json:"reasons"`
	CellsNeeded jsonFloat          `json:"ulam_cells_needed"`
	Tol         float64            `json:"tol"`
	Seconds     map[string]float64 `json:"seconds"`
	Galerkin    *jsonCheckGalerkin `json:"galerkin,omitempty"`
	// Interrupted says where Ctrl-C cut the run short; absent otherwise.
	Interrupted string `json:"interrupted,omitempty"`
	// Note is estimatesNote: how to take the error bars.
	Note string `json:"note"`
}

type jsonCheckUlam struct {
	Runs     []ulamRunJSON `json:"runs"`
	Estimate jsonFloat     `json:"estimate"`
	Error    jsonFloat     `json:"error"`
	Status   string        `json:"status"`
	Reason   string        `json:"reason,omitempty"`
}

// jsonCheckGalerkin is the higher-order basis. Verdict, Discrepancy and
// Reasons compare it with the cycle expansion; when --methods leaves the
// cycles out, Verdict is "not run", Discrepancy null and Reasons empty, and
// the comparison with Ulam's method is the top-level one.
type jsonCheckGalerkin struct {
	Basis       string        `json:"basis"`
	Runs        []ulamRunJSON `json:"runs"`
	Estimate    jsonFloat     `json:"estimate"`
	Error       jsonFloat     `json:"error"`
	Status      string        `json:"status"`
	Verdict     string        `json:"verdict_against_cycles"`
	Discrepancy jsonFloat     `json:"discrepancy_against_cycles"`
	Reasons     []string      `json:"reasons"`
}

// jsonCheckCyc is the cycle path. When --methods leaves it out, Orders is
// empty, Estimate and Error are null, Status and Source are "not run",
// Reason says so and RecommendedMaxLen is 0, as when no length reaches the
// tolerance.
type jsonCheckCyc struct {
	Orders            []jsonOrder `json:"orders"`
	Estimate          jsonFloat   `json:"estimate"`
	Error             jsonFloat   `json:"error"`
	Status            string      `json:"status"`
	Reason            string      `json:"reason,omitempty"`
	RecommendedMaxLen int         `json:"recommended_max_len"`
	Source            string      `json:"cycle_source"`
}

func (r *checkResult) json() jsonCheck {
	doc := jsonCheck{
		System: r.system.Name, Quantity: string(r.opts.quantity), Beta: r.opts.beta,
		Ulam: jsonCheckUlam{Runs: append([]ulamRunJSON{}, r.ulamRuns...), Estimate: jsonFloat(r.ulamEst.Value), Error: jsonFloat(r.ulamEst.Error),
			Status: r.ulamEst.Status.String(), Reason: r.ulamEst.Reason},
		Cycles: jsonCheckCyc{Estimate: jsonFloat(r.cyclesEst.Value), Error: jsonFloat(r.cyclesEst.Error), Status: r.cyclesEst.Status.String(),
			Reason: r.cyclesEst.Reason, RecommendedMaxLen: r.advice.CycleLength, Source: r.info.status},
		Agree: r.comparison.Verdict == compare.Agree, Verdict: r.comparison.Verdict.String(),
		Discrepancy: jsonFloat(r.comparison.Discrepancy), Reasons: r.comparison.Reasons,
		CellsNeeded: jsonFloat(r.advice.CellsNeeded), Tol: r.opts.tol, Seconds: r.seconds, Interrupted: r.interrupted,
		Note: estimatesNote,
	}
	if doc.Reasons == nil {
		doc.Reasons = []string{}
	}
	if !r.opts.methods["ulam"] {
		doc.Ulam.Status = notRun
	}
	if len(r.galerkinRuns) > 0 {
		g := r.galerkinComparison
		doc.Galerkin = &jsonCheckGalerkin{Basis: r.opts.disc.String(), Runs: r.galerkinRuns, Estimate: jsonFloat(r.galerkinEst.Value),
			Error: jsonFloat(r.galerkinEst.Error), Status: r.galerkinEst.Status.String(), Verdict: g.Verdict.String(),
			Discrepancy: jsonFloat(g.Discrepancy), Reasons: append([]string{}, g.Reasons...)}
		if !r.cyclesRun() {
			doc.Galerkin.Verdict, doc.Galerkin.Discrepancy = notRun, jsonFloat(math.NaN())
		}
	}
	if !r.cyclesRun() {
		doc.Cycles.Orders = []jsonOrder{}
		doc.Cycles.Status, doc.Cycles.Source = notRun, notRun
		return doc
	}
	cum := 0
	for i, o := range r.expansion.Orders {
		for n := i + 1; n <= o.MaxLen && n < len(r.info.counts); n++ {
			cum += r.info.counts[n]
		}
		doc.Cycles.Orders = append(doc.Cycles.Orders, jsonOrder{MaxLen: o.MaxLen, Cycles: cum,
			Eigenvalues: toJSONComplex(trimEigs(o.Eigenvalues, r.opts.eigs)), Value: jsonFloat(o.Value), Floor: jsonFloat(o.Floor)})
	}
	return doc
}

// write renders the report in format.
func (r *checkResult) write(w io.Writer, format string) error {
	if format == formatJSON {
		return writeJSON(w, r.json())
	}
	if format == formatTable {
		var paths []string
		if len(r.ulamRuns) > 0 {
			paths = append(paths, "Ulam's method")
		}
		if len(r.galerkinRuns) > 0 {
			paths = append(paths, "Galerkin ("+r.opts.disc.String()+")")
		}
		if r.cyclesRun() {
			paths = append(paths, "the cycle expansion ("+expansionName(r.opts.expand.function)+")")
		}
		fmt.Fprintf(w, "%s of %s: %s\n", r.opts.quantity, r.system.Name, strings.Join(paths, " against "))
	}
	if err := r.convergenceGrid().render(w, format); err != nil {
		return err
	}
	if format == formatCSV || format == formatLaTeX {
		fmt.Fprintln(w)
	}
	if err := r.summaryGrid().render(w, format); err != nil {
		return err
	}
	writeNotes(w, format, r.verdictLines())
	return nil
}

func (r *checkResult) convergenceSeries() []convergenceSeries {
	cells, uv := r.ulamValues()
	orders, cv, _ := r.cycleValues()
	xs := func(ints []int) []float64 {
		out := make([]float64, len(ints))
		for i, v := range ints {
			out[i] = float64(v)
		}
		return out
	}
	var series []convergenceSeries
	if len(cells) > 0 {
		series = append(series, convergenceSeries{label: "Ulam's method", xLabel: "cells N", logX: true, x: xs(cells), values: uv, estimate: r.ulamEst, colour: ulamColour})
	}
	if sizes, gv := r.galerkinValues(); len(sizes) > 0 {
		xLabel, logX := "cells N", true
		if r.opts.disc.basis == galerkin.Chebyshev {
			xLabel, logX = "Chebyshev points n", false
		}
		series = append(series, convergenceSeries{label: "Galerkin, " + r.opts.disc.String(), xLabel: xLabel, logX: logX, x: xs(sizes), values: gv, estimate: r.galerkinEst, colour: thirdColour})
	}
	if !r.cyclesRun() {
		return series
	}
	return append(series, convergenceSeries{label: "cycle expansion", xLabel: "cycle length n", x: xs(orders), values: cv, estimate: r.cyclesEst, colour: cyclesColour})
}

func (r *checkResult) writeConvergencePlot(path string) error {
	return writeConvergencePlot(path, r.system.Name, string(r.opts.quantity), r.convergenceSeries())
}

// writeSpectrumPlot draws the leading eigenvalues of Ulam's largest grid,
// of the cycle expansion and of the largest size of the higher-order basis,
// for the paths --methods names.
func (r *checkResult) writeSpectrumPlot(path string) error {
	ulamSet := spectrumSet{label: "Ulam, largest grid", values: r.ulamLast.Eigenvalues, colour: ulamColour, shape: draw.RingGlyph{}}
	galerkinSet := spectrumSet{label: "Galerkin, largest size", values: r.galerkinLast.Eigenvalues, colour: thirdColour, shape: draw.SquareGlyph{}}
	if !r.cyclesRun() {
		return writeSpectrumPlot(path, r.system.Name+": leading eigenvalues", []spectrumSet{ulamSet, galerkinSet})
	}
	// The eigenvalues of the length the cycle estimate was taken at: later
	// lengths add round-off to the subleading zeros.
	var cyc []complex128
	for _, o := range r.expansion.Orders {
		if o.MaxLen <= max(r.expansion.Estimate.Len, 1) {
			cyc = trimEigs(o.Eigenvalues, max(r.opts.eigs, 1))
		}
	}
	if len(r.expansion.Eigenvalues) > 0 {
		cyc = cyc[:0]
		for _, ev := range r.expansion.Eigenvalues {
			cyc = append(cyc, ev.Value)
		}
	}
	var sets []spectrumSet
	if len(r.ulamRuns) > 0 {
		sets = append(sets, ulamSet)
	}
	sets = append(sets, spectrumSet{label: fmt.Sprintf("cycle expansion, length %d", r.expansion.Estimate.Len), values: cyc, colour: cyclesColour, shape: draw.CrossGlyph{}})
	if len(r.galerkinRuns) > 0 {
		sets = append(sets, galerkinSet)
	}
	return writeSpectrumPlot(path, r.system.Name+": leading eigenvalues", sets)
}

// writeAll writes every rendering, the plots and the manifest into dir.
func (r *checkResult) writeAll(dir string, command []string) ([]string, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, usagef("--out: %v", unwrapPath(err))
	}
	var files []string
	save := func(name string, write func(path string) error) error {
		path := filepath.Join(dir, name)
		if err := write(path); err != nil {
			return fmt.Errorf("writing %s: %w", path, err)
		}
		files = append(files, path)
		return nil
	}
	ext := map[string]string{formatTable: "txt", formatCSV: "csv", formatJSON: "json", formatLaTeX: "tex", formatMarkdown: "md"}
	for _, f := range formats {
		f := f
		if err := save("report."+ext[f], func(path string) error {
			out, err := os.Create(path)
			if err != nil {
				return err
			}
			if err := r.write(out, f); err != nil {
				out.Close()
				return err
			}
			return out.Close()
		}); err != nil {
			return nil, err
		}
	}
	for _, ext := range []string{"svg", "png"} {
		if err := save("convergence."+ext, r.writeConvergencePlot); err != nil {
			return nil, err
		}
	}
	// The spectrum plot shows --eigs eigenvalues a path: the largest Ulam
	// grid was solved for what the quantity needs, often λ_0 alone, so its
	// kept matrix is solved once more. Should that fail, λ_0 is shown.
	if m := r.ulamLast.Matrix; m != nil && len(r.ulamLast.Eigenvalues) < r.opts.eigs {
		if values, _, err := m.Eigenvalues(r.opts.eigs, nil); err == nil {
			r.ulamLast.Eigenvalues = values
		}
	}
	for _, ext := range []string{"svg", "png"} {
		if err := save("spectrum."+ext, r.writeSpectrumPlot); err != nil {
			return nil, err
		}
		if r.system.Dim() == 1 && r.ulamLast.Density != nil {
			if err := save("density."+ext, r.writeDensityPlot); err != nil {
				return nil, err
			}
		}
	}
	m := newManifest(command, r.system)
	m.Flags["quantity"] = string(r.opts.quantity)
	m.Flags["beta"] = strconv.FormatFloat(r.opts.beta, 'g', -1, 64)
	if r.cyclesRun() {
		m.Flags["max-len"] = strconv.Itoa(r.opts.expand.maxLen)
		m.Flags["expansion"] = expansionName(r.opts.expand.function)
	}
	m.Flags["tol"] = strconv.FormatFloat(r.opts.tol, 'g', -1, 64)
	m.Flags["points"] = strconv.Itoa(r.opts.points)
	var cells []string
	for _, run := range r.ulamRuns {
		cells = append(cells, strconv.Itoa(run.GridCells))
	}
	m.Flags["cells"] = strings.Join(cells, ",")
	if r.cyclesRun() {
		if r.opts.expand.cycleFile != "" {
			m.Flags["cycles"] = r.opts.expand.cycleFile
		}
		m.Counts["prime_cycles_per_length"] = r.info.counts
		m.Notes = append(m.Notes, r.info.status)
	} else {
		m.Notes = append(m.Notes, cyclesNotRun)
	}
	m.Notes = append(m.Notes, r.interruptedLines()...)
	var methods []string
	for _, name := range []string{"ulam", "galerkin", "cycles"} {
		if r.opts.methods[name] {
			methods = append(methods, name)
		}
	}
	m.Flags["methods"] = strings.Join(methods, ",")
	if len(r.galerkinRuns) > 0 {
		// The Galerkin settings, without which this run is not reproduced.
		var sizes []string
		for _, run := range r.galerkinRuns {
			sizes = append(sizes, strconv.Itoa(run.GridCells))
		}
		m.Flags["basis"] = r.opts.disc.basis.String()
		m.Flags["degree"] = strconv.Itoa(r.opts.disc.degree)
		m.Flags["galerkin-sizes"] = strings.Join(sizes, ",")
	}
	m.Seconds = r.seconds
	m.Outputs = append([]string(nil), files...)
	if err := save("manifest.json", m.write); err != nil {
		return nil, err
	}
	return files, nil
}

func (r *checkResult) writeDensityPlot(path string) error {
	m := r.ulamLast.Matrix
	x := make([]float64, len(m.Cells))
	centre := make([]float64, 1)
	for i, cell := range m.Cells {
		m.Grid.CenterTo(centre, cell)
		x[i] = centre[0]
	}
	title := r.system.Name + ": invariant density"
	if !r.system.Closed {
		title = r.system.Name + ": conditionally invariant density"
	}
	return writeDensityPlot(path, title, r.system.Vars[0], x, r.ulamLast.Density)
}
