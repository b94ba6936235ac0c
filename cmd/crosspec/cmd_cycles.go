package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strconv"

	"crosspec/cycles"
	"crosspec/dynsys"
)

func init() { register(cyclesCommand) }

var cyclesCommand = &command{
	name:    "cycles",
	args:    "SYSTEM",
	summary: "search the prime cycles up to a length and check the search is complete",
	details: `Finds every prime cycle of length 1…n with its Floquet multipliers and
observable sum. 1D maps are searched by itinerary over their laps; maps of
dimension d ≥ 2 from seeds by the stabilised Newton iteration. Every length is
checked against the counts of the symbolic dynamics (when known) and against the
closed walks of a box partition's transition graph; a length with fewer cycles
than expected is flagged.

With -o FILE the cycles are written as they are found (JSON Lines, or CSV for a
.csv name), flushed after each length; an interrupted search (Ctrl-C) keeps the
completed lengths and --resume continues it. --check FILE re-converges and checks
every cycle of a file written elsewhere and lists the rejected ones with their
lines (exit code 2 when any is rejected).`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		params := paramFlag{}
		fs.Var(params, "param", "override a parameter, NAME=VALUE (repeatable)")
		maxLen := fs.Int("max-len", 10, "longest cycle length")
		out := fs.String("o", "", "write the cycles to `FILE` (JSON Lines, or CSV for .csv)")
		resume := fs.Bool("resume", false, "continue the search written to -o FILE")
		format := fs.String("format", formatTable, "report format: table, csv, json, latex or markdown")
		quiet := fs.Bool("quiet", false, "no progress indicator")
		check := fs.String("check", "", "re-converge and check the cycles of `FILE` instead of searching")
		return func(args []string) int {
			if err := checkFormat(*format); err != nil {
				return e.fail(err)
			}
			s, err := openSystem(args, params)
			if err != nil {
				return e.fail(err)
			}
			if *check != "" {
				return checkCycleFile(e, s, *check, *format)
			}
			if *maxLen < 1 {
				return e.fail(usagef("--max-len %d: expected a positive length", *maxLen))
			}
			if *resume && *out == "" {
				return e.fail(usagef("--resume needs -o FILE, the file to continue"))
			}
			ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
			defer stop()
			return runCycleSearch(ctx, e, s, cycleRun{maxLen: *maxLen, out: *out, resume: *resume, format: *format, progress: !*quiet && isTerminal(e.stderr)})
		}
	},
}

// cycleRun is the command line of one search.
type cycleRun struct {
	maxLen   int
	out      string
	resume   bool
	format   string
	progress bool
	// stopAfter, when positive, cancels the search after that length
	// has been written (tests simulate an interruption with it).
	stopAfter int
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

func runCycleSearch(ctx context.Context, e *env, s *dynsys.System, r cycleRun) int {
	settings := &cycles.SearchSettings{MaxLen: r.maxLen}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	var writer *cycles.CycleWriter
	if r.out != "" {
		var known []cycles.Cycle
		file, skipHeader, err := openCycleFile(r.out, s.Dim(), r.resume, &known)
		if err != nil {
			return e.fail(err)
		}
		defer file.Close()
		settings.Known = known
		writer = cycles.NewCycleWriter(file, cycles.FormatOf(r.out), s.Dim(), skipHeader)
	}
	settings.Found = func(length int, found []cycles.Cycle) error {
		if writer != nil {
			for _, c := range found {
				if err := writer.Write(c); err != nil {
					return err
				}
			}
			if err := writer.Flush(); err != nil {
				return fmt.Errorf("writing %s: %v", r.out, err)
			}
		}
		if r.stopAfter > 0 && length >= r.stopAfter {
			cancel()
		}
		return nil
	}
	if r.progress {
		settings.Progress = func(length int, fraction float64) {
			fmt.Fprintf(e.stderr, "\rlength %d of %d: %3.0f%%", length, r.maxLen, 100*fraction)
		}
	}
	res, err := cycles.Search(ctx, s, settings)
	if r.progress {
		fmt.Fprint(e.stderr, "\r\033[K")
	}
	if err != nil {
		if errors.Is(err, cycles.ErrSearch) {
			return e.fail(&numericalError{err})
		}
		return e.fail(err)
	}
	if res.Status == cycles.SearchInterrupted {
		done := len(res.Counts)
		where := ""
		if r.out != "" {
			where = fmt.Sprintf("; %s holds lengths 1-%d, continue with --resume", r.out, done)
		}
		return e.fail(&numericalError{fmt.Errorf("interrupted during length %d%s", done+1, where)})
	}
	if err := writeCycleReport(e.stdout, s, res, r.format); err != nil {
		return e.fail(err)
	}
	return exitOK
}

// openCycleFile opens the output file: created afresh, or, with resume,
// read back, cut before its last length (which may be incomplete) and
// opened for appending. known receives the cycles kept.
func openCycleFile(path string, dim int, resume bool, known *[]cycles.Cycle) (*os.File, bool, error) {
	if !resume {
		f, err := os.Create(path)
		if err != nil {
			return nil, false, usagef("cannot write %s: %v", path, unwrapPath(err))
		}
		return f, false, nil
	}
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, false, usagef("cannot open %s: %v", path, unwrapPath(err))
	}
	read, err := cycles.ReadCycles(f, path, dim)
	if err != nil {
		f.Close()
		return nil, false, usagef("%v", err)
	}
	last := 0
	for _, c := range read {
		last = max(last, c.Len)
	}
	cut, _ := f.Seek(0, io.SeekEnd)
	for _, c := range read {
		if c.Len == last {
			cut = min(cut, c.Offset)
			continue
		}
		*known = append(*known, c.Cycle)
	}
	if len(read) == 0 {
		cut = 0
	}
	if err := f.Truncate(cut); err != nil {
		f.Close()
		return nil, false, usagef("cannot truncate %s: %v", path, err)
	}
	if _, err := f.Seek(cut, io.SeekStart); err != nil {
		f.Close()
		return nil, false, usagef("cannot seek %s: %v", path, err)
	}
	return f, cut > 0, nil
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// jsonCycle is a cycle in the JSON report, with the cycle-file fields.
type jsonCycle struct {
	Itinerary     string    `json:"itinerary"`
	Length        int       `json:"length"`
	Point         []float64 `json:"point"`
	Multipliers   []float64 `json:"multipliers"`
	ObservableSum float64   `json:"observable_sum"`
}

type jsonCount struct {
	Length         int      `json:"length"`
	PrimeCycles    int      `json:"prime_cycles"`
	PeriodicPoints int      `json:"periodic_points"`
	ExpectedPrime  *float64 `json:"expected_prime_cycles,omitempty"`
	ExpectedPoints *float64 `json:"expected_periodic_points,omitempty"`
	BoxBound       *float64 `json:"box_bound,omitempty"`
	Note           string   `json:"note,omitempty"`
}

func toJSONCycles(cs []cycles.Cycle) []jsonCycle {
	out := make([]jsonCycle, len(cs))
	for i, c := range cs {
		out[i] = jsonCycle{Itinerary: c.Itinerary, Length: c.Len, Point: c.Point, Multipliers: c.Multipliers, ObservableSum: c.ObservableSum}
	}
	return out
}

func optional(v float64) *float64 {
	if v < 0 {
		return nil
	}
	return &v
}

func countText(v float64) string {
	if v < 0 {
		return "-"
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

func writeCycleReport(w io.Writer, s *dynsys.System, res cycles.SearchResult, format string) error {
	if format == formatJSON {
		doc := struct {
			System  string      `json:"system"`
			Symbols int         `json:"symbols"`
			Status  string      `json:"status"`
			Entropy *float64    `json:"topological_entropy,omitempty"`
			Counts  []jsonCount `json:"counts"`
			Cycles  []jsonCycle `json:"cycles"`
		}{System: s.Name, Symbols: res.Symbols, Status: res.Status.String(), Cycles: toJSONCycles(res.Cycles)}
		if res.Grammar != nil {
			h := res.Grammar.Entropy()
			doc.Entropy = &h
		}
		for _, c := range res.Counts {
			doc.Counts = append(doc.Counts, jsonCount{Length: c.Length, PrimeCycles: c.PrimeCycles, PeriodicPoints: c.PeriodicPoints,
				ExpectedPrime: optional(c.ExpectedPrime), ExpectedPoints: optional(c.ExpectedPoints), BoxBound: optional(c.BoxBound), Note: c.Note})
		}
		return writeJSON(w, doc)
	}
	g := &grid{header: []string{"length", "prime cycles", "periodic points", "expected prime", "expected points", "box bound", "note"}}
	for _, c := range res.Counts {
		g.add(strconv.Itoa(c.Length), strconv.Itoa(c.PrimeCycles), strconv.Itoa(c.PeriodicPoints),
			countText(c.ExpectedPrime), countText(c.ExpectedPoints), countText(c.BoxBound), c.Note)
	}
	if err := g.render(w, format); err != nil {
		return err
	}
	if format == formatTable {
		fmt.Fprintf(w, "%s: %d prime cycles, search %s", s.Name, len(res.Cycles), res.Status)
		if res.Grammar != nil {
			fmt.Fprintf(w, "; %d symbols, topological entropy %.6g", res.Symbols, res.Grammar.Entropy())
		}
		fmt.Fprintln(w)
	}
	return nil
}

// checkCycleFile verifies the cycles of a file written elsewhere.
func checkCycleFile(e *env, s *dynsys.System, path, format string) int {
	f, err := os.Open(path)
	if err != nil {
		return e.fail(usagef("cannot read %s: %v", path, unwrapPath(err)))
	}
	defer f.Close()
	read, err := cycles.ReadCycles(f, path, s.Dim())
	if err != nil {
		return e.fail(err)
	}
	res, err := cycles.Verify(s, read, &cycles.VerifySettings{File: path})
	if err != nil {
		return e.fail(&numericalError{err})
	}
	if format == formatJSON {
		type jsonProblem struct {
			Line    int    `json:"line"`
			Kind    string `json:"kind"`
			Message string `json:"message"`
		}
		doc := struct {
			System   string        `json:"system"`
			File     string        `json:"file"`
			Read     int           `json:"read"`
			Accepted int           `json:"accepted"`
			Problems []jsonProblem `json:"problems"`
		}{System: s.Name, File: path, Read: len(read), Accepted: len(res.Cycles), Problems: []jsonProblem{}}
		for _, p := range res.Problems {
			doc.Problems = append(doc.Problems, jsonProblem{Line: p.Line, Kind: p.Kind.String(), Message: p.Msg})
		}
		if err := writeJSON(e.stdout, doc); err != nil {
			return e.fail(err)
		}
	} else {
		g := &grid{header: []string{"line", "problem", "details"}}
		for _, p := range res.Problems {
			g.add(strconv.Itoa(p.Line), p.Kind.String(), p.Msg)
		}
		if len(res.Problems) > 0 {
			if err := g.render(e.stdout, format); err != nil {
				return e.fail(err)
			}
		}
		if format == formatTable {
			fmt.Fprintf(e.stdout, "%s: %d cycles read, %d accepted, %d rejected\n", path, len(read), len(res.Cycles), len(res.Problems))
		}
	}
	if len(res.Problems) > 0 {
		return e.fail(fmt.Errorf("%d of %d cycles rejected, first %s", len(res.Problems), len(read), res.Problems[0]))
	}
	return exitOK
}
