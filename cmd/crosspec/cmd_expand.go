package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"crosspec/cycles"
	"crosspec/dynsys"
)

func init() { register(expandCommand) }

var expandCommand = &command{
	name:    "expand",
	args:    "SYSTEM",
	summary: "cycle expansions: a quantity at every cycle length from the prime cycles",
	details: `Searches the prime cycles up to --max-len (or reads them from --cycles FILE, where
every cycle is re-converged and checked first; rejected ones are listed and left
out) and expands the spectral determinant (default), the dynamical zeta function,
or for 1D maps the factorized determinant (the product of the 1/zeta_k, which
keeps subleading eigenvalues well conditioned). The table shows the quantity at
every truncation length N with its change from N-1 and its round-off floor; the
summary gives the value where the sequence stops improving, with its estimated
(not rigorous) error, and flags coefficients that decay no faster than
geometrically (a symptom of missing cycles, pruning, or a map that is not
uniformly hyperbolic).`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		params := paramFlag{}
		fs.Var(params, "param", "override a parameter, NAME=VALUE (repeatable)")
		opts := expandOptions{}
		fs.IntVar(&opts.maxLen, "max-len", 10, "longest cycle length (truncation length)")
		fs.StringVar(&opts.cycleFile, "cycles", "", "read the cycles from `FILE` (JSON Lines or CSV) instead of searching")
		quantity := fs.String("quantity", string(dynsys.Eigenvalues), "quantity: eigenvalues, escape-rate, pressure, mean, lyapunov, dimension or decay-rate")
		fs.Float64Var(&opts.beta, "beta", 0, "β of the weight exp(β a(x)) (pressure, mean, eigenvalues)")
		fs.IntVar(&opts.eigs, "eigs", 5, "number of eigenvalues to report")
		function := fs.String("expansion", "determinant", "expansion: determinant, zeta or factorized (1D)")
		format := fs.String("format", formatTable, "output format: table, csv, json, latex or markdown")
		quiet := fs.Bool("quiet", false, "no progress indicator")
		betas := fs.String("betas", "", "comma-separated β values: follow the leading eigenvalue along them and print the pressure curve P(β)")
		return func(args []string) int {
			if err := checkFormat(*format); err != nil {
				return e.fail(err)
			}
			q, err := dynsys.ParseQuantity(*quantity)
			if err != nil {
				return e.fail(usagef("--quantity: %v", err))
			}
			opts.quantity = q
			if opts.function, err = parseExpansion(*function); err != nil {
				return e.fail(err)
			}
			if opts.maxLen < 1 {
				return e.fail(usagef("--max-len %d: expected a positive length", opts.maxLen))
			}
			if opts.eigs < 1 {
				return e.fail(usagef("--eigs %d: expected a positive count", opts.eigs))
			}
			s, err := openSystem(args, params)
			if err != nil {
				return e.fail(err)
			}
			opts.progress = !*quiet && isTerminal(e.stderr)
			ctx, stop := interruptContext()
			defer stop()
			if *betas != "" {
				return runPressureCurve(ctx, e, s, opts, *betas, *format)
			}
			res, info, err := runExpansion(ctx, e, s, opts)
			if err != nil {
				return e.fail(err)
			}
			if err := writeExpansionReport(e.stdout, s, opts, res, info, *format); err != nil {
				return e.fail(err)
			}
			return info.exitCode(e)
		}
	},
}

// expandOptions are the settings of the cycles path shared by expand and
// check.
type expandOptions struct {
	quantity  dynsys.Quantity
	maxLen    int
	cycleFile string
	beta      float64
	eigs      int
	function  cycles.Function
	progress  bool
	// stopAfter, when positive, cancels the cycle search once that
	// length is complete (tests simulate a Ctrl-C with it).
	stopAfter int
}

// cycleInfo says where the cycles came from.
type cycleInfo struct {
	counts   []int // prime cycles per length (index = length)
	status   string
	notes    []string
	rejected int
	seconds  float64
	// interruptedAt is the length whose search Ctrl-C cut short (0 when
	// none was): only the shorter lengths are expanded.
	interruptedAt int
	// short is true when the search found fewer cycles at some length
	// than the symbolic dynamics predicts (cycles.SearchShort).
	short bool
}

func parseExpansion(name string) (cycles.Function, error) {
	switch name {
	case "determinant":
		return cycles.SpectralDeterminant, nil
	case "zeta":
		return cycles.DynamicalZeta, nil
	case "factorized":
		return cycles.FactorizedDeterminant, nil
	}
	return 0, usagef("--expansion %q: expected determinant, zeta or factorized", name)
}

// checkQuantity rejects quantities the system cannot give.
func checkQuantity(s *dynsys.System, q dynsys.Quantity) error {
	switch q {
	case dynsys.Mean:
		if !s.HasObservable() {
			return usagef("quantity mean needs an observable: add observable = \"...\" to the system file")
		}
	case dynsys.Dimension:
		if s.Dim() != 1 {
			return usagef("quantity dimension is defined here for 1D maps only; %s has dimension %d", s.Name, s.Dim())
		}
	}
	return nil
}

// obtainCycles searches the prime cycles of s up to maxLen, or reads and
// verifies them from a file; rejected cycles are reported on stderr.
func obtainCycles(ctx context.Context, e *env, s *dynsys.System, opts expandOptions) ([]cycles.Cycle, cycleInfo, error) {
	var info cycleInfo
	if opts.cycleFile != "" {
		f, err := os.Open(opts.cycleFile)
		if err != nil {
			return nil, info, usagef("cannot read %s: %v", opts.cycleFile, unwrapPath(err))
		}
		defer f.Close()
		file, err := cycles.ReadCycleFile(f, opts.cycleFile, s.Dim())
		if err != nil {
			return nil, info, err
		}
		if h := file.Shard; h != nil {
			// One part of a split search: an expansion from it would be
			// silently incomplete.
			return nil, info, usagef("%s holds shard %d of %d of a split search, not all the cycles; join the shards first (crosspec cycles %s --merge …)",
				opts.cycleFile, h.Shard, h.Shards, s.Name)
		}
		read := file.Cycles
		res, err := cycles.Verify(s, read, &cycles.VerifySettings{File: opts.cycleFile})
		if err != nil {
			return nil, info, &numericalError{err}
		}
		for _, p := range res.Problems {
			fmt.Fprintf(e.stderr, "%s: rejected %s\n", e.cmd, p)
		}
		info.rejected = len(res.Problems)
		var kept []cycles.Cycle
		for _, c := range res.Cycles {
			if c.Len <= opts.maxLen {
				kept = append(kept, c)
			}
		}
		if len(kept) == 0 {
			return nil, info, usagef("%s: no usable cycle of length ≤ %d", opts.cycleFile, opts.maxLen)
		}
		info.status = fmt.Sprintf("read from %s (%d accepted, %d rejected)", opts.cycleFile, len(res.Cycles), len(res.Problems))
		info.counts = countByLength(kept, opts.maxLen)
		return kept, info, nil
	}
	settings := &cycles.SearchSettings{MaxLen: opts.maxLen}
	if opts.stopAfter > 0 {
		var cancel context.CancelFunc
		ctx, cancel = context.WithCancel(ctx)
		defer cancel()
		settings.Found = func(length int, _ []cycles.Cycle) error {
			if length >= opts.stopAfter {
				cancel()
			}
			return nil
		}
	}
	if opts.progress {
		settings.Progress = func(length int, fraction float64) {
			fmt.Fprintf(e.stderr, "\rcycle search: length %d of %d: %3.0f%%", length, opts.maxLen, 100*fraction)
		}
	}
	res, err := cycles.Search(ctx, s, settings)
	if opts.progress {
		fmt.Fprint(e.stderr, "\r\033[K")
	}
	if err != nil {
		if errors.Is(err, cycles.ErrSearch) {
			return nil, info, &numericalError{err}
		}
		return nil, info, err
	}
	if res.Status == cycles.SearchInterrupted {
		// The lengths completed before stand on their own.
		done := len(res.Counts)
		info.interruptedAt = done + 1
		if done == 0 {
			return nil, info, interruptedError("during the cycle search at length 1", false)
		}
		kept := res.Cycles[:0:0]
		for _, c := range res.Cycles {
			if c.Len <= done {
				kept = append(kept, c)
			}
		}
		res.Cycles = kept
	}
	info.status = "search " + res.Status.String()
	info.short = res.Status == cycles.SearchShort
	for _, c := range res.Counts {
		if c.Note != "" {
			info.notes = append(info.notes, fmt.Sprintf("length %d: %s", c.Length, c.Note))
		}
	}
	info.counts = countByLength(res.Cycles, opts.maxLen)
	return res.Cycles, info, nil
}

// interruptedWhere says where Ctrl-C cut the search short, "" if nowhere.
func (info cycleInfo) interruptedWhere() string {
	if info.interruptedAt == 0 {
		return ""
	}
	return fmt.Sprintf("during the cycle search at length %d", info.interruptedAt)
}

// exitCode is exitOK, or, after a report cut short by Ctrl-C, the
// interruption's message and exitNumerical.
func (info cycleInfo) exitCode(e *env) int {
	if where := info.interruptedWhere(); where != "" {
		return e.fail(interruptedError(where, true))
	}
	return exitOK
}

// expandedLen is the longest length expanded: maxLen, or the last length
// searched in full before an interruption.
func (info cycleInfo) expandedLen(maxLen int) int {
	if info.interruptedAt > 0 {
		return min(maxLen, info.interruptedAt-1)
	}
	return maxLen
}

func countByLength(cs []cycles.Cycle, maxLen int) []int {
	counts := make([]int, maxLen+1)
	for _, c := range cs {
		if c.Len <= maxLen {
			counts[c.Len]++
		}
	}
	return counts
}

// runExpansion obtains the cycles and expands the quantity.
func runExpansion(ctx context.Context, e *env, s *dynsys.System, opts expandOptions) (cycles.QuantityResult, cycleInfo, error) {
	if err := checkQuantity(s, opts.quantity); err != nil {
		return cycles.QuantityResult{}, cycleInfo{}, err
	}
	cs, info, err := obtainCycles(ctx, e, s, opts)
	if err != nil {
		return cycles.QuantityResult{}, info, err
	}
	res, err := cycles.Expand(cs, opts.quantity, &cycles.Settings{MaxLen: info.expandedLen(opts.maxLen), Beta: opts.beta, Function: opts.function, Eigs: opts.eigs})
	if err != nil {
		if errors.Is(err, cycles.ErrNotOneDimensional) {
			return res, info, usagef("%v", err)
		}
		return res, info, &numericalError{err}
	}
	return res, info, nil
}

type jsonComplex struct {
	Re float64 `json:"re"`
	Im float64 `json:"im"`
}

func toJSONComplex(vs []complex128) []jsonComplex {
	out := make([]jsonComplex, len(vs))
	for i, v := range vs {
		out[i] = jsonComplex{real(v), imag(v)}
	}
	return out
}

// jsonFloat is a float64 that encodes NaN and ±Inf as null.
type jsonFloat float64

func (f jsonFloat) MarshalJSON() ([]byte, error) {
	v := float64(f)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return []byte("null"), nil
	}
	return []byte(strconv.FormatFloat(v, 'g', -1, 64)), nil
}

type jsonOrder struct {
	MaxLen      int           `json:"max_len"`
	Cycles      int           `json:"cycles"`
	Eigenvalues []jsonComplex `json:"eigenvalues"`
	Value       jsonFloat     `json:"value"`
	Floor       jsonFloat     `json:"floor"`
}

type jsonEigenvalue struct {
	Re     float64   `json:"re"`
	Im     float64   `json:"im"`
	Error  jsonFloat `json:"error"`
	Length int       `json:"max_len"`
	Status string    `json:"status"`
}

// jsonExpansion is the cycles path's JSON document (DESIGN.md section 6).
type jsonExpansion struct {
	System      string           `json:"system"`
	Quantity    string           `json:"quantity"`
	Beta        float64          `json:"beta"`
	Expansion   string           `json:"expansion"`
	Orders      []jsonOrder      `json:"orders"`
	Estimate    jsonFloat        `json:"estimate"`
	Error       jsonFloat        `json:"error"`
	Status      string           `json:"status"`
	Length      int              `json:"estimate_max_len"`
	Eigenvalues []jsonEigenvalue `json:"leading_eigenvalues,omitempty"`
	Cycles      string           `json:"cycle_source"`
	Warnings    []string         `json:"warnings,omitempty"`
	// Interrupted says where Ctrl-C cut the cycle search short.
	Interrupted string `json:"interrupted,omitempty"`
	// Note is estimatesNote: how to take the error bars.
	Note string `json:"note"`
}

// maxReported caps the eigenvalues printed per order.
func trimEigs(vs []complex128, k int) []complex128 {
	if len(vs) > k {
		return vs[:k]
	}
	return vs
}

// stallCauses lists what makes a determinant's coefficients decay only
// geometrically: cycles left out or pruned, marginal cycles, or a map that
// is not uniformly hyperbolic (the logistic map at 4, whose critical point
// makes its expansion converge at the rate 1/2 although every cycle is
// there).
const stallCauses = "missing cycles, pruning, marginal cycles, or a map that is not uniformly hyperbolic, such as one with a critical point"

func expansionWarnings(res cycles.QuantityResult, info cycleInfo) []string {
	var out []string
	d := res.Diagnostics
	if d.Stalled {
		out = append(out, fmt.Sprintf("the expansion coefficients decay no faster than geometrically from length %d (%s): the values converge slowly if at all; treat those beyond it with suspicion", d.StallLen, stallCauses))
	} else if res.Estimate.Status == cycles.Stalled {
		// The values' own changes stalled (with the coefficients'
		// stall, the warning above says why).
		out = append(out, "the estimates stopped improving above the round-off floor (stalled)")
	}
	if info.interruptedAt > 0 {
		out = append(out, fmt.Sprintf("the cycle search was interrupted (Ctrl-C) during length %d: the expansion stops at length %d", info.interruptedAt, info.interruptedAt-1))
	}
	out = append(out, info.notes...)
	if info.rejected > 0 {
		out = append(out, fmt.Sprintf("%d cycles of the file were rejected and left out", info.rejected))
	}
	return out
}

func complexText(v complex128) string {
	if imag(v) == 0 {
		return strconv.FormatFloat(real(v), 'g', 12, 64)
	}
	sign := "+"
	if imag(v) < 0 {
		sign = "-"
	}
	return fmt.Sprintf("%.12g%s%.12gi", real(v), sign, math.Abs(imag(v)))
}

func formatValue(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	return strconv.FormatFloat(v, 'g', 15, 64)
}

func formatSmall(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "-"
	}
	return strconv.FormatFloat(v, 'e', 1, 64)
}

func expansionName(f cycles.Function) string {
	switch f {
	case cycles.DynamicalZeta:
		return "zeta"
	case cycles.FactorizedDeterminant:
		return "factorized"
	}
	return "determinant"
}

func writeExpansionReport(w io.Writer, s *dynsys.System, opts expandOptions, res cycles.QuantityResult, info cycleInfo, format string) error {
	warnings := expansionWarnings(res, info)
	if format == formatJSON {
		doc := jsonExpansion{System: s.Name, Quantity: string(opts.quantity), Beta: res.Beta, Expansion: expansionName(opts.function),
			Estimate: jsonFloat(res.Estimate.Value), Error: jsonFloat(res.Estimate.Error), Status: res.Estimate.Status.String(),
			Length: res.Estimate.Len, Cycles: info.status, Warnings: warnings, Interrupted: info.interruptedWhere(), Note: estimatesNote}
		cum := 0
		for _, o := range res.Orders {
			for n := len(doc.Orders) + 1; n <= o.MaxLen && n < len(info.counts); n++ {
				cum += info.counts[n]
			}
			doc.Orders = append(doc.Orders, jsonOrder{MaxLen: o.MaxLen, Cycles: cum, Eigenvalues: toJSONComplex(trimEigs(o.Eigenvalues, opts.eigs)),
				Value: jsonFloat(o.Value), Floor: jsonFloat(o.Floor)})
		}
		for _, ev := range res.Eigenvalues {
			doc.Eigenvalues = append(doc.Eigenvalues, jsonEigenvalue{Re: real(ev.Value), Im: imag(ev.Value), Error: jsonFloat(ev.Error), Length: ev.Len, Status: ev.Status.String()})
		}
		return writeJSON(w, doc)
	}
	header := []string{"length", "cycles", string(opts.quantity), "change", "round-off floor"}
	showEigs := opts.quantity == dynsys.Eigenvalues
	if showEigs {
		header = []string{"length", "cycles"}
		for k := range opts.eigs {
			header = append(header, fmt.Sprintf("λ%d", k))
		}
	}
	g := &grid{header: header}
	cum := 0
	prev := math.NaN()
	for i, o := range res.Orders {
		for n := i + 1; n <= o.MaxLen && n < len(info.counts); n++ {
			cum += info.counts[n]
		}
		row := []string{strconv.Itoa(o.MaxLen), strconv.Itoa(cum)}
		if showEigs {
			for k := range opts.eigs {
				if k < len(o.Eigenvalues) {
					row = append(row, complexText(o.Eigenvalues[k]))
				} else {
					row = append(row, "")
				}
			}
		} else {
			row = append(row, formatValue(o.Value), formatSmall(math.Abs(o.Value-prev)), formatSmall(o.Floor))
			prev = o.Value
		}
		g.add(row...)
	}
	if err := g.render(w, format); err != nil {
		return err
	}
	est := res.Estimate
	lines := []string{fmt.Sprintf("%s of %s from cycles (%s, %s): %s ± %s, taken at length %d (%s)", opts.quantity, s.Name,
		expansionName(opts.function), info.status, formatValue(est.Value), formatSmall(est.Error), est.Len, est.Status)}
	for k, ev := range res.Eigenvalues {
		lines = append(lines, fmt.Sprintf("  λ%d = %s ± %s at length %d (%s)", k, complexText(ev.Value), formatSmall(ev.Error), ev.Len, ev.Status))
	}
	for _, warn := range warnings {
		lines = append(lines, "warning: "+warn)
	}
	writeNotes(w, format, lines)
	return nil
}

// runPressureCurve follows the leading eigenvalue along a list of β and
// prints λ_0(β) and P(β) = ln λ_0(β) from the longest truncation.
func runPressureCurve(ctx context.Context, e *env, s *dynsys.System, opts expandOptions, list, format string) int {
	var betas []float64
	for _, f := range strings.Split(list, ",") {
		b, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
		if err != nil || math.IsNaN(b) || math.IsInf(b, 0) {
			return e.fail(usagef("--betas %q: expected finite numbers separated by commas", list))
		}
		betas = append(betas, b)
	}
	sum := cycles.ObservableSum
	switch opts.quantity {
	case dynsys.Lyapunov, dynsys.Dimension:
		sum = cycles.LogMultiplier
	default:
		if !s.HasObservable() {
			return e.fail(usagef("--betas: system %s defines no observable to weight (use --quantity lyapunov for the weight |Λ|^β)", s.Name))
		}
	}
	cs, info, err := obtainCycles(ctx, e, s, opts)
	if err != nil {
		return e.fail(err)
	}
	maxLen := info.expandedLen(opts.maxLen)
	curve, err := cycles.LeadingCurve(cs, betas, &cycles.Settings{MaxLen: maxLen, Function: opts.function, Sum: sum})
	if err != nil {
		return e.fail(&numericalError{err})
	}
	if format == formatJSON {
		type point struct {
			Beta     float64   `json:"beta"`
			Leading  float64   `json:"leading"`
			Pressure float64   `json:"pressure"`
			Floor    jsonFloat `json:"floor"`
		}
		doc := struct {
			System string  `json:"system"`
			Weight string  `json:"weight"`
			MaxLen int     `json:"max_len"`
			Points []point `json:"points"`
		}{System: s.Name, Weight: sum.String(), MaxLen: maxLen}
		for _, p := range curve {
			doc.Points = append(doc.Points, point{p.Beta, p.Leading, p.Pressure, jsonFloat(p.Floor)})
		}
		if err := writeJSON(e.stdout, doc); err != nil {
			return e.fail(err)
		}
		return info.exitCode(e)
	}
	g := &grid{header: []string{"β", "λ0(β)", "P(β) = ln λ0", "round-off floor"}}
	for _, p := range curve {
		g.add(strconv.FormatFloat(p.Beta, 'g', -1, 64), formatValue(p.Leading), formatValue(p.Pressure), formatSmall(p.Floor))
	}
	if err := g.render(e.stdout, format); err != nil {
		return e.fail(err)
	}
	if format == formatTable {
		fmt.Fprintf(e.stdout, "%s: leading eigenvalue followed continuously in β, weight exp(β·%s), cycles to length %d (%s)\n", s.Name, sum, maxLen, info.status)
	}
	return info.exitCode(e)
}
